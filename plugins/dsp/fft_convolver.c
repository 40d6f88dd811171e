// SPDX-License-Identifier: GPL-3.0-or-later
#include "fft_convolver.h"

#include <float.h>
#include <math.h>
#include <pthread.h>
#include <string.h>

// FFTW's planner keeps global state (wisdom, trigonometric tables), and only
// fftwf_execute() may be called from several threads at once (FFTW manual,
// "Thread safety"). Hosts may instantiate plugins from several threads, so
// every other FFTW call here, allocation included, holds this lock. It
// serialises the convolvers of this library only; any other user of
// libfftw3f in the process would need fftwf_make_planner_thread_safe().
static pthread_mutex_t fftw_lock = PTHREAD_MUTEX_INITIALIZER;

#define GROUP_BINS FFT_CONVOLVER_GROUP_BINS
#define GROUP_FLOATS FFT_CONVOLVER_GROUP_FLOATS

static float *alloc_floats(size_t n) {
  float *p = fftwf_malloc(n * sizeof(float));
  if (p) {
    memset(p, 0, n * sizeof(float));
  }
  return p;
}

static size_t bank_floats(const fft_convolver_t *c) {
  return (size_t)c->n_groups * c->n_partitions * GROUP_FLOATS;
}

// Where bin k of partition (or ring slot) p lives in a bank: real part at
// the index, imaginary part GROUP_BINS further.
static size_t bank_index(const fft_convolver_t *c, uint32_t p, uint32_t k) {
  const size_t group = k / GROUP_BINS;
  return (group * c->n_partitions + p) * GROUP_FLOATS + k % GROUP_BINS;
}

static void free_locked(fft_convolver_t *c) {
  if (c->forward) {
    fftwf_destroy_plan(c->forward);
  }
  if (c->inverse) {
    fftwf_destroy_plan(c->inverse);
  }
  fftwf_free(c->time);
  fftwf_free(c->result);
  fftwf_free(c->spectrum);
  fftwf_free(c->filter);
  fftwf_free(c->ring);
  memset(c, 0, sizeof *c);
}

void fft_convolver_free(fft_convolver_t *c) {
  pthread_mutex_lock(&fftw_lock);
  free_locked(c);
  pthread_mutex_unlock(&fftw_lock);
}

static int setup_locked(fft_convolver_t *c, const float *taps, uint32_t n_taps,
                        uint32_t b) {
  c->block_frames = b;
  c->n_partitions = (n_taps + b - 1) / b;
  c->n_bins = b + 1;
  c->n_groups = (c->n_bins + GROUP_BINS - 1) / GROUP_BINS;
  c->time = alloc_floats(2u * (size_t)b);
  c->result = alloc_floats(2u * (size_t)b);
  c->spectrum = fftwf_malloc(c->n_bins * sizeof(fftwf_complex));
  c->filter = alloc_floats(bank_floats(c)); // zero padding bins included
  c->ring = alloc_floats(bank_floats(c));
  if (!c->time || !c->result || !c->spectrum || !c->filter || !c->ring) {
    return -1;
  }
  // The forward transform must leave its input alone: the second half of
  // `time` becomes the first half of the next block's input.
  c->forward = fftwf_plan_dft_r2c_1d((int)(2u * b), c->time, c->spectrum,
                                     FFTW_ESTIMATE | FFTW_PRESERVE_INPUT);
  c->inverse = fftwf_plan_dft_c2r_1d((int)(2u * b), c->spectrum, c->result,
                                     FFTW_ESTIMATE | FFTW_DESTROY_INPUT);
  if (!c->forward || !c->inverse) {
    return -1;
  }
  // Partition spectra, with the 1 / (2B) that FFTW's unnormalised inverse
  // leaves out folded in.
  const float scale = 1.0f / (float)(2u * b);
  for (uint32_t p = 0; p < c->n_partitions; ++p) {
    memset(c->time, 0, 2u * b * sizeof(float));
    const uint32_t first = p * b;
    const uint32_t n = n_taps - first < b ? n_taps - first : b;
    memcpy(c->time, taps + first, n * sizeof(float));
    fftwf_execute(c->forward);
    for (uint32_t k = 0; k < c->n_bins; ++k) {
      const size_t i = bank_index(c, p, k);
      c->filter[i] = c->spectrum[k][0] * scale;
      c->filter[i + GROUP_BINS] = c->spectrum[k][1] * scale;
    }
  }
  return 0;
}

int fft_convolver_setup(fft_convolver_t *c, const float *taps, uint32_t n_taps,
                        uint32_t block_frames) {
  memset(c, 0, sizeof *c);
  if (block_frames == 0 || n_taps == 0 || block_frames > (1u << 24)) {
    return -1;
  }
  pthread_mutex_lock(&fftw_lock);
  const int failed = setup_locked(c, taps, n_taps, block_frames);
  if (failed) {
    free_locked(c);
  }
  pthread_mutex_unlock(&fftw_lock);
  if (failed) {
    return -1;
  }
  fft_convolver_reset(c);
  return 0;
}

void fft_convolver_reset(fft_convolver_t *c) {
  memset(c->time, 0, 2u * c->block_frames * sizeof(float));
  memset(c->result, 0, 2u * c->block_frames * sizeof(float));
  memset(c->ring, 0, bank_floats(c) * sizeof(float));
  c->fill = 0;
  c->newest = 0;
}

