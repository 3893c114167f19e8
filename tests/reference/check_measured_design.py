#!/usr/bin/python3
"""`polewright design` from measured data alone, re-checked on the true plant by numpy/scipy.

    /usr/bin/python3 tests/reference/check_measured_design.py POLEWRIGHT_BINARY SPEC.json
    /usr/bin/python3 tests/reference/check_measured_design.py POLEWRIGHT_BINARY SWEEP.json

SPEC is examples/measured/belt-axis.json, whose data file scripts/make_measured_example.py
generated from TRUE_PLANT (invented demo data, with seeded noise). The tool sees only the CSV.
For every meeting candidate, on the true plant:
  * the loop figures by scipy.signal.freqresp on 400,001 log-spaced points, crossings refined by
    brentq: the minimum phase margin over every gain crossover, the minimum gain margin over every
    phase crossover and the peak of |S| (bounded minimize_scalar). The tool's figures, taken from
    the data, must agree within 0.3 deg and 0.2 dB and 1 % for |S| (the data's noise is 0.1 deg and
    0.2 % at one sigma, more where the coherence dips: the figures from data carry that noise).
  * the unit step by scipy.signal.step of the closed loop in state space, the dead time replaced
    by its [6/6] Pade approximant (scipy.interpolate.pade of the Taylor series of e^-x; its phase
    error is below 1e-9 deg over the measured band): overshoot and 2 % settling must meet the
    spec's limits, and agree with the tool's (from the fitted model) within 1 percentage point
    and 3 %.
Every requirement of the spec must hold on the true plant. Given a sweep whose base is that plant
(examples/measured/belt-axis-sweep.json), the same checks run on every meeting point at the
point's own limits. Prints figures and "N passed, M failed".
"""
import json
import math
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import interpolate, optimize, signal

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "scripts"))
from make_measured_example import TRUE_PLANT  # noqa: E402
from refcheck import Tally, roots_of  # noqa: E402

TALLY = Tally()
check = TALLY.check


def pade_delay(T, order=6):
    # e^-x = sum (-x)^k / k!; pade() returns numerator and denominator in x as numpy poly1d.
    p, q = interpolate.pade([(-1.0) ** k / math.factorial(k) for k in range(2 * order + 1)], order)
    # In s: x = sT, so coefficients of s^k scale by T^k.
    num = np.array([c * T ** (len(p.coeffs) - 1 - i) for i, c in enumerate(p.coeffs)])
    den = np.array([c * T ** (len(q.coeffs) - 1 - i) for i, c in enumerate(q.coeffs)])
    return np.roots(num), np.roots(den), num[0] / den[0]


def loop_figures(L, w_lo, w_hi):
    w = np.logspace(np.log10(w_lo), np.log10(w_hi), 400001)
    h = L(w)
    mag = np.abs(h) - 1.0
    pms, gms = [], []
    for i in np.nonzero(mag[:-1] * mag[1:] < 0)[0]:
        wc = optimize.brentq(lambda x: abs(L(np.array([x]))[0]) - 1.0, w[i], w[i + 1], xtol=1e-14)
        pms.append((180.0 + np.degrees(np.angle(L(np.array([wc]))[0])) + 180.0) % 360.0 - 180.0)
    im = h.imag
    for i in np.nonzero(im[:-1] * im[1:] < 0)[0]:
        wp = optimize.brentq(lambda x: L(np.array([x]))[0].imag, w[i], w[i + 1], xtol=1e-14)
        v = L(np.array([wp]))[0]
        if v.real < 0:
            gms.append(-20.0 * np.log10(abs(v)))
    s = 1.0 / np.abs(1.0 + h)
    k = int(np.argmax(s))
    res = optimize.minimize_scalar(lambda x: -1.0 / abs(1.0 + L(np.array([np.exp(x)]))[0]),
                                   bounds=(np.log(w[max(k - 1, 0)]), np.log(w[min(k + 1, len(w) - 1)])), method="bounded",
                                   options=dict(xatol=1e-12))
    return min(pms) if pms else math.inf, min(gms) if gms else math.inf, -res.fun


