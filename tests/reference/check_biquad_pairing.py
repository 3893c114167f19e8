#!/usr/bin/python3
"""Biquad pairing and section gains of `polewright export` against scipy.

    /usr/bin/python3 tests/reference/check_biquad_pairing.py POLEWRIGHT_BINARY

Cases: the shape of issue 17 (lag + lead + notch, where an earlier rule gave one section a gain of
631 at Nyquist and the next 0.0009) and a lead + lead + notch + PI, both Tustin at 1 kHz.
For each exported section:
* its reported peak gain agrees with scipy.signal.freqz (16384 points, plus the tool's own peak
  frequency): not below freqz's maximum, not above it by more than 1e-3 relative;
* the running peak (product of the sections so far) likewise;
* |H(-1)| of every section without an integrator is within [0.01, 100].
Pairing quality against scipy.signal.zpk2sos(pairing="nearest") on the same discrete roots, each of
its sections scaled to unit DC gain like ours: our largest section peak and largest running peak
(before the last section) are at most 1.05 times scipy's (a comparison of quality, not identity).
Prints "N passed, M failed".
"""
import json
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np
from scipy import signal


def roots(lst):
    out = []
    for r in lst:
        if isinstance(r, dict):
            out += [complex(r["re"], r["im"]), complex(r["re"], -r["im"])]
        else:
            out.append(complex(r))
    return np.array(out)


def peak(b, a, extra=()):
    w, h = signal.freqz(b, a, worN=16384)
    m = np.max(np.abs(h))
    for x in extra:
        m = max(m, abs(signal.freqz(b, a, worN=[x])[1][0]))
    return m


def pair(wn, zz, zp):
    th = np.arccos(zz)
    return [{"re": -zz * wn, "im": wn * np.sin(th)}], [{"re": -zp * wn, "im": wn * np.sqrt(1 - zp * zp)}]


def main():
    binary = sys.argv[1]
    nz, npl = pair(300.0, 0.05, 0.5)
    case1 = {"gain": 20.0, "zeros": [-1.0, -10.0] + nz, "poles": [-0.1, -100.0] + npl}
    nz2, np2 = pair(60.0, 0.003, 0.5)
    case2 = {"gain": 50.0, "zeros": [-7.7, -360.0, -2.0] + nz2, "poles": [-600.0, -150.0, 0.0] + np2}
    passed = failed = 0

    def check(ok, what):
        nonlocal passed, failed
        print(("ok   " if ok else "FAIL ") + what)
        passed += bool(ok)
        failed += not ok

    with tempfile.TemporaryDirectory() as tmp:
        for name, comp in (("lag+lead+notch", case1), ("lead+lead+notch+PI", case2)):
            src, out = Path(tmp) / (name + ".json"), Path(tmp) / (name + "-out.json")
            src.write_text(json.dumps(comp))
            rc = subprocess.run([binary, "export", str(src), "--sample-time", "0.001", "--format", "json", "-o", str(out)],
                                capture_output=True).returncode
            check(rc == 0, f"{name}: export exit {rc}")
            if rc != 0:
                continue
            r = json.loads(out.read_text())
            secs, det, T = r["sections"], r["section_details"], r["sample_time_s"]
            run_b, run_a = np.array([1.0]), np.array([1.0])
            for i, (s, d) in enumerate(zip(secs, det)):
                b, a = np.array(s["b"]), np.array(s["a"])
                run_b, run_a = np.convolve(run_b, b), np.convolve(run_a, a)
                if d["integrator"]:
                    check(d["peak_gain"] is None and d["running_peak_gain"] is None, f"{name} section {i + 1}: integrator unbounded")
                    continue
                at = [d["peak_at_rad_s"] * T]
                p = peak(b, a, at)
                check(p * (1 - 1e-9) <= d["peak_gain"] <= p * (1 + 1e-3), f"{name} section {i + 1}: peak {d['peak_gain']:.6g}, freqz {p:.6g}")
                rp = peak(run_b, run_a, at)
                check(rp * (1 - 1e-6) <= d["running_peak_gain"] <= rp * (1 + 1e-3),
                      f"{name} section {i + 1}: running peak {d['running_peak_gain']:.6g}, freqz {rp:.6g}")
                nyq = abs(np.polyval(b[::-1], -1.0) / np.polyval(a[::-1], -1.0))
                check(0.01 <= nyq <= 100.0, f"{name} section {i + 1}: |H(-1)| = {nyq:.4g}")
            # scipy's pairing of the same discrete roots, sections at unit DC gain (no integrator there).
            z, p = roots(r["discrete"]["zeros"]), roots(r["discrete"]["poles"])
            # Integrators: ours are sections of their own (each with the real zero nearest z = 1, the
            # PI zero); compare the rest.
            keep = np.abs(p - 1.0) > 1e-12
            pz = p[keep]
            zz = list(z)
            for _ in range(int(np.sum(~keep))):
                reals = [i for i, q in enumerate(zz) if q.imag == 0.0]
                if reals:
                    zz.pop(min(reals, key=lambda i: abs(zz[i] - 1.0)))
            zz = np.array(zz)
            sos = signal.zpk2sos(zz, pz, 1.0, pairing="nearest")
            sp, rp_s, run = [], [], np.ones(16384, complex)
            for row in sos:
                b, a = row[:3], row[3:]
                dc = np.sum(b) / np.sum(a)
                b = b / dc
                h = signal.freqz(b, a, worN=16384)[1]
                sp.append(np.max(np.abs(h)))
                run = run * h
                rp_s.append(np.max(np.abs(run)))
            ours = [d["peak_gain"] for d in det if not d["integrator"]]
            ours_run = [d["running_peak_gain"] for d in det if not d["integrator"]][:-1] or [1.0]
            if len(zz) <= len(pz):
                check(max(ours) <= 1.05 * max(sp), f"{name}: largest section peak {max(ours):.4g} vs scipy nearest {max(sp):.4g}")
                check(max(ours_run) <= 1.05 * max(rp_s[:-1] or [1.0]),
                      f"{name}: largest running peak {max(ours_run):.4g} vs scipy nearest {max(rp_s[:-1] or [1.0]):.4g}")
    print(f"{passed} passed, {failed} failed")
    return 0 if failed == 0 else 1


if __name__ == "__main__":
    sys.exit(main())
