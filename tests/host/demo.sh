#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# `vernier demo [DIR]` (issue 5): the invented scene it writes, checked
# from the files against the cookbook filters and the speed of sound; what
# `vernier measure` finds in it (the amp track as REF, the DI as TARGET)
# against what the scene predicts; the all-pass it fits; the files of the
# correction; and the command line's errors.
. "$(dirname "$0")/../lib.sh"
. "$SRCDIR/tests/host/common.inc"
need_host

D=$T/demo
# One sanitized run (about three times the plain one's two seconds); the
# checks below read its files.
n="demo DIR: exit 0"
run_vernier demo "$D"
expect_rc "$n" 0
cp "$T/out" "$T/demo.out"
cp "$T/err" "$T/demo.err"

echo "-- files"
for f in bass-di.wav bass-amp.wav bass-di-aligned.wav bass-di-aligned.svg \
  bass-di-aligned.lv2/manifest.ttl commands.sh report.json \
  bass-sum-before.wav bass-sum-after.wav; do
  check "writes $f" test -s "$D/$f"
done
check "no temporary file left" test -z "$(ls -A "$D" | grep '^\.')"
check "no bass-amp-aligned file: the amp track is not the one corrected" \
  test -z "$(ls "$D" | grep '^bass-amp-aligned')"
check "the preset bundle holds the Align Strip's preset" \
  grep -q 'urn:vernier:strip-mono' "$D/bass-di-aligned.lv2/strip.ttl"
check "the preset bundle holds an All-pass preset" \
  grep -q 'urn:vernier:allpass-mono' "$D/bass-di-aligned.lv2/allpass.ttl"
check "commands.sh makes bass-di-aligned.wav from the DI, with the all-pass" \
  grep -q "vernier process .*bass-di.wav .*bass-di-aligned.wav strip .*frequency=" \
  "$D/commands.sh"

echo "-- what it prints"
check "says the scene is invented" grep -q "invented scene" "$T/demo.out"
check "says how the mic cable is wired" grep -q "pins 2 and 3 swapped" \
  "$T/demo.out"
check "prints measure's report: the amp track is REF" \
  grep -q "^REF $D/bass-amp.wav" "$T/demo.out"
check "prints measure's report: the DI is TARGET" \
  grep -q "^TARGET $D/bass-di.wav" "$T/demo.out"
# 0.473 m / 343.2146 m/s (c = 331.3 sqrt(1 + 20/273.15), time_value.h,
# common practice) = 1.37815 ms = 66.151 frames at 48 kHz.
check "prints the air delay: 47.3 cm = 1.3781 ms = 66.15 frames" \
  grep -q "47.3 cm of air at 20 C = 1.3781 ms = 66.15 frames" "$T/demo.out"
check "lists report.json among the files" grep -q "report.json" "$T/demo.out"
check "turn the monitors down before listening" \
  grep -q "turn the monitors down first" "$T/demo.out"

# The scene, rebuilt from the DI: the RBJ Audio EQ Cookbook's high-pass
# (55 Hz, q 0.707), peaking EQ (110 Hz, q 1.2, +4 dB), low-pass (4500 Hz,
# q 0.707) and all-pass (300 Hz, q 0.7), run by scipy.signal.lfilter on the
# DI delayed by 66.151 frames (an exact band-limited delay, by the FFT),
# must give the amp track: a negative gain (inverted), a delay that the
# least-squares fit of the model and its derivative moves by under 0.01
# frames, and what is left at the level of the room noise (-50 dB). A
# whole-frame delay would leave the fit 0.15 frames off.
echo "-- the scene"
check "the amp track is the DI inverted, 66.151 frames late, through the cabinet" \
  "$PY" - "$D" <<'EOF'
import sys
import numpy as np
from scipy import signal
from scipy.io import wavfile

d = sys.argv[1]
rate, di = wavfile.read(d + "/bass-di.wav")
_, amp = wavfile.read(d + "/bass-amp.wav")
assert rate == 48000 and di.dtype == np.int32 and len(di) == 12 * rate
di = di / 2.0**31
amp = amp / 2.0**31


