// SPDX-License-Identifier: GPL-3.0-or-later
// The all-pass of allpass.h at work: the glide of f0 and q, the stages, the
// crossfade between cascades and the kernels that run a settled one. What
// the coefficients are for one (f0, q) is allpass_coef.h's business, so this
// file is about time: what happens frame by frame.
#include "allpass.h"

#include <math.h>
#include <string.h>

#include "allpass_coef.h"
#include "param.h"

#define ALWAYS_INLINE inline __attribute__((always_inline))

// -------------------------------------------------------------- glide ----

static bool gliding(const allpass_t *a) {
  return !smoother_settled(&a->log2_freq) || !smoother_settled(&a->log2_q);
}

// One sample of glide. A parameter that has landed keeps its exact value;
// once both have, the coefficients are exactly the target's.
static const allpass_coefs_t *glide(allpass_t *a) {
  const float u_freq = smoother_next(&a->log2_freq);
  const float u_q = smoother_next(&a->log2_q);
  if (!gliding(a)) {
    return &a->exact;
  }
  double s = a->exact_sin, c = a->exact_cos, k = a->exact_k;
  if (!smoother_settled(&a->log2_freq)) {
    allpass_fast_sincos(M_PI * allpass_fast_exp2(u_freq), &s, &c);
  }
  if (!smoother_settled(&a->log2_q)) {
    k = allpass_fast_exp2(-(double)u_q);
  }
  allpass_coefs_from(&a->coefs, s, c, k, a->live[ALLPASS_ORDER_SECOND] > 0,
                     a->live[ALLPASS_ORDER_FIRST] > 0);
  return &a->coefs;
}

// ------------------------------------------------------------ stages ----

// One second-order stage, one sample. The SVF by trapezoidal integration
// (Simper's equivalent-current form) is
//   v3 = x - s2;  v1 = a1 s1 + a2 v3;  v2 = s2 + a2 s1 + a3 v3;
//   s1' = 2 v1 - s1;  s2' = 2 v2 - s2;  y = x - 2 k v1.
// Here the 2 is folded into the coefficients and 2 v1 = s1' + s1, which
// leaves one multiply and two adds on the loop-carried path.
static ALWAYS_INLINE double svf_stage(const allpass_coefs_t *co, double *s,
                                      double x) {
  const double v3 = x - s[1];
  const double n1 = co->m * s[0] + co->b1 * v3;
  const double n2 = s[1] + co->b1 * s[0] + co->b2 * v3;
  const double y = x - co->k * (n1 + s[0]);
  s[0] = n1;
  s[1] = n2;
  return y;
}

// One first-order stage: the trapezoidal one-pole v = G (x - s), lp = v + s,
// s' = lp + v with G = g / (1 + g), and y = 2 lp - x, rearranged.
static ALWAYS_INLINE double one_pole_stage(const allpass_coefs_t *co, double *s,
                                           double x) {
  const double y = co->one_plus_p * s[0] - co->p * x;
  s[0] = co->p * s[0] + co->one_minus_p * x;
  return y;
}

// False for NaN and both infinities (exponent all ones).
static ALWAYS_INLINE bool finite_sample(float v) {
  uint32_t bits;
  memcpy(&bits, &v, sizeof bits);
  return (bits & 0x7f800000u) != 0x7f800000u;
}

static void silence_channel(allpass_t *a, uint32_t ch) {
  memset(a->state[0][ch], 0, sizeof a->state[0][ch]);
  memset(a->state[1][ch], 0, sizeof a->state[1][ch]);
}

// -------------------------------------------------------- cascade fade ----

// Changing the stage count or the order changes which signal is the output.
// Switching from one to the other would be a step: at f0 one stage more is
// 180 degrees more, so a sine there flips sign. Instead the old and the new
// cascade run side by side for ALLPASS_FADE_S while the output crossfades
// with a raised-cosine gain, flat at both ends; a sine at f0 then passes
// through zero the way a polarity toggle does. Stages only the new cascade
// uses start from rest, and the fade covers their start-up. Running all four
// stages all the time and fading the tap would avoid that start-up, but make
// the common single stage cost four times as much for the sake of 10 ms
// after a change. A change asked for during a fade waits until it is over.

static uint32_t stages_of_order(allpass_cascade_t c, int order) {
  return c.order == order ? c.stages : 0u;
}

