#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# Broken LV2 bundles (tests/bundles/broken/<case>.lv2, built into
# $BUILD/broken-bundles) and bad LV2_PATH entries: `vernier list`,
# `describe URI` and `process IN OUT URI` must survive each with a clear
# error (exit 5 for the plugin asked for, its message naming what is wrong),
# write nothing, and leave our own plugins listed and usable: one bad bundle
# must not take down the others. lilv prints its own lines first; the host's
# verdict is its last stderr line, starting "vernier: ".
. "$(dirname "$0")/../lib.sh"
. "$(dirname "$0")/common.inc"
need_host
BB=$BUILD/broken-bundles
if [ ! -e "$BB/null-instance.lv2/null-instance.so" ]; then
  fail "setup: $BB is built" "make check-run builds it"
  exit 0
fi
M=$I/m.wav
AUDIO write "$M" --frames 4800 --seed 21

# A folder on LV2_PATH holding only the broken bundles named (lilv takes
# every entry of such a folder for a bundle), after ours and the test
# bundles (where needs-feature.lv2 is).
only() {
  d=$T/only/$(echo "$*" | tr ' ' '+')
  mkdir -p "$d"
  for b in "$@"; do
    if [ -d "$BB/$b.lv2" ]; then ln -sfn "$BB/$b.lv2" "$d/"; fi
  done
  LV2_PATH="$LV2_ASAN:$d"
}

# verdict NAME CODE TEXT ARGS...: run the host with $LV2_PATH; expect CODE,
# a last stderr line "vernier: ..." holding TEXT, and nothing in $O.
verdict() {
  v_name=$1
  v_code=$2
  v_text=$3
  shift 3
  run_vernier "$@"
  expect_rc "$v_name: exit $v_code" "$v_code"
  v_last=$(tail -n 1 "$T/err")
  case $v_last in
  "vernier: "*"$v_text"*) pass "$v_name: says '$v_text'" ;;
  *) fail "$v_name: says '$v_text'" "last stderr line: $v_last" ;;
  esac
  if [ -z "$(ls -A "$O")" ]; then
    pass "$v_name: nothing written"
  else
    fail "$v_name: nothing written" "in $O: $(ls -A "$O" | tr '\n' ' ')"
    rm -rf "$O" && mkdir -p "$O"
  fi
}

# ours_fine NAME: with $LV2_PATH, list shows all 12 of ours and nothing of
# the host's own complaint, and gain -1 processes exactly.
ours_fine() {
  run_vernier list
  expect_rc "$1: list exit 0" 0
  n=$(grep -c '^[a-z-]* *urn:vernier:[a-z]*-\(mono\|stereo\) ' "$T/out")
  if [ "$n" -eq 12 ]; then
    pass "$1: list shows our 12 plugins"
  else
    fail "$1: list shows our 12 plugins" "$n of them: $(tr '\n' '|' <"$T/out")"
  fi
  if grep -q '^vernier: ' "$T/err"; then
    fail "$1: list has no error of its own" "$(grep '^vernier: ' "$T/err")"
  else
    pass "$1: list has no error of its own"
  fi
  run_ok "$1: gain -1 runs" process -q "$M" "$O/ok.wav" gain gain=-1 &&
    check "$1: gain -1 output exact" AUDIO expect "$O/ok.wav" "$M" --scale -1
  rm -f "$O/ok.wav"
}

# case BUNDLE TEXT [LILV_TEXT]: the plugin urn:vernier-test:BUNDLE, alone
# with ours and then with every broken bundle at once: describe and process
# exit 5 saying TEXT (and lilv saying LILV_TEXT), a chain with it after one
# of ours too, and ours still fine. Under valgrind (tests/valgrind.sh) only
# alone: the host takes the same paths both ways, and each run costs ~1 s.
WHERE="alone together"
[ -n "${VERNIER_VALGRIND:-}" ] && WHERE=alone
case_of() {
  c=$1
  u=urn:vernier-test:$c
  for where in $WHERE; do
    if [ "$where" = alone ]; then only "$c"; else LV2_PATH="$LV2_ASAN:$BB"; fi
    export LV2_PATH
    verdict "$c ($where): describe" 5 "$2" describe "$u"
    if [ -n "${3:-}" ] && [ "$where" = alone ]; then
      if grep -qF -- "$3" "$T/err"; then
        pass "$c: lilv says '$3'"
      else
        fail "$c: lilv says '$3'" "$(head -c 300 "$T/err" | tr '\n' '|')"
      fi
    fi
    verdict "$c ($where): process" 5 "$2" process -q "$M" "$O/x.wav" "$u"
    verdict "$c ($where): process after gain" 5 "$2" \
      process -q "$M" "$O/x.wav" gain "$u"
    ours_fine "$c ($where)"
  done
}

