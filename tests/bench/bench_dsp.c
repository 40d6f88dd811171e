// SPDX-License-Identifier: GPL-3.0-or-later
// Speed of every plugin's run() at block 512, beside memcpy of the same
// buffers, measured in the same process and taking turns repeat by repeat.
//
//   bench_dsp [--ports FILE] [--seconds S] [--repeats N]   print the table
//   bench_dsp --list                  the bundle's plugin URIs, one a line
//   bench_dsp --time CMD [ARG...]     run CMD (its stdout goes to stderr) and
//                                     print "WALL_S CPU_S"; exits as CMD did
//
// Linked with every plugin source, so lv2_descriptor() is the bundle's own
// entry point and a plugin added to plugins/bundle.c shows up here with no
// edit. Its ports come from FILE, which bench.sh writes from lv2info (so
// from the .ttl), else from the copy in port_map.h.
#define _GNU_SOURCE
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <lv2/core/lv2.h>

#include "dsp/bipolar_gain.h"

#include "port_map.h"
#include "time_command.h"

#define RATE_HZ 48000.0
#define BLOCK_FRAMES 512u
#define MAX_AUDIO 8u
#define MAX_REPEATS 101u
#define DENORMAL_ALLOWANCE 1.15 // shared machines: 15% is within the noise
#define MEMCPY_TARGET 2.0

enum { DENORMAL_INPUT = 1, MOVING = 2, MOVING_HAS_TARGET = 4 };

// Rows: controls by symbol, as on the vernier command line; "" is the
// defaults. DENORMAL_INPUT feeds 1e-39-range values instead of noise at
// -6 dBFS; MOVING swaps the first control with its default every block,
// and MOVING_HAS_TARGET holds such a row to the plugin's ns target too (the
// Fine Delay's glide is its dearest path, and its target covers it).
// A plugin with no row here gets one at its defaults.
typedef struct {
  const char *uri, *settings;
  int flags;
} bench_case_t;

static const bench_case_t cases[] = {
    {"urn:vernier:gain-mono", "gain=0.7 trim=-3", 0},
    {"urn:vernier:gain-mono", "", 0},
    {"urn:vernier:gain-mono", "gain=0.7", MOVING},
    {"urn:vernier:gain-mono", "gain=0.7 trim=-3", DENORMAL_INPUT},
    {"urn:vernier:gain-stereo", "gain=0.7 trim=-3", 0},
    {"urn:vernier:gain-stereo", "", 0},
    {"urn:vernier:polarity-mono", "invert=1", 0},
    {"urn:vernier:polarity-mono", "", 0},
    {"urn:vernier:polarity-mono", "invert=1", MOVING},
    {"urn:vernier:polarity-mono", "invert=1", DENORMAL_INPUT},
    {"urn:vernier:polarity-stereo", "invert_left=1 invert_right=1", 0},
    {"urn:vernier:polarity-stereo", "", 0},
    {"urn:vernier:rotate-mono", "angle=37", 0},
    {"urn:vernier:rotate-stereo", "angle=37", 0},
    {"urn:vernier:rotate-mono", "angle=37", DENORMAL_INPUT},
    {"urn:vernier:allpass-mono", "frequency=300 q=0.7 stages=1", 0},
    {"urn:vernier:allpass-mono", "frequency=300 q=0.7 stages=4", 0},
    {"urn:vernier:allpass-mono", "frequency=300 q=0.7 stages=1 order=1", 0},
    {"urn:vernier:allpass-mono", "frequency=300 q=0.7 stages=4 order=1", 0},
    {"urn:vernier:allpass-mono", "frequency=3000 q=0.7 stages=1", MOVING},
    {"urn:vernier:allpass-mono", "frequency=300 q=0.7 stages=1",
     DENORMAL_INPUT},
    {"urn:vernier:allpass-stereo", "frequency=300 q=0.7 stages=1", 0},
    {"urn:vernier:allpass-stereo", "frequency=300 q=0.7 stages=4", 0},
    {"urn:vernier:delay-mono", "delay=1.2345", 0},
    {"urn:vernier:delay-mono", "delay=1", 0},
    {"urn:vernier:delay-mono", "delay=1.2345", MOVING | MOVING_HAS_TARGET},
    {"urn:vernier:delay-mono", "delay=1.2345", DENORMAL_INPUT},
    {"urn:vernier:delay-stereo", "delay=-7.89", 0},
    {"urn:vernier:delay-stereo", "delay=-7.89", MOVING | MOVING_HAS_TARGET},
    {"urn:vernier:strip-mono",
     "invert=1 delay=1.2345 angle=37 frequency=300 stages=2 gain=0.8", 0},
    {"urn:vernier:strip-mono",
     "invert=1 delay=1.2345 angle=37 frequency=300 stages=2 gain=0.8",
     DENORMAL_INPUT},
};

