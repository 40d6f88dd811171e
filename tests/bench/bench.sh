#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# The speed table of `make bench` (run by `make bench-run` with BUILD set):
#   1. DSP: every plugin's run() at block 512 beside memcpy of the same
#      buffers (build/bench/bench_dsp);
#   2. host: `vernier process IN OUT gain gain=0.7` on a 10-minute stereo
#      48 kHz float32 WAV of noise beside a raw libsndfile copy of the same
#      file (build/bench/raw_copy);
#   3. measure: `vernier measure -q --json REF TARGET` on a 10-minute mono
#      48 kHz 24-bit pair beside reading both files with libsndfile
#      (build/bench/raw_read), and its peak memory on 10 minutes against
#      1 minute.
# Timings are for reading, never asserted: the script fails only when a tool
# it needs crashes or is missing, not when something is slow.
#
# Environment: VERNIER_BENCH_RUNS (timed runs of each command, default 5),
# VERNIER_BENCH_MINUTES (length of the file, default 10), VERNIER_BENCH_KEEP=1
# (keep the generated file in $BUILD/bench/ and reuse it next time).
set -u
BUILD=${BUILD:-build}
BUILD=$(cd "$BUILD" && pwd) || exit 1
PY=/usr/bin/python3 # Debian's python3, with numpy; the first on PATH may lack it
SRCDIR=$(cd "$(dirname "$0")/../.." && pwd)
B=$BUILD/bench
BENCH_DSP=$B/bench_dsp
RAW_COPY=$B/raw_copy
RAW_READ=$B/raw_read
VERNIER=$BUILD/vernier
RUNS=${VERNIER_BENCH_RUNS:-5}
MINUTES=${VERNIER_BENCH_MINUTES:-10}
RATE=48000
LV2_PATH=$BUILD/lv2 # our bundle only, never the machine's plugins
export LV2_PATH

IN=$B/noise-${MINUTES}min-stereo-48k-float.wav
OUT_RAW=$B/out-raw.wav
OUT_HOST=$B/out-vernier.wav
PROBE=$B/probe-1s.wav
PROBE_OUT=$B/probe-1s-out.wav
PORTS=$B/ports.txt
TIMES_RAW=$B/times-raw.txt
TIMES_SYNC=$B/times-sync.txt
TIMES_HOST=$B/times-vernier.txt
HOST_ERR=$B/vernier-stderr.txt
M_REF=$B/measure-${MINUTES}min-ref-48k-pcm24.wav
M_TGT=$B/measure-${MINUTES}min-target-48k-pcm24.wav
M_REF1=$B/measure-1min-ref.wav
M_TGT1=$B/measure-1min-target.wav
TIMES_READ=$B/times-read.txt
TIMES_MEASURE=$B/times-measure.txt

cleanup() {
  rm -f "$OUT_RAW" "$OUT_HOST" "$PROBE" "$PROBE_OUT" "$PORTS" "$TIMES_RAW" "$TIMES_SYNC" \
    "$TIMES_HOST" "$HOST_ERR" "$M_REF1" "$M_TGT1" "$TIMES_READ" "$TIMES_MEASURE"
  [ "${VERNIER_BENCH_KEEP:-0}" = 1 ] || rm -f "$IN" "$M_REF" "$M_TGT"
}
trap cleanup EXIT
trap 'exit 130' INT
trap 'exit 143' TERM

for tool in "$BENCH_DSP" "$RAW_COPY" "$RAW_READ"; do
  if [ ! -x "$tool" ]; then
    echo "bench: $tool is missing; run 'make bench'" >&2
    exit 1
  fi
done
mkdir -p "$B"

# median FILE FIELD: the median of one whitespace-separated column.
median() {
  awk -v f="$2" '{ print $f }' "$1" | sort -g | awk '
    { v[NR] = $1 }
    END { if (NR % 2) print v[(NR + 1) / 2]; else print (v[NR / 2] + v[NR / 2 + 1]) / 2 }'
}

