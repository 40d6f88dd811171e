# SPDX-License-Identifier: GPL-3.0-or-later
"""The file side of tests/outside/ardour.sh (run with /usr/bin/python3).

  ardour.py indices DESCRIBE.json SYMBOL=VALUE...
      prints "INDEX=VALUE" for each setting and a bare "INDEX" for every
      other control input of the plugin, from `vernier describe --json`
      (Ardour's Lua knows ports by index only)
  ardour.py region SESSION_DIR NAME IN.wav
      puts IN.wav into the session as one whole-file region at the start
      of track "T"'s playlist, with no fades, and sets the session range
      to the file's length
  ardour.py compare DAW.wav OURS.wav [--within REL] [--input IN.wav]
      DAW.wav is Ardour's stereo master; OURS.wav is mono (expected on both
      master channels) or stereo. Prints "max_diff=D lag=L" (L: the lag of
      DAW behind OURS that maximises their cross-correlation, over +-1 s;
      with --input, also lag_vs_input, DAW's lag behind IN.wav). Exits 0
      when every sample is equal, or with --within when the lag is 0, the
      lengths agree and no sample differs by more than REL times OURS's
      peak.
  ardour.py selftest
      exits 0 when compare tells equal, shifted and rounded signals apart

Ardour 7.3's Lua cannot import a file, so `region` edits the saved session
XML. The attribute set is the one Ardour 7.3 writes itself for a recorded
take (seen in a session it saved); positions and lengths are in superclock
units, 282240000 a second in that version (the session's <TempoMap
superclocks-per-second>, read from the file rather than assumed).
"""
import json
import os
import re
import shutil
import sys

import numpy as np

from wavtools import arg, read

SOURCE_ID, REGION_ID, PLAYLIST_REGION_ID, RANGE_ID = 90001, 90101, 90102, 90201


def indices(describe_path, settings):
    with open(describe_path) as f:
        ports = json.load(f)["ports"]
    by_symbol = {p["symbol"]: p for p in ports
                 if p["type"] == "control" and p["direction"] == "input"}
    values = {}
    for s in settings:
        symbol, value = s.split("=", 1)
        if symbol not in by_symbol:
            sys.exit("no control input %r; the plugin has %s"
                     % (symbol, ", ".join(sorted(by_symbol))))
        values[by_symbol[symbol]["index"]] = value
    print(" ".join("%d=%s" % (i, values[i]) if i in values else "%d" % i
                   for i in sorted(p["index"] for p in by_symbol.values())))


def region_xml(region_id, channels, length_sc):
    sources = " ".join('source-%d="%d" master-source-%d="%d"'
                       % (c, SOURCE_ID + c, c, SOURCE_ID + c)
                       for c in range(channels))
    return ('<Region name="in" muted="0" opaque="1" locked="0" video-locked="0"'
            ' automatic="0" whole-file="1" import="0" external="0"'
            ' sync-marked="0" left-of-split="0" right-of-split="0" hidden="0"'
            ' position-locked="0" valid-transients="0" start="a0"'
            ' length="a%d@a0" position="a0" sync-position="a0"'
            ' ancestral-start="a0" ancestral-length="a0@a0" stretch="1"'
            ' shift="1" layering-index="0" tags="" contents="0"'
            ' envelope-active="0" default-fade-in="0" default-fade-out="0"'
            ' fade-in-active="0" fade-out-active="0" scale-amplitude="1"'
            ' id="%d" type="audio" first-edit="nothing" %s channels="%d"/>'
            % (length_sc, region_id, sources, channels))


def replace_once(xml, old, new):
    if xml.count(old) != 1:
        sys.exit("the session file does not hold exactly one %s" % old)
    return xml.replace(old, new)


def region(session_dir, name, wav):
    rate, data = read(wav)
    frames, channels = data.shape
    path = os.path.join(session_dir, name + ".ardour")
    with open(path) as f:
        xml = f.read()
    m = re.search(r'<TempoMap superclocks-per-second="(\d+)"', xml)
    if not m:
        sys.exit("no superclock rate in %s" % path)
    per_second = int(m.group(1))
    if (frames * per_second) % rate:
        sys.exit("%d frames at %d Hz is not a whole number of superclocks"
                 % (frames, rate))
    length_sc = frames * per_second // rate
    shutil.copyfile(wav, os.path.join(session_dir, "interchange", name,
                                      "audiofiles", "in.wav"))
    sources = "".join(
        '\n    <Source name="in.wav" type="audio" flags="" id="%d"'
        ' captured-for="" take-id="" channel="%d" origin="" gain="1"/>'
        % (SOURCE_ID + c, c) for c in range(channels))
    xml = replace_once(xml, "<Sources/>", "<Sources>%s\n  </Sources>" % sources)
    xml = replace_once(xml, "<Regions/>", "<Regions>\n    %s\n  </Regions>"
                       % region_xml(REGION_ID, channels, length_sc))
    xml = replace_once(
        xml, "<Locations/>",
        '<Locations>\n    <Location id="%d" name="session" start="a0" end="a%d"'
        ' flags="IsSessionRange" locked="0" timestamp="0" cue="0"/>\n'
        '  </Locations>' % (RANGE_ID, length_sc))
    xml = replace_once(xml, 'session-range-is-free="1"',
                       'session-range-is-free="0"')
    playlist = re.compile(r'(<Playlist id="\d+" name="T" type="audio"[^>]*?)/>')
    xml, n = playlist.subn(lambda p: "%s>\n      %s\n    </Playlist>" % (
        p.group(1), region_xml(PLAYLIST_REGION_ID, channels, length_sc)), xml)
    if n != 1:
        sys.exit("no empty playlist for track T in %s" % path)
    with open(path, "w") as f:
        f.write(xml)


