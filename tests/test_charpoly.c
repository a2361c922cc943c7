/* test_charpoly.c — the threaded, cancellable characteristic polynomial
 * (src/charpoly.c) against FLINT's fmpz_mat_charpoly, an independent
 * implementation (Dumas–Pernet–Wan bound, one thread), on random matrices
 * of several shapes; the coefficient bound against the true coefficients;
 * cancellation.  Random tests print their seed: NILSTEP_SEED replays a run,
 * NILSTEP_ITER scales the number of matrices. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <flint/fmpz_poly_factor.h>
#include <flint/fmpz_vec.h>
#include <arb_fmpz_poly.h>

#include "analysis.h"
#include "charpoly.h"
#include "spectrum.h"
#include "endo.h"
#include "layer.h"
#include "nq.h"
#include "pres.h"
#include "testutil.h"

static int setup(void **state)
{
    (void)state;
    return rng_setup_program("test_charpoly");
}

/* A random d x d matrix: dense with small or large entries, sparse, or with
 * a few heavy rows, so that each of the three bounds is sometimes the
 * least; or nilpotent, of low rank, or a permutation matrix, where the
 * reduction to Hessenberg form meets zero pivots and split blocks. */
static void random_matrix(fmpz_mat_t M)
{
    slong d = fmpz_mat_nrows(M);
    long shape = rng_range(0, 6);
    fmpz_mat_zero(M);
    for (slong i = 0; i < d; i++)
        for (slong j = 0; j < d; j++) {
            fmpz *x = fmpz_mat_entry(M, i, j);
            switch (shape) {
            case 0:
                fmpz_set_si(x, rng_range(-3, 3));
                break;
            case 1:
                fmpz_set_si(x, rng_range(-1000000, 1000000));
                break;
            case 2:
                if (rng_range(0, 9) == 0)
                    fmpz_set_si(x, rng_range(-50, 50));
                break;
            case 3:
                fmpz_set_si(x, i % 5 == 0 ? rng_range(-100000, 100000) : rng_range(-1, 1));
                break;
            case 4: /* strictly upper triangular: charpoly x^d */
                if (j > i && rng_range(0, 2) == 0)
                    fmpz_set_si(x, rng_range(-9, 9));
                break;
            default: /* rows from a few random ones (rank <= 3) */
                if (i < 3 || d <= 3)
                    fmpz_set_si(x, rng_range(-5, 5));
                else
                    fmpz_set(x, fmpz_mat_entry(M, i % 3, j));
            }
        }
    if (shape == 6) { /* a permutation matrix, rows in random order */
        fmpz_mat_zero(M);
        slong *perm = flint_malloc(sizeof(slong) * (d + 1));
        for (slong i = 0; i < d; i++)
            perm[i] = i;
        for (slong i = d - 1; i > 0; i--) {
            slong k = rng_range(0, i), t = perm[i];
            perm[i] = perm[k];
            perm[k] = t;
        }
        for (slong i = 0; i < d; i++)
            fmpz_one(fmpz_mat_entry(M, i, perm[i]));
        flint_free(perm);
    }
    if (d > 0 && rng_range(0, 4) == 0) { /* a huge entry: multiword coefficients */
        fmpz_set_ui(fmpz_mat_entry(M, 0, d - 1), 1);
        fmpz_mul_2exp(fmpz_mat_entry(M, 0, d - 1), fmpz_mat_entry(M, 0, d - 1), 200);
    }
}

