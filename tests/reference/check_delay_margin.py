#!/usr/bin/python3
"""Delay margin of `polewright check` against numpy/scipy.

    /usr/bin/python3 tests/reference/check_delay_margin.py POLEWRIGHT_BINARY

For each loop (the demo specs with their compensator in service, and a servo with a lead and a
dead time) runs `polewright check SPEC -o OUT.json` and recomputes every plant's delay margin with
numpy/scipy only: L(jw) = C(jw) G(jw) e^(-jwT) on 400000 log-spaced points over 1e-4..1e6 rad/s,
every |L| = 1 crossing refined by scipy.optimize.brentq, the phase margin at each wrapped into
[0, 360) deg, and DM = min over crossings of PM (rad) / w. Tolerance: 1e-6 relative (the tool
refines crossovers to about 1e-12; brentq to xtol 1e-14). Prints "N passed, M failed".
"""
import json
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np
from scipy.optimize import brentq

ROOT = Path(__file__).resolve().parents[2]


def roots(lst):
    out = []
    for r in lst:
        if isinstance(r, dict) and "wn" in r:
            wn, z = r["wn"], r["zeta"]
            re, im = -z * wn, wn * np.sqrt(max(0.0, 1 - z * z))
            out += [complex(re, im), complex(re, -im)]
        elif isinstance(r, dict):
            out += [complex(r["re"], r["im"]), complex(r["re"], -r["im"])]
        else:
            out.append(complex(r))
    return out


def tf(obj):
    """(numerator, denominator) coefficient arrays of a spec plant or compensator object."""
    if "numerator" in obj:
        return np.array(obj["numerator"], float), np.array(obj["denominator"], float)
    k = obj.get("gain", 1.0)
    num = k * np.atleast_1d(np.real(np.poly(roots(obj.get("zeros", [])))))
    return num, np.atleast_1d(np.real(np.poly(roots(obj.get("poles", [])))))


def plants(spec):
    p = spec["plant"]
    core = {k: v for k, v in p.items() if k != "variants"}
    out = [core]
    for v in p.get("variants", []):
        m = dict(core)
        for form in (("numerator", "denominator"), ("zeros", "poles", "gain")):
            if any(k in v for k in form):
                for k in ("numerator", "denominator", "zeros", "poles", "gain"):
                    m.pop(k, None)
        m.update({k: x for k, x in v.items() if k != "name"})
        out.append(m)
    return out


def delay_margin(cn, cd, gn, gd, T):
    L = lambda w: np.polyval(cn, 1j * w) * np.polyval(gn, 1j * w) / (np.polyval(cd, 1j * w) * np.polyval(gd, 1j * w)) * np.exp(-1j * w * T)
    w = np.logspace(-4, 6, 400000)
    f = np.log(np.abs(L(w)))
    best = np.inf
    for i in np.nonzero(np.sign(f[:-1]) != np.sign(f[1:]))[0]:
        wc = brentq(lambda x: np.log(abs(L(x))), w[i], w[i + 1], xtol=1e-14, rtol=1e-15)
        pm = (180.0 + np.degrees(np.angle(L(wc)))) % 360.0
        best = min(best, np.radians(pm) / wc)
    return best


def main():
    binary = sys.argv[1]
    servo = {"name": "servo with lead and dead time",
             "plant": {"gain": 4, "poles": [0, -2], "delay_s": 0.05},
             "requirements": {"delay_margin_s": {"min": 0.05}},
             "current": {"gain": 4.68, "zeros": [-2.9], "poles": [-5.4]}}
    cases = [("servo", servo)]
    for name in ("wafer-stage", "magnetic-bearing", "greenhouse-heater"):
        cases.append((name, json.loads((ROOT / "specs" / (name + ".json")).read_text())))
    passed = failed = 0
    with tempfile.TemporaryDirectory() as tmp:
        for name, spec in cases:
            sp, out = Path(tmp) / (name + ".json"), Path(tmp) / (name + "-out.json")
            sp.write_text(json.dumps(spec))
            rc = subprocess.run([binary, "check", str(sp), "-o", str(out)], capture_output=True).returncode
            if rc not in (0, 1):
                print(f"FAIL {name}: exit {rc}")
                failed += 1
                continue
            res = json.loads(out.read_text())
            cn, cd = tf(spec["current"])
            for i, p in enumerate(plants(spec)):
                gn, gd = tf(p)
                want = delay_margin(cn, cd, gn, gd, p.get("delay_s", 0.0))
                got = res["variants"][i]["metrics"]["delay_margin_s"]
                unb = "delay_margin_s" in res["variants"][i].get("unbounded", [])
                ok = (unb and not np.isfinite(want)) or (got is not None and abs(got - want) <= 1e-6 * abs(want))
                print(f"{'ok  ' if ok else 'FAIL'} {name} plant {i}: tool {got}, scipy {want:.12g}")
                passed += ok
                failed += not ok
    print(f"{passed} passed, {failed} failed")
    return 0 if failed == 0 else 1


if __name__ == "__main__":
    sys.exit(main())
