// SPDX-License-Identifier: GPL-3.0-or-later
// libFuzzer target: the DSP modules of plugins/dsp, driven as a host drives
// the plugins, with any parameter and any sample.
//
// Input: byte 0 picks the module, byte 1 the sample rate, byte 2 the
// channels (1 or 2); then commands, an op byte each: set the parameters
// (any float: NaN, inf, FLT_MAX, out of range), process a block of 0..8192
// frames (samples from the input or from a generator: noise, sine,
// full-scale square, DC, with NaN, inf, FLT_MAX or denormals spliced in),
// reset, switch between in-place and separate buffers, switch flush-to-zero.
//
// What must hold after every block, besides no crash and no sanitizer
// report (fuzz_dsp_check.h):
//   - memoryless modules (gain, polarity): a finite input sample of
//     moderate size gives a finite one, within the module's gain of it;
//   - the others: once the last non-finite or huge input sample is longer
//     ago than the module's memory, the output is finite and within the
//     module's gain bound times the input peak since the last reset;
//   - the smoother: moves only toward its target, never past it, and
//     stays finite.
#include <float.h>
#include <math.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "dsp/allpass.h"
#include "dsp/bipolar_gain.h"
#include "dsp/denormal.h"
#include "dsp/frac_delay.h"
#include "dsp/polarity.h"
#include "dsp/rotator.h"
#include "dsp/smoother.h"
#include "fuzz_dsp_check.h"
#include "fuzz_dsp_input.h"

#define MAX_BLOCK 8192u
// Frames per input, at most: keeps one execution in milliseconds.
#define MAX_FRAMES_PER_INPUT 65536u
#define N_CH 2

enum { M_GAIN, M_POLARITY, M_ROTATOR, M_ALLPASS, M_DELAY, M_SMOOTHER, M_LAST };

static const double rates[] = {44100,  48000, 22050, 96000,  192000,
                               384000, 88200, 8000,  768000, 32000};
#define N_RATES (sizeof rates / sizeof rates[0])

// Modules that allocate are set up once per rate and reset for each input:
// designing the Hilbert FIR and planning its FFT take far longer than a run.
static rotator_t *rotators[N_RATES][N_CH];
static frac_delay_t *delays[N_RATES][N_CH + 1];

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

typedef struct {
  int module;
  int rate_index;
  double rate_hz;
  uint32_t n_channels;
  bool in_place;
  bool ftz;
  bipolar_gain_t gain;
  polarity_t polarity[N_CH];
  rotator_t *rotator[N_CH];
  allpass_t allpass;
  frac_delay_t *delay;
  smoother_t smoother;
  float smoother_prev;
  VnFuzzTrack track[N_CH];
  float in[N_CH][MAX_BLOCK];
  float out[N_CH][MAX_BLOCK];
  uint32_t lcg;
} Session;

static void fill_block(Session *s, Reader *r, uint32_t n) {
  const uint8_t kind = next_byte(r);
  const float level = next_value(r, 0.0f, 1.0f);
  for (uint32_t c = 0; c < s->n_channels; ++c) {
    float *x = s->in[c];
    for (uint32_t i = 0; i < n; ++i) {
      switch (kind % 6) {
      case 0: // white noise
        s->lcg = s->lcg * 1664525u + 1013904223u;
        x[i] = level * ((float)(s->lcg >> 8) / (float)(1u << 23) - 1.0f);
        break;
      case 1: // a sine near a quarter of the rate's octave
        x[i] = level * sinf(0.05f * (float)(i + 7 * c));
        break;
      case 2: // full-scale square, 64-frame half period
        x[i] = (i / 64u) % 2 ? level : -level;
        break;
      case 3: // DC
        x[i] = level;
        break;
      default: { // the input's own bytes, as floats
        const uint32_t bits = next_u32(r);
        memcpy(&x[i], &bits, sizeof x[i]);
      } break;
      }
    }
  }
  // A few special samples spliced in.
  const uint8_t n_spikes = next_byte(r) % 4;
  for (uint8_t k = 0; k < n_spikes && n > 0; ++k) {
    const uint32_t at = next_u32(r) % n;
    s->in[next_byte(r) % s->n_channels][at] = next_value(r, -1.0f, 1.0f);
  }
}

