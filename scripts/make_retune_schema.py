#!/usr/bin/python3
"""Derive specs/retune-result.schema.json from specs/result.schema.json.

A retune result has the design result's layout (same plants, requirements, region, candidates'
metrics and poles) with these differences: tool.job is "retune"; no objective, binding or limits;
"unchanged" and "current" at the top; per candidate no objective, and added_stages,
change_decades, response_change_decades and changes. Deriving keeps the two in step; the schema
test checks that the committed file equals this script's output.

    /usr/bin/python3 scripts/make_retune_schema.py [--check]
"""
import copy
import json
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SRC = ROOT / "specs" / "result.schema.json"
DST = ROOT / "specs" / "retune-result.schema.json"


def derive(design):
    s = copy.deepcopy(design)
    s["title"] = "polewright retune result"
    s["description"] = ("The JSON result of `polewright retune SPEC -o OUT.json [--timing]` (also `--json`): the "
                        "design result's layout (result.schema.json, from which this file is derived by "
                        "scripts/make_retune_schema.py) with the compensator in service and, per candidate, "
                        "its change. Numbers that do not exist or are infinite are null.")
    p = s["properties"]
    p["tool"]["properties"]["job"]["const"] = "retune"
    for k in ("objective", "binding", "limits"):
        p.pop(k)
        s["required"].remove(k)
    p["status"]["description"] = ("\"met\" when the current compensator or the first candidate meets every "
                                  "requirement for every plant, \"not_met\" otherwise")
    p["unchanged"] = {"type": "boolean",
                      "description": "the current compensator already meets everything: nothing was changed and there are no candidates"}
    cur = copy.deepcopy(s["$defs"]["candidate"])
    for k in ("rank", "objective", "structure"):
        cur["properties"].pop(k)
        cur["required"].remove(k)
    cur["description"] = "the compensator in service, verified at full accuracy"
    p["current"] = cur
    cand = s["$defs"]["candidate"]
    cand["properties"].pop("objective")
    cand["required"].remove("objective")
    cand["properties"]["structure"] = {
        "type": "array", "items": {"type": "string"}, "minItems": 1,
        "description": "\"current\" (the structure in service), then \"added lead/lag\", \"added integrator\" or \"added notch\""}
    cand["properties"]["added_stages"] = {"type": "array", "items": {"enum": ["lead/lag", "integrator", "notch"]},
                                          "description": "stages added to the structure in service (only with --allow-new-stages)"}
    cand["properties"]["change_decades"] = {"type": "number", "minimum": 0,
                                            "description": "change distance in decades (README: retune)"}
    cand["properties"]["response_change_decades"] = {"type": "number", "minimum": 0,
                                                     "description": "RMS of |log10(C_new(jw)/C_old(jw))| over the frequency range"}
    value = {"anyOf": [{"$ref": "#/$defs/root"}, {"type": "null"}]}  # a root is a number or {re, im}
    cand["properties"]["changes"] = {
        "type": "array", "description": "every gain, zero and pole: old and new value and what drove the change",
        "items": {"type": "object", "additionalProperties": False,
                  "required": ["item", "index", "old", "new", "percent_change", "driven_by"],
                  "properties": {
                      "item": {"enum": ["gain", "zero", "pole"]},
                      "index": {"type": "integer", "minimum": 0, "description": "1-based among the zeros (poles); 0 for the gain"},
                      "old": dict(value, description="the value in service (the low-frequency gain, or a root; a pair by its upper root); null for an added root"),
                      "new": dict(value, description="the retuned value"),
                      "percent_change": {"type": ["number", "null"], "description": "of the gain or of |root|; null for an added root"},
                      "driven_by": {"type": ["string", "null"], "description": "the requirement (metric.max or metric.min) that fails when this change alone is undone"},
                      "old_damping": {"type": ["number", "null"]},
                      "new_damping": {"type": ["number", "null"]}}}}
    for k in ("added_stages", "change_decades", "response_change_decades", "changes"):
        cand["required"].append(k)
    p["search"]["properties"].pop("budget_stop", None)
    if "budget_stop" in p["search"].get("required", []):
        p["search"]["required"].remove("budget_stop")
    p["timing"]["properties"] = {k: v for k, v in p["timing"]["properties"].items() if k in ("seconds", "threads", "phase_seconds")}
    p["timing"]["required"] = [k for k in p["timing"].get("required", []) if k in ("seconds", "threads", "phase_seconds")]
    s["allOf"] = [{
        "description": "status agrees with the candidates: met when nothing changed or the first candidate meets everything",
        "if": {"properties": {"unchanged": {"const": True}}, "required": ["unchanged"]},
        "then": {"properties": {"status": {"const": "met"}, "candidates": {"maxItems": 0}}},
        "else": {"if": {"properties": {"status": {"const": "met"}}, "required": ["status"]},
                 "then": {"properties": {"candidates": {"minItems": 1, "prefixItems": [{"properties": {"meets": {"const": True}}}]}}},
                 "else": {"properties": {"candidates": {"prefixItems": [{"properties": {"meets": {"const": False}}}]}}}}}]
    # keep the key order of the design schema, with the retune keys before "candidates"
    order = [k for k in design["properties"] if k in p]
    order.insert(order.index("candidates"), "unchanged")
    order.insert(order.index("candidates"), "current")
    s["properties"] = {k: p[k] for k in order}
    req = s["required"]
    req.insert(req.index("candidates"), "unchanged")
    req.insert(req.index("candidates"), "current")
    return s


def main():
    text = json.dumps(derive(json.loads(SRC.read_text())), indent=2) + "\n"
    if "--check" in sys.argv:
        same = DST.exists() and DST.read_text() == text
        print("retune schema is up to date" if same else "specs/retune-result.schema.json is stale: run scripts/make_retune_schema.py")
        return 0 if same else 1
    DST.write_text(text)
    return 0


if __name__ == "__main__":
    sys.exit(main())
