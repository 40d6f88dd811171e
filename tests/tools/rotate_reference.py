# SPDX-License-Identifier: GPL-3.0-or-later
"""Reference computations for the Phase Rotator (run with /usr/bin/python3).

The ideal rotation by theta is y = Re{scipy.signal.hilbert(x) * e^{j theta}}
(SciPy reference: scipy.signal.hilbert returns the analytic signal
x + jH{x}, with H{cos} = sin; the sign convention is in ../shared/DESIGN.md
and plugins/dsp/rotator.h). hilbert() works on the whole file as one period,
so test signals are band-limited the same way (an FFT brick wall) and the
comparison leaves out the ends, where our causal FIR starts and stops.

  rotate_reference.py bandnoise OUT.wav [--rate HZ] [--seconds S] [--seed K]
                      [--channels N] [--lo HZ] [--hi HZ]
        float32 noise with nothing outside lo..hi (default 30..20000 Hz)
  rotate_reference.py error IN.wav OUT.wav --angle DEG [--shift N] [--lo HZ]
                      [--hi HZ] [--trim S] [--below DB]
        energy of OUT - ideal rotation of IN, in lo..hi, relative to the
        ideal's, in dB (worst channel); OUT[t + N] is compared with ideal[t].
        Exit 0 when below DB (default -60).
  rotate_reference.py level A.wav [--trim S]
        RMS level in dB re full scale, leaving out S seconds at each end
  rotate_reference.py pad IN.wav OUT.wav N
        IN and then N frames of silence
  rotate_reference.py shift IN.wav OUT.wav N
        OUT[t] = IN[t + N]: the first N frames dropped
  rotate_reference.py same-shifted A.wav B.wav N
        exit 0 when A[t + N] == B[t] bit for bit for every t < len - N
  rotate_reference.py impulse OUT.wav [--rate HZ] [--seconds S]
        a unit impulse at frame 0
  rotate_reference.py peak A.wav
        the frame of the largest magnitude (a pure delay's latency)
"""
import sys

import numpy as np
from scipy.signal import hilbert

from wavtools import arg, band, read, same_shifted, write










def bandnoise(path):
    rate = arg("--rate", 48000, int)
    n = int(round(arg("--seconds", 4.0) * rate))
    ch = arg("--channels", 1, int)
    rng = np.random.default_rng(arg("--seed", 1, int))
    spectrum = np.fft.rfft(rng.standard_normal((n, ch)), axis=0)
    keep = band(np.fft.rfftfreq(n, 1.0 / rate), arg("--lo", 30.0),
                arg("--hi", 20000.0))
    x = np.fft.irfft(spectrum * keep[:, None], n, axis=0)
    write(path, rate, x * (0.5 / np.max(np.abs(x))))  # peak at -6 dBFS


def error_db(x, y, rate, angle_deg, shift, lo, hi, trim_s):
    """Error energy of y against the ideal rotation of x, in lo..hi, dB."""
    ideal = np.real(hilbert(x, axis=0) * np.exp(1j * np.deg2rad(angle_deg)))
    y = y[shift:]
    trim = int(round(trim_s * rate))
    span = slice(trim, len(y) - trim)
    e, r = y[span] - ideal[span], ideal[span]
    # A Hann window keeps what leaks past the band edges of one segment small.
    w = np.hanning(len(r))[:, None]
    keep = band(np.fft.rfftfreq(len(r), 1.0 / rate), lo, hi)
    e_pow = np.sum(np.abs(np.fft.rfft(e * w, axis=0)[keep]) ** 2, axis=0)
    r_pow = np.sum(np.abs(np.fft.rfft(r * w, axis=0)[keep]) ** 2, axis=0)
    return float(np.max(10 * np.log10(np.maximum(e_pow, 1e-300) / r_pow)))


def main():
    cmd, rest = sys.argv[1], sys.argv[2:]
    if cmd == "bandnoise":
        bandnoise(rest[0])
    elif cmd == "error":
        (rate, x), (rate_y, y) = read(rest[0]), read(rest[1])
        if rate != rate_y or x.shape[1] != y.shape[1]:
            sys.exit("different rates or channel counts")
        db = error_db(x.astype(np.float64), y.astype(np.float64), rate,
                      arg("--angle", 0.0), arg("--shift", 0, int),
                      arg("--lo", 30.0), arg("--hi", 20000.0),
                      arg("--trim", 0.25))
        print("%.2f dB" % db)
        sys.exit(0 if db < arg("--below", -60.0) else 1)
    elif cmd == "level":
        rate, a = read(rest[0])
        trim = int(round(arg("--trim", 0.0) * rate))
        a = a[trim:len(a) - trim].astype(np.float64)
        rms = np.sqrt(np.mean(a ** 2))
        print("-inf" if rms == 0 else "%.4f" % (20 * np.log10(rms)))
    elif cmd == "pad":
        rate, a = read(rest[0])
        write(rest[1], rate, np.concatenate([a, np.zeros((int(rest[2]),
                                                           a.shape[1]))]))
    elif cmd == "shift":
        rate, a = read(rest[0])
        write(rest[1], rate, a[int(rest[2]):])
    elif cmd == "same-shifted":
        same_shifted(rest[0], rest[1], int(rest[2]))
    elif cmd == "impulse":
        rate = arg("--rate", 48000, int)
        x = np.zeros(int(round(arg("--seconds", 1.0) * rate)))
        x[0] = 1.0
        write(rest[0], rate, x)
    elif cmd == "peak":
        _, a = read(rest[0])
        print(int(np.argmax(np.max(np.abs(a), axis=1))))
    else:
        sys.exit("unknown command " + cmd)


if __name__ == "__main__":
    main()
