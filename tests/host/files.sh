#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# What `vernier process` writes (spec/cli.md "Files", issue 2): the input's
# container, encoding and rate unless --format says otherwise; PCM through a
# pass-through chain bit for bit; the broadcast-WAV time reference and the
# string metadata kept; samples that clip in fixed point counted.
# WAV inputs are built by hand (tests/host/audio.py), FLAC through libsndfile.
. "$(dirname "$0")/../lib.sh"
. "$SRCDIR/tests/host/common.inc"
need_host

# info_is NAME FILE KEY VALUE: audio.py's reading of FILE has KEY = VALUE.
info_is() {
  i_got=$(AUDIO info "$2" "$3" 2>&1)
  if [ "$i_got" = "$4" ]; then
    pass "$1"
  else
    fail "$1" "$3 is '$i_got', expected '$4'"
  fi
}

# PCM inputs hold the extreme codes (-2^(b-1) and 2^(b-1)-1) in their first
# frames: a float<->int scaling that is not the same both ways changes them.
AUDIO write "$I/p16.wav" --encoding pcm16 --channels 2 --frames 24000 --seed 31
AUDIO write "$I/p24.wav" --encoding pcm24 --frames 24000 --seed 32
AUDIO write "$I/p16.flac" --encoding pcm16 --channels 2 --frames 24000 --seed 33
AUDIO write "$I/p24.flac" --encoding pcm24 --frames 24000 --seed 34
AUDIO write "$I/dbl.wav" --encoding double --frames 4800 --seed 35

echo "-- bit-exact PCM"
n="PCM16 WAV through gain at defaults: bit-identical, still PCM16 WAV"
run_ok "$n" process -q "$I/p16.wav" "$O/p16.wav" gain &&
  check "$n" AUDIO same "$O/p16.wav" "$I/p16.wav"
# A temporary file from mkstemp is 0600; renamed as it is, OUT would be
# unreadable for the rest of the group (common practice: a new file gets
# 0666 less the umask).
n="OUT has the mode a new file gets (0666 less the umask), not 0600"
[ -f "$O/p16.wav" ] && : >"$T/probe" &&
  check "$n" test "$(stat -c %a "$O/p16.wav")" = "$(stat -c %a "$T/probe")"
AUDIO write "$O/replace.wav" --frames 100 --seed 30
n="--overwrite replaces an existing OUT with the new output"
run_ok "$n" process -q --overwrite "$I/p16.wav" "$O/replace.wav" gain &&
  check "$n" AUDIO same "$O/replace.wav" "$I/p16.wav"
n="PCM24 WAV through gain at defaults: bit-identical, still PCM24 WAV"
run_ok "$n" process -q "$I/p24.wav" "$O/p24.wav" gain &&
  check "$n" AUDIO same "$O/p24.wav" "$I/p24.wav"
n="PCM16 WAV through polarity twice and the latency plugin: bit-identical"
run_ok "$n" process -q "$I/p16.wav" "$O/p16-chain.wav" polarity invert=on \
  urn:vernier-test:latency polarity invert=on &&
  check "$n" AUDIO same "$O/p16-chain.wav" "$I/p16.wav"
n="FLAC (PCM16) in, FLAC out, bit-identical"
run_ok "$n" process -q "$I/p16.flac" "$O/p16.flac" gain &&
  check "$n" AUDIO same "$O/p16.flac" "$I/p16.flac"
n="FLAC (PCM24) in, FLAC out, bit-identical"
run_ok "$n" process -q "$I/p24.flac" "$O/p24.flac" gain &&
  check "$n" AUDIO same "$O/p24.flac" "$I/p24.flac"

echo "-- --format and the output's extension"
n="--format wav:float: a PCM16 input comes out as float WAV, code/32768 exactly"
run_ok "$n" process -q --format wav:float "$I/p16.wav" "$O/to-float.wav" gain &&
  info_is "$n: encoding" "$O/to-float.wav" encoding float &&
  check "$n" AUDIO expect "$O/to-float.wav" "$I/p16.wav"
