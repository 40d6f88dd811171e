// SPDX-License-Identifier: GPL-3.0-or-later
// The all-pass as a host drives it: the module (plugins/dsp/allpass) cut into
// blocks of any size, in place, fed NaN, infinities and denormals and out of
// range port values, and the allpass plugins through lv2_descriptor(), where
// test_plugins.c's generic checks, which expect out = +-in exactly, do not
// fit an all-pass. The steady state is test_allpass_response.c's, moving
// parameters test_allpass.c's.
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <lv2/core/lv2.h>

#include "allpass_test.h"
#include "descriptor.h"
#include "dsp/allpass.h"
#include "noise.h"

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
    const LV2_Descriptor *d = find_descriptor(
        n_ch == 1 ? "urn:vernier:allpass-mono" : "urn:vernier:allpass-stereo");
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
      cmocka_unit_test(block_size_independent),
      cmocka_unit_test(in_place_matches),
      cmocka_unit_test(nan_recovers),
      cmocka_unit_test(denormals_flushed),
      cmocka_unit_test(ports_clamped_and_rounded),
      cmocka_unit_test(plugin_matches_module),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
