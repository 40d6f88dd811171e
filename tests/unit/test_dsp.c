// SPDX-License-Identifier: GPL-3.0-or-later
// Unit tests of plugins/dsp/ without LV2: smoother, bipolar gain, polarity.
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "dsp/bipolar_gain.h"
#include "dsp/polarity.h"
#include "dsp/smoother.h"
#include "noise.h"

#define RATE_HZ 48000.0

// ------------------------------------------------------------- smoother ----

// One-pole smoother: a = exp(-1/(tau*fs)), and after tau seconds a unit step
// has covered 1 - 1/e of its way (the definition of a time constant).
static void smoother_time_constant(void **state) {
  (void)state;
  const double taus[] = {0.001, 0.010, 0.050};
  const double rates[] = {22050.0, 48000.0, 96000.0, 384000.0};
  for (size_t t = 0; t < 3; ++t) {
    for (size_t r = 0; r < 4; ++r) {
      smoother_t s;
      smoother_setup(&s, taus[t], rates[r]);
      assert_float_equal(s.pole, exp(-1.0 / (taus[t] * rates[r])), 1e-7);
      smoother_reset(&s, 0.0f);
      smoother_set_target(&s, 1.0f);
      const long n = lround(taus[t] * rates[r]);
      float v = 0.0f;
      for (long i = 0; i < n; ++i) {
        v = smoother_next(&s);
      }
      assert_float_equal(v, 1.0 - exp(-1.0), 2e-3);
    }
  }
}

// It lands exactly on the target (no endless tail into denormals).
static void smoother_lands_exactly(void **state) {
  (void)state;
  smoother_t s;
  smoother_setup(&s, 0.01, RATE_HZ);
  smoother_reset(&s, 1.0f);
  smoother_set_target(&s, -1.0f);
  long i = 0;
  while (!smoother_settled(&s) && i < 100000) {
    smoother_next(&s);
    ++i;
  }
  assert_true(smoother_settled(&s));
  assert_true(s.value == -1.0f);
  // From 2 to within 1e-6 takes ln(2e6) = 14.5 time constants; float
  // rounding may stop the approach earlier, about 1.5e-5 short of the target
  // for this pole (ln(2/1.5e-5) = 11.8 time constants), where it lands.
  assert_in_range(i, 11 * 480, 15 * 480);
}

// tau = 0 means no smoothing.
static void smoother_zero_tau_follows(void **state) {
  (void)state;
  smoother_t s;
  smoother_setup(&s, 0.0, RATE_HZ);
  smoother_reset(&s, 0.0f);
  smoother_set_target(&s, 0.25f);
  assert_true(smoother_next(&s) == 0.25f);
}

// ---------------------------------------------------------- bipolar gain ----

static void run_gain(bipolar_gain_t *g, const float *x, float *y, uint32_t n) {
  const float *in[1] = {x};
  float *out[1] = {y};
  bipolar_gain_compute(g, in, out, 1, n);
}

// gain * 10^(trim/20), the usual dB-to-amplitude law (common practice).
static void gain_law(void **state) {
  (void)state;
  assert_true(bipolar_gain_coefficient(1.0f, 0.0f) == 1.0f);
  assert_true(bipolar_gain_coefficient(-1.0f, 0.0f) == -1.0f);
  assert_true(bipolar_gain_coefficient(0.0f, 12.0f) == 0.0f);
  assert_float_equal(bipolar_gain_coefficient(0.5f, 6.0f), 0.5 * pow(10, 0.3),
                     1e-6);
  assert_float_equal(bipolar_gain_coefficient(-0.25f, -24.0f),
                     -0.25 * pow(10, -1.2), 1e-7);
  // +6.0206 dB is a factor of 2 (20*log10(2) = 6.0206)
  assert_float_equal(bipolar_gain_coefficient(1.0f, 6.0206f), 2.0, 1e-4);
}

