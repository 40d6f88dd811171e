// SPDX-License-Identifier: GPL-3.0-or-later
// Port facts from the bundle's Turtle through lilv, so the ranges the
// sessions draw from are the ones a host sees, with no copy to drift.
#include <stdio.h>
#include <string.h>

#include <lilv/lilv.h>
#include <lv2/core/lv2.h>
#include <lv2/port-props/port-props.h>

#include "descriptor.h" // tests/unit: find_descriptor()
#include "rt.h"

static bool fill_port(LilvWorld *w, const LilvPlugin *pl, uint32_t i,
                      port_info_t *pi) {
  const LilvPort *port = lilv_plugin_get_port_by_index(pl, i);
  LilvNode *audio = lilv_new_uri(w, LV2_CORE__AudioPort);
  LilvNode *control = lilv_new_uri(w, LV2_CORE__ControlPort);
  LilvNode *input = lilv_new_uri(w, LV2_CORE__InputPort);
  LilvNode *latency = lilv_new_uri(w, LV2_CORE__reportsLatency);
  LilvNode *integer = lilv_new_uri(w, LV2_CORE__integer);
  LilvNode *loga = lilv_new_uri(w, LV2_PORT_PROPS__logarithmic);
  const bool is_in = lilv_port_is_a(pl, port, input);
  bool ok = true;
  if (lilv_port_is_a(pl, port, audio)) {
    pi->kind = is_in ? PORT_AUDIO_IN : PORT_AUDIO_OUT;
  } else if (lilv_port_is_a(pl, port, control) && is_in) {
    pi->kind = PORT_CONTROL_IN;
  } else if (lilv_port_is_a(pl, port, control) &&
             lilv_port_has_property(pl, port, latency)) {
    pi->kind = PORT_LATENCY;
  } else {
    ok = false; // a kind of port this host does not know
  }
  pi->logarithmic = lilv_port_has_property(pl, port, loga);
  pi->integer = lilv_port_has_property(pl, port, integer);
  snprintf(pi->symbol, sizeof pi->symbol, "%s",
           lilv_node_as_string(lilv_port_get_symbol(pl, port)));
  lilv_node_free(audio), lilv_node_free(control), lilv_node_free(input);
  lilv_node_free(latency), lilv_node_free(integer), lilv_node_free(loga);
  return ok;
}

uint32_t rt_load_plugins(const char *bundle_dir, plugin_info_t *out,
                         uint32_t max) {
  LilvWorld *w = lilv_world_new();
  char uri[4096];
  snprintf(uri, sizeof uri, "file://%s/", bundle_dir);
  LilvNode *bundle = lilv_new_uri(w, uri);
  lilv_world_load_bundle(w, bundle);
  uint32_t n = 0;
  bool ok = true;
  const LilvPlugins *all = lilv_world_get_all_plugins(w);
  LILV_FOREACH(plugins, it, all) {
    const LilvPlugin *pl = lilv_plugins_get(all, it);
    plugin_info_t *p = &out[n];
    memset(p, 0, sizeof *p);
    snprintf(p->uri, sizeof p->uri, "%s",
             lilv_node_as_uri(lilv_plugin_get_uri(pl)));
    p->d = find_descriptor(p->uri);
    p->n_ports = lilv_plugin_get_num_ports(pl);
    if (!p->d || p->n_ports > RT_MAX_PORTS || n == max) {
      fprintf(stderr, "rt: %s: no descriptor or too many ports\n", p->uri);
      ok = false;
      break;
    }
    float mins[RT_MAX_PORTS], maxs[RT_MAX_PORTS], defs[RT_MAX_PORTS];
    lilv_plugin_get_port_ranges_float(pl, mins, maxs, defs);
    for (uint32_t i = 0; i < p->n_ports; ++i) {
      ok = ok && fill_port(w, pl, i, &p->port[i]);
      p->port[i].min = mins[i], p->port[i].max = maxs[i];
      p->port[i].def = defs[i];
      p->n_channels += p->port[i].kind == PORT_AUDIO_IN;
    }
    ++n;
  }
  lilv_node_free(bundle);
  lilv_world_free(w);
  return ok ? n : 0;
}