def cookbook(kind, f0, q, gain_db=0.0):
    a_gain = 10 ** (gain_db / 40)
    w0 = 2 * np.pi * f0 / rate
    c, alpha = np.cos(w0), np.sin(w0) / (2 * q)
    den = [1 + alpha, -2 * c, 1 - alpha]
    if kind == "hp":
        num = [(1 + c) / 2, -(1 + c), (1 + c) / 2]
    elif kind == "lp":
        num = [(1 - c) / 2, 1 - c, (1 - c) / 2]
    elif kind == "ap":
        num = [1 - alpha, -2 * c, 1 + alpha]
    else:
        num = [1 + alpha * a_gain, -2 * c, 1 - alpha * a_gain]
        den = [1 + alpha / a_gain, -2 * c, 1 - alpha / a_gain]
    return num, den


cabinet = [cookbook("hp", 55, 0.707), cookbook("peak", 110, 1.2, 4.0),
           cookbook("lp", 4500, 0.707), cookbook("ap", 300, 0.7)]
tau = 0.473 / (331.3 * np.sqrt(1 + 20 / 273.15)) * rate
n = len(di)
size = 1 << int(np.ceil(np.log2(n + 4096)))
spectrum = np.fft.rfft(di, size) * np.exp(-2j * np.pi * np.fft.rfftfreq(size) * tau)
model = np.fft.irfft(spectrum, size)[:n]
slope = np.fft.irfft(spectrum * -2j * np.pi * np.fft.rfftfreq(size), size)[:n]
for num, den in cabinet:
    model = signal.lfilter(num, den, model)
    slope = signal.lfilter(num, den, slope)
keep = slice(4800, n - 4800)  # away from the ends of the circular delay
basis = np.stack([model[keep], slope[keep]], 1)
coef = np.linalg.lstsq(basis, amp[keep], rcond=None)[0]
rest = amp[keep] - basis @ coef
left_db = 20 * np.log10(np.std(rest) / np.std(amp[keep]))
moved = coef[1] / coef[0]
print("gain %.4f, moved %.5f frames, left %.1f dB" % (coef[0], moved, left_db))
assert coef[0] < 0, "not inverted"
assert abs(moved) < 0.01, moved
assert -52 < left_db < -47, left_db
EOF

# The offset measure finds lies where the built-in response puts it when
# each bin is weighted as measure weighs it (coherence g2 -> g2 / (1 - g2),
# held below 0.999: Knapp and Carter, IEEE Trans. ASSP 24(4), 1976, as
# host/measure_fit.c says). The weights are measure's own (--curves); the
# phase is the cookbook cabinet's, by scipy.signal.freqz, inverted, with
# the air delay: computed here without the demo's C code. REF is the amp
# track, h times the DI, so the cross-spectrum conj(REF) TARGET has the
# phase of conj(h) (host/measure_internal.h): the DI comes out early, by
# more than the air delay. The angle weighs each bin by the cross-
# spectrum's size, |h| |DI|^2 = g2 |REF|^2 / |h| (the DI is clean, so g2
# |REF|^2 is REF's part that the DI explains). The tolerances: the demo's
# own prediction (the same sums in C) to 0.01 frames and 0.1 degree (what
# it prints); measure's offset to 0.1 frames, under the air delay's
# 0.15-frame fraction so that losing it fails, ten times what the two
# differ by on this scene (0.01; the jackknife's 0.3-frame sigma measures
# how notes disagree under the cabinet's dispersion, not this); measure's
# angle to 2 degrees (0.35 on this scene).
echo "-- what measure found"
n="measure --json --curves on the demo's tracks"
if run_ok "$n" measure -q --json --curves "$D/bass-amp.wav" "$D/bass-di.wav"; then
  cp "$T/out" "$T/curves.json"
  check "found offset and angle where the cabinet puts them; invert advised" \
    "$PY" - "$T/curves.json" "$D/report.json" "$T/demo.out" <<'EOF'
