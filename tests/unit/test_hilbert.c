// SPDX-License-Identifier: GPL-3.0-or-later
// The Phase Rotator's frequency response against the accuracy goal:
// Kaiser's design formulas, the designed Hilbert FIR, the whole rotator's
// impulse response, and the design at every sample rate. These check the
// design in the frequency domain, with helpers of their own (the response of
// a set of taps, the tolerance check); the rotator's angle in time is
// test_rotator.c's, and what a host may do to it test_rotate.c's.
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <math.h>
#include <stdlib.h>

#include "dsp/hilbert.h"
#include "dsp/kaiser.h"
#include "dsp/rotator.h"
#include "rotator_test.h"

// The accuracy goal of issue 3: +/-0.1 dB and +/-1 degree of the ideal
// rotation, 30 Hz to 20 kHz at 44.1 and 48 kHz and to 40 kHz at 96 kHz.
#define TOL_DB 0.1
#define TOL_DEG 1.0

// sum h[k] e^{-jw(k - delay)}: the response with a delay taken out.
static void response(const float *h, uint32_t n, double freq_hz, double rate_hz,
                     double delay, double *re, double *im) {
  const double w = 2.0 * M_PI * freq_hz / rate_hz;
  double a = 0.0, b = 0.0;
  for (uint32_t k = 0; k < n; ++k) {
    if (h[k] != 0.0f) {
      a += h[k] * cos(w * ((double)k - delay));
      b -= h[k] * sin(w * ((double)k - delay));
    }
  }
  *re = a, *im = b;
}

// Test frequencies: log-spaced from 30 Hz to top_hz, both ends included.
#define N_FREQS 97
static double test_freq(int i, double top_hz) {
  return 30.0 * pow(top_hz / 30.0, (double)i / (N_FREQS - 1));
}

// Magnitude (dB) and phase (degrees) of re + j im against e^{j angle}.
static void assert_rotation(double re, double im, double angle_deg,
                            double freq_hz) {
  const double mag_db = 10.0 * log10(re * re + im * im);
  double err_deg = atan2(im, re) * 180.0 / M_PI - angle_deg;
  err_deg -= 360.0 * floor((err_deg + 180.0) / 360.0);
  if (fabs(mag_db) > TOL_DB || fabs(err_deg) > TOL_DEG) {
    fail_msg("angle %g at %.1f Hz: %+.4f dB, %+.4f degrees", angle_deg, freq_hz,
             mag_db, err_deg);
  }
}

static double band_top_hz(double rate_hz) {
  return rate_hz < 90000.0 ? fmin(20000.0, rate_hz / 2.0 - 30.0) : 40000.0;
}

// Kaiser's formulas as SciPy has them (values computed with SciPy 1.10):
// scipy.signal.kaiser_beta(50) = 4.533514, kaiser_beta(60) = 5.65326;
// kaiserord(50, 60 / (fs / 2)) asks for 2154, 2345 and 4688 taps at 44.1,
// 48 and 96 kHz. Ours is that, made odd with an odd group delay.
static void kaiser_formulas(void **state) {
  (void)state;
  assert_float_equal(kaiser_beta(50.0), 4.533514, 1e-6);
  assert_float_equal(kaiser_beta(60.0), 5.65326, 1e-5);
  const double rates[] = {44100.0, 48000.0, 96000.0};
  const uint32_t scipy_taps[] = {2154, 2345, 4688};
  for (int i = 0; i < 3; ++i) {
    const uint32_t n = hilbert_min_taps(rates[i]);
    assert_in_range(n, scipy_taps[i], scipy_taps[i] + 4);
    assert_int_equal(n % 4, 3);
    assert_true(hilbert_attenuation_db(n, rates[i]) >= HILBERT_ATTENUATION_DB);
  }
}

