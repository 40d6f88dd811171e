// SPDX-License-Identifier: GPL-3.0-or-later
#include "world.h"

#include <limits.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <lv2/atom/atom.h>
#include <lv2/core/lv2.h>
#include <lv2/options/options.h>
#include <lv2/port-props/port-props.h>
#include <lv2/presets/presets.h>
#include <lv2/resize-port/resize-port.h>
#include <lv2/units/units.h>

#include "text.h"
#include "vernier.h"

static const char *const node_uris[VN_NODE_LAST] = {
    [VN_NODE_AUDIO_PORT] = LV2_CORE__AudioPort,
    [VN_NODE_CONTROL_PORT] = LV2_CORE__ControlPort,
    [VN_NODE_CV_PORT] = LV2_CORE__CVPort,
    [VN_NODE_ATOM_PORT] = LV2_ATOM__AtomPort,
    [VN_NODE_INPUT_PORT] = LV2_CORE__InputPort,
    [VN_NODE_OUTPUT_PORT] = LV2_CORE__OutputPort,
    [VN_NODE_CONNECTION_OPTIONAL] = LV2_CORE__connectionOptional,
    [VN_NODE_TOGGLED] = LV2_CORE__toggled,
    [VN_NODE_INTEGER] = LV2_CORE__integer,
    [VN_NODE_ENUMERATION] = LV2_CORE__enumeration,
    [VN_NODE_LOGARITHMIC] = LV2_PORT_PROPS__logarithmic,
    [VN_NODE_SAMPLE_RATE] = LV2_CORE__sampleRate,
    [VN_NODE_REPORTS_LATENCY] = LV2_CORE__reportsLatency,
    [VN_NODE_DESIGNATION] = LV2_CORE__designation,
    [VN_NODE_FREE_WHEELING] = LV2_CORE__freeWheeling,
    [VN_NODE_ENABLED] = LV2_CORE__enabled,
    [VN_NODE_UNIT] = LV2_UNITS__unit,
    [VN_NODE_UNIT_SYMBOL] = LV2_UNITS__symbol,
    [VN_NODE_MINIMUM_SIZE] = LV2_RESIZE_PORT__minimumSize,
    [VN_NODE_PRESET] = LV2_PRESETS__Preset,
    [VN_NODE_RDFS_LABEL] = LILV_NS_RDFS "label",
    [VN_NODE_RDF_TYPE] = LILV_NS_RDF "type",
    [VN_NODE_LV2_PLUGIN] = LV2_CORE__Plugin,
    [VN_NODE_LICENSE] = LILV_NS_DOAP "license",
    [VN_NODE_REQUIRED_OPTION] = LV2_OPTIONS__requiredOption,
};

bool vn_is_ours(const char *uri) {
  return strncmp(uri, VN_OUR_PREFIX, strlen(VN_OUR_PREFIX)) == 0;
}

static bool ends_with(const char *s, const char *suffix) {
  const size_t n = strlen(s), m = strlen(suffix);
  return n >= m && strcmp(s + n - m, suffix) == 0;
}

bool vn_short_name(const char *uri, char *buf, size_t size) {
  if (!vn_is_ours(uri)) {
    return false;
  }
  const char *rest = uri + strlen(VN_OUR_PREFIX);
  int length = (int)strlen(rest);
  if (ends_with(rest, "-mono")) {
    length -= (int)strlen("-mono"); // a bare name means the mono variant
  }
  snprintf(buf, size, "%.*s", length, rest);
  return true;
}

static bool have_ours(const VnWorld *w) {
  const LilvPlugins *all = lilv_world_get_all_plugins(w->lilv);
  LILV_FOREACH(plugins, i, all) {
    const LilvPlugin *p = lilv_plugins_get(all, i);
    if (vn_is_ours(lilv_node_as_uri(lilv_plugin_get_uri(p)))) {
      return true;
    }
  }
  return false;
}

// So that build/vernier finds build/vernier.lv2 right after `make`, and the
// sanitized build/asan/vernier its own build/asan/lv2/vernier.lv2, without
// LV2_PATH; ../lib/lv2 covers an install under any prefix.
static void load_bundle_beside_executable(VnWorld *w) {
  char exe[PATH_MAX];
  const ssize_t n = readlink("/proc/self/exe", exe, sizeof exe - 1);
  if (n <= 0) {
    return;
  }
  exe[n] = '\0';
  char *slash = strrchr(exe, '/');
  if (!slash) {
    return;
  }
  *slash = '\0';
  static const char *const candidates[] = {"vernier.lv2", "lv2/vernier.lv2",
                                           "../lib/lv2/vernier.lv2"};
  for (size_t i = 0; i < sizeof candidates / sizeof candidates[0]; ++i) {
    char manifest[PATH_MAX + 64];
    snprintf(manifest, sizeof manifest, "%s/%s/manifest.ttl", exe,
             candidates[i]);
    struct stat st;
    if (stat(manifest, &st) != 0 || !S_ISREG(st.st_mode)) {
      continue;
    }
    manifest[strlen(manifest) - strlen("manifest.ttl")] = '\0';
    LilvNode *bundle = lilv_new_file_uri(w->lilv, NULL, manifest);
    if (bundle) {
      lilv_world_load_bundle(w->lilv, bundle);
      lilv_node_free(bundle);
    }
    return;
  }
}

