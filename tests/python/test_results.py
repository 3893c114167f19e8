"""The module's results equal the CLI's JSON for the same spec, seed and options (the CLI is the
reference here: the module must be the same engine and the same JSON writers in-process)."""
import json
import os
import unittest

import polewright
from pw_support import TempDir, cli_json, kiln_fan, run_cli


class ResultsEqualTheCli(unittest.TestCase):
    def assertEqual(self, first, second, msg=None):
        # Dicts and lists also compare as their JSON text, so that 1 and 1.0 differ.
        super().assertEqual(first, second, msg)
        if isinstance(first, (dict, list)):
            super().assertEqual(json.dumps(first, sort_keys=True), json.dumps(second, sort_keys=True), msg)

    @classmethod
    def setUpClass(cls):
        cls.tmp = TempDir()
        cls.spec = kiln_fan()
        cls.spec_path = cls.tmp.write_json("kiln.json", cls.spec)
        # One design through the CLI serves several comparisons (-o writes the same JSON as --json).
        rc, _, err = run_cli("design", cls.spec_path, "--seed", 7, "--threads", 2, "-o", cls.tmp.file("design.json"))
        assert rc in (0, 1), err
        with open(cls.tmp.file("design.json")) as f:
            cls.cli_design = json.load(f)

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def test_check_of_the_current_compensator(self):
        self.assertEqual(polewright.check(self.spec), cli_json("check", self.spec_path))

    def test_check_from_a_path_equals_check_from_a_dict(self):
        self.assertEqual(polewright.check(self.spec_path), polewright.check(self.spec))

    def test_check_of_a_given_compensator(self):
        comp = {"gain": 1.5, "zeros": [-4, -1], "poles": [0, -30]}
        comp_path = self.tmp.write_json("comp.json", comp)
        got = polewright.check(self.spec, compensator=comp)
        self.assertEqual(got, cli_json("check", self.spec_path, "--compensator", comp_path))
        self.assertEqual(got, polewright.check(self.spec, compensator=comp_path))

    def test_design_same_seed(self):
        got = polewright.design(self.spec, seed=7, threads=2)
        self.assertEqual(got, self.cli_design)
        self.assertGreater(len(got["candidates"]), 0)

    def test_design_is_the_same_on_one_thread(self):
        # Determinism across thread counts (DEVELOPERS.md), here through the module.
        self.assertEqual(polewright.design(self.spec_path, seed=7, threads=1), self.cli_design)

    def test_design_with_objective_and_keep(self):
        got = polewright.design(self.spec, seed=2, threads=2, objective="most_robust", keep=2)
        want = cli_json("design", self.spec_path, "--seed", 2, "--threads", 2, "--objective", "most_robust", "--keep", 2)
        self.assertEqual(got, want)
        self.assertEqual(got["objective"], "most_robust")

    def test_retune(self):
        # The current compensator (a slow PI) misses the settling time: retune has to move it.
        got = polewright.retune(self.spec, seed=3, threads=2)
        self.assertEqual(got, cli_json("retune", self.spec_path, "--seed", 3, "--threads", 2))

    def test_retune_with_new_stages(self):
        got = polewright.retune(self.spec, threads=2, allow_new_stages=True, keep=2)
        want = cli_json("retune", self.spec_path, "--threads", 2, "--allow-new-stages", "--keep", 2)
        self.assertEqual(got, want)

    def test_export(self):
        for method, rank in (("tustin", 1), ("zoh", 2), ("matched", 1)):
            with self.subTest(method=method, rank=rank):
                got = polewright.export(self.cli_design, rank, 0.005, method)
                out = self.tmp.file(f"export-{method}.json")
                rc, _, err = run_cli("export", self.tmp.file("design.json"), "--rank", rank, "--sample-time", 0.005,
                                     "--method", method, "--format", "json", "-o", out)
                self.assertIn(rc, (0, 1), err)
                with open(out) as f:
                    want = json.load(f)
                self.assertEqual(got, want)
                self.assertEqual(list(got.keys()), list(want.keys()))  # export_json keeps its key order

    def test_export_with_prewarp(self):
        got = polewright.export(self.tmp.file("design.json"), sample_time=0.01, method="prewarp", prewarp_rad_s=12.0)
        out = self.tmp.file("export-prewarp.json")
        rc, _, err = run_cli("export", self.tmp.file("design.json"), "--sample-time", 0.01, "--method", "prewarp",
                             "--prewarp-rad-s", 12, "--format", "json", "-o", out)
        self.assertIn(rc, (0, 1), err)
        with open(out) as f:
            self.assertEqual(got, json.load(f))

    def test_report_is_the_cli_page(self):
        mine, theirs = self.tmp.file("mine.html"), self.tmp.file("cli.html")
        self.assertIsNone(polewright.report(self.cli_design, mine))
        rc, _, err = run_cli("report", self.tmp.file("design.json"), "-o", theirs)
        self.assertEqual(rc, 0, err)
        with open(mine, "rb") as a, open(theirs, "rb") as b:
            page = a.read()
            self.assertEqual(page, b.read())
        self.assertTrue(page.startswith(b"<!DOCTYPE html>") or page.lower().startswith(b"<!doctype html>"))

    def test_report_of_a_check_result_from_a_path(self):
        path = self.tmp.file("check.json")
        rc, _, err = run_cli("check", self.spec_path, "-o", path)
        self.assertIn(rc, (0, 1), err)
        mine, theirs = self.tmp.file("check-mine.html"), self.tmp.file("check-cli.html")
        polewright.report(path, mine)
        run_cli("report", path, "-o", theirs)
        with open(mine, "rb") as a, open(theirs, "rb") as b:
            self.assertEqual(a.read(), b.read())

    def test_report_of_a_sweep_directory(self):
        # A small check sweep of our kiln fan over the drive gain, run by the CLI; the module's page
        # for the directory equals the CLI's.
        sweep = {"name": "kiln fan drive gain", "base": kiln_fan(), "job": "check", "seed": 1,
                 "parameters": {"g": {"from": 20, "to": 60, "count": 3}, "z": {"values": [2, 3]}},
                 "sample": {"method": "grid"}}
        sweep["base"]["plant"]["numerator"] = ["g"]
        sweep["base"]["current"]["zeros"] = ["-z"]
        path = self.tmp.write_json("sweep.json", sweep)
        out = self.tmp.file("sweep-out")
        rc, _, err = run_cli("sweep", path, "--out", out, "--threads", 1, "--quiet")
        self.assertIn(rc, (0, 1), err)
        mine, theirs = self.tmp.file("sweep-mine.html"), self.tmp.file("sweep-cli.html")
        polewright.report(out, mine)
        rc, _, err = run_cli("report", out, "-o", theirs)
        self.assertEqual(rc, 0, err)
        with open(mine, "rb") as a, open(theirs, "rb") as b:
            self.assertEqual(a.read(), b.read())

    def test_version(self):
        self.assertEqual(polewright.__version__, self.cli_design["tool"]["version"])


