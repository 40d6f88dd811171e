# SPDX-License-Identifier: GPL-3.0-or-later
"""Audio files for the host suites, written and read without the host.

WAV is written and parsed by hand (RIFF chunks: fmt, bext, LIST/INFO, data),
so the checks do not lean on the library the host uses; other containers
(FLAC) go through libsndfile by ctypes. Run with Debian's /usr/bin/python3.

  audio.py write PATH [--encoding E] [--rate R] [--channels C] [--frames N]
                 [--signal noise|clip|silence] [--seed S]
                 [--bext-desc D --bext-ref N] [--title T] [--artist A]
                 [--comment C] [--date D] [--album A] [--genre G]
                 [--copyright C]
      E: pcm16 pcm24 pcm32 float double. noise: float encodings uniform in
      +-0.9; PCM encodings every integer code equally likely, and the first
      frames hold the extreme codes (-2^(b-1), 2^(b-1)-1) and 0, +-1.
      clip (float): noise in +-0.9 with samples beyond +-1.0 at known places;
      prints their count.
  audio.py same A B           exit 0 iff same container, encoding, rate,
                              channels and bit-identical samples
  audio.py expect OUT IN [--scale K[,K2...]] [--tol T] [--tail-frames N]
                 [--echo D] [--clip-to pcm16]
      OUT must hold K * IN (one K for all channels, or one per channel),
      plus with --echo D that delayed by D frames at half level (the model
      of urn:vernier-test:echo); IN's channels and rate; IN's frames + N;
      each sample within T of the model (default 0: exact). The N tail
      frames hold what the model puts there (zeros without --echo).
      --clip-to pcm16 clips the model to what PCM16 holds (-1 .. 1-2^-15).
      PCM samples are read as code / 2^(bits-1).
  audio.py info PATH [KEY]    JSON: container, encoding, rate, channels,
                              frames, bext, strings (title, artist, ...),
                              chunk ids; or just the value of KEY
  audio.py tty --want TEXT -- CMD...
      run CMD with stderr on a pseudo-terminal; exit 0 iff it exits 0 and
      what it wrote there contains TEXT (with --want "": is empty)
  audio.py interrupt SIG DIR -- CMD...
      start CMD with SIG at its default action, wait until a new entry
      appears in DIR, send SIG, wait; prints shell assignments.
  audio.py interrupt create:NAME DIR -- CMD...
      the same, but instead of a signal, create DIR/NAME (one line of text)
      once the new entry appears, and let CMD run to its end.
  audio.py damage IN OUT truncate|corrupt
      OUT is IN cut in half, or with 2000 bytes in its middle inverted
"""
import ctypes
import ctypes.util
import json
import os
import shlex
import signal
import struct
import subprocess
import sys
import time

import numpy as np

PCM_BITS = {"pcm16": 16, "pcm24": 24, "pcm32": 32}
# RIFF INFO ids for the strings libsndfile knows (SF_STR_TITLE .. GENRE).
INFO_KEYS = {"INAM": "title", "ICOP": "copyright", "ISFT": "software",
             "IART": "artist", "ICMT": "comment", "ICRD": "date",
             "IPRD": "album", "ILIC": "license", "ITRK": "tracknumber",
             "IGNR": "genre"}
STRING_OPTS = ("title", "artist", "comment", "date", "album", "genre",
               "copyright")
SF_STR = {"title": 1, "copyright": 2, "software": 3, "artist": 4,
          "comment": 5, "date": 6, "album": 7, "license": 8,
          "tracknumber": 9, "genre": 0x10}
FLOAT_BITS = {"float": 32, "double": 64}


