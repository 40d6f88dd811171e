// SPDX-License-Identifier: GPL-3.0-or-later
// The plugins through their LV2 interface (lv2_descriptor), without a host
// library: discovery, every sample rate, run(0), any block size, in place,
// the first run() after activate(), mono against stereo.
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <lv2/core/lv2.h>

#include "descriptor.h"
#include "noise.h"

#define MAX_PORTS 8
#define MAX_CH 2

typedef struct {
  const char *uri;
  uint32_t n_controls; // control inputs first, then audio ins, then outs
  uint32_t n_channels;
} Layout;

// Mirrors ttl/gain.ttl and ttl/polarity.ttl.
static const Layout layouts[] = {
    {"urn:vernier:gain-mono", 2, 1},
    {"urn:vernier:gain-stereo", 2, 2},
    {"urn:vernier:polarity-mono", 1, 1},
    {"urn:vernier:polarity-stereo", 2, 2},
};
#define N_LAYOUTS (sizeof layouts / sizeof layouts[0])

// One plugin instance with its ports connected to our buffers.
typedef struct {
  const LV2_Descriptor *d;
  const Layout *layout;
  LV2_Handle h;
  float control[MAX_PORTS];
} Rig;

static void rig_open(Rig *r, const Layout *l, double rate_hz) {
  r->layout = l;
  r->d = find_descriptor(l->uri);
  assert_non_null(r->d);
  r->h = r->d->instantiate(r->d, rate_hz, "/nonexistent/", NULL);
  assert_non_null(r->h);
  memset(r->control, 0, sizeof r->control);
  for (uint32_t p = 0; p < l->n_controls; ++p) {
    r->d->connect_port(r->h, p, &r->control[p]);
  }
}

static void rig_connect(Rig *r, float *const *in, float *const *out) {
  const Layout *l = r->layout;
  for (uint32_t ch = 0; ch < l->n_channels; ++ch) {
    r->d->connect_port(r->h, l->n_controls + ch, in[ch]);
    r->d->connect_port(r->h, l->n_controls + l->n_channels + ch, out[ch]);
  }
}

static void rig_close(Rig *r) {
  if (r->d->deactivate) {
    r->d->deactivate(r->h);
  }
  r->d->cleanup(r->h);
}

// Discovery: four plugins, unique URIs in our namespace, NULL past the end.
static void descriptors_listed(void **state) {
  (void)state;
  uint32_t n = 0;
  while (lv2_descriptor(n)) {
    const char *uri = lv2_descriptor(n)->URI;
    assert_int_equal(strncmp(uri, "urn:vernier:", 12), 0);
    for (uint32_t k = 0; k < n; ++k) {
      assert_string_not_equal(uri, lv2_descriptor(k)->URI);
    }
    ++n;
  }
  assert_true(n >= N_LAYOUTS);
  for (size_t i = 0; i < N_LAYOUTS; ++i) {
    assert_non_null(find_descriptor(layouts[i].uri));
  }
  assert_null(lv2_descriptor(1000));
}

// Every rate from 22.05 to 384 kHz, run(0) first, random block sizes
// including 0 and 1, controls at the edges of their ranges: finite output no
// larger than the input times the largest gain (2 x +24 dB = 15.85).
static void any_rate_any_block(void **state) {
  (void)state;
  const double rates[] = {22050, 44100, 48000, 88200, 96000, 192000, 384000};
  enum { N = 20000 };
  float *x = malloc(MAX_CH * N * sizeof(float));
  float *y = malloc(MAX_CH * N * sizeof(float));
  fill_noise(x, MAX_CH * N, 11);
  uint32_t seed = 99;
  for (size_t li = 0; li < N_LAYOUTS; ++li) {
    for (size_t ri = 0; ri < 7; ++ri) {
      Rig r;
      rig_open(&r, &layouts[li], rates[ri]);
      r.d->activate(r.h);
      uint32_t pos = 0;
      while (pos < N) {
        seed = seed * 1664525u + 1013904223u;
        uint32_t n = (seed >> 8) % 700; // 0 .. 699
        if (pos + n > N) {
          n = N - pos;
        }
        for (uint32_t p = 0; p < r.layout->n_controls; ++p) {
          r.control[p] = (seed >> (p + 3)) & 1 ? 1.0f : -1.0f;
        }
        if (r.layout->n_controls == 2 && r.d->URI[12] == 'g') {
          r.control[1] = (seed & 16) ? 24.0f : -24.0f; // trim in dB
        }
        float *in[MAX_CH] = {x + pos, x + N + pos};
        float *out[MAX_CH] = {y + pos, y + N + pos};
        rig_connect(&r, in, out);
        r.d->run(r.h, n);
        pos += n;
      }
      for (uint32_t i = 0; i < N * r.layout->n_channels; ++i) {
        const uint32_t ch = i / N, k = i % N;
        assert_true(isfinite(y[ch * N + k]));
        assert_true(fabsf(y[ch * N + k]) <= fabsf(x[ch * N + k]) * 15.85f);
      }
      rig_close(&r);
    }
  }
  free(x);
  free(y);
}

