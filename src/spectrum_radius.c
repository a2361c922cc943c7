/* spectrum_radius.c — the exact spectral radius, refinement on demand
 * (radius, root bound rho^(1/j), entropy) and the certified comparisons of
 * radii across layers.  The mathematics is stated in spectrum.h. */
#include <flint/ulong_extras.h>

#include "spectrum_internal.h"

/* Sets res to the root of P (irreducible, primitive, positive leading
 * coefficient, degree >= 2) in the ball b0, a ball from
 * spectrum_roots_certified: Arb certifies that it contains exactly one root
 * of P and that a real root has an exactly zero imaginary part, which is
 * what a qqbar enclosure must satisfy.  So the enclosure is set through
 * Calcium's public accessors, without a second validation. */
static void qqbar_from_isolated(qqbar_t res, const fmpz_poly_t P, const acb_t b0)
{
    fmpz_poly_set(QQBAR_POLY(res), P);
    acb_set(QQBAR_ENCLOSURE(res), b0);
}

/* Exact |z| for the root z (an isolating ball from spectrum_roots_certified) of the
 * monic irreducible f; returns 0 when outside the exactness budget. */
static int exact_modulus(qqbar_t res, const fmpz_poly_t f, const acb_t z)
{
    slong n = fmpz_poly_degree(f);

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
            qqbar_from_isolated(res, f, z);
        else
        {
            fmpz_poly_t P;
            acb_t w;
            fmpz_poly_init(P);
            acb_init(w);
            spectrum_poly_reflect(P, f);
            acb_neg(w, z);
            qqbar_from_isolated(res, P, w);
            fmpz_poly_clear(P);
            acb_clear(w);
        }
        return 1;
    }
    if (n <= SPECTRUM_QQBAR_ABS_MAX_DEGREE)
    {
        qqbar_t mu;
        qqbar_init(mu);
        qqbar_from_isolated(mu, f, z);
        qqbar_abs(res, mu);
        qqbar_clear(mu);
        return 1;
    }
    return 0;
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

ns_status spectrum_radius_compute(spectrum_t S, nserr_t err)
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
                cfac[k] = !spectrum_poly_is_x(S->factors->p + k);
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
        if (nc <= 1 || round == SPECTRUM_TIE_ROUNDS)
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
                st = spectrum_roots_compute_factor(S, k, SPECTRUM_ROOT_BITS << (round + 1),
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
            spectrum_roots_certified(r, f, b);
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
        spectrum_roots_certified(r, f, b);
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
        spectrum_roots_certified(r, f, b);
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
        spectrum_poly_reflect(g, f);
        fmpz_poly_init(v + n);
        fmpz_poly_set(v + n, spectrum_poly_cmp(g, f) < 0 ? g : f);
        for (i = 0; i < n; i++)
            if (spectrum_poly_cmp(v + i, v + n) == 0)
                break;
        if (i < n)
        {
            fmpz_poly_clear(v + n);
            continue;
        }
        for (j = n; j > 0 && spectrum_poly_cmp(v + j, v + j - 1) < 0; j--)
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
        if (spectrum_poly_cmp(va + i, vb + i) != 0)
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
