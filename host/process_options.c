// SPDX-License-Identifier: GPL-3.0-or-later
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "args.h"
#include "process.h"
#include "time_value.h"
#include "vernier.h"

static const char usage[] =
    "usage: vernier process [OPTIONS] IN OUT STEP [STEP...]\n"
    "\n"
    "Runs IN through a chain of LV2 plugins and writes OUT, aligned sample\n"
    "for sample with IN (each plugin's latency is compensated).\n"
    "\n"
    "STEP:  PLUGIN [SYMBOL=VALUE | @PRESET]...\n"
    "  PLUGIN   one of ours by short name (gain, polarity, rotate, allpass,\n"
    "           delay, strip; NAME-stereo for the stereo variant) or any\n"
    "           plugin's URI (see 'vernier list')\n"
    "  SYMBOL=VALUE  a control input by its symbol (see 'vernier describe')\n"
    "  @PRESET  a preset by label or URI, applied before the step's values\n"
    "\n"
    "Times: a control in milliseconds (delay's and strip's delay) takes a\n"
    "unit after the number: ms (the default), us, s, smp (samples at IN's\n"
    "rate), or a distance of air, m, cm, mm, ft, in (343.2 m/s at 20 C;\n"
    "--air-temp):\n"
    "  delay=1.5ms  delay=-0.37smp  delay=34cm  delay=-2.1m  delay=7ft\n"
    "Beyond the -20 .. +100 ms that delay's and strip's delay cover\n"
    "themselves, the host moves the file by the whole frames outside that\n"
    "range (up to 60 s either way: what moves before the start is cut, the\n"
    "end is padded with silence) and the plugin does the rest.\n"
    "\n"
    "Options:\n"
    "  --block N          frames per run() call, 1..65536 (default 512)\n"
    "  --tail SECONDS     add SECONDS of output after the input ends\n"
    "  --format CONTAINER[:ENCODING]\n"
    "                     wav wavex w64 rf64 aiff caf flac ogg;\n"
    "                     pcm16 pcm24 pcm32 float double (vorbis for ogg);\n"
    "                     default: the input's format\n"
    "  --air-temp C       air temperature for distances, -50..60 (default 20)\n"
    "  --overwrite        replace OUT if it exists\n"
    "  --json             print a JSON summary on stdout\n"
    "  -q, --quiet        no progress and no summary on stderr\n"
    "  -h, --help         this help\n"
    "      --version      the version\n"
    "\n"
    "Examples:\n"
    "  vernier process di.wav di-fixed.wav polarity invert=on gain gain=-0.5\n"
    "  vernier process amp.wav amp-early.wav delay delay=-1.37ms\n";

static int parse_block(const char *text, uint32_t *frames) {
  long long n = 0;
  if (!vn_parse_integer(text, &n) || n < 1 || n > VN_BLOCK_MAX_FRAMES) {
    vn_error("--block %s: not a whole number of frames from 1 to %u", text,
             VN_BLOCK_MAX_FRAMES);
    return VN_EXIT_USAGE;
  }
  *frames = (uint32_t)n;
  return VN_EXIT_OK;
}

static int parse_tail(const char *text, double *seconds) {
  double s = 0;
  if (!vn_parse_number(text, &s) || s < 0 || s > VN_TAIL_MAX_S) {
    vn_error("--tail %s: not a number of seconds from 0 to %g", text,
             VN_TAIL_MAX_S);
    return VN_EXIT_USAGE;
  }
  *seconds = s;
  return VN_EXIT_OK;
}

static int parse_option(VnProcessOptions *opt, VnArgs *a, const char *word) {
  const char *value = NULL;
  if (vn_args_is(a, "--block", NULL)) {
    value = vn_args_value(a, "frames per run() call, 1 to 65536");
    return value ? parse_block(value, &opt->block_frames) : VN_EXIT_USAGE;
  }
  if (vn_args_is(a, "--tail", NULL)) {
    value = vn_args_value(a, "seconds to add after the input ends, >= 0");
    return value ? parse_tail(value, &opt->tail_s) : VN_EXIT_USAGE;
  }
  if (vn_args_is(a, "--air-temp", NULL)) {
    value = vn_args_value(a, "the air temperature in degrees Celsius");
    return value ? vn_parse_air_temp(value, &opt->air_temp_c) : VN_EXIT_USAGE;
  }
  if (vn_args_is(a, "--format", NULL)) {
    opt->format = vn_args_value(a, "CONTAINER[:ENCODING], such as wav:pcm24");
    return opt->format ? VN_EXIT_OK : VN_EXIT_USAGE;
  }
  bool *flag = vn_args_is(a, "--overwrite", NULL) ? &opt->overwrite
               : vn_args_is(a, "--json", NULL)    ? &opt->json
               : vn_args_is(a, "--quiet", "-q")   ? &opt->quiet
                                                  : NULL;
  if (flag) {
    *flag = true;
    return vn_args_flag(a) ? VN_EXIT_OK : VN_EXIT_USAGE;
  }
  vn_error("unknown option '%s'; process options: --block N, --tail SECONDS, "
           "--format CONTAINER[:ENCODING], --air-temp C, --overwrite, --json, "
           "-q, --help, --version",
           word);
  return VN_EXIT_USAGE;
}

int vn_process_parse(VnProcessOptions *opt, int argc, char **argv) {
  memset(opt, 0, sizeof *opt);
  opt->block_frames = VN_BLOCK_DEFAULT_FRAMES;
  opt->air_temp_c = VN_AIR_TEMP_DEFAULT_C;
  opt->step_words = calloc((size_t)argc + 1, sizeof *opt->step_words);
  if (!opt->step_words) {
    vn_error("out of memory");
    return VN_EXIT_USAGE;
  }
  size_t n_positional = 0;
  VnArgs a;
  vn_args_init(&a, argc, argv);
  char *word = NULL;
  for (VnArgKind kind; (kind = vn_args_next(&a, &word)) != VN_ARG_END;) {
    if (kind == VN_ARG_WORD) {
      if (n_positional == 0) {
        opt->in_path = word;
      } else if (n_positional == 1) {
        opt->out_path = word;
      } else {
        opt->step_words[opt->n_step_words++] = word;
      }
      ++n_positional;
    } else if (vn_args_help_or_version(&a, usage)) {
      return -1;
    } else {
      const int rc = parse_option(opt, &a, word);
      if (rc != VN_EXIT_OK) {
        return rc;
      }
    }
  }
  if (n_positional < 3) {
    vn_error("process needs IN, OUT and at least one STEP%s; see 'vernier "
             "process --help'",
             n_positional == 0   ? ""
             : n_positional == 1 ? " (got IN only)"
                                 : " (got IN and OUT)");
    return VN_EXIT_USAGE;
  }
  return VN_EXIT_OK;
}

void vn_process_options_free(VnProcessOptions *opt) {
  free(opt->step_words);
  memset(opt, 0, sizeof *opt);
}
