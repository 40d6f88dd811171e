// SPDX-License-Identifier: GPL-3.0-or-later
// Vernier Align Strip: polarity, fine delay, phase rotation, all-pass and
// bipolar gain in one plugin, in that order, from the same plugins/dsp
// modules as the single plugins. The latency is the delay's look-ahead plus
// the rotator's, constant for a rate: at the defaults the output is the input
// late by exactly that, bit for bit (every section is then an exact copy and
// the all-pass is out of circuit).
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <lv2/core/lv2.h>

#include "../dsp/allpass.h"
#include "../dsp/bipolar_gain.h"
#include "../dsp/denormal.h"
#include "../dsp/frac_delay.h"
#include "../dsp/param.h"
#include "../dsp/polarity.h"
#include "../dsp/rotator.h"
#include "../plugins.h"

// Mirrors lv2:index in ttl/strip.ttl: one invert toggle per channel (mono:
// invert; stereo: invert_left, invert_right), then these, counted from the
// toggles, then the audio ports, inputs first.
typedef enum {
  STRIP_DELAY = 0,
  STRIP_ANGLE,
  STRIP_FREQUENCY,
  STRIP_Q,
  STRIP_STAGES,
  STRIP_ORDER,
  STRIP_GAIN,
  STRIP_TRIM,
  STRIP_LATENCY,
  STRIP_CONTROL_LAST
} StripControl;

#define STRIP_MAX_CHANNELS 2u
// Frames handled at a time: each span is copied in whole before any output
// is written, so any aliasing of the host's buffers is safe.
#define STRIP_SPAN_FRAMES 256u
// The stages port's 0: the all-pass out of circuit. 0 <-> n fades the
// all-pass's output in or out over ALLPASS_FADE_S, the same raised cosine
// the module uses between cascades.
#define STRIP_STAGES_MIN 0.0f

typedef struct {
  const float *invert[STRIP_MAX_CHANNELS];
  const float *control[STRIP_CONTROL_LAST];
  float *latency_frames;
  const float *in[STRIP_MAX_CHANNELS];
  float *out[STRIP_MAX_CHANNELS];
  uint32_t n_channels;
  polarity_t polarity[STRIP_MAX_CHANNELS];
  frac_delay_t delay;
  rotator_t rotator[STRIP_MAX_CHANNELS];
  allpass_t allpass;
  bipolar_gain_t gain;
  // The all-pass's wet share: wet_pos 0 = out of circuit, wet_frames = in.
  uint32_t wet_frames, wet_pos;
  bool wet;          // where wet_pos is heading
  bool wet_primed;   // false until the first run() after activate()
  float last_stages; // the last stages value above 0: what fades out
  float work[STRIP_MAX_CHANNELS][STRIP_SPAN_FRAMES];
  float dry[STRIP_MAX_CHANNELS][STRIP_SPAN_FRAMES];
} Strip;

static float port_or(const float *port, float fallback) {
  return port ? *port : fallback;
}

// Instantiation thread.
static void cleanup(LV2_Handle h) {
  Strip *self = h;
  frac_delay_free(&self->delay); // safe after a failed setup
  for (uint32_t ch = 0; ch < STRIP_MAX_CHANNELS; ++ch) {
    rotator_free(&self->rotator[ch]); // safe on the calloc'd ones
  }
  free(self);
}

// Instantiation thread. Fails (NULL) for a rate out of range or when memory
// cannot be had.
static LV2_Handle instantiate(uint32_t n_channels, double rate_hz) {
  Strip *self = calloc(1, sizeof(Strip));
  if (!self) {
    return NULL;
  }
  self->n_channels = n_channels;
  if (frac_delay_setup(&self->delay, rate_hz, n_channels) != 0) {
    cleanup(self);
    return NULL;
  }
  for (uint32_t ch = 0; ch < n_channels; ++ch) {
    polarity_setup(&self->polarity[ch], rate_hz);
    if (rotator_setup(&self->rotator[ch], rate_hz) != 0) {
      cleanup(self);
      return NULL;
    }
  }
  allpass_setup(&self->allpass, rate_hz, n_channels);
  bipolar_gain_setup(&self->gain, rate_hz);
  const double frames = rate_hz * ALLPASS_FADE_S;
  self->wet_frames = frames < 1.0 ? 1u : (uint32_t)(frames + 0.5);
  self->last_stages = (float)ALLPASS_STAGES_DEFAULT;
  return self;
}

// Audio thread (may also be called between runs from another thread).
static void connect_port(LV2_Handle h, uint32_t port, void *data) {
  Strip *self = h;
  const uint32_t n = self->n_channels; // n toggles come first
  const uint32_t n_controls = n + STRIP_CONTROL_LAST;
  if (port < n) {
    self->invert[port] = data;
  } else if (port == n + STRIP_LATENCY) {
    self->latency_frames = data;
  } else if (port < n_controls) {
    self->control[port - n] = data;
  } else if (port < PORT_AUDIO_IN(n_controls, n, n)) {
    self->in[port - n_controls] = data;
  } else if (port < PORT_AUDIO_OUT(n_controls, n, n)) {
    self->out[port - n_controls - n] = data;
  }
}

// Instantiation thread.
static void activate(LV2_Handle h) {
  Strip *self = h;
  // Silence in everywhere; the next run() starts at the port values.
  for (uint32_t ch = 0; ch < self->n_channels; ++ch) {
    polarity_reset(&self->polarity[ch]);
    rotator_reset(&self->rotator[ch]);
  }
  frac_delay_reset(&self->delay);
  allpass_reset(&self->allpass);
  bipolar_gain_reset(&self->gain);
  self->wet_pos = 0;
  self->wet = false;
  self->wet_primed = false;
}

