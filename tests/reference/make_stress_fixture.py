#!/usr/bin/python3
"""Numerical stress cases for polewright, with independent numpy/scipy reference values.

Run with Debian's Python (python3-numpy, python3-scipy):

    /usr/bin/python3 tests/reference/make_stress_fixture.py [-o OUT.json]

The default output is stress_fixture.json next to this script. Nothing here comes from the C++
code: the loops are defined below in the spec format of docs/manual.md and every reference value is
computed from scratch.

Loop: unity negative feedback, L(s) = C(s) G(s) exp(-sT).

Closed-loop poles (two steps):
  1. eigenvalues (scipy.linalg.eigvals) of a state-space realisation built here: every block
     (compensator, Pade approximant, plant) is a series connection of first- and second-order
     sections, each realised with scipy.signal.zpk2ss (well conditioned at order <= 2), the loop
     closed with block matrices and balanced with scipy.linalg.matrix_balance;
  2. all of them refined together by Ehrlich-Aberth iteration on f(s) = D(s) + K N(s) evaluated in
     factored form (products over the roots, never expanded coefficients), which keeps the roots
     distinct. The refined values are the reference; the script checks that each is converged
     (a further Newton step below 1e-13 relative) and within 1e-4 of the eigenvalue it started from. numpy.roots of the expanded characteristic polynomial is
  NOT used: at order 20 to 42 with roots spread over eight decades its coefficients lose every
  digit.
Pade (n, n) approximant of exp(-sT): the exact rational coefficients of the diagonal approximant
  of exp(-x), roots of that degree-n polynomial by numpy.roots with Newton polish (n <= 12, well
  conditioned), then x = sT.
Plants given as expanded coefficients: the roots of the double-precision polynomial as written
  are found by Newton iteration in 60-digit decimal arithmetic on its exact coefficients
  (Python's decimal module, real roots only), so the reference stands on the polynomial the
  tool reads, not on the roots it was built from.

Margins: L(jw) in factored form with the exact exp(-jwT) on a dense logarithmic grid (extra
points around lightly damped roots; with a dead time the step is also bounded so that wT moves
at most 0.05 rad per step), sign changes of log|L| and of Im L refined with scipy.optimize.brentq.
With a dead time the grid stops where |L| has fallen below 1e-4 for good: any phase crossover
beyond gives a gain margin above 80 dB and cannot be the nearest one.

Tolerances (stated per case in the fixture, with the reason):
  * closed-loop poles: relative error <= max(1e-8, 1e3 eps kappa) per pole (10 eps^(1/m) for m
    closed-loop poles within 1e-6 of one another: a multiple root), where kappa is the
    structured condition number of that pole with respect to relative perturbations of every
    open-loop root and the gain (for a plant given as coefficients: of every coefficient),
        kappa = (sum |r_i| / |l - r_i| + 1) / (|l| |sum 1/(l - p_i) - sum 1/(l - z_j)|).
    1e-8 is the tolerance of the main fixture; the factor 1e3 allows for the eigen-solver working
    on a realisation whose own conditioning is worse than the structured one;
  * open-loop poles of a plant given as coefficients with an m-fold root: only determined to about
    (eps kappa_c)^(1/m) relative (the roots of a perturbed m-fold factor spread on a circle of that
    radius); the tolerance is 4 (eps kappa_c)^(1/m) with kappa_c the coefficient condition of the
    factor; simple roots 1e-8;
  * phase margin 0.3 deg, gain margins 0.2 dB, crossover 1e-4 relative (those of the main fixture,
    the crossover tighter: it is refined to full precision on both sides).
The script exits 1 if a case meant to be stable is not, a polished pole is more than 1e-4 from
the eigenvalue it started from, or leaves a relative residual above 1e-13.
"""

import argparse
import decimal
import json
import math
import os
import sys
import time
from fractions import Fraction

import numpy as np
import scipy
from scipy import linalg, optimize, signal

EPS = np.finfo(float).eps
SCRIPT_REL = "tests/reference/make_stress_fixture.py"
LOG_POINTS_PER_DECADE = 4000
EXTRA_POINTS = 4001
DELAY_PHASE_STEP = 0.05
DELAY_FLOOR = 1e-4


def modes(ws, zetas):
    return [{"wn": float(w), "zeta": float(z)} for w, z in zip(ws, zetas)]


def unit_dc_gain(zeros, poles, k0):
    """gain making s^n G(s) -> k0 as s -> 0 (n integrators) for the given roots."""
    g = k0
    for r in _expand_roots(poles):
        if r != 0:
            g *= -r
    for r in _expand_roots(zeros):
        if r != 0:
            g /= -r
    return float(np.real(g))


def _expand_roots(entries):
    out = []
    for e in entries:
        if isinstance(e, dict):
            if "wn" in e:
                wn, z = e["wn"], e["zeta"]
                if abs(z) < 1:
                    wd = wn * math.sqrt(1 - z * z)
                    out += [complex(-z * wn, wd), complex(-z * wn, -wd)]
                else:
                    d = wn * math.sqrt(z * z - 1)
                    out += [complex(-z * wn + d, 0), complex(-z * wn - d, 0)]
            else:
                out += [complex(e["re"], abs(e["im"])), complex(e["re"], -abs(e["im"]))]
        else:
            out.append(complex(float(e), 0.0))
    return out


