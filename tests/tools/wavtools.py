# SPDX-License-Identifier: GPL-3.0-or-later
"""What the test scripts in tests/tools share: their command-line options,
float32 WAV in and out, and frequency bands (run with /usr/bin/python3)."""
import sys
import warnings

import numpy as np
from scipy.io import wavfile

# Hosts (libsndfile among them) add chunks such as PEAK, LIST and bext that
# wavfile reads past, with a warning each time.
warnings.simplefilter("ignore", wavfile.WavFileWarning)


def arg(name, default, cast=float):
    """The value after `name` on the command line, or default."""
    if name in sys.argv:
        return cast(sys.argv[sys.argv.index(name) + 1])
    return default


def read(path):
    """(rate, samples) with samples shaped frames x channels."""
    rate, data = wavfile.read(path)
    return rate, data.reshape(len(data), -1)


def write(path, rate, data):
    """float32 WAV; a one-column array becomes a mono file."""
    wavfile.write(path, rate, np.asarray(data).astype(np.float32).squeeze())


def band(freqs, lo, hi):
    """The bins of freqs from lo to hi, inclusive."""
    return (freqs >= lo) & (freqs <= hi)


def same_shifted(path_a, path_b, frames):
    """Exit 0 when B is A delayed by `frames`, bit for bit: A's frames
    `frames` onwards against B's first frames (lv2apply does not compensate
    latency, so its output is ours shifted by the plugin's latency)."""
    (_, a), (_, b) = read(path_a), read(path_b)
    a, b = a[frames:], b[:len(a) - frames]
    ok = a.dtype == b.dtype and a.shape == b.shape
    ok = ok and a.tobytes() == b.tobytes()
    if not ok and a.shape == b.shape:
        print("differ: at most %g" % np.max(np.abs(a - b)))
    sys.exit(0 if ok else 1)
