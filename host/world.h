// SPDX-License-Identifier: GPL-3.0-or-later
// The lilv world: where plugins are found, the RDF nodes the host asks
// about, the URID map, and plugin look-up by our short names or a URI.
#ifndef VERNIER_HOST_WORLD_H
#define VERNIER_HOST_WORLD_H

#include <stdbool.h>
#include <stddef.h>

#include <lilv/lilv.h>

#include "urid.h"

#define VN_OUR_PREFIX "urn:vernier:"

typedef enum {
  VN_NODE_AUDIO_PORT,
  VN_NODE_CONTROL_PORT,
  VN_NODE_CV_PORT,
  VN_NODE_ATOM_PORT,
  VN_NODE_INPUT_PORT,
  VN_NODE_OUTPUT_PORT,
  VN_NODE_CONNECTION_OPTIONAL,
  VN_NODE_TOGGLED,
  VN_NODE_INTEGER,
  VN_NODE_ENUMERATION,
  VN_NODE_LOGARITHMIC,
  VN_NODE_SAMPLE_RATE,
  VN_NODE_REPORTS_LATENCY,
  VN_NODE_DESIGNATION,
  VN_NODE_FREE_WHEELING,
  VN_NODE_ENABLED,
  VN_NODE_UNIT,
  VN_NODE_UNIT_SYMBOL,
  VN_NODE_MINIMUM_SIZE,
  VN_NODE_PRESET,
  VN_NODE_RDFS_LABEL,
  VN_NODE_RDF_TYPE,
  VN_NODE_LV2_PLUGIN,
  VN_NODE_LICENSE,
  VN_NODE_REQUIRED_OPTION,
  VN_NODE_LAST
} VnNodeId;

typedef struct {
  LilvWorld *lilv;
  LilvNode *node[VN_NODE_LAST];
  VnUrids urids;
  // Atom types, for preset values and atom port buffers.
  LV2_URID atom_float, atom_double, atom_int, atom_long, atom_bool;
  LV2_URID atom_sequence, atom_chunk;
} VnWorld;

// Loads every bundle on LV2_PATH (or lilv's default path); when none of ours
// is there, also the vernier.lv2 bundle beside the executable. Returns an
// exit code (the error printed). w must not move afterwards.
int vn_world_open(VnWorld *w);
void vn_world_close(VnWorld *w);

// word is one of our short names (gain, gain-stereo) or any URI (a word
// with ':'). NULL when there is no such plugin.
const LilvPlugin *vn_world_find_plugin(VnWorld *w, const char *word);
// Prints "no plugin 'word'; ours: ..." and returns the exit code.
int vn_world_unknown_plugin(VnWorld *w, const char *word);

bool vn_is_ours(const char *uri);
// The short name of one of ours: "gain" for urn:vernier:gain-mono,
// "gain-stereo" for urn:vernier:gain-stereo. false for other plugins.
bool vn_short_name(const char *uri, char *buf, size_t size);

#endif
