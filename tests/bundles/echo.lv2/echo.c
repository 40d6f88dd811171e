// SPDX-License-Identifier: GPL-3.0-or-later
// Test-only plugin urn:vernier-test:echo: out[n] = in[n] + 0.5 in[n - D],
// D = the integer control `frames`. No latency: what it adds after the input
// ends is ring-out, which only a --tail keeps.
#include <math.h>
#include <stdint.h>
#include <stdlib.h>

#include <lv2/core/lv2.h>

#define ECHO_URI "urn:vernier-test:echo"
#define ECHO_MAX_FRAMES 4096u // a power of two: the ring index is masked
#define ECHO_DEFAULT_FRAMES 1000u

// Mirrors lv2:index in echo.ttl.
typedef enum {
  PORT_FRAMES = 0,
  PORT_IN = 1,
  PORT_OUT = 2,
  PORT_LAST
} PortIndex;

typedef struct {
  const float *frames;
  const float *in;
  float *out;
  float ring[ECHO_MAX_FRAMES]; // past inputs, newest at pos - 1
  uint32_t pos;
} Echo;

// Instantiation thread.
static LV2_Handle instantiate(const LV2_Descriptor *d, double rate_hz,
                              const char *path,
                              const LV2_Feature *const *features) {
  (void)d, (void)rate_hz, (void)path, (void)features;
  return calloc(1, sizeof(Echo));
}

// Audio thread.
static void connect_port(LV2_Handle h, uint32_t port, void *data) {
  Echo *self = h;
  switch ((PortIndex)port) {
  case PORT_FRAMES:
    self->frames = data;
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
  Echo *self = h;
  for (uint32_t i = 0; i < ECHO_MAX_FRAMES; ++i) {
    self->ring[i] = 0.0f;
  }
  self->pos = 0;
}

static uint32_t delay_frames(const float *port) {
  if (!port || !(*port >= 1.0f)) { // also NaN
    return port ? 1u : ECHO_DEFAULT_FRAMES;
  }
  const float d = roundf(*port);
  return d >= (float)ECHO_MAX_FRAMES ? ECHO_MAX_FRAMES : (uint32_t)d;
}

// Audio thread. In-place safe: the input sample is read before the output
// sample is written. A delay of ECHO_MAX_FRAMES reads the slot about to be
// overwritten, which still holds the sample from ECHO_MAX_FRAMES ago.
static void run(LV2_Handle h, uint32_t n_frames) {
  Echo *self = h;
  if (!self->in || !self->out) {
    return;
  }
  const uint32_t d = delay_frames(self->frames);
  const uint32_t mask = ECHO_MAX_FRAMES - 1;
  for (uint32_t i = 0; i < n_frames; ++i) {
    const float x = self->in[i];
    const float past = self->ring[(self->pos - d) & mask];
    self->ring[self->pos] = x;
    self->out[i] = x + 0.5f * past;
    self->pos = (self->pos + 1) & mask;
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

static const LV2_Descriptor descriptor = {ECHO_URI, instantiate,   connect_port,
                                          activate, run,           NULL,
                                          cleanup,  extension_data};

// Discovery thread.
LV2_SYMBOL_EXPORT const LV2_Descriptor *lv2_descriptor(uint32_t index) {
  return index == 0 ? &descriptor : NULL;
}
