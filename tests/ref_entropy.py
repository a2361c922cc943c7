#!/usr/bin/python3
"""ref_entropy.py -- hand-checked entropy, growth rate and fixed-point
numbers of `nilstep report --format json`, evaluated with mpmath at 50
digits.

Entropy of the induced nilmanifold map: the sum of log|lambda| over all
eigenvalues lambda of all layer matrices with |lambda| > 1 (R. Bowen,
"Entropy for group endomorphisms and homogeneous spaces", Trans. AMS 153,
1971).  Growth rate rho_1 when rho_1 >= 1 (T. Koberda 2013; A. Fel'shtyn,
J. H. Jo and J. B. Lee, arXiv:1411.6360, 2014).

The examples, worked by hand:

1. free(2), class 3, a -> a^2 b, b -> a b.  M1 = [[2,1],[1,1]] (columns are
   the exponent sums of the images), charpoly x^2 - 3x + 1, eigenvalues
   phi^2 and phi^-2 with phi^2 = (3 + sqrt 5)/2.  M2 = (det M1) = (1).
   Layer 3 is L1 (x) L2 (rank 2), so M3 has the eigenvalues phi^2 * 1 and
   phi^-2 * 1 and the charpoly x^2 - 3x + 1 again.  Entropy
   2 log((3 + sqrt 5)/2); growth rate (3 + sqrt 5)/2; det(I - M2) = 0, so
   L = 0 and R is infinite.

2. free(2), class 3, a -> a^2, b -> b^2 (doubling).  The map multiplies
   layer j by 2^j: M1 = 2I (rank 2), M2 = (4), M3 = 8I (rank 2).  Entropy
   (2*1 + 1*2 + 2*3) log 2 = 10 log 2; growth rate 2; L = (1-2)^2 (1-4)
   (1-8)^2 = -147, R = 147; expanding and hyperbolic.

3. The Heisenberg group <a, b | [a,b,a], [a,b,b]>, class 3 (it stops at
   class 2), a -> a^2, b -> b^3: M1 = diag(2, 3), M2 = (6).  Entropy
   log 2 + log 3 + log 6 = 2 log 6; L = (1-2)(1-3)(1-6) = -10, R = 10;
   image index 2*3*6 = 36.

Exit 77 (skipped) when NILSTEP_BINARY is not set.
"""

import json
import os
import subprocess
import sys

import mpmath

BINARY = os.environ.get("NILSTEP_BINARY")
if not BINARY:
    print("NILSTEP_BINARY is not set: skipped")
    sys.exit(77)

mpmath.mp.dps = 50
FAILURES = []


def fail(msg):
    FAILURES.append(msg)
    print("FAIL: " + msg)


def report(group, cls, mapping):
    cmd = [BINARY, "report", "--format", "json", "--group", group,
           "--class", str(cls), "--map", mapping]
    p = subprocess.run(cmd, capture_output=True, text=True)
    if p.returncode != 0:
        raise SystemExit(f"{' '.join(cmd)}: exit {p.returncode}\n{p.stderr}")
    return json.loads(p.stdout)["map"]


def close(label, s, x):
    """s has 30 significant digits, correct to one unit in the last place."""
    ulp = mpmath.mpf(10) ** (mpmath.floor(mpmath.log10(abs(x))) - 29)
    err = abs(mpmath.mpf(s) - x)
    if err > ulp:
        fail(f"{label}: nilstep {s}, expected {mpmath.nstr(x, 35)} "
             f"(off by {mpmath.nstr(err / ulp, 3)} units in the 30th digit)")
    else:
        print(f"ok {label}: {s}")


def equal(label, got, want):
    if got != want:
        fail(f"{label}: nilstep {got!r}, expected {want!r}")
    else:
        print(f"ok {label}: {got!r}")


# 1
m = report("free(2)", 3, "a -> a^2 b, b -> a b")
phi2 = (3 + mpmath.sqrt(5)) / 2
equal("example 1 M1", m["layers"][0]["matrix"], [[2, 1], [1, 1]])
equal("example 1 M2", m["layers"][1]["matrix"], [[1]])
equal("example 1 charpoly M3", m["layers"][2]["charpoly"], [1, -3, 1])
close("example 1 entropy", m["entropy"], 2 * mpmath.log(phi2))
close("example 1 growth rate", m["growth_rate"], phi2)
close("example 1 log growth rate", m["log_growth_rate"], mpmath.log(phi2))
close("example 1 rho_3^(1/3)", m["layers"][2]["root_bound"], mpmath.cbrt(phi2))
equal("example 1 Lefschetz", m["lefschetz"], 0)
equal("example 1 Reidemeister", m["reidemeister"], "infinite")
equal("example 1 hyperbolic", m["hyperbolic"], False)

# 2
m = report("free(2)", 3, "a -> a^2, b -> b^2")
close("example 2 entropy", m["entropy"], 10 * mpmath.log(2))
equal("example 2 growth rate", m["growth_rate"], "2")
equal("example 2 rho_3", m["layers"][2]["spectral_radius"], "8")
equal("example 2 rho_3^(1/3)", m["layers"][2]["root_bound"], "2")
equal("example 2 Lefschetz", m["lefschetz"], -147)
equal("example 2 Reidemeister", m["reidemeister"], 147)
equal("example 2 expanding", m["expanding"], True)
equal("example 2 hyperbolic", m["hyperbolic"], True)
equal("example 2 automorphism", m["automorphism"], False)

# 3
m = report("<a, b | [a,b,a], [a,b,b]>", 3, "a -> a^2, b -> b^3")
close("example 3 entropy", m["entropy"], 2 * mpmath.log(6))
close("example 3 rho_2^(1/2)", m["layers"][1]["root_bound"], mpmath.sqrt(6))
equal("example 3 M2", m["layers"][1]["matrix"], [[6]])
equal("example 3 Lefschetz", m["lefschetz"], -10)
equal("example 3 Reidemeister", m["reidemeister"], 10)
equal("example 3 image index", m["image_index"], 36)
equal("example 3 layer 3", m["layers"][2]["matrix"], [])

print(f"# {len(FAILURES)} failures")
sys.exit(1 if FAILURES else 0)
