// SPDX-License-Identifier: GPL-3.0-or-later
// `vernier describe NAME|URI`: one plugin's ports, ranges, units, latency
// (measured by instantiating it) and presets.
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "args.h"
#include "features.h"
#include "instance.h"
#include "json.h"
#include "ports.h"
#include "text.h"
#include "vernier.h"
#include "world.h"

#define RATE_DEFAULT_HZ 48000.0
#define RATE_MIN_HZ 8000.0
#define RATE_MAX_HZ 768000.0

static const char usage[] =
    "usage: vernier describe [--rate HZ] [--json] NAME|URI\n"
    "\n"
    "Shows one plugin: name, URI, short name, class, license, channels,\n"
    "latency at HZ (measured by instantiating it and running run(0)), every\n"
    "port with its default, range, unit and properties, and its presets.\n"
    "\n"
    "Options:\n"
    "  --rate HZ      sample rate for the latency, 8000..768000 (default "
    "48000)\n"
    "  --json         print it as JSON on stdout\n"
    "  -h, --help     this help\n"
    "      --version  the version\n";

typedef struct {
  VnWorld world;
  VnPluginInfo info;
  VnPreset *presets;
  size_t n_presets;
  double rate_hz;
  bool latency_known;
  uint32_t latency_frames;
  char class_name[128];
  char short_name[256];
  const char *license;
  LilvNode *license_node;
} Description;

