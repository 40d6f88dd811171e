// SPDX-License-Identifier: GPL-3.0-or-later
// `vernier demo [DIR]`: the invented scene of demo_scene.c written as two
// tracks, `vernier measure` run on them with every output, and what it
// found printed beside what was built in.
#include <errno.h>
#include <limits.h>
#include <math.h>
#include <signal.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <sndfile.h>

#include "args.h"
#include "demo.h"
#include "interrupt.h"
#include "measure.h"
#include "vernier.h"

#define DIR_DEFAULT "vernier-demo"
#define PCM_BITS 24
#define FULL_SCALE 8388608.0 // 2^23

static const char usage[] =
    "usage: vernier demo [-q] [DIR]\n"
    "\n"
    "Makes up a two-path bass recording in code (a DI, and an amp cabinet\n"
    "miked 47.3 cm away through a cable wired inverted), writes both tracks\n"
    "into DIR, runs `vernier measure --shape --write DIR` on them (the amp\n"
    "track as REF, the DI as TARGET: the DI is the one corrected), and\n"
    "prints what it found beside what was built in. DIR (default\n"
    "./" DIR_DEFAULT ") is made when missing; the demo's own files in it are\n"
    "replaced, nothing else is touched.\n"
    "\n"
    "Options:\n"
    "  -q, --quiet    no progress and no notes on stderr\n"
    "  -h, --help     this help\n"
    "      --version  the version\n"
    "\n"
    "Exit status: 0 done, 2 usage, 4 output (DIR not writable), 7 measure\n"
    "found no reliable offset, 130/143 interrupted.\n";

typedef struct {
  const char *dir;
  bool quiet;
  char di[PATH_MAX], amp[PATH_MAX], aligned[PATH_MAX], json[PATH_MAX];
  char sum_before[PATH_MAX], sum_after[PATH_MAX];
} Demo;

static int parse_args(int argc, char **argv, Demo *d) {
  VnArgs a;
  vn_args_init(&a, argc, argv);
  char *word = NULL;
  for (VnArgKind kind; (kind = vn_args_next(&a, &word)) != VN_ARG_END;) {
    if (kind == VN_ARG_WORD) {
      if (d->dir) {
        vn_error("demo takes one folder (got '%s' and '%s')", d->dir, word);
        return VN_EXIT_USAGE;
      }
      d->dir = word;
    } else if (vn_args_help_or_version(&a, usage)) {
      return -1;
    } else if (vn_args_is(&a, "--quiet", "-q")) {
      if (!vn_args_flag(&a)) {
        return VN_EXIT_USAGE;
      }
      d->quiet = true;
    } else {
      vn_error("unknown option '%s'; demo options: -q, --help, --version",
               word);
      return VN_EXIT_USAGE;
    }
  }
  d->dir = d->dir && d->dir[0] ? d->dir : DIR_DEFAULT;
  return VN_EXIT_OK;
}

static bool join(char *out, const char *dir, const char *name) {
  const size_t n = strlen(dir);
  const bool slash = n > 0 && dir[n - 1] == '/';
  return snprintf(out, PATH_MAX, "%s%s%s", dir, slash ? "" : "/", name) <
         PATH_MAX;
}

// mkdir -p, and then the folder must be one we can write in.
static int make_dir(const char *dir) {
  char path[PATH_MAX];
  if (snprintf(path, sizeof path, "%s", dir) >= (int)sizeof path) {
    vn_error("%s: the folder's name is too long", dir);
    return VN_EXIT_OUTPUT;
  }
  for (char *p = path + 1;; ++p) {
    const bool end = *p == '\0';
    if (end || *p == '/') {
      *p = '\0';
      if (mkdir(path, 0777) != 0 && errno != EEXIST) {
        vn_error("%s: cannot make the folder '%s' (%s)", dir, path,
                 strerror(errno));
        return VN_EXIT_OUTPUT;
      }
      if (end) {
        break;
      }
      *p = '/';
    }
  }
  struct stat st;
  if (stat(dir, &st) != 0 || !S_ISDIR(st.st_mode)) {
    vn_error("%s: not a folder; the demo writes its files into a folder", dir);
    return VN_EXIT_OUTPUT;
  }
  if (access(dir, W_OK | X_OK) != 0) {
    vn_error("%s: cannot write into the folder (%s)", dir, strerror(errno));
    return VN_EXIT_OUTPUT;
  }
  return VN_EXIT_OK;
}

