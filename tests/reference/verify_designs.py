#!/usr/bin/python3
"""Independent check of `polewright design` results with numpy/scipy.

    /usr/bin/python3 tests/reference/verify_designs.py RESULT.json [RESULT2.json ...]

Each RESULT.json is the output of `polewright design SPEC -o RESULT.json`.  For every
candidate with "meets": true, every plant in "plants" (nominal and variants) and every
requirement key of "requirements", the metric is recomputed here from scratch, following
docs/manual.md ("What the figures mean"), with the numerical building blocks of
make_fixtures.py (exact Pade coefficients, Newton-polished roots, step residues, error
constants).  Nothing is taken from the C++ code.

* Poles and step: Pade (n, n) of the delay, n = analysis.pade_order.  The step response is
  the exact residue expansion y(t) = y(inf) + sum c_i exp(p_i t) (and the same for u),
  sampled at >= 12 points per 1/|p| of the fastest live mode, every event (peak, 10/90 %
  crossings, last band exit, including a band exit at a peak between samples) refined by
  root finding on the exact expression; cross-checked against scipy.signal.lsim of the
  balanced closed-loop state space, which takes over if the residues are unreliable.
* Frequency figures: the exact exp(-jwT) on a dense log grid (extended so that asymptotic
  crossovers of very small or large gains are inside it, extra points at lightly damped
  roots, a linear grid for the delay), crossings refined with brentq; the zero-frequency
  phase crossing of a type-0 loop with L(0) < 0 and the high-frequency limit of a biproper
  loop count as phase crossovers (docs/manual.md).
* damping_ratio / natural_frequency_rad_s: the poles whose step share |c_i| / sum |c_j| is
  at least analysis.residue_share "matter"; gain_tolerance_pct scans the compensator gain
  factor k from 1 outwards in steps of 1 % (then bisection) within [0.01, 100] while the
  loop is stable and the poles that matter stay in result["region"].

Then:

  (a) the requirement bound must hold for the recomputed worst value over the plants
      (max over plants for a "max" bound, min for a "min" bound; both for keys with both);
  (b) the tool's worst value candidate["metrics"][key] must agree with the recomputed one.

Tolerances: overshoot 0.2 points; times 1 % relative; phase margin 0.3 deg; gain margin
0.2 dB; gain tolerance 2 points (it comes from a scan); every other figure 1 % relative.

Null values: a margin (phase_margin_deg, gain_margin_db) of null is unbounded (no
crossover); the recomputation must then find no crossover either, or a value that meets the
bound.  crossover_rad_s null means there is no gain crossover (counts as 0: meets a max bound,
fails a min bound); bandwidth_rad_s null means |T| never falls 3 dB (counts as unbounded);
steady_state_error null is an unbounded error; any other null is a missing figure (fails).

One line per (file, candidate, metric) check, then "N passed, M failed".  Exit status 1 if
any check failed or a file has no candidate with "meets": true; 77 when scipy is missing.
"""

import json
import math
import os
import sys
import warnings

try:
    import numpy as np
    from scipy import linalg, optimize, signal
except ImportError:                                    # pragma: no cover
    print("numpy/scipy missing: run with Debian's /usr/bin/python3 (python3-scipy)")
    sys.exit(77)

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import make_fixtures as mf                              # noqa: E402  (reused, not modified)

SAMPLES = 100001            # minimum step-response samples (lsim fallback: exactly this)
MAX_MODAL_SAMPLES = 4000000  # cap of the dense samples of the exact modal response
CHECK_SAMPLES = 20001       # lsim samples for the cross-check of the modal response
FREQ_POINTS = 100000        # log-spaced frequency grid points
DELAY_PHASE_STEP = 0.05     # rad of exp(-jwT) per step of the extra linear grid
DELAY_GRID_FLOOR = 1e-4     # linear delay grid runs up to where |L| stays below this
MAX_DELAY_POINTS = 4000000
GAIN_SCAN_MIN, GAIN_SCAN_MAX = 0.01, 100.0
GAIN_SCAN_RATIO = 1.01      # walk step of the gain-tolerance scan (then bisection)

KEYS = ("overshoot_pct", "settling_time_s", "rise_time_s", "steady_state_error",
        "phase_margin_deg", "gain_margin_db", "crossover_rad_s", "bandwidth_rad_s",
        "peak_effort", "peak_sensitivity", "damping_ratio", "natural_frequency_rad_s",
        "gain_tolerance_pct")
TIME_KEYS = ("overshoot_pct", "settling_time_s", "rise_time_s", "peak_effort")
POLE_KEYS = ("damping_ratio", "natural_frequency_rad_s", "gain_tolerance_pct")