import json
import re
import sys
import numpy as np
from scipy import signal

curves = json.load(open(sys.argv[1]))["targets"][0]
report = json.load(open(sys.argv[2]))["targets"][0]
printed = open(sys.argv[3]).read()
rate = 48000.0


def cookbook(kind, f0, q, gain_db=0.0):
    a_gain = 10 ** (gain_db / 40)
    w0 = 2 * np.pi * f0 / rate
    c, alpha = np.cos(w0), np.sin(w0) / (2 * q)
    den = [1 + alpha, -2 * c, 1 - alpha]
    if kind == "hp":
        num = [(1 + c) / 2, -(1 + c), (1 + c) / 2]
    elif kind == "lp":
        num = [(1 - c) / 2, 1 - c, (1 - c) / 2]
    elif kind == "ap":
        num = [1 - alpha, -2 * c, 1 + alpha]
    else:
        num = [1 + alpha * a_gain, -2 * c, 1 - alpha * a_gain]
        den = [1 + alpha / a_gain, -2 * c, 1 - alpha / a_gain]
    return num, den


c = curves["curves"]
f = np.array(c["frequency_hz"])
h = -np.exp(-2j * np.pi * f * 0.473 / (331.3 * np.sqrt(1 + 20 / 273.15)))
for kind, args in [("hp", (55, 0.707)), ("peak", (110, 1.2, 4.0)),
                   ("lp", (4500, 0.707)), ("ap", (300, 0.7))]:
    h *= signal.freqz(*cookbook(kind, *args), worN=f, fs=rate)[1]
g2 = np.clip(np.array(c["coherence"]), 0, 1)
held = np.minimum(g2, 0.999)
w = held / (1 - held) * np.conj(h) / np.abs(h)
power = np.conj(h) / np.abs(h) ** 2 * g2 * 10 ** (np.array(c["ref_db"]) / 10)


def agreement(d):
    return abs(np.sum(w * np.exp(2j * np.pi * f * d / rate)))


grid = np.arange(-2400, 2400, 0.25)
best = grid[np.argmax([agreement(d) for d in grid])]
fine = np.arange(best - 0.25, best + 0.25, 1e-4)
expected = fine[np.argmax([agreement(d) for d in fine])]
theta = np.degrees(np.angle(np.sum(power * np.exp(2j * np.pi * f * expected / rate))))
said = float(re.search(r"expected ([-+]?[0-9.]+) frames", printed).group(1))
said_deg = float(re.search(r"expected ([-+]?[0-9.]+) deg", printed).group(1))
found = report["offset"]["frames"]
print("expected %.4f (demo says %.2f), found %.4f; angle %.2f (demo says "
      "%.1f), found %.2f" % (expected, said, found, theta, said_deg,
                             report["theta_deg"]))
assert report["status"] == "found", report["status"]
air = 0.473 / (331.3 * np.sqrt(1 + 20 / 273.15)) * rate
assert expected < -air, (expected, -air)
assert abs(said - expected) < 0.01, (said, expected)
assert abs(said_deg - theta) < 0.1, (said_deg, theta)
assert abs(found - expected) < 0.1, (found, expected)
assert abs((report["theta_deg"] - theta + 180) % 360 - 180) < 2.0
assert report["correction"]["invert"] is True
assert abs(report["offset"]["frames"] - curves["offset"]["frames"]) < 1e-9
EOF
fi

# The all-pass. The cabinet lags the amp track's low notes far more than
# its high ones (its group delay: 282 frames at 41 Hz, 10 at 1 kHz), which
# no one delay and angle can match; an all-pass on the DI can lag it the
# same way. So with --shape one must be fitted, and it must pay: on this
# scene the correlation of the sum goes from +0.550 (constant angle) to
# +0.915 (with the all-pass), +0.365. The check asks for +0.2: 0.165
# under what is seen, room for a fit that lands on another all-pass, yet
# some seven times the +0.03 that would barely clear measure_shape.c's own
# bar for advising one (the sum's cross term up 5%: 0.550 x 1.05 = 0.578,
# about), so an all-pass that little more than ties the angle fails here.
echo "-- the all-pass"
check "--shape fits an all-pass on the DI; the sum's correlation up by 0.2 or more" \
  "$PY" - "$D/report.json" <<'EOF'
