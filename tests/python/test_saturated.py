"""polewright.saturated_response: the loop with a limited actuator, against references outside it.

References:
- scipy.integrate.solve_ivp (DOP853, rtol 1e-11) of the same nonlinear loop written here from
  the plant's scipy.signal.zpk2ss realisation and the compensator split by hand into Ki / s + C0;
- closed forms for a first-order plant with a PI held at its upper limit (worked by hand below).
"""
import math
import unittest

import numpy as np
from scipy import integrate, optimize, signal

import pw_support  # noqa: F401  (sets up the module path check)
import polewright

# A dosing pump: pump command (0..1) to flow, one lag; a PI in service. Invented demo data.
DOSING_PUMP = {
    "name": "dosing pump, command to flow",
    "plant": {"gain": 3.125, "zeros": [], "poles": [-1.25]},  # 2.5 / (0.8 s + 1) = 3.125 / (s + 1.25)
    "requirements": {"overshoot_pct": {"max": 10}},
    "current": {"gain": 1.6, "zeros": [-2], "poles": [0]},  # Kp = 1.6, Ki = 3.2
}

# A kiln exhaust fan (the module tests' demo plant) with a lead-lag PI: C0 has dynamics of its own.
KILN_FAN = {
    "name": "kiln exhaust fan, drive command to fan speed",
    "plant": {"numerator": [40], "denominator": [0.05, 1.2, 4]},
    "requirements": {"overshoot_pct": {"max": 10}},
    "current": {"gain": 3, "zeros": [-3, -8], "poles": [0, -40]},
}


def plant_ss(spec):
    p = spec["plant"]
    if "numerator" in p:
        return signal.tf2ss(p["numerator"], p["denominator"])
    return signal.zpk2ss(p["zeros"], p["poles"], p["gain"])


def split_pi(comp):
    """C = k prod(s - z) / (s prod(s - p)) as Ki / s + C0(s), C0 as a state space (by partial fractions)."""
    num = comp["gain"] * np.atleast_1d(np.poly(comp["zeros"]))
    rest = [p for p in comp["poles"] if p != 0]
    den = np.atleast_1d(np.poly(rest))
    ki = np.polyval(num, 0.0) / np.polyval(den, 0.0)
    m = max(len(num), len(den))
    diff = np.pad(num, (m - len(num), 0)) - ki * np.pad(den, (m - len(den), 0))
    c0_num = diff[:-1]  # divided by s
    if len(rest) == 0:
        return ki, (np.zeros((0, 0)), np.zeros((0, 1)), np.zeros((1, 0)), np.array([[c0_num[-1]]]))
    return ki, signal.tf2ss(c0_num, den)


