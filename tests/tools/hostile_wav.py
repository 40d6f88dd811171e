# SPDX-License-Identifier: GPL-3.0-or-later
"""Hostile audio files for tests/host/hostile_files.sh, made byte by byte
(run with /usr/bin/python3). Every header field is written here, not by a
library, so a file can say what no library would write.

  hostile_wav.py make KIND PATH [FRAMES]
                                      one bad file (KIND below) made from a
                                      float32 mono 48 kHz file of FRAMES
  hostile_wav.py kinds                the KINDs, one a line
  hostile_wav.py big PATH FRAMES      an RF64 float32 stereo file of FRAMES
                                      frames, sparse: the header, islands
                                      of noise every 2^22 frames and a
                                      marked tail are written, the rest are
                                      holes that read as zeros
  hostile_wav.py head BIG OUT N       OUT: a float32 WAV of BIG's first N
                                      frames
  hostile_wav.py tail PATH N          the last N frames of an RF64/WAV
                                      float32 file, as "L R" lines
  hostile_wav.py frames PATH          the frame count a RIFF/RF64 float32
                                      file's header gives

The RIFF layout (fmt, fact, data, sizes little-endian) and RF64's ds64
chunk (EBU Tech 3306) are written from memory of those specifications;
that the host reads the good file and the 4 GiB one back, frame for frame
(hostile_files.sh, hostile_big.sh), is the check on them.
"""
import struct
import sys

import numpy as np

RATE = 48000
FRAMES = 4800  # 0.1 s: long enough for `process`, short for the sanitizer
ISLAND = 16384  # frames of noise in the big file, every 2^22 frames


def chunk(cid, payload, size=None):
    size = len(payload) if size is None else size
    pad = b"\0" if len(payload) % 2 else b""
    return cid + struct.pack("<I", size) + payload + pad


def fmt_payload(channels, rate, bits=32, tag=3):
    block = channels * bits // 8
    return struct.pack("<HHIIHH", tag, channels, rate,
                       (rate * block) & 0xFFFFFFFF, block & 0xFFFF, bits)


def noise(frames, channels, seed=7):
    rng = np.random.default_rng(seed)
    return rng.uniform(-0.5, 0.5, (frames, channels)).astype("<f4").tobytes()


def wav(channels=1, rate=RATE, frames=FRAMES, data=None, data_size=None,
        fact=None):
    """A float32 WAV; data_size and fact may lie about the data."""
    data = noise(frames, max(channels, 1)) if data is None else data
    body = b"WAVE" + chunk(b"fmt ", fmt_payload(channels, rate))
    body += chunk(b"fact", struct.pack("<I", frames if fact is None else fact))
    body += chunk(b"data", data, data_size)
    riff_size = len(body) if data_size is None else len(body) - len(data) + data_size
    return b"RIFF" + struct.pack("<I", riff_size & 0xFFFFFFFF) + body


def data_first(good):
    """The same chunks, data before fmt: legal in RIFF, rare in practice."""
    pos, chunks = 12, []
    while pos + 8 <= len(good):
        size = struct.unpack("<I", good[pos + 4 : pos + 8])[0]
        chunks.append(good[pos : pos + 8 + size + (size & 1)])
        pos += 8 + size + (size & 1)
    body = b"WAVE" + b"".join(sorted(chunks, key=lambda c: c[:4] != b"data"))
    return b"RIFF" + struct.pack("<I", len(body)) + body