// The designed taps: odd about the centre (so exactly linear phase: the
// response with the delay taken out is purely imaginary, -j A(f)), and for
// every angle cos + j sin A(f) is within the goal.
static void fir_response(void **state) {
  (void)state;
  const double rates[] = {44100.0, 48000.0, 96000.0};
  for (int ri = 0; ri < 3; ++ri) {
    rotator_t *r = rotator_new(rates[ri]);
    const uint32_t n = r->n_taps, d = n / 2;
    float *h = malloc(n * sizeof(float));
    hilbert_design(h, n, rates[ri]);
    for (uint32_t k = 0; k <= d; ++k) {
      assert_true(h[d + k] == -h[d - k]);
      assert_true(k % 2 == 1 || h[d + k] == 0.0f);
    }
    for (int i = 0; i < N_FREQS; ++i) {
      const double f = test_freq(i, band_top_hz(rates[ri]));
      double re, im;
      response(h, n, f, rates[ri], (double)d, &re, &im);
      assert_true(fabs(re) < 1e-9);
      const double a = -im; // H = -j A: H{cos} = sin (SciPy's convention)
      for (int deg = -180; deg <= 180; deg += 15) {
        const double t = deg * M_PI / 180.0;
        assert_rotation(cos(t), sin(t) * a, deg, f);
      }
    }
    free(h);
    rotator_delete(r);
  }
}

// The whole rotator's impulse response, with the reported latency taken
// out, is e^{j angle} within the goal: the taps, the partitioned convolution
// and the in-phase delay line line up.
static void impulse_response(void **state) {
  (void)state;
  const double rates[] = {44100.0, 48000.0, 96000.0};
  const float angles[] = {90.0f, -37.0f, 150.0f};
  for (int ri = 0; ri < 3; ++ri) {
    for (int ai = 0; ai < 3; ++ai) {
      rotator_t *r = rotator_new(rates[ri]);
      const uint32_t n = rotator_latency(r) + r->n_taps;
      float *x = calloc(n, sizeof(float)), *y = malloc(n * sizeof(float));
      x[0] = 1.0f;
      rotator_set(r, angles[ai]);
      rotator_compute(r, x, y, n);
      // the response ends with the FIR, but for the FFT's rounding
      for (uint32_t t = rotator_latency(r) + r->n_taps / 2 + 1; t < n; ++t) {
        assert_true(fabsf(y[t]) < 1e-6f);
      }
      for (int i = 0; i < N_FREQS; i += 4) {
        const double f = test_freq(i, band_top_hz(rates[ri]));
        double re, im;
        response(y, n, f, rates[ri], (double)rotator_latency(r), &re, &im);
        assert_rotation(re, im, angles[ai], f);
      }
      free(x);
      free(y);
      rotator_delete(r);
    }
  }
}

// Setup accepts 22.05 to 384 kHz (and up to 768 kHz): the latency is the
// FIR's group delay plus one partition, about 32 ms at every rate, and the
// design holds from 30 Hz to fs/2 - 30 Hz. Rates out of range fail cleanly.
static void every_rate(void **state) {
  (void)state;
  const double rates[] = {22050, 32000,  44100,  48000,  88200,
                          96000, 176400, 192000, 352800, 384000};
  for (int ri = 0; ri < 10; ++ri) {
    rotator_t *r = rotator_new(rates[ri]);
    const uint32_t b = r->hilbert.block_frames;
    assert_int_equal(r->n_taps % 4, 3);
    assert_true(r->n_taps >= hilbert_min_taps(rates[ri]));
    assert_int_equal(rotator_latency(r), r->n_taps / 2 + b);
    assert_in_range(lround(1000.0 * rotator_latency(r) / rates[ri]), 30, 36);
    float *h = malloc(r->n_taps * sizeof(float));
    hilbert_design(h, r->n_taps, rates[ri]);
    for (int i = 0; i < N_FREQS; i += 8) {
      const double f = test_freq(i, rates[ri] / 2.0 - 30.0);
      double re, im;
      response(h, r->n_taps, f, rates[ri], (double)(r->n_taps / 2), &re, &im);
      assert_rotation(0.0, -im, 90.0, f); // the worst angle for magnitude
    }
    free(h);
    rotator_delete(r);
  }
  assert_int_equal(rotator_partition_frames(48000.0), 256);
  assert_int_equal(rotator_partition_frames(96000.0), 512);
  rotator_t r;
  const double bad[] = {0.0, -48000.0, NAN, INFINITY, 4000.0, 1e7};
  for (int i = 0; i < 6; ++i) {
    assert_int_equal(rotator_setup(&r, bad[i]), -1);
    rotator_free(&r); // safe after a failed setup
  }
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(kaiser_formulas),
      cmocka_unit_test(fir_response),
      cmocka_unit_test(impulse_response),
      cmocka_unit_test(every_rate),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