def recheck(label, comp, m, req):
    """Every requirement of `req` on the true plant, and the tool's figures against scipy's."""
    tp = TRUE_PLANT
    gz, gp, gk, T = list(tp["zeros"]), list(tp["poles"]), tp["gain"], tp["delay"]
    dz, dp, dk = pade_delay(T)
    band = req["settling_time_s"].get("band_pct", 2.0) / 100.0
    cz, cp, ck = roots_of(comp["zeros"]), roots_of(comp["poles"]), comp["gain"]

    def L(w):
        _, hc = signal.freqresp(signal.ZerosPolesGain(cz, cp, ck), w)
        _, hg = signal.freqresp(signal.ZerosPolesGain(gz, gp, gk), w)
        return hc * hg * np.exp(-1j * w * T)

    pm, gm, ms = loop_figures(L, 0.05, 2e4)
    print("%s: true PM %.4f deg (tool %.4f), GM %.4f dB (tool %.4f), |S| peak %.5f (tool %.5f)"
          % (label, pm, m["phase_margin_deg"], gm, m["gain_margin_db"], ms, m["peak_sensitivity"]))
    check(abs(pm - m["phase_margin_deg"]) <= 0.3, "%s phase margin from data within 0.3 deg of the true plant's" % label)
    check(abs(gm - m["gain_margin_db"]) <= 0.2, "%s gain margin from data within 0.2 dB of the true plant's" % label)
    check(abs(ms - m["peak_sensitivity"]) <= 0.01 * ms, "%s |S| peak from data within 1 %% of the true plant's" % label)
    check(pm >= req["phase_margin_deg"]["min"], "%s phase margin meets on the true plant" % label)
    check(gm >= req["gain_margin_db"]["min"], "%s gain margin meets on the true plant" % label)
    if "peak_sensitivity" in req:
        check(ms <= req["peak_sensitivity"]["max"], "%s |S| peak meets on the true plant" % label)
    # Closed loop r -> y around the loop with the Pade dead time, in state space.
    lz, lp = cz + gz + list(dz), cp + gp + list(dp)
    A, B, C, D = signal.zpk2ss(lz, lp, ck * gk * dk)
    D = float(np.real(D[0, 0])) if np.size(D) else 0.0
    A, B, C = np.real(A), np.real(B), np.real(C)
    Acl = A - B @ C / (1.0 + D)
    Bcl = B / (1.0 + D)
    Ccl = C / (1.0 + D)
    t = np.linspace(0.0, 0.6, 300001)
    _, y = signal.step(signal.StateSpace(Acl, Bcl, Ccl, np.array([[D / (1.0 + D)]])), T=t)
    check(bool(np.all(np.real(np.linalg.eigvals(Acl)) < 0)), "%s closed loop stable on the true plant" % label)
    # The fit's integrator lies slightly off the origin: the final value is the true plant's, 1.
    yf = 1.0
    over = max(0.0, 100.0 * (y.max() - yf) / yf)
    outside = np.nonzero(np.abs(y - yf) > band * yf)[0]
    settle = t[outside[-1] + 1] if len(outside) else 0.0
    print("%s: true overshoot %.4f %% (tool %.4f), settling %.5f s (tool %.5f)"
          % (label, over, m["overshoot_pct"], settle, m["settling_time_s"]))
    check(over <= req["overshoot_pct"]["max"], "%s overshoot meets on the true plant" % label)
    check(settle <= req["settling_time_s"]["max"], "%s settling meets on the true plant" % label)
    check(abs(over - m["overshoot_pct"]) <= 1.0, "%s overshoot of the fitted model within 1 point of the true plant's" % label)
    check(abs(settle - m["settling_time_s"]) <= 0.03 * settle, "%s settling of the fitted model within 3 %% of the true plant's" % label)


def point_requirements(base_req, parameters):
    """A sweep point's limits: a bound written as a parameter's name takes the point's value."""
    out = {}
    for key, bound in base_req.items():
        out[key] = {k: (parameters[v] if isinstance(v, str) and v in parameters else v) for k, v in bound.items()}
    return out


def main():
    exe, path = sys.argv[1], sys.argv[2]
    spec = json.load(open(path))
    if "base" not in spec:
        doc = json.loads(subprocess.run([exe, "design", path, "--json"], capture_output=True, text=True, check=True).stdout)
        cands = [c for c in doc["candidates"] if c["meets"]]
        check(len(cands) > 0, "the design from data meets (%d meeting candidates)" % len(cands))
        for c in cands:
            recheck("rank %d (%s)" % (c["rank"], "+".join(c["structure"])), c["compensator"], c["metrics"], spec["requirements"])
        sys.exit(TALLY.finish())
    # A sweep whose base is a measured plant: every point that meets is re-checked at its own limits.
    with tempfile.TemporaryDirectory() as tmp:
        out = os.path.join(tmp, "sweep")
        subprocess.run([exe, "sweep", path, "--out", out, "--threads", "2"], capture_output=True, text=True, check=True)
        points = [json.loads(line) for line in open(os.path.join(out, "points.jsonl"))]
    expected = 1
    for name in spec["parameters"]:
        expected *= len(spec["parameters"][name]["values"])
    check(len(points) == expected, "the sweep ran every point (%d of %d)" % (len(points), expected))
    met = [p for p in points if p["status"] == "met"]
    check(len(met) > 0, "the sweep from data has meeting points (%d)" % len(met))
    for p in met:
        label = "point %d %s" % (p["index"], json.dumps(p["parameters"], sort_keys=True))
        recheck(label, p["compensator"], p["metrics"], point_requirements(spec["base"]["requirements"], p["parameters"]))
    sys.exit(TALLY.finish())


if __name__ == "__main__":
    main()