def poly_exact(roots):
    """prod (s - r) for real roots r, in exact rational arithmetic, then rounded to double."""
    c = [Fraction(1)]
    for r in roots:
        r = Fraction(r)
        nxt = c + [Fraction(0)]
        for i in range(len(c)):
            nxt[i + 1] -= c[i] * r
        c = nxt
    return [float(x) for x in c]


# --------------------------------------------------------------------------------------------
# The stress loops
# --------------------------------------------------------------------------------------------

def build_cases():
    cases = []

    # Order 20: rigid body with a motor pole, two fast real poles and eight lightly damped
    # structural modes (unit DC gain each) from 15 to 600 rad/s; a lead at crossover near 1 rad/s.
    p20 = [0.0, -1.0, -30.0, -200.0] + modes([15, 22, 35, 50, 80, 120, 250, 600],
                                             [0.02, 0.03, 0.02, 0.05, 0.01, 0.04, 0.02, 0.03])
    cases.append({
        "name": "order20_modes_lead",
        "what": "plant order 20: integrator, real poles at 1, 30, 200 rad/s and eight modes "
                "(zeta 0.01 to 0.05) from 15 to 600 rad/s; lead 2.5(s+0.4)/(s+4)",
        "plant": {"gain": unit_dc_gain([], p20, 1.0), "poles": p20},
        "compensator": {"gain": 2.5 * 4 / 0.4 * 0.1, "zeros": [-0.4], "poles": [-4.0]},
        "design": True,
    })

    # Order 30: real poles and modes spread over five decades, two zeros.
    z30 = [-2.0, -20.0]
    p30 = [0.0, -0.2, -4.0, -15.0, -60.0, -250.0, -1000.0, -4000.0, -1e4, -2e4] + modes(
        [12, 25, 45, 90, 180, 400, 900, 2000, 5000, 9000],
        [0.01, 0.02, 0.05, 0.1, 0.02, 0.03, 0.05, 0.08, 0.1, 0.2])
    cases.append({
        "name": "order30_decades",
        "what": "plant order 30 at the documented limit: ten real poles 0 to 2e4 rad/s, ten modes "
                "12 to 9000 rad/s (zeta 0.01 to 0.2), zeros at 2 and 20 rad/s; lead (s+0.05)/(s+0.5)",
        "plant": {"gain": unit_dc_gain(z30, p30, 0.2), "zeros": z30, "poles": p30},
        "compensator": {"gain": 0.8 * 10, "zeros": [-0.05], "poles": [-0.5]},
    })

    # The largest loop the limits allow: plant order 30, Pade 12, compensator order 20 (62 states).
    wn9 = [12, 25, 45, 90, 180, 400, 900, 2000, 5000]
    cases.append({
        "name": "largest_loop_62_states",
        "what": "the order-30 plant above with 1 ms dead time (Pade 12) under an order-20 compensator: "
                "lead (s+0.05)/(s+0.5), nine notches (zero damping 0.05, pole damping 0.7) on the modes "
                "12 to 5000 rad/s and a roll-off pole at 3e4 rad/s: 62 states, the documented maximum",
        "plant": {"gain": unit_dc_gain(z30, p30, 0.2), "zeros": z30, "poles": p30, "delay_s": 0.001},
        "compensator": {"gain": 8.0 * 3e4, "zeros": [-0.05] + modes(wn9, [0.05] * 9),
                        "poles": [-0.5, -3e4] + modes(wn9, [0.7] * 9)},
        "pade_order": 12,
    })

    # Time scales 1e-4 to 1e4 rad/s in one plant, PI compensator.
    zts = [-1e-3, -10.0]
    pts = [-1e-4, -1e-2, -1.0, -100.0, -1e4] + modes([1e4], [0.3])
    cases.append({
        "name": "time_scales_1e-4_to_1e4",
        "what": "plant with poles at 1e-4, 1e-2, 1, 1e2, 1e4 rad/s and a pair at 1e4 rad/s, zeros at "
                "1e-3 and 10 rad/s (eight decades); PI 0.5(s+0.05)/s",
        "plant": {"gain": unit_dc_gain(zts, pts, 3.0), "zeros": zts, "poles": pts},
        "compensator": {"gain": 0.5, "zeros": [-0.05], "poles": [0.0]},
    })

    # Ten poles clustered within 1e-3 relative.
    pcl = [-(1.0 + 1e-4 * k) for k in range(10)]
    cases.append({
        "name": "cluster10_1e-3",
        "what": "ten real poles at -(1 + 1e-4 k), k = 0..9 (spread 9e-4 relative), unit DC gain, "
                "compensator gain 1.2 (close to 1.2/(s+1)^10: PM 180 - 10 atan(0.1917) = 71.5 deg, "
                "GM 20 log10(1/(1.2 cos^10(18 deg))) = 2.77 dB, from memory of the closed form)",
        "plant": {"gain": unit_dc_gain([], pcl, 1.0), "poles": pcl},
        "compensator": {"gain": 1.2},
    })

    # Eight-fold real pole given as expanded coefficients: the ill-conditioned factoring.
    cases.append({
        "name": "repeated8_coefficients",
        "what": "256/(s+2)^8 given as expanded integer coefficients (exact in double), compensator "
                "gain 1.2. Analytic: closed-loop poles -2 + 2 1.2^(1/8) exp(j pi (2k+1)/8); the "
                "open-loop roots are an 8-fold root, determined only to about eps^(1/8) = 1.1e-2 "
                "relative from the coefficients",
        "plant": {"numerator": [256.0], "denominator": poly_exact([-2.0] * 8)},
        "compensator": {"gain": 1.2},
        "expect_warning": "$.plant.denominator: a cluster of 8 roots",
        "design": True,
        "analytic_poles": [[-2.0 + 2.0 * 1.2 ** 0.125 * math.cos(math.pi * (2 * k + 1) / 8),
                            2.0 * 1.2 ** 0.125 * math.sin(math.pi * (2 * k + 1) / 8)] for k in range(8)],
    })

    # Multiplicity 6 real, given as roots, under a lead.
    cases.append({
        "name": "repeated6_roots_lead",
        "what": "(s+1)^-6 given as six equal roots, lead 6(s+0.5)/(s+2) (L(0) = 1.5)",
        "plant": {"gain": 1.0, "poles": [-1.0] * 6},
        "compensator": {"gain": 6.0, "zeros": [-0.5], "poles": [-2.0]},
    })

    # A lightly damped pair repeated four times plus a real pole.
    p4 = [-0.5] + modes([3.0] * 4, [0.2] * 4)
    cases.append({
        "name": "repeated_pair4",
        "what": "a pair (wn 3, zeta 0.2) repeated four times and a pole at 0.5 rad/s, unit DC gain, "
                "compensator gain 0.02 (resonance peak 2.5^4 = 39: |L| stays below 1, GM only)",
        "plant": {"gain": unit_dc_gain([], p4, 1.0), "poles": p4},
        "compensator": {"gain": 0.02},
    })

    # A closed-loop double pole (critical damping): s^2 + 2 s + 1 = (s + 1)^2.
    cases.append({
        "name": "closed_loop_double_pole",
        "what": "1/(s(s+2)) with gain 1: the closed loop s^2 + 2s + 1 = (s+1)^2 has a double pole at -1 "
                "(by hand), determined only to about sqrt(eps) = 1.5e-8 relative by any realisation",
        "plant": {"gain": 1.0, "poles": [0.0, -2.0]},
        "compensator": {"gain": 1.0},
        "analytic_poles": [[-1.0, 0.0], [-1.0, 0.0]],
    })

    # Stable near cancellation: compensator zero 1e-6 relative from a stable plant pole.
    cases.append({
        "name": "dipole_stable_1e-6",
        "what": "plant 60/((s+0.5)(s+3)(s+20)), compensator zero at -3(1+1e-6) and pole at -30: a "
                "stable near cancellation leaves a dipole (tiny step share)",
        "plant": {"gain": 60.0, "poles": [-0.5, -3.0, -20.0]},
        "compensator": {"gain": 10.0, "zeros": [-3.0 * (1 + 1e-6)], "poles": [-30.0]},
    })

    # Unstable pole near (1e-4 relative) but not cancelled: must come out unstable, never met.
    cases.append({
        "name": "unstable_near_cancel_1e-4",
        "what": "unstable plant pole at +2 with a compensator zero at 2(1+1e-4): beyond the "
                "cancellation tolerance, the loop keeps a closed-loop pole between 2 and 2.0002 "
                "(root locus from the pole to the zero): unstable, exit 1",
        "plant": {"gain": 500.0, "poles": [2.0, -5.0, -50.0]},
        "compensator": {"gain": 3.0, "zeros": [2.0 * (1 + 1e-4)], "poles": [-100.0]},
        "expect_unstable": True,
    })

    # Three integrators with a double lead: conditionally stable.
    cases.append({
        "name": "three_integrators_double_lead",
        "what": "1/s^3 (coefficients) with a double lead 4(s+0.25)^2/(s+5)^2: conditionally stable, "
                "a gain-reduction and a gain-increase margin",
        "plant": {"numerator": [1.0], "denominator": [1.0, 0.0, 0.0, 0.0]},
        "compensator": {"gain": 16.0, "zeros": [-0.25, -0.25], "poles": [-5.0, -5.0]},
        "design": True,
    })

    # Dead time 20 times the time constant, PI.
    cases.append({
        "name": "dead_time_20tau_PI",
        "what": "1/(s+1) with 20 s dead time (20 times the time constant), PI 0.05(s+0.9)/s, Pade 12",
        "plant": {"numerator": [1.0], "denominator": [1.0, 1.0], "delay_s": 20.0},
        "compensator": {"gain": 0.05, "zeros": [-0.9], "poles": [0.0]},
        "pade_order": 12,
        "design": True,
    })

    # Dead time 100 times the largest time constant, integral action.
    cases.append({
        "name": "dead_time_100tau_I",
        "what": "2/((s+1)(s+2)) with 100 s dead time (100 times the largest time constant), "
                "integral 0.006/s, Pade 10",
        "plant": {"numerator": [2.0], "denominator": [1.0, 3.0, 2.0], "delay_s": 100.0},
        "compensator": {"gain": 0.006, "poles": [0.0]},
        "pade_order": 10,
    })

    # Order-20 plant given as expanded coefficients with simple roots spread over 4.75 decades.
    r20 = [-(10.0 ** (k / 4.0)) for k in range(20)]
    den20 = poly_exact(r20)
    cases.append({
        "name": "order20_coefficients_spread",
        "what": "prod_{k=0..19} (s + 10^(k/4)) expanded into coefficients (1 to 5.6e4 rad/s), unit DC "
                "gain, compensator gain 2: twenty simple roots from coefficients spanning 48 decades",
        "plant": {"numerator": [den20[-1]], "denominator": den20},
        "compensator": {"gain": 2.0},
    })

    # Order 30 given as expanded coefficients (the documented limit in the polynomial form).
    r30 = [-(10.0 ** (k / 5.0)) for k in range(30)]
    den30 = poly_exact(r30)
    cases.append({
        "name": "order30_coefficients_spread",
        "what": "prod_{k=0..29} (s + 10^(k/5)) expanded into coefficients (1 to 6.3e5 rad/s, "
                "coefficients from 1 to 1e87), unit DC gain, compensator gain 1.5",
        "plant": {"numerator": [den30[-1]], "denominator": den30},
        "compensator": {"gain": 1.5},
    })

    # Exact unstable cancellations: the tool must refuse them (exit 2, one line, $.current).
    cases.append({
        "name": "unstable_cancel_zero_1e-9",
        "what": "compensator zero at 2(1+1e-9) on the unstable plant pole +2: an error",
        "plant": {"gain": 500.0, "poles": [2.0, -5.0, -50.0]},
        "compensator": {"gain": 3.0, "zeros": [2.0 * (1 + 1e-9)], "poles": [-100.0]},
        "expect_error": "$.current",
    })
    cases.append({
        "name": "unstable_cancel_pole_1e-9",
        "what": "unstable compensator pole at 0.7(1+1e-9) on the plant's right-half-plane zero +0.7: "
                "an error",
        "plant": {"gain": -2.0, "zeros": [0.7], "poles": [-1.0, -4.0]},
        "compensator": {"gain": 1.0, "zeros": [-3.0], "poles": [0.7 * (1 + 1e-9)]},
        "expect_error": "$.current",
    })
    cases.append({
        "name": "unstable_cancel_slow_pole",
        "what": "unstable pole at +1e-4 rad/s (a slow runaway) with a compensator zero 1e-9 "
                "relative from it: an error at any time scale",
        "plant": {"gain": 1e-4, "poles": [1e-4, -1e-2]},
        "compensator": {"gain": 1.0, "zeros": [1e-4 * (1 + 1e-9)], "poles": [-1.0]},
        "expect_error": "$.current",
    })
    return cases


