// SPDX-License-Identifier: GPL-3.0-or-later
// What every part of the host shares: the exit codes of the command-line
// contract, the one-line messages on stderr, and the sub-command entries.
#ifndef VERNIER_HOST_VERNIER_H
#define VERNIER_HOST_VERNIER_H

#ifndef VERNIER_VERSION
#define VERNIER_VERSION "unknown"
#endif

// Fixed by the contract (spec/cli.md); scripts and tests depend on them.
typedef enum {
  VN_EXIT_OK = 0,
  VN_EXIT_USAGE = 2,
  VN_EXIT_INPUT = 3,
  VN_EXIT_OUTPUT = 4,
  VN_EXIT_PLUGIN = 5,
  VN_EXIT_PROCESSING = 6,
  VN_EXIT_SIGNAL_BASE = 128, // + the signal number
} VnExit;

#define VN_PRINTF(fmt_index, first_arg)                                        \
  __attribute__((format(printf, fmt_index, first_arg)))

// "vernier: <message>\n" on stderr, written as one line so that a progress
// line or another process cannot split it.
void vn_error(const char *fmt, ...) VN_PRINTF(1, 2);
// "vernier: warning: <message>\n"; printed even with --quiet.
void vn_warn(const char *fmt, ...) VN_PRINTF(1, 2);

// The percentage shown in place on a terminal. Errors and warnings clear it
// first, so they never land in the middle of it.
void vn_progress_show(int percent);
void vn_progress_clear(void);

// Sub-commands. argv[0] is the sub-command's own name.
int vn_process_main(int argc, char **argv);
int vn_list_main(int argc, char **argv);
int vn_describe_main(int argc, char **argv);
int vn_demo_main(int argc, char **argv);

#endif
