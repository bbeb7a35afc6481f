#!/usr/bin/env python3
"""The plain baseline as one whole process, for scripts/bench-memory.

Usage: bench-baseline.py RECORD OUT

Reads the WFDB record RECORD (signal PLETH) with Python wfdb's rdrecord,
runs the causal scipy baseline of tests/scipy/baseline_beats.py on it
(missing samples filled, Butterworth 0.5-8 Hz order 2 band-pass run with
sosfilt, find_peaks with the prominence gate, peaks refined on the raw
signal), and writes the refined peaks, one sample index a line, to OUT:
the same work `plethwire replay` does, read to written, measured the same
way. Prints the sample and beat counts.
"""
import os
import sys

import numpy as np
import wfdb

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "tests", "scipy"))
import baseline_beats as bb  # noqa: E402


def main():
    record, out = sys.argv[1], sys.argv[2]
    rec = wfdb.rdrecord(record, channel_names=["PLETH"])
    x = bb.fill_missing_array(rec.p_signal[:, 0].astype(np.float64))
    fs = float(rec.fs)
    peaks = bb.filtered_peaks(bb.band_pass(x, fs), fs)
    refined = bb.refine(x, peaks, fs)
    with open(out, "w") as f:
        f.write("".join(f"{p}\n" for p in refined))
    print(f"{x.size} samples, {len(refined)} beats")


if __name__ == "__main__":
    main()
