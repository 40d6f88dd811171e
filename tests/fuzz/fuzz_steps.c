// SPDX-License-Identifier: GPL-3.0-or-later
// libFuzzer target: the words of `vernier process` and `vernier measure`.
//
// The input is split into command-line words at each newline. A first word
// "process" or "measure" sends the rest through that sub-command's option
// parser; any other input is taken as STEP words. STEP words are parsed and
// then resolved against the plugins on LV2_PATH (our bundle: one lilv world,
// opened once, since resolving only reads it), as `vernier process` does
// before it opens any file. Every word also goes through the number and
// time parsers on its own. What must hold: no crash, no sanitizer report,
// no leak; a STEP that resolves has finite control values within range.
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "args.h"
#include "measure.h"
#include "process.h"
#include "steps.h"
#include "time_value.h"
#include "vernier.h"
#include "world.h"

#define MAX_WORDS 64

static VnWorld world;
static int world_rc = -1;

int LLVMFuzzerInitialize(int *argc, char ***argv);
int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerInitialize(int *argc, char ***argv) {
  (void)argc;
  (void)argv;
  if (!getenv("LV2_PATH")) {
    fprintf(stderr, "fuzz_steps: set LV2_PATH to the folder of vernier.lv2\n");
    abort();
  }
  world_rc = vn_world_open(&world);
  if (world_rc != VN_EXIT_OK || !vn_world_find_plugin(&world, "strip-stereo")) {
    fprintf(stderr, "fuzz_steps: our plugins are not on LV2_PATH\n");
    abort();
  }
  return 0;
}

// The rates the host meets, and one far outside them.
static double pick_rate(size_t size) {
  static const double rates[] = {48000, 44100, 22050, 96000, 384000, 1};
  return rates[size % (sizeof rates / sizeof rates[0])];
}

static void check_resolved(const VnSteps *s, double rate_hz) {
  for (size_t i = 0; i < s->n_steps; ++i) {
    const VnStep *step = &s->steps[i];
    for (uint32_t p = 0; p < step->info.n_ports; ++p) {
      const VnPortInfo *port = &step->info.ports[p];
      if (!vn_port_is_control_input(port)) {
        continue;
      }
      float lo, hi;
      vn_port_bounds(port, rate_hz, &lo, &hi);
      const float v = step->controls[p];
      // A value the host accepted must be one the plugin may be given.
      if (!isfinite(v) || (!isnan(lo) && v < lo) || (!isnan(hi) && v > hi)) {
        fprintf(stderr, "fuzz_steps: %s %s = %g outside %g .. %g\n", step->word,
                port->symbol, (double)v, (double)lo, (double)hi);
        abort();
      }
    }
  }
}

static void steps(char **words, size_t n, double rate_hz, double air_c) {
  VnSteps s;
  if (vn_steps_parse(&s, words, n) == VN_EXIT_OK &&
      vn_steps_resolve(&s, &world, rate_hz, air_c) == VN_EXIT_OK) {
    check_resolved(&s, rate_hz);
  }
  vn_steps_free(&s);
}

static void each_word(char *const *words, size_t n, double rate_hz) {
  const VnTimeContext ctx = {rate_hz, VN_AIR_TEMP_DEFAULT_C};
  for (size_t i = 0; i < n; ++i) {
    double d, air;
    long long ll;
    (void)vn_parse_number(words[i], &d);
    (void)vn_parse_integer(words[i], &ll);
    if (vn_time_parse_ms(words[i], &ctx, &d) && !isfinite(d)) {
      fprintf(stderr, "fuzz_steps: time '%s' is %g ms\n", words[i], d);
      abort();
    }
    if (vn_parse_air_temp(words[i], &air) == VN_EXIT_OK &&
        !(air >= VN_AIR_TEMP_MIN_C && air <= VN_AIR_TEMP_MAX_C)) {
      abort();
    }
  }
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size) {
  // A private, NUL-terminated copy, cut into words in place.
  char *text = malloc(size + 1);
  if (!text) {
    return 0;
  }
  memcpy(text, data, size);
  text[size] = '\0';
  char *words[MAX_WORDS + 1];
  size_t n = 0;
  for (char *p = text; n < MAX_WORDS;) {
    words[n++] = p;
    char *nl = strchr(p, '\n');
    if (!nl) {
      break;
    }
    *nl = '\0';
    p = nl + 1;
  }
  words[n] = NULL;
  const double rate_hz = pick_rate(size);
  each_word(words, n, rate_hz);
  if (strcmp(words[0], "process") == 0) {
    VnProcessOptions opt;
    if (vn_process_parse(&opt, (int)n, words) == VN_EXIT_OK) {
      steps(opt.step_words, opt.n_step_words, rate_hz, opt.air_temp_c);
    }
    vn_process_options_free(&opt);
  } else if (strcmp(words[0], "measure") == 0) {
    VnMeasureOptions opt;
    (void)vn_measure_parse(&opt, (int)n, words);
    vn_measure_options_free(&opt);
  } else {
    steps(words, n, rate_hz, VN_AIR_TEMP_DEFAULT_C);
  }
  free(text);
  return 0;
}
