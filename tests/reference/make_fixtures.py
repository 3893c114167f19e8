#!/usr/bin/python3
"""Independent reference values for polewright's loop metrics.

Run with Debian's Python (numpy + scipy from python3-numpy / python3-scipy):

    /usr/bin/python3 tests/reference/make_fixtures.py [-o OUT.json]

The default output is loops_fixture.json next to this script.  Everything here
is computed from scratch with numpy/scipy, following the metric definitions of
docs/manual.md ("The spec file", "What the figures mean"); nothing is taken from the
C++ code.

Loop: unity negative feedback, L(s) = C(s) G(s) exp(-sT); y is the plant
output, u the compensator output, r a unit step.

* Closed-loop poles, step response and effort use the Pade (n, n) approximant
  of exp(-sT) (exact closed-form coefficients of the diagonal Pade approximant
  of exp(-x), then x = sT; scipy.interpolate.pade on the Taylor series gives
  the same approximant but loses up to ~1e-8 relative in its coefficients at
  n = 8, so it is only used as a cross-check).  Poles: numpy.roots of the characteristic polynomial, each root
  polished by Newton steps on that polynomial (complex128).
* Step response: scipy.signal.lsim of the closed loop (outputs y and u) on a
  uniform grid of SAMPLES points; the horizon is chosen from the pole
  residues so that the remaining transient is provably far inside the band.
  The simulation is cross-checked against the closed-form residue expansion
  y(t) = y(inf) + sum c_i exp(p_i t).
* Frequency-domain figures use the exact exp(-jwT) on a dense log grid
  (plus extra points around lightly damped roots), crossings refined with
  scipy.optimize.brentq and the sensitivity peak with
  scipy.optimize.minimize_scalar.
* Steady-state errors come from the error constants (never a simulation).

The script exits with status 1 if any loop is not closed-loop stable or a
self-check fails.
"""

import argparse
import json
import math
import os
import sys
import time
import warnings
from fractions import Fraction

import numpy as np
import scipy
from scipy import interpolate, linalg, optimize, signal

SAMPLES = 200001          # uniform step-response samples
FREQ_POINTS = 200000      # log-spaced frequency grid points
FREQ_DECADES_MARGIN = 3   # grid extends this many decades beyond the roots
MAX_DELAY_PHASE_STEP = 0.05  # rad per frequency-grid step from exp(-jwT)
EXTRA_POINTS = 20001      # extra linear points around each lightly damped root
HORIZON_FRACTION = 0.01   # transient bound at the horizon: this times band*|y(inf)|

SCRIPT_REL = "tests/reference/make_fixtures.py"


# --------------------------------------------------------------------------
# The loops.  Plant and compensator objects are in the spec format of
# docs/manual.md; they are parsed below exactly as written into the fixture.
# --------------------------------------------------------------------------

