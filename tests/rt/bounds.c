// SPDX-License-Identifier: GPL-3.0-or-later
// How loud each plugin may make its input, and how long a bad sample may
// stay in it. The peak gain of a linear filter on any bounded input is the
// L1 norm (sum of |h|) of its impulse response (common practice: the
// l-infinity operator norm of a convolution), and a chain's is at most the
// product of its parts'. Per plugin:
//   gain      |gain| <= 1 times trim <= +24 dB: 10^(24/20) = 15.85. The
//             smoother moves between such values, never beyond them.
//   polarity  1.
//   delay     the largest L1 norm of a row of the fractional-delay table;
//             between rows and mid-glide the taps are a convex mix of two
//             rows, whose norm is at most the larger one's.
//   rotate    y = c x[t-L] - s H{x}[t-L] with c^2 + s^2 = 1 (also mid-turn,
//             to the series' 3e-8): |y| <= peak * sqrt(1 + |h|_1^2), h the
//             Hilbert FIR hilbert_design() makes at that rate.
//   allpass   5 per stage, 4 stages: 5^4. A first-order stage's response
//             -p, (1 - p^2) p^(n-1) has norm 1 + 2|p| < 3; a second-order
//             one's grows as f0 / rate falls and measures 4.85 at the least
//             q and f0 / rate (0.1, 20 Hz at 384 kHz), 3.5 to 3.9 elsewhere;
//             the grid in rt_bounds_setup checks it stays under 5. The
//             raised-cosine fade between cascades is a convex mix. Gliding f0
//             and q make the filter time-varying, where no norm is a theorem:
//             the product of stage norms is loose enough (a cascade's own norm
//             is well under it) that the margin covers that, and the sessions
//             check it holds.
//   strip     the product of its modules' bounds.
// A 1% margin on top covers float rounding in the FFT convolution.
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "dsp/allpass.h"
#include "dsp/frac_delay.h"
#include "dsp/frac_delay_table.h"
#include "dsp/hilbert.h"
#include "dsp/rotator.h"
#include "rt.h"

#define TRIM_MAX_GAIN 15.848931924611133 // 10^(24/20)
#define ALLPASS_STAGE_BOUND 5.0
#define MARGIN 1.01
// After a burst of +-FLT_MAX, the all-pass's states decay from there: by
// 10^8 (output back under FLT_MAX with room for the cascade's polynomial
// envelope) at the slowest pole, q = 10 at 20 Hz.
#define ALLPASS_SETTLE_NEPERS 18.42

const double rt_rates[RT_N_RATES] = {22050, 44100,  48000,
                                     96000, 192000, 384000};

static double rotator_bound[RT_N_RATES];
static uint32_t rotator_taps[RT_N_RATES];
static double delay_bound;

static int rate_index(double rate_hz) {
  for (int i = 0; i < (int)RT_N_RATES; ++i) {
    if (rt_rates[i] == rate_hz) {
      return i;
    }
  }
  return -1;
}

// One second-order stage's L1 norm, from the module itself: an impulse
// through allpass_compute() until the tail no longer adds to the sum.
static double allpass_stage_norm(double rate_hz, float f_hz, float q) {
  static allpass_t a; // big; static keeps it off the stack
  allpass_setup(&a, rate_hz, 1);
  allpass_set(&a, f_hz, q, 1.0f, 2.0f);
  float buf[4096];
  const float *in[1] = {buf};
  float *out[1] = {buf};
  double sum = 0.0;
  for (uint32_t chunk = 0; chunk < 2000; ++chunk) {
    memset(buf, 0, sizeof buf);
    buf[0] = chunk == 0 ? 1.0f : 0.0f;
    allpass_compute(&a, in, out, 4096);
    double part = 0.0;
    for (uint32_t i = 0; i < 4096; ++i) {
      part += fabs(buf[i]);
    }
    sum += part;
    if (chunk > 0 && part < 1e-9 * sum) {
      break;
    }
  }
  return sum;
}