# --------------------------------------------------------------------------------------------
# Transfer functions as roots
# --------------------------------------------------------------------------------------------

def decimal_real_roots(coeffs, guesses, digits=60):
    """Real roots of the polynomial with these exact double coefficients, by decimal Newton."""
    ctx = decimal.Context(prec=digits)
    c = [ctx.create_decimal(Fraction(x).numerator) / ctx.create_decimal(Fraction(x).denominator)
         for x in coeffs]
    dc = [c[i] * (len(c) - 1 - i) for i in range(len(c) - 1)]
    out = []
    for g in guesses:
        x = ctx.create_decimal(repr(float(g)))
        for _ in range(200):
            f = decimal.Decimal(0)
            for a in c:
                f = ctx.add(ctx.multiply(f, x), a)
            d = decimal.Decimal(0)
            for a in dc:
                d = ctx.add(ctx.multiply(d, x), a)
            if d == 0:
                break
            step = ctx.divide(f, d)
            x = ctx.subtract(x, step)
            if abs(step) <= abs(x) * decimal.Decimal(10) ** (-digits + 5):
                break
        out.append(float(x))
    return out


def roots_of(obj, coefficient_roots):
    """(gain, zeros, poles) of a spec object; zeros/poles as complex arrays."""
    if "numerator" in obj:
        num = np.trim_zeros(np.array(obj["numerator"], float), "f")
        den = np.array(obj["denominator"], float)
        gain = num[0] / den[0]
        zeros = np.roots(num) if num.size > 1 else np.array([], complex)
        poles = coefficient_roots(den)
        return gain, np.asarray(zeros, complex), np.asarray(poles, complex)
    return (float(obj.get("gain", 1.0)), np.array(_expand_roots(obj.get("zeros", [])), complex),
            np.array(_expand_roots(obj.get("poles", [])), complex))


