// SPDX-License-Identifier: GPL-3.0-or-later
// Seeded random sessions: one instance per plugin, rate and seed, driven
// block by block the way a host may legally drive it, with the shim
// counting inside every run().
#include <float.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "rt.h"

// A session ends after this many frames or blocks, whichever comes first.
#define SESSION_FRAMES (1u << 18)
#define SESSION_BLOCKS 400u
#define N_BUFFERS (2u * RT_MAX_CHANNELS + 2u)
// Of the control values drawn in a session, this share lies outside the range.
#define SESSION_BAD_CONTROLS 0.05

static float buffers[N_BUFFERS][RT_MAX_BLOCK];

float rt_draw_control(rng_t *r, const port_info_t *pi, double bad) {
  static const float wild[] = {NAN,      INFINITY, -INFINITY, FLT_MAX,
                               -FLT_MAX, 1e30f,    -1e30f,    -0.0f};
  const double u = rng_unit(r);
  if (u < bad) {
    const uint32_t k = rng_below(r, 10);
    return k < 8 ? wild[k] : (k == 8 ? pi->min - 1.0f : pi->max + 1.0f);
  }
  const double v = (u - bad) / (1.0 - bad);
  if (v < 0.2) {
    return pi->min;
  } else if (v < 0.4) {
    return pi->max;
  } else if (v < 0.5) {
    return pi->def;
  }
  const double w = rng_unit(r);
  if (pi->logarithmic && pi->min > 0) {
    return (float)(pi->min * pow(pi->max / pi->min, w));
  }
  const float x = (float)(pi->min + (pi->max - pi->min) * w);
  // Integer ports get whole numbers mostly, in-between values sometimes.
  return pi->integer && v < 0.9 ? roundf(x) : x;
}

// 0 and 1, odd sizes, powers of two and their neighbours, the largest
// block, and anything between.
uint32_t rt_draw_block(rng_t *r) {
  const uint32_t k = rng_below(r, 20);
  if (k == 0) {
    return 0;
  } else if (k == 1) {
    return 1;
  } else if (k == 2) {
    return RT_MAX_BLOCK;
  } else if (k < 6) {
    return 2u * rng_below(r, 32) + 1u; // odd, up to 63
  } else if (k < 9) {
    const uint32_t p = 1u << rng_below(r, 14); // 1 .. 8192
    const uint32_t n = p + rng_below(r, 3) - 1u;
    return n > RT_MAX_BLOCK ? RT_MAX_BLOCK : n;
  }
  return rng_below(r, RT_MAX_BLOCK + 1);
}

// One channel's input: noise, a sine, a full-scale square, DC, clicks or
// silence, at a random level. Returns its peak.
static float fill_input(rng_t *r, float *x, uint32_t n) {
  const uint32_t kind = rng_below(r, 6);
  const float level = (float)pow(10.0, -4.0 * rng_unit(r)); // -80 .. 0 dB
  const double w = M_PI * rng_unit(r);
  const uint32_t period = 2 + rng_below(r, 200);
  float peak = 0.0f;
  for (uint32_t i = 0; i < n; ++i) {
    float v = 0.0f;
    if (kind == 0) {
      v = level * (float)(2.0 * rng_unit(r) - 1.0);
    } else if (kind == 1) {
      v = level * (float)sin(w * i);
    } else if (kind == 2) {
      v = (i % period) < period / 2 ? 1.0f : -1.0f;
    } else if (kind == 3) {
      v = level;
    } else if (kind == 4) {
      v = rng_below(r, 500) == 0 ? level : 0.0f;
    }
    x[i] = v;
    peak = fabsf(v) > peak ? fabsf(v) : peak;
  }
  return peak;
}

typedef struct {
  const plugin_info_t *p;
  LV2_Handle h;
  float controls[2][RT_MAX_PORTS]; // two places a control may live
  uint32_t bank;
  float latency[2];
  const float *in[RT_MAX_CHANNELS];
  float *out[RT_MAX_CHANNELS];
} session_t;

// Connects every port, audio to buffers drawn at random: in place (each out
// is its in) or separate.
static void connect_all(session_t *s, rng_t *r) {
  const plugin_info_t *p = s->p;
  uint32_t order[N_BUFFERS];
  for (uint32_t i = 0; i < N_BUFFERS; ++i) {
    order[i] = i;
  }
  for (uint32_t i = N_BUFFERS - 1; i > 0; --i) { // Fisher-Yates
    const uint32_t j = rng_below(r, i + 1), t = order[i];
    order[i] = order[j], order[j] = t;
  }
  const bool in_place = rng_below(r, 3) == 0;
  uint32_t ci = 0, co = 0;
  for (uint32_t i = 0; i < p->n_ports; ++i) {
    void *where = NULL;
    switch (p->port[i].kind) {
    case PORT_CONTROL_IN:
      where = &s->controls[s->bank][i];
      break;
    case PORT_LATENCY:
      where = &s->latency[s->bank];
      break;
    case PORT_AUDIO_IN:
      s->in[ci] = buffers[order[ci]];
      where = buffers[order[ci++]];
      break;
    case PORT_AUDIO_OUT:
      s->out[co] = buffers[in_place ? order[co] : order[RT_MAX_CHANNELS + co]];
      where = s->out[co++];
      break;
    }
    p->d->connect_port(s->h, i, where);
  }
}

