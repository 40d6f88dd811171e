// SPDX-License-Identifier: GPL-3.0-or-later
// Control values from a host or a preset may be out of range or not numbers.
#ifndef VERNIER_DSP_PARAM_H
#define VERNIER_DSP_PARAM_H

#include <math.h>

// Clamp v to [lo, hi]; NaN (or any non-finite value that is not an infinity
// of known sign) becomes fallback.
static inline float param_clamp(float v, float lo, float hi, float fallback) {
  if (isnan(v)) {
    return fallback;
  }
  return v < lo ? lo : (v > hi ? hi : v);
}

// A toggled port is on when its value is above one half (LV2 lv2:toggled
// ports carry 0 or 1; hosts may send anything).
static inline int param_toggle(float v) {
  return v > 0.5f;
}

#endif
