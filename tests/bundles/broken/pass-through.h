// SPDX-License-Identifier: GPL-3.0-or-later
// A mono pass-through for the broken test bundles whose fault is in their
// Turtle, not their code: each <case>.c defines PASS_THROUGH_URI and includes
// this, so that the host gets as far as it can before the fault stops it.
#ifndef VERNIER_TEST_PASS_THROUGH_H
#define VERNIER_TEST_PASS_THROUGH_H

#include <stdlib.h>
#include <string.h>

#include <lv2/core/lv2.h>

typedef struct {
  const float *in;
  float *out;
} PassThrough;

// Instantiation thread.
static LV2_Handle instantiate(const LV2_Descriptor *d, double rate_hz,
                              const char *path,
                              const LV2_Feature *const *features) {
  (void)d, (void)rate_hz, (void)path, (void)features;
  return calloc(1, sizeof(PassThrough));
}

// Audio thread. Any index but 0 and 1 is ignored: the Turtle of these
// bundles may name ports this code does not have.
static void connect_port(LV2_Handle h, uint32_t port, void *data) {
  PassThrough *self = h;
  if (port == 0) {
    self->in = data;
  } else if (port == 1) {
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
    PASS_THROUGH_URI, instantiate, connect_port, NULL, run, NULL,
    cleanup,          NULL};

// Discovery thread.
LV2_SYMBOL_EXPORT const LV2_Descriptor *lv2_descriptor(uint32_t index) {
  return index == 0 ? &descriptor : NULL;
}

#endif