def reference_loop(spec, umin, umax, anti_windup="none", tt=None, r=1.0, load=0.0, rate=None, horizon=5.0, n=2001,
                   r0=0.0):
    """solve_ivp of the loop: xc' = Ac xc + Bc e, xi' = Ki e (+ (u - v)/Tt | frozen), xg' = Ag xg + Bg (u + d).

    With a rate limit the actuator is a state driven at +-rate toward sat(v), with a fast tracking
    gain in between (u' = clip(K (sat(v) - u), -rate, rate), K = 1e5): an ODE form of the ideal limiter.
    With r0 the loop starts at rest holding y = r0 (a plant without integrators): u0 = r0 / G(0),
    xg = -Ag^-1 Bg u0, xc = 0 (e = 0 there), xi = u0 - Cc xc = u0 (worked by hand for this layout).
    """
    Ag, Bg, Cg, Dg = plant_ss(spec)
    ki, (Ac, Bc, Cc, Dc) = split_pi(spec["current"])
    nc, ng = Ac.shape[0], Ag.shape[0]

    def signals(x):
        xc, xi, xg = x[:nc], x[nc], x[nc + 1:nc + 1 + ng]
        y = float(Cg @ xg)
        e = r - y
        v = float(Cc @ xc) + xi + float(Dc[0, 0]) * e if nc else xi + float(Dc[0, 0]) * e
        if rate is None:
            u = min(max(v, umin), umax)
        else:
            u = x[-1]
        return xc, xg, y, e, v, u

    def rhs(t, x):
        xc, xg, y, e, v, u = signals(x)
        dxc = (Ac @ xc + Bc[:, 0] * e) if nc else np.zeros(0)
        dxi = ki * e
        limited = abs(u - v) > 1e-12 * max(abs(umin), abs(umax))
        if anti_windup == "back_calculation":
            dxi += (u - v) / tt
        elif anti_windup == "conditional" and limited and ki * e * (v - u) > 0:
            dxi = 0.0
        dxg = Ag @ xg + Bg[:, 0] * (u + load)
        parts = [dxc, [dxi], dxg]
        if rate is not None:
            target = min(max(v, umin), umax)
            parts.append([min(max(1e5 * (target - u), -rate), rate)])
        return np.concatenate(parts)

    x0 = np.zeros(nc + 1 + ng + (1 if rate is not None else 0))
    if rate is not None:
        x0[-1] = min(max(0.0, umin), umax)
    if r0 != 0.0:
        g0 = float(Dg[0, 0] - Cg @ np.linalg.solve(Ag, Bg[:, 0]))
        u0 = r0 / g0
        x0[nc] = u0
        x0[nc + 1:nc + 1 + ng] = -np.linalg.solve(Ag, Bg[:, 0]) * u0
        if rate is not None:
            x0[-1] = u0
    t = np.linspace(0.0, horizon, n)
    method = "Radau" if rate is not None else "DOP853"
    rtol = 1e-9 if rate is not None else 1e-11
    sol = integrate.solve_ivp(rhs, (0.0, horizon), x0, method=method, t_eval=t, rtol=rtol, atol=1e-13,
                              max_step=horizon / n * 4)
    assert sol.success, sol.message
    y = np.array([signals(sol.y[:, k])[2] for k in range(n)])
    u = np.array([signals(sol.y[:, k])[5] for k in range(n)])
    return t, y, u


class AgainstSolveIvp(unittest.TestCase):
    def compare(self, spec, tol, **kw):
        args = dict(kw)
        horizon, n = args.pop("horizon", 5.0), args.pop("n", 2001)
        r = polewright.saturated_response(
            spec, minimum=args["umin"], maximum=args["umax"], anti_windup=args.get("anti_windup", "none"),
            tracking_time_s=args.get("tt"), reference=args.get("r", 1.0), load=args.get("load", 0.0),
            rate_limit=args.get("rate"), horizon_s=horizon, samples=n)
        t, y, u = reference_loop(spec, horizon=horizon, n=n, **args)
        np.testing.assert_allclose(r["time_s"], t, rtol=0, atol=1e-12)
        scale = max(1.0, float(np.max(np.abs(y))))
        self.assertLess(float(np.max(np.abs(r["y"] - y))), tol * scale)
        self.assertLess(float(np.max(np.abs(r["u"] - u))), tol * max(abs(args["umin"]), abs(args["umax"])))
        self.assertGreater(r["limited_time_s"], 0.0)  # the limits did act
        return r, y

    def test_pi_on_a_lag_without_anti_windup(self):
        r, _ = self.compare(DOSING_PUMP, 1e-8, umin=0.0, umax=1.0, r=1.5)
        self.assertGreaterEqual(len(r["switch_times_s"]), 1)

    def test_pi_with_back_calculation(self):
        self.compare(DOSING_PUMP, 1e-8, umin=0.0, umax=1.0, r=1.5, anti_windup="back_calculation", tt=0.3)

    def test_pi_with_conditional_integration(self):
        self.compare(DOSING_PUMP, 1e-8, umin=0.0, umax=1.0, r=1.5, anti_windup="conditional")

    def test_lead_lag_pi_on_two_lags_with_a_load_step(self):
        # Both limits are reached: the reference step drives u to the top, the overshoot of the
        # demand swings it to the bottom.
        r, _ = self.compare(KILN_FAN, 1e-8, umin=-0.4, umax=0.6, r=4.0, load=0.1, anti_windup="back_calculation",
                            tt=0.05, horizon=4.0)
        self.assertGreater(float(np.max(r["u"])), 0.6 - 1e-12)
        self.assertLess(float(np.min(r["u"])), -0.4 + 1e-12)

    def test_rate_limited_actuator(self):
        # The ODE form of the limiter lags v by about dv/dt / 1e5 while it tracks, so agreement is
        # to about 1e-5 of the limits here (a tighter gain makes the reference stiffer still).
        r, _ = self.compare(DOSING_PUMP, 1e-4, umin=0.0, umax=1.0, r=1.5, rate=2.0, anti_windup="back_calculation",
                            tt=0.3)
        du = np.diff(r["u"]) / (r["time_s"][1] - r["time_s"][0])
        self.assertLessEqual(float(np.max(np.abs(du))), 2.0 * (1 + 1e-9))


