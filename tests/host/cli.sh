#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# The command line itself (spec/cli.md): --help and --version everywhere,
# `vernier list` (ours first), `vernier describe` (ports, ranges, units,
# latency, presets), the --json documents and their keys, what goes to stderr
# with and without -q, and "--" ending the options.
. "$(dirname "$0")/../lib.sh"
. "$SRCDIR/tests/host/common.inc"
need_host

VERSION=$(sed -n 's/^VERSION *:= *//p' "$SRCDIR/Makefile")
M=$I/mono.wav
S=$I/stereo.wav
AUDIO write "$M" --frames 4800 --seed 61
AUDIO write "$S" --frames 48000 --channels 2 --seed 62

# json_check NAME PYTHON: PYTHON runs with j = the JSON document on stdout.
json_check() {
  check "$1" "$PY" -c "
import json, sys
j = json.load(open(sys.argv[1]))
$2" "$T/out"
}

echo "-- --help and --version"
# -h is documented for process only (spec/cli.md); --help and --version
# for the top level and every sub-command.
for cmd in "--help" "--version" "process --help" "process -h" \
  "process --version" "list --help" "list --version" "describe --help" \
  "describe --version"; do
  # shellcheck disable=SC2086 # two words
  run_vernier $cmd
  n="vernier $cmd: exit 0, text on stdout"
  if [ "$RC" -eq 0 ] && [ -s "$T/out" ]; then
    pass "$n"
  else
    fail "$n" "exit $RC, $(wc -c <"$T/out") bytes on stdout; stderr: $(head -c 200 "$T/err" | tr '\n' '|')"
  fi
  case $cmd in
  *--version) check "vernier $cmd names $VERSION" grep -qF "$VERSION" "$T/out" ;;
  esac
done
run_vernier --help
cp "$T/out" "$T/help-top"
run_vernier process --help
for word in --block --tail --format --overwrite --json SYMBOL=VALUE @; do
  check "process --help documents $word" grep -qF -- "$word" "$T/out"
done
check "--help (top level or process) documents the exit codes (130)" \
  grep -qF 130 "$T/out" "$T/help-top"

echo "-- list"
n="vernier list: exit 0"
run_ok "$n" list && pass "$n"
check "list shows our short names and URIs, ours before the test plugins" "$PY" -c '
import sys
lines = open(sys.argv[1]).read().splitlines()
ours = [i for i, l in enumerate(lines) if "urn:vernier:" in l]
others = [i for i, l in enumerate(lines) if "urn:vernier-test:" in l]
text = "\n".join(lines)
for u in ("gain-mono", "gain-stereo", "polarity-mono", "polarity-stereo"):
    assert "urn:vernier:" + u in text, u
assert ours and others, (ours, others)
assert max(ours) < min(others), "ours are not first"
' "$T/out"
n="vernier list --json: parses, ours first, short names for ours only"
run_ok "$n" list --json && json_check "$n" '
p = j["plugins"]
for e in p:
    assert set(e) >= {"uri", "name", "short_name", "ours"}, e
flags = [e["ours"] for e in p]
assert flags == sorted(flags, reverse=True), "ours are not first"
by = {e["uri"]: e for e in p}
assert by["urn:vernier:gain-mono"]["ours"] is True
assert by["urn:vernier:gain-mono"]["short_name"] in ("gain", "gain-mono")
assert by["urn:vernier:gain-stereo"]["short_name"] == "gain-stereo"
assert by["urn:vernier:polarity-mono"]["short_name"] in ("polarity", "polarity-mono")
t = by["urn:vernier-test:latency"]
assert t["ours"] is False and t["short_name"] is None, t
'

echo "-- describe"
n="describe gain: exit 0"
run_ok "$n" describe gain && pass "$n"
for word in urn:vernier:gain-mono "Vernier Bipolar Gain" GPL-3.0-or-later \
  trim coef dB -24 24 Inverted; do
  check "describe gain shows '$word'" grep -qF -- "$word" "$T/out"
