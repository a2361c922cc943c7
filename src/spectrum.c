/* spectrum.c — exact and certified eigenvalue data of an integer matrix:
 * the life cycle, the computation in order and the accessors.
 *
 * The contracts and the mathematics (unit-circle decisions, exactness of the
 * spectral radius) are described in spectrum.h; the seams of the module are
 * listed in spectrum_internal.h; comments here are about the
 * implementation. */
#include "charpoly.h"
#include "spectrum_internal.h"

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
    S->charpoly_primes = 0;
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
        for (j = i; j > 0 && spectrum_poly_cmp(fac->p + j, fac->p + j - 1) < 0; j--)
        {
            slong e = fac->exp[j];
            fmpz_poly_swap(fac->p + j, fac->p + j - 1);
            fac->exp[j] = fac->exp[j - 1];
            fac->exp[j - 1] = e;
        }
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

static ns_status spectrum_finish(spectrum_t S, const ns_progress_t *progress, nserr_t err);

ns_status spectrum_compute(spectrum_t S, const fmpz_mat_t M, nserr_t err)
{
    return spectrum_compute_progress(S, M, NULL, err);
}

ns_status spectrum_compute_progress(spectrum_t S, const fmpz_mat_t M,
                                    const ns_progress_t *progress, nserr_t err)
{
    return spectrum_compute_bounded(S, M, -1, progress, err);
}

ns_status spectrum_compute_bounded(spectrum_t S, const fmpz_mat_t M, slong bound_bits,
                                   const ns_progress_t *progress, nserr_t err)
{
    slong d;
    ns_status st;

    spectrum_reset(S);
    if (fmpz_mat_nrows(M) != fmpz_mat_ncols(M))
        return nserr_set(err, NS_ERR_INPUT, 0, 0,
                         "spectrum: the matrix is %ld x %ld, not square",
                         (long) fmpz_mat_nrows(M), (long) fmpz_mat_ncols(M));

    d = fmpz_mat_nrows(M);
    S->dim = d;
    if (ns_progress_report(progress, "charpoly", -1.0))
    {
        spectrum_reset(S);
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    }
    st = charpoly_compute_bounded(S->charpoly, M, bound_bits, 0, progress, err);
    if (st != NS_OK)
    {
        spectrum_reset(S);
        return st;
    }
    if (d >= CHARPOLY_OWN_MIN_DIM)
        S->charpoly_primes = charpoly_num_primes_bounded(M, bound_bits);
    return spectrum_finish(S, progress, err);
}

ns_status spectrum_set_charpoly(spectrum_t S, const fmpz_poly_t cp,
                                const ns_progress_t *progress, nserr_t err)
{
    spectrum_reset(S);
    if (fmpz_poly_length(cp) == 0 || !fmpz_is_one(fmpz_poly_lead(cp)))
        return nserr_set(err, NS_ERR_INPUT, 0, 0,
                         "spectrum: a characteristic polynomial is monic");
    S->dim = fmpz_poly_degree(cp);
    fmpz_poly_set(S->charpoly, cp);
    return spectrum_finish(S, progress, err);
}

/* Everything after the characteristic polynomial S->charpoly of degree
 * S->dim; progress as in spectrum_compute_progress. */
static ns_status spectrum_finish(spectrum_t S, const ns_progress_t *progress, nserr_t err)
{
    slong d = S->dim, nf, k, i, n;
    ns_status st = NS_OK;
    fmpz_t one;

    fmpz_poly_get_coeff_fmpz(S->det, S->charpoly, 0);
    if (d % 2 != 0)
        fmpz_neg(S->det, S->det);
    fmpz_init(one);
    fmpz_one(one);
    fmpz_poly_evaluate_fmpz(S->det_one_minus, S->charpoly, one);
    fmpz_clear(one);

    if (ns_progress_report(progress, "factors", -1.0))
    {
        spectrum_reset(S);
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    }
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

    if (ns_progress_report(progress, "roots", -1.0))
        st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    for (k = 0; k < nf && st == NS_OK; k++)
    {
        if (k > 0 && ns_progress_report(progress, NULL, -1.0))
        {
            st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
            break;
        }
        st = spectrum_roots_unimodular(S->fac_unimodular + k, S->factors->p + k, err);
        if (st == NS_OK)
            st = spectrum_roots_compute_factor(S, k, SPECTRUM_ROOT_BITS, err);
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

    if (ns_progress_report(progress, "radius", -1.0))
    {
        spectrum_reset(S);
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    }
    st = spectrum_radius_compute(S, err);
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

slong spectrum_charpoly_primes(const spectrum_t S)
{
    return S->charpoly_primes;
}

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
           || (S->factors->num == 1 && spectrum_poly_is_x(S->factors->p + 0));
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
