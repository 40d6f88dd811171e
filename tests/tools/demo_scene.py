# SPDX-License-Identifier: GPL-3.0-or-later
"""An invented two-path recording for the demo (run with /usr/bin/python3).

  demo_scene.py DIR    writes DIR/bass-di.wav and DIR/bass-amp.wav

A made-up bass line (E1 and A1 notes, 41.2 Hz and 55 Hz, with harmonics)
recorded twice: straight from the instrument (the DI) and through an
imaginary amp and microphone whose cable has pins 2 and 3 swapped, so the amp
path arrives inverted, a little duller and 2 dB lower. 48 kHz, float32, 4 s.
"""
import os
import sys

import numpy as np
from scipy.io import wavfile
from scipy.signal import butter, sosfilt

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


def main():
    out = sys.argv[1]
    os.makedirs(out, exist_ok=True)
    di = bass_line()
    amp = sosfilt(butter(2, 1800, fs=RATE, output="sos"), di)
    amp = -10 ** (-2 / 20) * amp
    wavfile.write(os.path.join(out, "bass-di.wav"), RATE, di.astype(np.float32))
    wavfile.write(os.path.join(out, "bass-amp.wav"), RATE, amp.astype(np.float32))


if __name__ == "__main__":
    main()
