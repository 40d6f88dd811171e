#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# Every bad input to `vernier process` gets its exit code, one line on stderr
# starting "vernier: " that names the bad value and what is allowed, and
# leaves nothing behind: no OUT, no temporary file in OUT's folder, the
# input untouched (spec/cli.md "Exit codes", "Messages"; issue 2).
# `refuse` (tests/host/common.inc) checks the code, the line and the folders.
# shellcheck disable=SC2034 # AS_NOBODY is read by refuse in common.inc
. "$(dirname "$0")/../lib.sh"
. "$SRCDIR/tests/host/common.inc"
need_host
AS_NOBODY=

M=$I/mono.wav
AUDIO write "$M" --frames 4800 --seed 21
AUDIO write "$I/stereo.wav" --frames 4800 --channels 2 --seed 22
AUDIO write "$I/three.wav" --frames 4800 --channels 3 --seed 23
AUDIO write "$I/pcm16.wav" --frames 4800 --encoding pcm16 --seed 24
AUDIO write "$I/empty.wav" --frames 0
echo "these are words, not samples" >"$I/text.wav"
OUT=$O/out.wav

echo "-- input (exit 3)"
refuse "missing input" 3 process "$I/nope.wav" "$OUT" gain
says "missing input: names the file" "nope.wav"

refuse "a folder as input" 3 process "$I" "$OUT" gain

refuse "not an audio file (text named .wav)" 3 process "$I/text.wav" "$OUT" gain
says "not an audio file: names the file" "text.wav"

refuse "empty input (a WAV with 0 frames)" 3 process "$I/empty.wav" "$OUT" gain
says "empty input: names the file" "empty.wav"
says_re "empty input: says there are no frames" "no (audio )?frames|0 frames|zero frames|empty"

# chmod 000 does not stop root from reading (common practice: root bypasses
# file permission bits). As root, run this case as user nobody instead.
unreadable() {
  chmod 000 "$I/locked.wav"
  refuse "unreadable input (chmod 000)$1" 3 process "$I/locked.wav" "$OUT" gain
  says "unreadable input: names the file" "locked.wav"
}
cp "$M" "$I/locked.wav"
if [ "$(id -u)" -ne 0 ]; then
  unreadable ""
elif command -v setpriv >/dev/null &&
  chmod 711 "$T" && chmod 755 "$I" && chmod 777 "$O" &&
  setpriv --reuid=65534 --regid=65534 --clear-groups \
    sh -c 'test -x "$1" && test -r "$2" && test -r "$3"' sh "$VERNIER" \
    "$BUILD/test-bundles/latency.lv2/manifest.ttl" "$SRCDIR/tests/lsan.supp"; then
  AS_NOBODY=1
  unreadable " as user nobody"
  chmod 755 "$O"
  refuse "output folder not writable (as user nobody)" 4 process "$M" "$OUT" gain
  says "output folder not writable: names the folder or file" "$O"
  AS_NOBODY=
  chmod 700 "$T"
else
  skip "unreadable input (chmod 000)" \
    "running as root, where chmod 000 does not stop reading, and user nobody cannot run $VERNIER from here"
fi
rm -f "$I/locked.wav"

# With --overwrite, only the same-file check can stop these; gain=-1 makes
# any output differ from the input, so a replaced file shows in the checksums.
echo "-- OUT is IN (exit 3, input untouched)"
refuse "OUT is IN, same path" 3 process --overwrite "$M" "$M" gain gain=-1
says "OUT is IN: names the file" "mono.wav"

ln -s mono.wav "$I/link.wav"
refuse "OUT is a symlink to IN" 3 process --overwrite "$M" "$I/link.wav" gain gain=-1
refuse "IN is a symlink to OUT" 3 process --overwrite "$I/link.wav" "$M" gain gain=-1
ln "$M" "$I/hard.wav"
refuse "OUT is a hard link to IN" 3 process --overwrite "$M" "$I/hard.wav" gain gain=-1
refuse "OUT is IN spelled with ../" 3 process --overwrite "$M" "$I/../in/mono.wav" gain gain=-1
cd "$I" || exit 1
refuse "OUT is IN spelled ./mono.wav" 3 process --overwrite mono.wav ./mono.wav gain gain=-1
cd "$SRCDIR" || exit 1
rm -f "$I/link.wav" "$I/hard.wav"

echo "-- output (exit 4)"
cp "$I/pcm16.wav" "$O/exists.wav"
refuse "OUT exists without --overwrite (OUT untouched)" 4 process "$M" "$O/exists.wav" gain
says "OUT exists: names the file" "exists.wav"
says "OUT exists: names --overwrite" "--overwrite"
rm -f "$O/exists.wav"

refuse "output folder missing" 4 process "$M" "$O/no-such-dir/out.wav" gain
says "output folder missing: names it" "no-such-dir"

echo "-- plugin (exit 5)"
refuse "unknown plugin name" 5 process "$M" "$OUT" gian
says "unknown plugin: names it" "'gian'"
says "unknown plugin: lists ours (gain)" "gain"
says "unknown plugin: lists ours (polarity)" "polarity"

refuse "unknown plugin URI" 5 process "$M" "$OUT" urn:vernier-test:no-such-plugin
says "unknown plugin URI: names it" "urn:vernier-test:no-such-plugin"

