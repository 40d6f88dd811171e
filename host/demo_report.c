// SPDX-License-Identifier: GPL-3.0-or-later
// What `vernier demo` prints beside `vernier measure`'s own report.
#include <math.h>
#include <stdio.h>

#include "demo.h"
#include "time_value.h"

#define LOW_E_HZ 41.2 // the riff's lowest note, E1

void vn_demo_print_scene(FILE *out, const VnDemoScene *s, const char *dir) {
  fprintf(out,
          "An invented scene, made up in code (not a recording): a bass "
          "line in E,\n"
          "%.0f s at %.0f Hz, recorded two ways, into %s:\n"
          "  bass-amp.wav  through an amp cabinet and a microphone %.1f cm "
          "in front\n"
          "                of its speaker, whose cable has pins 2 and 3 "
          "swapped\n"
          "  bass-di.wav   straight from the instrument (the DI)\n"
          "The amp track is the reference (REF), the DI the target "
          "(TARGET):\n"
          "measure moves, flips and turns the DI to meet the amp track. The\n"
          "cabinet lags the low notes more than the high ones; an all-pass "
          "can\n"
          "give the DI such a lag, but cannot take it out of the amp "
          "track.\n\n",
          (double)s->frames / s->rate_hz, s->rate_hz, dir,
          VN_DEMO_MIC_DISTANCE_M * 100.0);
}

static const char *status_words(VnFoundStatus status) {
  switch (status) {
  case VN_FOUND:
    return "found";
  case VN_NOT_FOUND_NO_COMMON:
    return "nothing reliable: no common content";
  default:
    return "nothing reliable: the peak lies at the edge of the range";
  }
}

// Where the phase left is shown: the low E, the box resonance, the
// cabinet's own all-pass, and 1 kHz.
static const double phase_at_hz[] = {LOW_E_HZ, 110.0, 300.0, 1000.0};
#define N_PHASE_AT (sizeof phase_at_hz / sizeof phase_at_hz[0])

static void print_phase_row(FILE *out, const VnDemoScene *s, const char *name,
                            const VnMeasureCorrection *c,
                            const VnShapeFit *allpass) {
  fprintf(out, "             %-10s", name);
  for (size_t i = 0; i < N_PHASE_AT; ++i) {
    const double deg = vn_demo_phase_left_deg(s, c, allpass, phase_at_hz[i]);
    fprintf(out, "  %+6.0f", fabs(deg) < 0.5 ? 0.0 : deg);
  }
  fprintf(out, " deg\n");
}

// The fitted all-pass, what it does, and the phase it leaves beside the
// constant angle's, both from the cabinet's own filters.
static void print_allpass(FILE *out, const VnDemoScene *s,
                          const VnMeasureResult *r) {
  if (!r->shape.fitted) {
    fprintf(out, "  all-pass   none fitted\n");
    return;
  }
  const VnShapeFit *ap = &r->shape;
  fprintf(out,
          "  all-pass   fitted %.0f Hz, q %.2f, %d stage%s, on the DI: it "
          "delays the\n"
          "             DI's low notes more than its high ones, as the "
          "cabinet delays\n"
          "             the amp track's; the plain delay is then %.2f frames, "
          "not %.2f.\n"
          "             Phase left between the tracks, from the cabinet's "
          "filters\n"
          "             (0 deg: they add up; 180: they cancel):\n"
          "             %-10s",
          ap->frequency_hz, ap->q, ap->stages, ap->stages == 1 ? "" : "s",
          -ap->offset_frames, -r->offset_frames, "");
  for (size_t i = 0; i < N_PHASE_AT; ++i) {
    char head[16];
    if (phase_at_hz[i] >= 1000.0) {
      snprintf(head, sizeof head, "%.0f kHz", phase_at_hz[i] / 1000.0);
    } else {
      snprintf(head, sizeof head, "%.0f Hz", phase_at_hz[i]);
    }
    fprintf(out, "  %6s", head);
  }
  fputc('\n', out);
  const VnMeasureCorrection constant = {
      .invert = r->invert,
      .angle_deg = r->angle_deg,
      .delay_frames = -r->offset_frames,
  };
  const VnMeasureCorrection shaped = vn_measure_correction(r);
  print_phase_row(out, s, "corrected", &constant, NULL);
  print_phase_row(out, s, "shaped", &shaped, ap);
}

