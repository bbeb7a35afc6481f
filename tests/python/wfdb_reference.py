#!/usr/bin/env python3
"""Reference reading and writing of WFDB records and annotations with the
Python wfdb package (4.x), for the Rust checks in
tests/tests/wfdb_against_python.rs.

Reads a JSON request on stdin, answers JSON on stdout:
{"tasks": [task, ...]} -> {"wfdb_version": "...", "results": [result, ...]},
one result per task, in order. Tasks:

* {"op": "read_record", "record": path, "out": prefix, "expanded": bool}
  wfdb.rdrecord twice (physical and physical=False). Samples of signal ch go
  to binary files (little-endian) so large records need no JSON:
  prefix.ch.p (float64 physical values) and prefix.ch.d (int64 stored
  values). With "expanded", every sample of multi-sample frames is kept
  (smooth_frames=False); otherwise rdrecord's default frame layout is used.
  Result: the header fields.
* {"op": "read_ann", "record": path, "ext": extension}
  wfdb.rdann. Result: sample, symbol, subtype, chan, num, aux_note lists.
* {"op": "write_record", "dir", "name", "fs", "sig_len", "signals": [{"file",
  "fmt", "spf", "skew", "byte_offset", "gain", "baseline", "units", "name",
  "adc_res", "digital": [...]}]}
  wfdb.Record(...).wrsamp with the stored values given. Result: {}.
* {"op": "write_ann", "dir", "record", "ext", "sample", "symbol", "subtype",
  "chan", "num", "aux_note"}
  wfdb.wrann. Result: {}.
"""
import json
import sys

import numpy as np
import wfdb


def _time(t):
    if t is None:
        return None
    return [t.hour, t.minute, t.second + t.microsecond / 1e6]


def _date(d):
    if d is None:
        return None
    return [d.day, d.month, d.year]


def read_record(task):
    expanded = bool(task.get("expanded", False))
    phys = wfdb.rdrecord(task["record"], smooth_frames=not expanded)
    digi = wfdb.rdrecord(task["record"], physical=False, smooth_frames=not expanded)
    lengths = []
    for ch in range(phys.n_sig):
        if expanded:
            p = np.asarray(phys.e_p_signal[ch], dtype="<f8")
            d = np.asarray(digi.e_d_signal[ch], dtype="<i8")
        else:
            p = np.ascontiguousarray(phys.p_signal[:, ch], dtype="<f8")
            d = np.ascontiguousarray(digi.d_signal[:, ch], dtype="<i8")
        p.tofile(f"{task['out']}.{ch}.p")
        d.tofile(f"{task['out']}.{ch}.d")
        lengths.append(int(p.size))
    h = phys

    def ints(xs):
        return [None if x is None else int(x) for x in xs]

    return {
        "fs": float(h.fs),
        "n_sig": int(h.n_sig),
        "sig_len": int(h.sig_len),
        "counter_freq": None if h.counter_freq is None else float(h.counter_freq),
        "base_counter": None if h.base_counter is None else float(h.base_counter),
        "base_time": _time(h.base_time),
        "base_date": _date(h.base_date),
        "sig_name": list(h.sig_name),
        "units": list(h.units),
        "fmt": [int(f) for f in h.fmt],
        "adc_gain": [float(g) for g in h.adc_gain],
        "baseline": ints(h.baseline),
        "adc_res": ints(h.adc_res),
        "adc_zero": ints(h.adc_zero),
        "init_value": ints(h.init_value),
        "checksum": ints(h.checksum),
        "block_size": ints(h.block_size),
        "samps_per_frame": ints(h.samps_per_frame),
        "skew": ints(h.skew),
        "byte_offset": ints(h.byte_offset),
        "comments": list(h.comments),
        "lengths": lengths,
    }


def read_ann(task):
    a = wfdb.rdann(task["record"], task["ext"])
    return {
        "sample": [int(s) for s in a.sample],
        "symbol": list(a.symbol),
        "subtype": [int(s) for s in a.subtype],
        "chan": [int(c) for c in a.chan],
        "num": [int(n) for n in a.num],
        "aux_note": list(a.aux_note),
    }


def write_record(task):
    sigs = task["signals"]
    expanded = any(s["spf"] != 1 for s in sigs)
    fields = dict(
        record_name=task["name"],
        n_sig=len(sigs),
        fs=task["fs"],
        sig_len=task["sig_len"],
        file_name=[s["file"] for s in sigs],
        fmt=[s["fmt"] for s in sigs],
        samps_per_frame=[s["spf"] for s in sigs],
        skew=[s["skew"] or None for s in sigs],
        byte_offset=[s["byte_offset"] or None for s in sigs],
        adc_gain=[float(s["gain"]) for s in sigs],
        baseline=[s["baseline"] for s in sigs],
        units=[s["units"] for s in sigs],
        sig_name=[s["name"] for s in sigs],
        adc_res=[s["adc_res"] for s in sigs],
        adc_zero=[0] * len(sigs),
        block_size=[0] * len(sigs),
    )
    if expanded:
        fields["e_d_signal"] = [np.array(s["digital"], dtype=np.int64) for s in sigs]
    else:
        fields["d_signal"] = np.array([s["digital"] for s in sigs], dtype=np.int64).T.copy()
    rec = wfdb.Record(**fields)
    rec.set_d_features(do_adc=False, expanded=expanded)
    rec.wrsamp(expanded=expanded, write_dir=task["dir"])
    return {}


def write_ann(task):
    wfdb.wrann(
        task["record"],
        task["ext"],
        np.array(task["sample"], dtype=np.int64),
        symbol=task["symbol"],
        subtype=np.array(task["subtype"], dtype=np.int64),
        chan=np.array(task["chan"], dtype=np.int64),
        num=np.array(task["num"], dtype=np.int64),
        aux_note=task["aux_note"],
        write_dir=task["dir"],
    )
    return {}


OPS = {
    "read_record": read_record,
    "read_ann": read_ann,
    "write_record": write_record,
    "write_ann": write_ann,
}


def main():
    request = json.load(sys.stdin)
    # wfdb prints notes such as "Writing file x.dat with 4 empty leading
    # bytes" on stdout, which must carry only the JSON answer.
    real_stdout = sys.stdout
    sys.stdout = sys.stderr
    try:
        results = [OPS[t["op"]](t) for t in request["tasks"]]
    finally:
        sys.stdout = real_stdout
    json.dump({"wfdb_version": wfdb.__version__, "results": results}, sys.stdout)


if __name__ == "__main__":
    main()