// Samples as 24-bit codes, rounded to nearest (the scene peaks at -10
// dBFS and -12 dBFS, so the clamp never acts).
static void to_codes(const double *x, int32_t *codes, size_t n) {
  for (size_t i = 0; i < n; ++i) {
    double q = nearbyint(x[i] * FULL_SCALE);
    q = q > FULL_SCALE - 1 ? FULL_SCALE - 1 : q < -FULL_SCALE ? -FULL_SCALE : q;
    codes[i] = (int32_t)q;
  }
}

// "DIR/.NAME.demo-XXXXXX" beside path, for mkstemp.
static bool temp_name(const char *path, char *out) {
  const char *slash = strrchr(path, '/');
  const int head = slash ? (int)(slash - path) + 1 : 0;
  return snprintf(out, PATH_MAX, "%.*s.%s.demo-XXXXXX", head, path,
                  path + head) < PATH_MAX;
}

static int open_temp(const char *path, char *temp) {
  int fd = -1;
  if (!temp_name(path, temp) || (fd = mkstemp(temp)) < 0) {
    vn_error("%s: cannot create a temporary file beside it (%s)", path,
             strerror(errno));
    return -1;
  }
  vn_interrupt_set_temp(temp);
  const mode_t mask = umask(0);
  umask(mask);
  if (fchmod(fd, 0666 & ~mask) != 0) { // mkstemp's 0600 is for the temp
    vn_warn("%s: cannot set its permissions (%s)", path, strerror(errno));
  }
  return fd;
}

// The synced temporary file becomes path, with the signals held.
static int place(int fd, const char *temp, const char *path) {
  if (fsync(fd) != 0 || close(fd) != 0) {
    vn_error("%s: write failed (%s)", path, strerror(errno));
    unlink(temp);
    vn_interrupt_set_temp(NULL);
    return VN_EXIT_OUTPUT;
  }
  sigset_t saved;
  vn_interrupt_hold(&saved);
  const bool placed = rename(temp, path) == 0;
  const int err = errno;
  if (!placed) {
    unlink(temp);
  }
  vn_interrupt_set_temp(NULL);
  vn_interrupt_release(&saved);
  if (!placed) {
    vn_error("%s: cannot put the file in place (%s)", path, strerror(err));
    return VN_EXIT_OUTPUT;
  }
  return VN_EXIT_OK;
}

// A mono 24-bit WAV of codes, whole or not at all.
static int write_wav(const char *path, const int32_t *codes, size_t n,
                     const char *title) {
  char temp[PATH_MAX];
  const int fd = open_temp(path, temp);
  if (fd < 0) {
    return VN_EXIT_OUTPUT;
  }
  SF_INFO info = {.samplerate = VN_DEMO_RATE_HZ,
                  .channels = 1,
                  .format = SF_FORMAT_WAV | SF_FORMAT_PCM_24};
  SNDFILE *sf = sf_open_fd(fd, SFM_WRITE, &info, SF_FALSE);
  bool ok = sf != NULL;
  if (ok) {
    sf_set_string(sf, SF_STR_TITLE, title);
    sf_set_string(sf, SF_STR_SOFTWARE, "vernier demo " VERNIER_VERSION);
    sf_set_string(sf, SF_STR_COMMENT, "an invented scene, made up in code");
  }
  int32_t chunk[4096];
  for (size_t at = 0; ok && at < n; at += 4096) {
    const size_t m = n - at < 4096 ? n - at : 4096;
    for (size_t i = 0; i < m; ++i) {
      chunk[i] = (int32_t)((uint32_t)codes[at + i] << 8); // left-justified
    }
    ok = sf_writef_int(sf, chunk, (sf_count_t)m) == (sf_count_t)m;
  }
  const char *why = sf_strerror(sf);
  char reason[256];
  snprintf(reason, sizeof reason, "%s", why);
  if (sf && sf_close(sf) != 0) {
    ok = false;
  }
  if (!ok) {
    vn_error("%s: cannot write a 24-bit WAV (%s)", path, reason);
    close(fd);
    unlink(temp);
    vn_interrupt_set_temp(NULL);
    return VN_EXIT_OUTPUT;
  }
  return place(fd, temp, path);
}

