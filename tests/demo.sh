#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# `make demo`: an invented two-path bass recording whose amp path arrives
# inverted; the sum loses its low end until `vernier process` flips it.
set -eu
BUILD=${1:-build}
OUT=$BUILD/demo
PY=/usr/bin/python3 # Debian's, with numpy and scipy
AUDIO="$PY tests/tools/audio.py"
VERNIER=$BUILD/vernier

$PY tests/tools/demo_scene.py "$OUT"
echo "Invented scene: a bass DI and its amp mic, the mic path wired inverted."
echo "  $OUT/bass-di.wav  $OUT/bass-amp.wav"
echo
echo "\$ vernier process --overwrite $OUT/bass-amp.wav $OUT/bass-amp-fixed.wav polarity invert=on"
"$VERNIER" process --overwrite "$OUT/bass-amp.wav" "$OUT/bass-amp-fixed.wav" \
  polarity invert=on
$AUDIO sum "$OUT/bass-di.wav" "$OUT/bass-amp.wav" "$OUT/sum-before.wav"
$AUDIO sum "$OUT/bass-di.wav" "$OUT/bass-amp-fixed.wav" "$OUT/sum-after.wav"
di=$($AUDIO level "$OUT/bass-di.wav")
before=$($AUDIO level "$OUT/sum-before.wav")
after=$($AUDIO level "$OUT/sum-after.wav")
echo
printf '  DI alone           %7s dB RMS\n' "$di"
printf '  DI + amp, as is    %7s dB RMS\n' "$before"
printf '  DI + amp, flipped  %7s dB RMS  (%s dB more)\n' "$after" \
  "$($PY -c "print('%+.1f' % ($after - $before))")"
echo
echo "Listen: $OUT/sum-before.wav and $OUT/sum-after.wav (turn the monitors"
echo "down first: the corrected sum is louder)."
