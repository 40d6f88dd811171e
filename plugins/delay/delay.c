// SPDX-License-Identifier: GPL-3.0-or-later
// Vernier Fine Delay: the LV2 wrapper around plugins/dsp/frac_delay.
#include <stdlib.h>

#include <lv2/core/lv2.h>

#include "../dsp/denormal.h"
#include "../dsp/frac_delay.h"
#include "../plugins.h"

// Mirrors lv2:index in ttl/delay.ttl: the delay, the latency output, then
// the audio ports, inputs first (see PORT_AUDIO_IN / PORT_AUDIO_OUT).
typedef enum {
  DELAY_DELAY = 0,
  DELAY_LATENCY = 1,
  DELAY_CONTROL_LAST
} DelayControl;

typedef struct {
  const float *delay_ms;
  float *latency_frames;
  const float *in[FRAC_DELAY_MAX_CHANNELS];
  float *out[FRAC_DELAY_MAX_CHANNELS];
  uint32_t n_channels;
  frac_delay_t dsp; // both channels: one glide, one table
} Delay;

// Instantiation thread.
static void cleanup(LV2_Handle h) {
  Delay *self = h;
  frac_delay_free(&self->dsp); // safe after a failed setup
  free(self);
}

// Instantiation thread. Fails (NULL) for a rate out of range or when the
// table's or the buffers' memory cannot be had.
static LV2_Handle instantiate(uint32_t n_channels, double rate_hz) {
  Delay *self = calloc(1, sizeof(Delay));
  if (!self) {
    return NULL;
  }
  self->n_channels = n_channels;
  if (frac_delay_setup(&self->dsp, rate_hz, n_channels) != 0) {
    cleanup(self);
    return NULL;
  }
  return self;
}

// Audio thread (may also be called between runs from another thread).
static void connect_port(LV2_Handle h, uint32_t port, void *data) {
  Delay *self = h;
  const uint32_t n = self->n_channels;
  if (port == DELAY_DELAY) {
    self->delay_ms = data;
  } else if (port == DELAY_LATENCY) {
    self->latency_frames = data;
  } else if (port < PORT_AUDIO_IN(DELAY_CONTROL_LAST, n, n)) {
    self->in[port - DELAY_CONTROL_LAST] = data;
  } else if (port < PORT_AUDIO_OUT(DELAY_CONTROL_LAST, n, n)) {
    self->out[port - DELAY_CONTROL_LAST - n] = data;
  }
}

// Instantiation thread.
static void activate(LV2_Handle h) {
  Delay *self = h;
  frac_delay_reset(&self->dsp); // silence in; the next run() jumps
}

// Audio thread.
static void run(LV2_Handle h, uint32_t n_frames) {
  Delay *self = h;
  // First, so that run(0) and unconnected audio still report it. The
  // latency is the look-ahead, never the delay: it does not move.
  if (self->latency_frames) {
    *self->latency_frames = (float)frac_delay_latency(&self->dsp);
  }
  const denormal_guard_t guard = denormal_guard_begin();
  frac_delay_set(&self->dsp,
                 self->delay_ms ? *self->delay_ms : FRAC_DELAY_DEFAULT_MS);
  bool connected = true;
  for (uint32_t ch = 0; ch < self->n_channels; ++ch) {
    connected = connected && self->in[ch] && self->out[ch];
  }
  if (connected && n_frames > 0) {
    frac_delay_compute(&self->dsp, self->in, self->out, n_frames);
  }
  denormal_guard_end(guard);
}

VERNIER_VARIANTS(delay);
