// SPDX-License-Identifier: GPL-3.0-or-later
#include "bipolar_gain.h"

#include <math.h>
#include <string.h>

#include "param.h"

void bipolar_gain_setup(bipolar_gain_t *g, double rate_hz) {
  smoother_setup(&g->coef, BIPOLAR_GAIN_TAU_S, rate_hz);
  bipolar_gain_reset(g);
}

void bipolar_gain_reset(bipolar_gain_t *g) {
  smoother_reset(&g->coef, 1.0f);
  g->last_gain = NAN;
  g->last_trim_db = NAN;
  g->primed = false;
}

float bipolar_gain_coefficient(float gain, float trim_db) {
  gain = param_clamp(gain, BIPOLAR_GAIN_MIN, BIPOLAR_GAIN_MAX,
                     BIPOLAR_GAIN_DEFAULT);
  trim_db = param_clamp(trim_db, BIPOLAR_TRIM_MIN_DB, BIPOLAR_TRIM_MAX_DB,
                        BIPOLAR_TRIM_DEFAULT_DB);
  // exact at 0 dB so that gain +1 / -1 passes / inverts bit for bit
  const float trim = trim_db == 0.0f ? 1.0f : powf(10.0f, trim_db / 20.0f);
  return gain * trim;
}

void bipolar_gain_set(bipolar_gain_t *g, float gain, float trim_db) {
  if (g->primed && gain == g->last_gain && trim_db == g->last_trim_db) {
    return;
  }
  const float c = bipolar_gain_coefficient(gain, trim_db);
  if (g->primed) {
    smoother_set_target(&g->coef, c);
  } else {
    smoother_reset(&g->coef, c);
    g->primed = true;
  }
  g->last_gain = gain;
  g->last_trim_db = trim_db;
}

// A constant factor over a span, with the two exact cases made explicit so
// that a settled +1 copies and a settled -1 negates bit for bit.
static void apply_constant(float c, const float *x, float *y, uint32_t n) {
  if (c == 1.0f) {
    if (x != y) {
      memmove(y, x, n * sizeof(float));
    }
  } else if (c == -1.0f) {
    for (uint32_t i = 0; i < n; ++i) {
      y[i] = -x[i];
    }
  } else {
    for (uint32_t i = 0; i < n; ++i) {
      y[i] = x[i] * c;
    }
  }
}

void bipolar_gain_compute(bipolar_gain_t *g, const float *const *in,
                          float *const *out, uint32_t n_channels,
                          uint32_t n_frames) {
  uint32_t i = 0;
  // Ramp sample by sample until the smoother lands; the rest of the span is
  // then constant. Which sample lands does not depend on the block size.
  for (; i < n_frames && !smoother_settled(&g->coef); ++i) {
    const float c = smoother_next(&g->coef);
    for (uint32_t ch = 0; ch < n_channels; ++ch) {
      out[ch][i] = in[ch][i] * c;
    }
  }
  if (i < n_frames) {
    for (uint32_t ch = 0; ch < n_channels; ++ch) {
      apply_constant(g->coef.value, in[ch] + i, out[ch] + i, n_frames - i);
    }
  }
}
