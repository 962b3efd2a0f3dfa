"""Reference for the `job` figure: the whole of `decohere run SCENARIO --out DIR` in vectorised numpy/scipy, as a user
would script it, start-up (interpreter, numpy and scipy imports) included when it runs as its own process.

The same work on the same inputs: the scenario file is read (PyYAML) for the demo's numbers (modes, baths, stages,
readout, output step, seed); the covariance on the output grid, vectorised over time per stage,
V(t) = Φ(t)(V₀ − V∞)Φ(t)ᵀ + V∞ with Φ(t) = U·exp(Λt)·U⁻¹ from one eigendecomposition of the drift and V∞ from
A V + V Aᵀ + D = 0 (scipy.linalg.solve_continuous_lyapunov, Bartels–Stewart); the columns of covariance.parquet; per
delay the readout mode's exact state, `shots` draws (x, p) = L·ξ (L the Cholesky factor) plus readout noise of
variance n_add, the shots' sample moments, exact χ² intervals of var_i and var_q (NIST/SEMATECH e-Handbook, sec. 7.2.3)
and the parametric Wishart bootstrap by the Bartlett decomposition (1000 resamples; M. S. Bartlett, Proc. R. Soc. Edinb.
53, 260 (1933)) for var_min, var_max, occupancy and det V; the 64 × 64 (i, q) histograms; the plotted series reduced
to 1200 pixel columns (min/max per column); summary.json (per stage stability, end and steady state, the readout's
estimates).

Left out, and why: no Parquet engine comes with this Python (numpy, scipy only), so tables are raw little-endian columns
(numpy's tofile; stage and mode as one-byte codes) with no compression, footer or provenance; /usr/bin/python3 has no
matplotlib, so the plots' data are prepared but not drawn (no PNG, no SVG); the stage table on the terminal is not
printed. Each of these makes the script's work smaller than decohere's, not larger.
  /usr/bin/python3 tools/reference/run_job.py SCENARIO OUTDIR          one run, as a user runs it
  /usr/bin/python3 tools/reference/run_job.py SCENARIO OUTDIR --repeat 5  in-process medians, per phase
"""
import json
import math
import os
import re
import sys
import time

import numpy as np
import yaml
from scipy.linalg import solve_continuous_lyapunov
from scipy.stats import chi2

H_PLANCK, K_B = 6.62607015e-34, 1.380649e-23
TWO_PI = 2 * math.pi
UNITS = {"Hz": 1, "kHz": 1e3, "MHz": 1e6, "GHz": 1e9, "s": 1, "ms": 1e-3, "us": 1e-6, "ns": 1e-9,
         "K": 1, "mK": 1e-3, "uK": 1e-6}
PIXEL_COLUMNS, BINS, SPAN, RESAMPLES, CONFIDENCE = 1200, 64, 4.5, 1000, 0.95


def quantity(text):
    if isinstance(text, (int, float)):
        return float(text)
    number, unit = re.fullmatch(r"\s*([-+0-9.eE]+)\s*(\w*)\s*", text).groups()
    return float(number) * UNITS.get(unit, 1)


def bose(frequency_hz, temperature_k):
    return 1.0 / math.expm1(H_PLANCK * frequency_hz / (K_B * temperature_k))


