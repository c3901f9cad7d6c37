# The device link (issue 11): the protocol parser and the virtual device. Included by the kit's
# Makefile (it includes every ortho-*.mk), so `make -C DIR` builds DIR/virtual-device too. Inside a
# kit made by `orthotone firmware` (ortho_config.h present) the virtual device runs the kit's own
# kernel and trims; in the repository's firmware/ folder it builds alone:
#   make -C firmware virtual-device      (or: make -f ortho-link.mk virtual-device)
CC ?= cc
CFLAGS ?= -std=c99 -O2 -Wall -Wextra -Werror -pedantic
LDLIBS ?= -lm

PROGRAMS += virtual-device

ifneq ($(wildcard ortho_config.h),)
VD_KIT_CFLAGS = -DOTL_WITH_KIT
VD_KIT_OBJS = $(KIT_OBJS)
VD_KIT_HEADERS = $(KIT_HEADERS)
endif

virtual-device: virtual_device.o protocol.o $(VD_KIT_OBJS)
	$(CC) $(CFLAGS) -o $@ $^ $(LDLIBS) -lm

protocol.o: protocol.c protocol.h
	$(CC) $(CFLAGS) -c -o $@ protocol.c

virtual_device.o: virtual_device.c protocol.h $(VD_KIT_HEADERS)
	$(CC) $(CFLAGS) $(VD_KIT_CFLAGS) -c -o $@ virtual_device.c
