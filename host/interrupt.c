// SPDX-License-Identifier: GPL-3.0-or-later
#include "interrupt.h"

#include <limits.h>
#include <stddef.h>
#include <string.h>
#include <unistd.h>

#include "vernier.h"

static volatile sig_atomic_t pending_signal;
static volatile sig_atomic_t temp_is_set;
static char temp_path[PATH_MAX];

// Signal context: only async-signal-safe calls (unlink, _exit).
static void on_signal(int sig) {
  if (pending_signal != 0) {
    if (temp_is_set) {
      unlink(temp_path);
    }
    _exit(VN_EXIT_SIGNAL_BASE + sig);
  }
  pending_signal = sig;
}

void vn_interrupt_install(void) {
  // Installed even where the shell left SIGINT ignored (a background job):
  // the contract promises that SIGINT stops a run and cleans up.
  struct sigaction sa;
  memset(&sa, 0, sizeof sa);
  sa.sa_handler = on_signal;
  sigemptyset(&sa.sa_mask);
  sa.sa_flags = SA_RESTART; // reads and writes go on; the loop checks
  sigaction(SIGINT, &sa, NULL);
  sigaction(SIGTERM, &sa, NULL);
}

int vn_interrupt_pending(void) {
  return pending_signal;
}

void vn_interrupt_set_temp(const char *path) {
  temp_is_set = 0;
  if (path && strlen(path) < sizeof temp_path) {
    memcpy(temp_path, path, strlen(path) + 1);
    temp_is_set = 1;
  }
}

void vn_interrupt_hold(sigset_t *saved) {
  sigset_t block;
  sigemptyset(&block);
  sigaddset(&block, SIGINT);
  sigaddset(&block, SIGTERM);
  sigprocmask(SIG_BLOCK, &block, saved);
}

void vn_interrupt_release(const sigset_t *saved) {
  sigprocmask(SIG_SETMASK, saved, NULL);
}
