// SPDX-License-Identifier: GPL-3.0-or-later
// One REF and TARGET pair, measured in two passes over the files:
//   1. as recorded: the coarse offset (generalized cross-correlation) and
//      the "as recorded" and "polarity only" figures;
//   2. TARGET moved by the coarse offset in whole frames: the coherence,
//      the fraction, the angle, their jackknife uncertainty, the all-pass.
// Each pass reads segments spread evenly over the common part of the
// files, at most MAX_SEGMENTS of them: beyond a few minutes of material the
// estimate no longer improves in any way that matters, and the time and
// memory stay bounded whatever the length.
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "interrupt.h"
#include "measure_internal.h"
#include "time_value.h"
#include "vernier.h"

// At 48 kHz (8192-point segments, 50% overlap): 87 s of material each;
// shorter files are used whole. Pass 1 also reads what lies between its
// segments (without transforming it), so that the clipping count and the
// silence check see every frame of both files.
#define PASS1_MAX_SEGMENTS 512u
#define PASS2_MAX_SEGMENTS 1024u
// Enough for the jackknife (at least this many groups) and for a
// coherence estimate worth the name.
#define MIN_SEGMENTS 8u
#define MAX_GROUPS 16u
// Silence: nothing in the material above -80 dBFS.
#define SILENCE_PEAK 1e-4
// Two unrelated signals rarely give a peak more than ~10 dB above the
// correlation's floor over a few thousand lags (the largest of that many
// Rayleigh-distributed values is about sqrt(ln M) times their RMS); a
// real pair gives 20 dB and more.
#define MIN_PEAK_DB 14.0

typedef struct {
  const VnMeasureOptions *opt;
  VnMonoReader ref, target;
  VnSpectra pass1, pass2;
  VnTotals t1, t2, jack;
  uint32_t n_fft;
  int64_t max_lag;
  uint64_t done_segments, total_segments;
} Pair;

static bool show_progress(const Pair *p) {
  return !p->opt->quiet && isatty(STDERR_FILENO);
}

static uint32_t fft_size(int64_t max_lag, double rate_hz) {
  // Three times the lag keeps a fair share of every segment pair in
  // common; rate / 6 puts bins 6 Hz apart or closer, so 20 Hz has some.
  double want = 3.0 * (double)max_lag;
  want = want > rate_hz / 6.0 ? want : rate_hz / 6.0;
  uint32_t n = 4096;
  while (n < want && n < (1u << 22)) {
    n <<= 1;
  }
  return n;
}

// Reads the segments of one pass into s: REF from ref_start, TARGET from
// target_start, common frames of both, at least hop apart. scan: also
// every frame between and after them (pass 1, which starts at 0).
static int run_pass(Pair *p, VnSpectra *s, uint64_t ref_start,
                    uint64_t target_start, uint64_t common, uint32_t hop,
                    uint32_t max_segments, bool scan) {
  const uint32_t n = p->n_fft;
  uint64_t n_seg = common >= n ? (common - n) / hop + 1 : 0;
  n_seg = n_seg < max_segments ? n_seg : max_segments;
  const double spacing =
      n_seg > 1 ? (double)(common - n) / (double)(n_seg - 1) : 0.0;
  int shown = -1;
  uint64_t last = 0;
  for (uint64_t i = 0; i < n_seg; ++i) {
    const int sig = vn_interrupt_pending();
    if (sig) {
      return VN_EXIT_SIGNAL_BASE + sig;
    }
    const uint64_t at = (uint64_t)floor((double)i * spacing);
    int rc = VN_EXIT_OK;
    if (scan && p->ref.pos < ref_start + at) {
      rc = vn_mono_scan_to(&p->ref, ref_start + at);
    }
    if (rc == VN_EXIT_OK && scan && p->target.pos < target_start + at) {
      rc = vn_mono_scan_to(&p->target, target_start + at);
    }
    // Overlapping the last segment: keep what it shares, read the rest.
    const uint64_t keep = i > 0 && at - last < n ? n - (at - last) : 0;
    if (keep) {
      memmove(s->seg_r, s->seg_r + (n - keep), keep * sizeof *s->seg_r);
      memmove(s->seg_x, s->seg_x + (n - keep), keep * sizeof *s->seg_x);
    }
    if (rc == VN_EXIT_OK) {
      rc = vn_mono_read_at(&p->ref, ref_start + at + keep, s->seg_r + keep,
                           n - keep);
    }
    if (rc == VN_EXIT_OK) {
      rc = vn_mono_read_at(&p->target, target_start + at + keep,
                           s->seg_x + keep, n - keep);
    }
    last = at;
    if (rc != VN_EXIT_OK) {
      return rc;
    }
    vn_spectra_add(s, (uint32_t)(i * s->n_groups / n_seg));
    ++p->done_segments;
    const int percent = (int)(p->done_segments * 100 / p->total_segments);
    if (show_progress(p) && percent != shown) {
      vn_progress_show(percent);
      shown = percent;
    }
  }
  if (scan) {
    const int rc = vn_mono_scan_to(&p->ref, UINT64_MAX);
    return rc == VN_EXIT_OK ? vn_mono_scan_to(&p->target, UINT64_MAX) : rc;
  }
  return VN_EXIT_OK;
}

