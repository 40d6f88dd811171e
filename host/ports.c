// SPDX-License-Identifier: GPL-3.0-or-later
#include "ports.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <lv2/core/lv2.h>
#include <lv2/units/units.h>

#include "vernier.h"

// With LV2_PATH at build/ only the units ontology is not loaded, so the
// symbols of the common units cannot come from lilv.
static const struct {
  const char *uri;
  const char *symbol;
} unit_symbols[] = {
    {LV2_UNITS__coef, "coef"},  {LV2_UNITS__db, "dB"},
    {LV2_UNITS__ms, "ms"},      {LV2_UNITS__hz, "Hz"},
    {LV2_UNITS__degree, "deg"}, {LV2_UNITS__s, "s"},
    {LV2_UNITS__cm, "cm"},      {LV2_UNITS__m, "m"},
    {LV2_UNITS__pc, "%"},       {LV2_UNITS__frame, "frames"},
};

// Our table first, then a units:symbol the plugin (or a loaded ontology)
// gives, then the last part of the unit's URI.
static char *unit_symbol(VnWorld *w, const LilvNode *unit) {
  if (lilv_node_is_uri(unit)) {
    const char *uri = lilv_node_as_uri(unit);
    for (size_t i = 0; i < sizeof unit_symbols / sizeof unit_symbols[0]; ++i) {
      if (strcmp(uri, unit_symbols[i].uri) == 0) {
        return strdup(unit_symbols[i].symbol);
      }
    }
  }
  LilvNode *symbol =
      lilv_world_get(w->lilv, unit, w->node[VN_NODE_UNIT_SYMBOL], NULL);
  if (symbol) {
    char *s = strdup(lilv_node_as_string(symbol));
    lilv_node_free(symbol);
    return s;
  }
  if (lilv_node_is_uri(unit)) {
    const char *uri = lilv_node_as_uri(unit);
    const char *hash = strrchr(uri, '#');
    const char *slash = strrchr(uri, '/');
    const char *tail = hash ? hash + 1 : slash ? slash + 1 : uri;
    return strdup(tail);
  }
  return NULL;
}

static int by_value(const void *a, const void *b) {
  const float x = ((const VnScalePoint *)a)->value;
  const float y = ((const VnScalePoint *)b)->value;
  return (x > y) - (x < y);
}

static bool has(const LilvPlugin *p, const LilvPort *port, VnWorld *w,
                VnNodeId id) {
  return lilv_port_has_property(p, port, w->node[id]);
}

// lilv 0.24 aborts on an assertion when a port's scale points give it none
// it can use: each needs an rdf:value and an rdfs:label (found by
// tests/fuzz/fuzz_preset.c). Then the port gets no scale points instead.
static bool scale_points_complete(VnWorld *w, const LilvPlugin *p,
                                  const LilvPort *port) {
  LilvNode *scale_point = lilv_new_uri(w->lilv, LV2_CORE__scalePoint);
  LilvNode *value = lilv_new_uri(w->lilv, LILV_NS_RDF "value");
  LilvNode *label = lilv_new_uri(w->lilv, LILV_NS_RDFS "label");
  LilvNodes *points =
      scale_point ? lilv_port_get_value(p, port, scale_point) : NULL;
  bool ok = value && label;
  LILV_FOREACH(nodes, i, points) {
    const LilvNode *point = lilv_nodes_get(points, i);
    ok = ok && !lilv_node_is_literal(point) &&
         lilv_world_ask(w->lilv, point, value, NULL) &&
         lilv_world_ask(w->lilv, point, label, NULL);
  }
  lilv_nodes_free(points);
  lilv_node_free(label);
  lilv_node_free(value);
  lilv_node_free(scale_point);
  return ok;
}

