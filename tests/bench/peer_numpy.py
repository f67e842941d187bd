#!/usr/bin/env python3
"""The analyst's alternative: a numpy/scipy script over a route folder.

For every recording listed in ROUTE/route.csv it computes what such a script usually does — a Welch
spectrum, a band-pass envelope spectrum in a fixed band, and the overall indicators (acceleration RMS and
peak, crest factor, kurtosis, velocity RMS 10–1000 Hz) — in N worker processes, and writes one CSV row per
recording. It does less than `spallcast import` (no kurtogram, no fault findings, no stage calls, no
database); it is the peer of the side-by-side benchmark (tests/bench/side_by_side.py).

Needs `pip install numpy scipy`.
"""

import argparse
import csv
import multiprocessing
import sys
from pathlib import Path

import numpy as np
from scipy import signal
from scipy.io import wavfile


def analyse(path: str):
    fs, x = wavfile.read(path)
    x = np.asarray(x, dtype=np.float64)
    if x.ndim > 1:
        x = x[:, 0]
    x = x - x.mean()
    rms = float(np.sqrt(np.mean(x * x)))
    peak = float(np.max(np.abs(x)))
    kurt = float(np.mean(x**4) / (np.mean(x * x) ** 2))
    # Welch spectrum, Hann, 8192-point segments, half overlap.
    f, pxx = signal.welch(x, fs=fs, window="hann", nperseg=8192, noverlap=4096)
    # Velocity RMS 10–1000 Hz from the acceleration PSD (g -> m/s², divide by 2πf, mm/s).
    band = (f >= 10.0) & (f <= 1000.0)
    vel_psd = pxx[band] * (9.80665**2) / (2.0 * np.pi * f[band]) ** 2
    vel_rms_mm_s = float(np.sqrt(np.sum(vel_psd) * (f[1] - f[0])) * 1000.0)
    # Fixed-band envelope: 1.5–10 kHz (capped below Nyquist), 4th-order Butterworth, Hilbert, rfft.
    hi = min(10_000.0, 0.45 * fs)
    sos = signal.butter(4, [1500.0, hi], btype="bandpass", fs=fs, output="sos")
    env = np.abs(signal.hilbert(signal.sosfiltfilt(sos, x)))
    env = env - env.mean()
    spec = np.abs(np.fft.rfft(env * np.hanning(len(env)))) * 2.0 / len(env)
    freqs = np.fft.rfftfreq(len(env), 1.0 / fs)
    keep = freqs <= 1000.0
    top = int(np.argmax(spec[keep][1:])) + 1
    return [path, fs, len(x), rms, peak, peak / rms, kurt, vel_rms_mm_s, float(freqs[keep][top])]


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("route", type=Path)
    ap.add_argument("--jobs", type=int, default=2)
    ap.add_argument("--out", type=Path, required=True)
    a = ap.parse_args()
    with open(a.route / "route.csv", newline="") as fh:
        files = [str(a.route / row["file"]) for row in csv.DictReader(fh)]
    with multiprocessing.Pool(a.jobs) as pool:
        rows = pool.map(analyse, files, chunksize=1)
    with open(a.out, "w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["file", "fs", "n", "rms_g", "peak_g", "crest", "kurtosis", "vel_rms_mm_s", "env_peak_hz"])
        w.writerows(rows)
    return 0


if __name__ == "__main__":
    sys.exit(main())
