// SPDX-License-Identifier: GPL-3.0-or-later
#include "values.h"

#include <float.h>
#include <math.h>
#include <stdio.h>
#include <string.h>
#include <strings.h>

#include "args.h"
#include "json.h"
#include "text.h"
#include "vernier.h"

bool vn_fits_float(double d) {
  return fabs(d) <= FLT_MAX;
}

// Six significant digits: a bound scaled by the sample rate (0.001 * 48000)
// reads 48, not 48.000004.
static void describe_range(VnText *t, float lo, float hi) {
  char a[32], b[32];
  snprintf(a, sizeof a, "%g", (double)lo);
  snprintf(b, sizeof b, "%g", (double)hi);
  if (!isnan(lo) && !isnan(hi)) {
    vn_text_append(t, "%s .. %s", a, b);
  } else if (!isnan(lo)) {
    vn_text_append(t, ">= %s", a);
  } else if (!isnan(hi)) {
    vn_text_append(t, "<= %s", b);
  } else {
    vn_text_append(t, "any number");
  }
}

static int parse_toggle(const VnStep *step, const VnSetting *set,
                        float *value) {
  static const struct {
    const char *word;
    float value;
  } words[] = {{"on", 1},  {"off", 0}, {"true", 1}, {"false", 0},
               {"yes", 1}, {"no", 0},  {"1", 1},    {"0", 0}};
  for (size_t i = 0; i < sizeof words / sizeof words[0]; ++i) {
    if (strcasecmp(set->value_text, words[i].word) == 0) {
      *value = words[i].value;
      return VN_EXIT_OK;
    }
  }
  vn_error("%s: %s is not a toggle value; allowed: on, off, true, false, "
           "yes, no, 1, 0",
           step->word, set->word);
  return VN_EXIT_USAGE;
}

static int parse_enumeration(const VnStep *step, const VnPortInfo *port,
                             const VnSetting *set, float *value) {
  double number = 0;
  const bool is_number = vn_parse_number(set->value_text, &number);
  for (size_t i = 0; i < port->n_points; ++i) {
    if (strcmp(port->points[i].label, set->value_text) == 0 ||
        (is_number && vn_fits_float(number) &&
         (float)number == port->points[i].value)) {
      *value = port->points[i].value;
      return VN_EXIT_OK;
    }
  }
  for (size_t i = 0; i < port->n_points; ++i) {
    if (strcasecmp(port->points[i].label, set->value_text) == 0) {
      *value = port->points[i].value;
      return VN_EXIT_OK;
    }
  }
  VnText allowed = {0};
  for (size_t i = 0; i < port->n_points; ++i) {
    char v[32];
    vn_format_float(v, sizeof v, port->points[i].value);
    vn_text_append(&allowed, "%s%s (%s)", i ? ", " : "", port->points[i].label,
                   v);
  }
  vn_error("%s: %s is not one of the values of '%s': %s", step->word, set->word,
           port->symbol, vn_text_get(&allowed));
  vn_text_free(&allowed);
  return VN_EXIT_USAGE;
}

static void out_of_range(const VnStep *step, const VnSetting *set,
                         const char *converted, float lo, float hi,
                         const char *unit) {
  VnText range = {0};
  describe_range(&range, lo, hi);
  vn_error("%s: %s%s is out of range %s%s%s", step->word, set->word, converted,
           vn_text_get(&range), unit ? " " : "", unit ? unit : "");
  vn_text_free(&range);
}

// A control in milliseconds: NUMBER[UNIT]. Beyond the range of the Fine
// Delay's or the Align Strip's delay the host takes the whole frames (time_value.h says why and how far).
static int parse_time(const VnStep *step, const VnPortInfo *port,
                      const VnSetting *set, const VnTimeContext *ctx,
                      float *value, int64_t *host_frames) {
  float lo, hi;
  vn_port_bounds(port, ctx->rate_hz, &lo, &hi);
  const bool shifts = !isnan(lo) && !isnan(hi) &&
                      vn_time_host_can_shift(step->info.uri, port->symbol);
  double ms = 0.0;
  if (!vn_time_parse_ms(set->value_text, ctx, &ms)) {
    VnText units = {0}, range = {0};
    vn_time_units_help(&units, ctx);
    describe_range(&range, lo, hi);
    char beyond[96] = "";
    if (shifts) {
      snprintf(beyond, sizeof beyond,
               ", and beyond by a shift of the file, up to %g s",
               VN_HOST_SHIFT_MAX_S);
    }
    vn_error("%s: %s is not a time; write a number and optionally a unit: "
             "%s (allowed: %s ms%s)",
             step->word, set->word, vn_text_get(&units), vn_text_get(&range),
             beyond);
    vn_text_free(&units);
    vn_text_free(&range);
    return VN_EXIT_USAGE;
  }
  // With a unit, messages show what it came to.
  char converted[64] = "";
  double plain = 0.0;
  if (!vn_parse_number(set->value_text, &plain)) {
    snprintf(converted, sizeof converted, " (%.6g ms)", ms);
  }
  const float v = vn_fits_float(ms) ? (float)ms : NAN;
  if (!isnan(v) && (isnan(lo) || v >= lo) && (isnan(hi) || v <= hi)) {
    *value = v;
    return VN_EXIT_OK;
  }
  if (!shifts) {
    out_of_range(step, set, converted, lo, hi, "ms");
    return VN_EXIT_USAGE;
  }
  if (!vn_time_split(ms, lo, hi, ctx->rate_hz, host_frames, value)) {
    vn_error("%s: %s%s is beyond what the host shifts a file by (%g s "
             "either way; the plugin itself takes %g .. %g ms)",
             step->word, set->word, converted, VN_HOST_SHIFT_MAX_S, (double)lo,
             (double)hi);
    return VN_EXIT_USAGE;
  }
  return VN_EXIT_OK;
}

int vn_value_parse(const VnStep *step, const VnPortInfo *port,
                   const VnSetting *set, const VnTimeContext *ctx, float *value,
                   int64_t *host_frames) {
  *host_frames = 0;
  if (port->props & VN_PROP_TOGGLED) {
    return parse_toggle(step, set, value);
  }
  if ((port->props & VN_PROP_ENUMERATION) && port->n_points > 0) {
    return parse_enumeration(step, port, set, value);
  }
  if (vn_port_is_time(port) && !(port->props & VN_PROP_INTEGER)) {
    return parse_time(step, port, set, ctx, value, host_frames);
  }
  float lo, hi;
  vn_port_bounds(port, ctx->rate_hz, &lo, &hi);
  double number = 0;
  if (!vn_parse_number(set->value_text, &number)) {
    VnText range = {0};
    describe_range(&range, lo, hi);
    vn_error("%s: %s is not a number (allowed: %s)", step->word, set->word,
             vn_text_get(&range));
    vn_text_free(&range);
    return VN_EXIT_USAGE;
  }
  if ((port->props & VN_PROP_INTEGER) && number != nearbyint(number)) {
    vn_error("%s: %s is not an integer; '%s' takes whole numbers", step->word,
             set->word, port->symbol);
    return VN_EXIT_USAGE;
  }
  // Compared as floats, because the bounds are floats: 0.7 is within a
  // maximum written as 0.7 even though the double 0.7 is above 0.7f. What
  // no float holds (1e300) is out of any range.
  const float v = vn_fits_float(number) ? (float)number : NAN;
  if (isnan(v) || (!isnan(lo) && v < lo) || (!isnan(hi) && v > hi)) {
    out_of_range(step, set, "", lo, hi, NULL);
    return VN_EXIT_USAGE;
  }
  *value = v;
  return VN_EXIT_OK;
}
