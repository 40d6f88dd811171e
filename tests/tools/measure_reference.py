# SPDX-License-Identifier: GPL-3.0-or-later
"""Reference checks for `vernier measure` (run with /usr/bin/python3).

Each command prints what it found on one line and exits 0 when the check
holds, 1 when it does not. JSON is what `vernier measure --json` printed;
--index picks the target (default 0). Angles are compared modulo 360.

  measure_reference.py check JSON --offset D --theta DEG [--rate HZ]
        [--offset-tol F] [--angle-tol DEG] [--index I]
      status "found", |offset - D| <= F frames (default 0.05), the angle
      within --angle-tol degrees of DEG (default 3), and the correction
      consistent with them: delay = -offset, invert and angle undoing theta
  measure_reference.py coverage DIR [--offset-tol F] [--angle-tol DEG]
      over the trials of DIR/truth.txt (measure_scene.py trials) and their
      DIR/tNN.json: the true offset and angle inside +-3 sigma in >= 95% of
      the trials, the RMS of error / sigma >= 1/3 (sigma not inflated), every
      trial found, the errors within the tolerances at SNR >= 20 dB
  measure_reference.py coherence REF.wav TARGET.wav JSON [--tol T]
      the "coherence" curve against scipy.signal.coherence on REF and TARGET
      shifted by coarse_frames
  measure_reference.py correlation REF.wav TARGET.wav JSON [--tol T]
      the "correlation" curve against scipy.signal.correlate: the same peak
      (lag and sign), the curves within T (default 0.05) of each other
  measure_reference.py sum-level REF.wav TARGET.wav ALIGNED.wav --offset D
        [--lo HZ] [--hi HZ] [--tol DB] [--json JSON]
      the lo..hi level of REF + ALIGNED against the best REF + TARGET
      corrected by a brute-force search; with --json instead: the gain the
      report claims (figures.corrected.low_db) against the gain of ALIGNED
"""
import json
import os
import sys

import numpy as np
from scipy.signal import coherence, correlate, correlation_lags

from wavtools import arg, band, read


def load_target(path):
    with open(path) as f:
        doc = json.load(f)
    return doc, doc["targets"][arg("--index", 0, int)]


def mono(path):
    rate, x = read(path)
    return rate, x.astype(np.float64).mean(axis=1)


def angle_diff(a, b):
    return (a - b + 180.0) % 360.0 - 180.0


def verdict(ok, text):
    print(text)
    sys.exit(0 if ok else 1)


def cmd_check(path):
    doc, t = load_target(path)
    want_d, want_theta = arg("--offset", 0.0), arg("--theta", 0.0)
    tol_d, tol_a = arg("--offset-tol", 0.05), arg("--angle-tol", 3.0)
    if t["status"] != "found":
        verdict(False, "status %s (peak %s dB, coherence %s)" %
                (t["status"], t.get("peak_db"), t.get("coherence")))
    off = t["offset"]
    err_d = off["frames"] - want_d
    err_a = angle_diff(t["theta_deg"], want_theta)
    text = ("offset %.4f got %.4f: error %+.4f frames (sigma %.4f); theta "
            "%.2f got %.2f: error %+.2f deg (sigma %.2f)" %
            (want_d, off["frames"], err_d, off["sigma_frames"], want_theta,
             t["theta_deg"], err_a, t["theta_sigma_deg"]))
    ok = abs(err_d) <= tol_d and abs(err_a) <= tol_a
    # The correction undoes what was found: delay by -offset, and invert
    # plus rotate by angle_deg adds up to -theta (measure.h's conventions).
    c = t["correction"]
    undo = (180.0 if c["invert"] else 0.0) + c["angle_deg"]
    why = []
    if abs(c["delay_frames"] + off["frames"]) > 1e-6 * max(1, abs(off["frames"])):
        why.append("delay_frames %g is not -offset" % c["delay_frames"])
    if abs(angle_diff(undo, -t["theta_deg"])) > 0.01:
        why.append("invert %s + angle %g does not undo theta %g" %
                   (c["invert"], c["angle_deg"], t["theta_deg"]))
    if c["invert"] and abs(c["angle_deg"]) > 90:
        why.append("invert advised with an angle %g beyond +-90" % c["angle_deg"])
    rate = arg("--rate", doc["reference"]["rate_hz"])
    if abs(off["ms"] - 1000 * off["frames"] / rate) > 1e-6 * max(1, abs(off["ms"])):
        why.append("offset ms %g is not frames / rate" % off["ms"])
    verdict(ok and not why, text + ("; " + "; ".join(why) if why else ""))


