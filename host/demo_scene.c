// SPDX-License-Identifier: GPL-3.0-or-later
// The demo's invented scene: a bass line we wrote, a cabinet we made up.
//
// The bass line is a sum of decaying harmonics under an envelope, a
// function of continuous time, so the microphone's track can be computed
// at t - tau for an air delay tau that is not a whole number of frames:
// the line is evaluated late, then run through the cabinet's filters.
// Linear time-invariant filters commute with a delay, so the amp track is
// exactly the cabinet's response to the bass line delayed by tau (tests/host/
// demo.sh checks it from the files).
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "demo.h"
#include "time_value.h"

#define SEED 0x5EEDBA55u
#define EIGHTH_S 0.3         // 100 beats a minute
#define GAP_S 0.02           // a note is let go this long before the next
#define ATTACK_S 0.003       // the pluck's rise, a raised cosine
#define RELEASE_S 0.04       // the fingers' damping after the note
#define TAIL_S 0.5           // the release has fallen 108 dB by then
#define TOP_HZ 4000.0        // no harmonic above
#define INHARMONICITY 5e-5   // a stiff string's stretch: f_k = k f0 (1+Bk^2)^.5
#define PLUCK_AT 0.22        // where along the string it is plucked
#define TILT 1.3             // harmonic k at 1 / k^TILT
#define DECAY_S 1.2          // the fundamental's decay time constant
#define TUNING_CENTS (-2.0)  // the bass is a little flat
#define DETUNE_CENTS 3.0     // and each note a little more or less
#define FLOOR 1e-8           // a harmonic below this is left out
#define ROOM_NOISE_HZ 1000.0 // the room's noise is dark: a one-pole low-pass

// The riff, in eighths: four bars in E (E G A B D), a long E to end on.
typedef struct {
  uint8_t start, length, midi;
} Note;

static const Note riff[] = {
    {0, 2, 28},  {2, 1, 28},  {3, 1, 31},  {4, 2, 33},  {6, 1, 28},
    {7, 1, 38},  {8, 2, 28},  {10, 1, 28}, {11, 1, 35}, {12, 1, 33},
    {13, 1, 31}, {14, 2, 28}, {16, 2, 33}, {18, 1, 33}, {19, 1, 35},
    {20, 2, 38}, {22, 1, 35}, {23, 1, 33}, {24, 2, 28}, {26, 1, 40},
    {27, 1, 38}, {28, 1, 35}, {29, 1, 33}, {30, 1, 31}, {31, 1, 33},
    {32, 6, 28},
};
#define N_NOTES (sizeof riff / sizeof riff[0])

// splitmix64 (Steele, Lea and Flood, OOPSLA 2014): small and seedable.
static uint64_t next_random(uint64_t *state) {
  uint64_t z = (*state += 0x9E3779B97F4A7C15u);
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9u;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBu;
  return z ^ (z >> 31);
}

static double uniform(uint64_t *state) { // [0, 1)
  return (double)(next_random(state) >> 11) * 0x1p-53;
}

static double gaussian(uint64_t *state) { // Box and Muller (1958)
  const double u = 1.0 - uniform(state), v = uniform(state);
  return sqrt(-2.0 * log(u)) * cos(2.0 * M_PI * v);
}

