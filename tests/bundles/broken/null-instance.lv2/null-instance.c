// SPDX-License-Identifier: GPL-3.0-or-later
// Test-only plugin urn:vernier-test:null-instance: requires no feature, yet
// instantiate() returns NULL, as a plugin does when an allocation fails. The
// host has nothing to refuse beforehand, so it must handle the NULL itself.
#include <stddef.h>

#include <lv2/core/lv2.h>

// Instantiation thread.
static LV2_Handle instantiate(const LV2_Descriptor *d, double rate_hz,
                              const char *path,
                              const LV2_Feature *const *features) {
  (void)d, (void)rate_hz, (void)path, (void)features;
  return NULL;
}

// The rest is never called: there is never an instance.
static void connect_port(LV2_Handle h, uint32_t port, void *data) {
  (void)h, (void)port, (void)data;
}
static void run(LV2_Handle h, uint32_t n_frames) {
  (void)h, (void)n_frames;
}
static void cleanup(LV2_Handle h) {
  (void)h;
}

static const LV2_Descriptor descriptor = {"urn:vernier-test:null-instance",
                                          instantiate,
                                          connect_port,
                                          NULL,
                                          run,
                                          NULL,
                                          cleanup,
                                          NULL};

// Discovery thread.
LV2_SYMBOL_EXPORT const LV2_Descriptor *lv2_descriptor(uint32_t index) {
  return index == 0 ? &descriptor : NULL;
}
