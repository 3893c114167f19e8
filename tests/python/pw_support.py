"""Shared pieces of the module tests: the built CLI, temporary files, and our demo specs.

CTest sets PYTHONPATH to the folder of the built module and POLEWRIGHT_CLI to the built
command line, so that the module and the CLI under test come from the same build.
"""
import copy
import json
import os
import subprocess
import tempfile

import polewright  # noqa: F401  (fails early, naming the module, when PYTHONPATH is wrong)

CLI = os.environ.get("POLEWRIGHT_CLI", "")


def run_cli(*args):
    """Runs the CLI; returns (exit code, stdout, stderr)."""
    p = subprocess.run([CLI, *map(str, args)], capture_output=True, text=True, timeout=300)
    return p.returncode, p.stdout, p.stderr


def cli_json(*args):
    """Runs the CLI with --json and parses what it prints (exit 0 or 1: met or not met)."""
    rc, out, err = run_cli(*args, "--json")
    if rc not in (0, 1):
        raise AssertionError(f"CLI {args} exited {rc}: {err}")
    return json.loads(out)


class TempDir:
    def __init__(self):
        self._tmp = tempfile.TemporaryDirectory(prefix="pw-python-")
        self.path = self._tmp.name

    def write_json(self, name, value):
        path = os.path.join(self.path, name)
        with open(path, "w") as f:
            json.dump(value, f, indent=1)
        return path

    def file(self, name):
        return os.path.join(self.path, name)

    def cleanup(self):
        self._tmp.cleanup()


# A kiln exhaust fan: speed loop of a drive with two lags, and a heavier impeller as a variant.
KILN_FAN = {
    "name": "kiln exhaust fan, drive command to fan speed",
    "plant": {
        "numerator": [40],
        "denominator": [0.05, 1.2, 4],
        "variants": [{"name": "heavier impeller", "numerator": [40], "denominator": [0.08, 1.5, 4]}],
    },
    "requirements": {
        "overshoot_pct": {"max": 10},
        "settling_time_s": {"max": 1.5},
        "steady_state_error": {"max": 0, "input": "step"},
        "phase_margin_deg": {"min": 45},
        "peak_effort": {"max": 6},
    },
    "stages": {"lead": 1, "lag": 1, "notch": 0, "integrator": "auto", "frequency_range_rad_s": [0.05, 300]},
    "current": {"gain": 0.6, "zeros": [-3], "poles": [0]},
    "search": {"seed": 5, "keep": 3, "time_limit_s": 60},
}


def kiln_fan(**changes):
    spec = copy.deepcopy(KILN_FAN)
    spec.update(changes)
    return spec
