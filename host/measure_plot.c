// SPDX-License-Identifier: GPL-3.0-or-later
// The picture of one measurement, three panels stacked: the correlation
// around its peak (where the offset is), the phase of TARGET against REF
// before and after the correction with the coherence behind it (where the
// fit could trust the data), and the level of the sum before and after
// beside REF alone (where the two paths cancelled and whether they now add).
#include <math.h>
#include <stdint.h>
#include <string.h>

#include "measure.h"
#include "measure_plot.h"
#include "measure_report.h"
#include "measure_svg.h"
#include "time_value.h"

#define WIDTH_PX 820
#define HEIGHT_PX 1106
#define PLOT_LEFT_PX 78
#define PLOT_WIDTH_PX 672
#define PANEL_HEIGHT_PX 220
// Coherence 0.5 is a signal-to-noise ratio of 1 (g2 / (1 - g2)).
#define FAINT_BELOW_COHERENCE 0.5
// 1/6 octave: the window spans 2^(+-1/12) around each point.
#define SMOOTH_HALF_OCTAVES (1.0 / 12.0)

VnSvgPanel vn_plot_panel(int index) {
  return (VnSvgPanel){
      .left_px = PLOT_LEFT_PX,
      .top_px = 172 + index * (PANEL_HEIGHT_PX + 100),
      .width_px = PLOT_WIDTH_PX,
      .height_px = PANEL_HEIGHT_PX,
      .clip_id = index,
  };
}

static const char *file_name(const char *path) {
  const char *slash = strrchr(path, '/');
  return slash ? slash + 1 : path;
}

static double bin_hz(const VnMeasureResult *r, uint32_t k) {
  return (double)k * r->rate_hz / r->curves.n_fft;
}

static bool has_spectra(const VnMeasureResult *r) {
  const VnMeasureCurves *c = &r->curves;
  return c->n_fft > 0 && c->hi_bin > c->lo_bin && c->coherence &&
         c->phase_before_deg && c->phase_after_deg && c->sum_before_db &&
         c->sum_after_db && c->ref_db;
}

// ------------------------------------------------ (b), (c) over frequency --

typedef struct {
  size_t n;
  double hz[VN_PLOT_MAX_POINTS];
  uint32_t bin[VN_PLOT_MAX_POINTS]; // the nearest bin of each point
} FrequencyPoints;

// Log-spaced points over the panel, at most one per bin.
static void frequency_points(const VnMeasureResult *r, const VnSvgPanel *p,
                             FrequencyPoints *f) {
  const VnMeasureCurves *c = &r->curves;
  f->n = 0;
  for (int i = 0; i < VN_PLOT_MAX_POINTS; ++i) {
    const double hz =
        p->x_lo * pow(p->x_hi / p->x_lo, i / (VN_PLOT_MAX_POINTS - 1.0));
    double k = round(hz * c->n_fft / r->rate_hz);
    k = k < c->lo_bin ? c->lo_bin : k > c->hi_bin ? c->hi_bin : k;
    const uint32_t bin = (uint32_t)k;
    if (f->n > 0 && f->bin[f->n - 1] == bin) {
      continue;
    }
    f->hz[f->n] = bin_hz(r, bin);
    f->bin[f->n++] = bin;
  }
}

static void pick(const VnMeasureCurves *c, const double *per_bin,
                 const FrequencyPoints *f, double *out) {
  for (size_t i = 0; i < f->n; ++i) {
    out[i] = per_bin[f->bin[i] - c->lo_bin];
  }
}

// The power mean over 1/6 octave around each point, for a level that reads
// as heard rather than as the comb of single bins.
static void smooth(const VnMeasureResult *r, const double *db,
                   const FrequencyPoints *f, double *out) {
  const VnMeasureCurves *c = &r->curves;
  const double bins_per_hz = c->n_fft / r->rate_hz;
  for (size_t i = 0; i < f->n; ++i) {
    double lo = floor(f->hz[i] * pow(2.0, -SMOOTH_HALF_OCTAVES) * bins_per_hz);
    double hi = ceil(f->hz[i] * pow(2.0, SMOOTH_HALF_OCTAVES) * bins_per_hz);
    lo = lo < c->lo_bin ? c->lo_bin : lo;
    hi = hi > c->hi_bin ? c->hi_bin : hi;
    double sum = 0.0;
    int count = 0;
    for (uint32_t k = (uint32_t)lo; k <= (uint32_t)hi; ++k) {
      const double v = db[k - c->lo_bin];
      if (isfinite(v)) {
        sum += pow(10.0, v / 10.0), ++count;
      }
    }
    out[i] = count > 0 && sum > 0 ? 10.0 * log10(sum / count) : NAN;
  }
}

