// SPDX-License-Identifier: GPL-3.0-or-later
// How fuzz_dsp.c reads its input: bytes, big-endian words and parameter
// values, with zeros once the input is used up (so every input is a
// complete session).
#ifndef VERNIER_FUZZ_DSP_INPUT_H
#define VERNIER_FUZZ_DSP_INPUT_H

#include <float.h>
#include <math.h>
#include <stdbool.h>
#include <stdint.h>
#include <string.h>

typedef struct {
  const uint8_t *p, *end;
} Reader;

static inline uint8_t next_byte(Reader *r) {
  return r->p < r->end ? *r->p++ : 0;
}

static inline uint32_t next_u32(Reader *r) {
  uint32_t v = 0;
  for (int i = 0; i < 4; ++i) {
    v = v << 8 | next_byte(r);
  }
  return v;
}

static inline bool at_end(const Reader *r) {
  return r->p >= r->end;
}

// A parameter value: often a special one, else somewhere in or around the
// range lo .. hi, else any float's bits.
static inline float next_value(Reader *r, float lo, float hi) {
  static const float special[] = {NAN,      INFINITY, -INFINITY, FLT_MAX,
                                  -FLT_MAX, 1e-40f,   -1e-40f,   0.0f,
                                  1.0f,     -1.0f,    0.5f,      1e30f};
  const uint8_t kind = next_byte(r);
  if (kind < 48) {
    return special[kind % (sizeof special / sizeof special[0])];
  }
  if (kind < 208) {
    // -0.25 .. 1.25 of the range: inside, at both edges, a little beyond.
    const float t = (float)(next_u32(r) >> 8) / (float)(1u << 24);
    return lo + (hi - lo) * (t * 1.5f - 0.25f);
  }
  const uint32_t bits = next_u32(r);
  float f;
  memcpy(&f, &bits, sizeof f);
  return f;
}

#endif
