// SPDX-License-Identifier: GPL-3.0-or-later
// Uniformly partitioned overlap-save FFT convolution of one channel with a
// fixed FIR, in blocks of block_frames (B) samples.
//
// The taps are cut into P partitions of B taps; each is zero-padded to 2B and
// transformed once at setup. Every B input samples, the last 2B inputs are
// transformed, their spectrum enters a ring of the P newest spectra (the
// frequency-domain delay line), partition p's spectrum multiplies the spectrum
// from p blocks ago, the products are summed and transformed back, and the
// second half of the result is the next B output samples (overlap-save: the
// first half wraps around and is discarded). Cost per sample: two real FFTs of
// 2B over B samples plus P complex multiply-adds, instead of P * B taps.
//
// The output lags the input by exactly B samples (the block must be complete
// before it can be transformed) whatever the caller's span lengths, so
// out[t] = sum_k taps[k] * in[t - B - k] and the result does not depend on
// how the stream is sliced.
//
// FFTW (single precision) plans are made at setup with FFTW_ESTIMATE, which
// plans without timing anything, so the same build on the same machine gives
// the same samples every time (the multiply-add's AVX2 variant, chosen at
// load time, may make two machines differ in the last bits). FFTW's planner
// is not thread-safe: setup and free take a lock shared by every convolver
// in the process; process() only calls fftwf_execute(), which is.
#ifndef VERNIER_DSP_FFT_CONVOLVER_H
#define VERNIER_DSP_FFT_CONVOLVER_H

#include <stdint.h>

#include <fftw3.h>

// Spectra are kept in groups of FFT_CONVOLVER_GROUP_BINS bins, the real
// parts then the imaginary parts (64 bytes, one cache line), and for each
// group of bins the P partitions' groups follow one another: the
// multiply-add reads both banks straight through, with no shuffles.
#define FFT_CONVOLVER_GROUP_BINS 8u
#define FFT_CONVOLVER_GROUP_FLOATS (2u * FFT_CONVOLVER_GROUP_BINS)

typedef struct {
  uint32_t block_frames;   // B: partition length, hop and latency
  uint32_t n_partitions;   // P
  uint32_t n_bins;         // B + 1 bins of a real 2B-point transform
  uint32_t n_groups;       // bins / FFT_CONVOLVER_GROUP_BINS, rounded up
  uint32_t fill;           // samples of the current block collected so far
  uint32_t newest;         // ring slot of the newest input spectrum
  float *time;             // 2B inputs: the previous block, then this one
  float *result;           // 2B: inverse transform; its second half is output
  fftwf_complex *spectrum; // B + 1: forward output, inverse input
  float *filter; // groups x P x group: partition spectra, times 1 / (2B)
  float *ring;   // groups x P x group: the P newest input spectra
  fftwf_plan forward, inverse;
} fft_convolver_t;

// Instantiation thread. Allocates everything and plans both transforms;
// block_frames should be a power of two. Returns 0, or -1 with nothing left
// allocated (then fft_convolver_free() is still safe to call).
int fft_convolver_setup(fft_convolver_t *c, const float *taps, uint32_t n_taps,
                        uint32_t block_frames);

// Instantiation thread. Safe on a zeroed or failed convolver, and twice.
void fft_convolver_free(fft_convolver_t *c);

// Forget the input history: the output is then as if the input had been
// silent forever.
void fft_convolver_reset(fft_convolver_t *c);

static inline uint32_t fft_convolver_latency(const fft_convolver_t *c) {
  return c->block_frames;
}

// Audio thread. n_frames of any size; in may equal out. No allocation. A block
// whose result is not finite (input so large that the transform overflows)
// comes out as silence and clears the history, so it cannot linger.
void fft_convolver_process(fft_convolver_t *c, const float *in, float *out,
                           uint32_t n_frames);

#endif
