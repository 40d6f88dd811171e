# SPDX-License-Identifier: GPL-3.0-or-later
"""Test pairs for `vernier measure`, made exactly (run with /usr/bin/python3).

The signal is one period of a band-limited periodic signal, longer than the
file by a margin P at each end. TARGET is REF rotated by theta,
Re{scipy.signal.hilbert(x) e^{j theta}} (the Phase Rotator's convention:
a positive angle advances; ../shared/DESIGN.md), then delayed by D samples
(any real D) by the linear phase X(f) e^{-j 2 pi f D / fs}. Both are exact
for a band-limited periodic signal; the files are the middle of the period,
so the circular wrap-around of the shift lies outside them. Independent
white noise is added to each file at the SNR: the signal's power over the
noise's power in 20 Hz .. 10 kHz, the band `vernier measure` fits on by
default (per file; the noise runs on to the Nyquist frequency, as a
recording's noise floor does).

  measure_scene.py pair REF.wav TARGET.wav [--kind noise|bass] [--offset D]
        [--theta DEG] [--snr DB] [--rate HZ] [--seconds S | --frames N] [--seed K]
        [--gain-db G] [--encoding float|pcm24] [--stereo-target]
        [--peak P] [--clip-ref N] [--clip-target N]
      noise: Gaussian, flat from 30 Hz to 12 kHz; bass: a synthetic bass
      line (plucked notes E1..A2 with harmonics, 30 Hz to 5 kHz). TARGET
      is G dB relative to REF. --stereo-target: TARGET's channel 1 is the
      delayed copy, channel 2 unrelated noise of the same level. Peak of the
      louder file at P (default 0.5). --clip-*: exactly N samples of that
      file set to full scale (+-1.0, or the PCM extreme codes).
  measure_scene.py noise OUT.wav [--rate HZ] [--seconds S] [--seed K]
        [--peak P] [--channels N]    band-limited noise on its own
  measure_scene.py trials DIR N [--seed K] [--seconds S]
      N independent pairs DIR/tNN-ref.wav, DIR/tNN-tgt.wav with offsets
      uniform in -2000..2000 samples, angles uniform in -180..180 degrees,
      SNR uniform in 10..40 dB, noise and bass alternating; DIR/truth.txt
      holds "tNN kind offset theta snr" a line.
  measure_scene.py long REF.wav TARGET.wav --seconds S [--offset N]
      24-bit PCM mono noise pair for the bench, TARGET = REF delayed by N
      whole frames plus independent noise at 20 dB, written in slices
"""
import os
import struct
import sys

import numpy as np
from scipy.fft import next_fast_len
from scipy.signal import hilbert

from wavtools import arg, band, write

BANDS_HZ = {"noise": (30.0, 12000.0), "bass": (30.0, 5000.0)}
FIT_BAND_HZ = (20.0, 10000.0)  # what `vernier measure` fits on by default


def bass_line(n, rate, rng):
    """Plucked notes with harmonics: fundamentals E1 (41.2 Hz) to A2 (110 Hz),
    each harmonic decaying faster the higher it is, note lengths 1/8 to 1/2 s
    at 120 bpm."""
    notes_hz = [41.20, 49.00, 55.00, 61.74, 73.42, 82.41, 98.00, 110.00]
    x = np.zeros(n)
    at = 0
    while at < n:
        length = int(rate * rng.choice([0.125, 0.25, 0.375, 0.5]))
        f0 = rng.choice(notes_hz)
        t = np.arange(min(length, n - at)) / rate
        env = np.minimum(t / 0.004, 1.0) * np.minimum((length / rate - t) / 0.01, 1.0)
        note = np.zeros_like(t)
        for h in range(1, int(4000 / f0) + 1):
            decay_s = 0.6 / h ** 0.7
            note += np.sin(2 * np.pi * h * f0 * t + rng.uniform(0, 2 * np.pi)) \
                * np.exp(-t / decay_s) / h
        x[at:at + len(t)] = note * env * rng.uniform(0.5, 1.0)
        at += length
    return x


def periodic(kind, n, rate, rng):
    """One period of n samples, with nothing outside the kind's band."""
    x = rng.standard_normal(n) if kind == "noise" else bass_line(n, rate, rng)
    keep = band(np.fft.rfftfreq(n, 1.0 / rate), *BANDS_HZ[kind])
    return np.fft.irfft(np.fft.rfft(x) * keep, n)


def band_noise(n, rate, rng, lo, hi):
    keep = band(np.fft.rfftfreq(n, 1.0 / rate), lo, hi)
    return np.fft.irfft(np.fft.rfft(rng.standard_normal(n)) * keep, n)


