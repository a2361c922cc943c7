/* test_spectrum.c — tests of the spectrum module (src/spectrum.h).
 *
 * Every expected value names its source next to the check:
 *   [hand]     elementary computation written out in the comment;
 *   [formula]  a closed form built independently with Calcium's qqbar
 *              (e.g. (3 + sqrt 5)/2) and compared exactly;
 *   [mem]      a constant quoted from memory, also present (and so
 *              verified) in the reference file;
 *   [ref]      tests/data/spectrum_ref.txt, produced by tests/ref_spectrum.py
 *              with sympy 1.11 and mpmath 1.2 (exact determinants and
 *              factorisations, unit-circle counts by a Cayley transform and
 *              Sturm sequences, 80-digit roots); ctest re-runs that script,
 *              which fails if the file is not reproduced;
 *   [flint]    an independent FLINT routine (fmpz_mat_det of M and of
 *              I - M, fmpz_mat_trace), not the charpoly the module uses.
 * Random property tests print their seed: NILSTEP_SEED (default 1) replays
 * a run, NILSTEP_ITER scales its 150 matrices (testutil.h). */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <flint/fmpz_mat.h>
#include <arb_fmpz_poly.h>

#include "spectrum.h"
#include "testutil.h"

/* ------------------------------------------------------------------------
 * helpers
 * ------------------------------------------------------------------------ */

static void mat_set(fmpz_mat_t M, slong d, const slong *e)
{
    slong i, j;
    fmpz_mat_init(M, d, d);
    for (i = 0; i < d; i++)
        for (j = 0; j < d; j++)
            fmpz_set_si(fmpz_mat_entry(M, i, j), e[i * d + j]);
}

static void compute(spectrum_t S, slong d, const slong *e)
{
    fmpz_mat_t M;
    nserr_t err;
    nserr_init(err);
    mat_set(M, d, e);
    assert_int_equal(spectrum_compute(S, M, err), NS_OK);
    fmpz_mat_clear(M);
    nserr_clear(err);
}

/* Companion matrix of the monic polynomial f. */
static void companion(fmpz_mat_t M, const fmpz_poly_t f)
{
    slong n = fmpz_poly_degree(f), i;
    fmpz_mat_init(M, n, n);
    for (i = 1; i < n; i++)
        fmpz_one(fmpz_mat_entry(M, i, i - 1));
    for (i = 0; i < n; i++)
        fmpz_neg(fmpz_mat_entry(M, i, n - 1), f->coeffs + i);
}

static void compute_companion(spectrum_t S, const char *flint_poly)
{
    fmpz_poly_t f;
    fmpz_mat_t M;
    nserr_t err;
    fmpz_poly_init(f);
    nserr_init(err);
    assert_int_equal(fmpz_poly_set_str(f, flint_poly), 0);
    companion(M, f);
    assert_int_equal(spectrum_compute(S, M, err), NS_OK);
    fmpz_mat_clear(M);
    fmpz_poly_clear(f);
    nserr_clear(err);
}

static void assert_str_free(char *s, const char *expected)
{
    assert_non_null(s);
    assert_string_equal(s, expected);
    flint_free(s);
}

/* FLINT's polynomial string format: "len  c0 c1 ...". */
static void assert_poly(const fmpz_poly_struct *f, const char *flint_poly)
{
    fmpz_poly_t g;
    fmpz_poly_init(g);
    assert_int_equal(fmpz_poly_set_str(g, flint_poly), 0);
    assert_true(fmpz_poly_equal(f, g));
    fmpz_poly_clear(g);
}

/* Significant digits and decimal exponent of a string in the module's
 * formats ("-12.345", "0.00123", "1.2345e+20"). */
static void decimal_shape(const char *s, slong *ndig, slong *E)
{
    const char *p = s, *e = strchr(s, 'e');
    slong before = 0, lead_zeros = 0, digits = 0;
    int seen_point = 0, seen_nonzero = 0;

    if (*p == '-')
        p++;
    for (; *p && p != e; p++)
    {
        if (*p == '.')
        {
            seen_point = 1;
            continue;
        }
        if (!seen_point)
            before++;
        if (*p != '0' || seen_nonzero)
        {
            seen_nonzero = 1;
            digits++;
        }
        else if (seen_point)
            lead_zeros++;
    }
    *ndig = digits;
    if (e != NULL)
        *E = strtol(e + 1, NULL, 10);
    else if (s[s[0] == '-'] == '0')
        *E = -(lead_zeros + 1);
    else
        *E = before - 1;
}

/* mine has exactly `digits` significant digits and differs from the
 * reference decimal ref (at least digits + 10 correct digits) by less than
 * one unit in its last digit; certified with Arb. */
static void assert_decimal(const char *mine, const char *ref, slong digits)
{
    arb_t a, b, u;
    slong nd, E;

    assert_non_null(mine);
    decimal_shape(mine, &nd, &E);
    if (nd != digits)
        fail_msg("'%s' has %ld significant digits, expected %ld", mine,
                 (long) nd, (long) digits);
    arb_init(a);
    arb_init(b);
    arb_init(u);
    assert_int_equal(arb_set_str(a, mine, 512), 0);
    assert_int_equal(arb_set_str(b, ref, 512), 0);
    /* the reference itself is good to its last digit: widen it */
    arb_set_ui(u, 10);
    arb_pow_ui(u, u, (ulong) (digits + 8), 512);
    arb_div(u, b, u, 512);
    arb_get_mag(arb_radref(u), u);
    arb_add_error_mag(b, arb_radref(u));
    arb_sub(a, a, b, 512);
    arb_abs(a, a);
    /* one unit in the last digit: 10^(E - digits + 1) */
    arb_set_ui(u, 10);
    if (E - digits + 1 >= 0)
        arb_pow_ui(u, u, (ulong) (E - digits + 1), 512);
    else
    {
        arb_pow_ui(u, u, (ulong) (digits - 1 - E), 512);
        arb_inv(u, u, 512);
    }
    if (!arb_lt(a, u))
        fail_msg("'%s' is not within one unit in the last place of %s", mine,
                 ref);
    arb_clear(a);
    arb_clear(b);
    arb_clear(u);
}

/* ------------------------------------------------------------------------
 * named examples
 * ------------------------------------------------------------------------ */

