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
  if (channel != VN_MEASURE_CHANNEL_MIX && channel >= m->channels) {
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

static void to_mono(VnMonoReader *m, size_t n, double *dst) {
  const int channels = m->channels;
  const float *src = m->chunk;
  for (size_t i = 0; i < n; ++i) {
    double v;
    if (channels == 1) {
      v = src[i];
    } else if (m->channel != VN_MEASURE_CHANNEL_MIX) {
      v = src[i * (size_t)channels + (size_t)m->channel];
    } else {
      double sum = 0;
      for (int ch = 0; ch < channels; ++ch) {
        sum += src[i * (size_t)channels + (size_t)ch];
      }
      v = sum / channels;
    }
    // NaN in a float file would poison every sum it reaches.
    dst[i] = isfinite(v) ? v : 0.0;
  }
  if (m->count) {
    for (size_t i = 0; i < n * (size_t)channels; ++i) {
      const double a = fabs((double)src[i]);
      if (a >= CLIP_LEVEL) {
        ++m->clipped;
      }
      if (a > m->peak && isfinite(a)) {
        m->peak = a;
      }
    }
  }
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
    const long got = vn_input_read(&m->in, m->chunk, n - done);
    if (got < 0) {
      return VN_EXIT_INPUT;
    }
    if (got == 0) {
      // Fewer frames than the header claims: the rest reads as silence.
      m->frames = m->pos;
      break;
    }
    to_mono(m, (size_t)got, dst + done);
    done += (size_t)got;
    m->pos += (uint64_t)got;
  }
  memset(dst + done, 0, (n - done) * sizeof *dst);
  return VN_EXIT_OK;
}

void vn_mono_close(VnMonoReader *m) {
  vn_input_close(&m->in);
  free(m->chunk);
  m->chunk = NULL;
}