// The corrected file `vernier measure` wrote, as 24-bit codes.
static int read_codes(const char *path, int32_t *codes, size_t n) {
  SF_INFO info;
  memset(&info, 0, sizeof info);
  SNDFILE *sf = sf_open(path, SFM_READ, &info);
  if (!sf || info.channels != 1 || (size_t)info.frames != n) {
    vn_error("%s: cannot read it back as %zu mono frames (%s)", path, n,
             sf_strerror(sf));
    if (sf) {
      sf_close(sf);
    }
    return VN_EXIT_OUTPUT;
  }
  const bool ok = sf_readf_int(sf, codes, (sf_count_t)n) == (sf_count_t)n;
  sf_close(sf);
  for (size_t i = 0; ok && i < n; ++i) {
    codes[i] >>= 8; // sf_readf_int left-justifies to 32 bits
  }
  if (!ok) {
    vn_error("%s: read error", path);
    return VN_EXIT_OUTPUT;
  }
  return VN_EXIT_OK;
}

static double rms_db(const int32_t *codes, size_t n) {
  double sum = 0;
  for (size_t i = 0; i < n; ++i) {
    sum += (double)codes[i] * codes[i];
  }
  return 10.0 * log10(sum / (double)n / (FULL_SCALE * FULL_SCALE) + 1e-30);
}

// a + b into out, and out written to path.
static int write_sum(const char *path, const int32_t *a, const int32_t *b,
                     int32_t *out, size_t n, const char *title) {
  for (size_t i = 0; i < n; ++i) {
    int64_t s = (int64_t)a[i] + b[i];
    s = s > 8388607 ? 8388607 : s < -8388608 ? -8388608 : s;
    out[i] = (int32_t)s;
  }
  return write_wav(path, out, n, title);
}

static int report_json(const char *path, const VnMeasureOptions *opt,
                       const VnMeasureResult *r) {
  char temp[PATH_MAX];
  const int fd = open_temp(path, temp);
  FILE *f = fd >= 0 ? fdopen(dup(fd), "w") : NULL;
  if (!f) {
    if (fd >= 0) {
      vn_error("%s: cannot write (%s)", path, strerror(errno));
      close(fd);
      unlink(temp);
      vn_interrupt_set_temp(NULL);
    }
    return VN_EXIT_OUTPUT;
  }
  vn_measure_report_json(f, opt, r, 1);
  if (fclose(f) != 0) {
    vn_error("%s: write failed (%s)", path, strerror(errno));
    close(fd);
    unlink(temp);
    vn_interrupt_set_temp(NULL);
    return VN_EXIT_OUTPUT;
  }
  return place(fd, temp, path);
}

// The signal's exit code; the message is printed once, at the end.
static int interrupted(void) {
  const int sig = vn_interrupt_pending();
  return sig ? VN_EXIT_SIGNAL_BASE + sig : VN_EXIT_OK;
}

