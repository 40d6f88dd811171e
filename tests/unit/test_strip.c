// SPDX-License-Identifier: GPL-3.0-or-later
// The Align Strip through lv2_descriptor(), as a host drives it: at the
// defaults a delayed copy bit for bit; each section against the single
// plugin with the same setting, once the latency is aligned; the whole chain
// against the five plugins in series; blocks of any size, run(0), in place,
// NaN input, every rate; stages 0 <-> n without a click.
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

// Strip ports (ttl/strip.ttl), counted from the invert toggles.
enum { DELAY, ANGLE, FREQ, Q, STAGES, ORDER, GAIN, TRIM, LATENCY, N_COMMON };
enum { N = 24000, MAX_PORTS = 12 };

typedef struct {
  const LV2_Descriptor *d;
  LV2_Handle h;
  uint32_t n_ch, n_ctl;
  float ctl[MAX_PORTS];
} Plug;

// Opens uri with n_ctl control ports set to the values given (the output
// ones are overwritten by the plugin), activated.
static void plug_open(Plug *p, const char *uri, double rate_hz, uint32_t n_ch,
                      uint32_t n_ctl, const float *ctl) {
  p->d = find_descriptor(uri);
  assert_non_null(p->d);
  p->h = p->d->instantiate(p->d, rate_hz, "/nonexistent/", NULL);
  assert_non_null(p->h);
  p->n_ch = n_ch;
  p->n_ctl = n_ctl;
  for (uint32_t i = 0; i < n_ctl; ++i) {
    p->ctl[i] = ctl[i];
    p->d->connect_port(p->h, i, &p->ctl[i]);
  }
  p->d->activate(p->h);
}

static void plug_connect(Plug *p, float *const *in, float *const *out) {
  for (uint32_t ch = 0; ch < p->n_ch; ++ch) {
    p->d->connect_port(p->h, p->n_ctl + ch, in[ch]);
    p->d->connect_port(p->h, p->n_ctl + p->n_ch + ch, out[ch]);
  }
}

// Mono, whole buffer, blocks of `block` frames.
static void plug_render(Plug *p, const float *x, float *y, uint32_t n,
                        uint32_t block) {
  for (uint32_t pos = 0; pos < n; pos += block) {
    const uint32_t k = n - pos < block ? n - pos : block;
    float *in[1] = {(float *)x + pos}, *out[1] = {y + pos};
    plug_connect(p, in, out);
    p->d->run(p->h, k);
  }
}

static void plug_close(Plug *p) {
  p->d->cleanup(p->h);
}

// Defaults of the mono strip: no inversion, delay 0, angle 0, the all-pass
// out, gain 1, trim 0.
static void strip_defaults(float *c) {
  const float d[] = {0, 0, 0, 200.0f, 0.707f, 0, 2, 1, 0, -1};
  memcpy(c, d, sizeof d);
}

static float strip_latency(double rate_hz) {
  float c[MAX_PORTS], x[8] = {0}, y[8];
  strip_defaults(c);
  Plug s;
  plug_open(&s, "urn:vernier:strip-mono", rate_hz, 1, 10, c);
  plug_render(&s, x, y, 8, 8);
  const float l = s.ctl[1 + LATENCY];
  plug_close(&s);
  return l;
}

