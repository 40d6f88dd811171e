// SPDX-License-Identifier: GPL-3.0-or-later
// `vernier measure REF TARGET...`: every pair measured first, then the
// report, then (--write) the correction. Nothing is written unless every
// pair could be read and measured.
#include <errno.h>
#include <signal.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "interrupt.h"
#include "measure.h"
#include "vernier.h"

// --write DIR must be a folder we can write before minutes go into
// measuring (measure_write.c checks the names again, just before writing).
static int check_write_dir(const char *dir) {
  struct stat st;
  if (stat(dir, &st) != 0) {
    vn_error("--write %s: %s", dir,
             errno == ENOENT ? "no such folder (create it first)"
                             : strerror(errno));
    return VN_EXIT_OUTPUT;
  }
  if (!S_ISDIR(st.st_mode)) {
    vn_error("--write %s: not a folder", dir);
    return VN_EXIT_OUTPUT;
  }
  if (access(dir, W_OK | X_OK) != 0) {
    vn_error("--write %s: cannot write into the folder (%s)", dir,
             strerror(errno));
    return VN_EXIT_OUTPUT;
  }
  return VN_EXIT_OK;
}

static int run(const VnMeasureOptions *opt, VnMeasureResult *results) {
  int rc = opt->write_dir ? check_write_dir(opt->write_dir) : VN_EXIT_OK;
  for (size_t i = 0; rc == VN_EXIT_OK && i < opt->n_targets; ++i) {
    rc = vn_measure_pair(opt, opt->target_paths[i], &results[i]);
    // Warnings print with --quiet too, as everywhere in vernier.
    if (rc == VN_EXIT_OK) {
      if (results[i].ref_clipped) {
        vn_warn("%s: %llu samples at full scale (clipped?); clipping "
                "distorts the phase the measurement relies on",
                opt->ref_path, (unsigned long long)results[i].ref_clipped);
      }
      if (results[i].target_clipped) {
        vn_warn("%s: %llu samples at full scale (clipped?); clipping "
                "distorts the phase the measurement relies on",
                opt->target_paths[i],
                (unsigned long long)results[i].target_clipped);
      }
    }
  }
  if (rc != VN_EXIT_OK) {
    return rc;
  }
  if (opt->json) {
    vn_measure_report_json(stdout, opt, results, opt->n_targets);
  } else {
    vn_measure_report_text(stdout, opt, results, opt->n_targets);
  }
  // The report is out before the files: a failed write still leaves the
  // figures on screen.
  fflush(stdout);
  if (opt->write_dir) {
    rc = vn_measure_write(opt, results, opt->n_targets);
    if (rc != VN_EXIT_OK) {
      return rc;
    }
  }
  for (size_t i = 0; i < opt->n_targets; ++i) {
    if (results[i].status != VN_FOUND) {
      return VN_EXIT_NOT_FOUND;
    }
  }
  return VN_EXIT_OK;
}

int vn_measure_main(int argc, char **argv) {
  vn_interrupt_install();
  VnMeasureOptions opt;
  int rc = vn_measure_parse(&opt, argc, argv);
  if (rc < 0) {
    vn_measure_options_free(&opt);
    return VN_EXIT_OK; // --help or --version
  }
  VnMeasureResult *results = NULL;
  if (rc == VN_EXIT_OK) {
    results = calloc(opt.n_targets, sizeof *results);
    if (!results) {
      vn_error("out of memory");
      rc = VN_EXIT_PROCESSING;
    }
  }
  if (rc == VN_EXIT_OK) {
    rc = run(&opt, results);
    if (rc > VN_EXIT_SIGNAL_BASE) {
      vn_error("interrupted by %s; no file is left half-written",
               rc == VN_EXIT_SIGNAL_BASE + SIGINT ? "SIGINT" : "SIGTERM");
    }
  }
  for (size_t i = 0; results && i < opt.n_targets; ++i) {
    vn_measure_result_free(&results[i]);
  }
  free(results);
  vn_measure_options_free(&opt);
  return rc;
}
