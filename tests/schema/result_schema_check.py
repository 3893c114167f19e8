#!/usr/bin/python3
"""Check specs/result.schema.json against real `polewright design` results.

Usage (from anywhere; paths are taken relative to the repository root):

    /usr/bin/python3 tests/schema/result_schema_check.py POLEWRIGHT_BINARY

* The schema itself is checked with Draft202012Validator.check_schema. Its
  "requirements" refers to "spec.schema.json#/$defs/requirements"; that name is
  resolved to specs/spec.schema.json through a local store (no network).
* `POLEWRIGHT_BINARY design SPEC -o OUT.json --threads 1` runs, without and with
  --timing, on the demo specs (specs/wafer-stage.json, greenhouse-heater.json,
  magnetic-bearing.json) and on a problem that cannot be met (a right-half-plane
  zero at 2 rad/s against a 0.2 s settling time, written to a temporary folder).
  Each run must exit 0 (met) or 1 (not met) in agreement with "status", carry
  "timing" exactly when --timing was given, and validate against the schema.
* Broken copies of one result must fail validation: an extra top-level key,
  status "maybe", a candidate missing "meets", and (to show the spec-schema
  reference is live) an unknown requirement key.

Prints one line per check and a last line "N passed, M failed"; exits 1 on any
failure, 2 on bad usage, 77 (skipped) when the jsonschema package is missing.
"""
import copy
import json
import os
import subprocess
import sys
import tempfile
from pathlib import Path

try:
    import jsonschema
    from jsonschema import Draft202012Validator
except ImportError:  # pragma: no cover - depends on the machine
    print("result_schema_check: the jsonschema package is missing "
          "(Debian: apt-get install python3-jsonschema): skipping")
    sys.exit(77)

ROOT = Path(__file__).resolve().parents[2]
RESULT_SCHEMA = ROOT / "specs" / "result.schema.json"
SPEC_SCHEMA = ROOT / "specs" / "spec.schema.json"
SPEC_REF_NAME = "spec.schema.json"  # the name result.schema.json uses in its "$ref"
DEMOS = ["wafer-stage.json", "greenhouse-heater.json", "magnetic-bearing.json"]
NOT_MET_SPEC = {
    "name": "not met: right-half-plane zero against a fast settling time",
    "plant": {"gain": -1, "zeros": [2], "poles": [-1, -3]},
    "requirements": {"settling_time_s": {"max": 0.2}},
    "stages": {"lead": 1, "integrator": True, "frequency_range_rad_s": [0.01, 1000]},
}
TIMEOUT_S = 300
EXIT_MET, EXIT_NOT_MET = 0, 1


class Tally:
    def __init__(self):
        self.passed = 0
        self.failed = 0

    def check(self, ok, name, detail=""):
        if ok:
            self.passed += 1
        else:
            self.failed += 1
        line = "%s: %s" % ("PASS" if ok else "FAIL", name)
        if detail:
            line += " (%s)" % detail
        print(line, flush=True)
        return ok


def load_json(path):
    with open(path, encoding="utf-8") as f:
        return json.load(f)


def make_validator(schema, spec_schema):
    """A draft 2020-12 validator that resolves "spec.schema.json" to the spec schema."""
    try:
        from referencing import Registry, Resource
        from referencing.jsonschema import DRAFT202012
    except ImportError:
        resolver = jsonschema.RefResolver.from_schema(schema, store={SPEC_REF_NAME: spec_schema})
        return Draft202012Validator(schema, resolver=resolver)
    resource = Resource.from_contents(spec_schema, default_specification=DRAFT202012)
    registry = Registry().with_resource(SPEC_REF_NAME, resource)
    return Draft202012Validator(schema, registry=registry)


def where(path):
    return "$" + "".join("[%d]" % p if isinstance(p, int) else ".%s" % p for p in path)


def errors_of(validator, instance):
    """Sorted validation errors; a schema that cannot be applied raises."""
    return sorted(validator.iter_errors(instance), key=lambda e: list(e.absolute_path))


def first_error(errors):
    e = errors[0]
    return "%s: %s" % (where(e.absolute_path), e.message[:200])