def load(path):
    """The scenario's modes, stages as (name, duration, A, D), initial covariance, readout and grid step.

    Conventions of the project: R = (x₁, p₁, x₂, p₂, …), zero-point variance ½; A = Ω(𝐇 + Im C), D = Ω Re C Ωᵀ
    (A. Serafini, Quantum Continuous Variables, CRC Press 2017): damping γ into occupancy n gives A −γ/2·I and
    D γ(n + ½)·I; a red tone G(a†b + ab†) gives 𝐇 blocks G·I, a blue tone G(a†b† + ab) blocks G·diag(1, −1).
    """
    with open(path) as f:
        s = yaml.safe_load(f)
    names = list(s["modes"])
    n = len(names)
    occupancy, gamma = [], []
    for name in names:
        m = s["modes"][name]
        bath = m.get("bath", {})
        occupancy.append(bath["occupancy"] if "occupancy" in bath
                         else bose(quantity(m["frequency"]), quantity(bath["temperature"])))
        gamma.append(TWO_PI * quantity(m["linewidth"]))
    damping = np.diag(np.repeat(np.array(gamma) / 2, 2))
    diffusion = np.diag(np.repeat(np.array(gamma) * (np.array(occupancy) + 0.5), 2))
    omega = np.kron(np.eye(n), np.array([[0.0, 1.0], [-1.0, 0.0]]))
    stages = []
    for stage in s["stages"]:
        h = np.zeros((2 * n, 2 * n))
        for tone in stage.get("tones", []):
            a, b = names.index(tone["cavity"]), names.index(tone["mechanical"])
            g = TWO_PI * quantity(tone["coupling"])
            block = g * (np.eye(2) if tone["sideband"] == "red" else np.diag([1.0, -1.0]))
            h[2 * a:2 * a + 2, 2 * b:2 * b + 2] += block
            h[2 * b:2 * b + 2, 2 * a:2 * a + 2] += block
        stages.append((stage["name"], quantity(stage["duration"]), omega @ h - damping, diffusion))
    v0 = np.diag(np.repeat(np.array(occupancy) + 0.5, 2))
    for name, state in s.get("initial", {}).items():
        j = names.index(name)
        v0[2 * j:2 * j + 2, 2 * j:2 * j + 2] = (state["occupancy"] + 0.5) * np.eye(2)
    readout = dict(s["readout"])
    readout["delays"] = [quantity(d) for d in readout["delays"]]
    modes = [(name, s["modes"][name]["kind"], occupancy[j], gamma[j]) for j, name in enumerate(names)]
    return s["name"], modes, stages, v0, readout, quantity(s["output"]["step"]), int(s["seed"])


class Stage:
    """One stage's exact propagation from its start covariance: Φ(t) by one eigendecomposition, V∞ by Bartels–Stewart."""

    def __init__(self, a, d, v_start):
        self.a, self.d = a, d
        self.eigenvalues, u = np.linalg.eig(a)
        self.u, self.u_inv = u, np.linalg.inv(u)
        self.v_inf = solve_continuous_lyapunov(a, -d)
        self.v_start = v_start

    def at(self, t):
        phi = ((self.u[None, :, :] * np.exp(np.outer(t, self.eigenvalues))[:, None, :]) @ self.u_inv).real
        return phi @ (self.v_start - self.v_inf) @ phi.transpose(0, 2, 1) + self.v_inf


def evolve(stages, v, step):
    total = sum(d for _, d, _, _ in stages)
    propagators, blocks, times, codes, start = [], [], [], [], 0.0
    for k, (_, duration, a, d) in enumerate(stages):
        # Grid times inside the stage (multiples of the step), its end included; t = 0 once.
        first = math.floor(start / step + 1e-9) + 1
        last = math.floor((start + duration) / step - 1e-9)
        t = np.concatenate(([start] if k == 0 else [], np.arange(first, last + 1) * step, [start + duration])) - start
        stage = Stage(a, d, v)
        vt = stage.at(t)
        propagators.append((start, stage))
        blocks.append(vt)
        times.append(t + start)
        codes.append(np.full(len(t), k, dtype=np.int8))
        v = vt[-1]
        start += duration
    assert abs(start - total) < 1e-15
    return propagators, np.concatenate(times), np.concatenate(codes), np.concatenate(blocks)


def moments(vx, vp, c):
    mean, half = (vx + vp) / 2, np.sqrt(((vx - vp) / 2) ** 2 + c ** 2)
    vmin, vmax = mean - half, mean + half
    angle = 0.5 * np.arctan2(2 * c, vx - vp) + np.pi / 2
    angle = np.where(angle > np.pi / 2, angle - np.pi, angle)
    with np.errstate(divide="ignore", invalid="ignore"):
        db = 10 * np.log10(0.5 / vmin)
    return vmin, vmax, angle, mean - 0.5, db


def covariance_table(path, times, codes, v, n_modes):
    with open(path, "wb") as f:
        for j in range(n_modes):
            vx, vp, c = v[:, 2 * j, 2 * j], v[:, 2 * j + 1, 2 * j + 1], v[:, 2 * j, 2 * j + 1]
            columns = [times, codes, np.full(len(times), j, dtype=np.int8), vx, vp, c, *moments(vx, vp, c)]
            # One mode's rows after the other's (covariance.parquet interleaves them by time: the same numbers).
            for column in columns:
                np.ascontiguousarray(column).tofile(f)


