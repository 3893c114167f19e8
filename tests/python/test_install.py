"""`cmake --install` puts the module where Debian's python3 looks for it under the prefix, and the
installed module imports and runs from there."""
import os
import subprocess
import sys
import tempfile
import unittest


class Install(unittest.TestCase):
    def test_installed_module_imports_from_the_prefix(self):
        build = os.environ["POLEWRIGHT_BUILD_DIR"]
        site = os.environ["POLEWRIGHT_PYTHON_INSTALL_DIR"]
        with tempfile.TemporaryDirectory(prefix="pw-install-") as prefix:
            subprocess.run(["cmake", "--install", build, "--prefix", prefix], check=True, capture_output=True)
            where = os.path.join(prefix, site)
            files = [f for f in os.listdir(where) if f.startswith("polewright.") and f.endswith(".so")]
            self.assertEqual(len(files), 1, os.listdir(where))
            code = ("import json, polewright; print(polewright.__file__); "
                    "r = polewright.check({'plant': {'gain': 4, 'poles': [0, -2]}, "
                    "'requirements': {'phase_margin_deg': {'min': 45}}, 'current': {'gain': 1}}); "
                    "print(json.dumps(r['status']))")
            env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}
            env["PYTHONPATH"] = where
            p = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env, cwd=prefix)
            self.assertEqual(p.returncode, 0, p.stderr)
            lines = p.stdout.splitlines()
            self.assertTrue(lines[0].startswith(where), lines[0])
            # 4 / (s (s + 2)) in unity feedback: |L| = 1 at w^2 = 2 (sqrt(5) - 1), w = 1.572 rad/s,
            # phase margin 90 - atan(w / 2) = 51.8 deg (closed form), so a 45 deg minimum is met.
            self.assertEqual(lines[1], '"met"')

    def test_install_dir_is_on_debians_path_for_the_configured_prefix(self):
        # Debian's python3 (its site module, outside this project) searches <prefix>/<site> for the
        # prefix the build was configured with: /usr/lib/python3/dist-packages or
        # /usr/local/lib/python3.X/dist-packages.
        prefix = os.environ["POLEWRIGHT_INSTALL_PREFIX"]
        site = os.environ["POLEWRIGHT_PYTHON_INSTALL_DIR"]
        if prefix not in ("/usr", "/usr/local"):
            self.skipTest("configured for a private prefix " + prefix)
        env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}
        p = subprocess.run(["/usr/bin/python3", "-c", "import sys; print('\\n'.join(sys.path))"],
                           capture_output=True, text=True, env=env, check=True)
        self.assertIn(os.path.join(prefix, site), p.stdout.splitlines())


if __name__ == "__main__":
    unittest.main()
