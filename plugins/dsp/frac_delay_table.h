// SPDX-License-Identifier: GPL-3.0-or-later
// The polyphase table of the Fine Delay: Kaiser-windowed-sinc fractional-delay
// FIRs of FRAC_DELAY_TAPS taps for FRAC_DELAY_PHASES + 1 fractions
// mu = p / FRAC_DELAY_PHASES, p = 0 .. FRAC_DELAY_PHASES. Between two rows the
// taps are interpolated linearly (frac_delay.c does it on the two rows' dot
// products, which is the same sum).
//
// A row delays by its fraction around the FIR's centre: with H =
// FRAC_DELAY_TAPS / 2, window position m = 0 .. N - 1 holds the tap for
// offset j = H - m from the integer delay, h_j(mu) = w(j - mu) sinc(j - mu),
// w the Kaiser window over [-H, H]. Row 0 is a unit impulse at m = H and row
// FRAC_DELAY_PHASES one at m = H - 1 (the next whole sample), exactly, so a
// whole-sample delay can be a copy. Every row is scaled to a DC gain of 1: the
// low end, which is what two paths must sum, keeps its level at every
// fraction.
//
// The design is in normalised frequency, so it holds at every sample rate up
// to FRAC_DELAY_BAND_EDGE of Nyquist: 20 kHz at 44.1 kHz, 21.8 kHz at 48 kHz,
// 43.5 kHz at 96 kHz, 10 kHz at 22.05 kHz. Kaiser's formulas (J. F. Kaiser,
// "Nonrecursive digital filter design using the I0-sinh window function",
// IEEE ISCAS 1974) give beta from the attenuation this length affords over
// the transition from the band edge to its mirror image above Nyquist
// (2 (pi - w_edge) wide, since the sinc's cut-off is Nyquist itself): about
// 70.7 dB, beta = 6.83. Measured on the interpolated table against the ideal
// e^{-jwD} (tests/unit/test_delay.c), from 20 Hz to the band edge: within
// 0.004 dB and 0.0004 samples of phase delay, complex error below -66 dB,
// for every fraction.
#ifndef VERNIER_DSP_FRAC_DELAY_TABLE_H
#define VERNIER_DSP_FRAC_DELAY_TABLE_H

#include <stdint.h>

// N, even: the window is symmetric about mu = 0.5, the fraction that needs
// the most taps. 48 taps reach -66 dB at the 44.1 kHz band edge; 40 would
// give -56 dB, 64 cost a third more for -87 dB nobody hears above 20 kHz.
#define FRAC_DELAY_TAPS 48u
#define FRAC_DELAY_HALF_TAPS (FRAC_DELAY_TAPS / 2u)
// M, a power of two so that mu * M is exact. Linear interpolation between
// rows errs by h'' / (8 M^2) per tap (h'' of the sinc is at most pi^2 / 3):
// at 256 it costs 0.3 dB of the -67 dB the taps themselves reach, and the
// table is 257 x 48 floats (49 KiB), of which a glide touches two rows at a
// time.
#define FRAC_DELAY_PHASES 256u
// The top of the specified band as a fraction of Nyquist: 20 kHz at 44.1 kHz.
#define FRAC_DELAY_BAND_EDGE (20000.0 / 22050.0)

typedef struct {
  float *rows; // (FRAC_DELAY_PHASES + 1) x FRAC_DELAY_TAPS, row p for p / M
  double beta; // the Kaiser window's beta
} frac_delay_table_t;

// Kaiser's beta for the table (from the length and the band edge).
double frac_delay_table_beta(void);

// Instantiation thread. Allocates and designs the table. Returns 0, or -1
// (no memory) with nothing allocated.
int frac_delay_table_setup(frac_delay_table_t *t);

// Instantiation thread. Safe on a zeroed or failed table, and twice.
void frac_delay_table_free(frac_delay_table_t *t);

static inline const float *frac_delay_table_row(const frac_delay_table_t *t,
                                                uint32_t p) {
  return t->rows + (uint64_t)p * FRAC_DELAY_TAPS;
}

// The taps for fraction mu in [0, 1), interpolated between the two nearest
// rows: what the module uses once a delay has settled.
void frac_delay_table_taps(const frac_delay_table_t *t, double mu,
                           float taps[FRAC_DELAY_TAPS]);

#endif
