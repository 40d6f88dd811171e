// SPDX-License-Identifier: GPL-3.0-or-later
// The report of `vernier measure` for a person: one block per target, the
// answer first (how late, which polarity, what angle), then what the
// correction does to the sum, how sure the measurement is, and the
// `vernier process` command that applies it. ASCII only, under 80 columns.
#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "measure.h"
#include "measure_report.h"
#include "text.h"
#include "time_value.h"

#define REPORT_WIDTH 78
#define MAX_STEP_WORDS 32

const VnSumFigures *vn_measure_best_figures(const VnMeasureResult *r) {
  return r->shape.fitted ? &r->shaped : &r->corrected;
}

int vn_measure_decimals(double sigma, int fallback) {
  if (!(sigma > 0.0) || !isfinite(sigma)) {
    return fallback;
  }
  const int d = (int)ceil(-log10(sigma)) + 1;
  return d < 0 ? 0 : d > 6 ? 6 : d;
}

// A value that prints as zero at these decimals prints as +0, not -0.
static double no_negative_zero(double v, int decimals) {
  return fabs(v) < 0.5 * pow(10.0, -decimals) ? 0.0 : v;
}

static void format_pm(char *buf, size_t size, double value, double sigma,
                      int fallback, const char *unit) {
  const int d = vn_measure_decimals(sigma, fallback);
  if (isfinite(sigma)) {
    snprintf(buf, size, "%+.*f +/- %.*f %s", d, no_negative_zero(value, d), d,
             sigma, unit);
  } else {
    snprintf(buf, size, "%+.*f %s", d, no_negative_zero(value, d), unit);
  }
}

static double frames_to_ms(const VnMeasureResult *r, double frames) {
  return frames / r->rate_hz * 1e3;
}

static double ms_to_cm(const VnMeasureOptions *opt, double ms) {
  return ms * 1e-3 * vn_speed_of_sound_m_s(opt->air_temp_c) * 1e2;
}

static const char *file_name(const char *path) {
  const char *slash = strrchr(path, '/');
  return slash ? slash + 1 : path;
}

// A word as the shell reads it back: bare when it is plainly safe, else in
// single quotes.
static void append_shell_word(VnText *t, const char *word) {
  const char *safe = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz"
                     "0123456789_./=+-:@,%";
  if (word[0] != '\0' && strspn(word, safe) == strlen(word)) {
    vn_text_append(t, "%s", word);
    return;
  }
  vn_text_append(t, "'");
  for (const char *p = word; *p; ++p) {
    vn_text_append(t, *p == '\'' ? "'\\''" : "%c", *p);
  }
  vn_text_append(t, "'");
}

// DIR/<stem>-aligned.<ext>, as --write names it; beside TARGET without it.
static void append_aligned_path(VnText *t, const VnMeasureOptions *opt,
                                const char *target_path) {
  const char *name = file_name(target_path);
  const char *dot = strrchr(name, '.');
  const int stem_length =
      (int)(dot && dot != name ? (size_t)(dot - name) : strlen(name));
  VnText path = {0};
  if (opt->write_dir) {
    const size_t n = strlen(opt->write_dir);
    vn_text_append(&path, "%s%s", opt->write_dir,
                   n > 0 && opt->write_dir[n - 1] == '/' ? "" : "/");
  } else {
    vn_text_append(&path, "%.*s", (int)(name - target_path), target_path);
  }
  vn_text_append(&path, "%.*s-aligned%s", stem_length, name,
                 dot && dot != name ? dot : "");
  append_shell_word(t, vn_text_get(&path));
  vn_text_free(&path);
}

// Prints words separated by spaces, breaking before a word that would pass
// the width, with a backslash so that the lines paste into a shell.
static void print_wrapped_command(FILE *out, const char *const *words,
                                  size_t n) {
  const char *indent = "    ";
  fputs(indent, out);
  size_t column = strlen(indent);
  for (size_t i = 0; i < n; ++i) {
    const size_t length = strlen(words[i]);
    if (i > 0 && column + 1 + length + 2 > REPORT_WIDTH) {
      fprintf(out, " \\\n%s  ", indent);
      column = strlen(indent) + 2;
    } else if (i > 0) {
      fputc(' ', out);
      ++column;
    }
    fputs(words[i], out);
    column += length;
  }
  fputc('\n', out);
}