static void agrees_with_flint_on_random_matrices(void **state)
{
    (void)state;
    fmpz_poly_t a, b;
    nserr_t err;
    fmpz_poly_init(a);
    fmpz_poly_init(b);
    nserr_init(err);
    for (slong t = 0; t < iters(40); t++) {
        slong d = rng_range(0, 40);
        slong threads = rng_range(0, 3); /* 0: one per processor */
        fmpz_mat_t M;
        fmpz_mat_init(M, d, d);
        random_matrix(M);
        assert_int_equal(charpoly_compute(a, M, threads, NULL, err), NS_OK);
        fmpz_poly_zero(b); /* FLINT 2.9 starts from b's old coefficients */
        fmpz_mat_charpoly(b, M);
        if (!fmpz_poly_equal(a, b))
            fail_msg("matrix %ld (d = %ld, %ld threads): charpoly differs from "
                     "fmpz_mat_charpoly", (long)t, (long)d, (long)threads);
        /* the bound holds: every |c_k| < 2^bits */
        slong bits = charpoly_bound_bits(M);
        if (d > 0 && _fmpz_vec_max_bits(b->coeffs, b->length) > 0
            && FLINT_ABS(_fmpz_vec_max_bits(b->coeffs, b->length)) > bits)
            fail_msg("matrix %ld: coefficient of %ld bits above the bound %ld", (long)t,
                     (long)FLINT_ABS(_fmpz_vec_max_bits(b->coeffs, b->length)), (long)bits);
        fmpz_mat_clear(M);
    }
    fmpz_poly_clear(a);
    fmpz_poly_clear(b);
}

/* The bound is attained up to a few bits where it must be: the identity's
 * charpoly (x - 1)^d has C(d, d/2) as its largest coefficient, and
 * Hadamard's bound gives 2^d. */
static void bound_is_sound_and_near_tight_for_the_identity(void **state)
{
    (void)state;
    fmpz_mat_t M;
    fmpz_mat_init(M, 60, 60);
    fmpz_mat_one(M);
    slong bits = charpoly_bound_bits(M);
    /* C(60, 30) ~ 1.18e17 has 57 bits; (1 + 1)^60 has 61 */
    assert_true(bits >= 57);
    assert_true(bits <= 62);
    fmpz_mat_clear(M);
}

static int stop_at_once(void *ctx, const char *stage, double fraction)
{
    (void)stage;
    (void)fraction;
    ++*(int *)ctx;
    return 1;
}

static void cancel_stops_with_cancelled(void **state)
{
    (void)state;
    fmpz_mat_t M;
    fmpz_poly_t a;
    nserr_t err;
    int calls = 0;
    ns_progress_t p = {stop_at_once, &calls};
    fmpz_mat_init(M, 30, 30);
    fmpz_poly_init(a);
    nserr_init(err);
    random_matrix(M);
    for (slong threads = 1; threads <= 2; threads++) {
        calls = 0;
        assert_int_equal(charpoly_compute(a, M, threads, &p, err), NS_ERR_CANCELLED);
        assert_true(calls >= 1);
        assert_true(fmpz_poly_is_zero(a));
    }
    fmpz_mat_clear(M);
    fmpz_poly_clear(a);
}

static int count_polls(void *ctx, const char *stage, double fraction)
{
    (void)stage;
    (void)fraction;
    ++*(long *)ctx;
    return 0;
}

static int stop_at_third(void *ctx, const char *stage, double fraction)
{
    (void)stage;
    (void)fraction;
    return ++*(long *)ctx >= 3;
}

/* One prime of a large layer once took close to a minute without a poll
 * (nmod_mat_charpoly cannot be stopped): the hook is now also asked inside
 * each prime, so there are many more polls than primes, and a stop asked
 * there is obeyed. */
