"""Reference for the `covariance` and `run` figures: the demo's covariance table on a 100,000-step grid (2 modes),
vectorised over time: per stage V(t) = Φ(t)(V₀ − V∞)Φ(t)ᵀ + V∞ with Φ(t) = U·exp(Λt)·U⁻¹ from one eigendecomposition
of the drift and V∞ from the Lyapunov equation A V + V Aᵀ + D = 0 (scipy.linalg.solve_continuous_lyapunov,
Bartels–Stewart); the columns of covariance.parquet for both modes; the table written to disk (numpy's .npy: no Parquet
writer comes with numpy). Run: /usr/bin/python3 tools/reference/run_covariance.py
"""
import math
import os
import tempfile

import numpy as np
from scipy.linalg import solve_continuous_lyapunov

from common import demo, timed

STEPS = 100_000


def evolve():
    stages, v = demo()
    total = sum(d for _, d, _, _ in stages)
    step = total / STEPS
    blocks, times, start = [], [], 0.0
    for k, (_, duration, a, d) in enumerate(stages):
        # Grid times inside the stage (multiples of the step), its end included; t = 0 once.
        first = math.floor(start / step + 1e-9) + 1
        last = math.floor((start + duration) / step - 1e-9)
        t = np.concatenate(([start] if k == 0 else [], np.arange(first, last + 1) * step, [start + duration])) - start
        v_inf = solve_continuous_lyapunov(a, -d)
        lam, u = np.linalg.eig(a)
        u_inv = np.linalg.inv(u)
        phi = np.einsum("ij,tj,jk->tik", u, np.exp(np.outer(t, lam)), u_inv).real
        vt = np.einsum("tij,jk,tlk->til", phi, v - v_inf, phi) + v_inf
        blocks.append(vt)
        times.append(t + start)
        v = vt[-1]
        start += duration
    return np.concatenate(times), np.concatenate(blocks)


def columns(times, v):
    rows = {}
    for j, mode in enumerate(["drum", "lc"]):
        vx, vp, c = v[:, 2 * j, 2 * j], v[:, 2 * j + 1, 2 * j + 1], v[:, 2 * j, 2 * j + 1]
        mean, half = (vx + vp) / 2, np.sqrt(((vx - vp) / 2) ** 2 + c ** 2)
        vmin, vmax = mean - half, mean + half
        angle = 0.5 * np.arctan2(2 * c, vx - vp) + np.pi / 2
        angle = np.where(angle > np.pi / 2, angle - np.pi, angle)
        rows[mode] = np.stack([times, vx, vp, c, vmin, vmax, angle, mean - 0.5, 10 * np.log10(0.5 / vmin)], axis=1)
    return np.concatenate([rows["drum"], rows["lc"]])


def whole(path):
    times, v = evolve()
    table = columns(times, v)
    np.save(path, table)
    return table.shape[0]


if __name__ == "__main__":
    path = os.path.join(tempfile.gettempdir(), f"decohere-reference-{os.getpid()}.npy")
    times, v = evolve()
    print(f"var_min of the drum at the end of the squeeze stage: {columns(times, v)[np.argmin(abs(times - 3e-3)), 4]:.6g}")
    timed("reference: covariance table, engine + table", lambda: whole(path),
          rate=lambda rows, s: f"{rows:,} rows, {rows / s / 1e6:.2f} M rows/s")
    os.remove(path)
