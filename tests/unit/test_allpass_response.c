// SPDX-License-Identifier: GPL-3.0-or-later
// The all-pass (plugins/dsp/allpass) in steady state against the theory:
// |H| = 1 and the phase at f0, measured by fitting sines to a settled
// output. Apart from test_allpass.c (parameters that move) and
// test_allpass_plugin.c (what a host may do) because these need a response
// estimator of their own and are the slowest of the three.
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <complex.h>
#include <math.h>
#include <stdlib.h>

#include "allpass_test.h"
#include "dsp/allpass.h"

static void wrap_deg(double *d) {
  *d = fmod(*d, 360.0);
  *d = *d > 180.0 ? *d - 360.0 : (*d <= -180.0 ? *d + 360.0 : *d);
}

// Steady-state response at f_hz: a sine runs until the filter's transient
// has decayed below 1e-12, then cos and sin are fitted by least squares to
// input and output over `fit` frames; H is the ratio of the two complex
// amplitudes. Fitting the input too cancels its float rounding, so the
// estimate is good to about 1e-10, far below the 1e-6 dB checked.
static double complex response(double rate, float f0, float q, int stages,
                               int order, double f_hz) {
  const double w0 = 2.0 * M_PI * f0 / rate;
  // pole radius: sqrt((1 - alpha) / (1 + alpha)) (RBJ a2/a0), or |p|
  const double alpha = sin(w0) / (2.0 * q), t = tan(w0 / 2.0);
  const double r = order == 2 ? sqrt((1.0 - alpha) / (1.0 + alpha))
                              : fabs((1.0 - t) / (1.0 + t));
  const size_t settle = (size_t)(-28.0 * stages / log(r)) + 4096;
  const size_t fit = 65536, n = settle + fit;
  float *x = malloc(n * sizeof(float)), *y = malloc(n * sizeof(float));
  const double w = 2.0 * M_PI * f_hz / rate;
  for (size_t i = 0; i < n; ++i) {
    x[i] = (float)(0.5 * sin(w * (double)i + 0.3));
  }
  allpass_t a;
  allpass_setup(&a, rate, 1);
  allpass_set(&a, f0, q, (float)stages, (float)order);
  run1(&a, x, y, (uint32_t)n);
  double cc = 0, ss = 0, cs = 0, xc = 0, xs = 0, yc = 0, ys = 0;
  for (size_t i = settle; i < n; ++i) {
    const double c = cos(w * (double)i), s = sin(w * (double)i);
    cc += c * c, ss += s * s, cs += c * s;
    xc += x[i] * c, xs += x[i] * s, yc += y[i] * c, ys += y[i] * s;
  }
  const double det = cc * ss - cs * cs;
  // v ~ A cos + B sin = Re{(A - jB) e^{jwi}}
  const double complex hx =
      ((ss * xc - cs * xs) - I * (cc * xs - cs * xc)) / det;
  const double complex hy =
      ((ss * yc - cs * ys) - I * (cc * ys - cs * yc)) / det;
  free(x);
  free(y);
  return hy / hx;
}

// |H| = 1 within 1e-6 dB in steady state (the defining property of an
// all-pass), from f0/8 to 6 f0, both orders, 1 and 3 stages.
static void magnitude_flat(void **state) {
  (void)state;
  const struct {
    double rate;
    float f0, q;
    int stages, order;
  } cases[] = {
      {48000, 1000, 0.707f, 1, 2}, {44100, 100, 4.0f, 1, 2},
      {96000, 8000, 0.3f, 3, 2},   {48000, 300, 10.0f, 1, 2},
      {384000, 2000, 1.0f, 3, 2},  {48000, 1000, 0.707f, 1, 1},
      {22050, 5000, 0.707f, 3, 1}, {192000, 50, 0.707f, 3, 1},
  };
  const double ratio[] = {0.125, 0.5, 0.83, 1.0, 1.3, 2.0, 6.0};
  for (size_t c = 0; c < sizeof cases / sizeof cases[0]; ++c) {
    for (size_t k = 0; k < 7; ++k) {
      const double f = cases[c].f0 * ratio[k];
      if (f >= 0.45 * cases[c].rate) {
        continue;
      }
      const double complex h = response(cases[c].rate, cases[c].f0, cases[c].q,
                                        cases[c].stages, cases[c].order, f);
      const double db = 20.0 * log10(cabs(h));
      if (fabs(db) > 1e-6) {
        print_error("case %zu at %g Hz: %.3g dB\n", c, f, db);
      }
      assert_true(fabs(db) <= 1e-6);
    }
  }
}

// At f0 every second-order stage turns -180 degrees and every first-order
// stage -90 (the all-pass prototypes at s = j: (1 - j k - 1)/(1 + j k - 1)
// = -1 and (1 - j)/(1 + j) = -j), at every rate from 22.05 to 384 kHz; at
// 22.05 kHz a 20 kHz request is held at 0.49 of the rate.
static void phase_at_frequency(void **state) {
  (void)state;
  const double rates[] = {22050, 44100, 48000, 88200, 96000, 192000, 384000};
  const float f0s[] = {40.0f, 1000.0f, 10000.0f, 20000.0f};
  for (size_t r = 0; r < 7; ++r) {
    for (size_t f = 0; f < 4; ++f) {
      for (int order = 1; order <= 2; ++order) {
        for (int stages = 1; stages <= 4; stages += order == 2 ? 1 : 3) {
          const double f_eff = fmin(f0s[f], 0.49 * rates[r]);
          const double complex h =
              response(rates[r], f0s[f], 0.707f, stages, order, f_eff);
          double err = carg(h) * 180.0 / M_PI + 90.0 * order * stages;
          wrap_deg(&err);
          if (fabs(err) > 1e-4) {
            print_error("%g Hz at %g: order %d x%d: %g deg off\n", f_eff,
                        rates[r], order, stages, err);
          }
          assert_true(fabs(err) <= 1e-4);
        }
      }
    }
  }
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(magnitude_flat),
      cmocka_unit_test(phase_at_frequency),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