class MeasuredPlantSpecs(unittest.TestCase):
    """A plant given as measured data: a path reads its CSV beside the spec, a dict holds the data."""

    SPEC = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "examples", "measured", "belt-axis.json")
    COMP = {"gain": 60, "zeros": [-12], "poles": [-300]}

    def test_check_from_the_path_equals_the_cli(self):
        tmp = TempDir()
        try:
            want = cli_json("check", self.SPEC, "--compensator", tmp.write_json("comp.json", self.COMP))
        finally:
            tmp.cleanup()
        got = polewright.check(self.SPEC, compensator=self.COMP)
        self.assertEqual(json.dumps(got, sort_keys=True), json.dumps(want, sort_keys=True))
        self.assertEqual(got["measured_plants"]["nominal"]["points"], 131)  # the CSV's data rows
        self.assertEqual(got["variants"][0]["frequency_figures_from"], "data")

    def test_the_result_spec_holds_the_data_and_checks_the_same(self):
        by_path = polewright.check(self.SPEC, compensator=self.COMP)
        self.assertIn("data", by_path["spec"]["plant"]["measured"])
        again = polewright.check(by_path["spec"], compensator=self.COMP)
        self.assertEqual(json.dumps(again["variants"], sort_keys=True), json.dumps(by_path["variants"], sort_keys=True))

    def test_a_dict_naming_a_file_reads_it_from_the_working_folder(self):
        with open(self.SPEC) as f:
            spec = json.load(f)
        # The tests run in tests/python, where no belt-axis.csv lies: refused at that field.
        with self.assertRaises(polewright.SpecError) as e:
            polewright.check(spec, compensator=self.COMP)
        self.assertEqual(e.exception.path, "$.plant.measured.file")


if __name__ == "__main__":
    unittest.main()