// The RBJ Audio EQ Cookbook (R. Bristow-Johnson, W3C Working Group Note
// "Audio EQ Cookbook"): high-pass, peaking EQ, low-pass and all-pass.
static VnBiquad cookbook(int kind, const VnCabinetStage *st, double rate_hz) {
  const double w0 = 2.0 * M_PI * st->freq_hz / rate_hz;
  const double c = cos(w0), alpha = sin(w0) / (2.0 * st->q);
  const double a_gain = pow(10.0, st->gain_db / 40.0);
  double b0, b1, b2, a0, a1 = -2.0 * c, a2;
  a0 = 1.0 + alpha;
  a2 = 1.0 - alpha;
  b1 = -2.0 * c;
  switch (kind) {
  case VN_CAB_HIGHPASS:
    b0 = b2 = (1.0 + c) / 2.0;
    b1 = -(1.0 + c);
    break;
  case VN_CAB_RESONANCE:
    b0 = 1.0 + alpha * a_gain;
    b2 = 1.0 - alpha * a_gain;
    a0 = 1.0 + alpha / a_gain;
    a2 = 1.0 - alpha / a_gain;
    break;
  case VN_CAB_LOWPASS:
    b0 = b2 = (1.0 - c) / 2.0;
    b1 = 1.0 - c;
    break;
  default: // VN_CAB_ALLPASS
    b0 = 1.0 - alpha;
    b2 = 1.0 + alpha;
    break;
  }
  const VnBiquad q = {b0 / a0, b1 / a0, b2 / a0, a1 / a0, a2 / a0};
  return q;
}

void vn_demo_scene_init(VnDemoScene *s) {
  memset(s, 0, sizeof *s);
  s->rate_hz = VN_DEMO_RATE_HZ;
  s->frames = VN_DEMO_FRAMES;
  s->air_delay_s =
      VN_DEMO_MIC_DISTANCE_M / vn_speed_of_sound_m_s(VN_DEMO_AIR_TEMP_C);
  s->stage[VN_CAB_HIGHPASS] = (VnCabinetStage){55.0, 0.707, 0.0};
  s->stage[VN_CAB_RESONANCE] = (VnCabinetStage){110.0, 1.2, 4.0};
  s->stage[VN_CAB_LOWPASS] = (VnCabinetStage){4500.0, 0.707, 0.0};
  s->stage[VN_CAB_ALLPASS] = (VnCabinetStage){300.0, 0.7, 0.0};
  for (int i = 0; i < VN_CAB_STAGES; ++i) {
    s->biquad[i] = cookbook(i, &s->stage[i], s->rate_hz);
  }
  s->inverted = true;
  s->di_noise_dbfs = -80.0;
  s->room_noise_db = -50.0;
  s->di_peak_dbfs = -10.0;
  s->amp_peak_dbfs = -12.0;
}

// One note, evaluated delay_s late, added into out.
static void add_note(const VnDemoScene *s, size_t index, double delay_s,
                     double *out) {
  const Note *note = &riff[index];
  // Each note draws from its own stream, so that both tracks hear the
  // same detune, level and phases.
  uint64_t rng = SEED + 0x100000001u * (uint64_t)(index + 1);
  const double cents = TUNING_CENTS + DETUNE_CENTS * (2.0 * uniform(&rng) - 1);
  const double f0 = 440.0 * pow(2.0, (note->midi - 69) / 12.0 + cents / 1200.0);
  const double level = 0.8 + 0.2 * uniform(&rng);
  const double t0 = note->start * EIGHTH_S + delay_s;
  const double gate = note->length * EIGHTH_S - GAP_S;
  const double rate = s->rate_hz;
  const size_t first = (size_t)ceil(t0 * rate);
  size_t last = (size_t)ceil((t0 + gate + TAIL_S) * rate);
  last = last < s->frames ? last : s->frames;
  for (int k = 1;; ++k) {
    const double fk = k * f0 * sqrt(1.0 + INHARMONICITY * k * k);
    if (fk > TOP_HZ) {
      break;
    }
    const double phase0 = 2.0 * M_PI * uniform(&rng);
    const double ak = level * fabs(sin(M_PI * k * PLUCK_AT)) / pow(k, TILT);
    const double dk = (1.0 + 0.25 * (k - 1)) / DECAY_S; // per second
    // Where this harmonic has decayed below FLOOR.
    const double u_end = ak > FLOOR ? log(ak / FLOOR) / dk : 0.0;
    size_t stop = (size_t)ceil((t0 + u_end) * rate);
    stop = stop < last ? stop : last;
    // A rotating, shrinking phasor from the first frame on: the harmonic
    // at u = n / rate - t0, to rounding.
    const double u0 = first / rate - t0;
    double mag = ak * exp(-dk * u0);
    double re = mag * cos(2.0 * M_PI * fk * u0 + phase0);
    double im = mag * sin(2.0 * M_PI * fk * u0 + phase0);
    const double shrink = exp(-dk / rate), turn = 2.0 * M_PI * fk / rate;
    const double step_re = shrink * cos(turn), step_im = shrink * sin(turn);
    for (size_t n = first; n < stop; ++n) {
      const double u = n / rate - t0;
      double env = u < ATTACK_S ? 0.5 - 0.5 * cos(M_PI * u / ATTACK_S) : 1.0;
      env *= u > gate ? exp(-(u - gate) / RELEASE_S) : 1.0;
      out[n] += env * im;
      const double r = re * step_re - im * step_im;
      im = re * step_im + im * step_re;
      re = r;
    }
  }
}

