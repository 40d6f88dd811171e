// SPDX-License-Identifier: GPL-3.0-or-later
// Counts the calls a real-time audio callback must never make: heap
// allocation, mutexes, and file system calls. shim.c defines malloc, free,
// pthread_mutex_lock, write and the rest in the test binary itself, so that
// every call in the process (from the plugin code linked in, from FFTW, from
// libc's own stdio) reaches them first; each forwards to the real one found
// with dlsym(RTLD_NEXT), and counts only while shim_in_run is set. The test
// sets it just around each run() call. Not for an ASan build: ASan replaces
// malloc itself.
#ifndef VERNIER_TESTS_RT_SHIM_H
#define VERNIER_TESTS_RT_SHIM_H

#include <stdint.h>

typedef struct {
  uint64_t alloc; // malloc calloc realloc free posix_memalign aligned_alloc
                  // memalign valloc
  uint64_t lock;  // pthread_mutex_lock trylock unlock
  uint64_t sys;   // read write open open64 openat close fopen fopen64
} shim_counts_t;

// Set around run() only: a call made while it is non-zero is counted.
extern volatile int shim_in_run;
extern shim_counts_t shim_counts;

// 1 when every interposed function resolved to a real one; 0 means the
// counts cannot be trusted (the binary was built wrong).
int shim_ready(void);

#endif