LOOPS = [
    {
        "name": "standard_second_order",
        "source": "Standard analytic second-order loop: L = 25/(s(s+5)) gives T = wn^2/(s^2+2 zeta wn s+wn^2) "
                  "with wn = 5, zeta = 0.5. Analytic: poles -2.5 +- j4.3301, OS = exp(-pi zeta/sqrt(1-zeta^2)) "
                  "= 16.303 %, Tp = pi/wd = 0.72552 s, PM = atan(2 zeta/sqrt(sqrt(1+4 zeta^4)-2 zeta^2)) "
                  "= 51.827 deg, wb = wn sqrt(1-2 zeta^2+sqrt(4 zeta^4-4 zeta^2+2)) = 6.3601 rad/s, "
                  "no phase crossover (GM unbounded).",
        "plant": {"numerator": [25.0], "denominator": [1.0, 5.0, 0.0]},
        "compensator": {"gain": 1.0},
    },
    {
        "name": "third_order_type1_K2",
        "source": "Standard analytic case: L = K/(s(s+1)(s+2)), K = 2. Routh on s^3+3s^2+2s+K gives "
                  "stability for 0 < K < 6 with the phase crossover at w = sqrt(2), so the gain increase "
                  "margin is 20 log10(6/2) = 9.5424 dB.",
        "plant": {"gain": 1.0, "zeros": [], "poles": [0.0, -1.0, -2.0]},
        "compensator": {"gain": 2.0},
    },
    {
        "name": "lead_on_type1",
        "source": "Root-locus lead stage 4.68(s+2.9)/(s+5.4) on 4/(s(s+2)), placed for dominant poles near "
                  "-2 +- j2 sqrt(3) (zeta = 0.5, wn = 4) by the angle/magnitude conditions; the same numbers "
                  "appear as a worked lead example in standard texts (e.g. Ogata's root-locus lead design). "
                  "Characteristic polynomial s^3+7.4 s^2+29.52 s+54.288.",
        "plant": {"numerator": [4.0], "denominator": [1.0, 2.0, 0.0]},
        "compensator": {"gain": 4.68, "zeros": [-2.9], "poles": [-5.4]},
    },
    {
        "name": "first_order_dead_time_PI",
        "source": "Own scenario: first-order process 2/(10s+1) with 1.5 s dead time under a PI controller "
                  "0.4(s+0.12)/s (Kp = 0.4, Ti = 8.33 s). Pade (6,6) for poles/step; exact delay for margins. "
                  "Settling band 5 %. Stable with wide margins (PM about 77 deg, GM about 22 dB); the "
                  "overshoot is small (about 0.6 %) and its peak flat, so peak_time_s is poorly "
                  "conditioned (see details.peak_flatness_s). The Pade step shows a small initial "
                  "undershoot during the dead time (an artefact of the approximant).",
        "plant": {"numerator": [2.0], "denominator": [10.0, 1.0], "delay_s": 1.5},
        "compensator": {"gain": 0.4, "zeros": [-0.12], "poles": [0.0]},
        "pade_order": 6,
        "band_pct": 5.0,
    },
    {
        "name": "magnetic_bearing_unstable",
        "source": "Own scenario: magnetic-bearing-like open-loop unstable plant 120000/((s^2-400)(s+300)) "
                  "(|G(0)| = 1, unstable pole at +20 rad/s, 300 rad/s actuator pole) with a PI-lead "
                  "compensator 22(s+5)(s+15)/(s(s+150)). One open-loop RHP pole: the loop needs a minimum "
                  "gain, so there is a gain-reduction limit (phase crossover below the gain crossover) and "
                  "a gain-increase limit (phase crossover above it).",
        "plant": {"gain": 120000.0, "zeros": [], "poles": [20.0, -20.0, -300.0]},
        "compensator": {"gain": 22.0, "zeros": [-5.0, -15.0], "poles": [0.0, -150.0]},
    },
    {
        "name": "lag_dipole",
        "source": "Own scenario: lag stage (s+0.2)/(s+0.02) (ratio 10, Kv 10x) times a gain 4 on "
                  "10/(s(s+4)) (Kv = 100). Leaves a slow closed-loop pole just left of -0.2, almost on the "
                  "lag zero, whose share of the step response (|c_i|/sum|c_j|, about 1.7 %) is below the "
                  "default 2 % residue_share_pct: a dipole that does not count in region tests.",
        "plant": {"numerator": [10.0], "denominator": [1.0, 4.0, 0.0]},
        "compensator": {"gain": 4.0, "zeros": [-0.2], "poles": [-0.02]},
    },
    {
        "name": "notch_structural_mode",
        "source": "Own scenario: rigid body with an 8 rad/s pole and a lightly damped structural mode "
                  "(wn = 60, zeta = 0.02): 180000/(s(s+8)(s^2+2.4 s+3600)). Compensator: lead "
                  "6(s+4)/(s+16) times a notch (s^2+6 s+3600)/(s^2+84 s+3600) centred on the mode "
                  "(depth 0.05/0.7).",
        "plant": {"gain": 180000.0, "zeros": [],
                  "poles": [0.0, -8.0, {"wn": 60.0, "zeta": 0.02}]},
        "compensator": {"gain": 6.0, "zeros": [-4.0, {"wn": 60.0, "zeta": 0.05}],
                        "poles": [-16.0, {"wn": 60.0, "zeta": 0.7}]},
    },
    {
        "name": "rhp_zero_PI",
        "source": "Own scenario: non-minimum-phase plant (-s+2)/((s+1)(s+3)) (RHP zero at +2) under a PI "
                  "controller 1.1(s+1.3)/s. The RHP zero gives an initial undershoot; crossover stays "
                  "well below z/2 = 1 rad/s.",
        "plant": {"numerator": [-1.0, 2.0], "denominator": [1.0, 4.0, 3.0]},
        "compensator": {"gain": 1.1, "zeros": [-1.3], "poles": [0.0]},
    },
    {
        "name": "double_integrator_lead",
        "source": "Own scenario: double integrator 1/s^2 with a lead stage 30(s+1)/(s+10). Type 2 loop: "
                  "parabolic-input error 1/Ka with Ka = 30*1/10 = 3, i.e. 1/3. Characteristic polynomial "
                  "s^3+10 s^2+30 s+30.",
        "plant": {"numerator": [1.0], "denominator": [1.0, 0.0, 0.0]},
        "compensator": {"gain": 30.0, "zeros": [-1.0], "poles": [-10.0]},
        "ss_input": "parabola",
    },
    {
        "name": "type0_step_error",
        "source": "Standard analytic case: type-0 loop 2*5/((s+1)(s+2)(s+5)); Kp = L(0) = 1, so the unit-step "
                  "error is 1/(1+Kp) = 0.5 and T(0) = 0.5. Characteristic polynomial s^3+8 s^2+17 s+20. "
                  "|L(jw)| < 1 for every w > 0 (|L| = 1 only at w = 0), so there is no gain crossover: "
                  "phase margin and crossover are null. Routh on s^3+8 s^2+17 s+10+5k: stable for k < 25.2 "
                  "(phase crossover at w = sqrt(17)), so GM = 20 log10(25.2/2) = 22.007 dB.",
        "plant": {"gain": 5.0, "poles": [-1.0, -2.0, -5.0]},
        "compensator": {"gain": 2.0, "zeros": [], "poles": []},
    },
    {
        "name": "type0_step_error_gain6",
        "source": "Standard analytic case: the same type-0 plant 5/((s+1)(s+2)(s+5)) with gain 6, so that a "
                  "gain crossover exists. Kp = 3: unit-step error 1/(1+3) = 0.25, T(0) = 0.75; Routh limit "
                  "k < 25.2, GM = 20 log10(25.2/6) = 12.465 dB at w = sqrt(17).",
        "plant": {"gain": 5.0, "poles": [-1.0, -2.0, -5.0]},
        "compensator": {"gain": 6.0},
    },
    {
        "name": "type1_ramp_error_lag",
        "source": "Own scenario: type-1 plant 36/(s(s+3)(s+12)) with a lag stage (s+0.5)/(s+0.1). "
                  "Kv = 36*0.5/(3*12*0.1) = 5, so the unit-ramp error is 1/Kv = 0.2.",
        "plant": {"gain": 36.0, "zeros": [], "poles": [0.0, -3.0, -12.0]},
        "compensator": {"gain": 1.0, "zeros": [-0.5], "poles": [-0.1]},
        "ss_input": "ramp",
    },
    {
        "name": "flexible_three_crossovers",
        "source": "Own scenario: double integrator with a collocated flexible mode (anti-resonance zeros "
                  "-0.08 +- j8, resonance wp = 12 rad/s with zeta = 0.01, mode DC gain about 1) under a lead "
                  "stage 3(s+0.5)/(s+3). The resonance peak lifts |L| above 1 again, so |L| crosses 1 "
                  "three times (about 1.04, 11.91 and 12.09 rad/s): the smallest phase margin (about "
                  "45 deg) is at the lowest crossover, the highest crossover (on the resonance) has about "
                  "62 deg, and the middle one about 138 deg.",
        "plant": {"gain": 2.25, "zeros": [{"re": -0.08, "im": 8.0}],
                  "poles": [0.0, 0.0, {"wn": 12.0, "zeta": 0.01}]},
        "compensator": {"gain": 3.0, "zeros": [-0.5], "poles": [-3.0]},
    },
    {
        "name": "biproper_lead_effort",
        "source": "Own scenario: biproper lead 15(s+1.5)/(s+15) (high-frequency gain 15) on 2/(s(s+1)). "
                  "The plant is strictly proper, so u(0+) = C(inf) = 15 exactly and that is the peak "
                  "effort. Settling band 1 %.",
        "plant": {"numerator": [2.0], "denominator": [1.0, 1.0, 0.0]},
        "compensator": {"gain": 15.0, "zeros": [-1.5], "poles": [-15.0]},
        "band_pct": 1.0,
    },
    {
        "name": "long_dead_time_PI",
        "source": "Own scenario: delay-dominated process exp(-5s)/((3s+1)(s+1)) (dead time larger than both "
                  "time constants) under a PI controller 0.32(s+0.28)/s. Pade (8,8) for poles/step. "
                  "Settling band 5 %.",
        "plant": {"numerator": [1.0], "denominator": [3.0, 4.0, 1.0], "delay_s": 5.0},
        "compensator": {"gain": 0.32, "zeros": [-0.28], "poles": [0.0]},
        "pade_order": 8,
        "band_pct": 5.0,
    },
]