static void polls_inside_each_prime(void **state)
{
    (void)state;
    fmpz_mat_t M;
    fmpz_poly_t a, b;
    nserr_t err;
    long calls = 0;
    ns_progress_t count = {count_polls, &calls}, stop = {stop_at_third, &calls};
    fmpz_mat_init(M, 200, 200);
    fmpz_poly_init(a);
    fmpz_poly_init(b);
    nserr_init(err);
    for (slong i = 0; i < 200; i++)
        for (slong j = 0; j < 200; j++)
            fmpz_set_si(fmpz_mat_entry(M, i, j), rng_range(-1, 1));
    slong primes = charpoly_num_primes(M);
    assert_int_equal(charpoly_compute(a, M, 1, &count, err), NS_OK);
    if (calls <= 2 * primes)
        fail_msg("%ld polls for %ld primes: none inside a prime", calls, (long)primes);
    fmpz_mat_charpoly(b, M);
    assert_true(fmpz_poly_equal(a, b));
    calls = 0;
    assert_int_equal(charpoly_compute(a, M, 1, &stop, err), NS_ERR_CANCELLED);
    assert_int_equal(calls, 3);
    assert_true(fmpz_poly_is_zero(a));
    fmpz_mat_clear(M);
    fmpz_poly_clear(a);
    fmpz_poly_clear(b);
}

static void non_square_is_an_input_error(void **state)
{
    (void)state;
    fmpz_mat_t M;
    fmpz_poly_t a;
    nserr_t err;
    fmpz_mat_init(M, 2, 3);
    fmpz_poly_init(a);
    nserr_init(err);
    assert_int_equal(charpoly_compute(a, M, 1, NULL, err), NS_ERR_INPUT);
    fmpz_mat_clear(M);
    fmpz_poly_clear(a);
}

/* Witt's ranks of the free Lie ring (E. Witt 1937), values from the
 * formula worked by hand: rank 2: 2, 1, 2, 3, 6, 9, 18, 30; rank 3 at
 * degree 8: 810. */
static void witt_rank_matches_the_formula(void **state)
{
    (void)state;
    static const slong r2[] = {2, 1, 2, 3, 6, 9, 18, 30};
    for (slong n = 1; n <= 8; n++)
        assert_int_equal(charpoly_witt_rank(2, n), r2[n - 1]);
    assert_int_equal(charpoly_witt_rank(3, 8), 810);
    assert_int_equal(charpoly_witt_rank(0, 3), 0);
    assert_int_equal(charpoly_witt_rank(1, 1), 1);
    assert_int_equal(charpoly_witt_rank(1, 2), 0);
    assert_int_equal(charpoly_witt_rank(2, 64), -1); /* beyond the limit */
}

/* The map "a_i -> w_i" on free(r) at class c: its layer matrices, read by
 * nilstep's own quotient and endomorphism code, against Brandt's route from
 * the layer-1 matrix alone; each layer's characteristic polynomial is
 * FLINT's fmpz_mat_charpoly of the layer matrix (independent of both). */
static void check_free_layers(const char *group, slong c, const char *map)
{
    pres_t P;
    nq_t Q;
    endo_t E;
    nserr_t err;
    pres_init(P);
    nq_init(Q);
    endo_init(E);
    nserr_init(err);
    assert_int_equal(pres_parse(P, group, 1, 1, err), NS_OK);
    assert_int_equal(nq_compute(Q, P, c, NULL, err), NS_OK);
    slong ng = P->gens->n;
    expr_struct *im = flint_malloc(sizeof(expr_struct) * ng);
    for (slong i = 0; i < ng; i++)
        expr_init(im + i);
    assert_int_equal(pres_parse_map(im, P, map, 1, 1, err), NS_OK);
    assert_int_equal(endo_set(E, Q, im, NULL, err), NS_OK);
    fmpz_mat_t act, M1, M;
    fmpz_poly_t a, b;
    fmpz_mat_init(act, 0, 0);
    fmpz_mat_init(M1, 0, 0);
    fmpz_mat_init(M, 0, 0);
    fmpz_poly_init(a);
    fmpz_poly_init(b);
    layer_ensure_coords(Q->layers + 0);
    endo_layer_matrices(act, M1, E, Q->layers + 0);
    for (slong j = Q->nlayers + 1; j <= c; j++) /* the series stabilised early */
        assert_int_equal(charpoly_witt_rank(ng, j), 0);
    for (slong j = 1; j <= Q->nlayers; j++) {
        layer_ensure_coords(Q->layers + j - 1);
        endo_layer_matrices(act, M, E, Q->layers + j - 1);
        assert_int_equal(charpoly_witt_rank(ng, j), fmpz_mat_nrows(M));
        assert_int_equal(charpoly_free_lie(a, M1, j, NULL, err), NS_OK);
        fmpz_poly_zero(b);
        fmpz_mat_charpoly(b, M);
        if (!fmpz_poly_equal(a, b))
            fail_msg("%s class %ld, %s: layer %ld differs from fmpz_mat_charpoly", group,
                     (long)c, map, (long)j);
    }
    fmpz_poly_clear(a);
    fmpz_poly_clear(b);
    fmpz_mat_clear(act);
    fmpz_mat_clear(M1);
    fmpz_mat_clear(M);
    for (slong i = 0; i < ng; i++)
        expr_clear(im + i);
    flint_free(im);
    endo_clear(E);
    nq_clear(Q);
    pres_clear(P);
}

