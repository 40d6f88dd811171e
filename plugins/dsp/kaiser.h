// SPDX-License-Identifier: GPL-3.0-or-later
// The Kaiser window and Kaiser's design formulas, shared by the FIR designs
// (the Hilbert transformer, the fractional-delay table). Setup-time only.
#ifndef VERNIER_DSP_KAISER_H
#define VERNIER_DSP_KAISER_H

// Modified Bessel function of the first kind, order 0.
double kaiser_bessel_i0(double x);

// Kaiser's empirical beta for a stopband attenuation in dB.
double kaiser_beta(double attenuation_db);

// The window at r in [-1, 1] (0 is the centre): I0(beta sqrt(1 - r^2)) /
// I0(beta); 0 outside.
double kaiser_window(double r, double beta);

#endif
