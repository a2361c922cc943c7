#!/usr/bin/python3
"""ref_lie.py -- the layers of free nilpotent groups against an independent
computation in the free Lie algebra.

For the free group F on r generators, gamma_j F / gamma_(j+1) F is the
degree-j part L_j of the free Lie ring on r generators, and an endomorphism
of F acts on it through its linear part M1 alone (W. Magnus, "Ueber
Beziehungen zwischen hoeheren Kommutatoren", J. reine angew. Math. 177, 1937;
E. Witt, "Treue Darstellung Liescher Ringe", same volume).  This script
builds L_j itself: the Lyndon basis (Chen, Fox and Lyndon 1958; C.
Reutenauer, Free Lie Algebras, 1993, ch. 5; it is a Hall basis in the sense
of M. Hall, 1950), each basis element expanded as a noncommutative
polynomial by [P, Q] = PQ - QP along the standard factorisation, the map
applied letter by letter, and the image expressed in the basis by solving a
linear system over the words of length j.  sympy gives the characteristic
polynomial, which must equal the "charpoly" array that
`nilstep report --format json` prints for layer j.

On the same exact matrices it checks:
  - Brandt's trace formula tr(A|L_j) = (1/j) sum_{d|j} mu(d) (tr A^d)^(j/d)
    (A. Brandt, Trans. AMS 56, 1944) -- a check of this script itself;
  - the free ranks against Witt's formula;
  - the Lefschetz number prod_j det(I - A_j), the Nielsen number |L| and the
    Reidemeister number |L| or "infinite" (D. V. Anosov 1985; V. Roman'kov
    2011; K. Dekimpe and D. Goncalves 2014);
  - the entropy sum over all layers of log|lambda| for |lambda| > 1
    (R. Bowen, Trans. AMS 153, 1971) and every layer's spectral radius,
    with mpmath at 60 digits on the roots of each irreducible factor;
  - the growth rate, equal to the layer-1 spectral radius when it is >= 1
    (T. Koberda 2013; A. Fel'shtyn, J. H. Jo, J. B. Lee 2014).

Images get random commutator tails (they must not change any layer matrix).
The seed is printed; NILSTEP_SEED replays it, NILSTEP_ITER multiplies the
number of maps.  Exit 77 (skipped) when NILSTEP_BINARY is not set.
"""

import itertools
import json
import os
import random
import subprocess
import sys

import mpmath
import sympy

BINARY = os.environ.get("NILSTEP_BINARY")
if not BINARY:
    print("NILSTEP_BINARY is not set: skipped")
    sys.exit(77)

SEED = int(os.environ.get("NILSTEP_SEED", "20261201"), 0)
ITER = max(1, int(os.environ.get("NILSTEP_ITER", "1")))
print(f"# ref_lie: seed {SEED} (NILSTEP_SEED replays it)")
rng = random.Random(SEED)
mpmath.mp.dps = 60
X = sympy.Symbol("x")
FAILURES = []


def fail(msg):
    FAILURES.append(msg)
    print("FAIL: " + msg)


# ---------------------------------------------------------------------------
# The free Lie algebra in the free associative algebra

def is_lyndon(w):
    """Strictly smaller than each of its proper suffixes."""
    return all(w < w[i:] for i in range(1, len(w)))


def lyndon_words(r, n):
    return [w for w in itertools.product(range(r), repeat=n) if is_lyndon(w)]


def mul(p, q):
    out = {}
    for u, a in p.items():
        for v, b in q.items():
            out[u + v] = out.get(u + v, 0) + a * b
    return {w: c for w, c in out.items() if c}


def sub(p, q):
    out = dict(p)
    for w, c in q.items():
        out[w] = out.get(w, 0) - c
    return {w: c for w, c in out.items() if c}


def bracket(p, q):
    return sub(mul(p, q), mul(q, p))


_lie_cache = {}


def lie_poly(w):
    """The bracketing of the Lyndon word w along its standard factorisation
    w = u v, v the longest proper suffix that is a Lyndon word."""
    if w in _lie_cache:
        return _lie_cache[w]
    if len(w) == 1:
        p = {w: 1}
    else:
        for i in range(1, len(w)):
            if is_lyndon(w[i:]):
                break
        p = bracket(lie_poly(w[:i]), lie_poly(w[i:]))
    _lie_cache[w] = p
    return p


