// SPDX-License-Identifier: GPL-3.0-or-later
// Vernier All-pass: the LV2 wrapper around plugins/dsp/allpass.
#include <stdlib.h>

#include <lv2/core/lv2.h>

#include "../dsp/allpass.h"
#include "../dsp/denormal.h"
#include "../plugins.h"

// Mirrors lv2:index in ttl/allpass.ttl; audio ports follow the controls,
// inputs first (see PORT_AUDIO_IN / PORT_AUDIO_OUT).
typedef enum {
  ALLPASS_PORT_FREQUENCY = 0,
  ALLPASS_PORT_Q = 1,
  ALLPASS_PORT_STAGES = 2,
  ALLPASS_PORT_ORDER = 3,
  ALLPASS_CONTROL_LAST
} AllpassControl;

typedef struct {
  const float *control[ALLPASS_CONTROL_LAST];
  const float *in[ALLPASS_MAX_CHANNELS];
  float *out[ALLPASS_MAX_CHANNELS];
  uint32_t n_channels;
  allpass_t dsp;
} Allpass;

static float port_or(const float *port, float fallback) {
  return port ? *port : fallback;
}

// Instantiation thread.
static LV2_Handle instantiate(uint32_t n_channels, double rate_hz) {
  Allpass *self = calloc(1, sizeof(Allpass));
  if (!self) {
    return NULL;
  }
  self->n_channels = n_channels;
  allpass_setup(&self->dsp, rate_hz, n_channels);
  return self;
}

// Audio thread (may also be called between runs from another thread).
static void connect_port(LV2_Handle h, uint32_t port, void *data) {
  Allpass *self = h;
  const uint32_t n = self->n_channels;
  if (port < ALLPASS_CONTROL_LAST) {
    self->control[port] = data;
  } else if (port < PORT_AUDIO_IN(ALLPASS_CONTROL_LAST, n, n)) {
    self->in[port - ALLPASS_CONTROL_LAST] = data;
  } else if (port < PORT_AUDIO_OUT(ALLPASS_CONTROL_LAST, n, n)) {
    self->out[port - ALLPASS_CONTROL_LAST - n] = data;
  }
}

// Instantiation thread.
static void activate(LV2_Handle h) {
  Allpass *self = h;
  allpass_reset(&self->dsp); // silent state; the next run() jumps to the ports
}

// Audio thread.
static void run(LV2_Handle h, uint32_t n_frames) {
  Allpass *self = h;
  const denormal_guard_t guard = denormal_guard_begin();
  // stages and order are rounded and clamped by allpass_set(); changing them
  // while playing crossfades (plugins/dsp/allpass.c says why).
  allpass_set(
      &self->dsp,
      port_or(self->control[ALLPASS_PORT_FREQUENCY],
              ALLPASS_FREQUENCY_DEFAULT_HZ),
      port_or(self->control[ALLPASS_PORT_Q], ALLPASS_Q_DEFAULT),
      port_or(self->control[ALLPASS_PORT_STAGES],
              (float)ALLPASS_STAGES_DEFAULT),
      port_or(self->control[ALLPASS_PORT_ORDER], (float)ALLPASS_ORDER_DEFAULT));
  bool connected = true;
  for (uint32_t ch = 0; ch < self->n_channels; ++ch) {
    connected = connected && self->in[ch] && self->out[ch];
  }
  if (connected && n_frames > 0) {
    allpass_compute(&self->dsp, self->in, self->out, n_frames);
  }
  denormal_guard_end(guard);
}

// Instantiation thread.
static void cleanup(LV2_Handle h) {
  free(h);
}

VERNIER_VARIANTS(allpass);
