#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# `vernier process` does what the chain says (spec/cli.md, issue 2): exact
# gains and inversions, presets, mono plugins per channel, latency
# compensation, --tail, and output that does not depend on --block.
# Every input is generated noise (float32 WAV unless said otherwise); the
# expected output is computed by tests/host/audio.py from the input alone.
. "$(dirname "$0")/../lib.sh"
. "$SRCDIR/tests/host/common.inc"
need_host

# 48013 frames: one second at 48 kHz and a few frames more, so no block size
# below divides it and the last run() is a short one.
M=$I/mono.wav
S=$I/stereo.wav
AUDIO write "$M" --frames 48013 --seed 11
AUDIO write "$S" --frames 48013 --channels 2 --seed 12
AUDIO write "$I/three.wav" --frames 4801 --channels 3 --seed 13
LAT=urn:vernier-test:latency
ECHO=urn:vernier-test:echo

echo "-- gains and polarity"
n="gain at its defaults passes a float file bit for bit"
run_ok "$n" process -q "$M" "$O/unity.wav" gain &&
  check "$n" AUDIO same "$O/unity.wav" "$M"

n="gain gain=-1: output is exactly -input"
run_ok "$n" process -q "$M" "$O/neg.wav" gain gain=-1 &&
  check "$n" AUDIO expect "$O/neg.wav" "$M" --scale -1

n="urn:vernier:gain-mono by URI is the same plugin as gain"
run_ok "$n" process -q "$M" "$O/neg-uri.wav" urn:vernier:gain-mono gain=-1 &&
  check "$n" AUDIO same "$O/neg-uri.wav" "$O/neg.wav"
n="gain-mono is the same plugin as gain"
run_ok "$n" process -q "$M" "$O/neg-name.wav" gain-mono gain=-1 &&
  check "$n" AUDIO same "$O/neg-name.wav" "$O/neg.wav"

# 0.5 * 10^(6.0206/20) = 1.00000001; the host and plugin work in float32,
# whose rounding of the coefficient and of each product is below 1.2e-7
# relative, so 2e-7 absolute on samples within +-0.9 is loose enough.
n="gain gain=0.5 trim=6.0206 gives the input back within 2e-7"
run_ok "$n" process -q "$M" "$O/half-up.wav" gain gain=0.5 trim=6.0206 &&
  check "$n" AUDIO expect "$O/half-up.wav" "$M" --tol 2e-7

n="gain trim=-24 (range end) scales by 10^(-24/20) within 1e-7"
run_ok "$n" process -q "$M" "$O/trim-24.wav" gain trim=-24 &&
  check "$n" AUDIO expect "$O/trim-24.wav" "$M" --scale 0.06309573444801933 --tol 1e-7

for v in on true yes 1; do
  n="polarity invert=$v: output is exactly -input"
  run_ok "$n" process -q "$M" "$O/pol-$v.wav" polarity invert=$v &&
    check "$n" AUDIO expect "$O/pol-$v.wav" "$M" --scale -1
done
for v in off false no 0; do
  n="polarity invert=$v: output is exactly the input"
  run_ok "$n" process -q "$M" "$O/pol-$v.wav" polarity invert=$v &&
    check "$n" AUDIO expect "$O/pol-$v.wav" "$M"
done

n="a chain: polarity invert=on then gain gain=-1 gives the input exactly"
run_ok "$n" process -q "$M" "$O/chain2.wav" polarity invert=on gain gain=-1 &&
  check "$n" AUDIO expect "$O/chain2.wav" "$M"

echo "-- channels"
n="mono gain on a stereo file: gain=-1 negates both channels exactly"
run_ok "$n" process -q "$S" "$O/st-neg.wav" gain gain=-1 &&
  check "$n" AUDIO expect "$O/st-neg.wav" "$S" --scale -1

n="mono gain on a 3-channel file: one instance per channel, exactly -input"
run_ok "$n" process -q "$I/three.wav" "$O/three-neg.wav" gain gain=-1 &&
  check "$n" AUDIO expect "$O/three-neg.wav" "$I/three.wav" --scale -1

n="gain-stereo and gain (mono per channel) give bit-identical output"
run_ok "$n" process -q "$S" "$O/st-stereo.wav" gain-stereo gain=-0.7 trim=-3 &&
  run_ok "$n" process -q "$S" "$O/st-mono.wav" gain gain=-0.7 trim=-3 &&
  check "$n" AUDIO same "$O/st-stereo.wav" "$O/st-mono.wav"

