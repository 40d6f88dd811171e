// SPDX-License-Identifier: GPL-3.0-or-later
// The STEP words of `vernier process`: which plugin, which preset, which
// control values; parsed, then checked against the plugin's ports.
#ifndef VERNIER_HOST_STEPS_H
#define VERNIER_HOST_STEPS_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include <lilv/lilv.h>

#include "ports.h"
#include "world.h"

typedef struct {
  const char *word; // "gain=-0.5", for messages
  char *symbol;     // the part before '='
  const char *value_text;
  float value;
} VnSetting;

typedef struct {
  const char *word;          // the plugin as typed: "gain" or a URI
  const char **preset_names; // '@' stripped, in the order given
  size_t n_presets;
  VnSetting *settings;
  size_t n_settings;

  // Filled in by vn_steps_resolve:
  VnPluginInfo info;
  LilvState **presets; // one per preset_names entry
  float *controls;     // one per port; the value of each control input
  // Whole frames the host moves the file by for a delay beyond the Fine
  // Delay's range (negative: earlier); 0 for every other step.
  int64_t host_shift_frames;
} VnStep;

typedef struct {
  VnStep *steps;
  size_t n_steps;
} VnSteps;

// A word is a SETTING iff it starts with '@' or matches
// ^[A-Za-z_][A-Za-z0-9_]*= ; any other word starts a new STEP.
bool vn_word_is_setting(const char *word);

// Syntax only. Returns an exit code (the error printed).
int vn_steps_parse(VnSteps *s, char *const *words, size_t n_words);
// Finds each plugin, loads its presets, sets and checks every control value
// at rate_hz (times in distances at air_temp_c). Returns an exit code (the
// error printed).
int vn_steps_resolve(VnSteps *s, VnWorld *w, double rate_hz, double air_temp_c);
void vn_steps_free(VnSteps *s);

#endif
