// SPDX-License-Identifier: GPL-3.0-or-later
// The plugin chain of `vernier process`: one or more instances per step
// (one per channel for a mono plugin), audio buffers between the steps, and
// the total latency to compensate.
#ifndef VERNIER_HOST_CHAIN_H
#define VERNIER_HOST_CHAIN_H

#include <stddef.h>
#include <stdint.h>

#include "features.h"
#include "instance.h"
#include "steps.h"
#include "world.h"

typedef struct {
  VnStep *step;
  VnLog log;
  const LV2_Feature *features[VN_FEATURES_MAX];
  VnInstance *instances;
  size_t n_instances;
  uint32_t latency_frames;
} VnChainStep;

typedef struct {
  VnFeatures features;
  VnChainStep *steps;
  size_t n_steps;
  uint32_t n_channels;
  uint32_t block_frames;
  // Buffer set k feeds step k and is written by step k - 1; a step never
  // reads and writes one buffer, since some plugins are inPlaceBroken.
  float *audio;            // (n_steps + 1) * n_channels * block_frames
  uint64_t latency_frames; // sum over the steps
} VnChain;

// Checks each step's channels against the file (exit 2) and its required
// features (exit 5), instantiates, activates, runs run(0) and reads the
// latencies. input_label names the file in messages. c must not move
// afterwards; free in every case.
int vn_chain_build(VnChain *c, VnWorld *w, VnSteps *steps, uint32_t n_channels,
                   double rate_hz, uint32_t block_frames, bool quiet,
                   const char *input_label);
float *vn_chain_input(VnChain *c, uint32_t channel);
const float *vn_chain_output(const VnChain *c, uint32_t channel);
void vn_chain_run(VnChain *c, uint32_t n_frames);
// log:Error messages from any plugin since the chain was built.
unsigned vn_chain_errors(const VnChain *c);
void vn_chain_free(VnChain *c);

#endif
