// SPDX-License-Identifier: GPL-3.0-or-later
#include "frac_delay.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "frac_delay_fir.h"
#include "param.h"

#define N_TAPS FRAC_DELAY_TAPS
#define HALF FRAC_DELAY_HALF_TAPS
#define SPAN FRAC_DELAY_SPAN_FRAMES
#define GUARD FRAC_DELAY_GUARD_FRAMES

// The limits in frames at a rate. The negative one is rounded up to whole
// frames for L, so that the most negative delay still leaves the FIR its
// look-ahead.
static double min_frames(double rate_hz) {
  return (double)FRAC_DELAY_MIN_MS * rate_hz / 1000.0;
}

static double max_frames(double rate_hz) {
  return (double)FRAC_DELAY_MAX_MS * rate_hz / 1000.0;
}

uint32_t frac_delay_latency_for_rate(double rate_hz) {
  return (uint32_t)ceil(-min_frames(rate_hz)) + HALF - 1u;
}

void frac_delay_free(frac_delay_t *d) {
  frac_delay_table_free(&d->table);
  for (uint32_t c = 0; c < FRAC_DELAY_MAX_CHANNELS; ++c) {
    free(d->ring[c]);
    d->ring[c] = NULL;
  }
}

int frac_delay_setup(frac_delay_t *d, double rate_hz, uint32_t n_channels) {
  memset(d, 0, sizeof *d);
  if (!(rate_hz >= FRAC_DELAY_MIN_RATE_HZ &&
        rate_hz <= FRAC_DELAY_MAX_RATE_HZ) ||
      n_channels < 1 || n_channels > FRAC_DELAY_MAX_CHANNELS) {
    return -1;
  }
  d->n_channels = n_channels;
  d->rate_hz = rate_hz;
  d->latency_frames = frac_delay_latency_for_rate(rate_hz);
  d->min_frames = min_frames(rate_hz);
  d->max_frames = max_frames(rate_hz);
  // The ring holds the longest internal delay plus the FIR's lag side and
  // the span being written over the oldest frames.
  const double longest = (double)d->latency_frames + ceil(d->max_frames);
  uint32_t size = 1;
  while ((double)size < longest + HALF + SPAN + 1.0) {
    size *= 2;
  }
  d->ring_mask = size - 1u;
  int failed = frac_delay_table_setup(&d->table);
  for (uint32_t c = 0; c < n_channels && !failed; ++c) {
    d->ring[c] = malloc(((size_t)size + GUARD) * sizeof(float));
    failed = !d->ring[c];
  }
  if (failed) {
    frac_delay_free(d);
    return -1;
  }
  d->glide_gain = -expm1(-1.0 / (FRAC_DELAY_GLIDE_TAU_S * rate_hz));
  d->max_step_frames = FRAC_DELAY_GLIDE_MAX_SPEED;
  frac_delay_reset(d);
  return 0;
}

// The taps for the target's fraction, once a glide lands (or a set jumps).
static void settle(frac_delay_t *d) {
  d->pos_frames = d->target_frames;
  const double whole = floor(d->target_frames);
  d->settled_frames = (uint32_t)whole;
  const double mu = d->target_frames - whole;
  d->settled_whole = mu == 0.0;
  if (!d->settled_whole) {
    frac_delay_table_taps(&d->table, mu, d->settled_taps);
  }
}

void frac_delay_reset(frac_delay_t *d) {
  const size_t size = (size_t)d->ring_mask + 1u + GUARD;
  for (uint32_t c = 0; c < d->n_channels; ++c) {
    memset(d->ring[c], 0, size * sizeof(float));
  }
  d->write_pos = 0;
  d->target_frames = (double)d->latency_frames;
  settle(d);
  d->last_port_ms = NAN;
  d->primed = false;
}

double frac_delay_frames_from_ms(float delay_ms, double rate_hz) {
  const double frames = (double)delay_ms * rate_hz / 1000.0;
  const double whole = nearbyint(frames);
  return (float)(whole * 1000.0 / rate_hz) == delay_ms ? whole : frames;
}