typedef struct {
  uint32_t frames, n_in, n_out;
  float *in[MAX_AUDIO], *out[MAX_AUDIO];
} streams_t;

static port_maps_t ttl_maps, builtin_maps;
static volatile float sink; // reads every output, so no pass is dead code
static uint32_t n_met, n_missed;

static int compare_double(const void *a, const void *b) {
  const double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

static double median(double *v, uint32_t n) {
  qsort(v, n, sizeof *v, compare_double);
  return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

// The ttl's map when bench.sh gave one, else the built-in one, else NULL.
static const port_map_t *find_map(const char *uri) {
  const port_map_t *ttl = port_maps_find(&ttl_maps, uri);
  const port_map_t *builtin = port_maps_find(&builtin_maps, uri);
  if (ttl && builtin && !port_map_same(ttl, builtin)) {
    printf("warning: %s: the ttl's ports differ from builtin_ports in "
           "port_map.h; using the ttl's\n",
           uri);
  }
  return ttl ? ttl : builtin;
}

static float *alloc_stream(uint32_t frames) {
  const size_t bytes = ((size_t)frames * sizeof(float) + 63u) & ~(size_t)63u;
  return aligned_alloc(64, bytes);
}

static void free_streams(streams_t *s) {
  for (uint32_t k = 0; k < MAX_AUDIO; ++k) {
    free(s->in[k]);
    free(s->out[k]);
  }
}

// Noise at about -6 dBFS, or the same noise scaled into the denormal range.
static int make_streams(streams_t *s, uint32_t n_in, uint32_t n_out,
                        uint32_t frames, int denormal) {
  memset(s, 0, sizeof *s);
  s->frames = frames, s->n_in = n_in, s->n_out = n_out;
  uint32_t lcg = 12345u;
  for (uint32_t k = 0; k < n_in; ++k) {
    if (!(s->in[k] = alloc_stream(frames))) {
      return -1;
    }
    for (uint32_t i = 0; i < frames; ++i) {
      lcg = lcg * 1664525u + 1013904223u;
      const float u = (float)(lcg >> 8) / 16777216.0f - 0.5f; // -0.5 .. 0.5
      s->in[k][i] = denormal ? (u < 0 ? -1e-39f : 1e-39f) * (0.5f - u * u) : u;
    }
  }
  for (uint32_t k = 0; k < n_out; ++k) {
    if (!(s->out[k] = alloc_stream(frames))) {
      return -1;
    }
    memset(s->out[k], 0, (size_t)frames * sizeof(float)); // fault pages in
  }
  return 0;
}

// Block by block along the stream, or (hot) the same first block every time,
// as a live host does with buffers that stay in the L1 cache.
static uint32_t block_offset(uint32_t b, int hot) {
  return hot ? 0u : b * BLOCK_FRAMES;
}

static double memcpy_pass(const streams_t *s, int hot) {
  const double t0 = now_ns();
  for (uint32_t b = 0; b < s->frames / BLOCK_FRAMES; ++b) {
    const uint32_t off = block_offset(b, hot);
    for (uint32_t k = 0; k < s->n_out; ++k) {
      memcpy(s->out[k] + off, s->in[k % s->n_in] + off,
             BLOCK_FRAMES * sizeof(float));
    }
  }
  const double t1 = now_ns();
  sink = s->out[0][hot ? BLOCK_FRAMES - 1 : s->frames - 1];
  return t1 - t0;
}

typedef struct {
  const LV2_Descriptor *d;
  LV2_Handle h;
  uint32_t in_port[MAX_AUDIO], out_port[MAX_AUDIO];
  float *moving_port; // NULL, or the control that alternates
  float moving_a, moving_b;
  bipolar_gain_t *bare; // non-NULL: call the dsp module, no LV2, no FTZ guard
} runner_t;

static double plugin_pass(const runner_t *r, const streams_t *s, int hot) {
  const double t0 = now_ns();
  for (uint32_t b = 0; b < s->frames / BLOCK_FRAMES; ++b) {
    const uint32_t off = block_offset(b, hot);
    if (r->moving_port) {
      *r->moving_port = b % 2 ? r->moving_b : r->moving_a;
    }
    if (r->bare) {
      const float *in[1] = {s->in[0] + off};
      float *out[1] = {s->out[0] + off};
      bipolar_gain_compute(r->bare, in, out, 1, BLOCK_FRAMES);
      continue;
    }
    for (uint32_t k = 0; k < s->n_in; ++k) {
      r->d->connect_port(r->h, r->in_port[k], s->in[k] + off);
    }
    for (uint32_t k = 0; k < s->n_out; ++k) {
      r->d->connect_port(r->h, r->out_port[k], s->out[k] + off);
    }
    r->d->run(r->h, BLOCK_FRAMES);
  }
  const double t1 = now_ns();
  sink = s->out[0][hot ? BLOCK_FRAMES - 1 : s->frames - 1];
  return t1 - t0;
}

typedef struct {
  double plugin_ns, memcpy_ns; // medians over the repeats, whole stream
  double vs_memcpy;            // median of the per-repeat ratios
  double vs_normal;            // the same for denormal against normal input
  double hot_vs_memcpy;        // vs_memcpy with one block reused
} timing_t;

// Passes take turns (plugin, memcpy, plugin on normal input when comparing),
// and each ratio is taken within one repeat, so that a burst of load on a
// shared machine hits both sides of it alike.
static void measure_mode(const runner_t *r, const streams_t *s,
                         const streams_t *normal, uint32_t repeats, int hot,
                         timing_t *t) {
  double p[MAX_REPEATS], m[MAX_REPEATS], q[MAX_REPEATS], v[MAX_REPEATS];
  plugin_pass(r, s, hot);
  memcpy_pass(s, hot);
  for (uint32_t i = 0; i < repeats; ++i) {
    p[i] = plugin_pass(r, s, hot);
    m[i] = memcpy_pass(s, hot);
    q[i] = p[i] / m[i];
    v[i] = normal ? p[i] / plugin_pass(r, normal, hot) : 0.0;
  }
  if (hot) {
    t->hot_vs_memcpy = median(q, repeats);
    return;
  }
  t->vs_memcpy = median(q, repeats);
  t->vs_normal = median(v, repeats);
  t->plugin_ns = median(p, repeats);
  t->memcpy_ns = median(m, repeats);
}

static timing_t measure(const runner_t *r, const streams_t *s,
                        const streams_t *normal, uint32_t repeats) {
  timing_t t;
  measure_mode(r, s, normal, repeats, 0, &t);
  measure_mode(r, s, normal, repeats, 1, &t);
  return t;
}

static void print_row(const char *uri, const char *setting, const streams_t *s,
                      timing_t t, const char *target) {
  const double samples = (double)s->frames * (double)s->n_out;
  const double seconds = (double)s->frames / RATE_HZ;
  const char *name = strncmp(uri, "urn:vernier:", 12) ? uri : uri + 12;
  printf("%-15s %-30s %7.3f %9.0fx %7.3f %6.2fx %6.2fx  %s\n", name, setting,
         t.plugin_ns / samples, seconds / (t.plugin_ns * 1e-9),
         t.memcpy_ns / samples, t.vs_memcpy, t.hot_vs_memcpy, target);
}

static int has_target(const char *uri) {
  return strncmp(uri, "urn:vernier:gain-", 17) == 0 ||
         strncmp(uri, "urn:vernier:polarity-", 21) == 0;
}

// Stages named in a row's settings ("stages=4"), 1 when not named.
static double stage_count(const char *settings) {
  const char *at = strstr(settings, "stages=");
  return at ? atof(at + 7) : 1.0;
}

// The per-sample targets of the rotation issue: the Phase Rotator within
// 15 ns per sample per channel, the All-pass within 3 ns per stage; and of
// the delay issue: the Fine Delay within 10 ns per sample per channel.
static double ns_target(const char *uri) {
  if (strncmp(uri, "urn:vernier:rotate-", 19) == 0) {
    return 15.0;
  }
  if (strncmp(uri, "urn:vernier:delay-", 18) == 0) {
    return 10.0;
  }
  if (strncmp(uri, "urn:vernier:allpass-", 20) == 0) {
    return 3.0;
  }
  return 0.0;
}

static const char *verdict(double ratio, double limit) {
  const int met = ratio <= limit;
  met ? ++n_met : ++n_missed;
  return met ? "met" : "MISSED";
}

static void make_streams_or_die(streams_t *s, uint32_t n_in, uint32_t n_out,
                                uint32_t frames, int denormal) {
  if (make_streams(s, n_in, n_out, frames, denormal) != 0) {
    fprintf(stderr, "bench_dsp: out of memory\n");
    exit(1);
  }
}

// Sets the control inputs named in settings ("SYMBOL=VALUE ...") and writes
// the row's label. Returns the index of the first one, or -1 on a bad name.
static int apply_settings(const LV2_Descriptor *d, const port_map_t *map,
                          const bench_case_t *c, float *port, char *label,
                          size_t label_size) {
  char copy[200], *save = NULL;
  snprintf(copy, sizeof copy, "%s", c ? c->settings : "");
  int first = -1;
  for (char *w = strtok_r(copy, " ", &save); w;
       w = strtok_r(NULL, " ", &save)) {
    const char *eq = strchr(w, '=');
    const int p = eq ? port_map_control(map, w, (size_t)(eq - w)) : -1;
    if (p < 0) {
      printf("%-15s skipped: '%s' names no control input of the ttl\n", d->URI,
             w);
      return -1;
    }
    port[p] = strtof(eq + 1, NULL);
    first = first < 0 ? p : first;
  }
  if (!c || !c->settings[0]) {
    int n = snprintf(label, label_size, "defaults (");
    for (uint32_t p = 0; p < map->n_ports && n < (int)label_size; ++p) {
      if (map->kind[p] == 'c') {
        n += snprintf(label + n, label_size - (size_t)n, "%s%s=%g",
                      label[n - 1] == '(' ? "" : " ", map->symbol[p],
                      map->value[p]);
      }
    }
    if (n + 1 < 31) {
      snprintf(label + n, label_size - (size_t)n, ")");
    } else {
      snprintf(label, label_size, "defaults");
    }
  } else if (c->flags & MOVING) {
    snprintf(label, label_size, "%.*s<->%g each block",
             (int)strcspn(c->settings, " "), c->settings, map->value[first]);
  } else {
    snprintf(label, label_size, "%s%s", c->settings,
             c->flags & DENORMAL_INPUT ? ", in 1e-39" : "");
  }
  return first < 0 ? 0 : first;
}

// One row; c NULL means the plugin's defaults. Returns 0, or -1 if skipped.
static int bench_case(const LV2_Descriptor *d, const port_map_t *map,
                      const bench_case_t *c, uint32_t frames,
                      uint32_t repeats) {
  float port[MAX_PORTS] = {0}; // control values and control-output scratch
  runner_t r = {.d = d};
  uint32_t n_in = 0, n_out = 0;
  for (uint32_t p = 0; p < map->n_ports; ++p) {
    const char k = map->kind[p];
    if (k == 'x') {
      printf("%-15s skipped: port %u is neither audio nor control\n", d->URI,
             p);
      return -1;
    }
    port[p] = k == 'c' ? map->value[p] : 0.0f;
    if (k == 'i' && n_in < MAX_AUDIO) {
      r.in_port[n_in++] = p;
    } else if (k == 'o' && n_out < MAX_AUDIO) {
      r.out_port[n_out++] = p;
    }
  }
  char label[64];
  const int first = apply_settings(d, map, c, port, label, sizeof label);
  if (first < 0) {
    return -1;
  }
  if (n_in == 0 || n_out == 0) {
    printf("%-15s skipped: no audio input or output\n", d->URI);
    return -1;
  }
  const LV2_Feature *const features[] = {NULL};
  r.h = d->instantiate(d, RATE_HZ, "", features);
  if (!r.h) {
    printf("%-15s skipped: instantiate() failed (needs a feature?)\n", d->URI);
    return -1;
  }
  for (uint32_t p = 0; p < map->n_ports; ++p) {
    if (map->kind[p] == 'c' || map->kind[p] == 'l') {
      d->connect_port(r.h, p, &port[p]);
    }
  }
  if (c && (c->flags & MOVING)) {
    r.moving_port = &port[first];
    r.moving_a = port[first];
    r.moving_b = map->value[first];
  }
  if (d->activate) {
    d->activate(r.h);
  }
  const int denormal = c && (c->flags & DENORMAL_INPUT);
  streams_t s, normal;
  make_streams_or_die(&s, n_in, n_out, frames, denormal);
  if (denormal) {
    make_streams_or_die(&normal, n_in, n_out, frames, 0);
  }
  const timing_t t = measure(&r, &s, denormal ? &normal : NULL, repeats);
  char target[80] = "(none set)";
  if (denormal) {
    snprintf(target, sizeof target, "%.2fx normal, <= %.2fx: %s", t.vs_normal,
             DENORMAL_ALLOWANCE, verdict(t.vs_normal, DENORMAL_ALLOWANCE));
    free_streams(&normal);
  } else if (c && (c->flags & MOVING) && !(c->flags & MOVING_HAS_TARGET)) {
    snprintf(target, sizeof target, "(ramping; none)");
  } else if (has_target(d->URI)) {
    snprintf(target, sizeof target, "<= %.0fx: %s", MEMCPY_TARGET,
             verdict(t.vs_memcpy, MEMCPY_TARGET));
  } else if (ns_target(d->URI) > 0.0) {
    // issue targets in ns per sample per channel (all-pass: per stage too)
    const double per = t.plugin_ns / ((double)s.frames * (double)s.n_out);
    const double stages = stage_count(c ? c->settings : "");
    const double limit = ns_target(d->URI);
    snprintf(target, sizeof target, "%.2f ns%s <= %.0f: %s", per / stages,
             stages > 1 ? "/stage" : "", limit,
             verdict(per / stages, limit));
  }
  print_row(d->URI, label, &s, t, target);
  free_streams(&s);
  if (d->deactivate) {
    d->deactivate(r.h);
  }
  d->cleanup(r.h);
  return 0;
}

// For contrast: the same gain without the plugin's flush-to-zero guard.
static void bench_bare_gain(uint32_t frames, uint32_t repeats) {
  bipolar_gain_t g;
  bipolar_gain_setup(&g, RATE_HZ);
  bipolar_gain_set(&g, 0.7f, -3.0f);
  streams_t s, normal;
  make_streams_or_die(&s, 1, 1, frames, 1);
  make_streams_or_die(&normal, 1, 1, frames, 0);
  runner_t r = {.bare = &g};
  const timing_t t = measure(&r, &s, &normal, repeats);
  char target[80];
  snprintf(target, sizeof target, "%.0fx normal: what FTZ saves", t.vs_normal);
  print_row("(no FTZ)", "gain dsp alone, in 1e-39", &s, t, target);
  free_streams(&s);
  free_streams(&normal);
}

static int usage(void) {
  fprintf(stderr, "usage: bench_dsp [--ports FILE] [--seconds S] "
                  "[--repeats N] | --list | --time CMD [ARG...]\n");
  return 2;
}

int main(int argc, char **argv) {
  double stream_s = 20.0;
  uint32_t repeats = 21;
  for (int i = 1; i < argc; ++i) {
    if (strcmp(argv[i], "--time") == 0 && i + 1 < argc) {
      return time_command(argv + i + 1);
    } else if (strcmp(argv[i], "--list") == 0) {
      for (uint32_t k = 0; lv2_descriptor(k); ++k) {
        printf("%s\n", lv2_descriptor(k)->URI);
      }
      return 0;
    } else if (strcmp(argv[i], "--ports") == 0 && i + 1 < argc) {
      FILE *f = fopen(argv[++i], "r");
      if (!f) {
        fprintf(stderr, "bench_dsp: %s: %s\n", argv[i], strerror(errno));
        return 1;
      }
      port_maps_read(&ttl_maps, f);
      fclose(f);
    } else if (strcmp(argv[i], "--seconds") == 0 && i + 1 < argc) {
      stream_s = atof(argv[++i]);
    } else if (strcmp(argv[i], "--repeats") == 0 && i + 1 < argc) {
      repeats = (uint32_t)atoi(argv[++i]);
    } else {
      return usage();
    }
  }
  if (stream_s < 0.1 || stream_s > 600 || repeats < 1 ||
      repeats > MAX_REPEATS) {
    fprintf(stderr, "bench_dsp: --seconds 0.1..600, --repeats 1..%u\n",
            MAX_REPEATS);
    return 2;
  }
  port_maps_builtin(&builtin_maps);
  // Whole blocks only, so that every run() is run(512).
  const uint32_t frames =
      (uint32_t)(stream_s * RATE_HZ) / BLOCK_FRAMES * BLOCK_FRAMES;

  printf("DSP: run() at %u frames a block, %.0f Hz, over %.0f s of audio "
         "a repeat; medians of %u repeats\n",
         BLOCK_FRAMES, RATE_HZ, stream_s, repeats);
  printf("%-15s %-30s %7s %10s %7s %7s %7s\n", "", "", "ns per", "", "memcpy",
         "vs", "in L1");
  printf("%-15s %-30s %7s %10s %7s %7s %7s  %s\n", "plugin", "setting",
         "smp/ch", "x realtime", "ns", "memcpy", "vs mcpy", "target");
  for (uint32_t k = 0; lv2_descriptor(k); ++k) {
    const LV2_Descriptor *d = lv2_descriptor(k);
    const port_map_t *map = find_map(d->URI);
    if (!map) {
      printf("%-15s skipped: no port map (run bench.sh, which reads the "
             "ttl, or add it to port_map.h)\n",
             d->URI);
      continue;
    }
    int known = 0;
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; ++i) {
      if (strcmp(cases[i].uri, d->URI) == 0) {
        known = 1;
        bench_case(d, map, &cases[i], frames, repeats);
      }
    }
    if (!known) {
      bench_case(d, map, NULL, frames, repeats);
    }
    if (strcmp(d->URI, "urn:vernier:gain-mono") == 0) {
      // 100x slower: a tenth of the stream is plenty
      // A tenth of the stream, whole blocks, at least one (--seconds 0.1
      // would otherwise leave none).
      const uint32_t bare = frames / 10 / BLOCK_FRAMES * BLOCK_FRAMES;
      bench_bare_gain(bare ? bare : BLOCK_FRAMES, repeats);
    }
  }
  printf(
      "ns per smp/ch: wall-clock ns per sample per channel, run() stepping its "
      "ports along\n"
      "  %.0f s buffers (in != out); x realtime: seconds of 48 kHz audio per "
      "second of wall time;\n"
      "  memcpy ns: memcpy of the same buffers, block by block, timed in turn "
      "with run();\n"
      "  vs memcpy: median of the per-repeat ratios; in L1: the same, one "
      "512-frame block\n"
      "  used over and over (buffers in the L1 cache: the cost of the "
      "arithmetic alone).\n"
      "DSP targets: %u met, %u missed (gain and polarity within %.0fx memcpy "
      "on the stream;\n"
      "  denormal input no dearer than normal, %.0f%% allowed for noise). "
      "Shared machines\n"
      "  are noisy: ratios drift by tens of percent from run to run.\n",
      stream_s, n_met, n_missed, MEMCPY_TARGET, (DENORMAL_ALLOWANCE - 1) * 100);
  return 0;
}