def tolerance(key, ref):
    """Allowed absolute difference for metric `key` around the value `ref`."""
    if key == "overshoot_pct":
        return 0.2
    if key == "phase_margin_deg":
        return 0.3
    if key == "gain_margin_db":
        return 0.2
    if key == "gain_tolerance_pct":
        return 2.0
    return max(0.01 * abs(ref), 1e-9)


# --------------------------------------------------------------------------
# Loop assembly
# --------------------------------------------------------------------------

def zpk_only(obj):
    """The zeros/poles/gain form of a compensator object (ignoring numerator/denominator)."""
    if "zeros" in obj or "poles" in obj or "gain" in obj:
        return {k: obj[k] for k in ("gain", "zeros", "poles") if k in obj}
    return obj


def poly_close(a, b, rtol=1e-6):
    """Coefficient-wise agreement: each within rtol of itself (plus a floor of 1e-9 of the
    largest coefficient, for coefficients that cancel)."""
    a = np.trim_zeros(np.asarray(a, float), "f")
    b = np.trim_zeros(np.asarray(b, float), "f")
    if a.size != b.size:
        return False
    floor = 1e-9 * max(np.max(np.abs(a)), np.max(np.abs(b)), 1e-300)
    return bool(np.all(np.abs(a - b) <= rtol * np.maximum(np.abs(a), np.abs(b)) + floor))


class Loop:
    """L = C G exp(-sT); the Pade (n, n) approximant P/Q for poles and step."""

    def __init__(self, comp, plant, pade_order):
        self.Nc, self.Dc = mf.tf_from_spec(zpk_only(comp))
        self.Ng, self.Dg = mf.tf_from_spec(plant)
        self.T = float(plant.get("delay_s", 0.0) or 0.0)
        self.P, self.Q = mf.pade_delay(self.T, pade_order)
        self.numL = np.polymul(self.Nc, self.Ng)
        self.denL = np.polymul(self.Dc, self.Dg)

    def char(self, k=1.0):
        c = np.polyadd(np.polymul(self.denL, self.Q), k * np.polymul(self.numL, self.P))
        return np.trim_zeros(c, "f")

    def ynum(self, k=1.0):
        return k * np.polymul(self.numL, self.P)

    def unum(self, k=1.0):
        return k * np.polymul(np.polymul(self.Nc, self.Dg), self.Q)


def roots(poly):
    try:
        return mf.polished_roots(poly)
    except (RuntimeError, FloatingPointError, ValueError):
        r = np.roots(np.asarray(poly, float))
        return np.array(sorted(r, key=lambda c: (c.real, c.imag)))


def pole_analysis(loop, k, share):
    """Closed-loop poles at gain scale k, step residues, shares, the 'matters' flags."""
    char = loop.char(k)
    poles = roots(char)
    out = {"char": char, "poles": poles, "stable": bool(poles.size == 0 or np.all(poles.real < 0.0))}
    if not out["stable"]:
        return out
    ynum = loop.ynum(k)
    with np.errstate(all="ignore"):
        cres = mf.residues_step(ynum, char, poles)
    mag = np.abs(cres)
    tot = float(np.sum(mag))
    if not np.all(np.isfinite(mag)) or tot == 0.0:
        shares = np.ones(poles.size)          # repeated poles: count every pole
    else:
        shares = mag / tot
    out["residues"] = cres
    out["shares"] = shares
    out["matters"] = shares >= share
    out["yf"] = float(ynum[-1] / char[-1])
    return out


def damping(p):
    wn = abs(p)
    return -p.real / wn if wn > 0.0 else 1.0


def dominant(pa):
    """Slowest-decaying pole that matters (None if none does)."""
    idx = [i for i in range(pa["poles"].size) if pa["matters"][i]]
    if not idx:
        return None
    return pa["poles"][max(idx, key=lambda i: pa["poles"][i].real)]


def region_bounds(region):
    def num(key):
        v = region.get(key) if region else None
        return float(v) if isinstance(v, (int, float)) and not isinstance(v, bool) else None
    zmin = num("min_damping_ratio") or 0.0
    smin = num("min_decay_rate_per_s") or 0.0
    wmin = num("min_natural_frequency_rad_s") or 0.0
    wmax = num("max_natural_frequency_rad_s")
    if wmax is not None and wmax <= 0.0:
        wmax = None
    return zmin, smin, wmin, wmax


