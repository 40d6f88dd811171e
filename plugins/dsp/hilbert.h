// SPDX-License-Identifier: GPL-3.0-or-later
// Linear-phase FIR Hilbert transformer: the ideal response 2 / (pi n) at odd
// offsets n from the centre (0 at even ones), shaped by a Kaiser window.
//
// Sign: the filter turns cos into sin (H{cos} = sin, frequency response
// -j sgn(f)), the convention of scipy.signal.hilbert, which returns
// x + jH{x}. scipy.signal.remez(type='hilbert') has the opposite sign.
//
// Length rule. The taps are odd in n and vanish at even n, so the amplitude
// response A(f) (the response is -j A(f) e^{-j 2 pi f D / fs}) is symmetric
// about fs/4: A(f) = A(fs/2 - f). The window smears the step of A from -1 to
// +1 at DC over a transition band; the same band appears below Nyquist. So
// one number sets the whole band: A is within the design ripple from
// HILBERT_EDGE_HZ to fs/2 - HILBERT_EDGE_HZ at every sample rate (30 Hz to
// 20 kHz at 44.1 and 48 kHz, to 47.97 kHz at 96 kHz, to 11.0 kHz at
// 22.05 kHz). Kaiser's length formula (J. F. Kaiser, "Nonrecursive digital
// filter design using the I0-sinh window function", IEEE ISCAS 1974; the
// formulas of scipy.signal.kaiser_beta and kaiserord) with a transition width
// of 2 x HILBERT_EDGE_HZ gives the least length. It grows in proportion to
// the sample rate (about 2350 taps at 48 kHz, 18800 at 384 kHz), so the band
// edge and the latency in milliseconds stay put.
#ifndef VERNIER_DSP_HILBERT_H
#define VERNIER_DSP_HILBERT_H

#include <stdint.h>

// Lower edge of the accurate band, Hz. The bass of a DI and its amp mic is
// what must sum: 30 Hz reaches a five-string's low B (31 Hz).
#define HILBERT_EDGE_HZ 30.0
// Kaiser's attenuation parameter for the least length. The Hilbert
// transformer's amplitude steps by 2 (from -1 to +1), so its ripple is twice
// a low-pass's: 2 x 10^(-50/20) = 0.0063, that is 0.055 dB in magnitude and
// 0.18 degree in phase at worst, about half the +/-0.1 dB and +/-1 degree
// allowed.
#define HILBERT_ATTENUATION_DB 50.0

// The attenuation n_taps afford with a transition of 2 x HILBERT_EDGE_HZ
// (Kaiser's length formula solved for it): HILBERT_ATTENUATION_DB or more
// from hilbert_min_taps() up.
double hilbert_attenuation_db(uint32_t n_taps, double rate_hz);

// The least odd length meeting the accuracy goal at rate_hz, rounded up so
// that (length - 1) / 2 is odd (the outermost taps are then not zero).
uint32_t hilbert_min_taps(double rate_hz);

// Writes n_taps (odd) taps, centred on (n_taps - 1) / 2, with beta for the
// attenuation that length affords: taps beyond hilbert_min_taps() keep the
// band edge and lower the ripple (at 48 kHz, 2559 taps give 53.9 dB, a
// ripple of 0.035 dB).
void hilbert_design(float *taps, uint32_t n_taps, double rate_hz);

#endif