/* Arnold's cat map [[2,1],[1,1]]. */
static void cat_map(void **state)
{
    static const slong e[] = {2, 1, 1, 1};
    spectrum_t S;
    qqbar_t rho;
    arb_t t;
    fmpz_poly_t mp;
    (void) state;

    spectrum_init(S);
    compute(S, 2, e);
    /* [hand] x^2 - tr x + det = x^2 - 3x + 1 */
    assert_poly(spectrum_charpoly(S), "3  1 -3 1");
    assert_int_equal(spectrum_factors(S)->num, 1);
    assert_true(fmpz_equal_si(spectrum_det(S), 1));
    /* [hand] det [[-1,-1],[-1,0]] = -1 */
    assert_true(fmpz_equal_si(spectrum_det_one_minus(S), -1));
    assert_int_equal(spectrum_count_below_one(S), 1);
    assert_int_equal(spectrum_count_on_one(S), 0);
    assert_int_equal(spectrum_count_above_one(S), 1);
    assert_true(spectrum_is_hyperbolic(S));
    assert_false(spectrum_is_expanding(S));
    assert_false(spectrum_is_nilpotent(S));

    /* [formula] rho = (3 + sqrt 5)/2, exactly */
    assert_true(spectrum_radius_is_exact(S));
    qqbar_init(rho);
    qqbar_sqrt_ui(rho, 5);
    qqbar_add_ui(rho, rho, 3);
    qqbar_div_ui(rho, rho, 2);
    assert_true(qqbar_equal(rho, spectrum_radius_qqbar(S)));
    qqbar_clear(rho);
    fmpz_poly_init(mp);
    assert_true(spectrum_radius_minpoly(mp, S));
    assert_poly(mp, "3  1 -3 1");
    fmpz_poly_clear(mp);
    assert_str_free(spectrum_radius_minpoly_get_str(S, SPECTRUM_STR_PLAIN),
                    "x^2 - 3x + 1");

    /* [mem] (3 + sqrt 5)/2 = 2.618033988749894848204586834365638117720... */
    {
        char *s = spectrum_radius_get_str(S, 30);
        assert_decimal(s, "2.618033988749894848204586834365638117720", 30);
        flint_free(s);
    }
    /* [formula] sqrt(rho) = golden ratio 1.6180339887498948482045868343656... */
    {
        char *s = spectrum_root_bound_get_str(S, 2, 30);
        assert_decimal(s, "1.6180339887498948482045868343656381177203", 30);
        flint_free(s);
    }
    /* entropy = log rho: compare the ball with Arb's log of the radius ball,
       and the string with [ref] 0.96242365011920689499551782684873684627 */
    arb_init(t);
    arb_log(t, spectrum_radius(S), 256);
    assert_true(arb_overlaps(t, spectrum_entropy(S)));
    arb_clear(t);
    {
        char *s = spectrum_entropy_get_str(S, 30);
        assert_decimal(s, "0.96242365011920689499551782684873684627036866877132", 30);
        flint_free(s);
    }
    assert_str_free(spectrum_eigenvalue_get_str(S, 0, 16), "2.618033988749895 + 0i");
    assert_str_free(spectrum_eigenvalue_get_str(S, 1, 16), "0.3819660112501052 + 0i");
    assert_int_equal(spectrum_eigenvalue_side(S, 0), 1);
    assert_int_equal(spectrum_eigenvalue_side(S, 1), -1);
    spectrum_clear(S);
}

/* Rotation by 90 degrees: eigenvalues +-i. */
static void rotation(void **state)
{
    static const slong e[] = {0, -1, 1, 0};
    spectrum_t S;
    acb_srcptr z;
    (void) state;

    spectrum_init(S);
    compute(S, 2, e);
    assert_poly(spectrum_charpoly(S), "3  1 0 1"); /* [hand] x^2 + 1 */
    assert_true(fmpz_equal_si(spectrum_det(S), 1));
    assert_true(fmpz_equal_si(spectrum_det_one_minus(S), 2)); /* [hand] 1 + 1 */
    /* [hand] the eigenvalues are i and -i, exactly on the circle */
    z = spectrum_eigenvalue(S, 0);
    assert_true(arb_is_zero(acb_realref(z)));
    assert_true(arb_contains_si(acb_imagref(z), 1));
    assert_int_equal(spectrum_count_on_one(S), 2);
    assert_true(spectrum_has_unimodular(S));
    assert_false(spectrum_is_hyperbolic(S));
    assert_int_equal(spectrum_radius_cmp_one(S), 0);
    assert_true(qqbar_is_one(spectrum_radius_qqbar(S)));
    assert_str_free(spectrum_radius_get_str(S, 30), "1");
    assert_str_free(spectrum_root_bound_get_str(S, 3, 30), "1");
    assert_str_free(spectrum_entropy_get_str(S, 30), "0");
    assert_str_free(spectrum_eigenvalue_get_str(S, 0, 16), "0 + 1i");
    assert_str_free(spectrum_eigenvalue_get_str(S, 1, 16), "0 - 1i");
    assert_str_free(spectrum_eigenvalue_abs_get_str(S, 1, 16), "1");
    spectrum_clear(S);
}

/* Companion matrix of Lehmer's polynomial
 * x^10 + x^9 - x^7 - x^6 - x^5 - x^4 - x^3 + x + 1 (D. H. Lehmer,
 * "Factorization of certain cyclotomic functions", Annals of Math. 34,
 * 1933): one root outside, one inside, eight on the unit circle. */
static void lehmer(void **state)
{
    spectrum_t S;
    arb_t t;
    fmpz_poly_t mp;
    slong i, on = 0;
    (void) state;

    spectrum_init(S);
    compute_companion(S, "11  1 1 0 -1 -1 -1 -1 -1 0 1 1");
    assert_int_equal(spectrum_count_on_one(S), 8);
    assert_int_equal(spectrum_count_above_one(S), 1);
    assert_int_equal(spectrum_count_below_one(S), 1);
    for (i = 0; i < 10; i++)
        if (spectrum_eigenvalue_side(S, i) == 0)
        {
            on++;
            assert_true(arb_is_one(spectrum_eigenvalue_abs(S, i)));
        }
    assert_int_equal(on, 8);
    /* [mem] Lehmer's number 1.17628081825991750654407033847... */
    {
        char *s = spectrum_radius_get_str(S, 30);
        assert_decimal(s, "1.17628081825991750654407033847403505069", 30);
        flint_free(s);
    }
    fmpz_poly_init(mp);
    assert_true(spectrum_radius_minpoly(mp, S));
    assert_poly(mp, "11  1 1 0 -1 -1 -1 -1 -1 0 1 1");
    fmpz_poly_clear(mp);
    /* Mahler measure of a Salem polynomial = the Salem number */
    arb_init(t);
    arb_log(t, spectrum_radius(S), 256);
    assert_true(arb_overlaps(t, spectrum_entropy(S)));
    arb_clear(t);
    spectrum_clear(S);
}

/* Nilpotent Jordan block of size 3. */
static void nilpotent(void **state)
{
    static const slong e[] = {0, 1, 0, 0, 0, 1, 0, 0, 0};
    spectrum_t S;
    fmpz_poly_t mp;
    (void) state;

    spectrum_init(S);
    compute(S, 3, e);
    assert_poly(spectrum_charpoly(S), "4  0 0 0 1"); /* [hand] x^3 */
    assert_true(spectrum_is_nilpotent(S));
    assert_true(spectrum_is_hyperbolic(S));
    assert_false(spectrum_is_expanding(S));
    assert_int_equal(spectrum_count_below_one(S), 3);
    assert_int_equal(spectrum_radius_cmp_one(S), -1);
    assert_true(arb_is_zero(spectrum_radius(S)));
    assert_str_free(spectrum_radius_get_str(S, 30), "0");
    assert_str_free(spectrum_root_bound_get_str(S, 2, 30), "0");
    assert_str_free(spectrum_entropy_get_str(S, 30), "0");
    assert_str_free(spectrum_factored_get_str(S, SPECTRUM_STR_PLAIN), "x^3");
    assert_str_free(spectrum_factored_get_str(S, SPECTRUM_STR_LATEX), "x^{3}");
    fmpz_poly_init(mp);
    assert_true(spectrum_radius_minpoly(mp, S));
    assert_poly(mp, "2  0 1");
    fmpz_poly_clear(mp);
    assert_true(fmpz_is_zero(spectrum_det(S)));
    assert_true(fmpz_is_one(spectrum_det_one_minus(S)));
    spectrum_clear(S);
}

/* Unipotent Jordan block of size 3. */
static void unipotent(void **state)
{
    static const slong e[] = {1, 1, 0, 0, 1, 1, 0, 0, 1};
    spectrum_t S;
    (void) state;

    spectrum_init(S);
    compute(S, 3, e);
    assert_str_free(spectrum_factored_get_str(S, SPECTRUM_STR_PLAIN), "(x - 1)^3");
    assert_int_equal(spectrum_count_on_one(S), 3);
    assert_false(spectrum_is_hyperbolic(S));
    assert_int_equal(spectrum_radius_cmp_one(S), 0);
    assert_str_free(spectrum_radius_get_str(S, 30), "1");
    assert_true(fmpz_is_zero(spectrum_det_one_minus(S))); /* [hand] (1-1)^3 */
    spectrum_clear(S);
}

