#!/usr/bin/python3
"""Disturbance and noise figures of `polewright check` against numpy/scipy.

    /usr/bin/python3 tests/reference/check_disturbance.py POLEWRIGHT_BINARY

For each loop below runs `polewright check SPEC -o OUT.json` and recomputes, per plant variant,
with numpy polynomials and scipy only (independent of the C++ code):

* the load-step response y/d = G S = G / (1 + C G) = Gn Cd / (Gd Cd + Gn Cn) and the output-step
  response y/d_o = S = Gd Cd / (Gd Cd + Gn Cn), by scipy.signal.step on 400001 evenly spaced samples
  over a horizon of 40 / (slowest closed-loop decay rate): peak = max |y| (relative tolerance
  1e-6), recovery = the last time |y| > band * peak, linearly interpolated (relative 1e-4 or
  1e-4 s), IAE = trapezoid of |y| (relative 1e-6), all scaled by the disturbance step size;
  a non-zero final value (no integral action where the disturbance enters) must give recovery
  and IAE as "unbounded";
* the noise figure max_w |C S| = |Cn Gd / (Gd Cd + Gn Cn)| by scipy.signal.freqresp on 400000
  log-spaced points over 1e-4..1e6 rad/s, together with the high-frequency limit (tolerance 1e-6
  relative: the tool refines the peak between its grid points), and |C(j inf)|.

Dead time: the tool simulates the step with the Pade (6, 6) approximant of e^(-sT) (the default
analysis.pade_order); the script builds the same approximant from its closed-form coefficients
(c_k = (2n - k)! n! / ((2n)! k! (n - k)!) (-T)^k), so the agreement checks the loop algebra, not
the approximation. The |C S| of the delayed loop uses the exact e^(-jwT) (polyval, not freqresp),
as the tool does. Prints "N passed, M failed".
"""
import json
import math
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np
from scipy import signal

sys.path.insert(0, str(Path(__file__).resolve().parent))
from check_delay_margin import plants, tf  # noqa: E402  (spec parsing helpers, numpy only)

KEYS = ["load_peak", "load_recovery_s", "load_iae", "output_peak", "output_recovery_s", "output_iae",
        "noise_effort_peak", "controller_hf_gain"]
LOOSE = {k: {"max": 1e9} for k in KEYS}


def pade(T, n=6):
    if T == 0.0:
        return np.array([1.0]), np.array([1.0])
    c = [math.factorial(2 * n - k) * math.factorial(n) / (math.factorial(2 * n) * math.factorial(k) * math.factorial(n - k))
         for k in range(n + 1)]
    num = np.array([c[k] * (-T) ** k for k in range(n, -1, -1)])
    den = np.array([c[k] * T ** k for k in range(n, -1, -1)])
    return num / den[0], den / den[0]


def step_figures(num, den, step, band):
    cl = np.roots(den)
    decay = min(-cl.real)
    t = np.linspace(0.0, 40.0 / decay, 400001)
    _, y = signal.step((num, den), T=t)
    yf = np.polyval(num, 0.0) / np.polyval(den, 0.0)
    a = np.abs(y)
    peak = a.max()
    if abs(yf) > 1e-8 * peak:
        return step * peak, None, None
    out = np.nonzero(a > band * peak)[0]
    k = out[-1]
    lvl = band * peak
    rec = t[k] + (t[k + 1] - t[k]) * (a[k] - lvl) / (a[k] - a[k + 1])
    return step * peak, rec, step * np.trapz(a, t)


def noise_figures(cn, cd, gn, gd, T):
    w = np.logspace(-4, 6, 400000)
    if T == 0.0:
        _, h = signal.freqresp((np.polymul(cn, gd), np.polyadd(np.polymul(gd, cd), np.polymul(gn, cn))), w)
    else:
        s = 1j * w
        C = np.polyval(cn, s) / np.polyval(cd, s)
        L = C * np.polyval(gn, s) / np.polyval(gd, s) * np.exp(-s * T)
        h = C / (1 + L)
    hf = abs(cn[0] / cd[0]) if len(np.trim_zeros(cn, "f")) == len(cd) else 0.0
    limit = hf if len(gn) < len(gd) else (hf / abs(1 + hf * gn[0] / gd[0]) if T == 0.0 else 0.0)
    return max(np.abs(h).max(), limit), hf