// The tracks, the measurement, the correction, the sums. The amp track is
// REF and the DI TARGET: measure corrects TARGET, and only the DI can be
// given the cabinet's phase lag (an all-pass adds lag, never removes it).
static int run(Demo *d, const VnDemoScene *s, int32_t *di, int32_t *amp,
               int32_t *work) {
  const size_t n = s->frames;
  int rc = write_wav(d->di, di, n, "bass, DI (invented)");
  if (rc == VN_EXIT_OK && (rc = interrupted()) == VN_EXIT_OK) {
    rc = write_wav(d->amp, amp, n, "bass, amp mic (invented)");
  }
  if (rc != VN_EXIT_OK || (rc = interrupted()) != VN_EXIT_OK) {
    return rc;
  }
  vn_demo_print_scene(stdout, s, d->dir);
  char *argv[10];
  int argc = 0;
  argv[argc++] = "measure";
  argv[argc++] = "--shape";
  argv[argc++] = "--write";
  argv[argc++] = (char *)d->dir;
  argv[argc++] = "--overwrite";
  if (d->quiet) {
    argv[argc++] = "-q";
  }
  argv[argc++] = d->amp;
  argv[argc++] = d->di;
  argv[argc] = NULL;
  printf("$ vernier measure --shape --write %s --overwrite%s \\\n"
         "    %s %s\n\n",
         d->dir, d->quiet ? " -q" : "", d->amp, d->di);
  fflush(stdout);
  VnMeasureOptions opt;
  VnMeasureResult r;
  memset(&r, 0, sizeof r);
  rc = vn_measure_parse(&opt, argc, argv);
  if (rc == VN_EXIT_OK) {
    rc = vn_measure_pair(&opt, d->di, &r);
  }
  if (rc == VN_EXIT_OK) {
    vn_measure_report_text(stdout, &opt, &r, 1);
    fflush(stdout);
    rc = report_json(d->json, &opt, &r);
  }
  if (rc == VN_EXIT_OK && r.status == VN_FOUND) {
    rc = vn_measure_write(&opt, &r, 1);
  }
  if (rc == VN_EXIT_OK && r.status == VN_FOUND) {
    rc = write_sum(d->sum_before, amp, di, work, n,
                   "bass, amp + DI as recorded (invented)");
  }
  double before_db = 0, after_db = 0;
  if (rc == VN_EXIT_OK && r.status == VN_FOUND) {
    before_db = rms_db(work, n);
    rc = read_codes(d->aligned, di, n);
  }
  if (rc == VN_EXIT_OK && r.status == VN_FOUND) {
    rc = write_sum(d->sum_after, amp, di, work, n,
                   "bass, amp + DI corrected (invented)");
    after_db = rms_db(work, n);
  }
  if (rc == VN_EXIT_OK) {
    vn_demo_print_truth(stdout, s, &r);
  }
  if (rc == VN_EXIT_OK && r.status == VN_FOUND) {
    vn_demo_print_files(stdout, d->dir, after_db - before_db);
  }
  const bool found = r.status == VN_FOUND;
  vn_measure_result_free(&r);
  vn_measure_options_free(&opt);
  return rc == VN_EXIT_OK && !found ? VN_EXIT_NOT_FOUND : rc;
}

int vn_demo_main(int argc, char **argv) {
  vn_interrupt_install();
  Demo d;
  memset(&d, 0, sizeof d);
  int rc = parse_args(argc, argv, &d);
  if (rc != VN_EXIT_OK) {
    return rc < 0 ? VN_EXIT_OK : rc;
  }
  if (!join(d.di, d.dir, "bass-di.wav") ||
      !join(d.amp, d.dir, "bass-amp.wav") ||
      !join(d.aligned, d.dir, "bass-di-aligned.wav") ||
      !join(d.json, d.dir, "report.json") ||
      !join(d.sum_before, d.dir, "bass-sum-before.wav") ||
      !join(d.sum_after, d.dir, "bass-sum-after.wav")) {
    vn_error("%s: the folder's name is too long", d.dir);
    return VN_EXIT_OUTPUT;
  }
  if ((rc = make_dir(d.dir)) != VN_EXIT_OK) {
    return rc;
  }
  VnDemoScene s;
  vn_demo_scene_init(&s);
  const size_t n = s.frames;
  double *x = malloc(2 * n * sizeof *x);
  int32_t *codes = malloc(3 * n * sizeof *codes);
  if (!x || !codes) {
    free(x);
    free(codes);
    vn_error("out of memory for %zu frames", n);
    return VN_EXIT_PROCESSING;
  }
  vn_demo_render(&s, x, x + n);
  to_codes(x, codes, 2 * n);
  free(x);
  rc = interrupted();
  if (rc == VN_EXIT_OK) {
    rc = run(&d, &s, codes, codes + n, codes + 2 * n);
  }
  free(codes);
  if (rc > VN_EXIT_SIGNAL_BASE) {
    vn_error("interrupted by %s; the demo stopped (each file it wrote is "
             "whole)",
             rc == VN_EXIT_SIGNAL_BASE + SIGINT ? "SIGINT" : "SIGTERM");
  }
  return rc;
}
