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
$PY - "$di" "$before" "$after" <<'EOF2'
import sys
di, before, after = (float(v) for v in sys.argv[1:])
print("  DI alone            %6.1f dB RMS" % di)
print("  DI + amp, as is     %6.1f dB RMS" % before)
print("  DI + amp, flipped   %6.1f dB RMS   (%+.1f dB)" % (after, after - before))
EOF2
echo
echo "Listen: $OUT/sum-before.wav and $OUT/sum-after.wav (turn the monitors"
echo "down first: the corrected sum is louder)."
