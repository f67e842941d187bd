#!/usr/bin/env python3
"""Side-by-side benchmark: `spallcast import` against a numpy/scipy peer script on the same readings.

    cargo build --release                       # target/release/spallcast
    pip install numpy scipy
    python3 tests/bench/side_by_side.py         # 100 readings, 5 paired runs, both on the same cores

It generates a reproducible route (seeded; invented bench plant): by default 20 measurement points x 5
monthly route days = 100 readings, 75 of 65,536 samples at 25.6 kHz and 25 of 262,144 samples at
102.4 kHz (32-bit float WAV), some points with a growing outer-race defect. Then it runs, in turn
A B A B ... after one warm-up of each:

  A  spallcast import ROUTE --db FRESH.sqlite --plant plant.toml   (full analysis, kurtogram band,
     findings, stage calls, storage)
  B  python3 tests/bench/peer_numpy.py ROUTE --jobs N              (Welch + fixed-band envelope +
     indicators only, N processes)

both pinned to the same N cores (taskset), and prints each one's median wall and CPU time and the median
of the pair-by-pair ratio B/A (how many times faster Spallcast is). Quote ratios, not absolute times:
the machine's speed drifts between runs, a pair's ratio much less.
"""

import argparse
import csv
import os
import resource
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
from scipy.io import wavfile

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent.parent

# Invented bench bearing: 9 balls, d = 12.7 mm, D = 65 mm, 0 deg; BPFO = n/2 (1 - d/D) orders.
N_BALLS, D_BALL, D_PITCH = 9, 12.7, 65.0
BPFO_ORDERS = N_BALLS / 2.0 * (1.0 - D_BALL / D_PITCH)

PLANT_HEAD = """# Invented bench plant for the side-by-side benchmark (generated; every name is made up).
[site]
name = "Bench Hall"
timezone_offset = "+00:00"

[[bearing_types]]
designation = "BH-B9"
kind = "deep-groove ball"
rolling_elements = 9
element_diameter_mm = 12.7
pitch_diameter_mm = 65.0
contact_angle_deg = 0.0

[[areas]]
name = "Bench Hall"
"""

MACHINE = """
  [[areas.machines]]
  id = "BH-M{i:02d}"
  name = "Bench machine {i}"
  kind = "pump"
  nominal_rpm = {rpm:.1f}
  iso_group = 2
  iso_support = "rigid"

    [[areas.machines.bearings]]
    position = "DE"
    description = "Drive end"
    bearing_type = "BH-B9"
    lubrication = "{lube}"
    installed = "2025-01-06"

    [[areas.machines.points]]
    id = "BH-M{i:02d}-DE-H"
    bearing = "DE"
    direction = "H"
    sensor = "accelerometer"
    sensitivity_mv_per_g = 100.0
"""


def reading(rng, fs, n, rpm, severity):
    """Shaft 1x, broadband noise and, with severity > 0, an outer-race impulse train ringing a resonance."""
    t = np.arange(n) / fs
    fr = rpm / 60.0
    x = 0.05 * np.sin(2 * np.pi * fr * t) + 0.02 * rng.standard_normal(n)
    if severity > 0.0:
        bpfo = BPFO_ORDERS * fr
        f_res = rng.uniform(2500.0, 4500.0)
        ring = np.exp(-t[: int(0.004 * fs)] * 1500.0) * np.sin(2 * np.pi * f_res * t[: int(0.004 * fs)])
        impulses = np.zeros(n)
        times = np.arange(0.0, n / fs, 1.0 / bpfo) + rng.uniform(0, 1.0 / bpfo)
        idx = (times * fs).astype(int)
        impulses[idx[idx < n]] = severity * (1.0 + 0.1 * rng.standard_normal(np.sum(idx < n)))
        x = x + np.convolve(impulses, ring)[:n]
    return x.astype(np.float32)