n="--format wav:pcm24: a PCM16 input comes out as PCM24, the same values"
run_ok "$n" process -q --format wav:pcm24 "$I/p16.wav" "$O/to-24.wav" gain &&
  info_is "$n: encoding" "$O/to-24.wav" encoding pcm24 &&
  check "$n" AUDIO expect "$O/to-24.wav" "$I/p16.wav"
n="--format flac: a PCM16 WAV comes out as PCM16 FLAC, the same values"
run_ok "$n" process -q --format flac "$I/p16.wav" "$O/fmt.flac" gain &&
  info_is "$n: container" "$O/fmt.flac" container flac &&
  info_is "$n: encoding" "$O/fmt.flac" encoding pcm16 &&
  check "$n" AUDIO expect "$O/fmt.flac" "$I/p16.wav"
n="OUT named .flac, no --format: FLAC with the input's PCM16 encoding"
run_ok "$n" process -q "$I/p16.wav" "$O/ext.flac" gain &&
  info_is "$n: container" "$O/ext.flac" container flac &&
  info_is "$n: encoding" "$O/ext.flac" encoding pcm16 &&
  check "$n" AUDIO expect "$O/ext.flac" "$I/p16.wav"
for c in wavex w64 rf64 aiff caf flac; do
  n="--format $c: a PCM16 WAV comes out as PCM16 $c, the same values"
  run_ok "$n" process -q --format $c "$I/p16.wav" "$O/fmt-$c.out" gain &&
    info_is "$n: container" "$O/fmt-$c.out" container $c &&
    info_is "$n: encoding" "$O/fmt-$c.out" encoding pcm16 &&
    check "$n" AUDIO expect "$O/fmt-$c.out" "$I/p16.wav"
done
# Vorbis is lossy: only the container, the encoding and the length are
# checked (the frame count is kept by libsndfile 1.2, seen here, not a
# documented promise).
n="--format ogg:vorbis writes Ogg Vorbis with the input's frames"
run_ok "$n" process -q --format ogg:vorbis "$I/p16.wav" "$O/fmt.ogg" gain &&
  info_is "$n: container" "$O/fmt.ogg" container ogg &&
  info_is "$n: encoding" "$O/fmt.ogg" encoding vorbis &&
  info_is "$n: frames" "$O/fmt.ogg" frames 24000
# The plugins see float32: a double input keeps its encoding, and its values
# come back rounded to float32 (relative error at most 2^-24 = 6e-8).
n="a double WAV keeps the double encoding; values within 6e-8 (float32)"
run_ok "$n" process -q "$I/dbl.wav" "$O/dbl.wav" gain &&
  info_is "$n: encoding" "$O/dbl.wav" encoding double &&
  check "$n" AUDIO expect "$O/dbl.wav" "$I/dbl.wav" --tol 6e-8

echo "-- sample rate"
for r in 22050 44100 96000 192000; do
  AUDIO write "$I/r$r.wav" --rate $r --frames 2000 --seed 36
  n="a $r Hz input gives a $r Hz output"
  run_ok "$n" process -q "$I/r$r.wav" "$O/r$r.wav" gain gain=-1 &&
    check "$n" AUDIO expect "$O/r$r.wav" "$I/r$r.wav" --scale -1
done

echo "-- metadata"
# The bext time reference counts samples since midnight (EBU Tech 3285, from
# memory); 23:00:00 at 96 kHz is 7948800000, above 2^32, so both 32-bit
# halves of the field count.
AUDIO write "$I/bwf.wav" --rate 96000 --frames 9600 --seed 37 \
  --bext-desc "Bass DI, take 3" --bext-ref 7948800000
AUDIO write "$I/bwf24.wav" --rate 96000 --frames 9600 --encoding pcm24 \
  --seed 38 --bext-desc "Kick in" --bext-ref 123456789
bext_is() {
  check "$1" "$PY" -c '
import json, sys
b = json.loads(sys.argv[1])
assert b, "no bext chunk"
assert b["time_reference"] == int(sys.argv[2]), b
assert b["description"] == sys.argv[3], b' "$(AUDIO info "$2" bext)" "$3" "$4"
}
n="broadcast WAV: time reference and description kept"
run_ok "$n" process -q "$I/bwf.wav" "$O/bwf.wav" gain gain=-1 &&
  bext_is "$n" "$O/bwf.wav" 7948800000 "Bass DI, take 3"