def clamping_pi_euler(h, horizon, r0, d, kp=1.6, ki=3.2, a=1.25, b=3.125, umin=0.0, umax=1.0):
    """The pump (G = b / (s + a)) with a PI and conditional integration as a controller would run
    it: forward Euler at step h, the integrator skipped on any step where u is limited and Ki e
    pushes v further past it, started at rest holding y = r0. Where the ideal loop slides along a
    limit this chatters at the step and converges to the sliding solution at first order in h."""
    x, xi = r0, r0 * a / b
    ys = np.empty(int(round(horizon / h)) + 1)
    ys[0] = x
    for k in range(1, len(ys)):
        e = r0 - x
        v = kp * e + xi
        u = min(max(v, umin), umax)
        if not (u != v and ki * e * (v - u) > 0):
            xi += h * ki * e
        x += h * (-a * x + b * (u + d))
        ys[k] = x
    return ys


class LoadStepFromTheOperatingPoint(unittest.TestCase):
    """A load step at the plant input while the loop holds r0 (initial_reference): against solve_ivp
    started at the equilibrium worked by hand (reference_loop's r0)."""

    def simulate(self, spec, r0, load, umin, umax, anti_windup="none", tt=None, horizon=6.0, n=3001):
        return polewright.saturated_response(spec, minimum=umin, maximum=umax, anti_windup=anti_windup,
                                             tracking_time_s=tt, reference=r0, initial_reference=r0, load=load,
                                             horizon_s=horizon, samples=n)

    def test_pump_holding_1_5_meets_a_load_of_0_59(self):
        # u0 = 1.5 / 2.5 = 0.6 and u = 0.6 - 0.59 = 0.01 holds y = 1.5 again; u's undershoot on the
        # way there takes it to the lower limit 0, which then holds it for a while.
        for aw, tt in (("none", None), ("back_calculation", 0.3)):
            with self.subTest(anti_windup=aw):
                r = self.simulate(DOSING_PUMP, 1.5, 0.59, 0.0, 1.0, aw, tt)
                t, y, u = reference_loop(DOSING_PUMP, 0.0, 1.0, anti_windup=aw, tt=tt, r=1.5, r0=1.5, load=0.59,
                                         horizon=6.0, n=3001)
                self.assertLess(float(np.max(np.abs(r["y"] - y))), 1e-8)
                self.assertLess(float(np.max(np.abs(r["u"] - u))), 1e-8)
                self.assertGreater(r["limited_time_s"], 0.5)
                self.assertAlmostEqual(r["y"][0], 1.5, delta=1e-12)  # at rest at the operating point
                self.assertAlmostEqual(r["u"][-1], 0.01, delta=1e-5)

    def test_conditional_integration_slides_along_the_limit(self):
        # Frozen, v = Kp e + xi would rise off the limit at once; integrating, it would fall further:
        # the ideal loop slides along u = 0 (two switching instants, no chattering). The clamped
        # Euler loop converges to it at first order: its error falls tenfold with h.
        r = self.simulate(DOSING_PUMP, 1.5, 0.59, 0.0, 1.0, "conditional", horizon=3.0)
        self.assertFalse(r["chattering"])
        self.assertEqual(len(r["switch_times_s"]), 2)
        err = {}
        for h in (1e-4, 1e-5):
            y = clamping_pi_euler(h, 3.0, 1.5, 0.59)[::int(round(1e-3 / h))]
            err[h] = float(np.max(np.abs(r["y"] - y)))
        self.assertLess(err[1e-5], 1e-5)
        self.assertGreater(err[1e-4] / err[1e-5], 5.0)
        self.assertLess(err[1e-4] / err[1e-5], 20.0)

    def test_lead_lag_pi_on_two_lags_within_the_limits(self):
        # G(0) = 10: u0 = 0.2 holds y = 2; a load of 0.5 needs u = -0.3, inside [-0.4, 0.6], and u
        # never leaves the limits on the way: the response is the linear loop's G S d.
        r = self.simulate(KILN_FAN, 2.0, 0.5, -0.4, 0.6, "back_calculation", 0.05, horizon=3.0)
        t, y, u = reference_loop(KILN_FAN, -0.4, 0.6, anti_windup="back_calculation", tt=0.05, r=2.0, r0=2.0,
                                 load=0.5, horizon=3.0, n=3001)
        self.assertLess(float(np.max(np.abs(r["y"] - y))), 1e-8)
        self.assertEqual(r["limited_time_s"], 0.0)


