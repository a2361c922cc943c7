#!/usr/bin/python3
"""ref_layer_charpoly.py -- the characteristic polynomials of the layers of
groups that are not free, against sympy, and the coefficient bound the
engine takes them with, recomputed here.

For layer j >= 2 of a group that is not free, nilstep computes det(xI - M_j)
modulo as many primes as a bound from layer 1 asks for (src/charpoly.h,
charpoly_lie_bound_bits): det(xI - M_j) divides det(xI - L_j(M_1)), whose
roots are the products lambda^alpha of the layer-1 eigenvalues over the
contents alpha of the Lyndon words of length j, alpha counted
m(alpha) = (1/j) sum_{e | gcd alpha} mu(e) (j/e)! / prod (alpha_i/e)! times
(E. Witt, J. reine angew. Math. 177, 1937), so every coefficient is at most
the product of 1 + |lambda^alpha| over the d_j largest.

For each case this script runs `nilstep report --format json` and checks,
per layer:
  - the "charpoly" array equals sympy's Matrix.charpoly of the "matrix"
    array (an independent computation from the same matrix);
  - every coefficient is at most that product, computed here from
    mpmath's roots (60 digits) of sympy's characteristic polynomial of the
    layer-1 matrix, the contents enumerated by itertools and m(alpha) by
    sympy's Moebius function and factorials -- a check of the mathematics,
    with none of the engine's code;
  - the contents' counts add up to Witt's rank (1/j) sum_{e|j} mu(e) r^(j/e),
    which is at least the layer's dimension.
Exit 77 (skipped) when NILSTEP_BINARY is not set.
"""

import itertools
import json
import math
import os
import subprocess
import sys

import mpmath
import sympy

BINARY = os.environ.get("NILSTEP_BINARY")
if not BINARY:
    print("NILSTEP_BINARY is not set: skipped")
    sys.exit(77)

mpmath.mp.dps = 60
X = sympy.Symbol("x")
FAILURES = []

TWISTS2 = "a1 -> b1 a1, b1 -> b1 a1 b1, a2 -> b2 a2, b2 -> b2 a2 b2"
CASES = [
    # (group, class, map); the surface maps keep each [a_i, b_i]
    ("surface(2)", 5, TWISTS2),
    ("surface(2)", 5, "a1 -> a2, b1 -> b2, a2 -> b1 a1, b2 -> b1"),
    ("<a, b, c | [a, b]>", 5, "a -> a^2 b, b -> a b, c -> c a^-1 b c"),
    ("<a, b, c | [a, b]^6>", 4, "a -> a b, b -> b a b, c -> c^2 a"),
    ("<a, b, c | c^4>", 4, "a -> a^2 b c, b -> b a, c -> a c^-1 a^-1"),
]


def fail(msg):
    FAILURES.append(msg)
    print("FAIL: " + msg)


def charpoly_coeffs(A):
    """Coefficients of det(xI - A) from the constant term up."""
    if A.rows == 0:
        return [1]
    return [int(c) for c in reversed(A.charpoly(X).all_coeffs())]


def moduli(coeffs):
    """The moduli of the roots of the polynomial (constant term first)."""
    if len(coeffs) <= 1:
        return []
    roots = mpmath.polyroots(list(reversed(coeffs)), maxsteps=400, extraprec=400)
    return [abs(z) for z in roots]


def witt(r, j):
    return sum(sympy.mobius(e) * r ** (j // e) for e in sympy.divisors(j)) // j


def contents(r, j):
    """(alpha, m(alpha)) over the compositions alpha of j into r parts."""
    for cut in itertools.combinations(range(j + r - 1), r - 1):
        bounds = (-1,) + cut + (j + r - 1,)
        alpha = [bounds[i + 1] - bounds[i] - 1 for i in range(r)]
        g = math.gcd(*alpha)
        m = sum(sympy.mobius(e) * math.factorial(j // e)
                // math.prod(math.factorial(a // e) for a in alpha)
                for e in sympy.divisors(g)) // j
        yield alpha, m


def lie_bound(u, j, d):
    """prod over the d largest u^alpha (with multiplicity m(alpha)) of 1 + u^alpha."""
    r = len(u)
    vals = []
    total = 0
    for alpha, m in contents(r, j):
        total += m
        v = mpmath.mpf(1)
        for ui, a in zip(u, alpha):
            v *= ui ** a
        vals.extend([v] * m)
    if total != witt(r, j):
        fail(f"contents of L_{j} on {r} letters add up to {total}, Witt {witt(r, j)}")
    if d > total:
        return None
    vals.sort(reverse=True)
    return mpmath.fprod(1 + v for v in vals[:d])


def run_report(group, cls, mapping):
    cmd = [BINARY, "report", "--format", "json", "--group", group,
           "--class", str(cls), "--map", mapping]
    p = subprocess.run(cmd, capture_output=True, text=True)
    # exit 3 with a whole report: a counting limit left one number out
    # (the Reidemeister number of a large torsion part), not the layers
    if p.returncode not in (0, 3) or not p.stdout:
        raise SystemExit(f"{' '.join(cmd)}: exit {p.returncode}\n{p.stderr}")
    return json.loads(p.stdout)


def main():
    checked = 0
    for group, cls, mapping in CASES:
        label = f"{group} class {cls}, {mapping}"
        rep = run_report(group, cls, mapping)
        layers = rep["map"]["layers"]
        m1 = sympy.Matrix(layers[0]["matrix"]) if layers[0]["matrix"] else sympy.zeros(0, 0)
        # upper bounds of the moduli, with a relative margin far above
        # mpmath's error at 60 digits
        u = [x * (1 + mpmath.mpf(10) ** -40) for x in moduli(charpoly_coeffs(m1))]
        for L in layers:
            j = L["weight"]
            M = sympy.Matrix(L["matrix"]) if L["matrix"] else sympy.zeros(0, 0)
            want = charpoly_coeffs(M)
            got = [int(c) for c in L["charpoly"]]
            if got != want:
                fail(f"{label}: layer {j} charpoly differs from sympy's")
                continue
            if j < 2 or M.rows == 0:
                continue
            b = lie_bound(u, j, M.rows)
            if b is None:
                fail(f"{label}: layer {j} of dimension {M.rows} above Witt's rank")
                continue
            big = max(abs(c) for c in want)
            if big > b:
                fail(f"{label}: layer {j}: coefficient {big} above the bound {b}")
            checked += 1
            print(f"# {label}: layer {j} (dimension {M.rows}): largest coefficient "
                  f"2^{math.log2(big):.1f}, bound 2^{float(mpmath.log(b, 2)):.1f}")
    if checked == 0:
        fail("no layer checked")
    if FAILURES:
        print(f"{len(FAILURES)} check(s) failed")
        sys.exit(1)
    print(f"all {checked} layers agree with sympy and lie under the bound")


main()