// At the defaults the output is the input late by the reported latency, bit
// for bit, at every rate; the latency is the delay's plus the rotator's,
// both read from the single plugins; it is written on run(0) and with no
// audio connected, and no control moves it.
static void defaults_are_a_delayed_copy(void **state) {
  (void)state;
  const double rates[] = {22050, 44100, 48000, 96000, 192000, 384000};
  static float x[N], y[N];
  fill_noise(x, N, 11);
  for (int i = 0; i < 6; ++i) {
    float c[MAX_PORTS], dc[2] = {0, -1}, rc[2] = {0, -1}, z[8] = {0}, w[8];
    Plug d, r, s;
    plug_open(&d, "urn:vernier:delay-mono", rates[i], 1, 2, dc);
    plug_open(&r, "urn:vernier:rotate-mono", rates[i], 1, 2, rc);
    plug_render(&d, z, w, 8, 8);
    plug_render(&r, z, w, 8, 8);
    const float want = d.ctl[1] + r.ctl[1];
    plug_close(&d);
    plug_close(&r);
    strip_defaults(c);
    plug_open(&s, "urn:vernier:strip-mono", rates[i], 1, 10, c);
    s.d->run(s.h, 0); // audio not connected yet
    assert_true(s.ctl[1 + LATENCY] == want);
    plug_render(&s, x, y, N, 1000);
    const uint32_t l = (uint32_t)want;
    for (uint32_t t = 0; t < N; ++t) {
      const float v = t < l ? 0.0f : x[t - l];
      assert_memory_equal(&y[t], &v, sizeof(float));
    }
    for (int k = 0; k < 3; ++k) { // any controls: the same latency
      s.ctl[1 + LATENCY] = -1;
      s.ctl[1 + DELAY] = k == 0 ? -20.0f : 55.5f;
      s.ctl[1 + ANGLE] = 90.0f * (float)k;
      s.ctl[1 + STAGES] = (float)k;
      s.d->run(s.h, k == 1 ? 0 : 300);
      assert_true(s.ctl[1 + LATENCY] == want);
    }
    plug_close(&s);
  }
  assert_true(strip_latency(44100) == 2312.0f);
  assert_true(strip_latency(48000) == 2518.0f);
  assert_true(strip_latency(96000) == 5014.0f);
  const LV2_Descriptor *sd = find_descriptor("urn:vernier:strip-stereo");
  assert_null(sd->instantiate(sd, 1000.0, "/nonexistent/", NULL));
  assert_null(sd->instantiate(sd, NAN, "/nonexistent/", NULL));
}

// Largest |a[t + shift] - b[t]| over the frames both cover.
static double max_diff(const float *a, const float *b, uint32_t n,
                       uint32_t shift) {
  double m = 0.0;
  for (uint32_t t = 0; t + shift < n; ++t) {
    const double e = fabs((double)a[t + shift] - (double)b[t]);
    m = e > m || isnan(e) ? (isnan(e) ? INFINITY : e) : m;
  }
  return m;
}

// One section set on the strip against the single plugin with the same
// setting: the strip's output is the plugin's, late by the latency the
// plugin does not have. The sections that are exact copies or fixed
// products line up bit for bit; the rotator's FFT partitions fall at other
// places of the signal (it sees it later), so it agrees to rounding.
static void sections_match_single_plugins(void **state) {
  (void)state;
  static float x[N], y[N], ref[N];
  fill_noise(x, N, 12);
  const double rate = 48000.0;
  const uint32_t l = (uint32_t)strip_latency(rate);
  struct {
    const char *uri;
    uint32_t n_ctl;
    float ctl[4];
    int port;       // strip port (from the toggle), -1: the toggle
    float value[4]; // strip values for the plugin's ports, in its order
    uint32_t shift; // frames of the strip's latency the plugin lacks
    double tol;
  } cases[] = {
      {"urn:vernier:polarity-mono", 1, {1}, -1, {1}, l, 0.0},
      {"urn:vernier:delay-mono", 2, {1.2345f, -1}, DELAY, {1.2345f}, 1535, 0.0},
      {"urn:vernier:delay-mono", 2, {-7.89f, -1}, DELAY, {-7.89f}, 1535, 0.0},
      {"urn:vernier:rotate-mono", 2, {37, -1}, ANGLE, {37}, 983, 2e-6},
      {"urn:vernier:allpass-mono",
       4,
       {300, 2, 3, 2},
       FREQ,
       {300, 2, 3, 2},
       l,
       0.0},
      {"urn:vernier:allpass-mono",
       4,
       {90, 1, 2, 1},
       FREQ,
       {90, 1, 2, 1},
       l,
       0.0},
      {"urn:vernier:gain-mono", 2, {-0.6f, 3}, GAIN, {-0.6f, 3}, l, 0.0},
  };
  for (size_t i = 0; i < sizeof cases / sizeof cases[0]; ++i) {
    Plug p, s;
    plug_open(&p, cases[i].uri, rate, 1, cases[i].n_ctl, cases[i].ctl);
    plug_render(&p, x, ref, N, 512);
    plug_close(&p);
    float c[MAX_PORTS];
    strip_defaults(c);
    if (cases[i].port < 0) {
      c[0] = cases[i].value[0];
    } else {
      const uint32_t n_set =
          cases[i].port == DELAY || cases[i].port == ANGLE ? 1 : cases[i].n_ctl;
      for (uint32_t k = 0; k < n_set; ++k) {
        c[1 + (uint32_t)cases[i].port + k] = cases[i].value[k];
      }
    }
    plug_open(&s, "urn:vernier:strip-mono", rate, 1, 10, c);
    plug_render(&s, x, y, N, 512);
    plug_close(&s);
    const double e = max_diff(y, ref, N, cases[i].shift);
    if (e > cases[i].tol) {
      fail_msg("%s: strip differs by %g", cases[i].uri, e);
    }
  }
}

