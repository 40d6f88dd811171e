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
