// SPDX-License-Identifier: GPL-3.0-or-later
// The Phase Rotator: its Hilbert FIR's response, the rotator module, and the
// plugin through lv2_descriptor(). test_plugins.c's generic checks assume an
// output of +/-input with no delay, which a plugin with latency cannot give,
// so the same ground (rates, run(0), in place, first run, stereo against
// mono, bad controls) is covered here.
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <float.h>
#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>

#include <lv2/core/lv2.h>

#include "dsp/hilbert.h"
#include "dsp/rotator.h"

// The accuracy goal of issue 3: +/-0.1 dB and +/-1 degree of the ideal
// rotation, 30 Hz to 20 kHz at 44.1 and 48 kHz and to 40 kHz at 96 kHz.
#define TOL_DB 0.1
#define TOL_DEG 1.0

static void fill_noise(float *x, size_t n, uint32_t seed) {
  for (size_t i = 0; i < n; ++i) {
    seed = seed * 1664525u + 1013904223u; // Numerical Recipes LCG
    x[i] = (float)((double)seed / 2147483648.0 - 1.0);
  }
}

static rotator_t *rotator_new(double rate_hz) {
  rotator_t *r = malloc(sizeof *r);
  assert_non_null(r);
  assert_int_equal(rotator_setup(r, rate_hz), 0);
  return r;
}

static void rotator_delete(rotator_t *r) {
  rotator_free(r);
  free(r);
}

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
  assert_float_equal(hilbert_kaiser_beta(50.0), 4.533514, 1e-6);
  assert_float_equal(hilbert_kaiser_beta(60.0), 5.65326, 1e-5);
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

// Angle changes at fixed sample positions (a host splits its blocks at
// automation points), across the +/-180 seam and by half turns: the output
// is the same, bit for bit, for blocks of 1, 63, 512 and 4096 frames, with
// run(0) between them.
enum { STREAM = 30000 };
static const uint32_t change_at[] = {0, 700, 5003, 9000, 14000, 20001, 26000};
static const float angle_at[] = {30.0f,  170.0f, -170.0f, 0.0f,
                                 180.0f, -95.5f, 179.0f};
#define N_CHANGES (sizeof change_at / sizeof change_at[0])

static void run_blocked(rotator_t *r, const float *x, float *y,
                        uint32_t block) {
  size_t next = 0;
  for (uint32_t pos = 0, n; pos < STREAM; pos += n) {
    if (next < N_CHANGES && change_at[next] == pos) {
      rotator_set(r, angle_at[next++]);
    }
    n = pos + block > STREAM ? STREAM - pos : block;
    if (next < N_CHANGES && pos + n > change_at[next]) {
      n = change_at[next] - pos;
    }
    rotator_compute(r, x + pos, y + pos, n);
    rotator_compute(r, x + pos, y + pos, 0);
  }
}