static void set_params(Session *s, Reader *r) {
  switch (s->module) {
  case M_GAIN: {
    const float g = next_value(r, BIPOLAR_GAIN_MIN, BIPOLAR_GAIN_MAX);
    const float t = next_value(r, BIPOLAR_TRIM_MIN_DB, BIPOLAR_TRIM_MAX_DB);
    bipolar_gain_set(&s->gain, g, t);
  } break;
  case M_POLARITY:
    for (uint32_t c = 0; c < s->n_channels; ++c) {
      polarity_set(&s->polarity[c], next_value(r, 0, 1) > 0.5f);
    }
    break;
  case M_ROTATOR:
    for (uint32_t c = 0; c < s->n_channels; ++c) {
      rotator_set(s->rotator[c],
                  next_value(r, ROTATOR_ANGLE_MIN_DEG, ROTATOR_ANGLE_MAX_DEG));
    }
    break;
  case M_ALLPASS: {
    const float f =
        next_value(r, ALLPASS_FREQUENCY_MIN_HZ, ALLPASS_FREQUENCY_MAX_HZ);
    const float q = next_value(r, ALLPASS_Q_MIN, ALLPASS_Q_MAX);
    const float st = next_value(r, 1, ALLPASS_MAX_STAGES);
    const float o = next_value(r, 1, 2);
    allpass_set(&s->allpass, f, q, st, o);
  } break;
  case M_DELAY:
    if (next_byte(r) % 2) {
      frac_delay_set(s->delay,
                     next_value(r, FRAC_DELAY_MIN_MS, FRAC_DELAY_MAX_MS));
    } else {
      const float ms = next_value(r, FRAC_DELAY_MIN_MS, FRAC_DELAY_MAX_MS);
      frac_delay_set_frames(s->delay, (double)ms * s->rate_hz / 1000.0);
    }
    break;
  default: {
    // The smoother's callers clamp first (gains within 16, log2 of
    // frequencies and q): finite targets, far from FLT_MAX, where the
    // distance between two of them cannot overflow.
    const float t = next_value(r, -2.0f, 2.0f);
    smoother_set_target(&s->smoother,
                        isfinite(t) && fabsf(t) <= VN_FUZZ_HUGE ? t : 0.0f);
  } break;
  }
}

static void reset(Session *s) {
  bipolar_gain_reset(&s->gain);
  for (uint32_t c = 0; c < N_CH; ++c) {
    polarity_reset(&s->polarity[c]);
    if (s->rotator[c]) {
      rotator_reset(s->rotator[c]);
    }
    vn_fuzz_track_reset(&s->track[c]);
  }
  allpass_reset(&s->allpass);
  if (s->delay) {
    frac_delay_reset(s->delay);
  }
  smoother_reset(&s->smoother, 0.0f);
  s->smoother_prev = 0.0f;
}

// Gain bounds, |out| / input peak (common practice: a linear filter's
// output is at most the L1 norm of its impulse response times the input
// peak). Bipolar gain: 1 x 10^(24/20) = 15.85, the smoothed coefficient
// lying between two such values. Polarity: its crossfade gain is within
// -1 .. 1. Rotator: |cos| + |sin| x the Hilbert FIR's L1 norm, which grows
// as (2/pi) ln(taps) (about 3 at 384 kHz); 8 leaves room. Fine delay: the
// windowed sinc's L1 norm, largest at half a frame (about 2.5 for 48
// taps), a glide mixing two rows; 8 again. All-pass: each stage is
// 1 - 2k BP(s), L1 at most 1 + 2 x 2 = 5 at q = 0.1 (two real poles), 625
// for four stages; 1000 leaves room for glides and stage crossfades.
#define GAIN_BOUND 15.8490f
#define ROTATOR_BOUND 8.0f
#define DELAY_BOUND 8.0f
#define ALLPASS_BOUND 1000.0f

static void check_smoother(Session *s, uint32_t n) {
  for (uint32_t i = 0; i < n; ++i) {
    const float prev = s->smoother_prev, target = s->smoother.target;
    const float v = smoother_next(&s->smoother);
    if (!isfinite(v) || fabsf(v - target) > fabsf(prev - target) ||
        (v - prev) * (target - prev) < 0.0f) {
      vn_fuzz_fail("smoother", "left the way to its target", i, prev, v,
                   target);
    }
    s->smoother_prev = v;
  }
}