static void render_line(const VnDemoScene *s, double delay_s, double *out) {
  memset(out, 0, s->frames * sizeof *out);
  for (size_t i = 0; i < N_NOTES; ++i) {
    add_note(s, i, delay_s, out);
  }
}

// Transposed direct form II, in place.
static void run_biquad(const VnBiquad *q, double *x, size_t n) {
  double s1 = 0, s2 = 0;
  for (size_t i = 0; i < n; ++i) {
    const double in = x[i], y = q->b0 * in + s1;
    s1 = q->b1 * in - q->a1 * y + s2;
    s2 = q->b2 * in - q->a2 * y;
    x[i] = y;
  }
}

static void scale_to_peak(double *x, size_t n, double peak_dbfs) {
  double peak = 0;
  for (size_t i = 0; i < n; ++i) {
    peak = fabs(x[i]) > peak ? fabs(x[i]) : peak;
  }
  const double g = peak > 0 ? pow(10.0, peak_dbfs / 20.0) / peak : 0.0;
  for (size_t i = 0; i < n; ++i) {
    x[i] *= g;
  }
}

static double rms(const double *x, size_t n) {
  double sum = 0;
  for (size_t i = 0; i < n; ++i) {
    sum += x[i] * x[i];
  }
  return sqrt(sum / (double)n);
}

void vn_demo_render(const VnDemoScene *s, double *di, double *amp) {
  const size_t n = s->frames;
  render_line(s, 0.0, di);
  scale_to_peak(di, n, s->di_peak_dbfs);
  render_line(s, s->air_delay_s, amp);
  for (int i = 0; i < VN_CAB_STAGES; ++i) {
    run_biquad(&s->biquad[i], amp, n);
  }
  scale_to_peak(amp, n, s->amp_peak_dbfs); // the cable's pins: below
  if (s->inverted) {
    for (size_t i = 0; i < n; ++i) {
      amp[i] = -amp[i];
    }
  }
  uint64_t rng = SEED;
  const double di_noise = pow(10.0, s->di_noise_dbfs / 20.0);
  for (size_t i = 0; i < n; ++i) {
    di[i] += di_noise * gaussian(&rng);
  }
  // The room: white noise through a one-pole low-pass, at its level below
  // the amp track's. Its own stream, drawn twice: once for its level, once
  // to add it, rather than a third track in memory.
  const double room_rms = rms(amp, n) * pow(10.0, s->room_noise_db / 20.0);
  const double pole = exp(-2.0 * M_PI * ROOM_NOISE_HZ / s->rate_hz);
  double gain = 0;
  for (int pass = 0; pass < 2; ++pass) {
    rng = ~SEED;
    double state = 0, sum = 0;
    for (size_t i = 0; i < n; ++i) {
      state = (1.0 - pole) * gaussian(&rng) + pole * state;
      if (pass == 0) {
        sum += state * state;
      } else {
        amp[i] += gain * state;
      }
    }
    gain = pass == 0 && sum > 0 ? room_rms / sqrt(sum / (double)n) : gain;
  }
}

