// SPDX-License-Identifier: GPL-3.0-or-later
// What fuzz_dsp.c asserts of each output sample, and the input history the
// assertions need. A failed assertion prints what and where, then aborts,
// which libFuzzer reports as a crash with the input saved.
#ifndef VERNIER_FUZZ_DSP_CHECK_H
#define VERNIER_FUZZ_DSP_CHECK_H

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

// Above this a finite sample counts as huge: times any module's gain bound
// below it stays far from FLT_MAX, so the output must stay finite. Beyond
// it (FLT_MAX) an overflow to inf is the right answer, not a fault.
#define VN_FUZZ_HUGE 1e30f
// Output this small passes any bound: denormals left by a decay.
#define VN_FUZZ_TINY 1e-30f
// Frames since the last huge sample, when there has been none since reset.
#define VN_FUZZ_NEVER UINT64_MAX

typedef struct {
  float peak;          // max |x| of the finite, not huge, samples since reset
  uint64_t since_huge; // frames since the last huge sample
} VnFuzzTrack;

static inline void vn_fuzz_track_reset(VnFuzzTrack *t) {
  t->peak = 0.0f;
  t->since_huge = VN_FUZZ_NEVER;
}

// Non-finite samples do not count: every module with memory takes them as
// zero (rotator.h, allpass.h, frac_delay.h), so they leave no trace.
static inline void vn_fuzz_track(VnFuzzTrack *t, float x) {
  if (t->since_huge != VN_FUZZ_NEVER) {
    ++t->since_huge;
  }
  if (!isfinite(x)) {
    return;
  }
  if (fabsf(x) > VN_FUZZ_HUGE) {
    t->since_huge = 0;
  } else if (fabsf(x) > t->peak) {
    t->peak = fabsf(x);
  }
}

static inline void vn_fuzz_fail(const char *module, const char *what,
                                uint32_t frame, float x, float y, float bound) {
  fprintf(stderr,
          "fuzz_dsp: %s: %s at frame %u of the block: in %g, out %g, "
          "bound %g\n",
          module, what, frame, (double)x, (double)y, (double)bound);
  abort();
}

// A memoryless module: y from x alone, |y| <= gain |x|.
static inline void vn_fuzz_check_memoryless(const char *module, float gain,
                                            const float *x, const float *y,
                                            uint32_t n) {
  for (uint32_t i = 0; i < n; ++i) {
    if (!isfinite(x[i]) || fabsf(x[i]) > VN_FUZZ_HUGE) {
      continue;
    }
    const float bound = gain * fabsf(x[i]) + VN_FUZZ_TINY;
    if (!isfinite(y[i])) {
      vn_fuzz_fail(module, "non-finite output of a finite input", i, x[i], y[i],
                   bound);
    }
    if (fabsf(y[i]) > bound) {
      vn_fuzz_fail(module, "output beyond the gain bound", i, x[i], y[i],
                   bound);
    }
  }
}

// A module with memory frames of memory (VN_FUZZ_NEVER: until reset):
// once the last huge sample is longer ago than that, y is finite and
// within gain times the input peak since reset.
static inline void vn_fuzz_check_memory(const char *module, float gain,
                                        uint64_t memory, VnFuzzTrack *t,
                                        const float *x, const float *y,
                                        uint32_t n) {
  for (uint32_t i = 0; i < n; ++i) {
    vn_fuzz_track(t, x[i]);
    const bool clear = memory == VN_FUZZ_NEVER ? t->since_huge == VN_FUZZ_NEVER
                                               : t->since_huge > memory;
    if (!clear) {
      continue;
    }
    const float bound = gain * t->peak + VN_FUZZ_TINY;
    if (!isfinite(y[i])) {
      vn_fuzz_fail(module, "non-finite output after the module's memory", i,
                   x[i], y[i], bound);
    }
    if (fabsf(y[i]) > bound) {
      vn_fuzz_fail(module, "output beyond gain x input peak", i, x[i], y[i],
                   bound);
    }
  }
}

#endif
