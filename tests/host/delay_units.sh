#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# Times on the command line (host/time_value.h): the units a control in
# milliseconds takes in `vernier process`, --air-temp, the errors for what
# is not a time, the host's own shift beyond the Fine Delay's range, and
# what `vernier describe delay` says about the range.
. "$(dirname "$0")/../lib.sh"
. "$SRCDIR/tests/host/common.inc"
need_host

# An impulse pair at frame 10000 of one second at 48 kHz (and 44.1 kHz):
# where it lands shows the shift, whole frames exactly.
impulse() { # PATH RATE CHANNELS
  "$PY" -c '
import sys
import numpy as np
from scipy.io import wavfile
rate, ch = int(sys.argv[2]), int(sys.argv[3])
x = np.zeros((rate, ch), np.float32)
x[10000] = 1.0
x[10001] = -0.5
wavfile.write(sys.argv[1], rate, x.squeeze())' "$@"
}
impulse "$I/imp48.wav" 48000 1
impulse "$I/imp44.wav" 44100 1
impulse "$I/imp48s.wav" 48000 2

# delay_ms NAME WANT ARGS...: the run's JSON gives the first step's delay
# control as WANT ms (to float precision, or within an absolute TOL set).
delay_ms() {
  n=$1 want=$2
  shift 2
  run_ok "$n" process -q --json --overwrite "$@" &&
    check "$n" "$PY" -c '
import json, sys
j = json.load(open(sys.argv[1]))
got, want = j["steps"][0]["controls"]["delay"], float(sys.argv[2])
tol = float(sys.argv[3]) if len(sys.argv) > 3 else 1e-6 * max(1.0, abs(want))
assert abs(got - want) <= tol, (got, want)
assert j["shift_frames"] == 0, j["shift_frames"]' "$T/out" "$want" ${TOL:-}
}

echo "-- units"
O1=$O/u.wav
delay_ms "a bare number is ms" 1.25 "$I/imp48.wav" "$O1" delay delay=1.25
delay_ms "1.25ms is ms" 1.25 "$I/imp48.wav" "$O1" delay delay=1.25ms
delay_ms "250us is 0.25 ms" 0.25 "$I/imp48.wav" "$O1" delay delay=250us
delay_ms "0.0125s is 12.5 ms" 12.5 "$I/imp48.wav" "$O1" delay delay=0.0125s
delay_ms "-0.37smp at 48 kHz is -0.37/48 ms" -0.0077083333 \
  "$I/imp48.wav" "$O1" delay delay=-0.37smp
delay_ms "12.5smp at 44.1 kHz is 12.5/44.1 ms" 0.28344671 \
  "$I/imp44.wav" "$O1" delay delay=12.5smp
delay_ms "+1e1smp (exponent, plus sign) is 10/48 ms" 0.20833333 \
  "$I/imp48.wav" "$O1" delay delay=+1e1smp
# c = 331.3 sqrt(1 + T/273.15) (time_value.h): 343.2146 m/s at 20 C.
delay_ms "34cm at 20 C is 0.34/343.2146 s" 0.99063378 \
  "$I/imp48.wav" "$O1" delay delay=34cm
delay_ms "-2.1m at 20 C" -6.1186204 "$I/imp48.wav" "$O1" delay delay=-2.1m
delay_ms "120mm at 20 C" 0.34963545 "$I/imp48.wav" "$O1" delay delay=120mm
delay_ms "1ft (0.3048 m) at 20 C" 0.88807405 "$I/imp48.wav" "$O1" delay delay=1ft
delay_ms "10in (0.254 m) at 20 C" 0.74006171 "$I/imp48.wav" "$O1" delay delay=10in
delay_ms "--air-temp 0: 1 m is 1/331.3 s" 3.0184123 \
  --air-temp 0 "$I/imp48.wav" "$O1" delay delay=1m
delay_ms "--air-temp=35: 1 m is 1/351.9 s" 2.8418299 \
  --air-temp=35 "$I/imp48.wav" "$O1" delay delay=1m
delay_ms "delay-stereo takes units too" -1.5 "$I/imp48s.wav" "$O1" \
  delay-stereo delay=-1500us

echo "-- not a time"
for bad in 3xyz 1.5MS "1.5 ms" 2mS ms nan inf -inf 1e999ms 0x1p3q ""; do
  refuse "delay=$bad" 2 process "$I/imp48.wav" "$O/bad.wav" delay "delay=$bad"
  says "delay=$bad: names the word" "delay=$bad"
  says "delay=$bad: lists the units" "smp (samples at 48000 Hz)"
  says "delay=$bad: gives the range" "-20 .. 100 ms"
done
refuse "a unit on a control that is not a time" 2 process "$I/imp48.wav" \
  "$O/bad.wav" gain gain=1ms
says "gain=1ms: not a number, with gain's range" "gain=1ms is not a number (allowed: -1 .. 1)"
for t in 61 -51 abc 20C; do
  refuse "--air-temp $t" 2 process --air-temp "$t" "$I/imp48.wav" \
    "$O/bad.wav" delay delay=1m
  says "--air-temp $t: names it and the range" "--air-temp $t: not an air temperature in degrees Celsius from -50 to 60"
done
refuse "--air-temp without a value" 2 process "$I/imp48.wav" "$O/bad.wav" \
  delay delay=1m --air-temp
refuse "delay=61s: beyond the host's shift" 2 process "$I/imp48.wav" \
  "$O/bad.wav" delay delay=61s
says "delay=61s: says the host's limit and the plugin's range" "delay=61s (61000 ms) is beyond what the host shifts a file by (60 s either way; the plugin itself takes -20 .. 100 ms)"

