// SPDX-License-Identifier: GPL-3.0-or-later
// Just enough SVG, written by hand, for the picture of `vernier measure`:
// a plot area with linear or logarithmic axes, ticks and grid, lines that
// break where the data does, text made safe for XML.
#ifndef VERNIER_HOST_MEASURE_SVG_H
#define VERNIER_HOST_MEASURE_SVG_H

#include <stdbool.h>
#include <stddef.h>
#include <stdio.h>

#include "vernier.h"

typedef struct {
  FILE *out;
  bool ok; // false once any write failed
} VnSvg;

// A plot area: a pixel box and the data ranges it shows.
typedef struct {
  double left_px, top_px, width_px, height_px;
  double x_lo, x_hi;
  bool x_log; // a frequency axis
  double y_lo, y_hi;
  int clip_id; // distinct per panel: lines are clipped to the plot area
} VnSvgPanel;

void vn_svg_printf(VnSvg *s, const char *fmt, ...) VN_PRINTF(2, 3);
// text as XML character data: &, <, > and quotes escaped, control bytes
// dropped, bytes that are not UTF-8 (a Latin-1 file name) as U+FFFD.
void vn_svg_escaped(VnSvg *s, const char *text);

double vn_svg_x_px(const VnSvgPanel *p, double x);
double vn_svg_y_px(const VnSvgPanel *p, double y);

// The frame, grid, tick labels and axis labels, and the clip path of the
// plot area. x ticks: 1-2-5 per decade
// on a log axis, else at a round step; y ticks at y_step from y_lo.
void vn_svg_axes(VnSvg *s, const VnSvgPanel *p, double y_step,
                 const char *x_label, const char *y_label);
// The panel's title, above its top-left corner and its legend row.
void vn_svg_title(VnSvg *s, const VnSvgPanel *p, const char *title);

// A line through (x[i], y[i]), clipped to the plot area. It breaks at
// a non-finite y and, when break_jump > 0, where |y[i] - y[i-1]| exceeds it
// (a phase that wraps). style: the path's attributes.
void vn_svg_line(VnSvg *s, const VnSvgPanel *p, const double *x,
                 const double *y, size_t n, double break_jump,
                 const char *style);
// The area between y = y_base and the curve, for coherence behind a line.
void vn_svg_area(VnSvg *s, const VnSvgPanel *p, const double *x,
                 const double *y, size_t n, double y_base, const char *style);

// A line of grey text in the middle of the panel, for a panel with no data.
void vn_svg_note(VnSvg *s, const VnSvgPanel *p, const char *text);

// One legend entry, in a row between the panel's title and its top edge: a
// short line drawn with style, then the label. Starts at x_px; returns
// where the next entry goes.
double vn_svg_legend(VnSvg *s, const VnSvgPanel *p, double x_px,
                     const char *style, const char *label);

#endif
