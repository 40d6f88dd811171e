// SPDX-License-Identifier: GPL-3.0-or-later
#include "features.h"

#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include <lv2/atom/atom.h>
#include <lv2/buf-size/buf-size.h>
#include <lv2/parameters/parameters.h>
#include <lv2/urid/urid.h>

#include "vernier.h"

static const char *const given_features[] = {
    LV2_URID__map, LV2_URID__unmap, LV2_OPTIONS__options,
    LV2_BUF_SIZE__boundedBlockLength, LV2_LOG__log,
    // Not things a host hands over, but promises it keeps: input and output
    // buffers are always separate, and offline there is no deadline to miss.
    LV2_CORE__inPlaceBroken, LV2_CORE__hardRTCapable, LV2_CORE__isLive};

static const char *const given_options[] = {
    LV2_BUF_SIZE__minBlockLength, LV2_BUF_SIZE__maxBlockLength,
    LV2_BUF_SIZE__nominalBlockLength, LV2_BUF_SIZE__sequenceSize,
    LV2_PARAMETERS__sampleRate};

void vn_features_init(VnFeatures *f, VnWorld *w, uint32_t block_frames,
                      double rate_hz) {
  memset(f, 0, sizeof *f);
  f->min_block_frames = 0; // the last block of a file is shorter
  f->max_block_frames = (int32_t)block_frames;
  f->nominal_block_frames = (int32_t)block_frames;
  f->sequence_size_bytes = (int32_t)VN_ATOM_BUFFER_BYTES;
  f->rate_hz = (float)rate_hz;
  VnUrids *u = &w->urids;
  const LV2_URID atom_int = w->atom_int;
  const struct {
    const char *key;
    LV2_URID type;
    uint32_t size;
    const void *value;
  } options[] = {
      {LV2_BUF_SIZE__minBlockLength, atom_int, sizeof(int32_t),
       &f->min_block_frames},
      {LV2_BUF_SIZE__maxBlockLength, atom_int, sizeof(int32_t),
       &f->max_block_frames},
      {LV2_BUF_SIZE__nominalBlockLength, atom_int, sizeof(int32_t),
       &f->nominal_block_frames},
      {LV2_BUF_SIZE__sequenceSize, atom_int, sizeof(int32_t),
       &f->sequence_size_bytes},
      {LV2_PARAMETERS__sampleRate, w->atom_float, sizeof(float), &f->rate_hz},
  };
  for (size_t i = 0; i < sizeof options / sizeof options[0]; ++i) {
    f->options[i] = (LV2_Options_Option){LV2_OPTIONS_INSTANCE,
                                         0,
                                         vn_urid(u, options[i].key),
                                         options[i].size,
                                         options[i].type,
                                         options[i].value};
  }
  // options[5] stays all zero: the terminator.
  f->map = (LV2_Feature){LV2_URID__map, &u->map};
  f->unmap = (LV2_Feature){LV2_URID__unmap, &u->unmap};
  f->options_feature = (LV2_Feature){LV2_OPTIONS__options, f->options};
  f->bounded = (LV2_Feature){LV2_BUF_SIZE__boundedBlockLength, NULL};
}

// Any thread the plugin calls from, also the audio thread: offline, a
// message on stderr costs nothing that matters.
static int log_vprintf(LV2_Log_Handle handle, LV2_URID type, const char *fmt,
                       va_list ap) {
  VnLog *log = handle;
  const bool serious = type == log->error || type == log->warning;
  log->errors += type == log->error;
  if (type == log->trace || (log->quiet && !serious)) {
    return 0;
  }
  char message[1024];
  const int n = vsnprintf(message, sizeof message, fmt, ap);
  size_t length = strlen(message);
  while (length > 0 && message[length - 1] == '\n') {
    message[--length] = '\0'; // we end the line ourselves
  }
  vn_progress_clear();
  fprintf(stderr, "vernier: %s: %s%s\n", log->label,
          type == log->error     ? "error: "
          : type == log->warning ? "warning: "
                                 : "",
          message);
  return n;
}

VN_PRINTF(3, 4)
static int log_printf(LV2_Log_Handle handle, LV2_URID type, const char *fmt,
                      ...) {
  va_list ap;
  va_start(ap, fmt);
  const int n = log_vprintf(handle, type, fmt, ap);
  va_end(ap);
  return n;
}

void vn_log_init(VnLog *log, VnWorld *w, const char *label, bool quiet) {
  memset(log, 0, sizeof *log);
  log->iface = (LV2_Log_Log){log, log_printf, log_vprintf};
  log->feature = (LV2_Feature){LV2_LOG__log, &log->iface};
  log->label = label;
  log->quiet = quiet;
  log->error = vn_urid(&w->urids, LV2_LOG__Error);
  log->warning = vn_urid(&w->urids, LV2_LOG__Warning);
  log->note = vn_urid(&w->urids, LV2_LOG__Note);
  log->trace = vn_urid(&w->urids, LV2_LOG__Trace);
}

void vn_features_list(VnFeatures *f, VnLog *log,
                      const LV2_Feature *list[VN_FEATURES_MAX]) {
  list[0] = &f->map;
  list[1] = &f->unmap;
  list[2] = &f->options_feature;
  list[3] = &f->bounded;
  list[4] = &log->feature;
  list[5] = NULL;
}

static bool in_list(const char *uri, const char *const *list, size_t n) {
  for (size_t i = 0; i < n; ++i) {
    if (strcmp(uri, list[i]) == 0) {
      return true;
    }
  }
  return false;
}

// Prints the error for the first URI in nodes that is not in list.
static bool first_missing(const LilvNodes *nodes, const char *const *list,
                          size_t n, const char *plugin_uri, const char *what) {
  LILV_FOREACH(nodes, i, nodes) {
    const LilvNode *node = lilv_nodes_get(nodes, i);
    const char *uri = lilv_node_is_uri(node) ? lilv_node_as_uri(node)
                                             : lilv_node_as_string(node);
    if (!in_list(uri, list, n)) {
      vn_error("%s needs the %s %s, which vernier does not provide", plugin_uri,
               what, uri);
      return true;
    }
  }
  return false;
}

int vn_features_check(VnWorld *w, const LilvPlugin *p) {
  const char *plugin_uri = lilv_node_as_uri(lilv_plugin_get_uri(p));
  LilvNodes *features = lilv_plugin_get_required_features(p);
  bool missing = features &&
                 first_missing(features, given_features,
                               sizeof given_features / sizeof given_features[0],
                               plugin_uri, "feature");
  lilv_nodes_free(features);
  if (!missing) {
    LilvNodes *options =
        lilv_plugin_get_value(p, w->node[VN_NODE_REQUIRED_OPTION]);
    missing =
        options && first_missing(options, given_options,
                                 sizeof given_options / sizeof given_options[0],
                                 plugin_uri, "option");
    lilv_nodes_free(options);
  }
  return missing ? VN_EXIT_PLUGIN : VN_EXIT_OK;
}