# --------------------------------------------------------------------------
# Spec objects -> polynomials
# --------------------------------------------------------------------------

def _root_factor(entry):
    """Polynomial (descending) of one zeros/poles entry of the spec."""
    if isinstance(entry, dict):
        if "wn" in entry:
            wn, zeta = float(entry["wn"]), float(entry["zeta"])
            return np.array([1.0, 2.0 * zeta * wn, wn * wn])
        re, im = float(entry["re"]), float(entry["im"])
        return np.array([1.0, -2.0 * re, re * re + im * im])
    return np.array([1.0, -float(entry)])


def tf_from_spec(obj):
    """(num, den) descending-power coefficient arrays of a spec plant/compensator object."""
    if "numerator" in obj or "denominator" in obj:
        num = np.atleast_1d(np.array(obj["numerator"], dtype=float))
        den = np.atleast_1d(np.array(obj["denominator"], dtype=float))
        num = np.trim_zeros(num, "f")
        if den[0] == 0.0:
            raise ValueError("leading denominator coefficient is zero")
        if num.size == 0:
            num = np.array([0.0])
    else:
        num = np.array([float(obj.get("gain", 1.0))])
        den = np.array([1.0])
        for z in obj.get("zeros", []):
            num = np.polymul(num, _root_factor(z))
        for p in obj.get("poles", []):
            den = np.polymul(den, _root_factor(p))
    if num.size > den.size:
        raise ValueError("improper transfer function")
    return num, den


def pade_delay_scipy(T, n):
    """Pade (n, n) approximant of exp(-sT) from scipy.interpolate.pade (cross-check only).

    scipy solves an ill-conditioned linear system for the coefficients (rcond ~ 1e-17 at
    n = 8): relative coefficient errors are ~3e-12 at n = 6 and ~6e-9 at n = 8, too large
    for the pole accuracy targeted here, so the exact coefficients below are used instead.
    """
    if T == 0.0:
        return np.array([1.0]), np.array([1.0])
    an = [(-1.0) ** k / math.factorial(k) for k in range(2 * n + 1)]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")          # LinAlgWarning: ill-conditioned
        p, q = interpolate.pade(an, n)
    pc, qc = np.asarray(p.coeffs, float), np.asarray(q.coeffs, float)   # in x, descending
    assert pc.size == n + 1 and qc.size == n + 1
    scale = np.array([T ** (n - i) for i in range(n + 1)])
    return pc * scale, qc * scale


def pade_delay(T, n):
    """Pade (n, n) approximant of exp(-sT) as (P, Q) in descending powers of s.

    Exact rational coefficients c_k = (2n-k)! n! / ((2n)! k! (n-k)!) of the diagonal Pade
    approximant of exp(-x) (Q(x) = sum c_k x^k, P(x) = Q(-x)), rounded once to double,
    then x = sT.  Identical to what scipy.interpolate.pade computes, without its rounding.
    """
    if T == 0.0:
        return np.array([1.0]), np.array([1.0])
    c = [float(Fraction(math.factorial(2 * n - k) * math.factorial(n),
                        math.factorial(2 * n) * math.factorial(k) * math.factorial(n - k)))
         for k in range(n + 1)]
    q = np.array([c[k] * T ** k for k in range(n, -1, -1)])
    p = np.array([c[k] * (-T) ** k for k in range(n, -1, -1)])
    return p, q


# --------------------------------------------------------------------------
# Roots
# --------------------------------------------------------------------------