def inside_region(pa, bounds):
    if not pa["stable"]:
        return False
    zmin, smin, wmin, wmax = bounds
    for i, p in enumerate(pa["poles"]):
        if pa["matters"][i] and (damping(p) < zmin or -p.real < smin):
            return False
    d = dominant(pa)
    if d is None:
        return True
    if abs(d) < wmin:
        return False
    if wmax is not None and abs(d) > wmax:
        return False
    return True


def gain_tolerance(loop, share, bounds):
    """100 min(hi - 1, 1 - lo): walk k from 1 outwards (ratio 1.01) to the first k outside
    the region or unstable, bisect that step in log k; limits [0.01, 100]."""
    def ok(k):
        return inside_region(pole_analysis(loop, k, share), bounds)
    if not ok(1.0):
        return 0.0, None, None

    def edge(limit):
        up = limit > 1.0
        good = 1.0
        while True:
            nxt = good * GAIN_SCAN_RATIO if up else good / GAIN_SCAN_RATIO
            if (up and nxt >= limit) or (not up and nxt <= limit):
                nxt = limit
            if not ok(nxt):
                a, b = math.log(good), math.log(nxt)
                for _ in range(30):
                    m = 0.5 * (a + b)
                    if ok(math.exp(m)):
                        a = m
                    else:
                        b = m
                return math.exp(a)
            good = nxt
            if good == limit:
                return limit
    hi = edge(GAIN_SCAN_MAX)
    lo = edge(GAIN_SCAN_MIN)
    return 100.0 * min(hi - 1.0, 1.0 - lo), lo, hi


# --------------------------------------------------------------------------
# Time domain
# --------------------------------------------------------------------------

def simulate(ynum, unum, char, horizon, samples):
    n = len(char)
    nums = np.vstack([np.concatenate([np.zeros(n - len(ynum)), ynum]),
                      np.concatenate([np.zeros(n - len(unum)), unum])])
    A, B, C, D = signal.tf2ss(nums, char)
    Ab, Tb = linalg.matrix_balance(A, permute=False)
    Bb = linalg.solve(Tb, B)
    Cb = C @ Tb
    t = np.linspace(0.0, horizon, samples)
    _, yout, _ = signal.lsim((Ab, Bb, Cb, D), np.ones_like(t), t)
    return t, yout[:, 0], yout[:, 1]


class Modal:
    """Exact step response from the residue expansion v(t) = v(inf) + sum c_i exp(p_i t)."""

    def __init__(self, poles, cres, vf):
        self.poles, self.c, self.vf = poles, cres, vf
        self.cd = cres * poles                       # derivative terms

    def __call__(self, t):
        t = np.atleast_1d(np.asarray(t, float))
        return self.vf + (np.exp(np.outer(t, self.poles)) @ self.c).real

    def deriv(self, t):
        t = np.atleast_1d(np.asarray(t, float))
        return (np.exp(np.outer(t, self.poles)) @ self.cd).real

    def sample(self, t, chunk=100000):
        v = np.empty(t.size)
        d = np.empty(t.size)
        for a in range(0, t.size, chunk):
            E = np.exp(np.outer(t[a:a + chunk], self.poles))
            v[a:a + chunk] = self.vf + (E @ self.c).real
            d[a:a + chunk] = (E @ self.cd).real
        return v, d


def _root(f, a, b):
    fa, fb = f(a), f(b)
    if fa == 0.0:
        return a
    if fb == 0.0 or fa * fb > 0.0:
        return b
    return optimize.brentq(f, a, b, xtol=1e-300, rtol=1e-15, maxiter=200)


def _peak(f, t, v, k):
    """Refined maximum of the scalar function f near sample k of (t, v)."""
    if k == 0 or k == t.size - 1:
        return t[k], v[k]
    r = optimize.minimize_scalar(lambda x: -f(x), bounds=(t[k - 1], t[k + 1]), method="bounded",
                                 options={"xatol": 1e-12 * max(t[k + 1], 1e-300), "maxiter": 500})
    fx = -r.fun
    return (r.x, fx) if fx >= v[k] else (t[k], v[k])


def modal_grid(ym, um, horizon):
    """Sample times: SAMPLES uniform points, plus, while a mode is still alive (its term above
    1e-12 of the response scale), at least 12 points per 1/|p| of the fastest live mode."""
    poles = ym.poles
    sy = abs(ym.vf) + float(np.sum(np.abs(ym.c)))
    su = abs(um.vf) + float(np.sum(np.abs(um.c)))
    w = np.maximum(np.abs(ym.c) / max(sy, 1e-300), np.abs(um.c) / max(su, 1e-300))
    alive = np.where(w > 1e-12, np.log(np.maximum(w, 1e-300) / 1e-12) / np.maximum(-poles.real, 1e-300), 0.0)
    alive = np.minimum(alive, horizon)
    parts = [np.linspace(0.0, horizon, SAMPLES)]
    edges = sorted(set([0.0] + [float(a) for a in alive if a > 0.0]))
    budget = MAX_MODAL_SAMPLES
    for a, b in zip(edges[:-1], edges[1:]):
        live = np.abs(poles[alive > a])
        if live.size == 0:
            continue
        n = int(min(budget, math.ceil((b - a) * 12.0 * float(np.max(live))) + 1))
        if n > SAMPLES // 10:
            parts.append(np.linspace(a, b, n))
            budget -= n
        if budget <= 0:
            break
    t = np.unique(np.concatenate(parts))
    return t, budget <= 0


