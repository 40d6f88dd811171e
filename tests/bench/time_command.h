// SPDX-License-Identifier: GPL-3.0-or-later
// `bench_dsp --time CMD [ARG...]`: runs CMD with its stdout sent to stderr,
// prints "WALL_S CPU_S" (elapsed; user + system of CMD) on stdout and returns
// CMD's exit status (POSIX sh has no clock finer than a second). Also the
// clock bench_dsp times its passes with.
#ifndef VERNIER_BENCH_TIME_COMMAND_H
#define VERNIER_BENCH_TIME_COMMAND_H

#include <errno.h>
#include <stdio.h>
#include <string.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

static inline double now_ns(void) {
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return (double)ts.tv_sec * 1e9 + (double)ts.tv_nsec;
}

static inline int time_command(char **argv) {
  const double t0 = now_ns();
  const pid_t pid = fork();
  if (pid < 0) {
    perror("bench_dsp: fork");
    return 125;
  }
  if (pid == 0) {
    dup2(2, 1); // our stdout carries the timing line only
    execvp(argv[0], argv);
    fprintf(stderr, "bench_dsp: cannot run %s: %s\n", argv[0], strerror(errno));
    _exit(127);
  }
  int status = 0;
  struct rusage ru;
  if (wait4(pid, &status, 0, &ru) < 0) {
    perror("bench_dsp: wait4");
    return 125;
  }
  const double wall_s = (now_ns() - t0) * 1e-9;
  const double cpu_s =
      (double)ru.ru_utime.tv_sec + (double)ru.ru_stime.tv_sec +
      1e-6 * (double)(ru.ru_utime.tv_usec + ru.ru_stime.tv_usec);
  printf("%.6f %.6f\n", wall_s, cpu_s);
  return WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
}

#endif