static uint64_t segments_for(uint64_t common, uint32_t n, uint32_t hop,
                             uint32_t max_segments) {
  const uint64_t k = common >= n ? (common - n) / hop + 1 : 0;
  return k < max_segments ? k : max_segments;
}

static int open_files(Pair *p, VnMeasureResult *r) {
  const VnMeasureOptions *opt = p->opt;
  int rc = vn_mono_open(&p->ref, opt->ref_path, opt->channel);
  if (rc == VN_EXIT_OK) {
    rc = vn_mono_open(&p->target, r->target_path, opt->channel);
  }
  if (rc != VN_EXIT_OK) {
    return rc;
  }
  const int ref_rate = p->ref.in.info.samplerate;
  const int target_rate = p->target.in.info.samplerate;
  if (ref_rate != target_rate) {
    vn_error("%s is at %d Hz and %s at %d Hz: measure compares files of one "
             "rate and does not resample; convert one of them first",
             opt->ref_path, ref_rate, r->target_path, target_rate);
    return VN_EXIT_INPUT;
  }
  r->rate_hz = ref_rate;
  r->ref_frames = p->ref.frames;
  r->target_frames = p->target.frames;
  r->ref_channels = p->ref.channels;
  r->target_channels = p->target.channels;
  return VN_EXIT_OK;
}

static int search_range(Pair *p, double rate_hz) {
  const VnMeasureOptions *opt = p->opt;
  double ms = opt->max_offset_ms;
  if (opt->max_offset_text) {
    const VnTimeContext ctx = {.rate_hz = rate_hz,
                               .air_temp_c = opt->air_temp_c};
    vn_time_parse_ms(opt->max_offset_text, &ctx, &ms);
  }
  if (ms > VN_MEASURE_MAX_OFFSET_MAX_MS) {
    vn_error("--max-offset %s: %g ms is beyond the %g ms measure searches; "
             "line the files up roughly first",
             opt->max_offset_text ? opt->max_offset_text : "", ms,
             VN_MEASURE_MAX_OFFSET_MAX_MS);
    return VN_EXIT_USAGE;
  }
  p->max_lag = (int64_t)ceil(ms * rate_hz / 1000.0);
  p->max_lag = p->max_lag < 1 ? 1 : p->max_lag;
  p->n_fft = fft_size(p->max_lag, rate_hz);
  return VN_EXIT_OK;
}

static int check_length(const Pair *p, const VnMeasureResult *r) {
  const uint64_t need =
      (uint64_t)p->n_fft * (MIN_SEGMENTS + 1) / 2 + (uint64_t)p->max_lag;
  const uint64_t have =
      r->ref_frames < r->target_frames ? r->ref_frames : r->target_frames;
  if (have < need) {
    vn_error("%s: too short to measure: %.3f s in common, and measuring "
             "needs at least %.3f s at %g Hz with --max-offset %g ms (a "
             "smaller --max-offset lowers it)",
             r->ref_frames < r->target_frames ? p->opt->ref_path
                                              : r->target_path,
             (double)have / r->rate_hz, (double)need / r->rate_hz, r->rate_hz,
             (double)p->max_lag * 1000.0 / r->rate_hz);
    return VN_EXIT_INPUT;
  }
  return VN_EXIT_OK;
}

static int check_levels(const Pair *p, const VnMeasureResult *r) {
  const VnMonoReader *files[2] = {&p->ref, &p->target};
  const char *paths[2] = {p->opt->ref_path, r->target_path};
  for (int i = 0; i < 2; ++i) {
    if (files[i]->peak < SILENCE_PEAK) {
      vn_error("%s: %s (peak %s%.1f dBFS, below -80 dBFS): nothing to measure",
               paths[i], files[i]->peak > 0 ? "nearly silent" : "silent",
               files[i]->peak > 0 ? "" : "below ",
               files[i]->peak > 0 ? 20.0 * log10(files[i]->peak) : -300.0);
      return VN_EXIT_INPUT;
    }
  }
  return VN_EXIT_OK;
}

