// SPDX-License-Identifier: GPL-3.0-or-later
#include "rotator.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "hilbert.h"
#include "param.h"

uint32_t rotator_partition_frames(double rate_hz) {
  const double want = (double)hilbert_min_taps(rate_hz) / 10.0;
  uint32_t b = 64;
  while (b < (1u << 20) && (double)b * 1.4142135623730951 < want) {
    b *= 2;
  }
  return b;
}

void rotator_free(rotator_t *r) {
  fft_convolver_free(&r->hilbert);
  free(r->delay);
  r->delay = NULL;
}

int rotator_setup(rotator_t *r, double rate_hz) {
  memset(r, 0, sizeof *r);
  if (!(rate_hz >= ROTATOR_MIN_RATE_HZ && rate_hz <= ROTATOR_MAX_RATE_HZ)) {
    return -1;
  }
  // Round the length up to fill the last partition: P * B - 1 taps cost what
  // the least length costs, and hilbert_design() turns the extra length into
  // less ripple. P * B is a multiple of 4, so the group delay P * B / 2 - 1
  // is odd, as hilbert_min_taps() wants.
  const uint32_t b = rotator_partition_frames(rate_hz);
  const uint32_t parts = (hilbert_min_taps(rate_hz) + 1 + b - 1) / b;
  r->n_taps = parts * b - 1;
  r->latency_frames = (r->n_taps - 1) / 2 + b;
  float *taps = malloc(r->n_taps * sizeof(float));
  if (!taps) {
    return -1;
  }
  hilbert_design(taps, r->n_taps, rate_hz);
  const int failed = fft_convolver_setup(&r->hilbert, taps, r->n_taps, b);
  free(taps);
  // The ring holds L frames of history plus the span being written.
  uint32_t size = 1;
  while (size < r->latency_frames + ROTATOR_SPAN_FRAMES) {
    size *= 2;
  }
  r->delay_mask = size - 1;
  r->delay = failed ? NULL : calloc(size, sizeof(float));
  if (!r->delay) {
    rotator_free(r);
    return -1;
  }
  r->angle_pole = (float)exp(-1.0 / (ROTATOR_TAU_S * rate_hz));
  rotator_reset(r);
  return 0;
}

void rotator_reset(rotator_t *r) {
  fft_convolver_reset(&r->hilbert);
  memset(r->delay, 0, (r->delay_mask + 1u) * sizeof(float));
  r->write_pos = 0;
  r->turn_to_deg = 0.0f;
  r->turn_left_deg = 0.0f;
  r->target_deg = 0.0f;
  r->last_port_deg = NAN;
  r->cos_gain = 1.0f;
  r->sin_gain = 0.0f;
  r->primed = false;
}

// cos and sin of an angle in degrees, exact at quarter turns: so 0 passes
// and +/-180 inverts bit for bit (sin(M_PI) is 1.2e-16, not 0).
static void quarter_exact_gains(float deg, float *c, float *s) {
  if (deg == 0.0f) {
    *c = 1.0f, *s = 0.0f;
  } else if (deg == 90.0f) {
    *c = 0.0f, *s = 1.0f;
  } else if (deg == -90.0f) {
    *c = 0.0f, *s = -1.0f;
  } else if (deg == 180.0f || deg == -180.0f) {
    *c = -1.0f, *s = 0.0f;
  } else {
    const double rad = (double)deg * (M_PI / 180.0);
    *c = (float)cos(rad);
    *s = (float)sin(rad);
  }
}

// Into [-180, 180).
static float wrap_deg(float d) {
  return d - 360.0f * floorf((d + 180.0f) / 360.0f);
}

void rotator_set(rotator_t *r, float angle_deg) {
  if (r->primed && angle_deg == r->last_port_deg) {
    return;
  }
  r->last_port_deg = angle_deg;
  const float a = param_clamp(angle_deg, ROTATOR_ANGLE_MIN_DEG,
                              ROTATOR_ANGLE_MAX_DEG, ROTATOR_ANGLE_DEFAULT_DEG);
  r->target_deg = a;
  quarter_exact_gains(a, &r->cos_gain, &r->sin_gain);
  if (!r->primed) {
    r->turn_to_deg = a; // the first run starts at the port value
    r->turn_left_deg = 0.0f;
    r->primed = true;
    return;
  }
  // From where the angle is now, the shorter way to a, with the start
  // brought back by whole turns (an angle automated round and round would
  // otherwise wander off, losing float precision).
  float now = rotator_angle_now_deg(r);
  now -= 360.0f * roundf(now / 360.0f);
  r->turn_to_deg = now + wrap_deg(a - now);
  r->turn_left_deg = now - r->turn_to_deg;
}

static bool rotator_settled(const rotator_t *r) {
  return r->turn_left_deg == 0.0f && r->turn_to_deg == r->target_deg;
}

