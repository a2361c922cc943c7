#!/usr/bin/python3
"""ref_iterate.py -- `nilstep iterate` against computations made here.

1. Word length in the discrete Heisenberg group H = <x, y | [x,y,x], [x,y,y]>
   with generators x, y and their inverses, on every element of the ball of
   radius R = 10 (and the two spheres beyond it), against S. Blachere's
   closed formula ("Word distance on the discrete Heisenberg group",
   Colloq. Math. 95, 2003, Theorem 2.2), implemented below on 3x3 upper
   unitriangular integer matrices (x = I + E12, y = I + E23).  The formula
   is transcribed from memory; a few values worked out by hand and the
   sphere sizes of the ball (also from memory) check the transcription.
   Each element is handed to nilstep as the word x^p y^q [x,y]^s that this
   script derives from the matrix, with s from its own commutator matrix.

2. Every scenario with growth rate > 1: the largest n-th root of the
   homogeneous norm over the generators (Y. Guivarc'h, Bull. SMF 101, 1973)
   at n = N = 300 is within 5% of the growth rate, and its distance to the
   growth rate decreases over the last 100 steps.  Read as: cut n = 200..300
   into four windows of 25 steps; the largest distance in each window is
   smaller than in the window before (or both are 0).  Step by step the
   distance need not shrink: with complex eigenvalues of the top modulus the
   norm carries a bounded oscillating factor, so its n-th root approaches
   the limit like a damped wave (expanding-free-2-step rises at about half
   of its steps), while the envelope decreases like 1/n.  The growth rate
   is recomputed here as the spectral radius of the layer-1 matrix (sympy
   nroots of its characteristic polynomial, 30 digits) from the report's
   JSON (T. Koberda 2013; A. Fel'shtyn, J. H. Jo, J. B. Lee 2014: the growth
   rate is rho_1 when rho_1 >= 1).  Quotients with torsion in their layers
   (torsion-layers) are checked the same way at N = 300.

3. Millions of steps with torsion: the torsion-layers map a -> a^2 b,
   b -> a b on <a, b | [a,b]^6> at class 3, --steps 1000000 --every 500000.
   Layer 1: the map acts by M = [[2,1],[1,1]] = Q^2, Q the Fibonacci matrix
   [[1,1],[1,0]], so alpha^n(a) has layer-1 coordinates (F(2n+1), F(2n))
   and alpha^n(b) (F(2n), F(2n-1)) (the textbook identity
   Q^k = [[F(k+1), F(k)], [F(k), F(k-1)]]; sympy's fibonacci).  The whole
   normal word: this group is the free nilpotent group of class 3 on a, b
   with its three commutators made of order 6 (the same conjugate
   relations, no power words: tests/test_iterate.c checks that on the
   presentations), so it is the word of the same iterate in <a, b | > at
   class 3 (torsion-free, a separate run) with the exponents of [b,a],
   [b,a,a], [b,a,b] reduced mod 6.

Exit 77 (skipped) when NILSTEP_BINARY is not set.
"""

import glob
import json
import math
import os
import subprocess
import sys
import tempfile

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
#
# Elements are 3x3 upper unitriangular integer matrices written (a, b, c) =
# [[1, a, c], [0, 1, b], [0, 0, 1]], x = (1, 0, 0), y = (0, 1, 0).

def mul(m, n):
    return (m[0] + n[0], m[1] + n[1], m[2] + n[2] + m[0] * n[1])


def inv(m):
    return (-m[0], -m[1], -m[2] + m[0] * m[1])


def power(m, k):
    r = (0, 0, 0)
    b = m if k >= 0 else inv(m)
    for _ in range(abs(k)):
        r = mul(r, b)
    return r


def ceil_two_sqrt(z):
    """The least integer m >= 2 sqrt(z), exactly (z >= 0)."""
    if z == 0:
        return 0
    return math.isqrt(4 * z - 1) + 1


