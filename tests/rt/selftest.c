// SPDX-License-Identifier: GPL-3.0-or-later
// rt_run(), and the proof that the shim can fail: a fake plugin whose run()
// allocates, locks a mutex and writes must be caught, each kind on its own,
// and the same calls outside run() must not be counted.
#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <unistd.h>

#include "rt.h"
#include "shim.h"

bool rt_run(const plugin_info_t *p, LV2_Handle h, uint32_t n_frames,
            const char *where) {
  const shim_counts_t before = shim_counts;
  shim_in_run = 1;
  p->d->run(h, n_frames);
  shim_in_run = 0;
  ++rt_tally.runs;
  const uint64_t a = shim_counts.alloc - before.alloc;
  const uint64_t l = shim_counts.lock - before.lock;
  const uint64_t s = shim_counts.sys - before.sys;
  return rt_check(a == 0 && l == 0 && s == 0,
                  "%s: %s run(%u) made %llu allocation, %llu lock and %llu "
                  "system calls",
                  where, p->uri, n_frames, (unsigned long long)a,
                  (unsigned long long)l, (unsigned long long)s);
}

// The fake plugin: its handle says what its run() does wrong.
enum { FAKE_CLEAN, FAKE_MALLOC, FAKE_LOCK, FAKE_WRITE, FAKE_FOPEN };
static int fake_mode;
static pthread_mutex_t fake_mutex = PTHREAD_MUTEX_INITIALIZER;

static void fake_run(LV2_Handle h, uint32_t n) {
  (void)h, (void)n;
  if (fake_mode == FAKE_MALLOC) {
    void *volatile p = malloc(16); // volatile: or the pair is optimised out
    free(p);
  } else if (fake_mode == FAKE_LOCK) {
    pthread_mutex_lock(&fake_mutex);
    pthread_mutex_unlock(&fake_mutex);
  } else if (fake_mode == FAKE_WRITE) {
    (void)!write(-1, "", 0); // fails (EBADF) but is still a system call
  } else if (fake_mode == FAKE_FOPEN) {
    FILE *f = fopen("/dev/null", "r");
    if (f) {
      fclose(f);
    }
  }
}

static const LV2_Descriptor fake_descriptor = {
    "urn:vernier-test:fake", NULL, NULL, NULL, fake_run, NULL, NULL, NULL};

uint64_t rt_shim_selftest(void) {
  const shim_counts_t saved = shim_counts;
  const rt_tally_t tally = rt_tally;
  plugin_info_t fake = {.d = &fake_descriptor, .uri = "urn:vernier-test:fake"};
  uint64_t failed = 0;
  // Outside run(): not counted.
  fake_mode = FAKE_MALLOC;
  fake_run(NULL, 0);
  fake_mode = FAKE_LOCK;
  fake_run(NULL, 0);
  failed += shim_counts.alloc != saved.alloc || shim_counts.lock != saved.lock;
  // Inside: each kind counted, and rt_run() says so.
  const int modes[] = {FAKE_MALLOC, FAKE_LOCK, FAKE_WRITE, FAKE_FOPEN};
  for (int i = 0; i < 4; ++i) {
    fake_mode = modes[i];
    const shim_counts_t before = shim_counts;
    const uint64_t fails_before = rt_tally.failures;
    rt_quiet = 1;
    const bool clean = rt_run(&fake, NULL, 64, "shim selftest");
    rt_quiet = 0;
    rt_tally.failures = fails_before; // expected, not a failure
    const bool counted =
        (modes[i] == FAKE_MALLOC && shim_counts.alloc >= before.alloc + 2) ||
        (modes[i] == FAKE_LOCK && shim_counts.lock >= before.lock + 2) ||
        (modes[i] >= FAKE_WRITE && shim_counts.sys > before.sys);
    if (clean || !counted) {
      printf("  failed: the shim missed fake run() mode %d\n", modes[i]);
      ++failed;
    }
  }
  fake_mode = FAKE_CLEAN;
  if (!rt_run(&fake, NULL, 64, "shim selftest (clean)")) {
    ++failed;
  }
  shim_counts = saved;
  rt_tally = tally; // the fake runs are not the plugins' runs
  return failed;
}