static void print_command(FILE *out, const VnMeasureOptions *opt,
                          const VnMeasureResult *r) {
  char buf[1024];
  char *steps[MAX_STEP_WORDS];
  const size_t n_steps =
      vn_measure_correction_words(r, buf, sizeof buf, steps, MAX_STEP_WORDS);
  if (n_steps == 0) {
    return; // cannot happen with these sizes; no half a command
  }
  VnText target = {0}, aligned = {0};
  append_shell_word(&target, r->target_path);
  append_aligned_path(&aligned, opt, r->target_path);
  const char *words[MAX_STEP_WORDS + 4] = {
      "vernier", "process", vn_text_get(&target), vn_text_get(&aligned)};
  size_t n = 4;
  for (size_t i = 0; i < n_steps && i < MAX_STEP_WORDS; ++i) {
    words[n++] = steps[i];
  }
  fprintf(out, "  apply it%s:\n", opt->write_dir ? " (as --write did)" : "");
  print_wrapped_command(out, words, n);
  vn_text_free(&target);
  vn_text_free(&aligned);
}

static void print_offset(FILE *out, const VnMeasureOptions *opt,
                         const VnMeasureResult *r) {
  const double frames = r->offset_frames;
  char smp[64], ms[64], distance[64];
  const double sigma = r->offset_sigma_frames;
  format_pm(smp, sizeof smp, frames, sigma, 2, "samples");
  format_pm(ms, sizeof ms, frames_to_ms(r, frames), frames_to_ms(r, sigma), 4,
            "ms");
  // Metres once centimetres would need four digits.
  const double distance_cm = ms_to_cm(opt, frames_to_ms(r, frames));
  const double sigma_cm = ms_to_cm(opt, frames_to_ms(r, sigma));
  if (fabs(distance_cm) >= 1000.0) {
    format_pm(distance, sizeof distance, distance_cm / 100.0, sigma_cm / 100.0,
              3, "m");
  } else {
    format_pm(distance, sizeof distance, distance_cm, sigma_cm, 2, "cm");
  }
  fprintf(out, "  %-12s%s = %s\n", "offset", smp, ms);
  // Within two standard deviations of 0 the sign says nothing.
  const bool in_time =
      fabs(frames) <= 2.0 * sigma ||
      no_negative_zero(frames, vn_measure_decimals(sigma, 2)) == 0.0;
  fprintf(out, "  %-12s= %s of air at %g C; %s\n", "", distance,
          opt->air_temp_c,
          in_time      ? "in time"
          : frames > 0 ? "TARGET arrives late"
                       : "TARGET arrives early");
}

static void print_angle(FILE *out, const VnMeasureResult *r) {
  fprintf(out, "  %-12s%s\n", "polarity", r->invert ? "inverted" : "as is");
  int d = vn_measure_decimals(r->theta_sigma_deg, 1);
  d = d < 1 ? 1 : d > 3 ? 3 : d;
  fprintf(out, "  %-12s%+.*f +/- %.*f deg (TARGET turned from REF)\n", "angle",
          d, no_negative_zero(r->theta_deg, d), d, r->theta_sigma_deg);
}

static void print_allpass(FILE *out, const VnMeasureOptions *opt,
                          const VnMeasureResult *r) {
  if (!opt->shape) {
    return;
  }
  const VnShapeFit *s = &r->shape;
  if (!s->fitted) {
    fprintf(out, "  %-12snone fitted: the constant angle does as well\n",
            "all-pass");
    return;
  }
  fprintf(out, "  %-12s%.4g Hz, q %.3g, %d %s of order %d; refitted with it:\n",
          "all-pass", s->frequency_hz, s->q, s->stages,
          s->stages == 1 ? "stage" : "stages", s->order);
  fprintf(out, "  %-12soffset %+.*f samples (%+.4f ms), angle %+.1f deg\n", "",
          vn_measure_decimals(r->offset_sigma_frames, 2), s->offset_frames,
          frames_to_ms(r, s->offset_frames), s->theta_deg);
}

