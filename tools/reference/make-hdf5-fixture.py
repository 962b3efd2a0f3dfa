#!/usr/bin/python3
"""Writes tests/Decohere.Tests/IO/Data/lab-shots.h5 with h5py (libhdf5), a writer independent of the tool's reader.

Run with Debian's python3-h5py (apt-get install python3-h5py): /usr/bin/python3 tools/reference/make-hdf5-fixture.py
The values are small and exact so the test states them literally; the layout is what a lab's acquisition code writes:
one group per measurement, one dataset per column (fixed- and variable-length strings among them), a units attribute, a gzip-compressed chunked column, a 2-D raw
trace and a scalar beside the columns, and a second group in volts.
"""
import os
import h5py
import numpy as np

path = os.path.join(os.path.dirname(__file__), "..", "..", "tests", "Decohere.Tests", "IO", "Data", "lab-shots.h5")
with h5py.File(path, "w") as f:
    f.attrs["device"] = "invented test device"
    f.create_dataset("fridge_temperature", data=0.012)
    run = f.create_group("run7")
    delay = run.create_dataset("delay", data=np.array([0, 0, 0, 1.5, 1.5, 1.5], dtype="f8"))
    delay.attrs["units"] = "ms"
    run.create_dataset("i", data=np.array([0.25, -0.5, 1.0, 2.0, -1.5, 0.125], dtype="f4"),
                       chunks=(3,), compression="gzip", compression_opts=4)
    run.create_dataset("q", data=np.array([1, -2, 3, -4, 5, -6], dtype="i2"))
    run.create_dataset("mode", data=np.array([b"drum"] * 6))
    run.create_dataset("label", data=np.array(["a", "b", "c", "d", "e", "f"], dtype=h5py.string_dtype()))
    run.create_dataset("raw", data=np.zeros((2, 3)))
    volts = f.create_group("volts")
    v = volts.create_dataset("i", data=np.array([1e-3, 2e-3], dtype="f8"))
    v.attrs["units"] = "V"
    volts.create_dataset("delay_s", data=np.array([0.0, 0.0]))
    uneven = f.create_group("uneven")
    uneven.create_dataset("a", data=np.arange(3.0))
    uneven.create_dataset("b", data=np.arange(4.0))
