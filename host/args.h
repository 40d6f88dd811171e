// SPDX-License-Identifier: GPL-3.0-or-later
// Command-line words: options anywhere before "--", positional words
// everywhere else; numbers parsed as whole words.
#ifndef VERNIER_HOST_ARGS_H
#define VERNIER_HOST_ARGS_H

#include <stdbool.h>
#include <stddef.h>

typedef struct {
  int argc;
  char **argv;
  int next;
  bool positional_only; // after "--"
  const char *option;   // the current option word
  size_t option_length; // without any "=value"
  const char *inline_value;
} VnArgs;

typedef enum { VN_ARG_END, VN_ARG_OPTION, VN_ARG_WORD } VnArgKind;

// argv[0] is the sub-command's name and is skipped.
void vn_args_init(VnArgs *a, int argc, char **argv);
VnArgKind vn_args_next(VnArgs *a, char **word);
// The current option is long_name ("--block") or short_name ("-q", or NULL).
bool vn_args_is(const VnArgs *a, const char *long_name, const char *short_name);
// The value of the current option: "--x=value" or the next word, which may
// start with '-' ("--tail -1" is a bad value, not a missing one). NULL, with
// the error printed, when there is none; what says what the value is.
const char *vn_args_value(VnArgs *a, const char *what);
// A flag takes no "=value"; false, with the error printed, when it has one.
bool vn_args_flag(const VnArgs *a);
// Every sub-command's --help (prints usage) and --version: true when the
// current option was one of them and has been answered on stdout.
bool vn_args_help_or_version(const VnArgs *a, const char *usage);

// strtod over the whole word, finite. Spaces, "", "1x", "nan", "inf" fail.
bool vn_parse_number(const char *text, double *value);
// A decimal integer over the whole word (optional sign).
bool vn_parse_integer(const char *text, long long *value);

#endif