# The manifest is not Turtle: lilv cannot even learn the plugin's URI.
case_of bad-manifest "no plugin 'urn:vernier-test:bad-manifest'" \
  "bad-manifest.lv2/manifest.ttl"
case_of bad-plugin-ttl "its description is not valid LV2" "bad-plugin-ttl.ttl:17:"
case_of no-ports "its description names no port (lv2:port)"
case_of port-gap "its ports cannot be read" "missing port 1"
case_of no-binary "its description names no library (lv2:binary)"
case_of missing-binary "missing-binary.so is missing" "missing-binary.so"
case_of no-descriptor "cannot be instantiated" "No \`lv2_descriptor'"
case_of null-instance "cannot be instantiated at 48000 Hz (the plugin refused"
# tests/bundles/needs-feature.lv2 (on every suite's path): describe too.
case_of needs-feature "urn:vernier-test:no-such-feature"

# Presets that do not fit (bad-presets.lv2, a preset bundle).
only bad-presets
export LV2_PATH
verdict "preset for a plugin that does not exist, by label" 2 \
  "gain: no preset 'Orphan'; presets: " process -q "$M" "$O/x.wav" gain @Orphan
check "the orphan is not among gain's presets, the other bad one is" \
  sh -c 'tail -n 1 "$1" | sed "s/.*presets: //" | grep -v Orphan | grep -q Typo' sh "$T/err"
verdict "preset for a plugin that does not exist, by URI" 2 \
  "no preset 'urn:vernier-test:preset:orphan'" \
  process -q "$M" "$O/x.wav" gain @urn:vernier-test:preset:orphan
verdict "the plugin an orphan preset names" 5 \
  "no plugin 'urn:vernier-test:no-such-plugin'" \
  describe urn:vernier-test:no-such-plugin
# A symbol the plugin lacks: the rest of the preset applies, with a warning
# naming the preset and the symbol (steps.c: a preset is a set of values,
# and LV2 hosts skip the ones they cannot place).
n="preset with a symbol gain lacks"
run_ok "$n: runs" process -q "$M" "$O/typo.wav" gain @Typo &&
  check "$n: its gain=0.25 applied" AUDIO expect "$O/typo.wav" "$M" --scale 0.25
rm -f "$O/typo.wav"
says "$n: warns, naming preset and symbol" \
  "warning: gain: preset 'Typo' sets 'gian', which is not a control input; ignored"
run_vernier describe gain
expect_rc "describe gain with bad presets around: exit 0" 0
check "describe gain lists the Typo preset" \
  grep -q 'Typo *urn:vernier-test:preset:gain-typo' "$T/out"
ours_fine "bad presets"

# Not folders: a file and a dangling link where bundles belong, an empty
# folder, and an LV2_PATH entry that is itself a file.
L=$T/not-bundles
mkdir -p "$L/empty.lv2"
echo "not a bundle" >"$L/stray.lv2"
ln -s "$T/nowhere" "$L/dangling.lv2"
LV2_PATH="$LV2_ASAN:$L"
export LV2_PATH
ours_fine "a file, a dangling link and an empty folder as bundles"
check "lilv names the file that is not a folder" \
  grep -q 'stray.lv2/manifest.ttl (Not a directory)' "$T/err"
LV2_PATH="$LV2_ASAN:$M"
ours_fine "an LV2_PATH entry that is a file"

# Everything at once, and --json still parses with every plugin in it.
LV2_PATH="$LV2_ASAN:$BB:$L:$M"
ours_fine "every broken bundle at once"
run_vernier list --json
expect_rc "list --json with every broken bundle: exit 0" 0
check "list --json: valid JSON with ours and the broken ones that lilv lists" \
  "$PY" -c 'import json, sys
uris = [p["uri"] for p in json.load(open(sys.argv[1]))["plugins"]]
assert sum(u.startswith("urn:vernier:") for u in uris) == 12, uris
assert "urn:vernier-test:missing-binary" in uris, uris' "$T/out"