def _newton_polish(poly, dpoly, z, steps=8):
    best, fbest = z, abs(np.polyval(poly, z))
    for _ in range(steps):
        d = np.polyval(dpoly, z)
        if d == 0:
            break
        z = z - np.polyval(poly, z) / d
        fz = abs(np.polyval(poly, z))
        if fz < fbest:
            best, fbest = z, fz
        elif fz > 4.0 * fbest:
            break
    return best


def polished_roots(poly):
    """All roots of a real polynomial, Newton-polished, conjugate pairs exact mirror images."""
    poly = np.asarray(poly, float)
    poly = poly / poly[0]
    dpoly = np.polyder(poly)
    raw = np.roots(poly)
    out = []
    for r in raw:
        tol = 1e-9 * max(1.0, abs(r))
        if abs(r.imag) <= tol:
            z = _newton_polish(poly.astype(complex), dpoly.astype(complex), complex(r.real, 0.0))
            out.append(complex(z.real, 0.0))
        elif r.imag > 0:
            z = _newton_polish(poly.astype(complex), dpoly.astype(complex), complex(r))
            out.append(complex(z.real, abs(z.imag)))
            out.append(complex(z.real, -abs(z.imag)))
    if len(out) != poly.size - 1:
        raise RuntimeError("root classification failed (%d of %d)" % (len(out), poly.size - 1))
    out.sort(key=lambda c: (c.real, c.imag))
    return np.array(out)


# --------------------------------------------------------------------------
# Helpers
# --------------------------------------------------------------------------

def fnum(x):
    """JSON-safe float (None for NaN/inf/None)."""
    if x is None:
        return None
    x = float(x)
    if not math.isfinite(x):
        return None
    return x


def loop_type_and_constant(num, den):
    """(type N, K_N = lim s^N L(s)) of L = num/den."""
    nz_n = len(num) - len(np.trim_zeros(num, "b"))
    nz_d = len(den) - len(np.trim_zeros(den, "b"))
    nt, dt = np.trim_zeros(num, "b"), np.trim_zeros(den, "b")
    return nz_d - nz_n, nt[-1] / dt[-1]


def steady_state_error(num, den, ss_input):
    order = {"step": 0, "ramp": 1, "parabola": 2}[ss_input]
    typ, k = loop_type_and_constant(num, den)
    if typ > order:
        return 0.0
    if typ < order:
        if order == 0:                      # L has zeros at the origin: Kp = 0
            return 1.0
        return None                          # unbounded
    return 1.0 / (1.0 + k) if order == 0 else 1.0 / k


# --------------------------------------------------------------------------
# Time domain
# --------------------------------------------------------------------------

def residues_step(numer, char, poles):
    """Residues c_i of numer/(s char) at the closed-loop poles (step response expansion)."""
    dchar = np.polyder(char)
    return np.array([np.polyval(numer, p) / (p * np.polyval(dchar, p)) for p in poles])


def choose_horizon(cres, poles, yf, band):
    target = HORIZON_FRACTION * band * abs(yf)
    sig = poles.real
    mag = np.abs(cres)

    def bound(t):
        return np.log(np.sum(mag * np.exp(sig * t))) - np.log(target)

    if bound(0.0) <= 0.0:
        return 1.0 / np.min(-sig)
    hi = 1.0 / np.min(-sig)
    while bound(hi) > 0.0:
        hi *= 2.0
    tb = optimize.brentq(bound, 0.0, hi, xtol=1e-12, rtol=1e-12)
    return 1.25 * tb


def simulate(ynum, unum, char, horizon):
    """lsim of the closed loop, outputs (y, u), unit step, SAMPLES uniform points."""
    n = len(char)
    nums = np.vstack([np.concatenate([np.zeros(n - len(ynum)), ynum]),
                      np.concatenate([np.zeros(n - len(unum)), unum])])
    A, B, C, D = signal.tf2ss(nums, char)
    Ab, Tb = linalg.matrix_balance(A, permute=False)
    Bb = linalg.solve(Tb, B)
    Cb = C @ Tb
    t = np.linspace(0.0, horizon, SAMPLES)
    _, yout, _ = signal.lsim((Ab, Bb, Cb, D), np.ones_like(t), t)
    return t, yout[:, 0], yout[:, 1]


def first_crossing_up(t, y, level):
    idx = np.nonzero(y >= level)[0]
    if idx.size == 0:
        return None
    i = idx[0]
    if i == 0:
        return t[0]
    return t[i - 1] + (level - y[i - 1]) / (y[i] - y[i - 1]) * (t[i] - t[i - 1])


def parabola_peak(t, v, k):
    """Vertex of the parabola through samples k-1, k, k+1 (uniform grid)."""
    den = v[k - 1] - 2.0 * v[k] + v[k + 1]
    if den == 0.0:
        return t[k], v[k]
    delta = 0.5 * (v[k - 1] - v[k + 1]) / den
    dt = t[1] - t[0]
    return t[k] + delta * dt, v[k] - 0.25 * (v[k - 1] - v[k + 1]) * delta


