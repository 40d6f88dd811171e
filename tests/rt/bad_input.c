// SPDX-License-Identifier: GPL-3.0-or-later
// Bad numbers on the audio inputs, and bad values on the control inputs.
//
// Audio: noise at 0.5, then a burst of bad samples, then noise again for
// the plugin's memory (rt_memory_frames) and 4096 frames more. NaN and
// infinities may come out during the burst and the memory after it; past
// that the output must be finite and within the bound for the noise, as if
// they had never been. Samples near FLT_MAX are finite, so they are real
// signal that stays in an all-pass's states: past the memory (which then
// includes the settle time) the output must be finite. Denormals, squares
// at full scale and DC are ordinary signal: finite and bounded throughout.
//
// Controls: each control port alone at NaN, +-inf, +-FLT_MAX, +-1e30 and
// one past either end, beside an instance given the value the plugin should
// take instead (the range's end, or for NaN the default): both outputs must
// be finite and the same, bit for bit.
#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "rt.h"

#define NOISE 0.5f
#define PRE_FRAMES 4096u
#define POST_FRAMES 4096u

typedef enum {
  BAD_NAN,
  BAD_POS_INF,
  BAD_NEG_INF,
  BAD_POS_MAX,
  BAD_NEG_MAX,
  BAD_ALT_MAX,
  BAD_MIXED,
  BAD_DENORMAL,
  BAD_SQUARE,
  BAD_DC_POS,
  BAD_DC_NEG,
  BAD_KINDS
} bad_kind_t;

static const char *const kind_name[BAD_KINDS] = {
    "NaN",   "+inf",     "-inf",   "+FLT_MAX", "-FLT_MAX", "+-FLT_MAX",
    "mixed", "denormal", "square", "DC +1",    "DC -1"};

static bool kind_is_huge(bad_kind_t k) {
  return k == BAD_POS_MAX || k == BAD_NEG_MAX || k == BAD_ALT_MAX ||
         k == BAD_MIXED;
}
static bool kind_is_signal(bad_kind_t k) {
  return k >= BAD_DENORMAL;
}

static float bad_sample(bad_kind_t k, uint64_t i, rng_t *r) {
  static const float mix[] = {NAN,     INFINITY, -INFINITY,
                              FLT_MAX, -FLT_MAX, 0.25f};
  switch (k) {
  case BAD_NAN:
    return NAN;
  case BAD_POS_INF:
    return INFINITY;
  case BAD_NEG_INF:
    return -INFINITY;
  case BAD_POS_MAX:
    return FLT_MAX;
  case BAD_NEG_MAX:
    return -FLT_MAX;
  case BAD_ALT_MAX:
    return i & 1 ? FLT_MAX : -FLT_MAX;
  case BAD_MIXED:
    return mix[rng_below(r, 6)];
  case BAD_DENORMAL: // the whole denormal range, both signs
    return (float)((rng_unit(r) - 0.5) * 2.0 * FLT_MIN);
  case BAD_SQUARE:
    return (i / 37) & 1 ? 1.0f : -1.0f;
  case BAD_DC_POS:
    return 1.0f;
  default:
    return -1.0f;
  }
}

static float in_buf[RT_MAX_CHANNELS][RT_MAX_BLOCK];
static float out_buf[2][RT_MAX_CHANNELS][RT_MAX_BLOCK];

// An instance with every port connected: controls to ctl, latency to a
// local, audio to in_buf and out_buf[which]. NULL on failure.
static LV2_Handle open_instance(const plugin_info_t *p, double rate, float *ctl,
                                float *latency, int which) {
  const LV2_Feature *features[] = {NULL};
  LV2_Handle h = p->d->instantiate(p->d, rate, "", features);
  if (!h) {
    return NULL;
  }
  uint32_t ci = 0, co = 0;
  for (uint32_t i = 0; i < p->n_ports; ++i) {
    const port_kind_t k = p->port[i].kind;
    p->d->connect_port(h, i,
                       k == PORT_CONTROL_IN ? (void *)&ctl[i]
                       : k == PORT_LATENCY  ? (void *)latency
                       : k == PORT_AUDIO_IN ? (void *)in_buf[ci++]
                                            : (void *)out_buf[which][co++]);
  }
  p->d->activate(h);
  ++rt_tally.activations;
  return h;
}

static void one_bad_case(const plugin_info_t *p, double rate, bad_kind_t kind,
                         uint32_t burst, uint64_t seed) {
  rng_t r = {seed};
  float ctl[RT_MAX_PORTS], latency = 0;
  for (uint32_t i = 0; i < p->n_ports; ++i) {
    ctl[i] = rt_draw_control(&r, &p->port[i], 0.0);
  }
  LV2_Handle h = open_instance(p, rate, ctl, &latency, 0);
  if (!rt_check(h != NULL, "%s: instantiate at %.0f Hz failed", p->uri, rate)) {
    return;
  }
  ++rt_tally.bad_cases;
  const uint64_t clean_from =
      PRE_FRAMES + burst + rt_memory_frames(p, rate, kind_is_huge(kind));
  const uint64_t total = clean_from + POST_FRAMES;
  const double limit_clean = NOISE * rt_gain_bound(p, rate);
  const double limit_signal = rt_gain_bound(p, rate); // peak 1 in the burst
  uint64_t t = 0;
  char where[200];
  snprintf(where, sizeof where, "seed %llu %s %.0f Hz, %s x %u",
           (unsigned long long)seed, p->uri, rate, kind_name[kind], burst);
  while (t < total) {
    uint32_t n = rt_draw_block(&r);
    n = n > total - t ? (uint32_t)(total - t) : n;
    for (uint32_t ch = 0; ch < p->n_channels; ++ch) {
      for (uint32_t i = 0; i < n; ++i) {
        const uint64_t at = t + i;
        in_buf[ch][i] = at >= PRE_FRAMES && at < PRE_FRAMES + burst
                            ? bad_sample(kind, at, &r)
                            : NOISE * (float)(2.0 * rng_unit(&r) - 1.0);
      }
    }
    if (!rt_run(p, h, n, where)) {
      break;
    }
    for (uint32_t ch = 0; ch < p->n_channels; ++ch) {
      for (uint32_t i = 0; i < n; ++i) {
        const uint64_t at = t + i;
        const float y = out_buf[0][ch][i];
        const bool must = kind_is_signal(kind) || at >= clean_from;
        // Huge samples still ring in an all-pass past clean_from: finite
        // there is all that may be asked.
        const double lim = at < PRE_FRAMES        ? limit_clean
                           : kind == BAD_DENORMAL ? limit_clean // peak 0.5
                           : kind_is_signal(kind) ? limit_signal
                           : at >= clean_from && !kind_is_huge(kind)
                               ? limit_clean
                               : INFINITY;
        if (must && !(isfinite(y) && fabs(y) <= lim)) {
          rt_check(false, "%s: out %g at frame %llu (clean from %llu)", where,
                   y, (unsigned long long)at, (unsigned long long)clean_from);
          t = total; // one message a case
          break;
        }
      }
    }
    t += n;
  }
  ++rt_tally.checks;
  p->d->cleanup(h);
}