// Out-of-range values are clamped; NaN falls back to the default.
static void gain_clamps(void **state) {
  (void)state;
  assert_true(bipolar_gain_coefficient(3.0f, 0.0f) == 1.0f);
  assert_true(bipolar_gain_coefficient(-7.0f, 0.0f) == -1.0f);
  assert_true(bipolar_gain_coefficient(NAN, 0.0f) == 1.0f);
  assert_true(bipolar_gain_coefficient(-INFINITY, 0.0f) == -1.0f);
  assert_float_equal(bipolar_gain_coefficient(1.0f, 100.0f), pow(10, 1.2),
                     1e-4);
  assert_true(bipolar_gain_coefficient(1.0f, NAN) == 1.0f);
}

// Settled at -1, +1 and 0: exact inversion, exact copy, exact silence.
static void gain_settled_exact(void **state) {
  (void)state;
  enum { N = 4096 };
  float x[N], y[N];
  fill_noise(x, N, 1);
  const float gains[] = {-1.0f, 1.0f, 0.0f};
  for (int k = 0; k < 3; ++k) {
    bipolar_gain_t g;
    bipolar_gain_setup(&g, RATE_HZ);
    bipolar_gain_set(&g, gains[k], 0.0f);
    run_gain(&g, x, y, N);
    for (int i = 0; i < N; ++i) {
      if (gains[k] == 0.0f) {
        assert_true(y[i] == 0.0f); // +0 or -0: silence either way
      } else {
        const float want = gains[k] * x[i];
        assert_memory_equal(&y[i], &want, sizeof(float));
      }
    }
  }
}

// The first set after reset jumps: no ramp from the default at start-up.
static void gain_first_set_jumps(void **state) {
  (void)state;
  enum { N = 64 };
  float x[N], y[N];
  fill_noise(x, N, 2);
  bipolar_gain_t g;
  bipolar_gain_setup(&g, RATE_HZ);
  bipolar_gain_set(&g, -0.5f, 0.0f);
  run_gain(&g, x, y, N);
  assert_true(y[0] == -0.5f * x[0]);
  // a later reset (activate) forgets the old value again
  bipolar_gain_reset(&g);
  bipolar_gain_set(&g, 0.25f, 0.0f);
  run_gain(&g, x, y, N);
  assert_true(y[0] == 0.25f * x[0]);
}

// A new value each 512-sample block gives a continuous gain, not steps: on DC
// the largest sample-to-sample change is a small part of the block's change.
static void gain_no_zipper(void **state) {
  (void)state;
  enum { B = 512, BLOCKS = 40 };
  float x[B], y[B];
  for (int i = 0; i < B; ++i) {
    x[i] = 1.0f;
  }
  bipolar_gain_t g;
  bipolar_gain_setup(&g, RATE_HZ);
  float prev = NAN;
  float worst = 0.0f;
  for (int b = 0; b < BLOCKS; ++b) {
    bipolar_gain_set(&g, 1.0f - 0.05f * (float)b, 0.0f); // 1 down to -0.95
    run_gain(&g, x, y, B);
    for (int i = 0; i < B; ++i) {
      if (!isnan(prev)) {
        worst = fmaxf(worst, fabsf(y[i] - prev));
      }
      prev = y[i];
    }
  }
  // One-pole step: (1 - a) times the distance left, a = exp(-1/480) at
  // 48 kHz. In steady state the distance is 0.05 / (1 - exp(-512/480)),
  // about 0.076, so the largest step is about 1.6e-4 against a per-block
  // change of 0.05: 300 times smaller.
  assert_true(worst < 0.05f / 250.0f);
  assert_true(worst > 0.0f);
}

// Processing a span in place gives the same samples as separate buffers.
static void gain_in_place(void **state) {
  (void)state;
  enum { N = 2000 };
  float x[N], y[N], z[N];
  fill_noise(x, N, 3);
  memcpy(z, x, sizeof x);
  bipolar_gain_t a, b;
  bipolar_gain_setup(&a, RATE_HZ);
  bipolar_gain_setup(&b, RATE_HZ);
  bipolar_gain_set(&a, 1.0f, 0.0f);
  bipolar_gain_set(&b, 1.0f, 0.0f);
  bipolar_gain_set(&a, -0.3f, 3.0f); // a ramp inside the span
  bipolar_gain_set(&b, -0.3f, 3.0f);
  run_gain(&a, x, y, N);
  run_gain(&b, z, z, N);
  assert_memory_equal(y, z, sizeof y);
}

