// SPDX-License-Identifier: GPL-3.0-or-later
// The parts of `vernier measure --write` (measure_write.c) and nobody
// else's: the correction as the step words write it (measure_words.c), the
// LV2 presets (measure_presets.c), and files and folders that appear whole
// or not at all (measure_place.c).
#ifndef VERNIER_HOST_MEASURE_WRITE_H
#define VERNIER_HOST_MEASURE_WRITE_H

#include <stdbool.h>
#include <stdio.h>
#include <sys/types.h>

#include "measure.h"

// ----------------------------------------------------------------- words --

// The correction rounded once, to what the step words say: the presets
// hold the floats `vernier process` makes of these same texts.
typedef struct {
  bool stereo; // a 2-channel TARGET: the -stereo variants
  bool invert;
  char delay_smp[32]; // "-23.4000"
  char angle_deg[32]; // "12.345"
  bool allpass;       // the rest only when true
  char frequency_hz[32];
  char q[32];
  int stages, order;
} VnStepCorrection;

void vn_step_correction(const VnMeasureResult *r, VnStepCorrection *c);

// --------------------------------------------------------------- presets --

// Writes manifest.ttl and one preset file a plugin into folder, a new and
// empty one: the Align Strip with the whole correction, and the Polarity
// (when inverted), Fine Delay, Phase Rotator and All-pass (when shaped)
// with their parts of it, all labelled "<stem> aligned". Each file is
// synced. A delay beyond the plugins' range is split as `vernier process`
// splits it, and a warning says how far to move the region in the DAW.
// false on a failed write (the error printed).
bool vn_measure_presets_write(const char *folder, const char *stem,
                              const VnMeasureResult *r);

// ----------------------------------------------------------------- place --

// "DIR/NAME" (one slash), or NULL when out of memory.
char *vn_path_in(const char *dir, const char *name);
// What follows the last slash.
const char *vn_path_base(const char *path);
// The hidden temporary name beside path: "DIR/.NAME.XXXXXX", for mkstemp
// or mkdtemp. NULL (the error printed) when out of memory.
char *vn_place_temp_name(const char *path);
// mode as the umask lets a new file have it.
mode_t vn_place_mode(mode_t mode);
// A folder and the plain files in it (or one file); true when it is gone.
bool vn_place_remove(const char *path);
// fsync on a folder, so that a rename in it survives a crash.
void vn_place_sync_folder(const char *folder);
// Renames the temporary file or folder from to path, with the signals held
// so it happens whole or not at all; without overwrite, never replaces a
// name that appeared meanwhile. Says "wrote PATH" unless quiet. An exit
// code (the error printed); from is left for the caller to remove.
int vn_place(const char *from, const char *path, bool overwrite, bool quiet);

// Writes path through a temporary file: write(f, ctx), synced, given mode,
// placed. An exit code (the error printed); no temporary file left.
typedef bool (*VnPlaceWriter)(FILE *f, const void *ctx);
int vn_place_file(const char *path, mode_t mode, bool overwrite, bool quiet,
                  VnPlaceWriter write, const void *ctx);

#endif