// From where the position is now toward the target: how many frames at the
// capped speed (while farther than the speed cap reaches in one time
// constant), then the one-pole approach.
static void start_glide(frac_delay_t *d) {
  const double cap = d->max_step_frames, reach = cap / d->glide_gain;
  const double distance = d->target_frames - d->pos_frames;
  d->glide_from = d->pos_frames;
  d->glide_step = distance > 0.0 ? cap : -cap;
  d->glide_done = 0;
  d->glide_capped = fabs(distance) > reach
                        ? (uint64_t)ceil((fabs(distance) - reach) / cap)
                        : 0u;
  d->glide_left = distance;
}

void frac_delay_set_frames(frac_delay_t *d, double delay_frames) {
  if (isnan(delay_frames)) {
    delay_frames = 0.0;
  }
  delay_frames = delay_frames < d->min_frames   ? d->min_frames
                 : delay_frames > d->max_frames ? d->max_frames
                                                : delay_frames;
  const double target = (double)d->latency_frames + delay_frames;
  if (d->primed && target == d->target_frames) {
    return; // mid-glide too: the glide goes on as it was
  }
  d->target_frames = target;
  if (!d->primed || d->pos_frames == d->target_frames) {
    settle(d); // the first run starts at the port value
    d->primed = true;
  } else {
    start_glide(d);
  }
}

void frac_delay_set(frac_delay_t *d, float delay_ms) {
  if (d->primed && delay_ms == d->last_port_ms) {
    return;
  }
  d->last_port_ms = delay_ms;
  const float ms = param_clamp(delay_ms, FRAC_DELAY_MIN_MS, FRAC_DELAY_MAX_MS,
                               FRAC_DELAY_DEFAULT_MS);
  frac_delay_set_frames(d, frac_delay_frames_from_ms(ms, d->rate_hz));
}

// Writes n frames (at + n <= S) of sanitised input at ring index at, and
// their copy past the end where they fall in the guard.
static void store(float *restrict ring, uint32_t size, uint32_t at,
                  const float *x, uint32_t n) {
  for (uint32_t i = 0; i < n; ++i) {
    const float v = x[i];
    ring[at + i] = fabsf(v) <= FLT_MAX ? v : 0.0f;
  }
  if (at < GUARD) {
    const uint32_t m = n < GUARD - at ? n : GUARD - at;
    memcpy(ring + size + at, ring + at, m * sizeof(float));
  }
}

// The two span kernels are built twice on x86-64 with GCC, for x86-64-v3
// (AVX2 and FMA, every x86-64 of the last ten years or so) and for baseline
// SSE2, and the loader picks one for the machine (an ifunc): the FIR's
// eight-lane vectors then take one register instead of two, and a
// multiply-add one instruction instead of two, about half the time.
#if defined(__x86_64__) && defined(__GNUC__) && !defined(__clang__) &&         \
    defined(__linux__)
#define SPAN_KERNEL __attribute__((target_clones("arch=x86-64-v3", "default")))
#else
#define SPAN_KERNEL
#endif

// Where frame k of the span reads for internal delay pos: the ring index of
// its window, the table row below its fraction and the weight of the next.
// The delay is positive and below 2^31 frames: truncation is floor.
static inline void glide_frame(frac_delay_t *d, uint32_t k, double pos) {
  const int32_t whole = (int32_t)pos;
  const double phase = (pos - (double)whole) * FRAC_DELAY_PHASES; // exact
  const int32_t row = (int32_t)phase;
  d->glide_start[k] =
      (d->write_pos + k - (uint32_t)whole - HALF) & d->ring_mask;
  d->glide_row[k] = (uint32_t)row;
  d->glide_weight[k] = (float)(phase - (double)row);
}

