// SPDX-License-Identifier: GPL-3.0-or-later
// The Fine Delay against what a host may do: bad samples (NaN, infinities,
// huge and denormal values), every sample rate, and the plugin through
// lv2_descriptor(): the latency port, run(0), the first run, in place,
// stereo against mono, bad control values. test_plugins.c's generic checks
// expect out = +-in with no delay, which a plugin with latency cannot give,
// so the same ground is covered here.
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "delay_test.h"
#include "dsp/frac_delay.h"

// NaN and infinities on input are stored as silence: the output is finite
// throughout and, bit for bit, what zeros in their place give. Huge finite
// samples may overflow the FIR's sum while they pass, but leave nothing
// behind: once the FIR's length has gone by, the output is again exactly
// what a delay that never saw them gives. Both settled and mid-glide.
static void bad_input_recovers(void **state) {
  (void)state;
  enum { N = 20000, AT = 3000, LEN = 500 };
  float *x = malloc(N * sizeof(float)), *z = malloc(N * sizeof(float));
  float *y = malloc(N * sizeof(float)), *ref = malloc(N * sizeof(float));
  for (int k = 0; k < 4; ++k) {
    fill_noise(x, N, 3);
    memcpy(z, x, N * sizeof(float));
    for (int i = AT; i < AT + LEN; ++i) {
      x[i] = k % 2 == 0 ? (i % 3 ? NAN : (i % 2 ? INFINITY : -INFINITY))
                        : (i % 2 ? FLT_MAX : -FLT_MAX);
      z[i] = 0.0f;
    }
    frac_delay_t *d = delay_new(48000.0, 1), *q = delay_new(48000.0, 1);
    frac_delay_set_frames(d, 12.37);
    frac_delay_set_frames(q, 12.37);
    if (k >= 2) { // a glide across the bad samples
      frac_delay_set_frames(d, -30.5);
      frac_delay_set_frames(q, -30.5);
    }
    delay_run1(d, x, y, N);
    delay_run1(q, z, ref, N);
    const uint32_t l = frac_delay_latency(d);
    const uint32_t from = k % 2 == 0 ? 0 : AT + LEN + l + 13 + FRAC_DELAY_TAPS;
    for (uint32_t t = 0; t < N; ++t) {
      const bool huge = k % 2 == 1 && t >= AT && t < from;
      assert_true(huge || isfinite(y[t]));
    }
    assert_memory_equal(y + from, ref + from, (N - from) * sizeof(float));
    delay_delete(d);
    delay_delete(q);
  }
  free(x);
  free(z);
  free(y);
  free(ref);
}

// Denormal input, called without the plugin's flush-to-zero guard: a whole
// delay copies it bit for bit; a fraction gives finite output no larger
// than the input's range times the FIR's gain.
static void denormal_input(void **state) {
  (void)state;
  enum { N = 4000 };
  float x[N], y[N];
  for (int i = 0; i < N; ++i) {
    x[i] = (i % 2 ? 1e-39f : -3e-40f) * (float)(1 + i % 7);
  }
  frac_delay_t *d = delay_new(44100.0, 1);
  frac_delay_set_frames(d, 5.0);
  delay_run1(d, x, y, N);
  const uint32_t lag = frac_delay_latency(d) + 5;
  assert_memory_equal(y + lag, x, (N - lag) * sizeof(float));
  frac_delay_set_frames(d, 5.5);
  delay_run1(d, x, y, N);
  for (int i = 0; i < N; ++i) {
    assert_true(isfinite(y[i]) && fabsf(y[i]) < 2e-38f);
  }
  delay_delete(d);
}