refuse "plugin needing a feature the host lacks" 5 process "$M" "$OUT" urn:vernier-test:needs-feature
says "needs-feature: names the feature URI" "urn:vernier-test:no-such-feature"

echo "-- processing (exit 6)"
AUDIO write "$I/whole.flac" --encoding pcm16 --frames 96000 --seed 25
AUDIO damage "$I/whole.flac" "$I/cut.flac" truncate
AUDIO damage "$I/whole.flac" "$I/garbled.flac" corrupt
rm -f "$I/whole.flac"
refuse "a FLAC file cut in half (read error mid-file)" 6 process "$I/cut.flac" "$O/out.flac" gain
says "cut FLAC: names the file" "cut.flac"
refuse "a FLAC file garbled mid-file (read error)" 6 process "$I/garbled.flac" "$O/out.flac" gain
says "garbled FLAC: names the file" "garbled.flac"

echo "-- settings (exit 2)"
refuse "unknown control symbol" 2 process "$M" "$OUT" gain gian=1
says "unknown symbol: names it" "gian"
says_re "unknown symbol: lists the controls gain and trim" "gian.*(gain.*trim|trim.*gain)"

refuse "unknown symbol on the stereo polarity" 2 process "$I/stereo.wav" "$OUT" polarity-stereo invert=1
says "unknown symbol: lists invert_left" "invert_left"
says "unknown symbol: lists invert_right" "invert_right"

# The range may be printed as "-1 .. 1", "[-1, 1]", "-1.0 to 1.0" ...
R1='-1(\.0*)?[^0-9]{1,6}\+?1(\.0*)?([^0-9.]|$)'
R24='-24(\.0*)?[^0-9]{1,6}\+?24(\.0*)?([^0-9.]|$)'
refuse "gain=2 out of range" 2 process "$M" "$OUT" gain gain=2
says "gain=2: names the value" "2"
says_re "gain=2: says the range -1 .. 1" "$R1"
refuse "gain=-1.0001 out of range" 2 process "$M" "$OUT" gain gain=-1.0001
says "gain=-1.0001: names the value" "-1.0001"
refuse "trim=30 out of range" 2 process "$M" "$OUT" gain trim=30
says_re "trim=30: says the range -24 .. 24" "$R24"
refuse "an integer control out of range (echo frames=5000)" 2 process "$M" "$OUT" urn:vernier-test:echo frames=5000
says_re "frames=5000: says the range 1 .. 4096" '1(\.0*)?[^0-9]{1,6}4096'

for v in abc 1x nan inf 0x1p-1junk ""; do
  refuse "gain='$v' is not a number" 2 process "$M" "$OUT" gain "gain=$v"
  [ -n "$v" ] && says "gain='$v': names the value" "$v"
done
refuse "an integer control given 10.5 (echo frames=10.5)" 2 process "$M" "$OUT" urn:vernier-test:echo frames=10.5
says "frames=10.5: names the value" "10.5"
refuse "a toggle given 'maybe'" 2 process "$M" "$OUT" polarity invert=maybe
says "invert=maybe: names the value" "maybe"

refuse "unknown preset" 2 process "$M" "$OUT" gain @Foo
says "unknown preset: names it" "Foo"
says "unknown preset: lists the presets" "Inverted"
refuse "a preset of another plugin (polarity @Inverted)" 2 process "$M" "$OUT" polarity @Inverted
refuse "a setting before any step" 2 process "$M" "$OUT" gain=1 gain

echo "-- channels (exit 2)"
refuse "stereo plugin on a mono file" 2 process "$M" "$OUT" gain-stereo
says "channels: names the plugin" "gain-stereo"
says_re "channels: says the file has 1 channel" "(^|[^0-9])1 channel"
says_re "channels: says the plugin's 2 audio ports" "2 (audio )?(input|in)"
refuse "stereo plugin on a 3-channel file" 2 process "$I/three.wav" "$OUT" polarity-stereo
says_re "channels: says the file has 3 channels" "(^|[^0-9])3 channels"

echo "-- options and usage (exit 2)"
refuse "--block 0" 2 process --block 0 "$M" "$OUT" gain
says_re "--block 0: says the range 1 .. 65536" '1[^0-9]{1,6}65536'
for v in 65537 -5 1.5 abc ""; do
  refuse "--block '$v'" 2 process --block "$v" "$M" "$OUT" gain
done
refuse "--block with no value (last word)" 2 process "$M" "$OUT" gain --block
for v in -1 abc nan inf ""; do
  refuse "--tail '$v'" 2 process --tail "$v" "$M" "$OUT" gain
done
refuse "unknown option" 2 process --frobnicate "$M" "$OUT" gain
says "unknown option: names it" "--frobnicate"
refuse "--format with an unknown container" 2 process --format nope "$M" "$OUT" gain
says "--format nope: names it" "nope"
refuse "--format with an encoding the container cannot hold" 2 process --format wav:vorbis "$M" "$OUT" gain
refuse "OUT .ogg from a PCM16 input without --format" 2 process "$I/pcm16.wav" "$O/out.ogg" gain
says "OUT .ogg with PCM16: suggests --format" "--format"
refuse "no STEP" 2 process "$M" "$OUT"
refuse "no OUT" 2 process "$M"
refuse "unknown sub-command" 2 frobnicate "$M" "$OUT" gain
says "unknown sub-command: names it" "frobnicate"
