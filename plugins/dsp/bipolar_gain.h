// SPDX-License-Identifier: GPL-3.0-or-later
// Bipolar gain: a coefficient from -1 to +1 (0 silences, -1 inverts) times a
// trim in dB, smoothed per sample.
#ifndef VERNIER_DSP_BIPOLAR_GAIN_H
#define VERNIER_DSP_BIPOLAR_GAIN_H

#include <stdbool.h>
#include <stdint.h>

#include "smoother.h"

#define BIPOLAR_GAIN_MIN (-1.0f)
#define BIPOLAR_GAIN_MAX 1.0f
#define BIPOLAR_GAIN_DEFAULT 1.0f
#define BIPOLAR_TRIM_MIN_DB (-24.0f)
#define BIPOLAR_TRIM_MAX_DB 24.0f
#define BIPOLAR_TRIM_DEFAULT_DB 0.0f
// 10 ms: long enough that a new value each 512-sample block (10.7 ms at
// 48 kHz) leaves no audible steps, short enough to follow a fader.
#define BIPOLAR_GAIN_TAU_S 0.010

typedef struct {
  smoother_t coef; // linear gain: gain * 10^(trim_db / 20)
  float last_gain; // last port values seen, to skip recomputing the target
  float last_trim_db;
  bool primed; // false until the first set after bipolar_gain_reset()
} bipolar_gain_t;

void bipolar_gain_setup(bipolar_gain_t *g, double rate_hz);

// Forget the history: the next bipolar_gain_set() jumps to its values.
void bipolar_gain_reset(bipolar_gain_t *g);

// Clamps out-of-range values and replaces non-finite ones by the default.
void bipolar_gain_set(bipolar_gain_t *g, float gain, float trim_db);

// Linear coefficient for the clamped parameters.
float bipolar_gain_coefficient(float gain, float trim_db);

// Applies the gain to n_channels channels; in[c] may equal out[c].
void bipolar_gain_compute(bipolar_gain_t *g, const float *const *in,
                          float *const *out, uint32_t n_channels,
                          uint32_t n_frames);

#endif