# -0.7 * 10^(-3/20) = -0.4955620491; float32 rounding as above.
n="gain-stereo gain=-0.7 trim=-3 scales by -0.7*10^(-3/20) within 2e-7"
[ -f "$O/st-stereo.wav" ] &&
  check "$n" AUDIO expect "$O/st-stereo.wav" "$S" --scale -0.4955620491 --tol 2e-7

n="polarity-stereo invert_right=1 negates the right channel only"
run_ok "$n" process -q "$S" "$O/st-right.wav" polarity-stereo invert_right=1 &&
  check "$n" AUDIO expect "$O/st-right.wav" "$S" --scale 1,-1

echo "-- presets"
n="preset by label: gain @Inverted gives exactly -input"
run_ok "$n" process -q "$M" "$O/p-label.wav" gain @Inverted &&
  check "$n" AUDIO expect "$O/p-label.wav" "$M" --scale -1

n="preset by URI: gain @urn:vernier:preset:gain-mono-inverted gives exactly -input"
run_ok "$n" process -q "$M" "$O/p-uri.wav" gain @urn:vernier:preset:gain-mono-inverted &&
  check "$n" AUDIO expect "$O/p-uri.wav" "$M" --scale -1

n="preset on a plugin given by URI: urn:vernier:gain-mono @Inverted"
run_ok "$n" process -q "$M" "$O/p-onuri.wav" urn:vernier:gain-mono @Inverted &&
  check "$n" AUDIO expect "$O/p-onuri.wav" "$M" --scale -1

n="preset label with spaces and a comma: gain '@Half, 6 dB down' gives 0.5 * input"
run_ok "$n" process -q "$M" "$O/p-half.wav" gain "@Half, 6 dB down" &&
  check "$n" AUDIO expect "$O/p-half.wav" "$M" --scale 0.5

n="a SYMBOL=VALUE after a preset overrides it: @Inverted gain=0.5 gives 0.5 * input"
run_ok "$n" process -q "$M" "$O/p-over.wav" gain @Inverted gain=0.5 &&
  check "$n" AUDIO expect "$O/p-over.wav" "$M" --scale 0.5

n="the preset is applied first whatever the order: gain=0.5 @Inverted gives 0.5 * input"
run_ok "$n" process -q "$M" "$O/p-first.wav" gain gain=0.5 @Inverted &&
  check "$n" AUDIO expect "$O/p-first.wav" "$M" --scale 0.5

n="the stereo plugin's own preset: gain-stereo @Inverted negates both channels"
run_ok "$n" process -q "$S" "$O/p-stereo.wav" gain-stereo @Inverted &&
  check "$n" AUDIO expect "$O/p-stereo.wav" "$S" --scale -1

echo "-- latency compensation"
n="latency plugin (reports 100 frames): output aligned with the input, same length"
run_ok "$n" process -q "$M" "$O/lat1.wav" $LAT &&
  check "$n" AUDIO same "$O/lat1.wav" "$M"

n="two latency plugins (200 frames): output aligned, same length"
run_ok "$n" process -q "$M" "$O/lat2.wav" $LAT $LAT &&
  check "$n" AUDIO same "$O/lat2.wav" "$M"

n="gain gain=-1, latency, gain gain=-1, latency, gain: the input exactly"
run_ok "$n" process -q "$M" "$O/lat-gain.wav" gain gain=-1 $LAT gain gain=-1 $LAT gain &&
  check "$n" AUDIO same "$O/lat-gain.wav" "$M"

# One instance per channel, each 100 frames late: the step is 100 frames
# late, not 200.
n="latency plugin on a stereo file (two instances): aligned, same length"
run_ok "$n" process -q "$S" "$O/lat-st.wav" $LAT &&
  check "$n" AUDIO same "$O/lat-st.wav" "$S"

n="--json latency_frames is the chain's total (200), 100 for each step"
run_ok "$n" process -q --json "$M" "$O/lat-json.wav" $LAT gain $LAT &&
  check "$n" "$PY" -c '
import json, sys
j = json.load(open(sys.argv[1]))
assert j["latency_frames"] == 200, j["latency_frames"]
assert [s["latency_frames"] for s in j["steps"]] == [100, 0, 100], j["steps"]
' "$T/out"

echo "-- tail"
# 0.5 s at 48 kHz = 24000 frames. The latency plugin is a pure delay: after
# compensation its tail is silence.
n="--tail 0.5 with the latency plugin: input + 24000 frames, aligned, tail silent"
run_ok "$n" process -q --tail 0.5 "$M" "$O/tail-lat.wav" $LAT &&
  check "$n" AUDIO expect "$O/tail-lat.wav" "$M" --tail-frames 24000

