/* spectrum_roots.c — polynomial helpers, certified roots and the exact
 * position of each root relative to the unit circle (the method is stated
 * in spectrum.h). */
#include <arb_fmpz_poly.h>

#include "spectrum_internal.h"

int spectrum_poly_is_x(const fmpz_poly_t f)
{
    return f->length == 2 && fmpz_is_zero(f->coeffs)
           && fmpz_is_one(f->coeffs + 1);
}

/* Total order used to sort factors: x first, then by degree, then by the
 * coefficients from the constant term up. */
int spectrum_poly_cmp(const fmpz_poly_struct *a, const fmpz_poly_struct *b)
{
    int ax = spectrum_poly_is_x(a), bx = spectrum_poly_is_x(b);
    slong i;

    if (ax != bx)
        return ax ? -1 : 1;
    if (a->length != b->length)
        return a->length < b->length ? -1 : 1;
    for (i = 0; i < a->length; i++)
    {
        int c = fmpz_cmp(a->coeffs + i, b->coeffs + i);
        if (c != 0)
            return c < 0 ? -1 : 1;
    }
    return 0;
}

static int poly_is_palindromic(const fmpz_poly_t f)
{
    slong n = fmpz_poly_degree(f), i;
    for (i = 0; i < n - i; i++)
        if (!fmpz_equal(f->coeffs + i, f->coeffs + n - i))
            return 0;
    return 1;
}

/* f(-x) = +-f(x): only powers of the parity of deg f occur. */
static int poly_is_even_or_odd(const fmpz_poly_t f)
{
    slong n = fmpz_poly_degree(f), i;
    for (i = n - 1; i >= 0; i -= 2)
        if (!fmpz_is_zero(f->coeffs + i))
            return 0;
    return 1;
}

/* res = (-1)^n f(-x): roots negated, monic stays monic. */
void spectrum_poly_reflect(fmpz_poly_t res, const fmpz_poly_t f)
{
    slong n = fmpz_poly_degree(f), i;
    fmpz_poly_set(res, f);
    for (i = 0; i <= n; i++)
        if ((n - i) & 1)
            fmpz_neg(res->coeffs + i, res->coeffs + i);
}

/* For palindromic f of degree 2m: the g of degree m with
 * f(x) = x^m g(x + 1/x).  Uses x^k + x^-k = D_k(x + 1/x) with D_0 = 2,
 * D_1 = t, D_(k+1) = t D_k - D_(k-1). */
static void poly_trace(fmpz_poly_t g, const fmpz_poly_t f)
{
    slong m = fmpz_poly_degree(f) / 2, k;
    fmpz_poly_t dprev, d, dnext;

    fmpz_poly_init(dprev);
    fmpz_poly_init(d);
    fmpz_poly_init(dnext);
    fmpz_poly_set_si(dprev, 2);
    fmpz_poly_zero(d);
    fmpz_poly_set_coeff_si(d, 1, 1);
    fmpz_poly_set_fmpz(g, f->coeffs + m);
    for (k = 1; k <= m; k++)
    {
        fmpz_poly_scalar_addmul_fmpz(g, d, f->coeffs + m + k);
        fmpz_poly_shift_left(dnext, d, 1);
        fmpz_poly_sub(dnext, dnext, dprev);
        fmpz_poly_swap(dprev, d);
        fmpz_poly_swap(d, dnext);
    }
    fmpz_poly_clear(dprev);
    fmpz_poly_clear(d);
    fmpz_poly_clear(dnext);
}

/* Roots of the squarefree f (degree n >= 1) into r[0..n), each with
 * acb_rel_accuracy_bits >= bits, each ball containing exactly one root;
 * Arb's order and conventions (real roots first with an exactly zero
 * imaginary part).  A linear factor gives its exact root. */
void spectrum_roots_certified(acb_ptr r, const fmpz_poly_t f, slong bits)
{
    slong n = fmpz_poly_degree(f), i, target;

    if (n == 1)
    {
        acb_set_fmpz(r, f->coeffs);
        acb_neg(r, r);
        if (!fmpz_is_one(f->coeffs + 1))
            acb_div_fmpz(r, r, f->coeffs + 1, bits + 16);
        return;
    }
    for (target = bits + 8; ; target *= 2)
    {
        arb_fmpz_poly_complex_roots(r, f, 0, target);
        for (i = 0; i < n; i++)
            if (acb_rel_accuracy_bits(r + i) < bits)
                break;
        if (i == n)
            return;
    }
}

/* Number of roots of the monic irreducible f on the unit circle (the
 * method is explained in spectrum.h). */
