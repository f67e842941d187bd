#!/usr/bin/env python3
"""Writes the UFF dataset 58 reference files the spallcast-formats tests compare against.

Reference implementation: pyuff (https://pypi.org/project/pyuff/), the open Python reader/writer for
Universal File Format datasets. Run from this folder:

    pip install pyuff numpy
    python3 generate_uff58.py

Deterministic: the signals are closed-form (no random numbers), so re-running gives identical files
for the same pyuff version. The expected samples are written to expected.json as pyuff itself reads
them back from each file (so they are the values actually stored, after any decimal rounding).
"""

import json
import os

import numpy as np
import pyuff

HERE = os.path.dirname(os.path.abspath(__file__))


def signal(n, rate_hz, seed):
    """A bearing-like test waveform: shaft tone, a resonance ringing on periodic impacts, a ripple."""
    t = np.arange(n) / rate_hz
    shaft = 0.35 * np.sin(2 * np.pi * 24.7 * t + 0.3 * seed)
    impacts = np.zeros(n)
    period = 1.0 / (3.58 * 24.7)
    for k in range(int(t[-1] / period) + 1):
        dt = t - k * period
        m = dt >= 0
        impacts[m] += 1.7 * np.exp(-dt[m] * 900.0) * np.sin(2 * np.pi * 3100.0 * dt[m])
    ripple = 0.05 * np.sin(2 * np.pi * 517.0 * t * (1 + 0.1 * seed)) ** 3
    return shaft + impacts + ripple - 0.02 * seed


def dataset(n, rate_hz, seed, binary, ord_data_type, node):
    data = signal(n, rate_hz, seed)
    x = np.arange(n) / rate_hz
    return pyuff.prepare_58(
        binary=binary,
        id1=f"golden time record {seed}",
        id2="spallcast formats test",
        id3="01-Dec-26 00:00:00",
        id4="NONE",
        id5="NONE",
        func_type=1,  # time response
        ver_num=0,
        load_case_id=0,
        rsp_ent_name="PT",
        rsp_node=node,
        rsp_dir=1,
        ref_ent_name="NONE",
        ref_node=0,
        ref_dir=0,
        ord_data_type=ord_data_type,
        num_pts=n,
        abscissa_spacing=1,
        abscissa_min=0.0,
        abscissa_inc=1.0 / rate_hz,
        z_axis_value=0.0,
        abscissa_spec_data_type=17,  # time
        abscissa_len_unit_exp=0,
        abscissa_force_unit_exp=0,
        abscissa_temp_unit_exp=0,
        abscissa_axis_units_lab="s",
        ordinate_spec_data_type=12,  # acceleration
        ordinate_len_unit_exp=1,
        ordinate_force_unit_exp=0,
        ordinate_temp_unit_exp=0,
        ordinate_axis_units_lab="g",
        orddenom_spec_data_type=0,
        orddenom_len_unit_exp=0,
        orddenom_force_unit_exp=0,
        orddenom_temp_unit_exp=0,
        orddenom_axis_units_lab="NONE",
        z_axis_spec_data_type=0,
        z_axis_len_unit_exp=0,
        z_axis_force_unit_exp=0,
        z_axis_temp_unit_exp=0,
        z_axis_axis_units_lab="NONE",
        data=data,
        x=x,
        spec_data_type=17,
    )


# (file name, rate Hz, points, binary, ordinate data type, channels)
CASES = [
    ("ascii_single.uff", 25600.0, 2048, 0, 2, 1),  # E13.5, 6 per line
    ("ascii_double.uff", 48000.0, 1501, 0, 4, 2),  # E20.11, 4 per line, remainder line
    ("binary_double.uff", 20480.0, 1000, 1, 4, 2),  # 58b, little-endian IEEE doubles
]


def main():
    expected = {"reference": f"pyuff {pyuff.__version__}", "files": {}}
    for name, rate, n, binary, odt, channels in CASES:
        path = os.path.join(HERE, name)
        if os.path.exists(path):
            os.remove(path)
        sets = [dataset(n, rate, seed, binary, odt, node=seed + 1) for seed in range(channels)]
        # Start from an empty file and append: pyuff's "overwrite" mode reopens the file in binary
        # mode for 58b data and so truncates the ASCII header it has just written.
        open(path, "w", encoding="utf-8").close()
        uff = pyuff.UFF(path)
        # pyuff writes single precision only when force_double is off.
        uff.write_sets(sets, mode="add", force_double=(odt == 4))
        back = pyuff.UFF(path).read_sets()
        if isinstance(back, dict):
            back = [back]
        expected["files"][name] = {
            "nominal_rate_hz": rate,
            "abscissa_inc": [float(b["abscissa_inc"]) for b in back],
            "ord_data_type": [int(b["ord_data_type"]) for b in back],
            "channels": [[float(v) for v in b["data"]] for b in back],
        }
    with open(os.path.join(HERE, "expected.json"), "w", encoding="utf-8") as fh:
        json.dump(expected, fh, indent=None, separators=(",", ":"))
        fh.write("\n")


if __name__ == "__main__":
    main()