def undocumented(node, path="$"):
    """Paths of object-describing subschemas without a description."""
    out = []
    if isinstance(node, dict):
        describes_object = node.get("type") == "object" or "properties" in node
        if describes_object and "description" not in node and path != "$":
            out.append(path)
        for k, v in node.items():
            if k in ("const", "enum"):
                continue
            out.extend(undocumented(v, "%s.%s" % (path, k)))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            out.extend(undocumented(v, "%s[%d]" % (path, i)))
    return out


def run_design(binary, spec, out, timing, job="design"):
    cmd = [binary, job, str(spec), "-o", str(out), "--threads", "1"]
    if timing:
        cmd.append("--timing")
    try:
        r = subprocess.run(cmd, stdin=subprocess.DEVNULL, stdout=subprocess.PIPE,
                           stderr=subprocess.PIPE, timeout=TIMEOUT_S)
    except (OSError, subprocess.TimeoutExpired) as e:
        return None, str(e)
    return r.returncode, r.stderr.decode("utf-8", "replace").strip()


def main(argv):
    if len(argv) != 2 or not argv[1]:
        sys.stderr.write("usage: result_schema_check.py POLEWRIGHT_BINARY\n")
        return 2
    binary = os.path.abspath(argv[1])
    t = Tally()

    # 1. The schema itself.
    try:
        schema = load_json(RESULT_SCHEMA)
        spec_schema = load_json(SPEC_SCHEMA)
    except (OSError, ValueError) as e:
        t.check(False, "schema files are readable JSON", str(e))
        print("%d passed, %d failed" % (t.passed, t.failed))
        return 1
    try:
        Draft202012Validator.check_schema(schema)
        t.check(True, "%s is a valid draft 2020-12 schema" % RESULT_SCHEMA.name)
    except jsonschema.exceptions.SchemaError as e:
        t.check(False, "%s is a valid draft 2020-12 schema" % RESULT_SCHEMA.name, e.message)
    missing = undocumented(schema)
    t.check(not missing, "every object in the schema has a description",
            ", ".join(missing[:5]) if missing else "")
    validator = make_validator(schema, spec_schema)

    if not (os.path.isfile(binary) and os.access(binary, os.X_OK)):
        t.check(False, "polewright binary is an executable file", binary)
        print("%d passed, %d failed" % (t.passed, t.failed))
        return 1

    # 2. Real results.
    sample = None  # one valid result to break
    with tempfile.TemporaryDirectory(prefix="pw-result-schema-") as tmp:
        tmp = Path(tmp)
        not_met = tmp / "not-met.json"
        not_met.write_text(json.dumps(NOT_MET_SPEC, indent=1) + "\n", encoding="utf-8")
        specs = [(ROOT / "specs" / d, d[:-5]) for d in DEMOS] + [(not_met, "not-met")]
        for spec, label in specs:
            for timing in (False, True):
                name = "%s%s" % (label, " --timing" if timing else "")
                out = tmp / ("%s%s.out.json" % (label, "-timing" if timing else ""))
                rc, err = run_design(binary, spec, out, timing)
                if not t.check(rc in (EXIT_MET, EXIT_NOT_MET) and out.is_file(),
                               "%s: design ran and wrote a result" % name,
                               "exit %s%s" % (rc, ": " + err.splitlines()[-1] if err else "")):
                    continue
                try:
                    result = load_json(out)
                except ValueError as e:
                    t.check(False, "%s: result is JSON" % name, str(e))
                    continue
                status = result.get("status") if isinstance(result, dict) else None
                want_rc = EXIT_MET if status == "met" else EXIT_NOT_MET
                t.check(rc == want_rc, "%s: exit code agrees with status" % name,
                        "status %r, exit %s" % (status, rc))
                if label == "not-met":
                    t.check(status == "not_met", "%s: the problem is really not met" % name,
                            "status %r" % status)
                has_timing = isinstance(result, dict) and "timing" in result
                t.check(has_timing == timing, "%s: timing present exactly with --timing" % name,
                        "timing %s" % ("present" if has_timing else "absent"))
                try:
                    errs = errors_of(validator, result)
                except Exception as e:  # an unresolvable $ref and the like
                    t.check(False, "%s: result validates" % name, "%s: %s" % (type(e).__name__, e))
                    continue
                t.check(not errs, "%s: result validates" % name,
                        ("%d error(s); first %s" % (len(errs), first_error(errs))) if errs else "")
                if not errs and sample is None and result.get("candidates"):
                    sample = (name, result)

    # 3. Broken copies of one valid result must be rejected.
    if sample is None:
        t.check(False, "a valid result with a candidate to break")
    else:
        label, good = sample

        def extra_key(j):
            j["surprise"] = True

        def status_maybe(j):
            j["status"] = "maybe"

        def no_meets(j):
            del j["candidates"][0]["meets"]

        def unknown_requirement(j):
            j["requirements"]["overshoot_percent"] = {"max": 5}

        broken = [
            ("an extra top-level key", extra_key, []),
            ('status "maybe"', status_maybe, ["status"]),
            ('a candidate missing "meets"', no_meets, ["candidates", 0]),
            ("an unknown requirement key (via spec.schema.json)", unknown_requirement, ["requirements"]),
        ]
        for what, breaker, at in broken:
            j = copy.deepcopy(good)
            breaker(j)
            name = "%s with %s is rejected" % (label, what)
            try:
                errs = errors_of(validator, j)
            except Exception as e:
                t.check(False, name, "%s: %s" % (type(e).__name__, e))
                continue
            hits = [e for e in errs if list(e.absolute_path) == at]
            t.check(bool(hits), name,
                    ("%s" % first_error(hits)) if hits else
                    ("no error at %s%s" % (where(at), "; first " + first_error(errs) if errs else "")))

    check_retune(binary, spec_schema, t)
    print("%d passed, %d failed" % (t.passed, t.failed))
    return 0 if t.failed == 0 else 1