def state_at(propagators, t):
    for start, stage in reversed(propagators):
        if t >= start:
            return stage.at(np.array([t - start]))[0]
    raise ValueError(t)


def estimate(i, q, added, model, rng):
    n = len(i)
    nu = n - 1
    s = np.cov(np.stack([i, q]))
    si, sq, siq = s[0, 0], s[1, 1], s[0, 1]
    mi, mq = i.mean(), q.mean()
    alpha = 1 - CONFIDENCE
    lo, hi = nu / chi2.ppf(1 - alpha / 2, nu), nu / chi2.ppf(alpha / 2, nu)
    l00 = math.sqrt(si)
    l10 = siq / l00
    l11 = math.sqrt(sq - l10 * l10)
    c1, c2 = np.sqrt(rng.chisquare(nu, RESAMPLES)), np.sqrt(rng.chisquare(nu - 1, RESAMPLES))
    z, e1, e2 = rng.standard_normal((3, RESAMPLES))
    b00, b10, b11 = l00 * c1, l10 * c1 + l11 * z, l11 * c2
    sxx, sxq, sqq = b00 * b00 / nu, b00 * b10 / nu, (b10 * b10 + b11 * b11) / nu
    bi, bq = mi + l00 * e1 / math.sqrt(n), mq + (l10 * e1 + l11 * e2) / math.sqrt(n)
    bmin, bmax, _, bocc, _ = moments(sxx - added, sqq - added, sxq)
    bocc = bocc + (bi ** 2 + bq ** 2) / 2
    vmin, vmax, _, occ, db = moments(si - added, sq - added, siq)
    occ = occ + (mi ** 2 + mq ** 2) / 2
    out = {"shots": n, "mean_i": mi, "mean_q": mq, "var_i": si, "var_q": sq, "cov_iq": siq, "added_noise": added}
    sd = {"var_x": (model["var_x"] + added) * math.sqrt(2 / nu), "var_p": (model["var_p"] + added) * math.sqrt(2 / nu)}
    for name, value, low, high in (("var_x", si - added, si * lo - added, si * hi - added),
                                   ("var_p", sq - added, sq * lo - added, sq * hi - added)):
        out[name] = {"value": value, "low": low, "high": high, "model": model[name], "z": (value - model[name]) / sd[name]}
    for name, value, draws in (("cov_xp", siq, sxq), ("var_min", vmin, bmin), ("var_max", vmax, bmax),
                               ("occupancy", occ, bocc), ("uncertainty_product", vmin * vmax, bmin * bmax)):
        low, high = np.quantile(draws, [alpha / 2, 1 - alpha / 2])
        m = model[name]
        out[name] = {"value": value, "low": low, "high": high, "model": m, "z": (value - m) / draws.std(ddof=1)}
    out["squeezing_db"] = {"value": db, "low": 10 * math.log10(0.5 / out["var_min"]["high"]),
                           "high": 10 * math.log10(0.5 / out["var_min"]["low"]) if out["var_min"]["low"] > 0 else None,
                           "model": model["squeezing_db"]}
    return out


def mode_moments(v, j):
    vx, vp, c = v[2 * j, 2 * j], v[2 * j + 1, 2 * j + 1], v[2 * j, 2 * j + 1]
    vmin, vmax, angle, occ, db = (float(x) for x in moments(vx, vp, c))
    return {"var_x": vx, "var_p": vp, "cov_xp": c, "var_min": vmin, "var_max": vmax, "angle_rad": angle,
            "occupancy": occ, "squeezing_db": db}


def minmax(x, y, columns=PIXEL_COLUMNS):
    """Per pixel column the minimum and maximum of y (the envelope a screen shows)."""
    edges = np.searchsorted(x, np.linspace(x[0], x[-1], columns + 1)[:-1])
    edges = np.unique(edges)
    return np.minimum.reduceat(y, edges), np.maximum.reduceat(y, edges)


