// SPDX-License-Identifier: GPL-3.0-or-later
// The Phase Rotator as a host drives it: the module cut into blocks of any
// size and fed bad input, and the plugin through lv2_descriptor().
// test_plugins.c's generic checks assume an output of +/-input with no
// delay, which a plugin with latency cannot give, so the same ground (rates,
// run(0), in place, first run, stereo against mono, bad controls) is covered
// here. The response is test_hilbert.c's, the angle in time test_rotator.c's.
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>

#include <lv2/core/lv2.h>

#include "descriptor.h"
#include "dsp/rotator.h"
#include "noise.h"
#include "rotator_test.h"

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

// ---------------------------------------------------------------- plugin ----

// Ports (ttl/rotate.ttl): 0 angle, 1 latency, then n ins, then n outs.
typedef struct {
  const LV2_Descriptor *d;
  LV2_Handle h;
  uint32_t n_channels;
  float angle_deg, latency;
} Rig;

static void rig_open(Rig *r, uint32_t n_channels, double rate_hz) {
  r->d = find_descriptor(n_channels == 1 ? "urn:vernier:rotate-mono"
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
  const LV2_Descriptor *d = find_descriptor("urn:vernier:rotate-mono");
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
  const LV2_Descriptor *d = find_descriptor("urn:vernier:rotate-mono");
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
      cmocka_unit_test(block_size_independent),
      cmocka_unit_test(bad_input_recovers),
      cmocka_unit_test(latency_port),
      cmocka_unit_test(first_run_uses_port_value),
      cmocka_unit_test(in_place_and_stereo),
      cmocka_unit_test(bad_controls_clamped),
      cmocka_unit_test(parallel_instantiation),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
