#!/usr/bin/env python3
"""The plain baseline beside every figure: beats found with scipy alone.

Reads a JSON request on stdin, answers JSON on stdout. Called by
tests/src/baseline.rs (one Python run for all records) every time a check
needs it, so the baseline cannot go stale.

Request: {"records": [{"name": str, "fs": Hz, "samples": [x or null, ...]}]}
(the exact samples the pipeline sees; null stands for NaN).
Answer: {"records": [{"name": str, "filtered": [i, ...], "refined": [i, ...]}]}
with 0-based sample indices in increasing order.

The method is fixed, the same for every record and data set:
1. Missing samples (null, NaN, infinities) take the last finite value
   (before the first finite value: the first finite value).
2. Band-pass: scipy.signal.butter(2, [0.5, 8], 'bandpass', fs=fs,
   output='sos'), run causally with scipy.signal.sosfilt, its state started
   at scipy.signal.sosfilt_zi scaled by the first sample, so a DC level
   does not ring at the start.
3. scipy.signal.find_peaks on the filtered signal with distance = 0.3 s
   (rounded to samples). Prominence gate, set from the whole record: keep
   the peaks whose prominence (scipy.signal.peak_prominences, as find_peaks
   reports it) is at least 0.25 x the median prominence of the peaks found
   with the distance alone. These are the "filtered" indices.
4. The causal filter delays the peaks, so each filtered peak is also
   "refined" to the largest raw sample (after step 1) within the 150 ms
   before it, the filtered peak's own sample included (the first of equal
   values). The refined indices are the baseline's beats wherever they are
   compared with a reference (F1, timing offsets, windowed heart rate); the
   filtered ones only show the filter's delay.
"""
import json
import math
import sys

import numpy as np
import scipy.signal as sg

BAND_HZ = (0.5, 8.0)
ORDER = 2
DISTANCE_S = 0.3
PROMINENCE_SHARE = 0.25
REFINE_S = 0.150


def fill_missing(values):
    x = np.array([math.nan if v is None else float(v) for v in values], dtype=np.float64)
    return fill_missing_array(x)


def fill_missing_array(x):
    """Step 1 on an array of floats (NaN or infinite: missing)."""
    finite = np.isfinite(x)
    if not finite.any():
        return np.zeros_like(x)
    # Index of the latest finite sample at or before each position.
    last = np.where(finite, np.arange(x.size), 0)
    np.maximum.accumulate(last, out=last)
    filled = x[last]
    first = int(np.argmax(finite))
    filled[:first] = x[first]
    return filled


def design(fs):
    """The band-pass of step 2 as second-order sections."""
    return sg.butter(ORDER, list(BAND_HZ), "bandpass", fs=fs, output="sos")


def band_pass(x, fs):
    sos = design(fs)
    zi = sg.sosfilt_zi(sos) * x[0]
    y, _ = sg.sosfilt(sos, x, zi=zi)
    return y


def filtered_peaks(y, fs):
    distance = max(1, int(round(DISTANCE_S * fs)))
    candidates, props = sg.find_peaks(y, distance=distance, prominence=0.0)
    if candidates.size == 0:
        return candidates
    gate = PROMINENCE_SHARE * float(np.median(props["prominences"]))
    peaks, _ = sg.find_peaks(y, distance=distance, prominence=gate)
    return peaks


def refine(x, peaks, fs):
    span = int(round(REFINE_S * fs))
    out = []
    for p in peaks:
        lo = max(0, int(p) - span)
        out.append(lo + int(np.argmax(x[lo : int(p) + 1])))
    return out


def record(r):
    fs = float(r["fs"])
    x = fill_missing(r["samples"])
    if x.size == 0:
        return {"name": r["name"], "filtered": [], "refined": []}
    peaks = filtered_peaks(band_pass(x, fs), fs)
    return {
        "name": r["name"],
        "filtered": [int(p) for p in peaks],
        "refined": refine(x, peaks, fs),
    }


def main():
    req = json.load(sys.stdin)
    json.dump({"records": [record(r) for r in req["records"]]}, sys.stdout)


if __name__ == "__main__":
    main()