/* [[1,-2],[1,1]]: eigenvalues 1 +- i sqrt 2, rho = sqrt 3. */
static void complex_pair(void **state)
{
    static const slong e[] = {1, -2, 1, 1};
    spectrum_t S;
    qqbar_t r;
    acb_t w;
    (void) state;

    spectrum_init(S);
    compute(S, 2, e);
    assert_poly(spectrum_charpoly(S), "3  3 -2 1"); /* [hand] x^2 - 2x + 3 */
    /* [formula] the top eigenvalue ball contains 1 + i sqrt 2 */
    acb_init(w);
    arb_one(acb_realref(w));
    arb_sqrt_ui(acb_imagref(w), 2, 256);
    assert_true(acb_overlaps(w, spectrum_eigenvalue(S, 0)));
    acb_clear(w);
    assert_true(arb_is_positive(acb_imagref(spectrum_eigenvalue(S, 0))));
    /* [formula] rho = sqrt 3 exactly, minimal polynomial x^2 - 3 */
    qqbar_init(r);
    qqbar_sqrt_ui(r, 3);
    assert_true(spectrum_radius_is_exact(S));
    assert_true(qqbar_equal(r, spectrum_radius_qqbar(S)));
    qqbar_clear(r);
    assert_str_free(spectrum_radius_minpoly_get_str(S, SPECTRUM_STR_ASCII), "x^2 - 3");
    assert_true(spectrum_is_expanding(S));
    assert_str_free(spectrum_eigenvalue_abs_get_str(S, 0, 16), "1.732050807568877");
    spectrum_clear(S);
}

/* diag(2, -2) + [[0,2],[1,0]]: the moduli 2 of x - 2 and x + 2 tie. */
static void tie_real(void **state)
{
    static const slong e[] = {2, 0, 0, 0, 0, -2, 0, 0, 0, 0, 0, 2, 0, 0, 1, 0};
    spectrum_t S;
    fmpz_poly_t mp;
    (void) state;

    spectrum_init(S);
    compute(S, 4, e);
    assert_true(spectrum_radius_is_exact(S));
    assert_str_free(spectrum_radius_get_str(S, 30), "2");
    assert_str_free(spectrum_root_bound_get_str(S, 2, 30),
                    "1.41421356237309504880168872421"); /* [hand] sqrt 2 to 30 */
    fmpz_poly_init(mp);
    assert_true(spectrum_radius_minpoly(mp, S));
    assert_poly(mp, "2  -2 1");
    fmpz_poly_clear(mp);
    assert_int_equal(S->ndom, 2); /* both x - 2 and x + 2 attain rho */
    assert_true(spectrum_is_expanding(S));
    spectrum_clear(S);
}

/* [3] + companion(x^2 + 2x + 9): the real root 3 and the pair
 * -1 +- 2 sqrt(2) i all have modulus 3 [hand: 1 + 8 = 9]. */
static void tie_real_complex(void **state)
{
    static const slong e[] = {3, 0, 0, 0, 0, -9, 0, 1, -2};
    spectrum_t S;
    (void) state;

    spectrum_init(S);
    compute(S, 3, e);
    assert_true(spectrum_radius_is_exact(S));
    assert_true(qqbar_is_integer(spectrum_radius_qqbar(S)));
    assert_str_free(spectrum_radius_get_str(S, 30), "3");
    assert_int_equal(S->ndom, 2);
    spectrum_clear(S);
}

/* [K] + [[K,1],[1,0]] with K = 2^200: the moduli K and K + 1/K - ...
 * (roots of x^2 - Kx - 1) agree to about 400 bits, far beyond the stored
 * balls, so only the exact comparison can tell that rho is the larger one
 * [hand: (K + sqrt(K^2 + 4))/2 > K]. */
static void near_tie(void **state)
{
    spectrum_t S, T;
    fmpz_mat_t M;
    nserr_t err;
    fmpz_poly_t mp;
    fmpz_t K;
    (void) state;

    spectrum_init(S);
    spectrum_init(T);
    nserr_init(err);
    fmpz_init(K);
    fmpz_poly_init(mp);
    fmpz_one(K);
    fmpz_mul_2exp(K, K, 200);
    fmpz_mat_init(M, 3, 3);
    fmpz_set(fmpz_mat_entry(M, 0, 0), K);
    fmpz_set(fmpz_mat_entry(M, 1, 1), K);
    fmpz_one(fmpz_mat_entry(M, 1, 2));
    fmpz_one(fmpz_mat_entry(M, 2, 1));
    assert_int_equal(spectrum_compute(S, M, err), NS_OK);
    fmpz_mat_clear(M);
    assert_true(spectrum_radius_is_exact(S));
    assert_true(spectrum_radius_minpoly(mp, S));
    assert_int_equal(fmpz_poly_degree(mp), 2);
    fmpz_neg(K, K);
    assert_true(fmpz_equal(mp->coeffs + 1, K)); /* x^2 - Kx - 1 */
    assert_true(fmpz_equal_si(mp->coeffs + 0, -1));
    fmpz_neg(K, K);
    fmpz_mat_init(M, 1, 1);
    fmpz_set(fmpz_mat_entry(M, 0, 0), K);
    assert_int_equal(spectrum_compute(T, M, err), NS_OK);
    fmpz_mat_clear(M);
    assert_int_equal(spectrum_cmp_radius(S, T), 1);
    assert_int_equal(spectrum_cmp_radius(T, S), -1);
    assert_int_equal(S->ndom, 1);
    fmpz_poly_clear(mp);
    fmpz_clear(K);
    nserr_clear(err);
    spectrum_clear(S);
    spectrum_clear(T);
}

/* x^4 + 3x^2 + 1 = (x^2 + phi^2)(x^2 + phi^-2): roots +-i phi, +-i/phi. */
static void pure_imaginary(void **state)
{
    spectrum_t S;
    slong i;
    (void) state;

    spectrum_init(S);
    compute_companion(S, "5  1 0 3 0 1");
    for (i = 0; i < 4; i++)
        assert_true(arb_is_zero(acb_realref(spectrum_eigenvalue(S, i))));
    assert_str_free(spectrum_eigenvalue_get_str(S, 0, 16), "0 + 1.618033988749895i");
    assert_str_free(spectrum_eigenvalue_get_str(S, 1, 16), "0 - 1.618033988749895i");
    /* [formula] rho = phi, minimal polynomial x^2 - x - 1 */
    assert_str_free(spectrum_radius_minpoly_get_str(S, SPECTRUM_STR_PLAIN), "x^2 - x - 1");
    assert_int_equal(spectrum_count_on_one(S), 0);
    spectrum_clear(S);
}

