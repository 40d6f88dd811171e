// SPDX-License-Identifier: GPL-3.0-or-later
// SIGINT and SIGTERM: noted by the handler, acted on by the processing loop,
// which removes the temporary file and exits 128 + the signal.
#ifndef VERNIER_HOST_INTERRUPT_H
#define VERNIER_HOST_INTERRUPT_H

#include <signal.h>

void vn_interrupt_install(void);
// The signal received, or 0.
int vn_interrupt_pending(void);
// The temporary file a second signal removes before exiting at once (in
// case the loop is stuck, say in a plugin's run()). NULL: none.
void vn_interrupt_set_temp(const char *path);
// Held while OUT is put in place, so that it happens whole or not at all.
void vn_interrupt_hold(sigset_t *saved);
void vn_interrupt_release(const sigset_t *saved);

#endif
