// SPDX-License-Identifier: GPL-3.0-or-later
// Every plugin of the bundle, for the one lv2_descriptor() in bundle.c.
#ifndef VERNIER_PLUGINS_H
#define VERNIER_PLUGINS_H

#include <lv2/core/lv2.h>

#define VERNIER_URI_PREFIX "urn:vernier:"

extern const LV2_Descriptor gain_mono_descriptor;
extern const LV2_Descriptor gain_stereo_descriptor;
extern const LV2_Descriptor polarity_mono_descriptor;
extern const LV2_Descriptor polarity_stereo_descriptor;
extern const LV2_Descriptor rotate_mono_descriptor;
extern const LV2_Descriptor rotate_stereo_descriptor;
extern const LV2_Descriptor allpass_mono_descriptor;
extern const LV2_Descriptor allpass_stereo_descriptor;
extern const LV2_Descriptor delay_mono_descriptor;
extern const LV2_Descriptor delay_stereo_descriptor;
extern const LV2_Descriptor strip_mono_descriptor;
extern const LV2_Descriptor strip_stereo_descriptor;

// Audio port index of channel ch in a variant with n_channels channels and
// n_controls control ports first: inputs, then outputs.
#define PORT_AUDIO_IN(n_controls, n_channels, ch) ((n_controls) + (ch))
#define PORT_AUDIO_OUT(n_controls, n_channels, ch)                             \
  ((n_controls) + (n_channels) + (ch))

// Mono and stereo variants of one plugin share their callbacks; only the
// channel count differs. A plugin defines
//   static LV2_Handle instantiate(uint32_t n_channels, double rate_hz);
//   connect_port, activate, run, cleanup
// and then VERNIER_VARIANTS(gain) defines gain_mono_descriptor and
// gain_stereo_descriptor around them.
#define VERNIER_VARIANTS(name)                                                 \
  /* Instantiation thread. */                                                  \
  static LV2_Handle instantiate_mono(const LV2_Descriptor *d, double rate_hz,  \
                                     const char *path,                         \
                                     const LV2_Feature *const *features) {     \
    (void)d, (void)path, (void)features;                                       \
    return instantiate(1, rate_hz);                                            \
  }                                                                            \
  static LV2_Handle instantiate_stereo(const LV2_Descriptor *d,                \
                                       double rate_hz, const char *path,       \
                                       const LV2_Feature *const *features) {   \
    (void)d, (void)path, (void)features;                                       \
    return instantiate(2, rate_hz);                                            \
  }                                                                            \
  /* Discovery thread. */                                                      \
  static const void *extension_data(const char *uri) {                         \
    (void)uri;                                                                 \
    return NULL;                                                               \
  }                                                                            \
  const LV2_Descriptor name##_mono_descriptor = {VERNIER_URI_PREFIX #name      \
                                                 "-mono",                      \
                                                 instantiate_mono,             \
                                                 connect_port,                 \
                                                 activate,                     \
                                                 run,                          \
                                                 NULL,                         \
                                                 cleanup,                      \
                                                 extension_data};              \
  const LV2_Descriptor name##_stereo_descriptor = {VERNIER_URI_PREFIX #name    \
                                                   "-stereo",                  \
                                                   instantiate_stereo,         \
                                                   connect_port,               \
                                                   activate,                   \
                                                   run,                        \
                                                   NULL,                       \
                                                   cleanup,                    \
                                                   extension_data}

#endif