static void free_lie_route_agrees_with_the_layer_matrices(void **state)
{
    (void)state;
    check_free_layers("free(2)", 7, "a -> a^2 b, b -> a b");
    check_free_layers("free(2)", 6, "a -> a b^-1 a, b -> b^3 [a,b]");
    check_free_layers("free(2)", 6, "a -> a^2 b^2, b -> a b");   /* singular on layer 1 */
    check_free_layers("free(2)", 5, "a -> a, b -> 1");           /* a projection */
    check_free_layers("free(3)", 4, "a -> a^2 b, b -> a b c, c -> b c");
    check_free_layers("free(3)", 4, "a -> b, b -> c, c -> a^-1"); /* finite order */
    check_free_layers("free(1)", 3, "a -> a^-5");                 /* layers 2, 3 vanish */
}

static void free_lie_cancel_and_bad_input(void **state)
{
    (void)state;
    fmpz_mat_t A;
    fmpz_poly_t a;
    nserr_t err;
    int calls = 0;
    ns_progress_t p = {stop_at_once, &calls};
    fmpz_mat_init(A, 2, 2);
    fmpz_poly_init(a);
    nserr_init(err);
    fmpz_mat_one(A);
    assert_int_equal(charpoly_free_lie(a, A, 6, &p, err), NS_ERR_CANCELLED);
    assert_true(fmpz_poly_is_zero(a));
    assert_int_equal(charpoly_free_lie(a, A, 0, NULL, err), NS_ERR_INPUT);
    assert_int_equal(charpoly_free_lie(a, A, 64, NULL, err), NS_ERR_LIMIT);
    fmpz_mat_clear(A);
    fmpz_mat_init(A, 2, 3);
    assert_int_equal(charpoly_free_lie(a, A, 2, NULL, err), NS_ERR_INPUT);
    fmpz_mat_clear(A);
    fmpz_poly_clear(a);
}

/* ------------------------------------------------------------------------ */
/* The bound for layers of groups generated in degree 1                      */

/* Hand-worked values of charpoly_lie_bound_bits (the product of 1 + u^alpha
 * over the d largest roots of L_n(diag(u)), Witt's count per content):
 *   - u = (2, 1), n = 2: L_2 is spanned by [x1, x2], content (1, 1), root
 *     2: 1 + 2 = 3 < 2^2;
 *   - u = (2, 1), n = 3: [x1, x2, x1] (content (2, 1), root 4) and
 *     [x1, x2, x2] (content (1, 2), root 2): d = 1 takes 5 < 2^3, d = 2
 *     takes 5 * 3 = 15 < 2^4;
 *   - all u = 1: the bound is 2^d, i.e. d + 1 bits;
 *   - d above Witt's rank (E. Witt 1937; values of charpoly_witt_rank, which
 *     witt_rank_matches_the_formula checks by hand) cannot be a divisor: -1.
 * The last two also check that the contents' counts add up to Witt's
 * rank. */
