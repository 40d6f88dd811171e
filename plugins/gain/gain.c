// SPDX-License-Identifier: GPL-3.0-or-later
// Vernier Bipolar Gain: the LV2 wrapper around plugins/dsp/bipolar_gain.
#include <stdlib.h>

#include <lv2/core/lv2.h>

#include "../dsp/bipolar_gain.h"
#include "../dsp/denormal.h"
#include "../plugins.h"

// Mirrors lv2:index in ttl/gain.ttl; audio ports follow the controls,
// inputs first (see PORT_AUDIO_IN / PORT_AUDIO_OUT).
typedef enum { GAIN_GAIN = 0, GAIN_TRIM = 1, GAIN_CONTROL_LAST } GainControl;

#define GAIN_MAX_CHANNELS 2

typedef struct {
  const float *control[GAIN_CONTROL_LAST];
  const float *in[GAIN_MAX_CHANNELS];
  float *out[GAIN_MAX_CHANNELS];
  uint32_t n_channels;
  bipolar_gain_t dsp;
} Gain;

static float port_or(const float *port, float fallback) {
  return port ? *port : fallback;
}

// Instantiation thread.
static LV2_Handle instantiate(uint32_t n_channels, double rate_hz) {
  Gain *self = calloc(1, sizeof(Gain));
  if (!self) {
    return NULL;
  }
  self->n_channels = n_channels;
  bipolar_gain_setup(&self->dsp, rate_hz);
  return self;
}

// Audio thread (may also be called between runs from another thread).
static void connect_port(LV2_Handle h, uint32_t port, void *data) {
  Gain *self = h;
  const uint32_t n = self->n_channels;
  if (port < GAIN_CONTROL_LAST) {
    self->control[port] = data;
  } else if (port < PORT_AUDIO_IN(GAIN_CONTROL_LAST, n, n)) {
    self->in[port - GAIN_CONTROL_LAST] = data;
  } else if (port < PORT_AUDIO_OUT(GAIN_CONTROL_LAST, n, n)) {
    self->out[port - GAIN_CONTROL_LAST - n] = data;
  }
}

// Instantiation thread.
static void activate(LV2_Handle h) {
  Gain *self = h;
  bipolar_gain_reset(&self->dsp); // the next run() jumps to the port values
}

// Audio thread.
static void run(LV2_Handle h, uint32_t n_frames) {
  Gain *self = h;
  const denormal_guard_t guard = denormal_guard_begin();
  bipolar_gain_set(&self->dsp,
                   port_or(self->control[GAIN_GAIN], BIPOLAR_GAIN_DEFAULT),
                   port_or(self->control[GAIN_TRIM], BIPOLAR_TRIM_DEFAULT_DB));
  bool connected = true;
  for (uint32_t ch = 0; ch < self->n_channels; ++ch) {
    connected = connected && self->in[ch] && self->out[ch];
  }
  if (connected && n_frames > 0) {
    bipolar_gain_compute(&self->dsp, self->in, self->out, self->n_channels,
                         n_frames);
  }
  denormal_guard_end(guard);
}

// Instantiation thread.
static void cleanup(LV2_Handle h) {
  free(h);
}

VERNIER_VARIANTS(gain);
