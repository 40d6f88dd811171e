# SPDX-License-Identifier: GPL-3.0-or-later
"""Test signals and comparisons for the shell suites (run with /usr/bin/python3).

  audio.py noise OUT.wav [--rate HZ] [--channels N] [--seconds S] [--seed K]
                         [--peak P]      float32 white noise
  audio.py sine OUT.wav --freq HZ [--rate HZ] [--seconds S] [--peak P]
  audio.py same A.wav B.wav              exit 0 when bit-identical
  audio.py scale A.wav B.wav K           exit 0 when B == K*A exactly
  audio.py sum A.wav B.wav OUT.wav       OUT = A + B (float32)
  audio.py level A.wav                   RMS level in dB re full scale
"""
import sys

import numpy as np

from wavtools import arg, read, write


def main():
    cmd, rest = sys.argv[1], sys.argv[2:]
    if cmd == "noise":
        rate = arg("--rate", 48000, int)
        ch = arg("--channels", 1, int)
        n = int(round(arg("--seconds", 1.0) * rate))
        rng = np.random.default_rng(arg("--seed", 1, int))
        x = rng.uniform(-1, 1, size=(n, ch)) * arg("--peak", 0.5)
        write(rest[0], rate, x)
    elif cmd == "sine":
        rate = arg("--rate", 48000, int)
        n = int(round(arg("--seconds", 1.0) * rate))
        t = np.arange(n) / rate
        x = arg("--peak", 0.5) * np.sin(2 * np.pi * arg("--freq", 100.0) * t)
        write(rest[0], rate, x)
    elif cmd == "same":
        (ra, a), (rb, b) = read(rest[0]), read(rest[1])
        ok = ra == rb and a.dtype == b.dtype and a.shape == b.shape
        ok = ok and a.tobytes() == b.tobytes()
        if not ok:
            diff = (np.max(np.abs(a.astype(float) - b.astype(float)))
                    if a.shape == b.shape else "shape %s vs %s" % (a.shape, b.shape))
            print("differ: %s" % diff)
        sys.exit(0 if ok else 1)
    elif cmd == "scale":
        (_, a), (_, b) = read(rest[0]), read(rest[1])
        k = np.float32(float(rest[2]))
        ok = a.shape == b.shape and (a * k).tobytes() == b.tobytes()
        sys.exit(0 if ok else 1)
    elif cmd == "sum":
        (ra, a), (_, b) = read(rest[0]), read(rest[1])
        write(rest[2], ra, a.astype(np.float32) + b.astype(np.float32))
    elif cmd == "level":
        _, a = read(rest[0])
        rms = np.sqrt(np.mean(a.astype(np.float64) ** 2))
        print("-inf" if rms == 0 else "%.4f" % (20 * np.log10(rms)))
    else:
        sys.exit("unknown command " + cmd)


if __name__ == "__main__":
    main()