def modal_time_metrics(ym, um, yf, uf, horizon, band):
    """Time figures from the exact modal response, sampled densely (modal_grid), every event
    refined on the exact expression."""
    t, capped = modal_grid(ym, um, horizon)
    n = t.size
    y, yd = ym.sample(t)
    u, _ = um.sample(t)
    res = {"_samples": n, "_capped": capped}
    sgn = 1.0 if yf > 0 else -1.0
    ys, yfs = sgn * y, abs(yf)
    k = int(np.argmax(ys))
    ypk = _peak(lambda x: sgn * ym(x)[0], t, ys, k)[1]
    res["overshoot_pct"] = max(0.0, 100.0 * (ypk - yfs) / yfs)

    def first_up(level):
        idx = np.nonzero(ys >= level)[0]
        if idx.size == 0:
            return None
        i = idx[0]
        if i == 0:
            return 0.0
        return _root(lambda x: sgn * ym(x)[0] - level, t[i - 1], t[i])
    t10, t90 = first_up(0.1 * yfs), first_up(0.9 * yfs)
    res["rise_time_s"] = None if (t10 is None or t90 is None) else t90 - t10

    lim = band * yfs
    e = np.abs(y - yf)
    out = np.nonzero(e > lim)[0]
    last = out[-1] if out.size else -1
    # extrema of y after the last sample outside the band: a peak between samples may leave it
    flips = np.nonzero(np.sign(yd[:-1]) * np.sign(yd[1:]) < 0)[0]
    cand_exit = None
    for j in flips[::-1]:
        if j < last:
            break
        if max(e[j], e[j + 1]) < 0.9 * lim:      # sampled 12 per 1/|p|: a peak is within 0.4 %
            continue
        te = _root(lambda x: ym.deriv(x)[0], t[j], t[j + 1])
        if abs(ym(te)[0] - yf) > lim:
            cand_exit = (te, j + 1)
            break
    if last < 0 and cand_exit is None:
        res["settling_time_s"] = 0.0
    elif last == t.size - 1:
        res["settling_time_s"] = None
    else:
        if cand_exit is not None and cand_exit[0] > t[last]:
            a, j = cand_exit
            # find the first sample after the extremum inside the band
            inside = np.nonzero(e[j:] <= lim)[0]
            b = t[j + inside[0]] if inside.size else t[-1]
        else:
            a, b = t[last], t[last + 1]
        s_ = 1.0 if ym(a)[0] > yf else -1.0
        ts = _root(lambda x: s_ * (ym(x)[0] - yf) - lim, a, b)
        res["settling_time_s"] = ts
        slope = abs(ym.deriv(ts)[0])
        res["_settling_condition"] = lim / (slope * ts) if slope > 0 and ts > 0 else math.inf
    au = np.abs(u)
    k = int(np.argmax(au))
    if k == t.size - 1:
        res["peak_effort"] = max(au[k], abs(uf))
    else:
        res["peak_effort"] = _peak(lambda x: abs(um(x)[0]), t, au, k)[1]
    return res


def lsim_time_metrics(t, y, u, yf, uf, band):
    """Fallback: the same figures from lsim samples (linear / parabolic interpolation)."""
    res = {"_samples": t.size}
    sgn = 1.0 if yf > 0 else -1.0
    ys, yfs = sgn * y, abs(yf)
    k = int(np.argmax(ys))
    ypk = ys[k] if k in (0, len(t) - 1) else mf.parabola_peak(t, ys, k)[1]
    res["overshoot_pct"] = max(0.0, 100.0 * (ypk - yfs) / yfs)
    t10 = mf.first_crossing_up(t, ys, 0.1 * yfs)
    t90 = mf.first_crossing_up(t, ys, 0.9 * yfs)
    res["rise_time_s"] = None if (t10 is None or t90 is None) else t90 - t10
    err = np.abs(y - yf)
    lim = band * yfs
    out = np.nonzero(err > lim)[0]
    if out.size == 0:
        res["settling_time_s"] = 0.0
    elif out[-1] == len(t) - 1:
        res["settling_time_s"] = None
    else:
        i = out[-1]
        res["settling_time_s"] = t[i] + (err[i] - lim) / (err[i] - err[i + 1]) * (t[i + 1] - t[i])
    au = np.abs(u)
    k = int(np.argmax(au))
    if k == 0:
        res["peak_effort"] = au[0]
    elif k == len(t) - 1:
        res["peak_effort"] = max(au[k], abs(uf))
    else:
        res["peak_effort"] = mf.parabola_peak(t, au, k)[1]
    return res