double complex vn_demo_cabinet_at(const VnDemoScene *s, double freq_hz) {
  const double complex z1 = cexp(-I * 2.0 * M_PI * freq_hz / s->rate_hz);
  const double complex z2 = z1 * z1;
  double complex h = 1.0;
  for (int i = 0; i < VN_CAB_STAGES; ++i) {
    const VnBiquad *q = &s->biquad[i];
    h *= (q->b0 + q->b1 * z1 + q->b2 * z2) / (1.0 + q->a1 * z1 + q->a2 * z2);
  }
  return h;
}

double vn_demo_group_delay_frames(const VnDemoScene *s, double freq_hz) {
  // -d(phase)/d(omega), by a central difference on the ratio (no unwrap).
  const double df_hz = 1e-3 * freq_hz;
  const double complex ratio = vn_demo_cabinet_at(s, freq_hz + df_hz) /
                               vn_demo_cabinet_at(s, freq_hz - df_hz);
  return -carg(ratio) / (2.0 * M_PI * 2.0 * df_hz / s->rate_hz);
}

// The All-pass plugin's stages (plugins/dsp/allpass.h): second order the
// cookbook's all-pass, first order the prewarped one-pole (a + z^-1) /
// (1 + a z^-1), -90 degrees at f0; the frequency held below 0.49 x rate.
static double complex allpass_at(const VnShapeFit *ap, double rate_hz,
                                 double freq_hz) {
  const double f0 =
      ap->frequency_hz < 0.49 * rate_hz ? ap->frequency_hz : 0.49 * rate_hz;
  const double complex z1 = cexp(-I * 2.0 * M_PI * freq_hz / rate_hz);
  double complex h;
  if (ap->order == 1) {
    const double g = tan(M_PI * f0 / rate_hz), a = (g - 1.0) / (g + 1.0);
    h = (a + z1) / (1.0 + a * z1);
  } else {
    const VnCabinetStage st = {f0, ap->q, 0.0};
    const VnBiquad q = cookbook(VN_CAB_ALLPASS, &st, rate_hz);
    h = (q.b0 + q.b1 * z1 + q.b2 * z1 * z1) /
        (1.0 + q.a1 * z1 + q.a2 * z1 * z1);
  }
  double complex out = 1.0;
  for (int i = 0; i < ap->stages; ++i) {
    out *= h;
  }
  return out;
}

double vn_demo_phase_left_deg(const VnDemoScene *s,
                              const VnMeasureCorrection *c,
                              const VnShapeFit *allpass, double freq_hz) {
  const double w = 2.0 * M_PI * freq_hz / s->rate_hz;
  const double complex cab = vn_demo_cabinet_at(s, freq_hz);
  const double complex amp_over_di =
      (s->inverted ? -cab : cab) * cexp(-I * w * s->air_delay_s * s->rate_hz);
  // The Phase Rotator advances by its angle; each frame of delay turns the
  // DI back by w radians.
  double complex fix =
      (c->invert ? -1.0 : 1.0) *
      cexp(I * (c->angle_deg * M_PI / 180.0 - w * c->delay_frames));
  if (allpass && allpass->fitted) {
    fix *= allpass_at(allpass, s->rate_hz, freq_hz);
  }
  // As the cross-spectrum conj(amp) x (DI corrected) has it.
  return carg(fix / amp_over_di) * 180.0 / M_PI;
}

// The weight `vernier measure` gives a bin for the offset (measure_fit.c:
// Knapp and Carter's maximum-likelihood weighting, IEEE Trans. ASSP 24(4),
// 1976): g2 / (1 - g2), the coherence g2 held below 0.999. Kept in step
// with it by hand; tests/host/demo.sh fails when the two drift apart.
#define COHERENCE_MAX 0.999
#define GRID_FRAMES 0.25 // finer than the correlation's main lobe