static VnSvgPanel frequency_panel(int index, const VnMeasureOptions *opt) {
  VnSvgPanel p = vn_plot_panel(index);
  p.x_log = true;
  p.x_lo = opt->band_lo_hz > 1.0 ? opt->band_lo_hz : 1.0;
  p.x_hi = opt->band_hi_hz > p.x_lo ? opt->band_hi_hz : p.x_lo * 10;
  return p;
}

// A phase curve, faint where the coherence says its bins are mostly noise.
static void draw_phase(VnSvg *s, const VnSvgPanel *p, const VnMeasureResult *r,
                       const FrequencyPoints *f, const double *per_bin,
                       const char *style) {
  double y[VN_PLOT_MAX_POINTS], coherence[VN_PLOT_MAX_POINTS];
  pick(&r->curves, per_bin, f, y);
  pick(&r->curves, r->curves.coherence, f, coherence);
  char faint[128];
  snprintf(faint, sizeof faint, "%s stroke-opacity=\"0.3\"", style);
  vn_svg_line(s, p, f->hz, y, f->n, 180.0, faint);
  for (size_t i = 0; i < f->n; ++i) {
    y[i] = coherence[i] >= FAINT_BELOW_COHERENCE ? y[i] : NAN;
  }
  vn_svg_line(s, p, f->hz, y, f->n, 180.0, style);
}

static void plot_phase(VnSvg *s, const VnMeasureOptions *opt,
                       const VnMeasureResult *r) {
  VnSvgPanel p = frequency_panel(1, opt);
  p.y_lo = -180, p.y_hi = 180;
  vn_svg_title(s, &p, "(b) Phase of TARGET relative to REF");
  vn_svg_axes(s, &p, 90, "frequency (Hz)", "phase (degrees)");
  if (!has_spectra(r)) {
    vn_svg_note(s, &p, "no spectra to show");
    return;
  }
  FrequencyPoints f;
  frequency_points(r, &p, &f);
  double y[VN_PLOT_MAX_POINTS];
  // Coherence on the same box, 0 .. 1 bottom to top (the right-hand axis).
  pick(&r->curves, r->curves.coherence, &f, y);
  for (size_t i = 0; i < f.n; ++i) {
    y[i] = -180.0 + 360.0 * y[i];
  }
  vn_svg_area(s, &p, f.hz, y, f.n, -180.0, VN_PLOT_COHERENCE_FILL);
  const double right = p.left_px + p.width_px;
  for (int i = 0; i <= 4; ++i) {
    vn_svg_printf(s,
                  "<text x=\"%.1f\" y=\"%.1f\" font-size=\"11\" "
                  "fill=\"#007A5A\">%g</text>\n",
                  right + 6, vn_svg_y_px(&p, -180.0 + 90.0 * i) + 4, 0.25 * i);
  }
  vn_svg_printf(s,
                "<text transform=\"translate(%.1f %.1f) rotate(90)\" "
                "text-anchor=\"middle\" font-size=\"12\" fill=\"#007A5A\">"
                "coherence</text>\n",
                right + 44, p.top_px + p.height_px / 2);
  draw_phase(s, &p, r, &f, r->curves.phase_before_deg, VN_PLOT_BEFORE_STYLE);
  double x_px =
      vn_svg_legend(s, &p, p.left_px, VN_PLOT_BEFORE_STYLE, "as recorded");
  // Nothing found, nothing corrected: the residual would mean nothing.
  if (r->status == VN_FOUND) {
    draw_phase(s, &p, r, &f, r->curves.phase_after_deg, VN_PLOT_AFTER_STYLE);
    x_px = vn_svg_legend(s, &p, x_px, VN_PLOT_AFTER_STYLE, "corrected");
  }
  vn_svg_legend(s, &p, x_px, VN_PLOT_COHERENCE_SWATCH,
                "coherence (right axis; lines faint below 0.5)");
}

