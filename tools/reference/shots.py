"""Reference for the `shots` figure: 10⁷ shots of the demo's drum at one delay, drawn from its 2 × 2 covariance
(Cholesky factor times standard normals) plus independent readout noise of variance 1.3, and the columns of
shots.parquet that vary (shot, i, q, x, p; numpy has no Parquet writer, so raw little-endian columns; the constant
delay, time and mode cost shots.parquet a few bytes per row group and are left out) written in
batches of 2¹⁹ shots. A sample is one of i, q. Run: /usr/bin/python3 tools/reference/shots.py
"""
import os
import tempfile

import numpy as np

from common import timed

SHOTS, BATCH = 10_000_000, 1 << 19
COVARIANCE = np.array([[0.0899535, 0.0], [0.0, 3.3191026]])   # the drum at the end of the squeeze stage


def write_only(path, columns):
    with open(path, "wb") as f:
        for first in range(0, SHOTS, BATCH):
            n = min(BATCH, SHOTS - first)
            np.arange(first, first + n, dtype=np.int64).tofile(f)
            for c in columns:
                c[:n].tofile(f)
    return SHOTS


def sample_and_write(path):
    rng = np.random.default_rng(20261201)
    chol = np.linalg.cholesky(COVARIANCE)
    noise = np.sqrt(1.3)
    with open(path, "wb") as f:
        for first in range(0, SHOTS, BATCH):
            n = min(BATCH, SHOTS - first)
            xp = chol @ rng.standard_normal((2, n))
            iq = xp + noise * rng.standard_normal((2, n))
            np.arange(first, first + n, dtype=np.int64).tofile(f)
            for c in (iq[0], iq[1], xp[0], xp[1]):
                c.tofile(f)
    return SHOTS


if __name__ == "__main__":
    path = os.path.join(tempfile.gettempdir(), f"decohere-reference-shots-{os.getpid()}.bin")
    rng = np.random.default_rng(7)
    batch = [rng.standard_normal(BATCH) for _ in range(4)]
    rate = lambda n, s: f"{2 * n / s / 1e6:.1f} M samples/s"
    timed("reference: shots writer alone (raw columns)", lambda: write_only(path, batch), rate=rate)
    timed("reference: shots sampled and written", lambda: sample_and_write(path), rate=rate)
    os.remove(path)
