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

#include <flint/fmpz_vec.h>

#include "charpoly.h"
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
    };
    return cmocka_run_group_tests(tests, setup, NULL);
}
