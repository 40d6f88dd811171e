#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# Faults while `vernier process` and `vernier measure --write` write: a
# read-only filesystem, a full one, a full standard output, an OUT that is
# a FIFO, SIGTERM into measure --write, SIGKILL into both. What must hold:
# exit 4 (output) or the signal's status; never a partial or corrupt file
# under the output name; no temporary file left after a failure or
# INT/TERM; after SIGKILL, a stale temporary may remain, and the next run
# ignores it and succeeds; an existing OUT is untouched unless a run with
# --overwrite succeeds. (interrupt.sh holds SIGINT and SIGTERM into process,
# measure_write.sh SIGINT into measure --write; errors.sh and measure.sh a
# missing folder and a folder nobody may write in.)
# shellcheck disable=SC2034 # RC is read by expect_rc in tests/lib.sh
. "$(dirname "$0")/../lib.sh"
. "$SRCDIR/tests/host/common.inc"
need_host
FAULTS=0 # faults injected

ASAN_HOST=$VERNIER
VERNIER=$T/vernier-bounded # refuse() and run_vernier() run "$VERNIER"
printf '#!/bin/sh\nexec timeout -k 5 60 "%s" "$@"\n' "$ASAN_HOST" >"$VERNIER"
chmod 755 "$VERNIER"

# 10 s of stereo float (3.8 MB): more than the small tmpfs holds.
IN=$I/in.wav
AUDIO write "$IN" --channels 2 --frames 480000 --seed 61
SMALL=$I/small.wav
AUDIO write "$SMALL" --frames 4800 --seed 62
"$PY" "$SRCDIR/tests/tools/measure_scene.py" pair "$I/ref.wav" "$I/amp.wav" \
  --seconds 3 --offset 12.25 --seed 63

# ------------------------------------------------------------ tmpfs ----
M=$T/mnt
mkdir -p "$M"
mounted=0
trap 'umount "$M" 2>/dev/null; rm -rf "$T"' EXIT
if mount -t tmpfs -o size=1m vernier-test "$M" 2>/dev/null; then
  mounted=1
else
  skip "read-only and full filesystems" "mount -t tmpfs fails here (not root?)"
fi

if [ $mounted -eq 1 ]; then
  echo "-- a full filesystem (a 1 MB tmpfs; exit 4, nothing left)"
  # The folders refuse() watches: $I as it is, $O is the full tmpfs.
  O=$M
  refuse "process: disk full (ENOSPC mid-write)" 4 process "$IN" "$M/out.wav" gain
  says "disk full: says no space" "No space left"
  AUDIO write "$M/old.wav" --frames 4800 --seed 64
  refuse "process --overwrite, disk full: the old OUT untouched" 4 \
    process --overwrite "$IN" "$M/old.wav" gain gain=-1
  refuse "process --format flac:pcm24, disk full" 4 process --format flac:pcm24 "$IN" "$M/out.flac" gain
  rm -f "$M/old.wav"
  # measure --write: the corrected file is 3 s of float (576 kB); with the
  # tmpfs nearly full of a filler, it does not fit.
  dd if=/dev/zero of="$M/filler" bs=1k count=700 2>/dev/null
  refuse "measure --write, disk full" 4 measure -q --write "$M" "$I/ref.wav" "$I/amp.wav"
  FAULTS=$((FAULTS + 4))
  n="after the refusals, the full tmpfs holds only the filler"
  check "$n" test "$(ls -A "$M")" = filler
  rm -f "$M/filler"

  echo "-- a read-only filesystem (EROFS, exit 4)"
  mount -o remount,ro "$M"
  refuse "process into a read-only filesystem" 4 process "$SMALL" "$M/out.wav" gain
  says "read-only: says so" "Read-only"
  refuse "measure --write into a read-only filesystem" 4 \
    measure -q --write "$M" "$I/ref.wav" "$I/amp.wav"
  FAULTS=$((FAULTS + 2))
  umount "$M"
  O=$T/out.d
fi

echo "-- OUT names something that is not a regular file (exit 4)"
# The output is renamed into place: --overwrite must not swap a regular
# file in for a FIFO (or, as root, for /dev/null).
mkfifo "$O/fifo.wav"
refuse "process --overwrite onto a FIFO" 4 process --overwrite "$SMALL" "$O/fifo.wav" gain
says "onto a FIFO: says it is not a regular file" "not a regular file"
check "the FIFO is still a FIFO" test -p "$O/fifo.wav"
rm -f "$O/fifo.wav"
FAULTS=$((FAULTS + 1))

echo "-- a full standard output (/dev/full; exit 4)"
for c in "process --json $SMALL $O/json.wav gain" "measure $I/ref.wav $I/amp.wav" \
  "measure --json $I/ref.wav $I/amp.wav" "list"; do
  # shellcheck disable=SC2086 # c is a list of words
  "$VERNIER" $c >/dev/full 2>"$T/err" </dev/null
  RC=$?
  expect_rc "vernier ${c%% *} ... >/dev/full: exit 4" 4
  expect_err "vernier ${c%% *} ... >/dev/full: says it cannot write" "standard output"
  FAULTS=$((FAULTS + 1))
done
# process had finished OUT before the report failed: it is whole.
check "process --json >/dev/full: OUT is whole" AUDIO same "$O/json.wav" "$SMALL"
rm -f "$O/json.wav"

