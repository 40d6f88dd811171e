#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# `vernier measure` on bad input and at its edges: every refusal gets its
# exit code (spec/cli.md and host/measure.h: 2 usage, 3 input, 4 output,
# 7 no reliable offset) and a message that says what is wrong, and nothing
# partial is ever written into --write DIR. Also its command-line
# behaviour: stereo input, --channel, several targets, clipping warnings,
# --quiet. The accuracy against the outside is tests/outside/measure.sh.
# shellcheck disable=SC2034 # AS_NOBODY is read by refuse in common.inc
. "$(dirname "$0")/../lib.sh"
. "$SRCDIR/tests/host/common.inc"
need_host
AS_NOBODY=

SCENE() { "$PY" "$SRCDIR/tests/tools/measure_scene.py" "$@"; }
CHECK() { "$PY" "$SRCDIR/tests/tools/measure_reference.py" "$@"; }

run_vernier measure --help
if [ "$RC" -ne 0 ] || ! grep -q "vernier measure" "$T/out"; then
  fail "vernier measure --help" "exit $RC: $(head -c 300 "$T/err" | tr '\n' ' ')"
  exit 0
fi
pass "vernier measure --help: exit 0, the usage on stdout"

# jcheck NAME EXPR: EXPR (Python) holds for the JSON in $T/out, read as d,
# with t = d["targets"].
jcheck() {
  if "$PY" - "$T/out" "$2" >"$T/jcheck.log" 2>&1 <<'EOF'; then
import json, sys
d = json.load(open(sys.argv[1]))
t = d["targets"]
sys.exit(0 if eval("(" + sys.argv[2] + ")") else 1)
EOF
    pass "$1"
  else
    fail "$1" "not so: $2 $(tail -n 2 "$T/jcheck.log" | tr '\n' ' ') in $(head -c 600 "$T/out" | tr '\n' ' ')"
  fi
}

# Short pairs (3 s, 48 kHz, float32): the host suites run the sanitized
# build, so the accuracy work on long files is left to tests/outside.
SCENE pair "$I/ref.wav" "$I/late.wav" --seconds 3 --offset 12.25 --seed 1
SCENE pair "$I/ref2.wav" "$I/inv.wav" --seconds 3 --offset -300.5 --theta 180 --seed 2
SCENE noise "$I/other.wav" --seconds 3 --seed 3
R=$I/ref.wav

echo "-- usage (exit 2)"
refuse "no REF, no TARGET" 2 measure
refuse "REF only" 2 measure "$R"
says "REF only: says a TARGET is needed" "TARGET"
refuse "unknown option" 2 measure --frobnicate "$R" "$I/late.wav"
says "unknown option: names it" "--frobnicate"
for v in abc -5ms 0 10parsecs ""; do
  refuse "--max-offset '$v'" 2 measure --max-offset "$v" "$R" "$I/late.wav"
  [ -n "$v" ] && says "--max-offset '$v': names the value" "$v"
done
refuse "--max-offset 'abc' again" 2 measure --max-offset abc "$R" "$I/late.wav"
says "--max-offset abc: says what a time is (50ms)" "50ms"
refuse "--max-offset beyond the 1000 ms limit (2s)" 2 measure --max-offset 2s "$R" "$I/late.wav"
says "--max-offset 2s: says the limit" "1000"
for v in 500-100 20 abc-250 0-250 20-200000 ""; do
  refuse "--band '$v'" 2 measure --band "$v" "$R" "$I/late.wav"
done
says_re "--band: says LO-HI and the limits" "LO.*HI"
refuse "--low-band 250-20" 2 measure --low-band 250-20 "$R" "$I/late.wav"
says "--low-band: names the value" "250-20"
for v in 0 -1 x 1.5 ""; do
  refuse "--channel '$v'" 2 measure --channel "$v" "$R" "$I/late.wav"
done
refuse "--channel 0 again" 2 measure --channel 0 "$R" "$I/late.wav"
says_re "--channel 0: says 1 is the first" "1 \\(the first\\)|from 1|at least 1|1 (is|=) the first"
for v in 100 -80 warm ""; do
  refuse "--air-temp '$v'" 2 measure --air-temp "$v" "$R" "$I/late.wav"
