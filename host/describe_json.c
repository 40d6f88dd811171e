// SPDX-License-Identifier: GPL-3.0-or-later
// `vernier describe --json`: the document whose keys README.md lists; and
// the port kinds and property names the text shares.
#include <math.h>

#include "describe.h"
#include "json.h"
#include "time_value.h"

const char *vn_port_type_name(VnPortType type) {
  switch (type) {
  case VN_PORT_AUDIO:
    return "audio";
  case VN_PORT_CONTROL:
    return "control";
  case VN_PORT_ATOM:
    return "atom";
  case VN_PORT_CV:
    return "cv";
  default:
    return "other";
  }
}

static const struct {
  unsigned prop;
  const char *name;
} prop_names[] = {
    {VN_PROP_TOGGLED, "toggled"},
    {VN_PROP_INTEGER, "integer"},
    {VN_PROP_LOGARITHMIC, "logarithmic"},
    {VN_PROP_ENUMERATION, "enumeration"},
    {VN_PROP_LATENCY, "reportsLatency"},
    {VN_PROP_SAMPLE_RATE, "sampleRate"},
    {VN_PROP_OPTIONAL, "connectionOptional"},
};

#define N_PROPS (sizeof prop_names / sizeof prop_names[0])

size_t vn_port_property_names(unsigned props, const char **names, size_t max) {
  size_t n = 0;
  for (size_t k = 0; k < N_PROPS && n < max; ++k) {
    if (props & prop_names[k].prop) {
      names[n++] = prop_names[k].name;
    }
  }
  return n;
}

// A control in ms also gets its range in frames at the rate and in metres
// of air at the temperature, as the text does.
static void time_port_json(VnJson *j, const VnDescription *d,
                           const VnPortInfo *port) {
  if (!vn_port_is_time(port) || isnan(port->minimum) || isnan(port->maximum)) {
    return;
  }
  const double c = vn_speed_of_sound_m_s(d->air_temp_c);
  const double ms[2] = {port->minimum, port->maximum};
  vn_json_key(j, "range_frames");
  vn_json_begin_array(j);
  for (int k = 0; k < 2; ++k) {
    vn_json_double(j, ms[k] * d->rate_hz / 1000.0);
  }
  vn_json_end_array(j);
  vn_json_key(j, "range_m");
  vn_json_begin_array(j);
  for (int k = 0; k < 2; ++k) {
    vn_json_double(j, ms[k] * c / 1000.0);
  }
  vn_json_end_array(j);
}

void vn_describe_print_json(const VnDescription *d) {
  VnJson j;
  vn_json_init(&j, stdout);
  LilvNode *name = lilv_plugin_get_name(d->info.plugin);
  vn_json_begin_object(&j);
  vn_json_key(&j, "uri");
  vn_json_string(&j, d->info.uri);
  vn_json_key(&j, "name");
  vn_json_string(&j, name ? lilv_node_as_string(name) : NULL);
  vn_json_key(&j, "short_name");
  vn_json_string(&j, d->short_name[0] ? d->short_name : NULL);
  vn_json_key(&j, "class");
  vn_json_string(&j, d->class_name);
  vn_json_key(&j, "license");
  vn_json_string(&j, d->license);
  vn_json_key(&j, "channels");
  vn_json_int(&j, d->info.n_audio_in);
  vn_json_key(&j, "latency_frames");
  if (d->latency_known) {
    vn_json_int(&j, d->latency_frames);
  } else {
    vn_json_null(&j);
  }
  vn_json_key(&j, "sample_rate");
  vn_json_double(&j, d->rate_hz);
  vn_json_key(&j, "latency_ms");
  if (d->latency_known) {
    vn_json_double(&j, d->latency_frames * 1000.0 / d->rate_hz);
  } else {
    vn_json_null(&j);
  }
  vn_json_key(&j, "air_temp_c");
  vn_json_double(&j, d->air_temp_c);
  vn_json_key(&j, "ports");
  vn_json_begin_array(&j);
  for (uint32_t i = 0; i < d->info.n_ports; ++i) {
    const VnPortInfo *port = &d->info.ports[i];
    vn_json_begin_object(&j);
    vn_json_key(&j, "index");
    vn_json_int(&j, port->index);
    vn_json_key(&j, "symbol");
    vn_json_string(&j, port->symbol);
    vn_json_key(&j, "name");
    vn_json_string(&j, port->name);
    vn_json_key(&j, "type");
    vn_json_string(&j, vn_port_type_name(port->type));
    vn_json_key(&j, "direction");
    vn_json_string(&j, port->is_input ? "input" : "output");
    vn_json_key(&j, "default");
    vn_json_float(&j, port->default_value); // NAN (none) is null
    vn_json_key(&j, "minimum");
    vn_json_float(&j, port->minimum);
    vn_json_key(&j, "maximum");
    vn_json_float(&j, port->maximum);
    vn_json_key(&j, "unit");
    vn_json_string(&j, port->unit);
    vn_json_key(&j, "properties");
    vn_json_begin_array(&j);
    const char *names[N_PROPS];
    const size_t n_names = vn_port_property_names(port->props, names, N_PROPS);
    for (size_t k = 0; k < n_names; ++k) {
      vn_json_string(&j, names[k]);
    }
    vn_json_end_array(&j);
    time_port_json(&j, d, port);
    vn_json_end_object(&j);
  }
  vn_json_end_array(&j);
  vn_json_key(&j, "presets");
  vn_json_begin_array(&j);
  for (size_t i = 0; i < d->n_presets; ++i) {
    vn_json_begin_object(&j);
    vn_json_key(&j, "uri");
    vn_json_string(&j, d->presets[i].uri);
    vn_json_key(&j, "label");
    vn_json_string(&j, d->presets[i].label);
    vn_json_end_object(&j);
  }
  vn_json_end_array(&j);
  vn_json_end_object(&j);
  vn_json_finish(&j);
  lilv_node_free(name);
}