CASES = [
    ("pi-type1", {"plant": {"gain": 4, "poles": [-1, -2], "variants": [{"name": "slow", "gain": 2, "poles": [-0.5, -2]}]},
                  "current": {"gain": 3, "zeros": [-1.5], "poles": [0]},
                  "requirements": dict(LOOSE, disturbance_step=2.0)}),
    ("lead-type0", {"plant": {"gain": 5, "poles": [-1, -3]},
                    "current": {"gain": 2, "zeros": [-2], "poles": [-10]},
                    "requirements": dict(LOOSE)}),
    ("lead-plant-integrator", {"plant": {"gain": 4, "poles": [0, -2]},
                               "current": {"gain": 4.68, "zeros": [-2.9], "poles": [-5.4]},
                               "requirements": dict(LOOSE, recovery_band_pct=5)}),
    ("pi-dead-time", {"plant": {"gain": 1, "poles": [-1], "delay_s": 0.2},
                      "current": {"gain": 1.2, "zeros": [-1.1], "poles": [0]},
                      "requirements": dict(LOOSE)}),
]


def close(got, want, rel, absol=0.0):
    return got is not None and abs(got - want) <= rel * abs(want) + absol


def main():
    binary = sys.argv[1]
    passed = failed = 0

    def report(ok, what):
        nonlocal passed, failed
        print(f"{'ok  ' if ok else 'FAIL'} {what}")
        passed += ok
        failed += not ok

    with tempfile.TemporaryDirectory() as tmp:
        for name, spec in CASES:
            sp, out = Path(tmp) / (name + ".json"), Path(tmp) / (name + "-out.json")
            sp.write_text(json.dumps(spec))
            rc = subprocess.run([binary, "check", str(sp), "-o", str(out)], capture_output=True, text=True)
            if rc.returncode not in (0, 1):
                report(False, f"{name}: exit {rc.returncode} {rc.stderr.strip()}")
                continue
            res = json.loads(out.read_text())
            req = spec["requirements"]
            d = req.get("disturbance_step", 1.0)
            band = req.get("recovery_band_pct", 2.0) / 100.0
            cn, cd = tf(spec["current"])
            for i, p in enumerate(plants(spec)):
                gn, gd = tf(p)
                pn, pd = pade(p.get("delay_s", 0.0))
                gnp, gdp = np.polymul(gn, pn), np.polymul(gd, pd)
                char = np.polyadd(np.polymul(gdp, cd), np.polymul(gnp, cn))
                got = res["variants"][i]["metrics"]
                unb = res["variants"][i].get("unbounded", [])
                for prefix, num in (("load", np.polymul(gnp, cd)), ("output", np.polymul(gdp, cd))):
                    peak, rec, iae = step_figures(num, char, d, band)
                    report(close(got[prefix + "_peak"], peak, 1e-6),
                           f"{name} plant {i} {prefix}_peak: tool {got[prefix + '_peak']}, scipy {peak:.10g}")
                    if rec is None:
                        ok = prefix + "_recovery_s" in unb and prefix + "_iae" in unb
                        report(ok, f"{name} plant {i} {prefix}: not rejected, recovery and IAE unbounded")
                    else:
                        report(close(got[prefix + "_recovery_s"], rec, 1e-4, 1e-4),
                               f"{name} plant {i} {prefix}_recovery_s: tool {got[prefix + '_recovery_s']}, scipy {rec:.8g}")
                        report(close(got[prefix + "_iae"], iae, 1e-6),
                               f"{name} plant {i} {prefix}_iae: tool {got[prefix + '_iae']}, scipy {iae:.8g}")
                npk, hf = noise_figures(cn, cd, gn, gd, p.get("delay_s", 0.0))
                report(close(got["noise_effort_peak"], npk, 1e-6),
                       f"{name} plant {i} noise_effort_peak: tool {got['noise_effort_peak']}, scipy {npk:.10g}")
                report(close(got["controller_hf_gain"], hf, 1e-12, 1e-300),
                       f"{name} plant {i} controller_hf_gain: tool {got['controller_hf_gain']}, numpy {hf:.10g}")
    print(f"{passed} passed, {failed} failed")
    return 0 if failed == 0 else 1


if __name__ == "__main__":
    sys.exit(main())
