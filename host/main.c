// SPDX-License-Identifier: GPL-3.0-or-later
// `vernier`: dispatch to a sub-command, top-level --help and --version.
#include <errno.h>
#include <stdio.h>
#include <string.h>

#include "measure.h"
#include "vernier.h"

typedef struct {
  const char *name;
  int (*main)(int argc, char **argv);
  const char *summary;
} Command;

// A new sub-command is one line here and one entry point.
static const Command commands[] = {
    {"process", vn_process_main,
     "run an audio file through a chain of LV2 plugins"},
    {"measure", vn_measure_main,
     "measure offset, polarity and phase between recordings of one source"},
    {"list", vn_list_main, "list installed LV2 plugins, ours first"},
    {"describe", vn_describe_main,
     "one plugin's ports, ranges, latency and presets"},
    {"demo", vn_demo_main, "make up a two-path bass recording and measure it"},
};

#define N_COMMANDS (sizeof commands / sizeof commands[0])

static void usage(FILE *out) {
  fputs("usage: vernier SUB-COMMAND [OPTIONS] [ARGS]\n"
        "       vernier --help | --version\n"
        "\n"
        "Sub-commands:\n",
        out);
  for (size_t i = 0; i < N_COMMANDS; ++i) {
    fprintf(out, "  %-10s %s\n", commands[i].name, commands[i].summary);
  }
  fputs("\n"
        "'vernier SUB-COMMAND --help' shows its options. Plugins are\n"
        "looked for on LV2_PATH. Exit status: 0 success, 2 usage, 3 input,\n"
        "4 output, 5 plugin, 6 processing, 7 no reliable offset found\n"
        "(measure), 130/143 interrupted.\n",
        out);
}

static void list_commands(char *buf, size_t size) {
  buf[0] = '\0';
  for (size_t i = 0; i < N_COMMANDS; ++i) {
    const size_t used = strlen(buf);
    snprintf(buf + used, size - used, "%s%s", i ? ", " : "", commands[i].name);
  }
}

// Output to a full disk or a closed pipe must not pass for success.
static int finish_stdout(int rc) {
  if (fflush(stdout) != 0 || ferror(stdout)) {
    vn_error("cannot write to standard output (%s)", strerror(errno));
    return rc == VN_EXIT_OK ? VN_EXIT_OUTPUT : rc;
  }
  return rc;
}

int main(int argc, char **argv) {
  char names[128];
  list_commands(names, sizeof names);
  if (argc < 2) {
    vn_error("no sub-command given; sub-commands: %s (see 'vernier --help')",
             names);
    return VN_EXIT_USAGE;
  }
  const char *word = argv[1];
  if (strcmp(word, "--help") == 0 || strcmp(word, "-h") == 0) {
    usage(stdout);
    return finish_stdout(VN_EXIT_OK);
  }
  if (strcmp(word, "--version") == 0) {
    printf("vernier %s\n", VERNIER_VERSION);
    return finish_stdout(VN_EXIT_OK);
  }
  for (size_t i = 0; i < N_COMMANDS; ++i) {
    if (strcmp(word, commands[i].name) == 0) {
      return finish_stdout(commands[i].main(argc - 1, argv + 1));
    }
  }
  if (word[0] == '-') {
    vn_error("unknown option '%s'; before a sub-command only --help and "
             "--version; sub-commands: %s",
             word, names);
  } else {
    vn_error("no sub-command '%s'; sub-commands: %s (see 'vernier --help')",
             word, names);
  }
  return VN_EXIT_USAGE;
}