def cmd_coverage(folder):
    tol_d, tol_a = arg("--offset-tol", 0.05), arg("--angle-tol", 3.0)
    rows = []
    with open(os.path.join(folder, "truth.txt")) as f:
        for line in f:
            name, kind, d, theta, snr = line.split()
            with open(os.path.join(folder, name + ".json")) as j:
                t = json.load(j)["targets"][0]
            if t["status"] != "found":
                rows.append((name, float(snr), None))
                continue
            off = t["offset"]
            rows.append((name + " " + kind, float(snr), (
                off["frames"] - float(d), off["sigma_frames"],
                angle_diff(t["theta_deg"], float(theta)), t["theta_sigma_deg"])))
    lost = [r[0] for r in rows if r[2] is None]
    found = [r for r in rows if r[2] is not None]
    e = np.array([r[2] for r in found]).reshape(-1, 4)
    snr = np.array([r[1] for r in found])
    n = len(rows)
    z_d = np.abs(e[:, 0]) / np.maximum(e[:, 1], 1e-300)
    z_a = np.abs(e[:, 2]) / np.maximum(e[:, 3], 1e-300)
    cov_d = np.count_nonzero(z_d <= 3) / n
    cov_a = np.count_nonzero(z_a <= 3) / n
    hi = snr >= 20
    print("%d trials, %d not found %s" % (n, len(lost), " ".join(lost)))
    for lo_db, hi_db in ((10, 20), (20, 30), (30, 40.01)):
        s = (snr >= lo_db) & (snr < hi_db)
        if np.any(s):
            print("  SNR %2d..%2d dB (%2d): offset |err| max %.4f rms %.4f, "
                  "sigma median %.4f; angle |err| max %.3f rms %.3f, sigma "
                  "median %.3f deg" % (
                      lo_db, min(hi_db, 40), np.count_nonzero(s),
                      np.max(np.abs(e[s, 0])), np.sqrt(np.mean(e[s, 0] ** 2)),
                      np.median(e[s, 1]), np.max(np.abs(e[s, 2])),
                      np.sqrt(np.mean(e[s, 2] ** 2)), np.median(e[s, 3])))
    worst = [found[i] for i in np.argsort(-np.abs(e[:, 0]))[:3]]
    print("  largest offset errors: " + "; ".join(
        "%s at %.1f dB: %+.4f (sigma %.4f)" % (r[0], r[1], r[2][0], r[2][1]) for r in worst))
    print("  inside +-3 sigma: offset %.1f%%, angle %.1f%%; rms of error/sigma: "
          "offset %.2f, angle %.2f" % (100 * cov_d, 100 * cov_a,
                                       np.sqrt(np.mean(z_d ** 2)),
                                       np.sqrt(np.mean(z_a ** 2))))
    # An honest sigma gives error / sigma a spread of 1 (common practice);
    # coverage alone would also pass a sigma blown up tenfold.
    ok = cov_d >= 0.95 and cov_a >= 0.95 and not lost
    ok = ok and np.sqrt(np.mean(z_d ** 2)) >= 1 / 3 and np.sqrt(np.mean(z_a ** 2)) >= 1 / 3
    ok = ok and (not np.any(hi) or (np.max(np.abs(e[hi, 0])) <= tol_d and
                                    np.max(np.abs(e[hi, 2])) <= tol_a))
    sys.exit(0 if ok else 1)


