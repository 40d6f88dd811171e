// SPDX-License-Identifier: GPL-3.0-or-later
// `vernier measure --json`: the keys are a contract (README, the man page);
// a key once released keeps its name and meaning.
#include <stdint.h>
#include <stdio.h>

#include "json.h"
#include "measure.h"
#include "measure_report.h"
#include "time_value.h"

#define MAX_STEP_WORDS 32

static void key_double(VnJson *j, const char *key, double v) {
  vn_json_key(j, key);
  vn_json_double(j, v);
}

static void key_int(VnJson *j, const char *key, int64_t v) {
  vn_json_key(j, key);
  vn_json_int(j, v);
}

static void key_string(VnJson *j, const char *key, const char *s) {
  vn_json_key(j, key);
  vn_json_string(j, s);
}

static void key_range(VnJson *j, const char *key, double lo, double hi) {
  vn_json_key(j, key);
  vn_json_begin_array(j);
  vn_json_double(j, lo);
  vn_json_double(j, hi);
  vn_json_end_array(j);
}

static void write_settings(VnJson *j, const VnMeasureOptions *opt) {
  vn_json_key(j, "settings");
  vn_json_begin_object(j);
  key_double(j, "max_offset_ms", opt->max_offset_ms);
  key_range(j, "band_hz", opt->band_lo_hz, opt->band_hi_hz);
  key_range(j, "low_band_hz", opt->low_lo_hz, opt->low_hi_hz);
  if (opt->channel == VN_MEASURE_CHANNEL_MIX) {
    key_string(j, "channel", "mix");
  } else {
    key_int(j, "channel", opt->channel + 1);
  }
  key_double(j, "air_temp_c", opt->air_temp_c);
  vn_json_key(j, "shape");
  vn_json_bool(j, opt->shape);
  vn_json_end_object(j);
}

static void write_offset(VnJson *j, const VnMeasureOptions *opt,
                         const VnMeasureResult *r) {
  const double ms_per_frame = 1e3 / r->rate_hz;
  const double cm_per_ms = vn_speed_of_sound_m_s(opt->air_temp_c) * 0.1;
  vn_json_key(j, "offset");
  vn_json_begin_object(j);
  key_double(j, "frames", r->offset_frames);
  key_double(j, "sigma_frames", r->offset_sigma_frames);
  key_double(j, "ms", r->offset_frames * ms_per_frame);
  key_double(j, "sigma_ms", r->offset_sigma_frames * ms_per_frame);
  key_double(j, "cm", r->offset_frames * ms_per_frame * cm_per_ms);
  key_double(j, "sigma_cm", r->offset_sigma_frames * ms_per_frame * cm_per_ms);
  key_int(j, "coarse_frames", r->coarse_frames);
  vn_json_end_object(j);
}

static void write_correction(VnJson *j, const VnMeasureResult *r) {
  vn_json_key(j, "correction");
  if (r->status != VN_FOUND) {
    vn_json_null(j);
    return;
  }
  const VnMeasureCorrection c = vn_measure_correction(r);
  vn_json_begin_object(j);
  vn_json_key(j, "invert");
  vn_json_bool(j, c.invert);
  key_double(j, "angle_deg", c.angle_deg);
  key_double(j, "delay_frames", c.delay_frames);
  key_double(j, "delay_ms", c.delay_frames * 1e3 / r->rate_hz);
  vn_json_key(j, "allpass");
  if (r->shape.fitted) {
    const VnShapeFit *s = &r->shape;
    vn_json_begin_object(j);
    key_double(j, "frequency_hz", s->frequency_hz);
    key_double(j, "q", s->q);
    key_int(j, "stages", s->stages);
    key_int(j, "order", s->order);
    vn_json_end_object(j);
  } else {
    vn_json_null(j);
  }
  vn_json_end_object(j);
}

static void write_sum(VnJson *j, const char *key, const VnSumFigures *f) {
  vn_json_key(j, key);
  if (!f) {
    vn_json_null(j);
    return;
  }
  vn_json_begin_object(j);
  key_double(j, "correlation", f->correlation);
  key_double(j, "low_db", f->low_db);
  key_double(j, "full_db", f->full_db);
  vn_json_end_object(j);
}

static void write_gain(VnJson *j, const char *key, const VnSumFigures *best,
                       const VnSumFigures *other) {
  vn_json_key(j, key);
  if (!best) {
    vn_json_null(j);
    return;
  }
  vn_json_begin_object(j);
  key_double(j, "low", best->low_db - other->low_db);
  key_double(j, "full", best->full_db - other->full_db);
  vn_json_end_object(j);
}

// Nothing found, nothing to judge: the figures and gains are null then.
static void write_figures(VnJson *j, const VnMeasureResult *r) {
  const bool found = r->status == VN_FOUND;
  vn_json_key(j, "figures");
  if (!found) {
    vn_json_null(j);
  } else {
    vn_json_begin_object(j);
    write_sum(j, "as_recorded", &r->as_recorded);
    write_sum(j, "polarity_only", &r->polarity_only);
    write_sum(j, "offset_only", &r->offset_only);
    write_sum(j, "corrected", &r->corrected);
    write_sum(j, "shaped", r->shape.fitted ? &r->shaped : NULL);
    vn_json_end_object(j);
  }
  const VnSumFigures *best = found ? vn_measure_best_figures(r) : NULL;
  write_gain(j, "gain_over_polarity_db", best, &r->polarity_only);
  write_gain(j, "gain_over_offset_db", best, &r->offset_only);
}