done
refuse "--write with no value (last word)" 2 measure "$R" "$I/late.wav" --write
refuse "--curves without --json" 2 measure --curves "$R" "$I/late.wav"
says "--curves without --json: names --json" "--json"

echo "-- input (exit 3)"
echo "these are words, not samples" >"$I/text.wav"
SCENE pair "$I/r44.wav" "$I/t44.wav" --seconds 3 --rate 44100 --offset 5 --seed 4
AUDIO write "$I/silent.wav" --frames 144000 --signal silence --encoding float
AUDIO write "$I/empty.wav" --frames 0
SCENE noise "$I/faint.wav" --seconds 3 --peak 1e-9 --seed 5
"$PY" -c "
import sys; sys.path.insert(0, '$SRCDIR/tests/tools')
from wavtools import read, write
rate, x = read('$R'); write('$I/short.wav', rate, x[:100])"
S=$O # every case below writes into $O on success: refuse checks it stays empty

refuse "REF missing" 3 measure --write "$S" "$I/nope.wav" "$I/late.wav"
says "REF missing: names the file" "nope.wav"
refuse "TARGET missing" 3 measure --write "$S" "$R" "$I/nope.wav"
says "TARGET missing: names the file" "nope.wav"
refuse "TARGET not an audio file" 3 measure --write "$S" "$R" "$I/text.wav"
says "TARGET not audio: names the file" "text.wav"
refuse "TARGET a folder" 3 measure --write "$S" "$R" "$I"
refuse "TARGET with 0 frames" 3 measure --write "$S" "$R" "$I/empty.wav"
says "0 frames: names the file" "empty.wav"

# No silent resampling: a 44.1 kHz TARGET against a 48 kHz REF is refused.
refuse "different sample rates" 3 measure --write "$S" "$R" "$I/t44.wav"
says "different rates: names 48000" "48000"
says "different rates: names 44100" "44100"

refuse "silent TARGET (all zeros)" 3 measure --write "$S" "$R" "$I/silent.wav"
says "silent TARGET: names the file" "silent.wav"
says_re "silent TARGET: says it is silent" "[Ss]ilen"
refuse "silent REF (all zeros)" 3 measure --write "$S" "$I/silent.wav" "$R"
says "silent REF: names the file" "silent.wav"
# -180 dBFS peak: below the smallest step of 24-bit PCM (2^-23, -138 dBFS),
# nothing a converter could have recorded.
refuse "nearly silent TARGET (peak 1e-9)" 3 measure --write "$S" "$R" "$I/faint.wav"
says "nearly silent TARGET: names the file" "faint.wav"
says_re "nearly silent: says it is (too) quiet or silent" "[Ss]ilen|quiet|level"

# A quiet pair is not a silent one: peaks at -60 dBFS are measured.
SCENE pair "$I/qref.wav" "$I/quiet.wav" --seconds 3 --offset -7.5 --peak 0.001 --seed 10
run_ok "quiet pair (peaks at -60 dBFS)" measure --json "$I/qref.wav" "$I/quiet.wav" &&
  check "quiet pair: found, within 0.05 frames" CHECK check "$T/out" --offset -7.5

refuse "very short TARGET (100 frames)" 3 measure --write "$S" "$R" "$I/short.wav"
says "very short: names the file" "short.wav"
says_re "very short: says the minimum" "at least|minimum|shorter than"

SCENE pair "$I/sref.wav" "$I/stereo.wav" --seconds 3 --offset 40.5 --stereo-target --seed 6
refuse "--channel 3 of a 2-channel TARGET" 3 measure --write "$S" --channel 3 "$I/sref.wav" "$I/stereo.wav"
says "--channel 3: says the file has 2 channels" "2 channels"

# chmod 000 does not stop root (common practice); as root, run as nobody.
cp "$R" "$I/locked.wav"
chmod 000 "$I/locked.wav"
if [ "$(id -u)" -ne 0 ]; then
  refuse "unreadable TARGET (chmod 000)" 3 measure "$R" "$I/locked.wav"
  says "unreadable: names the file" "locked.wav"
  chmod 555 "$O"
  refuse "--write DIR not writable (chmod 555)" 4 measure --write "$O" "$R" "$I/late.wav"
  says "DIR not writable: names it" "$O"
  chmod 755 "$O"