import json
import sys

report = json.load(open(sys.argv[1]))["targets"][0]
figures = report["figures"]
allpass = report["correction"]["allpass"]
print("all-pass %s; correlation corrected %s, shaped %s"
      % (allpass, figures["corrected"]["correlation"],
         figures["shaped"] and figures["shaped"]["correlation"]))
assert allpass is not None, "no all-pass fitted"
assert figures["shaped"] is not None
gain = figures["shaped"]["correlation"] - figures["corrected"]["correlation"]
assert gain >= 0.2, gain
assert any(w.startswith("frequency=") for w in report["process_step"])
EOF

# The phase left between the tracks that the demo prints, recomputed from
# the cookbook cabinet (scipy.signal.freqz) and the corrections in
# report.json: the constant angle's (the DI moved by -offset and turned by
# -theta, invert and rotate together) and the shaped one's (invert, rotate,
# delay and the all-pass, as many stages as fitted: the cookbook's for
# order 2; for order 1 (1 - s/wp) / (1 + s/wp) through
# scipy.signal.bilinear, wp prewarped to f0, as plugins/dsp/allpass.h
# describes the stage). The demo prints whole degrees: within 1.
check "the phase left that the demo prints is the cabinet's against the corrections" \
  "$PY" - "$D/report.json" "$T/demo.out" <<'EOF'
import json
import re
import sys
import numpy as np
from scipy import signal

report = json.load(open(sys.argv[1]))["targets"][0]
printed = open(sys.argv[2]).read()
rate = 48000.0
f = np.array([41.2, 110.0, 300.0, 1000.0])


def cookbook(kind, f0, q, gain_db=0.0):
    a_gain = 10 ** (gain_db / 40)
    w0 = 2 * np.pi * f0 / rate
    c, alpha = np.cos(w0), np.sin(w0) / (2 * q)
    den = [1 + alpha, -2 * c, 1 - alpha]
    if kind == "hp":
        num = [(1 + c) / 2, -(1 + c), (1 + c) / 2]
    elif kind == "lp":
        num = [(1 - c) / 2, 1 - c, (1 - c) / 2]
    elif kind == "ap":
        num = [1 - alpha, -2 * c, 1 + alpha]
    else:
        num = [1 + alpha * a_gain, -2 * c, 1 - alpha * a_gain]
        den = [1 + alpha / a_gain, -2 * c, 1 - alpha / a_gain]
    return num, den


w = 2 * np.pi * f / rate
h = -np.exp(-1j * w * 0.473 / (331.3 * np.sqrt(1 + 20 / 273.15)) * rate)
for kind, args in [("hp", (55, 0.707)), ("peak", (110, 1.2, 4.0)),
                   ("lp", (4500, 0.707)), ("ap", (300, 0.7))]:
    h *= signal.freqz(*cookbook(kind, *args), worN=f, fs=rate)[1]
constant = np.exp(1j * (w * report["offset"]["frames"]
                        - np.radians(report["theta_deg"])))
k = report["correction"]
ap = k["allpass"]
assert ap is not None, "no all-pass fitted"
if ap["order"] == 2:
    stage = cookbook("ap", ap["frequency_hz"], ap["q"])
else:
    wp = 2 * rate * np.tan(np.pi * ap["frequency_hz"] / rate)
    stage = signal.bilinear([-1 / wp, 1], [1 / wp, 1], fs=rate)
shaped = ((-1 if k["invert"] else 1)
          * np.exp(1j * (np.radians(k["angle_deg"]) - w * k["delay_frames"]))
          * signal.freqz(*stage, worN=f, fs=rate)[1] ** ap["stages"])
