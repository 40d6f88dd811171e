// SPDX-License-Identifier: GPL-3.0-or-later
// `vernier measure --write DIR`: for every target found, the corrected file
// (rendered by `vernier process` itself, so it is what that command gives),
// the LV2 preset bundle, the picture, and at the end the command lines that
// make the files again. Every name is checked before anything is written;
// the bundle, the picture and the command lines are written under hidden
// temporary names in DIR and renamed into place, as process does with the
// audio, so each appears whole or not at all.
#define _GNU_SOURCE // asprintf
#include <dirent.h>
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "audio_file.h"
#include "interrupt.h"
#include "measure.h"
#include "measure_write.h"
#include "time_value.h"
#include "vernier.h"

#define COMMANDS_NAME "commands.sh"
// Room for every step word vn_measure_correction_words gives (at most 9).
#define STEP_WORDS_MAX 16
#define STEP_TEXT_BYTES 512

typedef struct {
  const VnMeasureResult *r;
  char *stem;        // TARGET's file name without its extension
  char *audio_path;  // DIR/<stem>-aligned.<ext>
  char *svg_path;    // DIR/<stem>-aligned.svg
  char *bundle_path; // DIR/<stem>-aligned.lv2
  char step_text[STEP_TEXT_BYTES];
  char *step_words[STEP_WORDS_MAX];
  size_t n_step_words;
} Written;

typedef struct {
  const VnMeasureOptions *opt;
  Written *targets; // the found ones
  size_t n;
  char *commands_path;
} Plan;

static bool plan_target(Written *w, const VnMeasureResult *r, const char *dir) {
  w->r = r;
  const char *name = vn_path_base(r->target_path);
  // A leading dot starts a hidden name, not an extension.
  const char *dot = strrchr(name, '.');
  const char *ext = dot && dot != name ? dot : "";
  w->stem = strndup(name, ext[0] ? (size_t)(ext - name) : strlen(name));
  char *audio = NULL, *svg = NULL, *bundle = NULL;
  const bool ok = w->stem &&
                  asprintf(&audio, "%s-aligned%s", w->stem, ext) >= 0 &&
                  asprintf(&svg, "%s-aligned.svg", w->stem) >= 0 &&
                  asprintf(&bundle, "%s-aligned.lv2", w->stem) >= 0;
  if (ok) {
    w->audio_path = vn_path_in(dir, audio);
    w->svg_path = vn_path_in(dir, svg);
    w->bundle_path = vn_path_in(dir, bundle);
  }
  free(audio);
  free(svg);
  free(bundle);
  w->n_step_words = vn_measure_correction_words(
      r, w->step_text, sizeof w->step_text, w->step_words, STEP_WORDS_MAX);
  return ok && w->audio_path && w->svg_path && w->bundle_path &&
         w->n_step_words > 0;
}

static void plan_free(Plan *p) {
  for (size_t i = 0; p->targets && i < p->n; ++i) {
    free(p->targets[i].stem);
    free(p->targets[i].audio_path);
    free(p->targets[i].svg_path);
    free(p->targets[i].bundle_path);
  }
  free(p->targets);
  free(p->commands_path);
  memset(p, 0, sizeof *p);
}

static bool same_file(const struct stat *a, const char *path) {
  struct stat b;
  return stat(path, &b) == 0 && a->st_dev == b.st_dev && a->st_ino == b.st_ino;
}

// REF or a TARGET that path is (through any link or spelling), or NULL.
static const char *input_at(const Plan *p, const char *path) {
  struct stat st;
  if (stat(path, &st) != 0) {
    return NULL;
  }
  if (same_file(&st, p->opt->ref_path)) {
    return p->opt->ref_path;
  }
  for (size_t i = 0; i < p->opt->n_targets; ++i) {
    if (same_file(&st, p->opt->target_paths[i])) {
      return p->opt->target_paths[i];
    }
  }
  return NULL;
}

static int check_file(const Plan *p, const char *path) {
  const char *input = input_at(p, path);
  if (input) {
    vn_error("%s is the same file as the input %s; measure from another "
             "folder or pick another --write DIR",
             path, input);
    return VN_EXIT_INPUT;
  }
  return vn_output_check(path, p->opt->ref_path, p->opt->overwrite);
}

