"""Test support: a stand-in serial device on a real pseudo-terminal that sends back every byte it
receives, unchanged. Prints the device end's path (the pty slave) on its first line; the slave is
held open here in raw mode, as a USB CDC device's line would be. Ends on a signal, or when stdin
closes (its test process ended, even without cleaning up).
Run with /usr/bin/python3 (standard library only: os, pty via os.openpty, tty)."""
import os
import select
import sys
import tty

master, slave = os.openpty()
tty.setraw(slave)
print(os.ttyname(slave), flush=True)
while True:
    ready, _, _ = select.select([master, sys.stdin], [], [])
    if sys.stdin in ready and not sys.stdin.buffer.read1(4096):
        break
    if master in ready:
        data = os.read(master, 65536)
        if not data:
            break
        os.write(master, data)
sys.exit(0)
