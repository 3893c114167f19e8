"""Bad input raises polewright.SpecError carrying the JSON path of the offending field; for specs
the CLI can read too, the path is the one the CLI names in its one-line error (the reference)."""
import math
import os
import re
import unittest

import polewright
from pw_support import TempDir, kiln_fan, run_cli


def cli_error_path(spec_path, *args):
    """The JSON path in the CLI's one-line error: 'polewright: FILE: PATH: message', exit 2."""
    rc, _, err = run_cli(*args, spec_path)
    assert rc == 2, (rc, err)
    m = re.match(r"polewright: " + re.escape(spec_path) + r": (\$\S*): ", err)
    assert m, err
    return m.group(1)


class SpecErrors(unittest.TestCase):
    def setUp(self):
        self.tmp = TempDir()

    def tearDown(self):
        self.tmp.cleanup()

    def assert_same_path_as_cli(self, spec, expected_path, verbs=("check", "design", "retune")):
        path = self.tmp.write_json("bad.json", spec)
        for verb in verbs:
            with self.subTest(verb=verb):
                fn = getattr(polewright, verb)
                with self.assertRaises(polewright.SpecError) as cm:
                    fn(spec)
                self.assertEqual(cm.exception.path, expected_path)
                self.assertEqual(cli_error_path(path, verb), expected_path)
                self.assertIn(expected_path, str(cm.exception))

    def test_string_in_a_pole_list(self):
        spec = kiln_fan()
        spec["plant"]["variants"][0]["denominator"] = [0.08, "1.5", 4]
        self.assert_same_path_as_cli(spec, "$.plant.variants[0].denominator[1]")

    def test_unknown_requirement(self):
        spec = kiln_fan()
        spec["requirements"]["overshoot"] = {"max": 5}
        self.assert_same_path_as_cli(spec, "$.requirements.overshoot")

    def test_bad_search_setting(self):
        spec = kiln_fan()
        spec["search"]["keep"] = 0
        self.assert_same_path_as_cli(spec, "$.search.keep", verbs=("design",))

    def test_bad_current_compensator(self):
        spec = kiln_fan()
        spec["current"]["poles"] = [0, {"wn": -3, "zeta": 0.5}]
        self.assert_same_path_as_cli(spec, "$.current.poles[1].wn")

    def test_non_finite_number_in_a_dict(self):
        # JSON files cannot hold NaN or infinity; a dict can: the path is that of the element.
        for bad in (math.nan, math.inf, -math.inf):
            spec = kiln_fan()
            spec["plant"]["numerator"] = [bad]
            with self.assertRaises(polewright.SpecError) as cm:
                polewright.check(spec)
            self.assertEqual(cm.exception.path, "$.plant.numerator[0]")

    def test_key_that_is_not_a_string(self):
        spec = kiln_fan()
        spec["requirements"][3] = {"max": 1}
        with self.assertRaises(polewright.SpecError) as cm:
            polewright.check(spec)
        self.assertEqual(cm.exception.path, "$.requirements")

    def test_value_of_another_python_type(self):
        spec = kiln_fan()
        spec["plant"]["numerator"] = [object()]
        with self.assertRaises(polewright.SpecError) as cm:
            polewright.check(spec)
        self.assertEqual(cm.exception.path, "$.plant.numerator[0]")

    def test_tuples_and_numpy_values_are_accepted(self):
        import numpy as np
        spec = kiln_fan()
        spec["plant"]["denominator"] = np.array([0.05, 1.2, 4.0])
        spec["current"]["zeros"] = (np.float64(-3.0),)
        self.assertEqual(polewright.check(spec), polewright.check(kiln_fan()))

    def test_missing_file(self):
        with self.assertRaises(polewright.SpecError) as cm:
            polewright.check(os.path.join(self.tmp.path, "nowhere.json"))
        self.assertEqual(cm.exception.path, "$")

    def test_missing_current(self):
        spec = kiln_fan()
        del spec["current"]
        for fn in (polewright.check, polewright.retune):
            with self.assertRaises(polewright.SpecError) as cm:
                fn(spec)
            self.assertEqual(cm.exception.path, "$.current")

    def test_spec_error_is_a_value_error(self):
        self.assertTrue(issubclass(polewright.SpecError, ValueError))

    def test_wrong_argument_type(self):
        with self.assertRaises(TypeError):
            polewright.check(42)


class ArgumentErrors(unittest.TestCase):
    def test_design_arguments(self):
        spec = kiln_fan()
        for kwargs, name in (({"objective": "quickest"}, "objective"), ({"seed": -1}, "seed"),
                             ({"threads": 2.5}, "threads"), ({"keep": 0}, "keep")):
            with self.subTest(**kwargs):
                with self.assertRaises(polewright.SpecError) as cm:
                    polewright.design(spec, **kwargs)
                self.assertEqual(cm.exception.path, name)

    def test_export_arguments(self):
        result = polewright.check(kiln_fan())
        cases = (({}, "sample_time"), ({"sample_time": -1.0}, "sample_time"),
                 ({"sample_time": 0.01, "method": "euler"}, "method"),
                 ({"sample_time": 0.01, "rank": 2}, "rank"),
                 ({"sample_time": 0.01, "prewarp_rad_s": 5.0}, "prewarp_rad_s"))
        for kwargs, name in cases:
            with self.subTest(**kwargs):
                with self.assertRaises(polewright.SpecError) as cm:
                    polewright.export(result, **kwargs)
                self.assertEqual(cm.exception.path, name)

    def test_bad_result(self):
        result = polewright.check(kiln_fan())
        del result["spec"]["plant"]
        with self.assertRaises(polewright.SpecError) as cm:
            polewright.export(result, sample_time=0.01)
        self.assertTrue(cm.exception.path.startswith("$.spec"), cm.exception.path)

    def test_report_to_an_unwritable_place(self):
        result = polewright.check(kiln_fan())
        with self.assertRaises(OSError):
            polewright.report(result, "/nonexistent-folder/report.html")


if __name__ == "__main__":
    unittest.main()
