// SPDX-License-Identifier: GPL-3.0-or-later
// `vernier process IN OUT STEP...`: checks everything it can before it
// touches OUT, then streams IN through the chain into a temporary file.
#include <math.h>
#include <signal.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "format.h"
#include "interrupt.h"
#include "process.h"
#include "vernier.h"

static bool show_progress(const VnProcess *p) {
  return !p->opt.quiet && isatty(STDERR_FILENO);
}

static int interrupted(void) {
  const int sig = vn_interrupt_pending();
  return sig ? VN_EXIT_SIGNAL_BASE + sig : VN_EXIT_OK;
}

// Fills up to one chunk of p->samples: input while it lasts, then the
// zeros that push the last latency + tail frames out of the chain.
static long next_chunk(VnProcess *p, bool *input_done, uint64_t *zeros_left) {
  const uint32_t channels = (uint32_t)p->input.info.channels;
  const size_t block = p->input.max_frames;
  size_t n = 0;
  if (!*input_done) {
    const long got = vn_input_read(&p->input, p->samples, block);
    if (got < 0) {
      return -1;
    }
    *input_done = got == 0;
    n = (size_t)got;
  }
  const uint64_t zeros = *zeros_left;
  if (*input_done && n < block && zeros > 0) {
    const size_t pad = zeros < block - n ? (size_t)zeros : block - n;
    memset(p->samples + n * channels, 0, pad * channels * sizeof(float));
    *zeros_left -= pad;
    n += pad;
  }
  return (long)n;
}

// libsndfile gives interleaved frames, plugins take one buffer a channel.
// Mono and stereo, nearly every file, get loops the compiler can keep tight.
static void deinterleave(const float *restrict src, VnChain *c, uint32_t n) {
  const uint32_t channels = c->n_channels;
  if (channels == 1) {
    memcpy(vn_chain_input(c, 0), src, n * sizeof(float));
  } else if (channels == 2) {
    float *restrict l = vn_chain_input(c, 0), *restrict r =
                                                  vn_chain_input(c, 1);
    for (uint32_t i = 0; i < n; ++i) {
      l[i] = src[2 * i];
      r[i] = src[2 * i + 1];
    }
  } else {
    for (uint32_t ch = 0; ch < channels; ++ch) {
      float *restrict in = vn_chain_input(c, ch);
      for (uint32_t i = 0; i < n; ++i) {
        in[i] = src[(size_t)i * channels + ch];
      }
    }
  }
}

// Frames skip .. n of the chain's output, interleaved into dst.
static void interleave(const VnChain *c, uint32_t skip, uint32_t n,
                       float *restrict dst) {
  const uint32_t channels = c->n_channels;
  if (channels == 1) {
    memcpy(dst, vn_chain_output(c, 0) + skip, (n - skip) * sizeof(float));
  } else if (channels == 2) {
    const float *restrict l = vn_chain_output(c, 0) + skip;
    const float *restrict r = vn_chain_output(c, 1) + skip;
    for (uint32_t i = 0; i < n - skip; ++i) {
      dst[2 * i] = l[i];
      dst[2 * i + 1] = r[i];
    }
  } else {
    for (uint32_t ch = 0; ch < channels; ++ch) {
      const float *restrict out = vn_chain_output(c, ch);
      for (uint32_t i = skip; i < n; ++i) {
        dst[(size_t)(i - skip) * channels + ch] = out[i];
      }
    }
  }
}

// A host shift S > L (a delay beyond the Fine Delay's range, later than the
// chain's latency) starts OUT with S - L frames of silence; the input's
// length plus the tail is all that is written.
static int write_lead(VnProcess *p, uint64_t frames) {
  const uint32_t channels = (uint32_t)p->input.info.channels;
  memset(p->samples, 0, p->input.max_frames * channels * sizeof(float));
  while (frames > 0) {
    const size_t n =
        frames < p->input.max_frames ? (size_t)frames : p->input.max_frames;
    const int rc = vn_output_write(&p->output, p->samples, n);
    if (rc != VN_EXIT_OK) {
      return rc;
    }
    p->frames_written += n;
    frames -= n;
  }
  return VN_EXIT_OK;
}