elif command -v setpriv >/dev/null &&
  chmod 711 "$T" && chmod 755 "$I" && chmod 755 "$O" &&
  setpriv --reuid=65534 --regid=65534 --clear-groups \
    sh -c 'test -x "$1" && test -r "$2"' sh "$VERNIER" "$SRCDIR/tests/lsan.supp"; then
  AS_NOBODY=1
  refuse "unreadable TARGET (chmod 000, as user nobody)" 3 measure "$R" "$I/locked.wav"
  says "unreadable: names the file" "locked.wav"
  refuse "--write DIR not writable (as user nobody)" 4 measure --write "$O" "$R" "$I/late.wav"
  says "DIR not writable: names it" "$O"
  AS_NOBODY=
  chmod 700 "$T"
else
  skip "unreadable TARGET, DIR not writable" \
    "running as root, and user nobody cannot run $VERNIER from here"
fi
rm -f "$I/locked.wav"

echo "-- output (exit 4)"
refuse "--write DIR under a regular file" 4 measure --write "$R/sub" "$R" "$I/late.wav"
says "DIR under a file: names it" "$R/sub"
: >"$O/a-file"
refuse "--write DIR is a regular file" 4 measure --write "$O/a-file" "$R" "$I/late.wav"
rm -f "$O/a-file"

refuse "--write DIR that does not exist" 4 measure --write "$T/no-such.d" "$R" "$I/late.wav"
says "DIR missing: names it" "no-such.d"
if [ ! -e "$T/no-such.d" ]; then
  pass "DIR missing: not created by a refused run"
else
  fail "DIR missing: not created by a refused run" "$(ls -la "$T/no-such.d" | tr '\n' ' ')"
fi

D=$T/written.d
mkdir -p "$D"
if run_ok "--write into an empty folder" measure -q --write "$D" "$R" "$I/late.wav"; then
  top=$(ls -A "$D" | tr '\n' ' ')
  want="commands.sh late-aligned.lv2 late-aligned.svg late-aligned.wav "
  odd=$(find "$D" -name '.*' -o -name '*~' -o -name '*.tmp*' -o -name '*.part')
  if [ "$top" = "$want" ] && [ -f "$D/late-aligned.lv2/manifest.ttl" ] && [ -z "$odd" ]; then
    pass "--write: the files cli.md names, no temporary file left"
  else
    fail "--write: the files cli.md names, no temporary file left" \
      "$top; $(find "$D" | tr '\n' ' ')"
  fi
  before=$(dir_state "$D")
  run_vernier measure -q --write "$D" "$R" "$I/late.wav"
  expect_rc "--write again without --overwrite: exit 4" 4
  expect_err "--write again: says --overwrite" "--overwrite"
  if [ "$before" = "$(dir_state "$D")" ]; then
    pass "--write again without --overwrite: DIR untouched"
  else
    fail "--write again without --overwrite: DIR untouched" "$(ls -A "$D" | tr '\n' ' ')"
  fi
  run_vernier measure -q --overwrite --write "$D" "$R" "$I/late.wav"
  expect_rc "--write again with --overwrite: exit 0" 0
fi

echo "-- no reliable offset (exit 7)"
# Two independent noises: nothing in common. The report (stdout) says so;
# with --json the status does.
run_vernier measure "$R" "$I/other.wav"
expect_rc "no common content: exit 7" 7
if grep -q "no reliable offset found" "$T/out" && grep -qE "coherence [0-9.]+" "$T/out"; then
  pass "no common content: the report says 'no reliable offset found' and the confidence"
else
  fail "no common content: the report says 'no reliable offset found' and the confidence" \
    "$(head -c 400 "$T/out" "$T/err" | tr '\n' ' ')"
fi
run_vernier measure --json --write "$O" "$R" "$I/other.wav"
expect_rc "no common content, --json --write: exit 7" 7
jcheck "no common content: status no_common_content" \
  't[0]["status"] == "no_common_content"'
jcheck "no common content: coherence near chance" \
  't[0]["coherence"] < 3 * t[0]["chance_coherence"]'
if [ -z "$(ls -A "$O")" ]; then
  pass "no common content: nothing written into --write DIR"
else
  fail "no common content: nothing written into --write DIR" "$(ls -A "$O" | tr '\n' ' ')"
  rm -rf "$O" && mkdir -p "$O"
fi