void vn_demo_print_truth(FILE *out, const VnDemoScene *s,
                         const VnMeasureResult *r) {
  const double rate = s->rate_hz, air = s->air_delay_s * rate;
  const VnCabinetStage *st = s->stage;
  fprintf(out, "\nWhat was built in, and what measure found:\n");
  fprintf(out,
          "  air delay  %.1f cm of air at %.0f C = %.4f ms = %.2f frames\n",
          VN_DEMO_MIC_DISTANCE_M * 100.0, VN_DEMO_AIR_TEMP_C,
          s->air_delay_s * 1e3, air);
  fprintf(out,
          "  cabinet    high-pass %.0f Hz, resonance %+.0f dB at %.0f Hz, "
          "roll-off\n"
          "             %.0f Hz, all-pass %.0f Hz. They delay the amp track "
          "by %.0f\n"
          "             frames at %.1f Hz, %.0f at %.0f Hz, %.0f at 1 kHz "
          "(group delay):\n"
          "             no one offset fits every note\n",
          st[VN_CAB_HIGHPASS].freq_hz, st[VN_CAB_RESONANCE].gain_db,
          st[VN_CAB_RESONANCE].freq_hz, st[VN_CAB_LOWPASS].freq_hz,
          st[VN_CAB_ALLPASS].freq_hz, vn_demo_group_delay_frames(s, LOW_E_HZ),
          LOW_E_HZ, vn_demo_group_delay_frames(s, 110.0), 110.0,
          vn_demo_group_delay_frames(s, 1000.0));
  double offset = NAN, theta = NAN;
  vn_demo_predict(s, &r->curves, &offset, &theta);
  fprintf(out,
          "  offset     expected %+.2f frames: the DI is early by the air "
          "delay plus\n"
          "             the cabinet's group delay, averaged as measure "
          "weighs the band\n"
          "             (each frequency by how coherent the tracks are "
          "there)\n",
          offset);
  if (r->status != VN_FOUND) {
    fprintf(out, "             found    %s\n", status_words(r->status));
    return;
  }
  fprintf(out, "             found    %+.2f +/- %.2f frames\n",
          r->offset_frames, r->offset_sigma_frames);
  fprintf(out,
          "  polarity   built in %s; with the cabinet's phase, expected "
          "%+.1f deg\n"
          "             found    %s, %+.1f +/- %.1f deg\n",
          s->inverted ? "inverted" : "as is", theta,
          r->invert ? "inverted" : "as is", r->theta_deg, r->theta_sigma_deg);
  print_allpass(out, s, r);
  fprintf(out,
          "  %.0f-%.0f Hz  sum as recorded %+.1f dB, polarity only %+.1f dB,\n",
          VN_MEASURE_LOW_LO_DEFAULT_HZ, VN_MEASURE_LOW_HI_DEFAULT_HZ,
          r->as_recorded.low_db, r->polarity_only.low_db);
  if (r->shape.fitted) {
    fprintf(out,
            "             corrected %+.1f dB, with the all-pass %+.1f dB\n",
            r->corrected.low_db, r->shaped.low_db);
  } else {
    fprintf(out, "             corrected %+.1f dB\n", r->corrected.low_db);
  }
}

void vn_demo_print_files(FILE *out, const char *dir, double louder_db) {
  fprintf(out,
          "\nIn %s:\n"
          "  bass-amp.wav, bass-di.wav  the two tracks (24-bit WAV)\n"
          "  bass-di-aligned.wav        the DI corrected to meet the amp "
          "track\n"
          "  bass-di-aligned.svg        the picture\n"
          "  bass-di-aligned.lv2/       the presets: copy the folder into "
          "~/.lv2\n"
          "  commands.sh                the `vernier process` line that "
          "made it\n"
          "  report.json                the measurement, for scripts\n"
          "  bass-sum-before.wav        amp + DI as recorded\n"
          "  bass-sum-after.wav         amp + DI corrected, %+.1f dB RMS\n"
          "\nTo listen, turn the monitors down first: the corrected sum is "
          "louder.\n"
          "Then play bass-sum-before.wav and bass-sum-after.wav, or in a "
          "DAW\n"
          "bass-amp.wav with bass-di.wav, then with bass-di-aligned.wav.\n",
          dir, louder_db);
}
