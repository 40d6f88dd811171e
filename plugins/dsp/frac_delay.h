// SPDX-License-Identifier: GPL-3.0-or-later
// Fine Delay: shifts 1 or 2 channels by the same time, negative or positive,
// to a small fraction of a sample.
//
// Look-ahead. A negative delay cannot be done causally, so the module runs
// late by a constant latency L and delays internally by L + delay:
//
//   y[t] = x[t - L - delay]
//
// After a host compensates the reported L, the net shift is exactly the
// delay. L = ceil(-FRAC_DELAY_MIN_MS x rate) + FRAC_DELAY_HALF_TAPS - 1: the
// negative limit plus the look-ahead the FIR needs around its centre (905
// frames at 44.1 kHz, 983 at 48 kHz, 1943 at 96 kHz). It depends on the rate
// only, never on the delay.
//
// Interpolation. The internal delay D = n + mu (n whole, 0 <= mu < 1) is read
// through the Kaiser-windowed-sinc FIR of frac_delay_table.h for fraction mu:
//
//   y[t] = sum_{j = -H + 1}^{H} h_j(mu) x[t - n - j]
//
// A whole number of frames (mu = 0) is a plain copy, bit for bit. A port
// value the float cannot tell from a whole number of frames (one whose nearest
// whole frame count, converted back to ms, rounds to the same float) counts
// as whole: 12 frames typed at 44.1 kHz as 0.27210884 ms stay a copy.
//
// Changes. The read position glides: a one-pole approach with a time
// constant of FRAC_DELAY_GLIDE_TAU_S, its speed capped at
// FRAC_DELAY_GLIDE_MAX_SPEED. While it moves, the signal is resampled by
// (1 - speed): a pitch shift of at most 0.5% (8.6 cents), continuous, with
// no click and no crossfade comb. A fine adjustment (under 0.05 ms, what
// the capped speed covers in one time constant) is exponential; a longer one
// runs at the capped speed, 5 ms of delay per second (1 ms in 0.2 s, 10 ms
// in 2 s), then approaches exponentially and lands on the target. Mid-glide
// every frame has its own fraction: the table's two nearest rows, mixed.
//
// Input samples that are NaN or infinite are stored as 0, so they leave the
// FIR's memory FRAC_DELAY_TAPS frames after the last of them.
#ifndef VERNIER_DSP_FRAC_DELAY_H
#define VERNIER_DSP_FRAC_DELAY_H

#include <stdbool.h>
#include <stdint.h>

#include "frac_delay_table.h"

// The range, ms. The negative side moves a late path earlier: 20 ms is 6.9 m
// of air at 20 C, beyond the usual lag of an amp, kick-out, snare-bottom or
// overhead mic behind its close mic or DI (0.3 .. 5 ms), with room for a
// reamp round trip or a mic at the far side of a studio room. Every
// millisecond of it is a millisecond of latency in every host, so it stops
// there. The positive side costs only memory: 100 ms is 34 m, a room or hall
// mic tens of metres away.
#define FRAC_DELAY_MIN_MS (-20.0f)
#define FRAC_DELAY_MAX_MS 100.0f
#define FRAC_DELAY_DEFAULT_MS 0.0f
#define FRAC_DELAY_MAX_CHANNELS 2u
// Rates setup accepts; the design rule holds at any rate, this only bounds
// the memory (the buffers grow with the rate).
#define FRAC_DELAY_MIN_RATE_HZ 8000.0
#define FRAC_DELAY_MAX_RATE_HZ 768000.0
// 10 ms, as for the gain and the angle: a knob turned by hand or stepped each
// block glides without zipper noise.
#define FRAC_DELAY_GLIDE_TAU_S 0.010
// Seconds of delay per second, at most: the pitch moves by 0.5% at most,
// which keeps a sine's steps within 1% of its own (the click test)
// and a sustained note within 9 cents.
#define FRAC_DELAY_GLIDE_MAX_SPEED 0.005
// Closer than this (frames) to the target, a glide lands on it: a phase step
// of 2 pi x 0.5 x 1e-6 at Nyquist at most, -110 dB.
#define FRAC_DELAY_LAND_FRAMES 1e-6
// Frames handled at a time: bounds the scratch and the ring's guard.
#define FRAC_DELAY_SPAN_FRAMES 256u
// The ring repeats its first GUARD slots after its end, so that any span's
// reads (a FIR window per frame) are one contiguous run.
#define FRAC_DELAY_GUARD_FRAMES (FRAC_DELAY_SPAN_FRAMES + FRAC_DELAY_TAPS)

