// SPDX-License-Identifier: GPL-3.0-or-later
#include "smoother.h"

#include <math.h>

void smoother_setup(smoother_t *s, double tau_s, double rate_hz) {
  // tau <= 0 means no smoothing: the value follows the target at once.
  s->pole = (tau_s > 0.0 && rate_hz > 0.0)
                ? (float)exp(-1.0 / (tau_s * rate_hz))
                : 0.0f;
  s->value = 0.0f;
  s->target = 0.0f;
}

void smoother_reset(smoother_t *s, float value) {
  s->value = value;
  s->target = value;
}
