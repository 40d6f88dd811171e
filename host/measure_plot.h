// SPDX-License-Identifier: GPL-3.0-or-later
// What the panels of the picture (measure_plot.c, measure_plot_lag.c)
// share: the layout and the colours.
//
// Colours from the Okabe-Ito palette (Okabe and Ito, "Color Universal
// Design", 2008), which stays distinct for the common colour-vision
// deficiencies: vermillion before, blue after, bluish green coherence.
#ifndef VERNIER_HOST_MEASURE_PLOT_H
#define VERNIER_HOST_MEASURE_PLOT_H

#include "measure.h"
#include "measure_svg.h"

#define VN_PLOT_MAX_POINTS 600 // per line: the file stays small

#define VN_PLOT_BEFORE_STYLE "stroke=\"#D55E00\" stroke-width=\"1.3\""
#define VN_PLOT_AFTER_STYLE "stroke=\"#0072B2\" stroke-width=\"1.8\""
#define VN_PLOT_REF_STYLE                                                      \
  "stroke=\"#444\" stroke-width=\"1.2\" stroke-dasharray=\"6 3\""
#define VN_PLOT_COHERENCE_FILL "fill=\"#009E73\" fill-opacity=\"0.22\""
#define VN_PLOT_COHERENCE_SWATCH                                               \
  "stroke=\"#009E73\" stroke-opacity=\"0.35\" stroke-width=\"9\""
#define VN_PLOT_SIGMA_FILL "fill=\"#E69F00\" fill-opacity=\"0.45\""

// Panel 0, 1 or 2 from the top.
VnSvgPanel vn_plot_panel(int index);

// (a): the plain cross-correlation around its peak, the offset marked.
void vn_plot_correlation(VnSvg *s, const VnMeasureResult *r);

#endif