// An old bundle is replaced only when it is a bundle as this writes them:
// files, no folders, and none of them an input.
static int check_bundle(const Plan *p, const char *path) {
  struct stat st;
  if (lstat(path, &st) != 0) {
    return VN_EXIT_OK;
  }
  if (!p->opt->overwrite) {
    vn_error("%s exists; add --overwrite to replace it", path);
    return VN_EXIT_OUTPUT;
  }
  if (!S_ISDIR(st.st_mode)) {
    return check_file(p, path);
  }
  DIR *d = opendir(path);
  if (!d) {
    vn_error("%s: cannot look inside to replace it (%s)", path,
             strerror(errno));
    return VN_EXIT_OUTPUT;
  }
  int rc = VN_EXIT_OK;
  for (struct dirent *e; rc == VN_EXIT_OK && (e = readdir(d));) {
    if (strcmp(e->d_name, ".") == 0 || strcmp(e->d_name, "..") == 0) {
      continue;
    }
    char *entry = vn_path_in(path, e->d_name);
    struct stat est;
    if (!entry || lstat(entry, &est) != 0) {
      vn_error("%s: cannot look inside to replace it", path);
      rc = VN_EXIT_OUTPUT;
    } else if (S_ISDIR(est.st_mode)) {
      vn_error("%s holds a folder, %s, so it is not a preset bundle this "
               "writes; --overwrite leaves it alone: move it away first",
               path, e->d_name);
      rc = VN_EXIT_OUTPUT;
    } else if (input_at(p, entry)) {
      vn_error("%s holds the input %s; --overwrite would remove it", path,
               input_at(p, entry));
      rc = VN_EXIT_INPUT;
    }
    free(entry);
  }
  closedir(d);
  return rc;
}

static int check_plan(const Plan *p) {
  for (size_t i = 0; i < p->n; ++i) {
    for (size_t k = 0; k < i; ++k) {
      if (strcmp(p->targets[i].stem, p->targets[k].stem) == 0) {
        vn_error("--write: TARGETs %s and %s have the same name '%s', so "
                 "their files in %s would be the same; measure them with "
                 "different --write folders",
                 p->targets[k].r->target_path, p->targets[i].r->target_path,
                 p->targets[i].stem, p->opt->write_dir);
        return VN_EXIT_USAGE;
      }
    }
  }
  int rc = check_file(p, p->commands_path);
  for (size_t i = 0; rc == VN_EXIT_OK && i < p->n; ++i) {
    const Written *w = &p->targets[i];
    rc = check_file(p, w->audio_path);
    if (rc == VN_EXIT_OK) {
      rc = check_file(p, w->svg_path);
    }
    if (rc == VN_EXIT_OK) {
      rc = check_bundle(p, w->bundle_path);
    }
  }
  return rc;
}

typedef struct {
  const Plan *plan;
  const Written *target;
} PictureOf;

static bool write_svg(FILE *f, const void *ctx) {
  const PictureOf *of = ctx;
  return vn_measure_plot_svg(f, of->plan->opt, of->target->r);
}

// ----------------------------------------------------- the command lines ---

// Safe unquoted in sh: letters, digits and a few marks; else single quotes.
static void put_shell_word(FILE *f, const char *word) {
  if (word[0] && strspn(word, "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRST"
                              "UVWXYZ0123456789_-+=.,/:@%") == strlen(word)) {
    fputs(word, f);
    return;
  }
  fputc('\'', f);
  for (const char *c = word; *c; ++c) {
    if (*c == '\'') {
      fputs("'\\''", f);
    } else {
      fputc(*c, f);
    }
  }
  fputc('\'', f);
}

static bool air_temp_given(const VnMeasureOptions *opt, char *buf,
                           size_t size) {
  snprintf(buf, size, "%.15g", opt->air_temp_c);
  return opt->air_temp_c != VN_AIR_TEMP_DEFAULT_C;
}

// Absolute paths, so the script works from any folder.
static void put_path(FILE *f, const char *path) {
  char *full = realpath(path, NULL);
  put_shell_word(f, full ? full : path);
  free(full);
}

static bool write_commands(FILE *f, const void *ctx) {
  const Plan *p = ctx;
  char temp[64];
  fputs("#!/bin/sh\n"
        "# Written by vernier measure: the corrections it found, as the\n"
        "# vernier process command lines that make the -aligned files again.\n"
        "# Add --overwrite after 'process' to replace files already there.\n"
        "set -e\n",
        f);
  char *dir = realpath(p->opt->write_dir, NULL);
  for (size_t i = 0; i < p->n; ++i) {
    const Written *w = &p->targets[i];
    fputs("vernier process ", f);
    if (air_temp_given(p->opt, temp, sizeof temp)) {
      fprintf(f, "--air-temp %s ", temp);
    }
    put_path(f, w->r->target_path);
    fputc(' ', f);
    char *out = dir ? vn_path_in(dir, vn_path_base(w->audio_path)) : NULL;
    put_shell_word(f, out ? out : w->audio_path);
    free(out);
    for (size_t k = 0; k < w->n_step_words; ++k) {
      fputc(' ', f);
      put_shell_word(f, w->step_words[k]);
    }
    fputc('\n', f);
  }
  free(dir);
  return !ferror(f);
}