// The first run() after activate() starts at the port values: gain -1 or
// polarity inverted is an exact negation from the very first sample. After
// deactivate() and activate() the new port value applies at once again.
static void first_run_uses_port_values(void **state) {
  (void)state;
  enum { N = 512 };
  float x[MAX_CH][N], y[MAX_CH][N];
  fill_noise(&x[0][0], MAX_CH * N, 12);
  for (size_t li = 0; li < N_LAYOUTS; ++li) {
    Rig r;
    rig_open(&r, &layouts[li], 48000);
    float *in[MAX_CH] = {x[0], x[1]}, *out[MAX_CH] = {y[0], y[1]};
    rig_connect(&r, in, out);
    for (int cycle = 0; cycle < 2; ++cycle) {
      const float v = cycle == 0 ? 1.0f : 0.0f; // invert, then not
      for (uint32_t p = 0; p < r.layout->n_controls; ++p) {
        r.control[p] = 0.0f;
      }
      // gain: -1 then +1; polarity: every invert toggle on then off
      if (r.d->URI[12] == 'g') {
        r.control[0] = cycle == 0 ? -1.0f : 1.0f;
      } else {
        for (uint32_t p = 0; p < r.layout->n_controls; ++p) {
          r.control[p] = v;
        }
      }
      r.d->activate(r.h);
      r.d->run(r.h, 0);
      r.d->run(r.h, N);
      for (uint32_t ch = 0; ch < r.layout->n_channels; ++ch) {
        for (int i = 0; i < N; ++i) {
          const float want = cycle == 0 ? -x[ch][i] : x[ch][i];
          assert_memory_equal(&y[ch][i], &want, sizeof(float));
        }
      }
      if (r.d->deactivate) {
        r.d->deactivate(r.h);
      }
    }
    r.d->cleanup(r.h);
  }
}

// In place (input and output the same buffer) gives the same samples as
// separate buffers, while a change ramps.
static void in_place_matches(void **state) {
  (void)state;
  enum { N = 3000 };
  float x[MAX_CH][N], y[MAX_CH][N], z[MAX_CH][N];
  fill_noise(&x[0][0], MAX_CH * N, 13);
  memcpy(z, x, sizeof x);
  for (size_t li = 0; li < N_LAYOUTS; ++li) {
    Rig a, b;
    rig_open(&a, &layouts[li], 44100);
    rig_open(&b, &layouts[li], 44100);
    float *in[MAX_CH] = {x[0], x[1]}, *out[MAX_CH] = {y[0], y[1]};
    float *io[MAX_CH] = {z[0], z[1]};
    rig_connect(&a, in, out);
    rig_connect(&b, io, io);
    a.d->activate(a.h);
    b.d->activate(b.h);
    // gain 0.5, or polarity inverted
    a.control[0] = b.control[0] = a.d->URI[12] == 'g' ? 0.5f : 1.0f;
    a.d->run(a.h, 1000);
    b.d->run(b.h, 1000);
    a.control[0] = b.control[0] = 0.0f; // a ramp / a crossfade
    float *in2[MAX_CH] = {x[0] + 1000, x[1] + 1000};
    float *out2[MAX_CH] = {y[0] + 1000, y[1] + 1000};
    float *io2[MAX_CH] = {z[0] + 1000, z[1] + 1000};
    rig_connect(&a, in2, out2);
    rig_connect(&b, io2, io2);
    a.d->run(a.h, N - 1000);
    b.d->run(b.h, N - 1000);
    for (uint32_t ch = 0; ch < a.layout->n_channels; ++ch) {
      assert_memory_equal(y[ch], z[ch], sizeof y[ch]);
    }
    rig_close(&a);
    rig_close(&b);
    memcpy(z, x, sizeof x);
  }
}