// ---------------------------------------------------- block independence ----

// Parameter changes at fixed sample positions (a host splits its blocks at
// automation points); the output must not depend on the block size.
enum { STREAM = 24000 };
static const uint32_t change_at[] = {0, 1000, 5003, 12000, 20000};
static const float gain_at[] = {0.8f, -1.0f, 0.3f, 1.0f, -0.6f};

typedef void (*span_fn)(void *dsp, size_t change, const float *x, float *y,
                        uint32_t n);

static void gain_span(void *dsp, size_t change, const float *x, float *y,
                      uint32_t n) {
  if (change != SIZE_MAX) {
    bipolar_gain_set(dsp, gain_at[change], 0.0f);
  }
  run_gain(dsp, x, y, n);
}

static void polarity_span(void *dsp, size_t change, const float *x, float *y,
                          uint32_t n) {
  if (change != SIZE_MAX) {
    polarity_set(dsp, gain_at[change] < 0.0f);
  }
  polarity_compute(dsp, x, y, n);
}

static void run_blocked(span_fn fn, void *dsp, const float *x, float *y,
                        uint32_t block) {
  uint32_t pos = 0;
  size_t next = 0;
  while (pos < STREAM) {
    size_t change = SIZE_MAX;
    if (next < 5 && change_at[next] == pos) {
      change = next++;
    }
    uint32_t n = block;
    if (pos + n > STREAM) {
      n = STREAM - pos;
    }
    if (next < 5 && pos + n > change_at[next]) {
      n = change_at[next] - pos;
    }
    fn(dsp, change, x + pos, y + pos, n);
    fn(dsp, SIZE_MAX, x + pos, y + pos, 0); // run(0) changes nothing
    pos += n;
  }
}

static void block_size_independent(void **state) {
  (void)state;
  float *x = malloc(STREAM * sizeof(float));
  float *ref = malloc(STREAM * sizeof(float));
  float *y = malloc(STREAM * sizeof(float));
  fill_noise(x, STREAM, 4);
  const uint32_t blocks[] = {1, 63, 512, 4096};
  for (int which = 0; which < 2; ++which) {
    for (int b = 0; b < 4; ++b) {
      bipolar_gain_t g;
      polarity_t p;
      bipolar_gain_setup(&g, RATE_HZ);
      polarity_setup(&p, RATE_HZ);
      if (which == 0) {
        run_blocked(gain_span, &g, x, b == 0 ? ref : y, blocks[b]);
      } else {
        run_blocked(polarity_span, &p, x, b == 0 ? ref : y, blocks[b]);
      }
      if (b > 0) {
        assert_memory_equal(ref, y, STREAM * sizeof(float));
      }
    }
  }
  free(x);
  free(ref);
  free(y);
}

// Gain has no memory of the signal: after NaN and infinities stop, the very
// next sample is finite again.
static void gain_recovers_from_nan(void **state) {
  (void)state;
  enum { N = 256 };
  float x[N], y[N];
  fill_noise(x, N, 5);
  x[10] = NAN;
  x[11] = INFINITY;
  x[12] = -INFINITY;
  bipolar_gain_t g;
  bipolar_gain_setup(&g, RATE_HZ);
  bipolar_gain_set(&g, 1.0f, 0.0f);
  bipolar_gain_set(&g, -0.7f, 0.0f); // ramping across the bad samples
  run_gain(&g, x, y, N);
  for (int i = 13; i < N; ++i) {
    assert_true(isfinite(y[i]));
  }
}

// -------------------------------------------------------------- polarity ----

