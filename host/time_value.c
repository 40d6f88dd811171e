// SPDX-License-Identifier: GPL-3.0-or-later
#include "time_value.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "args.h"
#include "vernier.h"

typedef enum { UNIT_TIME, UNIT_SAMPLES, UNIT_DISTANCE } UnitKind;

// Suffixes, case as written: "m" is metres and "ms" milliseconds, so
// "M" or "MS" would only invite confusion. scale: ms per unit for times,
// metres per unit for distances.
static const struct {
  const char *suffix;
  UnitKind kind;
  double scale;
} units[] = {
    {"ms", UNIT_TIME, 1.0},        {"us", UNIT_TIME, 1e-3},
    {"s", UNIT_TIME, 1e3},         {"smp", UNIT_SAMPLES, 1.0},
    {"m", UNIT_DISTANCE, 1.0},     {"cm", UNIT_DISTANCE, 0.01},
    {"mm", UNIT_DISTANCE, 0.001},  {"ft", UNIT_DISTANCE, 0.3048},
    {"in", UNIT_DISTANCE, 0.0254},
};

#define N_UNITS (sizeof units / sizeof units[0])

double vn_speed_of_sound_m_s(double air_temp_c) {
  return 331.3 * sqrt(1.0 + air_temp_c / 273.15);
}

int vn_parse_air_temp(const char *text, double *air_temp_c) {
  double t = 0.0;
  if (!vn_parse_number(text, &t) || t < VN_AIR_TEMP_MIN_C ||
      t > VN_AIR_TEMP_MAX_C) {
    vn_error("--air-temp %s: not an air temperature in degrees Celsius from "
             "%g to %g",
             text, VN_AIR_TEMP_MIN_C, VN_AIR_TEMP_MAX_C);
    return VN_EXIT_USAGE;
  }
  *air_temp_c = t;
  return VN_EXIT_OK;
}

bool vn_port_is_time(const VnPortInfo *port) {
  return vn_port_is_control_input(port) && port->unit &&
         strcmp(port->unit, "ms") == 0;
}

bool vn_time_parse_ms(const char *text, const VnTimeContext *ctx, double *ms) {
  // strtod would skip leading blanks and read "nan" or "inf": a time is a
  // finite number first, and its unit right after it.
  if (!text[0] || !(text[0] == '-' || text[0] == '+' || text[0] == '.' ||
                    (text[0] >= '0' && text[0] <= '9'))) {
    return false;
  }
  char *end = NULL;
  errno = 0;
  const double v = strtod(text, &end);
  if (end == text || errno == ERANGE || !isfinite(v)) {
    return false;
  }
  if (*end == '\0') {
    *ms = v;
    return true;
  }
  for (size_t i = 0; i < N_UNITS; ++i) {
    if (strcmp(end, units[i].suffix) != 0) {
      continue;
    }
    double out = v * units[i].scale;
    if (units[i].kind == UNIT_SAMPLES) {
      out = v * 1000.0 / ctx->rate_hz;
    } else if (units[i].kind == UNIT_DISTANCE) {
      out = out / vn_speed_of_sound_m_s(ctx->air_temp_c) * 1000.0;
    }
    if (!isfinite(out)) {
      return false;
    }
    *ms = out;
    return true;
  }
  return false;
}

void vn_time_units_help(VnText *t, const VnTimeContext *ctx) {
  vn_text_append(t,
                 "ms (the default), us, s, smp (samples at %g Hz), m, cm, "
                 "mm, ft, in (of air at %g C)",
                 ctx->rate_hz, ctx->air_temp_c);
}

// Only where the control is a pure delay of the whole output: then moving
// the file by whole frames commutes with everything else the plugin does
// (the Align Strip's polarity, rotation, all-pass and gain are all
// time-invariant), so host and plugin together give exactly the time asked.
bool vn_time_host_can_shift(const char *plugin_uri, const char *symbol) {
  static const char *const pure_delays[] = {
      "urn:vernier:delay-mono",
      "urn:vernier:delay-stereo",
      "urn:vernier:strip-mono",
      "urn:vernier:strip-stereo",
  };
  if (strcmp(symbol, "delay") != 0) {
    return false;
  }
  for (size_t i = 0; i < sizeof pure_delays / sizeof pure_delays[0]; ++i) {
    if (strcmp(plugin_uri, pure_delays[i]) == 0) {
      return true;
    }
  }
  return false;
}

bool vn_time_split(double ms, float lo_ms, float hi_ms, double rate_hz,
                   int64_t *host_frames, float *plugin_ms) {
  if (fabs(ms) > VN_HOST_SHIFT_MAX_S * 1000.0) {
    return false;
  }
  const double frames = ms * rate_hz / 1000.0;
  const double lo = (double)lo_ms * rate_hz / 1000.0;
  const double hi = (double)hi_ms * rate_hz / 1000.0;
  // The whole frames beyond the range go to the host, so that what is left
  // lies within it, fraction and all.
  const double whole = frames < lo ? floor(frames - lo) : ceil(frames - hi);
  float rest = (float)((frames - whole) * 1000.0 / rate_hz);
  rest = rest < lo_ms ? lo_ms : (rest > hi_ms ? hi_ms : rest);
  *host_frames = (int64_t)whole;
  *plugin_ms = rest;
  return true;
}

void vn_time_describe_range(VnText *t, float lo_ms, float hi_ms,
                            const VnTimeContext *ctx) {
  const double c = vn_speed_of_sound_m_s(ctx->air_temp_c);
  const double lo = (double)lo_ms, hi = (double)hi_ms;
  vn_text_append(t,
                 "%.6g .. %.6g frames at %g Hz, %.4g .. %.4g m of air at %g C "
                 "(%.1f m/s)",
                 lo * ctx->rate_hz / 1000.0, hi * ctx->rate_hz / 1000.0,
                 ctx->rate_hz, lo * c / 1000.0, hi * c / 1000.0,
                 ctx->air_temp_c, c);
}