ns_status spectrum_roots_unimodular(slong *u, const fmpz_poly_t f, nserr_t err)
{
    slong n = fmpz_poly_degree(f), m, i, bits, count;
    int undecided;
    fmpz_poly_t g;
    acb_ptr r;
    arb_t t, two;
    ns_status st = NS_OK;

    if (n == 1)
    {
        *u = fmpz_is_pm1(f->coeffs) ? 1 : 0;
        return NS_OK;
    }
    if (fmpz_poly_is_cyclotomic(f))
    {
        *u = n;
        return NS_OK;
    }
    /* an irreducible palindromic f of odd degree has the root -1, so it is
       x + 1, handled above */
    if (!poly_is_palindromic(f) || n % 2 != 0)
    {
        *u = 0;
        return NS_OK;
    }

    m = n / 2;
    fmpz_poly_init(g);
    poly_trace(g, f);
    r = _acb_vec_init(m);
    arb_init(t);
    arb_init(two);
    arb_set_si(two, 2);
    for (bits = 64; ; bits *= 2)
    {
        if (bits > SPECTRUM_PREC_MAX)
        {
            st = nserr_set(err, NS_ERR_LIMIT, 0, 0,
                           "spectrum: deciding |lambda| = 1 for a factor of "
                           "degree %ld needed more than %ld bits",
                           (long) n, (long) SPECTRUM_PREC_MAX);
            break;
        }
        spectrum_roots_certified(r, g, bits);
        count = 0;
        undecided = 0;
        for (i = 0; i < m; i++)
        {
            if (!arb_is_zero(acb_imagref(r + i)))
                continue; /* certified non-real t: |lambda| != 1 */
            arb_abs(t, acb_realref(r + i));
            if (arb_lt(t, two))
                count++;
            else if (!arb_gt(t, two))
                undecided = 1;
        }
        if (!undecided)
        {
            *u = 2 * count;
            break;
        }
    }
    arb_clear(t);
    arb_clear(two);
    _acb_vec_clear(r, m);
    fmpz_poly_clear(g);
    return st;
}

/* The reflection z -> -conj(z) of ball i meets no other root ball.  For an
 * even or odd f it maps roots to roots, so the reflected root lies in ball
 * i, hence equals the root there: its real part is exactly 0. */
static int reflection_isolated(acb_srcptr r, slong n, slong i)
{
    acb_t w;
    slong j;
    int ok = 1;

    acb_init(w);
    acb_conj(w, r + i);
    acb_neg(w, w);
    if (!acb_overlaps(w, r + i))
        ok = 0;
    for (j = 0; ok && j < n; j++)
        if (j != i && acb_overlaps(w, r + j))
            ok = 0;
    acb_clear(w);
    return ok;
}

/* Working precision for |z|: enough to keep the accuracy z has (Arb
 * often delivers more than asked for), at least b + 32. */
static slong abs_prec(const acb_t z, slong b)
{
    slong acc = acb_rel_accuracy_bits(z);
    if (acc > 8 * b)
        acc = 8 * b;
    return FLINT_MAX(acc, b) + 32;
}

/* Roots r, moduli a and exact sides of the monic irreducible f that has u
 * roots on the unit circle; roots at accuracy >= bits, refined until every
 * real part that is 0 is exactly 0 and every side is decided. */
ns_status spectrum_roots_classify(acb_ptr r, arb_ptr a, int *side,
                              const fmpz_poly_t f, slong u, slong bits,
                              nserr_t err)
{
    slong n = fmpz_poly_degree(f), i, b, k;
    int even_odd, ok;

    if (n == 1)
    {
        spectrum_roots_certified(r, f, bits);
        arb_set_fmpz(a, f->coeffs);
        arb_abs(a, a);
        k = fmpz_cmpabs(f->coeffs, f->coeffs + 1);
        side[0] = k < 0 ? -1 : (k > 0 ? 1 : 0);
        return NS_OK;
    }

    even_odd = poly_is_even_or_odd(f);
    for (b = bits; b <= SPECTRUM_PREC_MAX; b *= 2)
    {
        spectrum_roots_certified(r, f, b);

        ok = 1;
        for (i = 0; i < n && ok; i++)
        {
            arb_srcptr re = acb_realref(r + i);
            if (arb_is_zero(acb_imagref(r + i)) || arb_is_zero(re)
                || !arb_contains_zero(re))
                continue;
            if (even_odd && reflection_isolated(r, n, i))
                arb_zero(acb_realref(r + i));
            else
                ok = 0;
        }
        if (!ok)
            continue;

        if (u == n)
        {
            for (i = 0; i < n; i++)
            {
                arb_one(a + i);
                side[i] = 0;
            }
            return NS_OK;
        }

        k = 0;
        for (i = 0; i < n; i++)
        {
            acb_abs(a + i, r + i, abs_prec(r + i, b));
            if (arb_contains_si(a + i, 1))
                k++;
        }
        if (k != u)
            continue;
        for (i = 0; i < n; i++)
        {
            if (arb_contains_si(a + i, 1))
            {
                arb_one(a + i);
                side[i] = 0;
            }
            else
                side[i] = arf_cmp_si(arb_midref(a + i), 1) > 0 ? 1 : -1;
        }
        return NS_OK;
    }
    return nserr_set(err, NS_ERR_LIMIT, 0, 0,
                     "spectrum: separating the roots of a factor of degree "
                     "%ld from the unit circle needed more than %ld bits",
                     (long) n, (long) SPECTRUM_PREC_MAX);
}

/* Roots of factor k, refined to `bits` and classified. */
ns_status spectrum_roots_compute_factor(spectrum_t S, slong k, slong bits, nserr_t err)
{
    slong s = S->root_start[k];
    return spectrum_roots_classify(S->roots + s, S->root_abs + s, S->root_side + s,
                        S->factors->p + k, S->fac_unimodular[k], bits, err);
}
