// SPDX-License-Identifier: GPL-3.0-or-later
#include "args.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "vernier.h"

void vn_args_init(VnArgs *a, int argc, char **argv) {
  memset(a, 0, sizeof *a);
  a->argc = argc;
  a->argv = argv;
  a->next = 1;
}

VnArgKind vn_args_next(VnArgs *a, char **word) {
  while (a->next < a->argc) {
    char *w = a->argv[a->next++];
    if (a->positional_only || w[0] != '-') {
      *word = w;
      return VN_ARG_WORD;
    }
    if (strcmp(w, "--") == 0) {
      a->positional_only = true;
      continue;
    }
    const char *eq = w[1] == '-' ? strchr(w, '=') : NULL;
    a->option = w;
    a->option_length = eq ? (size_t)(eq - w) : strlen(w);
    a->inline_value = eq ? eq + 1 : NULL;
    *word = w;
    return VN_ARG_OPTION;
  }
  return VN_ARG_END;
}

static bool option_equals(const VnArgs *a, const char *name) {
  return name && strlen(name) == a->option_length &&
         strncmp(a->option, name, a->option_length) == 0;
}

bool vn_args_is(const VnArgs *a, const char *long_name,
                const char *short_name) {
  return option_equals(a, long_name) || option_equals(a, short_name);
}

const char *vn_args_value(VnArgs *a, const char *what) {
  if (a->inline_value) {
    return a->inline_value;
  }
  if (a->next < a->argc) {
    return a->argv[a->next++];
  }
  vn_error("%.*s needs a value: %s", (int)a->option_length, a->option, what);
  return NULL;
}

bool vn_args_flag(const VnArgs *a) {
  if (a->inline_value) {
    vn_error("%.*s takes no value (got '%s')", (int)a->option_length, a->option,
             a->option);
    return false;
  }
  return true;
}

bool vn_parse_number(const char *text, double *value) {
  if (!text[0] || isspace((unsigned char)text[0])) {
    return false;
  }
  char *end = NULL;
  errno = 0;
  const double v = strtod(text, &end);
  if (*end != '\0' || !isfinite(v) || errno == ERANGE) {
    return false;
  }
  *value = v;
  return true;
}

bool vn_parse_integer(const char *text, long long *value) {
  const char *p = text + (text[0] == '-' || text[0] == '+');
  if (!isdigit((unsigned char)*p)) {
    return false;
  }
  char *end = NULL;
  errno = 0;
  const long long v = strtoll(text, &end, 10);
  if (*end != '\0' || errno == ERANGE) {
    return false;
  }
  *value = v;
  return true;
}

bool vn_args_help_or_version(const VnArgs *a, const char *usage) {
  if (vn_args_is(a, "--help", "-h")) {
    fputs(usage, stdout);
    return true;
  }
  if (vn_args_is(a, "--version", NULL)) {
    printf("vernier %s\n", VERNIER_VERSION);
    return true;
  }
  return false;
}
