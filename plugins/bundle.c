// SPDX-License-Identifier: GPL-3.0-or-later
// The bundle's single entry point. Keep the order: it is the discovery order.
#include "plugins.h"

#include <stddef.h>

static const LV2_Descriptor *const descriptors[] = {
    &gain_mono_descriptor,     &gain_stereo_descriptor,
    &polarity_mono_descriptor, &polarity_stereo_descriptor,
    &rotate_mono_descriptor,   &rotate_stereo_descriptor,
    &allpass_mono_descriptor,  &allpass_stereo_descriptor,
    &delay_mono_descriptor,    &delay_stereo_descriptor,
    &strip_mono_descriptor,    &strip_stereo_descriptor,
};

// Discovery thread.
LV2_SYMBOL_EXPORT const LV2_Descriptor *lv2_descriptor(uint32_t index) {
  return index < sizeof descriptors / sizeof descriptors[0] ? descriptors[index]
                                                            : NULL;
}