static uint64_t one_session(const plugin_info_t *p, uint32_t pi, double rate,
                            uint32_t ri, uint64_t seed, float *latency_seen) {
  const uint64_t failures = rt_tally.failures;
  rng_t r = {seed * 1000003u + pi * 101u + ri};
  session_t s = {.p = p};
  const LV2_Feature *features[] = {NULL};
  s.h = p->d->instantiate(p->d, rate, "", features);
  if (!rt_check(s.h != NULL, "seed %llu %s at %.0f Hz: instantiate failed",
                (unsigned long long)seed, p->uri, rate)) {
    return 1;
  }
  for (uint32_t i = 0; i < p->n_ports; ++i) {
    s.controls[0][i] = s.controls[1][i] = p->port[i].def;
  }
  connect_all(&s, &r);
  p->d->activate(s.h);
  ++rt_tally.activations;
  const double bound = rt_gain_bound(p, rate);
  float peak = 0.0f;
  uint64_t frames = 0;
  char where[160];
  for (uint32_t b = 0; b < SESSION_BLOCKS && frames < SESSION_FRAMES &&
                       rt_tally.failures - failures < 5;
       ++b) {
    if (rng_below(&r, 50) == 0) { // a deactivate/activate cycle
      if (p->d->deactivate) {
        p->d->deactivate(s.h);
      }
      p->d->activate(s.h);
      ++rt_tally.activations;
      peak = 0.0f; // activate forgets the signal: so may the bound
    }
    if (rng_below(&r, 3) == 0) { // reconnect, maybe moving the controls
      const uint32_t old = s.bank;
      s.bank = rng_below(&r, 2);
      memcpy(s.controls[s.bank], s.controls[old], sizeof s.controls[0]);
      connect_all(&s, &r);
      ++rt_tally.reconnects;
    }
    for (uint32_t i = 0; i < p->n_ports; ++i) {
      if (p->port[i].kind == PORT_CONTROL_IN && rng_below(&r, 4) != 0) {
        const float v = rt_draw_control(&r, &p->port[i], SESSION_BAD_CONTROLS);
        rt_tally.control_changes += v != s.controls[s.bank][i];
        s.controls[s.bank][i] = v;
      }
    }
    const uint32_t n = rt_draw_block(&r);
    for (uint32_t ch = 0; ch < p->n_channels; ++ch) {
      const float pk = fill_input(&r, (float *)s.in[ch], n);
      peak = pk > peak ? pk : peak;
    }
    s.latency[s.bank] = NAN;
    snprintf(where, sizeof where, "seed %llu %.0f Hz block %u",
             (unsigned long long)seed, rate, b);
    rt_run(p, s.h, n, where);
    ++rt_tally.blocks;
    frames += n;
    const float lat = s.latency[s.bank];
    bool has_latency = false;
    for (uint32_t i = 0; i < p->n_ports; ++i) {
      has_latency |= p->port[i].kind == PORT_LATENCY;
    }
    if (has_latency) {
      if (isnan(latency_seen[ri])) {
        latency_seen[ri] = lat;
      }
      rt_check(!isnan(lat) && lat >= 0 && lat == latency_seen[ri],
               "%s %s: latency %g after run(), first seen %g", where, p->uri,
               lat, latency_seen[ri]);
    }
    const double limit = peak * bound + 1e-30;
    for (uint32_t ch = 0; ch < p->n_channels; ++ch) {
      uint32_t bad = n;
      for (uint32_t i = 0; i < n && bad == n; ++i) {
        const float y = s.out[ch][i];
        bad = isfinite(y) && fabs(y) <= limit ? n : i;
      }
      rt_check(bad == n,
               "%s %s ch %u frame %u: out %g, input peak %g, bound %g x peak",
               where, p->uri, ch, bad, bad < n ? s.out[ch][bad] : 0.0f, peak,
               bound);
    }
  }
  rt_tally.frames += frames;
  p->d->cleanup(s.h);
  ++rt_tally.sessions;
  return rt_tally.failures - failures;
}

uint64_t rt_sessions(const plugin_info_t *plugins, uint32_t n_plugins,
                     uint64_t seed, uint32_t n_seeds) {
  static float latency_seen[RT_MAX_PLUGINS][RT_N_RATES];
  for (uint32_t i = 0; i < n_plugins; ++i) {
    for (uint32_t j = 0; j < RT_N_RATES; ++j) {
      latency_seen[i][j] = NAN;
    }
  }
  uint64_t failed = 0;
  for (uint64_t k = seed; k < seed + n_seeds; ++k) {
    for (uint32_t i = 0; i < n_plugins; ++i) {
      for (uint32_t j = 0; j < RT_N_RATES; ++j) {
        failed +=
            one_session(&plugins[i], i, rt_rates[j], j, k, latency_seen[i]);
      }
    }
  }
  return failed;
}
