// SPDX-License-Identifier: GPL-3.0-or-later
// Shared by the real-time safety host's files: what it knows of each plugin
// (ports from the bundle's Turtle, read with lilv), the bounds it holds the
// output to, a seeded random generator, and the tallies it reports.
#ifndef VERNIER_TESTS_RT_RT_H
#define VERNIER_TESTS_RT_RT_H

#include <stdbool.h>
#include <stdint.h>

#include <lv2/core/lv2.h>

#define RT_MAX_PORTS 16u
#define RT_MAX_CHANNELS 2u
#define RT_MAX_PLUGINS 16u
#define RT_MAX_BLOCK 8192u
#define RT_N_RATES 6u

typedef enum {
  PORT_CONTROL_IN,
  PORT_LATENCY,
  PORT_AUDIO_IN,
  PORT_AUDIO_OUT
} port_kind_t;

typedef struct {
  port_kind_t kind;
  float min, max, def;
  bool logarithmic, integer;
  char symbol[32];
} port_info_t;

typedef struct {
  const LV2_Descriptor *d;
  char uri[64];
  uint32_t n_ports, n_channels;
  port_info_t port[RT_MAX_PORTS];
} plugin_info_t;

extern const double rt_rates[RT_N_RATES];

// The tallies for the closing report.
typedef struct {
  uint64_t sessions, runs, blocks, frames, control_changes, bad_cases;
  uint64_t activations, reconnects, clamp_cases;
  uint64_t checks, failures;
} rt_tally_t;
extern rt_tally_t rt_tally;

// Reads every plugin of the bundle folder (build/vernier.lv2) with lilv and
// pairs it with its descriptor from the linked-in lv2_descriptor(). Returns
// the number of plugins, 0 on failure.
uint32_t rt_load_plugins(const char *bundle_dir, plugin_info_t *out,
                         uint32_t max);

// --------------------------------------------------------------- bounds ----
// Largest |out| / (input peak) the plugin may show on any input and any
// in-range controls at this rate; see bounds.c for the reasoning per plugin.
double rt_gain_bound(const plugin_info_t *p, double rate_hz);
// Frames after the last bad input sample by which the output must be
// finite again: latency, FIR lengths and the all-pass's settle time.
// huge: the bad samples were finite but near FLT_MAX, so they entered the
// all-pass's states (NaN and infinities never do) and must decay there.
uint64_t rt_memory_frames(const plugin_info_t *p, double rate_hz, bool huge);
// Setup once (designs the filters the bounds are taken from); 0 on success.
int rt_bounds_setup(void);

// ---------------------------------------------------------------- random ----
typedef struct {
  uint64_t s;
} rng_t;
uint64_t rng_next(rng_t *r);              // splitmix64
double rng_unit(rng_t *r);                // [0, 1)
uint32_t rng_below(rng_t *r, uint32_t n); // [0, n)

// Non-zero: rt_check() prints nothing (for failures the selftest expects).
extern int rt_quiet;

// A check: counts it, and on failure prints the message and counts that.
bool rt_check(bool ok, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));

// run() with the shim counting (selftest.c); false, with a message naming
// what, if run() allocated, locked or made a system call.
bool rt_run(const plugin_info_t *p, LV2_Handle h, uint32_t n_frames,
            const char *where);

// A control value drawn for a session: the range's ends, its default, a
// value inside (log-uniform where the port is logarithmic), and with bad > 0
// that share of values beyond the range, infinite or NaN (sessions.c).
float rt_draw_control(rng_t *r, const port_info_t *pi, double bad);

// A block size for a session: 0, 1, odd, powers of two and neighbours, the
// largest, anything (sessions.c).
uint32_t rt_draw_block(rng_t *r);

// The suites (sessions.c, bad_input.c). Each returns the failures it saw.
uint64_t rt_sessions(const plugin_info_t *plugins, uint32_t n_plugins,
                     uint64_t seed, uint32_t n_seeds);
uint64_t rt_bad_input(const plugin_info_t *plugins, uint32_t n_plugins,
                      uint64_t seed);
uint64_t rt_bad_controls(const plugin_info_t *plugins, uint32_t n_plugins,
                         uint64_t seed);
// The shim's own check: a fake plugin that allocates, locks and writes in
// run() must be counted, and one that does nothing must not.
uint64_t rt_shim_selftest(void);

#endif
