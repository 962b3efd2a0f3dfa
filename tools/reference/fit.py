"""Reference for the `fit` figure: 3 parameters (bath occupancy, linewidth, added noise) of a released mechanical mode
fitted by maximum likelihood to 40 delays × 10,000 shots read from CSV, with 95% profile-likelihood intervals for all
three. Data as tools/Decohere.Benchmarks/FitBenchmark.cs makes them: V(t) = e^{−γt}·½ + (1 − e^{−γt})(n + ½) plus the
added noise, γ = 2π·10 Hz, n = 50, added noise 1.3; the fit starts at n = 20. Per delay the (i, q) scatter matrix about
the sample mean is Wishart with N − 1 degrees of freedom and covariance σ²·I:
−2 ln L = Σ_k [2(N_k − 1) ln σ_k² + tr S_k / σ_k²] + const. Run: /usr/bin/python3 tools/reference/fit.py
"""
import math
import os
import tempfile

import numpy as np
from scipy.optimize import brentq, minimize

from common import timed

DELAYS, SHOTS = 40, 10_000
CHI2_95 = 3.841458820694124   # χ²₁ 95% quantile


def make_csv(path):
    rng = np.random.default_rng(42)
    d = np.repeat(np.arange(DELAYS) * 1e-3, SHOTS)
    g = 2 * math.pi * 10
    sd = np.sqrt(np.exp(-g * d) * 0.5 + (1 - np.exp(-g * d)) * 50.5 + 1.3)
    data = np.stack([d, sd * rng.standard_normal(d.size), sd * rng.standard_normal(d.size)], axis=1)
    np.savetxt(path, data, delimiter=",", header="delay_s,i,q", comments="", fmt="%.17g")


def deviance(theta, delays, n, trace):
    occupancy, linewidth_hz, added = theta
    if occupancy < 0 or linewidth_hz <= 0 or added < 0:
        return np.inf
    decay = np.exp(-2 * math.pi * linewidth_hz * delays)
    s2 = decay * 0.5 + (1 - decay) * (occupancy + 0.5) + added
    return float(np.sum(2 * (n - 1) * np.log(s2) + trace / s2))


def read_and_fit(path):
    data = np.loadtxt(path, delimiter=",", skiprows=1)
    delays, inverse, counts = np.unique(data[:, 0], return_inverse=True, return_counts=True)
    # Scatter about each delay's mean: Σ(i − ī)² + Σ(q − q̄)² = Σi² + Σq² − N(ī² + q̄²).
    sums = np.stack([np.bincount(inverse, data[:, c]) for c in (1, 2)])
    squares = np.bincount(inverse, data[:, 1] ** 2 + data[:, 2] ** 2)
    trace = squares - (sums ** 2).sum(axis=0) / counts
    f = lambda th: deviance(th, delays, counts, trace)
    best = minimize(f, [20.0, 10.0, 1.0], method="Nelder-Mead", options={"xatol": 1e-10, "fatol": 1e-10, "maxiter": 20000})
    intervals = []
    for p in range(3):
        def profile(value):
            others = [k for k in range(3) if k != p]
            def g(x):
                th = np.empty(3); th[p] = value; th[others] = x
                return f(th)
            r = minimize(g, best.x[others], method="Nelder-Mead", options={"xatol": 1e-9, "fatol": 1e-9})
            return r.fun - best.fun - CHI2_95
        step = 0.05 * abs(best.x[p]) + 1e-3
        lo, hi = best.x[p] - step, best.x[p] + step
        while profile(lo) < 0: lo -= step
        while profile(hi) < 0: hi += step
        intervals.append((brentq(profile, lo, best.x[p], xtol=1e-8), brentq(profile, best.x[p], hi, xtol=1e-8)))
    return best.x, intervals


if __name__ == "__main__":
    path = os.path.join(tempfile.gettempdir(), f"decohere-reference-fit-{os.getpid()}.csv")
    make_csv(path)
    x, ci = timed("reference: fit, 3 parameters, 40 x 10,000 shots (CSV)", lambda: read_and_fit(path), repeat=3,
                  rate=lambda r, s: ", ".join(f"{n} {v:.5g}" for n, v in zip(["occupancy", "linewidth", "added_noise"], r[0])))
    print("  95% intervals:", ", ".join(f"[{a:.4g}, {b:.4g}]" for a, b in ci))
    os.remove(path)