def pade_roots(T, n):
    """Poles and zeros of the Pade (n, n) approximant of exp(-sT) and its gain."""
    if T == 0.0:
        return np.array([], complex), np.array([], complex), 1.0
    c = [Fraction(math.factorial(2 * n - k) * math.factorial(n),
                  math.factorial(2 * n) * math.factorial(k) * math.factorial(n - k)) for k in range(n + 1)]
    q = np.array([float(c[k]) for k in range(n, -1, -1)])      # D(x), descending
    x = np.roots(q)
    dq = np.polyder(q)
    for _ in range(6):
        x = x - np.polyval(q, x) / np.polyval(dq, x)
    poles = x / T
    return poles, -poles, (1.0 if n % 2 == 0 else -1.0)


def section_list(zeros, poles):
    """Pair roots into sections of at most two poles, each with at most as many zeros."""
    pz = list(poles)
    pairs = [p for p in pz if p.imag > 0]
    reals = sorted([p.real for p in pz if p.imag == 0])
    secs = [[[p, p.conjugate()], []] for p in pairs]
    for i in range(0, len(reals) - 1, 2):
        secs.append([[complex(reals[i]), complex(reals[i + 1])], []])
    if len(reals) % 2:
        secs.append([[complex(reals[-1])], []])
    zpairs = [z for z in zeros if z.imag > 0]
    zreals = [z for z in zeros if z.imag == 0]
    for z in zpairs:
        s = next(s for s in secs if len(s[0]) == 2 and not s[1])
        s[1] = [z, z.conjugate()]
    for z in zreals:
        s = min((s for s in secs if len(s[1]) < len(s[0])), key=lambda s: abs(s[0][0] - z))
        s[1].append(z)
    return secs