def aligned_pair(ref, target, coarse):
    """REF and TARGET shifted earlier by coarse whole frames, cut to the
    frames both then cover: target_shifted[n] = target[n + coarse]."""
    if coarse >= 0:
        t = target[coarse:]
        r = ref
    else:
        t = target
        r = ref[-coarse:]
    n = min(len(r), len(t))
    return r[:n], t[:n]


def cmd_coherence(ref_path, target_path, path):
    _, t = load_target(path)
    rate, ref = mono(ref_path)
    _, target = mono(target_path)
    c = t["curves"]
    f = np.asarray(c["frequency_hz"])
    got = np.asarray(c["coherence"])
    n_fft = int(round(rate / (f[1] - f[0])))
    r, s = aligned_pair(ref, target, t["offset"]["coarse_frames"])
    # scipy.signal.coherence: Welch's averaged periodograms, Hann window
    # (periodic, scipy's get_window default), 50% overlap, no detrending;
    # magnitude-squared coherence |Pxy|^2 / (Pxx Pyy) (Carter, Knapp and
    # Nuttall 1973).
    fs, want = coherence(r, s, fs=rate, window="hann", nperseg=n_fft,
                         noverlap=n_fft // 2, detrend=False)
    k = np.round(f * n_fft / rate).astype(int)
    if np.max(np.abs(fs[k] - f)) > 1e-6 * rate / n_fft:
        verdict(False, "the curve's frequencies are not k rate / %d" % n_fft)
    want = want[k]
    d = np.abs(got - want)
    tol = arg("--tol", 0.02)
    verdict(np.max(d) <= tol,
            "n_fft %d, %d bins %.1f..%.1f Hz, %d frames after the coarse shift "
            "%d: |coherence - scipy| max %.2g (at %.1f Hz: %.4f vs %.4f), "
            "mean %.2g; means %.4f vs %.4f" % (
                n_fft, len(k), f[0], f[-1], len(r), t["offset"]["coarse_frames"],
                np.max(d), f[np.argmax(d)], got[np.argmax(d)], want[np.argmax(d)],
                np.mean(d), np.mean(got), np.mean(want)))


def hann_overlap(n_fft, lags):
    """sum_n w(n) w(n + l) / sum_n w(n)^2 for the periodic Hann window w:
    the share of a segment's windowed energy that a lag l keeps paired."""
    w = 0.5 - 0.5 * np.cos(2 * np.pi * np.arange(n_fft) / n_fft)
    full = correlate(w, w, mode="full", method="fft")
    return full[n_fft - 1 + np.abs(lags)] / np.sum(w ** 2)


def cmd_correlation(ref_path, target_path, path):
    _, t = load_target(path)
    rate, ref = mono(ref_path)
    _, target = mono(target_path)
    c = t["curves"]
    got = np.asarray(c["correlation"])
    lags = np.asarray(c["lag_frames"])
    n_fft = int(round(rate / (c["frequency_hz"][1] - c["frequency_hz"][0])))
    # scipy.signal.correlate(target, ref)[k] = sum_n target[n + k] ref[n]:
    # a positive lag is TARGET later, as measure.h counts it.
    full = correlate(target, ref, mode="full", method="fft")
    full /= np.sqrt(np.sum(ref ** 2) * np.sum(target ** 2))
    all_lags = correlation_lags(len(target), len(ref), mode="full")
    # The core averages the correlations of Hann-windowed segments n_fft
    # long: at lag l only the windows' overlap pairs up, so what it should
    # give is scipy's value times that overlap (Welch's segment averaging,
    # common practice).
    want = full[np.searchsorted(all_lags, lags)] * hann_overlap(n_fft, lags)
    i_got, i_want = np.argmax(np.abs(got)), np.argmax(np.abs(want))
    tol = arg("--tol", 0.05)
    diff = np.max(np.abs(got - want))
    # The same peak: the same lag, or (a broad peak, a bass line's) one
    # where scipy's curve is within the tolerance of its own top.
    same_peak = i_got == i_want or (abs(lags[i_got] - lags[i_want]) <= 2 and
                                    abs(want[i_got] - want[i_want]) <= tol / 10)
    sign_ok = np.sign(got[i_got]) == np.sign(want[i_want])
    verdict(same_peak and sign_ok and diff <= tol,
            "n_fft %d, %d lags %d..%d: peak at lag %d (%.4f), scipy times the "
            "window overlap at lag %d (%.4f; scipy alone %.4f); the curves "
            "differ by at most %.4f" % (
                n_fft, len(lags), lags[0], lags[-1], lags[i_got], got[i_got],
                lags[i_want], want[i_want], full[np.searchsorted(all_lags, lags[i_want])],
                diff))


def band_level_db(spectrum, n, keep):
    """Mean power of the lo..hi part of a length-n signal, dB (Parseval)."""
    return 10 * np.log10(2 * np.sum(np.abs(spectrum[keep]) ** 2) / n ** 2)


def cmd_sum_level(ref_path, target_path, aligned_path):
    rate, ref = mono(ref_path)
    _, target = mono(target_path)
    _, aligned = mono(aligned_path)
    n = len(ref)
    if len(target) != n or len(aligned) != n:
        verdict(False, "lengths differ: %d %d %d" % (n, len(target), len(aligned)))
    k = np.arange(n // 2 + 1)
    keep = band(k * rate / n, arg("--lo", 20.0), arg("--hi", 250.0))
    R = np.fft.rfft(ref)
    T = np.fft.rfft(target)
    recorded = band_level_db(R + T, n, keep)
    got = band_level_db(R + np.fft.rfft(aligned), n, keep)
    # What the report claims the correction gains, against what the file
    # gains (both relative to the sum as recorded).
    lo, hi = arg("--lo", 20.0), arg("--hi", 250.0)
    if "--json" in sys.argv:
        _, t = load_target(arg("--json", "", str))
        claimed = t["figures"]["corrected"]["low_db"]
        verdict(abs(claimed - (got - recorded)) <= arg("--tol", 0.3),
                "%g..%g Hz: the report's gain %+.3f dB, REF + aligned against "
                "REF + TARGET %+.3f dB" % (lo, hi, claimed, got - recorded))
    # Brute force: TARGET moved by d (0.05-frame steps within 1 frame of the
    # truth, by the linear phase e^{+j 2 pi k d / n}) and rotated by every
    # whole degree (the spectrum times e^{j a}, as hilbert() rotates).
    d0 = arg("--offset", 0.0)
    rk, tk = R[keep], T[keep]
    turns = np.exp(1j * np.deg2rad(np.arange(360)))[:, None]
    best = (-np.inf, 0.0, 0.0)
    for d in d0 + 0.05 * np.arange(-20, 21):
        moved = tk * np.exp(2j * np.pi * k[keep] * d / n)
        levels = 10 * np.log10(2 * np.sum(np.abs(rk + moved * turns) ** 2, axis=1) / n ** 2)
        if np.max(levels) > best[0]:
            best = (np.max(levels), d, int(np.argmax(levels)))
    verdict(abs(got - best[0]) <= arg("--tol", 0.3),
            "%g..%g Hz: as recorded %.3f dB, best %.3f dB (offset %.2f, "
            "rotation %d deg), REF + aligned %.3f dB: %+.3f dB from the best"
            % (lo, hi, recorded, best[0], best[1], best[2], got, got - best[0]))


def main():
    cmd, rest = sys.argv[1], sys.argv[2:]
    if cmd == "check":
        cmd_check(rest[0])
    elif cmd == "coverage":
        cmd_coverage(rest[0])
    elif cmd == "coherence":
        cmd_coherence(*rest[:3])
    elif cmd == "correlation":
        cmd_correlation(*rest[:3])
    elif cmd == "sum-level":
        cmd_sum_level(*rest[:3])
    else:
        sys.exit("measure_reference.py: unknown command " + cmd)


if __name__ == "__main__":
    main()
