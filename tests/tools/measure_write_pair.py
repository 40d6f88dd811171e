# SPDX-License-Identifier: GPL-3.0-or-later
"""Two recordings of one source for tests/host/measure_write.sh (run with
/usr/bin/python3), and the checks on what `vernier measure --write` made.

  measure_write_pair.py pair REF TARGET [--delay D] [--invert 1] [--channels C]
                 [--allpass-hz F --allpass-q Q]
      A source: 3 s of noise at 48 kHz band-limited to 40 Hz .. 12 kHz, peak
      0.25 (float32 WAV). REF: the source, or with --allpass-hz the source
      through one second-order all-pass at F Hz, Q (RBJ Audio EQ Cookbook,
      scipy.signal.lfilter), which a correction of TARGET can then copy.
      TARGET: the source delayed by D frames (default 23.4; may be
      fractional or negative) by a phase shift of its DFT, i.e. circularly,
      and inverted unless --invert 0; C channels (default 1), channel k at
      gain 1 - 0.3 k.
  measure_write_pair.py sums REF CORRECTED [--frames N]
      exit 0 when CORRECTED (channel 1) sums with REF: away from both ends
      (N frames, default 2400, where the circular shift wraps and the
      correction cuts) the correlation is above 0.999 and the residual
      below -40 dB.
"""
import sys

import numpy as np
from scipy import signal

from wavtools import arg, read, write

RATE = 48000


def pair():
    ref_path, target_path = sys.argv[2], sys.argv[3]
    delay = arg("--delay", 23.4)
    invert = arg("--invert", 1, int)
    channels = arg("--channels", 1, int)
    n = 3 * RATE
    x = np.random.default_rng(5).standard_normal(n)
    f = np.fft.rfftfreq(n, 1 / RATE)
    spectrum = np.fft.rfft(x) * ((f >= 40) & (f <= 12000))
    ref = np.fft.irfft(spectrum, n)
    ref *= 0.25 / np.max(np.abs(ref))
    # A delay of D frames is the phase -2 pi f D / rate at every frequency.
    shifted = np.fft.irfft(np.fft.rfft(ref) * np.exp(-2j * np.pi * f * delay / RATE), n)
    target = -shifted if invert else shifted
    allpass_hz = arg("--allpass-hz", 0.0)
    if allpass_hz > 0:
        w0 = 2 * np.pi * allpass_hz / RATE
        alpha = np.sin(w0) / (2 * arg("--allpass-q", 0.707))
        b = [1 - alpha, -2 * np.cos(w0), 1 + alpha]
        ref = signal.lfilter(b, b[::-1], ref)
    write(ref_path, RATE, ref)
    write(target_path, RATE, np.stack([target * (1 - 0.3 * k) for k in range(channels)], 1))


def sums():
    (_, ref), (_, out) = read(sys.argv[2]), read(sys.argv[3])
    edge = arg("--frames", 2400, int)
    r, y = ref[edge:-edge, 0].astype(float), out[edge:-edge, 0].astype(float)
    corr = np.corrcoef(r, y)[0, 1]
    residual_db = 10 * np.log10(np.sum((y - r) ** 2) / np.sum(r ** 2))
    print("correlation %.6f, residual %.1f dB" % (corr, residual_db))
    sys.exit(0 if corr > 0.999 and residual_db < -40 else 1)


if __name__ == "__main__":
    {"pair": pair, "sums": sums}[sys.argv[1]]()
