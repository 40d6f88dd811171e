#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# What `vernier measure --write DIR` writes (spec: notes/cli.md, issue 5):
# the corrected file is what `vernier process` makes of the step words in
# DIR/commands.sh, the LV2 preset bundle validates and, loaded, gives that
# same file, existing names are refused before anything is written, and no
# temporary file or folder is left. First, the host change it rests on:
# `vernier process` shifts the file for the Align Strip's delay beyond its
# range, as for the Fine Delay's (host/time_value.h).
# shellcheck disable=SC2034 # AS_NOBODY is read by refuse in common.inc
. "$(dirname "$0")/../lib.sh"
. "$SRCDIR/tests/host/common.inc"
need_host
AS_NOBODY=

PAIR() { "$PY" "$SRCDIR/tests/tools/measure_write_pair.py" "$@"; }
# with_lv2 PATH CMD...: CMD with LV2_PATH=PATH (then back to $LV2_ASAN).
with_lv2() {
  LV2_PATH=$1
  export LV2_PATH
  shift
  "$@"
  w_rc=$?
  LV2_PATH=$LV2_ASAN
  export LV2_PATH
  return $w_rc
}
# shifted NAME A B FRAMES: B is A moved FRAMES earlier, bit for bit.
shifted() {
  check "$1" "$PY" -c 'import sys; sys.path.insert(0, sys.argv[1])
from wavtools import same_shifted
same_shifted(sys.argv[2], sys.argv[3], int(sys.argv[4]))' \
    "$SRCDIR/tests/tools" "$2" "$3" "$4"
}
# The same source, twice: REF, and TARGET inverted and 23.4 frames late.
PAIR pair "$I/ref.wav" "$I/amp.wav"
R=$I/ref.wav

echo "-- the strip's delay beyond its range: the host shifts the file"
# At the defaults the strip is a pure delay (ttl/strip.ttl: the input,
# delayed by the latency, bit for bit; its delay is the Fine Delay's code),
# so with the same delay the two plugins give the same samples exactly.
for d in -30ms 150ms -1440.37smp 7.3smp; do
  n="strip delay=$d is bit for bit delay delay=$d"
  run_ok "$n" process -q "$R" "$O/strip$d.wav" strip "delay=$d" &&
    run_ok "$n" process -q "$R" "$O/delay$d.wav" delay "delay=$d" &&
    check "$n" AUDIO same "$O/strip$d.wav" "$O/delay$d.wav"
done
n="strip-stereo delay=-30ms is bit for bit delay-stereo delay=-30ms"
PAIR pair "$I/sref.wav" "$I/stereo.wav" --channels 2
run_ok "$n" process -q "$I/stereo.wav" "$O/ss.wav" strip-stereo delay=-30ms &&
  run_ok "$n" process -q "$I/stereo.wav" "$O/ds.wav" delay-stereo delay=-30ms &&
  check "$n" AUDIO same "$O/ss.wav" "$O/ds.wav"
n="strip delay=-30ms: the JSON says the host moved it 480 frames earlier"
run_ok "$n" process -q --json "$R" "$O/j.wav" strip delay=-30ms &&
  check "$n" "$PY" -c '
import json, sys
j = json.load(open(sys.argv[1]))
s = j["steps"][0]
assert j["shift_frames"] == -480 and s["host_shift_frames"] == -480, j
assert s["controls"]["delay"] == -20, s' "$T/out"
# With every other section on: the rest of the strip is time-invariant, so
# the shift commutes with it (exactly, whole frames).
n="strip invert=on angle=30 stages=2 delay=-30ms is delay=-20ms moved 480 frames earlier"
run_ok "$n" process -q "$R" "$O/on30.wav" strip invert=on angle=30 stages=2 delay=-30ms &&
  run_ok "$n" process -q "$R" "$O/on20.wav" strip invert=on angle=30 stages=2 delay=-20ms &&
  shifted "$n" "$O/on20.wav" "$O/on30.wav" 480
run_ok "describe strip" describe strip &&
  check "describe strip: says the host shifts beyond the range" \
    grep -qF "beyond it, vernier process moves the file by whole frames" "$T/out"
run_ok "process --help" process --help &&
  check "process --help: names strip's delay for the host shift" \
    grep -qF "delay's and strip's delay" "$T/out"
