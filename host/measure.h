// SPDX-License-Identifier: GPL-3.0-or-later
// `vernier measure REF TARGET...`: how far each TARGET lags REF, its
// polarity and phase, and the correction that makes the two sum.
//
//   measure_options.c  the command line
//   measure.c          the run: each target read, fitted, reported, written
//   measure_read.c     the two files as one mono stream each, in segments
//   measure_spectra.c  Welch-averaged auto- and cross-spectra (two passes)
//   measure_fit.c      offset (coarse and fine), angle, uncertainty, figures
//   measure_shape.c    the frequency-centred all-pass fit (--shape)
//   measure_report.c   the plain-text report and --json
//   measure_plot.c     the SVG picture
//   measure_write.c    corrected files, LV2 presets, the command lines
//
// Sign conventions, used everywhere below:
//   offset_frames > 0   TARGET arrives late: target[n] ~ ref[n - offset].
//   theta_deg           TARGET's phase relative to REF's, as the Phase
//                       Rotator counts angles: TARGET ~ rotate(REF, theta)
//                       delayed by the offset. 180 is inverted polarity.
//   The correction is what is done to TARGET: delay by -offset, rotate by
//   -theta (or invert and rotate by the rest when that is clearer).
#ifndef VERNIER_HOST_MEASURE_H
#define VERNIER_HOST_MEASURE_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

// Exit status when the measurement ran but found nothing to trust (no
// common content, or the offset lies beyond the search range).
#define VN_EXIT_NOT_FOUND 7

#define VN_MEASURE_MAX_OFFSET_DEFAULT_MS 50.0
#define VN_MEASURE_MAX_OFFSET_MAX_MS 1000.0
#define VN_MEASURE_BAND_LO_DEFAULT_HZ 20.0
#define VN_MEASURE_BAND_HI_DEFAULT_HZ 10000.0
#define VN_MEASURE_LOW_LO_DEFAULT_HZ 20.0
#define VN_MEASURE_LOW_HI_DEFAULT_HZ 250.0
#define VN_MEASURE_CHANNEL_MIX (-1)

typedef struct {
  const char *ref_path;
  char **target_paths;
  size_t n_targets;
  double max_offset_ms;          // the search covers -max .. +max
  const char *max_offset_text;   // --max-offset as given (smp needs the rate)
  double band_lo_hz, band_hi_hz; // what the offset and angle are fitted on
  double low_lo_hz, low_hi_hz;   // the "low band" of the sum figures
  int channel;                   // 0-based, or VN_MEASURE_CHANNEL_MIX
  bool shape;                    // also fit a frequency-centred all-pass
  double air_temp_c;             // what a distance means in the report
  const char *write_dir;         // NULL: write nothing
  bool overwrite;
  bool json;
  bool curves; // --json also carries the per-bin curves
  bool quiet;
} VnMeasureOptions;

// One state of the pair, as summed: REF + (TARGET as corrected so far).
typedef struct {
  double correlation; // Pearson's r over the full band, -1 .. 1
  double low_db;      // summed level in the low band, dB rel. as recorded
  double full_db;     // summed level over the full band, dB rel. as recorded
} VnSumFigures;

// The all-pass of the Align Strip and the All-pass plugin.
typedef struct {
  bool fitted;
  double frequency_hz;
  double q;
  int stages; // 1..4
  int order;  // 1 or 2
  // The offset and angle refitted together with the all-pass.
  double offset_frames;
  double theta_deg;
} VnShapeFit;

// Per-bin curves for the picture and --curves; bins lo_bin .. hi_bin of an
// n_fft-point DFT at rate_hz (frequency of bin k: k rate_hz / n_fft).
typedef struct {
  uint32_t n_fft;
  uint32_t lo_bin, hi_bin;  // inclusive, within the measuring band
  double *coherence;        // magnitude-squared, after coarse alignment
  double *phase_before_deg; // arg of the cross-spectrum, as recorded
  double *phase_after_deg;  // arg after the correction (residual)
  double *sum_before_db;    // |REF + TARGET|^2 per bin, dB, as recorded
  double *sum_after_db;     // the same, TARGET corrected
  double *ref_db;           // |REF|^2 per bin, dB (the level to reach)
  // The plain normalised cross-correlation around its peak, as recorded:
  // lags first_lag .. first_lag + n_lags - 1 frames (TARGET later > 0).
  int64_t first_lag;
  uint32_t n_lags;
  double *correlation;
} VnMeasureCurves;