def check_retune(binary, spec_schema, t):
    """specs/retune-result.schema.json: derived from the design schema (and up to date), and real
    retune results of the demo specs (plus a loop that already meets) validate against it."""
    path = ROOT / "specs" / "retune-result.schema.json"
    r = subprocess.run([sys.executable, str(ROOT / "scripts" / "make_retune_schema.py"), "--check"],
                       stdout=subprocess.PIPE, stderr=subprocess.STDOUT)
    t.check(r.returncode == 0, "retune schema is the one derived from the design schema", r.stdout.decode().strip())
    schema = load_json(path)
    try:
        Draft202012Validator.check_schema(schema)
        t.check(True, "%s is a valid draft 2020-12 schema" % path.name)
    except jsonschema.exceptions.SchemaError as e:
        t.check(False, "%s is a valid draft 2020-12 schema" % path.name, e.message)
    validator = make_validator(schema, spec_schema)
    met_spec = {"plant": {"gain": 4, "poles": [0, -2]},
                "requirements": {"damping_ratio": {"min": 0.48}, "natural_frequency_rad_s": {"min": 3.9}},
                "current": {"gain": 4.68, "zeros": [-2.9], "poles": [-5.4]}}
    sample = None
    with tempfile.TemporaryDirectory(prefix="pw-retune-schema-") as tmp:
        tmp = Path(tmp)
        (tmp / "met.json").write_text(json.dumps(met_spec))
        for spec, label in [(ROOT / "specs" / d, d[:-5]) for d in DEMOS] + [(tmp / "met.json", "already-met")]:
            out = tmp / (label + ".retune.json")
            rc, err = run_design(binary, spec, out, False, job="retune")
            if not t.check(rc in (EXIT_MET, EXIT_NOT_MET) and out.is_file(), "retune %s ran" % label,
                           "exit %s: %s" % (rc, err)):
                continue
            result = load_json(out)
            errs = errors_of(validator, result)
            t.check(not errs, "retune %s: result validates" % label,
                    ("%d error(s); first %s" % (len(errs), first_error(errs))) if errs else "")
            if label == "already-met":
                t.check(result.get("unchanged") is True and rc == EXIT_MET, "retune of a loop that meets is unchanged")
            elif not errs and result.get("candidates") and sample is None:
                sample = result
    if sample is not None:
        broken = copy.deepcopy(sample)
        del broken["candidates"][0]["changes"]
        t.check(bool(errors_of(validator, broken)), "a retune candidate without its changes is rejected")
        broken = copy.deepcopy(sample)
        broken["candidates"][0]["changes"][0]["item"] = "corner"
        t.check(bool(errors_of(validator, broken)), "a change of an unknown item is rejected")


if __name__ == "__main__":
    sys.exit(main(sys.argv))