uint64_t rt_bad_input(const plugin_info_t *plugins, uint32_t n_plugins,
                      uint64_t seed) {
  const uint64_t failures = rt_tally.failures;
  const double rates[] = {22050, 48000, 384000};
  const uint32_t bursts[] = {1, 4099};
  for (uint32_t i = 0; i < n_plugins; ++i) {
    for (uint32_t ri = 0; ri < 3; ++ri) {
      for (int k = 0; k < BAD_KINDS; ++k) {
        for (uint32_t b = 0; b < 2; ++b) {
          one_bad_case(&plugins[i], rates[ri], (bad_kind_t)k, bursts[b],
                       seed * 7919u + i * 1000u + ri * 100u + k * 2u + b);
        }
      }
    }
  }
  return rt_tally.failures - failures;
}

// ------------------------------------------------------------- controls ----

// Runs a and b (same controls but port `port`) on the same noise and
// compares them.
static void one_clamp_case(const plugin_info_t *p, double rate, uint32_t port,
                           float bad, float expect, uint64_t seed) {
  rng_t r = {seed};
  float ctl_a[RT_MAX_PORTS], ctl_b[RT_MAX_PORTS], lat_a = 0, lat_b = 0;
  for (uint32_t i = 0; i < p->n_ports; ++i) {
    ctl_a[i] = ctl_b[i] = rt_draw_control(&r, &p->port[i], 0.0);
  }
  ctl_a[port] = bad, ctl_b[port] = expect;
  LV2_Handle a = open_instance(p, rate, ctl_a, &lat_a, 0);
  LV2_Handle b = open_instance(p, rate, ctl_b, &lat_b, 1);
  ++rt_tally.clamp_cases;
  char where[200];
  snprintf(where, sizeof where, "seed %llu %s %.0f Hz, %s = %g (as %g)",
           (unsigned long long)seed, p->uri, rate, p->port[port].symbol, bad,
           expect);
  if (!rt_check(a && b, "%s: instantiate failed", where)) {
    return;
  }
  bool same = true;
  for (uint32_t blk = 0; blk < 12 && same; ++blk) {
    const uint32_t n = rt_draw_block(&r);
    for (uint32_t ch = 0; ch < p->n_channels; ++ch) {
      for (uint32_t i = 0; i < n; ++i) {
        in_buf[ch][i] = NOISE * (float)(2.0 * rng_unit(&r) - 1.0);
      }
    }
    rt_run(p, a, n, where);
    rt_run(p, b, n, where);
    for (uint32_t ch = 0; ch < p->n_channels && same; ++ch) {
      for (uint32_t i = 0; i < n && same; ++i) {
        const float ya = out_buf[0][ch][i], yb = out_buf[1][ch][i];
        same = isfinite(ya) && memcmp(&ya, &yb, sizeof ya) == 0;
        rt_check(same, "%s: block %u frame %u: %g, clamped value gives %g",
                 where, blk, i, ya, yb);
      }
    }
  }
  p->d->cleanup(a);
  p->d->cleanup(b);
}

uint64_t rt_bad_controls(const plugin_info_t *plugins, uint32_t n_plugins,
                         uint64_t seed) {
  const uint64_t failures = rt_tally.failures;
  const double rates[] = {22050, 48000};
  for (uint32_t i = 0; i < n_plugins; ++i) {
    const plugin_info_t *p = &plugins[i];
    for (uint32_t port = 0; port < p->n_ports; ++port) {
      const port_info_t *pi = &p->port[port];
      if (pi->kind != PORT_CONTROL_IN) {
        continue;
      }
      const float bad[] = {NAN,     INFINITY,       -INFINITY,
                           FLT_MAX, -FLT_MAX,       1e30f,
                           -1e30f,  pi->min - 1.0f, pi->max + 1.0f};
      for (uint32_t ri = 0; ri < 2; ++ri) {
        for (uint32_t k = 0; k < sizeof bad / sizeof bad[0]; ++k) {
          const float v = bad[k];
          const float expect = isnan(v)      ? pi->def
                               : v < pi->min ? pi->min
                               : v > pi->max ? pi->max
                                             : v;
          one_clamp_case(p, rates[ri], port, v, expect,
                         seed * 104729u + i * 10000u + port * 100u + ri * 10u +
                             k);
        }
      }
    }
  }
  return rt_tally.failures - failures;
}
