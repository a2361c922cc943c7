#!/usr/bin/python3
"""Reference data for the spectrum module, computed independently of nilstep
with sympy (exact) and mpmath (80-digit numerics).

    /usr/bin/python3 tests/ref_spectrum.py           verify (ctest runs this)
    /usr/bin/python3 tests/ref_spectrum.py --write   regenerate the file

The data file tests/data/spectrum_ref.txt is read by tests/test_spectrum.c.
In verify mode the script recomputes every case and fails if the committed
file differs, so the file is reproducible and cannot drift by hand edits.

Methods, deliberately different from the C code:
- charpoly: sympy Matrix.charpoly; factorisation: sympy factor_list;
- det M and det(I - M): sympy determinants of M and of I - M directly
  (the C code reads them off the charpoly);
- number of roots of an irreducible factor g on the unit circle: the Cayley
  transform x = (1 + i t)/(1 - i t) maps the real t-line onto the circle
  minus {-1}; p(t) = (1 - i t)^n g(x) has real roots exactly there, i.e. the
  real roots of gcd(Re p, Im p), counted exactly by sympy's Sturm-sequence
  count_roots; x = -1 is checked separately (the C code uses
  g(x + 1/x) instead);
- roots: mpmath.polyroots at 80 digits on each irreducible factor; the other
  roots are put inside or outside the disc by their modulus, and the script
  stops if any of them is within 1e-30 of the circle;
- rho = max |root|; entropy = sum of mult * log|root| over |root| > 1;
- minimal polynomial of rho: for a real dominant root r, sympy's
  minimal_polynomial(|r|); for a non-real dominant root mu of g (degree
  <= 4), the factor of R(z^2) vanishing at |mu|, where
  R(y) = res_x(g(x), x^n g(y/x)) has the roots lambda_i lambda_j, among them
  mu * conj(mu) = |mu|^2.
"""
import os
import random
import sys

import mpmath
import sympy
from sympy import I, Matrix, Poly, ZZ, eye, factor_list, symbols

FORMAT = 1
SEED = 20240601
DPS = 80
OUT_DIGITS = 50
x, y, z = symbols("x y z")
t = symbols("t", real=True)

HERE = os.path.dirname(os.path.abspath(__file__))
DATA = os.path.join(HERE, "data", "spectrum_ref.txt")


def companion(coeffs):
    """Companion matrix of the monic polynomial with coefficients c0..c(n-1)
    (constant first): ones below the diagonal, -c in the last column."""
    n = len(coeffs)
    m = [[0] * n for _ in range(n)]
    for i in range(1, n):
        m[i][i - 1] = 1
    for i in range(n):
        m[i][n - 1] = -coeffs[i]
    return m


def block_diag(*blocks):
    n = sum(len(b) for b in blocks)
    m = [[0] * n for _ in range(n)]
    o = 0
    for b in blocks:
        for i, row in enumerate(b):
            for j, v in enumerate(row):
                m[o + i][o + j] = v
        o += len(b)
    return m


def named_cases():
    # Lehmer's polynomial (D. H. Lehmer, Annals of Math. 34, 1933)
    lehmer = [1, 1, 0, -1, -1, -1, -1, -1, 0, 1]
    return [
        ("cat_map", [[2, 1], [1, 1]]),
        ("rotation_90", [[0, -1], [1, 0]]),
        ("lehmer_companion", companion(lehmer)),
        ("nilpotent_3", [[0, 1, 0], [0, 0, 1], [0, 0, 0]]),
        ("unipotent_3", [[1, 1, 0], [0, 1, 1], [0, 0, 1]]),
        ("complex_pair_sqrt3", [[1, -2], [1, 1]]),
        ("tie_real_blocks", block_diag([[2]], [[-2]], [[0, 2], [1, 0]])),
        # 3 and the roots -1 +- 2 sqrt(2) i of x^2 + 2x + 9: all of modulus 3
        ("tie_real_complex", block_diag([[3]], [[0, -9], [1, -2]])),
        ("golden_with_double_2", block_diag([[2]], [[2]], [[1, 1], [1, 0]])),
        ("zero_space", []),
        # x^4 - x^3 - x^2 - x + 1: a Salem polynomial, two roots on the circle
        ("salem_degree4", companion([1, -1, -1, -1])),
        ("rotation_twice", block_diag([[0, -1], [1, 0]], [[0, -1], [1, 0]])),
        # x^4 + 3x^2 + 1: roots +-i*phi, +-i/phi, real parts exactly 0
        ("pure_imaginary", companion([1, 0, 3, 0])),
        ("cat_and_rotation", block_diag([[2, 1], [1, 1]], [[0, -1], [1, 0]])),
        # x^17 - 2x^16 + 5x^15 + 1: irreducible, dominant pair near 1 +- 2i
        ("complex_dominant_degree17",
         companion([1] + [0] * 14 + [5, -2])),
    ]