# 80 ms late (3840 frames) with the default 50 ms search range.
SCENE pair "$I/fref.wav" "$I/far.wav" --seconds 3 --offset 3840.4 --seed 7
run_vernier measure "$I/fref.wav" "$I/far.wav"
expect_rc "80 ms late, default 50 ms range: exit 7" 7
if grep -q "beyond the search range" "$T/out" && grep -q -- "--max-offset" "$T/out"; then
  pass "80 ms late: the report says it is beyond the range and how to widen it"
else
  fail "80 ms late: the report says it is beyond the range and how to widen it" \
    "$(head -c 400 "$T/out" "$T/err" | tr '\n' ' ')"
fi
run_vernier measure --json --write "$O" "$I/fref.wav" "$I/far.wav"
expect_rc "80 ms late, --json --write: exit 7" 7
jcheck "80 ms late: status beyond_range" 't[0]["status"] == "beyond_range"'
if [ -z "$(ls -A "$O")" ]; then
  pass "80 ms late: nothing written into --write DIR"
else
  fail "80 ms late: nothing written into --write DIR" "$(ls -A "$O" | tr '\n' ' ')"
  rm -rf "$O" && mkdir -p "$O"
fi
if run_ok "80 ms late, --max-offset 100ms: exit 0" measure --json --max-offset 100ms \
  "$I/fref.wav" "$I/far.wav"; then
  check "80 ms late, --max-offset 100ms: found, within 0.05 frames" \
    CHECK check "$T/out" --offset 3840.4
fi
# The same range in other units: 4000 samples, and 30 m of air at 20 C
# (87.4 ms; README: 343.2 m/s).
for range in 4000smp 30m; do
  run_ok "80 ms late, --max-offset $range: exit 0" measure --json --max-offset "$range" \
    "$I/fref.wav" "$I/far.wav" &&
    jcheck "80 ms late, --max-offset $range: found" 't[0]["status"] == "found"'
done

echo "-- channels"
# TARGET's left channel is REF 40.5 frames late, its right unrelated noise.
run_ok "stereo TARGET, mixed (default)" measure --json "$I/sref.wav" "$I/stereo.wav" &&
  cp "$T/out" "$T/mix.json" &&
  check "stereo TARGET, mixed: found, within 0.05 frames" \
    CHECK check "$T/out" --offset 40.5 &&
  jcheck "stereo TARGET, mixed: settings.channel is \"mix\", 2 channels" \
    'd["settings"]["channel"] == "mix" and t[0]["channels"] == 2'
run_ok "stereo TARGET, --channel 1" measure --json --channel 1 "$I/sref.wav" "$I/stereo.wav" &&
  check "stereo TARGET, --channel 1: found, within 0.05 frames" \
    CHECK check "$T/out" --offset 40.5 &&
  jcheck "stereo TARGET, --channel 1: settings.channel is 1" 'd["settings"]["channel"] == 1' &&
  jcheck "stereo TARGET, --channel 1: more coherent than the mix" \
    't[0]["coherence"] > json.load(open("'"$T/mix.json"'"))["targets"][0]["coherence"]'
run_vernier measure --json --channel 2 "$I/sref.wav" "$I/stereo.wav"
expect_rc "stereo TARGET, --channel 2 (the unrelated noise): exit 7" 7
jcheck "stereo TARGET, --channel 2: no_common_content" 't[0]["status"] == "no_common_content"'

echo "-- several targets"
# REF2's TARGETs: one inverted 300.5 frames early, one unrelated, REF2 itself.
run_vernier measure --json --write "$O" "$I/ref2.wav" "$I/inv.wav" "$I/other.wav" "$I/ref2.wav"
expect_rc "three targets, one unrelated: exit 7" 7
jcheck "three targets: three results in order" \
  '[x["path"].split("/")[-1] for x in t] == ["inv.wav", "other.wav", "ref2.wav"]'
jcheck "three targets: statuses found, no_common_content, found" \
  '[x["status"] for x in t] == ["found", "no_common_content", "found"]'
jcheck "three targets: the inverted one at -300.5, theta 180, invert advised" \
  'abs(t[0]["offset"]["frames"] + 300.5) <= 0.05 and abs(abs(t[0]["theta_deg"]) - 180) <= 3 and t[0]["correction"]["invert"]'