static void plot_sum(VnSvg *s, const VnMeasureOptions *opt,
                     const VnMeasureResult *r) {
  VnSvgPanel p = frequency_panel(2, opt);
  const char *title = "(c) Level of REF + TARGET, 1/6-octave smoothed";
  if (!has_spectra(r)) {
    p.y_lo = -60, p.y_hi = 0;
    vn_svg_title(s, &p, title);
    vn_svg_axes(s, &p, 10, "frequency (Hz)", "level (dB)");
    vn_svg_note(s, &p, "no spectra to show");
    return;
  }
  FrequencyPoints f;
  frequency_points(r, &p, &f);
  double before[VN_PLOT_MAX_POINTS], after[VN_PLOT_MAX_POINTS],
      ref[VN_PLOT_MAX_POINTS];
  smooth(r, r->curves.sum_before_db, &f, before);
  smooth(r, r->curves.sum_after_db, &f, after);
  smooth(r, r->curves.ref_db, &f, ref);
  double top = -INFINITY, bottom = INFINITY;
  for (size_t i = 0; i < f.n; ++i) {
    const double v[] = {before[i], after[i], ref[i]};
    for (int k = 0; k < 3; ++k) {
      top = isfinite(v[k]) && v[k] > top ? v[k] : top;
      bottom = isfinite(v[k]) && v[k] < bottom ? v[k] : bottom;
    }
  }
  if (!isfinite(top)) {
    top = 0.0, bottom = -60.0;
  }
  // Deep notches are cut off 80 dB below the top, where they stop telling
  // anything.
  p.y_hi = ceil((top + 3.0) / 10.0) * 10.0;
  p.y_lo = floor(bottom / 10.0) * 10.0;
  p.y_lo = p.y_lo < p.y_hi - 80.0 ? p.y_hi - 80.0 : p.y_lo;
  p.y_lo = p.y_lo > p.y_hi - 30.0 ? p.y_hi - 30.0 : p.y_lo;
  vn_svg_title(s, &p, title);
  vn_svg_axes(s, &p, 10, "frequency (Hz)", "level (dB)");
  const double lo_px = vn_svg_x_px(&p, fmax(opt->low_lo_hz, p.x_lo));
  const double hi_px = vn_svg_x_px(&p, fmin(opt->low_hi_hz, p.x_hi));
  if (hi_px > lo_px) {
    vn_svg_printf(s,
                  "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"%.1f\" "
                  "fill=\"#000\" fill-opacity=\"0.05\"/>\n"
                  "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"middle\" "
                  "font-size=\"11\" fill=\"#555\">low band, %g\xE2\x80\x93%g Hz"
                  "</text>\n",
                  lo_px, p.top_px, hi_px - lo_px, p.height_px,
                  (lo_px + hi_px) / 2, p.top_px + p.height_px - 6,
                  opt->low_lo_hz, opt->low_hi_hz);
  }
  vn_svg_line(s, &p, f.hz, ref, f.n, 0.0, VN_PLOT_REF_STYLE);
  vn_svg_line(s, &p, f.hz, before, f.n, 0.0, VN_PLOT_BEFORE_STYLE);
  double x_px =
      vn_svg_legend(s, &p, p.left_px, VN_PLOT_BEFORE_STYLE, "as recorded");
  if (r->status == VN_FOUND) {
    vn_svg_line(s, &p, f.hz, after, f.n, 0.0, VN_PLOT_AFTER_STYLE);
    x_px = vn_svg_legend(s, &p, x_px, VN_PLOT_AFTER_STYLE, "corrected");
  }
  vn_svg_legend(s, &p, x_px, VN_PLOT_REF_STYLE,
                "REF alone (a sum below it is cancelling)");
}

// ------------------------------------------------------------ the words --

static void header_line(VnSvg *s, double y, const char *attributes,
                        const char *text) {
  vn_svg_printf(s, "<text x=\"24\" y=\"%.1f\" %s>", y, attributes);
  vn_svg_escaped(s, text);
  vn_svg_printf(s, "</text>\n");
}