done
check "describe gain shows the presets by label" grep -qF "Half, 6 dB down" "$T/out"
check "describe gain shows the presets by URI" grep -qF urn:vernier:preset:gain-mono-inverted "$T/out"
check "describe gain shows the range of gain (-1 .. 1)" grep -Eq -- '-1(\.0*)?[^0-9]{1,6}\+?1(\.0*)?([^0-9.]|$)' "$T/out"

n="describe of the latency plugin (text) shows its 100 frames of latency"
run_ok "$n" describe urn:vernier-test:latency &&
  check "$n" grep -Eiq 'latency[^0-9]*100([^0-9]|$)' "$T/out"

n="describe --json gain: the contract's keys and gain's ports, units, presets"
run_ok "$n" describe --json gain && json_check "$n" '
keys = {"uri", "name", "short_name", "class", "license", "channels",
        "latency_frames", "sample_rate", "ports", "presets"}
assert set(j) >= keys, keys - set(j)
assert j["uri"] == "urn:vernier:gain-mono" and j["channels"] == 1, j
assert j["latency_frames"] == 0 and j["sample_rate"] == 48000, j
pk = {"index", "symbol", "name", "type", "direction", "default", "minimum",
      "maximum", "unit", "properties"}
for q in j["ports"]:
    assert set(q) >= pk, (q, pk - set(q))
ports = {q["symbol"]: q for q in j["ports"]}
assert [q["symbol"] for q in sorted(j["ports"], key=lambda q: q["index"])] == ["gain", "trim", "in", "out"]
g, t = ports["gain"], ports["trim"]
assert (g["default"], g["minimum"], g["maximum"], g["unit"]) == (1, -1, 1, "coef"), g
assert (t["default"], t["minimum"], t["maximum"], t["unit"]) == (0, -24, 24, "dB"), t
assert (g["type"], g["direction"]) == ("control", "input"), g
assert (ports["out"]["type"], ports["out"]["direction"]) == ("audio", "output")
pr = {p["label"]: p["uri"] for p in j["presets"]}
assert pr.get("Inverted") == "urn:vernier:preset:gain-mono-inverted", pr
assert pr.get("Half, 6 dB down") == "urn:vernier:preset:gain-mono-half-down", pr
'
n="describe --json --rate 96000 of the latency plugin: 100 frames, reportsLatency"
run_ok "$n" describe --json --rate 96000 urn:vernier-test:latency && json_check "$n" '
assert j["latency_frames"] == 100 and j["sample_rate"] == 96000, j
assert j["short_name"] is None, j
p = [q for q in j["ports"] if q["symbol"] == "latency"][0]
assert p["direction"] == "output" and "reportsLatency" in p["properties"], p
'
n="describe --json polarity: invert is toggled"
run_ok "$n" describe --json polarity && json_check "$n" '
p = [q for q in j["ports"] if q["symbol"] == "invert"][0]
assert "toggled" in p["properties"], p
'
n="describe --json of the echo plugin: frames is integer, unit frames"
run_ok "$n" describe --json urn:vernier-test:echo && json_check "$n" '
p = [q for q in j["ports"] if q["symbol"] == "frames"][0]
assert "integer" in p["properties"] and p["unit"] == "frames", p
'
n="describe --json gain-stereo: 2 channels, its own preset"
run_ok "$n" describe --json gain-stereo && json_check "$n" '
assert j["channels"] == 2, j["channels"]
assert [p["uri"] for p in j["presets"]] == ["urn:vernier:preset:gain-stereo-inverted"], j["presets"]
'
refuse "describe of an unknown plugin" 5 describe gian
says "describe gian: names it" "gian"

echo "-- process --json"
n="process --json: the contract's keys, and the values of this run"
run_ok "$n" process -q --json --tail 0.25 "$S" "$O/j.wav" gain gain=-0.5 \
  urn:vernier-test:latency gain-stereo @Inverted &&
  json_check "$n" '
