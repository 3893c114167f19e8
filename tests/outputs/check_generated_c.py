#!/usr/bin/python3
"""Compares the outputs of the generated C with scipy (Debian python3-scipy).

Usage: check_generated_c.py SECTIONS.json DOUBLE.out FLOAT.out CLAMP.out LO HI FLIP CLAMP_FLOAT.out

* Reference A: scipy.signal.sosfilt (direct form II transposed) of the exported sections times the
  gain, on a unit step: the double code must match to 1e-12 of the largest sample, the float code
  to 1e-4.
* Reference B: scipy.signal.cont2discrete((num, den), T, method="bilinear") of the continuous
  compensator in the JSON, run with scipy.signal.dlsim: the double code must match to 1e-9.
* Clamp (e = +1 for FLIP samples, then -1): every sample within [LO, HI]; identical to reference A
  until A first leaves [LO, HI]; after the flip the output leaves the clamp within 3 samples
  (conditional integration), where clamping reference A (an integrator that winds up) stays at the
  limit for at least 10 samples (so the check can tell the two apart).
* The float clamp code agrees with the double clamp code to 1e-4 of the largest sample.
"""
import json
import sys

import numpy as np
from scipy import signal


def roots(lst):
    out = []
    for r in lst:
        if isinstance(r, dict):
            c = complex(r["re"], r["im"])
            out += [c, c.conjugate()]
        else:
            out.append(float(r))
    return out


def main():
    js, dbl, flt, clp, lo, hi, flip, clpf = sys.argv[1:9]
    lo, hi, flip = float(lo), float(hi), int(flip)
    doc = json.load(open(js))
    sos = np.array([s["b"] + s["a"] for s in doc["sections"]])
    g = doc["gain"]
    T = doc["sample_time_s"]
    ok = True

    y_d = np.loadtxt(dbl)
    n = len(y_d)
    ref_a = g * signal.sosfilt(sos, np.ones(n))
    scale = np.max(np.abs(ref_a))
    err = np.max(np.abs(y_d - ref_a)) / scale
    print(f"double C vs sosfilt: max relative error {err:.3g}")
    ok &= err <= 1e-12

    c = doc["continuous"]
    num = c["gain"] * np.real(np.poly(roots(c["zeros"]))) if c["zeros"] else np.array([c["gain"]])
    den = np.real(np.poly(roots(c["poles"])))
    bn, bd, _ = signal.cont2discrete((num, den), T, method="bilinear")
    _, ref_b = signal.dlsim((np.squeeze(bn), bd, T), np.ones(n))
    ref_b = np.squeeze(ref_b)
    err = np.max(np.abs(y_d - ref_b)) / scale
    print(f"double C vs cont2discrete bilinear + dlsim: max relative error {err:.3g}")
    ok &= err <= 1e-9

    y_f = np.loadtxt(flt)
    err = np.max(np.abs(y_f - ref_a)) / scale
    print(f"float C vs sosfilt: max relative error {err:.3g}")
    ok &= err <= 1e-4

    y_c = np.loadtxt(clp)
    e = np.where(np.arange(len(y_c)) < flip, 1.0, -1.0)
    ref = g * signal.sosfilt(sos, e)
    inside = (ref >= lo) & (ref <= hi)
    first_out = int(np.argmin(inside)) if not inside.all() else len(ref)
    print(f"clamp: reference leaves [{lo}, {hi}] first at sample {first_out}")
    ok &= 0 < first_out < flip
    ok &= bool(np.all((y_c >= lo) & (y_c <= hi)))
    ok &= bool(np.max(np.abs(y_c[:first_out] - ref[:first_out])) <= 1e-12 * scale)
    ok &= bool(abs(y_c[flip - 1] - hi) < 1e-12 or abs(y_c[flip - 1] - lo) < 1e-12)
    left = next((k for k in range(flip, len(y_c)) if lo < y_c[k] < hi), None)
    naive = np.clip(ref, lo, hi)
    naive_left = next((k for k in range(flip, len(naive)) if lo < naive[k] < hi), len(naive))
    print(f"clamp: output leaves the limit {None if left is None else left - flip} samples after the flip; "
          f"a winding-up integrator would take {naive_left - flip}")
    ok &= left is not None and left - flip <= 3
    ok &= naive_left - flip >= 10
    y_cf = np.loadtxt(clpf)
    err = np.max(np.abs(y_cf - y_c)) / scale
    print(f"float clamp C vs double clamp C: max relative error {err:.3g}")
    ok &= err <= 1e-4
    print("generated C agrees with scipy" if ok else "FAIL: generated C disagrees with scipy")
    sys.exit(0 if ok else 1)


if __name__ == "__main__":
    main()
