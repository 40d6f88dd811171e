#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# The Align Strip against the outside: lilv's lv2info and lv2apply as a
# second host. lv2apply runs the plugin one frame at a time and leaves the
# latency in; our host (`vernier process`) runs 512-frame blocks and takes
# it out. The output does not depend on the block size, so once shifted by
# the latency the two agree bit for bit. (sord_validate: tests/outside/lv2.sh.)
. "$(dirname "$0")/../lib.sh"

REF="$PY $SRCDIR/tests/tools/rotate_reference.py"
AUDIO="$PY $SRCDIR/tests/tools/audio.py"
MONO=urn:vernier:strip-mono
STEREO=urn:vernier:strip-stereo

for case in "$MONO 9" "$STEREO 10"; do
  set -- $case
  if LV2_PATH="$LV2_PLAIN" lv2info "$1" >"$T/info.log" 2>&1 &&
    grep -q "Has latency:.*yes, reported by port $2" "$T/info.log"; then
    pass "lv2info loads $1 and sees its latency port ($2)"
  else
    fail "lv2info loads $1 and sees its latency port ($2)" \
      "$(head -n 3 "$T/info.log" | tr '\n' ' ')"
  fi
done

# apply URI IN OUT [SYMBOL VALUE]...: lv2apply on the plain bundle.
apply() {
  uri=$1 in=$2 out=$3
  shift 3
  controls=
  while [ $# -ge 2 ]; do
    controls="$controls -c $1 $2"
    shift 2
  done
  # shellcheck disable=SC2086
  LV2_PATH="$LV2_PLAIN" lv2apply -i "$in" -o "$out" $controls "$uri" \
    >"$T/apply.log" 2>&1
}

# The latency at 48 kHz, from outside: at the defaults the strip is a pure
# delay, so an impulse comes out at frame L (2518: 983 + 1535).
$REF impulse "$T/impulse.wav" --seconds 0.2
if apply $MONO "$T/impulse.wav" "$T/impulse-out.wav"; then
  LATENCY=$($REF peak "$T/impulse-out.wav")
  if [ "$LATENCY" = 2518 ]; then
    pass "lv2apply: the defaults delay an impulse by $LATENCY frames"
  else
    fail "lv2apply: the defaults delay an impulse by 2518 frames" "$LATENCY"
  fi
else
  fail "lv2apply renders $MONO" "$(head -n 3 "$T/apply.log" | tr '\n' ' ')"
  exit 0
fi

if ! LV2_PATH="$LV2_PLAIN" "$VERNIER_PLAIN" describe strip >"$T/describe.log" 2>&1 ||
  ! grep -q "Latency *$LATENCY frames at 48000 Hz" "$T/describe.log"; then
  skip "our host against lv2apply" "vernier describe strip: host not usable"
  exit 0
fi
pass "vernier describe strip reports the latency lv2apply sees"

$REF bandnoise "$T/noise.wav" --seconds 2 --seed 21
$REF bandnoise "$T/stereo.wav" --seconds 2 --seed 22 --channels 2

# Our host at the defaults: the input itself, bit for bit, once aligned.
if LV2_PATH="$LV2_PLAIN" "$VERNIER_PLAIN" process -q "$T/noise.wav" \
  "$T/d0.wav" strip >"$T/ours.log" 2>&1; then
  check "vernier process strip at the defaults is the input bit for bit" \
    $AUDIO same "$T/noise.wav" "$T/d0.wav"
else
  fail "vernier process strip" "$(head -n 3 "$T/ours.log" | tr '\n' ' ')"
fi

# Every section on, and the stereo variant with its two toggles.
MONO_SET="invert 1 delay -1.234 angle 37 frequency 180 q 0.9 stages 2 order 2 gain 0.8 trim -1.5"
STEREO_SET="invert_left 0 invert_right 1 delay 3.21 angle -90 frequency 900 q 2 stages 3 order 1 gain -0.7 trim 2"
for case in "mono $MONO strip" "stereo $STEREO strip-stereo"; do
  set -- $case
  file=$T/noise.wav settings=$MONO_SET
  if [ "$1" = stereo ]; then
    file=$T/stereo.wav settings=$STEREO_SET
  fi
  # vernier process takes symbol=value
  steps=$(echo "$settings" | awk '{for (i = 1; i < NF; i += 2) printf "%s=%s ", $i, $(i + 1)}')
  # shellcheck disable=SC2086
  if apply "$2" "$file" "$T/apply-$1.wav" $settings &&
    LV2_PATH="$LV2_PLAIN" "$VERNIER_PLAIN" process -q "$file" \
      "$T/ours-$1.wav" "$3" $steps >"$T/ours.log" 2>&1; then
    check "bit-identical to lv2apply, shifted by $LATENCY frames: $1, every section on" \
      $REF same-shifted "$T/apply-$1.wav" "$T/ours-$1.wav" "$LATENCY"
  else
    fail "render $1 with both hosts" "$(head -n 3 "$T/apply.log" "$T/ours.log" | tr '\n' ' ')"
  fi
done
