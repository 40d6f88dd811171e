// SPDX-License-Identifier: GPL-3.0-or-later
// `vernier demo`: an invented two-path bass recording, made in code, and
// the truth built into it.
//
//   demo_scene.c  the bass line, the cabinet, the noise; the response and
//                 what it predicts for the measurement
//   demo_report.c what the demo prints about the scene and the findings
//   demo.c        the command: the files, `vernier measure`, the sums
//
// The scene (our own invention): a bass line in E recorded twice, straight
// from the instrument (the DI) and through an amp cabinet and a microphone
// 47.3 cm in front of its speaker whose cable has pins 2 and 3 swapped.
// The amp track is REF and the DI TARGET: measure corrects TARGET, and the
// cabinet's phase lag can be added to the DI (by an all-pass), not taken
// out of the amp track.
#ifndef VERNIER_HOST_DEMO_H
#define VERNIER_HOST_DEMO_H

#include <complex.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdio.h>

#include "measure.h"

#define VN_DEMO_RATE_HZ 48000
#define VN_DEMO_SECONDS 12
#define VN_DEMO_FRAMES ((size_t)VN_DEMO_RATE_HZ * VN_DEMO_SECONDS)
#define VN_DEMO_MIC_DISTANCE_M 0.473
#define VN_DEMO_AIR_TEMP_C 20.0

// One second-order section, a0 normalised to 1.
typedef struct {
  double b0, b1, b2, a1, a2;
} VnBiquad;

enum {
  VN_CAB_HIGHPASS,  // the cabinet's low-end roll-off
  VN_CAB_RESONANCE, // its box resonance, a peak
  VN_CAB_LOWPASS,   // the speaker's top-end roll-off
  VN_CAB_ALLPASS,   // a phase turn around the midrange (cone and mic)
  VN_CAB_STAGES
};

typedef struct {
  double freq_hz, q, gain_db; // gain_db for the resonance only
} VnCabinetStage;

typedef struct {
  double rate_hz;
  size_t frames;
  double air_delay_s; // the microphone's distance at the air temperature
  VnCabinetStage stage[VN_CAB_STAGES];
  VnBiquad biquad[VN_CAB_STAGES];
  bool inverted;        // pins 2 and 3 swapped in the mic cable
  double di_noise_dbfs; // RMS of the DI's own noise
  double room_noise_db; // RMS of the room's, relative to the amp track's
  double di_peak_dbfs, amp_peak_dbfs;
} VnDemoScene;

void vn_demo_scene_init(VnDemoScene *s);

// The two tracks, VN_DEMO_FRAMES each, as floating point in -1 .. 1.
void vn_demo_render(const VnDemoScene *s, double *di, double *amp);

// The cabinet's filters alone (no polarity, no air) at freq_hz.
double complex vn_demo_cabinet_at(const VnDemoScene *s, double freq_hz);
// Their group delay in frames at freq_hz.
double vn_demo_group_delay_frames(const VnDemoScene *s, double freq_hz);

// What the built-in response predicts `vernier measure` finds for the DI
// against the amp track, given the weights it gave each bin (its coherence
// and REF's level in the curves): the offset in frames (< 0: the DI is
// early) and the angle in degrees.
void vn_demo_predict(const VnDemoScene *s, const VnMeasureCurves *c,
                     double *offset_frames, double *theta_deg);

// The phase left between the amp track and the DI corrected by c and
// allpass (NULL or not fitted: none), in degrees at freq_hz, from the
// scene's own filters: 0 the two add, 180 they cancel.
double vn_demo_phase_left_deg(const VnDemoScene *s,
                              const VnMeasureCorrection *c,
                              const VnShapeFit *allpass, double freq_hz);

// What the demo prints: the scene and where it is, what was built in beside
// what was found, and the files with how to listen (louder_db: the
// corrected sum's RMS over the sum as recorded).
void vn_demo_print_scene(FILE *out, const VnDemoScene *s, const char *dir);
void vn_demo_print_truth(FILE *out, const VnDemoScene *s,
                         const VnMeasureResult *r);
void vn_demo_print_files(FILE *out, const char *dir, double louder_db);

#endif
