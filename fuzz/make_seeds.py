#!/usr/bin/env python3
"""Writes the hand-made seed inputs of the fuzz corpora (fuzz/corpus/<target>/seed-*).

Deterministic; standard library only. Run from anywhere: `python3 fuzz/make_seeds.py`.
The seeds are small valid (and a few nearly valid) files of each format; libFuzzer grows the
corpus from them, and `cargo fuzz cmin` keeps it small.
"""
import math
import os
import struct

HERE = os.path.dirname(os.path.abspath(__file__))


def put(target, name, data):
    folder = os.path.join(HERE, "corpus", target)
    os.makedirs(folder, exist_ok=True)
    if isinstance(data, str):
        data = data.encode()
    with open(os.path.join(folder, "seed-" + name), "wb") as f:
        f.write(data)


def samples(n, amp=0.5):
    return [amp * math.sin(2 * math.pi * 50 * i / 1000.0) for i in range(n)]


# ---------------------------------------------------------------- WAV
def riff(fmt_chunk, data, extra_chunks=b""):
    body = b"WAVE" + fmt_chunk + extra_chunks + b"data" + struct.pack("<I", len(data)) + data
    if len(data) % 2:
        body += b"\0"
    return b"RIFF" + struct.pack("<I", len(body)) + body


def fmt_pcm(tag, channels, rate, bits):
    align = channels * ((bits + 7) // 8)
    return b"fmt " + struct.pack("<IHHIIHH", 16, tag, channels, rate, rate * align, align, bits)


def fmt_extensible(channels, rate, bits, float_data):
    align = channels * ((bits + 7) // 8)
    guid_tail = b"\x00\x00\x00\x00\x10\x00\x80\x00\x00\xaa\x00\x38\x9b\x71"
    sub = struct.pack("<H", 3 if float_data else 1) + guid_tail
    payload = struct.pack("<HHIIHH", 0xFFFE, channels, rate, rate * align, align, bits)
    payload += struct.pack("<HHI", 22, bits, 0) + sub
    return b"fmt " + struct.pack("<I", len(payload)) + payload


def pcm_bytes(values, bits):
    out = bytearray()
    for v in values:
        if bits == 8:
            out += struct.pack("<B", max(0, min(255, int(round(v * 127)) + 128)))
        elif bits == 16:
            out += struct.pack("<h", int(round(v * 32767)))
        elif bits == 24:
            out += struct.pack("<i", int(round(v * 8388607)))[:3]
        else:
            out += struct.pack("<i", int(round(v * 2147483647)))
    return bytes(out)


s = samples(64)
for bits in (8, 16, 24, 32):
    put("wav", f"pcm{bits}", riff(fmt_pcm(1, 1, 8000, bits), pcm_bytes(s, bits)))
put("wav", "float32", riff(fmt_pcm(3, 1, 25600, 32), b"".join(struct.pack("<f", v) for v in s)))
stereo = [v for pair in zip(s, [-x for x in s]) for v in pair]
put("wav", "float32-stereo", riff(fmt_pcm(3, 2, 25600, 32), b"".join(struct.pack("<f", v) for v in stereo)))
put("wav", "extensible-pcm24", riff(fmt_extensible(1, 48000, 24, False), pcm_bytes(s, 24)))
put("wav", "extensible-float", riff(fmt_extensible(2, 48000, 32, True),
                                    b"".join(struct.pack("<f", v) for v in stereo)))
put("wav", "list-chunk", riff(fmt_pcm(1, 1, 8000, 16), pcm_bytes(s, 16),
                              b"LIST" + struct.pack("<I", 10) + b"INFOabcdef"))
put("wav", "float64-unsupported", riff(fmt_pcm(3, 1, 8000, 64), b"\0" * 64))
clipped = [max(-0.3, min(0.3, v)) for v in samples(64)]
put("wav", "clipped-pcm16", riff(fmt_pcm(1, 1, 8000, 16), pcm_bytes(clipped, 16)))

# ---------------------------------------------------------------- CSV waveform
put("csv_waveform", "one-channel", "# sample_rate_hz=25600\n" + "".join(f"{v:.6f}\n" for v in s[:32]))
put("csv_waveform", "two-channel", "# sample_rate_hz = 1000\n# a comment\n"
    + "".join(f"{a:.4e},{b:.4e}\r\n" for a, b in zip(s[:24], s[8:32])))
put("csv_waveform", "no-rate", "".join(f"{v}\n" for v in s[:16]))
put("csv_waveform", "quoted-and-blank", '\ufeff# sample_rate_hz=2048\n"0.5"\n\n1e-3\n-inf\nNaN\n')

# ---------------------------------------------------------------- UFF 58 ASCII
def header11(title, ord_type, n, dt):
    lines = [
        f"{title:<80}", f"{'spallcast fuzz seed':<80}", f"{'01-Dec-26 00:00:00':<80}",
        f"{'NONE':<80}", f"{'NONE':<80}",
        "    1         0    0         0         PT         1   1       NONE         0   0",
        f"{ord_type:10d}{n:10d}{1:10d}{0.0:13.5e}{dt:13.5e}{0.0:13.5e}",
        "        17    0    0    0 NONE                 s                   ",
        "        12    1    0    0 NONE                 g                   ",
        "         0    0    0    0 NONE                 NONE                ",
        "         0    0    0    0 NONE                 NONE                ",
    ]
    return "".join(l + "\n" for l in lines)


def ascii58(values, ord_type=2, dt=1 / 25600, title="seed record"):
    out = "    -1\n    58\n" + header11(title, ord_type, len(values), dt)
    per = 6 if ord_type == 2 else 4
    fmt = "{:13.5e}" if ord_type == 2 else "{:20.11e}"
    for i in range(0, len(values), per):
        out += "".join(fmt.format(v) for v in values[i:i + per]) + "\n"
    return out + "    -1\n"


put("uff58_ascii", "single", ascii58(s[:20]))
put("uff58_ascii", "double-two-channels", ascii58(s[:12], 4, 1 / 48000) + ascii58(s[12:24], 4, 1 / 48000))
units = "    -1\n   164\n         1  SI units\n    1.00000000000000000e+00    1.00000000000000000e+00    1.00000000000000000e+00\n    2.73149999999999977e+02\n    -1\n"
put("uff58_ascii", "with-units-dataset", units + ascii58(s[:8]))
put("uff58_ascii", "fortran-d-exponent", ascii58(s[:6]).replace("e", "D"))


# ---------------------------------------------------------------- UFF 58 binary
def binary58(values, big=False, single=False, dt=1 / 20480):
    width = 4 if single else 8
    code = "<" if not big else ">"
    data = b"".join(struct.pack(code + ("f" if single else "d"), v) for v in values)
    head = f"    58b{2 if big else 1:6}{2:6}{11:12}{len(data):12}{0:6}{0:6}{0:12}{0:12}\n"
    hdr = header11("seed binary", 2 if single else 4, len(values), dt)
    return ("    -1\n" + head + hdr).encode() + data + b"    -1\n"


for big in (False, True):
    for single in (False, True):
        put("uff58_binary", f"{'be' if big else 'le'}-{'f32' if single else 'f64'}",
            binary58(s[:16], big, single))
put("uff58_binary", "two-channels", binary58(s[:8]) + binary58(s[8:16]))

# ---------------------------------------------------------------- route manifest
put("manifest", "minimal", "file,point,taken_at,rpm\na.wav,P1,2026-05-14T09:31:00+01:00,1480\n")
put("manifest", "all-columns",
    "point,file,rpm,taken_at,units,sensitivity,channel,sample_rate_hz,notes\n"
    "IN-P1-MNDE-H,sub/a.csv,1480.5,2026-05-14T09:31:00+01:00,mV,100,2,25600,x\n"
    "IN-P1-MNDE-V,b.uff,990,2026-05-14T09:32:00Z,m/s2,,,,\n"
    "IN-P1-MNDE-A,./c.wav,990,2026-05-14T09:33:00-05:30,g,,1,,\"quoted, note\"\n")
put("manifest", "bad-rows",
    "file,point,taken_at,rpm,channel\n../x.wav,P,2026-05-14T09:31:00+01:00,1480,1\n"
    "/abs.wav,P,2026-05-14T09:31:00,0,0\nC:\\d.wav,P,2026-05-14,1e9,x\na.wav,P,t,1\n")

# ---------------------------------------------------------------- plant file
CONTRACT = '''[site]
name = "Seed Works"
timezone_offset = "+01:00"

[[bearing_types]]
designation = "SD-209"
kind = "deep-groove ball"
rolling_elements = 9
element_diameter_mm = 12.7
pitch_diameter_mm = 65.0
contact_angle_deg = 0.0

[[bearing_types]]
designation = "SD-F"
factors = { ftf = 0.4, bsf = 2.3, bpfo = 3.6, bpfi = 5.4 }

[[areas]]
name = "Intake"
  [[areas.machines]]
  id = "IN-P1"
  name = "Intake pump 1"
  kind = "pump"
  nominal_rpm = 1480.0
  iso_group = 2
  iso_support = "rigid"
    [[areas.machines.bearings]]
    position = "MNDE"
    description = "Motor non-drive end"
    bearing_type = "SD-209"
    lubrication = "grease"
    installed = "2024-02-12"
    history = [ { installed = "2022-05-01", removed = "2024-02-12", found = "outer race spall" } ]
    [[areas.machines.points]]
    id = "IN-P1-MNDE-H"
    bearing = "MNDE"
    direction = "H"
    sensor = "accelerometer"
    sensitivity_mv_per_g = 100.0

[[outages]]
name = "Spring shutdown"
start = "2027-03-08"
end = "2027-03-12"
areas = ["Intake"]
machines = ["IN-P1"]
'''
put("plant_file", "contract-example", CONTRACT)
put("plant_file", "site-only", '[site]\nname = "x"\n')
put("plant_file", "unknown-key", CONTRACT.replace('kind = "pump"', 'kind = "pump"\n  colour = "red"'))