# noise_wav PATH SECONDS: stereo float32 WAV at $RATE Hz, uniform noise at
# up to -6 dBFS, the same every time (fixed seed). Written in slices, so
# memory stays small whatever the length.
noise_wav() {
  "$PY" - "$1" "$2" "$RATE" 2 <<'EOF'
import struct, sys
import numpy as np
path, seconds, rate, channels = sys.argv[1], float(sys.argv[2]), int(sys.argv[3]), int(sys.argv[4])
frames = int(round(seconds * rate))
data = frames * channels * 4
rng = np.random.default_rng(48000)
with open(path, "wb") as f:
    # WAVE_FORMAT_IEEE_FLOAT (3), with the fact chunk non-PCM formats carry
    f.write(b"RIFF" + struct.pack("<I", 4 + 26 + 12 + 8 + data) + b"WAVE")
    f.write(b"fmt " + struct.pack("<IHHIIHHH", 18, 3, channels, rate,
                                  rate * channels * 4, channels * 4, 32, 0))
    f.write(b"fact" + struct.pack("<II", 4, frames))
    f.write(b"data" + struct.pack("<I", data))
    left = frames
    while left:
        n = min(left, 1 << 18)
        x = rng.random((n, channels), dtype=np.float32) - np.float32(0.5)
        f.write(x.astype("<f4").tobytes())
        left -= n
EOF
}

size_of() { wc -c <"$1" | tr -d ' '; }

cpu=$(sed -n 's/^model name[[:space:]]*: //p' /proc/cpuinfo 2>/dev/null | head -n 1)
echo "Vernier speed table, $(date -u '+%Y-%m-%d %H:%M UTC')"
echo "machine: $(uname -sm), ${cpu:-cpu unknown}, $(getconf _NPROCESSORS_ONLN) cores," \
  "load average $(cut -d ' ' -f 1-3 /proc/loadavg 2>/dev/null)"
echo "targets: gain and polarity DSP within 2x memcpy; vernier process gain" \
  "within 1.25x a raw copy; vernier measure within 3x reading both files"
echo

# ------------------------------------------------------------------ DSP ----
# Port indices and defaults straight from the .ttl, through lilv's lv2info,
# so a new plugin is measured at its defaults without an edit to bench_dsp.c.
: >"$PORTS"
if command -v lv2info >/dev/null 2>&1; then
  for uri in $("$BENCH_DSP" --list); do
    lv2info "$uri" 2>/dev/null | awk -v uri="$uri" '
      function flush() {
        if (idx == "") return
        k = "x"
        if (ctl && inp) k = "c"; else if (ctl && outp) k = "l"
        else if (aud && inp) k = "i"; else if (aud && outp) k = "o"
        print uri, idx, k, (def != "" ? def : (min != "" ? min : 0)), sym
      }
      /^\tPort [0-9]+:/ {
        flush(); idx = $2; sub(":", "", idx)
        ctl = aud = inp = outp = intype = 0; def = min = sym = ""; next
      }
      idx == "" { next }
      /^\t\t[A-Z][A-Za-z ]*:/ { intype = ($1 == "Type:") }
      intype && /#ControlPort$/ { ctl = 1 }
      intype && /#AudioPort$/ { aud = 1 }
      intype && /#InputPort$/ { inp = 1 }
      intype && /#OutputPort$/ { outp = 1 }
      $1 == "Symbol:" { sym = $2 }
      $1 == "Default:" { def = $2 }
      $1 == "Minimum:" { min = $2 }
      END { flush() }' >>"$PORTS"
  done
fi
if [ -s "$PORTS" ]; then
  "$BENCH_DSP" --ports "$PORTS" || exit 1
else
  echo "(lv2info found no ports: using the port maps built into bench_dsp.c)"
  "$BENCH_DSP" || exit 1
fi
echo

# ----------------------------------------------------------------- host ----
seconds=$((MINUTES * 60))
frames=$((seconds * RATE))
want=$((58 + frames * 8)) # the header noise_wav writes, then the frames
echo "Host: whole-file throughput on a ${MINUTES}-minute stereo 48 kHz" \
  "float32 WAV of noise ($((want / 1000000)) MB)"
if [ -f "$IN" ] && [ "$(size_of "$IN")" = "$want" ]; then
  echo "(reusing $IN)"
elif ! noise_wav "$IN" "$seconds"; then
  echo "  skipped: cannot generate the file ($PY with numpy is needed)"
  exit 0
fi

# Is the host usable yet? One second through it first, not ten minutes.
host_ok=0
why=
if [ ! -x "$VERNIER" ]; then
  why="$VERNIER is missing"
