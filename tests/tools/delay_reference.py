# SPDX-License-Identifier: GPL-3.0-or-later
"""Reference computations for the Fine Delay (run with /usr/bin/python3).

The ideal delay by D samples (any real D) of a band-limited signal is the
frequency-domain shift X(f) e^{-j 2 pi f D / fs}: exact for a signal with
nothing outside its band, here a noise burst in silence, so that the
transform's circular wrap-around moves only silence.

  delay_reference.py burst OUT.wav [--rate HZ] [--seconds S] [--seed K]
                     [--channels N] [--lo HZ] [--hi HZ]
        float32: silence, a burst of noise with raised-cosine edges in the
        middle half, then the whole file brick-wall band-limited to
        lo..hi (default 20..20000 Hz) by FFT; peak at -6 dBFS
  delay_reference.py error IN.wav OUT.wav --delay D [--lo HZ] [--hi HZ]
                     [--below DB]
        energy of OUT - (IN shifted by D samples in the frequency domain) in
        lo..hi, relative to the shifted IN's, in dB (worst channel); exit 0
        when below DB (default -60)
  delay_reference.py same-shifted A.wav B.wav N
        exit 0 when A[t + N] == B[t] bit for bit for every t < len - N
  delay_reference.py speed T
        the speed of sound at T degrees C, m/s, and the ms per metre
"""
import sys

import numpy as np

from wavtools import arg, band, read, same_shifted, write








def burst(path):
    rate = arg("--rate", 48000, int)
    n = int(round(arg("--seconds", 2.0) * rate))
    ch = arg("--channels", 1, int)
    rng = np.random.default_rng(arg("--seed", 1, int))
    x = np.zeros((n, ch))
    start, length = n // 4, n // 2
    edge = length // 8
    w = np.ones(length)
    ramp = 0.5 - 0.5 * np.cos(np.pi * np.arange(edge) / edge)
    w[:edge], w[-edge:] = ramp, ramp[::-1]
    x[start:start + length] = rng.standard_normal((length, ch)) * w[:, None]
    keep = band(np.fft.rfftfreq(n, 1.0 / rate), arg("--lo", 20.0),
                arg("--hi", 20000.0))
    x = np.fft.irfft(np.fft.rfft(x, axis=0) * keep[:, None], n, axis=0)
    x *= 0.5 / np.max(np.abs(x))
    write(path, rate, x)


def shifted(x, rate, d):
    """x delayed by d samples (any real d), exactly, in the frequency
    domain. At Nyquist (even lengths) the shift of a real signal is taken as
    its real part; the burst has nothing there."""
    n = len(x)
    f = np.fft.rfftfreq(n, 1.0 / rate)
    phase = np.exp(-2j * np.pi * f * d / rate)
    return np.fft.irfft(np.fft.rfft(x, axis=0) * phase[:, None], n, axis=0)


def error_db(x, y, rate, d, lo, hi):
    ideal = shifted(x, rate, d)
    keep = band(np.fft.rfftfreq(len(x), 1.0 / rate), lo, hi)
    e = np.sum(np.abs(np.fft.rfft(y - ideal, axis=0)[keep]) ** 2, axis=0)
    r = np.sum(np.abs(np.fft.rfft(ideal, axis=0)[keep]) ** 2, axis=0)
    return float(np.max(10 * np.log10(np.maximum(e, 1e-300) / r)))


def main():
    cmd, rest = sys.argv[1], sys.argv[2:]
    if cmd == "burst":
        burst(rest[0])
    elif cmd == "error":
        (rate, x), (rate_y, y) = read(rest[0]), read(rest[1])
        if rate != rate_y or x.shape != y.shape:
            sys.exit("different rates, lengths or channel counts")
        x, y = x.astype(np.float64), y.astype(np.float64)
        db = error_db(x, y, rate, arg("--delay", 0.0), arg("--lo", 20.0),
                      arg("--hi", 20000.0))
        print("%.2f dB" % db)
        sys.exit(0 if db < arg("--below", -60.0) else 1)
    elif cmd == "same-shifted":
        same_shifted(rest[0], rest[1], int(rest[2]))
    elif cmd == "speed":
        # Common practice: dry air, c = 331.3 sqrt(1 + T / 273.15) m/s.
        c = 331.3 * np.sqrt(1.0 + float(rest[0]) / 273.15)
        print("%.4f %.6f" % (c, 1000.0 / c))
    else:
        sys.exit("unknown command " + cmd)


if __name__ == "__main__":
    main()