typedef enum {
  VN_FOUND = 0,
  VN_NOT_FOUND_NO_COMMON, // no common content: confidence too low
  VN_NOT_FOUND_AT_EDGE,   // the peak sits at the edge of the search range
} VnFoundStatus;

typedef struct {
  const char *ref_path;
  const char *target_path;
  double rate_hz;
  uint64_t ref_frames, target_frames;
  int ref_channels, target_channels;
  uint64_t ref_clipped, target_clipped; // samples at full scale
  uint64_t segments;                    // Welch segments averaged (pass 2)
  VnFoundStatus status;
  int64_t outside_frames;  // VN_NOT_FOUND_AT_EDGE: a stronger peak out there,
                           // frames (0: none seen; widen the search anyway)
  double peak_db;          // GCC peak above the correlation's floor, dB
  double coherence;        // mean magnitude-squared coherence over the band
  double chance_coherence; // what two unrelated signals would give, 1/K
  // Offset and its standard deviation, frames (> 0: TARGET late).
  int64_t coarse_frames;
  double offset_frames;
  double offset_sigma_frames;
  double theta_deg; // TARGET relative to REF, -180 .. 180
  double theta_sigma_deg;
  // The correction, for the plugins (without --shape).
  bool invert;
  double angle_deg; // the rotator's angle after the invert, -90 .. 90 when
                    // invert is advised, else -180 .. 180
  VnShapeFit shape;
  VnSumFigures as_recorded;   // low_db = full_db = 0 by definition
  VnSumFigures polarity_only; // inverted as advised, not moved
  VnSumFigures offset_only;   // moved, not inverted or rotated
  VnSumFigures corrected;     // moved, inverted, rotated
  VnSumFigures shaped;        // with the all-pass (shape.fitted)
  VnMeasureCurves curves;
} VnMeasureResult;

int vn_measure_main(int argc, char **argv);

// Returns an exit code; -1 when --help or --version was printed (exit 0).
int vn_measure_parse(VnMeasureOptions *opt, int argc, char **argv);
void vn_measure_options_free(VnMeasureOptions *opt);

// Measures one pair into *r (freed by vn_measure_result_free). An exit code:
// VN_EXIT_OK also when r->status says nothing was found (the caller reports
// it and exits VN_EXIT_NOT_FOUND); 3 for unreadable, silent, too short or
// mismatched files, 130/143 when interrupted (errors printed).
int vn_measure_pair(const VnMeasureOptions *opt, const char *target_path,
                    VnMeasureResult *r);
void vn_measure_result_free(VnMeasureResult *r);

// The report, for a person (stdout) and for a script (--json, stdout).
void vn_measure_report_text(FILE *out, const VnMeasureOptions *opt,
                            const VnMeasureResult *results, size_t n);
void vn_measure_report_json(FILE *out, const VnMeasureOptions *opt,
                            const VnMeasureResult *results, size_t n);

// The correction of one result as `vernier process` step words ("strip",
// "invert=on", "delay=-65.784smp", ...), written into words (at most
// max_words, each pointing into buf). Returns the number of words.
size_t vn_measure_correction_words(const VnMeasureResult *r, char *buf,
                                   size_t buf_size, char **words,
                                   size_t max_words);

// Writes into opt->write_dir, for every found result: the corrected target
// (through `vernier process`), the LV2 preset bundle, the picture and the
// command lines. Every file appears whole or not at all. An exit code.
int vn_measure_write(const VnMeasureOptions *opt,
                     const VnMeasureResult *results, size_t n);

// The SVG picture of one result into out. false on a write error.
bool vn_measure_plot_svg(FILE *out, const VnMeasureOptions *opt,
                         const VnMeasureResult *r);

// What is done to TARGET, as the plugins take it: the all-pass fit's offset
// and angle when r->shape.fitted (invert iff |theta| > 90), else r->invert
// and r->angle_deg. One rule for the step words, presets and report.
typedef struct {
  bool invert;
  double angle_deg;    // the rotator's, after the invert: -180 .. 180
  double delay_frames; // -offset: negative moves TARGET earlier
} VnMeasureCorrection;
VnMeasureCorrection vn_measure_correction(const VnMeasureResult *r);

// An angle in degrees, into -180 .. 180 (180 itself stays).
double vn_wrap180(double deg);
// theta (TARGET from REF) to the plugins' correction: invert when |theta|
// > 90, and the rotator's angle for the rest.
void vn_measure_correction_rule(double theta_deg, bool *invert,
                                double *angle_deg);

#endif