def time_metrics(loop, pa, band):
    """overshoot, rise, settling, peak effort of the unit step (Pade loop).

    Primary: the exact residue expansion of y and u, densely sampled, each event refined by
    root finding.  It is cross-checked against scipy.signal.lsim of the balanced closed-loop
    state space; if the two disagree (e.g. nearly repeated poles spoil the residues), the
    lsim samples are used instead and a note is printed."""
    char, poles, yf = pa["char"], pa["poles"], pa["yf"]
    ynum, unum = loop.ynum(), loop.unum()
    uf = float(unum[-1] / char[-1])
    horizon = mf.choose_horizon(pa["residues"], poles, yf, band)
    with np.errstate(all="ignore"):
        cu = mf.residues_step(unum, char, poles)
    ym = Modal(poles, pa["residues"], yf)
    um = Modal(poles, cu, uf)
    t, y, u = simulate(ynum, unum, char, horizon, CHECK_SAMPLES)
    with np.errstate(all="ignore"):
        ok = bool(np.all(np.isfinite(pa["residues"])) and np.all(np.isfinite(cu)))
        if ok:
            dy = float(np.max(np.abs(ym.sample(t)[0] - y)))
            du = float(np.max(np.abs(um.sample(t)[0] - u)))
            scale_y = max(abs(yf), float(np.max(np.abs(y))))
            scale_u = max(abs(uf), float(np.max(np.abs(u))))
            ok = dy <= 1e-6 * scale_y and du <= 1e-6 * scale_u
    if ok:
        res = modal_time_metrics(ym, um, yf, uf, horizon, band)
        res["_method"] = "residues"
    else:
        t, y, u = simulate(ynum, unum, char, horizon, SAMPLES)
        res = lsim_time_metrics(t, y, u, yf, uf, band)
        res["_method"] = "lsim"
    res["_horizon"] = horizon
    return res


# --------------------------------------------------------------------------
# Frequency domain (exact delay)
# --------------------------------------------------------------------------

def freq_grid(loop):
    mags, light = [], []
    for p in (loop.numL, loop.denL):
        if len(np.trim_zeros(p, "f")) > 1:
            for r in np.roots(np.trim_zeros(p, "f")):
                if abs(r) > 0.0:
                    mags.append(abs(r))
                    z = -r.real / abs(r)
                    if r.imag > 0 and abs(z) < 0.3:
                        light.append((abs(r), abs(z)))
    T = loop.T
    if T > 0.0:
        mags.append(1.0 / T)
    if not mags:
        mags = [1.0]
    lo = min(mags) / 1e3
    hi = max(mags) * 1e3
    # a gain crossover on a low- or high-frequency asymptote (very small or large gains) must
    # lie inside the grid: |L| ~ |K_N| / w^N below every root, |L| ~ |K_inf| / w^r above
    typ, kconst = mf.loop_type_and_constant(loop.numL, loop.denL)
    if typ >= 1 and kconst != 0.0:
        lo = min(lo, abs(kconst) ** (1.0 / typ) / 100.0)
    nt, dt = np.trim_zeros(loop.numL, "f"), np.trim_zeros(loop.denL, "f")
    r = dt.size - nt.size
    if r >= 1 and nt[0] != 0.0:
        hi = max(hi, abs(nt[0] / dt[0]) ** (1.0 / r) * 100.0)
    w = np.logspace(math.log10(lo), math.log10(hi), FREQ_POINTS)
    parts = [w]
    for wn, z in light:
        parts.append(np.linspace(wn * max(0.5, 1.0 - 20.0 * z), wn * min(1.5, 1.0 + 20.0 * z), 20001))
    if T > 0.0:
        # linear grid: exp(-jwT) turns at most DELAY_PHASE_STEP between points, up to where
        # |L| stays below DELAY_GRID_FLOOR (phase crossovers there give gain factors > 80 dB)
        mag = np.abs(np.polyval(loop.numL, 1j * w) / np.polyval(loop.denL, 1j * w))
        big = np.nonzero(mag >= DELAY_GRID_FLOOR)[0]
        top = hi if big.size == 0 or big[-1] == w.size - 1 else min(hi, 2.0 * w[big[-1]])
        npts = int(min(MAX_DELAY_POINTS, max(2, math.ceil(top * T / DELAY_PHASE_STEP))))
        parts.append(np.linspace(lo, top, npts))
    w = np.unique(np.concatenate(parts))
    return w[(w >= lo) & (w <= hi)]


