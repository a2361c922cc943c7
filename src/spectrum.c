/* spectrum.c — exact and certified eigenvalue data of an integer matrix.
 *
 * The contracts and the mathematics (unit-circle decisions, exactness of the
 * spectral radius) are described in spectrum.h; comments here are about the
 * implementation. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <flint/fmpz_vec.h>
#include <flint/ulong_extras.h>
#include <arb_fmpz_poly.h>

#include <flint/nmod_mat.h>
#include <flint/nmod_poly.h>
#include <flint/ulong_extras.h>
#include "spectrum.h"

/* Rounds of precision doubling spent separating the candidates for the
 * spectral radius before exact arithmetic takes over. */
#define TIE_ROUNDS 3

/* Digits used when a caller passes digits <= 0 to an eigenvalue string. */
#define EIGENVALUE_DIGITS_DEFAULT 16

/* ======================================================================
 * Strings
 * ====================================================================== */

typedef struct
{
    char *s;
    size_t len;
    size_t cap;
    int fail;
} strbuf;

static void sb_init(strbuf *b)
{
    b->s = NULL;
    b->len = 0;
    b->cap = 0;
    b->fail = 0;
}

static void sb_putn(strbuf *b, const char *t, size_t n)
{
    if (b->fail)
        return;
    if (b->len + n + 1 > b->cap)
    {
        size_t cap = b->cap ? b->cap : 64;
        char *s;
        while (cap < b->len + n + 1)
            cap *= 2;
        s = realloc(b->s, cap);
        if (s == NULL)
        {
            b->fail = 1;
            return;
        }
        b->s = s;
        b->cap = cap;
    }
    memcpy(b->s + b->len, t, n);
    b->len += n;
    b->s[b->len] = '\0';
}

static void sb_put(strbuf *b, const char *t)
{
    sb_putn(b, t, strlen(t));
}

static void sb_put_si(strbuf *b, slong x)
{
    char t[32];
    snprintf(t, sizeof t, "%ld", (long) x);
    sb_put(b, t);
}

static void sb_put_fmpz(strbuf *b, const fmpz_t x)
{
    size_t n = fmpz_sizeinbase(x, 10) + 2;
    char *t = malloc(n);
    if (t == NULL)
    {
        b->fail = 1;
        return;
    }
    fmpz_get_str(t, 10, x);
    sb_put(b, t);
    free(t);
}

/* Returns the malloc'd string, or NULL if an allocation failed. */
static char *sb_finish(strbuf *b)
{
    if (!b->fail && b->s == NULL)
        sb_putn(b, "", 0);
    if (b->fail)
    {
        free(b->s);
        return NULL;
    }
    return b->s;
}

static char *str_copy(const char *t)
{
    strbuf b;
    sb_init(&b);
    sb_put(&b, t);
    return sb_finish(&b);
}

static void sb_put_power(strbuf *b, slong e, int style)
{
    sb_put(b, "^");
    if (style == SPECTRUM_STR_LATEX)
        sb_put(b, "{");
    sb_put_si(b, e);
    if (style == SPECTRUM_STR_LATEX)
        sb_put(b, "}");
}

static void sb_put_poly(strbuf *b, const fmpz_poly_t f, int style)
{
    slong n = fmpz_poly_degree(f), i;
    int first = 1;
    fmpz_t c;

    if (n < 0)
    {
        sb_put(b, "0");
        return;
    }
    fmpz_init(c);
    for (i = n; i >= 0; i--)
    {
        const fmpz *a = f->coeffs + i;
        int neg;

        if (fmpz_is_zero(a))
            continue;
        neg = fmpz_sgn(a) < 0;
        fmpz_abs(c, a);
        if (first)
        {
            if (neg)
                sb_put(b, "-");
        }
        else
            sb_put(b, neg ? " - " : " + ");
        first = 0;
        if (i == 0 || !fmpz_is_one(c))
        {
            sb_put_fmpz(b, c);
            if (i > 0 && style == SPECTRUM_STR_ASCII)
                sb_put(b, "*");
        }
        if (i >= 1)
        {
            sb_put(b, "x");
            if (i >= 2)
                sb_put_power(b, i, style);
        }
    }
    fmpz_clear(c);
}

/* ======================================================================
 * Polynomial helpers
 * ====================================================================== */

static int poly_is_x(const fmpz_poly_t f)
{
    return f->length == 2 && fmpz_is_zero(f->coeffs)
           && fmpz_is_one(f->coeffs + 1);
}

/* Total order used to sort factors: x first, then by degree, then by the
 * coefficients from the constant term up. */