jcheck "three targets: REF against itself at 0 frames, 0 degrees" \
  'abs(t[2]["offset"]["frames"]) <= 1e-6 and abs(t[2]["theta_deg"]) <= 1e-3'
ls -A "$O" | LC_ALL=C sort | tr '\n' ' ' >"$T/listing"
if grep -q "inv-aligned.wav" "$T/listing" && ! grep -q "other-aligned" "$T/listing"; then
  pass "three targets: the found ones written, nothing for the unrelated one"
else
  fail "three targets: the found ones written, nothing for the unrelated one" "$(cat "$T/listing")"
fi
rm -rf "$O" && mkdir -p "$O"
run_ok "two targets, both found: exit 0" measure --json "$R" "$I/late.wav" "$R" &&
  jcheck "two targets: both found, 12.25 and 0 frames" \
    '[x["status"] for x in t] == ["found"] * 2 and abs(t[0]["offset"]["frames"] - 12.25) <= 0.05 and abs(t[1]["offset"]["frames"]) <= 1e-6'

echo "-- clipping: a warning, still measured"
SCENE pair "$I/cref.wav" "$I/ctgt.wav" --seconds 3 --offset -17.8 --seed 8 --clip-ref 37
run_ok "clipped REF (37 samples at +-1.0)" measure -q --json "$I/cref.wav" "$I/ctgt.wav" &&
  jcheck "clipped REF: reference.clipped_samples is 37" 'd["reference"]["clipped_samples"] == 37' &&
  check "clipped REF: still found, within 0.05 frames" CHECK check "$T/out" --offset -17.8 &&
  expect_err "clipped REF: a warning on stderr, even with -q (spec/cli.md: warnings still print)" "cref.wav"
SCENE pair "$I/pref.wav" "$I/ptgt.wav" --seconds 3 --offset 250.75 --theta 30 --seed 9 \
  --clip-target 23 --encoding pcm24
run_ok "clipped 24-bit TARGET (23 samples at the extreme codes)" measure --json \
  "$I/pref.wav" "$I/ptgt.wav" &&
  jcheck "clipped 24-bit TARGET: clipped_samples is 23" 't[0]["clipped_samples"] == 23' &&
  check "clipped 24-bit TARGET: still found, within 0.05 frames and 3 degrees" \
    CHECK check "$T/out" --offset 250.75 --theta 30 &&
  expect_err "clipped TARGET: a warning names the file" "ptgt.wav"

echo "-- output on stdout and stderr"
run_ok "text report" measure "$R" "$I/late.wav" &&
  check "text report: gives the offset 12.2x" grep -qE "12\.2[0-9]*" "$T/out"
run_ok "-q --json" measure -q --json "$R" "$I/late.wav"
if [ ! -s "$T/err" ]; then
  pass "-q: nothing on stderr for a clean pair"
else
  fail "-q: nothing on stderr for a clean pair" "$(head -c 300 "$T/err")"
fi
jcheck "--json: the keys cli.md fixes" '
set(d) >= {"reference", "settings", "targets"} and
set(d["reference"]) >= {"path", "rate_hz", "frames", "channels", "clipped_samples"} and
set(d["settings"]) >= {"max_offset_ms", "band_hz", "low_band_hz", "channel", "air_temp_c", "shape"} and
set(t[0]) >= {"path", "frames", "channels", "clipped_samples", "status", "peak_db",
  "coherence", "chance_coherence", "segments", "offset", "theta_deg", "theta_sigma_deg",
  "correction", "figures", "gain_over_polarity_db", "gain_over_offset_db", "process_step"} and
set(t[0]["offset"]) >= {"frames", "sigma_frames", "ms", "sigma_ms", "cm", "sigma_cm", "coarse_frames"} and
set(t[0]["correction"]) >= {"invert", "angle_deg", "delay_frames", "delay_ms", "allpass"} and
set(t[0]["figures"]) >= {"as_recorded", "polarity_only", "offset_only", "corrected", "shaped"} and
"curves" not in t[0]'
jcheck "--json: settings are the defaults" '
d["settings"]["max_offset_ms"] == 50 and d["settings"]["band_hz"] == [20, 10000] and
d["settings"]["low_band_hz"] == [20, 250] and d["settings"]["air_temp_c"] == 20 and
d["settings"]["shape"] is False'
