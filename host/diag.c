// SPDX-License-Identifier: GPL-3.0-or-later
// Messages on stderr: errors, warnings and the progress line.
#include <stdarg.h>
#include <stdbool.h>
#include <stdio.h>

#include "vernier.h"

static bool progress_visible;

static void emit(const char *prefix, const char *fmt, va_list ap) {
  char line[2048];
  vsnprintf(line, sizeof line, fmt, ap);
  vn_progress_clear();
  fprintf(stderr, "vernier: %s%s\n", prefix, line);
}

void vn_error(const char *fmt, ...) {
  va_list ap;
  va_start(ap, fmt);
  emit("", fmt, ap);
  va_end(ap);
}

void vn_warn(const char *fmt, ...) {
  va_list ap;
  va_start(ap, fmt);
  emit("warning: ", fmt, ap);
  va_end(ap);
}

void vn_progress_show(int percent) {
  fprintf(stderr, "\rvernier: %3d%%", percent);
  progress_visible = true;
}

void vn_progress_clear(void) {
  if (progress_visible) {
    fputs("\r             \r", stderr);
    progress_visible = false;
  }
}
