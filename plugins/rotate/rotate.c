// SPDX-License-Identifier: GPL-3.0-or-later
// Vernier Phase Rotator: the LV2 wrapper around plugins/dsp/rotator.
#include <stdlib.h>

#include <lv2/core/lv2.h>

#include "../dsp/denormal.h"
#include "../dsp/rotator.h"
#include "../plugins.h"

// Mirrors lv2:index in ttl/rotate.ttl: the angle, the latency output, then
// the audio ports, inputs first (see PORT_AUDIO_IN / PORT_AUDIO_OUT).
typedef enum {
  ROTATE_ANGLE = 0,
  ROTATE_LATENCY = 1,
  ROTATE_CONTROL_LAST
} RotateControl;

#define ROTATE_MAX_CHANNELS 2

typedef struct {
  const float *angle_deg;
  float *latency_frames;
  const float *in[ROTATE_MAX_CHANNELS];
  float *out[ROTATE_MAX_CHANNELS];
  uint32_t n_channels;
  rotator_t dsp[ROTATE_MAX_CHANNELS];
} Rotate;

// Instantiation thread.
static void cleanup(LV2_Handle h) {
  Rotate *self = h;
  for (uint32_t ch = 0; ch < ROTATE_MAX_CHANNELS; ++ch) {
    rotator_free(&self->dsp[ch]); // safe on the calloc'd, never set up ones
  }
  free(self);
}

// Instantiation thread. Fails (NULL) for a rate out of range or when the
// FIR's memory cannot be had.
static LV2_Handle instantiate(uint32_t n_channels, double rate_hz) {
  Rotate *self = calloc(1, sizeof(Rotate));
  if (!self) {
    return NULL;
  }
  self->n_channels = n_channels;
  for (uint32_t ch = 0; ch < n_channels; ++ch) {
    if (rotator_setup(&self->dsp[ch], rate_hz) != 0) {
      cleanup(self);
      return NULL;
    }
  }
  return self;
}

// Audio thread (may also be called between runs from another thread).
static void connect_port(LV2_Handle h, uint32_t port, void *data) {
  Rotate *self = h;
  const uint32_t n = self->n_channels;
  if (port == ROTATE_ANGLE) {
    self->angle_deg = data;
  } else if (port == ROTATE_LATENCY) {
    self->latency_frames = data;
  } else if (port < PORT_AUDIO_IN(ROTATE_CONTROL_LAST, n, n)) {
    self->in[port - ROTATE_CONTROL_LAST] = data;
  } else if (port < PORT_AUDIO_OUT(ROTATE_CONTROL_LAST, n, n)) {
    self->out[port - ROTATE_CONTROL_LAST - n] = data;
  }
}

// Instantiation thread.
static void activate(LV2_Handle h) {
  Rotate *self = h;
  for (uint32_t ch = 0; ch < self->n_channels; ++ch) {
    rotator_reset(&self->dsp[ch]); // silence in; the next run() jumps
  }
}

// Audio thread.
static void run(LV2_Handle h, uint32_t n_frames) {
  Rotate *self = h;
  // First, so that run(0) and unconnected audio still report it.
  if (self->latency_frames) {
    *self->latency_frames = (float)rotator_latency(&self->dsp[0]);
  }
  const denormal_guard_t guard = denormal_guard_begin();
  const float angle_deg =
      self->angle_deg ? *self->angle_deg : ROTATOR_ANGLE_DEFAULT_DEG;
  bool connected = true;
  for (uint32_t ch = 0; ch < self->n_channels; ++ch) {
    rotator_set(&self->dsp[ch], angle_deg);
    connected = connected && self->in[ch] && self->out[ch];
  }
  if (connected && n_frames > 0) {
    for (uint32_t ch = 0; ch < self->n_channels; ++ch) {
      rotator_compute(&self->dsp[ch], self->in[ch], self->out[ch], n_frames);
    }
  }
  denormal_guard_end(guard);
}

VERNIER_VARIANTS(rotate);
