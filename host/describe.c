// SPDX-License-Identifier: GPL-3.0-or-later
// `vernier describe NAME|URI`: one plugin's ports, ranges, units, latency
// (measured by instantiating it) and presets.
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "args.h"
#include "describe.h"
#include "features.h"
#include "instance.h"
#include "json.h"
#include "ports.h"
#include "text.h"
#include "time_value.h"
#include "vernier.h"
#include "world.h"

#define RATE_DEFAULT_HZ 48000.0
#define RATE_MIN_HZ 8000.0
#define RATE_MAX_HZ 768000.0

static const char usage[] =
    "usage: vernier describe [--rate HZ] [--air-temp C] [--json] NAME|URI\n"
    "\n"
    "Shows one plugin: name, URI, short name, class, license, channels,\n"
    "latency at HZ (measured by instantiating it and running run(0)), every\n"
    "port with its default, range, unit and properties, and its presets.\n"
    "A control in milliseconds (delay's delay) also shows its range in\n"
    "frames at HZ and in metres of air at C.\n"
    "\n"
    "Options:\n"
    "  --rate HZ      sample rate for the latency, 8000..768000 (default "
    "48000)\n"
    "  --air-temp C   air temperature for distances, -50..60 (default 20)\n"
    "  --json         print it as JSON on stdout\n"
    "  -h, --help     this help\n"
    "      --version  the version\n";

// lilv knows class labels only when lv2core's own data is loaded, which it
// is not with LV2_PATH at build/; then the class URI's name has to do.
static void find_class(VnDescription *d) {
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
  const char *names[16];
  const size_t n = vn_port_property_names(port->props, names, 16);
  for (size_t k = 0; k < n; ++k) {
    vn_text_append(t, "%s%s", t->length ? ", " : "", names[k]);
  }
}

static void print_ports(const VnDescription *d) {
  VnTable table;
  vn_table_init(&table, 8);
  const char *header[] = {"#",       "symbol", "name", "kind",
                          "default", "range",  "unit", "properties"};
  vn_table_add(&table, header);
  for (uint32_t i = 0; i < d->info.n_ports; ++i) {
    const VnPortInfo *port = &d->info.ports[i];
    char index[16], kind[32], def[32] = "", range[80] = "";
    snprintf(index, sizeof index, "%u", port->index);
    snprintf(kind, sizeof kind, "%s %s", vn_port_type_name(port->type),
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

// Controls in ms: their range in frames and in metres of air, what
// `vernier process` does beyond it, and the units it takes for them.
static void print_times(const VnDescription *d) {
  const VnTimeContext ctx = {d->rate_hz, d->air_temp_c};
  const char *example = NULL;
  for (uint32_t i = 0; i < d->info.n_ports; ++i) {
    const VnPortInfo *port = &d->info.ports[i];
    if (!vn_port_is_time(port) || isnan(port->minimum) ||
        isnan(port->maximum)) {
      continue;
    }
    printf("%s", example ? "" : "\nTimes:\n");
    example = port->symbol;
    VnText range = {0};
    vn_time_describe_range(&range, port->minimum, port->maximum, &ctx);
    char lo[32], hi[32];
    vn_format_float(lo, sizeof lo, port->minimum);
    vn_format_float(hi, sizeof hi, port->maximum);
    printf("  %s: %s .. %s ms, %s\n", port->symbol, lo, hi,
           vn_text_get(&range));
    vn_text_free(&range);
    if (vn_time_host_can_shift(d->info.uri, port->symbol)) {
      printf("  beyond it, vernier process moves the file by whole frames, "
             "up to %g s either way\n",
             VN_HOST_SHIFT_MAX_S);
    }
  }
  if (example) {
    VnText units = {0};
    vn_time_units_help(&units, &ctx);
    printf("  vernier process takes %s=NUMBER[UNIT]: %s\n", example,
           vn_text_get(&units));
    vn_text_free(&units);
  }
}

static void print_text(const VnDescription *d) {
  char latency[96], channels[64], rate[32];
  vn_format_float(rate, sizeof rate, (float)d->rate_hz);
  if (d->latency_known) {
    snprintf(latency, sizeof latency, "%u frames at %s Hz (%.4g ms)",
             d->latency_frames, rate, d->latency_frames * 1000.0 / d->rate_hz);
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
  print_times(d);
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

static int describe(VnDescription *d, const char *word, bool json) {
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
  json ? vn_describe_print_json(d) : print_text(d);
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

static int parse_args(int argc, char **argv, VnDescription *d, bool *json,
                      const char **target) {
  double *rate_hz = &d->rate_hz;
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
    } else if (vn_args_help_or_version(&a, usage)) {
      return -1;
    } else if (vn_args_is(&a, "--json", NULL)) {
      if (!vn_args_flag(&a)) {
        return VN_EXIT_USAGE;
      }
      *json = true;
    } else if (vn_args_is(&a, "--air-temp", NULL)) {
      const char *value =
          vn_args_value(&a, "the air temperature in degrees Celsius");
      if (!value || vn_parse_air_temp(value, &d->air_temp_c) != VN_EXIT_OK) {
        return VN_EXIT_USAGE;
      }
    } else if (vn_args_is(&a, "--rate", NULL)) {
      const char *value = vn_args_value(&a, "a sample rate in Hz");
      if (!value || parse_rate(value, rate_hz) != VN_EXIT_OK) {
        return VN_EXIT_USAGE;
      }
    } else {
      vn_error("unknown option '%s'; describe options: --rate HZ, --air-temp "
               "C, --json, --help, --version",
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
  VnDescription *d = calloc(1, sizeof *d);
  if (!d) {
    vn_error("out of memory");
    return VN_EXIT_PLUGIN;
  }
  d->rate_hz = RATE_DEFAULT_HZ;
  d->air_temp_c = VN_AIR_TEMP_DEFAULT_C;
  bool json = false;
  const char *target = NULL;
  int rc = parse_args(argc, argv, d, &json, &target);
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
