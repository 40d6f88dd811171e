// SPDX-License-Identifier: GPL-3.0-or-later
// The measured files as mono streams, read where the segments are.
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "measure_internal.h"
#include "vernier.h"

// A sample this close to full scale counts as clipped: 24-bit full scale
// is 1 - 2^-23, and converters that clip stop a hair below.
#define CLIP_LEVEL 0.9999

int vn_mono_open(VnMonoReader *m, const char *path, int channel) {
  memset(m, 0, sizeof *m);
  m->channel = channel;
  const int rc = vn_input_open(&m->in, path, 4096);
  if (rc != VN_EXIT_OK) {
    return rc;
  }
  m->channels = m->in.info.channels;
  m->frames = (uint64_t)m->in.info.frames;
  // --channel picks among the channels of a multi-channel file; a mono
  // file has just the one.
  if (m->channels == 1) {
    m->channel = VN_MEASURE_CHANNEL_MIX;
  } else if (channel != VN_MEASURE_CHANNEL_MIX && channel >= m->channels) {
    vn_error("%s: --channel %d, but the file has %d channel%s", path,
             channel + 1, m->channels, m->channels == 1 ? "" : "s");
    return VN_EXIT_INPUT;
  }
  m->chunk = malloc(m->in.max_frames * (size_t)m->channels * sizeof(float));
  if (!m->chunk) {
    vn_error("%s: out of memory for %d channels", path, m->channels);
    return VN_EXIT_INPUT;
  }
  return VN_EXIT_OK;
}

// Clipping and the peak, over frames not counted before (segments overlap,
// and a frame read twice counts once).
static void count_levels(VnMonoReader *m, const float *src, size_t n) {
  const uint64_t first = m->pos;
  if (!m->count || first + n <= m->counted_to) {
    return;
  }
  const size_t skip =
      m->counted_to > first ? (size_t)(m->counted_to - first) : 0;
  const size_t channels = (size_t)m->channels;
  // On the bit patterns: for floats of one sign the order of the patterns
  // as integers is the order of the values, and integer loops vectorise
  // where a float max (with its NaN rules) does not. NaN counts as
  // infinity: clipped, and never silence.
  uint32_t clip_bits, peak_bits;
  const float clip = (float)CLIP_LEVEL, peak_now = (float)m->peak;
  memcpy(&clip_bits, &clip, sizeof clip_bits);
  memcpy(&peak_bits, &peak_now, sizeof peak_bits);
  uint32_t clipped = 0;
  for (size_t i = skip * channels; i < n * channels; ++i) {
    uint32_t b;
    memcpy(&b, &src[i], sizeof b);
    b &= 0x7fffffffu;
    b = b < 0x7f800000u ? b : 0x7f800000u;
    clipped += b >= clip_bits;
    peak_bits = b > peak_bits ? b : peak_bits;
  }
  float peak;
  memcpy(&peak, &peak_bits, sizeof peak);
  m->clipped += clipped;
  m->peak = peak;
  m->counted_to = first + n;
}

// NaN or infinity in a float file would poison every sum it reaches: it
// reads as 0. (v - v is 0 only for finite v; the test vectorises where
// isfinite() does not.)
static inline double finite_or_zero(double v) {
  return v - v == 0.0 ? v : 0.0;
}

static void to_mono(VnMonoReader *m, size_t n, double *restrict dst) {
  const size_t channels = (size_t)m->channels;
  const float *restrict src = m->chunk;
  if (channels == 1) {
    for (size_t i = 0; i < n; ++i) {
      dst[i] = finite_or_zero(src[i]);
    }
  } else if (m->channel != VN_MEASURE_CHANNEL_MIX) {
    const size_t ch = (size_t)m->channel;
    for (size_t i = 0; i < n; ++i) {
      dst[i] = finite_or_zero(src[i * channels + ch]);
    }
  } else {
    for (size_t i = 0; i < n; ++i) {
      double sum = 0;
      for (size_t ch = 0; ch < channels; ++ch) {
        sum += src[i * channels + ch];
      }
      dst[i] = finite_or_zero(sum / (double)channels);
    }
  }
}

// Up to want frames into m->chunk, counted, and m->pos moved past them;
// 0 at the end (a header may claim more frames than the file holds: the
// rest reads as silence), -1 on a read error. The segments go through
// vn_input_read(), the host's own scaling; the frames read for the counts
// alone through libsndfile's conversion, which is faster and gives the same
// values when reading (both scale by 2^(bits-1)).
static long read_chunk(VnMonoReader *m, size_t want, bool counts_only) {
  want = want < m->in.max_frames ? want : m->in.max_frames;
  const long got =
      counts_only ? (long)sf_readf_float(m->in.sf, m->chunk, (sf_count_t)want)
                  : vn_input_read(&m->in, m->chunk, want);
  if (got == 0) {
    m->frames = m->pos;
  } else if (got > 0) {
    count_levels(m, m->chunk, (size_t)got);
    m->pos += (uint64_t)got;
  }
  return got;
}

int vn_mono_read_at(VnMonoReader *m, uint64_t start, double *dst, size_t n) {
  if (start != m->pos) {
    if (start < m->frames &&
        sf_seek(m->in.sf, (sf_count_t)start, SEEK_SET) < 0) {
      vn_error("%s: cannot seek to frame %llu (%s)", m->in.path,
               (unsigned long long)start, sf_strerror(m->in.sf));
      return VN_EXIT_INPUT;
    }
    m->pos = start;
  }
  size_t done = 0;
  while (done < n && m->pos < m->frames) {
    const long got = read_chunk(m, n - done, false);
    if (got <= 0) {
      if (got < 0) {
        return VN_EXIT_INPUT;
      }
      break;
    }
    to_mono(m, (size_t)got, dst + done);
    done += (size_t)got;
  }
  memset(dst + done, 0, (n - done) * sizeof *dst);
  return VN_EXIT_OK;
}

int vn_mono_scan_to(VnMonoReader *m, uint64_t end) {
  end = end < m->frames ? end : m->frames;
  while (m->pos < end) {
    const uint64_t left = end - m->pos;
    const long got = read_chunk(
        m, left < m->in.max_frames ? (size_t)left : m->in.max_frames, true);
    if (got <= 0) {
      return got < 0 ? VN_EXIT_INPUT : VN_EXIT_OK;
    }
  }
  return VN_EXIT_OK;
}

void vn_mono_close(VnMonoReader *m) {
  vn_input_close(&m->in);
  free(m->chunk);
  m->chunk = NULL;
}