else
  noise_wav "$PROBE" 1 && rm -f "$PROBE_OUT"
  "$VERNIER" process -q "$PROBE" "$PROBE_OUT" gain gain=0.7 \
    >/dev/null 2>"$HOST_ERR"
  rc=$?
  if [ "$rc" -ne 0 ]; then
    why="exit $rc: $(head -n 1 "$HOST_ERR")"
  elif [ ! -f "$PROBE_OUT" ]; then
    why="exit 0 but it wrote no output file"
  else
    got=$(size_of "$PROBE_OUT")
    ref=$(size_of "$PROBE")
    if [ $((got * 10)) -lt $((ref * 9)) ] || [ $((got * 10)) -gt $((ref * 11)) ]; then
      why="its output for 1 s of input is $got bytes, the input $ref"
    else
      host_ok=1
    fi
  fi
fi

# Runs alternate raw copy / vernier, so a burst of load on a shared machine
# falls on both; one untimed raw copy first settles the page cache.
"$RAW_COPY" "$IN" "$OUT_RAW" || exit 1
: >"$TIMES_RAW"
: >"$TIMES_SYNC"
: >"$TIMES_HOST"
i=1
while [ "$i" -le "$RUNS" ]; do
  rm -f "$OUT_RAW"
  "$BENCH_DSP" --time "$RAW_COPY" "$IN" "$OUT_RAW" >>"$TIMES_RAW" || exit 1
  rm -f "$OUT_RAW"
  "$BENCH_DSP" --time "$RAW_COPY" --sync "$IN" "$OUT_RAW" >>"$TIMES_SYNC" ||
    exit 1
  rm -f "$OUT_RAW"
  if [ "$host_ok" = 1 ]; then
    rm -f "$OUT_HOST"
    t=$("$BENCH_DSP" --time "$VERNIER" process -q "$IN" "$OUT_HOST" \
      gain gain=0.7 2>"$HOST_ERR")
    rc=$?
    if [ "$rc" -ne 0 ]; then
      host_ok=0
      why="exit $rc on the long file: $(head -n 1 "$HOST_ERR")"
    else
      echo "$t" >>"$TIMES_HOST"
    fi
    rm -f "$OUT_HOST"
  fi
  i=$((i + 1))
done

raw_wall=$(median "$TIMES_RAW" 1)
raw_cpu=$(median "$TIMES_RAW" 2)
printf '%-42s %8s %8s %11s %7s %7s\n' "" "wall s" "cpu s" "" "vs raw" \
  "vs raw"
printf '%-42s %8s %8s %11s %7s %7s  %s\n' "command" "median" "median" \
  "x realtime" "wall" "cpu" "target"
awk -v w="$raw_wall" -v c="$raw_cpu" -v s="$seconds" 'BEGIN {
  printf "%-42s %8.3f %8.3f %10.0fx %6.2fx %6.2fx  %s\n",
    "raw_copy IN OUT (libsndfile, 512 frames)", w, c, s / w, 1, 1, "(baseline)" }'
# the same copy flushed to disk before it exits, as vernier is
paste -d ' ' "$TIMES_SYNC" "$TIMES_RAW" |
  awk '{ print $1 / $3, $2 / $4 }' >"$TIMES_SYNC.ratio"
awk -v w="$(median "$TIMES_SYNC" 1)" -v c="$(median "$TIMES_SYNC" 2)" \
  -v rw="$(median "$TIMES_SYNC.ratio" 1)" \
  -v rc="$(median "$TIMES_SYNC.ratio" 2)" -v s="$seconds" 'BEGIN {
  printf "%-42s %8.3f %8.3f %10.0fx %6.2fx %6.2fx  %s\n",
    "raw_copy --sync IN OUT (+ fsync)", w, c, s / w, rw, rc, "(baseline 2)" }'
rm -f "$TIMES_SYNC.ratio"
if [ "$host_ok" = 1 ]; then
  # vs raw: the median of the per-run ratios (each pair ran back to back)
  for base in RAW SYNC; do
    eval "times=\$TIMES_$base"
    paste -d ' ' "$TIMES_HOST" "$times" |
      awk '{ print $1 / $3, $2 / $4 }' >"$TIMES_HOST.ratio"
    label="vernier process -q IN OUT gain gain=0.7"
    [ "$base" = SYNC ] && label="  the same against baseline 2"
    awk -v w="$(median "$TIMES_HOST" 1)" -v c="$(median "$TIMES_HOST" 2)" \
      -v rw="$(median "$TIMES_HOST.ratio" 1)" \
      -v rc="$(median "$TIMES_HOST.ratio" 2)" -v s="$seconds" \
      -v label="$label" 'BEGIN {
      printf "%-42s %8.3f %8.3f %10.0fx %6.2fx %6.2fx  <= 1.25x: %s\n",
        label, w, c, s / w, rw, rc, (rw <= 1.25 ? "met" : "MISSED") }'
  done
  rm -f "$TIMES_HOST.ratio"
