// SPDX-License-Identifier: GPL-3.0-or-later
// Times on the command line: a value for a control whose unit is the
// millisecond (units:ms) may carry a unit, converted to the port's ms:
//
//   delay=1.5       milliseconds, the port's own unit
//   delay=1.5ms     the same
//   delay=250us     microseconds
//   delay=0.02s     seconds
//   delay=-0.37smp  samples at the input file's rate
//   delay=34cm      the time sound takes through that much air; also m, mm,
//   delay=2.1m      ft and in; at 20 C unless --air-temp says otherwise
//
// Speed of sound in air (common practice, dry air, the ideal-gas formula):
// c = 331.3 sqrt(1 + T / 273.15) m/s, 343.2 m/s at 20 C, so 1 m is
// 2.9136 ms. Published tables differ from it by about 0.1%.
//
// Beyond the range (-20 .. +100 ms) of the Fine Delay's delay, and of the
// Align Strip's, `vernier process` moves the file itself by whole frames, up to
// VN_HOST_SHIFT_MAX_S either way, and gives the plugin the rest: offline it can
// read ahead as far as it likes, where a plugin's look-ahead is latency.
#ifndef VERNIER_HOST_TIME_VALUE_H
#define VERNIER_HOST_TIME_VALUE_H

#include <stdbool.h>
#include <stdint.h>

#include "ports.h"
#include "text.h"

#define VN_AIR_TEMP_DEFAULT_C 20.0
// From a winter stage to a summer one; the formula holds far beyond.
#define VN_AIR_TEMP_MIN_C (-50.0)
#define VN_AIR_TEMP_MAX_C 60.0
// A minute: an alignment, not an edit, and far below any overflow.
#define VN_HOST_SHIFT_MAX_S 60.0

typedef struct {
  double rate_hz;    // the input's: what smp means
  double air_temp_c; // what a distance means
} VnTimeContext;

// m/s at air_temp_c.
double vn_speed_of_sound_m_s(double air_temp_c);

// --air-temp C. Returns an exit code (the error printed).
int vn_parse_air_temp(const char *text, double *air_temp_c);

// A control input whose unit is the millisecond takes times with units.
bool vn_port_is_time(const VnPortInfo *port);

// NUMBER[UNIT] as milliseconds; false when it is not a time.
bool vn_time_parse_ms(const char *text, const VnTimeContext *ctx, double *ms);

// The units, for messages and help: "ms (the default), us, s, smp (samples
// at 48000 Hz), m, cm, mm, ft, in (of air at 20 C)".
void vn_time_units_help(VnText *t, const VnTimeContext *ctx);

// The delay control of the Fine Delay and of the Align Strip (both
// variants): the host may shift beyond its range.
bool vn_time_host_can_shift(const char *plugin_uri, const char *symbol);

// ms lies outside lo_ms .. hi_ms: *host_frames is the whole frames beyond
// the range (negative: earlier) and *plugin_ms the rest, within it. false
// when |ms| is beyond VN_HOST_SHIFT_MAX_S.
bool vn_time_split(double ms, float lo_ms, float hi_ms, double rate_hz,
                   int64_t *host_frames, float *plugin_ms);

// "-960 .. 4800 frames at 48000 Hz, -6.864 .. 34.32 m of air at 20 C"
void vn_time_describe_range(VnText *t, float lo_ms, float hi_ms,
                            const VnTimeContext *ctx);

#endif
