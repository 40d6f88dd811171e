#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# `vernier measure` against our own plugins: a target made from REF by
# `vernier process` with a known rotation, delay or polarity must measure
# as exactly that (so measure's sign conventions are the plugins'), and the
# correction measure prints must undo it. The accuracy against the outside
# (scipy, many scenes, noise) is tests/outside/measure.sh.
. "$(dirname "$0")/../lib.sh"
. "$(dirname "$0")/common.inc"
need_host

# Band-limited noise, 40 Hz .. 8 kHz, 6 s of float at 48 kHz.
"$PY" - "$I/ref.wav" <<'EOF'
import sys
import numpy as np
from scipy.io import wavfile
from scipy.signal import butter, sosfilt
rate = 48000
x = np.random.default_rng(11).standard_normal(6 * rate + 4800)
x = sosfilt(butter(4, [40, 8000], btype="band", fs=rate, output="sos"), x)
wavfile.write(sys.argv[1], rate, (0.25 * x[4800:] / np.std(x)).astype(np.float32))
EOF

# field JSON KEY...: one value of measure's JSON for the first target.
field() {
  "$PY" - "$@" <<'EOF'
import json, sys
v = json.load(open(sys.argv[1]))["targets"][0]
for key in sys.argv[2:]:
    v = v[key]
print(" ".join(v) if isinstance(v, list) else v)
EOF
}

# near NAME GOT WANT TOL [MOD]: |GOT - WANT| <= TOL (angles: MOD 360).
near() {
  if "$PY" -c "
import sys
got, want, tol = float('$2'), float('$3'), float('$4')
d = got - want
if '${5:-}':
    d = (d + 180.0) % 360.0 - 180.0
sys.exit(0 if abs(d) <= tol else 1)"; then
    pass "$1"
  else
    fail "$1" "got $2, want $3 +- $4"
  fi
}

# measure_case NAME TARGET: measure REF against TARGET into $T/NAME.json.
measure_case() {
  run_vernier measure --json "$I/ref.wav" "$2"
  cp "$T/out" "$T/$1.json"
  expect_rc "$1: measured" 0
}

# Tolerances: the issue's 0.05 frames and 3 degrees; with 6 s of clean
# noise the errors are far smaller, so these only catch a wrong sign or a
# wrong convention, which would be off by the whole value.
case_of() {
  name=$1 want_offset=$2 want_theta=$3
  shift 3
  if run_ok "$name: made by process $*" process "$I/ref.wav" \
    "$O/$name.wav" "$@"; then
    measure_case "$name" "$O/$name.wav"
    near "$name: offset" "$(field "$T/$name.json" offset frames)" \
      "$want_offset" 0.05
    near "$name: theta" "$(field "$T/$name.json" theta_deg)" "$want_theta" \
      3 mod
  fi
}

# The Phase Rotator's positive angle advances (Re{hilbert(x) e^{j t}}):
# measure reports the target's angle relative to REF in the same sense.
case_of rotate-37 0 37 rotate angle=37
case_of rotate-minus-120 0 -120 rotate angle=-120
# A target delayed by d arrives late: offset +d.
case_of delay-12.3 12.3 0 delay delay=12.3smp
case_of delay-minus-250.6 -250.6 0 delay delay=-250.6smp
case_of inverted 0 180 polarity invert=on
case_of all-three -7.25 120 polarity invert=on delay delay=-7.25smp \
  rotate angle=-60

if [ -f "$T/all-three.json" ]; then
  invert=$(field "$T/all-three.json" correction invert)
  angle=$(field "$T/all-three.json" correction angle_deg)
  if [ "$invert" = True ]; then
    pass "all-three: invert advised (|theta| > 90)"
  else
    fail "all-three: invert advised (|theta| > 90)" "invert is $invert"
  fi
  # theta 120: invert (180) and turn by -(120 - 180) = 60.
  near "all-three: angle after the invert" "$angle" 60 3 mod
  # The correction's own step words undo the three.
  # shellcheck disable=SC2046
  if run_ok "all-three: its correction applied" process \
    "$O/all-three.wav" "$O/undone.wav" $(field "$T/all-three.json" \
      process_step); then
    measure_case undone "$O/undone.wav"
    near "undone: offset" "$(field "$T/undone.json" offset frames)" 0 0.05
    near "undone: theta" "$(field "$T/undone.json" theta_deg)" 0 3 mod
  fi
fi

# --shape finds the All-pass plugin's own setting: REF through the
# all-pass at 150 Hz, q 0.8, and TARGET the plain noise 30.5 frames late.
# (The fit puts the all-pass on TARGET, so the path with the extra phase
# is REF.)
if run_ok "shape: REF through allpass 150 Hz q 0.8" process "$I/ref.wav" \
  "$O/ref-ap.wav" allpass frequency=150 q=0.8 &&
  run_ok "shape: TARGET 30.5 frames late" process "$I/ref.wav" \
    "$O/late.wav" delay delay=30.5smp; then
  run_vernier measure --json --shape "$O/ref-ap.wav" "$O/late.wav"
  cp "$T/out" "$T/shape.json"
  expect_rc "shape: measured" 0
  near "shape: frequency" \
    "$(field "$T/shape.json" correction allpass frequency_hz)" 150 3
  near "shape: q" "$(field "$T/shape.json" correction allpass q)" 0.8 0.05
  near "shape: offset" "$(field "$T/shape.json" correction delay_frames)" \
    -30.5 0.05
  near "shape: angle" "$(field "$T/shape.json" correction angle_deg)" 0 3 mod
fi