def pcm24_cut(frames):
    """PCM 24-bit stereo (the integer path of the host), cut mid-sample."""
    rng = np.random.default_rng(8)
    v = rng.integers(-(1 << 23), 1 << 23, frames * 2).astype("<i4")
    data = v.view(np.uint8).reshape(-1, 4)[:, :3].tobytes()
    body = (b"WAVE" + chunk(b"fmt ", fmt_payload(2, RATE, bits=24, tag=1))
            + chunk(b"data", data))
    whole = b"RIFF" + struct.pack("<I", len(body)) + body
    return whole[: len(whole) - len(data) // 3 - 4]


def kinds(frames=FRAMES):
    """The bad files; the noise in each is the good file's (seed 7), so a
    cut file is the first frames of wav(frames=frames)."""
    good = wav(frames=frames)
    header = len(good) - frames * 4  # where the samples start
    return {
        "good": good,
        # The file stops partway: the sizes in the header are the whole one's.
        "cut-mid-data": good[: header + frames * 4 * 6 // 10 + 2],
        "cut-mid-fmt": good[:30],
        "cut-before-data": good[:header - 4],  # in the data chunk's header
        "claims-more-frames": wav(frames=frames, data_size=frames * 400,
                                  fact=frames * 100),
        "zero-frames": wav(frames=0, data=b""),
        "zero-channels": wav(channels=0, data=noise(frames, 1)),
        "300-channels": wav(channels=300, frames=frames // 10),
        "rate-0": wav(rate=0, frames=frames),
        "rate-1": wav(rate=1, frames=frames),
        "rate-max": wav(rate=2**31 - 1, frames=frames),
        # Fields no writer would set.
        "bits-0": good[:34] + struct.pack("<H", 0) + good[36:],
        "block-align-0": good[:32] + struct.pack("<H", 0) + good[34:],
        "tag-unknown": good[:20] + struct.pack("<H", 0x7777) + good[22:],
        "data-before-fmt": data_first(good),
        "pcm24-cut-mid-sample": pcm24_cut(frames),
        "text": b"these are words, not samples\n" * 20,
        "random-bytes": np.random.default_rng(11).integers(
            0, 256, 8192, dtype=np.uint8).tobytes(),
        "empty": b"",
        "riff-only": b"RIFF\xff\xff\xff\xffWAVE",
        # A chunk whose size runs to 4 GiB in a file of a few KiB.
        "huge-chunk": good[:12] + b"LIST\xf0\xff\xff\xff" + good[12:],
    }


def big(path, frames):
    """RF64, float32 stereo, 48 kHz: ds64 holds the 64-bit sizes, the
    32-bit ones say 0xFFFFFFFF. Islands of noise every 2^22 frames for
    `measure`; the last 1024 frames a ramp the check can find again, ending
    on (+1, -1); everything else holes (zeros)."""
    ch, data_bytes = 2, frames * 8
    fmt = chunk(b"fmt ", fmt_payload(ch, RATE))
    # ds64: RIFF size, data size, sample count, table length (none).
    head_bytes = 12 + (8 + 28) + len(fmt) + 8
    ds64 = struct.pack("<QQQI", head_bytes - 8 + data_bytes, data_bytes, frames, 0)
    head = (b"RF64" + struct.pack("<I", 0xFFFFFFFF) + b"WAVE" + chunk(b"ds64", ds64)
            + fmt + b"data" + struct.pack("<I", 0xFFFFFFFF))
    assert len(head) == head_bytes
    n = 1024
    tail = np.zeros((n, ch), "<f4")
    tail[:, 0] = (np.arange(n) + 1) / 2048.0
    tail[:, 1] = -tail[:, 0]
    tail[-1] = (1.0, -1.0)  # two clipped samples: was the end read?
    rng = np.random.default_rng(5)
    with open(path, "wb") as f:
        f.write(head)
        # Islands of noise every 2^22 frames, for `measure` to correlate.
        for at in range(0, frames - ISLAND - n, 1 << 22):
            f.seek(len(head) + at * 8)
            f.write(rng.uniform(-0.5, 0.5, (ISLAND, ch)).astype("<f4").tobytes())
        f.seek(len(head) + (frames - n) * 8)
        f.write(tail.tobytes())


def data_start(b):
    """(offset of the samples, their byte count, channels) in a RIFF/RF64."""
    pos, size64, ch = 12, None, None
    while pos + 8 <= len(b):
        cid, size = b[pos : pos + 4], struct.unpack("<I", b[pos + 4 : pos + 8])[0]
        if cid == b"ds64":
            size64 = struct.unpack("<Q", b[pos + 16 : pos + 24])[0]
        elif cid == b"fmt ":
            ch = struct.unpack("<H", b[pos + 10 : pos + 12])[0]
        elif cid == b"data":
            return pos + 8, size64 if size == 0xFFFFFFFF else size, ch
        pos += 8 + size + (size & 1)
    sys.exit("hostile_wav.py: no data chunk")


def main():
    cmd, argv = sys.argv[1], sys.argv[2:]
    if cmd == "kinds":
        print("\n".join(kinds()))
    elif cmd == "make":
        frames = int(argv[2]) if argv[2:] else FRAMES
        with open(argv[1], "wb") as f:
            f.write(kinds(frames)[argv[0]])
    elif cmd == "big":
        big(argv[0], int(argv[1]))
    elif cmd == "head":
        with open(argv[0], "rb") as f:
            start, _, ch = data_start(f.read(65536))
            n = int(argv[2])
            f.seek(start)
            data = f.read(n * 4 * ch)
        body = b"WAVE" + chunk(b"fmt ", fmt_payload(ch, RATE)) + chunk(b"data", data)
        with open(argv[1], "wb") as f:
            f.write(b"RIFF" + struct.pack("<I", len(body)) + body)
    elif cmd in ("tail", "frames"):
        with open(argv[0], "rb") as f:
            start, size, ch = data_start(f.read(65536))
            if cmd == "frames":
                print(size // (4 * ch))
                return
            n = int(argv[1])
            f.seek(start + size - n * 4 * ch)
            x = np.frombuffer(f.read(n * 4 * ch), "<f4").reshape(n, ch)
        for row in x:
            print(" ".join(f"{v:.9g}" for v in row))
    else:
        sys.exit("hostile_wav.py: unknown command " + cmd)


if __name__ == "__main__":
    main()
