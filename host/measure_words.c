// SPDX-License-Identifier: GPL-3.0-or-later
// The correction of one measurement as `vernier process` step words, and
// the rule that derives it from the fit (measure.h).
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include "../plugins/dsp/allpass.h"
#include "measure_write.h"
#include "vernier.h"

double vn_wrap180(double deg) {
  const double a = fmod(deg, 360.0);
  return a > 180.0 ? a - 360.0 : a <= -180.0 ? a + 360.0 : a;
}

void vn_measure_correction_rule(double theta_deg, bool *invert,
                                double *angle_deg) {
  // Invert when that leaves less than a quarter turn for the rotator.
  const double theta = vn_wrap180(theta_deg);
  *invert = fabs(theta) > 90.0;
  *angle_deg = vn_wrap180(-theta + (*invert ? 180.0 : 0.0));
}

VnMeasureCorrection vn_measure_correction(const VnMeasureResult *r) {
  VnMeasureCorrection c;
  if (r->shape.fitted) {
    vn_measure_correction_rule(r->shape.theta_deg, &c.invert, &c.angle_deg);
    c.delay_frames = -r->shape.offset_frames;
  } else {
    c.invert = r->invert;
    c.angle_deg = r->angle_deg;
    c.delay_frames = -r->offset_frames;
  }
  return c;
}

// "%.*f", without the sign of a value that rounds to zero.
static void format_fixed(char *buf, size_t size, double value, int decimals) {
  snprintf(buf, size, "%.*f", decimals, value);
  if (buf[0] == '-' && strspn(buf + 1, "0.") == strlen(buf + 1)) {
    memmove(buf, buf + 1, strlen(buf));
  }
}

static double clamp(double x, double lo, double hi) {
  return x < lo ? lo : x > hi ? hi : x;
}

// 4 decimals of a sample keep the 0.05-sample accuracy the fit can reach
// with room to spare; 3 of a degree are far below what anyone hears.
void vn_step_correction(const VnMeasureResult *r, VnStepCorrection *c) {
  memset(c, 0, sizeof *c);
  const VnMeasureCorrection k = vn_measure_correction(r);
  c->stereo = r->target_channels == 2;
  c->invert = k.invert;
  format_fixed(c->delay_smp, sizeof c->delay_smp, k.delay_frames, 4);
  format_fixed(c->angle_deg, sizeof c->angle_deg, vn_wrap180(k.angle_deg), 3);
  c->allpass = r->shape.fitted;
  if (c->allpass) {
    // Held to the controls' ranges, so that the words are always accepted.
    snprintf(c->frequency_hz, sizeof c->frequency_hz, "%.6g",
             clamp(r->shape.frequency_hz, ALLPASS_FREQUENCY_MIN_HZ,
                   ALLPASS_FREQUENCY_MAX_HZ));
    snprintf(c->q, sizeof c->q, "%.6g",
             clamp(r->shape.q, ALLPASS_Q_MIN, ALLPASS_Q_MAX));
    c->stages = r->shape.stages < 1                    ? 1
                : r->shape.stages > ALLPASS_MAX_STAGES ? ALLPASS_MAX_STAGES
                                                       : r->shape.stages;
    c->order = r->shape.order == ALLPASS_ORDER_FIRST ? ALLPASS_ORDER_FIRST
                                                     : ALLPASS_ORDER_SECOND;
  }
}

// Words written one after the other into one buffer; ok turns false, for
// good, when one does not fit.
typedef struct {
  char *buf;
  size_t size, used;
  char **words;
  size_t max, n;
  bool ok;
} Words;

static void add_word(Words *w, const char *fmt, ...) VN_PRINTF(2, 3);

static void add_word(Words *w, const char *fmt, ...) {
  if (!w->ok || w->n >= w->max || w->used >= w->size) {
    w->ok = false;
    return;
  }
  va_list ap;
  va_start(ap, fmt);
  const int len = vsnprintf(w->buf + w->used, w->size - w->used, fmt, ap);
  va_end(ap);
  if (len < 0 || (size_t)len >= w->size - w->used) {
    w->ok = false;
    return;
  }
  w->words[w->n++] = w->buf + w->used;
  w->used += (size_t)len + 1;
}

size_t vn_measure_correction_words(const VnMeasureResult *r, char *buf,
                                   size_t buf_size, char **words,
                                   size_t max_words) {
  VnStepCorrection c;
  vn_step_correction(r, &c);
  Words w = {buf, buf_size, 0, words, max_words, 0, true};
  add_word(&w, "%s", c.stereo ? "strip-stereo" : "strip");
  if (c.invert && c.stereo) {
    add_word(&w, "invert_left=on");
    add_word(&w, "invert_right=on");
  } else if (c.invert) {
    add_word(&w, "invert=on");
  }
  add_word(&w, "delay=%ssmp", c.delay_smp);
  add_word(&w, "angle=%s", c.angle_deg);
  if (c.allpass) {
    add_word(&w, "frequency=%s", c.frequency_hz);
    add_word(&w, "q=%s", c.q);
    add_word(&w, "stages=%d", c.stages);
    add_word(&w, "order=%d", c.order);
  }
  return w.ok ? w.n : 0;
}
