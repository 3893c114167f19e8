#!/usr/bin/python3
"""Settling times of loops whose last band excursion falls between coarse samples.

Run with Debian's Python (numpy + scipy from python3-numpy / python3-scipy):

    /usr/bin/python3 tests/reference/make_settling_fixture.py [-o OUT.json]

The default output is settling_fixture.json next to this script.  Nothing here is
taken from the C++ code.

Each loop is unity negative feedback with the compensator C = 1 and a plant built
so that the closed loop has a prescribed unit-step response

    y(t) = 1 + 2 Re(c_d e^(p_d t)) + 2 Re(c_l e^(p_l t)),

a well-damped dominant pair p_d and a lightly damped pair p_l (-2.3 +- j42.87,
the mode of the two-mass drive below) whose residue c_l = (A / 2) e^(j phi) is
small.  c_d follows from y(0) = 0 and y'(0) = 0 (relative degree two).  With
T(s) = N(s) / D(s), the plant is G = N / (D - N) (then T = G / (1 + G)).

For each phase phi the script scans the share A and finds, by bisection on the
closed form, the values of A at which a local maximum of |y - 1| touches the 2 %
band: there the settling time jumps by a part of a period.  The fixture keeps A
a little above and a little below each such value, so the last excursion pokes
out of the band by a few hundredths of a per cent of the final value (or stays
just inside), for a few milliseconds: between the samples of any coarse grid.

The reference settling time is the last exit from the band on a uniform grid of
SAMPLES points from scipy.signal.step (linear interpolation of the exit within
the last grid interval), cross-checked against the closed form.  One more loop
is the two-mass drive 400 (s^2 + 2.5 s + 625) / (s^2 (s^2 + 2.4 s + 1600)) with
its compensator, whose step scipy settles at 1.5207 s.
"""

import argparse
import json
import math
import os
import sys

import numpy as np
import scipy
from scipy import signal

SAMPLES = 2000001
HORIZON = 5.0
BAND = 0.02
LIGHT = complex(-2.3, 42.87)
DOMINANT = (6.0, 0.75)  # wn, zeta
PHASES_DEG = list(range(0, 360, 30))
SHARE_SCAN = np.linspace(0.01, 0.16, 151)
OFFSETS = (+2e-3, -2e-3)  # relative change of A around each touching value

SCRIPT_REL = "tests/reference/make_settling_fixture.py"


def residues(share, phase):
    """Dominant pair pole/residue and light pair residue for y(0) = 0, y'(0) = 0."""
    wn, zeta = DOMINANT
    pd = complex(-zeta * wn, wn * math.sqrt(1 - zeta * zeta))
    cl = 0.5 * share * complex(math.cos(phase), math.sin(phase))
    # 2 Re(cd) = -1 - 2 Re(cl);  2 Re(cd pd) = -2 Re(cl pl).  Unknowns x = Re cd, y = Im cd.
    a = np.array([[2.0, 0.0], [2.0 * pd.real, -2.0 * pd.imag]])
    b = np.array([-1.0 - 2.0 * cl.real, -2.0 * (cl * LIGHT).real])
    x, y = np.linalg.solve(a, b)
    return pd, complex(x, y), cl


def closed_form(t, share, phase):
    pd, cd, cl = residues(share, phase)
    return 1.0 + 2.0 * np.real(cd * np.exp(pd * t)) + 2.0 * np.real(cl * np.exp(LIGHT * t))


def settling_from_samples(t, y, final):
    band = BAND * abs(final)
    out = np.nonzero(np.abs(y - final) > band)[0]
    if len(out) == 0:
        return 0.0
    k = out[-1]
    if k + 1 >= len(y):
        return None
    level = final + (band if y[k] > final else -band)
    frac = (level - y[k]) / (y[k + 1] - y[k])
    return float(t[k] + frac * (t[k + 1] - t[k]))


def coarse_settling(share, phase, n=200001):
    t = np.linspace(0.0, HORIZON, n)
    return settling_from_samples(t, closed_form(t, share, phase), 1.0)


def touching_shares(phase):
    """Values of A where the settling time jumps (a peak of |y - 1| touches the band)."""
    ts = [coarse_settling(a, phase, 20001) for a in SHARE_SCAN]
    found = []
    half_period = math.pi / LIGHT.imag
    for i in range(len(SHARE_SCAN) - 1):
        if abs(ts[i + 1] - ts[i]) < 0.3 * half_period:
            continue
        lo, hi = SHARE_SCAN[i], SHARE_SCAN[i + 1]
        t_lo = coarse_settling(lo, phase)
        for _ in range(40):
            mid = 0.5 * (lo + hi)
            if abs(coarse_settling(mid, phase) - t_lo) < 0.3 * half_period:
                lo = mid
            else:
                hi = mid
        found.append(0.5 * (lo + hi))
    return found


