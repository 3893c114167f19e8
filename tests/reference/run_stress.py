#!/usr/bin/python3
"""Runs `polewright check` (and, for a few cases, `design`) on every numerical stress case of a
fixture written by make_stress_fixture.py and compares with its numpy/scipy reference values.

    /usr/bin/python3 tests/reference/run_stress.py POLEWRIGHT_BINARY [FIXTURE] [--no-design]

Per case (stdlib only):
  * `check SPEC --json` and `check SPEC` (text) with the case's plant and compensator; exit code
    0 or 1 (1 where the loop is meant to be unstable), or 2 with exactly one stderr line naming
    the expected JSON path for a refused unstable cancellation;
  * no NaN or infinity in any output: the JSON is parsed with NaN/Infinity rejected and both texts
    are scanned for the tokens nan / inf / infinity;
  * a case that expects a conditioning warning finds it in the JSON `warnings` and in the text;
    every other case has none;
  * every reference closed-loop pole has its own computed pole within the case's stated relative
    tolerance (matched one to one, nearest first); the plant poles (from the root-locus open-loop
    poles) likewise; phase margin within 0.3 deg, gain margins within 0.2 dB, crossover within
    1e-4 relative, and a margin that does not exist (null) must be null.
Design cases (`design` flag): `design SPEC -o OUT.json --threads 1` must finish (exit 0 or 1) without
NaN/Inf in text or JSON; every candidate that claims to meet is re-checked with `check
--compensator` (exit 0 required); when numpy/scipy are importable, the top candidate's stability
and margins are recomputed with make_stress_fixture.py's reference code and must agree with what
the design result claims.
Prints a table of the worst relative pole error and margin errors per case; exit 0 when all pass.
"""

import json
import math
import os
import re
import subprocess
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))
BAD_TOKEN = re.compile(r"(?<![A-Za-z_])(nan|inf|infinity)(?![A-Za-z_])", re.IGNORECASE)

DESIGN_SETTINGS = {
    "order20_modes_lead": {
        "requirements": {"phase_margin_deg": {"min": 45}, "gain_margin_db": {"min": 10},
                         "crossover_rad_s": {"min": 0.5}},
        "stages": {"lead": 1, "frequency_range_rad_s": [0.01, 100]},
    },
    "three_integrators_double_lead": {
        "requirements": {"phase_margin_deg": {"min": 30}, "gain_margin_db": {"min": 6}},
        "stages": {"lead": 2, "frequency_range_rad_s": [0.01, 100]},
    },
    "repeated8_coefficients": {
        "requirements": {"phase_margin_deg": {"min": 45}, "gain_margin_db": {"min": 6}},
        "stages": {"lead": 1, "frequency_range_rad_s": [0.01, 100]},
    },
    "dead_time_20tau_PI": {
        "requirements": {"phase_margin_deg": {"min": 45}, "gain_margin_db": {"min": 6},
                         "steady_state_error": {"max": 0.0}},
        "stages": {"lag": 1, "integrator": True, "frequency_range_rad_s": [0.0005, 1]},
    },
}


def reject_constant(name):
    raise ValueError("JSON holds " + name)


def run(args):
    p = subprocess.run(args, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, timeout=600)
    return p.returncode, p.stdout, p.stderr


def scan(label, text, fails):
    m = BAD_TOKEN.search(text)
    if m:
        a = max(0, m.start() - 60)
        fails.append("%s contains %r: ...%s..." % (label, m.group(0), text[a:m.end() + 20].replace("\n", " ")))


def parse_json(label, text, fails):
    try:
        return json.loads(text, parse_constant=reject_constant)
    except ValueError as e:
        fails.append("%s: not strict JSON (%s)" % (label, e))
        return None


def match(expected, got):
    """One-to-one nearest matching: list of (want, got) pairs, expected order."""
    pairs = sorted(((abs(w - g), i, j) for i, w in enumerate(expected) for j, g in enumerate(got)))
    used_i, used_j, out = set(), set(), {}
    for d, i, j in pairs:
        if i in used_i or j in used_j:
            continue
        used_i.add(i)
        used_j.add(j)
        out[i] = got[j]
    return [out.get(i) for i in range(len(expected))]


def spec_for(case, extra=None):
    spec = {"name": "stress " + case["name"], "plant": case["plant"], "current": case["compensator"],
            "requirements": {"phase_margin_deg": {"min": 20}},
            "analysis": {"pade_order": case["pade_order"]}}
    if extra:
        spec.update(extra)
    return spec