static void header(VnSvg *s, const VnMeasureOptions *opt,
                   const VnMeasureResult *r) {
  char line[512];
  snprintf(line, sizeof line, "TARGET %s against REF %s",
           file_name(r->target_path), file_name(r->ref_path));
  header_line(s, 30, "font-size=\"18\" font-weight=\"bold\" fill=\"#111\"",
              line);
  const char *plain = "font-size=\"13\" fill=\"#222\"";
  const double ms_per_frame = 1e3 / r->rate_hz;
  double stats_y = 94;
  if (r->status == VN_FOUND) {
    const double ms = r->offset_frames * ms_per_frame;
    const double cm = ms * vn_speed_of_sound_m_s(opt->air_temp_c) * 0.1;
    snprintf(line, sizeof line,
             "offset %+.3f \xC2\xB1 %.3f samples = %+.4f ms = %+.2f cm of "
             "air at %g \xC2\xB0"
             "C (TARGET %s)",
             r->offset_frames, r->offset_sigma_frames, ms, cm, opt->air_temp_c,
             r->offset_frames >= 0 ? "late" : "early");
    header_line(s, 54, plain, line);
    const VnMeasureCorrection c = vn_measure_correction(r);
    int d = vn_measure_decimals(r->theta_sigma_deg, 1);
    d = d < 1 ? 1 : d > 3 ? 3 : d;
    snprintf(line, sizeof line,
             "polarity %s, angle %+.*f \xC2\xB1 %.*f\xC2\xB0  \xE2\x86\x92  "
             "correction: %sdelay %+.4f ms, rotate %+.1f\xC2\xB0%s",
             r->invert ? "inverted" : "as is", d, r->theta_deg, d,
             r->theta_sigma_deg, c.invert ? "invert, " : "",
             c.delay_frames * ms_per_frame, c.angle_deg,
             r->shape.fitted ? ", all-pass" : "");
    header_line(s, 74, plain, line);
    if (r->shape.fitted) {
      snprintf(line, sizeof line,
               "all-pass %.4g Hz, q %.3g, %d \xC3\x97 order %d; refitted "
               "with it: offset %+.4f ms, angle %+.1f\xC2\xB0",
               r->shape.frequency_hz, r->shape.q, r->shape.stages,
               r->shape.order, r->shape.offset_frames * ms_per_frame,
               r->shape.theta_deg);
      header_line(s, 94, plain, line);
      stats_y = 112;
    }
  } else {
    if (r->status == VN_NOT_FOUND_AT_EDGE && r->outside_frames != 0) {
      snprintf(line, sizeof line,
               "no reliable offset found: a stronger peak lies at %+.2f ms, "
               "beyond the search range of \xC2\xB1%g ms",
               (double)r->outside_frames * ms_per_frame, opt->max_offset_ms);
    } else {
      snprintf(line, sizeof line, "no reliable offset found: %s",
               r->status == VN_NOT_FOUND_AT_EDGE
                   ? "the peak lies at the edge of the search range"
                   : "the two files share too little content");
    }
    header_line(s, 54, "font-size=\"13\" font-weight=\"bold\" fill=\"#B04000\"",
                line);
    header_line(s, 74, plain,
                r->status == VN_NOT_FOUND_AT_EDGE
                    ? "widen the search with --max-offset"
                    : "check that both files hold the same take, or fit on "
                      "a narrower --band");
  }
  snprintf(line, sizeof line,
           "%g Hz, fitted on %g\xE2\x80\x93%g Hz; coherence %.3f (chance "
           "%.3f), peak %.1f dB above the floor, %llu segments",
           r->rate_hz, opt->band_lo_hz, opt->band_hi_hz, r->coherence,
           r->chance_coherence, r->peak_db, (unsigned long long)r->segments);
  header_line(s, stats_y, "font-size=\"12\" fill=\"#555\"", line);
}

static void footer(VnSvg *s, const VnMeasureResult *r) {
  const char *small = "font-size=\"11\" fill=\"#666\"";
  vn_svg_printf(s, "<text x=\"24\" y=\"%d\" %s>REF: ", HEIGHT_PX - 26, small);
  vn_svg_escaped(s, r->ref_path);
  vn_svg_printf(
      s, "</text>\n<text x=\"24\" y=\"%d\" %s>TARGET: ", HEIGHT_PX - 10, small);
  vn_svg_escaped(s, r->target_path);
  vn_svg_printf(s, "</text>\n");
}

bool vn_measure_plot_svg(FILE *out, const VnMeasureOptions *opt,
                         const VnMeasureResult *r) {
  VnSvg s = {.out = out, .ok = true};
  vn_svg_printf(&s,
                "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
                "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"%d\" "
                "height=\"%d\" viewBox=\"0 0 %d %d\" "
                "font-family=\"DejaVu Sans, Helvetica, Arial, sans-serif\">\n"
                "<title>",
                WIDTH_PX, HEIGHT_PX, WIDTH_PX, HEIGHT_PX);
  vn_svg_escaped(&s, file_name(r->target_path));
  vn_svg_printf(&s, " against ");
  vn_svg_escaped(&s, file_name(r->ref_path));
  vn_svg_printf(&s, "</title>\n<rect width=\"100%%\" height=\"100%%\" "
                    "fill=\"#f7f7f4\"/>\n");
  header(&s, opt, r);
  vn_plot_correlation(&s, r);
  plot_phase(&s, opt, r);
  plot_sum(&s, opt, r);
  footer(&s, r);
  vn_svg_printf(&s, "</svg>\n");
  return s.ok && !ferror(out);
}
