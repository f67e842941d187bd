"""Generate golden vectors for the spallcast-analysis spectrum code from numpy/scipy.

Deterministic: fixed seed, fixed parameters, fixed float formatting. Run with
    pip install numpy scipy
    python tests/golden/generate_golden.py
from the workspace root; it rewrites tests/golden/spectrum_golden.json.
"""

import json
import os

import numpy as np
import scipy
import scipy.signal

FS = 1000.0
N = 2048


def signal():
    rng = np.random.default_rng(20240611)
    t = np.arange(N) / FS
    x = 1.3 * np.sin(2 * np.pi * 50.0 * t) + 0.4 * np.cos(2 * np.pi * 123.4 * t + 0.3)
    x += 0.25 * rng.standard_normal(N) + 0.1
    return x


def main():
    x = signal()
    spec = np.fft.rfft(x)
    out = {
        "generator": "numpy %s, scipy %s" % (np.__version__, scipy.__version__),
        "fs": FS,
        "x": x.tolist(),
        "rfft_re": spec.real.tolist(),
        "rfft_im": spec.imag.tolist(),
        "windows": {
            "hann_64": scipy.signal.get_window("hann", 64).tolist(),
            "flattop_64": scipy.signal.get_window("flattop", 64).tolist(),
        },
        "welch": [],
    }
    for nperseg, noverlap, window, scaling in [
        (256, 128, "hann", "density"),
        (256, 128, "hann", "spectrum"),
        (200, 50, "flattop", "spectrum"),
        (512, 0, "boxcar", "density"),
    ]:
        f, p = scipy.signal.welch(
            x, fs=FS, window=window, nperseg=nperseg, noverlap=noverlap, detrend="constant", scaling=scaling
        )
        out["welch"].append(
            {
                "nperseg": nperseg,
                "noverlap": noverlap,
                "window": window,
                "scaling": scaling,
                "df": float(f[1] - f[0]),
                "p": p.tolist(),
            }
        )
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "spectrum_golden.json")
    with open(path, "w", encoding="utf-8") as fh:
        json.dump(out, fh, separators=(",", ":"))
        fh.write("\n")


if __name__ == "__main__":
    main()