def compare_check(case, out, fails):
    """Returns (worst pole rel error, worst plant-pole rel error, PM error deg, GM error dB)."""
    x = case["expected"]
    v = out["variants"][0]
    got = [complex(p["re"], p["im"]) for p in out["closed_loop_poles"]]
    want = [complex(a, b) for a, b in x["closed_loop_poles"]]
    if len(got) != len(want):
        fails.append("%d closed-loop poles, reference has %d" % (len(got), len(want)))
    worst_pole = 0.0
    for w, g, tol in zip(want, match(want, got), x["pole_tolerance_rel"]):
        if g is None:
            continue
        e = abs(g - w) / abs(w)
        worst_pole = max(worst_pole, e)
        if e > tol:
            fails.append("closed-loop pole %s: got %s, relative error %.3g > %.3g" % (w, g, e, tol))
    if out["stable"] != x["stable"]:
        fails.append("stable is %s, reference %s" % (out["stable"], x["stable"]))
    ol = [complex(p["re"], p["im"]) for p in out["locus"]["open_loop_poles"]]
    wantp = [complex(a, b) for a, b in x["plant_poles"]]
    worst_plant = 0.0
    for w, g, tol in zip(wantp, match(wantp, ol), x["plant_pole_tolerance_rel"]):
        if g is None:
            fails.append("plant pole %s missing from the open-loop poles" % w)
            continue
        e = abs(g - w) / abs(w) if abs(w) > 0 else abs(g)
        worst_plant = max(worst_plant, e)
        if e > tol:
            fails.append("plant pole %s: got %s, relative error %.3g > %.3g" % (w, g, e, tol))
    m = v["metrics"]
    tol = case["tolerance"]
    errs = {"pm": 0.0, "gm": 0.0, "wc": 0.0}
    for key, kind, t in (("phase_margin_deg", "pm", tol["phase_margin_deg"]),
                         ("gain_margin_db", "gm", tol["gain_margin_db"]),
                         ("gain_increase_db", "gm", tol["gain_margin_db"]),
                         ("gain_reduction_db", "gm", tol["gain_margin_db"]),
                         ("crossover_rad_s", "wc", tol["crossover_rel"])):
        want_v, got_v = x[key], m.get(key)
        if want_v is None or got_v is None:
            if (want_v is None) != (got_v is None):
                fails.append("%s: got %s, reference %s" % (key, got_v, want_v))
            continue
        e = abs(got_v - want_v) / (abs(want_v) if kind == "wc" else 1.0)
        errs[kind] = max(errs[kind], e)
        if e > t:
            fails.append("%s: got %.10g, reference %.10g (error %.3g > %.3g)" % (key, got_v, want_v, e, t))
    return worst_pole, worst_plant, errs


def design_case(binary, case, tmp, fails, ref):
    settings = DESIGN_SETTINGS.get(case["name"])
    if settings is None:
        fails.append("no design settings for " + case["name"])
        return "-"
    spec = spec_for(case, {"requirements": settings["requirements"], "stages": settings["stages"],
                           "search": {"seed": 1, "keep": 3, "max_evaluations": 30000, "time_limit_s": 60}})
    path = os.path.join(tmp, case["name"] + ".design-spec.json")
    with open(path, "w") as f:
        json.dump(spec, f)
    out_path = os.path.join(tmp, case["name"] + ".design.json")
    rc, txt, err = run([binary, "design", path, "-o", out_path, "--threads", "1"])
    if rc not in (0, 1):
        fails.append("design exit %d: %s" % (rc, err.strip()[:300]))
        return "error"
    with open(out_path) as f:
        js = f.read()
    scan("design JSON", js, fails)
    scan("design text", txt, fails)
    doc = parse_json("design JSON", js, fails)
    if doc is None:
        return "error"
    warn = case["expect"].get("warning")
    if warn and not any(warn in w for w in doc.get("warnings", [])):
        fails.append("design result lacks the warning %r" % warn)
    if not warn and doc.get("warnings"):
        fails.append("unexpected design warnings: %s" % doc["warnings"])
    if (rc == 0) != (doc["status"] == "met"):
        fails.append("design exit code %d disagrees with status %s" % (rc, doc["status"]))
    for c in doc["candidates"]:
        if c["meets"]:
            cp = os.path.join(tmp, "%s.cand%d.json" % (case["name"], c["rank"]))
            comp = {k: c["compensator"][k] for k in ("gain", "zeros", "poles")}
            with open(cp, "w") as f:
                json.dump(comp, f)
            rc3, cj, cerr = run([binary, "check", path, "--compensator", cp, "--json"])
            if rc3 != 0:
                fails.append("candidate %d claims to meet, check says exit %d %s" % (c["rank"], rc3, cerr.strip()))
            scan("check of candidate", cj, fails)
        if c["meets"] and not c["stable"]:
            fails.append("candidate %d meets but is not stable" % c["rank"])
    verdict = doc["status"]
    if ref is not None and doc["candidates"]:
        top = doc["candidates"][0]
        comp = {k: top["compensator"][k] for k in ("gain", "zeros", "poles")}
        probe = dict(case, compensator=comp)
        pol = ref.closed_loop_poles(probe)[1]
        stable = bool(all(p.real < 0 for p in pol))
        if stable != top["stable"]:
            fails.append("top candidate stable=%s, reference %s" % (top["stable"], stable))
        if stable:
            mr = ref.margins(*ref_loop(ref, probe), float(case["plant"].get("delay_s", 0.0)))
            for key, t in (("phase_margin_deg", 0.3), ("gain_margin_db", 0.2)):
                a, b = top["metrics"].get(key), mr[key]
                if (a is None) != (b is None) or (a is not None and abs(a - b) > t):
                    fails.append("top candidate %s %s, reference %s" % (key, a, b))
        verdict += ", top re-verified"
    return verdict