def job(scenario, out, phases):
    tick = time.perf_counter()

    def phase(name):
        nonlocal tick
        now = time.perf_counter()
        phases[name] = phases.get(name, 0.0) + now - tick
        tick = now

    os.makedirs(out, exist_ok=True)
    name, modes, stages, v0, readout, step, seed = load(scenario)
    phase("load")
    propagators, times, codes, v = evolve(stages, v0, step)
    phase("engine")
    covariance_table(os.path.join(out, "covariance.bin"), times, codes, v, len(modes))
    phase("covariance table")

    j = [m[0] for m in modes].index(readout["mode"])
    added, shots = float(readout["added_noise"]), int(readout["shots"])
    start = sum(d for _, d, _, _ in stages[:[s[0] for s in stages].index(readout["stage"])])
    rng = np.random.default_rng(seed)
    estimates, histograms = [], []
    with open(os.path.join(out, "shots.bin"), "wb") as f:
        for k, delay in enumerate(readout["delays"]):
            state = state_at(propagators, start + delay)
            block = state[2 * j:2 * j + 2, 2 * j:2 * j + 2]
            xp = np.linalg.cholesky(block) @ rng.standard_normal((2, shots))
            iq = xp + math.sqrt(added) * rng.standard_normal((2, shots))
            np.arange(k * shots, (k + 1) * shots, dtype=np.int64).tofile(f)
            np.full(shots, delay).tofile(f)
            np.full(shots, start + delay).tofile(f)
            for c in (*iq, *xp):
                c.tofile(f)
            model = mode_moments(state, j)
            model["uncertainty_product"] = model["var_min"] * model["var_max"]
            estimates.append((delay, model, iq))
    phase("shots")
    results = []
    for delay, model, iq in estimates:
        e = estimate(iq[0], iq[1], added, model, rng)
        e["delay_s"] = delay
        results.append(e)
    phase("estimates")
    with open(os.path.join(out, "estimates.json"), "w") as f:
        json.dump(results, f)
    for (delay, model, iq) in estimates:
        half = SPAN * math.sqrt(model["var_max"] + added)
        histograms.append(np.histogram2d(iq[0], iq[1], bins=BINS, range=[[-half, half], [-half, half]])[0])
    series = []
    for jm, (_, kind, _, _) in enumerate(modes):
        if kind == "mechanical":
            vx, vp, c = v[:, 2 * jm, 2 * jm], v[:, 2 * jm + 1, 2 * jm + 1], v[:, 2 * jm, 2 * jm + 1]
            vmin, vmax, *_ = moments(vx, vp, c)
            series += [minmax(times, np.log10(vmin)), minmax(times, np.log10(vmax))]
    phase("plot data (not drawn)")

    summary = {"scenario": name, "seed": seed, "stages": [], "readout": results, "modes": {}}
    for mname, kind, n_th, gamma in modes:
        summary["modes"][mname] = {"bath_occupancy": n_th, "thermal_decoherence_rate_per_s": gamma * n_th}
    ends = np.flatnonzero(np.diff(codes, append=codes[-1] + 1))
    for k, ((sname, duration, a, d), (t0, stage)) in enumerate(zip(stages, propagators)):
        re_max = float(stage.eigenvalues.real.max())
        entry = {"name": sname, "start_s": t0, "end_s": t0 + duration, "stable": re_max < 0, "max_re_lambda_per_s": re_max,
                 "end": {m[0]: mode_moments(v[ends[k]], jm) for jm, m in enumerate(modes)}}
        if re_max < 0:
            entry["steady"] = {m[0]: mode_moments(stage.v_inf, jm) for jm, m in enumerate(modes)}
        summary["stages"].append(entry)
    with open(os.path.join(out, "summary.json"), "w") as f:
        json.dump(summary, f, indent=2, default=float)
    phase("summary JSON")
    return len(times) * len(modes)


if __name__ == "__main__":
    scenario, out = sys.argv[1], sys.argv[2]
    repeat = int(sys.argv[4]) if len(sys.argv) > 4 and sys.argv[3] == "--repeat" else 0
    if repeat == 0:
        job(scenario, out, {})
        sys.exit(0)
    job(scenario, out, {})
    runs = []
    for _ in range(repeat):
        phases = {}
        start = time.perf_counter()
        rows = job(scenario, out, phases)
        runs.append((time.perf_counter() - start, phases))
    runs.sort(key=lambda r: r[0])
    total, phases = runs[len(runs) // 2]
    print(f"reference: whole job in-process, {rows:,} covariance rows: median {total * 1e3:.1f} ms "
          f"(best {runs[0][0] * 1e3:.1f} ms)")
    for name, seconds in phases.items():
        print(f"  {name:<24} {seconds * 1e3:8.1f} ms")