def random_cases():
    rng = random.Random(SEED)
    cases = []
    for k in range(40):
        n = rng.randint(1, 7)
        cases.append(("random_small_%d" % k,
                      [[rng.randint(-3, 3) for _ in range(n)] for _ in range(n)]))
    for k in range(8):
        n = rng.randint(2, 8)
        perm = list(range(n))
        rng.shuffle(perm)
        m = [[0] * n for _ in range(n)]
        for i in range(n):
            m[perm[i]][i] = rng.choice([-1, 1])
        cases.append(("signed_permutation_%d" % k, m))
    for k in range(6):
        n = rng.randint(1, 3)
        b = [[rng.randint(-2, 2) for _ in range(n)] for _ in range(n)]
        c = [[rng.randint(-2, 2) for _ in range(n)] for _ in range(n)]
        cases.append(("repeated_block_%d" % k, block_diag(b, c, b)))
    for k in range(6):
        n = rng.randint(2, 5)
        cases.append(("random_wide_%d" % k,
                      [[rng.randint(-20, 20) for _ in range(n)] for _ in range(n)]))
    return cases


def unimodular_count(g):
    """Exact number of roots of the squarefree integer polynomial g on the
    unit circle (Cayley transform + Sturm count)."""
    n = g.degree()
    a = g.all_coeffs()[::-1]
    p = sum(a[k] * (1 + I * t) ** k * (1 - I * t) ** (n - k) for k in range(n + 1))
    pr, pi = sympy.expand(p).as_real_imag()
    count = 0
    if g.eval(-1) == 0:
        count += 1
    pr, pi = Poly(pr, t, domain="QQ"), Poly(pi, t, domain="QQ")
    if pr.is_zero and pi.is_zero:
        raise RuntimeError("degenerate Cayley transform")
    if pr.is_zero:
        h = pi
    elif pi.is_zero:
        h = pr
    else:
        h = sympy.gcd(pr, pi)
    if h.degree() >= 1:
        count += h.count_roots()
    return count


def numeric_roots(g):
    coeffs = [int(c) for c in g.all_coeffs()]
    if len(coeffs) == 2:
        return [mpmath.mpf(-coeffs[1]) / coeffs[0]]
    return mpmath.polyroots(coeffs, maxsteps=2000, extraprec=4 * DPS)