// Settled, the output is the exact negation of the input, bit for bit
// (including signed zeros and denormals).
static void polarity_exact_negation(void **state) {
  (void)state;
  enum { N = 4096 };
  float x[N], y[N];
  fill_noise(x, N, 6);
  x[0] = 0.0f;
  x[1] = -0.0f;
  x[2] = 1e-40f;
  x[3] = -FLT_MIN;
  polarity_t p;
  polarity_setup(&p, RATE_HZ);
  polarity_set(&p, true); // the first set after setup: at once, no fade
  polarity_compute(&p, x, y, N);
  for (int i = 0; i < N; ++i) {
    const float want = -x[i];
    assert_memory_equal(&y[i], &want, sizeof(float));
  }
  // and back to normal: an exact copy once the fade is over
  polarity_set(&p, false);
  polarity_compute(&p, x, y, N);
  assert_memory_equal(y + p.fade_frames, x + p.fade_frames,
                      (N - p.fade_frames) * sizeof(float));
}

// A toggle crossfades over POLARITY_FADE_S: the gain passes through zero
// halfway, never exceeds 1 in size, and a sine sees no step bigger than its
// own largest step (a click would).
static void polarity_toggle_crossfades(void **state) {
  (void)state;
  enum { N = 4800 };
  float x[N], y[N], one[N], gain[N];
  const double f_hz = 1000.0;
  for (int i = 0; i < N; ++i) {
    x[i] = (float)sin(2.0 * M_PI * f_hz * i / RATE_HZ);
    one[i] = 1.0f;
  }
  polarity_t p, q;
  polarity_setup(&p, RATE_HZ);
  polarity_setup(&q, RATE_HZ);
  assert_int_equal(p.fade_frames, 240); // 5 ms at 48 kHz
  polarity_set(&p, false);
  polarity_set(&q, false);
  polarity_compute(&p, x, y, 100);
  polarity_compute(&q, one, gain, 100);
  polarity_set(&p, true);
  polarity_set(&q, true);
  polarity_compute(&p, x + 100, y + 100, N - 100);
  polarity_compute(&q, one + 100, gain + 100, N - 100);
  for (int i = 0; i < N; ++i) {
    assert_true(fabsf(gain[i]) <= 1.0f);
  }
  assert_float_equal(gain[100 + 120 - 1], 0.0f, 1e-6); // halfway: cos(pi/2)
  assert_true(gain[100 + 240 - 1] == -1.0f);
  const double max_sine_step = 2.0 * sin(M_PI * f_hz / RATE_HZ);
  for (int i = 1; i < N; ++i) {
    assert_true(fabsf(y[i] - y[i - 1]) <= max_sine_step * 1.01);
  }
}

// In place and with separate buffers, the same samples, also mid-fade.
static void polarity_in_place(void **state) {
  (void)state;
  enum { N = 1000 };
  float x[N], y[N], z[N];
  fill_noise(x, N, 7);
  memcpy(z, x, sizeof x);
  polarity_t a, b;
  polarity_setup(&a, RATE_HZ);
  polarity_setup(&b, RATE_HZ);
  polarity_set(&a, false);
  polarity_set(&b, false);
  polarity_set(&a, true);
  polarity_set(&b, true);
  polarity_compute(&a, x, y, N);
  polarity_compute(&b, z, z, N);
  assert_memory_equal(y, z, sizeof y);
}

// The fade length follows the sample rate, at least one frame.
static void polarity_fade_follows_rate(void **state) {
  (void)state;
  polarity_t p;
  polarity_setup(&p, 22050.0);
  assert_int_equal(p.fade_frames, 110); // 110.25 rounded
  polarity_setup(&p, 384000.0);
  assert_int_equal(p.fade_frames, 1920);
  polarity_setup(&p, 1.0);
  assert_int_equal(p.fade_frames, 1);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(smoother_time_constant),
      cmocka_unit_test(smoother_lands_exactly),
      cmocka_unit_test(smoother_zero_tau_follows),
      cmocka_unit_test(gain_law),
      cmocka_unit_test(gain_clamps),
      cmocka_unit_test(gain_settled_exact),
      cmocka_unit_test(gain_first_set_jumps),
      cmocka_unit_test(gain_no_zipper),
      cmocka_unit_test(gain_in_place),
      cmocka_unit_test(block_size_independent),
      cmocka_unit_test(gain_recovers_from_nan),
      cmocka_unit_test(polarity_exact_negation),
      cmocka_unit_test(polarity_toggle_crossfades),
      cmocka_unit_test(polarity_in_place),
      cmocka_unit_test(polarity_fade_follows_rate),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
