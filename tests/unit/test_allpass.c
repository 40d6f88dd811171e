// SPDX-License-Identifier: GPL-3.0-or-later
// The all-pass (plugins/dsp/allpass) while its parameters move: the first
// set jumps and later ones glide, the glide's per-sample coefficients match
// libm's, a sweep of the frequency across a tone stays bounded, and a change
// of stages or order crossfades without a click. The steady state is
// test_allpass_response.c's; what a host may do (block splits, in place, bad
// samples and port values, the plugin through LV2) test_allpass_plugin.c's.
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "allpass_test.h"
#include "dsp/allpass.h"

// Peak of the output while the frequency port sweeps 20 Hz <-> 20 kHz in
// 50 ms each way (log steps) over a full-scale sine: `block` frames per new
// value; raw turns the glide off, so the coefficients follow every frame.
static float sweep_peak(double rate, double sine_hz, float q, int stages,
                        int order, bool raw) {
  const uint32_t block = raw ? 1 : 32, half = (uint32_t)(0.05 * rate);
  const uint32_t n = (uint32_t)(0.4 * rate) / 32 * 32;
  float *x = malloc(n * sizeof(float)), *y = malloc(n * sizeof(float));
  for (uint32_t i = 0; i < n; ++i) {
    x[i] = (float)sin(2.0 * M_PI * sine_hz * i / rate);
  }
  allpass_t a;
  allpass_setup(&a, rate, 1);
  if (raw) {
    a.log2_freq.pole = 0.0f; // every new value at once
  }
  float peak = 0.0f;
  for (uint32_t i = 0; i < n; i += block) {
    const double phase = (double)(i % (2 * half)) / half; // 0 .. 2
    const double up = phase < 1.0 ? phase : 2.0 - phase;
    allpass_set(&a, (float)(20.0 * pow(1000.0, up)), q, (float)stages,
                (float)order);
    run1(&a, x + i, y + i, block);
    for (uint32_t j = i; j < i + block; ++j) {
      peak = isfinite(y[j]) ? fmaxf(peak, fabsf(y[j])) : INFINITY;
    }
  }
  free(x);
  free(y);
  return peak;
}

// The modulation test: the sweep above on a full-scale sine, output
// never above the input peak + 1 dB, always finite.
//
// +1 dB holds where the filter's memory is short beside the time the sweep
// spends near the tone: a 1 or 3 kHz tone, q 0.3 to 1 on one second-order
// stage, and first-order stages. Elsewhere it cannot hold for any structure:
// a stage's group delay at f0 is 4q/w0 seconds (4.5 ms at 100 Hz, q 0.707;
// 3 ms at 1 kHz, q 10), while the sweep crosses an octave in 5 ms, so the
// swept resonance rings and the ringing adds to the tone. Measured on this
// test at 48 kHz (worst over 20 Hz .. 10 kHz tones, raw): this SVF, one stage:
// +3.5 dB at q 0.707, +5.1 dB at q 10; a normalized (energy-preserving)
// lattice on the same sweep +3.5 and +5.4 dB; a direct-form II transposed
// biquad +10.4 and +8.9 dB, +18 dB at q 0.1. So there the test checks that
// the output stays finite and within +12 dB (worst measured: +10.5 dB, four
// stages, q 0.3, 100 Hz tone).
static void sweep_stays_bounded(void **state) {
  (void)state;
  const float limit = 1.1220185f; // 10^(1/20)
  for (int raw = 0; raw < 2; ++raw) {
    for (int r = 0; r < 2; ++r) {
      const double rate = r ? 96000.0 : 44100.0;
      for (int s = 0; s < 2; ++s) {
        const double tone_hz = s ? 3000.0 : 1000.0;
        const float qs[] = {0.3f, 0.707f, 1.0f};
        for (int k = 0; k < 3; ++k) {
          const float p = sweep_peak(rate, tone_hz, qs[k], 1, 2, raw);
          if (!(p <= limit)) {
            print_error("%g Hz at %g q %g: %g\n", tone_hz, rate, qs[k], p);
          }
          assert_true(p <= limit);
        }
        for (int stages = 1; stages <= 4; ++stages) {
          assert_true(sweep_peak(rate, tone_hz, 1.0f, stages, 1, raw) <= limit);
        }
      }
    }
  }
  const double tones_hz[] = {30, 100, 1000, 5000};
  const float qs[] = {0.1f, 0.707f, 10.0f};
  for (int raw = 0; raw < 2; ++raw) {
    for (int t = 0; t < 4; ++t) {
      for (int k = 0; k < 3 * 2 * 2; ++k) {
        const int stages = k % 2 ? 4 : 1, order = (k / 2) % 2 ? 1 : 2;
        if (order == 1 && k / 4 > 0) {
          continue; // q does not apply to first-order stages
        }
        const float p =
            sweep_peak(48000, tones_hz[t], qs[k / 4], stages, order, raw);
        assert_true(isfinite(p) && p <= 3.981f); // +12 dB
      }
    }
  }
}