// cos and sin of an angle in degrees for the gains mid-turn, where libm's
// cosf and sinf would cost as much again as the whole rotator: fold into
// [-45, 45] degrees by quarter turns, then Taylor polynomials, whose first
// omitted terms at pi/4 (x^11 / 11! and x^10 / 10!) are below 3e-8, under
// the float rounding of the result. No branches, so the loop over a span
// vectorises; no libm, so the samples are the same everywhere.
static inline void turning_gains(float deg, float *c, float *s) {
  // Nearest quarter turn by truncation (a conversion; nearbyintf is a
  // library call). |deg| stays far below 2^31 quarters.
  const float q = deg * (1.0f / 90.0f);
  const int32_t quarters = (int32_t)(q + (q < 0.0f ? -0.5f : 0.5f));
  const float x = (deg - 90.0f * (float)quarters) * (float)(M_PI / 180.0);
  const float x2 = x * x;
  const float sn =
      x * (1.0f + x2 * (-1.0f / 6 +
                        x2 * (1.0f / 120 + x2 * (-1.0f / 5040 + x2 / 362880))));
  const float cs =
      1.0f + x2 * (-0.5f + x2 * (1.0f / 24 + x2 * (-1.0f / 720 + x2 / 40320)));
  // Quarter k (two's complement: -1 & 3 is 3) of a turn on top of x:
  // 0: (cos, sin), 1: (-sin, cos), 2: (-cos, -sin), 3: (sin, -cos).
  const int32_t k = quarters & 3;
  const float a = (k & 1) ? sn : cs, b = (k & 1) ? cs : sn;
  *c = (k == 1 || k == 2) ? -a : a;
  *s = (k & 2) ? -b : b;
}

// Mid-turn: the smoothed angle, sample by sample, into angle_span until it
// lands, then the gains and the mix for those samples (in a loop of its
// own, which vectorises). Returns how many samples that took: all of n, or
// fewer if the angle landed.
static uint32_t mix_turning(rotator_t *r, const float *xd, const float *hx,
                            float *out, uint32_t n) {
  if (rotator_settled(r)) {
    return 0;
  }
  // The one sequential part: a multiply per sample on a local.
  float *deg = r->angle_span;
  const float to = r->turn_to_deg, pole = r->angle_pole;
  float left = r->turn_left_deg;
  uint32_t turning = 0;
  for (; turning < n; ++turning) {
    left *= pole;
    if (left < ROTATOR_LAND_DEG && left > -ROTATOR_LAND_DEG) {
      // Landed, maybe whole turns away: settle exactly on the port angle,
      // whose gains are exact, from this sample on.
      r->turn_to_deg = r->target_deg;
      left = 0.0f;
      break;
    }
    deg[turning] = to + left;
  }
  r->turn_left_deg = left;
  for (uint32_t k = 0; k < turning; ++k) {
    float c, s;
    turning_gains(deg[k], &c, &s);
    out[k] = c * xd[k] - s * hx[k];
  }
  return turning;
}

static void mix_settled(const rotator_t *r, const float *restrict xd,
                        const float *restrict hx, float *out, uint32_t n) {
  const float c = r->cos_gain, s = r->sin_gain;
  if (s == 0.0f && c == 1.0f) {
    memcpy(out, xd, n * sizeof(float));
  } else if (s == 0.0f && c == -1.0f) {
    for (uint32_t i = 0; i < n; ++i) {
      out[i] = -xd[i];
    }
  } else {
    for (uint32_t i = 0; i < n; ++i) {
      out[i] = c * xd[i] - s * hx[i];
    }
  }
}

void rotator_compute(rotator_t *r, const float *in, float *out,
                     uint32_t n_frames) {
  const uint32_t size = r->delay_mask + 1u, l = r->latency_frames;
  while (n_frames > 0) {
    // The ring holds the sanitised input: the span is written at w and the
    // in-phase path read L earlier at rd. Spans end where either reaches the
    // end of the ring, and are at most L long, so the two never overlap.
    const uint32_t w = r->write_pos, rd = (w - l) & r->delay_mask;
    uint32_t n =
        n_frames < ROTATOR_SPAN_FRAMES ? n_frames : ROTATOR_SPAN_FRAMES;
    n = n < size - w ? n : size - w;
    n = n < size - rd ? n : size - rd;
    n = n < l ? n : l;
    // Read the whole span before writing any of it: in may be out. A NaN or
    // infinity becomes silence here, before either path can keep it.
    float *x = r->delay + w;
    for (uint32_t i = 0; i < n; ++i) {
      const float v = in[i];
      x[i] = fabsf(v) <= FLT_MAX ? v : 0.0f;
    }
    fft_convolver_process(&r->hilbert, x, r->hilbert_span, n);
    const float *xd = r->delay + rd, *hx = r->hilbert_span;
    const uint32_t turned = mix_turning(r, xd, hx, out, n);
    mix_settled(r, xd + turned, hx + turned, out + turned, n - turned);
    r->write_pos = (w + n) & r->delay_mask;
    in += n;
    out += n;
    n_frames -= n;
  }
}
