// SPDX-License-Identifier: GPL-3.0-or-later
// Phase rotation of one channel by one angle across the whole band:
//
//   y[t] = cos(theta) * x[t - L] - sin(theta) * H{x}[t - L]
//
// with H the linear-phase FIR Hilbert transformer of hilbert.h and L the
// constant latency. Sign convention: a positive angle advances every
// frequency. For x = cos(wt), H{x} = sin(wt) and y = cos(wt + theta), which is
// Re{(x + jH{x}) e^{j theta}} = Re{scipy.signal.hilbert(x) * e^{j theta}}.
// So +90 degrees turns cos into -sin, and -90 turns cos into sin.
//
// 0 degrees is the input delayed by L, bit for bit (the in-phase path is a
// pure delay line); +/-180 degrees is its exact negation.
//
// Latency L = (n_taps - 1) / 2, the Hilbert FIR's group delay, plus the
// convolver's partition length B, which it needs to gather a block.
//
// Angle changes move sample by sample with a one-pole time constant of
// ROTATOR_TAU_S along the shorter way round the circle: from 170 to -170 the
// angle goes through 180, not through 0 (a half-turn, where both ways are as
// short, goes the negative way).
#ifndef VERNIER_DSP_ROTATOR_H
#define VERNIER_DSP_ROTATOR_H

#include <stdbool.h>
#include <stdint.h>

#include "fft_convolver.h"

#define ROTATOR_ANGLE_MIN_DEG (-180.0f)
#define ROTATOR_ANGLE_MAX_DEG 180.0f
#define ROTATOR_ANGLE_DEFAULT_DEG 0.0f
// 10 ms, as for the bipolar gain: an angle stepped 10 degrees each 512-frame
// block at 48 kHz turns smoothly instead of clicking at each step.
#define ROTATOR_TAU_S 0.010
// Sample rates setup accepts; the design rule holds at any rate, this only
// bounds the memory (the FIR grows with the rate).
#define ROTATOR_MIN_RATE_HZ 8000.0
#define ROTATOR_MAX_RATE_HZ 768000.0
// Closer than this to the end of a turn, the angle lands on it: a step of
// sin(1e-4 degree) = 1.7e-6 (-115 dB) of the signal, far below hearing.
#define ROTATOR_LAND_DEG 1e-4f
// Frames handled at a time inside rotator_compute(): bounds the scratch.
#define ROTATOR_SPAN_FRAMES 256u

typedef struct {
  fft_convolver_t hilbert; // H{x}, late by latency_frames in all
  float *delay; // sanitised input, a ring of delay_mask + 1: the in-phase path
  uint32_t delay_mask;
  uint32_t write_pos;
  uint32_t n_taps;         // Hilbert FIR length (odd)
  uint32_t latency_frames; // (n_taps - 1) / 2 + partition length
  // The angle now is turn_to_deg + turn_left_deg: mid-turn, turn_to_deg is
  // the port angle unwrapped onto the shorter way (it may leave
  // [-180, 180]) and turn_left_deg decays by angle_pole each sample.
  float turn_to_deg;
  float turn_left_deg;      // 0 when settled
  float angle_pole;         // exp(-1 / (ROTATOR_TAU_S * rate))
  float target_deg;         // the clamped port angle, where it settles
  float last_port_deg;      // to skip unchanged port values
  float cos_gain, sin_gain; // at target_deg, exact at quarter turns
  bool primed;              // false until the first set after rotator_reset()
  float hilbert_span[ROTATOR_SPAN_FRAMES]; // H{x}[t - L], one span
  float angle_span[ROTATOR_SPAN_FRAMES];   // the smoothed angle mid-turn
} rotator_t;

// Partition length for a rate: the power of two nearest a tenth of the
// least FIR length, at least 64 (256 at 44.1 and 48 kHz, 512 at 96 kHz).
uint32_t rotator_partition_frames(double rate_hz);

// Instantiation thread. Designs the FIR for rate_hz and allocates. Returns 0,
// or -1 (rate out of range or no memory) with nothing left allocated.
int rotator_setup(rotator_t *r, double rate_hz);

// Instantiation thread. Safe after a failed setup and on a zeroed struct.
void rotator_free(rotator_t *r);

// Forget the signal and the angle: silence in, and the next rotator_set()
// jumps to its value.
void rotator_reset(rotator_t *r);

// Clamps to -180..180; NaN falls back to 0.
void rotator_set(rotator_t *r, float angle_deg);

static inline uint32_t rotator_latency(const rotator_t *r) {
  return r->latency_frames;
}

// The smoothed angle now, unwrapped (mid-turn it may leave [-180, 180]).
static inline float rotator_angle_now_deg(const rotator_t *r) {
  return r->turn_to_deg + r->turn_left_deg;
}

// Audio thread. Any n_frames; in may equal out. Non-finite input samples are
// taken as zero, so they never enter the filter's state.
void rotator_compute(rotator_t *r, const float *in, float *out,
                     uint32_t n_frames);

#endif