// What to dial in, in the order the Align Strip applies it.
static void print_correction(FILE *out, const VnMeasureResult *r) {
  const VnMeasureCorrection c = vn_measure_correction(r);
  fprintf(out, "  %-12s%sdelay %+.4f ms, rotate %+.1f deg%s\n", "correction",
          c.invert ? "invert, " : "",
          no_negative_zero(frames_to_ms(r, c.delay_frames), 4),
          no_negative_zero(c.angle_deg, 1),
          r->shape.fitted ? ", the all-pass" : "");
}

static void add_figures_row(VnTable *t, const char *name,
                            const VnSumFigures *f) {
  char corr[32], low[32], full[32];
  snprintf(corr, sizeof corr, "%+11.3f", f->correlation);
  snprintf(low, sizeof low, "%+8.1f dB", f->low_db);
  snprintf(full, sizeof full, "%+8.1f dB", f->full_db);
  const char *cells[] = {name, corr, low, full};
  vn_table_add(t, cells);
}

static void print_figures(FILE *out, const VnMeasureOptions *opt,
                          const VnMeasureResult *r) {
  char low_head[48];
  snprintf(low_head, sizeof low_head, "%g-%g Hz", opt->low_lo_hz,
           opt->low_hi_hz);
  char low_col[48];
  snprintf(low_col, sizeof low_col, "%11s", low_head);
  VnTable t;
  vn_table_init(&t, 4);
  const char *head[] = {"REF + TARGET", "correlation", low_col, "  full band"};
  vn_table_add(&t, head);
  add_figures_row(&t, "as recorded", &r->as_recorded);
  add_figures_row(&t, "polarity only", &r->polarity_only);
  add_figures_row(&t, "offset only", &r->offset_only);
  add_figures_row(&t, "corrected", &r->corrected);
  if (r->shape.fitted) {
    add_figures_row(&t, "shaped", &r->shaped);
  }
  fputc('\n', out);
  vn_table_print(&t, out, "  ");
  vn_table_free(&t);
  const VnSumFigures *best = vn_measure_best_figures(r);
  char first[96], second[64];
  snprintf(first, sizeof first, "gain in %s: %+.1f dB over polarity alone,",
           low_head, best->low_db - r->polarity_only.low_db);
  snprintf(second, sizeof second, "%+.1f dB over offset alone",
           best->low_db - r->offset_only.low_db);
  const bool one_line = 2 + strlen(first) + 1 + strlen(second) <= REPORT_WIDTH;
  fprintf(out, "  %s%s%s\n", first, one_line ? " " : "\n  ", second);
}

static void print_confidence(FILE *out, const VnMeasureResult *r) {
  fprintf(out,
          "  %-12speak %.1f dB above the floor, coherence %.3f\n"
          "  %-12s(unrelated files: %.3f) over %" PRIu64 " segments\n",
          "confidence", r->peak_db, r->coherence, "", r->chance_coherence,
          r->segments);
}