// Everything on at once against the five plugins in series, in the strip's
// order: the same to rounding (the rotator's partitions again).
static void chain_matches_plugins_in_series(void **state) {
  (void)state;
  static float x[N], a[N], b[N];
  fill_noise(x, N, 13);
  const float pol[1] = {1}, del[2] = {0.777f, -1}, rot[2] = {-61, -1};
  const float ap[4] = {150, 0.9f, 2, 2}, gn[2] = {0.8f, -2};
  const char *uri[] = {"urn:vernier:polarity-mono", "urn:vernier:delay-mono",
                       "urn:vernier:rotate-mono", "urn:vernier:allpass-mono",
                       "urn:vernier:gain-mono"};
  const float *ctl[] = {pol, del, rot, ap, gn};
  const uint32_t n_ctl[] = {1, 2, 2, 4, 2};
  memcpy(a, x, sizeof x);
  for (int k = 0; k < 5; ++k) {
    Plug p;
    plug_open(&p, uri[k], 44100.0, 1, n_ctl[k], ctl[k]);
    plug_render(&p, a, a, N, 700); // in place
    plug_close(&p);
  }
  const float c[] = {1, 0.777f, -61, 150, 0.9f, 2, 2, 0.8f, -2, -1};
  Plug s;
  plug_open(&s, "urn:vernier:strip-mono", 44100.0, 1, 10, c);
  plug_render(&s, x, b, N, 333);
  plug_close(&s);
  assert_true(max_diff(b, a, N, 0) < 2e-6);
}

// Control changes at fixed frames (every section, stages 0 -> 3 -> 0 -> 2,
// inversions) give the same stereo output, bit for bit, for blocks of 1, 64,
// 1000 and 4096 frames with run(0) between them, separate buffers or in
// place.
static const uint32_t change_at[] = {0, 900, 3001, 7000, 12000, 17777};
static void apply_change(float *c, int k) {
  switch (k) {
  case 1:
    c[0] = 1, c[2 + STAGES] = 3;
    break;
  case 2:
    c[2 + DELAY] = -3.3f, c[2 + ANGLE] = 120;
    break;
  case 3:
    c[1] = 1, c[2 + STAGES] = 0, c[2 + GAIN] = -0.5f;
    break;
  case 4:
    c[2 + STAGES] = 2, c[2 + ORDER] = 1, c[2 + FREQ] = 2000;
    break;
  case 5:
    c[2 + TRIM] = 6, c[2 + Q] = 4, c[2 + ORDER] = 2;
    break;
  default:
    break;
  }
}

static void render_stereo(float (*x)[N], float (*y)[N], uint32_t block,
                          int in_place) {
  float c[MAX_PORTS] = {0, 0, 0, 0, 200, 0.707f, 0, 2, 1, 0, -1};
  Plug s;
  plug_open(&s, "urn:vernier:strip-stereo", 96000.0, 2, 11, c);
  if (in_place) {
    memcpy(y, x, 2 * N * sizeof(float));
  }
  int next = 0;
  for (uint32_t pos = 0, n; pos < N; pos += n) {
    if (next < 6 && change_at[next] == pos) {
      apply_change(s.ctl, next++);
    }
    n = N - pos < block ? N - pos : block;
    if (next < 6 && pos + n > change_at[next]) {
      n = change_at[next] - pos;
    }
    float *in[2] = {in_place ? y[0] + pos : x[0] + pos,
                    in_place ? y[1] + pos : x[1] + pos};
    float *out[2] = {y[0] + pos, y[1] + pos};
    plug_connect(&s, in, out);
    s.d->run(s.h, n);
    s.d->run(s.h, 0);
  }
  plug_close(&s);
}