def rotate_delay(x, rate, theta_deg, delay_frames):
    """Re{hilbert(x) e^{j theta}} delayed by delay_frames, circularly."""
    n = len(x)
    y = np.real(hilbert(x) * np.exp(1j * np.deg2rad(theta_deg)))
    k = np.arange(n // 2 + 1)
    return np.fft.irfft(np.fft.rfft(y) * np.exp(-2j * np.pi * k * delay_frames / n), n)


def power(x):
    return float(np.mean(x ** 2))


def make_pair(kind, rate, n, offset, theta_deg, snr_db, gain_db, rng):
    # The wrap-around stays outside the files; a length FFTs are fast at.
    period = next_fast_len(n + 2 * (int(abs(offset)) + rate))
    margin = (period - n) // 2
    s = periodic(kind, period, rate, rng)
    t = rotate_delay(s, rate, theta_deg, offset)
    s, t = s[margin:margin + n], t[margin:margin + n] * 10 ** (gain_db / 20)
    # White noise, its level set by its power in the default fit band.
    fit = band(np.fft.rfftfreq(n, 1.0 / rate), *FIT_BAND_HZ)
    out = []
    for x in (s, t):
        v = rng.standard_normal(n)
        in_band = power(np.fft.irfft(np.fft.rfft(v) * fit, n))
        v *= np.sqrt(power(x) / in_band / 10 ** (snr_db / 10))
        out.append(x + v)
    return out


def pcm24_header(rate, channels, frames):
    data = frames * channels * 3
    return (b"RIFF" + struct.pack("<I", 36 + data) + b"WAVE" + b"fmt "
            + struct.pack("<IHHIIHH", 16, 1, channels, rate, rate * channels * 3,
                          channels * 3, 24)
            + b"data" + struct.pack("<I", data))


def pcm24_bytes(x):
    """x in [-1, 1] to 24-bit codes, +1.0 being the largest code."""
    codes = np.clip(np.round(x * 8388608.0), -8388608, 8388607).astype("<i4")
    return codes.reshape(-1).view(np.uint8).reshape(-1, 4)[:, :3].tobytes()


def write_pcm24(path, rate, x):
    x = x.reshape(len(x), -1)
    with open(path, "wb") as f:
        f.write(pcm24_header(rate, x.shape[1], len(x)))
        f.write(pcm24_bytes(x))


def clip_some(x, count, rng):
    """Exactly count samples of channel 0 at full scale, spread out."""
    at = rng.choice(len(x), size=count, replace=False)
    x[at, 0] = np.where(np.arange(count) % 2 == 0, 1.0, -1.0)


def cmd_pair(ref_path, target_path):
    rate = arg("--rate", 48000, int)
    n = arg("--frames", int(round(arg("--seconds", 8.0) * rate)), int)
    rng = np.random.default_rng(arg("--seed", 1, int))
    kind = arg("--kind", "noise", str)
    s, t = make_pair(kind, rate, n, arg("--offset", 0.0),
                     arg("--theta", 0.0), arg("--snr", 30.0),
                     arg("--gain-db", 0.0), rng)
    s, t = s[:, None], t[:, None]
    if "--stereo-target" in sys.argv:
        other = band_noise(len(t), rate, rng, *BANDS_HZ[kind])
        t = np.column_stack([t[:, 0], other * np.sqrt(power(t) / power(other))])
    scale = arg("--peak", 0.5) / max(np.max(np.abs(s)), np.max(np.abs(t)))
    s, t = s * scale, t * scale
    clip_some(s, arg("--clip-ref", 0, int), rng)
    clip_some(t, arg("--clip-target", 0, int), rng)
    for path, x in ((ref_path, s), (target_path, t)):
        if arg("--encoding", "float", str) == "pcm24":
            write_pcm24(path, rate, x)
        else:
            write(path, rate, x)


def cmd_noise(path):
    rate = arg("--rate", 48000, int)
    n = int(round(arg("--seconds", 8.0) * rate))
    rng = np.random.default_rng(arg("--seed", 1, int))
    x = np.column_stack([band_noise(n, rate, rng, *BANDS_HZ["noise"])
                         for _ in range(arg("--channels", 1, int))])
    write(path, rate, x * (arg("--peak", 0.5) / np.max(np.abs(x))))


def cmd_trials(folder, count):
    rng = np.random.default_rng(arg("--seed", 1, int))
    n = int(round(arg("--seconds", 8.0) * 48000))
    with open(os.path.join(folder, "truth.txt"), "w") as truth:
        for i in range(count):
            kind = ("noise", "bass")[i % 2]
            offset = rng.uniform(-2000, 2000)
            theta = rng.uniform(-180, 180)
            snr = rng.uniform(10, 40)
            s, t = make_pair(kind, 48000, n, offset, theta, snr, 0.0, rng)
            scale = 0.5 / max(np.max(np.abs(s)), np.max(np.abs(t)))
            name = "t%02d" % i
            write(os.path.join(folder, name + "-ref.wav"), 48000, s * scale)
            write(os.path.join(folder, name + "-tgt.wav"), 48000, t * scale)
            truth.write("%s %s %.6f %.4f %.2f\n" % (name, kind, offset, theta, snr))


def cmd_long(ref_path, target_path):
    """White noise at -18 dBFS RMS (held within +-0.9, so that neither file
    reaches full scale), in slices of 2^18 frames, so memory stays small;
    TARGET[n] = REF[n - N] + noise 20 dB down."""
    rate = 48000
    frames = int(round(arg("--seconds", 600.0) * rate))
    delay = arg("--offset", 123, int)
    rng = np.random.default_rng(arg("--seed", 600, int))
    rms, noise_rms = 0.125, 0.0125
    with open(ref_path, "wb") as fr, open(target_path, "wb") as ft:
        fr.write(pcm24_header(rate, 1, frames))
        ft.write(pcm24_header(rate, 1, frames))
        tail = np.zeros(delay)  # REF's last frames, the start of TARGET's next slice
        left = frames
        while left:
            n = min(left, 1 << 18)
            x = np.clip(rng.standard_normal(n) * rms, -0.9, 0.9)
            y = np.concatenate([tail, x])[:n]
            tail = np.concatenate([tail, x])[n:]
            fr.write(pcm24_bytes(x))
            ft.write(pcm24_bytes(y + rng.standard_normal(n) * noise_rms))
            left -= n


def main():
    cmd, rest = sys.argv[1], sys.argv[2:]
    if cmd == "pair":
        cmd_pair(rest[0], rest[1])
    elif cmd == "noise":
        cmd_noise(rest[0])
    elif cmd == "trials":
        cmd_trials(rest[0], int(rest[1]))
    elif cmd == "long":
        cmd_long(rest[0], rest[1])
    else:
        sys.exit("measure_scene.py: unknown command " + cmd)


if __name__ == "__main__":
    main()