static void print_not_found(FILE *out, const VnMeasureOptions *opt,
                            const VnMeasureResult *r) {
  const double outside_ms = frames_to_ms(r, (double)r->outside_frames);
  if (r->status == VN_NOT_FOUND_AT_EDGE && r->outside_frames != 0) {
    fprintf(out,
            "  no reliable offset found: a stronger peak lies at %+.2f ms,\n"
            "  beyond the search range of -%g .. +%g ms\n",
            outside_ms, opt->max_offset_ms, opt->max_offset_ms);
  } else if (r->status == VN_NOT_FOUND_AT_EDGE) {
    fprintf(out,
            "  no reliable offset found: the peak lies at the edge of the "
            "search\n  range, -%g .. +%g ms\n",
            opt->max_offset_ms, opt->max_offset_ms);
  } else {
    fprintf(out, "  no reliable offset found: the two files share too "
                 "little content\n");
  }
  print_confidence(out, r);
  if (r->status != VN_NOT_FOUND_AT_EDGE) {
    fprintf(out,
            "  %-12scheck that both files hold the same take and overlap in\n"
            "  %-12stime; if one path carries only part of the spectrum, fit\n"
            "  %-12son that part with --band (now %g-%g Hz)\n",
            "what to do", "", "", opt->band_lo_hz, opt->band_hi_hz);
  } else if (opt->max_offset_ms < VN_MEASURE_MAX_OFFSET_MAX_MS) {
    // Twice the range, or a quarter beyond the peak seen out there, in
    // whole 10 ms.
    const double beyond_ms = ceil(1.25 * fabs(outside_ms) / 10.0) * 10.0;
    const double wider_ms = fmin(fmax(2.0 * opt->max_offset_ms, beyond_ms),
                                 VN_MEASURE_MAX_OFFSET_MAX_MS);
    fprintf(out, "  %-12swiden the search: --max-offset %gms\n", "what to do",
            wider_ms);
  } else {
    fprintf(out,
            "  %-12sthe search goes no further than +/-%g ms: the files may\n"
            "  %-12shold different takes; trim them to start together\n",
            "what to do", VN_MEASURE_MAX_OFFSET_MAX_MS, "");
  }
}

// "mono", "2 channels mixed to mono", "channel 2 of 4".
static void describe_channels(char *buf, size_t size,
                              const VnMeasureOptions *opt, int channels) {
  if (channels == 1) {
    snprintf(buf, size, "mono");
  } else if (opt->channel == VN_MEASURE_CHANNEL_MIX) {
    snprintf(buf, size, "%d channels mixed to mono", channels);
  } else {
    snprintf(buf, size, "channel %d of %d", opt->channel + 1, channels);
  }
}

static void print_file(FILE *out, const VnMeasureOptions *opt, const char *role,
                       const char *path, uint64_t frames, int channels,
                       double rate_hz, uint64_t clipped) {
  char layout[64];
  describe_channels(layout, sizeof layout, opt, channels);
  fprintf(out, "%s %s\n", role, path);
  fprintf(out, "  %" PRIu64 " frames (%.1f s) at %g Hz, %s\n", frames,
          (double)frames / rate_hz, rate_hz, layout);
  if (clipped > 0) {
    fprintf(out,
            "  clipped: %" PRIu64 " %s at full scale; the figures may "
            "be off\n",
            clipped, clipped == 1 ? "sample" : "samples");
  }
}

static void print_target(FILE *out, const VnMeasureOptions *opt,
                         const VnMeasureResult *r) {
  fputc('\n', out);
  print_file(out, opt, "TARGET", r->target_path, r->target_frames,
             r->target_channels, r->rate_hz, r->target_clipped);
  fputc('\n', out);
  if (r->status != VN_FOUND) {
    print_not_found(out, opt, r);
    return;
  }
  print_offset(out, opt, r);
  print_angle(out, r);
  print_allpass(out, opt, r);
  print_correction(out, r);
  print_figures(out, opt, r);
  fputc('\n', out);
  print_confidence(out, r);
  fputc('\n', out);
  print_command(out, opt, r);
}

void vn_measure_report_text(FILE *out, const VnMeasureOptions *opt,
                            const VnMeasureResult *results, size_t n) {
  if (n == 0) {
    return;
  }
  const VnMeasureResult *first = &results[0];
  print_file(out, opt, "REF", first->ref_path, first->ref_frames,
             first->ref_channels, first->rate_hz, first->ref_clipped);
  fprintf(out, "  searched -%g .. +%g ms, fitted on %g-%g Hz%s\n",
          opt->max_offset_ms, opt->max_offset_ms, opt->band_lo_hz,
          opt->band_hi_hz, opt->shape ? ", with an all-pass" : "");
  bool any_found = false;
  for (size_t i = 0; i < n; ++i) {
    print_target(out, opt, &results[i]);
    any_found = any_found || results[i].status == VN_FOUND;
  }
  if (any_found) {
    fputs("\nBefore listening, lower the monitors: the corrected sum can be up "
          "to 6 dB\nlouder than the louder path alone, and louder still than "
          "the sum as recorded.\n",
          out);
  }
}