/* diag(2, 2) + [[1,1],[1,0]]: charpoly (x - 2)^2 (x^2 - x - 1). */
static void strings(void **state)
{
    static const slong e[] = {2, 0, 0, 0, 0, 2, 0, 0, 0, 0, 1, 1, 0, 0, 1, 0};
    spectrum_t S;
    fmpz_poly_t f;
    (void) state;

    spectrum_init(S);
    compute(S, 4, e);
    assert_str_free(spectrum_factored_get_str(S, SPECTRUM_STR_PLAIN),
                    "(x - 2)^2 (x^2 - x - 1)");
    assert_str_free(spectrum_factored_get_str(S, SPECTRUM_STR_LATEX),
                    "(x - 2)^{2} (x^{2} - x - 1)");
    assert_str_free(spectrum_factored_get_str(S, SPECTRUM_STR_ASCII),
                    "(x - 2)^2*(x^2 - x - 1)");
    /* [hand] (x^2 - 4x + 4)(x^2 - x - 1) = x^4 - 5x^3 + 7x^2 - 4 */
    assert_str_free(spectrum_charpoly_get_str(S, SPECTRUM_STR_PLAIN),
                    "x^4 - 5x^3 + 7x^2 - 4");
    assert_str_free(spectrum_charpoly_get_str(S, SPECTRUM_STR_ASCII),
                    "x^4 - 5*x^3 + 7*x^2 - 4");
    assert_str_free(spectrum_charpoly_get_str(S, SPECTRUM_STR_LATEX),
                    "x^{4} - 5x^{3} + 7x^{2} - 4");
    assert_str_free(spectrum_eigenvalue_get_str(S, 0, 16), "2 + 0i");
    assert_str_free(spectrum_eigenvalue_get_str(S, 2, 16), "1.618033988749895 + 0i");
    assert_str_free(spectrum_eigenvalue_get_str(S, 3, 16), "-0.6180339887498948 + 0i");
    assert_int_equal(spectrum_eigenvalue_factor(S, 0), 0);
    assert_int_equal(spectrum_factors(S)->exp[spectrum_eigenvalue_factor(S, 1)], 2);
    assert_null(spectrum_eigenvalue(S, 4));
    assert_null(spectrum_eigenvalue_get_str(S, -1, 16));
    fmpz_poly_init(f);
    assert_str_free(spectrum_poly_get_str(f, SPECTRUM_STR_PLAIN), "0");
    assert_int_equal(fmpz_poly_set_str(f, "4  -7 0 -1 -12"), 0);
    assert_str_free(spectrum_poly_get_str(f, SPECTRUM_STR_PLAIN), "-12x^3 - x^2 - 7");
    fmpz_poly_clear(f);
    spectrum_clear(S);
}

/* d = 0: the zero space. */
static void zero_space(void **state)
{
    spectrum_t S;
    fmpz_mat_t M;
    nserr_t err;
    (void) state;

    spectrum_init(S);
    nserr_init(err);
    fmpz_mat_init(M, 0, 0);
    assert_int_equal(spectrum_compute(S, M, err), NS_OK);
    assert_int_equal(spectrum_dim(S), 0);
    assert_poly(spectrum_charpoly(S), "1  1");
    assert_true(fmpz_is_one(spectrum_det(S)));
    assert_true(fmpz_is_one(spectrum_det_one_minus(S)));
    assert_true(spectrum_is_nilpotent(S));
    assert_true(spectrum_is_expanding(S));
    assert_true(spectrum_is_hyperbolic(S));
    assert_false(spectrum_has_unimodular(S));
    assert_int_equal(spectrum_radius_cmp_one(S), -1);
    assert_str_free(spectrum_radius_get_str(S, 30), "0");
    assert_str_free(spectrum_entropy_get_str(S, 30), "0");
    assert_str_free(spectrum_factored_get_str(S, SPECTRUM_STR_PLAIN), "1");
    assert_null(spectrum_eigenvalue(S, 0));
    fmpz_mat_clear(M);

    /* not square: an error, and S is the zero space again */
    fmpz_mat_init(M, 2, 3);
    assert_int_equal(spectrum_compute(S, M, err), NS_ERR_INPUT);
    assert_int_equal(err->status, NS_ERR_INPUT);
    assert_non_null(strstr(err->msg, "not square"));
    assert_int_equal(spectrum_dim(S), 0);
    fmpz_mat_clear(M);
    nserr_clear(err);
    spectrum_clear(S);
}

/* x^17 - 2x^16 + 5x^15 + 1: the dominant pair is non-real and the factor
 * has degree 17 > SPECTRUM_QQBAR_ABS_MAX_DEGREE, so rho is a ball only. */
static void inexact_radius(void **state)
{
    spectrum_t S, T, U;
    static const char *f17 = "18  1 0 0 0 0 0 0 0 0 0 0 0 0 0 0 5 -2 1";
    (void) state;

    spectrum_init(S);
    spectrum_init(T);
    spectrum_init(U);
    compute_companion(S, f17);
    assert_false(spectrum_radius_is_exact(S));
    assert_null(spectrum_radius_qqbar(S));
    assert_null(spectrum_radius_minpoly_get_str(S, SPECTRUM_STR_PLAIN));
    assert_false(arb_is_zero(acb_imagref(spectrum_eigenvalue(S, 0))));
    /* [ref] 2.2360666800582349249072930354501976628379732159173 */
    {
        char *s = spectrum_radius_get_str(S, 40);
        assert_decimal(s, "2.2360666800582349249072930354501976628379732159173", 40);
        flint_free(s);
    }
    /* the same factor twice: equal radii, proved by the dominant factors */
    {
        fmpz_poly_t f;
        fmpz_mat_t A, B;
        nserr_t err;
        slong i, j;
        fmpz_poly_init(f);
        nserr_init(err);
        assert_int_equal(fmpz_poly_set_str(f, f17), 0);
        companion(A, f);
        fmpz_mat_init(B, 34, 34);
        for (i = 0; i < 17; i++)
            for (j = 0; j < 17; j++)
            {
                fmpz_set(fmpz_mat_entry(B, i, j), fmpz_mat_entry(A, i, j));
                fmpz_set(fmpz_mat_entry(B, i + 17, j + 17), fmpz_mat_entry(A, i, j));
            }
        assert_int_equal(spectrum_compute(T, B, err), NS_OK);
        assert_int_equal(spectrum_cmp_radius(S, T), 0);
        assert_int_equal(spectrum_cmp_root_bound(S, 2, T, 2), 0);

        /* -f(-x) has the negated roots: equal radii, proved the same way */
        {
            fmpz_mat_t N;
            fmpz_poly_t h;
            fmpz_t c;
            fmpz_poly_init(h);
            fmpz_init(c);
            for (i = 0; i <= 17; i++)
            {
                fmpz_poly_get_coeff_fmpz(c, f, i);
                if ((17 - i) % 2)
                    fmpz_neg(c, c);
                fmpz_poly_set_coeff_fmpz(h, i, c);
            }
            fmpz_clear(c);
            companion(N, h);
            assert_int_equal(spectrum_compute(U, N, err), NS_OK);
            assert_false(spectrum_radius_is_exact(U));
            assert_int_equal(spectrum_cmp_radius(S, U), 0);
            assert_int_equal(spectrum_cmp_radius(U, T), 0);
            fmpz_mat_clear(N);
            fmpz_poly_clear(h);
        }

        /* g(x) = f(ix) f(-ix) = A(x)^2 + B(x)^2 has the roots +-i lambda:
           the same radius, but nothing here can prove it */
        {
            fmpz_poly_t re, im, g;
            fmpz_t c;
            fmpz_mat_t G;
            fmpz_poly_init(re);
            fmpz_poly_init(im);
            fmpz_poly_init(g);
            fmpz_init(c);
            for (i = 0; i <= 17; i++)
            {
                fmpz_set(c, f->coeffs + i);
                if (i % 4 >= 2)
                    fmpz_neg(c, c);
                if (i % 2 == 0)
                    fmpz_poly_set_coeff_fmpz(re, i, c);
                else
                    fmpz_poly_set_coeff_fmpz(im, i, c);
            }
            fmpz_poly_sqr(re, re);
            fmpz_poly_sqr(im, im);
            fmpz_poly_add(g, re, im);
            companion(G, g);
            assert_int_equal(spectrum_compute(U, G, err), NS_OK);
            assert_false(spectrum_radius_is_exact(U));
            assert_int_equal(spectrum_cmp_radius(S, U), SPECTRUM_CMP_UNDECIDED);
            fmpz_mat_clear(G);
            fmpz_poly_clear(re);
            fmpz_poly_clear(im);
            fmpz_poly_clear(g);
            fmpz_clear(c);
        }
        fmpz_mat_clear(A);
        fmpz_mat_clear(B);
        fmpz_poly_clear(f);
        nserr_clear(err);
    }
    spectrum_clear(S);
    spectrum_clear(T);
    spectrum_clear(U);
}