static bool load_port(VnPortInfo *pi, VnWorld *w, const LilvPlugin *p,
                      const LilvPort *port) {
  pi->symbol = lilv_node_as_string(lilv_port_get_symbol(p, port));
  LilvNode *name = lilv_port_get_name(p, port);
  pi->name = strdup(name ? lilv_node_as_string(name) : pi->symbol);
  lilv_node_free(name);
  pi->is_input = lilv_port_is_a(p, port, w->node[VN_NODE_INPUT_PORT]);
  pi->type =
      lilv_port_is_a(p, port, w->node[VN_NODE_AUDIO_PORT])     ? VN_PORT_AUDIO
      : lilv_port_is_a(p, port, w->node[VN_NODE_CONTROL_PORT]) ? VN_PORT_CONTROL
      : lilv_port_is_a(p, port, w->node[VN_NODE_ATOM_PORT])    ? VN_PORT_ATOM
      : lilv_port_is_a(p, port, w->node[VN_NODE_CV_PORT])      ? VN_PORT_CV
                                                               : VN_PORT_OTHER;
  static const struct {
    VnNodeId node;
    unsigned prop;
  } props[] = {
      {VN_NODE_TOGGLED, VN_PROP_TOGGLED},
      {VN_NODE_INTEGER, VN_PROP_INTEGER},
      {VN_NODE_ENUMERATION, VN_PROP_ENUMERATION},
      {VN_NODE_LOGARITHMIC, VN_PROP_LOGARITHMIC},
      {VN_NODE_SAMPLE_RATE, VN_PROP_SAMPLE_RATE},
      {VN_NODE_CONNECTION_OPTIONAL, VN_PROP_OPTIONAL},
      {VN_NODE_REPORTS_LATENCY, VN_PROP_LATENCY},
  };
  for (size_t i = 0; i < sizeof props / sizeof props[0]; ++i) {
    pi->props |= has(p, port, w, props[i].node) ? props[i].prop : 0;
  }
  LilvNodes *designations =
      lilv_port_get_value(p, port, w->node[VN_NODE_DESIGNATION]);
  if (lilv_nodes_contains(designations, w->node[VN_NODE_FREE_WHEELING])) {
    pi->props |= VN_PROP_FREE_WHEELING;
  }
  if (lilv_nodes_contains(designations, w->node[VN_NODE_ENABLED])) {
    pi->props |= VN_PROP_ENABLED;
  }
  lilv_nodes_free(designations);

  LilvNode *unit = lilv_port_get(p, port, w->node[VN_NODE_UNIT]);
  if (unit) {
    pi->unit = unit_symbol(w, unit);
    lilv_node_free(unit);
  }
  LilvNode *size = lilv_port_get(p, port, w->node[VN_NODE_MINIMUM_SIZE]);
  if (size && lilv_node_is_int(size) && lilv_node_as_int(size) > 0) {
    pi->minimum_size_bytes = (uint32_t)lilv_node_as_int(size);
  }
  lilv_node_free(size);

  LilvScalePoints *points = scale_points_complete(w, p, port)
                                ? lilv_port_get_scale_points(p, port)
                                : NULL;
  if (points && lilv_scale_points_size(points) > 0) {
    pi->points = calloc(lilv_scale_points_size(points), sizeof *pi->points);
    if (!pi->points) {
      lilv_scale_points_free(points);
      return false;
    }
    LILV_FOREACH(scale_points, i, points) {
      const LilvScalePoint *sp = lilv_scale_points_get(points, i);
      VnScalePoint *dst = &pi->points[pi->n_points++];
      dst->label = strdup(lilv_node_as_string(lilv_scale_point_get_label(sp)));
      dst->value = lilv_node_as_float(lilv_scale_point_get_value(sp));
    }
  }
  lilv_scale_points_free(points);
  // lilv gives them in no particular order; a list reads best by value.
  if (pi->n_points > 1) {
    qsort(pi->points, pi->n_points, sizeof *pi->points, by_value);
  }
  return pi->name != NULL;
}

// lilv reads a plugin's data when first asked and, after a Turtle error or
// a port index missing or given twice, prints its message and keeps what it
// could parse: part of the ports, or none. Such a plugin is refused here, so
// that it is neither described nor run as something its author did not mean
// (tests/host/broken_bundles.sh).
static bool description_is_sound(VnWorld *w, const LilvPlugin *p,
                                 const char *uri) {
  if (!lilv_plugin_verify(p)) {
    LilvNode *port = lilv_new_uri(w->lilv, LV2_CORE__port);
    LilvNodes *ports = port ? lilv_plugin_get_value(p, port) : NULL;
    if (port && !ports) {
      vn_error("%s: its description names no port (lv2:port)", uri);
    } else {
      vn_error("%s: its description is not valid LV2 (a Turtle syntax "
               "error, or no rdf:type or doap:name; lilv's message above "
               "says which)",
               uri);
    }
    lilv_nodes_free(ports);
    lilv_node_free(port);
    return false;
  }
  if (lilv_plugin_get_num_ports(p) == 0) { // it has lv2:port: verify saw one
    vn_error("%s: its ports cannot be read (an lv2:index missing or given "
             "twice; lilv's message above says which)",
             uri);
    return false;
  }
  return true;
}