else
  printf '%-42s %s\n' "vernier process -q IN OUT gain gain=0.7" \
    "not usable yet, not timed ($why)"
fi
echo "wall s: elapsed time; cpu s: user + system time of the process; x realtime:"
echo "  seconds of audio per second of wall time; vs raw: median over the runs of"
echo "  vernier / raw_copy, each pair run back to back. $RUNS timed runs of each,"
echo "  alternating. IN is in the page cache and OUT goes to it, so this measures"
echo "  the CPU and memory, not the disk, except where a run flushes to disk:"
echo "  vernier fsyncs its output before renaming it into place (so a crash never"
echo "  leaves a renamed but empty file), and baseline 2 does the same."
echo "  Outputs are deleted after each run."

# -------------------------------------------------------------- measure ----
# The pair: white noise at -12 dBFS RMS, TARGET 123 frames late with its own
# noise 20 dB down, 24-bit PCM as recordings are (tests/tools/measure_scene.py
# long, in slices: the generator's memory stays small too).
echo
m_bytes=$((44 + frames * 3))
echo "Measure: a ${MINUTES}-minute mono 48 kHz 24-bit pair of noise" \
  "($((2 * m_bytes / 1000000)) MB), TARGET 123 frames late"
SCENE=$SRCDIR/tests/tools/measure_scene.py
if [ -f "$M_REF" ] && [ "$(size_of "$M_REF")" = "$m_bytes" ] &&
  [ -f "$M_TGT" ] && [ "$(size_of "$M_TGT")" = "$m_bytes" ]; then
  echo "(reusing $M_REF and $M_TGT)"
elif ! "$PY" "$SCENE" long "$M_REF" "$M_TGT" --seconds "$seconds" --offset 123; then
  echo "  skipped: cannot generate the pair ($PY with numpy is needed)"
  exit 0
fi

# Usable? The answer on the long pair itself, once (which also puts both
# files in the page cache for the timed runs).
m_ok=0
"$RAW_READ" "$M_REF" "$M_TGT" >/dev/null || exit 1
rc=0
[ -x "$VERNIER" ] &&
  { "$VERNIER" measure -q --json "$M_REF" "$M_TGT" >"$HOST_ERR.json" 2>"$HOST_ERR" || rc=$?; }
if [ ! -x "$VERNIER" ]; then
  why="$VERNIER is missing"
elif [ "$rc" -ne 0 ]; then
  why="exit $rc: $(head -n 1 "$HOST_ERR")"
elif ! "$PY" -c '
import json, sys
t = json.load(open(sys.argv[1]))["targets"][0]
sys.exit(0 if t["status"] == "found" and abs(t["offset"]["frames"] - 123) < 0.05 else 1)' \
  "$HOST_ERR.json"; then
  why="it did not find the 123 frames: $(head -c 200 "$HOST_ERR.json")"
else
  m_ok=1
fi
rm -f "$HOST_ERR.json"

: >"$TIMES_READ"
: >"$TIMES_MEASURE"
i=1
while [ "$i" -le "$RUNS" ]; do
  "$BENCH_DSP" --time "$RAW_READ" "$M_REF" "$M_TGT" >>"$TIMES_READ" 2>/dev/null || exit 1
  if [ "$m_ok" = 1 ]; then
    t=$("$BENCH_DSP" --time "$VERNIER" measure -q --json "$M_REF" "$M_TGT" 2>/dev/null)
    rc=$?
    if [ "$rc" -ne 0 ]; then
      m_ok=0
      why="exit $rc on a timed run"
    else
      echo "$t" >>"$TIMES_MEASURE"
    fi
  fi
  i=$((i + 1))
done

printf '%-42s %8s %8s %11s %7s %7s  %s\n' "command" "median" "median" \
  "x realtime" "wall" "cpu" "target"