# ------------------------------------------------------------ signals ----
def make_signal(kind, encoding, frames, channels, seed):
    """Returns (samples, extra): float64 in [-1, 1) for float encodings or
    integer codes for PCM, shaped [frames, channels]."""
    rng = np.random.default_rng(seed)
    if kind == "silence" or frames == 0:
        if encoding in PCM_BITS:
            return np.zeros((frames, channels), np.int64), None
        return np.zeros((frames, channels)), None
    if encoding in PCM_BITS:
        if kind != "noise":
            sys.exit(f"audio.py: signal {kind} is for float encodings")
        b = PCM_BITS[encoding]
        lo, hi = -(1 << (b - 1)), (1 << (b - 1)) - 1
        x = rng.integers(lo, hi, size=(frames, channels), endpoint=True)
        head = np.array([lo, hi, 0, 1, -1, lo + 1, hi - 1])[:frames]
        x[: len(head), :] = head[:, None]
        return x, None
    x = rng.uniform(-0.9, 0.9, size=(frames, channels))
    if encoding == "float":
        x = x.astype(np.float32).astype(np.float64)
    if kind == "clip":
        # 57 frames over full scale in channel 0, the first 40 of them also
        # in channel 1: 57 + 40 clipped samples in stereo, 57 in mono.
        at = 100 + 3 * np.arange(57)
        if at[-1] >= frames:
            sys.exit("audio.py: clip needs at least 300 frames")
        x[at, 0] = np.where(np.arange(57) % 2 == 0, 1.5, -1.25)
        if channels > 1:
            x[at[:40], 1] = 2.0
        return x, int(np.count_nonzero(np.abs(x) > 1.0))
    return x, None


# ---------------------------------------------------------------- WAV ----
def chunk(cid, payload):
    pad = b"\0" if len(payload) % 2 else b""
    return cid + struct.pack("<I", len(payload)) + payload + pad


def bext_payload(desc, time_ref):
    b = desc.encode()[:256].ljust(256, b"\0")
    b += b"vernier tests".ljust(32, b"\0")  # Originator
    b += b"VERNIER-TEST-0001".ljust(32, b"\0")  # OriginatorReference
    b += b"2024-01-02" + b"23:00:00"  # OriginationDate, OriginationTime
    b += struct.pack("<IIH", time_ref & 0xFFFFFFFF, time_ref >> 32, 1)
    b += b"\0" * 64  # UMID
    b += b"\0" * 10  # loudness values (version 2 fields), unset
    b += b"\0" * 180  # reserved
    # No coding history: 602 bytes, the fixed part of the chunk (EBU Tech
    # 3285, from memory; libsndfile reads it back, as tests/host checks).
    return b


def info_payload(strings):
    body = b"INFO"
    for cid, text in strings:
        body += chunk(cid, text.encode() + b"\0")
    return body


def encode_samples(x, encoding):
    if encoding == "pcm16":
        return x.astype("<i2").tobytes()
    if encoding == "pcm24":
        v = x.astype("<i4").reshape(-1)
        b = v.view(np.uint8).reshape(-1, 4)[:, :3]
        return b.tobytes()
    if encoding == "pcm32":
        return x.astype("<i4").tobytes()
    if encoding == "float":
        return x.astype("<f4").tobytes()
    return x.astype("<f8").tobytes()


def write_wav(path, x, encoding, rate, bext=None, strings=()):
    channels = x.shape[1]
    bits = PCM_BITS.get(encoding) or FLOAT_BITS[encoding]
    tag = 1 if encoding in PCM_BITS else 3
    block = channels * bits // 8
    fmt = struct.pack("<HHIIHH", tag, channels, rate, rate * block, block, bits)
    body = b"WAVE" + chunk(b"fmt ", fmt)
    if tag == 3:
        body += chunk(b"fact", struct.pack("<I", x.shape[0]))
    if bext:
        body += chunk(b"bext", bext_payload(*bext))
    if strings:
        body += chunk(b"LIST", info_payload(strings))
    body += chunk(b"data", encode_samples(x, encoding))
    with open(path, "wb") as f:
        f.write(b"RIFF" + struct.pack("<I", len(body)) + body)