static int poly_cmp(const fmpz_poly_struct *a, const fmpz_poly_struct *b)
{
    int ax = poly_is_x(a), bx = poly_is_x(b);
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
static void poly_reflect(fmpz_poly_t res, const fmpz_poly_t f)
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

/* ======================================================================
 * Certified roots
 * ====================================================================== */

/* Roots of the squarefree f (degree n >= 1) into r[0..n), each with
 * acb_rel_accuracy_bits >= bits, each ball containing exactly one root;
 * Arb's order and conventions (real roots first with an exactly zero
 * imaginary part).  A linear factor gives its exact root. */
static void roots_certified(acb_ptr r, const fmpz_poly_t f, slong bits)
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
static ns_status factor_unimodular(slong *u, const fmpz_poly_t f, nserr_t err)
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
        roots_certified(r, g, bits);
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
static ns_status factor_roots(acb_ptr r, arb_ptr a, int *side,
                              const fmpz_poly_t f, slong u, slong bits,
                              nserr_t err)
{
    slong n = fmpz_poly_degree(f), i, b, k;
    int even_odd, ok;

    if (n == 1)
    {
        roots_certified(r, f, bits);
        arb_set_fmpz(a, f->coeffs);
        arb_abs(a, a);
        k = fmpz_cmpabs(f->coeffs, f->coeffs + 1);
        side[0] = k < 0 ? -1 : (k > 0 ? 1 : 0);
        return NS_OK;
    }

    even_odd = poly_is_even_or_odd(f);
    for (b = bits; b <= SPECTRUM_PREC_MAX; b *= 2)
    {
        roots_certified(r, f, b);

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

/* Sets res to the root of P (irreducible, primitive, positive leading
 * coefficient, degree >= 2) in the ball b0, which contains exactly one
 * root of P.  Returns 0 only if validation failed up to the precision
 * cap. */
static int qqbar_from_isolated(qqbar_t res, const fmpz_poly_t P, const acb_t b0)
{
    slong n = fmpz_poly_degree(P), prec, i, found;
    acb_t b, t;
    acb_ptr r;
    int ok = 0;

    acb_init(b);
    acb_init(t);
    r = _acb_vec_init(n);
    acb_set(b, b0);
    for (prec = 2 * SPECTRUM_ROOT_BITS + 64; prec <= SPECTRUM_PREC_MAX;
         prec *= 2)
    {
        if (_qqbar_validate_uniqueness(t, P, b, prec))
        {
            fmpz_poly_set(QQBAR_POLY(res), P);
            acb_set(QQBAR_ENCLOSURE(res), t);
            ok = 1;
            break;
        }
        /* shrink b to the sharper isolating ball of the same root */
        roots_certified(r, P, prec);
        found = -1;
        for (i = 0; i < n; i++)
            if (acb_contains(b, r + i))
                found = i;
        if (found >= 0)
            acb_set(b, r + found);
    }
    _acb_vec_clear(r, n);
    acb_clear(b);
    acb_clear(t);
    return ok;
}

/* Exact |z| for the root z (an isolating ball from roots_certified) of the
 * monic irreducible f; returns 0 when outside the exactness budget. */
static int exact_modulus(qqbar_t res, const fmpz_poly_t f, const acb_t z)
{
    slong n = fmpz_poly_degree(f);
    int ok;

    if (n == 1)
    {
        fmpz_t c;
        fmpz_init(c);
        fmpz_abs(c, f->coeffs);
        qqbar_set_fmpz(res, c);
        fmpz_clear(c);
        return 1;
    }
    if (arb_is_zero(acb_imagref(z)))
    {
        if (arb_is_positive(acb_realref(z)))
            return qqbar_from_isolated(res, f, z);
        else
        {
            fmpz_poly_t P;
            acb_t w;
            fmpz_poly_init(P);
            acb_init(w);
            poly_reflect(P, f);
            acb_neg(w, z);
            ok = qqbar_from_isolated(res, P, w);
            fmpz_poly_clear(P);
            acb_clear(w);
            return ok;
        }
    }
    if (n <= SPECTRUM_QQBAR_ABS_MAX_DEGREE)
    {
        qqbar_t mu;
        qqbar_init(mu);
        ok = qqbar_from_isolated(mu, f, z);
        if (ok)
            qqbar_abs(res, mu);
        qqbar_clear(mu);
        return ok;
    }
    return 0;
}

/* ======================================================================
 * Life cycle
 * ====================================================================== */

/* The per-root and per-factor arrays, empty. */
static void spectrum_null_arrays(spectrum_t S)
{
    S->roots = NULL;
    S->root_abs = NULL;
    S->root_start = NULL;
    S->root_factor = NULL;
    S->root_side = NULL;
    S->fac_unimodular = NULL;
    S->eig_root = NULL;
    S->dom = NULL;
    S->nroots = 0;
    S->ndom = 0;
}

static void spectrum_free_arrays(spectrum_t S)
{
    if (S->roots != NULL)
        _acb_vec_clear(S->roots, S->nroots);
    if (S->root_abs != NULL)
        _arb_vec_clear(S->root_abs, S->nroots);
    flint_free(S->root_start);
    flint_free(S->root_factor);
    flint_free(S->root_side);
    flint_free(S->fac_unimodular);
    flint_free(S->eig_root);
    flint_free(S->dom);
    spectrum_null_arrays(S);
}

/* Back to the spectrum of the 0x0 matrix. */
static void spectrum_reset(spectrum_t S)
{
    spectrum_free_arrays(S);
    S->dim = 0;
    fmpz_poly_one(S->charpoly);
    fmpz_poly_factor_clear(S->factors);
    fmpz_poly_factor_init(S->factors);
    fmpz_one(S->det);
    fmpz_one(S->det_one_minus);
    S->count_below = 0;
    S->count_on = 0;
    S->count_above = 0;
    arb_zero(S->radius);
    S->radius_exact = 1;
    qqbar_zero(S->radius_qqbar);
    arb_zero(S->entropy);
}

void spectrum_init(spectrum_t S)
{
    fmpz_poly_init(S->charpoly);
    fmpz_poly_factor_init(S->factors);
    fmpz_init(S->det);
    fmpz_init(S->det_one_minus);
    arb_init(S->radius);
    qqbar_init(S->radius_qqbar);
    arb_init(S->entropy);
    spectrum_null_arrays(S);
    spectrum_reset(S);
}

void spectrum_clear(spectrum_t S)
{
    spectrum_free_arrays(S);
    fmpz_poly_clear(S->charpoly);
    fmpz_poly_factor_clear(S->factors);
    fmpz_clear(S->det);
    fmpz_clear(S->det_one_minus);
    arb_clear(S->radius);
    qqbar_clear(S->radius_qqbar);
    arb_clear(S->entropy);
}

/* ======================================================================
 * Computation
 * ====================================================================== */

static void sort_factors(fmpz_poly_factor_t fac)
{
    slong i, j;
    for (i = 1; i < fac->num; i++)
        for (j = i; j > 0 && poly_cmp(fac->p + j, fac->p + j - 1) < 0; j--)
        {
            slong e = fac->exp[j];
            fmpz_poly_swap(fac->p + j, fac->p + j - 1);
            fac->exp[j] = fac->exp[j - 1];
            fac->exp[j - 1] = e;
        }
}

/* Roots of factor k, refined to `bits` and classified. */
static ns_status compute_factor(spectrum_t S, slong k, slong bits, nserr_t err)
{
    slong s = S->root_start[k];
    return factor_roots(S->roots + s, S->root_abs + s, S->root_side + s,
                        S->factors->p + k, S->fac_unimodular[k], bits, err);
}

/* Real roots and roots in the upper half-plane with |z| > 1 of the factors
 * flagged in cfac, into cand; returns how many. */
static slong collect_candidates(slong *cand, const spectrum_t S, const int *cfac)
{
    slong k, i, nc = 0;
    for (k = 0; k < S->factors->num; k++)
    {
        if (!cfac[k])
            continue;
        for (i = S->root_start[k]; i < S->root_start[k + 1]; i++)
        {
            if (S->root_side[i] <= 0)
                continue;
            if (arb_is_zero(acb_imagref(S->roots + i))
                || arb_is_positive(acb_imagref(S->roots + i)))
                cand[nc++] = i;
        }
    }
    return nc;
}

/* Keeps the candidates whose modulus ball reaches the largest lower
 * bound; recomputes cfac. */
static slong prune_candidates(slong *cand, slong nc, const spectrum_t S,
                              int *cfac)
{
    arf_t lo, t;
    slong c, keep = 0;

    arf_init(lo);
    arf_init(t);
    for (c = 0; c < nc; c++)
    {
        arb_get_lbound_arf(t, S->root_abs + cand[c], ARF_PREC_EXACT);
        if (c == 0 || arf_cmp(t, lo) > 0)
            arf_set(lo, t);
    }
    for (c = 0; c < S->factors->num; c++)
        cfac[c] = 0;
    for (c = 0; c < nc; c++)
    {
        arb_get_ubound_arf(t, S->root_abs + cand[c], ARF_PREC_EXACT);
        if (arf_cmp(t, lo) >= 0)
        {
            cand[keep++] = cand[c];
            cfac[S->root_factor[cand[c]]] = 1;
        }
    }
    arf_clear(lo);
    arf_clear(t);
    return keep;
}

static void set_dom_from_flags(spectrum_t S, const int *flag)
{
    slong k;
    flint_free(S->dom);
    S->dom = flint_malloc(sizeof(slong) * (S->factors->num + 1));
    S->ndom = 0;
    for (k = 0; k < S->factors->num; k++)
        if (flag[k])
            S->dom[S->ndom++] = k;
}

static ns_status compute_radius(spectrum_t S, nserr_t err)
{
    slong nf = S->factors->num, nc, c, k, round, best;
    slong *cand;
    int *cfac;
    int all_exact, any_exact_possible;
    qqbar_ptr val;
    ns_status st = NS_OK;

    cfac = flint_calloc(nf + 1, sizeof(int));

    if (S->count_above == 0)
    {
        S->radius_exact = 1;
        if (spectrum_is_nilpotent(S))
        {
            arb_zero(S->radius);
            qqbar_zero(S->radius_qqbar);
        }
        else
        {
            /* no root outside the disc and not nilpotent: rho = 1
               (Kronecker, see spectrum.h) */
            arb_one(S->radius);
            qqbar_one(S->radius_qqbar);
            for (k = 0; k < nf; k++)
                cfac[k] = !poly_is_x(S->factors->p + k);
        }
        set_dom_from_flags(S, cfac);
        flint_free(cfac);
        return NS_OK;
    }

    cand = flint_malloc(sizeof(slong) * (S->nroots + 1));
    for (k = 0; k < nf; k++)
        for (c = S->root_start[k]; c < S->root_start[k + 1]; c++)
            if (S->root_side[c] > 0)
                cfac[k] = 1;

    for (round = 0; ; round++)
    {
        nc = collect_candidates(cand, S, cfac);
        nc = prune_candidates(cand, nc, S, cfac);
        if (nc <= 1 || round == TIE_ROUNDS)
            break;
        /* real candidates get exact moduli cheaply: no refinement */
        all_exact = 1;
        any_exact_possible = 0;
        for (c = 0; c < nc; c++)
        {
            slong deg = fmpz_poly_degree(S->factors->p + S->root_factor[cand[c]]);
            int real = arb_is_zero(acb_imagref(S->roots + cand[c]));
            if (!real)
                all_exact = 0;
            if (real || deg <= SPECTRUM_QQBAR_ABS_MAX_DEGREE)
                any_exact_possible = 1;
        }
        if (all_exact)
            break;
        {
            slong nfac = 0;
            for (k = 0; k < nf; k++)
                nfac += cfac[k];
            if (!any_exact_possible && nfac == 1)
                break; /* refining cannot make rho exact or shrink dom */
        }
        for (k = 0; k < nf && st == NS_OK; k++)
            if (cfac[k])
                st = compute_factor(S, k, SPECTRUM_ROOT_BITS << (round + 1),
                                    err);
        if (st != NS_OK)
        {
            flint_free(cand);
            flint_free(cfac);
            return st;
        }
    }

    val = _qqbar_vec_init(nc);
    all_exact = 1;
    for (c = 0; c < nc && all_exact; c++)
        all_exact = exact_modulus(val + c,
                                  S->factors->p + S->root_factor[cand[c]],
                                  S->roots + cand[c]);

    if (all_exact)
    {
        slong prec;
        best = 0;
        for (c = 1; c < nc; c++)
            if (qqbar_cmp_re(val + c, val + best) > 0)
                best = c;
        qqbar_set(S->radius_qqbar, val + best);
        S->radius_exact = 1;
        for (k = 0; k < nf; k++)
            cfac[k] = 0;
        for (c = 0; c < nc; c++)
            if (c == best || qqbar_cmp_re(val + c, val + best) == 0)
                cfac[S->root_factor[cand[c]]] = 1;
        for (prec = 2 * SPECTRUM_ROOT_BITS + 32; ; prec *= 2)
        {
            qqbar_get_arb(S->radius, S->radius_qqbar, prec);
            if (arb_rel_accuracy_bits(S->radius) >= SPECTRUM_ROOT_BITS
                || prec > SPECTRUM_PREC_MAX)
                break;
        }
    }
    else
    {
        S->radius_exact = 0;
        qqbar_zero(S->radius_qqbar);
        arb_set(S->radius, S->root_abs + cand[0]);
        for (c = 1; c < nc; c++)
            arb_max(S->radius, S->radius, S->root_abs + cand[c],
                    8 * SPECTRUM_ROOT_BITS);
    }
    set_dom_from_flags(S, cfac);

    _qqbar_vec_clear(val, nc);
    flint_free(cand);
    flint_free(cfac);
    return NS_OK;
}

/* Display order of distinct roots: decreasing modulus, then decreasing
 * real part, then decreasing imaginary part (all by midpoints). */
static int root_before(const spectrum_t S, slong i, slong j)
{
    int c = arf_cmp(arb_midref(S->root_abs + j), arb_midref(S->root_abs + i));
    if (c == 0)
        c = arf_cmp(arb_midref(acb_realref(S->roots + j)),
                    arb_midref(acb_realref(S->roots + i)));
    if (c == 0)
        c = arf_cmp(arb_midref(acb_imagref(S->roots + j)),
                    arb_midref(acb_imagref(S->roots + i)));
    if (c == 0)
        c = (j < i) ? 1 : -1;
    return c < 0;
}

static void sort_eigenvalues(spectrum_t S)
{
    slong *order = flint_malloc(sizeof(slong) * (S->nroots + 1));
    slong i, j, e, pos = 0;

    for (i = 0; i < S->nroots; i++)
        order[i] = i;
    for (i = 1; i < S->nroots; i++)
    {
        slong v = order[i];
        for (j = i; j > 0 && root_before(S, v, order[j - 1]); j--)
            order[j] = order[j - 1];
        order[j] = v;
    }
    flint_free(S->eig_root);
    S->eig_root = flint_malloc(sizeof(slong) * (S->dim + 1));
    for (i = 0; i < S->nroots; i++)
        for (e = 0; e < S->factors->exp[S->root_factor[order[i]]]; e++)
            S->eig_root[pos++] = order[i];
    flint_free(order);
}

static void compute_entropy(spectrum_t S)
{
    slong i, prec = 2 * SPECTRUM_ROOT_BITS + 64;
    arb_t t;

    arb_init(t);
    arb_zero(S->entropy);
    for (i = 0; i < S->nroots; i++)
    {
        if (S->root_side[i] <= 0)
            continue;
        arb_log(t, S->root_abs + i, prec);
        arb_mul_si(t, t, S->factors->exp[S->root_factor[i]], prec);
        arb_add(S->entropy, S->entropy, t, prec);
    }
    arb_clear(t);
}

/* det(xI - M) by reduction modulo word-size primes and signed Chinese
 * remaindering, polling progress between primes so that large layers can be
 * cancelled.  Every eigenvalue has |lambda| <= R = min(max row sum, max
 * column sum) of |M| (Gershgorin), so |c_k| = |e_k(lambda)| <= C(d,k) R^k <=
 * (1 + R)^d: bits((1 + R)^d) + 2 bits of modulus suffice.  For the layer
 * matrices of nilpotent groups R is small, and this bound needs far fewer
 * primes than a Hadamard bound.  Returns 1 when cancelled. */
static int charpoly_multimodular(fmpz_poly_t cp, const fmpz_mat_t M,
                                 const ns_progress_t *progress)
{
    slong d = fmpz_mat_nrows(M);
    fmpz_t R, t, m;
    fmpz_init(R);
    fmpz_init(t);
    fmpz_init(m);
    /* R = min(max row sum, max column sum) of |M| */
    for (int pass = 0; pass < 2; pass++) {
        fmpz_t best;
        fmpz_init(best);
        for (slong i = 0; i < d; i++) {
            fmpz_zero(t);
            for (slong j = 0; j < d; j++) {
                const fmpz *x = pass ? fmpz_mat_entry(M, j, i) : fmpz_mat_entry(M, i, j);
                if (fmpz_sgn(x) < 0)
                    fmpz_sub(t, t, x);
                else
                    fmpz_add(t, t, x);
            }
            if (fmpz_cmp(t, best) > 0)
                fmpz_set(best, t);
        }
        if (pass == 0 || fmpz_cmp(best, R) < 0)
            fmpz_set(R, best);
        fmpz_clear(best);
    }
    fmpz_add_ui(t, R, 1);
    fmpz_pow_ui(t, t, (ulong)d);
    flint_bitcnt_t need = fmpz_bits(t) + 2;
    int cancelled = 0;
    nmod_mat_t Mp;
    nmod_poly_t cpp;
    mp_limb_t p = UWORD(1) << (FLINT_BITS - 2);
    fmpz_poly_zero(cp);
    fmpz_one(m);
    while (fmpz_bits(m) <= need) {
        if (progress && ns_progress_report(progress, NULL, -1.0)) {
            cancelled = 1;
            break;
        }
        p = n_nextprime(p, 1);
        nmod_mat_init(Mp, d, d, p);
        nmod_poly_init(cpp, p);
        fmpz_mat_get_nmod_mat(Mp, M);
        nmod_mat_charpoly(cpp, Mp);
        fmpz_poly_CRT_ui(cp, cp, m, cpp, 1);
        fmpz_mul_ui(m, m, p);
        nmod_poly_clear(cpp);
        nmod_mat_clear(Mp);
    }
    fmpz_clear(R);
    fmpz_clear(t);
    fmpz_clear(m);
    return cancelled;
}

/* Below this dimension FLINT's own charpoly is quick enough. */
#define SPECTRUM_MULTIMODULAR_MIN_DIM 12

ns_status spectrum_compute(spectrum_t S, const fmpz_mat_t M, nserr_t err)
{
    return spectrum_compute_progress(S, M, NULL, err);
}

ns_status spectrum_compute_progress(spectrum_t S, const fmpz_mat_t M,
                                    const ns_progress_t *progress, nserr_t err)
{
    slong d, nf, k, i, n;
    ns_status st = NS_OK;
    fmpz_t one;

    spectrum_reset(S);
    if (fmpz_mat_nrows(M) != fmpz_mat_ncols(M))
        return nserr_set(err, NS_ERR_INPUT, 0, 0,
                         "spectrum: the matrix is %ld x %ld, not square",
                         (long) fmpz_mat_nrows(M), (long) fmpz_mat_ncols(M));

    d = fmpz_mat_nrows(M);
    S->dim = d;
    if (d < SPECTRUM_MULTIMODULAR_MIN_DIM)
        fmpz_mat_charpoly(S->charpoly, M);
    else if (charpoly_multimodular(S->charpoly, M, progress))
    {
        spectrum_reset(S);
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    }
    fmpz_poly_get_coeff_fmpz(S->det, S->charpoly, 0);
    if (d % 2 != 0)
        fmpz_neg(S->det, S->det);
    fmpz_init(one);
    fmpz_one(one);
    fmpz_poly_evaluate_fmpz(S->det_one_minus, S->charpoly, one);
    fmpz_clear(one);

    fmpz_poly_factor(S->factors, S->charpoly);
    sort_factors(S->factors);
    nf = S->factors->num;

    S->root_start = flint_malloc(sizeof(slong) * (nf + 1));
    S->fac_unimodular = flint_malloc(sizeof(slong) * (nf + 1));
    n = 0;
    for (k = 0; k < nf; k++)
    {
        S->root_start[k] = n;
        n += fmpz_poly_degree(S->factors->p + k);
    }
    S->root_start[nf] = n;
    S->nroots = n;
    S->roots = _acb_vec_init(n);
    S->root_abs = _arb_vec_init(n);
    S->root_factor = flint_malloc(sizeof(slong) * (n + 1));
    S->root_side = flint_malloc(sizeof(int) * (n + 1));
    for (k = 0; k < nf; k++)
        for (i = S->root_start[k]; i < S->root_start[k + 1]; i++)
            S->root_factor[i] = k;

    for (k = 0; k < nf && st == NS_OK; k++)
    {
        st = factor_unimodular(S->fac_unimodular + k, S->factors->p + k, err);
        if (st == NS_OK)
            st = compute_factor(S, k, SPECTRUM_ROOT_BITS, err);
    }
    if (st != NS_OK)
    {
        spectrum_reset(S);
        return st;
    }

    for (i = 0; i < n; i++)
    {
        slong e = S->factors->exp[S->root_factor[i]];
        if (S->root_side[i] < 0)
            S->count_below += e;
        else if (S->root_side[i] == 0)
            S->count_on += e;
        else
            S->count_above += e;
    }

    st = compute_radius(S, err);
    if (st != NS_OK)
    {
        spectrum_reset(S);
        return st;
    }
    sort_eigenvalues(S);
    compute_entropy(S);
    return NS_OK;
}

/* ======================================================================
 * Accessors
 * ====================================================================== */

slong spectrum_dim(const spectrum_t S)
{
    return S->dim;
}

const fmpz_poly_struct *spectrum_charpoly(const spectrum_t S)
{
    return S->charpoly;
}

const fmpz_poly_factor_struct *spectrum_factors(const spectrum_t S)
{
    return S->factors;
}

const fmpz *spectrum_det(const spectrum_t S)
{
    return S->det;
}

const fmpz *spectrum_det_one_minus(const spectrum_t S)
{
    return S->det_one_minus;
}

acb_srcptr spectrum_eigenvalue(const spectrum_t S, slong i)
{
    if (i < 0 || i >= S->dim)
        return NULL;
    return S->roots + S->eig_root[i];
}

arb_srcptr spectrum_eigenvalue_abs(const spectrum_t S, slong i)
{
    if (i < 0 || i >= S->dim)
        return NULL;
    return S->root_abs + S->eig_root[i];
}

int spectrum_eigenvalue_side(const spectrum_t S, slong i)
{
    if (i < 0 || i >= S->dim)
        return 0;
    return S->root_side[S->eig_root[i]];
}

slong spectrum_eigenvalue_factor(const spectrum_t S, slong i)
{
    if (i < 0 || i >= S->dim)
        return -1;
    return S->root_factor[S->eig_root[i]];
}

slong spectrum_count_below_one(const spectrum_t S)
{
    return S->count_below;
}

slong spectrum_count_on_one(const spectrum_t S)
{
    return S->count_on;
}

slong spectrum_count_above_one(const spectrum_t S)
{
    return S->count_above;
}

int spectrum_has_unimodular(const spectrum_t S)
{
    return S->count_on > 0;
}

int spectrum_is_hyperbolic(const spectrum_t S)
{
    return S->count_on == 0;
}

int spectrum_is_expanding(const spectrum_t S)
{
    return S->count_above == S->dim;
}

int spectrum_is_nilpotent(const spectrum_t S)
{
    return S->factors->num == 0
           || (S->factors->num == 1 && poly_is_x(S->factors->p + 0));
}

arb_srcptr spectrum_radius(const spectrum_t S)
{
    return S->radius;
}

int spectrum_radius_cmp_one(const spectrum_t S)
{
    if (S->count_above > 0)
        return 1;
    return spectrum_is_nilpotent(S) ? -1 : 0;
}

int spectrum_radius_is_exact(const spectrum_t S)
{
    return S->radius_exact;
}

const qqbar_struct *spectrum_radius_qqbar(const spectrum_t S)
{
    return S->radius_exact ? S->radius_qqbar : NULL;
}

int spectrum_radius_minpoly(fmpz_poly_t res, const spectrum_t S)
{
    if (!S->radius_exact)
    {
        fmpz_poly_zero(res);
        return 0;
    }
    fmpz_poly_set(res, QQBAR_POLY(S->radius_qqbar));
    return 1;
}

arb_srcptr spectrum_entropy(const spectrum_t S)
{
    return S->entropy;
}

/* ======================================================================
 * Refinement on demand
 * ====================================================================== */

void spectrum_radius_arb(arb_t res, const spectrum_t S, slong prec)
{
    slong b, k, i, n;
    acb_ptr r;
    arb_t t;

    if (prec < 2)
        prec = 2;
    if (spectrum_radius_cmp_one(S) <= 0)
    {
        arb_set(res, S->radius);
        return;
    }
    if (arb_rel_accuracy_bits(S->radius) >= prec)
    {
        arb_set(res, S->radius);
        return;
    }
    if (S->radius_exact)
    {
        for (b = prec + 16; ; b *= 2)
        {
            qqbar_get_arb(res, S->radius_qqbar, b);
            if (arb_rel_accuracy_bits(res) >= prec || b > SPECTRUM_PREC_MAX)
                return;
        }
    }
    arb_init(t);
    for (b = prec + 16; ; b *= 2)
    {
        int first = 1;
        for (k = 0; k < S->ndom; k++)
        {
            const fmpz_poly_struct *f = S->factors->p + S->dom[k];
            n = fmpz_poly_degree(f);
            r = _acb_vec_init(n);
            roots_certified(r, f, b);
            for (i = 0; i < n; i++)
            {
                acb_abs(t, r + i, b + 16);
                if (first)
                    arb_set(res, t);
                else
                    arb_max(res, res, t, b + 16);
                first = 0;
            }
            _acb_vec_clear(r, n);
        }
        if (arb_rel_accuracy_bits(res) >= prec || b > SPECTRUM_PREC_MAX)
            break;
    }
    arb_clear(t);
}

void spectrum_root_bound_arb(arb_t res, const spectrum_t S, ulong j,
                             slong prec)
{
    slong b;
    arb_t t;

    if (j == 0)
        j = 1;
    if (spectrum_radius_cmp_one(S) <= 0)
    {
        arb_set(res, S->radius);
        return;
    }
    arb_init(t);
    for (b = prec + 8; ; b *= 2)
    {
        spectrum_radius_arb(t, S, b);
        arb_root_ui(res, t, j, b + 16);
        if (arb_rel_accuracy_bits(res) >= prec || b > SPECTRUM_PREC_MAX)
            break;
    }
    arb_clear(t);
}

/* Sum of mult * log|z| over the roots outside the unit disc, with roots
 * at accuracy b.  Returns 0 if some such root could not be told apart from
 * the circle at this accuracy. */
static int entropy_at(arb_t res, const spectrum_t S, slong b)
{
    slong k, i, n, above, found;
    acb_ptr r;
    arb_t t;
    int ok = 1;

    arb_init(t);
    arb_zero(res);
    for (k = 0; k < S->factors->num && ok; k++)
    {
        const fmpz_poly_struct *f = S->factors->p + k;
        above = 0;
        for (i = S->root_start[k]; i < S->root_start[k + 1]; i++)
            if (S->root_side[i] > 0)
                above++;
        if (above == 0)
            continue;
        n = fmpz_poly_degree(f);
        r = _acb_vec_init(n);
        roots_certified(r, f, b);
        found = 0;
        for (i = 0; i < n; i++)
        {
            acb_abs(t, r + i, b + 16);
            if (arf_cmp_si(arb_midref(t), 1) > 0 && !arb_contains_si(t, 1))
            {
                arb_log(t, t, b + 16);
                arb_mul_si(t, t, S->factors->exp[k], b + 16);
                arb_add(res, res, t, b + 16);
                found++;
            }
        }
        if (found != above)
            ok = 0;
        _acb_vec_clear(r, n);
    }
    arb_clear(t);
    return ok;
}

/* Certified in all cases: sum of mult * log max(1, |z|) over all roots. */
static void entropy_fallback(arb_t res, const spectrum_t S, slong b)
{
    slong k, i, n;
    acb_ptr r;
    arb_t t, one;

    arb_init(t);
    arb_init(one);
    arb_one(one);
    arb_zero(res);
    for (k = 0; k < S->factors->num; k++)
    {
        const fmpz_poly_struct *f = S->factors->p + k;
        n = fmpz_poly_degree(f);
        r = _acb_vec_init(n);
        roots_certified(r, f, b);
        for (i = 0; i < n; i++)
        {
            acb_abs(t, r + i, b + 16);
            arb_max(t, t, one, b + 16);
            arb_log(t, t, b + 16);
            arb_mul_si(t, t, S->factors->exp[k], b + 16);
            arb_add(res, res, t, b + 16);
        }
        _acb_vec_clear(r, n);
    }
    arb_clear(t);
    arb_clear(one);
}

void spectrum_entropy_arb(arb_t res, const spectrum_t S, slong prec)
{
    slong b;

    if (S->count_above == 0)
    {
        arb_zero(res);
        return;
    }
    if (prec < 2)
        prec = 2;
    if (arb_rel_accuracy_bits(S->entropy) >= prec)
    {
        arb_set(res, S->entropy);
        return;
    }
    for (b = prec + 16; ; b *= 2)
    {
        if (b > SPECTRUM_PREC_MAX)
        {
            entropy_fallback(res, S, b);
            return;
        }
        if (entropy_at(res, S, b) && arb_rel_accuracy_bits(res) >= prec)
            return;
    }
}

/* ======================================================================
 * Decimal strings
 * ====================================================================== */

static char *fmpz_get_str_malloc(const fmpz_t x)
{
    strbuf b;
    sb_init(&b);
    sb_put_fmpz(&b, x);
    return sb_finish(&b);
}

/* digits dig[0..n) of D = d_0 d_1 ... with value D * 10^(E - n + 1). */
static char *format_decimal(int neg, const char *dig, slong n, slong E)
{
    strbuf b;
    slong i;

    sb_init(&b);
    if (neg)
        sb_put(&b, "-");
    if (E >= 0 && E < n)
    {
        sb_putn(&b, dig, (size_t) (E + 1));
        if (E + 1 < n)
        {
            sb_put(&b, ".");
            sb_putn(&b, dig + E + 1, (size_t) (n - E - 1));
        }
    }
    else if (E < 0 && E >= -5)
    {
        sb_put(&b, "0.");
        for (i = 0; i < -E - 1; i++)
            sb_put(&b, "0");
        sb_putn(&b, dig, (size_t) n);
    }
    else
    {
        sb_putn(&b, dig, 1);
        if (n > 1)
        {
            sb_put(&b, ".");
            sb_putn(&b, dig + 1, (size_t) (n - 1));
        }
        sb_put(&b, E < 0 ? "e-" : "e+");
        sb_put_si(&b, E < 0 ? -E : E);
    }
    return sb_finish(&b);
}

char *spectrum_ball_get_str(const arb_t x, slong digits)
{
    slong prec, e2, E, k, attempt;
    arb_t y, p, t;
    fmpz_t D, lo, hi;
    char *res = NULL;
    int neg;

    if (digits < 1)
        digits = 1;
    if (arb_is_zero(x))
        return str_copy("0");
    if (!arb_is_finite(x) || arb_contains_zero(x))
        return NULL;
    if (arb_is_exact(x) && arf_is_int(arb_midref(x)))
    {
        fmpz_t z;
        fmpz_init(z);
        arf_get_fmpz(z, arb_midref(x), ARF_RND_DOWN);
        res = fmpz_get_str_malloc(z);
        fmpz_clear(z);
        return res;
    }

    neg = arf_sgn(arb_midref(x)) < 0;
    prec = 4 * digits + 64;
    arb_init(y);
    arb_init(p);
    arb_init(t);
    fmpz_init(D);
    fmpz_init(lo);
    fmpz_init(hi);
    arb_abs(y, x);
    fmpz_ui_pow_ui(lo, 10, (ulong) (digits - 1));
    fmpz_ui_pow_ui(hi, 10, (ulong) digits);

    /* |mid| in [2^(e2-1), 2^e2): first guess of the decimal exponent */
    e2 = arf_abs_bound_lt_2exp_si(arb_midref(y));
    E = (slong) floor((double) (e2 - 1) * 0.30102999566398119521);
    for (attempt = 0; attempt < 8; attempt++)
    {
        k = digits - 1 - E;
        arb_ui_pow_ui(p, 10, (ulong) (k >= 0 ? k : -k), prec);
        if (k >= 0)
            arb_mul(t, y, p, prec);
        else
            arb_div(t, y, p, prec);
        arf_get_fmpz(D, arb_midref(t), ARF_RND_NEAR);
        if (fmpz_cmp(D, lo) < 0)
        {
            E--;
            continue;
        }
        if (fmpz_cmp(D, hi) >= 0)
        {
            E++;
            continue;
        }
        /* |D - t0| <= 1/2 + rad(t) < 1 for every t0 in the ball */
        if (mag_cmp_2exp_si(arb_radref(t), -1) < 0)
        {
            char *dig = fmpz_get_str_malloc(D);
            if (dig != NULL)
                res = format_decimal(neg, dig, digits, E);
            free(dig);
        }
        break;
    }

    arb_clear(y);
    arb_clear(p);
    arb_clear(t);
    fmpz_clear(D);
    fmpz_clear(lo);
    fmpz_clear(hi);
    return res;
}

/* As many certified digits as possible, at most `digits`; Arb's ball
 * notation when not even one digit is certified. */
static char *ball_str_lenient(const arb_t x, slong digits)
{
    slong n = digits, acc;
    char *s, *t;

    if (arb_is_zero(x) || (arb_is_exact(x) && arf_is_int(arb_midref(x))))
        return spectrum_ball_get_str(x, digits);
    acc = (slong) (arb_rel_accuracy_bits(x) * 0.30103);
    if (acc < n)
        n = acc;
    if (n < 1)
        n = 1;
    for (; n >= 1; n--)
    {
        s = spectrum_ball_get_str(x, n);
        if (s != NULL)
            return s;
    }
    t = arb_get_str(x, 5, 0);
    s = str_copy(t);
    flint_free(t);
    return s;
}

char *spectrum_eigenvalue_get_str(const spectrum_t S, slong i, slong digits)
{
    acb_srcptr z = spectrum_eigenvalue(S, i);
    strbuf b;
    char *t;
    arb_t im;

    if (z == NULL)
        return NULL;
    if (digits <= 0)
        digits = EIGENVALUE_DIGITS_DEFAULT;
    sb_init(&b);
    t = ball_str_lenient(acb_realref(z), digits);
    if (t == NULL)
        b.fail = 1;
    else
        sb_put(&b, t);
    free(t);
    if (arb_is_zero(acb_imagref(z)))
        sb_put(&b, " + 0i");
    else
    {
        arb_init(im);
        if (arb_is_negative(acb_imagref(z)))
        {
            arb_neg(im, acb_imagref(z));
            sb_put(&b, " - ");
        }
        else
        {
            arb_set(im, acb_imagref(z));
            sb_put(&b, " + ");
        }
        t = ball_str_lenient(im, digits);
        if (t == NULL)
            b.fail = 1;
        else
            sb_put(&b, t);
        free(t);
        sb_put(&b, "i");
        arb_clear(im);
    }
    return sb_finish(&b);
}

char *spectrum_eigenvalue_abs_get_str(const spectrum_t S, slong i,
                                      slong digits)
{
    arb_srcptr a = spectrum_eigenvalue_abs(S, i);
    if (a == NULL)
        return NULL;
    if (digits <= 0)
        digits = EIGENVALUE_DIGITS_DEFAULT;
    return ball_str_lenient(a, digits);
}

/* Decimal string of the value computed by fn at increasing precision. */
typedef void (*ball_fn)(arb_t res, const spectrum_t S, ulong j, slong prec);

static void radius_fn(arb_t res, const spectrum_t S, ulong j, slong prec)
{
    (void) j;
    spectrum_radius_arb(res, S, prec);
}

static void root_bound_fn(arb_t res, const spectrum_t S, ulong j, slong prec)
{
    spectrum_root_bound_arb(res, S, j, prec);
}

static void entropy_fn(arb_t res, const spectrum_t S, ulong j, slong prec)
{
    (void) j;
    spectrum_entropy_arb(res, S, prec);
}

static char *refined_str(const spectrum_t S, ball_fn fn, ulong j, slong digits)
{
    slong prec;
    char *s = NULL;
    arb_t x;

    arb_init(x);
    for (prec = (slong) (digits * 3.33) + 24; ; prec *= 2)
    {
        fn(x, S, j, prec);
        s = spectrum_ball_get_str(x, digits);
        if (s != NULL)
            break;
        if (prec > SPECTRUM_PREC_MAX)
        {
            s = ball_str_lenient(x, digits);
            break;
        }
    }
    arb_clear(x);
    return s;
}

char *spectrum_radius_get_str(const spectrum_t S, slong digits)
{
    if (digits <= 0)
        digits = SPECTRUM_DIGITS_DEFAULT;
    if (S->radius_exact && qqbar_is_integer(S->radius_qqbar))
    {
        fmpz_t z;
        char *s;
        fmpz_init(z);
        qqbar_get_fmpz(z, S->radius_qqbar);
        s = fmpz_get_str_malloc(z);
        fmpz_clear(z);
        return s;
    }
    return refined_str(S, radius_fn, 1, digits);
}

char *spectrum_root_bound_get_str(const spectrum_t S, ulong j, slong digits)
{
    int c = spectrum_radius_cmp_one(S);

    if (digits <= 0)
        digits = SPECTRUM_DIGITS_DEFAULT;
    if (j == 0)
        j = 1;
    if (c < 0)
        return str_copy("0");
    if (c == 0)
        return str_copy("1");
    if (S->radius_exact && qqbar_is_integer(S->radius_qqbar) && j <= WORD_MAX)
    {
        fmpz_t z, r, t;
        char *s = NULL;
        fmpz_init(z);
        fmpz_init(r);
        fmpz_init(t);
        qqbar_get_fmpz(z, S->radius_qqbar);
        fmpz_root(r, z, (slong) j);
        fmpz_pow_ui(t, r, j);
        if (fmpz_equal(t, z))
            s = fmpz_get_str_malloc(r);
        fmpz_clear(z);
        fmpz_clear(r);
        fmpz_clear(t);
        if (s != NULL)
            return s;
    }
    return refined_str(S, root_bound_fn, j, digits);
}

char *spectrum_entropy_get_str(const spectrum_t S, slong digits)
{
    if (digits <= 0)
        digits = SPECTRUM_DIGITS_DEFAULT;
    if (S->count_above == 0)
        return str_copy("0");
    return refined_str(S, entropy_fn, 1, digits);
}

char *spectrum_poly_get_str(const fmpz_poly_t f, int style)
{
    strbuf b;
    sb_init(&b);
    sb_put_poly(&b, f, style);
    return sb_finish(&b);
}

char *spectrum_charpoly_get_str(const spectrum_t S, int style)
{
    return spectrum_poly_get_str(S->charpoly, style);
}

char *spectrum_radius_minpoly_get_str(const spectrum_t S, int style)
{
    if (!S->radius_exact)
        return NULL;
    return spectrum_poly_get_str(QQBAR_POLY(S->radius_qqbar), style);
}

char *spectrum_factored_get_str(const spectrum_t S, int style)
{
    const fmpz_poly_factor_struct *fac = S->factors;
    strbuf b;
    slong k;
    int first = 1;

    sb_init(&b);
    if (!fmpz_is_one(&fac->c) || fac->num == 0)
    {
        sb_put_fmpz(&b, &fac->c);
        first = 0;
    }
    for (k = 0; k < fac->num; k++)
    {
        if (!first)
            sb_put(&b, style == SPECTRUM_STR_ASCII ? "*" : " ");
        first = 0;
        if (poly_is_x(fac->p + k))
            sb_put(&b, "x");
        else
        {
            sb_put(&b, "(");
            sb_put_poly(&b, fac->p + k, style);
            sb_put(&b, ")");
        }
        if (fac->exp[k] > 1)
            sb_put_power(&b, fac->exp[k], style);
    }
    return sb_finish(&b);
}

/* ======================================================================
 * Comparisons
 * ====================================================================== */

static int sign_of(int c)
{
    return (c > 0) - (c < 0);
}

/* Sorted, duplicate-free list of the dominant factors, each replaced by
 * the smaller of f(x) and (-1)^n f(-x) (same largest root modulus). */
static slong dom_canonical(fmpz_poly_struct **out, const spectrum_t S)
{
    slong k, i, j, n = 0;
    fmpz_poly_struct *v = flint_malloc(sizeof(fmpz_poly_struct) * (S->ndom + 1));
    fmpz_poly_t g;

    fmpz_poly_init(g);
    for (k = 0; k < S->ndom; k++)
    {
        const fmpz_poly_struct *f = S->factors->p + S->dom[k];
        poly_reflect(g, f);
        fmpz_poly_init(v + n);
        fmpz_poly_set(v + n, poly_cmp(g, f) < 0 ? g : f);
        for (i = 0; i < n; i++)
            if (poly_cmp(v + i, v + n) == 0)
                break;
        if (i < n)
        {
            fmpz_poly_clear(v + n);
            continue;
        }
        for (j = n; j > 0 && poly_cmp(v + j, v + j - 1) < 0; j--)
            fmpz_poly_swap(v + j, v + j - 1);
        n++;
    }
    fmpz_poly_clear(g);
    *out = v;
    return n;
}

static int dom_equivalent(const spectrum_t a, const spectrum_t b)
{
    fmpz_poly_struct *va, *vb;
    slong na = dom_canonical(&va, a), nb = dom_canonical(&vb, b), i;
    int eq = (na == nb && na > 0);

    for (i = 0; eq && i < na; i++)
        if (poly_cmp(va + i, vb + i) != 0)
            eq = 0;
    for (i = 0; i < na; i++)
        fmpz_poly_clear(va + i);
    for (i = 0; i < nb; i++)
        fmpz_poly_clear(vb + i);
    flint_free(va);
    flint_free(vb);
    return eq;
}

/* Compares rho_a^(1/ja) and rho_b^(1/jb) by balls at increasing
 * precision, starting at `from` bits; 2 if never separated. */
static int cmp_by_balls(const spectrum_t a, ulong ja, const spectrum_t b,
                        ulong jb, slong from, slong to)
{
    slong prec;
    arb_t x, y;
    int res = SPECTRUM_CMP_UNDECIDED;

    arb_init(x);
    arb_init(y);
    for (prec = from; prec <= to; prec *= 2)
    {
        spectrum_root_bound_arb(x, a, ja, prec);
        spectrum_root_bound_arb(y, b, jb, prec);
        if (arb_lt(x, y))
        {
            res = -1;
            break;
        }
        if (arb_gt(x, y))
        {
            res = 1;
            break;
        }
    }
    arb_clear(x);
    arb_clear(y);
    return res;
}

int spectrum_cmp_radius(const spectrum_t a, const spectrum_t b)
{
    int ca = spectrum_radius_cmp_one(a), cb = spectrum_radius_cmp_one(b);

    if (ca != cb)
        return ca < cb ? -1 : 1;
    if (ca <= 0 || a == b)
        return 0;
    if (a->radius_exact && b->radius_exact)
        return sign_of(qqbar_cmp_re(a->radius_qqbar, b->radius_qqbar));
    if (dom_equivalent(a, b))
        return 0;
    if (arb_lt(a->radius, b->radius))
        return -1;
    if (arb_gt(a->radius, b->radius))
        return 1;
    return cmp_by_balls(a, 1, b, 1, 2 * SPECTRUM_ROOT_BITS,
                        SPECTRUM_CMP_PREC_MAX);
}

int spectrum_cmp_root_bound(const spectrum_t a, ulong ja,
                            const spectrum_t b, ulong jb)
{
    int ca, cb, res;
    ulong g;

    if (ja == 0 || jb == 0)
        return SPECTRUM_CMP_UNDECIDED;
    g = n_gcd(ja, jb);
    ja /= g;
    jb /= g;
    ca = spectrum_radius_cmp_one(a);
    cb = spectrum_radius_cmp_one(b);
    if (ca != cb)
        return ca < cb ? -1 : 1;
    if (ca <= 0)
        return 0;
    if (ja == jb)
        return spectrum_cmp_radius(a, b);

    res = cmp_by_balls(a, ja, b, jb, SPECTRUM_ROOT_BITS - 8,
                       SPECTRUM_ROOT_BITS - 8);
    if (res != SPECTRUM_CMP_UNDECIDED)
        return res;
    if (a->radius_exact && b->radius_exact)
    {
        /* rho_a^(1/ja) vs rho_b^(1/jb)  <=>  rho_a^jb vs rho_b^ja */
        qqbar_t x, y;
        qqbar_init(x);
        qqbar_init(y);
        qqbar_pow_ui(x, a->radius_qqbar, jb);
        qqbar_pow_ui(y, b->radius_qqbar, ja);
        res = sign_of(qqbar_cmp_re(x, y));
        qqbar_clear(x);
        qqbar_clear(y);
        return res;
    }
    return cmp_by_balls(a, ja, b, jb, 2 * SPECTRUM_ROOT_BITS,
                        SPECTRUM_CMP_PREC_MAX);
}
