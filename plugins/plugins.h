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

// Audio port index of channel ch in a variant with n_channels channels and
// n_controls control ports first: inputs, then outputs.
#define PORT_AUDIO_IN(n_controls, n_channels, ch) ((n_controls) + (ch))
#define PORT_AUDIO_OUT(n_controls, n_channels, ch)                             \
  ((n_controls) + (n_channels) + (ch))

#endif