typedef struct {
  frac_delay_table_t table;
  uint32_t n_channels;
  double rate_hz;
  uint32_t latency_frames; // L
  double min_frames;       // the delay's limits at this rate, frames
  double max_frames;       //
  uint32_t ring_mask;      // ring size S - 1, S a power of two
  float *ring[FRAC_DELAY_MAX_CHANNELS]; // S + GUARD each: sanitised input
  uint32_t write_pos;
  // The internal delay, frames (L + the delay): now, and where it settles.
  double pos_frames;
  double target_frames;
  double glide_gain;      // 1 - exp(-1 / (FRAC_DELAY_GLIDE_TAU_S x rate))
  double max_step_frames; // FRAC_DELAY_GLIDE_MAX_SPEED, per frame
  // A glide, from where a set found the position: first capped_frames at
  // the capped speed, at glide_from + glide_step x k for k = 1, 2, ... (in
  // closed form, so that no frame waits for the one before); then the
  // one-pole approach, glide_left = target - position shrinking by the pole
  // each frame. The state is these, never pos_frames, so that no rounding
  // depends on where a span ends.
  double glide_from, glide_step;
  uint64_t glide_done, glide_capped; // capped frames done, and in all
  double glide_left;
  float last_port_ms; // to skip unchanged port values
  bool primed;        // false until the first set after frac_delay_reset()
  // Settled (pos == target): the whole frames, and the fraction's taps.
  uint32_t settled_frames;
  bool settled_whole;                               // fraction 0: a copy
  _Alignas(16) float settled_taps[FRAC_DELAY_TAPS]; // as the table's rows
  // One span of a glide, frame by frame: the ring index where the FIR's
  // window starts, the table row below the fraction, the weight of the next.
  uint32_t glide_start[FRAC_DELAY_SPAN_FRAMES];
  uint32_t glide_row[FRAC_DELAY_SPAN_FRAMES];
  float glide_weight[FRAC_DELAY_SPAN_FRAMES];
} frac_delay_t;

// L at a rate: the negative limit plus the FIR's look-ahead.
uint32_t frac_delay_latency_for_rate(double rate_hz);

// Instantiation thread. Designs the table and allocates the buffers for
// n_channels (1 or 2). Returns 0, or -1 (rate or channels out of range, no
// memory) with nothing left allocated.
int frac_delay_setup(frac_delay_t *d, double rate_hz, uint32_t n_channels);

// Instantiation thread. Safe after a failed setup, on a zeroed struct, twice.
void frac_delay_free(frac_delay_t *d);

// Silence in, delay 0, and the next set jumps to its value.
void frac_delay_reset(frac_delay_t *d);

// The port value: clamped to the range, NaN taken as the default (0).
void frac_delay_set(frac_delay_t *d, float delay_ms);

// The delay in frames (may be fractional), clamped to the range. The first
// set after a reset jumps; later ones glide.
void frac_delay_set_frames(frac_delay_t *d, double delay_frames);

// The frames a port value means at rate_hz: ms x rate / 1000, or the whole
// number of frames the float cannot tell it from.
double frac_delay_frames_from_ms(float delay_ms, double rate_hz);

static inline uint32_t frac_delay_latency(const frac_delay_t *d) {
  return d->latency_frames;
}

// The delay now (frames, without L): mid-glide, between the old and the new.
static inline double frac_delay_now_frames(const frac_delay_t *d) {
  return d->pos_frames - (double)d->latency_frames;
}

static inline bool frac_delay_settled(const frac_delay_t *d) {
  return d->pos_frames == d->target_frames;
}

// Audio thread. Any n_frames; in[c] may equal out[c] (or another out[]):
// a span is read whole before any of it is written.
void frac_delay_compute(frac_delay_t *d, const float *const *in,
                        float *const *out, uint32_t n_frames);

#endif
