// SPDX-License-Identifier: GPL-3.0-or-later
// What the parts of `vernier measure` share and nobody else needs: the
// mono reader (measure_read.c), the Welch accumulators (measure_spectra.c)
// and the fits (measure_fit.c, measure_shape.c).
#ifndef VERNIER_HOST_MEASURE_INTERNAL_H
#define VERNIER_HOST_MEASURE_INTERNAL_H

// <complex.h> before <fftw3.h>: fftw_complex is then C99's double complex.
#include <complex.h>
#include <fftw3.h>
#include <stdbool.h>
#include <stdint.h>

#include "audio_file.h"
#include "measure.h"

// ---------------------------------------------------------------- reader --

// One file as a mono stream of doubles: one channel, or all mixed (their
// mean, so a mono source recorded on both channels keeps its level).
typedef struct {
  VnInput in;
  int channel; // 0-based, or VN_MEASURE_CHANNEL_MIX
  int channels;
  uint64_t frames;
  float *chunk;        // interleaved, in.max_frames frames
  uint64_t pos;        // the frame the next sequential read returns
  bool count;          // count clipping and the peak while true
  uint64_t counted_to; // frames before this are in clipped and peak
  uint64_t clipped;
  double peak;
} VnMonoReader;

// Exit 3 with the error printed (unreadable, no frames, no such channel).
int vn_mono_open(VnMonoReader *m, const char *path, int channel);
// n mono frames from frame start into dst; past the end, zeros. Seeks when
// start is not where the last read ended. Exit 3 on a read error.
int vn_mono_read_at(VnMonoReader *m, uint64_t start, double *dst, size_t n);
// Reads on to frame end (or the file's end) for the counts only.
int vn_mono_scan_to(VnMonoReader *m, uint64_t end);
void vn_mono_close(VnMonoReader *m);

// ------------------------------------------------------------- spectra ----

// Welch's method (Welch, IEEE Trans. Audio Electroacoustics, 1967): sums
// of auto- and cross-spectra of windowed segments, kept in groups of
// consecutive segments so that a jackknife can leave one group out.
// The cross-spectrum is conj(REF) x TARGET, so a TARGET that lags by D
// frames gives a phase of -2 pi k D / n_fft at bin k.
typedef struct {
  uint32_t n_fft, n_bins, n_groups;
  double *window;        // periodic Hann
  double *seg_r, *seg_x; // the segment as read, n_fft each
  double *buf;           // windowed, the FFT's input
  double complex *fr, *fx;
  fftw_plan plan;
  double *srr, *sxx;   // [group][bin]
  double complex *srx; // [group][bin]
  uint64_t *group_segments;
  uint64_t n_segments;
} VnSpectra;

// Sums over every group but skip (-1: all), each array n_bins long.
typedef struct {
  uint32_t n_fft, n_bins;
  double *srr, *sxx;
  double complex *srx;
  uint64_t n_segments;
} VnTotals;

int vn_spectra_init(VnSpectra *s, uint32_t n_fft, uint32_t n_groups);
void vn_spectra_free(VnSpectra *s);
// Windows seg_r and seg_x, transforms them and adds them to group g.
void vn_spectra_add(VnSpectra *s, uint32_t group);
bool vn_totals_init(VnTotals *t, uint32_t n_fft);
void vn_totals_sum(VnTotals *t, const VnSpectra *s, int skip);
void vn_totals_free(VnTotals *t);

// ------------------------------------------------------------------ fits --

// The band a fit uses, in bins: lo .. hi inclusive.
typedef struct {
  uint32_t lo, hi;
} VnBins;

VnBins vn_bins_for(double lo_hz, double hi_hz, double rate_hz, uint32_t n_fft);

typedef struct {
  int64_t lag_frames;   // whole frames, TARGET late > 0
  double peak_db;       // peak above the floor of the search window
  uint32_t lobe_frames; // half-width of the peak's main lobe
  bool at_edge;         // the best lag lies at the edge of the range
  int64_t outside_lag;  // a stronger peak beyond the range, or 0
} VnCoarse;

// Generalized cross-correlation of totals t over band b within
// -max_lag .. max_lag frames. false when out of memory.
bool vn_fit_coarse(const VnTotals *t, VnBins b, int64_t max_lag, VnCoarse *c);

// The fraction (and whole frames) left after the coarse shift, within
// -radius .. radius frames of centre, and the angle theta there.
void vn_fit_fine(const VnTotals *t, VnBins b, double centre, double radius,
                 double *offset_frames, double *theta_deg);

// The correction's response at bin k of the pair's n_fft: TARGET moved
// by -offset frames, rotated by -theta (and through the all-pass).
typedef struct {
  double offset_frames; // after the coarse shift the spectra were taken at
  double theta_deg;
  const VnShapeFit *shape; // NULL or not fitted: none
  double rate_hz;
} VnCorrection;

double complex vn_correction_at(const VnCorrection *c, uint32_t k,
                                uint32_t n_fft);
// The all-pass's response at w = 2 pi f / rate (radians per frame).
double complex vn_allpass_response(const VnShapeFit *s, double w,
                                   double rate_hz);

// REF + corrected TARGET from totals t (c NULL: as the totals are).
void vn_fit_figures(const VnTotals *t, const VnCorrection *c, VnBins low,
                    VnSumFigures *f, double *low_power, double *full_power);

// Every state of r's figures: t1 the pass as recorded, t2 the pass moved
// by r->coarse_frames, d the fraction left after it.
void vn_fit_all_figures(const VnTotals *t1, const VnTotals *t2, VnBins low,
                        double d, VnMeasureResult *r);

// --shape: fits r->shape from the aligned totals.
void vn_fit_shape(const VnTotals *t, VnBins b, double rate_hz, int64_t max_lag,
                  double offset_frames, VnShapeFit *shape);

// The result's curves (measure_curves.c): t1 as recorded, t2 moved by
// lag whole frames, best the correction found. false when out of memory.
bool vn_measure_curves(const VnTotals *t1, const VnTotals *t2, VnBins band,
                       const VnCorrection *best, int64_t lag, uint32_t lobe,
                       int64_t max_lag, VnMeasureCurves *c);

#endif