def freq_metrics(loop, T0):
    num, den, T = loop.numL, loop.denL, loop.T
    w = freq_grid(loop)
    L = mf.make_L(num, den, T)
    Lw = L(w)
    res = {}
    brent = mf.brent

    lg = np.log(np.abs(Lw))

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
        gc.append((wc, math.degrees(np.angle(-L(wc)))))
    res["gain_crossovers"] = gc
    res["phase_margin_deg"] = min(p for _, p in gc) if gc else None
    res["crossover_rad_s"] = max(x for x, _ in gc) if gc else None

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
    typ, kconst = mf.loop_type_and_constant(num, den)
    if typ == 0 and kconst < 0.0:
        pc.append((0.0, 1.0 / abs(kconst)))        # zero-frequency limit (docs/manual.md)
    nt, dt = np.trim_zeros(num, "f"), np.trim_zeros(den, "f")
    if nt.size == dt.size and nt[0] != 0.0:
        linf = nt[0] / dt[0]
        if T > 0.0 or linf < 0.0:
            pc.append((math.inf, 1.0 / abs(linf)))  # biproper: high-frequency limit
    res["phase_crossovers"] = pc
    up = [k for _, k in pc if k >= 1.0]
    dn = [k for _, k in pc if k < 1.0]
    gi = 20.0 * math.log10(min(up)) if up else None
    gr = -20.0 * math.log10(max(dn)) if dn else None
    cands = [x for x in (gi, gr) if x is not None]
    res["gain_margin_db"] = min(cands) if cands else None

    Tw = Lw / (1.0 + Lw)
    thr = abs(T0) / math.sqrt(2.0)
    res["bandwidth_rad_s"] = None
    if thr > 0.0:
        hb = np.log(np.abs(Tw)) - math.log(thr)

        def fbw(x):
            v = L(x)
            return math.log(abs(v / (1.0 + v))) - math.log(thr)
        below = np.nonzero(hb < 0.0)[0]
        if below.size and below[0] > 0:
            i = below[0]
            res["bandwidth_rad_s"] = w[i] if hb[i - 1] == 0.0 else brent(fbw, w[i - 1], w[i])
        elif below.size:
            res["bandwidth_rad_s"] = float("nan")   # below the level at the grid start

    Sw = np.abs(1.0 / (1.0 + Lw))
    k = int(np.argmax(Sw))
    lw = np.log(w)
    if 0 < k < w.size - 1:
        r = optimize.minimize_scalar(lambda x: -abs(1.0 / (1.0 + L(math.exp(x)))),
                                     bounds=(lw[k - 1], lw[k + 1]), method="bounded",
                                     options={"xatol": 1e-13, "maxiter": 500})
        res["peak_sensitivity"] = max(-r.fun, Sw[k])
    else:
        res["peak_sensitivity"] = Sw[k]
    return res


# --------------------------------------------------------------------------
# All figures of one (compensator, plant)
# --------------------------------------------------------------------------

def plant_metrics(comp, plant, keys, opts):
    loop = Loop(comp, plant, opts["pade_order"])
    pa = pole_analysis(loop, 1.0, opts["share"])
    m = {"_stable": pa["stable"], "_poles": pa["poles"]}
    if "steady_state_error" in keys:
        m["steady_state_error"] = mf.steady_state_error(loop.numL, loop.denL, opts["ss_input"])
    if any(k in keys for k in ("phase_margin_deg", "gain_margin_db", "crossover_rad_s",
                               "bandwidth_rad_s", "peak_sensitivity")):
        # computed for unstable loops too (they fail anyway); T(0) from L(0), exact
        typ, kconst = mf.loop_type_and_constant(loop.numL, loop.denL)
        T0 = 1.0 if typ > 0 else (0.0 if typ < 0 or kconst == -1.0 else kconst / (1.0 + kconst))
        m.update(freq_metrics(loop, T0))
    if not pa["stable"]:
        return m
    if any(k in keys for k in TIME_KEYS) and pa["yf"] != 0.0 and math.isfinite(pa["yf"]):
        m.update(time_metrics(loop, pa, opts["band"]))
    mat = [p for i, p in enumerate(pa["poles"]) if pa["matters"][i]]
    m["damping_ratio"] = min(damping(p) for p in mat) if mat else None
    d = dominant(pa)
    m["natural_frequency_rad_s"] = abs(d) if d is not None else None
    m["_matters"] = [(complex(p), float(s)) for p, s in zip(pa["poles"], pa["shares"])]
    if "gain_tolerance_pct" in keys:
        m["gain_tolerance_pct"], m["_gain_lo"], m["_gain_hi"] = gain_tolerance(
            loop, opts["share"], opts["region"])
    return m


