#!/usr/bin/env python3
"""Reference time-domain HRV statistics computed with numpy.

Reads a JSON request on stdin, answers JSON on stdout. Called by the Rust
check in tests/tests/numpy_hrv.rs every time it runs.

Request: {"seed": n, "cases": [{"n": count, "mean_ms": m, "sd_ms": s,
"bad_fraction": f}]}.
Answer: {"cases": [{"intervals_ms": [...], "good": [...], "nn_count",
"diff_count", "nn50", "mean_nn_ms", "sdnn_ms", "rmssd_ms", "pnn50_percent"}]}
with null for a statistic that needs more data.

Definitions (Task Force of the ESC and NASPE 1996): SDNN is numpy.std with
ddof=1 over the good intervals; a successive difference is formed only
between two adjacent intervals that are both good; pNN50 divides NN50 by the
number of those differences. Intervals are rounded to float32 so the f32
Rust code and numpy's float64 arithmetic see the same numbers.
"""
import json
import sys

import numpy as np


def case(rng, n, mean_ms, sd_ms, bad_fraction):
    x = rng.normal(mean_ms, sd_ms, n).astype(np.float32).astype(np.float64)
    good = rng.random(n) >= bad_fraction
    nn = x[good]
    # Differences only where both neighbours are good.
    both = good[1:] & good[:-1]
    d = np.diff(x)[both]
    nn50 = int(np.sum(np.abs(d) > 50.0))
    return {
        "intervals_ms": x.tolist(),
        "good": good.tolist(),
        "nn_count": int(nn.size),
        "diff_count": int(d.size),
        "nn50": nn50,
        "mean_nn_ms": float(np.mean(nn)) if nn.size >= 1 else None,
        "sdnn_ms": float(np.std(nn, ddof=1)) if nn.size >= 2 else None,
        "rmssd_ms": float(np.sqrt(np.mean(d**2))) if d.size >= 1 else None,
        "pnn50_percent": 100.0 * nn50 / d.size if d.size >= 1 else None,
    }


def main():
    req = json.load(sys.stdin)
    rng = np.random.default_rng(req["seed"])
    cases = [case(rng, c["n"], c["mean_ms"], c["sd_ms"], c["bad_fraction"]) for c in req["cases"]]
    json.dump({"cases": cases}, sys.stdout)


if __name__ == "__main__":
    main()
