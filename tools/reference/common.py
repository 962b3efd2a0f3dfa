"""The demo scenario (scenarios/demo.yaml) as drift and diffusion matrices, and timing, for the numpy/scipy references.

Conventions of the project: R = (x_drum, p_drum, x_lc, p_lc), V = ½⟨{ΔR, ΔR}⟩, zero-point variance ½;
A = Ω(𝐇 + Im C), D = Ω Re C Ωᵀ (A. Serafini, Quantum Continuous Variables, CRC Press 2017), which for the terms used
here gives: damping γ into occupancy n → A −γ/2·I, D γ(n + ½)·I; red tone G(a†b + ab†) → 𝐇 blocks G·I;
blue tone G(a†b† + ab) → 𝐇 blocks G·diag(1, −1).
"""
import math
import os
import statistics
import time

import numpy as np

H_PLANCK, K_B = 6.62607015e-34, 1.380649e-23
TWO_PI = 2 * math.pi
OMEGA = np.array([[0.0, 1.0], [-1.0, 0.0]])


def bose(frequency_hz, temperature_k):
    return 1.0 / math.expm1(H_PLANCK * frequency_hz / (K_B * temperature_k))


def demo(blue_khz=18.0, temperature_k=15e-3):
    """Stages of the demo: list of (name, duration s, A, D); the initial covariance."""
    gamma, kappa = TWO_PI * 0.15, TWO_PI * 210e3
    n_drum, n_lc = bose(4.1e6, temperature_k), 0.04
    damping = np.diag([gamma / 2, gamma / 2, kappa / 2, kappa / 2])
    diffusion = np.diag([gamma * (n_drum + 0.5)] * 2 + [kappa * (n_lc + 0.5)] * 2)
    omega = np.kron(np.eye(2), OMEGA)

    def drift(red_khz, blue):
        h = np.zeros((4, 4))
        g_red, g_blue = TWO_PI * red_khz * 1e3, TWO_PI * blue * 1e3
        block = g_red * np.eye(2) + g_blue * np.diag([1.0, -1.0])
        h[0:2, 2:4] = block
        h[2:4, 0:2] = block
        return omega @ h - damping

    stages = [("prepare", 1e-3, drift(25.0, 0.0), diffusion),
              ("squeeze", 2e-3, drift(25.0, blue_khz), diffusion),
              ("release", 8e-3, drift(0.0, 0.0), diffusion)]
    v0 = np.diag([0.2 + 0.5] * 2 + [n_lc + 0.5] * 2)
    return stages, v0


def timed(label, body, repeat=None, rate=None):
    """One warm-up, then `repeat` calls (default $REFERENCE_REPEAT or 5): prints median and best wall time (ms) and the rate rate(result, seconds)."""
    repeat = repeat or int(os.environ.get("REFERENCE_REPEAT", "5"))
    result = body()
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        result = body()
        times.append(time.perf_counter() - start)
    median = statistics.median(times)
    extra = rate(result, median) if rate else ""
    print(f"{label:<50} median {median * 1e3:8.1f} ms  best {min(times) * 1e3:8.1f} ms  {extra}")
    return result
