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
  wfdb.rdann. Result: sample, symbol, subtype, chan, num, aux_note lists
  and fs (the file's time-resolution note, else the record header's).
* {"op": "read_joined", "record": path, "out": prefix, "digital": bool}
  wfdb.rdrecord of a multi-segment record, joined into one (m2s): physical
  values to prefix.ch.p, with "digital" also stored values to prefix.ch.d.
  Result: fs, n_sig, sig_len, sig_name, units, samps_per_frame, lengths.
* {"op": "stored_sums", "record": path}
  wfdb.rdrecord(physical=False, ignore_skew=True): the samples as stored.
  Result: the header's checksum list and each signal's sum modulo 65536.
* {"op": "write_multi_header", "dir", "name", "fs", "n_sig", "sig_len",
  "seg_name", "seg_len"}
  wfdb.MultiRecord(...).wrheader: a multi-segment master header. Result: {}.
* {"op": "write_record", "dir", "name", "fs", "sig_len", "signals": [{"file",
  "fmt", "spf", "skew", "byte_offset", "gain", "baseline", "units", "name",
  "adc_res", "digital": [...]}]}
  wfdb.Record(...).wrsamp with the stored values given. Result: {}.
* {"op": "write_ann", "dir", "record", "ext", "sample", "symbol", "subtype",
  "chan", "num", "aux_note", optional "fs"}
  wfdb.wrann (with fs, it writes a time-resolution note). Result: {}.
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
        "fs": None if a.fs is None else float(a.fs),
    }


def read_joined(task):
    phys = wfdb.rdrecord(task["record"])
    digi = wfdb.rdrecord(task["record"], physical=False) if task.get("digital") else None
    lengths = []
    for ch in range(phys.n_sig):
        p = np.ascontiguousarray(phys.p_signal[:, ch], dtype="<f8")
        p.tofile(f"{task['out']}.{ch}.p")
        if digi is not None:
            d = np.ascontiguousarray(digi.d_signal[:, ch], dtype="<i8")
            d.tofile(f"{task['out']}.{ch}.d")
        lengths.append(int(p.size))
    return {
        "fs": float(phys.fs),
        "n_sig": int(phys.n_sig),
        "sig_len": int(phys.sig_len),
        "sig_name": list(phys.sig_name),
        "units": list(phys.units),
        "samps_per_frame": [int(s) for s in phys.samps_per_frame],
        "lengths": lengths,
    }


def stored_sums(task):
    r = wfdb.rdrecord(task["record"], physical=False, ignore_skew=True)
    sums = [int(np.sum(r.d_signal[:, ch].astype(np.int64)) % 65536) for ch in range(r.n_sig)]
    return {"checksum": [int(c) for c in r.checksum], "sums": sums}


def write_multi_header(task):
    m = wfdb.MultiRecord(
        record_name=task["name"],
        n_sig=task["n_sig"],
        fs=task["fs"],
        sig_len=task["sig_len"],
        seg_name=task["seg_name"],
        seg_len=task["seg_len"],
    )
    # wfdb 4.3 checks the segment fields against n_seg but does not set it.
    m.n_seg = len(task["seg_name"])
    m.wrheader(write_dir=task["dir"])
    return {}


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
        fs=task.get("fs"),
        write_dir=task["dir"],
    )
    return {}


OPS = {
    "read_record": read_record,
    "read_ann": read_ann,
    "write_record": write_record,
    "write_ann": write_ann,
    "read_joined": read_joined,
    "stored_sums": stored_sums,
    "write_multi_header": write_multi_header,
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
