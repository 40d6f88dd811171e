#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# An interrupted `vernier process` (SIGINT, SIGTERM) exits 130 / 143 and
# leaves no partial OUT and no temporary file; an existing OUT it was told
# to replace is untouched; an OUT that appears while a run without
# --overwrite is at work is not replaced (spec/cli.md "Files", "Exit codes";
# issue 2).
# The run is made long on purpose: three minutes of stereo at --block 64
# through eight gain steps, and a 20-minute --tail so that even a fast host
# is still at work; audio.py waits for the temporary file to appear in OUT's
# folder, then sends the signal.
. "$(dirname "$0")/../lib.sh"
. "$SRCDIR/tests/host/common.inc"
need_host

LONG=$I/long.wav
AUDIO write "$LONG" --encoding pcm16 --channels 2 --frames $((180 * 48000)) --seed 51
CHAIN="gain gain=-1 gain gain=0.9 gain trim=1 gain gain=-1 gain gain=0.8 gain trim=-1 gain gain=0.7 gain"

# interrupted NAME SIG STATUS EXTRA-OPTIONS: run into $O/out.wav, signal it,
# then check the exit status and what is left in $O against $O's state
# before the run.
interrupted() {
  before=$(dir_state "$O")
  seen='' running=0 status=-1 by_signal=0 waited=0
  # shellcheck disable=SC2086 # CHAIN and $4 are lists of words
  eval "$(AUDIO interrupt "$2" "$O" -- "$VERNIER" process -q --block 64 --tail 1200 $4 \
    "$LONG" "$O/out.wav" $CHAIN)"
  if [ -z "$seen" ]; then
    fail "$1: a new file appears in OUT's folder during the run" \
      "none within the run (status $status): $(head -c 300 "$T/interrupt.err" | tr '\n' '|')"
  else
    case $seen in
    .out.wav.vernier-??????) pass "$1: the temporary file is .out.wav.vernier-XXXXXX in OUT's folder" ;;
    *) fail "$1: the temporary file is .out.wav.vernier-XXXXXX in OUT's folder" "it is '$seen'" ;;
    esac
  fi
  if [ "$running" -ne 1 ]; then
    fail "$1: still running when signalled" "it ended first, status $status, after ${waited}s"
    return
  fi
  if [ "$status" -eq "$3" ]; then
    how="exit code"
    [ "$by_signal" -eq 1 ] && how="death by the signal, which a shell reads as $3"
    pass "$1: status $3 ($how)"
  else
    fail "$1: status $3" "status $status; stderr: $(head -c 300 "$T/interrupt.err" | tr '\n' '|')"
  fi
  after=$(dir_state "$O")
  if [ "$before" = "$after" ]; then
    pass "$1: OUT's folder as before (no partial OUT, no temporary file)"
  else
    fail "$1: OUT's folder as before (no partial OUT, no temporary file)" \
      "before: $(echo "$before" | tr '\n' ' ') after: $(echo "$after" | tr '\n' ' ')"
    rm -rf "$O" && mkdir -p "$O"
  fi
}

interrupted "SIGINT, no OUT yet" INT 130 ""
interrupted "SIGTERM, no OUT yet" TERM 143 ""

AUDIO write "$O/out.wav" --frames 4800 --seed 52
interrupted "SIGTERM with --overwrite of an existing OUT (untouched)" TERM 143 --overwrite
interrupted "SIGINT with --overwrite of an existing OUT (untouched)" INT 130 --overwrite

# Without --overwrite, OUT is linked into place (link() or renameat2
# RENAME_NOREPLACE), so a file that took the name meanwhile is kept.
rm -f "$O/out.wav"
seen='' running=0 status=-1 by_signal=0 waited=0
# shellcheck disable=SC2086 # CHAIN is a list of words
eval "$(AUDIO interrupt create:out.wav "$O" -- "$VERNIER" process -q --block 64 \
  "$LONG" "$O/out.wav" $CHAIN)"
n="an OUT that appears during a run without --overwrite"
if [ "$running" -ne 1 ]; then
  fail "$n: created while the run was at work" "the run ended first (status $status)"
else
  if [ "$status" -eq 4 ]; then
    pass "$n: exit 4"
  else
    fail "$n: exit 4" "status $status; stderr: $(head -c 300 "$T/interrupt.err" | tr '\n' '|')"
  fi
  check "$n: is kept as it was" grep -qx "appeared while vernier was running" "$O/out.wav"
  left=$(find "$O" -name '.*' | head -n 3)
  if [ -z "$left" ]; then
    pass "$n: no temporary file left"
  else
    fail "$n: no temporary file left" "found $left"
  fi
fi
