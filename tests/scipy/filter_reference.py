#!/usr/bin/env python3
"""Reference designs, filtered outputs and responses from scipy.signal.

Reads a JSON request on stdin, answers JSON on stdout. Called by the Rust
checks in tests/tests/scipy_filters.rs every time they run, so the reference
values cannot go stale.

Request: {"seconds": s, "seed": n, "cases": [{"id", "kind", "order",
"corners": [..], "fs", "q"}], "freqs": [fractions of Nyquist]}.
Answer: {"signals": {"<fs>": [x...]}, "cases": [{"id", "sos", "y",
"freqs_hz", "h_re", "h_im", "gd_samples"}]}.

The test signal imitates a finger sensor's ADC stream: a DC level, slow
baseline wander, a pulse-shaped wave at 72 bpm with a dicrotic bump, and a
little broadband noise. It is rounded to float32 so the f32 filters and
scipy's float64 filters see the same numbers.
"""
import json
import sys

import numpy as np
import scipy.signal as sg


def test_signal(fs, seconds, seed):
    rng = np.random.default_rng(seed)
    t = np.arange(int(round(fs * seconds))) / fs
    beat = 2 * np.pi * 1.2 * t
    pulse = 0.05 * np.maximum(np.sin(beat), 0) ** 3 + 0.01 * np.maximum(np.sin(2 * beat - 1.0), 0) ** 2
    x = 0.5 + 0.2 * np.sin(2 * np.pi * 0.15 * t) + pulse + 0.002 * rng.standard_normal(t.size)
    return x.astype(np.float32).astype(np.float64)


def design(case):
    kind, fs = case["kind"], case["fs"]
    if kind in ("lowpass", "highpass"):
        # scipy.signal.butter(..., output='sos')
        return sg.butter(case["order"], case["corners"][0], kind, fs=fs, output="sos")
    if kind == "bandpass":
        return sg.butter(case["order"], case["corners"], "bandpass", fs=fs, output="sos")
    if kind == "dcblock":
        # first-order Butterworth high-pass, scipy.signal.butter(1, fc, 'highpass')
        return sg.butter(1, case["corners"][0], "highpass", fs=fs, output="sos")
    if kind == "notch":
        # scipy.signal.iirnotch
        b, a = sg.iirnotch(case["corners"][0], case["q"], fs=fs)
        return np.concatenate([b / a[0], a / a[0]])[None, :]
    raise ValueError(f"unknown kind {kind}")


def group_delay(sos, freqs, fs):
    # scipy.signal.group_delay of each section's numerator minus that of its
    # denominator, summed (samples). Taking B and A apart keeps scipy's
    # formula well conditioned when poles and zeros crowd z = 1; on the
    # joint (b, a) pair it loses ~6 digits at 0.5 Hz and fs 1 kHz.
    total = np.zeros(len(freqs))
    for row in sos:
        _, gd_b = sg.group_delay((row[:3], [1.0]), w=freqs, fs=fs)
        _, gd_a = sg.group_delay((row[3:], [1.0]), w=freqs, fs=fs)
        total += gd_b - gd_a
    return total


def main():
    req = json.load(sys.stdin)
    signals = {}
    out = []
    for case in req["cases"]:
        fs = case["fs"]
        key = repr(float(fs))
        if key not in signals:
            signals[key] = test_signal(fs, req["seconds"], req["seed"])
        x = signals[key]
        sos = design(case)
        y = sg.sosfilt(sos, x)  # scipy.signal.sosfilt, float64
        freqs = [f * fs / 2 for f in req["freqs"]]
        _, h = sg.sosfreqz(sos, worN=freqs, fs=fs)  # scipy.signal.sosfreqz
        out.append({
            "id": case["id"],
            "sos": sos.tolist(),
            "y": y.tolist(),
            "freqs_hz": freqs,
            "h_re": h.real.tolist(),
            "h_im": h.imag.tolist(),
            "gd_samples": group_delay(sos, freqs, fs).tolist(),
        })
    json.dump({"signals": {k: v.tolist() for k, v in signals.items()}, "cases": out}, sys.stdout)


if __name__ == "__main__":
    main()