static void block_size_and_in_place(void **state) {
  (void)state;
  static float x[2][N], ref[2][N], y[2][N];
  fill_noise(&x[0][0], 2 * N, 14);
  render_stereo(x, ref, 4096, 0);
  const uint32_t blocks[] = {1, 64, 1000, 4096};
  for (int b = 0; b < 4; ++b) {
    for (int ip = 0; ip < 2; ++ip) {
      if (b == 3 && ip == 0) {
        continue;
      }
      render_stereo(x, y, blocks[b], ip);
      assert_memory_equal(ref, y, sizeof ref);
    }
  }
}

// NaN and infinities on input come out as what zeros in their place give:
// the delay stores them as 0 before any filter, so no state is poisoned.
static void nan_input_recovers(void **state) {
  (void)state;
  static float x[N], z[N], y[N], ref[N];
  fill_noise(x, N, 15);
  memcpy(z, x, sizeof x);
  for (int i = 5000; i < 5600; ++i) {
    x[i] = i % 3 ? NAN : (i % 2 ? INFINITY : -INFINITY);
    z[i] = 0.0f;
  }
  const float c[] = {0, 2.5f, 45, 400, 1.5f, 3, 2, 0.9f, 1, -1};
  Plug s, t;
  plug_open(&s, "urn:vernier:strip-mono", 48000.0, 1, 10, c);
  plug_open(&t, "urn:vernier:strip-mono", 48000.0, 1, 10, c);
  plug_render(&s, x, y, N, 512);
  plug_render(&t, z, ref, N, 512);
  for (uint32_t i = 0; i < N; ++i) {
    assert_true(isfinite(y[i]));
    assert_true(y[i] == ref[i]);
  }
  plug_close(&s);
  plug_close(&t);
}

// stages 0 -> 3 -> 0 under a 100 Hz tone: no step larger than the tone's
// own plus the fade's (a switch would jump by up to the tone's amplitude),
// and once faded out the output is again the delayed input, bit for bit.
static void stages_zero_without_click(void **state) {
  (void)state;
  static float x[N], y[N];
  const double rate = 48000.0;
  for (uint32_t t = 0; t < N; ++t) {
    x[t] = (float)(0.5 * sin(2.0 * M_PI * 100.0 * t / rate));
  }
  float c[MAX_PORTS];
  strip_defaults(c);
  Plug s;
  plug_open(&s, "urn:vernier:strip-mono", rate, 1, 10, c);
  const uint32_t l = (uint32_t)strip_latency(rate);
  plug_render(&s, x, y, 6000, 256);
  s.ctl[1 + STAGES] = 3;
  plug_render(&s, x + 6000, y + 6000, 6000, 256);
  s.ctl[1 + STAGES] = 0;
  plug_render(&s, x + 12000, y + 12000, N - 12000, 256);
  plug_close(&s);
  // the tone steps 2 pi 100 / 48000 x 0.5 = 0.0065 at most; the fade adds
  // |wet - dry| <= 1 times pi / 2 / 480 = 0.0033 per frame
  double step = 0.0;
  for (uint32_t t = l + 1; t < N; ++t) {
    const double d = fabs((double)y[t] - (double)y[t - 1]);
    step = d > step ? d : step;
  }
  assert_true(step < 0.011);
  for (uint32_t t = 12000 + 480 + 1; t < N; ++t) {
    assert_memory_equal(&y[t], &x[t - l], sizeof(float));
  }
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(defaults_are_a_delayed_copy),
      cmocka_unit_test(sections_match_single_plugins),
      cmocka_unit_test(chain_matches_plugins_in_series),
      cmocka_unit_test(block_size_and_in_place),
      cmocka_unit_test(nan_input_recovers),
      cmocka_unit_test(stages_zero_without_click),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