awk -v w="$(median "$TIMES_READ" 1)" -v c="$(median "$TIMES_READ" 2)" -v s="$seconds" 'BEGIN {
  printf "%-42s %8.3f %8.3f %10.0fx %6.2fx %6.2fx  %s\n",
    "raw_read REF TARGET (libsndfile, 64k frames)", w, c, s / w, 1, 1, "(baseline)" }'
if [ "$m_ok" = 1 ]; then
  paste -d ' ' "$TIMES_MEASURE" "$TIMES_READ" |
    awk '{ print $1 / $3, $2 / $4 }' >"$TIMES_MEASURE.ratio"
  awk -v w="$(median "$TIMES_MEASURE" 1)" -v c="$(median "$TIMES_MEASURE" 2)" \
    -v rw="$(median "$TIMES_MEASURE.ratio" 1)" \
    -v rc="$(median "$TIMES_MEASURE.ratio" 2)" -v s="$seconds" 'BEGIN {
    printf "%-42s %8.3f %8.3f %10.0fx %6.2fx %6.2fx  <= 3x: %s\n",
      "vernier measure -q --json REF TARGET", w, c, s / w, rw, rc,
      (rw <= 3 ? "met" : "MISSED") }'
  rm -f "$TIMES_MEASURE.ratio"
else
  printf '%-42s %s\n' "vernier measure -q --json REF TARGET" "not usable yet, not timed ($why)"
fi

# Peak memory (maximum resident set, GNU time's %M, in KiB): bounded means
# ten times the material does not take ten times the memory.
if [ "$m_ok" = 1 ] && [ -x /usr/bin/time ]; then
  "$PY" "$SCENE" long "$M_REF1" "$M_TGT1" --seconds 60 --offset 123 || exit 1
  rss() {
    /usr/bin/time -f %M -o "$HOST_ERR" "$VERNIER" measure -q --json "$1" "$2" \
      >/dev/null 2>&1 && tail -n 1 "$HOST_ERR"
  }
  rss1=$(rss "$M_REF1" "$M_TGT1")
  rss10=$(rss "$M_REF" "$M_TGT")
  awk -v a="$rss1" -v b="$rss10" -v m="$MINUTES" 'BEGIN {
    printf "peak RSS of measure: 1 min %.1f MB, %d min %.1f MB (%.2fx for %dx the frames)\n",
      a / 1024, m, b / 1024, b / a, m }'
elif [ "$m_ok" = 1 ]; then
  echo "peak RSS of measure: not measured (/usr/bin/time is missing)"
fi
echo "x realtime: seconds of audio (one file) per second of wall time; vs raw:"
echo "  median over the runs of measure / raw_read, each pair run back to back,"
echo "  $RUNS timed runs of each after one untimed run of both, so both files"
echo "  are read from the page cache. measure reads every frame once (for the"
echo "  clipping count) but transforms at most 512 + 1024 segments of each file"
echo "  (host/measure_pair.c): beyond a minute or two only the reading grows"
echo "  with the length, and the memory not at all."

# ---- 4 GiB+ (issue 6, tests/host/hostile_big.sh): peak RSS on a sparse
# RF64 of 537919488 stereo float frames (4.3 GB, ~17 MB on disk) against
# its first 65536 frames; `measure` reads all of TARGET.
if [ -x /usr/bin/time ] && [ "$(df -Pk "$B" | awk 'NR == 2 { print $4 }')" -gt 6291456 ]; then
  HW="$SRCDIR/tests/tools/hostile_wav.py"
  BIG=$B/big-sparse.rf64
  "$PY" "$HW" big "$BIG" 537919488 && "$PY" "$HW" head "$BIG" "$B/big-head.wav" 65536 || exit 1
  rss_big() {
    /usr/bin/time -f %M -o "$HOST_ERR" "$VERNIER" measure -q --json "$B/big-head.wav" "$1" \
      >/dev/null 2>&1 && tail -n 1 "$HOST_ERR"
  }
  a=$(rss_big "$B/big-head.wav")
  b=$(rss_big "$BIG")
  awk -v a="$a" -v b="$b" 'BEGIN {
    printf "peak RSS of measure: TARGET 1.4 s %.1f MB, 4.3 GB RF64 %.1f MB (%.2fx for 8208x the frames)\n",
      a / 1024, b / 1024, b / a }'
  rm -f "$BIG" "$B/big-head.wav"
else
  echo "peak RSS of measure on 4.3 GB: not measured (/usr/bin/time missing or under 6 GB free)"
fi