def as_bound_value(key, v):
    """Map a (recomputed or reported) figure to the number a bound is tested on; None
    stays None only for a missing figure."""
    if v is None:
        if key in ("phase_margin_deg", "gain_margin_db", "bandwidth_rad_s", "steady_state_error"):
            return math.inf
        if key == "crossover_rad_s":
            return 0.0
        return None
    v = float(v)
    if math.isnan(v):
        return None
    return v


def fmt(v):
    if v is None:
        return "null"
    if isinstance(v, float) and math.isinf(v):
        return "unbounded" if v > 0 else "-unbounded"
    return "%.6g" % v


def bounds_of(req):
    out = []
    if isinstance(req, dict):
        for b in ("max", "min"):
            if isinstance(req.get(b), (int, float)) and not isinstance(req.get(b), bool):
                out.append((b, float(req[b])))
    return out


def check_candidate(fname, cand, doc, opts, report):
    label = "%s cand#%s %s" % (fname, cand.get("rank", "?"),
                               "+".join(str(x) for x in (cand.get("structure") or [])) or "-")
    comp = cand.get("compensator", {})
    reqs = doc.get("requirements", {})
    keys = [k for k in reqs if k in KEYS]
    unknown = [k for k in reqs if k not in KEYS]
    for k in unknown:
        report(False, "%s %s: requirement key not known to the verifier" % (label, k))

    # the two forms of the compensator must describe the same transfer function
    if "numerator" in comp and "denominator" in comp:
        try:
            n1, d1 = mf.tf_from_spec(zpk_only(comp))
            n2 = np.asarray(comp["numerator"], float)
            d2 = np.asarray(comp["denominator"], float)
            s = d2[0] / d1[0] if d1[0] != 0 else 1.0
            ok = poly_close(n1 * s, n2) and poly_close(d1 * s, d2)
        except (ValueError, KeyError, TypeError, IndexError):
            ok = False
        report(ok, "%s compensator: zeros/poles/gain %s numerator/denominator"
               % (label, "match" if ok else "DO NOT match"))

    per_plant = []
    for i, plant in enumerate(doc["plants"]):
        try:
            per_plant.append(plant_metrics(comp, plant, keys, opts))
        except Exception as e:        # a crash is a failed check, not a verifier abort
            report(False, "%s plant %d: recomputation failed: %s: %s" % (label, i, type(e).__name__, e))
            return
    stable = all(m["_stable"] for m in per_plant)
    bad = [i for i, m in enumerate(per_plant) if not m["_stable"]]
    if stable:
        report(True, "%s stability: closed loop stable for all %d plants" % (label, len(per_plant)))
    else:
        report(False, "%s stability: closed loop UNSTABLE for plant(s) %s of %d (plant %d poles %s)"
               % (label, bad, len(per_plant), bad[0], np.array2string(per_plant[bad[0]]["_poles"], precision=6, max_line_width=100000)))
    for i, m in enumerate(per_plant):
        if m.get("_method") == "lsim":
            print("  note: %s plant %d: residue expansion unreliable, time figures from lsim (%d samples)"
                  % (label, i, m["_samples"]))
        elif m.get("_capped"):
            print("  note: %s plant %d: step sampling capped at %d points" % (label, i, MAX_MODAL_SAMPLES))

    tool_metrics = cand.get("metrics", {}) or {}
    for key in keys:
        bnds = bounds_of(reqs[key])
        vals = [as_bound_value(key, m.get(key)) for m in per_plant]
        rows = []
        ok = stable and bool(bnds)
        worst = {}
        for b, lim in bnds:
            if any(v is None for v in vals):
                wi = next(i for i, v in enumerate(vals) if v is None)
                wv = None
            elif b == "max":
                wi = int(np.argmax(vals))
                wv = vals[wi]
            else:
                wi = int(np.argmin(vals))
                wv = vals[wi]
            worst[b] = (wv, wi)
            tol = tolerance(key, lim)
            met = wv is not None and ((wv <= lim + tol) if b == "max" else (wv >= lim - tol))
            ok = ok and met
            rows.append("%s %s: worst %s (plant %d) %s" % (b, fmt(lim), fmt(wv), wi, "ok" if met else "VIOLATED"))
        # agreement with the tool's reported worst value
        has = key in tool_metrics
        tv_raw = tool_metrics.get(key)
        tv = as_bound_value(key, tv_raw) if has else None
        agree = False
        why = ""
        if not has:
            why = "tool reports no value"
        elif not stable:
            why = "(not compared: a closed loop is unstable)"
        else:
            for b, (wv, wi) in worst.items():
                lim = dict(bnds)[b]
                if tv_raw is None and key in ("phase_margin_deg", "gain_margin_db"):
                    # unbounded margin: ours must be unbounded too, or meet the bound
                    if wv is not None and (math.isinf(wv) or wv >= lim - tolerance(key, lim)):
                        agree = True
                elif tv is None or wv is None:
                    agree = agree or (tv is None and wv is None)
                elif math.isinf(tv) or math.isinf(wv):
                    agree = agree or (tv == wv)
                else:
                    agree = agree or abs(tv - wv) <= tolerance(key, wv)
            if not agree:
                why = "DISAGREES"
        ok = ok and agree
        extra = ""
        if key == "settling_time_s" and not agree:
            conds = [m.get("_settling_condition") for m in per_plant if m.get("_settling_condition")]
            if conds and max(conds) > 20:
                extra = " (settling ill-conditioned: band exit near an extremum, condition %.3g)" % max(conds)
        if key == "gain_tolerance_pct":
            extra += " [scan lo..hi per plant: %s]" % ", ".join(
                "%s..%s" % (fmt(m.get("_gain_lo")), fmt(m.get("_gain_hi"))) for m in per_plant)
        report(ok, "%s %s: %s; tool %s%s%s; per plant [%s]"
               % (label, key, "; ".join(rows), fmt(tv_raw) if has else "-", " " + why if why else " agrees",
                  extra, ", ".join(fmt(m.get(key)) for m in per_plant)))