static uint32_t strip_latency(const Strip *self) {
  return frac_delay_latency(&self->delay) + rotator_latency(&self->rotator[0]);
}

// The all-pass section of one span, in place on work: out of circuit when
// settled dry, the module alone when settled wet, else the two mixed.
static void allpass_section(Strip *self, uint32_t n) {
  const bool settled = self->wet_pos == (self->wet ? self->wet_frames : 0u);
  if (settled && !self->wet) {
    return;
  }
  float *io[STRIP_MAX_CHANNELS] = {self->work[0], self->work[1]};
  if (settled) {
    allpass_compute(&self->allpass, (const float *const *)io, io, n);
    return;
  }
  for (uint32_t ch = 0; ch < self->n_channels; ++ch) {
    memcpy(self->dry[ch], self->work[ch], n * sizeof(float));
  }
  allpass_compute(&self->allpass, (const float *const *)io, io, n);
  const double step = M_PI / (double)self->wet_frames;
  for (uint32_t i = 0; i < n; ++i) {
    if (self->wet_pos != (self->wet ? self->wet_frames : 0u)) {
      self->wet_pos = self->wet ? self->wet_pos + 1 : self->wet_pos - 1;
    }
    const float w = (float)(0.5 - 0.5 * cos(step * (double)self->wet_pos));
    for (uint32_t ch = 0; ch < self->n_channels; ++ch) {
      io[ch][i] = w * io[ch][i] + (1.0f - w) * self->dry[ch][i];
    }
  }
}

// Audio thread. Reads the ports once, before any section runs.
static void set_sections(Strip *self) {
  const float *const *c = self->control;
  for (uint32_t ch = 0; ch < self->n_channels; ++ch) {
    const float *port = self->invert[ch];
    polarity_set(&self->polarity[ch], port && param_toggle(*port));
    rotator_set(&self->rotator[ch],
                port_or(c[STRIP_ANGLE], ROTATOR_ANGLE_DEFAULT_DEG));
  }
  frac_delay_set(&self->delay, port_or(c[STRIP_DELAY], FRAC_DELAY_DEFAULT_MS));
  // Rounded as the module rounds (nearest whole stage); NaN is 0, out.
  const float stages = param_clamp(port_or(c[STRIP_STAGES], 0.0f),
                                   STRIP_STAGES_MIN, ALLPASS_MAX_STAGES, 0.0f);
  self->wet = stages >= 0.5f;
  if (self->wet) {
    self->last_stages = stages;
  }
  if (!self->wet_primed) {
    self->wet_pos = self->wet ? self->wet_frames : 0u; // no fade at first
    self->wet_primed = true;
  }
  if (self->wet_pos == 0) {
    // Out of circuit: forget the state, so that coming back in starts from
    // rest at the port values of that run, whatever the blocks were.
    allpass_reset(&self->allpass);
  }
  allpass_set(&self->allpass,
              port_or(c[STRIP_FREQUENCY], ALLPASS_FREQUENCY_DEFAULT_HZ),
              port_or(c[STRIP_Q], ALLPASS_Q_DEFAULT), self->last_stages,
              port_or(c[STRIP_ORDER], (float)ALLPASS_ORDER_DEFAULT));
  bipolar_gain_set(&self->gain, port_or(c[STRIP_GAIN], BIPOLAR_GAIN_DEFAULT),
                   port_or(c[STRIP_TRIM], BIPOLAR_TRIM_DEFAULT_DB));
}

// Audio thread.
static void run(LV2_Handle h, uint32_t n_frames) {
  Strip *self = h;
  // First, so that run(0) and unconnected audio still report it; it does
  // not move with any control.
  if (self->latency_frames) {
    *self->latency_frames = (float)strip_latency(self);
  }
  const denormal_guard_t guard = denormal_guard_begin();
  set_sections(self);
  const uint32_t nc = self->n_channels;
  bool connected = true;
  for (uint32_t ch = 0; ch < nc; ++ch) {
    connected = connected && self->in[ch] && self->out[ch];
  }
  float *io[STRIP_MAX_CHANNELS] = {self->work[0], self->work[1]};
  for (uint32_t pos = 0; connected && pos < n_frames;) {
    const uint32_t left = n_frames - pos;
    const uint32_t n = left < STRIP_SPAN_FRAMES ? left : STRIP_SPAN_FRAMES;
    for (uint32_t ch = 0; ch < nc; ++ch) {
      memcpy(self->work[ch], self->in[ch] + pos, n * sizeof(float));
      polarity_compute(&self->polarity[ch], io[ch], io[ch], n);
    }
    frac_delay_compute(&self->delay, (const float *const *)io, io, n);
    for (uint32_t ch = 0; ch < nc; ++ch) {
      rotator_compute(&self->rotator[ch], io[ch], io[ch], n);
    }
    allpass_section(self, n);
    bipolar_gain_compute(&self->gain, (const float *const *)io, io, nc, n);
    for (uint32_t ch = 0; ch < nc; ++ch) {
      memcpy(self->out[ch] + pos, self->work[ch], n * sizeof(float));
    }
    pos += n;
  }
  denormal_guard_end(guard);
}

VERNIER_VARIANTS(strip);