class LoadFiguresOfCheck(unittest.TestCase):
    """check's saturated_load_* figures against a dense reference solution: the peak of |y - r0|
    (refined on a parabola) and the last exit from the band of 2 % of that peak (interpolated)."""

    def spec(self, aw, load, tt=None):
        spec = dict(DOSING_PUMP)
        spec["requirements"] = {"disturbance_step": load, "saturated_load_peak": {"max": 5},
                                "saturated_load_recovery_s": {"max": 6}}
        spec["actuator"] = {"min": 0, "max": 1, "anti_windup": aw, "reference_step": 1.5}
        if tt:
            spec["actuator"]["tracking_time_s"] = tt
        return spec

    @staticmethod
    def figures(t, y, r0):
        d = np.abs(y - r0)
        k = int(np.argmax(d))
        a, b, c = d[k - 1], d[k], d[k + 1]
        peak = b - 0.125 * (a - c) ** 2 / (a - 2 * b + c)
        last = int(np.nonzero(d > 0.02 * peak)[0][-1])
        frac = (d[last] - 0.02 * peak) / (d[last] - d[last + 1])
        return peak, t[last] + frac * (t[1] - t[0])

    def test_peak_and_recovery_against_solve_ivp(self):
        for aw, tt in (("none", None), ("back_calculation", 0.3)):
            metrics = polewright.check(self.spec(aw, 0.59, tt))["worst"]["metrics"]
            t, y, _ = reference_loop(DOSING_PUMP, 0.0, 1.0, anti_windup=aw, tt=tt, r=1.5, r0=1.5, load=0.59,
                                     horizon=12.0, n=24001)
            peak, recovery = self.figures(t, y, 1.5)
            with self.subTest(anti_windup=aw):
                self.assertAlmostEqual(metrics["saturated_load_peak"], peak, delta=1e-6)
                self.assertAlmostEqual(metrics["saturated_load_recovery_s"], recovery, delta=2e-5)

    def test_peak_and_recovery_with_the_slide_against_the_clamped_euler_loop(self):
        metrics = polewright.check(self.spec("conditional", 0.59))["worst"]["metrics"]
        h = 1e-5
        y = clamping_pi_euler(h, 8.0, 1.5, 0.59)
        peak, recovery = self.figures(np.arange(len(y)) * h, y, 1.5)
        self.assertAlmostEqual(metrics["saturated_load_peak"], peak, delta=2e-5)  # O(h) (test above)
        self.assertAlmostEqual(metrics["saturated_load_recovery_s"], recovery, delta=1e-3)

    def test_a_load_beyond_the_headroom_is_never_recovered(self):
        # u0 = 0.6 < d = 0.8: u is pinned at 0 and y settles at G(0) d = 2.5 * 0.8 = 2.0 (by hand),
        # 0.5 above r0; the recovery is unbounded (null) and the requirement fails.
        result = polewright.check(self.spec("conditional", 0.8))
        worst = result["worst"]
        self.assertAlmostEqual(worst["metrics"]["saturated_load_peak"], 0.5, delta=1e-4)
        self.assertIsNone(worst["metrics"]["saturated_load_recovery_s"])
        self.assertFalse(worst["met"]["saturated_load_recovery_s"])