n="broadcast WAV (PCM24, bit-exact path): time reference and description kept"
run_ok "$n" process -q "$I/bwf24.wav" "$O/bwf24.wav" gain &&
  bext_is "$n" "$O/bwf24.wav" 123456789 "Kick in"
n="broadcast WAV through --format wav:pcm24 and a latency plugin: time reference kept"
run_ok "$n" process -q --format wav:pcm24 "$I/bwf.wav" "$O/bwf-to24.wav" urn:vernier-test:latency &&
  bext_is "$n" "$O/bwf-to24.wav" 7948800000 "Bass DI, take 3"

AUDIO write "$I/tagged.wav" --frames 4800 --encoding pcm16 --seed 39 \
  --title "Bass DI" --artist "Vernier tests" --comment "DI before the amp" \
  --date 2024-01-02 --album "Session 1" --genre Test --copyright "none"
# strings_are NAME FILE KEYS: FILE holds those of tagged.wav's strings.
strings_are() {
  check "$1" "$PY" -c '
import json, sys
want = {"title": "Bass DI", "artist": "Vernier tests",
        "comment": "DI before the amp", "date": "2024-01-02",
        "album": "Session 1", "genre": "Test", "copyright": "none"}
got = json.loads(sys.argv[1])
bad = {k: got.get(k) for k in sys.argv[2].split() if got.get(k) != want[k]}
assert not bad, bad
' "$(AUDIO info "$2" strings)" "$3"
}
ALL_STRINGS="title artist comment date album genre copyright"
n="LIST/INFO strings kept, WAV to WAV ($ALL_STRINGS)"
run_ok "$n" process -q "$I/tagged.wav" "$O/tagged.wav" gain &&
  strings_are "$n" "$O/tagged.wav" "$ALL_STRINGS"
n="title and artist kept from WAV to FLAC (--format flac)"
run_ok "$n" process -q --format flac "$I/tagged.wav" "$O/tagged.flac" gain &&
  strings_are "$n" "$O/tagged.flac" "title artist"

echo "-- clipping"
# 57 samples beyond full scale in the left channel, 40 in the right (the
# clip signal of audio.py): 97 samples, in 57 frames.
clipped=$(AUDIO write "$I/hot.wav" --signal clip --channels 2 --frames 4800 --seed 40)
# warns_count N: a stderr line that mentions clipping holds the number N.
warns_count() {
  grep -i clip "$T/err" | grep -Eq "(^|[^0-9])$1([^0-9]|\$)"
}
n="float above 1.0 written as PCM16: warns with the count ($clipped samples), also with -q"
run_ok "$n" process -q --format wav:pcm16 "$I/hot.wav" "$O/hot16.wav" gain &&
  check "$n" warns_count "$clipped"
# Samples within range round to the nearest code (either way on a tie:
# 0.5/32768 = 1.53e-5); those beyond it land on the end codes.
n="clipped PCM16 output: saturated at full scale, the rest rounded to the nearest code"
[ -f "$O/hot16.wav" ] &&
  check "$n" AUDIO expect "$O/hot16.wav" "$I/hot.wav" --clip-to pcm16 --tol 1.5259e-5
n="--json clipped_samples is $clipped"
run_ok "$n" process -q --json --format wav:pcm16 "$I/hot.wav" "$O/hot16j.wav" gain &&
  check "$n" "$PY" -c '
import json, sys
j = json.load(open(sys.argv[1]))
assert j["clipped_samples"] == int(sys.argv[2]), j["clipped_samples"]' "$T/out" "$clipped"
n="float above 1.0 kept as float: values kept, no clip warning, clipped_samples 0"
run_ok "$n" process -q --json "$I/hot.wav" "$O/hot-float.wav" gain &&
  check "$n: values" AUDIO same "$O/hot-float.wav" "$I/hot.wav" &&
  check "$n: no warning" sh -c '! grep -qi clip "$1"' sh "$T/err" &&
  check "$n: json" "$PY" -c '
import json, sys
assert json.load(open(sys.argv[1]))["clipped_samples"] == 0' "$T/out"