static void comparisons(void **state)
{
    static const slong cat[] = {2, 1, 1, 1}, gold[] = {1, 1, 1, 0},
                       rot[] = {0, -1, 1, 0}, nil[] = {0, 1, 0, 0},
                       two[] = {2}, tie[] = {2, 0, 0, 0, 0, -2, 0, 0,
                                             0, 0, 0, 2, 0, 0, 1, 0},
                       sq3[] = {1, -2, 1, 1}, three[] = {3};
    spectrum_t a, b, c, d, e, f, g, h;
    (void) state;

    spectrum_init(a);
    spectrum_init(b);
    spectrum_init(c);
    spectrum_init(d);
    spectrum_init(e);
    spectrum_init(f);
    spectrum_init(g);
    spectrum_init(h);
    compute(a, 2, cat);  /* phi^2 */
    compute(b, 2, gold); /* phi */
    compute(c, 2, rot);  /* 1 */
    compute(d, 2, nil);  /* 0 */
    compute(e, 1, two);  /* 2 */
    compute(f, 4, tie);  /* 2 */
    compute(g, 2, sq3);  /* sqrt 3 */
    compute(h, 1, three); /* 3 */

    assert_int_equal(spectrum_cmp_radius(a, b), 1);
    assert_int_equal(spectrum_cmp_radius(b, a), -1);
    assert_int_equal(spectrum_cmp_radius(a, a), 0);
    assert_int_equal(spectrum_cmp_radius(c, d), 1);
    assert_int_equal(spectrum_cmp_radius(d, d), 0);
    assert_int_equal(spectrum_cmp_radius(e, f), 0);
    assert_int_equal(spectrum_cmp_radius(b, c), 1);
    /* [formula] phi^2 = phi + 1 = (3 + sqrt 5)/2, so rho_a^(1/2) = rho_b */
    assert_int_equal(spectrum_cmp_root_bound(a, 2, b, 1), 0);
    assert_int_equal(spectrum_cmp_root_bound(b, 1, a, 2), 0);
    assert_int_equal(spectrum_cmp_root_bound(a, 4, b, 2), 0);
    assert_int_equal(spectrum_cmp_root_bound(a, 3, b, 1), -1);
    assert_int_equal(spectrum_cmp_root_bound(a, 1, b, 1), 1);
    /* [hand] sqrt(3)^2 = 3: rho_g^(1/1) vs rho_h^(1/2) equal */
    assert_int_equal(spectrum_cmp_root_bound(g, 1, h, 2), 0);
    assert_int_equal(spectrum_cmp_root_bound(g, 2, h, 4), 0);
    assert_int_equal(spectrum_cmp_root_bound(g, 1, h, 3), 1);
    /* rho = 1 and rho = 0 stay 1 and 0 under j-th roots */
    assert_int_equal(spectrum_cmp_root_bound(c, 5, c, 1), 0);
    assert_int_equal(spectrum_cmp_root_bound(d, 5, c, 1), -1);
    assert_int_equal(spectrum_cmp_root_bound(e, 7, c, 1), 1);
    assert_int_equal(spectrum_cmp_root_bound(e, 0, c, 1), SPECTRUM_CMP_UNDECIDED);

    spectrum_clear(a);
    spectrum_clear(b);
    spectrum_clear(c);
    spectrum_clear(d);
    spectrum_clear(e);
    spectrum_clear(f);
    spectrum_clear(g);
    spectrum_clear(h);
}

/* Decimal output of balls [hand]. */
static void ball_strings(void **state)
{
    arb_t x;
    (void) state;

    arb_init(x);
    arb_set_ui(x, 1);
    arb_div_ui(x, x, 3, 256);
    assert_str_free(spectrum_ball_get_str(x, 5), "0.33333");
    arb_mul_ui(x, x, 2, 256);
    assert_str_free(spectrum_ball_get_str(x, 5), "0.66667");
    arb_neg(x, x);
    assert_str_free(spectrum_ball_get_str(x, 5), "-0.66667");
    /* 99999.5 to 5 digits rounds up into the next decade */
    arb_set_ui(x, 199999);
    arb_mul_2exp_si(x, x, -1);
    assert_str_free(spectrum_ball_get_str(x, 5), "1.0000e+5");
    arb_set_ui(x, 123456789);
    arb_div_ui(x, x, 1000, 256);
    assert_str_free(spectrum_ball_get_str(x, 5), "1.2346e+5");
    assert_str_free(spectrum_ball_get_str(x, 6), "123457");
    assert_str_free(spectrum_ball_get_str(x, 9), "123456.789");
    arb_set_ui(x, 1);
    arb_div_ui(x, x, 30000000, 256);
    assert_str_free(spectrum_ball_get_str(x, 4), "3.333e-8");
    arb_set_ui(x, 123);
    arb_div_ui(x, x, 1000000, 256);
    assert_str_free(spectrum_ball_get_str(x, 3), "0.000123");
    arb_set_ui(x, 42);
    assert_str_free(spectrum_ball_get_str(x, 30), "42");
    arb_zero(x);
    assert_str_free(spectrum_ball_get_str(x, 30), "0");
    /* 1 +- 0.01: one digit is certain, five are not */
    arb_one(x);
    mag_set_ui_2exp_si(arb_radref(x), 1, -7);
    assert_str_free(spectrum_ball_get_str(x, 1), "1");
    assert_null(spectrum_ball_get_str(x, 5));
    /* 0 +- 1e-10 contains 0: no digit at all */
    arb_zero(x);
    mag_set_ui_2exp_si(arb_radref(x), 1, -33);
    assert_null(spectrum_ball_get_str(x, 1));
    arb_clear(x);
}

/* ------------------------------------------------------------------------
 * reference file
 * ------------------------------------------------------------------------ */

#define MAXTOK 256

typedef struct
{
    char name[128];
    slong dim;
    fmpz_mat_t M;
    int have_matrix;
    fmpz_poly_t charpoly;
    slong nfac;
    fmpz_poly_struct fac[32];
    slong mult[32];
    fmpz_t det, det1;
    slong below, on, above;
    char rho[128];
    char entropy[128];
    int have_minpoly;
    fmpz_poly_t minpoly;
    slong rows_read;
} ref_case;

static void ref_init(ref_case *r)
{
    memset(r->name, 0, sizeof r->name);
    r->dim = -1;
    r->have_matrix = 0;
    fmpz_poly_init(r->charpoly);
    r->nfac = 0;
    fmpz_init(r->det);
    fmpz_init(r->det1);
    r->below = r->on = r->above = -1;
    r->rho[0] = r->entropy[0] = '\0';
    r->have_minpoly = 0;
    fmpz_poly_init(r->minpoly);
    r->rows_read = 0;
}

static void ref_clear(ref_case *r)
{
    slong k;
    if (r->have_matrix)
        fmpz_mat_clear(r->M);
    fmpz_poly_clear(r->charpoly);
    for (k = 0; k < r->nfac; k++)
        fmpz_poly_clear(r->fac + k);
    fmpz_clear(r->det);
    fmpz_clear(r->det1);
    fmpz_poly_clear(r->minpoly);
}

static void poly_from_tokens(fmpz_poly_t f, char **tok, slong n)
{
    slong i;
    fmpz_t c;
    fmpz_init(c);
    fmpz_poly_zero(f);
    for (i = 0; i < n; i++)
    {
        assert_int_equal(fmpz_set_str(c, tok[i], 10), 0);
        fmpz_poly_set_coeff_fmpz(f, i, c);
    }
    fmpz_clear(c);
}

