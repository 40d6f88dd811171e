// SPDX-License-Identifier: GPL-3.0-or-later
#include "chain.h"

#include <stdlib.h>
#include <string.h>

#include "vernier.h"

static float *buffer(const VnChain *c, size_t set, uint32_t channel) {
  return c->audio + (set * c->n_channels + channel) * (size_t)c->block_frames;
}

static const char *plural(uint32_t n, const char *one, const char *many) {
  return n == 1 ? one : many;
}

// A mono plugin runs once per channel; one with as many audio inputs and
// outputs as the file has channels runs once. Nothing else is guessed.
static int count_instances(const VnPluginInfo *info, uint32_t n_channels,
                           const char *input_label, size_t *n_instances) {
  if (info->n_audio_in == 1 && info->n_audio_out == 1) {
    *n_instances = n_channels;
  } else if (info->n_audio_in == n_channels &&
             info->n_audio_out == n_channels) {
    *n_instances = 1;
  } else {
    vn_error("%s has %u audio %s and %u %s but %s has %u %s; a plugin needs "
             "1 audio input and 1 output, or one of each per channel",
             info->uri, info->n_audio_in,
             plural(info->n_audio_in, "input", "inputs"), info->n_audio_out,
             plural(info->n_audio_out, "output", "outputs"), input_label,
             n_channels, plural(n_channels, "channel", "channels"));
    return VN_EXIT_USAGE;
  }
  return VN_EXIT_OK;
}

static void connect_audio(VnChain *c, size_t s, size_t k) {
  VnChainStep *cs = &c->steps[s];
  const VnPluginInfo *info = &cs->step->info;
  uint32_t n_in = 0, n_out = 0;
  for (uint32_t i = 0; i < info->n_ports; ++i) {
    const VnPortInfo *port = &info->ports[i];
    if (port->type != VN_PORT_AUDIO) {
      continue;
    }
    // Port order is channel order, as lv2:index gives it.
    uint32_t *count = port->is_input ? &n_in : &n_out;
    const uint32_t channel = cs->n_instances == 1 ? *count : (uint32_t)k;
    ++*count;
    vn_instance_connect(&cs->instances[k], i,
                        buffer(c, port->is_input ? s : s + 1, channel));
  }
}

static int start_step(VnChain *c, VnWorld *w, size_t s, double rate_hz) {
  VnChainStep *cs = &c->steps[s];
  VnStep *step = cs->step;
  cs->instances = calloc(cs->n_instances, sizeof *cs->instances);
  if (!cs->instances) {
    vn_error("out of memory");
    return VN_EXIT_PLUGIN;
  }
  for (size_t k = 0; k < cs->n_instances; ++k) {
    const int rc = vn_instance_open(
        &cs->instances[k], w, &step->info, step->controls, rate_hz,
        c->block_frames, cs->features, step->presets, step->n_presets);
    if (rc != VN_EXIT_OK) {
      return rc;
    }
    connect_audio(c, s, k);
  }
  for (size_t k = 0; k < cs->n_instances; ++k) {
    vn_instance_start(&cs->instances[k]);
    uint32_t frames = 0;
    if (!vn_instance_latency(&cs->instances[k], &frames)) {
      return VN_EXIT_PLUGIN;
    }
    // The same plugin with the same controls should report the same
    // latency on every channel; if not, the largest keeps none early.
    if (k > 0 && frames != cs->latency_frames) {
      vn_warn("%s: instances report different latencies (%u and %u "
              "frames); compensating %u",
              step->word, cs->latency_frames, frames,
              frames > cs->latency_frames ? frames : cs->latency_frames);
    }
    cs->latency_frames =
        frames > cs->latency_frames ? frames : cs->latency_frames;
  }
  c->latency_frames += cs->latency_frames;
  return VN_EXIT_OK;
}

int vn_chain_build(VnChain *c, VnWorld *w, VnSteps *steps, uint32_t n_channels,
                   double rate_hz, uint32_t block_frames, bool quiet,
                   const char *input_label) {
  memset(c, 0, sizeof *c);
  c->n_channels = n_channels;
  c->block_frames = block_frames;
  vn_features_init(&c->features, w, block_frames, rate_hz);
  c->steps = calloc(steps->n_steps, sizeof *c->steps);
  c->audio = calloc((steps->n_steps + 1) * (size_t)n_channels * block_frames,
                    sizeof(float));
  if (!c->steps || !c->audio) {
    vn_error("out of memory for %zu steps of %u channels at --block %u",
             steps->n_steps, n_channels, block_frames);
    return VN_EXIT_PROCESSING;
  }
  c->n_steps = steps->n_steps;
  // Usage errors (channels) for every step before any plugin is loaded.
  for (size_t s = 0; s < c->n_steps; ++s) {
    VnChainStep *cs = &c->steps[s];
    cs->step = &steps->steps[s];
    const int rc = count_instances(&cs->step->info, n_channels, input_label,
                                   &cs->n_instances);
    if (rc != VN_EXIT_OK) {
      return rc;
    }
  }
  for (size_t s = 0; s < c->n_steps; ++s) {
    const int rc = vn_features_check(w, c->steps[s].step->info.plugin);
    if (rc != VN_EXIT_OK) {
      return rc;
    }
  }
  for (size_t s = 0; s < c->n_steps; ++s) {
    VnChainStep *cs = &c->steps[s];
    vn_log_init(&cs->log, w, cs->step->word, quiet);
    vn_features_list(&c->features, &cs->log, cs->features);
    const int rc = start_step(c, w, s, rate_hz);
    if (rc != VN_EXIT_OK) {
      return rc;
    }
  }
  return VN_EXIT_OK;
}

float *vn_chain_input(VnChain *c, uint32_t channel) {
  return buffer(c, 0, channel);
}

const float *vn_chain_output(const VnChain *c, uint32_t channel) {
  return buffer(c, c->n_steps, channel);
}

void vn_chain_run(VnChain *c, uint32_t n_frames) {
  for (size_t s = 0; s < c->n_steps; ++s) {
    for (size_t k = 0; k < c->steps[s].n_instances; ++k) {
      vn_instance_run(&c->steps[s].instances[k], n_frames);
    }
  }
}

unsigned vn_chain_errors(const VnChain *c) {
  unsigned errors = 0;
  for (size_t s = 0; s < c->n_steps; ++s) {
    errors += c->steps[s].log.errors;
  }
  return errors;
}

void vn_chain_free(VnChain *c) {
  for (size_t s = 0; c->steps && s < c->n_steps; ++s) {
    VnChainStep *cs = &c->steps[s];
    for (size_t k = 0; cs->instances && k < cs->n_instances; ++k) {
      vn_instance_close(&cs->instances[k]);
    }
    free(cs->instances);
  }
  free(c->steps);
  free(c->audio);
  memset(c, 0, sizeof *c);
}