bool vn_plugin_info_load(VnPluginInfo *info, VnWorld *w, const LilvPlugin *p) {
  memset(info, 0, sizeof *info);
  info->plugin = p;
  info->uri = lilv_node_as_uri(lilv_plugin_get_uri(p));
  info->latency_port = -1;
  if (!description_is_sound(w, p, info->uri)) {
    return false;
  }
  info->n_ports = lilv_plugin_get_num_ports(p);
  const size_t n = info->n_ports ? info->n_ports : 1;
  info->ports = calloc(n, sizeof *info->ports);
  float *ranges = malloc(3 * n * sizeof *ranges);
  bool ok = info->ports && ranges;
  if (ok) {
    lilv_plugin_get_port_ranges_float(p, ranges, ranges + n, ranges + 2 * n);
  }
  for (uint32_t i = 0; ok && i < info->n_ports; ++i) {
    VnPortInfo *pi = &info->ports[i];
    pi->index = i;
    pi->minimum = ranges[i];
    pi->maximum = ranges[n + i];
    pi->default_value = ranges[2 * n + i];
    ok = load_port(pi, w, p, lilv_plugin_get_port_by_index(p, i));
    info->n_audio_in += pi->type == VN_PORT_AUDIO && pi->is_input;
    info->n_audio_out += pi->type == VN_PORT_AUDIO && !pi->is_input;
  }
  free(ranges);
  if (ok && lilv_plugin_has_latency(p)) {
    const uint32_t lp = lilv_plugin_get_latency_port_index(p);
    if (lp < info->n_ports && info->ports[lp].type == VN_PORT_CONTROL &&
        !info->ports[lp].is_input) {
      info->latency_port = (int32_t)lp;
      info->ports[lp].props |= VN_PROP_LATENCY;
    }
  }
  if (!ok) {
    vn_error("%s: out of memory while reading its ports", info->uri);
  }
  return ok;
}

void vn_plugin_info_free(VnPluginInfo *info) {
  for (uint32_t i = 0; info->ports && i < info->n_ports; ++i) {
    VnPortInfo *pi = &info->ports[i];
    free(pi->name);
    free(pi->unit);
    for (size_t k = 0; k < pi->n_points; ++k) {
      free(pi->points[k].label);
    }
    free(pi->points);
  }
  free(info->ports);
  memset(info, 0, sizeof *info);
}

const VnPortInfo *vn_port_by_symbol(const VnPluginInfo *info,
                                    const char *symbol) {
  for (uint32_t i = 0; i < info->n_ports; ++i) {
    if (strcmp(info->ports[i].symbol, symbol) == 0) {
      return &info->ports[i];
    }
  }
  return NULL;
}

bool vn_port_is_control_input(const VnPortInfo *port) {
  return port->type == VN_PORT_CONTROL && port->is_input;
}

float vn_port_start_value(const VnPortInfo *port, double rate_hz) {
  if (port->props & (VN_PROP_FREE_WHEELING | VN_PROP_ENABLED)) {
    return 1.0f;
  }
  float v = !isnan(port->default_value) ? port->default_value
            : !isnan(port->minimum)     ? port->minimum
                                        : 0.0f;
  if (port->props & VN_PROP_SAMPLE_RATE) {
    v = (float)(v * rate_hz);
  }
  return v;
}

void vn_port_bounds(const VnPortInfo *port, double rate_hz, float *lo,
                    float *hi) {
  const double scale = port->props & VN_PROP_SAMPLE_RATE ? rate_hz : 1.0;
  *lo = (float)(port->minimum * scale);
  *hi = (float)(port->maximum * scale);
}

bool vn_presets_load(VnWorld *w, const LilvPlugin *p, VnPreset **presets,
                     size_t *n_presets) {
  *presets = NULL;
  *n_presets = 0;
  LilvNodes *nodes = lilv_plugin_get_related(p, w->node[VN_NODE_PRESET]);
  const size_t n = nodes ? lilv_nodes_size(nodes) : 0;
  if (n == 0) {
    lilv_nodes_free(nodes);
    return true;
  }
  VnPreset *list = calloc(n, sizeof *list);
  bool ok = list != NULL;
  LILV_FOREACH(nodes, i, nodes) {
    if (!ok) {
      break;
    }
    const LilvNode *preset = lilv_nodes_get(nodes, i);
    lilv_world_load_resource(w->lilv, preset); // labels live in its own file
    LilvNode *label =
        lilv_world_get(w->lilv, preset, w->node[VN_NODE_RDFS_LABEL], NULL);
    VnPreset *dst = &list[*n_presets];
    dst->uri = strdup(lilv_node_as_uri(preset));
    dst->label =
        strdup(label ? lilv_node_as_string(label) : lilv_node_as_uri(preset));
    lilv_node_free(label);
    ++*n_presets;
    ok = dst->uri && dst->label;
  }
  lilv_nodes_free(nodes);
  *presets = list;
  if (!ok) {
    vn_error("out of memory while reading presets");
  }
  return ok;
}

void vn_presets_free(VnPreset *presets, size_t n_presets) {
  for (size_t i = 0; i < n_presets; ++i) {
    free(presets[i].uri);
    free(presets[i].label);
  }
  free(presets);
}

long vn_preset_find(const VnPreset *presets, size_t n_presets,
                    const char *name) {
  for (size_t i = 0; i < n_presets; ++i) {
    if (strcmp(presets[i].label, name) == 0 ||
        strcmp(presets[i].uri, name) == 0) {
      return (long)i;
    }
  }
  return -1;
}
