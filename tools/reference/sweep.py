"""Reference for the `sweep` figure: the demo's 20 × 20 grid of blue coupling (2–24 kHz) × drum bath temperature
(5–100 mK, log-spaced), steady-state squeezing of the squeeze stage: per point the Lyapunov equation
A V + V Aᵀ + D = 0 (scipy.linalg.solve_continuous_lyapunov, Bartels–Stewart), the drum's smaller principal variance,
10·log10(½ / var_min); the table written to disk (.npy). The same in batch form: A for each coupling and D for each
temperature built once, the 400 equations in Kronecker form, (I ⊗ A + A ⊗ I) vec V = −vec D (R. Bellman, Introduction
to Matrix Analysis (1960), ch. 12), solved by one numpy.linalg.solve over the stack. Run: /usr/bin/python3 tools/reference/sweep.py; with `--once PATH` the
batched sweep runs once and writes PATH (numpy alone is imported), as the `sweep` figure times it as a process.
"""
import os
import sys
import tempfile

import numpy as np

from common import demo, timed

BLUE = np.linspace(2.0, 24.0, 20)
TEMPERATURE = np.logspace(np.log10(5e-3), np.log10(100e-3), 20)


def sweep(path):
    from scipy.linalg import solve_continuous_lyapunov

    rows = []
    for point, (blue, temperature) in enumerate((b, t) for b in BLUE for t in TEMPERATURE):
        stages, _ = demo(blue_khz=blue, temperature_k=temperature)
        _, _, a, d = stages[1]
        v = solve_continuous_lyapunov(a, -d)
        vx, vp, c = v[0, 0], v[1, 1], v[0, 1]
        vmin = (vx + vp) / 2 - np.hypot((vx - vp) / 2, c)
        rows.append((point, blue * 1e3, temperature, 10 * np.log10(0.5 / vmin)))
    table = np.array(rows)
    np.save(path, table)
    return table


def sweep_batched(path):
    drifts = np.array([demo(blue_khz=blue)[0][1][2] for blue in BLUE])  # A depends on the blue coupling only,
    diffusions = np.array([demo(temperature_k=t)[0][1][3] for t in TEMPERATURE])  # D on the temperature only
    a = np.repeat(drifts, len(TEMPERATURE), axis=0)
    d = np.tile(diffusions, (len(BLUE), 1, 1))
    n = a.shape[1]
    eye = np.eye(n)
    # Row-major vec: (A V)_ik = Σ_j A_ij V_jk and (V Aᵀ)_ik = Σ_l V_il A_kl.
    k = (np.einsum("pij,kl->pikjl", a, eye) + np.einsum("ij,pkl->pikjl", eye, a)).reshape(-1, n * n, n * n)
    v = np.linalg.solve(k, -d.reshape(-1, n * n, 1))[..., 0].reshape(-1, n, n)
    vx, vp, c = v[:, 0, 0], v[:, 1, 1], v[:, 0, 1]
    vmin = (vx + vp) / 2 - np.hypot((vx - vp) / 2, c)
    blue, temperature = np.meshgrid(BLUE, TEMPERATURE, indexing="ij")
    table = np.column_stack([np.arange(len(vmin)), blue.ravel() * 1e3, temperature.ravel(), 10 * np.log10(0.5 / vmin)])
    np.save(path, table)
    return table


if __name__ == "__main__" and sys.argv[1:2] == ["--once"]:
    sweep_batched(sys.argv[2])
elif __name__ == "__main__":
    path = os.path.join(tempfile.gettempdir(), f"decohere-reference-sweep-{os.getpid()}.npy")
    t = timed("reference: sweep, 20 x 20 steady squeezing", lambda: sweep(path), rate=lambda r, s: f"{len(r) / s:.0f} points/s")
    print(f"  steady squeezing at 18 kHz-ish, 15 mK-ish: {t[np.argmin(abs(t[:, 1] - 18e3) + abs(t[:, 2] - 15e-3) * 1e6), 3]:.4f} dB")
    b = timed("reference: the same, batched (one stacked solve)", lambda: sweep_batched(path), rate=lambda r, s: f"{len(r) / s:.0f} points/s")
    print(f"  largest difference from the point-by-point table: {np.max(np.abs(b - t)):.2e} dB")
    os.remove(path)
