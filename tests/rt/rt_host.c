// SPDX-License-Identifier: GPL-3.0-or-later
// Real-time safety host for every plugin of the bundle, both variants:
//
//   rt_host BUNDLE_DIR     BUNDLE_DIR is build/vernier.lv2 (for the Turtle)
//
// Checks, each printed "ok NAME" or "FAIL NAME: why" for tests/rt/rt.sh:
//   shim       the counting shim sees a fake plugin's malloc, lock and write
//   sessions   seeded random sessions (sessions.c): no allocation, lock or
//              system call in run(), output finite and bounded, latency
//              written every run and constant per rate
//   bad-input  NaN, infinities, +-FLT_MAX, denormals, squares, DC (bad_input.c)
//   controls   out-of-range and non-finite control values act as clamped
//
// VERNIER_RT_SEED sets the first seed (default 1), VERNIER_RT_SEEDS how many
// seeds the sessions run (default 2). Every failure prints its seed.
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include "rt.h"
#include "shim.h"

rt_tally_t rt_tally;
int rt_quiet;

uint64_t rng_next(rng_t *r) {
  uint64_t z = (r->s += 0x9e3779b97f4a7c15u);
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9u;
  z = (z ^ (z >> 27)) * 0x94d049bb133111ebu;
  return z ^ (z >> 31);
}

double rng_unit(rng_t *r) {
  return (double)(rng_next(r) >> 11) * (1.0 / 9007199254740992.0);
}

uint32_t rng_below(rng_t *r, uint32_t n) {
  return n ? (uint32_t)(rng_unit(r) * n) : 0;
}

// At most this many failure lines, so a broken build does not flood the log.
#define MAX_PRINTED 30u

bool rt_check(bool ok, const char *fmt, ...) {
  ++rt_tally.checks;
  if (!ok) {
    if (++rt_tally.failures <= MAX_PRINTED && !rt_quiet) {
      va_list ap;
      va_start(ap, fmt);
      fputs("  failed: ", stdout);
      vprintf(fmt, ap);
      fputc('\n', stdout);
      va_end(ap);
    }
  }
  return ok;
}

static uint64_t env_u64(const char *name, uint64_t fallback) {
  const char *v = getenv(name);
  return v && *v ? strtoull(v, NULL, 10) : fallback;
}

static double now_s(void) {
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static void report(const char *name, uint64_t failures, double t0) {
  if (failures) {
    printf("FAIL %s: %llu failed checks (%.1f s)\n", name,
           (unsigned long long)failures, now_s() - t0);
  } else {
    printf("ok %s (%.1f s)\n", name, now_s() - t0);
  }
  fflush(stdout);
}

int main(int argc, char **argv) {
  setvbuf(stdout, NULL, _IOLBF, 0); // so that no run() waits on a flush
  if (argc != 2) {
    fprintf(stderr, "usage: rt_host BUNDLE_DIR\n");
    return 2;
  }
  if (!shim_ready()) {
    printf("FAIL shim: the interposed functions did not resolve\n");
    return 1;
  }
  const double t_start = now_s();
  static plugin_info_t plugins[RT_MAX_PLUGINS];
  const uint32_t n = rt_load_plugins(argv[1], plugins, RT_MAX_PLUGINS);
  if (n == 0 || rt_bounds_setup() != 0) {
    printf("FAIL setup: plugins or bounds could not be had from %s\n", argv[1]);
    return 1;
  }
  const uint64_t seed = env_u64("VERNIER_RT_SEED", 1);
  const uint32_t n_seeds = (uint32_t)env_u64("VERNIER_RT_SEEDS", 2);
  printf(
      "rt: %u plugins, seeds %llu..%llu (VERNIER_RT_SEED, VERNIER_RT_SEEDS)\n",
      n, (unsigned long long)seed, (unsigned long long)(seed + n_seeds - 1));
  uint64_t failed = 0, f;
  double t0 = now_s();
  report("shim", f = rt_shim_selftest(), t0), failed += f;
  t0 = now_s();
  report("sessions", f = rt_sessions(plugins, n, seed, n_seeds), t0),
      failed += f;
  t0 = now_s();
  report("bad-input", f = rt_bad_input(plugins, n, seed), t0), failed += f;
  t0 = now_s();
  report("controls", f = rt_bad_controls(plugins, n, seed), t0), failed += f;
  printf(
      "rt: %llu sessions, %llu run() calls, %llu blocks, %llu frames, "
      "%llu control changes, %llu activations, %llu reconnections, "
      "%llu bad-input cases, %llu out-of-range control cases; "
      "in run(): %llu allocations, %llu lock calls, %llu system calls; "
      "%llu checks, %llu failed; %.1f s\n",
      (unsigned long long)rt_tally.sessions, (unsigned long long)rt_tally.runs,
      (unsigned long long)rt_tally.blocks, (unsigned long long)rt_tally.frames,
      (unsigned long long)rt_tally.control_changes,
      (unsigned long long)rt_tally.activations,
      (unsigned long long)rt_tally.reconnects,
      (unsigned long long)rt_tally.bad_cases,
      (unsigned long long)rt_tally.clamp_cases,
      (unsigned long long)shim_counts.alloc,
      (unsigned long long)shim_counts.lock, (unsigned long long)shim_counts.sys,
      (unsigned long long)rt_tally.checks,
      (unsigned long long)rt_tally.failures, now_s() - t_start);
  return failed ? 1 : 0;
}