static void process(Session *s, uint32_t n) {
  const float *in[N_CH] = {s->in[0], s->in[1]};
  float *out[N_CH] = {s->out[0], s->out[1]};
  if (s->in_place) {
    for (uint32_t c = 0; c < s->n_channels; ++c) {
      memcpy(s->out[c], s->in[c], n * sizeof(float));
      in[c] = s->out[c];
    }
  }
  const denormal_guard_t guard =
      s->ftz ? denormal_guard_begin() : (denormal_guard_t){0};
  switch (s->module) {
  case M_GAIN:
    bipolar_gain_compute(&s->gain, in, out, s->n_channels, n);
    break;
  case M_POLARITY:
    for (uint32_t c = 0; c < s->n_channels; ++c) {
      polarity_compute(&s->polarity[c], in[c], out[c], n);
    }
    break;
  case M_ROTATOR:
    for (uint32_t c = 0; c < s->n_channels; ++c) {
      rotator_compute(s->rotator[c], in[c], out[c], n);
    }
    break;
  case M_ALLPASS:
    allpass_compute(&s->allpass, in, out, n);
    break;
  case M_DELAY:
    frac_delay_compute(s->delay, in, out, n);
    break;
  default:
    break;
  }
  if (s->ftz) {
    denormal_guard_end(guard);
  }
  // s->in still holds the input: in place, the module worked on a copy.
  for (uint32_t c = 0; c < s->n_channels; ++c) {
    const float *x = s->in[c], *y = s->out[c];
    VnFuzzTrack *t = &s->track[c];
    switch (s->module) {
    case M_GAIN:
      vn_fuzz_check_memoryless("bipolar_gain", GAIN_BOUND, x, y, n);
      break;
    case M_POLARITY:
      vn_fuzz_check_memoryless("polarity", 1.0f, x, y, n);
      break;
    case M_ROTATOR:
      // The FIR and the convolver's blocks: 2 L + B < 4 L frames.
      vn_fuzz_check_memory("rotator", ROTATOR_BOUND,
                           4u * rotator_latency(s->rotator[c]), t, x, y, n);
      break;
    case M_ALLPASS:
      // A recursive filter forgets a huge sample only by decaying.
      vn_fuzz_check_memory("allpass", ALLPASS_BOUND, VN_FUZZ_NEVER, t, x, y, n);
      break;
    case M_DELAY:
      vn_fuzz_check_memory("frac_delay", DELAY_BOUND,
                           s->delay->ring_mask + 1u + FRAC_DELAY_GUARD_FRAMES,
                           t, x, y, n);
      break;
    default:
      break;
    }
  }
  if (s->module == M_SMOOTHER) {
    check_smoother(s, n);
  }
}

// Setup must refuse what it cannot do, with nothing left allocated.
static void refused_setups(uint8_t which) {
  static const double bad[] = {NAN, 0.0, -48000.0, 7999.0, 1e9, INFINITY};
  const double rate = bad[which % (sizeof bad / sizeof bad[0])];
  rotator_t r = {0};
  frac_delay_t d = {0};
  if (rotator_setup(&r, rate) == 0 || frac_delay_setup(&d, rate, 1) == 0 ||
      frac_delay_setup(&d, 48000.0, 3) == 0) {
    fprintf(stderr, "fuzz_dsp: setup accepted rate %g\n", rate);
    abort();
  }
  rotator_free(&r);
  frac_delay_free(&d);
}

static bool session_open(Session *s, Reader *r) {
  memset(s, 0, offsetof(Session, in));
  s->module = next_byte(r) % M_LAST;
  const uint8_t rate_byte = next_byte(r);
  if (rate_byte >= 250) {
    refused_setups(rate_byte);
  }
  s->rate_index = rate_byte % N_RATES;
  s->rate_hz = rates[s->rate_index];
  s->n_channels = 1u + next_byte(r) % N_CH;
  s->lcg = 12345u;
  bipolar_gain_setup(&s->gain, s->rate_hz);
  for (uint32_t c = 0; c < N_CH; ++c) {
    polarity_setup(&s->polarity[c], s->rate_hz);
  }
  allpass_setup(&s->allpass, s->rate_hz, s->n_channels);
  smoother_setup(&s->smoother, next_value(r, 0.0f, 0.1f), s->rate_hz);
  if (s->module == M_ROTATOR) {
    for (uint32_t c = 0; c < s->n_channels; ++c) {
      rotator_t **cached = &rotators[s->rate_index][c];
      if (!*cached) {
        *cached = calloc(1, sizeof **cached);
        if (!*cached || rotator_setup(*cached, s->rate_hz) != 0) {
          abort();
        }
      }
      s->rotator[c] = *cached;
    }
  }
  if (s->module == M_DELAY) {
    frac_delay_t **cached = &delays[s->rate_index][s->n_channels];
    if (!*cached) {
      *cached = calloc(1, sizeof **cached);
      if (!*cached ||
          frac_delay_setup(*cached, s->rate_hz, s->n_channels) != 0) {
        abort();
      }
    }
    s->delay = *cached;
  }
  reset(s);
  return true;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size) {
  static Session s;
  Reader r = {data, data + size};
  if (size < 3 || !session_open(&s, &r)) {
    return 0;
  }
  uint32_t frames = 0;
  while (!at_end(&r) && frames < MAX_FRAMES_PER_INPUT) {
    const uint8_t op = next_byte(&r);
    switch (op % 8) {
    case 0:
    case 1:
    case 2: {
      const uint32_t n = (next_byte(&r) << 8 | next_byte(&r)) % (MAX_BLOCK + 1);
      fill_block(&s, &r, n);
      process(&s, n);
      frames += n + 1; // + 1: blocks of 0 frames count too
    } break;
    case 3:
    case 4:
      set_params(&s, &r);
      break;
    case 5:
      reset(&s);
      break;
    case 6:
      s.in_place = !s.in_place;
      break;
    default:
      s.ftz = !s.ftz;
      break;
    }
  }
  return 0;
}