static int stream(VnProcess *p) {
  VnChain *c = &p->chain;
  const unsigned errors_before = vn_chain_errors(c);
  // Contract: feed the input, then L + tail zeros; drop the first L frames.
  // A host shift S moves OUT by S more frames: drop L - S (reading ahead in
  // the file when S < 0), or write S - L frames of silence first.
  const int64_t advance = (int64_t)c->latency_frames - p->shift_frames;
  const int64_t zeros = advance + (int64_t)p->tail_frames;
  uint64_t zeros_left = zeros > 0 ? (uint64_t)zeros : 0;
  uint64_t drop_left = advance > 0 ? (uint64_t)advance : 0;
  const uint64_t lead = advance < 0 ? (uint64_t)-advance : 0;
  const uint64_t out_frames = (uint64_t)p->input.info.frames + p->tail_frames;
  uint64_t keep_left = lead > out_frames ? 0 : out_frames - lead;
  int rc = write_lead(p, lead < out_frames ? lead : out_frames);
  if (rc != VN_EXIT_OK) {
    return rc;
  }
  const uint64_t total = (uint64_t)p->input.info.frames + zeros_left;
  uint64_t fed = 0;
  int shown = -1;
  bool input_done = false;
  for (;;) {
    rc = interrupted();
    if (rc != VN_EXIT_OK) {
      return rc;
    }
    const long got = next_chunk(p, &input_done, &zeros_left);
    if (got < 0) {
      return VN_EXIT_PROCESSING;
    }
    if (got == 0) {
      break;
    }
    // Run the chunk block by block. The output goes back into the same
    // buffer: it is written at or before the frames already taken out.
    const uint32_t channels = c->n_channels;
    uint32_t kept = 0;
    for (uint32_t at = 0; at < (uint32_t)got; at += p->opt.block_frames) {
      const uint32_t left = (uint32_t)got - at;
      const uint32_t n =
          left < p->opt.block_frames ? left : p->opt.block_frames;
      deinterleave(p->samples + (size_t)at * channels, c, n);
      vn_chain_run(c, n);
      // The first error is enough: the output is not to be trusted, and a
      // plugin that fails once tends to say so on every block after.
      if (vn_chain_errors(c) > errors_before) {
        vn_error("a plugin reported an error while processing (see above); "
                 "%s not written",
                 p->opt.out_path);
        return VN_EXIT_PROCESSING;
      }
      const uint32_t skip = drop_left < n ? (uint32_t)drop_left : n;
      drop_left -= skip;
      interleave(c, skip, n, p->samples + (size_t)kept * channels);
      kept += n - skip;
    }
    if (lead > 0) { // only then can the chain give more than OUT holds
      kept = kept < keep_left ? kept : (uint32_t)keep_left;
      keep_left -= kept;
    }
    if (kept > 0) {
      rc = vn_output_write(&p->output, p->samples, kept);
      if (rc != VN_EXIT_OK) {
        return rc;
      }
      p->frames_written += kept;
    }
    fed += (uint64_t)got;
    const int percent = total ? (int)(fed * 100 / total) : 100;
    if (show_progress(p) && percent != shown) {
      vn_progress_show(percent);
      shown = percent;
    }
  }
  vn_progress_clear();
  return VN_EXIT_OK;
}

// The order decides which error a run with several problems reports:
// usage and input first, plugins next, the output file last.
static int run(VnProcess *p) {
  const VnProcessOptions *opt = &p->opt;
  int rc = vn_steps_parse(&p->steps, opt->step_words, opt->n_step_words);
  if (rc == VN_EXIT_OK) {
    rc = vn_input_open(&p->input, opt->in_path, opt->block_frames);
  }
  if (rc == VN_EXIT_OK) {
    rc = vn_output_check(opt->out_path, opt->in_path, opt->overwrite);
  }
  if (rc == VN_EXIT_OK) {
    rc = vn_format_choose(&p->input.info, opt->format, opt->out_path,
                          &p->format);
  }
  const double rate_hz = p->input.info.samplerate;
  const uint32_t channels = (uint32_t)p->input.info.channels;
  if (rc == VN_EXIT_OK && (rc = interrupted()) == VN_EXIT_OK) {
    rc = vn_world_open(&p->world);
  }
  if (rc == VN_EXIT_OK && (rc = interrupted()) == VN_EXIT_OK) {
    rc = vn_steps_resolve(&p->steps, &p->world, rate_hz, opt->air_temp_c);
  }
  for (size_t i = 0; rc == VN_EXIT_OK && i < p->steps.n_steps; ++i) {
    p->shift_frames += p->steps.steps[i].host_shift_frames;
  }
  if (rc == VN_EXIT_OK) {
    rc = vn_chain_build(&p->chain, &p->world, &p->steps, channels, rate_hz,
                        opt->block_frames, opt->quiet, opt->in_path);
  }
  if (rc == VN_EXIT_OK) {
    p->tail_frames = (uint64_t)llround(opt->tail_s * rate_hz);
    p->samples = malloc(p->input.max_frames * channels * sizeof(float));
    if (!p->samples) {
      vn_error("out of memory for --block %u at %u channels", opt->block_frames,
               channels);
      rc = VN_EXIT_PROCESSING;
    }
  }
  if (rc == VN_EXIT_OK && (rc = interrupted()) == VN_EXIT_OK) {
    rc = vn_output_open(&p->output, opt->out_path, &p->input, p->format,
                        p->input.max_frames, opt->overwrite);
  }
  if (rc == VN_EXIT_OK) {
    rc = stream(p);
  }
  if (rc == VN_EXIT_OK) {
    rc = vn_output_commit(&p->output, opt->overwrite);
  }
  if (rc == VN_EXIT_OK) {
    vn_process_report(p);
  }
  return rc;
}

// The one cleanup path: whatever run() got to, this frees it and removes a
// temporary file that was not put in place.
static void cleanup(VnProcess *p) {
  vn_progress_clear();
  vn_output_discard(&p->output);
  vn_chain_free(&p->chain);
  vn_steps_free(&p->steps);
  vn_world_close(&p->world);
  vn_input_close(&p->input);
  free(p->samples);
  vn_process_options_free(&p->opt);
}

int vn_process_main(int argc, char **argv) {
  vn_interrupt_install();
  VnProcess *p = calloc(1, sizeof *p);
  if (!p) {
    vn_error("out of memory");
    return VN_EXIT_PROCESSING;
  }
  int rc = vn_process_parse(&p->opt, argc, argv);
  if (rc == VN_EXIT_OK) {
    rc = run(p);
    if (rc > VN_EXIT_SIGNAL_BASE) {
      vn_error("interrupted by %s; %s not written",
               rc == VN_EXIT_SIGNAL_BASE + SIGINT ? "SIGINT" : "SIGTERM",
               p->opt.out_path);
    }
  } else if (rc < 0) {
    rc = VN_EXIT_OK; // --help or --version
  }
  cleanup(p);
  free(p);
  return rc;
}
