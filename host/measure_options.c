// SPDX-License-Identifier: GPL-3.0-or-later
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "args.h"
#include "measure.h"
#include "time_value.h"
#include "vernier.h"

static const char usage[] =
    "usage: vernier measure [OPTIONS] REF TARGET [TARGET...]\n"
    "\n"
    "Measures how far each TARGET lags REF (two recordings of one source),\n"
    "its polarity and its phase angle, and what the sum gains when TARGET\n"
    "is corrected. With --write it also writes the correction: TARGET\n"
    "corrected, LV2 presets, a picture and the `vernier process` lines.\n"
    "\n"
    "Options:\n"
    "  --max-offset TIME  search -TIME .. +TIME (default 50ms); TIME takes\n"
    "                     ms, us, s, smp, or air: m, cm, mm, ft, in\n"
    "  --band LO-HI       Hz the offset and angle are fitted on\n"
    "                     (default 20-10000)\n"
    "  --low-band LO-HI   Hz of the low-band figures (default 20-250)\n"
    "  --channel N        measure channel N (1 = first) of files with more\n"
    "                     than one; default: all channels mixed to mono\n"
    "  --shape            also fit a frequency-centred all-pass to what\n"
    "                     phase difference a constant angle leaves\n"
    "  --air-temp C       air temperature for distances, -50..60 (default 20)\n"
    "  --write DIR        write the correction into the folder DIR\n"
    "  --overwrite        replace files of the same names in DIR\n"
    "  --json             JSON on stdout instead of the report\n"
    "  --curves           with --json: the per-frequency curves too\n"
    "  -q, --quiet        no progress and no notes on stderr\n"
    "  -h, --help         this help\n"
    "      --version      the version\n"
    "\n"
    "Offsets are positive when TARGET arrives late; the correction moves\n"
    "TARGET by minus the offset. Exit status: 0 found, 2 usage, 3 input,\n"
    "4 output, 7 no reliable offset found for some TARGET.\n"
    "\n"
    "Examples:\n"
    "  vernier measure bass-amp.wav bass-di.wav\n"
    "  vernier measure --shape --write aligned/ kick-in.wav kick-out.wav\n";

// LO-HI in Hz, 1 .. 100 kHz, LO < HI.
static int parse_band(const char *option, const char *text, double *lo,
                      double *hi) {
  const char *dash = strchr(text, '-');
  double a = 0, b = 0;
  char left[64];
  const size_t n = dash ? (size_t)(dash - text) : 0;
  bool ok = dash && n > 0 && n < sizeof left;
  if (ok) {
    memcpy(left, text, n);
    left[n] = '\0';
    ok = vn_parse_number(left, &a) && vn_parse_number(dash + 1, &b) &&
         a >= 1.0 && b > a && b <= 100000.0;
  }
  if (!ok) {
    vn_error("%s %s: not a band LO-HI in Hz with 1 <= LO < HI <= 100000, "
             "such as 20-250",
             option, text);
    return VN_EXIT_USAGE;
  }
  *lo = a;
  *hi = b;
  return VN_EXIT_OK;
}

static int parse_channel(const char *text, int *channel) {
  long long n = 0;
  if (!vn_parse_integer(text, &n) || n < 1 || n > 1024) {
    vn_error("--channel %s: not a channel number from 1 (the first) to 1024",
             text);
    return VN_EXIT_USAGE;
  }
  *channel = (int)n - 1;
  return VN_EXIT_OK;
}

// The search range is a time like the Fine Delay's; smp would need the
// file's rate, which is not known yet, so it is kept as text until then.
static int parse_max_offset(const char *text, VnMeasureOptions *opt) {
  // Samples are checked against the rate later (vn_measure_max_lag_frames).
  VnTimeContext ctx = {.rate_hz = 48000.0, .air_temp_c = opt->air_temp_c};
  double ms = 0;
  if (!vn_time_parse_ms(text, &ctx, &ms) || !(ms > 0.0)) {
    vn_error("--max-offset %s: not a time above 0, such as 50ms, 2400smp or "
             "3m",
             text);
    return VN_EXIT_USAGE;
  }
  opt->max_offset_text = text;
  return VN_EXIT_OK;
}