// spectrum = sum over p of filter[p] * (the input spectrum of p blocks ago).
// Two groups of bins at a time, with the four products of each complex
// multiply summed apart: eight independent sums in registers, enough to hide
// the adder's latency. GCC and Clang vector types (SSE on x86-64, NEON on
// AArch64, plain code elsewhere); on x86-64 a second copy for AVX2 with FMA
// is chosen at load time where the processor has them.
typedef float v8sf __attribute__((vector_size(32), aligned(16)));

#if defined(__x86_64__) && defined(__GNUC__) && !defined(__clang__)
#define MAC_CLONES __attribute__((target_clones("arch=x86-64-v3", "default")))
#else
#define MAC_CLONES
#endif

// Bins of group g from split sums to FFTW's interleaved layout. By pointer:
// a vector argument's ABI would differ between the two clones.
static void store_group(fft_convolver_t *c, uint32_t g, const v8sf *re,
                        const v8sf *im) {
  const uint32_t k0 = g * GROUP_BINS;
  const uint32_t n = c->n_bins - k0 < GROUP_BINS ? c->n_bins - k0 : GROUP_BINS;
  for (uint32_t k = 0; k < n; ++k) {
    c->spectrum[k0 + k][0] = (*re)[k];
    c->spectrum[k0 + k][1] = (*im)[k];
  }
}

MAC_CLONES static void multiply_add(fft_convolver_t *c) {
  const uint32_t parts = c->n_partitions;
  const size_t group = (size_t)parts * 2u;      // v8sf per group of bins
  const v8sf *filter = (const v8sf *)c->filter; // fftwf_malloc: aligned
  const v8sf *ring = (const v8sf *)c->ring;
  for (uint32_t g = 0; g < c->n_groups; g += 2) {
    // A lone last group pairs with itself; its second result is dropped.
    const size_t g2 = g + 1 < c->n_groups ? g + 1u : g;
    const v8sf *h = filter + g * group, *h2 = filter + g2 * group;
    const v8sf *x = ring + g * group, *x2 = ring + g2 * group;
    v8sf rr = {0}, ii = {0}, ri = {0}, ir = {0};
    v8sf rr2 = {0}, ii2 = {0}, ri2 = {0}, ir2 = {0};
    // Slot newest + p holds the spectrum of p blocks ago.
    uint32_t slot = c->newest;
    for (uint32_t p = 0; p < parts; ++p) {
      const size_t hp = 2u * p, xs = 2u * slot;
      rr += h[hp] * x[xs];
      ii += h[hp + 1] * x[xs + 1];
      ri += h[hp] * x[xs + 1];
      ir += h[hp + 1] * x[xs];
      rr2 += h2[hp] * x2[xs];
      ii2 += h2[hp + 1] * x2[xs + 1];
      ri2 += h2[hp] * x2[xs + 1];
      ir2 += h2[hp + 1] * x2[xs];
      slot = slot + 1 == parts ? 0 : slot + 1;
    }
    const v8sf re = rr - ii, im = ri + ir, re2 = rr2 - ii2, im2 = ri2 + ir2;
    store_group(c, g, &re, &im);
    if (g2 != g) {
      store_group(c, (uint32_t)g2, &re2, &im2);
    }
  }
}

// One block is complete in time[B..2B): produce the next B outputs.
static void process_block(fft_convolver_t *c) {
  const uint32_t b = c->block_frames;
  fftwf_execute(c->forward);
  // The ring runs backwards, so slot newest + p holds the spectrum of p
  // blocks ago.
  c->newest = c->newest == 0 ? c->n_partitions - 1 : c->newest - 1;
  // Into the ring's layout, a group at a time (the padding stays zero).
  const size_t group_stride = (size_t)c->n_partitions * GROUP_FLOATS;
  float *dst = c->ring + (size_t)c->newest * GROUP_FLOATS;
  for (uint32_t k0 = 0; k0 < c->n_bins; k0 += GROUP_BINS, dst += group_stride) {
    const uint32_t n =
        c->n_bins - k0 < GROUP_BINS ? c->n_bins - k0 : GROUP_BINS;
    const fftwf_complex *src = c->spectrum + k0;
    for (uint32_t j = 0; j < n; ++j) {
      dst[j] = src[j][0];
      dst[GROUP_BINS + j] = src[j][1];
    }
  }
  multiply_add(c);
  fftwf_execute(c->inverse);
  memcpy(c->time, c->time + b, b * sizeof(float));
  // Finite input can still overflow the transform (|x| near FLT_MAX). Such a
  // spectrum would stay in the ring for P blocks: drop it now instead.
  const float *y = c->result + b;
  int finite = 1;
  for (uint32_t i = 0; i < b; ++i) {
    finite &= fabsf(y[i]) <= FLT_MAX; // false for infinities and NaN
  }
  if (!finite) {
    fft_convolver_reset(c);
  }
}

void fft_convolver_process(fft_convolver_t *c, const float *in, float *out,
                           uint32_t n_frames) {
  const uint32_t b = c->block_frames;
  while (n_frames > 0) {
    uint32_t n = b - c->fill;
    n = n < n_frames ? n : n_frames;
    // Input first, then output: in may be out.
    memcpy(c->time + b + c->fill, in, n * sizeof(float));
    memcpy(out, c->result + b + c->fill, n * sizeof(float));
    c->fill += n;
    if (c->fill == b) {
      process_block(c);
      c->fill = 0;
    }
    in += n;
    out += n;
    n_frames -= n;
  }
}
