#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# Hostile input files for `vernier process` (IN) and `vernier measure` (as
# REF and as TARGET): every one gets a clear refusal with exit 3 (one
# "vernier: " line naming the file, nothing written) or is processed
# correctly, never a crash, a sanitizer report or a hang (every run is under
# `timeout`: a hang shows as exit 124). The files are made byte by byte by
# tests/tools/hostile_wav.py. Cases errors.sh and measure.sh already hold
# (a text file and 0 frames as IN and as TARGET, a folder as IN and as
# TARGET, unreadable IN and TARGET) are not repeated here.
# The file over 4 GiB is tests/host/hostile_big.sh.
# shellcheck disable=SC2034 # AS_NOBODY is read by refuse in common.inc
. "$(dirname "$0")/../lib.sh"
. "$SRCDIR/tests/host/common.inc"
need_host
AS_NOBODY=
HW() { "$PY" "$SRCDIR/tests/tools/hostile_wav.py" "$@"; }

# refuse() runs "$VERNIER": make that a bounded run. -k: a host that
# ignores SIGTERM (a blocked open() restarts after the handler) is killed.
ASAN_HOST=$VERNIER
VERNIER=$T/vernier-bounded
printf '#!/bin/sh\nexec timeout -k 5 30 "%s" "$@"\n' "$ASAN_HOST" >"$VERNIER"
chmod 755 "$VERNIER"
P=0 R=0 X=0 # bad inputs tried as process IN, measure REF, measure TARGET

G=$I/good.wav
HW make good "$G"
# For measure: 2 s, long enough to measure (0.818 s is the minimum at
# 48 kHz), and the uncut original of the m-* files.
MG=$I/m-good.wav
HW make good "$MG" 96000
OUT=$O/out.wav

# bad_all KIND FILE WHAT: FILE refused with exit 3 as IN, REF and TARGET.
bad_all() {
  refuse "$3: process IN" 3 process "$2" "$OUT" gain
  says "$3: process IN: names the file" "$(basename "$2")"
  refuse "$3: measure REF" 3 measure --write "$O" "$2" "$MG"
  says "$3: measure REF: names the file" "$(basename "$2")"
  refuse "$3: measure TARGET" 3 measure --write "$O" "$MG" "$2"
  P=$((P + 1)) R=$((R + 1)) X=$((X + 1))
}

echo "-- not audio, or not whole enough to be (exit 3)"
for k in cut-mid-fmt:"cut mid-header (in fmt)" \
  cut-before-data:"cut in the data chunk's header" \
  riff-only:"a RIFF header and nothing else" \
  huge-chunk:"a chunk claiming 4 GiB in a small file" \
  zero-channels:"a header saying 0 channels" \
  rate-0:"a header saying 0 Hz" \
  bits-0:"a header saying 0 bits a sample" \
  tag-unknown:"an unknown format tag (0x7777)" \
  data-before-fmt:"the data chunk before fmt (libsndfile refuses it)" \
  random-bytes:"random bytes named .wav" \
  empty:"an empty file named .wav"; do
  HW make "${k%%:*}" "$I/${k%%:*}.wav"
  bad_all "${k%%:*}" "$I/${k%%:*}.wav" "${k#*:}"
done
HW make zero-frames "$I/zero-frames.wav"
refuse "0 frames: measure REF" 3 measure "$I/zero-frames.wav" "$MG"
says "0 frames: measure REF: names the file" "zero-frames.wav"
echo "these are words, not samples" >"$I/text.wav"
refuse "text named .wav: measure REF" 3 measure "$I/text.wav" "$MG"
refuse "a folder: measure REF" 3 measure "$I" "$MG"
R=$((R + 3))

echo "-- not a regular file (exit 3, and no hang)"
# A FIFO with nothing writing to it: open() would wait for ever.
mkfifo "$I/fifo.wav"
bad_all fifo "$I/fifo.wav" "a FIFO with no writer"
says "FIFO: says it is not a regular file" "not a regular file"
bad_all devnull /dev/null "a character device (/dev/null)"
rm -f "$I/fifo.wav"

