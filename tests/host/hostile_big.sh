#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# A file over 4 GiB (RF64, float32 stereo, 537919488 frames: 2^29 + 2^20,
# 4.3 GB, past every 32-bit byte count): `vernier process` streams it whole,
# and `vernier measure` reads it in bounded memory. The input is sparse
# (tests/tools/hostile_wav.py big: a header, islands of noise and a marked
# tail, the rest holes), so it takes ~17 MB of disk; it is never committed.
# The output is real: 4.3 GB, written to a tmpfs this suite mounts or,
# where mounting fails, to $T when the disk has room.
# These runs use the plain host ($VERNIER_PLAIN): under ASan the 4.3 GB
# pass takes minutes, and the sanitized host reads the same code on the
# small hostile files (hostile_files.sh).
. "$(dirname "$0")/../lib.sh"
. "$SRCDIR/tests/host/common.inc"
need_host
export LV2_PATH="$LV2_PLAIN"
HW() { "$PY" "$SRCDIR/tests/tools/hostile_wav.py" "$@"; }
FRAMES=537919488
# peak_kb FILE: the peak RSS /usr/bin/time wrote there, in KiB.
peak_kb() { tail -n 1 "$1"; }
free_kb() { df -Pk "$1" | awk 'NR == 2 { print $4 }'; }
avail_mem_kb() { awk '/^MemAvailable:/ { print $2 }' /proc/meminfo; }

# Both files on a tmpfs: its holes read as zeros at memory speed (a fresh
# sparse file on the disk reads at a fifth of that here), and the 4.3 GB
# output needs no disk sync. Else on the disk, where it has room.
D=$T/big.d
mkdir -p "$D"
trap 'umount "$D" 2>/dev/null; rm -rf "$T"' EXIT
if [ "$(avail_mem_kb)" -gt $((8 * 1024 * 1024)) ] &&
  mount -t tmpfs -o size=4400m vernier-test "$D" 2>/dev/null; then
  echo "  (on a 4400 MB tmpfs)"
elif [ "$(free_kb "$T")" -lt $((6 * 1024 * 1024)) ]; then
  skip "4 GiB RF64" "no tmpfs (not root, or under 8 GB of free memory) and under 6 GB free under $T"
  exit 0
fi
BIG=$D/big.rf64
HW big "$BIG" $FRAMES
check "the big input is sparse (under 64 MB used)" \
  test "$(du -k "$BIG" | cut -f1)" -lt 65536
check "the big input's header says $FRAMES frames (> 4 GiB of samples)" \
  test "$(HW frames "$BIG")" = $FRAMES

echo "-- measure: memory independent of the length"
# REF: the first 65536 frames (1.4 s) as a plain WAV, so the run reads all
# 4.3 GB of TARGET (the clipping count sees every frame) but correlates
# little. The same REF against itself is the small run to compare with.
HW head "$BIG" "$I/head.wav" 65536
if [ -x /usr/bin/time ]; then
  TIMED() {
    t_out=$1
    shift
    /usr/bin/time -f %M -o "$t_out" "$@"
  }
else
  TIMED() { # the wrapper's own getrusage: RUSAGE_CHILDREN's ru_maxrss
    t_out=$1
    shift
    "$PY" -c 'import resource, subprocess, sys
rc = subprocess.call(sys.argv[2:])
open(sys.argv[1], "w").write("%d\n" % resource.getrusage(
    resource.RUSAGE_CHILDREN).ru_maxrss)
sys.exit(rc)' "$t_out" "$@"
  }
fi
TIMED "$T/small.kb" timeout 60 "$VERNIER_PLAIN" measure --json "$I/head.wav" "$I/head.wav" \
  >"$T/small.json" 2>"$T/err"
rc_small=$?
TIMED "$T/big.kb" timeout 120 "$VERNIER_PLAIN" measure --json "$I/head.wav" "$BIG" \
  >"$T/big.json" 2>"$T/err"
rc_big=$?
check "measure, 1.4 s REF against the 4 GiB TARGET: exit 0 (found)" test $rc_big -eq 0
check "measure, 1.4 s against itself: exit 0" test $rc_small -eq 0
# The tail's last frame is (+1, -1): two clipped samples only a read to the
# very end can count; the frame count is the header's.
check "measure read the 4 GiB TARGET to its end (frames, 2 clipped samples)" \
  "$PY" -c '
import json, sys
t = json.load(open(sys.argv[1]))["targets"][0]
assert t["frames"] == int(sys.argv[2]), t["frames"]
assert t["clipped_samples"] == 2, t["clipped_samples"]
assert t["status"] == "found" and abs(t["offset"]["frames"]) < 0.01, t' "$T/big.json" $FRAMES
small_kb=$(peak_kb "$T/small.kb")
big_kb=$(peak_kb "$T/big.kb")
# Bounded: a buffer that grew with the length would be hundreds of MB at
# 4.3 GB (even 1/100 of it is 43 MB); allow 8 MB for what the page cache
# and libsndfile's RF64 reader add.
check "measure's peak RSS: 4 GiB TARGET ${big_kb} KiB, 1.4 s TARGET ${small_kb} KiB (within 8 MB)" \
  test "$big_kb" -le $((small_kb + 8192))
echo "  peak RSS of measure: ${small_kb} KiB (1.4 s) vs ${big_kb} KiB (4.3 GB, 3.1 hours)"

echo "-- process: the whole file streamed"
TIMED "$T/process.kb" timeout 300 "$VERNIER_PLAIN" process -q "$BIG" "$D/out.rf64" \
  gain-stereo gain=-1 >"$T/out" 2>"$T/err"
rc=$?
check "process of the 4 GiB RF64 through gain=-1: exit 0" test $rc -eq 0
check "process: the output's header says $FRAMES frames" \
  test "$(HW frames "$D/out.rf64" 2>&1)" = $FRAMES
# The last 1024 frames: the tail ramp, negated; first and last shown.
HW tail "$BIG" 1024 >"$T/in.tail"
HW tail "$D/out.rf64" 1024 >"$T/out.tail" 2>&1
check "process: the last 1024 frames are the input's times -1 (last: -1 +1)" "$PY" -c '
import sys
a = [list(map(float, l.split())) for l in open(sys.argv[1])]
b = [list(map(float, l.split())) for l in open(sys.argv[2])]
assert len(a) == len(b) == 1024, (len(a), len(b))
assert all(y == [-v for v in x] for x, y in zip(a, b)), "differ"
assert b[-1] == [-1.0, 1.0] and b[0] == [-1 / 2048, 1 / 2048], (b[0], b[-1])' \
  "$T/in.tail" "$T/out.tail"
echo "  peak RSS of process: $(peak_kb "$T/process.kb") KiB"
if [ -z "$(find "$D" -name '.*' | head -n 1)" ]; then
  pass "process: no temporary file left beside the output"
else
  fail "process: no temporary file left beside the output" "$(ls -A "$D")"
fi
rm -f "$D/out.rf64" "$BIG"
