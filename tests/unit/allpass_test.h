// SPDX-License-Identifier: GPL-3.0-or-later
// One mono buffer through an allpass_t. In a header because the all-pass's
// three test files (test_allpass_response.c, test_allpass.c,
// test_allpass_plugin.c) all run the module on one channel.
#ifndef VERNIER_TESTS_UNIT_ALLPASS_TEST_H
#define VERNIER_TESTS_UNIT_ALLPASS_TEST_H

#include <stdint.h>

#include "dsp/allpass.h"

static inline void run1(allpass_t *a, const float *x, float *y, uint32_t n) {
  const float *in[1] = {x};
  float *out[1] = {y};
  allpass_compute(a, in, out, n);
}

#endif
