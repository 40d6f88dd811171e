// SPDX-License-Identifier: GPL-3.0-or-later
// Where a plugin's ports are, for bench_dsp: one line a port,
//
//   URI INDEX KIND DEFAULT SYMBOL
//
// KIND: c control input, l control output, i audio input, o audio output,
// x anything else. bench.sh writes such a file from lv2info, so from the
// .ttl; builtin_ports holds the same for ttl/gain.ttl and ttl/polarity.ttl,
// for runs of bench_dsp without it.
#ifndef VERNIER_BENCH_PORT_MAP_H
#define VERNIER_BENCH_PORT_MAP_H

#include <stdint.h>
#include <stdio.h>
#include <string.h>

#define MAX_PORTS 32u
#define MAX_MAPS 64u

typedef struct {
  char uri[200];
  uint32_t n_ports;
  char kind[MAX_PORTS + 1]; // '?' where the indices leave a gap
  float value[MAX_PORTS];   // control inputs: lv2:default
  char symbol[MAX_PORTS][32];
} port_map_t;

typedef struct {
  port_map_t map[MAX_MAPS];
  uint32_t n_maps;
} port_maps_t;

static const char builtin_ports[] =
    "urn:vernier:gain-mono 0 c 1 gain\n"
    "urn:vernier:gain-mono 1 c 0 trim\n"
    "urn:vernier:gain-mono 2 i 0 in\n"
    "urn:vernier:gain-mono 3 o 0 out\n"
    "urn:vernier:gain-stereo 0 c 1 gain\n"
    "urn:vernier:gain-stereo 1 c 0 trim\n"
    "urn:vernier:gain-stereo 2 i 0 in_left\n"
    "urn:vernier:gain-stereo 3 i 0 in_right\n"
    "urn:vernier:gain-stereo 4 o 0 out_left\n"
    "urn:vernier:gain-stereo 5 o 0 out_right\n"
    "urn:vernier:polarity-mono 0 c 0 invert\n"
    "urn:vernier:polarity-mono 1 i 0 in\n"
    "urn:vernier:polarity-mono 2 o 0 out\n"
    "urn:vernier:polarity-stereo 0 c 0 invert_left\n"
    "urn:vernier:polarity-stereo 1 c 0 invert_right\n"
    "urn:vernier:polarity-stereo 2 i 0 in_left\n"
    "urn:vernier:polarity-stereo 3 i 0 in_right\n"
    "urn:vernier:polarity-stereo 4 o 0 out_left\n"
    "urn:vernier:polarity-stereo 5 o 0 out_right\n";

static inline const port_map_t *port_maps_find(const port_maps_t *m,
                                               const char *uri) {
  for (uint32_t i = 0; i < m->n_maps; ++i) {
    if (strcmp(m->map[i].uri, uri) == 0) {
      return &m->map[i];
    }
  }
  return NULL;
}

// Adds every line of f; lines past the limits are dropped.
static inline void port_maps_read(port_maps_t *m, FILE *f) {
  char uri[200], symbol[32], kind;
  unsigned index;
  float value;
  while (fscanf(f, "%199s %u %c %f %31s", uri, &index, &kind, &value, symbol) ==
         5) {
    port_map_t *p = (port_map_t *)port_maps_find(m, uri);
    if (!p && m->n_maps < MAX_MAPS) {
      p = &m->map[m->n_maps++];
      memset(p, 0, sizeof *p);
      snprintf(p->uri, sizeof p->uri, "%s", uri);
    }
    if (!p || index >= MAX_PORTS) {
      continue;
    }
    for (uint32_t k = p->n_ports; k < index; ++k) {
      p->kind[k] = '?';
    }
    p->kind[index] = kind;
    p->value[index] = value;
    snprintf(p->symbol[index], sizeof p->symbol[index], "%s", symbol);
    p->n_ports = index + 1 > p->n_ports ? index + 1 : p->n_ports;
  }
}

static inline void port_maps_builtin(port_maps_t *m) {
  FILE *f = fmemopen((void *)builtin_ports, strlen(builtin_ports), "r");
  if (f) {
    port_maps_read(m, f);
    fclose(f);
  }
}

static inline int port_map_same(const port_map_t *a, const port_map_t *b) {
  int same = strcmp(a->kind, b->kind) == 0;
  for (uint32_t p = 0; same && p < a->n_ports; ++p) {
    same =
        strcmp(a->symbol[p], b->symbol[p]) == 0 && a->value[p] == b->value[p];
  }
  return same;
}

// Index of the control input called name (len characters), or -1.
static inline int port_map_control(const port_map_t *m, const char *name,
                                   size_t len) {
  for (uint32_t p = 0; p < m->n_ports; ++p) {
    if (m->kind[p] == 'c' && strlen(m->symbol[p]) == len &&
        strncmp(m->symbol[p], name, len) == 0) {
      return (int)p;
    }
  }
  return -1;
}

#endif