rm -rf "$O" && mkdir -p "$O"

run_vernier measure --help
if [ "$RC" -ne 0 ]; then
  skip "measure --write" "vernier measure is not built in: exit $RC"
  exit 0
fi

echo "-- what --write DIR holds"
# A second TARGET as 24-bit FLAC (converted by the host's pass-through,
# which is bit-exact) shows that the corrected file keeps its format.
run_ok "a FLAC TARGET" process -q --format flac:pcm24 "$I/amp.wav" "$I/amp24.flac" gain
D=$T/d1
mkdir -p "$D"
if ! run_ok "--write DIR, two TARGETs" measure --write "$D" "$R" "$I/amp.wav" "$I/amp24.flac"; then
  exit 0
fi
top=$(ls -A "$D" | LC_ALL=C sort | tr '\n' ' ')
want="amp-aligned.lv2 amp-aligned.svg amp-aligned.wav amp24-aligned.flac amp24-aligned.lv2 amp24-aligned.svg commands.sh "
if [ "$top" = "$want" ]; then
  pass "DIR holds the names cli.md gives, no temporary file or folder"
else
  fail "DIR holds the names cli.md gives, no temporary file or folder" "$top"
fi
bundle=$(ls -A "$D/amp-aligned.lv2" | LC_ALL=C sort | tr '\n' ' ')
if [ "$bundle" = "delay.ttl manifest.ttl polarity.ttl rotate.ttl strip.ttl " ]; then
  pass "the bundle: manifest, strip, polarity (inverted), delay, rotate"
else
  fail "the bundle: manifest, strip, polarity (inverted), delay, rotate" "$bundle"
fi
for f in amp-aligned.wav amp-aligned.lv2 amp-aligned.svg amp24-aligned.flac commands.sh; do
  check "stderr says 'wrote $D/$f'" grep -qxF "vernier: wrote $D/$f" "$T/err"
done
for t in amp.wav:amp-aligned.wav amp24.flac:amp24-aligned.flac; do
  check "${t#*:} has ${t%%:*}'s container, encoding, rate and channels" "$PY" -c '
import json, subprocess, sys
info = [json.loads(subprocess.check_output([sys.executable, sys.argv[1], "info", p]))
        for p in sys.argv[2:]]
keys = ("container", "encoding", "rate", "channels", "frames")
assert all(info[0][k] == info[1][k] for k in keys), info' \
    "$SRCDIR/tests/host/audio.py" "$I/${t%%:*}" "$D/${t#*:}"
done
# The words are right (sign of the delay, the invert) only if the result
# sums with REF; 2400 frames at each end are left out, where the test
# signal's circular shift wraps.
check "amp-aligned.wav sums with REF (correlation > 0.999, residual < -40 dB)" \
  PAIR sums "$R" "$D/amp-aligned.wav"
check "commands.sh starts #!/bin/sh and is executable" \
  sh -c 'head -n 1 "$1" | grep -qx "#!/bin/sh" && test -x "$1"' sh "$D/commands.sh"
if grep -qE "^vernier process [^ ]*/amp.wav [^ ]*/d1/amp-aligned.wav strip invert=on delay=-23\.[0-9]{4}smp angle=-?[0-9]+\.[0-9]{3}$" "$D/commands.sh"; then
  pass "commands.sh: strip invert=on delay=-23.XXXXsmp angle=X.XXX for amp.wav"
else
  fail "commands.sh: strip invert=on delay=-23.XXXXsmp angle=X.XXX for amp.wav" "$(cat "$D/commands.sh")"
fi

# commands.sh run as it is (vernier from PATH), once the files it makes are
# moved aside, makes them again: the same samples, the same format.
mkdir -p "$T/first"
mv "$D/amp-aligned.wav" "$D/amp24-aligned.flac" "$T/first/"
if PATH="$BUILD/asan:$PATH" sh "$D/commands.sh" >"$T/cmd.log" 2>&1; then
  check "commands.sh makes amp-aligned.wav again, bit for bit" \
    AUDIO same "$D/amp-aligned.wav" "$T/first/amp-aligned.wav"
  check "commands.sh makes amp24-aligned.flac again, bit for bit" \
    AUDIO same "$D/amp24-aligned.flac" "$T/first/amp24-aligned.flac"
