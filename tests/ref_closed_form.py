#!/usr/bin/python3
"""Spectral radii in closed form (issue 9, item 16), checked with sympy.

For maps of the free abelian group of rank 2 (class 1, so the layer matrix
is the exponent matrix of the images, column k = image of generator k),
`nilstep report --format json` gives `spectral_radius_closed_form`.  Each is
checked independently of nilstep: sympy computes the eigenvalues of the same
matrix exactly, takes the largest modulus and must find it equal to the
closed form (simplify of the difference is 0); the closed form must also
agree with the report's 30-digit decimal and have the reported minimal
polynomial.  A radius of degree 1 or > 2 must have no closed form.

Run by ctest with NILSTEP_BINARY set; exit 77 (skipped) without it.
"""
import json
import os
import subprocess
import sys

import sympy
from sympy.parsing.sympy_parser import (implicit_multiplication_application,
                                        parse_expr, standard_transformations)

implicit = standard_transformations + (implicit_multiplication_application,)

binary = os.environ.get("NILSTEP_BINARY")
if not binary:
    print("skipped: NILSTEP_BINARY is not set (run through ctest)")
    sys.exit(77)

x = sympy.Symbol("x")

# (matrix [[p, q], [r, s]] with columns the images a -> a^p b^r,
#  b -> a^q b^s; the expected closed form, worked by hand beside it)
cases = [
    ([[2, 1], [1, 1]], "(3 + sqrt(5))/2"),   # x^2 - 3x + 1
    ([[2, -1], [1, 2]], "sqrt(5)"),          # x^2 - 4x + 5: |2 +- i| = sqrt(5)
    ([[-1, 1], [1, 0]], "(1 + sqrt(5))/2"),  # x^2 + x - 1: rho = -(-1-sqrt5)/2
    ([[2, 1], [1, 0]], "1 + sqrt(2)"),       # x^2 - 2x - 1
    ([[0, 3], [4, 0]], "2*sqrt(3)"),         # x^2 - 12
    ([[9, 4], [20, 9]], "9 + 4*sqrt(5)"),    # x^2 - 18x + 1
    ([[1, 1], [1, 2]], "(3 + sqrt(5))/2"),
    ([[3, 1], [1, 1]], "2 + sqrt(2)"),       # x^2 - 4x + 2
    ([[2, 0], [0, 3]], None),                # rho = 3, rational
    ([[1, 1], [0, 1]], None),                # rho = 1
]

failures = 0
for m, want in cases:
    (p, q), (r, s) = m
    themap = f"a -> a^{p} b^{r}, b -> a^{q} b^{s}"
    out = subprocess.run([binary, "report", "--group", "<a, b | [a,b]>", "--class", "1",
                          "--map", themap, "--format", "json"],
                         capture_output=True, text=True, check=True).stdout
    L = json.loads(out)["map"]["layers"][0]
    got = L.get("spectral_radius_closed_form")
    M = sympy.Matrix(m)
    rho = max((sympy.Abs(ev) for ev in M.eigenvals()), key=lambda e: sympy.N(e, 50))
    rho = sympy.nsimplify(sympy.simplify(rho))
    deg = sympy.degree(sympy.minimal_polynomial(rho, x), x)
    ok = True
    if want is None or deg != 2:
        ok = got is None and want is None and deg != 2
    elif got != want:
        ok = False
    else:
        c = sympy.sympify(got)
        ok = (sympy.simplify(c - rho) == 0
              and abs(sympy.N(c, 40) - sympy.Float(L["spectral_radius"], 40)) < sympy.Float("1e-27")
              and sympy.Poly(sympy.minimal_polynomial(c, x), x)
              == sympy.Poly(parse_expr(L["spectral_radius_minpoly"].replace("^", "**"),
                                       transformations=implicit), x))
    print(("ok  " if ok else "FAIL") + f"  {themap}: closed form {got!r}, sympy rho = {rho}")
    failures += not ok

print(f"# {len(cases) - failures} of {len(cases)} closed forms agree with sympy")
sys.exit(1 if failures else 0)
