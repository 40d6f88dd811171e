// SPDX-License-Identifier: GPL-3.0-or-later
// Polarity inversion of one channel. Settled, the output is the exact negation
// of the input (or the input itself); a toggle crossfades between the two
// with a raised-cosine gain curve that passes through zero instead of jumping.
#ifndef VERNIER_DSP_POLARITY_H
#define VERNIER_DSP_POLARITY_H

#include <stdbool.h>
#include <stdint.h>

// 5 ms: a toggle is heard as a switch, not a fade, yet the step is gone.
#define POLARITY_FADE_S 0.005

typedef struct {
  uint32_t fade_frames; // length of a full +1 <-> -1 crossfade
  uint32_t pos;         // 0 = fully normal, fade_frames = fully inverted
  bool invert;          // where pos is heading
  bool primed;          // false until the first set after polarity_reset()
} polarity_t;

void polarity_setup(polarity_t *p, double rate_hz);
void polarity_reset(polarity_t *p);
void polarity_set(polarity_t *p, bool invert);

static inline bool polarity_settled(const polarity_t *p) {
  return p->pos == (p->invert ? p->fade_frames : 0u);
}

// in may equal out.
void polarity_compute(polarity_t *p, const float *in, float *out,
                      uint32_t n_frames);

#endif
