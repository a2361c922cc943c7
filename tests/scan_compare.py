#!/usr/bin/python3
"""Checks `nilstep scan` output against `nilstep report` run on each member.

    scan_compare.py NILSTEP GROUP CLASS SCAN.jsonl

Every line of SCAN.jsonl is one member; its map is run through
`nilstep report --format json` in a process of its own and every key of the
scan line is compared with the report's value (the report is the reference:
it is the long-standing single-map path, not the scan's shared quotient,
threads or template substitution).  Prints the number of members checked
and of those not well defined; exits 1 on the first difference.
"""
import json
import subprocess
import sys

nilstep, group, cls, path = sys.argv[1:5]

KEYS_VALID = ["group", "class", "map", "valid", "growth_rate", "growth_rate_minpoly", "lower_bound",
              "lower_bound_layer", "upper_bound", "upper_bound_layer", "entropy",
              "lefschetz", "nielsen", "reidemeister", "automorphism", "injective",
              "image_index", "hyperbolic", "expanding", "spectral_radii"]
KEYS_INVALID = ["group", "class", "map", "valid", "failing_relator", "failing_image"]


def expected(rep):
    m = rep["map"]
    e = {"map": m["text"], "valid": m["valid"], "group": rep["group"]["presentation"],
         "class": rep["group"]["class"]}
    if not m["valid"]:
        e["failing_relator"] = m["failures"][0]["relator"]
        e["failing_image"] = m["failures"][0]["image"]
        return e
    for k in ["growth_rate", "lower_bound", "lower_bound_layer", "upper_bound",
              "upper_bound_layer", "entropy", "lefschetz", "nielsen", "reidemeister",
              "automorphism", "injective", "image_index", "hyperbolic", "expanding"]:
        e[k] = m[k]
    e["spectral_radii"] = [L["spectral_radius"] for L in m["layers"]]
    # the minimal polynomial of the growth rate: that of rho_1 when the
    # growth rate is rho_1, else the rate is exactly 0 or 1 (README, "Why
    # the growth rate is rho_1")
    L1 = m["layers"][0]
    if m["growth_rate"] == L1["spectral_radius"] and m["growth_rate"] != "0":
        e["growth_rate_minpoly"] = L1["spectral_radius_minpoly"]
    else:
        e["growth_rate_minpoly"] = {"0": "x", "1": "x - 1"}[m["growth_rate"]]
    return e


n = invalid = 0
with open(path) as f:
    for lineno, line in enumerate(f, 1):
        got = json.loads(line)
        r = subprocess.run([nilstep, "report", "--group", group, "--class", cls,
                            "--map", got["map"], "--format", "json"],
                           capture_output=True, text=True)
        if r.returncode not in (0, 1):
            print(f"{path}:{lineno}: report failed: {r.stderr}")
            sys.exit(1)
        exp = expected(json.loads(r.stdout))
        if (r.returncode == 1) != (not exp["valid"]):
            print(f"{path}:{lineno}: report exit status {r.returncode} for valid={exp['valid']}")
            sys.exit(1)
        keys = KEYS_VALID if exp["valid"] else KEYS_INVALID
        extra = set(got) - set(keys) - {"index", "params", "id", "line"}
        if extra:
            print(f"{path}:{lineno}: keys not checked: {sorted(extra)}")
            sys.exit(1)
        for k in keys:
            if got.get(k, "<missing>") != exp[k]:
                print(f"{path}:{lineno}: {k}: scan {got.get(k, '<missing>')!r}, "
                      f"report {exp[k]!r}")
                sys.exit(1)
        n += 1
        invalid += not exp["valid"]
print(f"{n} members equal to report ({invalid} not well defined)")