static void lie_bound_hand_values(void **state)
{
    (void)state;
    mag_struct u[4];
    for (int i = 0; i < 4; i++)
        mag_init(u + i);
    mag_set_ui(u + 0, 2);
    mag_one(u + 1);
    assert_int_equal(charpoly_lie_bound_bits(u, 2, 2, 1), 2);
    assert_int_equal(charpoly_lie_bound_bits(u, 2, 3, 1), 3);
    assert_int_equal(charpoly_lie_bound_bits(u, 2, 3, 2), 4);
    assert_int_equal(charpoly_lie_bound_bits(u, 2, 2, 2), -1);
    assert_int_equal(charpoly_lie_bound_bits(u, 2, 5, 0), 0);
    for (int i = 0; i < 4; i++)
        mag_one(u + i);
    for (slong r = 1; r <= 4; r++)
        for (slong n = 1; n <= 7; n++) {
            slong w = charpoly_witt_rank(r, n);
            for (slong d = 1; d <= w; d += FLINT_MAX(1, w / 7))
                assert_int_equal(charpoly_lie_bound_bits(u, r, n, d), d + 1);
            assert_int_equal(charpoly_lie_bound_bits(u, r, n, w + 1), -1);
        }
    assert_int_equal(charpoly_lie_bound_bits(u, 0, 3, 1), -1);
    for (int i = 0; i < 4; i++)
        mag_clear(u + i);
}

/* u := upper bounds of the moduli of M1's eigenvalues, with multiplicity,
 * from FLINT's factorisation of fmpz_mat_charpoly and Arb's certified
 * roots of each (squarefree) irreducible factor: independent of the
 * engine's spectrum module. */
static void eigen_moduli_bounds(mag_struct *u, const fmpz_mat_t M1)
{
    slong r = fmpz_mat_nrows(M1), k = 0;
    fmpz_poly_t chi;
    fmpz_poly_factor_t fac;
    fmpz_poly_init(chi);
    fmpz_poly_factor_init(fac);
    fmpz_mat_charpoly(chi, M1);
    fmpz_poly_factor(fac, chi);
    for (slong f = 0; f < fac->num; f++) {
        slong deg = fmpz_poly_degree(fac->p + f);
        acb_ptr roots = _acb_vec_init(deg);
        arb_fmpz_poly_complex_roots(roots, fac->p + f, 0, 64);
        for (slong i = 0; i < deg; i++) {
            mag_t m;
            mag_init(m);
            acb_get_mag(m, roots + i);
            for (slong e = 0; e < fac->exp[f]; e++)
                mag_set(u + k++, m);
            mag_clear(m);
        }
        _acb_vec_clear(roots, deg);
    }
    assert_int_equal(k, r);
    fmpz_poly_factor_clear(fac);
    fmpz_poly_clear(chi);
}

/* Per map: the number of layers checked and the primes of the largest. */
typedef struct {
    slong layers;
    slong dim, old_primes, new_primes;
} lie_check_struct;

/* For every layer j >= 2 of A (a valid map): the bound from layer 1 holds
 * for fmpz_mat_charpoly of the layer matrix (FLINT, its own bound), the
 * engine's charpoly_compute_bounded with it gives the same polynomial, and
 * so does the analysis' stored spectrum, which took its number of primes
 * from the same bound. */
