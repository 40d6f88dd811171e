// SPDX-License-Identifier: GPL-3.0-or-later
// A working binary; the fault is in bad-plugin-ttl.ttl.
#define PASS_THROUGH_URI "urn:vernier-test:bad-plugin-ttl"
#include "../pass-through.h"
