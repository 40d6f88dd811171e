#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# `make demo`: an invented two-path bass recording whose amp path arrives
# inverted and 1.37 ms late; the sum loses its low end until `vernier
# process` flips it and moves it earlier.
set -eu
BUILD=${1:-build}
OUT=$BUILD/demo
PY=/usr/bin/python3 # Debian's, with numpy and scipy
AUDIO="$PY tests/tools/audio.py"
VERNIER=$BUILD/vernier

$PY tests/tools/demo_scene.py "$OUT"
echo "Invented scene: a bass DI and its amp mic 47 cm from the speaker; the mic"
echo "path is wired inverted and arrives 1.37 ms late."
echo "  $OUT/bass-di.wav  $OUT/bass-amp.wav"
echo
echo "\$ vernier process --overwrite $OUT/bass-amp.wav $OUT/bass-amp-flipped.wav polarity invert=on"
"$VERNIER" process --overwrite "$OUT/bass-amp.wav" "$OUT/bass-amp-flipped.wav" \
  polarity invert=on
echo "\$ vernier process --overwrite $OUT/bass-amp.wav $OUT/bass-amp-aligned.wav polarity invert=on delay delay=-47cm"
"$VERNIER" process --overwrite "$OUT/bass-amp.wav" "$OUT/bass-amp-aligned.wav" \
  polarity invert=on delay delay=-47cm
$AUDIO sum "$OUT/bass-di.wav" "$OUT/bass-amp.wav" "$OUT/sum-before.wav"
$AUDIO sum "$OUT/bass-di.wav" "$OUT/bass-amp-flipped.wav" "$OUT/sum-flipped.wav"
$AUDIO sum "$OUT/bass-di.wav" "$OUT/bass-amp-aligned.wav" "$OUT/sum-after.wav"
di=$($AUDIO level "$OUT/bass-di.wav")
before=$($AUDIO level "$OUT/sum-before.wav")
flipped=$($AUDIO level "$OUT/sum-flipped.wav")
after=$($AUDIO level "$OUT/sum-after.wav")
echo
$PY - "$di" "$before" "$flipped" "$after" <<'EOF2'
import sys
di, before, flipped, after = (float(v) for v in sys.argv[1:])
print("  DI alone                     %6.1f dB RMS" % di)
print("  DI + amp, as recorded        %6.1f dB RMS" % before)
print("  DI + amp, flipped            %6.1f dB RMS   (%+.1f dB)" % (flipped, flipped - before))
print("  DI + amp, flipped and moved  %6.1f dB RMS   (%+.1f dB)" % (after, after - before))
EOF2
echo
echo "Listen: $OUT/sum-before.wav, sum-flipped.wav and sum-after.wav (turn the"
echo "monitors down first: the corrected sum is louder)."