else
  fail "commands.sh runs" "$(head -c 300 "$T/cmd.log" | tr '\n' ' ')"
fi

echo "-- the presets"
# sord_validate (sord's validator) against the LV2 schemas Debian ships,
# with our plugins' own .ttl files: lv2:appliesTo must name a known plugin.
sord_validate /usr/lib/lv2/*/*.ttl "$BUILD/vernier.lv2"/*.ttl \
  "$D/amp-aligned.lv2"/*.ttl >"$T/sord.log" 2>&1
if grep -q 'Found 0 errors' "$T/sord.log"; then
  pass "sord_validate: the preset bundle against /usr/lib/lv2 schemas"
else
  fail "sord_validate: the preset bundle against /usr/lib/lv2 schemas" \
    "$(grep -i error "$T/sord.log" | head -n 5 | tr '\n' ' ')"
fi
if grep -q '"latency"' "$D/amp-aligned.lv2"/*.ttl; then
  fail "no preset sets the latency port (an output)" "$(grep -l latency "$D/amp-aligned.lv2"/*.ttl)"
else
  pass "no preset sets the latency port (an output)"
fi
n=$(grep -c 'lv2:symbol' "$D/amp-aligned.lv2/strip.ttl")
if [ "$n" -eq 9 ]; then
  pass "the strip preset sets all 9 control inputs of strip-mono"
else
  fail "the strip preset sets all 9 control inputs of strip-mono" "$n symbols"
fi
# Loaded by the host from DIR itself (lilv complains about the entries of
# DIR that are not bundles, and goes on), and from a copy elsewhere, as a
# DAW finds it in ~/.lv2.
n="strip @'amp aligned' from DIR gives amp-aligned.wav bit for bit"
with_lv2 "$LV2_ASAN:$D" run_ok "$n" process -q "$I/amp.wav" "$O/p.wav" strip @"amp aligned" &&
  check "$n" AUDIO same "$O/p.wav" "$T/first/amp-aligned.wav"
mkdir -p "$T/lv2home"
cp -R "$D/amp-aligned.lv2" "$T/lv2home/"
rm -f "$O/p.wav"
HOME_LV2="$LV2_ASAN:$T/lv2home"
n="strip @'amp aligned' from a copy of the bundle gives amp-aligned.wav bit for bit"
with_lv2 "$HOME_LV2" run_ok "$n" process -q "$I/amp.wav" "$O/p.wav" strip @"amp aligned" &&
  check "$n" AUDIO same "$O/p.wav" "$T/first/amp-aligned.wav"
# The single plugins' presets: the same DSP code in the same order as the
# strip, each latency compensated in whole frames, so the same samples.
n="polarity, delay, rotate @'amp aligned' give amp-aligned.wav bit for bit"
with_lv2 "$HOME_LV2" run_ok "$n" process -q "$I/amp.wav" "$O/p3.wav" \
  polarity @"amp aligned" delay @"amp aligned" rotate @"amp aligned" &&
  check "$n" AUDIO same "$O/p3.wav" "$T/first/amp-aligned.wav"
for p in strip polarity delay rotate; do
  with_lv2 "$HOME_LV2" run_ok "describe $p lists the preset" describe "$p" &&
    check "describe $p lists 'amp aligned' at its file in the bundle" \
      grep -qE "amp aligned +file://$T/lv2home/amp-aligned.lv2/$p.ttl" "$T/out"
done

echo "-- stereo, beyond the range, --shape"
# A 2-channel TARGET: strip-stereo, both channels inverted.
D=$T/d2
mkdir -p "$D"
if run_ok "--write, a stereo TARGET" measure -q --write "$D" "$I/sref.wav" "$I/stereo.wav"; then
  check "commands.sh: strip-stereo invert_left=on invert_right=on" \
    grep -qE " strip-stereo invert_left=on invert_right=on delay=-23\.[0-9]{4}smp " "$D/commands.sh"
  check "the strip preset applies to strip-stereo and sets 10 controls" sh -c '
grep -q "lv2:appliesTo <urn:vernier:strip-stereo>" "$1" &&
test "$(grep -c lv2:symbol "$1")" -eq 10' sh "$D/stereo-aligned.lv2/strip.ttl"
  cp -R "$D/stereo-aligned.lv2" "$T/lv2home/"
  n="strip-stereo @'stereo aligned' gives stereo-aligned.wav bit for bit"
  with_lv2 "$LV2_ASAN:$T/lv2home" run_ok "$n" process -q "$I/stereo.wav" \
    "$O/ps.wav" strip-stereo @"stereo aligned" &&
    check "$n" AUDIO same "$O/ps.wav" "$D/stereo-aligned.wav"
fi

# 1440.37 frames late (30.0077 ms): the corrected file is moved all the
# way by the host; a plugin in a DAW holds at most 20 ms earlier, so the
# presets keep the fraction and 959.37 frames (vn_time_split), and the
# region is to be moved the other 481 frames.
PAIR pair "$I/fref.wav" "$I/far.wav" --delay 1440.37
D=$T/d3
mkdir -p "$D"
if run_ok "--write, 30 ms late" measure -q --write "$D" "$I/fref.wav" "$I/far.wav"; then
  check "30 ms late: far-aligned.wav sums with REF" PAIR sums "$I/fref.wav" "$D/far-aligned.wav"
  expect_err "30 ms late: a warning says to move the region 481 frames earlier" \
    "move the region 481 frames (10.0208 ms) earlier"
  check "30 ms late: the strip and delay presets hold -959.37 frames (-19.986876 ms)" \
    sh -c 'grep -A1 "\"delay\"" "$1" "$2" | grep -c "pset:value -19.986876$" | grep -qx 2' \
    sh "$D/far-aligned.lv2/strip.ttl" "$D/far-aligned.lv2/delay.ttl"
  cp -R "$D/far-aligned.lv2" "$T/lv2home/"
  n="30 ms late: the preset's file moved 481 frames earlier is far-aligned.wav, bit for bit"
  with_lv2 "$LV2_ASAN:$T/lv2home" run_ok "$n" process -q "$I/far.wav" \
    "$O/pf.wav" strip @"far aligned" &&
    shifted "$n" "$O/pf.wav" "$D/far-aligned.wav" 481
fi

# --shape adds the all-pass to the words and an All-pass preset. REF has
# been through an all-pass at 300 Hz that TARGET missed, so the correction
# is that all-pass (the fit's accuracy is tests/host/measure.sh's and
# tests/outside's business; here only that the words and presets carry it).
PAIR pair "$I/apref.wav" "$I/aptgt.wav" --allpass-hz 300 --allpass-q 0.8
D=$T/d4
mkdir -p "$D"
if run_ok "--write --shape" measure -q --shape --write "$D" "$I/apref.wav" "$I/aptgt.wav"; then
  check "--shape: frequency, q, stages and order in the words" \
    grep -qE " strip invert=on delay=-23\.[0-9]{4}smp angle=-?[0-9.]+ frequency=[0-9.]+ q=[0-9.]+ stages=[1-4] order=[12]$" "$D/commands.sh"
  check "--shape: aptgt-aligned.wav sums with REF" PAIR sums "$I/apref.wav" "$D/aptgt-aligned.wav"
  check "--shape: an allpass.ttl for allpass-mono in the bundle" \
    grep -q "lv2:appliesTo <urn:vernier:allpass-mono>" "$D/aptgt-aligned.lv2/allpass.ttl"
  mkdir -p "$T/lv2shape" && cp -R "$D/aptgt-aligned.lv2" "$T/lv2shape/"
  n="--shape: strip @'aptgt aligned' gives aptgt-aligned.wav bit for bit"
  with_lv2 "$LV2_ASAN:$T/lv2shape" run_ok "$n" process -q "$I/aptgt.wav" \
    "$O/psh.wav" strip @"aptgt aligned" &&
    check "$n" AUDIO same "$O/psh.wav" "$D/aptgt-aligned.wav"
  n="--shape: polarity, delay, rotate, allpass @'aptgt aligned' give it bit for bit"
  with_lv2 "$LV2_ASAN:$T/lv2shape" run_ok "$n" process -q "$I/aptgt.wav" \
    "$O/psh4.wav" polarity @"aptgt aligned" delay @"aptgt aligned" \
    rotate @"aptgt aligned" allpass @"aptgt aligned" &&
    check "$n" AUDIO same "$O/psh4.wav" "$D/aptgt-aligned.wav"
fi
rm -rf "$O" && mkdir -p "$O"

# A name with a space, quotes and a backslash: shell-quoted in
# commands.sh, escaped in the presets' Turtle strings. (Not in the check
# names: the echo of dash reads backslashes.)
ODD="o'd \"amp\" \\1"
cp "$I/amp.wav" "$I/$ODD.wav"
D=$T/d5
mkdir -p "$D"
if run_ok "--write, a TARGET named with quotes, a space and a backslash" measure -q --write "$D" "$R" "$I/$ODD.wav"; then
  mv "$D/$ODD-aligned.wav" "$T/odd.wav"
  if PATH="$BUILD/asan:$PATH" sh "$D/commands.sh" >"$T/cmd.log" 2>&1; then
    check "odd name: commands.sh makes the file again, bit for bit" \
      AUDIO same "$D/$ODD-aligned.wav" "$T/odd.wav"
  else
    fail "odd name: commands.sh runs" "$(head -c 300 "$T/cmd.log" | tr '\n' ' ')"
  fi
  sord_validate /usr/lib/lv2/*/*.ttl "$BUILD/vernier.lv2"/*.ttl \
    "$D/$ODD-aligned.lv2"/*.ttl >"$T/sord.log" 2>&1
  check "odd name: sord_validate finds 0 errors in the bundle" grep -q 'Found 0 errors' "$T/sord.log"
  mkdir -p "$T/lv2odd" && cp -R "$D/$ODD-aligned.lv2" "$T/lv2odd/"
  n="odd name: strip @'<stem> aligned' gives the file bit for bit"
  with_lv2 "$LV2_ASAN:$T/lv2odd" run_ok "$n" process -q "$I/$ODD.wav" \
    "$O/podd.wav" strip @"$ODD aligned" &&
    check "$n" AUDIO same "$O/podd.wav" "$T/odd.wav"
fi
rm -rf "$O" && mkdir -p "$O"

echo "-- refusals: nothing written"
# Each existing name alone refuses the whole run before anything is made.
for name in amp-aligned.wav amp-aligned.svg amp-aligned.lv2 commands.sh; do
  rm -rf "$O" && mkdir -p "$O"
  case $name in
  *.lv2) mkdir "$O/$name" && echo old >"$O/$name/manifest.ttl" ;;
  *) echo old >"$O/$name" ;;
  esac
  refuse "$name exists, no --overwrite" 4 measure -q --write "$O" "$R" "$I/amp.wav"
  says "$name exists: names it and --overwrite" "$O/$name exists; add --overwrite"
done
# Two TARGETs of the same name would write the same files.
mkdir -p "$I/sub"
cp "$I/amp.wav" "$I/sub/amp.wav"
rm -rf "$O" && mkdir -p "$O"
refuse "two TARGETs named amp" 2 measure -q --write "$O" "$R" "$I/amp.wav" "$I/sub/amp.wav"
says "two TARGETs named amp: names both" "$I/sub/amp.wav"
# An output name that is an input: never replaced, even with --overwrite.
cp "$R" "$O/x-aligned.wav"
cp "$I/amp.wav" "$I/x.wav"
refuse "an output would be REF (--overwrite)" 3 measure -q --overwrite --write "$O" \
  "$O/x-aligned.wav" "$I/x.wav"
says "an output would be REF: says so" "is the same file as the input"
rm -f "$O/x-aligned.wav" "$I/x.wav"
# --overwrite replaces a bundle of plain files only.
mkdir -p "$O/amp-aligned.lv2/keep"
refuse "--overwrite, the old bundle holds a folder" 4 measure -q --overwrite --write "$O" "$R" "$I/amp.wav"
says "the old bundle holds a folder: names it" "holds a folder, keep"
rm -rf "$O" && mkdir -p "$O"

# chmod 555 does not stop root (common practice); as root, run as nobody.
if [ "$(id -u)" -ne 0 ]; then
  chmod 555 "$O"
  refuse "--write DIR not writable (chmod 555)" 4 measure --write "$O" "$R" "$I/amp.wav"
  chmod 755 "$O"
elif command -v setpriv >/dev/null &&
  chmod 711 "$T" && chmod 755 "$I" && chmod 755 "$O" &&
  setpriv --reuid=65534 --regid=65534 --clear-groups \
    sh -c 'test -x "$1" && test -r "$2" && test -r "$3"' sh "$VERNIER" \
    "$SRCDIR/tests/lsan.supp" "$R"; then
  AS_NOBODY=1
  refuse "--write DIR not writable (as user nobody)" 4 measure --write "$O" "$R" "$I/amp.wav"
  AS_NOBODY=
  chmod 700 "$T"
else
  skip "--write DIR not writable" "running as root, and user nobody cannot run $VERNIER from here"
fi
refuse "--write DIR under a regular file" 4 measure --write "$R/sub" "$R" "$I/amp.wav"

echo "-- --overwrite"
D=$T/d1
before=$(dir_state "$D")
run_vernier measure -q --write "$D" "$R" "$I/amp.wav"
expect_rc "again without --overwrite: exit 4" 4
if [ "$before" = "$(dir_state "$D")" ]; then
  pass "again without --overwrite: DIR as it was"
else
  fail "again without --overwrite: DIR as it was" "$(ls -A "$D" | tr '\n' ' ')"
fi
echo stale >"$D/amp-aligned.lv2/stale.ttl"
run_vernier measure -q --overwrite --write "$D" "$R" "$I/amp.wav"
expect_rc "--overwrite: exit 0" 0
if [ ! -e "$D/amp-aligned.lv2/stale.ttl" ] && [ -f "$D/amp-aligned.lv2/strip.ttl" ] &&
  [ -z "$(find "$D" -mindepth 1 -maxdepth 1 -name '.*')" ]; then
  pass "--overwrite: the old bundle replaced whole, no temporary left"
else
  fail "--overwrite: the old bundle replaced whole, no temporary left" \
    "$(ls -A "$D" "$D/amp-aligned.lv2" | tr '\n' ' ')"
fi
check "--overwrite: amp-aligned.wav made again, bit for bit" \
  AUDIO same "$D/amp-aligned.wav" "$T/first/amp-aligned.wav"

echo "-- while writing"
# Two minutes, so that `vernier process` is still at work when audio.py
# sees its temporary file appear in DIR.
"$PY" -c 'import sys; sys.path.insert(0, sys.argv[1])
import numpy as np
from wavtools import write
write(sys.argv[2], 48000, np.random.default_rng(9).uniform(-0.5, 0.5, 120 * 48000))' \
  "$SRCDIR/tests/tools" "$I/long.wav"
rm -rf "$O" && mkdir -p "$O"
seen='' running=0 status=-1
eval "$(AUDIO interrupt INT "$O" -- "$VERNIER" measure -q --write "$O" "$I/long.wav" "$I/long.wav")"
if [ "$running" -eq 1 ] && [ "$status" -eq 130 ] && [ -z "$(ls -A "$O")" ]; then
  pass "SIGINT while rendering: exit 130, DIR left empty"
else
  fail "SIGINT while rendering: exit 130, DIR left empty" \
    "seen '$seen', running $running, status $status; $(ls -A "$O" | tr '\n' ' ')"
fi
rm -rf "$O" && mkdir -p "$O"
seen='' running=0 status=-1
eval "$(AUDIO interrupt create:long-aligned.svg "$O" -- "$VERNIER" measure -q --write "$O" \
  "$I/long.wav" "$I/long.wav")"
if [ "$running" -eq 1 ] && [ "$status" -eq 4 ] &&
  grep -q "appeared while vernier was running" "$O/long-aligned.svg" &&
  grep -qF "long-aligned.svg appeared while writing" "$T/interrupt.err" &&
  [ -z "$(find "$O" -mindepth 1 -maxdepth 1 -name '.*')" ]; then
  pass "an svg that appears meanwhile is kept: exit 4, no temporary left"
else
  fail "an svg that appears meanwhile is kept: exit 4, no temporary left" \
    "running $running, status $status; $(ls -A "$O" | tr '\n' ' '); $(head -c 300 "$T/interrupt.err")"
fi