// |sum_k w(k) exp(2 pi j k d / n)| over the bins, by a rotating phasor.
static double complex phased(const double complex *w, const VnMeasureCurves *c,
                             double d) {
  const double step = 2.0 * M_PI * d / c->n_fft;
  const double complex z = cexp(I * step);
  double complex p = cexp(I * step * c->lo_bin), sum = 0;
  for (uint32_t k = c->lo_bin; k <= c->hi_bin; ++k) {
    sum += w[k - c->lo_bin] * p;
    p *= z;
  }
  return sum;
}

void vn_demo_predict(const VnDemoScene *s, const VnMeasureCurves *c,
                     double *offset_frames, double *theta_deg) {
  *offset_frames = *theta_deg = NAN;
  if (!c->coherence || !c->ref_db || c->hi_bin < c->lo_bin) {
    return;
  }
  const size_t m = c->hi_bin - c->lo_bin + 1;
  double complex *w = malloc(m * sizeof *w), *p = malloc(m * sizeof *p);
  if (!w || !p) {
    free(w);
    free(p);
    return;
  }
  // REF is the amp track, TARGET the DI. With h the amp track over the DI
  // at bin k (the polarity, the cabinet, the air delay's linear phase), the
  // cross-spectrum conj(REF) TARGET is conj(h) |DI|^2: its phase is -arg h,
  // the DI leads. Its size, which the angle weighs by, is |h| |DI|^2; since
  // the DI is clean (its noise 70 dB under its peak), REF's coherent power
  // g2 |REF|^2 is |h|^2 |DI|^2, so the size is g2 |REF|^2 / |h|.
  const double air_frames = s->air_delay_s * s->rate_hz;
  for (uint32_t k = c->lo_bin; k <= c->hi_bin; ++k) {
    const size_t i = k - c->lo_bin;
    const double complex cab = vn_demo_cabinet_at(s, k * s->rate_hz / c->n_fft);
    const double complex h = (s->inverted ? -cab : cab) *
                             cexp(-2.0 * M_PI * I * k * air_frames / c->n_fft);
    const double mag = cabs(h);
    double g2 = c->coherence[i];
    g2 = g2 < 1.0 ? (g2 > 0 ? g2 : 0) : 1.0;
    const double g2_held = g2 < COHERENCE_MAX ? g2 : COHERENCE_MAX;
    w[i] = mag > 0 ? conj(h) / mag * (g2_held / (1.0 - g2_held)) : 0;
    p[i] = mag > 0 ? conj(h) / (mag * mag) * g2 * pow(10.0, c->ref_db[i] / 10.0)
                   : 0;
  }
  // Over the whole default search range, as the measurement looks.
  const double reach = VN_MEASURE_MAX_OFFSET_DEFAULT_MS * 1e-3 * s->rate_hz;
  double best = 0, best_j = -1;
  for (double d = -reach; d <= reach; d += GRID_FRAMES) {
    const double j = cabs(phased(w, c, d));
    if (j > best_j) {
      best_j = j;
      best = d;
    }
  }
  // Golden-section search of the top (Kiefer 1953).
  const double golden = 0.5 * (sqrt(5.0) - 1.0);
  double lo = best - GRID_FRAMES, hi = best + GRID_FRAMES;
  while (hi - lo > 1e-6) {
    const double x1 = hi - golden * (hi - lo), x2 = lo + golden * (hi - lo);
    if (cabs(phased(w, c, x1)) < cabs(phased(w, c, x2))) {
      lo = x1;
    } else {
      hi = x2;
    }
  }
  *offset_frames = 0.5 * (lo + hi);
  *theta_deg = carg(phased(p, c, *offset_frames)) * 180.0 / M_PI;
  free(w);
  free(p);
}
