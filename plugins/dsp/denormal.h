// SPDX-License-Identifier: GPL-3.0-or-later
// Denormal protection for the span of one run().
//
// Tiny numbers (below about 1e-38) are slow on most FPUs. Every run() turns on
// flush-to-zero and denormals-are-zero for its own duration and puts the
// host's floating-point mode back before it returns.
#ifndef VERNIER_DSP_DENORMAL_H
#define VERNIER_DSP_DENORMAL_H

#include <stdint.h>

typedef struct {
  uint64_t saved; // the host's FP control word
} denormal_guard_t;

#if defined(__SSE__) || defined(__x86_64__)
#include <xmmintrin.h>
#define DENORMAL_FTZ_DAZ 0x8040u // MXCSR bits: flush-to-zero (15), DAZ (6)
// Writing MXCSR stalls the pipeline; skip it when the host already runs with
// both bits set, as many do.
static inline denormal_guard_t denormal_guard_begin(void) {
  denormal_guard_t g = {_mm_getcsr()};
  if ((g.saved & DENORMAL_FTZ_DAZ) != DENORMAL_FTZ_DAZ) {
    _mm_setcsr((unsigned)g.saved | DENORMAL_FTZ_DAZ);
  }
  return g;
}
static inline void denormal_guard_end(denormal_guard_t g) {
  if ((g.saved & DENORMAL_FTZ_DAZ) != DENORMAL_FTZ_DAZ) {
    _mm_setcsr((unsigned)g.saved);
  }
}
#elif defined(__aarch64__)
static inline denormal_guard_t denormal_guard_begin(void) {
  denormal_guard_t g;
  __asm__ __volatile__("mrs %0, fpcr" : "=r"(g.saved));
  const uint64_t fz = g.saved | (1u << 24); // FPCR.FZ
  __asm__ __volatile__("msr fpcr, %0" : : "r"(fz));
  return g;
}
static inline void denormal_guard_end(denormal_guard_t g) {
  __asm__ __volatile__("msr fpcr, %0" : : "r"(g.saved));
}
#else
static inline denormal_guard_t denormal_guard_begin(void) {
  denormal_guard_t g = {0};
  return g;
}
static inline void denormal_guard_end(denormal_guard_t g) {
  (void)g;
}
#endif

// For state variables in recursive filters on machines without FTZ: adding and
// removing a tiny offset rounds any denormal to zero.
static inline float denormal_flush(float x) {
  const float tiny = 1e-30f;
  x += tiny;
  return x - tiny;
}

#endif
