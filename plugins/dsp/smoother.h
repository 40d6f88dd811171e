// SPDX-License-Identifier: GPL-3.0-or-later
// One-pole parameter smoother, advanced once per sample.
//
// Because the state moves one sample at a time, the output does not depend on
// how the host slices the stream into blocks. The pole is a = exp(-1/(tau*fs)),
// so after tau seconds a step has covered 1 - 1/e of its way.
#ifndef VERNIER_DSP_SMOOTHER_H
#define VERNIER_DSP_SMOOTHER_H

#include <stdbool.h>

typedef struct {
  float pole;   // a = exp(-1 / (tau_s * rate_hz))
  float value;  // current smoothed value
  float target; // where it is heading
} smoother_t;

// Closer than this to the target, the smoother lands on it exactly, so a
// settled gain of 1 or -1 is exact and the state never decays into denormals.
#define SMOOTHER_SNAP 1e-6f

void smoother_setup(smoother_t *s, double tau_s, double rate_hz);

// Jump to value at once (used on the first run() after activate()).
void smoother_reset(smoother_t *s, float value);

static inline void smoother_set_target(smoother_t *s, float target) {
  s->target = target;
}

static inline bool smoother_settled(const smoother_t *s) {
  return s->value == s->target;
}

// Advance one sample and return the new value.
static inline float smoother_next(smoother_t *s) {
  if (s->value != s->target) {
    const float d = s->value - s->target;
    const float next = s->target + d * s->pole;
    // Land when close, or when float rounding stops the approach (with a long
    // time constant at a high rate the step falls below one ulp).
    if ((d < SMOOTHER_SNAP && d > -SMOOTHER_SNAP) || next == s->value) {
      s->value = s->target;
    } else {
      s->value = next;
    }
  }
  return s->value;
}

#endif
