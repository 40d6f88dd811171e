// SPDX-License-Identifier: GPL-3.0-or-later
// Helpers shared by test_delay.c (the DSP) and test_delay_plugin.c (the
// plugin through lv2_descriptor): a module on the heap, one channel through
// it, and the frequency response of a measured impulse response against a
// pure delay. Noise and descriptors come from noise.h and descriptor.h.
#ifndef VERNIER_TEST_DELAY_TEST_H
#define VERNIER_TEST_DELAY_TEST_H

#include <math.h>
#include <stdint.h>
#include <stdlib.h>

#include "descriptor.h"
#include "dsp/frac_delay.h"
#include "noise.h"

static inline frac_delay_t *delay_new(double rate_hz, uint32_t n_channels) {
  frac_delay_t *d = malloc(sizeof *d);
  if (d && frac_delay_setup(d, rate_hz, n_channels) != 0) {
    free(d);
    d = NULL;
  }
  return d;
}

static inline void delay_delete(frac_delay_t *d) {
  frac_delay_free(d);
  free(d);
}

// One channel in, one out.
static inline void delay_run1(frac_delay_t *d, const float *x, float *y,
                              uint32_t n) {
  const float *in[1] = {x};
  float *out[1] = {y};
  frac_delay_compute(d, in, out, n);
}

// R = sum h[t] e^{-jw t} e^{+jw delay}: the response against the ideal
// e^{-jw delay}, which is 1 for a perfect delay. Returns the magnitude error
// in dB and sets *phase_delay_err to the phase delay minus delay, in samples
// (positive: later than asked). Double throughout.
static inline double delay_error_db(const float *h, size_t n, double w,
                                    double delay, double *phase_delay_err) {
  double re = 0.0, im = 0.0;
  for (size_t t = 0; t < n; ++t) {
    if (h[t] != 0.0f) {
      const double a = w * ((double)t - delay);
      re += h[t] * cos(a);
      im -= h[t] * sin(a);
    }
  }
  *phase_delay_err = -atan2(im, re) / w;
  return 10.0 * log10(re * re + im * im);
}

static inline const LV2_Descriptor *delay_descriptor(uint32_t n_channels) {
  return find_descriptor(n_channels == 1 ? "urn:vernier:delay-mono"
                                         : "urn:vernier:delay-stereo");
}

#endif