def time_metrics(t, y, u, yf, band):
    sgn = 1.0 if yf > 0 else -1.0
    ys = sgn * y
    yfs = abs(yf)
    res = {}
    k = int(np.argmax(ys))
    if k == len(t) - 1:
        raise RuntimeError("largest y at the horizon end")
    if k == 0:
        tp, ypk = t[0], ys[0]
        res["_peak_flatness"] = None
    else:
        tp, ypk = parabola_peak(t, ys, k)
        dt = t[1] - t[0]
        curv = (ys[k - 1] - 2.0 * ys[k] + ys[k + 1]) / dt ** 2
        # half-width of the window in which y stays within 1e-6 |y(inf)| of its peak
        res["_peak_flatness"] = math.sqrt(2e-6 * yfs / abs(curv)) if curv != 0.0 else None
    res["peak_time_s"] = tp
    res["overshoot_pct"] = max(0.0, 100.0 * (ypk - yfs) / yfs)
    kmin = int(np.argmin(ys))
    res["_undershoot_pct"] = 100.0 * max(0.0, -ys[kmin]) / yfs
    t10 = first_crossing_up(t, ys, 0.1 * yfs)
    t90 = first_crossing_up(t, ys, 0.9 * yfs)
    res["rise_time_s"] = None if (t10 is None or t90 is None) else t90 - t10
    err = np.abs(y - yf)
    lim = band * yfs
    out = np.nonzero(err > lim)[0]
    if out.size == 0:
        res["settling_time_s"] = 0.0
    else:
        i = out[-1]
        if i == len(t) - 1:
            raise RuntimeError("not settled at the horizon end")
        res["settling_time_s"] = t[i] + (err[i] - lim) / (err[i] - err[i + 1]) * (t[i + 1] - t[i])
        slope = abs(err[i] - err[i + 1]) / (t[i + 1] - t[i])
        # relative change of the settling time per relative change of the band
        res["_settling_condition"] = lim / (slope * res["settling_time_s"])
    au = np.abs(u)
    k = int(np.argmax(au))
    if k == len(t) - 1:
        raise RuntimeError("largest |u| at the horizon end")
    res["peak_effort"] = au[0] if k == 0 else parabola_peak(t, au, k)[1]
    res["_peak_effort_time"] = 0.0 if k == 0 else parabola_peak(t, au, k)[0]
    return res


# --------------------------------------------------------------------------
# Frequency domain
# --------------------------------------------------------------------------

def freq_grid(polys, T):
    mags, light = [], []
    for p in polys:
        if len(p) > 1:
            for r in np.roots(p):
                if abs(r) > 0.0:
                    mags.append(abs(r))
                    zeta = -r.real / abs(r)
                    if r.imag > 0 and abs(zeta) < 0.3:
                        light.append((abs(r), abs(zeta)))
    if T > 0.0:
        mags.append(1.0 / T)
    lo = min(mags) / 10.0 ** FREQ_DECADES_MARGIN
    hi = max(mags) * 10.0 ** FREQ_DECADES_MARGIN
    # enough points that the delay phase w T moves at most MAX_DELAY_PHASE_STEP per step
    npts = FREQ_POINTS
    if T > 0.0:
        npts = max(npts, int(math.ceil(hi * T * math.log(hi / lo) / MAX_DELAY_PHASE_STEP)))
    w = np.logspace(np.log10(lo), np.log10(hi), npts)
    extra = []
    for wn, zeta in light:
        a = wn * max(0.5, 1.0 - 20.0 * zeta)
        b = wn * min(1.5, 1.0 + 20.0 * zeta)
        extra.append(np.linspace(a, b, EXTRA_POINTS))
    if extra:
        w = np.unique(np.concatenate([w] + extra))
        w = w[(w >= lo) & (w <= hi)]
    return w


def make_L(num, den, T):
    def L(w):
        s = 1j * np.asarray(w, float)
        return np.polyval(num, s) / np.polyval(den, s) * np.exp(-1j * np.asarray(w, float) * T)
    return L


def brent(f, a, b):
    return optimize.brentq(f, a, b, xtol=1e-300, rtol=1e-15, maxiter=500)


def freq_metrics(num, den, T, T0):
    polys = [num, den]
    w = freq_grid(polys, T)
    L = make_L(num, den, T)
    Lw = L(w)
    res = {"_grid": [w[0], w[-1], int(w.size)]}
    ph = np.unwrap(np.angle(Lw))
    res["_max_phase_step"] = float(np.max(np.abs(np.diff(ph))))
    lg = np.log(np.abs(Lw))
    res["_max_logmag_step"] = float(np.max(np.abs(np.diff(lg))))

    # gain crossovers
    def flog(x):
        return math.log(abs(L(x)))
    gc = []
    for i in np.nonzero(np.sign(lg[:-1]) * np.sign(lg[1:]) <= 0)[0]:
        if lg[i] == 0.0:
            wc = w[i]
        elif lg[i + 1] == 0.0:
            continue
        else:
            wc = brent(flog, w[i], w[i + 1])
        pm = math.degrees(np.angle(-L(wc)))
        gc.append((wc, pm))
    res["gain_crossovers"] = gc
    res["phase_margin_deg"] = min(p for _, p in gc) if gc else None
    res["crossover_rad_s"] = max(x for x, _ in gc) if gc else None

    # phase crossovers: Im L changes sign with Re L < 0
    g = Lw.imag / np.abs(Lw)

    def fim(x):
        v = L(x)
        return v.imag / abs(v)
    pc = []
    for i in np.nonzero(np.sign(g[:-1]) * np.sign(g[1:]) <= 0)[0]:
        if g[i] == 0.0:
            wp = w[i]
        elif g[i + 1] == 0.0:
            continue
        else:
            wp = brent(fim, w[i], w[i + 1])
        v = L(wp)
        if v.real < 0.0:
            pc.append((wp, 1.0 / abs(v)))
    res["phase_crossovers"] = pc
    up = [k for _, k in pc if k > 1.0]
    dn = [k for _, k in pc if k < 1.0]
    res["gain_increase_db"] = 20.0 * math.log10(min(up)) if up else None
    res["gain_reduction_db"] = -20.0 * math.log10(max(dn)) if dn else None
    cands = [x for x in (res["gain_increase_db"], res["gain_reduction_db"]) if x is not None]
    res["gain_margin_db"] = min(cands) if cands else None

    # bandwidth: first w with |T| = |T(0)|/sqrt(2), from above
    Tw = Lw / (1.0 + Lw)
    thr = abs(T0) / math.sqrt(2.0)
    hb = np.log(np.abs(Tw)) - math.log(thr)

    def fbw(x):
        v = L(x)
        return math.log(abs(v / (1.0 + v))) - math.log(thr)
    below = np.nonzero(hb < 0.0)[0]
    if below.size == 0 or below[0] == 0:
        res["bandwidth_rad_s"] = None if below.size == 0 else float("nan")
    else:
        i = below[0]
        res["bandwidth_rad_s"] = w[i] if hb[i - 1] == 0.0 else brent(fbw, w[i - 1], w[i])

    # sensitivity peak
    Sw = np.abs(1.0 / (1.0 + Lw))
    k = int(np.argmax(Sw))
    lw = np.log(w)
    if 0 < k < w.size - 1:
        r = optimize.minimize_scalar(lambda x: -abs(1.0 / (1.0 + L(math.exp(x)))),
                                     bounds=(lw[k - 1], lw[k + 1]), method="bounded",
                                     options={"xatol": 1e-13, "maxiter": 500})
        ms = max(-r.fun, Sw[k])
        res["_ms_freq"] = math.exp(r.x) if -r.fun >= Sw[k] else w[k]
    else:
        ms = Sw[k]
        res["_ms_freq"] = w[k]
        res["_ms_at_grid_end"] = True
    res["peak_sensitivity"] = ms
    return res


