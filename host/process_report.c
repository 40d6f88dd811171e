// SPDX-License-Identifier: GPL-3.0-or-later
// What `vernier process` says when it has written OUT: warnings about
// clipping, one summary line on stderr, and the --json document on stdout.
#include <inttypes.h>
#include <stdio.h>
#include <stdlib.h>

#include "format.h"
#include "json.h"
#include "process.h"
#include "vernier.h"

static void write_json(const VnProcess *p, const char *format_name) {
  VnJson j;
  vn_json_init(&j, stdout);
  vn_json_begin_object(&j);
  vn_json_key(&j, "input");
  vn_json_string(&j, p->opt.in_path);
  vn_json_key(&j, "output");
  vn_json_string(&j, p->opt.out_path);
  vn_json_key(&j, "frames");
  vn_json_int(&j, (int64_t)p->frames_written);
  vn_json_key(&j, "channels");
  vn_json_int(&j, p->input.info.channels);
  vn_json_key(&j, "sample_rate");
  vn_json_int(&j, p->input.info.samplerate);
  vn_json_key(&j, "format");
  vn_json_string(&j, format_name);
  vn_json_key(&j, "latency_frames");
  vn_json_int(&j, (int64_t)p->chain.latency_frames);
  vn_json_key(&j, "tail_frames");
  vn_json_int(&j, (int64_t)p->tail_frames);
  vn_json_key(&j, "shift_frames");
  vn_json_int(&j, p->shift_frames);
  vn_json_key(&j, "steps");
  vn_json_begin_array(&j);
  for (size_t s = 0; s < p->chain.n_steps; ++s) {
    const VnChainStep *cs = &p->chain.steps[s];
    const VnPluginInfo *info = &cs->step->info;
    vn_json_begin_object(&j);
    vn_json_key(&j, "uri");
    vn_json_string(&j, info->uri);
    vn_json_key(&j, "instances");
    vn_json_int(&j, (int64_t)cs->n_instances);
    vn_json_key(&j, "latency_frames");
    vn_json_int(&j, cs->latency_frames);
    vn_json_key(&j, "host_shift_frames");
    vn_json_int(&j, cs->step->host_shift_frames);
    vn_json_key(&j, "controls");
    vn_json_begin_object(&j);
    for (uint32_t i = 0; i < info->n_ports; ++i) {
      if (vn_port_is_control_input(&info->ports[i])) {
        vn_json_key(&j, info->ports[i].symbol);
        vn_json_float(&j, cs->step->controls[i]);
      }
    }
    vn_json_end_object(&j);
    vn_json_end_object(&j);
  }
  vn_json_end_array(&j);
  vn_json_key(&j, "clipped_samples");
  vn_json_int(&j, (int64_t)p->output.clipped_samples);
  vn_json_end_object(&j);
  vn_json_finish(&j);
}

void vn_process_report(const VnProcess *p) {
  char format_name[64];
  vn_format_name(p->format, format_name, sizeof format_name);
  const char *out = p->opt.out_path;
  if (p->output.clipped_samples > 0) {
    vn_warn("%s: %" PRIu64 " %s clipped at full scale (%s holds nothing "
            "beyond it); lower the level, or write float with --format",
            out, p->output.clipped_samples,
            p->output.clipped_samples == 1 ? "sample" : "samples", format_name);
  }
  if (p->output.nonfinite_samples > 0) {
    vn_warn("%s: %" PRIu64 " samples were not numbers (NaN) and were written "
            "as 0",
            out, p->output.nonfinite_samples);
  }
  if (!p->opt.quiet) {
    const int channels = p->input.info.channels;
    char shift[96] = "";
    if (p->shift_frames != 0) {
      snprintf(shift, sizeof shift,
               ", shifted %" PRIu64 " frames %s by the host",
               (uint64_t)llabs(p->shift_frames),
               p->shift_frames < 0 ? "earlier" : "later");
    }
    fprintf(stderr,
            "vernier: wrote %s: %" PRIu64 " frames, %d %s, %d Hz, %s, "
            "latency %" PRIu64 " frames compensated%s, %" PRIu64 " clipped\n",
            out, p->frames_written, channels,
            channels == 1 ? "channel" : "channels", p->input.info.samplerate,
            format_name, p->chain.latency_frames, shift,
            p->output.clipped_samples);
  }
  if (p->opt.json) {
    write_json(p, format_name);
  }
}
