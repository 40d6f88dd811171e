// SPDX-License-Identifier: GPL-3.0-or-later
// Panel (a) of the picture: the correlation around its peak, where the
// offset is and, by the sign of the peak, which way up TARGET is.
#include <math.h>
#include <stdint.h>

#include "measure_plot.h"

void vn_plot_correlation(VnSvg *s, const VnMeasureResult *r) {
  VnSvgPanel p = vn_plot_panel(0);
  const VnMeasureCurves *c = &r->curves;
  const double ms_per_frame = 1e3 / r->rate_hz;
  vn_svg_title(s, &p, "(a) Cross-correlation as recorded, around its peak");
  if (!c->correlation || c->n_lags < 2) {
    p.x_lo = -1, p.x_hi = 1, p.y_lo = -1, p.y_hi = 1;
    vn_svg_axes(s, &p, 0.5, "TARGET later than REF by (ms)", "correlation");
    vn_svg_note(s, &p, "no correlation to show");
    return;
  }
  double peak = 0.0;
  uint32_t peak_index = 0;
  for (uint32_t i = 0; i < c->n_lags; ++i) {
    if (fabs(c->correlation[i]) > fabs(peak)) {
      peak = c->correlation[i], peak_index = i;
    }
  }
  // The scale is symmetric, so a negative peak (inverted) reads as such.
  const double step = fabs(peak) > 0.5 ? 0.25 : fabs(peak) > 0.2 ? 0.1 : 0.05;
  double range = ceil(fabs(peak) * 1.1 / step) * step;
  range = range > 1.0 ? 1.0 : range;
  p.x_lo = (double)c->first_lag * ms_per_frame;
  p.x_hi = (double)(c->first_lag + c->n_lags - 1) * ms_per_frame;
  p.y_lo = -range, p.y_hi = range;
  vn_svg_axes(s, &p, step, "TARGET later than REF by (ms)", "correlation");
  const double zero_px = vn_svg_y_px(&p, 0.0);
  vn_svg_printf(s,
                "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" "
                "stroke=\"#888\"/>\n",
                p.left_px, zero_px, p.left_px + p.width_px, zero_px);
  // Keep each stretch's extremes when there are more lags than points, so
  // that the peak survives.
  double x[2 * VN_PLOT_MAX_POINTS], y[2 * VN_PLOT_MAX_POINTS];
  size_t n = 0;
  const uint32_t per =
      (c->n_lags + VN_PLOT_MAX_POINTS - 1) / VN_PLOT_MAX_POINTS;
  for (uint32_t i = 0; i < c->n_lags; i += per) {
    uint32_t lo = i, hi = i;
    for (uint32_t k = i; k < i + per && k < c->n_lags; ++k) {
      lo = c->correlation[k] < c->correlation[lo] ? k : lo;
      hi = c->correlation[k] > c->correlation[hi] ? k : hi;
    }
    const uint32_t first = lo < hi ? lo : hi, second = lo < hi ? hi : lo;
    x[n] = (double)(c->first_lag + first) * ms_per_frame;
    y[n++] = c->correlation[first];
    if (second != first) {
      x[n] = (double)(c->first_lag + second) * ms_per_frame;
      y[n++] = c->correlation[second];
    }
  }
  const char *marker_style = "stroke=\"#222\" stroke-dasharray=\"4 3\"";
  if (r->status == VN_FOUND) {
    const double at_ms = r->offset_frames * ms_per_frame;
    const double at_px = vn_svg_x_px(&p, at_ms);
    double sigma_px =
        r->offset_sigma_frames * ms_per_frame * p.width_px / (p.x_hi - p.x_lo);
    sigma_px = isfinite(sigma_px) && sigma_px > 1.5 ? sigma_px : 1.5;
    vn_svg_printf(s,
                  "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"%.1f\" "
                  "%s/>\n<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" "
                  "y2=\"%.1f\" %s/>\n",
                  at_px - sigma_px, p.top_px, 2 * sigma_px, p.height_px,
                  VN_PLOT_SIGMA_FILL, at_px, p.top_px, at_px,
                  p.top_px + p.height_px, marker_style);
  }
  vn_svg_line(s, &p, x, y, n, 0.0, VN_PLOT_AFTER_STYLE);
  // The numbers beside the marker (the peak when nothing was found), on
  // the side of the zero line away from the peak, with a halo over the
  // curve.
  const double mark_ms =
      r->status == VN_FOUND
          ? r->offset_frames * ms_per_frame
          : (double)(c->first_lag + peak_index) * ms_per_frame;
  const double mark_px = vn_svg_x_px(&p, mark_ms);
  const bool to_left = mark_px > p.left_px + p.width_px * 0.6;
  const double text_x = mark_px + (to_left ? -8 : 8);
  const double first_y = peak < 0 ? p.top_px + 18 : p.top_px + p.height_px - 26;
  const char *anchor = to_left ? "end" : "start";
  const char *halo = "font-size=\"12\" fill=\"#222\" stroke=\"#fff\" "
                     "stroke-width=\"4\" paint-order=\"stroke\"";
  if (r->status == VN_FOUND) {
    vn_svg_printf(s,
                  "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"%s\" %s>"
                  "offset %+.4f \xC2\xB1 %.4f ms</text>\n",
                  text_x, first_y, anchor, halo, mark_ms,
                  r->offset_sigma_frames * ms_per_frame);
  }
  vn_svg_printf(s,
                "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"%s\" %s>"
                "peak r = %+.3f at %+.3f ms%s</text>\n",
                text_x, first_y + (r->status == VN_FOUND ? 16 : 0), anchor,
                halo, peak, (double)(c->first_lag + peak_index) * ms_per_frame,
                peak >= 0                            ? ""
                : r->status == VN_FOUND && r->invert ? " (negative: inverted)"
                                                     : " (negative)");
  const double x_px = vn_svg_legend(s, &p, p.left_px, VN_PLOT_AFTER_STYLE,
                                    "normalised cross-correlation");
  if (r->status == VN_FOUND) {
    vn_svg_legend(s, &p, x_px, marker_style,
                  "the offset found, \xC2\xB1 1 sigma shaded");
  }
}