static void check_case(const ref_case *r)
{
    spectrum_t S;
    nserr_t err;
    fmpz_t t;
    fmpz_mat_t IM;
    slong k, j, i;
    char *s;

    spectrum_init(S);
    nserr_init(err);
    fmpz_init(t);
    assert_int_equal(spectrum_compute(S, r->M, err), NS_OK);
    if (!fmpz_poly_equal(spectrum_charpoly(S), r->charpoly))
        fail_msg("%s: charpoly differs", r->name);
    /* the same factors with the same multiplicities */
    assert_int_equal(spectrum_factors(S)->num, r->nfac);
    for (k = 0; k < r->nfac; k++)
    {
        for (j = 0; j < r->nfac; j++)
            if (fmpz_poly_equal(spectrum_factors(S)->p + j, r->fac + k))
                break;
        if (j == r->nfac || spectrum_factors(S)->exp[j] != r->mult[k])
            fail_msg("%s: factor %ld not found", r->name, (long) k);
    }
    if (!fmpz_equal(spectrum_det(S), r->det) || !fmpz_equal(spectrum_det_one_minus(S), r->det1))
        fail_msg("%s: det or det(I - M) differs", r->name);
    /* [flint] the determinants again, without the charpoly */
    fmpz_mat_det(t, r->M);
    assert_true(fmpz_equal(t, spectrum_det(S)));
    fmpz_mat_init(IM, r->dim, r->dim);
    fmpz_mat_one(IM);
    fmpz_mat_sub(IM, IM, r->M);
    fmpz_mat_det(t, IM);
    assert_true(fmpz_equal(t, spectrum_det_one_minus(S)));
    fmpz_mat_clear(IM);
    if (spectrum_count_below_one(S) != r->below || spectrum_count_on_one(S) != r->on
        || spectrum_count_above_one(S) != r->above)
        fail_msg("%s: counts %ld %ld %ld, reference %ld %ld %ld", r->name,
                 (long) spectrum_count_below_one(S), (long) spectrum_count_on_one(S),
                 (long) spectrum_count_above_one(S), (long) r->below, (long) r->on,
                 (long) r->above);
    s = spectrum_radius_get_str(S, 30);
    if (spectrum_radius_cmp_one(S) > 0 && !(spectrum_radius_is_exact(S)
                                            && qqbar_is_integer(spectrum_radius_qqbar(S))))
        assert_decimal(s, r->rho, 30);
    else
    {
        /* exact integers print exactly */
        arb_t a, b;
        arb_init(a);
        arb_init(b);
        assert_int_equal(arb_set_str(a, s, 256), 0);
        assert_int_equal(arb_set_str(b, r->rho, 256), 0);
        if (!arb_equal(a, b))
            fail_msg("%s: rho %s, reference %s", r->name, s, r->rho);
        arb_clear(a);
        arb_clear(b);
    }
    flint_free(s);
    s = spectrum_entropy_get_str(S, 30);
    if (spectrum_count_above_one(S) > 0)
        assert_decimal(s, r->entropy, 30);
    else
        assert_string_equal(s, "0");
    flint_free(s);
    if (r->have_minpoly)
    {
        fmpz_poly_t mp;
        fmpz_poly_init(mp);
        if (!spectrum_radius_minpoly(mp, S) || !fmpz_poly_equal(mp, r->minpoly))
            fail_msg("%s: minimal polynomial of rho differs", r->name);
        fmpz_poly_clear(mp);
    }
    /* eigenvalue balls satisfy the charpoly */
    for (i = 0; i < r->dim; i++)
    {
        acb_t v;
        acb_init(v);
        arb_fmpz_poly_evaluate_acb(v, r->charpoly, spectrum_eigenvalue(S, i), 256);
        assert_true(acb_contains_zero(v));
        acb_clear(v);
    }
    fmpz_clear(t);
    nserr_clear(err);
    spectrum_clear(S);
}

static FILE *open_reference(void)
{
    const char *src = getenv("NILSTEP_SOURCE_DIR");
    char path[4096];
    FILE *fp;
    if (src != NULL)
    {
        snprintf(path, sizeof path, "%s/tests/data/spectrum_ref.txt", src);
        fp = fopen(path, "r");
        if (fp != NULL)
            return fp;
    }
    return fopen("data/spectrum_ref.txt", "r");
}

static void reference_file(void **state)
{
    FILE *fp = open_reference();
    char line[8192];
    char *tok[MAXTOK];
    ref_case r;
    slong ntok, ncases = 0, lineno = 0;
    int in_case = 0, format_ok = 0;
    (void) state;

    if (fp == NULL)
        fail_msg("cannot open tests/data/spectrum_ref.txt (cwd tests/ or NILSTEP_SOURCE_DIR)");
    while (fgets(line, sizeof line, fp) != NULL)
    {
        lineno++;
        if (strncmp(line, "# spectrum reference data, format 1", 35) == 0)
            format_ok = 1;
        if (line[0] == '#')
            continue;
        ntok = 0;
        for (tok[ntok] = strtok(line, " \n"); tok[ntok] != NULL && ntok < MAXTOK - 1;
             tok[ntok] = strtok(NULL, " \n"))
            ntok++;
        if (ntok == 0)
            continue;
        if (strcmp(tok[0], "case") == 0)
        {
            assert_false(in_case);
            ref_init(&r);
            in_case = 1;
            snprintf(r.name, sizeof r.name, "%s", tok[1]);
        }
        else if (!in_case)
            fail_msg("line %ld: data outside a case", (long) lineno);
        else if (strcmp(tok[0], "dim") == 0)
        {
            r.dim = strtol(tok[1], NULL, 10);
            fmpz_mat_init(r.M, r.dim, r.dim);
            r.have_matrix = 1;
        }
        else if (strcmp(tok[0], "row") == 0)
        {
            slong j;
            assert_int_equal(ntok - 1, r.dim);
            for (j = 0; j < r.dim; j++)
                assert_int_equal(fmpz_set_str(fmpz_mat_entry(r.M, r.rows_read, j), tok[j + 1], 10), 0);
            r.rows_read++;
        }
        else if (strcmp(tok[0], "charpoly") == 0)
            poly_from_tokens(r.charpoly, tok + 1, ntok - 1);
        else if (strcmp(tok[0], "factor") == 0)
        {
            assert_true(r.nfac < 32);
            fmpz_poly_init(r.fac + r.nfac);
            r.mult[r.nfac] = strtol(tok[1], NULL, 10);
            poly_from_tokens(r.fac + r.nfac, tok + 2, ntok - 2);
            r.nfac++;
        }
        else if (strcmp(tok[0], "det") == 0)
            assert_int_equal(fmpz_set_str(r.det, tok[1], 10), 0);
        else if (strcmp(tok[0], "det1") == 0)
            assert_int_equal(fmpz_set_str(r.det1, tok[1], 10), 0);
        else if (strcmp(tok[0], "counts") == 0)
        {
            r.below = strtol(tok[1], NULL, 10);
            r.on = strtol(tok[2], NULL, 10);
            r.above = strtol(tok[3], NULL, 10);
        }
        else if (strcmp(tok[0], "rho") == 0)
            snprintf(r.rho, sizeof r.rho, "%s", tok[1]);
        else if (strcmp(tok[0], "entropy") == 0)
            snprintf(r.entropy, sizeof r.entropy, "%s", tok[1]);
        else if (strcmp(tok[0], "minpoly") == 0)
        {
            if (strcmp(tok[1], "none") != 0)
            {
                r.have_minpoly = 1;
                poly_from_tokens(r.minpoly, tok + 1, ntok - 1);
            }
        }
        else if (strcmp(tok[0], "end") == 0)
        {
            assert_int_equal(r.rows_read, r.dim);
            check_case(&r);
            ref_clear(&r);
            in_case = 0;
            ncases++;
        }
        else
            fail_msg("line %ld: unknown key '%s'", (long) lineno, tok[0]);
    }
    fclose(fp);
    assert_false(in_case);
    assert_true(format_ok);
    assert_true(ncases >= 60);
}

/* ------------------------------------------------------------------------
 * random properties
 * ------------------------------------------------------------------------ */