// A stereo variant does to each channel what the mono variant does.
static void stereo_matches_mono(void **state) {
  (void)state;
  enum { N = 4000 };
  float x[MAX_CH][N], ys[MAX_CH][N], ym[MAX_CH][N];
  fill_noise(&x[0][0], MAX_CH * N, 14);
  const char *pairs[2][2] = {
      {"urn:vernier:gain-mono", "urn:vernier:gain-stereo"},
      {"urn:vernier:polarity-mono", "urn:vernier:polarity-stereo"}};
  for (int k = 0; k < 2; ++k) {
    const Layout *lm = NULL, *ls = NULL;
    for (size_t li = 0; li < N_LAYOUTS; ++li) {
      lm = strcmp(layouts[li].uri, pairs[k][0]) ? lm : &layouts[li];
      ls = strcmp(layouts[li].uri, pairs[k][1]) ? ls : &layouts[li];
    }
    Rig s;
    rig_open(&s, ls, 96000);
    float *in[MAX_CH] = {x[0], x[1]}, *out[MAX_CH] = {ys[0], ys[1]};
    rig_connect(&s, in, out);
    // gain: gain -0.4, trim 5 dB; polarity: left normal, right inverted
    s.control[0] = k == 0 ? -0.4f : 0.0f;
    s.control[1] = k == 0 ? 5.0f : 1.0f;
    s.d->activate(s.h);
    s.d->run(s.h, N);
    rig_close(&s);
    for (uint32_t ch = 0; ch < 2; ++ch) {
      Rig m;
      rig_open(&m, lm, 96000);
      float *mi[MAX_CH] = {x[ch]}, *mo[MAX_CH] = {ym[ch]};
      rig_connect(&m, mi, mo);
      if (k == 0) {
        m.control[0] = -0.4f;
        m.control[1] = 5.0f;
      } else {
        m.control[0] = (float)ch;
      }
      m.d->activate(m.h);
      m.d->run(m.h, N);
      rig_close(&m);
      assert_memory_equal(ys[ch], ym[ch], sizeof ys[ch]);
    }
  }
}

// Out-of-range and non-finite control values are clamped, never NaN out.
static void bad_controls_clamped(void **state) {
  (void)state;
  enum { N = 256 };
  float x[MAX_CH][N], y[MAX_CH][N];
  fill_noise(&x[0][0], MAX_CH * N, 15);
  const float bad[] = {NAN, INFINITY, -INFINITY, 1e30f, -1e30f, 3.0f};
  for (size_t li = 0; li < N_LAYOUTS; ++li) {
    Rig r;
    rig_open(&r, &layouts[li], 48000);
    float *in[MAX_CH] = {x[0], x[1]}, *out[MAX_CH] = {y[0], y[1]};
    rig_connect(&r, in, out);
    r.d->activate(r.h);
    for (size_t b = 0; b < 6; ++b) {
      for (uint32_t p = 0; p < r.layout->n_controls; ++p) {
        r.control[p] = bad[(b + p) % 6];
      }
      r.d->run(r.h, N);
      for (uint32_t ch = 0; ch < r.layout->n_channels; ++ch) {
        for (int i = 0; i < N; ++i) {
          assert_true(isfinite(y[ch][i]));
          assert_true(fabsf(y[ch][i]) <= fabsf(x[ch][i]) * 15.85f);
        }
      }
    }
    rig_close(&r);
  }
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(descriptors_listed),
      cmocka_unit_test(any_rate_any_block),
      cmocka_unit_test(first_run_uses_port_values),
      cmocka_unit_test(in_place_matches),
      cmocka_unit_test(stereo_matches_mono),
      cmocka_unit_test(bad_controls_clamped),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