static void write_steps(VnJson *j, const VnMeasureResult *r) {
  vn_json_key(j, "process_step");
  vn_json_begin_array(j);
  if (r->status == VN_FOUND) {
    char buf[1024];
    char *words[MAX_STEP_WORDS];
    const size_t n =
        vn_measure_correction_words(r, buf, sizeof buf, words, MAX_STEP_WORDS);
    for (size_t i = 0; i < n && i < MAX_STEP_WORDS; ++i) {
      vn_json_string(j, words[i]);
    }
  }
  vn_json_end_array(j);
}

static void key_doubles(VnJson *j, const char *key, const double *v, size_t n) {
  vn_json_key(j, key);
  if (!v) {
    vn_json_null(j);
    return;
  }
  vn_json_begin_array(j);
  for (size_t i = 0; i < n; ++i) {
    vn_json_double(j, v[i]);
  }
  vn_json_end_array(j);
}

static void write_curves(VnJson *j, const VnMeasureResult *r) {
  const VnMeasureCurves *c = &r->curves;
  const size_t n_bins =
      c->hi_bin >= c->lo_bin && c->n_fft > 0 ? c->hi_bin - c->lo_bin + 1 : 0;
  vn_json_key(j, "curves");
  vn_json_begin_object(j);
  vn_json_key(j, "frequency_hz");
  vn_json_begin_array(j);
  for (size_t i = 0; i < n_bins; ++i) {
    vn_json_double(j, (double)(c->lo_bin + i) * r->rate_hz / c->n_fft);
  }
  vn_json_end_array(j);
  key_doubles(j, "coherence", c->coherence, n_bins);
  key_doubles(j, "phase_before_deg", c->phase_before_deg, n_bins);
  key_doubles(j, "phase_after_deg", c->phase_after_deg, n_bins);
  key_doubles(j, "sum_before_db", c->sum_before_db, n_bins);
  key_doubles(j, "sum_after_db", c->sum_after_db, n_bins);
  key_doubles(j, "ref_db", c->ref_db, n_bins);
  vn_json_key(j, "lag_frames");
  vn_json_begin_array(j);
  for (uint32_t i = 0; c->correlation && i < c->n_lags; ++i) {
    vn_json_int(j, c->first_lag + (int64_t)i);
  }
  vn_json_end_array(j);
  key_doubles(j, "correlation", c->correlation, c->n_lags);
  vn_json_end_object(j);
}

static const char *status_name(VnFoundStatus status) {
  switch (status) {
  case VN_FOUND:
    return "found";
  case VN_NOT_FOUND_NO_COMMON:
    return "no_common_content";
  case VN_NOT_FOUND_AT_EDGE:
    return "beyond_range";
  }
  return "unknown";
}

static void write_target(VnJson *j, const VnMeasureOptions *opt,
                         const VnMeasureResult *r) {
  vn_json_begin_object(j);
  key_string(j, "path", r->target_path);
  key_int(j, "frames", (int64_t)r->target_frames);
  key_int(j, "channels", r->target_channels);
  key_int(j, "clipped_samples", (int64_t)r->target_clipped);
  key_string(j, "status", status_name(r->status));
  key_double(j, "peak_db", r->peak_db);
  key_double(j, "coherence", r->coherence);
  key_double(j, "chance_coherence", r->chance_coherence);
  key_int(j, "segments", (int64_t)r->segments);
  write_offset(j, opt, r);
  key_double(j, "theta_deg", r->theta_deg);
  key_double(j, "theta_sigma_deg", r->theta_sigma_deg);
  write_correction(j, r);
  write_figures(j, r);
  write_steps(j, r);
  if (opt->curves) {
    write_curves(j, r);
  }
  vn_json_end_object(j);
}

void vn_measure_report_json(FILE *out, const VnMeasureOptions *opt,
                            const VnMeasureResult *results, size_t n) {
  VnJson j;
  vn_json_init(&j, out);
  vn_json_begin_object(&j);
  vn_json_key(&j, "reference");
  vn_json_begin_object(&j);
  const VnMeasureResult *first = n > 0 ? &results[0] : NULL;
  key_string(&j, "path", first ? first->ref_path : opt->ref_path);
  key_double(&j, "rate_hz", first ? first->rate_hz : 0.0);
  key_int(&j, "frames", first ? (int64_t)first->ref_frames : 0);
  key_int(&j, "channels", first ? first->ref_channels : 0);
  key_int(&j, "clipped_samples", first ? (int64_t)first->ref_clipped : 0);
  vn_json_end_object(&j);
  write_settings(&j, opt);
  vn_json_key(&j, "targets");
  vn_json_begin_array(&j);
  for (size_t i = 0; i < n; ++i) {
    write_target(&j, opt, &results[i]);
  }
  vn_json_end_array(&j);
  vn_json_end_object(&j);
  vn_json_finish(&j);
}