def trim(p, tol=1e-12):
    p = np.real_if_close(np.asarray(p), tol=1e6).real
    scale = np.max(np.abs(p))
    i = 0
    while i < len(p) - 1 and abs(p[i]) <= tol * scale:
        i += 1
    return p[i:]


def family_loop(share, phase):
    pd, cd, cl = residues(share, phase)
    poles = [pd, pd.conjugate(), LIGHT, LIGHT.conjugate()]
    res = [cd, cd.conjugate(), cl, cl.conjugate()]
    D = np.poly(poles)
    S = np.zeros(len(D) - 1, dtype=complex)
    for i, p in enumerate(poles):
        others = np.poly([q for j, q in enumerate(poles) if j != i])
        S = np.polyadd(S, res[i] * others)
    N = np.polyadd(D, np.polymul([1.0, 0.0], S))
    N = trim(np.real(N))
    D = np.real(D)
    den = np.polysub(D, np.concatenate([np.zeros(len(D) - len(N)), N]))
    den[-1] = 0.0  # D(0) - N(0) vanishes by construction: an integrator
    return N, trim(den)


def reference(num_cl, den_cl):
    t = np.linspace(0.0, HORIZON, SAMPLES)
    _, y = signal.step((num_cl, den_cl), T=t)
    final = num_cl[-1] / den_cl[-1]
    return t, y, final


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("-o", default=os.path.join(os.path.dirname(os.path.abspath(__file__)), "settling_fixture.json"))
    args = ap.parse_args()
    loops = []

    # The two-mass drive with its compensator.
    g_num = 400.0 * np.array([1.0, 2.5, 625.0])
    g_den = np.array([1.0, 2.4, 1600.0, 0.0, 0.0])
    c_num = np.array([1.0246578220588987, 7.305799380036161, 12.756228732213696])
    c_den = np.array([1.0, 25.041567350128528, 155.91944844706194])
    ln, ld = np.polymul(c_num, g_num), np.polymul(c_den, g_den)
    t, y, final = reference(ln, np.polyadd(ld, ln))
    ts = settling_from_samples(t, y, final)
    loops.append({
        "name": "two-mass drive",
        "plant": {"numerator": g_num.tolist(), "denominator": g_den.tolist()},
        "compensator": {"numerator": c_num.tolist(), "denominator": c_den.tolist()},
        "band_pct": 100 * BAND,
        "expected": {"settling_time_s": ts, "final_value": final},
    })
    print(f"two-mass drive: settling {ts:.6f} s", file=sys.stderr)

    for phase_deg in PHASES_DEG:
        phase = math.radians(phase_deg)
        for a_star in touching_shares(phase)[:2]:
            for off in OFFSETS:
                share = a_star * (1.0 + off)
                num, den = family_loop(share, phase)
                cl_den = np.polyadd(den, num)
                t, y, final = reference(num, cl_den)
                yc = closed_form(t, share, phase)
                err = float(np.max(np.abs(y - yc)))
                if err > 1e-8:
                    print(f"self-check failed: scipy step vs closed form {err:g}", file=sys.stderr)
                    return 1
                ts = settling_from_samples(t, y, final)
                # |y - 1| over the half period before the exit (above the band) and its largest
                # value after it (just inside the band when A is below the touching value).
                e = np.abs(y - final) / BAND
                k = np.searchsorted(t, ts)
                lo = np.searchsorted(t, ts - math.pi / LIGHT.imag)
                before, after = float(np.max(e[lo:k + 1])), float(np.max(e[k + 1:]))
                loops.append({
                    "name": f"light mode phase {phase_deg} share {share:.6f}",
                    "plant": {"numerator": num.tolist(), "denominator": den.tolist()},
                    "compensator": {"numerator": [1.0], "denominator": [1.0]},
                    "band_pct": 100 * BAND,
                    "light_amplitude": share,
                    "phase_deg": phase_deg,
                    "expected": {"settling_time_s": ts, "final_value": final,
                                 "peak_before_exit_over_band": before,
                                 "largest_after_exit_over_band": after},
                })
                print(f"phase {phase_deg:3d} share {share:.5f}: settling {ts:.6f} s, "
                      f"before the exit {before:.5f}, after it {after:.5f} band", file=sys.stderr)

    doc = {
        "generator": SCRIPT_REL,
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "samples": SAMPLES,
        "horizon_s": HORIZON,
        "method": "scipy.signal.step on a uniform grid; last exit from the band, linear within the last interval",
        "loops": loops,
    }
    with open(args.o, "w") as f:
        json.dump(doc, f, indent=1)
        f.write("\n")
    return 0


if __name__ == "__main__":
    sys.exit(main())