class FirstOrderPiByHand(unittest.TestCase):
    """G = b / (tau s + 1) with b = 2.5, tau = 0.8; C = Kp + Ki / s with Kp = 1.6, Ki = 3.2; u <= 1.

    A step r = 1.5 puts v(0+) = Kp r = 2.4 above the limit, so u = 1 and
    y(t) = b (1 - exp(-t / tau)) while the limit holds (worked by hand).
    """
    b, tau, kp, ki, r, umax = 2.5, 0.8, 1.6, 3.2, 1.5, 1.0

    def simulate(self, aw, tt=None):
        return polewright.saturated_response(DOSING_PUMP, minimum=0.0, maximum=self.umax, reference=self.r,
                                             anti_windup=aw, tracking_time_s=tt, horizon_s=8.0, samples=4001)

    def test_conditional_integration_leaves_the_limit_at_kp_e_equal_umax(self):
        # The integrator is frozen at 0 (Ki e > 0 throughout), so the limit is left when
        # Kp (r - y) = umax: y = r - umax / Kp, t1 = -tau ln(1 - (r - umax / Kp) / b).
        t1 = -self.tau * math.log(1 - (self.r - self.umax / self.kp) / self.b)
        got = self.simulate("conditional")["switch_times_s"]
        self.assertAlmostEqual(got[0], t1, delta=1e-10)

    def test_windup_leaves_the_limit_when_the_wound_integrator_allows(self):
        # xi(t) = Ki (r t - b (t - tau (1 - exp(-t / tau)))); the limit is left when
        # Kp e + xi = umax, a scalar root found here by brentq.
        b, tau, kp, ki, r = self.b, self.tau, self.kp, self.ki, self.r

        def excess(t):
            y = b * (1 - math.exp(-t / tau))
            xi = ki * (r * t - b * (t - tau * (1 - math.exp(-t / tau))))
            return kp * (r - y) + xi - self.umax

        t1 = optimize.brentq(excess, 1e-6, 5.0, xtol=1e-14)
        got = self.simulate("none")["switch_times_s"]
        self.assertAlmostEqual(got[0], t1, delta=1e-10)

    def test_windup_overshoots_more_than_either_anti_windup(self):
        over = {}
        for aw, tt in (("none", None), ("back_calculation", 0.2), ("conditional", None)):
            y = self.simulate(aw, tt)["y"]
            over[aw] = (float(np.max(y)) - self.r) / self.r * 100
        # Without the limit the loop is T = 5 (s + 2) / (s^2 + 6.25 s + 10) (by hand), poles
        # -3.125 +- 0.484j, whose step overshoots by 4.4 % (scipy.signal.step, computed once):
        # the windup adds far more than that, and either anti-windup takes most of it away.
        self.assertGreater(over["none"], 10.0)
        self.assertLess(over["back_calculation"], over["none"] / 2)
        self.assertLess(over["conditional"], over["none"] / 2)


class SpecActuatorBlock(unittest.TestCase):
    def test_arguments_left_out_come_from_the_spec(self):
        spec = dict(DOSING_PUMP, actuator={"min": 0, "max": 1, "anti_windup": "back_calculation",
                                           "tracking_time_s": 0.3, "reference_step": 1.5})
        own = polewright.saturated_response(spec, horizon_s=5.0)
        given = polewright.saturated_response(DOSING_PUMP, minimum=0.0, maximum=1.0, anti_windup="back_calculation",
                                              tracking_time_s=0.3, reference=1.5, horizon_s=5.0)
        np.testing.assert_array_equal(own["y"], given["y"])
        np.testing.assert_array_equal(own["u"], given["u"])
        # An argument overrides the block.
        wider = polewright.saturated_response(spec, maximum=3.0, horizon_s=5.0)
        self.assertEqual(wider["limited_time_s"], 0.0)  # u(0+) = 2.4 is within [0, 3]

    def test_without_a_block_the_limits_are_required(self):
        with self.assertRaises(polewright.SpecError) as c:
            polewright.saturated_response(DOSING_PUMP, horizon_s=1.0)
        self.assertEqual(c.exception.path, "minimum")