echo "-- damaged but readable: the frames that are there"
# OUT must hold the samples of WANT (made apart: audio.py cannot parse a
# file cut mid-sample), with its rate and channel count.
HW head "$G" "$I/first-2880.wav" 2880 # 60% of 4800, rounded down to a frame
for k in cut-mid-data:first-2880:"cut mid-data (mid-sample)" \
  claims-more-frames:good:"a header claiming 100 times the frames present" \
  300-channels:300-channels:"300 channels" \
  rate-1:rate-1:"a rate of 1 Hz" \
  rate-max:rate-max:"a rate of 2^31-1 Hz" \
  block-align-0:good:"a header saying 0 bytes a frame" \
  pcm24-cut-mid-sample:pcm24-cut-mid-sample:"PCM24 stereo cut mid-sample"; do
  kind=${k%%:*} want=${k#*:} what=${want#*:} want=${want%%:*}
  f=$I/$kind.wav
  [ "$kind" = "$want" ] || [ -e "$I/$want.wav" ] || HW make "$want" "$I/$want.wav"
  HW make "$kind" "$f"
  n="$what: process gives the frames that are there, unchanged"
  run_ok "$n" process -q "$f" "$O/$kind.wav" gain &&
    check "$n" AUDIO same "$O/$kind.wav" "$I/$want.wav"
  rm -f "$O/$kind.wav"
  P=$((P + 1))
done

# measure: each damaged file as TARGET against the whole one and as REF.
# The JSON of the first target: found, at an offset within 0.01 frames of 0.
offset_near_0() {
  check "$1" "$PY" -c '
import json, sys
t = json.load(open(sys.argv[1]))["targets"][0]
assert t["status"] == "found", t["status"]
assert abs(t["offset"]["frames"]) < 0.01, t["offset"]' "$T/out"
}
for k in cut-mid-data claims-more-frames block-align-0; do
  HW make $k "$I/m-$k.wav" 96000
  n="$k (2 s): measure TARGET: found at offset 0"
  run_ok "$n" measure --json "$MG" "$I/m-$k.wav" && offset_near_0 "$n"
  n="$k (2 s): measure REF: found at offset 0"
  run_ok "$n" measure --json "$I/m-$k.wav" "$MG" && offset_near_0 "$n"
  R=$((R + 1)) X=$((X + 1))
done
HW make 300-channels "$I/m-300.wav" 480000 # 1 s of 300 channels, 58 MB
n="300 channels (1 s): measure against itself: found at offset 0"
run_ok "$n" measure --json "$I/m-300.wav" "$I/m-300.wav" && offset_near_0 "$n"
rm -f "$I/m-300.wav"
R=$((R + 1)) X=$((X + 1))
# At 1 Hz, 4800 frames are too few frames; at 2^31-1 Hz, too little time.
for r in rate-1 rate-max; do
  refuse "$r: measure REF and TARGET" 3 measure "$I/$r.wav" "$I/$r.wav"
  says "$r: says it is too short to measure" "too short"
  R=$((R + 1)) X=$((X + 1))
done

echo "-- unreadable REF (as user nobody)"
cp "$MG" "$I/locked.wav"
chmod 000 "$I/locked.wav"
if [ "$(id -u)" -ne 0 ]; then
  refuse "unreadable REF (chmod 000)" 3 measure "$I/locked.wav" "$MG"
  says "unreadable REF: names the file" "locked.wav"
  R=$((R + 1))
elif command -v setpriv >/dev/null &&
  chmod 711 "$T" && chmod 755 "$I" "$O" &&
  setpriv --reuid=65534 --regid=65534 --clear-groups \
    sh -c 'test -x "$1" && test -x "$2" && test -r "$3"' sh "$VERNIER" \
    "$ASAN_HOST" "$SRCDIR/tests/lsan.supp"; then
  AS_NOBODY=1
  refuse "unreadable REF (chmod 000, as user nobody)" 3 measure "$I/locked.wav" "$MG"
  says "unreadable REF: names the file" "locked.wav"
  AS_NOBODY=
  chmod 700 "$T"
  R=$((R + 1))
else
  skip "unreadable REF" "running as root, and user nobody cannot run $ASAN_HOST from here"
fi
rm -f "$I/locked.wav"

echo "  (bad inputs tried: $P as process IN, $R as measure REF, $X as measure TARGET)"