# The echo plugin rings on for `frames` after the input ends: with latency
# around it, the tail must hold 0.5 * the last 300 input frames, at the
# place the model puts them (no shift by the 200 frames of latency).
n="--tail 0.5 keeps the ring-out: latency, echo frames=300, latency"
run_ok "$n" process -q --tail 0.5 "$M" "$O/tail-echo.wav" $LAT $ECHO frames=300 $LAT &&
  check "$n" AUDIO expect "$O/tail-echo.wav" "$M" --tail-frames 24000 --echo 300 --tol 2e-7

n="without --tail the ring-out is cut: echo output has the input's length"
run_ok "$n" process -q "$M" "$O/notail-echo.wav" $ECHO &&
  check "$n" AUDIO expect "$O/notail-echo.wav" "$M" --echo 1000 --tol 2e-7

AUDIO write "$I/m441.wav" --frames 4410 --rate 44100 --seed 14
n="--tail 0.0001 at 44.1 kHz adds round(4.41) = 4 frames"
run_ok "$n" process -q --tail 0.0001 "$I/m441.wav" "$O/t4.wav" $LAT &&
  check "$n" AUDIO expect "$O/t4.wav" "$I/m441.wav" --tail-frames 4
n="--tail 0.0002 at 44.1 kHz adds round(8.82) = 9 frames"
run_ok "$n" process -q --tail 0.0002 "$I/m441.wav" "$O/t9.wav" $LAT &&
  check "$n" AUDIO expect "$O/t9.wav" "$I/m441.wav" --tail-frames 9
n="--tail 0 keeps the input's length"
run_ok "$n" process -q --tail 0 "$M" "$O/t0.wav" $ECHO &&
  check "$n" AUDIO expect "$O/t0.wav" "$M" --echo 1000 --tol 2e-7

echo "-- block size"
# Controls are fixed for a run; the output must not depend on how the host
# cuts the file into run() calls (DESIGN.md: block-size independence).
CHAIN="polarity invert=on gain gain=-0.5 trim=3 $LAT $ECHO frames=77 gain-stereo gain=0.9"
for b in 1 7 512 4096 65536; do
  # shellcheck disable=SC2086 # CHAIN is a list of words
  run_ok "--block $b runs" process -q --block $b "$S" "$O/block-$b.wav" $CHAIN
done
for b in 1 7 4096 65536; do
  n="--block $b and --block 512 give bit-identical output"
  [ -f "$O/block-$b.wav" ] && [ -f "$O/block-512.wav" ] &&
    check "$n" AUDIO same "$O/block-$b.wav" "$O/block-512.wav"
done
# -1 * -0.5 * 10^(3/20) * 0.9 = 0.6356418951; five float32 operations.
n="the block-size chain computes -1 * -0.5 * 10^(3/20) * 0.9 * echo(77) within 5e-7"
[ -f "$O/block-512.wav" ] &&
  check "$n" AUDIO expect "$O/block-512.wav" "$S" --scale 0.6356418951 --echo 77 --tol 5e-7
n="--block 512 (the default) is what no --block gives"
# shellcheck disable=SC2086
run_ok "$n" process -q "$S" "$O/block-default.wav" $CHAIN &&
  check "$n" AUDIO same "$O/block-default.wav" "$O/block-512.wav"

echo "-- what the host gives a plugin"
# urn:vernier-test:host-features passes its input through only when it got
# urid:map, options:options (maxBlockLength = nominalBlockLength = --block,
# minBlockLength 0, param:sampleRate = the file's rate), boundedBlockLength,
# and no run() longer than maxBlockLength; it logs why not, as a warning.
HF=urn:vernier-test:host-features
AUDIO write "$I/st441.wav" --frames 44101 --rate 44100 --channels 2 --seed 15
for b in 1 7 4096; do
  n="host features and block bounds at --block $b (44.1 kHz stereo): input passes"
  run_ok "$n" process -q --block $b "$I/st441.wav" "$O/hf-$b.wav" $HF gain &&
    check "$n" AUDIO same "$O/hf-$b.wav" "$I/st441.wav" &&
    check "$n: no failed check logged" sh -c '! grep -F "host-features: FAIL" "$1"' sh "$T/err"
done
n="a plugin's log:log warning reaches stderr, also with -q"
[ -f "$O/hf-4096.wav" ] && check "$n" grep -qF "host-features: log:log works" "$T/err"

echo "-- what the runs left"
n="no temporary file left in OUT's folder after the successful runs above"
left=$(find "$O" -name '.*' -type f | head -n 3)
if [ -z "$left" ]; then pass "$n"; else fail "$n" "found $left"; fi