// Mid-glide: the read position frame by frame until it lands, then the
// outputs of those frames. Returns how many frames that was (all n, or
// fewer if it landed).
SPAN_KERNEL static uint32_t glide_span(frac_delay_t *d, float *const *out,
                                       uint32_t n) {
  if (frac_delay_settled(d)) {
    return 0;
  }
  // The capped frames in closed form, in double (at 100 ms and 384 kHz a
  // float's step would be 0.004 frames): no frame depends on the last.
  const uint64_t capped_left = d->glide_capped - d->glide_done;
  uint32_t moved = capped_left < n ? (uint32_t)capped_left : n;
  const double from = d->glide_from, step = d->glide_step;
  const double k0 = (double)d->glide_done + 1.0;
  for (uint32_t k = 0; k < moved; ++k) {
    glide_frame(d, k, from + step * (k0 + (double)k));
  }
  d->glide_done += moved;
  const double to = d->target_frames, pole = 1.0 - d->glide_gain;
  if (moved > 0) {
    d->pos_frames = from + step * (double)d->glide_done;
    d->glide_left = to - d->pos_frames; // where the approach starts
  }
  // Then the one-pole approach, until it lands.
  double left = d->glide_left;
  bool landed = false;
  for (; moved < n; ++moved) {
    left *= pole;
    if (left < FRAC_DELAY_LAND_FRAMES && left > -FRAC_DELAY_LAND_FRAMES) {
      landed = true; // this frame is already the settled one
      break;
    }
    glide_frame(d, moved, to - left);
  }
  d->glide_left = left;
  if (landed) {
    settle(d);
  } else if (d->glide_done == d->glide_capped) {
    d->pos_frames = to - left;
  }
  const float *rows = d->table.rows;
  for (uint32_t c = 0; c < d->n_channels; ++c) {
    const float *ring = d->ring[c];
    float *y = out[c];
    for (uint32_t k = 0; k < moved; ++k) {
      y[k] = frac_delay_fir_rows(rows + (size_t)d->glide_row[k] * N_TAPS,
                                 ring + d->glide_start[k], d->glide_weight[k]);
    }
  }
  return moved;
}

// Settled: frames from .. n of the span, a copy or the fraction's FIR.
SPAN_KERNEL static void settled_span(const frac_delay_t *d, float *const *out,
                                     uint32_t from, uint32_t n) {
  const uint32_t w = d->write_pos + from;
  for (uint32_t c = 0; c < d->n_channels; ++c) {
    const float *ring = d->ring[c];
    float *y = out[c] + from;
    if (d->settled_whole) {
      // The oldest frame read is at most S - 1 and the span at most GUARD
      // long, so the run is contiguous through the guard.
      const uint32_t at = (w - d->settled_frames) & d->ring_mask;
      memcpy(y, ring + at, (n - from) * sizeof(float));
    } else {
      const float *x = ring + ((w - d->settled_frames - HALF) & d->ring_mask);
      for (uint32_t i = 0; i < n - from; ++i) {
        y[i] = frac_delay_fir_dot(d->settled_taps, x + i);
      }
    }
  }
}

void frac_delay_compute(frac_delay_t *d, const float *const *in,
                        float *const *out, uint32_t n_frames) {
  const uint32_t size = d->ring_mask + 1u;
  uint32_t done = 0;
  while (done < n_frames) {
    const uint32_t left = n_frames - done;
    const uint32_t n = left < SPAN ? left : SPAN;
    // Every channel's input is in the ring before any output is written:
    // in may be out. NaN and infinities become silence here.
    const uint32_t w = d->write_pos, first = n < size - w ? n : size - w;
    for (uint32_t c = 0; c < d->n_channels; ++c) {
      store(d->ring[c], size, w, in[c] + done, first);
      store(d->ring[c], size, 0, in[c] + done + first, n - first);
    }
    float *span_out[FRAC_DELAY_MAX_CHANNELS];
    for (uint32_t c = 0; c < d->n_channels; ++c) {
      span_out[c] = out[c] + done;
    }
    const uint32_t moved = glide_span(d, span_out, n);
    if (moved < n) {
      settled_span(d, span_out, moved, n);
    }
    d->write_pos = (w + n) & d->ring_mask;
    done += n;
  }
}