def ref_loop(ref, case):
    """(K, zeros, poles) of C G without the delay, from the reference code."""
    import numpy as np
    kg, zg, pg = ref.roots_of(case["plant"], lambda d: ref.plant_coefficient_roots(case))
    kc, zc, pc = ref.roots_of(case["compensator"], None)
    return kc * kg, np.concatenate([zc, zg]), np.concatenate([pc, pg])


def main():
    args = [a for a in sys.argv[1:] if not a.startswith("--")]
    do_design = "--no-design" not in sys.argv
    if not args:
        print(__doc__)
        return 2
    binary = args[0]
    fixture = args[1] if len(args) > 1 else os.path.join(HERE, "stress_fixture.json")
    with open(fixture) as f:
        doc = json.load(f)
    ref = None
    try:
        sys.path.insert(0, HERE)
        import make_stress_fixture as ref  # noqa: needs numpy/scipy
    except ImportError:
        print("numpy/scipy not importable: design candidates are re-checked but not recomputed")
    rows, failed = [], 0
    with tempfile.TemporaryDirectory(prefix="polewright-stress.") as tmp:
        for case in doc["cases"]:
            fails = []
            path = os.path.join(tmp, case["name"] + ".json")
            with open(path, "w") as f:
                json.dump(spec_for(case), f)
            rc, js, err = run([binary, "check", path, "--json"])
            rct, txt, errt = run([binary, "check", path])
            for label, t in (("check JSON", js), ("check text", txt), ("stderr", err + errt)):
                scan(label, t, fails)
            exp = case["expect"]
            row = [case["name"], "-", "-", "-", "-", "-", "-"]
            if exp.get("exit_code") == 2:
                lines = err.splitlines()
                if rc != 2 or rct != 2:
                    fails.append("exit %d/%d, expected 2" % (rc, rct))
                if len(lines) != 1 or exp["error_path"] not in err:
                    fails.append("stderr is not one line naming %s: %r" % (exp["error_path"], err))
                if js.strip():
                    fails.append("stdout not empty on an error")
                row[6] = "exit 2: " + (lines[0].split(": ", 2)[-1][:60] if lines else "")
            else:
                want_rc = exp.get("exit_code")
                if rc not in (0, 1) or rct != rc or (want_rc is not None and rc != want_rc):
                    fails.append("exit %d/%d (expected %s): %s" % (rc, rct, want_rc or "0 or 1", err.strip()[:200]))
                out = parse_json("check JSON", js, fails) if rc in (0, 1) else None
                if out is not None:
                    warn = exp.get("warning")
                    if warn and not any(warn in w for w in out["warnings"]):
                        fails.append("no conditioning warning %r: %s" % (warn, out["warnings"]))
                    if warn and warn.split(":")[0] not in txt:
                        fails.append("the text report does not carry the warning")
                    if not warn and out["warnings"]:
                        fails.append("unexpected warnings: %s" % out["warnings"])
                    wp, wpl, errs = compare_check(case, out, fails)
                    row[1:6] = ["%.1e" % wp, "%.1e" % max(case["expected"]["pole_tolerance_rel"]),
                                "%.1e" % wpl, "%.1e" % errs["pm"], "%.1e" % errs["gm"]]
                    row[6] = "stable" if out["stable"] else "unstable (exit %d)" % rc
                if case.get("design") and do_design:
                    row[6] += "; design " + design_case(binary, case, tmp, fails, ref)
            rows.append(row)
            if fails:
                failed += 1
                print("FAIL %s" % case["name"])
                for f_ in fails:
                    print("     " + f_)
    head = ["case", "pole err", "pole tol", "plant pole err", "PM err deg", "GM err dB", "outcome"]
    widths = [max(len(str(r[i])) for r in rows + [head]) for i in range(len(head))]
    for r in [head] + rows:
        print("  ".join(str(c).ljust(w) for c, w in zip(r, widths)))
    print("%d cases, %d failed" % (len(rows), failed))
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