# --------------------------------------------------------------------------
# One loop
# --------------------------------------------------------------------------

def analyse(loop):
    name = loop["name"]
    pade_order = int(loop.get("pade_order", 6))
    band_pct = float(loop.get("band_pct", 2.0))
    ss_input = loop.get("ss_input", "step")
    band = band_pct / 100.0
    T = float(loop["plant"].get("delay_s", 0.0))

    Ng, Dg = tf_from_spec(loop["plant"])
    Nc, Dc = tf_from_spec(loop["compensator"])
    P, Q = pade_delay(T, pade_order)
    notes = {}
    Ps, Qs = pade_delay_scipy(T, pade_order)

    numL = np.polymul(Nc, Ng)
    denL = np.polymul(Dc, Dg)
    char = np.polyadd(np.polymul(denL, Q), np.polymul(numL, P))
    char = np.trim_zeros(char, "f")
    ynum = np.polymul(numL, P)
    unum = np.polymul(np.polymul(Nc, Dg), Q)

    poles = polished_roots(char)
    if T > 0:
        notes["scipy_pade_coef_rel_dev"] = float(max(np.max(np.abs(Ps - P) / np.abs(P)),
                                                     np.max(np.abs(Qs - Q) / np.abs(Q))))
        char_s = np.polyadd(np.polymul(denL, Qs), np.polymul(numL, Ps))
        poles_s = polished_roots(char_s)
        notes["scipy_pade_pole_rel_dev"] = float(np.max(np.abs(poles_s - poles) / np.abs(poles)))
        if notes["scipy_pade_pole_rel_dev"] > 1e-5:
            raise RuntimeError("scipy.interpolate.pade disagrees with the exact Pade coefficients")
    rel_res = max(abs(np.polyval(char, p)) / np.polyval(np.abs(char), abs(p)) for p in poles)
    notes["max_relative_residual"] = float(rel_res)
    dchar = np.polyder(char)
    # first-order root error bound for relative coefficient errors of one rounding
    notes["pole_condition_x_eps"] = float(max(np.polyval(np.abs(char), abs(p)) / (abs(p) * abs(np.polyval(dchar, p)))
                                              for p in poles) * np.finfo(float).eps)
    stable = bool(np.all(poles.real < 0.0))

    exp_ = {"closed_loop_poles": [[float(p.real), float(p.imag)] for p in poles]}
    exp_["steady_state_error"] = fnum(steady_state_error(numL, denL, ss_input))

    yf = ynum[-1] / char[-1]
    if not stable:
        return name, False, exp_, notes, None

    exp_["final_value"] = float(yf)
    cres = residues_step(ynum, char, poles)
    horizon = choose_horizon(cres, poles, yf, band)
    t, y, u = simulate(ynum, unum, char, horizon)

    # cross-check the simulation with the residue expansion
    ures = residues_step(unum, char, poles)
    uf = unum[-1] / char[-1]
    dy = du = 0.0
    for a in range(0, t.size, 20000):
        tt = t[a:a + 20000]
        E = np.exp(np.outer(tt, poles))
        dy = max(dy, float(np.max(np.abs(yf + (E @ cres).real - y[a:a + 20000]))))
        du = max(du, float(np.max(np.abs(uf + (E @ ures).real - u[a:a + 20000]))))
    notes["sim_vs_residue_max_abs_dy"] = dy
    notes["sim_vs_residue_max_abs_du"] = du
    dist = np.min([abs(a - b) for i, a in enumerate(poles) for b in poles[i + 1:]])
    notes["min_pole_separation"] = float(dist)

    tm = time_metrics(t, y, u, yf, band)
    for key in ("overshoot_pct", "peak_time_s", "rise_time_s", "settling_time_s", "peak_effort"):
        exp_[key] = fnum(tm[key])

    T0 = yf
    fm = freq_metrics(numL, denL, T, T0)
    for key in ("phase_margin_deg", "crossover_rad_s", "gain_increase_db", "gain_reduction_db",
                "gain_margin_db", "bandwidth_rad_s", "peak_sensitivity"):
        exp_[key] = fnum(fm[key])

    typ, kconst = loop_type_and_constant(numL, denL)
    details = {
        "loop_type": int(typ),
        "error_constant": float(kconst),
        "gain_crossovers": [[float(a), float(b)] for a, b in fm["gain_crossovers"]],
        "phase_crossovers": [[float(a), float(b)] for a, b in fm["phase_crossovers"]],
        "horizon_s": float(horizon),
        "samples": SAMPLES,
        "frequency_grid": [float(fm["_grid"][0]), float(fm["_grid"][1]), fm["_grid"][2]],
        "peak_sensitivity_rad_s": float(fm["_ms_freq"]),
        "peak_effort_time_s": float(tm["_peak_effort_time"]),
        "step_residues": [[float(c.real), float(c.imag)] for c in cres],
        "step_share_pct": [float(100.0 * abs(c) / np.sum(np.abs(cres))) for c in cres],
        "undershoot_pct": float(tm["_undershoot_pct"]),
        "peak_flatness_s": fnum(tm["_peak_flatness"]),
        "settling_condition": float(tm["_settling_condition"]),
    }
    notes["max_phase_step_rad"] = fm["_max_phase_step"]
    notes["max_logmag_step"] = fm["_max_logmag_step"]
    if fm.get("_ms_at_grid_end"):
        notes["peak_sensitivity_at_grid_end"] = True
    return name, True, exp_, notes, details


