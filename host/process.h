// SPDX-License-Identifier: GPL-3.0-or-later
// `vernier process`: its options (process_options.c), the run itself
// (process.c) and what it reports at the end (process_report.c).
#ifndef VERNIER_HOST_PROCESS_H
#define VERNIER_HOST_PROCESS_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "audio_file.h"
#include "chain.h"
#include "steps.h"
#include "world.h"

#define VN_BLOCK_DEFAULT_FRAMES 512u
#define VN_BLOCK_MAX_FRAMES 65536u
// A day: beyond any ring-out, and round(tail * rate) stays far from overflow.
#define VN_TAIL_MAX_S 86400.0

typedef struct {
  const char *in_path;
  const char *out_path;
  uint32_t block_frames;
  double tail_s;
  const char *format; // --format, or NULL
  double air_temp_c;  // --air-temp: what a distance means
  bool overwrite;
  bool json;
  bool quiet;
  char **step_words;
  size_t n_step_words;
} VnProcessOptions;

// Everything one run makes, freed by vn_process_cleanup whatever happened.
typedef struct {
  VnProcessOptions opt;
  VnWorld world;
  VnSteps steps;
  VnInput input;
  VnOutput output;
  VnChain chain;
  float *samples; // interleaved, input.max_frames * channels
  int format;
  uint64_t tail_frames;
  uint64_t frames_written;
  // The sum of the steps' host shifts (negative: earlier), frames.
  int64_t shift_frames;
} VnProcess;

// Returns an exit code; -1 when --help or --version was printed (exit 0).
int vn_process_parse(VnProcessOptions *opt, int argc, char **argv);
void vn_process_options_free(VnProcessOptions *opt);

void vn_process_report(const VnProcess *p);

#endif
