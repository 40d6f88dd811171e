// SPDX-License-Identifier: GPL-3.0-or-later
// What the text report, the JSON and the picture share.
#ifndef VERNIER_HOST_MEASURE_REPORT_H
#define VERNIER_HOST_MEASURE_REPORT_H

#include "measure.h"

// The figures of the sum with the correction applied: shaped when the
// all-pass was fitted.
const VnSumFigures *vn_measure_best_figures(const VnMeasureResult *r);

// Decimals enough that an uncertainty shows two significant digits
// (fallback when sigma is not a positive number), 0 to 6.
int vn_measure_decimals(double sigma, int fallback);

#endif