# --------------------------------------------------------------------------
# Analytic cross-checks (printed)
# --------------------------------------------------------------------------

def analytic_second_order(wn, zeta):
    wd = wn * math.sqrt(1 - zeta ** 2)
    sig = zeta * wn
    os_ = 100.0 * math.exp(-math.pi * zeta / math.sqrt(1 - zeta ** 2))
    tp = math.pi / wd
    pm = math.degrees(math.atan(2 * zeta / math.sqrt(math.sqrt(1 + 4 * zeta ** 4) - 2 * zeta ** 2)))
    wb = wn * math.sqrt(1 - 2 * zeta ** 2 + math.sqrt(4 * zeta ** 4 - 4 * zeta ** 2 + 2))

    def y(t):
        return 1.0 - math.exp(-sig * t) * (math.cos(wd * t) + sig / wd * math.sin(wd * t))
    t10 = optimize.brentq(lambda t: y(t) - 0.1, 1e-9, tp)
    t90 = optimize.brentq(lambda t: y(t) - 0.9, 1e-9, tp)
    # settling: last exit from the 2 % band. Search the extrema (multiples of pi/wd) backwards.
    k = 1
    while math.exp(-sig * k * math.pi / wd) > 0.02:
        k += 1
    a, b = (k - 1) * math.pi / wd, k * math.pi / wd
    lastk = k - 1
    ext = abs(y(lastk * math.pi / wd) - 1.0)
    assert ext > 0.02
    # the band exit lies between extremum lastk and the next one
    ts = optimize.brentq(lambda t: abs(y(t) - 1.0) - 0.02, a, b)
    return {"poles": (-sig, wd), "overshoot_pct": os_, "peak_time_s": tp, "rise_time_s": t90 - t10,
            "settling_time_s": ts, "phase_margin_deg": pm, "bandwidth_rad_s": wb,
            "crossover_rad_s": wn * math.sqrt(math.sqrt(1 + 4 * zeta ** 4) - 2 * zeta ** 2)}


def rel(a, b):
    return abs(a - b) / abs(b)


