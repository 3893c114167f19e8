#!/usr/bin/python3
"""Independent reference coefficients for polewright's discretisation (export).

Run with Debian's Python (numpy + scipy from python3-numpy / python3-scipy):

    /usr/bin/python3 tests/reference/make_discrete_fixture.py [-o OUT.json]

The default output is discrete_fixture.json next to this script.  For each
compensator C(s) (zeros/poles/gain) and sample time T it writes, computed with
scipy only (nothing from the C++ code):

* "tustin": scipy.signal.cont2discrete((num, den), T, method="bilinear"),
  cross-checked against scipy.signal.bilinear(num, den, fs=1/T);
* "zoh": scipy.signal.cont2discrete((num, den), T, method="zoh");
* "tustin_impulse", "tustin_step": the first 60 samples of the Tustin
  transfer function's impulse and step responses (scipy.signal.dlsim).

Numerator and denominator are in descending powers of z, normalised so that
den[0] = 1.  The script exits with status 1 if the cross-check fails.
"""

import argparse
import json
import os
import sys

import numpy as np
from scipy import signal

SAMPLES = 60

# name, gain, zeros, poles (complex roots given once, conjugate implied), T
CASES = [
    ("lead", 12.0, [-40.0], [-400.0], 1e-3),
    ("lag", 2.0, [-1.0], [-0.1], 0.01),
    ("notch", 1.0, [complex(-0.6, 59.997)], [complex(-30.0, 52.0)], 2e-3),
    ("pi", 3.0, [-5.0], [0.0], 0.01),
    ("multi_stage", 52.93, [-361.3, -7.739, complex(-0.1778, 59.28)],
     [-600.0, -148.8, -59.28, -59.28], 2e-4),
    ("lead_lag_pi", 8.0, [-2.0, -30.0, -0.5], [0.0, -150.0, -0.05], 5e-3),
    ("low_pass", 100.0, [], [-10.0, -20.0], 0.02),
]


def expand(roots):
    full = []
    for r in roots:
        if isinstance(r, complex):
            full += [r, r.conjugate()]
        else:
            full.append(r)
    return np.real(np.poly(full)) if full else np.array([1.0])


def encode(roots):
    out = []
    for r in roots:
        if isinstance(r, complex):
            out.append({"re": r.real, "im": r.imag})
        else:
            out.append(r)
    return out


def normalise(num, den):
    num = np.atleast_1d(np.squeeze(np.asarray(num, dtype=float)))
    den = np.atleast_1d(np.squeeze(np.asarray(den, dtype=float)))
    return (num / den[0]).tolist(), (den / den[0]).tolist()


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("-o", default=os.path.join(os.path.dirname(os.path.abspath(__file__)), "discrete_fixture.json"))
    args = ap.parse_args()
    cases = []
    for name, k, zeros, poles, T in CASES:
        num = k * expand(zeros)
        den = expand(poles)
        bn, bd, _ = signal.cont2discrete((num, den), T, method="bilinear")
        tn, td = normalise(bn, bd)
        cn, cd = signal.bilinear(num, den, fs=1.0 / T)
        cn, cd = normalise(cn, cd)
        pad = len(tn) - len(cn)
        cn = [0.0] * pad + cn
        if not (np.allclose(tn, cn, rtol=1e-10, atol=1e-12 * max(map(abs, tn))) and np.allclose(td, cd, rtol=1e-10)):
            print(f"{name}: cont2discrete bilinear and signal.bilinear disagree", file=sys.stderr)
            sys.exit(1)
        zn, zd, _ = signal.cont2discrete((num, den), T, method="zoh")
        zn, zd = normalise(zn, zd)
        sysd = (np.array(tn), np.array(td), T)
        impulse = np.zeros(SAMPLES)
        impulse[0] = 1.0
        _, yi = signal.dlsim(sysd, impulse)
        _, ys = signal.dlsim(sysd, np.ones(SAMPLES))
        cases.append({
            "name": name,
            "sample_time_s": T,
            "compensator": {"gain": k, "zeros": encode(zeros), "poles": encode(poles)},
            "tustin": {"num": tn, "den": td},
            "zoh": {"num": zn, "den": zd},
            "tustin_impulse": np.squeeze(yi).tolist(),
            "tustin_step": np.squeeze(ys).tolist(),
        })
    doc = {
        "generator": "tests/reference/make_discrete_fixture.py",
        "scipy": __import__("scipy").__version__,
        "numpy": np.__version__,
        "cases": cases,
    }
    with open(args.o, "w") as f:
        json.dump(doc, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