def apply_linear(p, M):
    """Substitutes x_k -> sum_i M[i][k] x_i in the polynomial p."""
    r = len(M)
    out = {}
    for w, c in p.items():
        for choice in itertools.product(range(r), repeat=len(w)):
            coef = c
            for i, k in zip(choice, w):
                coef *= M[i][k]
                if not coef:
                    break
            if coef:
                out[choice] = out.get(choice, 0) + coef
    return {w: c for w, c in out.items() if c}


class Degree:
    """L_j for r generators: basis, and a solver for coordinates."""

    def __init__(self, r, j):
        self.r, self.j = r, j
        self.basis = lyndon_words(r, j)
        self.words = list(itertools.product(range(r), repeat=j))
        self.polys = [lie_poly(w) for w in self.basis]
        B = sympy.Matrix(len(self.words), len(self.basis),
                         lambda a, b: self.polys[b].get(self.words[a], 0))
        # rows of B that are linearly independent: the pivots of B^T
        _, piv = B.T.rref()
        if len(piv) != len(self.basis):
            raise SystemExit(f"the Lie polynomials of degree {j} are dependent")
        self.rows = list(piv)
        self.B = B
        self.Binv = B.extract(self.rows, list(range(len(self.basis)))).inv()

    def coords(self, p):
        f = sympy.Matrix(len(self.words), 1, lambda a, _: p.get(self.words[a], 0))
        c = self.Binv * f.extract(self.rows, [0])
        if self.B * c != f:
            raise SystemExit(f"element not in the span of the degree-{self.j} basis")
        if any(not v.is_integer for v in c):
            raise SystemExit("non-integral coordinates in the Lyndon basis")
        return c

    def matrix(self, M):
        cols = [self.coords(apply_linear(p, M)) for p in self.polys]
        return sympy.Matrix.hstack(*cols) if cols else sympy.zeros(0, 0)


def charpoly_coeffs(A):
    """Coefficients of det(xI - A) from the constant term up."""
    if A.rows == 0:
        return [1]
    return [int(c) for c in reversed(A.charpoly(X).all_coeffs())]


