// SPDX-License-Identifier: GPL-3.0-or-later
// Coefficients of one all-pass stage (allpass_coefs_t, allpass.h) for one
// (f0, q), apart from the stages and the cascade that use them (allpass.c):
// the exact ones from libm, computed when a target changes
// (allpass_coef.c), and the fast series computed every sample while a
// parameter glides. The per-sample ones are static inline here so that
// allpass.c's glide, which runs once a frame, still inlines them as it did
// when they shared its file (the bench's "frequency=3000<->200 each block"
// row is the one that would show a call).
//
// Internal to plugins/dsp/allpass*: the plugins include allpass.h only.
#ifndef VERNIER_DSP_ALLPASS_COEF_H
#define VERNIER_DSP_ALLPASS_COEF_H

#include <stdbool.h>
#include <stdint.h>
#include <string.h>

#include "allpass.h"

// While a parameter glides the coefficients change every sample, and libm's
// exp2, sin and cos would cost more than the filter. Truncated Taylor series
// do it, evaluated by Estrin's scheme (pairs, then pairs of pairs) rather
// than Horner's rule, whose one long chain of dependent multiply-adds would
// dominate the cost. Good to 1e-8 over the ranges used (test_allpass.c
// checks them against libm), so the step to the exact libm values when the
// glide lands is some 160 dB down.

// c[0] + c[1] r + ... + c[7] r^7.
static inline double allpass_estrin7(const double *c, double r) {
  const double r2 = r * r, r4 = r2 * r2;
  const double lo = (c[0] + c[1] * r) + (c[2] + c[3] * r) * r2;
  const double hi = (c[4] + c[5] * r) + (c[6] + c[7] * r) * r2;
  return lo + hi * r4;
}

// (ln 2)^i / i!: 2^r = e^(r ln 2) to r^7 (7e-9 for |r| <= 1/2). Then
// (-1)^k / (2k+1)! and (-1)^k / (2k)!: sin to x^15 and cos to x^14, in x^2
// (4e-12 and 1.5e-9 relative for 0 <= x <= 0.49 pi).
// clang-format off
static const double allpass_exp2_series[8] = {
    1.0, 0.69314718055994529, 0.24022650695910069, 0.055504108664821576,
    0.0096181291076284769, 0.0013333558146428441, 0.00015403530393381606,
    1.5252733804059838e-05};
static const double allpass_sin_series[8] = {
    1.0, -0.16666666666666666, 0.0083333333333333332,
    -0.00019841269841269841, 2.7557319223985893e-06, -2.505210838544172e-08,
    1.6059043836821613e-10, -7.6471637318198164e-13};
static const double allpass_cos_series[8] = {
    1.0, -0.5, 0.041666666666666664, -0.0013888888888888889,
    2.4801587301587302e-05, -2.7557319223985888e-07, 2.08767569878681e-09,
    -1.1470745597729725e-11};
// clang-format on

// 2^u for |u| < 60: 2^n from the exponent bits times 2^r, |r| <= 1/2.
static inline double allpass_fast_exp2(double u) {
  const int n = (int)(u + 64.5) - 64; // nearest integer; u + 64.5 > 0
  const uint64_t bits = (uint64_t)(n + 1023) << 52;
  double scale;
  memcpy(&scale, &bits, sizeof scale);
  return allpass_estrin7(allpass_exp2_series, u - (double)n) * scale;
}

// sin x and cos x for 0 <= x <= 0.49 pi.
static inline void allpass_fast_sincos(double x, double *s, double *c) {
  const double y = x * x;
  *s = x * allpass_estrin7(allpass_sin_series, y);
  *c = allpass_estrin7(allpass_cos_series, y);
}

// s = sin(pi f0/rate), c = cos(pi f0/rate), k = 1/q. Written in s and c
// rather than g = tan: one division instead of two, no cancellation at low
// f0, and alpha = k s c is the RBJ cookbook's sin(w0) / (2 q). Whatever the
// rounding of s and c, these are the SVF for g = s/c exactly (D uses
// s^2 + c^2 as computed), so the stage stays an all-pass. A glide computes
// only the order that is running (each costs a division).
static inline void allpass_coefs_from(allpass_coefs_t *co, double s, double c,
                                      double k, bool second, bool first) {
  if (second) {
    const double ss = s * s, cc = c * c, sc = s * c;
    const double alpha = k * sc;
    const double inv_d = 1.0 / (cc + ss + alpha);
    co->k = k;
    co->m = (cc - ss - alpha) * inv_d;
    co->b1 = 2.0 * sc * inv_d;
    co->b2 = 2.0 * ss * inv_d;
  }
  if (first) {
    const double inv_sum = 1.0 / (c + s);
    co->p = (c - s) * inv_sum; // (1 - g) / (1 + g)
    co->one_minus_p = 2.0 * s * inv_sum;
    co->one_plus_p = 2.0 * c * inv_sum;
  }
}

// Both orders' coefficients for f_hz (already held below 0.49 rate_hz) and
// q, from libm's sin and cos; also the sin, cos and 1/q they were built from,
// which a glide of the other parameter alone reuses.
void allpass_coefs_exact(allpass_coefs_t *co, double *s, double *c, double *k,
                         double f_hz, double rate_hz, double q);

#endif