keys = {"input", "output", "frames", "channels", "sample_rate", "format",
        "latency_frames", "tail_frames", "steps", "clipped_samples"}
assert set(j) >= keys, keys - set(j)
assert j["input"].endswith("stereo.wav") and j["output"].endswith("j.wav"), j
# spec/cli.md does not say whether "frames" counts the input or the output
# (input + tail); either is accepted until it does.
assert j["frames"] in (48000, 48000 + 12000), j["frames"]
assert (j["channels"], j["sample_rate"]) == (2, 48000), j
assert (j["latency_frames"], j["tail_frames"], j["clipped_samples"]) == (100, 12000, 0), j
s = j["steps"]
for e in s:
    assert set(e) >= {"uri", "instances", "latency_frames", "controls"}, e
assert [e["uri"] for e in s] == ["urn:vernier:gain-mono", "urn:vernier-test:latency", "urn:vernier:gain-stereo"], s
assert [e["instances"] for e in s] == [2, 2, 1], s
assert [e["latency_frames"] for e in s] == [0, 100, 0], s
assert s[0]["controls"] == {"gain": -0.5, "trim": 0}, s[0]
assert s[2]["controls"] == {"gain": -1, "trim": 0}, s[2]
'

echo "-- stderr, -q, --"
# Progress is for a person watching: on a terminal only, and never with -q.
n="progress on stderr when it is a terminal (a percentage)"
AUDIO write "$I/long.wav" --frames 480000 --channels 2 --seed 63
check "$n" AUDIO tty --want % -- "$VERNIER" process "$I/long.wav" "$O/tty.wav" gain
n="no progress on a terminal with -q"
check "$n" AUDIO tty --want "" -- "$VERNIER" process -q "$I/long.wav" "$O/tty-q.wav" gain
one_line_no_cr() {
  [ "$(wc -l <"$T/err")" -eq 1 ] && ! grep -q "$(printf '\r')" "$T/err"
}
n="a run without -q: one summary line on stderr, no progress (not a terminal)"
run_ok "$n" process "$M" "$O/loud.wav" gain && check "$n" one_line_no_cr
n="a run with -q: nothing on stderr"
run_ok "$n" process -q "$M" "$O/quiet.wav" gain && check "$n" test ! -s "$T/err"
n="--json without -q: stdout is the JSON document alone"
run_ok "$n" process --json "$M" "$O/json-loud.wav" gain && json_check "$n" '
assert j["frames"] == 4800'
n="options anywhere before --: after the steps"
run_ok "$n" process "$M" "$O/late-opts.wav" gain gain=-1 -q --block 7 &&
  check "$n" AUDIO expect "$O/late-opts.wav" "$M" --scale -1
cp "$M" "$I/-dash.wav"
cd "$I" || exit 1
n="after --, words starting with - are files"
run_ok "$n" process -q -- -dash.wav -out.wav gain gain=-1 &&
  check "$n" AUDIO expect "$I/-out.wav" "$M" --scale -1
cd "$SRCDIR" || exit 1
rm -f "$I/-dash.wav" "$I/-out.wav"

# lilv 0.24 (and its lv2ls) crashes on a relative LV2_PATH entry; the host
# hands lilv the same list made absolute.
rel=$(realpath --relative-to="$PWD" "${LV2_ASAN%%:*}")
LV2_PATH="$rel" "$VERNIER" list >"$T/out" 2>"$T/err" </dev/null
RC=$?
expect_rc "a relative LV2_PATH works (list)" 0
check "a relative LV2_PATH finds our plugins" grep -q '^gain ' "$T/out"
LV2_PATH="$rel:no/such/folder" "$VERNIER" process -q "$M" "$O/rel.wav" \
  gain gain=-1 >"$T/out" 2>"$T/err" </dev/null
RC=$?
expect_rc "a relative LV2_PATH works (process)" 0