static void check_lie_bound_layers(const analysis_t A, const char *what, lie_check_struct *out)
{
    nserr_t err;
    fmpz_poly_t a, b;
    nserr_init(err);
    fmpz_poly_init(a);
    fmpz_poly_init(b);
    if (!A->valid)
        fail_msg("%s: the map is not well defined", what);
    const fmpz_mat_struct *M1 = A->layers[0].matrix;
    slong r = fmpz_mat_nrows(M1);
    mag_struct *u = flint_malloc(sizeof(mag_struct) * (r + 1));
    for (slong i = 0; i < r; i++)
        mag_init(u + i);
    eigen_moduli_bounds(u, M1);
    for (slong j = 2; j <= A->nlayers; j++) {
        const fmpz_mat_struct *M = A->layers[j - 1].matrix;
        slong d = fmpz_mat_nrows(M);
        slong bits = charpoly_lie_bound_bits(u, r, j, d);
        if (bits < 0)
            fail_msg("%s layer %ld (dimension %ld): no bound", what, (long)j, (long)d);
        fmpz_poly_zero(b);
        fmpz_mat_charpoly(b, M);
        slong need = FLINT_ABS(_fmpz_vec_max_bits(b->coeffs, b->length));
        if (need > bits)
            fail_msg("%s layer %ld: a coefficient of %ld bits above the bound %ld", what,
                     (long)j, (long)need, (long)bits);
        slong threads = rng_range(1, 3);
        assert_int_equal(charpoly_compute_bounded(a, M, bits, threads, NULL, err), NS_OK);
        if (!fmpz_poly_equal(a, b))
            fail_msg("%s layer %ld (%ld threads): differs from fmpz_mat_charpoly", what,
                     (long)j, (long)threads);
        if (!fmpz_poly_equal(spectrum_charpoly(A->layers[j - 1].spectrum), b))
            fail_msg("%s layer %ld: the analysis' charpoly differs from fmpz_mat_charpoly",
                     what, (long)j);
        if (d >= CHARPOLY_OWN_MIN_DIM
            && spectrum_charpoly_primes(A->layers[j - 1].spectrum)
                   != charpoly_num_primes_bounded(M, bits))
            fail_msg("%s layer %ld: the analysis used %ld primes, the bound asks for %ld", what,
                     (long)j, (long)spectrum_charpoly_primes(A->layers[j - 1].spectrum),
                     (long)charpoly_num_primes_bounded(M, bits));
        if (out != NULL) {
            out->layers++;
            out->dim = d;
            out->old_primes = charpoly_num_primes(M);
            out->new_primes = charpoly_num_primes_bounded(M, bits);
        }
    }
    for (slong i = 0; i < r; i++)
        mag_clear(u + i);
    flint_free(u);
    fmpz_poly_clear(a);
    fmpz_poly_clear(b);
    nserr_clear(err);
}

/* A random word of length 1..len in the first ng of the letters. */
static void random_word(char *buf, size_t size, const char *const *letters, int ng, int len)
{
    size_t k = 0;
    int n = (int)rng_range(1, len);
    buf[0] = 0;
    for (int i = 0; i < n && k + 16 < size; i++)
        k += (size_t)snprintf(buf + k, size - k, "%s%s^%ld", i ? " " : "",
                              letters[rng_range(0, ng - 1)],
                              (long)(rng_range(0, 1) ? rng_range(1, 2) : -rng_range(1, 2)));
}

/* A random automorphism of the free group on a, b as images, a product of
 * up to 4 elementary Nielsen moves (J. Nielsen 1924), written by
 * substituting the images of one move into the next.  It sends [a, b] to
 * a conjugate of [a, b]^(+-1), so it is well defined on any group whose
 * relators are powers of [a, b]. */
static void random_nielsen(char *ia, char *ib, size_t size)
{
    static const char *const moves[][2] = {
        {"a b", "b"}, {"b a", "b"}, {"a", "b a"}, {"a", "a b"}, {"a^-1", "b"}, {"b", "a"},
        {"a b^-1", "b"},
    };
    snprintf(ia, size, "a");
    snprintf(ib, size, "b");
    int n = (int)rng_range(1, 4);
    for (int k = 0; k < n; k++) {
        /* new(x) = old(move(x)): substitute old images into the move */
        const char *const *mv = moves[rng_range(0, 6)];
        char na[1024], nb[1024];
        for (int g = 0; g < 2; g++) {
            char *out = g ? nb : na;
            size_t o = 0;
            out[0] = 0;
            for (const char *p = mv[g]; *p; p++) {
                if (*p == 'a' || *p == 'b')
                    o += (size_t)snprintf(out + o, sizeof na - o, "(%s)", *p == 'a' ? ia : ib);
                else if (o + 1 < sizeof na) {
                    out[o++] = *p;
                    out[o] = 0;
                }
                assert_true(o + 1 < sizeof na); /* words of 4 moves stay short */
            }
        }
        snprintf(ia, size, "%s", na);
        snprintf(ib, size, "%s", nb);
    }
}