static bool same_cascade(allpass_cascade_t x, allpass_cascade_t y) {
  return x.order == y.order && x.stages == y.stages;
}

static void start_fade(allpass_t *a) {
  a->fading_from = a->cascade;
  a->cascade = a->wanted;
  for (int o = ALLPASS_ORDER_FIRST; o <= ALLPASS_ORDER_SECOND; ++o) {
    const uint32_t old_n = stages_of_order(a->fading_from, o);
    const uint32_t new_n = stages_of_order(a->cascade, o);
    const uint32_t need = old_n > new_n ? old_n : new_n;
    for (uint32_t st = a->live[o]; st < need; ++st) {
      for (uint32_t ch = 0; ch < ALLPASS_MAX_CHANNELS; ++ch) {
        a->state[o - 1][ch][st][0] = a->state[o - 1][ch][st][1] = 0.0;
      }
    }
    a->live[o] = (uint8_t)need;
  }
  a->fading = true;
  a->fade_pos = 0;
}

static void settle_cascade(allpass_t *a) {
  a->fading = false;
  for (int o = ALLPASS_ORDER_FIRST; o <= ALLPASS_ORDER_SECOND; ++o) {
    a->live[o] = (uint8_t)stages_of_order(a->cascade, o);
  }
}

// Frames while a glide or a fade is on, one at a time, everything updated
// per frame. Returns the frame it stopped before: end, or the first frame
// with neither on (or after a fade, so that the next one may start). Where
// it stops depends only on the frame count, never on the block size.
static uint32_t run_changing(allpass_t *a, const float *const *in,
                             float *const *out, uint32_t i, uint32_t end) {
  while (i < end) {
    const allpass_coefs_t *co = gliding(a) ? glide(a) : &a->exact;
    double to_gain = 1.0;
    if (a->fading) {
      ++a->fade_pos;
      to_gain = 0.5 - 0.5 * cos(M_PI * a->fade_pos / a->fade_frames);
    }
    const allpass_cascade_t from = a->fading ? a->fading_from : a->cascade;
    double x[ALLPASS_MAX_CHANNELS];
    for (uint32_t ch = 0; ch < a->n_channels; ++ch) {
      const float v = in[ch][i];
      x[ch] = finite_sample(v) ? v : 0.0;
      if (!finite_sample(v)) {
        silence_channel(a, ch);
      }
    }
    for (uint32_t ch = 0; ch < a->n_channels; ++ch) {
      double y_to = x[ch], y_from = x[ch], y = x[ch];
      for (uint32_t st = 0; st < a->live[ALLPASS_ORDER_SECOND]; ++st) {
        y = svf_stage(co, a->state[1][ch][st], y);
        y_to = st + 1 == stages_of_order(a->cascade, 2) ? y : y_to;
        y_from = st + 1 == stages_of_order(from, 2) ? y : y_from;
      }
      y = x[ch];
      for (uint32_t st = 0; st < a->live[ALLPASS_ORDER_FIRST]; ++st) {
        y = one_pole_stage(co, a->state[0][ch][st], y);
        y_to = st + 1 == stages_of_order(a->cascade, 1) ? y : y_to;
        y_from = st + 1 == stages_of_order(from, 1) ? y : y_from;
      }
      // (1 - g) from + g to, not from + g (to - from): exactly `to` at g = 1
      out[ch][i] = (float)((1.0 - to_gain) * y_from + to_gain * y_to);
    }
    ++i;
    if (a->fading && a->fade_pos >= a->fade_frames) {
      settle_cascade(a);
      break;
    }
    if (!a->fading && !gliding(a)) {
      break;
    }
  }
  return i;
}

// ----------------------------------------------------- steady kernels ----