static ulong env_ulong(const char *name, ulong dflt)
{
    const char *v = getenv(name);
    return (v != NULL && *v != '\0') ? strtoul(v, NULL, 10) : dflt;
}

static void print_matrix(const fmpz_mat_t M)
{
    printf("matrix: ");
    fmpz_mat_print_pretty(M);
    printf("\n");
}

#define CHECK(cond)                                                          \
    do                                                                       \
    {                                                                        \
        if (!(cond))                                                         \
        {                                                                    \
            print_matrix(M);                                                 \
            fail_msg("iteration %ld: %s", (long) iter, #cond);               \
        }                                                                    \
    } while (0)

/* A random d x d matrix of one of several shapes that produce ties,
 * multiplicities, roots of unity and nilpotent parts. */
static void random_matrix(fmpz_mat_t M, flint_rand_t st)
{
    slong d = fmpz_mat_nrows(M), i, j, kind = (slong) n_randint(st, 5);
    fmpz_mat_zero(M);
    if (kind == 0) /* signed permutation: roots of unity only */
    {
        slong *p = flint_malloc(sizeof(slong) * (d + 1));
        for (i = 0; i < d; i++)
            p[i] = i;
        for (i = d - 1; i > 0; i--)
        {
            j = (slong) n_randint(st, i + 1);
            slong s = p[i];
            p[i] = p[j];
            p[j] = s;
        }
        for (i = 0; i < d; i++)
            fmpz_set_si(fmpz_mat_entry(M, p[i], i), n_randint(st, 2) ? 1 : -1);
        flint_free(p);
    }
    else if (kind == 1) /* block diagonal with a repeated block */
    {
        slong h = d / 2;
        for (i = 0; i < h; i++)
            for (j = 0; j < h; j++)
            {
                slong v = (slong) n_randint(st, 5) - 2;
                fmpz_set_si(fmpz_mat_entry(M, i, j), v);
                fmpz_set_si(fmpz_mat_entry(M, i + h, j + h), v);
            }
        if (d % 2)
            fmpz_set_si(fmpz_mat_entry(M, d - 1, d - 1), (slong) n_randint(st, 5) - 2);
    }
    else if (kind == 2) /* upper triangular: integer eigenvalues */
    {
        for (i = 0; i < d; i++)
            for (j = i; j < d; j++)
                fmpz_set_si(fmpz_mat_entry(M, i, j), (slong) n_randint(st, 7) - 3);
    }
    else /* dense, sometimes sparse */
    {
        slong sparse = (slong) n_randint(st, 2);
        for (i = 0; i < d; i++)
            for (j = 0; j < d; j++)
                if (!sparse || n_randint(st, 3) == 0)
                    fmpz_set_si(fmpz_mat_entry(M, i, j), (slong) n_randint(st, 9) - 4);
    }
}

static void random_properties(void **state)
{
    ulong seed = env_ulong("NILSTEP_SEED", 1);
    /* NILSTEP_ITER scales the 150 matrices (testutil.h: at least one) */
    slong iters = (slong) count_scaled_by("NILSTEP_ITER", 150), iter;
    flint_rand_t st;
    spectrum_t S;
    nserr_t err;
    (void) state;

    printf("random_properties: NILSTEP_SEED=%lu, %ld matrices (NILSTEP_ITER scales them)\n",
           seed, (long) iters);
    flint_randinit(st);
    flint_randseed(st, seed, seed * 2654435761UL + 1);
    spectrum_init(S);
    nserr_init(err);
    for (iter = 0; iter < iters; iter++)
    {
        slong d = (slong) n_randint(st, 9), i, k;
        fmpz_mat_t M, IM;
        fmpz_t t;
        acb_t prod, sum;
        arb_t mx, lo, ent, one;

        fmpz_mat_init(M, d, d);
        random_matrix(M, st);
        CHECK(spectrum_compute(S, M, err) == NS_OK);
        fmpz_init(t);
        acb_init(prod);
        acb_init(sum);
        arb_init(mx);
        arb_init(lo);
        arb_init(ent);
        arb_init(one);
        arb_one(one);

        CHECK(spectrum_count_below_one(S) + spectrum_count_on_one(S)
              + spectrum_count_above_one(S) == d);
        /* [flint] det M and det(I - M) directly; det(I - M) = p(1) */
        fmpz_mat_det(t, M);
        CHECK(fmpz_equal(t, spectrum_det(S)));
        fmpz_mat_init(IM, d, d);
        fmpz_mat_one(IM);
        fmpz_mat_sub(IM, IM, M);
        fmpz_mat_det(t, IM);
        CHECK(fmpz_equal(t, spectrum_det_one_minus(S)));
        fmpz_one(t);
        fmpz_poly_evaluate_fmpz(t, spectrum_charpoly(S), t);
        CHECK(fmpz_equal(t, spectrum_det_one_minus(S)));
        fmpz_mat_clear(IM);

        /* product of the eigenvalues contains det, their sum the trace */
        acb_one(prod);
        acb_zero(sum);
        arb_zero(mx);
        arb_zero(ent);
        for (i = 0; i < d; i++)
        {
            acb_srcptr z = spectrum_eigenvalue(S, i);
            arb_srcptr a = spectrum_eigenvalue_abs(S, i);
            int side = spectrum_eigenvalue_side(S, i);
            acb_mul(prod, prod, z, 256);
            acb_add(sum, sum, z, 256);
            arb_max(mx, mx, a, 256);
            CHECK(acb_rel_accuracy_bits(z) >= SPECTRUM_ROOT_BITS);
            /* the side agrees with the modulus ball */
            if (side == 0)
                CHECK(arb_is_one(a));
            else if (side > 0)
                CHECK(arb_gt(a, one));
            else
                CHECK(arb_lt(a, one));
            /* decreasing modulus (by midpoint) */
            if (i > 0)
                CHECK(arf_cmp(arb_midref(spectrum_eigenvalue_abs(S, i - 1)),
                              arb_midref(a)) >= 0);
            arb_max(lo, a, one, 256);
            arb_log(lo, lo, 256);
            arb_add(ent, ent, lo, 256);
        }
        CHECK(acb_contains_fmpz(prod, spectrum_det(S)));
        fmpz_mat_trace(t, M);
        CHECK(acb_contains_fmpz(sum, t));
        /* rho ball contains the largest modulus */
        if (d > 0)
            CHECK(arb_overlaps(spectrum_radius(S), mx));
        for (i = 0; i < d; i++)
            CHECK(!arb_gt(spectrum_eigenvalue_abs(S, i), spectrum_radius(S)));
        /* entropy = sum log max(1, |lambda|) (Mahler measure) */
        CHECK(arb_overlaps(ent, spectrum_entropy(S)));
        /* an exact rho: real, in the ball, a root of its minimal polynomial */
        if (spectrum_radius_is_exact(S))
        {
            fmpz_poly_t mp;
            arb_t v;
            fmpz_poly_init(mp);
            arb_init(v);
            CHECK(qqbar_is_real(spectrum_radius_qqbar(S)));
            CHECK(qqbar_sgn_re(spectrum_radius_qqbar(S)) >= 0);
            CHECK(spectrum_radius_minpoly(mp, S));
            arb_fmpz_poly_evaluate_arb(v, mp, spectrum_radius(S), 256);
            CHECK(arb_contains_zero(v));
            fmpz_poly_clear(mp);
            arb_clear(v);
        }
        /* Kronecker: a factor with all roots on the circle is cyclotomic;
           factors other than x with no root outside: the same */
        for (k = 0; k < spectrum_factors(S)->num; k++)
        {
            const fmpz_poly_struct *f = spectrum_factors(S)->p + k;
            slong out = 0, in = 0;
            for (i = 0; i < d; i++)
                if (spectrum_eigenvalue_factor(S, i) == k)
                {
                    out += spectrum_eigenvalue_side(S, i) > 0;
                    in += spectrum_eigenvalue_side(S, i) < 0;
                }
            if (out == 0 && !(f->length == 2 && fmpz_is_zero(f->coeffs)))
                CHECK(in == 0 && fmpz_poly_is_cyclotomic(f));
        }
        CHECK(spectrum_is_hyperbolic(S) == (spectrum_count_on_one(S) == 0));
        CHECK(spectrum_is_expanding(S) == (spectrum_count_above_one(S) == d));
        CHECK(spectrum_cmp_radius(S, S) == 0);
        CHECK(spectrum_cmp_root_bound(S, 2, S, 2) == 0);

        fmpz_clear(t);
        acb_clear(prod);
        acb_clear(sum);
        arb_clear(mx);
        arb_clear(lo);
        arb_clear(ent);
        arb_clear(one);
        fmpz_mat_clear(M);
    }
    spectrum_clear(S);
    nserr_clear(err);
    flint_randclear(st);
}

/* The charpoly of a large matrix is computed prime by prime with our own
 * coefficient bound; it must agree with FLINT's fmpz_mat_charpoly, which
 * uses its own (Hadamard-type) bound, on matrices with small and with huge
 * entries. */
static void charpoly_agrees_with_flint(void **state)
{
    (void)state;
    flint_rand_t rs;
    flint_randinit(rs);
    nserr_t err;
    nserr_init(err);
    for (slong it = 0; it < 24; it++) {
        slong d = 12 + (it % 6) * 5;
        fmpz_mat_t M;
        fmpz_poly_t ref;
        fmpz_mat_init(M, d, d);
        fmpz_poly_init(ref);
        if (it % 3 == 0)
            fmpz_mat_randtest(M, rs, 200);
        else
            for (slong i = 0; i < d; i++)
                for (slong j = 0; j < d; j++)
                    fmpz_set_si(fmpz_mat_entry(M, i, j),
                                (slong)n_randint(rs, 7) - 3);
        fmpz_mat_charpoly(ref, M);
        spectrum_t S;
        spectrum_init(S);
        assert_int_equal(spectrum_compute(S, M, err), NS_OK);
        assert_true(fmpz_poly_equal(spectrum_charpoly(S), ref));
        spectrum_clear(S);
        fmpz_poly_clear(ref);
        fmpz_mat_clear(M);
    }
    nserr_clear(err);
    flint_randclear(rs);
}

static int stop_now(void *ctx, const char *stage, double f)
{
    (void)ctx;
    (void)stage;
    (void)f;
    return 1;
}

static void large_charpoly_can_be_cancelled(void **state)
{
    (void)state;
    fmpz_mat_t M;
    fmpz_mat_init(M, 40, 40);
    fmpz_mat_one(M);
    ns_progress_t p = {stop_now, NULL};
    nserr_t err;
    nserr_init(err);
    spectrum_t S;
    spectrum_init(S);
    assert_int_equal(spectrum_compute_progress(S, M, &p, err), NS_ERR_CANCELLED);
    assert_int_equal(spectrum_dim(S), 0);
    spectrum_clear(S);
    nserr_clear(err);
    fmpz_mat_clear(M);
}

/* Records the stages named and stops at the one given in ctx->stop. */
typedef struct {
    char seen[256];
    const char *stop;
} stage_log;

static int log_stages(void *ctx, const char *stage, double f)
{
    stage_log *l = ctx;
    (void)f;
    if (stage == NULL)
        return 0;
    size_t n = strlen(l->seen);
    snprintf(l->seen + n, sizeof l->seen - n, "%s%s", n ? "," : "", stage);
    return l->stop != NULL && strcmp(stage, l->stop) == 0;
}

/* The phases after the characteristic polynomial once ran without a word
 * to the hook (13 s on a layer of surface(3)): each is named, in order, and
 * a stop at any of them leaves S as for d = 0.  The cat map's spectrum is
 * (3 +- sqrt 5)/2 (by hand). */
static void phases_are_named_and_stoppable(void **state)
{
    (void)state;
    static const slong cat[] = {2, 1, 1, 1};
    static const char *const phases[] = {"charpoly", "factors", "roots", "radius"};
    fmpz_mat_t M;
    nserr_t err;
    spectrum_t S;
    stage_log l = {"", NULL};
    ns_progress_t p = {log_stages, &l};
    mat_set(M, 2, cat);
    nserr_init(err);
    spectrum_init(S);
    assert_int_equal(spectrum_compute_progress(S, M, &p, err), NS_OK);
    assert_string_equal(l.seen, "charpoly,factors,roots,radius");
    assert_int_equal(spectrum_count_above_one(S), 1);
    for (int k = 0; k < 4; k++) {
        l.seen[0] = '\0';
        l.stop = phases[k];
        assert_int_equal(spectrum_compute_progress(S, M, &p, err), NS_ERR_CANCELLED);
        assert_int_equal(spectrum_dim(S), 0);
    }
    spectrum_clear(S);
    nserr_clear(err);
    fmpz_mat_clear(M);
}

/* spectrum_decimals_round on hand-rounded examples: half up, a carry that
 * adds a digit, plain notation for exponents -5 .. digits-2 else d.ddde+N,
 * integers and short numbers untouched, balls copied, several numbers in
 * one string (an eigenvalue "a + bi"). */
static void decimals_round_by_hand(void **state)
{
    (void)state;
    static const struct {
        const char *in;
        slong digits;
        const char *want;
    } cases[] = {
        {"2.61803398874989484820458683437", 10, "2.618033989"},
        {"2.61803398874989484820458683437", 4, "2.618"},
        {"0.962423650119206894995517826849", 10, "0.9624236501"},
        {"9.9999999999", 3, "10.0"},
        {"99.96", 3, "1.00e+2"},
        {"123456.789", 4, "1.235e+5"},
        {"0.0000123456789", 3, "0.0000123"},
        {"0.00000123456789", 3, "1.23e-6"},
        {"1.23456789e+40", 5, "1.2346e+40"},
        {"-3.14159265", 3, "-3.14"},
        {"2.5", 10, "2.5"},
        {"17", 2, "17"},
        {"2.618033988749895 + 0.5000000000000001i", 4, "2.618 + 0.5000i"},
        {"[2.61803 +/- 1.2e-5]", 2, "[2.61803 +/- 1.2e-5]"},
        {"x^2 - 3x + 1", 2, "x^2 - 3x + 1"},
        {"2.61803", 1, "3e+0"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        char *s = spectrum_decimals_round(cases[i].in, cases[i].digits);
        if (strcmp(s, cases[i].want) != 0)
            fail_msg("%s to %ld digits: %s, want %s", cases[i].in, (long)cases[i].digits, s,
                     cases[i].want);
        flint_free(s);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(phases_are_named_and_stoppable),
        cmocka_unit_test(cat_map),
        cmocka_unit_test(rotation),
        cmocka_unit_test(lehmer),
        cmocka_unit_test(nilpotent),
        cmocka_unit_test(unipotent),
        cmocka_unit_test(complex_pair),
        cmocka_unit_test(tie_real),
        cmocka_unit_test(tie_real_complex),
        cmocka_unit_test(near_tie),
        cmocka_unit_test(pure_imaginary),
        cmocka_unit_test(strings),
        cmocka_unit_test(zero_space),
        cmocka_unit_test(inexact_radius),
        cmocka_unit_test(comparisons),
        cmocka_unit_test(ball_strings),
        cmocka_unit_test(reference_file),
        cmocka_unit_test(random_properties),
        cmocka_unit_test(charpoly_agrees_with_flint),
        cmocka_unit_test(large_charpoly_can_be_cancelled),
        cmocka_unit_test(decimals_round_by_hand),
    };
    int rc = cmocka_run_group_tests(tests, NULL, NULL);
    flint_cleanup_master();
    return rc;
}