echo "-- signals (SIGTERM into measure --write; SIGKILL into both)"
# Long runs, as interrupt.sh makes them: for process a minute of stereo at
# --block 64 through four gain steps and a 20-minute --tail; for measure
# --write three minutes of mono, whose rendering (~0.8 s under ASan here)
# outlasts the 0.1 s audio.py waits, after the temporary file appears in
# the folder, before it sends the signal.
LONG=$I/long.wav
AUDIO write "$LONG" --encoding pcm16 --channels 2 --frames $((60 * 48000)) --seed 65
"$PY" -c 'import sys; sys.path.insert(0, sys.argv[1])
import numpy as np
from wavtools import write
write(sys.argv[2], 48000, np.random.default_rng(9).uniform(-0.5, 0.5, 180 * 48000))' \
  "$SRCDIR/tests/tools" "$I/mlong.wav"
CHAIN="gain gain=-1 gain gain=0.9 gain trim=1 gain"
# signalled NAME SIG DIR CMD...: runs CMD, signals it, checks that it was
# still running and ended with the signal's status (128 + number).
signalled() {
  s_name=$1 s_sig=$2 s_dir=$3
  shift 3
  seen="" running=0 status=-1 hung=0
  eval "$(AUDIO interrupt "$s_sig" "$s_dir" -- "$ASAN_HOST" "$@")"
  case $s_sig in
  TERM) want=143 ;;
  KILL) want=137 ;;
  *) want=130 ;;
  esac
  FAULTS=$((FAULTS + 1))
  if [ "$running" -eq 1 ] && [ "$status" -eq "$want" ] && [ "$hung" -eq 0 ]; then
    pass "$s_name: signalled at work, status $want"
    return 0
  fi
  fail "$s_name: signalled at work, status $want" \
    "running $running, status $status, seen '$seen'; $(head -c 300 "$T/interrupt.err" | tr '\n' '|')"
  return 1
}
# visible DIR, hidden DIR: the names in DIR that do not / do start with a dot.
visible() { find "$1" -mindepth 1 -maxdepth 1 ! -name '.*' -printf '%f\n' | sort | tr '\n' ' '; }
hidden() { find "$1" -mindepth 1 -maxdepth 1 -name '.*' -printf '%f\n' | sort | tr '\n' ' '; }

rm -rf "$O" && mkdir -p "$O"
# shellcheck disable=SC2086 # CHAIN is a list of words
if signalled "process, SIGKILL" KILL "$O" process -q --block 64 --tail 1200 "$LONG" "$O/out.wav" $CHAIN; then
  check "process, SIGKILL: no OUT (nothing under the output name)" test ! -e "$O/out.wav"
  stale=$(ls -A "$O")
  case $stale in
  .out.wav.vernier-??????) pass "process, SIGKILL: what is left is one hidden temporary ($stale)" ;;
  *) fail "process, SIGKILL: what is left is one hidden temporary" "left: '$stale'" ;;
  esac
  [ -n "$stale" ] && stale_sum=$(cksum <"$O/$stale")
  n="process after SIGKILL: the next run succeeds, OUT is its output"
  run_ok "$n" process -q "$SMALL" "$O/out.wav" gain gain=-1 &&
    check "$n" AUDIO expect "$O/out.wav" "$SMALL" --scale -1
  n="process after SIGKILL: the stale temporary left alone, no other file"
  check "$n" test "$(visible "$O")/$(hidden "$O")" = "out.wav /${stale:+$stale }"
  [ -n "$stale" ] && check "$n (its bytes)" test "$(cksum <"$O/$stale")" = "$stale_sum"
fi
rm -rf "$O" && mkdir -p "$O"
AUDIO write "$O/out.wav" --frames 4800 --seed 66
old=$(cksum <"$O/out.wav")
# shellcheck disable=SC2086
if signalled "process --overwrite, SIGKILL" KILL "$O" process -q --overwrite --block 64 --tail 1200 "$LONG" "$O/out.wav" $CHAIN; then
  check "process --overwrite, SIGKILL: the existing OUT untouched" test "$(cksum <"$O/out.wav")" = "$old"
fi

rm -rf "$O" && mkdir -p "$O"
if signalled "measure --write, SIGTERM" TERM "$O" measure -q --write "$O" "$I/mlong.wav" "$I/mlong.wav"; then
  check "measure --write, SIGTERM: DIR left empty" test -z "$(ls -A "$O")"
fi
rm -rf "$O" && mkdir -p "$O"
if signalled "measure --write, SIGKILL" KILL "$O" measure -q --write "$O" "$I/mlong.wav" "$I/mlong.wav"; then
  check "measure --write, SIGKILL: no file under an output name" test -z "$(visible "$O")"
  stale=$(hidden "$O")
  n="measure --write after SIGKILL: the next run succeeds"
  if run_ok "$n" measure -q --write "$O" "$I/ref.wav" "$I/amp.wav"; then
    check "$n: the four outputs, whole" test "$(visible "$O")" = \
      "amp-aligned.lv2 amp-aligned.svg amp-aligned.wav commands.sh "
    check "$n: the corrected file reads back" AUDIO info "$O/amp-aligned.wav" frames
    check "$n: the stale temporary left as it was, nothing else hidden" \
      test "$(hidden "$O")" = "$stale"
  fi
fi
echo "  ($FAULTS faults injected)"
