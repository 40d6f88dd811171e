#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# Checks against the outside: the LV2 schemas, lilv's own tools as a second
# host, and the arithmetic of summing two paths.
. "$(dirname "$0")/../lib.sh"

AUDIO="$PY $SRCDIR/tests/tools/audio.py"
BUNDLE="$BUILD/vernier.lv2"
OURS="urn:vernier:gain-mono urn:vernier:gain-stereo urn:vernier:polarity-mono
urn:vernier:polarity-stereo urn:vernier:rotate-mono urn:vernier:rotate-stereo
urn:vernier:allpass-mono urn:vernier:allpass-stereo urn:vernier:delay-mono
urn:vernier:delay-stereo"

# Every .ttl of the bundle validates against the LV2 schemas Debian ships in
# /usr/lib/lv2, with sord_validate (the validator of the sord package).
sord_validate /usr/lib/lv2/*/*.ttl "$BUNDLE"/*.ttl >"$T/sord.log" 2>&1
if grep -q 'Found 0 errors' "$T/sord.log"; then
  pass "sord_validate: bundle .ttl files against /usr/lib/lv2 schemas"
else
  fail "sord_validate: bundle .ttl files against /usr/lib/lv2 schemas" \
    "$(grep -i error "$T/sord.log" | head -n 5 | tr '\n' ' ')"
fi

# lilv's lv2info loads every plugin of ours from build/ (and nothing else).
for uri in $OURS; do
  if LV2_PATH="$BUILD/lv2" lv2info "$uri" >"$T/info.log" 2>&1 &&
    grep -q "Name:.*Vernier" "$T/info.log"; then
    pass "lv2info loads $uri"
  else
    fail "lv2info loads $uri" "$(head -n 3 "$T/info.log" | tr '\n' ' ')"
  fi
done
if LV2_PATH="$BUILD/lv2" lv2ls | grep -qv '^urn:vernier:'; then
  fail "lilv sees only build/" "lv2ls lists plugins outside build/lv2"
else
  pass "lilv sees only build/"
fi

# lilv's lv2apply is a second, independent host: for float32 WAV input our
# host's output is bit-identical to its output, plugin by plugin, with
# non-default control values. (rotate.sh, allpass.sh and delay.sh do the
# same for those three, shifting by the Phase Rotator's and the Fine Delay's
# latency, which lv2apply does not compensate.)
$AUDIO noise "$T/mono.wav" --seconds 0.5 --seed 3
$AUDIO noise "$T/stereo.wav" --seconds 0.5 --seed 4 --channels 2
compare_with_lv2apply() { # name uri file "lv2apply -c args" "our settings"
  name=$1 uri=$2 file=$3 cargs=$4 ours=$5
  # shellcheck disable=SC2086
  if ! LV2_PATH="$BUILD/lv2" lv2apply -i "$file" -o "$T/ref-$name.wav" \
    $cargs "$uri" >"$T/apply.log" 2>&1; then
    fail "lv2apply renders $name" "$(head -n 3 "$T/apply.log" | tr '\n' ' ')"
    return
  fi
  # shellcheck disable=SC2086
  if ! LV2_PATH="$BUILD/lv2" "$VERNIER_PLAIN" process -q "$file" \
    "$T/ours-$name.wav" "$uri" $ours >"$T/ours.log" 2>&1; then
    fail "vernier renders $name" "$(head -n 3 "$T/ours.log" | tr '\n' ' ')"
    return
  fi
  check "bit-identical to lv2apply: $name" \
    $AUDIO same "$T/ref-$name.wav" "$T/ours-$name.wav"
}
compare_with_lv2apply gain-mono urn:vernier:gain-mono "$T/mono.wav" \
  "-c gain -0.37 -c trim 4.5" "gain=-0.37 trim=4.5"
compare_with_lv2apply gain-stereo urn:vernier:gain-stereo "$T/stereo.wav" \
  "-c gain 0.61 -c trim -7" "gain=0.61 trim=-7"
compare_with_lv2apply polarity-mono urn:vernier:polarity-mono "$T/mono.wav" \
  "-c invert 1" "invert=1"
compare_with_lv2apply polarity-stereo urn:vernier:polarity-stereo \
  "$T/stereo.wav" "-c invert_left 0 -c invert_right 1" \
  "invert_left=0 invert_right=1"

# Two equal paths summed: in phase they add 6.02 dB (20*log10(2)); one of them
# at bipolar gain -1 cancels them to exact silence (common practice).
LV2_PATH="$BUILD/lv2" "$VERNIER_PLAIN" process -q "$T/mono.wav" \
  "$T/plus.wav" gain gain=1 >/dev/null 2>&1
LV2_PATH="$BUILD/lv2" "$VERNIER_PLAIN" process -q "$T/mono.wav" \
  "$T/minus.wav" gain gain=-1 >/dev/null 2>&1
$AUDIO sum "$T/mono.wav" "$T/plus.wav" "$T/sum-plus.wav" 2>/dev/null
$AUDIO sum "$T/mono.wav" "$T/minus.wav" "$T/sum-minus.wav" 2>/dev/null
l0=$($AUDIO level "$T/mono.wav")
lp=$($AUDIO level "$T/sum-plus.wav" 2>/dev/null)
lm=$($AUDIO level "$T/sum-minus.wav" 2>/dev/null)
if [ "$lm" = "-inf" ]; then
  pass "path + gain(-1) copy is exact silence"
else
  fail "path + gain(-1) copy is exact silence" "level $lm dB"
fi
if $PY -c "import sys; sys.exit(abs(float(\"$lp\") - float(\"$l0\") - 6.0206) > 0.001)" 2>/dev/null; then
  pass "path + gain(+1) copy is +6.02 dB"
else
  fail "path + gain(+1) copy is +6.02 dB" "$l0 dB -> $lp dB"
fi
