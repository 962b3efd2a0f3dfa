#!/usr/bin/env python3
"""Regenerates the data files of the joint-fit example in scenarios/joint/ (Python standard library only, seeded).

- heating.csv: the variances `decohere run` samples from device.yaml (its seed 7): the project's own shot sampler.
- cooling.csv: `decohere cooling` of device.yaml at twelve cooperativities, each occupancy with 5 % Gaussian noise
  (occupancy_err states it).
- sidebands.csv: the sideband asymmetry `decohere spectrum` computes for thermometry.yaml with both probes at 100, 200 and
  300 Hz, each with Gaussian noise of 0.002 (ratio_err states it).
- ringdown.csv: the energy of the drum ringing down at the device's damping (linewidth 10 Hz), each point drawn from
  the exponential (thermal) distribution about E0·exp(−γt) + E_th, E0 = 1000, E_th = 40 (arbitrary units).

Run from the repository root: tools/joint-example.py [decohere command, default: dotnet run --project src/Decohere.Cli --]
"""
import csv
import json
import math
import random
import shlex
import subprocess
import sys
import tempfile
from pathlib import Path

root = Path(__file__).resolve().parent.parent
here = root / "scenarios" / "joint"
decohere = shlex.split(sys.argv[1]) if len(sys.argv) > 1 else ["dotnet", "run", "--project", str(root / "src" / "Decohere.Cli"), "--"]
rng = random.Random(20261203)


def rows(path):
    with open(path, newline="") as f:
        return list(csv.DictReader(f))


def write(path, header, table):
    with open(path, "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(header)
        w.writerows(table)


with tempfile.TemporaryDirectory() as tmp:
    subprocess.run([*decohere, "run", str(here / "device.yaml"), "--out", tmp, "--format", "parquet,csv", "--quiet"], check=True)
    write(here / "heating.csv", ["delay_s", "var_i", "var_q", "cov_iq", "shots"],
          [[r["delay_s"], r["var_i"], r["var_q"], r["cov_iq"], r["shots"]] for r in rows(Path(tmp) / "estimates.csv")])

    subprocess.run([*decohere, "cooling", str(here / "device.yaml"), "--cooperativity", "1:3e4:12:log", "--out", tmp,
                    "--format", "parquet,csv", "--quiet"], check=True)
    table = []
    for r in rows(Path(tmp) / "cooling.csv"):
        n = float(r["occupancy"])
        sd = 0.05 * n
        table.append([r["cooperativity"], repr(n + rng.gauss(0, sd)), repr(sd)])
    write(here / "cooling.csv", ["cooperativity", "occupancy", "occupancy_err"], table)

    table = []
    text = (here / "thermometry.yaml").read_text()
    for g in (100, 200, 300):
        probe = Path(tmp) / "probe.yaml"
        probe.write_text(text.replace("coupling: 300 Hz", f"coupling: {g} Hz"))
        subprocess.run([*decohere, "spectrum", str(probe), "--points", "20", "--out", tmp, "--quiet"], check=True)
        with open(Path(tmp) / "spectrum.json") as f:
            ratio = json.load(f)["asymmetry"][0]["ratio"]
        table.append([g, repr(ratio + rng.gauss(0, 0.002)), 0.002])
    write(here / "sidebands.csv", ["coupling_hz", "ratio", "ratio_err"], table)

gamma = 2 * math.pi * 10.0
table = []
for k in range(80):
    t = 1.25e-3 * k
    mean = 1000 * math.exp(-gamma * t) + 40
    table.append([f"{t:.6g}", repr(rng.expovariate(1 / mean))])
write(here / "ringdown.csv", ["time_s", "energy"], table)
print("wrote", ", ".join(str(here / f) for f in ("heating.csv", "cooling.csv", "sidebands.csv", "ringdown.csv")))