static void block_size_independent(void **state) {
  (void)state;
  float *x = malloc(STREAM * sizeof(float));
  float *ref = malloc(STREAM * sizeof(float));
  float *y = malloc(STREAM * sizeof(float));
  fill_noise(x, STREAM, 2);
  const uint32_t blocks[] = {1, 63, 512, 4096};
  for (int b = 0; b < 4; ++b) {
    rotator_t *r = rotator_new(44100.0);
    run_blocked(r, x, b == 0 ? ref : y, blocks[b]);
    if (b > 0) {
      assert_memory_equal(ref, y, STREAM * sizeof(float));
    }
    rotator_delete(r);
  }
  free(x);
  free(ref);
  free(y);
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

// NaN and infinities on input are taken as silence before they reach the
// filter: the output is finite throughout and, bit for bit, what zeros in
// their place give. Finite input so large that the FFT overflows clears the
// convolver's history; once the FIR length has passed, the output is again
// exactly what a rotator that never saw it gives.
static void bad_input_recovers(void **state) {
  (void)state;
  enum { N = 24000, AT = 3000, LEN = 700 };
  float *x = malloc(N * sizeof(float)), *z = malloc(N * sizeof(float));
  float *y = malloc(N * sizeof(float)), *ref = malloc(N * sizeof(float));
  fill_noise(x, N, 3);
  memcpy(z, x, N * sizeof(float));
  for (int k = 0; k < 2; ++k) {
    for (int i = AT; i < AT + LEN; ++i) {
      x[i] = k == 0 ? (i % 3 ? NAN : (i % 2 ? INFINITY : -INFINITY))
                    : (i % 2 ? 3e38f : -3e38f);
      z[i] = 0.0f;
    }
    rotator_t *r = rotator_new(48000.0), *q = rotator_new(48000.0);
    rotator_set(r, 37.0f);
    rotator_set(q, 37.0f);
    rotator_compute(r, x, y, N);
    rotator_compute(q, z, ref, N);
    const uint32_t l = rotator_latency(r), b = r->hilbert.block_frames;
    // the huge samples themselves come out, L late, as what they are
    const uint32_t from = k == 0 ? 0 : AT + LEN + l + r->n_taps + 2 * b;
    for (uint32_t t = 0; t < N; ++t) {
      const bool huge = k == 1 && t >= AT + l && t < AT + LEN + l;
      assert_true(huge || isfinite(y[t]));
    }
    assert_memory_equal(y + from, ref + from, (N - from) * sizeof(float));
    rotator_delete(r);
    rotator_delete(q);
  }
  free(x);
  free(z);
  free(y);
  free(ref);
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

// ---------------------------------------------------------------- plugin ----

static const LV2_Descriptor *find(const char *uri) {
  for (uint32_t i = 0; lv2_descriptor(i); ++i) {
    if (!strcmp(lv2_descriptor(i)->URI, uri)) {
      return lv2_descriptor(i);
    }
  }
  return NULL;
}

// Ports (ttl/rotate.ttl): 0 angle, 1 latency, then n ins, then n outs.
typedef struct {
  const LV2_Descriptor *d;
  LV2_Handle h;
  uint32_t n_channels;
  float angle_deg, latency;
} Rig;

static void rig_open(Rig *r, uint32_t n_channels, double rate_hz) {
  r->d = find(n_channels == 1 ? "urn:vernier:rotate-mono"
                              : "urn:vernier:rotate-stereo");
  assert_non_null(r->d);
  r->n_channels = n_channels;
  r->h = r->d->instantiate(r->d, rate_hz, "/nonexistent/", NULL);
  assert_non_null(r->h);
  r->angle_deg = 0.0f;
  r->latency = -1.0f;
  r->d->connect_port(r->h, 0, &r->angle_deg);
  r->d->connect_port(r->h, 1, &r->latency);
}

static void rig_connect(Rig *r, float *const *in, float *const *out) {
  for (uint32_t ch = 0; ch < r->n_channels; ++ch) {
    r->d->connect_port(r->h, 2 + ch, in[ch]);
    r->d->connect_port(r->h, 2 + r->n_channels + ch, out[ch]);
  }
}

static void rig_close(Rig *r) {
  r->d->cleanup(r->h);
}

// The latency port is written on every run(), run(0) and unconnected audio
// included, and does not change with the angle. Out-of-range rates give no
// instance.
static void latency_port(void **state) {
  (void)state;
  const double rates[] = {22050, 44100, 48000, 96000, 192000, 384000};
  const float want[] = {703, 1407, 1535, 3071, 6143, 12287};
  for (int i = 0; i < 6; ++i) {
    Rig r;
    rig_open(&r, 2, rates[i]);
    r.d->activate(r.h);
    r.d->run(r.h, 0); // audio not connected yet
    assert_true(r.latency == want[i]);
    float x[2][300] = {{0}}, y[2][300];
    float *in[2] = {x[0], x[1]}, *out[2] = {y[0], y[1]};
    rig_connect(&r, in, out);
    for (int k = 0; k < 4; ++k) {
      r.latency = -1.0f;
      r.angle_deg = (float)(k * 70 - 100);
      r.d->run(r.h, k == 2 ? 0 : 300);
      assert_true(r.latency == want[i]);
    }
    rig_close(&r);
  }
  const LV2_Descriptor *d = find("urn:vernier:rotate-mono");
  assert_null(d->instantiate(d, 1000.0, "/nonexistent/", NULL));
  assert_null(d->instantiate(d, NAN, "/nonexistent/", NULL));
}

// The first run() after activate() starts at the port value (an exact,
// delayed inversion from the first sample), with no history: after
// deactivate and activate, the old signal does not come out.
static void first_run_uses_port_value(void **state) {
  (void)state;
  enum { N = 4000 };
  float x[N], y[N];
  fill_noise(x, N, 4);
  Rig r;
  rig_open(&r, 1, 48000.0);
  float *in[1] = {x}, *out[1] = {y};
  rig_connect(&r, in, out);
  for (int cycle = 0; cycle < 2; ++cycle) {
    r.angle_deg = cycle == 0 ? 180.0f : 0.0f;
    r.d->activate(r.h);
    r.d->run(r.h, 0);
    r.d->run(r.h, N);
    const uint32_t l = (uint32_t)r.latency;
    for (uint32_t t = 0; t < N; ++t) {
      const float v = t < l ? 0.0f : x[t - l];
      const float want = cycle == 0 ? -v : v;
      assert_memory_equal(&y[t], &want, sizeof(float));
    }
    if (r.d->deactivate) {
      r.d->deactivate(r.h);
    }
  }
  rig_close(&r);
}

// In place (one buffer for input and output) gives what separate buffers
// give, while the angle turns; the stereo variant does to each channel what
// the mono one does.
static void in_place_and_stereo(void **state) {
  (void)state;
  enum { N = 6000, HALF = 2500 };
  static float x[2][N], y[2][N], z[2][N], m[N];
  fill_noise(&x[0][0], 2 * N, 5);
  memcpy(z, x, sizeof x);
  Rig a, b;
  rig_open(&a, 2, 44100.0);
  rig_open(&b, 2, 44100.0);
  a.d->activate(a.h);
  b.d->activate(b.h);
  for (int half = 0; half < 2; ++half) {
    const uint32_t off = half ? HALF : 0, n = half ? N - HALF : HALF;
    float *in[2] = {x[0] + off, x[1] + off}, *out[2] = {y[0] + off, y[1] + off};
    float *io[2] = {z[0] + off, z[1] + off};
    rig_connect(&a, in, out);
    rig_connect(&b, io, io);
    a.angle_deg = b.angle_deg = half ? -120.0f : 45.0f; // then a turn
    a.d->run(a.h, n);
    b.d->run(b.h, n);
  }
  assert_memory_equal(y, z, sizeof y);
  rig_close(&a);
  rig_close(&b);
  for (uint32_t ch = 0; ch < 2; ++ch) {
    Rig s;
    rig_open(&s, 1, 44100.0);
    s.d->activate(s.h);
    for (int half = 0; half < 2; ++half) {
      const uint32_t off = half ? HALF : 0, n = half ? N - HALF : HALF;
      float *in[1] = {x[ch] + off}, *out[1] = {m + off};
      rig_connect(&s, in, out);
      s.angle_deg = half ? -120.0f : 45.0f;
      s.d->run(s.h, n);
    }
    assert_memory_equal(m, y[ch], sizeof m);
    rig_close(&s);
  }
}

// Out-of-range and non-finite angles: NaN is the default (0, an exact
// delay), the rest clamp to +/-180 (an exact inversion).
static void bad_controls_clamped(void **state) {
  (void)state;
  enum { N = 3000 };
  float x[N], y[N];
  fill_noise(x, N, 6);
  const float bad[] = {NAN, INFINITY, -INFINITY, 1e30f, -1e30f, 540.0f};
  for (int i = 0; i < 6; ++i) {
    Rig r;
    rig_open(&r, 1, 48000.0);
    float *in[1] = {x}, *out[1] = {y};
    rig_connect(&r, in, out);
    r.angle_deg = bad[i];
    r.d->activate(r.h);
    r.d->run(r.h, N);
    const uint32_t l = (uint32_t)r.latency;
    for (uint32_t t = l; t < N; ++t) {
      const float want = i == 0 ? x[t - l] : -x[t - l];
      assert_memory_equal(&y[t], &want, sizeof(float));
    }
    rig_close(&r);
  }
}

// Hosts may instantiate from several threads at once; FFTW's planner is not
// thread-safe (FFTW manual, "Thread safety"), so the convolver serialises
// it. Four threads instantiating and running at once: every instance works.
static void *instantiate_many(void *arg) {
  const LV2_Descriptor *d = arg;
  float x[64], y[64], angle = 0.0f, latency;
  fill_noise(x, 64, 8);
  for (int k = 0; k < 12; ++k) {
    LV2_Handle h = d->instantiate(d, k % 2 ? 96000.0 : 44100.0, "", NULL);
    if (!h) {
      return "instantiate failed";
    }
    d->connect_port(h, 0, &angle);
    d->connect_port(h, 1, &latency);
    d->connect_port(h, 2, x);
    d->connect_port(h, 3, y);
    d->activate(h);
    d->run(h, 64);
    d->cleanup(h);
    if (latency != (k % 2 ? 3071.0f : 1407.0f)) {
      return "wrong latency";
    }
  }
  return NULL;
}

static void parallel_instantiation(void **state) {
  (void)state;
  pthread_t t[4];
  const LV2_Descriptor *d = find("urn:vernier:rotate-mono");
  for (int i = 0; i < 4; ++i) {
    assert_int_equal(pthread_create(&t[i], NULL, instantiate_many, (void *)d),
                     0);
  }
  for (int i = 0; i < 4; ++i) {
    void *why = NULL;
    assert_int_equal(pthread_join(t[i], &why), 0);
    assert_null(why);
  }
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(kaiser_formulas),
      cmocka_unit_test(fir_response),
      cmocka_unit_test(impulse_response),
      cmocka_unit_test(quarter_turns_exact),
      cmocka_unit_test(sign_convention),
      cmocka_unit_test(block_size_independent),
      cmocka_unit_test(shortest_arc),
      cmocka_unit_test(no_click_on_steps),
      cmocka_unit_test(bad_input_recovers),
      cmocka_unit_test(every_rate),
      cmocka_unit_test(latency_port),
      cmocka_unit_test(first_run_uses_port_value),
      cmocka_unit_test(in_place_and_stereo),
      cmocka_unit_test(bad_controls_clamped),
      cmocka_unit_test(parallel_instantiation),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
