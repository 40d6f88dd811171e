// SPDX-License-Identifier: GPL-3.0-or-later
#include "instance.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include <lv2/atom/atom.h>

#include "features.h"
#include "vernier.h"

// Larger reports are taken as a plugin's mistake: this is ~6 hours at 48 kHz.
#define VN_MAX_LATENCY_FRAMES (1u << 30)

// Why lilv_plugin_instantiate() gave nothing, as far as the host can tell:
// no lv2:binary, a binary that is not there, or (lilv's own message above
// says which) one that does not load, has no lv2_descriptor, or refused.
static void instantiate_failed(const VnPluginInfo *info, double rate_hz) {
  const LilvNode *binary = lilv_plugin_get_library_uri(info->plugin);
  char *path =
      binary ? lilv_file_uri_parse(lilv_node_as_uri(binary), NULL) : NULL;
  if (!binary) {
    vn_error("%s cannot be instantiated: its description names no library "
             "(lv2:binary)",
             info->uri);
  } else if (path && access(path, F_OK) != 0) {
    vn_error("%s cannot be instantiated: its library %s is missing", info->uri,
             path);
  } else {
    vn_error("%s cannot be instantiated at %g Hz (the plugin refused, or its "
             "library did not load)",
             info->uri, rate_hz);
  }
  lilv_free(path);
}

static int check_ports(const VnPluginInfo *info) {
  for (uint32_t i = 0; i < info->n_ports; ++i) {
    const VnPortInfo *port = &info->ports[i];
    if (port->type == VN_PORT_OTHER && !(port->props & VN_PROP_OPTIONAL)) {
      vn_error("%s: port '%s' is of a kind vernier cannot feed (not audio, "
               "control, atom or CV) and is not optional",
               info->uri, port->symbol);
      return VN_EXIT_PLUGIN;
    }
  }
  return VN_EXIT_OK;
}

static void reset_atom(VnInstance *inst, uint32_t port) {
  LV2_Atom *atom = inst->buffers[port];
  if (inst->info->ports[port].is_input) {
    // An empty sequence: there are no events to give.
    LV2_Atom_Sequence *seq = (LV2_Atom_Sequence *)atom;
    seq->atom.size = sizeof(LV2_Atom_Sequence_Body);
    seq->atom.type = inst->atom_sequence;
    seq->body.unit = 0;
    seq->body.pad = 0;
  } else {
    // The LV2 convention for an output: a chunk saying how much room there is.
    atom->size = inst->buffer_bytes[port] - (uint32_t)sizeof(LV2_Atom);
    atom->type = inst->atom_chunk;
  }
}

static bool allocate_buffer(VnInstance *inst, const VnPortInfo *port,
                            double rate_hz, uint32_t block_frames) {
  const uint32_t i = port->index;
  if (port->type == VN_PORT_CV) {
    inst->buffer_bytes[i] = block_frames * (uint32_t)sizeof(float);
    float *cv = calloc(block_frames, sizeof(float));
    if (cv && port->is_input) {
      // A CV input nobody drives holds still at its start value.
      const float v = vn_port_start_value(port, rate_hz);
      for (uint32_t k = 0; k < block_frames; ++k) {
        cv[k] = v;
      }
    }
    inst->buffers[i] = cv;
  } else if (port->type == VN_PORT_ATOM) {
    uint32_t bytes = port->minimum_size_bytes > VN_ATOM_BUFFER_BYTES
                         ? port->minimum_size_bytes
                         : VN_ATOM_BUFFER_BYTES;
    bytes = (bytes + 7u) & ~7u; // atoms are 64-bit aligned
    inst->buffer_bytes[i] = bytes;
    inst->buffers[i] = calloc(1, bytes);
    if (inst->buffers[i]) {
      reset_atom(inst, i);
    }
  } else {
    return true;
  }
  return inst->buffers[i] != NULL;
}