def options_of(doc):
    an = doc.get("analysis", {}) or {}
    reqs = doc.get("requirements", {}) or {}
    st = reqs.get("settling_time_s", {}) or {}
    if "band_pct" in st:
        band = float(st["band_pct"]) / 100.0
    elif isinstance(an.get("settling_band"), (int, float)):
        band = float(an["settling_band"])
    else:
        band = 0.02
    if isinstance(an.get("residue_share"), (int, float)):
        share = float(an["residue_share"])
    elif isinstance(an.get("residue_share_pct"), (int, float)):
        share = float(an["residue_share_pct"]) / 100.0
    else:
        share = 0.02
    return {
        "pade_order": int(an.get("pade_order", 6) or 6),
        "band": band,
        "share": share,
        "ss_input": (reqs.get("steady_state_error", {}) or {}).get("input", "step"),
        "region": region_bounds(doc.get("region", {}) or {}),
    }


def main(argv):
    if len(argv) < 2:
        print(__doc__.strip().split("\n")[2].strip())
        return 2
    warnings.simplefilter("ignore", RuntimeWarning)
    counts = [0, 0]
    any_file_bad = False

    def report(ok, line):
        counts[0 if ok else 1] += 1
        print(("PASS " if ok else "FAIL ") + line)
        sys.stdout.flush()

    for path in argv[1:]:
        fname = os.path.basename(path)
        try:
            with open(path) as f:
                doc = json.load(f)
        except (OSError, ValueError) as e:
            report(False, "%s: cannot read result: %s" % (fname, e))
            any_file_bad = True
            continue
        cands = doc.get("candidates") or []
        met = [c for c in cands if c.get("meets") is True]
        if not isinstance(doc.get("plants"), list) or not doc["plants"]:
            report(False, "%s: result has no \"plants\" list" % fname)
            any_file_bad = True
            continue
        if not met:
            viol = "; ".join("rank %s violations %s" % (c.get("rank"), json.dumps(c.get("violations")))
                             for c in cands[:5])
            report(False, "%s: no candidate with \"meets\": true (status %s, %d candidates%s)"
                   % (fname, doc.get("status"), len(cands), ": " + viol if viol else ""))
            any_file_bad = True
            continue
        status_ok = doc.get("status") == "met"
        report(status_ok, "%s status: %s with %d of %d candidates meeting"
               % (fname, doc.get("status"), len(met), len(cands)))
        opts = options_of(doc)
        for c in met:
            check_candidate(fname, c, doc, opts, report)
    print("%d passed, %d failed" % (counts[0], counts[1]))
    return 1 if (counts[1] or any_file_bad) else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
