// SPDX-License-Identifier: GPL-3.0-or-later
// Test-only plugin urn:vernier-test:latency: delays its input by exactly
// LATENCY_FRAMES and reports that on its latency port on every run(), so the
// host's latency compensation can be checked sample for sample.
#include <stdint.h>
#include <stdlib.h>

#include <lv2/core/lv2.h>

#define LATENCY_URI "urn:vernier-test:latency"
#define LATENCY_FRAMES 100u

// Mirrors lv2:index in latency.ttl.
typedef enum {
  PORT_LATENCY = 0,
  PORT_IN = 1,
  PORT_OUT = 2,
  PORT_LAST
} PortIndex;

typedef struct {
  float *latency_frames;
  const float *in;
  float *out;
  float ring[LATENCY_FRAMES]; // the last LATENCY_FRAMES inputs
  uint32_t pos;               // oldest sample in ring, written next
} Latency;

// Instantiation thread.
static LV2_Handle instantiate(const LV2_Descriptor *d, double rate_hz,
                              const char *path,
                              const LV2_Feature *const *features) {
  (void)d, (void)rate_hz, (void)path, (void)features;
  return calloc(1, sizeof(Latency));
}

// Audio thread.
static void connect_port(LV2_Handle h, uint32_t port, void *data) {
  Latency *self = h;
  switch ((PortIndex)port) {
  case PORT_LATENCY:
    self->latency_frames = data;
    break;
  case PORT_IN:
    self->in = data;
    break;
  case PORT_OUT:
    self->out = data;
    break;
  case PORT_LAST:
    break;
  }
}

// Instantiation thread.
static void activate(LV2_Handle h) {
  Latency *self = h;
  for (uint32_t i = 0; i < LATENCY_FRAMES; ++i) {
    self->ring[i] = 0.0f;
  }
  self->pos = 0;
}

// Audio thread. In-place safe: each input sample is read before its output
// sample is written.
static void run(LV2_Handle h, uint32_t n_frames) {
  Latency *self = h;
  if (self->latency_frames) {
    *self->latency_frames = (float)LATENCY_FRAMES; // also on run(0)
  }
  if (!self->in || !self->out) {
    return;
  }
  for (uint32_t i = 0; i < n_frames; ++i) {
    const float x = self->in[i];
    self->out[i] = self->ring[self->pos];
    self->ring[self->pos] = x;
    self->pos = self->pos + 1 == LATENCY_FRAMES ? 0 : self->pos + 1;
  }
}

// Instantiation thread.
static void cleanup(LV2_Handle h) {
  free(h);
}

// Discovery thread.
static const void *extension_data(const char *uri) {
  (void)uri;
  return NULL;
}

static const LV2_Descriptor descriptor = {
    LATENCY_URI, instantiate, connect_port, activate,
    run,         NULL,        cleanup,      extension_data};

// Discovery thread.
LV2_SYMBOL_EXPORT const LV2_Descriptor *lv2_descriptor(uint32_t index) {
  return index == 0 ? &descriptor : NULL;
}