static const char *type_name(VnPortType type) {
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

// lilv knows class labels only when lv2core's own data is loaded, which it
// is not with LV2_PATH at build/; then the class URI's name has to do.
static void find_class(Description *d) {
  VnWorld *w = &d->world;
  const LilvPlugin *p = d->info.plugin;
  const LilvPluginClass *cls = lilv_plugin_get_class(p);
  if (cls && !lilv_node_equals(lilv_plugin_class_get_uri(cls),
                               w->node[VN_NODE_LV2_PLUGIN])) {
    snprintf(d->class_name, sizeof d->class_name, "%s",
             lilv_node_as_string(lilv_plugin_class_get_label(cls)));
    return;
  }
  snprintf(d->class_name, sizeof d->class_name, "Plugin");
  LilvNodes *types = lilv_plugin_get_value(p, w->node[VN_NODE_RDF_TYPE]);
  LILV_FOREACH(nodes, i, types) {
    const LilvNode *t = lilv_nodes_get(types, i);
    if (!lilv_node_is_uri(t) ||
        lilv_node_equals(t, w->node[VN_NODE_LV2_PLUGIN])) {
      continue;
    }
    const char *hash = strrchr(lilv_node_as_uri(t), '#');
    const char *name = hash ? hash + 1 : lilv_node_as_uri(t);
    int length = (int)strlen(name);
    if (length > 6 && strcmp(name + length - 6, "Plugin") == 0) {
      length -= 6; // lv2:AmplifierPlugin is labelled "Amplifier"
    }
    snprintf(d->class_name, sizeof d->class_name, "%.*s", length, name);
    break;
  }
  lilv_nodes_free(types);
}

static void port_properties(const VnPortInfo *port, VnText *t) {
  for (size_t k = 0; k < N_PROPS; ++k) {
    if (port->props & prop_names[k].prop) {
      vn_text_append(t, "%s%s", t->length ? ", " : "", prop_names[k].name);
    }
  }
}

static void print_ports(const Description *d) {
  VnTable table;
  vn_table_init(&table, 8);
  const char *header[] = {"#",       "symbol", "name", "kind",
                          "default", "range",  "unit", "properties"};
  vn_table_add(&table, header);
  for (uint32_t i = 0; i < d->info.n_ports; ++i) {
    const VnPortInfo *port = &d->info.ports[i];
    char index[16], kind[32], def[32] = "", range[80] = "";
    snprintf(index, sizeof index, "%u", port->index);
    snprintf(kind, sizeof kind, "%s %s", type_name(port->type),
             port->is_input ? "input" : "output");
    if (!isnan(port->default_value)) {
      vn_format_float(def, sizeof def, port->default_value);
    }
    if (!isnan(port->minimum) && !isnan(port->maximum)) {
      char lo[32], hi[32];
      vn_format_float(lo, sizeof lo, port->minimum);
      vn_format_float(hi, sizeof hi, port->maximum);
      snprintf(range, sizeof range, "%s .. %s", lo, hi);
    }
    VnText props = {0};
    port_properties(port, &props);
    const char *row[] = {index, port->symbol, port->name, kind,
                         def,   range,        port->unit, vn_text_get(&props)};
    vn_table_add(&table, row);
    vn_text_free(&props);
  }
  vn_table_print(&table, stdout, "  ");
  vn_table_free(&table);
  for (uint32_t i = 0; i < d->info.n_ports; ++i) {
    const VnPortInfo *port = &d->info.ports[i];
    if (port->n_points == 0) {
      continue;
    }
    VnText values = {0};
    for (size_t k = 0; k < port->n_points; ++k) {
      char v[32];
      vn_format_float(v, sizeof v, port->points[k].value);
      vn_text_append(&values, "%s%s = %s", k ? ", " : "", v,
                     port->points[k].label);
    }
    printf("  values of '%s': %s\n", port->symbol, vn_text_get(&values));
    vn_text_free(&values);
  }
}

static void print_text(const Description *d) {
  char latency[96], channels[64], rate[32];
  vn_format_float(rate, sizeof rate, (float)d->rate_hz);
  if (d->latency_known) {
    snprintf(latency, sizeof latency, "%u frames at %s Hz", d->latency_frames,
             rate);
  } else {
    snprintf(latency, sizeof latency, "unknown (not instantiable here)");
  }
  snprintf(channels, sizeof channels, "%u in, %u out", d->info.n_audio_in,
           d->info.n_audio_out);
  LilvNode *name = lilv_plugin_get_name(d->info.plugin);
  VnTable head;
  vn_table_init(&head, 2);
  const char *rows[][2] = {
      {"Name", name ? lilv_node_as_string(name) : d->info.uri},
      {"URI", d->info.uri},
      {"Short name", d->short_name[0] ? d->short_name : "-"},
      {"Class", d->class_name},
      {"License", d->license ? d->license : "-"},
      {"Channels", channels},
      {"Latency", latency},
  };
  for (size_t i = 0; i < sizeof rows / sizeof rows[0]; ++i) {
    vn_table_add(&head, rows[i]);
  }
  vn_table_print(&head, stdout, "");
  vn_table_free(&head);
  lilv_node_free(name);
  printf("\nPorts:\n");
  print_ports(d);
  printf("\nPresets:%s\n", d->n_presets ? "" : " none");
  VnTable presets;
  vn_table_init(&presets, 2);
  for (size_t i = 0; i < d->n_presets; ++i) {
    const char *row[] = {d->presets[i].label, d->presets[i].uri};
    vn_table_add(&presets, row);
  }
  vn_table_print(&presets, stdout, "  ");
  vn_table_free(&presets);
}

static void print_json(const Description *d) {
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
    vn_json_string(&j, type_name(port->type));
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
    for (size_t k = 0; k < N_PROPS; ++k) {
      if (port->props & prop_names[k].prop) {
        vn_json_string(&j, prop_names[k].name);
      }
    }
    vn_json_end_array(&j);
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

static int describe(Description *d, const char *word, bool json) {
  int rc = vn_world_open(&d->world);
  if (rc != VN_EXIT_OK) {
    return rc;
  }
  const LilvPlugin *p = vn_world_find_plugin(&d->world, word);
  if (!p) {
    return vn_world_unknown_plugin(&d->world, word);
  }
  if (!vn_plugin_info_load(&d->info, &d->world, p) ||
      !vn_presets_load(&d->world, p, &d->presets, &d->n_presets)) {
    return VN_EXIT_PLUGIN;
  }
  vn_short_name(d->info.uri, d->short_name, sizeof d->short_name);
  find_class(d);
  LilvNodes *licenses =
      lilv_plugin_get_value(p, d->world.node[VN_NODE_LICENSE]);
  const LilvNode *license = licenses ? lilv_nodes_get_first(licenses) : NULL;
  if (license) {
    d->license_node = lilv_node_duplicate(license);
    d->license = lilv_node_is_uri(d->license_node)
                     ? lilv_node_as_uri(d->license_node)
                     : lilv_node_as_string(d->license_node);
  }
  lilv_nodes_free(licenses);
  // A plugin that cannot run here is still described; the exit code says
  // that it cannot run.
  rc = vn_features_check(&d->world, p);
  if (rc == VN_EXIT_OK) {
    rc = vn_instance_measure_latency(&d->world, &d->info, d->rate_hz,
                                     &d->latency_frames);
    d->latency_known = rc == VN_EXIT_OK;
  }
  json ? print_json(d) : print_text(d);
  return rc;
}

static int parse_rate(const char *text, double *rate_hz) {
  double r = 0;
  if (!vn_parse_number(text, &r) || r < RATE_MIN_HZ || r > RATE_MAX_HZ) {
    vn_error("--rate %s: not a sample rate in Hz from %g to %g", text,
             RATE_MIN_HZ, RATE_MAX_HZ);
    return VN_EXIT_USAGE;
  }
  *rate_hz = r;
  return VN_EXIT_OK;
}

static int parse_args(int argc, char **argv, double *rate_hz, bool *json,
                      const char **target) {
  VnArgs a;
  vn_args_init(&a, argc, argv);
  char *word = NULL;
  for (VnArgKind kind; (kind = vn_args_next(&a, &word)) != VN_ARG_END;) {
    if (kind == VN_ARG_WORD) {
      if (*target) {
        vn_error("describe takes one plugin (got '%s' and '%s')", *target,
                 word);
        return VN_EXIT_USAGE;
      }
      *target = word;
    } else if (vn_args_is(&a, "--help", "-h")) {
      fputs(usage, stdout);
      return -1;
    } else if (vn_args_is(&a, "--version", NULL)) {
      printf("vernier %s\n", VERNIER_VERSION);
      return -1;
    } else if (vn_args_is(&a, "--json", NULL)) {
      if (!vn_args_flag(&a)) {
        return VN_EXIT_USAGE;
      }
      *json = true;
    } else if (vn_args_is(&a, "--rate", NULL)) {
      const char *value = vn_args_value(&a, "a sample rate in Hz");
      if (!value || parse_rate(value, rate_hz) != VN_EXIT_OK) {
        return VN_EXIT_USAGE;
      }
    } else {
      vn_error("unknown option '%s'; describe options: --rate HZ, --json, "
               "--help, --version",
               word);
      return VN_EXIT_USAGE;
    }
  }
  if (!*target) {
    vn_error("describe needs a plugin: a short name (gain) or a URI; see "
             "'vernier list'");
    return VN_EXIT_USAGE;
  }
  return VN_EXIT_OK;
}

int vn_describe_main(int argc, char **argv) {
  Description *d = calloc(1, sizeof *d);
  if (!d) {
    vn_error("out of memory");
    return VN_EXIT_PLUGIN;
  }
  d->rate_hz = RATE_DEFAULT_HZ;
  bool json = false;
  const char *target = NULL;
  int rc = parse_args(argc, argv, &d->rate_hz, &json, &target);
  if (rc == VN_EXIT_OK) {
    rc = describe(d, target, json);
  } else if (rc < 0) {
    rc = VN_EXIT_OK;
  }
  lilv_node_free(d->license_node);
  vn_presets_free(d->presets, d->n_presets);
  vn_plugin_info_free(&d->info);
  vn_world_close(&d->world);
  free(d);
  return rc;
}
