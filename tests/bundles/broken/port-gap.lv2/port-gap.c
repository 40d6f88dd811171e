// SPDX-License-Identifier: GPL-3.0-or-later
// A working binary; the fault is the index gap in port-gap.ttl.
#define PASS_THROUGH_URI "urn:vernier-test:port-gap"
#include "../pass-through.h"