static int parse_option(VnMeasureOptions *opt, VnArgs *a, const char *word) {
  const char *value = NULL;
  if (vn_args_is(a, "--max-offset", NULL)) {
    value = vn_args_value(a, "a time, such as 50ms");
    return value ? parse_max_offset(value, opt) : VN_EXIT_USAGE;
  }
  if (vn_args_is(a, "--band", NULL)) {
    value = vn_args_value(a, "LO-HI in Hz, such as 20-10000");
    return value
               ? parse_band("--band", value, &opt->band_lo_hz, &opt->band_hi_hz)
               : VN_EXIT_USAGE;
  }
  if (vn_args_is(a, "--low-band", NULL)) {
    value = vn_args_value(a, "LO-HI in Hz, such as 20-250");
    return value ? parse_band("--low-band", value, &opt->low_lo_hz,
                              &opt->low_hi_hz)
                 : VN_EXIT_USAGE;
  }
  if (vn_args_is(a, "--channel", NULL)) {
    value = vn_args_value(a, "a channel number, 1 for the first");
    return value ? parse_channel(value, &opt->channel) : VN_EXIT_USAGE;
  }
  if (vn_args_is(a, "--air-temp", NULL)) {
    value = vn_args_value(a, "the air temperature in degrees Celsius");
    return value ? vn_parse_air_temp(value, &opt->air_temp_c) : VN_EXIT_USAGE;
  }
  if (vn_args_is(a, "--write", NULL)) {
    opt->write_dir = vn_args_value(a, "a folder to write into");
    return opt->write_dir ? VN_EXIT_OK : VN_EXIT_USAGE;
  }
  bool *flag = vn_args_is(a, "--shape", NULL)       ? &opt->shape
               : vn_args_is(a, "--overwrite", NULL) ? &opt->overwrite
               : vn_args_is(a, "--json", NULL)      ? &opt->json
               : vn_args_is(a, "--curves", NULL)    ? &opt->curves
               : vn_args_is(a, "--quiet", "-q")     ? &opt->quiet
                                                    : NULL;
  if (flag) {
    *flag = true;
    return vn_args_flag(a) ? VN_EXIT_OK : VN_EXIT_USAGE;
  }
  vn_error("unknown option '%s'; measure options: --max-offset TIME, --band "
           "LO-HI, --low-band LO-HI, --channel N, --shape, --air-temp C, "
           "--write DIR, --overwrite, --json, --curves, -q, --help, --version",
           word);
  return VN_EXIT_USAGE;
}

int vn_measure_parse(VnMeasureOptions *opt, int argc, char **argv) {
  memset(opt, 0, sizeof *opt);
  opt->max_offset_ms = VN_MEASURE_MAX_OFFSET_DEFAULT_MS;
  opt->band_lo_hz = VN_MEASURE_BAND_LO_DEFAULT_HZ;
  opt->band_hi_hz = VN_MEASURE_BAND_HI_DEFAULT_HZ;
  opt->low_lo_hz = VN_MEASURE_LOW_LO_DEFAULT_HZ;
  opt->low_hi_hz = VN_MEASURE_LOW_HI_DEFAULT_HZ;
  opt->channel = VN_MEASURE_CHANNEL_MIX;
  opt->air_temp_c = VN_AIR_TEMP_DEFAULT_C;
  opt->target_paths = calloc((size_t)argc + 1, sizeof *opt->target_paths);
  if (!opt->target_paths) {
    vn_error("out of memory");
    return VN_EXIT_USAGE;
  }
  size_t n_positional = 0;
  VnArgs a;
  vn_args_init(&a, argc, argv);
  char *word = NULL;
  for (VnArgKind kind; (kind = vn_args_next(&a, &word)) != VN_ARG_END;) {
    if (kind == VN_ARG_WORD) {
      if (n_positional++ == 0) {
        opt->ref_path = word;
      } else {
        opt->target_paths[opt->n_targets++] = word;
      }
    } else if (vn_args_help_or_version(&a, usage)) {
      return -1;
    } else {
      const int rc = parse_option(opt, &a, word);
      if (rc != VN_EXIT_OK) {
        return rc;
      }
    }
  }
  if (n_positional < 2) {
    vn_error("measure needs REF and at least one TARGET%s; see 'vernier "
             "measure --help'",
             n_positional == 1 ? " (got REF only)" : "");
    return VN_EXIT_USAGE;
  }
  if (opt->curves && !opt->json) {
    vn_error("--curves goes with --json (the curves are part of the JSON)");
    return VN_EXIT_USAGE;
  }
  return VN_EXIT_OK;
}

void vn_measure_options_free(VnMeasureOptions *opt) {
  free(opt->target_paths);
  memset(opt, 0, sizeof *opt);
}