// Setup accepts 22.05 to 384 kHz (and 8 to 768 kHz): L is the negative
// limit rounded up to whole frames plus the FIR's 23 frames of look-ahead;
// the longest delay fits the ring: an impulse at both limits comes out where
// it should. Rates and channel counts out of range fail cleanly.
static void every_rate(void **state) {
  (void)state;
  const double rates[] = {8000,  22050,  32000,  44100,  48000,  88200,
                          96000, 176400, 192000, 352800, 384000, 768000};
  for (int ri = 0; ri < 12; ++ri) {
    frac_delay_t *d = delay_new(rates[ri], 1);
    assert_non_null(d);
    const uint32_t neg = (uint32_t)ceil(0.020 * rates[ri]);
    assert_int_equal(frac_delay_latency(d), neg + FRAC_DELAY_HALF_TAPS - 1);
    assert_int_equal(frac_delay_latency_for_rate(rates[ri]),
                     frac_delay_latency(d));
    const double limits[] = {-0.020 * rates[ri], 0.100 * rates[ri]};
    for (int k = 0; k < 2; ++k) {
      const double lag = frac_delay_latency(d) + limits[k];
      const uint32_t n = (uint32_t)lag + FRAC_DELAY_TAPS;
      float *x = calloc(n, sizeof(float)), *y = malloc(n * sizeof(float));
      x[0] = 1.0f;
      frac_delay_reset(d);
      frac_delay_set(d, k == 0 ? -1e9f : 1e9f); // clamped to the limit
      delay_run1(d, x, y, n);
      uint32_t peak = 0;
      for (uint32_t t = 0; t < n; ++t) {
        peak = fabsf(y[t]) > fabsf(y[peak]) ? t : peak;
      }
      assert_int_equal(peak, (uint32_t)lround(lag));
      free(x);
      free(y);
    }
    delay_delete(d);
  }
  const double bad[] = {0.0, -48000.0, NAN, INFINITY, 4000.0, 1e7};
  frac_delay_t d;
  for (int i = 0; i < 6; ++i) {
    assert_int_equal(frac_delay_setup(&d, bad[i], 1), -1);
    frac_delay_free(&d); // safe after a failed setup
  }
  assert_int_equal(frac_delay_setup(&d, 48000.0, 0), -1);
  assert_int_equal(frac_delay_setup(&d, 48000.0, 3), -1);
  frac_delay_free(&d);
}

// ---------------------------------------------------------------- plugin ----

// Ports (ttl/delay.ttl): 0 delay, 1 latency, then n ins, then n outs.
typedef struct {
  const LV2_Descriptor *d;
  LV2_Handle h;
  uint32_t n_channels;
  float delay_ms, latency;
} Rig;

static void rig_open(Rig *r, uint32_t n_channels, double rate_hz) {
  r->d = delay_descriptor(n_channels);
  assert_non_null(r->d);
  r->n_channels = n_channels;
  r->h = r->d->instantiate(r->d, rate_hz, "/nonexistent/", NULL);
  assert_non_null(r->h);
  r->delay_ms = 0.0f;
  r->latency = -1.0f;
  r->d->connect_port(r->h, 0, &r->delay_ms);
  r->d->connect_port(r->h, 1, &r->latency);
}

static void rig_connect(Rig *r, float *const *in, float *const *out) {
  for (uint32_t ch = 0; ch < r->n_channels; ++ch) {
    r->d->connect_port(r->h, 2 + ch, in[ch]);
    r->d->connect_port(r->h, 2 + r->n_channels + ch, out[ch]);
  }
}

// The latency port is written on every run(), run(0) and unconnected audio
// included, and never moves with the delay: 20 ms plus 23 frames.
static void latency_port(void **state) {
  (void)state;
  const double rates[] = {22050, 44100, 48000, 96000, 192000, 384000};
  const float want[] = {464, 905, 983, 1943, 3863, 7703};
  for (int i = 0; i < 6; ++i) {
    Rig r;
    rig_open(&r, 2, rates[i]);
    r.d->activate(r.h);
    r.d->run(r.h, 0); // audio not connected yet
    assert_true(r.latency == want[i]);
    float x[2][300] = {{0}}, y[2][300];
    float *in[2] = {x[0], x[1]}, *out[2] = {y[0], y[1]};
    rig_connect(&r, in, out);
    for (int k = 0; k < 5; ++k) {
      r.latency = -1.0f;
      r.delay_ms = (float)(k * 30 - 20) + 0.37f;
      r.d->run(r.h, k == 2 ? 0 : 300);
      assert_true(r.latency == want[i]);
    }
    r.d->cleanup(r.h);
  }
  const LV2_Descriptor *d = delay_descriptor(1);
  assert_null(d->instantiate(d, 1000.0, "/nonexistent/", NULL));
  assert_null(d->instantiate(d, NAN, "/nonexistent/", NULL));
}

