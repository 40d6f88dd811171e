// SPDX-License-Identifier: GPL-3.0-or-later
// `vernier describe`: what it gathers about one plugin (describe.c), and
// the two ways it prints it, as text (describe.c) and as JSON
// (describe_json.c).
#ifndef VERNIER_HOST_DESCRIBE_H
#define VERNIER_HOST_DESCRIBE_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "ports.h"
#include "world.h"

typedef struct {
  VnWorld world;
  VnPluginInfo info;
  VnPreset *presets;
  size_t n_presets;
  double rate_hz;
  double air_temp_c; // for the distances of time controls
  bool latency_known;
  uint32_t latency_frames;
  char class_name[128];
  char short_name[256];
  const char *license;
  LilvNode *license_node;
} VnDescription;

// "audio", "control", "atom", "cv" or "other".
const char *vn_port_type_name(VnPortType type);

// The names of the properties in props ("toggled", "integer", ...), in a
// fixed order; returns how many were written (at most max).
size_t vn_port_property_names(unsigned props, const char **names, size_t max);

void vn_describe_print_json(const VnDescription *d);

#endif
