// SPDX-License-Identifier: GPL-3.0-or-later
// Vernier Polarity: the LV2 wrapper around plugins/dsp/polarity.
#include <stdlib.h>

#include <lv2/core/lv2.h>

#include "../dsp/denormal.h"
#include "../dsp/param.h"
#include "../dsp/polarity.h"
#include "../plugins.h"

// Mirrors lv2:index in ttl/polarity.ttl: one toggle per channel (mono:
// invert; stereo: invert_left, invert_right), then the audio ports, inputs
// first (see PORT_AUDIO_IN / PORT_AUDIO_OUT).
#define POLARITY_MAX_CHANNELS 2

typedef struct {
  const float *invert[POLARITY_MAX_CHANNELS];
  const float *in[POLARITY_MAX_CHANNELS];
  float *out[POLARITY_MAX_CHANNELS];
  uint32_t n_channels;
  polarity_t dsp[POLARITY_MAX_CHANNELS];
} Polarity;

// Instantiation thread.
static LV2_Handle instantiate(uint32_t n_channels, double rate_hz) {
  Polarity *self = calloc(1, sizeof(Polarity));
  if (!self) {
    return NULL;
  }
  self->n_channels = n_channels;
  for (uint32_t ch = 0; ch < n_channels; ++ch) {
    polarity_setup(&self->dsp[ch], rate_hz);
  }
  return self;
}

// Audio thread (may also be called between runs from another thread).
static void connect_port(LV2_Handle h, uint32_t port, void *data) {
  Polarity *self = h;
  const uint32_t n = self->n_channels; // n toggles come first
  if (port < n) {
    self->invert[port] = data;
  } else if (port < PORT_AUDIO_IN(n, n, n)) {
    self->in[port - n] = data;
  } else if (port < PORT_AUDIO_OUT(n, n, n)) {
    self->out[port - 2 * n] = data;
  }
}

// Instantiation thread.
static void activate(LV2_Handle h) {
  Polarity *self = h;
  for (uint32_t ch = 0; ch < self->n_channels; ++ch) {
    polarity_reset(&self->dsp[ch]); // the next run() starts at the port value
  }
}

// Audio thread.
static void run(LV2_Handle h, uint32_t n_frames) {
  Polarity *self = h;
  const denormal_guard_t guard = denormal_guard_begin();
  for (uint32_t ch = 0; ch < self->n_channels; ++ch) {
    const float *port = self->invert[ch];
    polarity_set(&self->dsp[ch], port && param_toggle(*port));
    if (self->in[ch] && self->out[ch] && n_frames > 0) {
      polarity_compute(&self->dsp[ch], self->in[ch], self->out[ch], n_frames);
    }
  }
  denormal_guard_end(guard);
}

// Instantiation thread.
static void cleanup(LV2_Handle h) {
  free(h);
}

VERNIER_VARIANTS(polarity);