// Settled parameters and cascade: the common case, specialised for each
// channel count, order and stage count so the states stay in registers. In a
// cascade stage n of one frame overlaps stage n - 1 of the next, and stereo
// interleaves two independent chains; that is what keeps a stage near the
// latency of its loop-carried path.
static ALWAYS_INLINE void run_steady(allpass_t *a, const float *const *in,
                                     float *const *out, uint32_t i,
                                     uint32_t end, const uint32_t n_ch,
                                     const int order, const uint32_t n_st) {
  const allpass_coefs_t co = a->exact;
  double s[ALLPASS_MAX_CHANNELS][ALLPASS_MAX_STAGES][2];
#pragma GCC unroll 2
  for (uint32_t ch = 0; ch < n_ch; ++ch) {
#pragma GCC unroll 4
    for (uint32_t st = 0; st < n_st; ++st) {
      s[ch][st][0] = a->state[order - 1][ch][st][0];
      s[ch][st][1] = a->state[order - 1][ch][st][1];
    }
  }
  for (; i < end; ++i) {
    double x[ALLPASS_MAX_CHANNELS];
    bool bad = false;
    for (uint32_t ch = 0; ch < n_ch; ++ch) {
      x[ch] = in[ch][i];
      bad |= !finite_sample(in[ch][i]);
    }
    if (__builtin_expect(bad, 0)) {
#pragma GCC unroll 2
      for (uint32_t ch = 0; ch < n_ch; ++ch) {
        if (!finite_sample(in[ch][i])) {
          x[ch] = 0.0; // and from rest: the output is 0 too
#pragma GCC unroll 4
          for (uint32_t st = 0; st < n_st; ++st) {
            s[ch][st][0] = s[ch][st][1] = 0.0; // no memset: s stays in regs
          }
        }
      }
    }
    // Unrolled, so that s[][][] lives in registers, not on the stack where
    // each store-to-load would add ~5 cycles to the loop-carried path.
#pragma GCC unroll 4
    for (uint32_t st = 0; st < n_st; ++st) {
#pragma GCC unroll 2
      for (uint32_t ch = 0; ch < n_ch; ++ch) {
        x[ch] = order == 2 ? svf_stage(&co, s[ch][st], x[ch])
                           : one_pole_stage(&co, s[ch][st], x[ch]);
      }
    }
    for (uint32_t ch = 0; ch < n_ch; ++ch) {
      out[ch][i] = (float)x[ch];
    }
  }
#pragma GCC unroll 2
  for (uint32_t ch = 0; ch < n_ch; ++ch) {
#pragma GCC unroll 4
    for (uint32_t st = 0; st < n_st; ++st) {
      a->state[order - 1][ch][st][0] = s[ch][st][0];
      a->state[order - 1][ch][st][1] = s[ch][st][1];
    }
  }
}

#define STEADY_CASE(ch, order, st)                                             \
  case ((ch)-1) * 8 + ((order)-1) * 4 + (st)-1:                                \
    run_steady(a, in, out, i, end, ch, order, st);                             \
    break
#define STEADY_CASES(ch, order)                                                \
  STEADY_CASE(ch, order, 1);                                                   \
  STEADY_CASE(ch, order, 2);                                                   \
  STEADY_CASE(ch, order, 3);                                                   \
  STEADY_CASE(ch, order, 4)

static void run_steady_any(allpass_t *a, const float *const *in,
                           float *const *out, uint32_t i, uint32_t end) {
  switch ((a->n_channels - 1) * 8 + (a->cascade.order - 1u) * 4 +
          (a->cascade.stages - 1u)) {
    STEADY_CASES(1, 1);
    STEADY_CASES(1, 2);
    STEADY_CASES(2, 1);
    STEADY_CASES(2, 2);
  default:
    break;
  }
}

// ---------------------------------------------------------------- API ----

int allpass_stages_from_port(float stages) {
  const float v = param_clamp(stages, 1.0f, (float)ALLPASS_MAX_STAGES,
                              (float)ALLPASS_STAGES_DEFAULT);
  return (int)floorf(v + 0.5f);
}

int allpass_order_from_port(float order) {
  if (isnan(order)) {
    return ALLPASS_ORDER_DEFAULT;
  }
  return order < 1.5f ? ALLPASS_ORDER_FIRST : ALLPASS_ORDER_SECOND;
}

void allpass_setup(allpass_t *a, double rate_hz, uint32_t n_channels) {
  memset(a, 0, sizeof *a);
  a->rate_hz = rate_hz;
  a->n_channels = n_channels < 1                      ? 1
                  : n_channels > ALLPASS_MAX_CHANNELS ? ALLPASS_MAX_CHANNELS
                                                      : n_channels;
  a->max_frequency_hz = ALLPASS_FREQUENCY_MAX_OF_RATE * rate_hz;
  if (a->max_frequency_hz > ALLPASS_FREQUENCY_MAX_HZ) {
    a->max_frequency_hz = ALLPASS_FREQUENCY_MAX_HZ;
  }
  const double frames = rate_hz * ALLPASS_FADE_S;
  a->fade_frames = frames < 1.0 ? 1u : (uint32_t)lround(frames);
  smoother_setup(&a->log2_freq, ALLPASS_GLIDE_TAU_S, rate_hz);
  smoother_setup(&a->log2_q, ALLPASS_GLIDE_TAU_S, rate_hz);
  allpass_reset(a);
}

