// SPDX-License-Identifier: GPL-3.0-or-later
// Test-only plugin urn:vernier-test:needs-feature: a pass-through that, like
// any plugin with a required feature, refuses to instantiate without it.
#include <stdlib.h>
#include <string.h>

#include <lv2/core/lv2.h>

#define NEEDS_FEATURE_URI "urn:vernier-test:needs-feature"
#define NO_SUCH_FEATURE_URI "urn:vernier-test:no-such-feature"

// Mirrors lv2:index in needs-feature.ttl.
typedef enum { PORT_IN = 0, PORT_OUT = 1, PORT_LAST } PortIndex;

typedef struct {
  const float *in;
  float *out;
} PassThrough;

// Instantiation thread.
static LV2_Handle instantiate(const LV2_Descriptor *d, double rate_hz,
                              const char *path,
                              const LV2_Feature *const *features) {
  (void)d, (void)rate_hz, (void)path;
  for (size_t i = 0; features && features[i]; ++i) {
    if (!strcmp(features[i]->URI, NO_SUCH_FEATURE_URI)) {
      return calloc(1, sizeof(PassThrough));
    }
  }
  return NULL;
}

// Audio thread.
static void connect_port(LV2_Handle h, uint32_t port, void *data) {
  PassThrough *self = h;
  if (port == PORT_IN) {
    self->in = data;
  } else if (port == PORT_OUT) {
    self->out = data;
  }
}

// Audio thread. memmove: in-place safe.
static void run(LV2_Handle h, uint32_t n_frames) {
  PassThrough *self = h;
  if (self->in && self->out) {
    memmove(self->out, self->in, n_frames * sizeof(float));
  }
}

// Instantiation thread.
static void cleanup(LV2_Handle h) {
  free(h);
}

static const LV2_Descriptor descriptor = {
    NEEDS_FEATURE_URI, instantiate, connect_port, NULL, run, NULL,
    cleanup,           NULL};

// Discovery thread.
LV2_SYMBOL_EXPORT const LV2_Descriptor *lv2_descriptor(uint32_t index) {
  return index == 0 ? &descriptor : NULL;
}
