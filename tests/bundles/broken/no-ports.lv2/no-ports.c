// SPDX-License-Identifier: GPL-3.0-or-later
// A working binary; the fault is that no-ports.ttl names no port.
#define PASS_THROUGH_URI "urn:vernier-test:no-ports"
#include "../pass-through.h"