/* Property: random maps on non-free groups, every layer above the first.
 *   <a, b, c | [a, b]>: a -> g a^i b^j g^-1, b -> g a^k b^l g^-1 (they
 *     commute), c -> any word;
 *   <a, b, c | [a, b]^6>: a, b by a random Nielsen automorphism, c -> any
 *     word (torsion in layer 2 and above);
 *   <a, b, c | c^4>: a, b -> any words, c -> a conjugate of c^(+-1) or
 *     c^2 (torsion in layer 1: V is the free part). */
static void lie_bound_holds_on_random_layers(void **state)
{
    (void)state;
    static const char *const letters[] = {"a", "b", "c"};
    static const char *const groups[] = {"<a, b, c | [a, b]>", "<a, b, c | [a, b]^6>",
                                         "<a, b, c | c^4>"};
    static const slong classes[] = {5, 4, 4};
    slong checked = 0, maxdim = 0;
    for (int g = 0; g < 3; g++) {
        analysis_t A;
        analysis_init(A);
        analysis_group_or_fail(A, groups[g], classes[g]);
        for (slong t = 0; t < iters(4); t++) {
            char map[4096], w1[256], w2[256], w3[256], ia[1024], ib[1024];
            random_word(w1, sizeof w1, letters, 3, 3);
            random_word(w3, sizeof w3, letters, 3, 4);
            if (g == 0) {
                long i = rng_range(-2, 2), j = rng_range(-2, 2), k = rng_range(-2, 2),
                     l = rng_range(-2, 2);
                snprintf(map, sizeof map,
                         "a -> (%s) a^%ld b^%ld (%s)^-1, b -> (%s) a^%ld b^%ld (%s)^-1, c -> %s",
                         w1, i, j, w1, w1, k, l, w1, w3);
            } else if (g == 1) {
                random_nielsen(ia, ib, sizeof ia);
                snprintf(map, sizeof map, "a -> %s, b -> %s, c -> %s", ia, ib, w3);
            } else {
                random_word(w2, sizeof w2, letters, 3, 3);
                static const char *const cs[] = {"c", "c^-1", "c^2"};
                snprintf(map, sizeof map, "a -> %s, b -> %s, c -> (%s) %s (%s)^-1", w1, w2,
                         w3, cs[rng_range(0, 2)], w3);
            }
            analysis_map_or_fail(A, map);
            char what[4200];
            snprintf(what, sizeof what, "%s class %ld, %s", groups[g], (long)classes[g], map);
            lie_check_struct c = {0, 0, 0, 0};
            check_lie_bound_layers(A, what, &c);
            checked += c.layers;
            maxdim = FLINT_MAX(maxdim, c.dim);
        }
        analysis_clear(A);
    }
    printf("# %ld layers checked, the largest of dimension %ld\n", (long)checked, (long)maxdim);
    assert_true(checked > 0);
}

/* Real layers: the surface group of genus 2 (relator [a1,b1][a2,b2]) to
 * class 5 under products of transvections a_i -> b_i a_i, b_i -> a_i b_i,
 * which keep each [a_i, b_i] (checked by hand: [b a, b] = [a, b] =
 * [a, a b]), and the handle swap. */