def realise(gain, zeros, poles):
    """State space (A, B, C, D) as a series of sections realised with scipy.signal.zpk2ss.

    Each section is scaled to unit gain at its own frequency (the geometric mean of its root
    magnitudes) and the overall gain is spread evenly (in log) over the sections, so that no
    signal in the cascade is far larger or smaller than the others."""
    secs = section_list(zeros, poles)
    scaled = []
    log_total = math.log(abs(gain)) if gain != 0 else 0.0
    for ps, zs in secs:
        mags = [abs(r) for r in list(ps) + list(zs) if abs(r) > 0]
        ws = math.exp(np.mean(np.log(mags))) if mags else 1.0
        h = abs(np.prod([1j * ws - z for z in zs]) / np.prod([1j * ws - p for p in ps]))
        scaled.append(1.0 / h)
        log_total -= math.log(1.0 / h)
    per = math.exp(log_total / len(secs)) if secs else 1.0
    A = np.zeros((0, 0))
    B = np.zeros((0, 1))
    C = np.zeros((1, 0))
    D = np.array([[math.copysign(1.0, gain) * (1.0 if secs else abs(gain))]])
    for (ps, zs), k in zip(secs, scaled):
        a, b, c, d = signal.zpk2ss(np.array(zs), np.array(ps), k * per)
        a, b, c, d = np.real(a), np.real(b), np.real(c), np.real(d)
        n1, n2 = A.shape[0], a.shape[0]
        A2 = np.zeros((n1 + n2, n1 + n2))
        A2[:n1, :n1] = A
        A2[n1:, n1:] = a
        A2[n1:, :n1] = b @ C
        B = np.vstack([B, b @ D])
        C = np.hstack([d @ C, c])
        D = d @ D
        A = A2
    return A, B, C, D


def series(s1, s2):
    A1, B1, C1, D1 = s1
    A2, B2, C2, D2 = s2
    n1, n2 = A1.shape[0], A2.shape[0]
    A = np.zeros((n1 + n2, n1 + n2))
    A[:n1, :n1] = A1
    A[n1:, n1:] = A2
    A[n1:, :n1] = B2 @ C1
    return A, np.vstack([B1, B2 @ D1]), np.hstack([D2 @ C1, C2]), D2 @ D1


def close(sc, sg):
    """A of the unity negative feedback loop of compensator sc and plant sg."""
    Ac, Bc, Cc, Dc = sc
    Ag, Bg, Cg, Dg = sg
    nc, ng = Ac.shape[0], Ag.shape[0]
    inv = 1.0 / (1.0 + Dc[0, 0] * Dg[0, 0])
    # u = Cc xc + Dc (r - y), y = Cg xg + Dg u  ->  u = inv (Cc xc - Dc Cg xg)
    Fc, Fg = inv * Cc, -inv * Dc[0, 0] * Cg
    Y = Cg + Dg[0, 0] * Fg
    A = np.zeros((nc + ng, nc + ng))
    A[:nc, :nc] = Ac - Bc @ (Dg[0, 0] * Fc)
    A[:nc, nc:] = -Bc @ Y
    A[nc:, :nc] = Bg @ Fc
    A[nc:, nc:] = Ag + Bg @ Fg
    return A


# --------------------------------------------------------------------------------------------
# Closed-loop poles
# --------------------------------------------------------------------------------------------

def _products(x, rs):
    """prod (x - r) and its derivative with respect to x (no division by x - r)."""
    d = x - rs
    if d.size == 0:
        return 1.0 + 0j, 0.0 + 0j
    pre = np.concatenate([[1.0 + 0j], np.cumprod(d[:-1])])
    suf = np.concatenate([np.cumprod(d[::-1][:-1])[::-1], [1.0 + 0j]])
    return pre[-1] * d[-1], np.sum(pre * suf)


def aberth(starts, K, zs, ps, steps=200):
    """All roots of f(s) = D(s) + K N(s) (D = prod (s - p), N = prod (s - z), in factored form)
    by Ehrlich-Aberth simultaneous iteration from the given starting values: the roots stay
    distinct (each one is repelled from the others), so no two starts converge to one root."""
    x = np.array(starts, complex)
    n = x.size
    for _ in range(steps):
        biggest = 0.0
        for k in range(n):
            d, dp = _products(x[k], ps)
            nn, np_ = _products(x[k], zs)
            f, fp = d + K * nn, dp + K * np_
            if f == 0:
                continue
            w = f / fp
            others = x[k] - np.delete(x, k)
            corr = w / (1.0 - w * np.sum(1.0 / others))
            x[k] -= corr
            biggest = max(biggest, abs(corr) / max(abs(x[k]), 1e-300))
        if biggest <= 2 * EPS:
            break
    return x


