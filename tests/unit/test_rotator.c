// SPDX-License-Identifier: GPL-3.0-or-later
// The rotator module's angle in time: 0 and +/-180 degrees exact to the bit,
// the sign convention against SciPy's, the glide along the shorter arc, and
// no click when the angle steps. The frequency response is test_hilbert.c's;
// what a host may do (any block split, bad input, the plugin through LV2)
// test_rotate.c's.
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <float.h>
#include <math.h>
#include <stdlib.h>

#include "dsp/rotator.h"
#include "noise.h"
#include "rotator_test.h"

// 0 degrees: the input L frames late, bit for bit, signed zeros and
// denormals included; silence before. +/-180: its exact negation.
static void quarter_turns_exact(void **state) {
  (void)state;
  enum { N = 9000 };
  float *x = malloc(N * sizeof(float)), *y = malloc(N * sizeof(float));
  fill_noise(x, N, 1);
  x[100] = -0.0f, x[101] = 1e-40f, x[102] = -FLT_MIN, x[103] = 3e38f;
  const float angles[] = {0.0f, 180.0f, -180.0f};
  for (int a = 0; a < 3; ++a) {
    rotator_t *r = rotator_new(48000.0);
    const uint32_t l = rotator_latency(r);
    rotator_set(r, angles[a]);
    for (uint32_t pos = 0, n = 1; pos < N; pos += n, n = n * 3 % 1000 + 1) {
      n = pos + n > N ? N - pos : n;
      rotator_compute(r, x + pos, y + pos, n);
    }
    for (uint32_t t = 0; t < N; ++t) {
      const float v = t < l ? 0.0f : x[t - l]; // silence before
      const float want = a == 0 ? v : -v;      // -0.0 for an inverted 0.0
      assert_memory_equal(&y[t], &want, sizeof(float));
    }
    rotator_delete(r);
  }
  free(x);
  free(y);
}

// The sign convention (rotator.h): a positive angle advances every
// frequency, y = Re{scipy.signal.hilbert(x) e^{j angle}} (SciPy reference:
// hilbert returns x + jH{x} with H{cos} = sin). So cos rotated by +90 is
// -sin and by -90 is +sin; by +30 it is cos(wt + 30 degrees).
static void sign_convention(void **state) {
  (void)state;
  enum { N = 8192 };
  const double rate_hz = 48000.0, f_hz = 1000.0;
  float x[N], y[N];
  for (int t = 0; t < N; ++t) {
    x[t] = (float)cos(2.0 * M_PI * f_hz * t / rate_hz);
  }
  const float angles[] = {90.0f, -90.0f, 30.0f};
  for (int a = 0; a < 3; ++a) {
    rotator_t *r = rotator_new(rate_hz);
    rotator_set(r, angles[a]);
    rotator_compute(r, x, y, N);
    const uint32_t l = rotator_latency(r), start = l + r->n_taps;
    const double rad = angles[a] * M_PI / 180.0;
    for (uint32_t t = start; t < N; ++t) {
      const double ph = 2.0 * M_PI * f_hz * (double)(t - l) / rate_hz;
      assert_float_equal(y[t], cos(ph + rad), 2e-3);
    }
    rotator_delete(r);
  }
}

// From 170 to -170 the angle goes through 180, never near 0, and lands
// exactly on -170; from 10 to -10 it goes through 0. A time constant of
// ROTATOR_TAU_S: after it, 1 - 1/e of the way is covered.
static void shortest_arc(void **state) {
  (void)state;
  rotator_t *r = rotator_new(48000.0);
  const float from[] = {170.0f, 10.0f}, to[] = {-170.0f, -10.0f};
  const float mid[] = {180.0f, 0.0f};
  const uint32_t tau_frames = (uint32_t)lround(ROTATOR_TAU_S * 48000.0);
  float x = 0.0f, y;
  for (int k = 0; k < 2; ++k) {
    rotator_reset(r);
    rotator_set(r, from[k]);
    rotator_set(r, to[k]);
    for (uint32_t i = 0; i < 48000 && rotator_angle_now_deg(r) != to[k]; ++i) {
      rotator_compute(r, &x, &y, 1);
      double off = rotator_angle_now_deg(r) - mid[k];
      off -= 360.0 * floor((off + 180.0) / 360.0);
      assert_true(fabs(off) <= 10.0 + 1e-4);
      if (i + 1 == tau_frames) {
        // 20 * (1 - 1/e) = 12.6 of the 20 degrees: 2.6 past the middle
        assert_float_equal(fabs(off), fabs(10.0 - 20.0 * (1.0 - exp(-1.0))),
                           0.05);
      }
    }
    assert_true(rotator_angle_now_deg(r) == to[k]);
    assert_float_equal(r->cos_gain, cos(to[k] * M_PI / 180.0), 1e-7);
  }
  rotator_delete(r);
}

// 0, 10, ... 170, 180, -170, ...: steps of 10 degrees across the seam.
static float wrap_steps(int b) {
  return (float)((10 * b + 180) % 360 - 180);
}

// Stepping the angle by 10 degrees every 512-frame block: on a 200 Hz sine
// no sample-to-sample step exceeds the sine's own largest step by more than
// the slight frequency shift of the turning phase (a click would be many
// times larger: an unsmoothed 10 degree step jumps by 2 sin(5 deg) = 0.17).
static void no_click_on_steps(void **state) {
  (void)state;
  enum { B = 512, BLOCKS = 80 };
  const double rate_hz = 48000.0, f_hz = 200.0;
  float x[B], y[B];
  rotator_t *r = rotator_new(rate_hz);
  float prev = NAN, worst = 0.0f;
  for (int b = 0; b < BLOCKS; ++b) {
    for (int i = 0; i < B; ++i) {
      x[i] = (float)sin(2.0 * M_PI * f_hz * (b * B + i) / rate_hz);
    }
    rotator_set(r, wrap_steps(b));
    rotator_compute(r, x, y, B);
    for (int i = 0; i < B; ++i) {
      if (b * B + i > (int)(rotator_latency(r) + r->n_taps)) {
        worst = fmaxf(worst, fabsf(y[i] - prev));
      }
      prev = y[i];
    }
  }
  const double sine_step = 2.0 * sin(M_PI * f_hz / rate_hz);
  assert_true(worst <= sine_step * 1.05);
  assert_true(worst >= sine_step * 0.95);
  // Over two turns and more, the unwrapped angle stays within a turn of the
  // port range, and settles exactly on the port angle.
  assert_true(fabsf(rotator_angle_now_deg(r)) <= 540.0f);
  for (int b = 0; b < 40; ++b) {
    rotator_compute(r, x, y, B);
  }
  assert_true(rotator_angle_now_deg(r) == wrap_steps(BLOCKS - 1));
  rotator_delete(r);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(quarter_turns_exact),
      cmocka_unit_test(sign_convention),
      cmocka_unit_test(shortest_arc),
      cmocka_unit_test(no_click_on_steps),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
