// SPDX-License-Identifier: GPL-3.0-or-later
// What the host needs to know about a plugin's ports, read from lilv once:
// kind, direction, range, unit, properties, scale points; and its presets.
#ifndef VERNIER_HOST_PORTS_H
#define VERNIER_HOST_PORTS_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "world.h"

typedef enum {
  VN_PORT_AUDIO,
  VN_PORT_CONTROL,
  VN_PORT_ATOM,
  VN_PORT_CV,
  VN_PORT_OTHER
} VnPortType;

enum {
  VN_PROP_TOGGLED = 1u << 0,
  VN_PROP_INTEGER = 1u << 1,
  VN_PROP_ENUMERATION = 1u << 2,
  VN_PROP_LOGARITHMIC = 1u << 3,
  VN_PROP_SAMPLE_RATE = 1u << 4, // default, minimum, maximum are * rate
  VN_PROP_OPTIONAL = 1u << 5,
  VN_PROP_LATENCY = 1u << 6, // the plugin's latency output
  VN_PROP_FREE_WHEELING = 1u << 7,
  VN_PROP_ENABLED = 1u << 8,
};

typedef struct {
  char *label;
  float value;
} VnScalePoint;

typedef struct {
  uint32_t index;
  const char *symbol; // owned by lilv
  char *name;
  VnPortType type;
  bool is_input;
  unsigned props;
  float default_value, minimum, maximum; // NAN where the plugin states none
  char *unit;                            // display symbol, or NULL
  uint32_t minimum_size_bytes;           // rsz:minimumSize, or 0
  VnScalePoint *points;
  size_t n_points;
} VnPortInfo;

typedef struct {
  const LilvPlugin *plugin;
  const char *uri; // owned by lilv
  uint32_t n_ports;
  VnPortInfo *ports;
  uint32_t n_audio_in, n_audio_out;
  int32_t latency_port; // -1 when none
} VnPluginInfo;

typedef struct {
  char *uri;
  char *label; // the URI when the preset has no rdfs:label
} VnPreset;

// false when out of memory (the error printed); free in every case.
bool vn_plugin_info_load(VnPluginInfo *info, VnWorld *w, const LilvPlugin *p);
void vn_plugin_info_free(VnPluginInfo *info);

// NULL when the plugin has no port with that symbol.
const VnPortInfo *vn_port_by_symbol(const VnPluginInfo *info,
                                    const char *symbol);
bool vn_port_is_control_input(const VnPortInfo *port);
// Where a control input starts: lv2:default, else lv2:minimum, else 0;
// 1 for the free-wheeling and enabled designations (offline, and on).
float vn_port_start_value(const VnPortInfo *port, double rate_hz);
// Bounds at rate_hz (lv2:sampleRate ports scale); NAN where none.
void vn_port_bounds(const VnPortInfo *port, double rate_hz, float *lo,
                    float *hi);

// The plugin's presets, in the order lilv gives them, labels loaded.
bool vn_presets_load(VnWorld *w, const LilvPlugin *p, VnPreset **presets,
                     size_t *n_presets);
void vn_presets_free(VnPreset *presets, size_t n_presets);
// name is an rdfs:label or a URI. -1 when no preset has it.
long vn_preset_find(const VnPreset *presets, size_t n_presets,
                    const char *name);

#endif