// lilv 0.24 crashes on a relative LV2_PATH entry (it maps the bare path as
// a URI and fails; lv2ls does the same). Hand it the same list with every
// relative entry made absolute. Entries that do not exist are kept as they
// are: lilv skips them.
static void set_absolute_lv2_path(LilvWorld *world) {
  const char *env = getenv("LV2_PATH");
  if (!env || !*env) {
    return;
  }
  VnText path = {0};
  const char *entry = env;
  while (*entry) {
    const char *end = strchr(entry, ':');
    const size_t len = end ? (size_t)(end - entry) : strlen(entry);
    char part[PATH_MAX], absolute[PATH_MAX];
    if (len > 0 && len < sizeof part) {
      memcpy(part, entry, len);
      part[len] = '\0';
      const bool relative = part[0] != '/' && part[0] != '~';
      vn_text_append(&path, "%s%s", path.length ? ":" : "",
                     relative && realpath(part, absolute) ? absolute : part);
    }
    entry += len + (end ? 1 : 0);
  }
  if (path.length && !path.failed) {
    LilvNode *value = lilv_new_string(world, vn_text_get(&path));
    lilv_world_set_option(world, LILV_OPTION_LV2_PATH, value);
    lilv_node_free(value);
  }
  vn_text_free(&path);
}

int vn_world_open(VnWorld *w) {
  memset(w, 0, sizeof *w);
  vn_urids_init(&w->urids);
  w->lilv = lilv_world_new();
  if (!w->lilv) {
    vn_error("cannot set up the LV2 world (out of memory)");
    return VN_EXIT_PLUGIN;
  }
  for (int i = 0; i < VN_NODE_LAST; ++i) {
    w->node[i] = lilv_new_uri(w->lilv, node_uris[i]);
    if (!w->node[i]) {
      vn_error("cannot set up the LV2 world (out of memory)");
      return VN_EXIT_PLUGIN;
    }
  }
  set_absolute_lv2_path(w->lilv);
  lilv_world_load_all(w->lilv);
  if (!have_ours(w)) {
    load_bundle_beside_executable(w);
  }
  w->atom_float = vn_urid(&w->urids, LV2_ATOM__Float);
  w->atom_double = vn_urid(&w->urids, LV2_ATOM__Double);
  w->atom_int = vn_urid(&w->urids, LV2_ATOM__Int);
  w->atom_long = vn_urid(&w->urids, LV2_ATOM__Long);
  w->atom_bool = vn_urid(&w->urids, LV2_ATOM__Bool);
  w->atom_sequence = vn_urid(&w->urids, LV2_ATOM__Sequence);
  w->atom_chunk = vn_urid(&w->urids, LV2_ATOM__Chunk);
  return VN_EXIT_OK;
}

void vn_world_close(VnWorld *w) {
  for (int i = 0; i < VN_NODE_LAST; ++i) {
    lilv_node_free(w->node[i]);
  }
  if (w->lilv) {
    lilv_world_free(w->lilv);
  }
  vn_urids_free(&w->urids);
  memset(w, 0, sizeof *w);
}

static const LilvPlugin *plugin_by_uri(VnWorld *w, const char *uri) {
  LilvNode *node = lilv_new_uri(w->lilv, uri);
  if (!node) {
    return NULL;
  }
  const LilvPlugin *p =
      lilv_plugins_get_by_uri(lilv_world_get_all_plugins(w->lilv), node);
  lilv_node_free(node);
  return p;
}

const LilvPlugin *vn_world_find_plugin(VnWorld *w, const char *word) {
  if (strchr(word, ':')) {
    return plugin_by_uri(w, word);
  }
  char uri[512];
  // NAME is the mono variant; NAME-mono, NAME-stereo, or a plugin that has
  // no variants, are found as they are.
  snprintf(uri, sizeof uri, "%s%s-mono", VN_OUR_PREFIX, word);
  const LilvPlugin *p = plugin_by_uri(w, uri);
  if (!p) {
    snprintf(uri, sizeof uri, "%s%s", VN_OUR_PREFIX, word);
    p = plugin_by_uri(w, uri);
  }
  return p;
}

int vn_world_unknown_plugin(VnWorld *w, const char *word) {
  VnText ours = {0};
  const LilvPlugins *all = lilv_world_get_all_plugins(w->lilv);
  LILV_FOREACH(plugins, i, all) {
    const char *uri =
        lilv_node_as_uri(lilv_plugin_get_uri(lilv_plugins_get(all, i)));
    char name[256];
    // Stereo variants are covered by the "NAME-stereo" hint.
    if (vn_short_name(uri, name, sizeof name) && !ends_with(uri, "-stereo")) {
      vn_text_append(&ours, "%s%s", ours.length ? ", " : "", name);
    }
  }
  if (ours.length) {
    vn_error("no plugin '%s'; ours: %s (NAME-stereo for stereo); or a URI "
             "from 'vernier list'",
             word, vn_text_get(&ours));
  } else {
    vn_error("no plugin '%s'; none of ours is installed (LV2_PATH should "
             "name the folder that holds vernier.lv2); or a URI from "
             "'vernier list'",
             word);
  }
  vn_text_free(&ours);
  return VN_EXIT_PLUGIN;
}