def minpoly_of_rho(g, root):
    """Minimal polynomial (constant term first) of |root|, root a root of the
    irreducible g; None when outside this script's budget."""
    if abs(mpmath.im(root)) < mpmath.mpf(10) ** (-DPS // 2):
        idx = None
        real_roots = sympy.Poly(g, x).real_roots()
        best = None
        for r in real_roots:
            d = abs(mpmath.mpf(sympy.N(r, DPS)) - mpmath.re(root))
            if best is None or d < best:
                best, idx = d, r
        mp = sympy.minimal_polynomial(idx if mpmath.re(root) > 0 else -idx, x)
        return Poly(mp, x)
    if g.degree() > 4:
        return None
    n = g.degree()
    gx = g.as_expr()
    rev = sympy.expand(x ** n * gx.subs(x, y / x))
    R = sympy.resultant(gx, rev, x)
    Q = Poly(sympy.expand(R.subs(y, z ** 2)), z)
    m = abs(root)
    hits = []
    for fac, _ in factor_list(Q)[1]:
        val = abs(fac.as_expr().subs(z, sympy.Float(str(m), DPS)).evalf(DPS))
        if val < 1e-40:
            hits.append(fac)
    if len(hits) != 1:
        raise RuntimeError("could not identify the minimal polynomial of |mu|")
    return Poly(hits[0].as_expr().subs(z, x), x)


def primitive_positive(p):
    c = [int(v) for v in p.all_coeffs()]
    g = 0
    for v in c:
        g = sympy.igcd(g, v)
    c = [v // g for v in c]
    if c[0] < 0:
        c = [-v for v in c]
    return c[::-1]


def analyse(name, rows):
    d = len(rows)
    lines = ["case " + name, "dim %d" % d]
    for r in rows:
        lines.append("row " + " ".join(str(v) for v in r))
    if d == 0:
        cp = Poly(1, x)
        det = 1
        det1 = 1
        factors = []
    else:
        M = Matrix(rows)
        cp = Poly(M.charpoly(x).as_expr(), x)
        det = M.det()
        det1 = (eye(d) - M).det()
        content, factors = factor_list(cp)
        assert content == 1
        factors = [(Poly(f, x), m) for f, m in factors]
    lines.append("charpoly " + " ".join(str(int(c)) for c in cp.all_coeffs()[::-1]))
    for f, m in sorted(factors, key=lambda fm: (fm[0].degree(), [int(c) for c in fm[0].all_coeffs()[::-1]])):
        lines.append("factor %d %s" % (m, " ".join(str(int(c)) for c in f.all_coeffs()[::-1])))
    lines.append("det %d" % det)
    lines.append("det1 %d" % det1)

    below = on = above = 0
    rho = mpmath.mpf(0)
    rho_root = None
    rho_factor = None
    entropy = mpmath.mpf(0)
    eps_on = mpmath.mpf(10) ** -50
    eps_off = mpmath.mpf(10) ** -30
    for f, m in factors:
        u = unimodular_count(f)
        rts = numeric_roots(f)
        near = [r for r in rts if abs(abs(r) - 1) < eps_on]
        far = [r for r in rts if abs(abs(r) - 1) > eps_off]
        if len(near) != u or len(near) + len(far) != len(rts):
            raise RuntimeError("%s: roots too close to the unit circle" % name)
        on += m * u
        for r in far:
            if abs(r) > 1:
                above += m
                entropy += m * mpmath.log(abs(r))
            else:
                below += m
        for r in rts:
            if abs(r) > rho + eps_off:
                rho, rho_root, rho_factor = abs(r), r, f
            elif rho_root is not None and abs(abs(r) - rho) <= eps_off and \
                    abs(mpmath.im(r)) < abs(mpmath.im(rho_root)):
                rho_root, rho_factor = r, f   # prefer a real representative
    lines.append("counts %d %d %d" % (below, on, above))
    lines.append("rho " + mpmath.nstr(rho, OUT_DIGITS, min_fixed=-mpmath.inf, max_fixed=mpmath.inf))
    lines.append("entropy " + mpmath.nstr(entropy, OUT_DIGITS, min_fixed=-mpmath.inf, max_fixed=mpmath.inf))
    if rho == 0:
        mp = [0, 1]
    elif rho_factor is None:
        mp = None
    else:
        if abs(rho - 1) < eps_on:
            mp = [-1, 1]
        else:
            p = minpoly_of_rho(rho_factor, rho_root)
            mp = None if p is None else primitive_positive(p)
    lines.append("minpoly " + ("none" if mp is None else " ".join(str(c) for c in mp)))
    lines.append("end")
    return lines


def generate():
    mpmath.mp.dps = DPS
    out = ["# spectrum reference data, format %d" % FORMAT,
           "# produced by tests/ref_spectrum.py (sympy %s, mpmath %s), seed %d"
           % (sympy.__version__, mpmath.__version__, SEED),
           "# decimals: %d significant digits from %d-digit mpmath arithmetic"
           % (OUT_DIGITS, DPS)]
    for name, rows in named_cases() + random_cases():
        out.extend(analyse(name, rows))
    return "\n".join(out) + "\n"


def strip_versions(text):
    # the header names the library versions; compare the data only
    return [l for l in text.splitlines() if not l.startswith("#")]


def main():
    text = generate()
    if "--write" in sys.argv[1:]:
        os.makedirs(os.path.dirname(DATA), exist_ok=True)
        with open(DATA, "w") as fh:
            fh.write(text)
        print("wrote", DATA)
        return 0
    with open(DATA) as fh:
        old = fh.read()
    a, b = strip_versions(old), strip_versions(text)
    if a != b:
        for i, (la, lb) in enumerate(zip(a, b)):
            if la != lb:
                print("ref_spectrum: line %d differs:\n  file: %s\n  now:  %s" % (i + 1, la, lb))
                break
        else:
            print("ref_spectrum: different number of lines (%d vs %d)" % (len(a), len(b)))
        return 1
    print("ref_spectrum: %s reproduced (%d lines)" % (DATA, len(b)))
    return 0


if __name__ == "__main__":
    sys.exit(main())
