#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# The All-pass against the outside. Each plugin run renders an impulse through
# our host (`vernier process`, the sanitized build), or through lilv's
# lv2apply while our host cannot run it; tests/tools/allpass_reference.py
# then compares the impulse response with
#   - the RBJ Audio EQ Cookbook all-pass (Robert Bristow-Johnson, W3C Working
#     Group Note "Audio EQ Cookbook"), by scipy.signal.freqz: phase at f0/2,
#     f0 and 2 f0 within 0.01 degrees, -180 per stage at f0;
#   - the closed form 2/alpha samples for one stage's group delay at f0
#     (alpha = sin(w0)/(2Q)), and scipy.signal.group_delay, within 0.1 %;
#   - the first-order prototype (w0 - s)/(w0 + s), prewarped bilinear
#     (common practice): -90 degrees per stage at f0.
# Then our host and lv2apply must render noise bit-identically.
. "$(dirname "$0")/../lib.sh"

REF="$PY $SRCDIR/tests/tools/allpass_reference.py"
AUDIO="$PY $SRCDIR/tests/tools/audio.py"
MONO=urn:vernier:allpass-mono
STEREO=urn:vernier:allpass-stereo

# lv2apply_render IN OUT URI "SYMBOL=VALUE ...": lilv's host, plain bundle.
lv2apply_render() {
  rm -f "$2"
  cargs=
  for s in $4; do cargs="$cargs -c ${s%%=*} ${s#*=}"; done
  # shellcheck disable=SC2086
  LV2_PATH="$BUILD/lv2" lv2apply -i "$1" -o "$2" $cargs "$3" \
    >"$T/render.log" 2>&1
}
# host_render IN OUT URI "SYMBOL=VALUE ...": ours, sanitized, asan bundle.
host_render() {
  rm -f "$2" # it never overwrites without --overwrite
  # shellcheck disable=SC2086
  "$VERNIER" process -q "$1" "$2" "$3" $4 >"$T/render.log" 2>&1 </dev/null
}

# lilv's lv2info loads both variants from build/.
for uri in $MONO $STEREO; do
  if LV2_PATH="$BUILD/lv2" lv2info "$uri" >"$T/info.log" 2>&1 &&
    grep -q "Name:.*Vernier All-pass" "$T/info.log"; then
    pass "lv2info loads $uri"
  else
    fail "lv2info loads $uri" "$(head -n 3 "$T/info.log" | tr '\n' ' ')"
  fi
done

# Our host when it runs the plugin and keeps the length, else lv2apply.
$REF impulse "$T/probe.wav" --rate 48000 --f0 1000
if host_render "$T/probe.wav" "$T/probe-out.wav" $MONO "frequency=1000" &&
  $PY -c "import sys; from scipy.io import wavfile as w
sys.exit(len(w.read(sys.argv[1])[1]) != len(w.read(sys.argv[2])[1]))" \
    "$T/probe.wav" "$T/probe-out.wav" 2>/dev/null; then
  RENDER=host_render
  echo "  (rendering through vernier process)"
else
  RENDER=lv2apply_render
  echo "  (vernier process cannot run the all-pass yet: $(head -c 200 \
    "$T/render.log" | tr '\n' ' '); rendering through lv2apply)"
fi

# reference_case RATE F0 Q STAGES ORDER
reference_case() {
  name="f0 $2 Hz q $3 x$4 order $5 at $1 Hz"
  $REF impulse "$T/imp.wav" --rate "$1" --f0 "$2" --q "$3" --stages "$4" \
    --order "$5"
  if ! $RENDER "$T/imp.wav" "$T/ir.wav" $MONO \
    "frequency=$2 q=$3 stages=$4 order=$5"; then
    fail "renders $name" "$(head -n 3 "$T/render.log" | tr '\n' ' ')"
    return
  fi
  # shellcheck disable=SC2086 # $REF is "python3 script"
  check "reference response: $name" \
    $REF check "$T/ir.wav" --f0 "$2" --q "$3" --stages "$4" --order "$5"
}
# second order, one stage: several f0, Q and rates
reference_case 48000 100 0.707 1 2
reference_case 48000 1000 0.707 1 2
reference_case 44100 1000 5 1 2
reference_case 44100 15000 0.707 1 2
reference_case 96000 5000 0.3 1 2
reference_case 96000 2000 10 1 2
reference_case 22050 300 2 1 2
reference_case 192000 12000 0.707 1 2
reference_case 384000 50 1 1 2
# cascades, and the first-order stage
reference_case 48000 500 1 3 2
reference_case 44100 200 0.707 4 2
reference_case 48000 200 0.707 1 1
reference_case 96000 3000 0.707 2 1

# Our host against lilv's lv2apply, a second and independent host: for
# float32 input the output must be bit-identical (the plugin's output does
# not depend on the block size, and lv2apply runs one frame at a time).
$AUDIO noise "$T/mono.wav" --seconds 0.5 --seed 5
$AUDIO noise "$T/stereo.wav" --seconds 0.5 --seed 6 --channels 2
compare_hosts() { # name uri file "settings"
  if ! lv2apply_render "$3" "$T/ref-$1.wav" "$2" "$4"; then
    fail "lv2apply renders $1" "$(head -n 3 "$T/render.log" | tr '\n' ' ')"
  elif [ "$RENDER" != host_render ]; then
    skip "bit-identical to lv2apply: $1" "vernier process cannot run it yet"
  elif ! host_render "$3" "$T/ours-$1.wav" "$2" "$4"; then
    fail "vernier renders $1" "$(head -n 3 "$T/render.log" | tr '\n' ' ')"
  else
    # shellcheck disable=SC2086 # $AUDIO is "python3 script"
    check "bit-identical to lv2apply: $1" \
      $AUDIO same "$T/ref-$1.wav" "$T/ours-$1.wav"
  fi
}
compare_hosts allpass-mono $MONO "$T/mono.wav" "frequency=1234 q=2.5 stages=3"
compare_hosts allpass-mono-first-order $MONO "$T/mono.wav" \
  "frequency=87 stages=4 order=1"
compare_hosts allpass-stereo $STEREO "$T/stereo.wav" \
  "frequency=6000 q=0.3 stages=2"