def necklace(f, j):
    """(1/j) sum_{d | j} mu(d) f(d)^(j/d)."""
    s = sum(sympy.mobius(d) * f(d) ** (j // d) for d in sympy.divisors(j))
    assert s % j == 0
    return s // j


# ---------------------------------------------------------------------------
# Spectral data with mpmath

def roots_of(coeffs):
    """All roots (with multiplicity) of the monic integer polynomial given
    from the constant term up, via its irreducible factors (simple roots,
    so polyroots converges to full precision)."""
    poly = sympy.Poly(list(reversed(coeffs)), X)
    out = []
    _, factors = sympy.factor_list(poly)
    for f, m in factors:
        cs = [int(c) for c in f.all_coeffs()]
        if len(cs) == 1:
            continue
        rts = mpmath.polyroots(cs, maxsteps=400, extraprec=400)
        out.extend(list(rts) * m)
    return out


def entropy_of(coeffs):
    return mpmath.fsum(mpmath.log(abs(z)) for z in roots_of(coeffs) if abs(z) > 1)


def radius_of(coeffs):
    rts = roots_of(coeffs)
    return max((abs(z) for z in rts), default=mpmath.mpf(0))


def close(s, x, what):
    """s: a decimal string with 30 significant digits claimed correct to one
    unit in the last place; x: the reference value."""
    v = mpmath.mpf(s)
    if x == 0:
        ok = v == 0
    else:
        ulp = mpmath.mpf(10) ** (mpmath.floor(mpmath.log10(abs(x))) - 29)
        ok = abs(v - x) <= 2 * ulp
    if not ok:
        fail(f"{what}: nilstep {s}, reference {mpmath.nstr(x, 35)}")


# ---------------------------------------------------------------------------
# Maps and the program

def word_of_column(names, M, k):
    parts = [f"{names[i]}^{M[i][k]}" for i in range(len(M)) if M[i][k]]
    return " ".join(parts) if parts else "1"


def random_tail(names):
    parts = []
    for _ in range(rng.randint(0, 2)):
        x, y, z = (rng.choice(names) for _ in range(3))
        if rng.randint(0, 1):
            parts.append(f"[{x},{y}]^{rng.randint(-2, 2)}")
        else:
            parts.append(f"[{x},{y},{z}]")
    return (" " + " ".join(parts)) if parts else ""


def run_report(group, cls, mapping):
    cmd = [BINARY, "report", "--format", "json", "--group", group,
           "--class", str(cls), "--map", mapping]
    p = subprocess.run(cmd, capture_output=True, text=True)
    if p.returncode != 0:
        raise SystemExit(f"{' '.join(cmd)}: exit {p.returncode}\n{p.stderr}")
    return json.loads(p.stdout)


def check_map(group, r, cls, degrees, M):
    names = "abcdefghijklmnopqrstuvwxyz"[:r]
    mapping = ", ".join(f"{names[k]} -> {word_of_column(names, M, k)}{random_tail(names)}"
                        for k in range(r))
    label = f"{group} class {cls}, {mapping}"
    rep = run_report(group, cls, mapping)
    m = rep["map"]
    if not m["valid"]:
        fail(f"{label}: not reported valid")
        return
    if m["layers"][0]["matrix"] != M:
        fail(f"{label}: layer-1 matrix {m['layers'][0]['matrix']}, expected {M} "
             "(column k = exponent sums of the k-th image)")
    lefschetz = 1
    entropy = mpmath.mpf(0)
    MM = sympy.Matrix(M)
    for j in range(1, cls + 1):
        A = degrees[j].matrix(M)
        g_layer = rep["group"]["layers"][j - 1]
        m_layer = m["layers"][j - 1]
        witt = necklace(lambda d: r, j)
        if g_layer["free_rank"] != witt or A.rows != witt:
            fail(f"{label}: layer {j} free rank {g_layer['free_rank']}, "
                 f"Lyndon words {A.rows}, Witt {witt}")
        want = charpoly_coeffs(A)
        if m_layer["charpoly"] != want:
            fail(f"{label}: layer {j} charpoly {m_layer['charpoly']}, "
                 f"free Lie algebra gives {want}")
        brandt = necklace(lambda d: (MM ** d).trace(), j)
        if A.trace() != brandt:
            fail(f"{label}: reference layer {j} trace {A.trace()}, Brandt {brandt}")
        lefschetz *= (sympy.eye(A.rows) - A).det() if A.rows else 1
        entropy += entropy_of(want)
        close(m_layer["spectral_radius"], radius_of(want), f"{label}: rho_{j}")
    if m["lefschetz"] != lefschetz or m["nielsen"] != abs(lefschetz):
        fail(f"{label}: Lefschetz {m['lefschetz']}, Nielsen {m['nielsen']}, "
             f"expected {lefschetz}, {abs(lefschetz)}")
    want_r = abs(lefschetz) if lefschetz else "infinite"
    if m["reidemeister"] != want_r:
        fail(f"{label}: Reidemeister {m['reidemeister']}, expected {want_r}")
    close(m["entropy"], entropy, f"{label}: entropy")
    rho1 = radius_of(charpoly_coeffs(MM))
    if rho1 >= 1 - mpmath.mpf(10) ** -40:
        close(m["growth_rate"], rho1, f"{label}: growth rate")


def main():
    configs = [("free(2)", 2, 5, 6), ("<a, b | >", 2, 4, 2), ("free(3)", 3, 4, 4)]
    cache = {}
    checked = 0
    for group, r, cls, n in configs:
        degrees = cache.setdefault(r, {})
        for j in range(1, cls + 1):
            if j not in degrees:
                degrees[j] = Degree(r, j)
        for _ in range(n * ITER):
            M = [[rng.randint(-2, 2) for _ in range(r)] for _ in range(r)]
            check_map(group, r, cls, degrees, M)
            checked += 1
    print(f"# {checked} maps checked, {len(FAILURES)} failures")
    sys.exit(1 if FAILURES else 0)


if __name__ == "__main__":
    main()
