// SPDX-License-Identifier: GPL-3.0-or-later
// One running plugin instance: its control values, the buffers the host
// owns for its atom and CV ports, activation, run(0), and its latency.
#ifndef VERNIER_HOST_INSTANCE_H
#define VERNIER_HOST_INSTANCE_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include <lilv/lilv.h>

#include "ports.h"
#include "world.h"

typedef struct {
  LilvInstance *lilv;
  const VnPluginInfo *info;
  float *values;          // one per port: control inputs and scratch outputs
  void **buffers;         // one per port: atom and CV buffers we own
  uint32_t *buffer_bytes; // their sizes, to reset atom buffers every run
  LV2_URID atom_sequence, atom_chunk;
  bool active;
} VnInstance;

// Instantiates at rate_hz with controls (one value per port), connects
// every control, atom and CV port, and restores the non-port state of each
// preset. Audio ports are the caller's. Returns an exit code; close in
// every case.
int vn_instance_open(VnInstance *inst, VnWorld *w, const VnPluginInfo *info,
                     const float *controls, double rate_hz,
                     uint32_t block_frames, const LV2_Feature *const *features,
                     LilvState *const *presets, size_t n_presets);
void vn_instance_connect(VnInstance *inst, uint32_t port, void *data);
// activate(), then run(0) with all ports connected, so the plugin has seen
// its control values and reports its latency before any audio.
void vn_instance_start(VnInstance *inst);
void vn_instance_run(VnInstance *inst, uint32_t n_frames);
// The reported latency in whole frames; 0 when the plugin reports none.
// false (the error printed) for a value that is not a frame count.
bool vn_instance_latency(const VnInstance *inst, uint32_t *frames);
void vn_instance_close(VnInstance *inst);

// One instance at rate_hz with default controls, activate(), run(0), the
// latency read, and closed again; the caller has checked the features.
// Returns an exit code.
int vn_instance_measure_latency(VnWorld *w, const VnPluginInfo *info,
                                double rate_hz, uint32_t *frames);

#endif
