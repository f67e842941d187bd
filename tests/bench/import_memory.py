#!/usr/bin/env python3
"""Import memory bench: peak resident memory of one `spallcast import` against the number of readings.

    cargo build --release                       # target/release/spallcast
    pip install numpy scipy
    python3 tests/bench/import_memory.py        # 1,000 and 20,000 short readings in one folder,
                                                # then one 10-minute 102.4 kHz recording

For each count it generates (seeded; an invented bench plant of 200 points) a route folder of short
32-bit float WAV recordings (4,096 samples at 25.6 kHz: shaft 1x and noise), imports it into a fresh
database with one `spallcast import` (full analysis and stage calls), and prints the process's peak
resident set size (from wait4). The figure that matters is how the peak grows with the readings: the
import is meant to keep at most a fixed number of readings in flight, so the largest count should stay
within 1.5x of the smallest.
"""

import argparse
import csv
import os
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
from scipy.io import wavfile

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent.parent
POINTS = 200

PLANT_HEAD = """# Invented bench plant for the import memory bench (generated; every name is made up).
[site]
name = "Memory Bench Hall"
timezone_offset = "+00:00"

[[bearing_types]]
designation = "MB-B8"
kind = "deep-groove ball"
rolling_elements = 8
element_diameter_mm = 7.9
pitch_diameter_mm = 38.5
contact_angle_deg = 0.0

[[areas]]
name = "Memory Bench Hall"
"""

MACHINE = """
  [[areas.machines]]
  id = "MB-M{i:03d}"
  name = "Bench machine {i}"
  kind = "fan"
  nominal_rpm = 1475.0
  iso_group = 2
  iso_support = "rigid"

    [[areas.machines.bearings]]
    position = "DE"
    bearing_type = "MB-B8"
    lubrication = "grease"
    installed = "2020-01-06"

    [[areas.machines.points]]
    id = "MB-M{i:03d}-DE-H"
    bearing = "DE"
    direction = "H"
"""


def generate(route: Path, count: int, seed: int) -> None:
    rng = np.random.default_rng(seed)
    route.mkdir(parents=True, exist_ok=True)
    (route.parent / "plant.toml").write_text(PLANT_HEAD + "".join(MACHINE.format(i=i) for i in range(POINTS)))
    fs, n = 25_600, 4_096
    t = np.arange(n) / fs
    rows = []
    for k in range(count):
        point, day = k % POINTS, k // POINTS
        x = 0.05 * np.sin(2 * np.pi * 24.6 * t + rng.uniform(0, 6.28)) + 0.01 * rng.standard_normal(n)
        name = f"r{k:05d}.wav"
        wavfile.write(route / name, fs, x.astype(np.float32))
        # One route day a week from 2021 on, one reading per point per day.
        stamp = np.datetime64("2021-01-04T08:00:00") + np.timedelta64(7 * day, "D") + np.timedelta64(point, "s")
        rows.append([name, f"MB-M{point:03d}-DE-H", f"{stamp}+00:00", "1475", "g"])
    with open(route / "route.csv", "w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["file", "point", "taken_at", "rpm", "units"])
        w.writerows(rows)


def generate_long(route: Path, minutes: float, seed: int) -> None:
    """One recording of `minutes` at 102.4 kHz (32-bit float WAV), written in one-second blocks."""
    rng = np.random.default_rng(seed)
    route.mkdir(parents=True, exist_ok=True)
    (route.parent / "plant.toml").write_text(PLANT_HEAD + MACHINE.format(i=0))
    fs = 102_400
    n = int(minutes * 60 * fs)
    path = route / "long.wav"
    # A float WAV header, then the samples block by block (the generator never holds the record).
    import struct
    with open(path, "wb") as fh:
        data_bytes = 4 * n
        fh.write(b"RIFF" + struct.pack("<I", 36 + data_bytes) + b"WAVE")
        fh.write(b"fmt " + struct.pack("<IHHIIHH", 16, 3, 1, fs, 4 * fs, 4, 32))
        fh.write(b"data" + struct.pack("<I", data_bytes))
        for start in range(0, n, fs):
            m = min(fs, n - start)
            t = (start + np.arange(m)) / fs
            x = 0.05 * np.sin(2 * np.pi * 24.6 * t) + 0.01 * rng.standard_normal(m)
            fh.write(x.astype("<f4").tobytes())
    with open(route / "route.csv", "w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["file", "point", "taken_at", "rpm", "units"])
        w.writerow(["long.wav", "MB-M000-DE-H", "2026-11-30T08:00:00+00:00", "1475", "g"])


def peak_rss_mb(cmd) -> tuple[float, float]:
    t0 = time.perf_counter()
    child = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(child.pid, 0)
    wall = time.perf_counter() - t0
    err = child.stderr.read().decode(errors="replace") if child.stderr else ""
    if os.waitstatus_to_exitcode(status) != 0:
        sys.exit(f"command failed: {' '.join(map(str, cmd))}\n{err}")
    return usage.ru_maxrss / 1024.0, wall


def main() -> int:
    ap = argparse.ArgumentParser(description="peak RSS of spallcast import against the number of readings")
    ap.add_argument("--spallcast", type=Path, default=ROOT / "target" / "release" / "spallcast")
    ap.add_argument("--counts", type=int, nargs="+", default=[1_000, 20_000])
    ap.add_argument("--seed", type=int, default=20261203)
    ap.add_argument("--long-minutes", type=float, default=10.0,
                    help="also import one recording this long at 102.4 kHz (0: skip)")
    a = ap.parse_args()
    if not a.spallcast.exists():
        sys.exit(f"{a.spallcast} not found: run `cargo build --release` first (or pass --spallcast)")
    work = Path(tempfile.mkdtemp(prefix="spallcast-import-memory-"))
    try:
        peaks = []
        for count in a.counts:
            folder = work / f"n{count}"
            generate(folder / "route", count, a.seed)
            db = folder / "bench.sqlite"
            rss, wall = peak_rss_mb([str(a.spallcast), "import", str(folder / "route"), "--db", str(db),
                                     "--plant", str(folder / "plant.toml"), "--json"])
            peaks.append(rss)
            print(f"{count:>7} readings: peak RSS {rss:8.1f} MB  (wall {wall:.1f} s)")
            shutil.rmtree(folder, ignore_errors=True)
        print(f"largest / smallest peak: {peaks[-1] / peaks[0]:.2f}x")
        if a.long_minutes > 0:
            folder = work / "long"
            generate_long(folder / "route", a.long_minutes, a.seed)
            rss, wall = peak_rss_mb([str(a.spallcast), "import", str(folder / "route"), "--db",
                                     str(folder / "bench.sqlite"), "--plant", str(folder / "plant.toml"), "--json"])
            size_mb = (folder / "route" / "long.wav").stat().st_size / 1e6
            print(f"one {a.long_minutes:g}-minute 102.4 kHz recording ({size_mb:.0f} MB): peak RSS {rss:8.1f} MB"
                  f"  (wall {wall:.1f} s)")
            shutil.rmtree(folder, ignore_errors=True)
    finally:
        shutil.rmtree(work, ignore_errors=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
