#!/usr/bin/python3
"""`polewright design` on a spec with "stages": {"pid": true}, every meeting candidate rebuilt from
its PID reading alone and re-checked by numpy/scipy.

    /usr/bin/python3 tests/reference/check_pid_design.py POLEWRIGHT_BINARY SPEC.json

The spec (examples/pid/conveyor-speed.json: 40 / ((s + 2)(s + 10)), demo data) must end met.
For each meeting candidate the compensator is built from the parallel form only,
    C(s) = Kp + Ki / s + Kd s / (Tf s + 1)  =  ((Kp Tf + Kd) s^2 + (Kp + Ki Tf) s + Ki) / (Tf s^2 + s),
(and from the standard form K (1 + 1 / (Ti s) + Td s / ((Td / N) s + 1)) the same way), closed
around the plant with numpy polynomials, and its unit step simulated by scipy.signal.step on
200,001 points over 8 s. Checks: both forms give the same transfer function as the candidate's
zeros, poles and gain (1e-9 relative at three frequencies); the scipy overshoot, 2 % settling and
peak effort agree with the tool's (0.02 percentage points, 2e-4 s, 1e-4 relative) and meet the
spec's limits. Prints the figures and "N passed, M failed".
"""
import json
import subprocess
import sys

import numpy as np
from scipy import signal

from refcheck import Tally, roots_of

TALLY = Tally()
check = TALLY.check


def main():
    exe, spec_path = sys.argv[1], sys.argv[2]
    spec = json.load(open(spec_path))
    out = subprocess.run([exe, "design", spec_path, "--json"], capture_output=True, text=True, check=True).stdout
    doc = json.loads(out)
    cands = [c for c in doc["candidates"] if c["meets"]]
    check(len(cands) > 0, "the design meets (%d meeting candidates)" % len(cands))
    g_num = np.array([float(spec["plant"]["gain"])])
    g_den = np.real(np.poly(spec["plant"]["poles"]))
    req = spec["requirements"]
    for c in cands:
        pf = c["pid_form"]
        check(pf is not None, "rank %d reads as a PID" % c["rank"])
        if pf is None:
            continue
        p = pf["parallel"]
        kp, ki, kd, tf = p["kp"], p["ki"], p["kd"], p["tf_s"]
        c_num = np.array([kp * tf + kd, kp + ki * tf, ki])
        c_den = np.array([tf, 1.0, 0.0])
        st = pf["standard"]
        k, ti, td, n = st["k"], st["ti_s"], st["td_s"], st["n"]
        tfs = td / n  # the standard form's filter time constant
        # K (1 + 1/(Ti s) + Td s/(tfs s + 1)) over the common denominator Ti s (tfs s + 1).
        s_num = k * np.polyadd(np.polyadd(np.polymul([ti, 0.0], [tfs, 1.0]), [tfs, 1.0]), np.polymul([ti, 0.0], [td, 0.0]))
        s_den = np.polymul([ti, 0.0], [tfs, 1.0])
        zpk = c["compensator"]
        zs, ps, gain = roots_of(zpk["zeros"]), roots_of(zpk["poles"]), zpk["gain"]
        for w in (0.3, 3.0, 30.0):
            s = 1j * w
            direct = gain * np.prod([s - z for z in zs]) / np.prod([s - q for q in ps])
            par = np.polyval(c_num, s) / np.polyval(c_den, s)
            std = np.polyval(s_num, s) / np.polyval(s_den, s)
            check(abs(par - direct) <= 1e-9 * abs(direct), "rank %d parallel form = C(j%g)" % (c["rank"], w))
            check(abs(std - direct) <= 1e-9 * abs(direct), "rank %d standard form = C(j%g)" % (c["rank"], w))
        # Closed loop r -> y = CG / (1 + CG) and r -> u = C / (1 + CG).
        ol_num, ol_den = np.polymul(c_num, g_num), np.polymul(c_den, g_den)
        cl_den = np.polyadd(ol_den, ol_num)
        t = np.linspace(0.0, 8.0, 200001)
        _, y = signal.step((ol_num, cl_den), T=t)
        _, u = signal.step((np.polymul(c_num, g_den), cl_den), T=t)
        yf = 1.0  # type-1 loop: no steady-state error (final-value theorem)
        over = max(0.0, 100.0 * (y.max() - yf) / yf)
        outside = np.nonzero(np.abs(y - yf) > 0.02 * yf)[0]
        settle = t[outside[-1] + 1] if len(outside) else 0.0
        effort = np.abs(u).max()
        m = c["metrics"]
        print("rank %d: overshoot %.5f %% (tool %.5f), settling %.5f s (tool %.5f), effort %.6g (tool %.6g)"
              % (c["rank"], over, m["overshoot_pct"], settle, m["settling_time_s"], effort, m["peak_effort"]))
        check(abs(over - m["overshoot_pct"]) <= 0.02, "rank %d overshoot agrees" % c["rank"])
        check(abs(settle - m["settling_time_s"]) <= 2e-4, "rank %d settling agrees" % c["rank"])
        check(abs(effort - m["peak_effort"]) <= 1e-4 * effort, "rank %d effort agrees" % c["rank"])
        check(over <= req["overshoot_pct"]["max"], "rank %d overshoot meets" % c["rank"])
        check(settle <= req["settling_time_s"]["max"], "rank %d settling meets" % c["rank"])
    sys.exit(TALLY.finish())


if __name__ == "__main__":
    main()
