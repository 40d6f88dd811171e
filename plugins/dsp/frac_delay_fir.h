// SPDX-License-Identifier: GPL-3.0-or-later
// The Fine Delay's FIR kernels: one window of FRAC_DELAY_TAPS input frames
// times one row of taps, or times two neighbouring rows mixed by a weight
// (the linear interpolation between table phases, done on the two sums).
//
// They work on eight floats at a time through GCC's generic vectors (Clang
// has them too): an AVX build runs each as one register, baseline x86-64
// (SSE2) as two, and anything else as what it has. Every output is summed
// in one fixed order, lane by lane, whatever the span or the block size, and
// the compiler is never asked to reassociate a float sum: on one machine the
// samples never depend on how the stream is sliced. Where the build has
// fused multiply-add (frac_delay.c's x86-64-v3 clone), each product and sum
// round once instead of twice, so a machine with FMA and one without differ
// in the last bits, as FFTW's machine-specific kernels do.
//
// Vectors never cross a function boundary by value (GCC's -Wpsabi: their
// passing convention differs between SSE and AVX code); they stay local.
#ifndef VERNIER_DSP_FRAC_DELAY_FIR_H
#define VERNIER_DSP_FRAC_DELAY_FIR_H

#include <stdint.h>
#include <string.h>

#include "frac_delay_table.h"

typedef float frac_delay_v8 __attribute__((vector_size(32)));

_Static_assert(FRAC_DELAY_TAPS % 16 == 0, "the kernels take 16 taps a step");

// acc += taps[0..7] * x[0..7]; memcpy: the window starts anywhere.
#define FRAC_DELAY_MAC(acc, taps, x)                                           \
  do {                                                                         \
    frac_delay_v8 t_, x_;                                                      \
    memcpy(&t_, (taps), sizeof t_);                                            \
    memcpy(&x_, (x), sizeof x_);                                               \
    (acc) += t_ * x_;                                                          \
  } while (0)

typedef float frac_delay_v4 __attribute__((vector_size(16)));

// ((v0 + v4) + (v2 + v6)) + ((v1 + v5) + (v3 + v7)): the halves added, then
// their halves, as the vector unit does it with two shuffles.
static inline float frac_delay_sum8(const frac_delay_v8 *v) {
  frac_delay_v4 lo, hi;
  memcpy(&lo, v, sizeof lo);
  memcpy(&hi, (const char *)v + sizeof lo, sizeof hi);
  const frac_delay_v4 q = lo + hi;
  const frac_delay_v4 r = q + (frac_delay_v4){q[2], q[3], q[0], q[1]};
  return r[0] + r[1];
}

// sum_m taps[m] x[m], in two chains of eight lanes.
static inline float frac_delay_fir_dot(const float *restrict taps,
                                       const float *restrict x) {
  frac_delay_v8 s0 = {0}, s1 = {0};
#pragma GCC unroll 8
  for (uint32_t m = 0; m < FRAC_DELAY_TAPS; m += 16) {
    FRAC_DELAY_MAC(s0, taps + m, x + m);
    FRAC_DELAY_MAC(s1, taps + m + 8, x + m + 8);
  }
  const frac_delay_v8 s = s0 + s1;
  return frac_delay_sum8(&s);
}

// The window through row a and the row after it (a + FRAC_DELAY_TAPS), then
// a + weight (b - a) on the eight-lane sums: the taps interpolated between
// the two phases, at one load of the window.
static inline float frac_delay_fir_rows(const float *restrict a,
                                        const float *restrict x, float weight) {
  const float *restrict b = a + FRAC_DELAY_TAPS;
  frac_delay_v8 sa0 = {0}, sa1 = {0}, sb0 = {0}, sb1 = {0};
#pragma GCC unroll 8
  for (uint32_t m = 0; m < FRAC_DELAY_TAPS; m += 16) {
    FRAC_DELAY_MAC(sa0, a + m, x + m);
    FRAC_DELAY_MAC(sb0, b + m, x + m);
    FRAC_DELAY_MAC(sa1, a + m + 8, x + m + 8);
    FRAC_DELAY_MAC(sb1, b + m + 8, x + m + 8);
  }
  const frac_delay_v8 sa = sa0 + sa1, sb = sb0 + sb1;
  const frac_delay_v8 s = sa + weight * (sb - sa);
  return frac_delay_sum8(&s);
}

#endif
