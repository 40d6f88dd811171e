// SPDX-License-Identifier: GPL-3.0-or-later
#include "polarity.h"

#include <math.h>
#include <string.h>

void polarity_setup(polarity_t *p, double rate_hz) {
  const double frames = rate_hz * POLARITY_FADE_S;
  p->fade_frames = frames < 1.0 ? 1u : (uint32_t)lround(frames);
  polarity_reset(p);
}

void polarity_reset(polarity_t *p) {
  p->pos = 0;
  p->invert = false;
  p->primed = false;
}

void polarity_set(polarity_t *p, bool invert) {
  p->invert = invert;
  if (!p->primed) {
    p->pos = invert ? p->fade_frames : 0u; // the first run starts settled
    p->primed = true;
  }
}

void polarity_compute(polarity_t *p, const float *in, float *out,
                      uint32_t n_frames) {
  uint32_t i = 0;
  const double step = M_PI / (double)p->fade_frames;
  for (; i < n_frames && !polarity_settled(p); ++i) {
    p->pos = p->invert ? p->pos + 1 : p->pos - 1;
    // cos runs from +1 (pos 0) through 0 to -1 (pos fade_frames)
    out[i] = in[i] * (float)cos(step * (double)p->pos);
  }
  const uint32_t rest = n_frames - i;
  if (rest == 0) {
    return;
  }
  if (p->invert) {
    for (uint32_t k = i; k < n_frames; ++k) {
      out[k] = -in[k];
    }
  } else if (in != out) {
    memmove(out + i, in + i, rest * sizeof(float));
  }
}
