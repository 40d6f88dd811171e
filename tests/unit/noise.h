// SPDX-License-Identifier: GPL-3.0-or-later
// The deterministic noise the unit tests feed the DSP. In a header because
// the rotator's and the all-pass's test files all need the same signal, and
// a fixed seed must give the same samples in each of them.
#ifndef VERNIER_TESTS_UNIT_NOISE_H
#define VERNIER_TESTS_UNIT_NOISE_H

#include <stddef.h>
#include <stdint.h>

// Noise in [-1, 1), the same for the same seed (a 32-bit LCG with the
// Numerical Recipes constants).
static inline void fill_noise(float *x, size_t n, uint32_t seed) {
  for (size_t i = 0; i < n; ++i) {
    seed = seed * 1664525u + 1013904223u; // Numerical Recipes LCG
    x[i] = (float)((double)seed / 2147483648.0 - 1.0);
  }
}

#endif