// ------------------------------------------------------------- writing ----

// The corrected target, by `vernier process` as a user would run it.
static int render(const Plan *p, const Written *w) {
  char temp[64];
  char *argv[8 + STEP_WORDS_MAX];
  int argc = 0;
  argv[argc++] = "process";
  argv[argc++] = "-q";
  if (p->opt->overwrite) {
    argv[argc++] = "--overwrite";
  }
  if (air_temp_given(p->opt, temp, sizeof temp)) {
    argv[argc++] = "--air-temp";
    argv[argc++] = temp;
  }
  argv[argc++] = "--"; // a TARGET named "-x.wav" is a file, not an option
  argv[argc++] = (char *)w->r->target_path;
  argv[argc++] = w->audio_path;
  for (size_t k = 0; k < w->n_step_words; ++k) {
    argv[argc++] = w->step_words[k];
  }
  argv[argc] = NULL;
  const int rc = vn_process_main(argc, argv);
  if (rc == VN_EXIT_OK && !p->opt->quiet) {
    fprintf(stderr, "vernier: wrote %s\n", w->audio_path);
  }
  return rc;
}

static int write_bundle(const Plan *p, const Written *w) {
  char *temp = vn_place_temp_name(w->bundle_path);
  if (!temp || !mkdtemp(temp)) {
    if (temp) {
      vn_error("%s: cannot create a temporary folder beside it (%s)",
               w->bundle_path, strerror(errno));
    }
    free(temp);
    return VN_EXIT_OUTPUT;
  }
  int rc = vn_measure_presets_write(temp, w->stem, w->r) &&
                   chmod(temp, vn_place_mode(0777)) == 0
               ? VN_EXIT_OK
               : VN_EXIT_OUTPUT;
  if (rc == VN_EXIT_OK) {
    vn_place_sync_folder(temp);
    rc = vn_place(temp, w->bundle_path, p->opt->overwrite, p->opt->quiet);
  }
  if (rc != VN_EXIT_OK) {
    vn_place_remove(temp);
  }
  free(temp);
  return rc;
}

static int interrupted(void) {
  const int sig = vn_interrupt_pending();
  return sig ? VN_EXIT_SIGNAL_BASE + sig : VN_EXIT_OK;
}

int vn_measure_write(const VnMeasureOptions *opt,
                     const VnMeasureResult *results, size_t n) {
  vn_interrupt_install();
  Plan p = {.opt = opt};
  p.targets = calloc(n ? n : 1, sizeof *p.targets);
  p.commands_path = vn_path_in(opt->write_dir, COMMANDS_NAME);
  bool ok = p.targets && p.commands_path;
  for (size_t i = 0; ok && i < n; ++i) {
    if (results[i].status == VN_FOUND) {
      ok = plan_target(&p.targets[p.n++], &results[i], opt->write_dir);
    }
  }
  if (!ok) {
    vn_error("out of memory");
    plan_free(&p);
    return VN_EXIT_OUTPUT;
  }
  if (p.n == 0) {
    if (!opt->quiet) {
      fprintf(stderr,
              "vernier: nothing written into %s: no TARGET has a reliable "
              "offset\n",
              opt->write_dir);
    }
    plan_free(&p);
    return VN_EXIT_OK;
  }
  int rc = check_plan(&p);
  for (size_t i = 0; rc == VN_EXIT_OK && i < p.n; ++i) {
    rc = render(&p, &p.targets[i]);
    if (rc == VN_EXIT_OK && (rc = interrupted()) == VN_EXIT_OK) {
      rc = write_bundle(&p, &p.targets[i]);
    }
    if (rc == VN_EXIT_OK && (rc = interrupted()) == VN_EXIT_OK) {
      const PictureOf of = {&p, &p.targets[i]};
      rc = vn_place_file(p.targets[i].svg_path, 0666, opt->overwrite,
                         opt->quiet, write_svg, &of);
    }
    if (rc == VN_EXIT_OK) {
      rc = interrupted();
    }
  }
  if (rc == VN_EXIT_OK) {
    rc = vn_place_file(p.commands_path, 0777, opt->overwrite, opt->quiet,
                       write_commands, &p);
  }
  plan_free(&p);
  return rc;
}