def structured_condition(lam, zs, ps):
    rs = np.concatenate([zs, ps])
    if np.any(np.abs(lam - rs) <= 4 * EPS * np.abs(rs)):
        return 1.0   # the pole sits on an open-loop root to working precision (|L| tiny there)
    num = np.sum(np.abs(rs) / np.abs(lam - rs)) + 1.0
    den = abs(lam) * abs(np.sum(1.0 / (lam - ps)) - (np.sum(1.0 / (lam - zs)) if zs.size else 0.0))
    return num / den if den > 0 else math.inf


def coefficient_condition(coeffs, r):
    """Relative condition of a simple root r of the polynomial w.r.t. its coefficients."""
    c = np.asarray(coeffs, float)
    return np.polyval(np.abs(c), abs(r)) / (abs(r) * abs(np.polyval(np.polyder(c), r)))


def plant_coefficient_roots(case):
    obj = case["plant"]
    den = np.array(obj["denominator"], float)
    raw = np.roots(den)
    if np.all(np.abs(raw.imag) < 1e-6 * np.abs(raw)) and len(set(np.round(raw.real, 6))) == raw.size:
        return np.array(decimal_real_roots(den, raw.real), complex)
    if case["name"] == "repeated8_coefficients":
        return np.full(8, -2.0 + 0j)          # (s+2)^8 with exact integer coefficients
    if np.all(den[1:] == 0.0):
        return np.zeros(den.size - 1, complex)   # s^n
    raise RuntimeError("no exact roots for the coefficient form of " + case["name"])


def closed_loop_poles(case):
    T = float(case["plant"].get("delay_s", 0.0))
    n = int(case.get("pade_order", 6))
    kg, zg, pg = roots_of(case["plant"], lambda d: plant_coefficient_roots(case))
    kc, zc, pc = roots_of(case["compensator"], None)
    pp, pz, kp = pade_roots(T, n)
    sc = realise(kc, zc, pc)
    sg = realise(kg, zg, pg)
    if pp.size:
        sg = series(realise(kp, pz, pp), sg)
    A = close(sc, sg)
    Ab, _ = linalg.matrix_balance(A, permute=False)
    eig = linalg.eigvals(Ab)
    K = kc * kg * kp
    zs = np.concatenate([zc, zg, pz])
    ps = np.concatenate([pc, pg, pp])
    polished = aberth(eig, K, zs, ps)
    snap = np.abs(polished.imag) <= 1e-12 * np.abs(polished)
    polished[snap] = polished[snap].real
    kappa = np.array([structured_condition(l, zs, ps) for l in polished])
    return eig, polished, kappa, (K, zs, ps), (kg, zg, pg)


# --------------------------------------------------------------------------------------------
# Frequency response and margins
# --------------------------------------------------------------------------------------------

def loop_value(w, K, zs, ps, T):
    s = 1j * np.asarray(w, float)
    v = np.full(s.shape, complex(K))
    # interleave factors so the running product stays in range
    m = max(zs.size, ps.size)
    for i in range(m):
        if i < zs.size:
            v = v * (s - zs[i])
        if i < ps.size:
            v = v / (s - ps[i])
    return v * np.exp(-1j * np.asarray(w, float) * T)


def grid(K, zs, ps, T):
    mags = [abs(r) for r in np.concatenate([zs, ps]) if abs(r) > 0]
    if T > 0:
        mags.append(1.0 / T)
    lo, hi = min(mags) / 1e3, max(mags) * 1e3
    ntype = int(np.sum(np.abs(ps) == 0) - np.sum(np.abs(zs) == 0))
    for _ in range(8):
        if ntype > 0 and abs(loop_value(lo, K, zs, ps, T)) < 1.0:
            lo /= 10.0
    for _ in range(8):
        if abs(loop_value(hi, K, zs, ps, 0.0)) > 1.0:
            hi *= 10.0
    if T > 0:
        # stop where |L| stays below the floor (the magnitude without delay is monotone there)
        top = np.logspace(math.log10(lo), math.log10(hi), 20000)
        mag = np.abs(loop_value(top, K, zs, ps, 0.0))
        above = np.nonzero(mag >= DELAY_FLOOR)[0]
        hi = min(hi, top[min(above[-1] + 1, top.size - 1)] if above.size else hi)
        ws = [lo]
        r = 10 ** (1.0 / LOG_POINTS_PER_DECADE)
        while ws[-1] < hi:
            x = ws[-1]
            ws.append(x * min(r, 1.0 + DELAY_PHASE_STEP / (x * T)))
        w = np.array(ws)
    else:
        w = np.logspace(math.log10(lo), math.log10(hi), int(LOG_POINTS_PER_DECADE * math.log10(hi / lo)) + 1)
    extra = []
    for r_ in np.concatenate([zs, ps]):
        if r_.imag > 0:
            wn = abs(r_)
            zeta = -r_.real / wn
            if abs(zeta) < 0.3:
                extra.append(np.linspace(wn * (1 - 30 * abs(zeta)) if 30 * abs(zeta) < 0.9 else wn * 0.1,
                                         wn * (1 + 30 * abs(zeta)), EXTRA_POINTS))
    if extra:
        w = np.unique(np.concatenate([w] + extra))
        w = w[(w >= lo) & (w <= hi)]
    return w