def blachere(a, b, c):
    """Word length of (a, b, c) with respect to x, y and their inverses:
    S. Blachere, "Word distance on the discrete Heisenberg group",
    Colloq. Math. 95 (2003), Theorem 2.2.  The statement is transcribed
    from memory (the paper was not at hand), in these coordinates: for
    0 <= y <= x and z >= 0,
        x >= sqrt z, z <= x y:   |g| = x + y
        x >= sqrt z, z >  x y:   |g| = 2 ceil(z / x) + x - y
        x <  sqrt z:             |g| = 2 ceil(2 sqrt z) - x - y,
    every other element being reduced to that range by the symmetries of
    the generating set, which preserve word length:
        x -> x^-1:        (a, b, c) -> (-a, b, -c)
        y -> y^-1:        (a, b, c) -> (a, -b, -c)
        x <-> y:          (a, b, c) -> (b, a, a b - c)
        g -> g^-1, then both inversions above:
                          (a, b, c) -> (a, b, a b - c)."""
    if a < 0:
        a, c = -a, -c
    if b < 0:
        b, c = -b, -c
    if b > a:
        a, b, c = b, a, a * b - c
    if c < 0:
        c = a * b - c
    x, y, z = a, b, c
    if x * x >= z:
        if z <= x * y:
            return x + y
        return 2 * (-(-z // x)) + x - y
    return 2 * ceil_two_sqrt(z) - x - y


# A handful of values worked out by hand (not from the formula): [x,y]
# needs its 4 letters; x [x,y] = y^-1 x y has 3; [x,y]^2 = (0, 0, 2) is
# x y^2 x^-1 y^-2 up to sign, 6 letters; [x^2, y^2] = (0, 0, 4), 8 letters;
# x^3 y^2 = (3, 2, 6) has its 5 letters.
for (g, want) in [((0, 0, 1), 4), ((1, 0, 1), 3), ((0, 0, 2), 6), ((0, 0, 4), 8),
                  ((3, 2, 6), 5), ((0, 0, 0), 0), ((1, 0, 0), 1)]:
    if blachere(*g) != want:
        fail("the transcribed formula gives %d for %s, by hand %d" % (blachere(*g), g, want))

# The sphere sizes of H for x, y and their inverses, radius 0..10, from
# memory (the growth series of H; M. Shapiro, "A geometric approach to the
# almost convexity and growth of some nilpotent groups", Math. Ann. 285,
# 1989, proves it rational): the formula's balls must have these sizes.
SPHERES = [1, 4, 12, 36, 82, 164, 294, 476, 724, 1052, 1464]
for r, want in enumerate(SPHERES):
    got = sum(1 for a in range(-r, r + 1) for b in range(-(r - abs(a)), r - abs(a) + 1)
              for c in range(-r * r, r * r + 1) if blachere(a, b, c) == r)
    if got != want:
        fail("sphere of radius %d: %d elements by the formula, %d from memory" % (r, got, want))

# [x,y] = x^-1 y^-1 x y as a matrix: (0, 0, cz)
X, Y = (1, 0, 0), (0, 1, 0)
comm = mul(mul(mul(inv(X), inv(Y)), X), Y)
assert comm[0] == 0 and comm[1] == 0 and abs(comm[2]) == 1
cz = comm[2]

# The ball of radius R and the next two spheres: a word of length <= R + 2
# moves a and b by at most R + 2 in all and changes c by at most
# |a| <= R + 2 per letter, so the box holds them.  Lengths beyond R are
# there to catch an element the formula would put outside the ball by
# mistake: nilstep then finds it at its true, smaller length.
R = 10
S = R + 2
elements = []
for a in range(-S, S + 1):
    for b in range(-(S - abs(a)), S - abs(a) + 1):
        for c in range(-S * S, S * S + 1):
            if blachere(a, b, c) <= S:
                elements.append((a, b, c))

words = []
for (a, b, c) in elements:
    base = mul(power(X, a), power(Y, b))  # (a, b, a b)
    s = (c - base[2]) // cz
    assert mul(base, power(comm, s)) == (a, b, c)
    words.append("x^%d y^%d [x,y]^%d" % (a, b, s))

# Through a session file: the ball has tens of thousands of elements.
sess = tempfile.NamedTemporaryFile("w", suffix=".nilstep", delete=False)
sess.write("nilstep session 1\ngroup <x, y | [x,y,x], [x,y,y]>\nclass 2\nmap x -> x, y -> y\n")
sess.close()
args = ["iterate", "--format", "json", "--steps", "0", "--ball-memory", "256"]
for w in words:
    args += ["--element", w]
d = json.loads(run(args + [sess.name]))
os.unlink(sess.name)
if d["ball"]["radius"] < R:
    fail("the word-length ball stopped at radius %d < %d" % (d["ball"]["radius"], R))
checked = 0
for (g, e) in zip(elements, d["elements"]):
    got = e["steps"][0]["word_length"]
    want = blachere(*g)
    if got is None and want <= d["ball"]["radius"]:
        fail("Heisenberg word length of %s %s: nilstep has none within radius %d, Blachere %d"
             % (e["element"], g, d["ball"]["radius"], want))
    elif got is not None and got != want:
        fail("Heisenberg word length of %s %s: nilstep %s, Blachere %d" % (e["element"], g, got, want))
    checked += want <= R
print("Heisenberg: %d elements of the ball of radius %d agree with Blachere's formula" % (checked, R))

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
    n = 300
    out = json.loads(run(["iterate", "--format", "json", "--steps", str(n), "--ball-memory", "0", path]))
    roots = {p["n"]: sympy.Float(p["norm_root"], 30) for p in out["max_root"] if p["norm_root"]}
    rel = abs(roots[n] - gr) / gr
    name = os.path.basename(path)
    if rel >= 0.05:
        fail("%s: root %s at n = %d is %.2f%% from the growth rate %s" % (name, roots[n], n, 100 * rel, gr))
    # windows over the last third (100 of 300 steps)
    span = n // 3
    cuts = [n - span + k * span // 4 for k in range(4)] + [n + 1]
    env = [max(abs(roots[m] - gr) for m in range(cuts[k], cuts[k + 1])) for k in range(4)]
    for k in range(1, 4):
        if not (env[k] < env[k - 1] or env[k] < 1e-25):
            fail("%s: the largest distance to the growth rate over n = %d..%d (%s) is not below "
                 "that over n = %d..%d (%s)" % (name, cuts[k], cuts[k + 1] - 1, sympy.N(env[k], 6),
                                                cuts[k - 1], cuts[k] - 1, sympy.N(env[k - 1], 6)))
    print("%s: growth rate %s, root at n = %d: %s (%.3f%%), window maxima %s" % (
        name, sympy.N(gr, 12), n, sympy.N(roots[n], 12), 100 * rel,
        ", ".join(str(sympy.N(e, 4)) for e in env)))

# ---- 3. a million steps with torsion --------------------------------------
#
# The integers have up to 1.25 million digits; CPython converts decimal
# strings to integers in quadratic time, so nothing here converts them:
# layer-1 coordinates are compared with the Fibonacci numbers modulo three
# primes near 2^61 (F(k) mod p by fast doubling) and in their number of
# digits (from Binet's formula, F(k) = round(phi^k / sqrt 5), in sympy
# floats), exponents are reduced mod 6 from their last digit and digit sum.

PRIMES = [2305843009213693951, 2305843009213693921, 2305843009213693907]


def fib_mod(k, p):
    """(F(k), F(k+1)) mod p by fast doubling."""
    if k == 0:
        return (0, 1)
    a, b = fib_mod(k // 2, p)
    c = a * ((2 * b - a) % p) % p
    d = (a * a + b * b) % p
    return (d, (c + d) % p) if k % 2 else (c, d)


def str_mod(digits, p):
    r = 0
    for i in range(0, len(digits), 18):
        chunk = digits[i:i + 18]
        r = (r * pow(10, len(chunk), p) + int(chunk)) % p
    return r


def fib_digits(k):
    phi = (1 + sympy.sqrt(5)) / 2
    return int(sympy.floor(k * sympy.log(phi, 10) - sympy.log(sympy.sqrt(5), 10)).evalf(40)) + 1


def same_as_fib(text, k):
    if text.startswith("-") or len(text) != fib_digits(k):
        return False
    return all(str_mod(text, p) == fib_mod(k, p)[0] for p in PRIMES)


def mod6(text):
    neg = text.startswith("-")
    digits = text.lstrip("-")
    r2 = int(digits[-1]) % 2
    r3 = sum(int(d) for d in digits) % 3
    r = next(x for x in range(6) if x % 2 == r2 and x % 3 == r3)
    return (-r) % 6 if neg else r


def words(args):
    out = json.loads(run(["iterate", "--format", "json", "--steps", "1000000", "--every", "500000",
                          "--ball-memory", "0", "--element", "a", "--element", "b"] + args))
    return {(e["element"], p["n"]): p for e in out["elements"] for p in e["steps"]}


def reduced(word, mod6_names):
    """The normal word with the exponents of those generators reduced mod 6."""
    out = []
    for syl in word.split(" "):
        name, _, e = syl.partition("^")
        if name in mod6_names:
            r = mod6(e) if e else 1
            if r:
                out.append(name if r == 1 else "%s^%d" % (name, r))
        else:
            out.append(syl)
    return " ".join(out) or "1"


tors = words([os.path.join(SRC, "scenarios", "torsion-layers.nilstep")])
free = words(["--group", "<a, b | >", "--class", "3", "--map", "a -> a^2 b, b -> a b"])
for n in (500000, 1000000):
    for (w, ks) in (("a", (2 * n + 1, 2 * n)), ("b", (2 * n, 2 * n - 1))):
        p = tors[(w, n)]
        coords = p["layers"][0]["coordinates"]
        if not all(same_as_fib(c, k) for (c, k) in zip(coords, ks)) or len(coords) != 2:
            fail("torsion-layers: layer 1 of alpha^%d(%s) is not (F(%d), F(%d))" % (n, w, ks[0], ks[1]))
        if p["element"] != reduced(free[(w, n)]["element"], ("[b,a]", "[b,a,a]", "[b,a,b]")):
            fail("torsion-layers: alpha^%d(%s) is not the free iterate with [b,a], [b,a,a], [b,a,b] "
                 "reduced mod 6" % (n, w))
print("torsion-layers: alpha^n(a), alpha^n(b) at n = 500000 and 1000000 agree with Fibonacci "
      "numbers and the reduced free iterates (%d digits)" % tors[("a", 1000000)]["layers"][0]["digits"])

if failures:
    print("%d failure(s)" % failures)
    sys.exit(1)
print("all checks passed")