for name, fix in [("corrected", constant), ("shaped", shaped)]:
    want = np.degrees(np.angle(fix / h))
    row = re.search(r"^ +%s((?: +[-+]?[0-9]+){4}) deg$" % name, printed, re.M)
    said = np.array([float(x) for x in row.group(1).split()])
    print(name, "printed", said, "computed", np.round(want, 2))
    assert np.all(np.abs((said - want + 180) % 360 - 180) <= 1.0), (said, want)
EOF

# The sums. Built in, the amp track and the DI partly cancel in the low
# band (inverted, and later): the corrected DI must win back at least 3 dB
# there (measure predicts 4.8 with the all-pass), by a 20-250 Hz band
# power from the files (numpy's FFT), within 0.5 dB of measure's own
# figure; and the two sum files hold the sums of the codes, exactly.
echo "-- the sums"
check "amp + corrected DI: 20-250 Hz up by 3 dB or more, as measure says" \
  "$PY" - "$D" <<'EOF'
import json
import sys
import numpy as np
from scipy.io import wavfile

d = sys.argv[1]
read = lambda name: wavfile.read(d + "/" + name)[1].astype(np.int64) >> 8
amp, di, aligned = read("bass-amp.wav"), read("bass-di.wav"), read("bass-di-aligned.wav")
assert np.array_equal(read("bass-sum-before.wav"), amp + di)
assert np.array_equal(read("bass-sum-after.wav"), amp + aligned)


def low_power(x):
    spectrum = np.abs(np.fft.rfft(x.astype(float))) ** 2
    f = np.fft.rfftfreq(len(x), 1 / 48000)
    return np.sum(spectrum[(f >= 20) & (f <= 250)])


gain_db = 10 * np.log10(low_power(amp + aligned) / low_power(amp + di))
report = json.load(open(d + "/report.json"))["targets"][0]
figures = report["figures"]
best = figures["shaped"] or figures["corrected"]
said = best["low_db"] - figures["as_recorded"]["low_db"]
print("20-250 Hz: %+.2f dB from the files, measure said %+.2f" % (gain_db, said))
assert gain_db >= 3.0, gain_db
assert abs(gain_db - said) < 0.5, (gain_db, said)
EOF

echo "-- again, quietly, into the same folder"
# The plain host: this checks that the folder is reused and the scene is
# the same (seeded), not memory safety.
cp "$D/bass-amp.wav" "$T/amp-first.wav"
cp "$D/bass-di.wav" "$T/di-first.wav"
n="demo -q into the folder of a run before: exit 0, nothing on stderr"
if LV2_PATH="$LV2_PLAIN" "$VERNIER_PLAIN" demo -q "$D" >"$T/out" 2>"$T/err" </dev/null; then
  check "$n" test ! -s "$T/err"
else
  fail "$n" "exit $?: $(head -c 300 "$T/err" | tr '\n' ' ')"
fi
check "the same amp track again, bit for bit" cmp "$D/bass-amp.wav" "$T/amp-first.wav"
check "the same DI again, bit for bit" cmp "$D/bass-di.wav" "$T/di-first.wav"
grep -A3 "offset     expected" "$T/demo.out" >"$T/offset-first"
check "the same offsets, expected and found, printed again" \
  sh -c 'grep -A3 "offset     expected" "$1" | cmp - "$2"' - "$T/out" "$T/offset-first"

echo "-- errors"
refuse "two folders" 2 demo "$O/a" "$O/b"
says "two folders: names both" "got '$O/a' and '$O/b'"
refuse "an unknown option" 2 demo --band 20-250 "$O/a"
says "an unknown option: lists the options" "demo options: -q, --help"
: >"$O/file"
refuse "DIR is a file" 4 demo "$O/file"
says "DIR is a file: says so" "not a folder"
rm -f "$O/file"
run_vernier demo --help
expect_rc "--help: exit 0" 0
check "--help: the usage on stdout" grep -q "^usage: vernier demo" "$T/out"