// The first set after reset jumps (no glide from the defaults); later ones
// glide in octaves with ALLPASS_GLIDE_TAU_S: after one time constant a step
// has covered 1 - 1/e of its way (the definition of a time constant).
static void first_set_jumps_then_glides(void **state) {
  (void)state;
  allpass_t a;
  allpass_setup(&a, 48000, 1);
  allpass_set(&a, 4000, 2.0f, 3, 1);
  assert_true(a.log2_freq.value == a.log2_freq.target);
  assert_true(a.cascade.stages == 3 && a.cascade.order == 1 && !a.fading);
  assert_true(a.log2_q.value == a.log2_q.target);
  float x[480], y[480];
  memset(x, 0, sizeof x);
  allpass_set(&a, 500, 2.0f, 3, 1); // three octaves down
  run1(&a, x, y, 480);              // 10 ms at 48 kHz
  const double moved = log2(4000.0 / 48000.0) - a.log2_freq.value;
  assert_float_equal(moved / 3.0, 1.0 - exp(-1.0), 2e-3);
}

// While gliding, the per-sample coefficients (fast series for exp2, sin and
// cos) match Simper's SVF coefficients built from libm's tan for the same
// smoothed values, a1 = 1/(1 + g (g + k)), a2 = g a1, a3 = g a2, and the
// first-order pole (1 - g)/(1 + g), within 1e-8, from 20 Hz to 20 kHz and
// q 0.1 to 10 at once.
static void glide_coefficients_accurate(void **state) {
  (void)state;
  for (int order = 1; order <= 2; ++order) {
    allpass_t a;
    allpass_setup(&a, 44100, 1);
    allpass_set(&a, 20, 0.1f, 1, (float)order);
    allpass_set(&a, 20000, 10.0f, 1, (float)order);
    float x = 0.0f, y;
    int checked = 0;
    // until either lands (then the exact libm value takes over for it)
    while (a.log2_freq.value != a.log2_freq.target &&
           a.log2_q.value != a.log2_q.target) {
      run1(&a, &x, &y, 1);
      if (a.log2_freq.value == a.log2_freq.target ||
          a.log2_q.value == a.log2_q.target) {
        break;
      }
      ++checked;
      const double g = tan(M_PI * exp2(a.log2_freq.value));
      const double k = exp2(-(double)a.log2_q.value);
      const double a1 = 1.0 / (1.0 + g * (g + k));
      if (order == 2) {
        assert_float_equal(a.coefs.k, k, 1e-8 * k);
        assert_float_equal(a.coefs.m, 2.0 * a1 - 1.0, 1e-8);
        assert_float_equal(a.coefs.b1, 2.0 * g * a1, 1e-8 * g * a1);
        assert_float_equal(a.coefs.b2, 2.0 * g * g * a1, 1e-8 * g * g * a1);
      } else {
        assert_float_equal(a.coefs.p, (1.0 - g) / (1.0 + g), 1e-8);
      }
    }
    assert_true(checked > 4000); // about 11 time constants of 441 frames
  }
}

// Changing stages or order crossfades: on a sine at f0, where one more stage
// is a sign flip, no sample-to-sample step exceeds the sine's own largest
// step by more than what the 10 ms raised-cosine fade adds (a switch would
// step by up to twice the amplitude). At 100 Hz the fade is shorter than a
// period, at 1 kHz ten periods long.
static void stage_change_does_not_click(void **state) {
  (void)state;
  enum { N = 24000 };
  float *x = malloc(N * sizeof(float)), *y = malloc(N * sizeof(float));
  const double amp = 0.5;
  for (int t = 0; t < 2; ++t) {
    const double f_hz = t ? 100.0 : 1000.0;
    for (int i = 0; i < N; ++i) {
      x[i] = (float)(amp * sin(2.0 * M_PI * f_hz * i / 48000.0));
    }
    allpass_t a;
    allpass_setup(&a, 48000, 1);
    const float plan[][2] = {{1, 2}, {2, 2}, {4, 2}, {1, 2}, {3, 1}, {1, 2}};
    for (int k = 0; k < 6; ++k) {
      allpass_set(&a, (float)f_hz, 0.707f, plan[k][0], plan[k][1]);
      run1(&a, x + k * 4000, y + k * 4000, 4000);
    }
    const double sine_step = 2.0 * amp * sin(M_PI * f_hz / 48000.0);
    const double fade_step = 2.0 * amp * M_PI / (2.0 * a.fade_frames);
    for (int i = 1; i < N; ++i) {
      assert_true(fabsf(y[i] - y[i - 1]) <= 1.1 * sine_step + fade_step);
    }
  }
  free(x);
  free(y);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(sweep_stays_bounded),
      cmocka_unit_test(first_set_jumps_then_glides),
      cmocka_unit_test(glide_coefficients_accurate),
      cmocka_unit_test(stage_change_does_not_click),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