static void lie_bound_holds_on_surface_layers(void **state)
{
    (void)state;
    static const char *const maps[] = {
        "a1 -> b1 a1, b1 -> b1 a1 b1, a2 -> b2 a2, b2 -> b2 a2 b2",
        "a1 -> a2, b1 -> b2, a2 -> b1 a1, b2 -> b1",
        "a1 -> b1 a1, b1 -> b1, a2 -> a2, b2 -> a2 b2",
        "a1 -> a1, b1 -> b1, a2 -> a2, b2 -> b2",
    };
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "surface(2)", 5);
    for (int m = 0; m < 4; m++) {
        analysis_map_or_fail(A, maps[m]);
        char what[256];
        snprintf(what, sizeof what, "surface(2) class 5, %s", maps[m]);
        lie_check_struct c = {0, 0, 0, 0};
        check_lie_bound_layers(A, what, &c);
        assert_int_equal(c.layers, 4);
        printf("# %s: layer 5 (dimension %ld) takes %ld primes, the general bound %ld\n", what,
               (long)c.dim, (long)c.new_primes, (long)c.old_primes);
    }
    analysis_clear(A);
}

/* The named case where the general bound is far off: layer 6 of surface(2)
 * under a Dehn twist on each handle (a_i -> b_i a_i, b_i -> b_i a_i b_i;
 * layer-1 eigenvalues ((3 +- sqrt 5)/2 twice, so every root of L_6 is a
 * product of those).  The analysis must take its primes from the bound of
 * layer 1, at most half of what Hadamard's and Gershgorin's bounds on the
 * matrix ask for; the figures of the engine's own run are printed.  The
 * polynomial is checked by the 2-thread CRT against one from a single
 * thread with the general bound (a different set of primes). */
static void lie_bound_cuts_the_primes_of_surface_layer_6(void **state)
{
    (void)state;
    analysis_t A;
    nserr_t err;
    fmpz_poly_t a;
    analysis_init(A);
    nserr_init(err);
    fmpz_poly_init(a);
    analysis_group_or_fail(A, "surface(2)", 6);
    analysis_map_or_fail(A, "a1 -> b1 a1, b1 -> b1 a1 b1, a2 -> b2 a2, b2 -> b2 a2 b2");
    assert_int_equal(A->nlayers, 6);
    const fmpz_mat_struct *M = A->layers[5].matrix;
    const spectrum_struct *S = A->layers[5].spectrum;
    slong old = charpoly_num_primes(M), now = spectrum_charpoly_primes(S);
    printf("# surface(2) layer 6 (dimension %ld): %ld primes, the general bound %ld\n",
           (long)fmpz_mat_nrows(M), (long)now, (long)old);
    assert_true(now >= 1);
    assert_true(2 * now <= old);
    assert_int_equal(charpoly_compute(a, M, 1, NULL, err), NS_OK);
    assert_true(fmpz_poly_equal(a, spectrum_charpoly(S)));
    fmpz_poly_clear(a);
    nserr_clear(err);
    analysis_clear(A);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(agrees_with_flint_on_random_matrices),
        cmocka_unit_test(bound_is_sound_and_near_tight_for_the_identity),
        cmocka_unit_test(cancel_stops_with_cancelled),
        cmocka_unit_test(polls_inside_each_prime),
        cmocka_unit_test(non_square_is_an_input_error),
        cmocka_unit_test(witt_rank_matches_the_formula),
        cmocka_unit_test(free_lie_route_agrees_with_the_layer_matrices),
        cmocka_unit_test(free_lie_cancel_and_bad_input),
        cmocka_unit_test(lie_bound_hand_values),
        cmocka_unit_test(lie_bound_holds_on_random_layers),
        cmocka_unit_test(lie_bound_holds_on_surface_layers),
        cmocka_unit_test(lie_bound_cuts_the_primes_of_surface_layer_6),
    };
    return cmocka_run_group_tests(tests, setup, NULL);
}
