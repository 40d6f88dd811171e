// SPDX-License-Identifier: GPL-3.0-or-later
// A plugin's LV2_Descriptor by URI, straight from the bundle's
// lv2_descriptor() with no host library. In a header because the test files
// of more than one plugin drive it through LV2.
#ifndef VERNIER_TESTS_UNIT_DESCRIPTOR_H
#define VERNIER_TESTS_UNIT_DESCRIPTOR_H

#include <stdint.h>
#include <string.h>

#include <lv2/core/lv2.h>

// NULL when the bundle has no plugin with that URI.
static inline const LV2_Descriptor *find_descriptor(const char *uri) {
  for (uint32_t i = 0; lv2_descriptor(i); ++i) {
    if (!strcmp(lv2_descriptor(i)->URI, uri)) {
      return lv2_descriptor(i);
    }
  }
  return NULL;
}

#endif