def lag_of(daw, ours, rate):
    """The lag of daw behind ours that maximises their cross-correlation."""
    n = len(daw) + len(ours)
    size = 1 << (n - 1).bit_length()
    xc = np.fft.irfft(np.fft.rfft(daw, size) * np.conj(np.fft.rfft(ours, size)),
                      size)
    reach = min(rate, size // 2 - 1)
    lags = np.concatenate([np.arange(0, reach + 1), np.arange(-reach, 0)])
    values = np.concatenate([xc[:reach + 1], xc[size - reach:]])
    return int(lags[np.argmax(np.abs(values))])


def difference(daw, ours, rate):
    """(max |daw - ours| over the common length, lag of daw behind ours)."""
    lag = lag_of(daw[:, 0].astype(float), ours[:, 0].astype(float), rate)
    frames = min(len(daw), len(ours))
    diff = float(np.max(np.abs(daw[:frames].astype(float) - ours[:frames])))
    return diff, lag


def two_channels(x, what):
    if x.dtype != np.float32:
        sys.exit("%s is %s, not float32" % (what, x.dtype))
    if x.shape[1] == 1:
        return np.repeat(x, 2, axis=1)
    if x.shape[1] != 2:
        sys.exit("%s has %d channels" % (what, x.shape[1]))
    return x


def verdict(daw, ours, diff, lag, within):
    if len(daw) != len(ours):
        return False
    if within is None:
        return bool(np.array_equal(daw, ours))
    return lag == 0 and diff <= within * float(np.max(np.abs(ours)))


def compare(daw_path, ours_path):
    (rd, daw), (ro, ours) = read(daw_path), read(ours_path)
    if rd != ro:
        sys.exit("rates differ: %d vs %d" % (rd, ro))
    if daw.shape[1] != 2:
        sys.exit("the master render has %d channels, not 2" % daw.shape[1])
    daw, ours = two_channels(daw, daw_path), two_channels(ours, ours_path)
    diff, lag = difference(daw, ours, rd)
    line = "max_diff=%.3g lag=%d" % (diff, lag)
    input_path = arg("--input", None, str)
    if input_path:
        ri, x = read(input_path)
        line += " lag_vs_input=%d" % difference(daw, two_channels(x, "input"), ri)[1]
    if len(daw) != len(ours):
        line += " frames=%d/%d" % (len(daw), len(ours))
    print(line)
    within = arg("--within", None)
    sys.exit(0 if verdict(daw, ours, diff, lag, within) else 1)


def selftest():
    """The comparison must not pass what differs: a one-frame shift, one
    sample changed by one unit in the last place, a frame too many."""
    rng = np.random.default_rng(7)
    x = rng.uniform(-0.5, 0.5, size=(4800, 2)).astype(np.float32)
    shifted = np.vstack([np.zeros((1, 2), np.float32), x[:-1]])
    rounded = x.copy()
    rounded[100, 0] = np.nextafter(rounded[100, 0], np.float32(1))
    longer = np.vstack([x, np.zeros((1, 2), np.float32)])
    checks = [
        ("equal", x, None, True, 0),
        ("shifted by one frame", shifted, None, False, 1),
        ("shifted, within 1e-6", shifted, 1e-6, False, 1),
        ("one ulp off", rounded, None, False, 0),
        ("one ulp off, within 1e-6", rounded, 1e-6, True, 0),
        ("a frame too many", longer, None, False, 0),
    ]
    ok = True
    for name, daw, within, expect, expect_lag in checks:
        diff, lag = difference(daw, x, 48000)
        got = verdict(daw, x, diff, lag, within)
        if got != expect or lag != expect_lag:
            print("selftest %s: verdict %s lag %d" % (name, got, lag))
            ok = False
    sys.exit(0 if ok else 1)


def main():
    cmd, rest = sys.argv[1], sys.argv[2:]
    if cmd == "indices":
        indices(rest[0], rest[1:])
    elif cmd == "region":
        region(*rest)
    elif cmd == "compare":
        compare(rest[0], rest[1])
    elif cmd == "selftest":
        selftest()
    else:
        sys.exit(__doc__)


if __name__ == "__main__":
    main()
