// SPDX-License-Identifier: GPL-3.0-or-later
// Frequency-centred all-pass: 1 to 4 identical stages at one frequency f0,
// each second order (the default) or first order, on 1 or 2 channels.
//
// What one stage does. |H| = 1 at every frequency; only the phase moves.
//   second order: 0 degrees at DC, -180 at f0, toward -360 at Nyquist; q sets
//     how sharply the phase turns around f0 (the group delay at f0 is
//     2/alpha samples, alpha = sin(w0) / (2 q), w0 = 2 pi f0 / rate).
//   first order: 0 at DC, -90 at f0, toward -180 at Nyquist; no q.
// N stages give N times the phase. No latency.
//
// The second-order stage is a state-variable filter solved by trapezoidal
// integration (zero-delay feedback, topology preserving): two integrator
// states, g = tan(pi f0 / rate), k = 1/q, output x - 2 k v_band. That is the
// analog all-pass (s^2 - k s + 1) / (s^2 + k s + 1) through the bilinear
// transform prewarped at f0, the same H(z) as the RBJ Audio EQ Cookbook
// all-pass. Because the states are the integrators' own, not a biquad's past
// samples, f0 and q may move every sample without the state jumping: a
// glide stays stable, with no steps or zipper noise. (A sweep across a tone
// faster than the stage's own group delay there still rings, as it would in
// any all-pass; test_allpass.c measures how much.) The first-order stage is
// the trapezoidal one-pole: (1 - s) / (1 + s), prewarped the same way.
//
// State and coefficients are double: the all-pass property is the match
// between numerator and denominator, and float rounding of coefficients
// (about 6e-8) would bend a response that must stay flat within 1e-6 dB
// (1.2e-7), worst at low f0 and high rates, where the poles sit near z = 1.
#ifndef VERNIER_DSP_ALLPASS_H
#define VERNIER_DSP_ALLPASS_H

#include <stdbool.h>
#include <stdint.h>

#include "smoother.h"

#define ALLPASS_MAX_CHANNELS 2
#define ALLPASS_MAX_STAGES 4
#define ALLPASS_FREQUENCY_MIN_HZ 20.0f
#define ALLPASS_FREQUENCY_MAX_HZ 20000.0f
#define ALLPASS_FREQUENCY_DEFAULT_HZ 200.0f
// Frequencies are also held below 0.49 x the rate: tan(pi f / rate) has its
// pole at Nyquist (at 22.05 kHz the top is 10.8 kHz, not 20 kHz).
#define ALLPASS_FREQUENCY_MAX_OF_RATE 0.49
#define ALLPASS_Q_MIN 0.1f
#define ALLPASS_Q_MAX 10.0f
#define ALLPASS_Q_DEFAULT 0.707f
#define ALLPASS_STAGES_DEFAULT 1
#define ALLPASS_ORDER_FIRST 1
#define ALLPASS_ORDER_SECOND 2
#define ALLPASS_ORDER_DEFAULT ALLPASS_ORDER_SECOND
// 10 ms, as for the gain: a knob turned by hand or automation stepped each
// block glides without zipper noise, yet the filter follows within ~50 ms.
// Frequency glides in octaves (log2), q in log2 too: both span decades, and
// equal ratios are what the ear hears as equal steps.
#define ALLPASS_GLIDE_TAU_S 0.010
// A change of stages or order crossfades the old cascade into the new one
// over 10 ms with a raised-cosine gain (see allpass.c for why).
#define ALLPASS_FADE_S 0.010
// Every this many frames (counted from the reset, so independent of the block
// size) states below ALLPASS_TINY are set to zero; see flush_tiny().
#define ALLPASS_FLUSH_FRAMES 1024u
#define ALLPASS_TINY 1e-60

// Coefficients of one stage for one (f0, q), shared by channels and stages.
// With s = sin(pi f0/rate), c = cos(pi f0/rate) (so g = s/c), and
// alpha = k s c, a1 = c^2/D, a2 = s c/D, a3 = s^2/D with D = c^2 + s^2 + alpha
// are the SVF's a1 = 1/(1 + g (g + k)), a2 = g a1, a3 = g a2.
typedef struct {
  double k;  // 1/q
  double m;  // 2 a1 - 1: how the band state feeds itself
  double b1; // 2 a2
  double b2; // 2 a3
  double p;  // first order: pole (1 - g) / (1 + g)
  double one_minus_p, one_plus_p;
} allpass_coefs_t;

// What the cascade is: order of each stage and how many stages.
typedef struct {
  uint8_t order;  // ALLPASS_ORDER_FIRST or ALLPASS_ORDER_SECOND
  uint8_t stages; // 1 .. ALLPASS_MAX_STAGES
} allpass_cascade_t;

typedef struct {
  double rate_hz;
  double max_frequency_hz; // min(20 kHz, 0.49 rate)
  uint32_t n_channels;
  uint32_t fade_frames; // ALLPASS_FADE_S at this rate, at least 1
  smoother_t log2_freq; // log2(f0 / rate)
  smoother_t log2_q;
  allpass_coefs_t coefs; // during a glide: for the smoothed values
  allpass_coefs_t exact; // for the targets, from libm: used once settled
  double exact_sin, exact_cos, exact_k;
  float last_frequency_hz, last_q; // port values last seen
  allpass_cascade_t cascade;       // playing, or fading in
  allpass_cascade_t wanted;        // asked for by the last allpass_set()
  allpass_cascade_t fading_from;   // what a fade leaves
  uint32_t fade_pos;               // frames of the fade done, 1 .. fade_frames
  bool fading;
  uint8_t live[3]; // stages with running state, by order (1, 2)
  uint32_t flush_countdown;
  bool primed; // false until the first set after allpass_reset()
  // [order - 1][channel][stage]: the two trapezoidal integrator states of a
  // second-order stage, or the one of a first-order stage (and an unused 0)
  double state[2][ALLPASS_MAX_CHANNELS][ALLPASS_MAX_STAGES][2];
} allpass_t;

// n_channels: 1 or 2 (larger values are taken as 2).
void allpass_setup(allpass_t *a, double rate_hz, uint32_t n_channels);

// Silence the state and forget the parameters: the next allpass_set() jumps.
void allpass_reset(allpass_t *a);

// Port values as a host sends them: clamped, NaN replaced by the default,
// stages rounded to the nearest of 1..4, order 1 below 1.5 and 2 above.
void allpass_set(allpass_t *a, float frequency_hz, float q, float stages,
                 float order);

int allpass_stages_from_port(float stages);
int allpass_order_from_port(float order);

// in[c] may equal out[c] (or any other out[]): each frame is read whole
// before it is written. A non-finite input sample restarts that channel's
// filters from rest and comes out as 0.
void allpass_compute(allpass_t *a, const float *const *in, float *const *out,
                     uint32_t n_frames);

#endif