int rt_bounds_setup(void) {
  for (uint32_t r = 0; r < RT_N_RATES; ++r) {
    rotator_t rot;
    if (rotator_setup(&rot, rt_rates[r]) != 0) {
      return -1;
    }
    const uint32_t n = rot.n_taps;
    rotator_free(&rot);
    float *taps = malloc(n * sizeof(float));
    if (!taps) {
      return -1;
    }
    hilbert_design(taps, n, rt_rates[r]);
    double l1 = 0.0;
    for (uint32_t i = 0; i < n; ++i) {
      l1 += fabs(taps[i]);
    }
    free(taps);
    rotator_bound[r] = sqrt(1.0 + l1 * l1);
    rotator_taps[r] = n;
  }
  frac_delay_table_t t;
  if (frac_delay_table_setup(&t) != 0) {
    return -1;
  }
  for (uint32_t p = 0; p <= FRAC_DELAY_PHASES; ++p) {
    const float *row = frac_delay_table_row(&t, p);
    double l1 = 0.0;
    for (uint32_t k = 0; k < FRAC_DELAY_TAPS; ++k) {
      l1 += fabs(row[k]);
    }
    delay_bound = l1 > delay_bound ? l1 : delay_bound;
  }
  frac_delay_table_free(&t);
  // The stage bound's grid: the rates' extremes, f0 from the bottom to the
  // top, q across its range.
  const double rates[] = {22050, 384000};
  const float freqs[] = {20, 200, 2000, 10000, 20000};
  const float qs[] = {0.1f, 0.5f, 0.707f, 2, 10};
  double worst = 0.0;
  for (uint32_t r = 0; r < 2; ++r) {
    for (uint32_t f = 0; f < 5; ++f) {
      for (uint32_t q = 0; q < 5; ++q) {
        const double l1 = allpass_stage_norm(rates[r], freqs[f], qs[q]);
        worst = l1 > worst ? l1 : worst;
      }
    }
  }
  printf("bounds: rotator sqrt(1 + |h|1^2) %.2f (22.05 kHz) .. %.2f "
         "(384 kHz); delay row |h|1 %.4f; all-pass stage |h|1 %.3f measured, "
         "%.1f used\n",
         rotator_bound[0], rotator_bound[RT_N_RATES - 1], delay_bound, worst,
         ALLPASS_STAGE_BOUND);
  return worst < ALLPASS_STAGE_BOUND ? 0 : -1;
}

static bool is(const plugin_info_t *p, const char *name) {
  return strstr(p->uri, name) != NULL;
}

double rt_gain_bound(const plugin_info_t *p, double rate_hz) {
  const int r = rate_index(rate_hz);
  const double rot = r < 0 ? INFINITY : rotator_bound[r];
  const double ap = pow(ALLPASS_STAGE_BOUND, ALLPASS_MAX_STAGES);
  double b = INFINITY; // a plugin this file does not know fails every check
  if (is(p, ":gain-")) {
    b = TRIM_MAX_GAIN;
  } else if (is(p, ":polarity-")) {
    b = 1.0;
  } else if (is(p, ":delay-")) {
    b = delay_bound;
  } else if (is(p, ":rotate-")) {
    b = rot;
  } else if (is(p, ":allpass-")) {
    b = ap;
  } else if (is(p, ":strip-")) {
    b = delay_bound * rot * ap * TRIM_MAX_GAIN;
  }
  return b * MARGIN;
}

static uint64_t allpass_settle_frames(double rate_hz) {
  const double alpha = sin(2.0 * M_PI * ALLPASS_FREQUENCY_MIN_HZ / rate_hz) /
                       (2.0 * ALLPASS_Q_MAX);
  return (uint64_t)ceil(ALLPASS_SETTLE_NEPERS / alpha);
}

uint64_t rt_memory_frames(const plugin_info_t *p, double rate_hz, bool huge) {
  const int r = rate_index(rate_hz);
  const uint64_t taps = r < 0 ? 0 : rotator_taps[r];
  const uint64_t delay = frac_delay_latency_for_rate(rate_hz) +
                         (uint64_t)ceil(FRAC_DELAY_MAX_MS * 1e-3 * rate_hz) +
                         FRAC_DELAY_TAPS;
  const uint64_t b = rotator_partition_frames(rate_hz);
  const uint64_t rotate = (taps - 1) / 2 + b + taps;
  const uint64_t settle = huge ? allpass_settle_frames(rate_hz) : 0;
  if (is(p, ":delay-")) {
    return delay;
  } else if (is(p, ":rotate-")) {
    return rotate;
  } else if (is(p, ":allpass-")) {
    return settle;
  } else if (is(p, ":strip-")) {
    return delay + rotate + settle;
  }
  return 0; // gain, polarity: no memory but the smoother's
}