def margins(K, zs, ps, T):
    w = grid(K, zs, ps, T)
    L = loop_value(w, K, zs, ps, T)

    def flog(x):
        return math.log(abs(loop_value(x, K, zs, ps, T)))

    def fim(x):
        v = loop_value(x, K, zs, ps, T)
        return v.imag / abs(v)

    lg = np.log(np.abs(L))
    gc = []
    for i in np.nonzero(np.sign(lg[:-1]) != np.sign(lg[1:]))[0]:
        wc = optimize.brentq(flog, w[i], w[i + 1], xtol=1e-300, rtol=1e-15, maxiter=500)
        v = loop_value(wc, K, zs, ps, T)
        gc.append((wc, math.degrees(np.angle(-v))))
    g = L.imag / np.abs(L)
    pc = []
    ntype = int(np.sum(np.abs(ps) == 0) - np.sum(np.abs(zs) == 0))
    if ntype == 0:
        l0 = K * np.prod(-zs) / np.prod(-ps)
        if l0.real < 0:
            pc.append((0.0, 1.0 / abs(l0)))
    for i in np.nonzero(np.sign(g[:-1]) != np.sign(g[1:]))[0]:
        if L[i].real >= 0 and L[i + 1].real >= 0:
            continue
        wp = optimize.brentq(fim, w[i], w[i + 1], xtol=1e-300, rtol=1e-15, maxiter=500)
        v = loop_value(wp, K, zs, ps, T)
        if v.real < 0:
            pc.append((wp, 1.0 / abs(v)))
    up = [k for _, k in pc if k >= 1.0]
    dn = [k for _, k in pc if k < 1.0]
    res = {
        "gain_crossovers": [[a, b] for a, b in gc],
        "phase_crossovers": [[a, b] for a, b in pc if a < 1e300],
        "phase_margin_deg": min(b for _, b in gc) if gc else None,
        "crossover_rad_s": max(a for a, _ in gc) if gc else None,
        "gain_increase_db": 20 * math.log10(min(up)) if up else None,
        "gain_reduction_db": -20 * math.log10(max(dn)) if dn else None,
        "grid": [float(w[0]), float(w[-1]), int(w.size)],
    }
    c = [x for x in (res["gain_increase_db"], res["gain_reduction_db"]) if x is not None]
    res["gain_margin_db"] = min(c) if c else None
    return res


# --------------------------------------------------------------------------------------------
# One case
# --------------------------------------------------------------------------------------------

def multiplicity_clusters(roots, rel):
    """Largest number of roots within rel (relative) of one another, per root."""
    out = []
    for r in roots:
        out.append(int(np.sum(np.abs(roots - r) <= rel * max(abs(r), 1e-300))))
    return out