int vn_instance_open(VnInstance *inst, VnWorld *w, const VnPluginInfo *info,
                     const float *controls, double rate_hz,
                     uint32_t block_frames, const LV2_Feature *const *features,
                     LilvState *const *presets, size_t n_presets) {
  memset(inst, 0, sizeof *inst);
  inst->info = info;
  inst->atom_sequence = w->atom_sequence;
  inst->atom_chunk = w->atom_chunk;
  int rc = check_ports(info);
  if (rc != VN_EXIT_OK) {
    return rc;
  }
  const size_t n = info->n_ports ? info->n_ports : 1;
  inst->values = calloc(n, sizeof *inst->values);
  inst->buffers = calloc(n, sizeof *inst->buffers);
  inst->buffer_bytes = calloc(n, sizeof *inst->buffer_bytes);
  if (!inst->values || !inst->buffers || !inst->buffer_bytes) {
    vn_error("out of memory");
    return VN_EXIT_PLUGIN;
  }
  inst->lilv = lilv_plugin_instantiate(info->plugin, rate_hz, features);
  if (!inst->lilv) {
    instantiate_failed(info, rate_hz);
    return VN_EXIT_PLUGIN;
  }
  for (uint32_t i = 0; i < info->n_ports; ++i) {
    const VnPortInfo *port = &info->ports[i];
    if (port->type == VN_PORT_CONTROL) {
      inst->values[i] = port->is_input ? controls[i] : 0.0f;
      vn_instance_connect(inst, i, &inst->values[i]);
    } else if (port->type == VN_PORT_CV || port->type == VN_PORT_ATOM) {
      if (!allocate_buffer(inst, port, rate_hz, block_frames)) {
        vn_error("out of memory");
        return VN_EXIT_PLUGIN;
      }
      vn_instance_connect(inst, i, inst->buffers[i]);
    } else if (port->type == VN_PORT_OTHER) {
      vn_instance_connect(inst, i, NULL); // optional, so NULL is allowed
    }
  }
  for (size_t k = 0; k < n_presets; ++k) {
    if (lilv_state_get_num_properties(presets[k]) > 0) {
      lilv_state_restore(presets[k], inst->lilv, NULL, NULL, 0, features);
    }
  }
  return VN_EXIT_OK;
}

void vn_instance_connect(VnInstance *inst, uint32_t port, void *data) {
  lilv_instance_connect_port(inst->lilv, port, data);
}

void vn_instance_start(VnInstance *inst) {
  lilv_instance_activate(inst->lilv);
  inst->active = true;
  vn_instance_run(inst, 0);
}

void vn_instance_run(VnInstance *inst, uint32_t n_frames) {
  for (uint32_t i = 0; i < inst->info->n_ports; ++i) {
    if (inst->info->ports[i].type == VN_PORT_ATOM) {
      reset_atom(inst, i);
    }
  }
  lilv_instance_run(inst->lilv, n_frames);
}

bool vn_instance_latency(const VnInstance *inst, uint32_t *frames) {
  *frames = 0;
  if (inst->info->latency_port < 0) {
    return true;
  }
  const float reported = inst->values[inst->info->latency_port];
  if (!(reported >= 0.0f && reported < (float)VN_MAX_LATENCY_FRAMES)) {
    vn_error("%s reports a latency of %g frames, which is not a frame count "
             "vernier can compensate",
             inst->info->uri, (double)reported);
    return false;
  }
  *frames = (uint32_t)lrintf(reported);
  return true;
}

void vn_instance_close(VnInstance *inst) {
  if (inst->lilv) {
    if (inst->active) {
      lilv_instance_deactivate(inst->lilv);
    }
    lilv_instance_free(inst->lilv);
  }
  for (uint32_t i = 0; inst->buffers && inst->info && i < inst->info->n_ports;
       ++i) {
    free(inst->buffers[i]);
  }
  free(inst->buffers);
  free(inst->buffer_bytes);
  free(inst->values);
  memset(inst, 0, sizeof *inst);
}

int vn_instance_measure_latency(VnWorld *w, const VnPluginInfo *info,
                                double rate_hz, uint32_t *frames) {
  enum { BLOCK_FRAMES = 512 };
  VnFeatures features;
  VnLog log;
  const LV2_Feature *list[VN_FEATURES_MAX];
  vn_features_init(&features, w, BLOCK_FRAMES, rate_hz);
  vn_log_init(&log, w, info->uri, false);
  vn_features_list(&features, &log, list);
  const size_t n = info->n_ports ? info->n_ports : 1;
  float *controls = calloc(n, sizeof *controls);
  float *audio = calloc(n * BLOCK_FRAMES, sizeof *audio); // a slice per port
  VnInstance inst;
  memset(&inst, 0, sizeof inst);
  int rc = controls && audio ? VN_EXIT_OK : VN_EXIT_PLUGIN;
  if (rc != VN_EXIT_OK) {
    vn_error("out of memory");
  }
  for (uint32_t i = 0; rc == VN_EXIT_OK && i < info->n_ports; ++i) {
    if (vn_port_is_control_input(&info->ports[i])) {
      controls[i] = vn_port_start_value(&info->ports[i], rate_hz);
    }
  }
  if (rc == VN_EXIT_OK) {
    rc = vn_instance_open(&inst, w, info, controls, rate_hz, BLOCK_FRAMES, list,
                          NULL, 0);
  }
  if (rc == VN_EXIT_OK) {
    for (uint32_t i = 0; i < info->n_ports; ++i) {
      if (info->ports[i].type == VN_PORT_AUDIO) {
        vn_instance_connect(&inst, i, audio + (size_t)i * BLOCK_FRAMES);
      }
    }
    vn_instance_start(&inst);
    rc = vn_instance_latency(&inst, frames) ? VN_EXIT_OK : VN_EXIT_PLUGIN;
  }
  vn_instance_close(&inst);
  free(audio);
  free(controls);
  return rc;
}