def generate(route: Path, points: int, months: int, fast_points: int, seed: int) -> int:
    rng = np.random.default_rng(seed)
    route.mkdir(parents=True, exist_ok=True)
    plant = [PLANT_HEAD]
    rows = []
    for i in range(1, points + 1):
        rpm = float(rng.uniform(900.0, 3000.0))
        plant.append(MACHINE.format(i=i, rpm=rpm, lube="oil" if i % 3 == 0 else "grease"))
        fast = i > points - fast_points
        fs, n = (102_400, 262_144) if fast else (25_600, 65_536)
        faulty = i % 4 == 1
        for m in range(months):
            severity = 0.1 * 2.0**m if faulty and m > 0 else 0.0
            name = f"m{i:02d}_{m + 1}.wav"
            wavfile.write(route / name, fs, reading(rng, fs, n, rpm * (1 + 0.002 * rng.standard_normal()), severity))
            rows.append([name, f"BH-M{i:02d}-DE-H", f"2026-{m + 1:02d}-12T09:{i:02d}:00+00:00", f"{rpm:.1f}", "g"])
    (route.parent / "plant.toml").write_text("".join(plant))
    with open(route / "route.csv", "w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["file", "point", "taken_at", "rpm", "units"])
        w.writerows(rows)
    return len(rows)


def timed(cmd, env=None):
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    done = subprocess.run(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, env=env, check=False)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    if done.returncode != 0:
        sys.exit(f"command failed ({done.returncode}): {' '.join(map(str, cmd))}\n{done.stderr.decode(errors='replace')}")
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return wall, cpu


def main() -> int:
    ap = argparse.ArgumentParser(description="spallcast import vs a numpy/scipy script, paired runs")
    ap.add_argument("--spallcast", type=Path, default=ROOT / "target" / "release" / "spallcast")
    ap.add_argument("--points", type=int, default=20)
    ap.add_argument("--months", type=int, default=5)
    ap.add_argument("--fast-points", type=int, default=5, help="points recorded at 102.4 kHz")
    ap.add_argument("--runs", type=int, default=5)
    ap.add_argument("--cores", type=int, default=min(2, os.cpu_count() or 1))
    ap.add_argument("--seed", type=int, default=20261202)
    ap.add_argument("--keep", type=Path, help="generate into this folder and keep it")
    a = ap.parse_args()
    if not a.spallcast.exists():
        sys.exit(f"{a.spallcast} not found: run `cargo build --release` first (or pass --spallcast)")
    work = Path(a.keep) if a.keep else Path(tempfile.mkdtemp(prefix="spallcast-side-by-side-"))
    try:
        route = work / "route"
        if not (route / "route.csv").exists():
            count = generate(route, a.points, a.months, a.fast_points, a.seed)
        else:
            count = sum(1 for _ in open(route / "route.csv")) - 1
        pin = ["taskset", "-c", f"0-{a.cores - 1}"] if shutil.which("taskset") else []
        env = dict(os.environ, RAYON_NUM_THREADS=str(a.cores))

        def run_a(k):
            db = work / f"a{k}.sqlite"
            for p in work.glob(f"a{k}.sqlite*"):
                p.unlink()
            r = timed(pin + [str(a.spallcast), "import", str(route), "--db", str(db), "--plant", str(work / "plant.toml")], env)
            for p in work.glob(f"a{k}.sqlite*"):
                p.unlink()
            return r

        def run_b(k):
            return timed(pin + [sys.executable, str(HERE / "peer_numpy.py"), str(route), "--jobs", str(a.cores), "--out", str(work / f"b{k}.csv")], env)

        run_a("warm"), run_b("warm")
        res_a, res_b = [], []
        for k in range(a.runs):
            res_a.append(run_a(k))
            res_b.append(run_b(k))
        ratios = [b[0] / x[0] for x, b in zip(res_a, res_b)]
        med = statistics.median
        print(f"{count} readings, {a.runs} paired runs, {a.cores} cores{' (pinned)' if pin else ''}")
        print(f"A spallcast import : wall median {med(r[0] for r in res_a):.2f} s, cpu median {med(r[1] for r in res_a):.2f} s")
        print(f"B numpy/scipy peer : wall median {med(r[0] for r in res_b):.2f} s, cpu median {med(r[1] for r in res_b):.2f} s")
        print(f"ratio B/A (wall), pair by pair: {' '.join(f'{r:.2f}' for r in ratios)}")
        print(f"median ratio B/A: {med(ratios):.2f}x (Spallcast is that many times faster)")
    finally:
        if not a.keep:
            shutil.rmtree(work, ignore_errors=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