def analyse(case):
    entry = {k: case[k] for k in ("name", "what", "plant", "compensator")}
    entry["pade_order"] = int(case.get("pade_order", 6))
    entry["design"] = bool(case.get("design", False))
    if "expect_error" in case:
        entry["expect"] = {"exit_code": 2, "error_path": case["expect_error"]}
        return entry, []
    problems = []
    eig, pol, kappa, (K, zs, ps), (kg, zg, pg) = closed_loop_poles(case)
    tol = np.maximum(1e-8, 1e3 * EPS * kappa)
    # m closed-loop poles within 1e-6 of one another: a perturbed m-fold root, fixed only to about
    # eps^(1/m) relative (first-order kappa means nothing there): tolerance 10 eps^(1/m).
    mult = np.array(multiplicity_clusters(pol, 1e-6))
    tol = np.where(mult > 1, 10.0 * EPS ** (1.0 / np.maximum(mult, 1)), tol)
    route_dev = np.abs(eig - pol) / np.abs(pol)
    stable = bool(np.all(pol.real < 0))
    if case.get("expect_unstable"):
        if stable:
            problems.append("meant to be unstable but is stable")
    elif not stable:
        problems.append("not closed-loop stable: %s" % pol[pol.real >= 0])
    # The eigenvalues only start the iteration: they must be near the polished roots (a root that
    # wandered off would show here), and every polished simple root must be converged: one more
    # Newton step on the factored D + K N would move it by at most 1e-13 relative.
    if route_dev.max() > 1e-4:
        problems.append("eigenvalue and polished routes differ by %.2e" % route_dev.max())
    residual = 0.0
    mult0 = multiplicity_clusters(pol, 1e-6)
    for x, m0 in zip(pol, mult0):
        if m0 > 1:
            continue          # a multiple root: Newton converges linearly, the tolerance says so
        d, dp = _products(x, ps)
        nn, np_ = _products(x, zs)
        fp = dp + K * np_
        residual = max(residual, abs(d + K * nn) / abs(fp) / abs(x) if fp != 0 else math.inf)
    if residual > 1e-13:
        problems.append("polished poles not converged: Newton step %.2e relative" % residual)
    if "analytic_poles" in case:
        an = np.array([complex(a, b) for a, b in case["analytic_poles"]])
        an = np.concatenate([an, an.conj()]) if an.size * 2 == pol.size else an
        d = max(min(abs(p - a) / abs(a) for p in pol) for a in an)
        entry["analytic_pole_deviation"] = float(d)
        if d > max(1e-12, float(np.max(tol)) / 10):
            problems.append("analytic poles disagree: %.2e" % d)
    order = np.lexsort((pol.imag, pol.real))
    entry["expected"] = {
        "stable": stable,
        "closed_loop_poles": [[float(pol[i].real), float(pol[i].imag)] for i in order],
        "pole_tolerance_rel": [float(tol[i]) for i in order],
        "pole_condition": [float(kappa[i]) if math.isfinite(kappa[i]) else None for i in order],
    }
    entry["details"] = {"eigen_vs_newton_max_rel": float(route_dev.max()), "newton_step_rel": float(residual),
                        "max_pole_condition": float(kappa.max()) if math.isfinite(kappa.max()) else None}

    # open-loop plant poles with their tolerance
    tol_ol = []
    if "denominator" in case["plant"]:
        den = np.array(case["plant"]["denominator"], float)
        mult = multiplicity_clusters(pg, 1e-12)
        for r, m in zip(pg, mult):
            if abs(r) == 0.0:
                tol_ol.append(0.0)    # trailing zero coefficients: split off exactly
            elif m > 1:
                # an m-fold factor (s - r)^m inside the polynomial: relative coefficient errors eps
                # move the roots to a circle of radius |r| (eps kappa_c)^(1/m), kappa_c the
                # coefficient condition of the factor (sum |binomial terms| / |r|^m = 2^m here).
                kc_ = np.polyval(np.abs(den), abs(r)) / (abs(r) ** m * abs(np.prod([x - r for x in pg if abs(x - r) > 1e-12 * abs(r)]) or 1.0))
                tol_ol.append(float(4.0 * (EPS * kc_) ** (1.0 / m)))
            else:
                tol_ol.append(float(max(1e-8, 1e3 * EPS * coefficient_condition(den, r))))
    else:
        tol_ol = [1e-12 if abs(r) > 0 else 0.0 for r in pg]
    oo = np.lexsort((pg.imag, pg.real))
    entry["expected"]["plant_poles"] = [[float(pg[i].real), float(pg[i].imag)] for i in oo]
    entry["expected"]["plant_pole_tolerance_rel"] = [tol_ol[i] for i in oo]

    T = float(case["plant"].get("delay_s", 0.0))
    m = margins(kc_total(case) * kg, np.concatenate([roots_of(case["compensator"], None)[1], zg]),
                np.concatenate([roots_of(case["compensator"], None)[2], pg]), T)
    for k in ("phase_margin_deg", "crossover_rad_s", "gain_increase_db", "gain_reduction_db", "gain_margin_db"):
        entry["expected"][k] = m[k]
    entry["expected"]["gain_crossovers"] = m["gain_crossovers"]
    entry["expected"]["phase_crossovers"] = m["phase_crossovers"]
    entry["tolerance"] = {"phase_margin_deg": 0.3, "gain_margin_db": 0.2, "crossover_rel": 1e-4}
    entry["details"]["frequency_grid"] = m["grid"]
    entry["expect"] = {"exit_code": 1 if case.get("expect_unstable") else None,
                       "warning": case.get("expect_warning")}
    return entry, problems


def kc_total(case):
    return roots_of(case["compensator"], None)[0]


def main():
    here = os.path.dirname(os.path.abspath(__file__))
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("-o", "--output", default=os.path.join(here, "stress_fixture.json"))
    args = ap.parse_args()
    t0 = time.time()
    out, failed = [], False
    for case in build_cases():
        t1 = time.time()
        entry, problems = analyse(case)
        out.append(entry)
        e = entry.get("expected")
        if e:
            print("%-32s %5.1fs stable=%s poles=%d max_kappa=%.3g eig_vs_newton=%.2e PM=%s GM=%s (inc %s red %s) wc=%s"
                  % (entry["name"], time.time() - t1, e["stable"], len(e["closed_loop_poles"]),
                     entry["details"]["max_pole_condition"] or math.inf, entry["details"]["eigen_vs_newton_max_rel"],
                     _f(e["phase_margin_deg"]), _f(e["gain_margin_db"]), _f(e["gain_increase_db"]),
                     _f(e["gain_reduction_db"]), _f(e["crossover_rad_s"])))
        else:
            print("%-32s expect exit 2 at %s" % (entry["name"], entry["expect"]["error_path"]))
        for p in problems:
            print("  PROBLEM: " + p, file=sys.stderr)
            failed = True
    doc = {"generator": SCRIPT_REL, "numpy_version": np.__version__, "scipy_version": scipy.__version__,
           "cases": out}
    text = json.dumps(doc, indent=1, sort_keys=True, allow_nan=False) + "\n"
    tmp = args.output + ".tmp"
    with open(tmp, "w") as f:
        f.write(text)
    os.replace(tmp, args.output)
    print("wrote %s (%d cases) in %.1f s" % (args.output, len(out), time.time() - t0))
    return 1 if failed else 0


def _f(x):
    return "null" if x is None else "%.6g" % x


if __name__ == "__main__":
    sys.exit(main())