// The first run() after activate() starts at the port value, with no
// history: once the latency is taken out, the net shift is the delay from
// the first frame, negative ones included; after deactivate and activate,
// the old signal does not come out.
static void first_run_net_shift(void **state) {
  (void)state;
  enum { N = 6000 };
  float x[N], y[N];
  fill_noise(x, N, 4);
  Rig r;
  rig_open(&r, 1, 48000.0);
  float *in[1] = {x}, *out[1] = {y};
  rig_connect(&r, in, out);
  const float ms[] = {-20.0f, 2.5f, -0.5f, 0.0f};
  for (int cycle = 0; cycle < 4; ++cycle) {
    r.delay_ms = ms[cycle];
    r.d->activate(r.h);
    r.d->run(r.h, 0);
    r.d->run(r.h, N);
    const int64_t lag = (int64_t)r.latency + lround(ms[cycle] * 48.0);
    for (int64_t t = 0; t < N; ++t) {
      const float want = t < lag ? 0.0f : x[t - lag];
      assert_memory_equal(&y[t], &want, sizeof(float));
    }
    if (r.d->deactivate) {
      r.d->deactivate(r.h);
    }
  }
  r.d->cleanup(r.h);
}

// In place (one buffer for input and output) gives what separate buffers
// give, mid-glide; the stereo variant does to each channel what the mono
// one does.
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
    a.delay_ms = b.delay_ms = half ? -1.234f : 0.37f; // then a glide
    a.d->run(a.h, n);
    b.d->run(b.h, n);
  }
  assert_memory_equal(y, z, sizeof y);
  a.d->cleanup(a.h);
  b.d->cleanup(b.h);
  for (uint32_t ch = 0; ch < 2; ++ch) {
    Rig s;
    rig_open(&s, 1, 44100.0);
    s.d->activate(s.h);
    for (int half = 0; half < 2; ++half) {
      const uint32_t off = half ? HALF : 0, n = half ? N - HALF : HALF;
      float *in[1] = {x[ch] + off}, *out[1] = {m + off};
      rig_connect(&s, in, out);
      s.delay_ms = half ? -1.234f : 0.37f;
      s.d->run(s.h, n);
    }
    assert_memory_equal(m, y[ch], sizeof m);
    s.d->cleanup(s.h);
  }
}

// Out-of-range and non-finite delays: NaN and an unconnected port are the
// default (0), the rest clamp to -20 or +100 ms; at 48 kHz all are whole
// frames, so the output is an exact copy. Denormal input through run(),
// with its flush-to-zero guard, comes out finite.
static void bad_controls_clamped(void **state) {
  (void)state;
  enum { N = 8000 };
  float x[N], y[N];
  fill_noise(x, N, 6);
  const float bad[] = {NAN, INFINITY, -INFINITY, 1e30f, -1e30f, 250.0f, 0.0f};
  const int32_t frames[] = {0, 4800, -960, 4800, -960, 4800, 0};
  for (int i = 0; i < 7; ++i) {
    Rig r;
    rig_open(&r, 1, 48000.0);
    float *in[1] = {x}, *out[1] = {y};
    rig_connect(&r, in, out);
    r.delay_ms = bad[i];
    if (i == 6) {
      r.d->connect_port(r.h, 0, NULL); // the control left unconnected
    }
    r.d->activate(r.h);
    r.d->run(r.h, N);
    const int64_t lag = (int64_t)r.latency + frames[i];
    for (int64_t t = lag; t < N; ++t) {
      assert_memory_equal(&y[t], &x[t - lag], sizeof(float));
    }
    for (int k = 0; k < N; ++k) {
      x[k] = (k % 2 ? 1e-39f : -2e-39f);
    }
    r.delay_ms = 0.37f;
    r.d->run(r.h, N);
    for (int k = 0; k < N; ++k) {
      assert_true(isfinite(y[k]));
    }
    fill_noise(x, N, 6);
    r.d->cleanup(r.h);
  }
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(bad_input_recovers),
      cmocka_unit_test(denormal_input),
      cmocka_unit_test(every_rate),
      cmocka_unit_test(latency_port),
      cmocka_unit_test(first_run_net_shift),
      cmocka_unit_test(in_place_and_stereo),
      cmocka_unit_test(bad_controls_clamped),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
