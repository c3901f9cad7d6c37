# The device link (issue 11): the protocol parser and the virtual device. Included by the kit's
# Makefile (it includes every ortho-*.mk); on its own: make -f ortho-link.mk virtual-device.
CC ?= cc
CFLAGS ?= -std=c99 -O2 -Wall -Wextra -Werror -pedantic
LDLIBS ?= -lm

PROGRAMS += virtual-device

virtual-device: virtual_device.o protocol.o
	$(CC) $(CFLAGS) -o $@ $^ $(LDLIBS) -lm

protocol.o: protocol.c protocol.h
	$(CC) $(CFLAGS) -c -o $@ protocol.c

virtual_device.o: virtual_device.c protocol.h
	$(CC) $(CFLAGS) -c -o $@ virtual_device.c