def cross_checks(results):
    ok = True
    by = {r["name"]: r for r in results}
    print("\n=== analytic cross-checks ===")
    e = by["standard_second_order"]["expected"]
    an = analytic_second_order(5.0, 0.5)
    print("loop 1 standard_second_order (wn=5, zeta=0.5)")
    p = e["closed_loop_poles"]
    print("  poles      computed %s   analytic -2.5 +- j%.15g" % (p, an["poles"][1]))
    ok &= abs(p[0][0] + 2.5) < 1e-12 and abs(abs(p[0][1]) - an["poles"][1]) < 1e-12
    for key, tol in (("overshoot_pct", 1e-6), ("peak_time_s", 1e-6), ("rise_time_s", 1e-6),
                     ("settling_time_s", 1e-6), ("phase_margin_deg", 1e-10),
                     ("bandwidth_rad_s", 1e-10), ("crossover_rad_s", 1e-10)):
        r_ = rel(e[key], an[key])
        print("  %-16s computed %.12g   analytic %.12g   rel.diff %.2e" % (key, e[key], an[key], r_))
        ok &= r_ < tol
    print("  gain margin      computed %s (no phase crossover expected)" % e["gain_margin_db"])
    ok &= e["gain_margin_db"] is None

    e = by["third_order_type1_K2"]["expected"]
    d = by["third_order_type1_K2"]["details"]
    gm = 20 * math.log10(3.0)
    print("loop 2 third_order_type1_K2 (K=2, Routh K<6)")
    print("  gain_increase_db computed %.15g   analytic 20log10(3) = %.15g   rel.diff %.2e"
          % (e["gain_increase_db"], gm, rel(e["gain_increase_db"], gm)))
    print("  phase crossover  computed %.15g   analytic sqrt(2) = %.15g" % (d["phase_crossovers"][0][0], math.sqrt(2)))
    ok &= rel(e["gain_increase_db"], gm) < 1e-12 and rel(d["phase_crossovers"][0][0], math.sqrt(2)) < 1e-12
    rp = np.roots([1, 3, 2, 2])
    print("  poles            computed %s" % e["closed_loop_poles"])
    print("  numpy.roots(s^3+3s^2+2s+2) %s" % sorted([[z.real, z.imag] for z in rp]))
    print("  ss error (step)  computed %s   analytic 0 (type 1)" % e["steady_state_error"])

    e = by["lead_on_type1"]["expected"]
    print("loop 3 lead_on_type1: design target dominant poles -2 +- j3.4641 (zeta 0.5, wn 4)")
    print("  poles            computed %s" % e["closed_loop_poles"])
    dom = [z for z in e["closed_loop_poles"] if z[1] > 0][0]
    wn = math.hypot(*dom)
    print("  dominant pair    zeta %.5f  wn %.5f  (design 0.5, 4)" % (-dom[0] / wn, wn))
    print("  overshoot %.4f %%  (2nd-order estimate for zeta %.4f: %.4f %%; the zero at -2.9 and pole "
          "near -3.4 shift it)" % (e["overshoot_pct"], -dom[0] / wn,
                                   100 * math.exp(-math.pi * (-dom[0] / wn) / math.sqrt(1 - (dom[0] / wn) ** 2))))
    ok &= abs(dom[0] + 2.0) < 0.05 and abs(dom[1] - 2 * math.sqrt(3)) < 0.05

    e = by["type0_step_error"]["expected"]
    print("loop 10 type0: ss error %s (analytic 0.5), final value %s (analytic 0.5)"
          % (e["steady_state_error"], e["final_value"]))
    ok &= abs(e["steady_state_error"] - 0.5) < 1e-15 and abs(e["final_value"] - 0.5) < 1e-14
    gm = 20 * math.log10(25.2 / 2)
    print("  GM %.15g (Routh 20log10(12.6) = %.15g), PM %s, crossover %s (expected null: |L| < 1 for w > 0)"
          % (e["gain_margin_db"], gm, e["phase_margin_deg"], e["crossover_rad_s"]))
    ok &= rel(e["gain_margin_db"], gm) < 1e-12 and e["phase_margin_deg"] is None
    e = by["type0_step_error_gain6"]["expected"]
    gm = 20 * math.log10(25.2 / 6)
    print("loop type0 gain 6: ss error %s (0.25), final value %s (0.75), GM %.15g (Routh %.15g)"
          % (e["steady_state_error"], e["final_value"], e["gain_margin_db"], gm))
    ok &= abs(e["steady_state_error"] - 0.25) < 1e-15 and abs(e["final_value"] - 0.75) < 1e-14
    ok &= rel(e["gain_margin_db"], gm) < 1e-12
    e = by["type1_ramp_error_lag"]["expected"]
    print("loop 11 ramp: ss error %s (analytic 0.2)" % e["steady_state_error"])
    ok &= abs(e["steady_state_error"] - 0.2) < 1e-14
    e = by["double_integrator_lead"]["expected"]
    print("loop 9 parabola: ss error %s (analytic 1/3)" % e["steady_state_error"])
    ok &= abs(e["steady_state_error"] - 1 / 3) < 1e-14
    e = by["biproper_lead_effort"]["expected"]
    print("loop 13 biproper: peak effort %s (analytic u(0+) = 15)" % e["peak_effort"])
    ok &= abs(e["peak_effort"] - 15.0) < 1e-12
    return ok


# --------------------------------------------------------------------------

def main():
    here = os.path.dirname(os.path.abspath(__file__))
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("-o", "--output", default=os.path.join(here, "loops_fixture.json"))
    args = ap.parse_args()

    t0 = time.time()
    results = []
    failed = False
    for loop in LOOPS:
        t1 = time.time()
        name, stable, expected, notes, details = analyse(loop)
        if not stable:
            print("WARNING: loop %s is NOT closed-loop stable: poles %s" % (name, expected["closed_loop_poles"]),
                  file=sys.stderr)
            failed = True
            continue
        entry = {
            "name": name,
            "source": loop["source"],
            "plant": loop["plant"],
            "compensator": loop["compensator"],
            "pade_order": int(loop.get("pade_order", 6)),
            "band_pct": float(loop.get("band_pct", 2.0)),
            "ss_input": loop.get("ss_input", "step"),
            "expected": expected,
            "details": details,
        }
        results.append(entry)
        warn = []
        if notes["sim_vs_residue_max_abs_dy"] > 1e-8 or notes["sim_vs_residue_max_abs_du"] > 1e-8 * max(1.0, expected["peak_effort"]):
            warn.append("simulation and residue expansion disagree")
        if notes["max_phase_step_rad"] > 0.3:
            warn.append("frequency grid too coarse for the phase")
        if notes["max_relative_residual"] > 1e-13 or notes["pole_condition_x_eps"] > 1e-12:
            warn.append("pole residual large")
        if details["settling_condition"] > 20.0:
            warn.append("settling time ill-conditioned (band crossing near an extremum)")
        if notes.get("peak_sensitivity_at_grid_end"):
            warn.append("sensitivity peak at the grid end")
        print("%-28s %5.2fs  %s" % (name, time.time() - t1,
                                    " ".join("%s=%.3g" % (k, v) for k, v in sorted(notes.items()))))
        print("    " + " ".join("%s=%s" % (k, ("%.6g" % v) if isinstance(v, float) else v)
                                 for k, v in sorted(expected.items()) if k != "closed_loop_poles"))
        for w in warn:
            print("  WARNING: %s" % w, file=sys.stderr)
            failed = True

    if not failed:
        failed = not cross_checks(results)

    doc = {
        "generator": SCRIPT_REL,
        "numpy_version": np.__version__,
        "scipy_version": scipy.__version__,
        "loops": results,
    }
    text = json.dumps(doc, indent=1, sort_keys=True, allow_nan=False) + "\n"
    tmp = args.output + ".tmp"
    with open(tmp, "w") as f:
        f.write(text)
    os.replace(tmp, args.output)
    print("\nwrote %s (%d loops) in %.1f s" % (args.output, len(results), time.time() - t0))
    if failed:
        print("FAILED: see warnings above", file=sys.stderr)
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