static int measure(Pair *p, VnMeasureResult *r);

int vn_measure_pair(const VnMeasureOptions *opt, const char *target_path,
                    VnMeasureResult *r) {
  memset(r, 0, sizeof *r);
  r->ref_path = opt->ref_path;
  r->target_path = target_path;
  Pair *p = calloc(1, sizeof *p);
  if (!p) {
    vn_error("out of memory");
    return VN_EXIT_PROCESSING;
  }
  p->opt = opt;
  int rc = open_files(p, r);
  if (rc == VN_EXIT_OK) {
    rc = search_range(p, r->rate_hz);
  }
  if (rc == VN_EXIT_OK) {
    rc = check_length(p, r);
  }
  if (rc == VN_EXIT_OK) {
    rc = measure(p, r);
  }
  vn_progress_clear();
  vn_mono_close(&p->ref);
  vn_mono_close(&p->target);
  vn_spectra_free(&p->pass1);
  vn_spectra_free(&p->pass2);
  vn_totals_free(&p->t1);
  vn_totals_free(&p->t2);
  vn_totals_free(&p->jack);
  free(p);
  return rc;
}

// The jackknife (Efron and Stein 1981; Quenouille): refit with one group
// of segments left out at a time; the spread of those fits, times
// (G - 1) / G, estimates the variance of the fit on all of them.
static void jackknife(Pair *p, VnBins band, double d, double theta,
                      VnMeasureResult *r) {
  const uint32_t g = p->pass2.n_groups;
  double sum_d = 0, sum_dd = 0, sum_t = 0, sum_tt = 0;
  for (uint32_t i = 0; i < g; ++i) {
    vn_totals_sum(&p->jack, &p->pass2, (int)i);
    double di = d, ti = theta;
    vn_fit_fine(&p->jack, band, d, 1.0, &di, &ti);
    const double dt = vn_wrap180(ti - theta);
    sum_d += di - d;
    sum_dd += (di - d) * (di - d);
    sum_t += dt;
    sum_tt += dt * dt;
  }
  const double var_d = sum_dd / g - (sum_d / g) * (sum_d / g);
  const double var_t = sum_tt / g - (sum_t / g) * (sum_t / g);
  r->offset_sigma_frames = sqrt((g - 1.0) * (var_d > 0 ? var_d : 0));
  r->theta_sigma_deg = sqrt((g - 1.0) * (var_t > 0 ? var_t : 0));
}

// The coherence over the band, each bin weighted by the pair's power
// there: a bass pair is coherent where the bass is, and the empty bins
// above it should not make it read as unrelated. Unrelated files still
// give about 1 / K.
static double mean_coherence(const VnTotals *t, VnBins b) {
  double sum = 0, weight = 0;
  for (uint32_t k = b.lo; k <= b.hi; ++k) {
    const double den = t->srr[k] * t->sxx[k];
    const double power = t->srr[k] + t->sxx[k];
    sum += den > 0 ? power * creal(t->srx[k] * conj(t->srx[k])) / den : 0.0;
    weight += power;
  }
  return weight > 0 ? sum / weight : 0.0;
}

