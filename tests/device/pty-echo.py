"""Test support: a stand-in serial device on a real pseudo-terminal that sends back every byte it
receives, unchanged. Prints the device end's path (the pty slave) on its first line; the slave is
held open here in raw mode, as a USB CDC device's line would be. Ends when stdin closes or on a signal.
Run with /usr/bin/python3 (standard library only: os, pty via os.openpty, tty)."""
import os
import sys
import tty

master, slave = os.openpty()
tty.setraw(slave)
print(os.ttyname(slave), flush=True)
while True:
    data = os.read(master, 65536)
    if not data:
        break
    os.write(master, data)
sys.exit(0)
