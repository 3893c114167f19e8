"""traces(): numpy arrays of the stated shapes, and their values against scipy/numpy computed
independently from the spec's transfer functions and the result's compensator."""
import unittest

import numpy as np
from scipy import signal

import polewright
from pw_support import kiln_fan


def spec_with_a_delayed_variant():
    spec = kiln_fan()
    spec["plant"]["variants"].append({"name": "long duct", "numerator": [40], "denominator": [0.05, 1.2, 4],
                                      "delay_s": 0.02})
    return spec


class Traces(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.spec = spec_with_a_delayed_variant()
        cls.result = polewright.check(cls.spec)  # the spec's current compensator: gain 0.6 (s + 3) / s
        cls.tr = polewright.traces(cls.result)

    def plant_tf(self, i):
        p = self.spec["plant"] if i == 0 else {**self.spec["plant"], **self.spec["plant"]["variants"][i - 1]}
        return np.array(p["numerator"], float), np.array(p["denominator"], float), p.get("delay_s", 0.0)

    def compensator_tf(self):
        c = self.result["compensator"]
        return np.array(c["numerator"], float), np.array(c["denominator"], float)

    def test_shapes(self):
        tr = self.tr
        self.assertEqual(tr["rank"], 1)
        w = tr["frequency_rad_s"]
        self.assertIsInstance(w, np.ndarray)
        self.assertEqual(w.ndim, 1)
        self.assertGreater(w.shape[0], 10)
        self.assertTrue(np.all(np.diff(w) > 0) and w[0] > 0)
        self.assertEqual(len(tr["plants"]), 1 + len(self.spec["plant"]["variants"]))
        for p in tr["plants"]:
            self.assertTrue(p["stable"])
            n = p["time_s"].shape[0]
            self.assertGreater(n, 100)
            for key in ("time_s", "y", "u"):
                self.assertEqual(p[key].shape, (n,), key)
                self.assertEqual(p[key].dtype, np.float64, key)
            self.assertEqual(p["loop"].shape, w.shape)
            self.assertEqual(p["loop"].dtype, np.complex128)
            self.assertEqual(p["time_s"][0], 0.0)
            self.assertTrue(np.allclose(np.diff(p["time_s"]), p["time_s"][1]))
        self.assertEqual([p["name"] for p in tr["plants"][1:]], [v["name"] for v in self.spec["plant"]["variants"]])

    def test_step_against_scipy(self):
        # Closed loop r -> y = CG / (1 + CG), r -> u = C / (1 + CG), simulated by scipy.signal.lsim
        # (delay-free plants only: the library uses a Pade approximant for a delay's step).
        nc, dc = self.compensator_tf()
        for i in (0, 1):
            ng, dg, delay = self.plant_tf(i)
            self.assertEqual(delay, 0.0)
            den = np.polyadd(np.polymul(dc, dg), np.polymul(nc, ng))
            p = self.tr["plants"][i]
            t = p["time_s"]
            _, y, _ = signal.lsim((np.polymul(nc, ng), den), np.ones_like(t), t)
            _, u, _ = signal.lsim((np.polymul(nc, dg), den), np.ones_like(t), t)
            scale_y, scale_u = np.max(np.abs(y)), np.max(np.abs(u))
            self.assertLess(np.max(np.abs(p["y"] - y)) / scale_y, 1e-6, f"plant {i} y")
            self.assertLess(np.max(np.abs(p["u"] - u)) / scale_u, 1e-6, f"plant {i} u")

    def test_loop_response_against_numpy(self):
        # L(jw) = C(jw) G(jw) e^(-jwT) with numpy.polyval, the exact delay included.
        nc, dc = self.compensator_tf()
        w = self.tr["frequency_rad_s"]
        s = 1j * w
        for i, p in enumerate(self.tr["plants"]):
            ng, dg, delay = self.plant_tf(i)
            want = np.polyval(nc, s) / np.polyval(dc, s) * np.polyval(ng, s) / np.polyval(dg, s) * np.exp(-s * delay)
            self.assertLess(np.max(np.abs(p["loop"] - want) / np.abs(want)), 1e-9, f"plant {i}")

    def test_design_rank_and_frequency_grid(self):
        spec = kiln_fan()
        del spec["plant"]["variants"]  # one plant: a candidate's worst-case metrics are its nominal ones
        design = polewright.design(spec, seed=7, threads=2)
        self.assertGreaterEqual(len(design["candidates"]), 2)
        t2 = polewright.traces(design, rank=2)
        self.assertEqual(t2["rank"], 2)
        # The phase margin read off the loop trace at |L| = 1 (interpolated in log w) agrees with the
        # candidate's reported nominal figure to the grid's resolution.
        L = t2["plants"][0]["loop"]
        w = t2["frequency_rad_s"]
        mag = np.abs(L)
        k = np.nonzero((mag[:-1] >= 1.0) & (mag[1:] < 1.0))[0][-1]
        f = np.log(mag[k]) / (np.log(mag[k]) - np.log(mag[k + 1]))
        phase = np.unwrap(np.angle(L))
        pm = 180.0 + np.degrees(phase[k] + f * (phase[k + 1] - phase[k]))
        pm = (pm + 180.0) % 360.0 - 180.0
        reported = design["candidates"][1]["metrics"]["phase_margin_deg"]
        self.assertAlmostEqual(pm, reported, delta=0.5)

    def test_unstable_loop_has_no_step_samples(self):
        # A negative gain on this positive-gain plant: the characteristic polynomial
        # s (0.05 s^2 + 1.2 s + 4) - 24 (s + 3) = 0.05 s^3 + 1.2 s^2 - 20 s - 72 has coefficients of
        # both signs, so it has a root with Re s > 0 (necessary condition for stability, from memory).
        result = polewright.check(self.spec, compensator={"gain": -0.6, "zeros": [-3], "poles": [0]})
        self.assertFalse(result["stable"])
        tr = polewright.traces(result)
        for p in tr["plants"]:
            self.assertFalse(p["stable"])
            for key in ("time_s", "y", "u"):
                self.assertEqual(p[key].shape, (0,), key)
            self.assertEqual(p["loop"].shape, tr["frequency_rad_s"].shape)

    def test_bare_compensator_needs_a_spec(self):
        comp = {"gain": 0.6, "zeros": [-3], "poles": [0]}
        with self.assertRaises(polewright.SpecError) as cm:
            polewright.traces(comp)
        self.assertEqual(cm.exception.path, "$.spec")
        tr = polewright.traces(comp, spec=self.spec)
        self.assertTrue(np.allclose(tr["plants"][0]["y"], self.tr["plants"][0]["y"], rtol=0, atol=1e-12))


if __name__ == "__main__":
    unittest.main()