def parse_wav(path):
    with open(path, "rb") as f:
        b = f.read()
    if b[:4] != b"RIFF" or b[8:12] != b"WAVE":
        return None
    m = {"container": "wav", "chunks": [], "info": {}, "bext": None}
    pos, data = 12, None
    while pos + 8 <= len(b):
        cid, size = b[pos : pos + 4], struct.unpack("<I", b[pos + 4 : pos + 8])[0]
        p = b[pos + 8 : pos + 8 + size]
        m["chunks"].append(cid.decode("latin-1"))
        if cid == b"fmt ":
            tag, ch, rate, _, _, bits = struct.unpack("<HHIIHH", p[:16])
            if tag == 0xFFFE and len(p) >= 26:
                m["container"] = "wavex"
                tag = struct.unpack("<H", p[24:26])[0]
            m.update(tag=tag, channels=ch, rate=rate, bits=bits)
        elif cid == b"data":
            data = p
        elif cid == b"bext" and len(p) >= 602:
            lo, hi = struct.unpack("<II", p[338:346])
            m["bext"] = {
                "description": p[:256].split(b"\0")[0].decode("latin-1"),
                "originator": p[256:288].split(b"\0")[0].decode("latin-1"),
                "time_reference": lo | (hi << 32),
            }
        elif cid == b"LIST" and p[:4] == b"INFO":
            q = 4
            while q + 8 <= len(p):
                sid, n = p[q : q + 4], struct.unpack("<I", p[q + 4 : q + 8])[0]
                m["info"][sid.decode("latin-1")] = (
                    p[q + 8 : q + 8 + n].split(b"\0")[0].decode("latin-1"))
                q += 8 + n + (n & 1)
        pos += 8 + size + (size & 1)
    if data is None or "tag" not in m:
        return None
    m["strings"] = {INFO_KEYS[k]: v for k, v in m["info"].items() if k in INFO_KEYS}
    bits, ch = m["bits"], m["channels"]
    if m["tag"] == 1:
        m["encoding"] = f"pcm{bits}"
        if bits == 24:
            u = np.frombuffer(data[: len(data) // 3 * 3], np.uint8).reshape(-1, 3)
            v = (u[:, 0].astype(np.int64) | (u[:, 1].astype(np.int64) << 8)
                 | (u[:, 2].astype(np.int64) << 16))
            ints = np.where(v >= 1 << 23, v - (1 << 24), v)
        elif bits == 8:
            ints = np.frombuffer(data, np.uint8).astype(np.int64) - 128
        else:
            ints = np.frombuffer(data, f"<i{bits // 8}").astype(np.int64)
        ints = ints[: len(ints) // ch * ch].reshape(-1, ch)
        m["ints"] = ints
        m["samples"] = ints / float(1 << (bits - 1))
    elif m["tag"] == 3:
        m["encoding"] = "float" if bits == 32 else "double"
        v = np.frombuffer(data, "<f4" if bits == 32 else "<f8").astype(np.float64)
        m["samples"] = v[: len(v) // ch * ch].reshape(-1, ch)
    else:
        return None
    m["frames"] = m["samples"].shape[0]
    return m


# ---------------------------------------------------- libsndfile (ctypes) ----
class SFInfo(ctypes.Structure):
    _fields_ = [("frames", ctypes.c_int64), ("samplerate", ctypes.c_int),
                ("channels", ctypes.c_int), ("format", ctypes.c_int),
                ("sections", ctypes.c_int), ("seekable", ctypes.c_int)]


SF_MAJOR = {0x010000: "wav", 0x020000: "aiff", 0x130000: "wavex",
            0x170000: "flac", 0x180000: "caf", 0x200000: "ogg",
            0x220000: "rf64", 0x0B0000: "w64"}
SF_SUB = {0x0002: "pcm16", 0x0003: "pcm24", 0x0004: "pcm32", 0x0006: "float",
          0x0007: "double", 0x0060: "vorbis"}


def sndfile():
    lib = ctypes.CDLL(ctypes.util.find_library("sndfile") or "libsndfile.so.1")
    lib.sf_open.restype = ctypes.c_void_p
    lib.sf_open.argtypes = [ctypes.c_char_p, ctypes.c_int, ctypes.POINTER(SFInfo)]
    lib.sf_close.argtypes = [ctypes.c_void_p]
    lib.sf_get_string.restype = ctypes.c_char_p
    lib.sf_get_string.argtypes = [ctypes.c_void_p, ctypes.c_int]
    for fn in ("sf_readf_int", "sf_writef_int", "sf_readf_double"):
        getattr(lib, fn).restype = ctypes.c_int64
        getattr(lib, fn).argtypes = [ctypes.c_void_p, ctypes.c_void_p, ctypes.c_int64]
    return lib


def write_sndfile(path, x, encoding, rate, major):
    lib = sndfile()
    sub = {v: k for k, v in SF_SUB.items()}[encoding]
    info = SFInfo(0, rate, x.shape[1], major | sub, 0, 0)
    f = lib.sf_open(path.encode(), 0x20, ctypes.byref(info))
    if not f:
        sys.exit(f"audio.py: libsndfile cannot write {path}")
    # Integer codes left-aligned in 32 bits: what sf_writef_int expects.
    v = np.ascontiguousarray(x.astype(np.int64) << (32 - PCM_BITS[encoding]),
                             dtype=np.int32)
    lib.sf_writef_int(f, v.ctypes.data, x.shape[0])
    lib.sf_close(f)


def read_sndfile(path):
    lib = sndfile()
    info = SFInfo()
    f = lib.sf_open(path.encode(), 0x10, ctypes.byref(info))
    if not f:
        return None
    n, ch = info.frames, info.channels
    m = {"container": SF_MAJOR.get(info.format & 0x0FFF0000, "other"),
         "encoding": SF_SUB.get(info.format & 0xFFFF, "other"),
         "rate": info.samplerate, "channels": ch, "frames": n,
         "chunks": [], "info": {}, "bext": None, "strings": {}}
    for key, sid in SF_STR.items():
        v = lib.sf_get_string(f, sid)
        if v:
            m["strings"][key] = v.decode("utf-8", "replace")
    d = np.zeros((n, ch), np.float64)
    lib.sf_readf_double(f, d.ctypes.data, n)
    m["samples"] = d
    if m["encoding"] in PCM_BITS:
        lib.sf_close(f)
        f = lib.sf_open(path.encode(), 0x10, ctypes.byref(info))
        v = np.zeros((n, ch), np.int32)
        lib.sf_readf_int(f, v.ctypes.data, n)
        m["ints"] = v.astype(np.int64) >> (32 - PCM_BITS[m["encoding"]])
    lib.sf_close(f)
    return m


def load(path):
    if not os.path.isfile(path):
        sys.exit(f"audio.py: no file {path}")
    m = parse_wav(path) if path.lower().endswith(".wav") else None
    if m is None:
        m = read_sndfile(path)
    if m is None:
        sys.exit(f"audio.py: cannot read {path}")
    return m


# ----------------------------------------------------------- commands ----
def opts(argv, defaults):
    o, rest = dict(defaults), []
    it = iter(argv)
    for a in it:
        if a.startswith("--") and a[2:] in defaults:
            o[a[2:]] = next(it)
        else:
            rest.append(a)
    return o, rest


def cmd_write(argv):
    o, (path,) = opts(argv, {"encoding": "float", "rate": "48000",
                             "channels": "1", "frames": "48000",
                             "signal": "noise", "seed": "1", "bext-desc": "",
                             "bext-ref": "", **{k: "" for k in STRING_OPTS}})
    x, extra = make_signal(o["signal"], o["encoding"], int(o["frames"]),
                           int(o["channels"]), int(o["seed"]))
    rate = int(o["rate"])
    if path.endswith(".flac"):
        write_sndfile(path, x, o["encoding"], rate, 0x170000)
    else:
        bext = (o["bext-desc"], int(o["bext-ref"])) if o["bext-ref"] else None
        ids = {v: k.encode() for k, v in INFO_KEYS.items()}
        strings = [(ids[k], o[k]) for k in STRING_OPTS if o[k]]
        write_wav(path, x, o["encoding"], rate, bext, strings)
    if extra is not None:
        print(extra)


def cmd_same(argv):
    a, b = load(argv[0]), load(argv[1])
    for k in ("container", "encoding", "rate", "channels", "frames"):
        if a[k] != b[k]:
            sys.exit(f"{k}: {a[k]} vs {b[k]}")
    ka = "ints" if "ints" in a else "samples"
    diff = np.flatnonzero((a[ka] != b[ka]).any(axis=1))
    if len(diff):
        i = diff[0]
        sys.exit(f"{len(diff)} frames differ, first at {i}: {a[ka][i]} vs {b[ka][i]}")


def cmd_expect(argv):
    o, (out_path, in_path) = opts(argv, {"scale": "1", "tol": "0",
                                         "tail-frames": "0", "echo": "",
                                         "clip-to": ""})
    y, x = load(out_path), load(in_path)
    k = np.array([float(v) for v in o["scale"].split(",")])  # or per channel
    tol, tail = float(o["tol"]), int(o["tail-frames"])
    for key in ("channels", "rate"):
        if y[key] != x[key]:
            sys.exit(f"{key}: output {y[key]}, input {x[key]}")
    if y["frames"] != x["frames"] + tail:
        sys.exit(f"frames: output {y['frames']}, expected {x['frames']} + {tail}")
    want = np.zeros((x["frames"] + tail, x["channels"]))
    want[: x["frames"]] = k * x["samples"]
    if o["echo"]:
        d = int(o["echo"])
        want[d:] += 0.5 * want[:-d].copy()
    if o["clip-to"]:  # what a fixed-point file can hold
        b = PCM_BITS[o["clip-to"]]
        want = np.clip(want, -1.0, 1.0 - 2.0 ** (1 - b))
    err = np.abs(y["samples"] - want)
    if err.size and err.max() > tol:
        i = int(np.argmax(err.max(axis=1)))
        sys.exit(f"max error {err.max():.3g} > {tol:g}, worst at frame {i}: "
                 f"got {y['samples'][i]}, want {want[i]}")


def cmd_info(argv):
    m = load(argv[0])
    keep = ("container", "encoding", "rate", "channels", "frames", "bext",
            "strings", "chunks")
    m = {k: m.get(k) for k in keep}
    if argv[1:]:
        print(m[argv[1]] if not isinstance(m[argv[1]], (dict, list))
              else json.dumps(m[argv[1]]))
    else:
        print(json.dumps(m))


def cmd_tty(argv):
    import pty
    want = argv[argv.index("--want") + 1]
    cmd = argv[argv.index("--") + 1 :]
    master, slave = pty.openpty()
    p = subprocess.Popen(cmd, stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL,
                         stderr=slave)
    os.close(slave)
    got = b""
    while True:
        try:
            chunk_ = os.read(master, 4096)
        except OSError:  # EIO: the other side is closed
            break
        if not chunk_:
            break
        got += chunk_
    rc = p.wait()
    os.close(master)
    text = got.decode("utf-8", "replace")
    if rc != 0:
        sys.exit(f"exit {rc}: {text[:300]!r}")
    if (want and want not in text) or (not want and text):
        sys.exit(f"wanted {want!r} on the terminal, got {text[:300]!r}")


def cmd_damage(argv):
    with open(argv[0], "rb") as f:
        b = bytearray(f.read())
    half = len(b) // 2
    if argv[2] == "truncate":
        b = b[:half]
    else:
        b[half : half + 2000] = bytes(x ^ 0xFF for x in b[half : half + 2000])
    with open(argv[1], "wb") as f:
        f.write(b)


def cmd_interrupt(argv):
    create = argv[0][7:] if argv[0].startswith("create:") else ""
    sig = None if create else getattr(signal, "SIG" + argv[0])
    watch = argv[1]
    cmd = argv[argv.index("--") + 1 :]
    before = set(os.listdir(watch))
    err = open(os.path.join(os.environ.get("T", "/tmp"), "interrupt.err"), "w")

    # A non-interactive shell starts background commands with SIGINT
    # ignored (POSIX sh, from memory); undo that for the command.
    def default_signals():
        signal.signal(signal.SIGINT, signal.SIG_DFL)
        signal.signal(signal.SIGTERM, signal.SIG_DFL)

    p = subprocess.Popen(cmd, stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL,
                         stderr=err, preexec_fn=default_signals)
    seen, t0 = "", time.monotonic()
    while time.monotonic() - t0 < 60 and p.poll() is None:
        new = sorted(set(os.listdir(watch)) - before)
        if new:
            seen = new[0]
            break
        time.sleep(0.005)
    if not create:
        time.sleep(0.1)  # into the run, past the header
    running = p.poll() is None
    if running and create:
        with open(os.path.join(watch, create), "x") as f:
            f.write("appeared while vernier was running\n")
    elif running:
        p.send_signal(sig)
    try:
        rc = p.wait(timeout=60)
    except subprocess.TimeoutExpired:
        p.kill()
        rc = p.wait()
        print("hung=1")
    status = 128 - rc if rc < 0 else rc
    print(f"seen={shlex.quote(seen)} running={int(running)} status={status} "
          f"by_signal={int(rc < 0)} waited={time.monotonic() - t0:.2f}")


def main():
    cmd, argv = sys.argv[1], sys.argv[2:]
    {"write": cmd_write, "same": cmd_same, "expect": cmd_expect,
     "info": cmd_info, "interrupt": cmd_interrupt, "tty": cmd_tty,
     "damage": cmd_damage}[cmd](argv)


if __name__ == "__main__":
    main()
