#!/usr/bin/python3
"""Check that specs/spec.schema.json, the demo specs, the schema test cases and the
polewright binary agree.

Usage (from anywhere; paths are taken relative to the repository root):

    /usr/bin/python3 tests/schema/schema_agreement.py [POLEWRIGHT_BINARY]

* The schema itself is checked with Draft202012Validator.check_schema.
* specs/*.json (except *.schema.json) are demo specs and must be valid.
* tests/schema/cases/good-*.json must be valid, tests/schema/cases/bad-*.json invalid;
  any other name in that folder is a failure.
* Every file is validated with jsonschema (draft 2020-12). When POLEWRIGHT_BINARY is
  given and exists, `POLEWRIGHT_BINARY validate FILE` must agree: exit 0 for a valid
  file, exit 2 with exactly one line on stderr for an invalid one.

Prints one line per file and a last line "N passed, M failed"; exits 1 on any failure.
Needs the jsonschema package (Debian: python3-jsonschema).
"""
import json
import os
import shutil
import subprocess
import sys
from pathlib import Path

try:
    import jsonschema
except ImportError:  # pragma: no cover - depends on the machine
    sys.stderr.write("schema_agreement: the jsonschema package is missing "
                     "(Debian: apt-get install python3-jsonschema)\n")
    sys.exit(2)

ROOT = Path(__file__).resolve().parents[2]
SCHEMA = ROOT / "specs" / "spec.schema.json"
CASES = ROOT / "tests" / "schema" / "cases"
TIMEOUT_S = 60


def rel(path):
    try:
        return str(path.relative_to(ROOT))
    except ValueError:
        return str(path)


def find_binary(argv):
    if len(argv) < 2 or not argv[1]:
        return None
    arg = argv[1]
    if os.path.isfile(arg) and os.access(arg, os.X_OK):
        return os.path.abspath(arg)
    if os.sep not in arg:
        found = shutil.which(arg)
        if found:
            return found
    return None


def schema_verdict(validator, path):
    """(valid, reason) from the schema; a file that is not JSON is invalid."""
    try:
        with open(path, encoding="utf-8") as f:
            instance = json.load(f)
    except (OSError, ValueError) as e:
        return False, "not readable JSON: %s" % e
    errors = sorted(validator.iter_errors(instance), key=lambda e: list(e.absolute_path))
    if not errors:
        return True, ""
    e = errors[0]
    where = "$" + "".join("[%d]" % p if isinstance(p, int) else ".%s" % p for p in e.absolute_path)
    return False, "%s: %s" % (where, e.message)


def binary_verdict(binary, path):
    """(valid or None, reason); None means the binary's answer breaks the contract."""
    try:
        r = subprocess.run([binary, "validate", str(path)], stdin=subprocess.DEVNULL,
                           stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                           timeout=TIMEOUT_S)
    except subprocess.TimeoutExpired:
        return None, "binary timed out after %d s" % TIMEOUT_S
    except OSError as e:
        return None, "binary could not run: %s" % e
    err = r.stderr.decode("utf-8", "replace")
    lines = [l for l in err.splitlines() if l.strip()]
    if r.returncode == 0:
        return True, ""
    if r.returncode == 2:
        if len(lines) != 1:
            return None, "exit 2 with %d stderr lines (want exactly 1): %r" % (len(lines), err[:300])
        return False, lines[0]
    return None, "binary exit %d (want 0 or 2): %r" % (r.returncode, err[:300])


def main(argv):
    binary = find_binary(argv)
    if binary is None:
        if len(argv) >= 2 and argv[1]:
            sys.stderr.write("schema_agreement: binary %r not found; schema checks only\n" % argv[1])
        else:
            sys.stderr.write("schema_agreement: no binary given; schema checks only\n")

    passed = failed = 0

    def result(ok, name, text):
        nonlocal passed, failed
        if ok:
            passed += 1
        else:
            failed += 1
        print("%s %s: %s" % ("PASS" if ok else "FAIL", name, text))

    # 1. the schema itself
    try:
        with open(SCHEMA, encoding="utf-8") as f:
            schema = json.load(f)
        jsonschema.Draft202012Validator.check_schema(schema)
        if schema.get("$schema") != "https://json-schema.org/draft/2020-12/schema":
            raise jsonschema.exceptions.SchemaError('"$schema" is not draft 2020-12')
    except (OSError, ValueError, jsonschema.exceptions.SchemaError) as e:
        result(False, rel(SCHEMA), "not a valid draft 2020-12 schema: %s" % str(e).splitlines()[0])
        print("%d passed, %d failed" % (passed, failed))
        return 1
    result(True, rel(SCHEMA), "valid draft 2020-12 schema")
    validator = jsonschema.Draft202012Validator(schema)

    # 2. the files and what each must be
    files = []  # (path, expected_valid or None when the name is not understood)
    for p in sorted((ROOT / "specs").glob("*.json")):
        if not p.name.endswith(".schema.json"):
            files.append((p, True))
    for p in sorted(CASES.glob("*")):
        if p.name.startswith("good-") and p.suffix == ".json":
            files.append((p, True))
        elif p.name.startswith("bad-") and p.suffix == ".json":
            files.append((p, False))
        elif p.is_file():
            files.append((p, None))

    for path, expected in files:
        name = rel(path)
        if expected is None:
            result(False, name, 'name must start with "good-" or "bad-" and end in ".json"')
            continue
        want = "valid" if expected else "invalid"
        s_ok, s_why = schema_verdict(validator, path)
        problems = []
        if s_ok != expected:
            problems.append("schema says %s, want %s%s" % ("valid" if s_ok else "invalid", want,
                                                         " (%s)" % s_why if s_why else ""))
        detail = "schema %s" % ("valid" if s_ok else "invalid")
        if binary is not None:
            b_ok, b_why = binary_verdict(binary, path)
            if b_ok is None:
                problems.append(b_why)
            else:
                detail += ", binary %s" % ("valid" if b_ok else "invalid")
                if b_ok != expected:
                    problems.append("binary says %s, want %s%s" % ("valid" if b_ok else "invalid", want,
                                                                 " (%s)" % b_why if b_why else ""))
                if b_ok != s_ok:
                    problems.append("binary and schema disagree")
        if problems:
            result(False, name, "; ".join(problems))
        else:
            result(True, name, detail + (" (%s)" % s_why if s_why else ""))

    print("%d passed, %d failed" % (passed, failed))
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
