#!/usr/bin/python3
"""ref_iterate.py -- `nilstep iterate` against computations made here.

1. Word length in the discrete Heisenberg group H = <x, y | [x,y,x], [x,y,y]>
   with generators x, y and their inverses, on every element of the ball of
   radius R.  The reference is an independent breadth-first search written
   below on 3x3 upper unitriangular integer matrices (x = I + E12,
   y = I + E23), not S. Blachere's closed formula ("Word distance on the
   discrete Heisenberg group", Colloq. Math. 95, 2003): we are not sure
   enough of its exact case split to transcribe it, so the matrices decide.
   Each element is handed to nilstep as the word x^p y^q [x,y]^s that this
   script derives from the matrix, with s from its own commutator matrix.

2. Every scenario with growth rate > 1: the largest n-th root of the
   homogeneous norm over the generators (Y. Guivarc'h, Bull. SMF 101, 1973)
   at n = 300 is within 5% of the growth rate, and its distance to the
   growth rate at n = 300 is smaller than at n = 200.  The growth rate is
   recomputed here as the spectral radius of the layer-1 matrix (sympy
   nroots of its characteristic polynomial, 30 digits) from the report's
   JSON (T. Koberda 2013; A. Fel'shtyn, J. H. Jo, J. B. Lee 2014: the growth
   rate is rho_1 when rho_1 >= 1).  Quotients with torsion go one step at a
   time with costs growing with the exponents' bit length (a known limit),
   so they are checked at n = 30 with the same 5%.

Exit 77 (skipped) when NILSTEP_BINARY is not set.
"""

import glob
import json
import os
import subprocess
import sys

import sympy

BIN = os.environ.get("NILSTEP_BINARY")
SRC = os.environ.get("NILSTEP_SOURCE_DIR", "..")
if not BIN:
    print("NILSTEP_BINARY is not set: skipped")
    sys.exit(77)

failures = 0


def fail(msg):
    global failures
    failures += 1
    print("FAIL:", msg)


def run(args, ok=(0,)):
    p = subprocess.run([BIN] + args, capture_output=True, text=True)
    if p.returncode not in ok:
        raise SystemExit("nilstep %s: exit %d: %s" % (" ".join(args[:3]), p.returncode, p.stderr))
    return p.stdout


# ---- 1. Heisenberg word length -------------------------------------------

def mul(m, n):
    """Product of unitriangular 3x3 matrices given as (a, b, c) =
    [[1, a, c], [0, 1, b], [0, 0, 1]]."""
    return (m[0] + n[0], m[1] + n[1], m[2] + n[2] + m[0] * n[1])


def inv(m):
    return (-m[0], -m[1], -m[2] + m[0] * m[1])


def power(m, k):
    r = (0, 0, 0)
    b = m if k >= 0 else inv(m)
    for _ in range(abs(k)):
        r = mul(r, b)
    return r


X, Y = (1, 0, 0), (0, 1, 0)
GENS = [X, inv(X), Y, inv(Y)]
R = 7
dist = {(0, 0, 0): 0}
frontier = [(0, 0, 0)]
for r in range(1, R + 1):
    nxt = []
    for g in frontier:
        for s in GENS:
            h = mul(g, s)
            if h not in dist:
                dist[h] = r
                nxt.append(h)
    frontier = nxt

# [x,y] = x^-1 y^-1 x y as a matrix: (0, 0, cz)
comm = mul(mul(mul(inv(X), inv(Y)), X), Y)
assert comm[0] == 0 and comm[1] == 0 and abs(comm[2]) == 1
cz = comm[2]

elements = sorted(dist)
words = []
for (a, b, c) in elements:
    base = mul(power(X, a), power(Y, b))  # (a, b, a b)
    s = (c - base[2]) // cz
    assert mul(base, power(comm, s)) == (a, b, c)
    words.append("x^%d y^%d [x,y]^%d" % (a, b, s))

args = ["iterate", "--format", "json", "--steps", "0", "--ball-memory", "64",
        "--group", "<x, y | [x,y,x], [x,y,y]>", "--class", "2", "--map", "x -> x, y -> y"]
for w in words:
    args += ["--element", w]
d = json.loads(run(args))
checked = 0
for (g, e) in zip(elements, d["elements"]):
    got = e["steps"][0]["word_length"]
    if got != dist[g]:
        fail("Heisenberg word length of %s: nilstep %s, BFS on matrices %d" % (e["element"], got, dist[g]))
    checked += 1
print("Heisenberg: %d elements of the ball of radius %d agree" % (checked, R))

# ---- 2. convergence of the roots on the scenarios ------------------------


def growth_rate(path):
    rep = json.loads(run(["report", "--format", "json", path], ok=(0, 1)))
    if not rep["map"]["valid"]:
        return None, rep
    m = sympy.Matrix(rep["map"]["layers"][0]["matrix"])
    if m.rows == 0:
        return 0, rep
    x = sympy.Symbol("x")
    roots = sympy.Poly(m.charpoly(x).as_expr(), x).sqf_part().nroots(n=30, maxsteps=200)
    return max(abs(r) for r in roots), rep


for path in sorted(glob.glob(os.path.join(SRC, "scenarios", "*.nilstep"))):
    gr, rep = growth_rate(path)
    if gr is None or gr <= 1:
        continue
    torsion = not rep["group"]["torsion_free_layers"]
    n = 30 if torsion else 300
    out = json.loads(run(["iterate", "--format", "json", "--steps", str(n), "--ball-memory", "0", path]))
    roots = {p["n"]: sympy.Float(p["norm_root"], 30) for p in out["max_root"] if p["norm_root"]}
    rel = abs(roots[n] - gr) / gr
    name = os.path.basename(path)
    if rel >= 0.05:
        fail("%s: root %s at n = %d is %.2f%% from the growth rate %s" % (name, roots[n], n, 100 * rel, gr))
    earlier = n - n // 3
    if abs(roots[n] - gr) >= abs(roots[earlier] - gr) and abs(roots[n] - gr) > 1e-25:
        fail("%s: distance to the growth rate did not decrease from n = %d to %d" % (name, earlier, n))
    print("%s: growth rate %s, root at n = %d: %s (%.3f%%)" % (name, sympy.N(gr, 12), n, sympy.N(roots[n], 12), 100 * rel))

if failures:
    print("%d failure(s)" % failures)
    sys.exit(1)
print("all checks passed")