echo "-- beyond the plugin's range: the host shifts the file"
# shifted NAME IN OUT FRAMES HOST_FRAMES: OUT is IN moved by FRAMES (whole),
# bit for bit, the same length; the JSON's shift_frames is HOST_FRAMES.
shifted() {
  check "$1" "$PY" -c '
import json, sys, warnings
import numpy as np
from scipy.io import wavfile
warnings.simplefilter("ignore", wavfile.WavFileWarning)
_, x = wavfile.read(sys.argv[1])
_, y = wavfile.read(sys.argv[2])
d, host = int(sys.argv[3]), int(sys.argv[4])
want = np.zeros_like(x)
if d >= 0:
    want[d:] = x[:len(x) - d]
else:
    want[:d] = x[-d:]
assert y.shape == x.shape and y.dtype == x.dtype, (y.shape, y.dtype)
assert y.tobytes() == want.tobytes(), np.max(np.abs(y - want))
j = json.load(open(sys.argv[5]))
assert j["shift_frames"] == host, j["shift_frames"]
assert j["steps"][0]["host_shift_frames"] == host, j["steps"][0]' \
    "$2" "$3" "$4" "$5" "$T/out"
}
for case in "-50ms -2400 -1440" "150ms 7200 2400" "250ms 12000 7200" \
  "-4800smp -4800 -3840" "-20ms -960 0" "100ms 4800 0"; do
  set -- $case
  n="delay=$1 moves the file by $2 frames exactly (host: $3)"
  run_ok "$n" process -q --json "$I/imp48.wav" "$O/s$1.wav" delay "delay=$1" &&
    shifted "$n" "$I/imp48.wav" "$O/s$1.wav" "$2" "$3"
done
n="delay-stereo delay=-30ms moves both channels by -1440 frames"
run_ok "$n" process -q --json "$I/imp48s.wav" "$O/st.wav" delay-stereo \
  delay=-30ms && shifted "$n" "$I/imp48s.wav" "$O/st.wav" -1440 -480
n="a fraction beyond the range: the plugin keeps it (delay=-2400.5smp)"
run_ok "$n" process -q --json "$I/imp48.wav" "$O/frac.wav" delay \
  delay=-2400.5smp && check "$n" "$PY" -c '
import json, sys
j = json.load(open(sys.argv[1]))
s = j["steps"][0]
assert j["shift_frames"] == -1441 and s["host_shift_frames"] == -1441, j
assert abs(s["controls"]["delay"] - (-959.5 / 48)) < 1e-5, s' "$T/out"
n="--tail with a shift: the input's length plus the tail"
run_ok "$n" process -q --json --tail 0.25 "$I/imp48.wav" "$O/tail.wav" \
  delay delay=300ms && check "$n" "$PY" -c '
import json, sys
j = json.load(open(sys.argv[1]))
assert j["frames"] == 48000 + 12000 and j["shift_frames"] == 9600, j' "$T/out"
n="the summary line says what the host shifted"
run_ok "$n" process "$I/imp48.wav" "$O/sum.wav" delay delay=-50ms &&
  check "$n" grep -qF "shifted 1440 frames earlier by the host" "$T/err"
n="two delays add up, host shifts too"
run_ok "$n" process -q --json "$I/imp48.wav" "$O/two.wav" delay \
  delay=-50ms delay delay=-10ms && shifted "$n" "$I/imp48.wav" \
  "$O/two.wav" -2880 -1440

echo "-- describe delay"
n="describe delay: range, latency, frames and metres at 48 kHz, 20 C"
run_ok "$n" describe delay && for want in "-20 .. 100" \
  "Latency     983 frames at 48000 Hz (20.48 ms)" \
  "-960 .. 4800 frames at 48000 Hz" "-6.864 .. 34.32 m of air at 20 C" \
  "343.2 m/s" "up to 60 s either way" "delay=NUMBER[UNIT]"; do
  check "describe delay shows '$want'" grep -qF -- "$want" "$T/out"
done
n="describe --rate 96000 --air-temp 0 delay"
run_ok "$n" describe --rate 96000 --air-temp 0 delay && for want in \
  "1943 frames at 96000 Hz" "-1920 .. 9600 frames at 96000 Hz" \
  "-6.626 .. 33.13 m of air at 0 C (331.3 m/s)"; do
  check "describe at 96 kHz, 0 C shows '$want'" grep -qF -- "$want" "$T/out"
done
n="describe --json --rate 44100 delay: latency, ranges in frames and metres"
run_ok "$n" describe --json --rate 44100 delay && check "$n" "$PY" -c '
import json, sys
j = json.load(open(sys.argv[1]))
assert j["latency_frames"] == 905 and j["air_temp_c"] == 20, j
assert abs(j["latency_ms"] - 905 / 44.1) < 1e-9, j["latency_ms"]
p = [q for q in j["ports"] if q["symbol"] == "delay"][0]
assert p["unit"] == "ms" and (p["minimum"], p["maximum"]) == (-20, 100), p
assert p["range_frames"] == [-882, 4410], p
assert abs(p["range_m"][0] + 6.8642925) < 1e-6, p' "$T/out"
refuse "describe --air-temp 99" 2 describe --air-temp 99 delay

echo "-- help"
run_vernier process --help
for word in --air-temp smp cm ft "-20 .. +100 ms" "60 s"; do
  check "process --help documents '$word'" grep -qF -- "$word" "$T/out"
done
run_vernier describe --help
check "describe --help documents --air-temp" grep -qF -- --air-temp "$T/out"