static int measure(Pair *p, VnMeasureResult *r) {
  const VnMeasureOptions *opt = p->opt;
  const uint32_t n = p->n_fft;
  const uint64_t common1 =
      r->ref_frames < r->target_frames ? r->ref_frames : r->target_frames;
  // Pass 2 will have |lag| fewer frames in common at most.
  const uint64_t common2 = common1 - (uint64_t)p->max_lag;
  p->total_segments = segments_for(common1, n, n / 2, PASS1_MAX_SEGMENTS) +
                      segments_for(common2, n, n / 2, PASS2_MAX_SEGMENTS);
  if (vn_spectra_init(&p->pass1, n, 1) != 0 || !vn_totals_init(&p->t1, n) ||
      !vn_totals_init(&p->t2, n) || !vn_totals_init(&p->jack, n)) {
    vn_error("out of memory for %u-point spectra", n);
    return VN_EXIT_PROCESSING;
  }
  // Pass 1: as recorded, and every frame of both files counted.
  p->ref.count = p->target.count = true;
  int rc =
      run_pass(p, &p->pass1, 0, 0, common1, n / 2, PASS1_MAX_SEGMENTS, true);
  p->ref.count = p->target.count = false;
  if (rc != VN_EXIT_OK) {
    return rc;
  }
  r->ref_clipped = p->ref.clipped;
  r->target_clipped = p->target.clipped;
  rc = check_levels(p, r);
  if (rc != VN_EXIT_OK) {
    return rc;
  }
  vn_totals_sum(&p->t1, &p->pass1, -1);
  const VnBins band =
      vn_bins_for(opt->band_lo_hz, opt->band_hi_hz, r->rate_hz, n);
  const VnBins low = vn_bins_for(opt->low_lo_hz, opt->low_hi_hz, r->rate_hz, n);
  VnCoarse coarse;
  if (!vn_fit_coarse(&p->t1, band, p->max_lag, &coarse)) {
    vn_error("out of memory for the correlation");
    return VN_EXIT_PROCESSING;
  }
  r->coarse_frames = coarse.lag_frames;
  r->peak_db = coarse.peak_db;

  // Pass 2: TARGET moved by the coarse lag, segments overlapping by half.
  const int64_t lag = coarse.lag_frames;
  const uint64_t ref_start = lag < 0 ? (uint64_t)-lag : 0;
  const uint64_t target_start = lag > 0 ? (uint64_t)lag : 0;
  const uint64_t left_r = r->ref_frames - ref_start;
  const uint64_t left_x = r->target_frames - target_start;
  const uint64_t common = left_r < left_x ? left_r : left_x;
  const uint64_t k2 = segments_for(common, n, n / 2, PASS2_MAX_SEGMENTS);
  const uint32_t groups = k2 < MAX_GROUPS ? (uint32_t)k2 : MAX_GROUPS;
  if (vn_spectra_init(&p->pass2, n, groups ? groups : 1) != 0) {
    vn_error("out of memory for %u-point spectra", n);
    return VN_EXIT_PROCESSING;
  }
  rc = run_pass(p, &p->pass2, ref_start, target_start, common, n / 2,
                PASS2_MAX_SEGMENTS, false);
  vn_progress_clear();
  if (rc != VN_EXIT_OK) {
    return rc;
  }
  vn_totals_sum(&p->t2, &p->pass2, -1);
  r->segments = p->t2.n_segments;
  r->coherence = mean_coherence(&p->t2, band);
  r->chance_coherence = r->segments ? 1.0 / (double)r->segments : 1.0;

  double d = 0, theta = 0;
  const double radius = coarse.lobe_frames < 256 ? coarse.lobe_frames : 256;
  vn_fit_fine(&p->t2, band, 0.0, radius > 2 ? radius : 2, &d, &theta);
  r->offset_frames = (double)lag + d;
  r->theta_deg = vn_wrap180(theta);
  jackknife(p, band, d, theta, r);
  vn_measure_correction_rule(r->theta_deg, &r->invert, &r->angle_deg);

  if (coarse.outside_lag != 0 || coarse.at_edge) {
    r->status = VN_NOT_FOUND_AT_EDGE;
    r->outside_frames = coarse.outside_lag;
  } else if (r->peak_db < MIN_PEAK_DB ||
             r->coherence < 2.0 * r->chance_coherence) {
    r->status = VN_NOT_FOUND_NO_COMMON;
  }
  if (opt->shape && r->status == VN_FOUND) {
    vn_fit_shape(&p->t2, band, r->rate_hz, p->max_lag, d, &r->shape);
    if (r->shape.fitted) {
      r->shape.offset_frames += (double)lag;
    }
  }
  vn_fit_all_figures(&p->t1, &p->t2, low, d, r);
  const VnCorrection best = {
      .offset_frames =
          r->shape.fitted ? r->shape.offset_frames - (double)lag : d,
      .theta_deg = r->shape.fitted ? r->shape.theta_deg : r->theta_deg,
      .shape = r->shape.fitted ? &r->shape : NULL,
      .rate_hz = r->rate_hz};
  if (!vn_measure_curves(&p->t1, &p->t2, band, &best, lag, coarse.lobe_frames,
                         p->max_lag, &r->curves)) {
    vn_error("out of memory for the curves");
    return VN_EXIT_PROCESSING;
  }
  return VN_EXIT_OK;
}

void vn_measure_result_free(VnMeasureResult *r) {
  VnMeasureCurves *c = &r->curves;
  free(c->coherence);
  free(c->phase_before_deg);
  free(c->phase_after_deg);
  free(c->sum_before_db);
  free(c->sum_after_db);
  free(c->ref_db);
  free(c->correlation);
  memset(c, 0, sizeof *c);
}
