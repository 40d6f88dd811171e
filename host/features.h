// SPDX-License-Identifier: GPL-3.0-or-later
// The LV2 features the host gives: urid:map and unmap, options (block
// lengths, sample rate, atom sequence size), bufsz:boundedBlockLength and
// log:log; and the check that a plugin needs nothing else.
#ifndef VERNIER_HOST_FEATURES_H
#define VERNIER_HOST_FEATURES_H

#include <stdbool.h>
#include <stdint.h>

#include <lilv/lilv.h>
#include <lv2/core/lv2.h>
#include <lv2/log/log.h>
#include <lv2/options/options.h>

#include "world.h"

// Atom port buffers (and bufsz:sequenceSize) unless a port asks for more.
#define VN_ATOM_BUFFER_BYTES 8192u

typedef struct {
  int32_t min_block_frames, max_block_frames, nominal_block_frames;
  int32_t sequence_size_bytes;
  float rate_hz;
  LV2_Options_Option options[6];
  LV2_Feature map, unmap, options_feature, bounded;
} VnFeatures;

// One per step, so that a plugin's messages name the step they come from.
typedef struct {
  LV2_Log_Log iface;
  LV2_Feature feature;
  const char *label;
  bool quiet;
  unsigned errors; // log:Error messages, counted: a processing failure
  LV2_URID error, warning, note, trace;
} VnLog;

#define VN_FEATURES_MAX 6

// f and log must not move afterwards: the features point into them.
void vn_features_init(VnFeatures *f, VnWorld *w, uint32_t block_frames,
                      double rate_hz);
void vn_log_init(VnLog *log, VnWorld *w, const char *label, bool quiet);
// NULL-terminated, into list[VN_FEATURES_MAX].
void vn_features_list(VnFeatures *f, VnLog *log,
                      const LV2_Feature *list[VN_FEATURES_MAX]);

// VN_EXIT_OK, or VN_EXIT_PLUGIN with the error printed, naming the first
// required feature or option the host does not give.
int vn_features_check(VnWorld *w, const LilvPlugin *p);

#endif
