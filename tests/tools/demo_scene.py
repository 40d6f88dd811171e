# SPDX-License-Identifier: GPL-3.0-or-later
"""An invented two-path recording for the demo (run with /usr/bin/python3).

  demo_scene.py DIR    writes DIR/bass-di.wav and DIR/bass-amp.wav

A made-up bass line (E1 and A1 notes, 41.2 Hz and 55 Hz, with harmonics)
recorded twice: straight from the instrument (the DI) and through an
imaginary amp and microphone 47 cm from the speaker, whose cable has pins 2
and 3 swapped: the amp path arrives 1.37 ms late (65.76 samples, a fraction
included), inverted, a little duller and 2 dB lower. 48 kHz, float32, 4 s.
"""
import os
import sys

import numpy as np
from scipy.signal import butter, sosfilt

from wavtools import write

RATE = 48000


def bass_line(seconds=4.0):
    t = np.arange(int(seconds * RATE)) / RATE
    x = np.zeros_like(t)
    for start, f0 in [(0.0, 41.2), (1.0, 55.0), (2.0, 41.2), (3.0, 55.0)]:
        m = (t >= start) & (t < start + 1.0)
        tt = t[m] - start
        env = np.exp(-2.5 * tt) * np.minimum(1.0, tt / 0.004)
        note = sum(np.sin(2 * np.pi * f0 * k * tt) / k for k in range(1, 9))
        x[m] = 0.4 * env * note
    return x


LATE_MS = 1.37


def late(x, frames):
    # An exact band-limited delay by a fractional number of frames, done in
    # the frequency domain over a zero-padded block.
    n = 1 << int(np.ceil(np.log2(len(x) + 4 * frames + 1024)))
    spectrum = np.fft.rfft(x, n)
    spectrum *= np.exp(-2j * np.pi * np.fft.rfftfreq(n) * frames)
    return np.fft.irfft(spectrum, n)[: len(x)]


def main():
    out = sys.argv[1]
    os.makedirs(out, exist_ok=True)
    di = bass_line()
    amp = sosfilt(butter(2, 1800, fs=RATE, output="sos"), di)
    amp = -10 ** (-2 / 20) * late(amp, LATE_MS * 1e-3 * RATE)
    write(os.path.join(out, "bass-di.wav"), RATE, di)
    write(os.path.join(out, "bass-amp.wav"), RATE, amp)


if __name__ == "__main__":
    main()
