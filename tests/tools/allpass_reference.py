# SPDX-License-Identifier: GPL-3.0-or-later
"""Reference checks of the Vernier All-pass (run with /usr/bin/python3: scipy).

  allpass_reference.py impulse OUT.wav --rate HZ --f0 HZ [--q Q]
                       [--stages N] [--order 1|2]
      a float32 unit impulse, long enough for that filter to decay to 1e-12
  allpass_reference.py check IR.wav --f0 HZ [--q Q] [--stages N] [--order 1|2]
      compare the impulse response the plugin made of it with the references
      below; one line per check, exit status 1 if any fails

The response is measured by a DFT of the impulse response, H(w) = sum h[n]
e^(-jwn), and its group delay exactly as Re{sum n h[n] e^(-jwn) / H(w)}.
"""
import sys

import numpy as np
from scipy import signal

from wavtools import arg, read, write


def rbj_allpass(f0, q, rate):
    """Robert Bristow-Johnson, "Audio EQ Cookbook" (W3C Working Group Note),
    APF: H(s) = (s^2 - s/Q + 1) / (s^2 + s/Q + 1), w0 = 2 pi f0 / Fs,
    alpha = sin(w0) / (2 Q); b = [1 - alpha, -2 cos w0, 1 + alpha],
    a = [1 + alpha, -2 cos w0, 1 - alpha]."""
    w0 = 2 * np.pi * f0 / rate
    alpha = np.sin(w0) / (2 * q)
    b = np.array([1 - alpha, -2 * np.cos(w0), 1 + alpha])
    a = np.array([1 + alpha, -2 * np.cos(w0), 1 - alpha])
    return b, a, alpha


def first_order_allpass(f0, rate):
    """The analog first-order all-pass (w0 - s) / (w0 + s), -90 degrees at
    s = j w0 (common practice), through the bilinear transform prewarped so
    that w0 maps to f0: scipy.signal.bilinear with fs' = pi f0 / tan(pi f0 /
    Fs) in place of Fs (the standard prewarping substitution)."""
    w0 = 2 * np.pi * f0
    fs_warped = np.pi * f0 / np.tan(np.pi * f0 / rate)
    return signal.bilinear([-1.0, w0], [1.0, w0], fs=fs_warped)


def pole_radius(f0, q, rate, order):
    if order == 2:
        _, a, _ = rbj_allpass(f0, q, rate)
        return np.sqrt(a[2] / a[0])
    b, a = first_order_allpass(f0, rate)
    return abs(a[1] / a[0])


def frames_needed(f0, q, rate, stages, order):
    r = pole_radius(f0, q, rate, order)
    return int(-28.0 * stages / np.log(r)) + 8192


def dft(h, f, rate):
    n = np.arange(len(h))
    e = np.exp(-2j * np.pi * f / rate * n)
    return np.sum(h * e), np.sum(n * h * e)


def wrapped(deg):
    return (deg + 180.0) % 360.0 - 180.0


def unwrapped_phase_deg(b, a, f, rate, stages):
    """Phase of (b/a)^stages at f, continued from 0 at DC over a fine grid."""
    _, h = signal.freqz(b, a, worN=np.linspace(0.0, f, 20001), fs=rate)
    return np.degrees(np.unwrap(np.angle(h))[-1]) * stages


class Checks:
    def __init__(self):
        self.failed = 0

    def close(self, what, got, want, tol, source):
        ok = abs(got - want) <= tol
        self.failed += not ok
        print("%s %s: %.6f, want %.6f +- %g (%s)"
              % ("ok  " if ok else "FAIL", what, got, want, tol, source))


def check(path, f0, q, stages, order):
    rate, h = read(path)
    h = h[:, 0].astype(np.float64)
    c = Checks()
    label = "f0 %g Hz q %g x%d order %d at %d Hz" % (f0, q, stages, order, rate)
    for ratio in (0.5, 1.0, 2.0):
        f = f0 * ratio
        if f >= 0.49 * rate:
            continue
        ours, _ = dft(h, f, rate)
        if order == 2:
            b, a, _ = rbj_allpass(f0, q, rate)
            src = "RBJ Audio EQ Cookbook APF, scipy.signal.freqz"
        else:
            b, a = first_order_allpass(f0, rate)
            src = "prewarped bilinear (w0 - s)/(w0 + s), scipy.signal.freqz"
        want = unwrapped_phase_deg(b, a, f, rate, stages)
        got = want + wrapped(np.degrees(np.angle(ours)) - want)
        c.close("%s: phase at %g Hz, deg" % (label, f), got, want, 0.01, src)
    ours, _ = dft(h, f0, rate)
    per_stage = -180.0 if order == 2 else -90.0
    want = per_stage * stages
    got = want + wrapped(np.degrees(np.angle(ours)) - want)
    c.close("%s: phase at f0, deg" % label, got, want, 0.01,
            "RBJ cookbook APF at w0" if order == 2 else
            "(1 - j)/(1 + j) = -j, common practice")
    if order == 2 and stages == 1:
        h_f0, nh_f0 = dft(h, f0, rate)
        tau = np.real(nh_f0 / h_f0)
        _, _, alpha = rbj_allpass(f0, q, rate)
        # 2/alpha samples, derived (no published source): the prototype's
        # phase -2 atan(W / (Q (1 - W^2))) falls with slope 4Q at W = 1, and
        # the prewarped bilinear map W = tan(w/2) / tan(w0/2) has slope
        # 1/sin(w0) at w0, so -dphase/dw = 4Q / sin(w0) = 2/alpha
        c.close("%s: group delay at f0, samples" % label, tau, 2.0 / alpha,
                2e-3 / alpha, "closed form 2/alpha from the RBJ cookbook APF")
        # and -d(phase)/dw of freqz by central difference (not
        # scipy.signal.group_delay, whose polynomial formula loses ~0.1 %
        # when the poles sit near z = 1: low f0 at high rates)
        b, a, _ = rbj_allpass(f0, q, rate)
        dw = 1e-4 * 2 * np.pi * f0 / rate
        w = 2 * np.pi * f0 / rate + np.array([-dw, dw])
        _, hw = signal.freqz(b, a, worN=w)
        gd = -np.diff(np.unwrap(np.angle(hw)))[0] / (2 * dw)
        c.close("%s: group delay at f0, samples" % label, tau, gd,
                1e-3 * gd, "RBJ APF, scipy.signal.freqz phase slope")
    mags = [abs(dft(h, f0 * r, rate)[0]) for r in (0.1, 0.5, 1, 2, 4)
            if f0 * r < 0.49 * rate]
    worst_db = max(abs(20 * np.log10(m)) for m in mags)
    # from a float32 impulse response: rounding alone is ~3e-7 dB
    c.close("%s: |H| in dB, worst of 5" % label, worst_db, 0.0, 1e-5,
            "all-pass: |H| = 1")
    return c.failed


def main():
    cmd, path = sys.argv[1], sys.argv[2]
    f0 = arg("--f0", 1000.0)
    q = arg("--q", 0.707)
    stages = arg("--stages", 1, int)
    order = arg("--order", 2, int)
    if cmd == "impulse":
        rate = arg("--rate", 48000, int)
        x = np.zeros(frames_needed(f0, q, rate, stages, order), np.float32)
        x[0] = 1.0
        write(path, rate, x)
    elif cmd == "check":
        sys.exit(1 if check(path, f0, q, stages, order) else 0)
    else:
        sys.exit("unknown command " + cmd)


if __name__ == "__main__":
    main()