void allpass_reset(allpass_t *a) {
  memset(a->state, 0, sizeof a->state);
  a->flush_countdown = ALLPASS_FLUSH_FRAMES;
  // The defaults, settled, in case compute comes before any set.
  a->primed = false;
  allpass_set(a, ALLPASS_FREQUENCY_DEFAULT_HZ, ALLPASS_Q_DEFAULT,
              ALLPASS_STAGES_DEFAULT, ALLPASS_ORDER_DEFAULT);
  a->primed = false;
}

static void retarget(allpass_t *a, float frequency_hz, float q) {
  a->last_frequency_hz = frequency_hz;
  a->last_q = q;
  double f_hz =
      param_clamp(frequency_hz, ALLPASS_FREQUENCY_MIN_HZ,
                  ALLPASS_FREQUENCY_MAX_HZ, ALLPASS_FREQUENCY_DEFAULT_HZ);
  f_hz = f_hz > a->max_frequency_hz ? a->max_frequency_hz : f_hz;
  const double qq =
      param_clamp(q, ALLPASS_Q_MIN, ALLPASS_Q_MAX, ALLPASS_Q_DEFAULT);
  allpass_coefs_exact(&a->exact, &a->exact_sin, &a->exact_cos, &a->exact_k,
                      f_hz, a->rate_hz, qq);
  const float u_freq = (float)log2(f_hz / a->rate_hz);
  const float u_q = (float)log2(qq);
  if (a->primed) {
    smoother_set_target(&a->log2_freq, u_freq);
    smoother_set_target(&a->log2_q, u_q);
  } else {
    smoother_reset(&a->log2_freq, u_freq);
    smoother_reset(&a->log2_q, u_q);
  }
}

void allpass_set(allpass_t *a, float frequency_hz, float q, float stages,
                 float order) {
  // != is true for NaN too: a NaN port is clamped again each time (cheap).
  if (!a->primed || frequency_hz != a->last_frequency_hz || q != a->last_q) {
    retarget(a, frequency_hz, q);
  }
  a->wanted.order = (uint8_t)allpass_order_from_port(order);
  a->wanted.stages = (uint8_t)allpass_stages_from_port(stages);
  if (!a->primed) {
    a->cascade = a->wanted; // the first run starts with it, no fade
    settle_cascade(a);
    a->primed = true;
  }
}

// States that have decayed below ALLPASS_TINY are zeroed every
// ALLPASS_FLUSH_FRAMES frames. run() turns on flush-to-zero, which keeps
// double denormals (below 2.2e-308) from costing CPU; this is for callers
// without it (and it lets silence leave exact zeros). 1e-60 is far below
// the smallest float, so such a state can no longer reach a float output.
static void flush_tiny(allpass_t *a) {
  double *v = &a->state[0][0][0][0];
  for (size_t i = 0; i < sizeof a->state / sizeof *v; ++i) {
    v[i] = fabs(v[i]) < ALLPASS_TINY ? 0.0 : v[i];
  }
}

void allpass_compute(allpass_t *a, const float *const *in, float *const *out,
                     uint32_t n_frames) {
  uint32_t i = 0;
  while (i < n_frames) {
    if (!a->fading && !same_cascade(a->cascade, a->wanted)) {
      start_fade(a);
    }
    const uint32_t begin = i;
    const uint32_t end =
        n_frames - i > a->flush_countdown ? i + a->flush_countdown : n_frames;
    if (a->fading || gliding(a)) {
      i = run_changing(a, in, out, i, end);
    } else {
      run_steady_any(a, in, out, i, end);
      i = end;
    }
    a->flush_countdown -= i - begin;
    if (a->flush_countdown == 0) {
      flush_tiny(a);
      a->flush_countdown = ALLPASS_FLUSH_FRAMES;
    }
  }
}