class BadArguments(unittest.TestCase):
    def test_limits_out_of_order(self):
        with self.assertRaises(polewright.SpecError) as c:
            polewright.saturated_response(DOSING_PUMP, minimum=1.0, maximum=0.0, horizon_s=1.0)
        self.assertEqual(c.exception.path, "actuator")

    def test_anti_windup_needs_one_integrator(self):
        spec = dict(DOSING_PUMP, current={"gain": 1.0, "zeros": [-2], "poles": [-20]})
        with self.assertRaises(polewright.SpecError) as c:
            polewright.saturated_response(spec, minimum=0.0, maximum=1.0, anti_windup="conditional", horizon_s=1.0)
        self.assertIn("exactly one integrator", str(c.exception))

    def test_unknown_anti_windup(self):
        with self.assertRaises(polewright.SpecError) as c:
            polewright.saturated_response(DOSING_PUMP, minimum=0.0, maximum=1.0, anti_windup="clamp", horizon_s=1.0)
        self.assertEqual(c.exception.path, "anti_windup")


class CheckVerdictFigures(unittest.TestCase):
    """polewright.check judges saturated_* on the same simulation: its figures against ones taken
    from a dense solve_ivp solution of the loop (overshoot from the peak, settling from the last
    exit from the 2 % band, rise time from the 10 % and 90 % crossings, all by brentq on the
    dense output)."""

    def figures_by_scipy(self, spec, umin, umax, r, anti_windup="none", tt=None, horizon=12.0):
        t, y, _ = reference_loop(spec, umin, umax, anti_windup=anti_windup, tt=tt, r=r, horizon=horizon, n=24001)
        k = int(np.argmax(y))
        # The peak refined on a parabola through the three samples around it (dt = 5e-4 s).
        a, b, c = y[k - 1], y[k], y[k + 1]
        peak = b + 0.125 * (a - c) ** 2 / (a - 2 * b + c) * -1 if (a - 2 * b + c) != 0 else b
        overshoot = (peak - r) / r * 100
        out = np.abs(y - r) > 0.02 * r
        last = int(np.nonzero(out)[0][-1])
        frac = (np.abs(y[last] - r) - 0.02 * r) / (np.abs(y[last] - r) - np.abs(y[last + 1] - r))
        settling = t[last] + frac * (t[1] - t[0])
        def cross(level):
            i = int(np.nonzero(y >= level)[0][0])
            return t[i - 1] + (level - y[i - 1]) / (y[i] - y[i - 1]) * (t[1] - t[0])
        return overshoot, settling, cross(0.9 * r) - cross(0.1 * r)

    def test_pump_with_and_without_anti_windup(self):
        for aw, tt in (("none", None), ("back_calculation", 0.3), ("conditional", None)):
            spec = dict(DOSING_PUMP)
            spec["requirements"] = {"saturated_overshoot_pct": {"max": 50}, "saturated_settling_time_s": {"max": 6},
                                    "saturated_rise_time_s": {"max": 3}}
            spec["actuator"] = {"min": 0, "max": 1, "anti_windup": aw, "reference_step": 1.5}
            if tt:
                spec["actuator"]["tracking_time_s"] = tt
            metrics = polewright.check(spec)["worst"]["metrics"]
            os_, ts, tr = self.figures_by_scipy(DOSING_PUMP, 0.0, 1.0, 1.5, aw, tt)
            with self.subTest(anti_windup=aw):
                self.assertAlmostEqual(metrics["saturated_overshoot_pct"], os_, delta=1e-4)
                self.assertAlmostEqual(metrics["saturated_settling_time_s"], ts, delta=2e-5)
                self.assertAlmostEqual(metrics["saturated_rise_time_s"], tr, delta=2e-6)


if __name__ == "__main__":
    unittest.main()
