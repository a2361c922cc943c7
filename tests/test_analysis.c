/* test_analysis.c — the analysis of a map (analysis.h) checked against
 * published formulas and values computed here by other means.
 *
 *  - tori Z^n: Lefschetz number det(I - M) and Reidemeister number
 *    |det(I - M)| (infinite when 0), with det from FLINT on I - M;
 *  - free nilpotent groups: the trace of every layer matrix against
 *    Brandt's formula, the free ranks against Witt's formula;
 *  - the 3-dimensional Heisenberg group: the central layer is multiplied
 *    by det M1, so no automorphism is hyperbolic;
 *  - the R-infinity property of N(2,4) (Dekimpe and Goncalves 2014) and a
 *    finite Reidemeister number on N(2,3);
 *  - the growth rate in its four cases, and validity of maps.
 *
 * Matrices act on column vectors: column k of M_j holds the coordinates of
 * the image of basis element k (doc/design.md §2.1).  A map is built from a matrix
 * M as "x_k -> prod_i x_i^M[i][k]", so that M1 = M.
 *
 * Random tests print their seed; NILSTEP_SEED replays one, NILSTEP_ITER
 * multiplies the number of cases. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

#include <flint/flint.h>
#include <flint/fmpz.h>
#include <flint/fmpz_mat.h>
#include <flint/ulong_extras.h>

#include "analysis.h"
#include "strbuf.h"
#include "testutil.h"

/* ------------------------------------------------------------------------ */
/* Random numbers, seeds, iteration counts                                   */

static void seed(const char *test)
{
    rng_seed_test(test, 20261201ULL, "NILSTEP_SEED replays it");
}

/* ------------------------------------------------------------------------ */
/* Setting up groups and maps                                               */

static const char *gen_name(const analysis_t A, slong i)
{
    return A->nq->pres->gens->name[i];
}

/* Appends "x_0^M[0][k] x_1^M[1][k] ..." (zero exponents left out, "1" for
 * the zero column) to buf. */
static void append_column_word(char *buf, size_t cap, const analysis_t A, const fmpz_mat_t M,
                               slong k)
{
    int any = 0;
    for (slong i = 0; i < fmpz_mat_nrows(M); i++) {
        const fmpz *e = fmpz_mat_entry(M, i, k);
        if (fmpz_is_zero(e))
            continue;
        char *s = fmpz_get_str(NULL, 10, e);
        size_t len = strlen(buf);
        snprintf(buf + len, cap - len, "%s%s^%s", any ? " " : "", gen_name(A, i), s);
        flint_free(s);
        any = 1;
    }
    if (!any) {
        size_t len = strlen(buf);
        snprintf(buf + len, cap - len, "1");
    }
}

/* The map x_k -> (column k of M) tail[k]; tail may be NULL or hold NULLs. */
static void map_text_from_matrix(char *buf, size_t cap, const analysis_t A, const fmpz_mat_t M,
                                 const char *const *tail)
{
    buf[0] = '\0';
    for (slong k = 0; k < fmpz_mat_ncols(M); k++) {
        size_t len = strlen(buf);
        snprintf(buf + len, cap - len, "%s%s -> ", k ? ", " : "", gen_name(A, k));
        append_column_word(buf, cap, A, M, k);
        if (tail && tail[k]) {
            len = strlen(buf);
            snprintf(buf + len, cap - len, " %s", tail[k]);
        }
    }
    if (strlen(buf) + 1 >= cap)
        fail_msg("map text buffer too small");
}

static void random_matrix(fmpz_mat_t M, long lo, long hi)
{
    for (slong i = 0; i < fmpz_mat_nrows(M); i++)
        for (slong k = 0; k < fmpz_mat_ncols(M); k++)
            fmpz_set_si(fmpz_mat_entry(M, i, k), rng_range(lo, hi));
}

/* A random element of GL2(Z): a product of elementary matrices, with a
 * random sign change of one column (so det = +1 or -1). */
static void random_gl2(fmpz_mat_t M)
{
    fmpz_mat_one(M);
    fmpz_mat_t E, T;
    fmpz_mat_init(E, 2, 2);
    fmpz_mat_init(T, 2, 2);
    long steps = rng_range(1, 4);
    for (long s = 0; s < steps; s++) {
        fmpz_mat_one(E);
        long t = rng_range(1, 2) * (rng_range(0, 1) ? 1 : -1);
        fmpz_set_si(fmpz_mat_entry(E, s % 2, 1 - s % 2), t);
        fmpz_mat_mul(T, M, E);
        fmpz_mat_swap(T, M);
    }
    if (rng_range(0, 1)) {
        fmpz_neg(fmpz_mat_entry(M, 0, 1), fmpz_mat_entry(M, 0, 1));
        fmpz_neg(fmpz_mat_entry(M, 1, 1), fmpz_mat_entry(M, 1, 1));
    }
    fmpz_mat_clear(E);
    fmpz_mat_clear(T);
}

/* A random product of commutators of the generators (in gamma_2), or NULL
 * for none: tails that leave every layer matrix unchanged. */
static const char *random_tail(char *buf, size_t cap, const analysis_t A)
{
    slong X = A->nq->pres->gens->n;
    long parts = rng_range(0, 2);
    if (parts == 0)
        return NULL;
    buf[0] = '\0';
    for (long p = 0; p < parts; p++) {
        size_t len = strlen(buf);
        const char *x = gen_name(A, rng_range(0, X - 1)), *y = gen_name(A, rng_range(0, X - 1));
        if (rng_range(0, 1))
            snprintf(buf + len, cap - len, "%s[%s,%s]^%ld", p ? " " : "", x, y, rng_range(-2, 2));
        else
            snprintf(buf + len, cap - len, "%s[%s,%s,%s]", p ? " " : "", x, y,
                     gen_name(A, rng_range(0, X - 1)));
    }
    return buf;
}

static char *mat_str(const fmpz_mat_t M)
{
    static char buf[2048];
    buf[0] = '\0';
    for (slong i = 0; i < fmpz_mat_nrows(M); i++) {
        size_t len = strlen(buf);
        snprintf(buf + len, sizeof buf - len, "%s[", i ? " " : "");
        for (slong k = 0; k < fmpz_mat_ncols(M); k++) {
            char *s = fmpz_get_str(NULL, 10, fmpz_mat_entry(M, i, k));
            len = strlen(buf);
            snprintf(buf + len, sizeof buf - len, "%s%s", k ? " " : "", s);
            flint_free(s);
        }
        len = strlen(buf);
        snprintf(buf + len, sizeof buf - len, "]");
    }
    return buf;
}

/* det(I - M) by FLINT's determinant of the matrix I - M. */
static void det_one_minus(fmpz_t d, const fmpz_mat_t M)
{
    slong n = fmpz_mat_nrows(M);
    fmpz_mat_t T;
    fmpz_mat_init(T, n, n);
    fmpz_mat_one(T);
    fmpz_mat_sub(T, T, M);
    fmpz_mat_det(d, T);
    fmpz_mat_clear(T);
}

static void assert_fmpz_eq(const fmpz_t got, const fmpz_t want, const char *what, const char *map)
{
    if (!fmpz_equal(got, want)) {
        char *g = fmpz_get_str(NULL, 10, got), *w = fmpz_get_str(NULL, 10, want);
        fail_msg("%s: got %s, expected %s (map %s)", what, g, w, map);
    }
}

/* ------------------------------------------------------------------------ */
/* 1. Tori                                                                  */

/* For a map of the torus T^n = R^n / Z^n with matrix M on pi_1 = Z^n,
 * L(f) = det(I - M) (classical; e.g. R. F. Brown, The Lefschetz Fixed
 * Point Theorem, 1971 — from memory) and R(f) = |det(I - M)|, or infinity
 * when det(I - M) = 0 (the cokernel of I - M; classical, from memory).
 * The class-c quotient of Z^n is Z^n for every c: the series must stop
 * after layer 1. */
static void torus_lefschetz_and_reidemeister(void **state)
{
    (void)state;
    static const char *pres[] = {
        "<a | >",
        "<a, b | [a,b]>",
        "<a, b, c | [a,b], [a,c], [b,c]>",
        "<a, b, c, d | [a,b], [a,c], [a,d], [b,c], [b,d], [c,d]>",
    };
    seed("torus_lefschetz_and_reidemeister");
    long cases = count_scaled_by("NILSTEP_ITER", 40), infinite = 0, finite = 0;
    for (long t = 0; t < cases; t++) {
        slong n = rng_range(1, 4), c = rng_range(1, 3);
        analysis_t A;
        analysis_init(A);
        analysis_group_or_fail(A, pres[n - 1], c);
        assert_int_equal(A->nq->class_reached, 1);
        if (c > 1)
            assert_true(A->nq->stabilised);
        assert_int_equal(A->nq->hirsch_length, n);
        for (slong j = 2; j <= c; j++)
            assert_int_equal(A->layers[j - 1].layer->free_rank, 0);

        fmpz_mat_t M;
        fmpz_mat_init(M, n, n);
        /* small entries make det(I - M) = 0 frequent enough to test both */
        random_matrix(M, t % 2 ? -3 : -1, t % 2 ? 3 : 1);
        char map[1024];
        map_text_from_matrix(map, sizeof map, A, M, NULL);
        analysis_map_or_fail(A, map);
        assert_true(A->valid);
        assert_true(fmpz_mat_equal(A->layers[0].matrix, M));

        fmpz_t d, ad;
        fmpz_init(d);
        fmpz_init(ad);
        det_one_minus(d, M);
        fmpz_abs(ad, d);
        assert_true(A->lefschetz_defined);
        assert_fmpz_eq(A->lefschetz, d, "Lefschetz number", map);
        assert_fmpz_eq(A->nielsen, ad, "Nielsen number", map);
        if (fmpz_is_zero(d)) {
            infinite++;
            if (A->reid_kind != ANALYSIS_REID_INFINITE)
                fail_msg("Reidemeister number should be infinite (map %s)", map);
        } else {
            finite++;
            if (A->reid_kind != ANALYSIS_REID_FINITE)
                fail_msg("Reidemeister number should be finite (map %s)", map);
            assert_fmpz_eq(A->reidemeister, ad, "Reidemeister number", map);
        }
        fmpz_clear(d);
        fmpz_clear(ad);
        fmpz_mat_clear(M);
        analysis_clear(A);
    }
    printf("# %ld finite, %ld infinite Reidemeister numbers\n", finite, infinite);
    assert_true(finite > 0 && infinite > 0);
}

/* ------------------------------------------------------------------------ */
/* 2. Free nilpotent groups: Brandt's and Witt's formulas                     */

/* sum_{d | j} mu(d) f(d)^(j/d) / j, with f(d) given for d = 1..j. */
static void necklace_sum(fmpz_t out, const fmpz *f, ulong j)
{
    fmpz_t s, p;
    fmpz_init(s);
    fmpz_init(p);
    for (ulong d = 1; d <= j; d++) {
        if (j % d)
            continue;
        int mu = n_moebius_mu(d);
        if (!mu)
            continue;
        fmpz_pow_ui(p, f + d - 1, j / d);
        if (mu > 0)
            fmpz_add(s, s, p);
        else
            fmpz_sub(s, s, p);
    }
    if (!fmpz_divisible_si(s, (slong)j))
        fail_msg("necklace sum not divisible by %lu", j);
    fmpz_divexact_ui(out, s, j);
    fmpz_clear(s);
    fmpz_clear(p);
}

/* The induced map on the free Lie ring's degree-j part L_j, which is
 * gamma_j F / gamma_(j+1) F for the free group F (W. Magnus 1937; E. Witt,
 * "Treue Darstellung Liescher Ringe", J. reine angew. Math. 177, 1937),
 * has trace tr(A|L_j) = (1/j) sum_{d|j} mu(d) (tr A^d)^(j/d)
 * (A. Brandt, "The free Lie ring and Lie representations of the full
 * linear group", Trans. AMS 56, 1944).  At A = I it is Witt's dimension
 * formula (1/j) sum_{d|j} mu(d) r^(j/d). */
static void free_nilpotent_brandt_traces(void **state)
{
    (void)state;
    static const struct { const char *pres; slong r, c; long cases; } g[] = {
        {"free(2)", 2, 6, 12},
        {"free(3)", 3, 4, 8},
        {"<x, y, z, w | >", 4, 3, 4},
    };
    seed("free_nilpotent_brandt_traces");
    for (size_t gi = 0; gi < sizeof g / sizeof g[0]; gi++) {
        analysis_t A;
        analysis_init(A);
        analysis_group_or_fail(A, g[gi].pres, g[gi].c);
        slong r = g[gi].r, c = g[gi].c;
        fmpz *f = _fmpz_vec_init(c);
        fmpz_t want, got;
        fmpz_init(want);
        fmpz_init(got);
        /* Witt */
        for (slong d = 0; d < c; d++)
            fmpz_set_si(f + d, r);
        for (slong j = 1; j <= c; j++) {
            necklace_sum(want, f, (ulong)j);
            if (fmpz_get_si(want) != A->layers[j - 1].layer->free_rank || A->layers[j - 1].layer->ntors)
                fail_msg("%s layer %ld: free rank %ld (+%ld torsion), Witt's formula gives %ld",
                         g[gi].pres, (long)j, (long)A->layers[j - 1].layer->free_rank,
                         (long)A->layers[j - 1].layer->ntors, fmpz_get_si(want));
        }
        /* Brandt */
        fmpz_mat_t M, P;
        fmpz_mat_init(M, r, r);
        fmpz_mat_init(P, r, r);
        for (long t = 0; t < count_scaled_by("NILSTEP_ITER", g[gi].cases); t++) {
            random_matrix(M, -2, 2);
            const char *tail[4] = {NULL, NULL, NULL, NULL};
            char tb[4][128], map[1024];
            for (slong k = 0; k < r; k++)
                tail[k] = random_tail(tb[k], sizeof tb[k], A);
            map_text_from_matrix(map, sizeof map, A, M, tail);
            analysis_map_or_fail(A, map);
            assert_true(A->valid);
            assert_true(fmpz_mat_equal(A->layers[0].matrix, M));
            for (slong d = 1; d <= c; d++) {
                fmpz_mat_pow(P, M, (ulong)d);
                fmpz_mat_trace(f + d - 1, P);
            }
            for (slong j = 1; j <= c; j++) {
                necklace_sum(want, f, (ulong)j);
                fmpz_mat_trace(got, A->layers[j - 1].matrix);
                if (!fmpz_equal(got, want))
                    fail_msg("%s layer %ld: trace %ld, Brandt's formula gives %ld (map %s)",
                             g[gi].pres, (long)j, fmpz_get_si(got), fmpz_get_si(want), map);
                /* the charpoly's x^(r-1) coefficient is -trace */
                slong rk = A->layers[j - 1].layer->free_rank;
                fmpz_neg(got, A->layers[j - 1].charpoly + rk - 1);
                assert_fmpz_eq(got, want, "minus the subleading charpoly coefficient", map);
            }
        }
        fmpz_mat_clear(M);
        fmpz_mat_clear(P);
        fmpz_clear(want);
        fmpz_clear(got);
        _fmpz_vec_clear(f, c);
        analysis_clear(A);
    }
}

/* ------------------------------------------------------------------------ */
/* 3. The 3-dimensional Heisenberg group                                     */

/* In the Heisenberg group [x^p y^r, x^q y^s] = [x,y]^(ps - qr) modulo
 * nothing (the commutator is bilinear and alternating on the abelianised
 * group when the commutator subgroup is central): the central layer is
 * multiplied by det M1 (common practice; e.g. any text on nilmanifolds —
 * from memory).  Hence an automorphism (det = +-1) has the unimodular
 * eigenvalue +-1 on the centre and is never hyperbolic (Anosov). */
static void heisenberg_centre_times_det(void **state)
{
    (void)state;
    seed("heisenberg_centre_times_det");
    analysis_t A, H;
    analysis_init(A);
    analysis_init(H);
    analysis_group_or_fail(A, "<x, y | [x,y,x], [x,y,y]>", 3);
    assert_int_equal(A->nq->class_reached, 2);
    assert_true(A->nq->stabilised);
    assert_int_equal(A->layers[1].layer->free_rank, 1);
    analysis_group_or_fail(H, "heisenberg(1)", 2);
    assert_int_equal(H->layers[0].layer->free_rank, 2);
    assert_int_equal(H->layers[1].layer->free_rank, 1);

    fmpz_mat_t M;
    fmpz_t d;
    fmpz_mat_init(M, 2, 2);
    fmpz_init(d);
    char map[1024], w0[256], w1[256], hmap[1100];
    for (long t = 0; t < count_scaled_by("NILSTEP_ITER", 60); t++) {
        int aut = t % 2;
        if (aut)
            random_gl2(M);
        else
            random_matrix(M, -4, 4);
        fmpz_mat_det(d, M);
        map_text_from_matrix(map, sizeof map, A, M, NULL);
        analysis_map_or_fail(A, map);
        assert_true(A->valid);
        assert_int_equal(fmpz_mat_nrows(A->layers[1].matrix), 1);
        assert_fmpz_eq(fmpz_mat_entry(A->layers[1].matrix, 0, 0), d, "central layer", map);
        if (aut) {
            if (!A->automorphism || A->hyperbolic || A->layers[1].n_unimodular != 1)
                fail_msg("automorphism %s: automorphism %d, hyperbolic %d, unimodular on the "
                         "centre %ld (expected 1, 0, 1)",
                         map, A->automorphism, A->hyperbolic, (long)A->layers[1].n_unimodular);
        }

        /* the same on the built-in family, z -> [x1', y1'] */
        w0[0] = w1[0] = '\0';
        append_column_word(w0, sizeof w0, H, M, 0);
        append_column_word(w1, sizeof w1, H, M, 1);
        snprintf(hmap, sizeof hmap, "x1 -> %s, y1 -> %s, z -> [%s, %s]", w0, w1, w0, w1);
        analysis_map_or_fail(H, hmap);
        if (!H->valid)
            fail_msg("heisenberg(1): %s should be well defined", hmap);
        assert_fmpz_eq(fmpz_mat_entry(H->layers[1].matrix, 0, 0), d, "centre of heisenberg(1)",
                       hmap);
        if (aut && H->hyperbolic)
            fail_msg("heisenberg(1): automorphism %s reported hyperbolic", hmap);

        /* z -> z^k is well defined exactly when k = det M1 */
        long k = fmpz_get_si(d) + (t % 3 == 0 ? 0 : rng_range(1, 2));
        snprintf(hmap, sizeof hmap, "x1 -> %s, y1 -> %s, z -> z^%ld", w0, w1, k);
        analysis_map_or_fail(H, hmap);
        if (H->valid != (k == fmpz_get_si(d)))
            fail_msg("heisenberg(1): %s reported valid = %d, det M1 = %ld", hmap, H->valid,
                     fmpz_get_si(d));
    }
    fmpz_clear(d);
    fmpz_mat_clear(M);
    analysis_clear(A);
    analysis_clear(H);
}

/* ------------------------------------------------------------------------ */
/* 4. The R-infinity property                                                */

/* K. Dekimpe and D. Goncalves, "The R-infinity property for free groups,
 * free nilpotent groups and free solvable groups", Bull. LMS 46 (2014):
 * the free nilpotent group N(r,c) has R-infinity when c >= 2r; for r = 2
 * that is c >= 4, so every automorphism of N(2,4) has R = infinity. */
static void free_nilpotent_rank2_class4_r_infinity(void **state)
{
    (void)state;
    seed("free_nilpotent_rank2_class4_r_infinity");
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "free(2)", 4);
    fmpz_mat_t M;
    fmpz_mat_init(M, 2, 2);
    char map[1024], tb[2][128];
    for (long t = 0; t < count_scaled_by("NILSTEP_ITER", 40); t++) {
        random_gl2(M);
        const char *tail[2] = {random_tail(tb[0], sizeof tb[0], A),
                               random_tail(tb[1], sizeof tb[1], A)};
        map_text_from_matrix(map, sizeof map, A, M, tail);
        analysis_map_or_fail(A, map);
        assert_true(A->valid);
        if (!A->automorphism)
            fail_msg("%s (M1 %s) should be an automorphism", map, mat_str(M));
        if (A->reid_kind != ANALYSIS_REID_INFINITE)
            fail_msg("%s: Reidemeister number should be infinite on N(2,4)", map);
    }
    fmpz_mat_clear(M);
    analysis_clear(A);
}

/* On N(2,3) R can be finite.  The search runs over the matrices with
 * entries in [-2, 2] and det +-1 in a fixed order and takes the first with
 * finite R; its value must be |prod_j det(I - M_j)| computed here from the
 * layer matrices.  Our own cross-check (derived from L_2 = Lambda^2 V and
 * L_3 = V (x) Lambda^2 V for V = L_1 of rank 2, which follow from Witt's
 * dimensions and Brandt's characters): R is finite exactly when det M1 =
 * -1 and tr M1 = t != 0, and then R = |(-t) * 2 * t| = 2 t^2. */
static void free_nilpotent_rank2_class3_finite_reidemeister(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "free(2)", 3);
    fmpz_mat_t M;
    fmpz_mat_init(M, 2, 2);
    fmpz_t d, tr, prod, dj;
    fmpz_init(d);
    fmpz_init(tr);
    fmpz_init(prod);
    fmpz_init(dj);
    char map[1024];
    long found = 0, checked = 0;
    for (long e = 0; e < 625; e++) {
        long v = e;
        for (int i = 0; i < 4; i++) {
            fmpz_set_si(fmpz_mat_entry(M, i / 2, i % 2), v % 5 - 2);
            v /= 5;
        }
        fmpz_mat_det(d, M);
        if (!fmpz_is_pm1(d))
            continue;
        fmpz_mat_trace(tr, M);
        map_text_from_matrix(map, sizeof map, A, M, NULL);
        analysis_map_or_fail(A, map);
        assert_true(A->valid && A->automorphism);
        checked++;
        int predicted_finite = fmpz_equal_si(d, -1) && !fmpz_is_zero(tr);
        if (predicted_finite != (A->reid_kind == ANALYSIS_REID_FINITE))
            fail_msg("%s (det %ld, trace %ld): Reidemeister %s, expected %s", map,
                     fmpz_get_si(d), fmpz_get_si(tr),
                     A->reid_kind == ANALYSIS_REID_FINITE ? "finite" : "not finite",
                     predicted_finite ? "finite" : "infinite");
        if (!predicted_finite)
            continue;
        fmpz_one(prod);
        for (slong j = 0; j < 3; j++) {
            det_one_minus(dj, A->layers[j].matrix);
            fmpz_mul(prod, prod, dj);
        }
        fmpz_abs(prod, prod);
        assert_fmpz_eq(A->reidemeister, prod, "R on N(2,3) vs |prod det(I - M_j)|", map);
        fmpz_mul(dj, tr, tr);
        fmpz_mul_ui(dj, dj, 2);
        assert_fmpz_eq(A->reidemeister, dj, "R on N(2,3) vs 2 tr^2", map);
        if (!found++) {
            char *s = fmpz_get_str(NULL, 10, A->reidemeister);
            printf("# first automorphism of N(2,3) with finite R: %s (M1 %s), R = %s\n", map,
                   mat_str(M), s);
            flint_free(s);
        }
    }
    printf("# %ld automorphisms of N(2,3) checked, %ld with finite R\n", checked, found);
    assert_true(found > 0);
    fmpz_clear(d);
    fmpz_clear(tr);
    fmpz_clear(prod);
    fmpz_clear(dj);
    fmpz_mat_clear(M);
    analysis_clear(A);
}

/* The example named in the report: a -> a b, b -> a has M1 = [[1,1],[1,0]],
 * det -1, trace 1, so R = 2 by the count above; by hand: det(I - M1) = -1,
 * M2 = (-1) with det(I - M2) = 2, M3 with eigenvalues -phi, 1/phi and
 * det(I - M3) = (1 + phi)(1 - 1/phi) = 1. */
static void free_nilpotent_rank2_class3_example(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "free(2)", 3);
    analysis_map_or_fail(A, "a -> a b, b -> a");
    assert_true(A->valid && A->automorphism);
    assert_int_equal(fmpz_get_si(A->layers[0].det_i_minus), -1);
    assert_int_equal(fmpz_get_si(A->layers[1].det_i_minus), 2);
    assert_int_equal(fmpz_get_si(A->layers[2].det_i_minus), 1);
    assert_int_equal(A->reid_kind, ANALYSIS_REID_FINITE);
    assert_int_equal(fmpz_get_si(A->reidemeister), 2);
    assert_int_equal(fmpz_get_si(A->lefschetz), -2);
    analysis_clear(A);
}

/* ------------------------------------------------------------------------ */
/* 5. Growth rate                                                            */

/* GR = rho_1 whenever rho_1 >= 1 (T. Koberda, Contemp. Math. 590, 2013;
 * A. Fel'shtyn, J. H. Jo and J. B. Lee, arXiv:1411.6360, 2014), and
 * rho_j^(1/j) <= rho_1 because every eigenvalue on layer j is a product of
 * j eigenvalues on layer 1 (layer j is a quotient of L1 (x) ... (x) L1), so
 * the lower bound is attained on layer 1.  Every map of the generators is
 * well defined on these quotients: free nilpotent groups, the Heisenberg
 * group (free nilpotent of class 2), Z^3, and a group whose relator lies
 * in gamma_3, taken at class 2. */
static void growth_rate_is_rho1(void **state)
{
    (void)state;
    static const struct { const char *pres; slong r, c; } g[] = {
        {"free(2)", 2, 4},
        {"free(3)", 3, 3},
        {"<x, y | [x,y,x], [x,y,y]>", 2, 3},
        {"<a, b, c | [a,b], [a,c], [b,c]>", 3, 2},
        {"<a, b, c, d | [a,b,c]>", 4, 2},
    };
    seed("growth_rate_is_rho1");
    long checked = 0;
    for (size_t gi = 0; gi < sizeof g / sizeof g[0]; gi++) {
        analysis_t A;
        analysis_init(A);
        analysis_group_or_fail(A, g[gi].pres, g[gi].c);
        fmpz_mat_t M;
        fmpz_mat_init(M, g[gi].r, g[gi].r);
        char map[1024];
        for (long t = 0; t < count_scaled_by("NILSTEP_ITER", 10); t++) {
            random_matrix(M, -2, 2);
            map_text_from_matrix(map, sizeof map, A, M, NULL);
            analysis_map_or_fail(A, map);
            if (!A->valid)
                fail_msg("%s: %s should be well defined", g[gi].pres, map);
            if (spectrum_radius_cmp_one(A->layers[0].spectrum) < 0)
                continue;
            checked++;
            if (strcmp(A->growth_str, A->layers[0].rho_str))
                fail_msg("%s, %s: growth rate %s, rho_1 %s", g[gi].pres, map, A->growth_str,
                         A->layers[0].rho_str);
            if (A->lower_layer != 1)
                fail_msg("%s, %s: lower bound attained on layer %ld, expected layer 1",
                         g[gi].pres, map, (long)A->lower_layer);
        }
        fmpz_mat_clear(M);
        analysis_clear(A);
    }
    printf("# %ld maps with rho_1 >= 1 checked\n", checked);
    assert_true(checked >= 20);
}

/* a -> b, b -> 1 on N(2,3): alpha^2 kills both generators, hence every
 * element; the growth rate is 0. */
static void growth_rate_nilpotent_map(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "free(2)", 3);
    analysis_map_or_fail(A, "a -> b, b -> 1");
    assert_true(A->valid);
    assert_string_equal(A->layers[0].rho_str, "0");
    assert_string_equal(A->growth_str, "0");
    /* check the premise: alpha != 1 but alpha^2 = 1 on the generators */
    endo_t P;
    nserr_t err;
    endo_init(P);
    nserr_init(err);
    slong n = A->nq->pcp->n;
    assert_false(_fmpz_vec_is_zero(A->endo->gen_img, 2 * n));
    assert_int_equal(endo_pow(P, A->endo, 2, A->nq, NULL, err), NS_OK);
    assert_true(_fmpz_vec_is_zero(P->gen_img, 2 * n));
    endo_clear(P);
    nserr_clear(err);
    analysis_clear(A);
}

/* a -> a b, b -> b is unipotent (M1 = [[1,0],[1,1]]): alpha^n(a) = a b^n
 * has length n + 1, so the growth rate is 1. */
static void growth_rate_unipotent_map(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "free(2)", 4);
    analysis_map_or_fail(A, "a -> a b, b -> b");
    assert_true(A->valid);
    assert_string_equal(A->layers[0].rho_str, "1");
    assert_string_equal(A->growth_str, "1");
    assert_string_equal(A->upper_bound_str, "1");
    analysis_clear(A);
}

/* G = <a, t | t^2, [a,t]> = Z x Z/2.  The map a -> t, t -> t respects both
 * relators (t^2 -> t^2 = 1, [a,t] -> [t,t] = 1).  On the free part Z of the
 * abelianisation it is 0 (a goes to torsion), so rho_1 = 0; but alpha^n(t)
 * = t for all n, a nontrivial element of length 1, so the word lengths of
 * the iterates neither grow nor die out: the growth rate is 1.  With
 * t -> 1 instead, alpha^2 = 1 and the growth rate is 0. */
static void growth_rate_torsion_keeps_it_one(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "<a, t | t^2, [a,t]>", 2);
    assert_int_equal(A->layers[0].layer->free_rank, 1);
    assert_int_equal(A->layers[0].layer->ntors, 1);
    analysis_map_or_fail(A, "a -> t, t -> t");
    assert_true(A->valid);
    assert_string_equal(A->layers[0].rho_str, "0");
    assert_string_equal(A->growth_str, "1");
    /* Torsion no longer leaves the invariants undefined.  By hand: Gc is the
     * abelian group Z + Z/2 and R(alpha) = |coker(1 - alpha)|; 1 - alpha
     * sends a to a - t and t to 0, whose span <(1,1)> has index 2, so R = 2;
     * L = det(1 - 0) = 1 on Gc/T = Z. */
    assert_null(A->undefined_reason);
    assert_int_equal(A->reid_kind, ANALYSIS_REID_FINITE);
    assert_int_equal(fmpz_get_si(A->reidemeister), 2);
    assert_int_equal(fmpz_get_si(A->lefschetz), 1);
    analysis_map_or_fail(A, "a -> t, t -> 1");
    assert_true(A->valid);
    assert_string_equal(A->layers[0].rho_str, "0");
    assert_string_equal(A->growth_str, "0");
    /* 1 - alpha: a -> a - t, t -> t spans everything: R = 1 */
    assert_int_equal(A->reid_kind, ANALYSIS_REID_FINITE);
    assert_int_equal(fmpz_get_si(A->reidemeister), 1);
    analysis_clear(A);
}

/* ------------------------------------------------------------------------ */
/* 6. Validity                                                               */

/* G = <a, b | [a,b,a]>: the relator lies in gamma_3 of the free group, so
 * every map is an endomorphism of the class-2 quotient N(2,2).  The swap
 * a <-> b sends the relator to [b,a,b], which is not trivial in G/gamma_4
 * (layer 3 of N(2,3) has basis [b,a,a], [b,a,b] and the relator kills only
 * [a,b,a] = [b,a,a]^-1 there), so it fails at class 3. */
static void validity_relator_in_gamma3(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "<a, b | [a,b,a]>", 2);
    analysis_map_or_fail(A, "a -> b, b -> a");
    assert_true(A->valid);
    assert_int_equal(A->nfail, 0);

    analysis_group_or_fail(A, "<a, b | [a,b,a]>", 3);
    assert_int_equal(A->layers[2].layer->free_rank, 1);
    analysis_map_or_fail(A, "a -> b, b -> a");
    assert_false(A->valid);
    assert_int_equal(A->nfail, 1);
    assert_string_equal(A->fail_relator[0], "[a,b,a]");
    /* the image [[b,a],b] is the pc generator labelled [b,a,b] itself */
    printf("# failing relator %s -> %s\n", A->fail_relator[0], A->fail_image[0]);
    assert_string_equal(A->fail_image[0], "[b,a,b]");
    /* the relator lies in gamma_3 and its image [b,a,b] is a weight-3 pc
     * generator: the map is fine on the class-2 quotient (checked above)
     * and fails from class 3 on; a relator has the sides w and 1 and
     * defines no generator */
    assert_int_equal(A->failures[0].lowest_class, 3);
    assert_string_equal(A->failures[0].lhs, "[a,b,a]");
    assert_string_equal(A->failures[0].lhs_word, "[b,a,b]");
    assert_string_equal(A->failures[0].rhs, "1");
    assert_string_equal(A->failures[0].rhs_image, "1");
    assert_int_equal(A->failures[0].forced_gen, -1);
    assert_null(A->failures[0].forced_image);

    /* an endomorphism of G itself stays valid: a -> a^2, b -> b^3 maps
     * [a,b,a] to [a^2,b^3,a^2], a power of [a,b,a] modulo gamma_4 */
    analysis_map_or_fail(A, "a -> a^2, b -> b^3");
    assert_true(A->valid);
    analysis_clear(A);
}

/* G = <a, b | a^2> = Z/2 * Z: a -> b sends a^2 to b^2, which is not
 * trivial already in the abelianisation Z/2 + Z. */
static void validity_fails_in_abelianisation(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "<a, b | a^2>", 1);
    analysis_map_or_fail(A, "a -> b, b -> a");
    assert_false(A->valid);
    assert_int_equal(A->nfail, 1);
    assert_string_equal(A->fail_relator[0], "a^2");
    assert_string_equal(A->fail_image[0], "b^2");
    assert_int_equal(A->failures[0].lowest_class, 1);
    analysis_map_or_fail(A, "a -> a, b -> a b^-1");
    assert_true(A->valid);
    analysis_clear(A);
}

/* The Heisenberg group <x, y, z | z = [x,y], [x,z], [y,z]> with z's image
 * left alone while x -> x^2, y -> y^3.  By hand: z is central, so
 * [x^a, y^b] = [x,y]^(ab) and alpha([x,y]) = [x^2,y^3] = z^6, while
 * alpha(z) = z: the relation fails on the class-2 quotient and holds on
 * the abelianisation (both sides have exponent sums 0), and it forces
 * z -> [x^2,y^3], i.e. z^6.  Setting either makes the map well defined. */
static void failure_forced_image_heisenberg(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "<x, y, z | z = [x,y], [x,z], [y,z]>", 2);
    analysis_map_or_fail(A, "x -> x^2, y -> y^3, z -> z");
    assert_false(A->valid);
    assert_int_equal(A->nfail, 1);
    const analysis_failure_struct *f = A->failures;
    assert_int_equal(f->relation, 0);
    assert_int_equal(f->lowest_class, 2);
    assert_string_equal(f->lhs, "z");
    assert_string_equal(f->rhs, "[x,y]");
    assert_string_equal(f->lhs_word, "z");
    assert_string_equal(f->rhs_word, "[x^2,y^3]");
    assert_int_equal(f->forced_gen, 2);
    assert_string_equal(f->forced_image, "[x^2,y^3]");
    /* the normal words: alpha(rhs) is the sixth power of alpha(lhs) = z,
     * whatever the sign of the label (z = [x,y] and the pc label is one
     * of [x,y], [y,x]) */
    printf("# alpha(z) = %s, alpha([x,y]) = %s\n", f->lhs_image, f->rhs_image);
    char want[64];
    snprintf(want, sizeof want, "%s^6", f->lhs_image);
    if (strchr(f->lhs_image, '^') == NULL)
        assert_string_equal(f->rhs_image, want);
    else
        assert_true(strcmp(f->lhs_image, "[y,x]^-1") == 0 && strcmp(f->rhs_image, "[y,x]^-6") == 0);
    analysis_map_or_fail(A, "x -> x^2, y -> y^3, z -> [x^2,y^3]");
    assert_true(A->valid);
    analysis_map_or_fail(A, "x -> x^2, y -> y^3, z -> z^6");
    assert_true(A->valid);
    /* the relation written the other way round forces the same image */
    analysis_group_or_fail(A, "<x, y, z | [x,y] = z, [x,z], [y,z]>", 2);
    analysis_map_or_fail(A, "x -> x^2, y -> y^3, z -> z");
    assert_int_equal(A->failures[0].forced_gen, 2);
    assert_string_equal(A->failures[0].forced_image, "[x^2,y^3]");
    /* the commutator written out as letters (one run of syllables in the
     * parsed tree): each letter is replaced by its image, by hand
     * alpha(x^-1 y^-1 x y) = (x^2)^-1 (y^3)^-1 x^2 y^3 */
    analysis_group_or_fail(A, "<x, y, z | z = x^-1 y^-1 x y, [x,z], [y,z]>", 2);
    analysis_map_or_fail(A, "x -> x^2, y -> y^3, z -> z");
    assert_false(A->valid);
    assert_int_equal(A->failures[0].forced_gen, 2);
    assert_string_equal(A->failures[0].rhs_word, "(x^2)^-1 (y^3)^-1 x^2 y^3");
    char *forced = strbuf_dup_str(A->failures[0].forced_image);
    char map[128];
    snprintf(map, sizeof map, "x -> x^2, y -> y^3, z -> %s", forced);
    flint_free(forced);
    analysis_map_or_fail(A, map);
    assert_true(A->valid);
    /* a generator inside a run on the other side: not defined by it */
    analysis_group_or_fail(A, "<x, y, z | z = x z y x^-1, [x,z], [y,z]>", 2);
    analysis_map_or_fail(A, "x -> x^2, y -> y^3, z -> z");
    if (!A->valid)
        assert_int_equal(A->failures[0].forced_gen, -1);
    /* z occurs on both sides: no generator is defined by the relation */
    analysis_group_or_fail(A, "<x, y, z | z = [x,y] z^2, [x,z], [y,z]>", 2);
    analysis_map_or_fail(A, "x -> x^2, y -> y^3, z -> z");
    if (!A->valid)
        assert_int_equal(A->failures[0].forced_gen, -1);
    analysis_clear(A);
}

/* ------------------------------------------------------------------------ */
/* Maps given as values (analysis_set_map_endo)                             */

/* M_j(alpha^k) = M_j(alpha)^k, M_j(beta o alpha) = M_j(beta) M_j(alpha) and
 * M_j(alpha^-1) M_j(alpha) = I on every layer of N(2,4): the layer matrices
 * of a free nilpotent group are functorial (each layer is torsion-free and
 * the matrix is the action on it), so FLINT's fmpz_mat_pow / fmpz_mat_mul
 * of the matrices of alpha and beta, read from maps given as text, check
 * the power, composite and inverse computed on the group.  Also: map_str
 * of a map given as a value parses back to itself, and analysing that text
 * gives the same images and matrices (so reports show the map as before). */
static void layer_matrices_equal(const analysis_t A, const fmpz_mat_struct *want, const char *what)
{
    for (slong j = 0; j < A->nlayers; j++)
        if (!fmpz_mat_equal(A->layers[j].matrix, want + j)) {
            char got[2048];
            snprintf(got, sizeof got, "%s", mat_str(A->layers[j].matrix));
            fail_msg("%s: layer %ld matrix %s, want %s", what, (long)j + 1, got,
                     mat_str(want + j));
        }
}

static void save_matrices(fmpz_mat_struct *M, const analysis_t A)
{
    for (slong j = 0; j < A->nlayers; j++) {
        fmpz_mat_init_set(M + j, A->layers[j].matrix);
    }
}

static void clear_matrices(fmpz_mat_struct *M, slong n)
{
    for (slong j = 0; j < n; j++)
        fmpz_mat_clear(M + j);
}

static void map_value_round_trip(analysis_t A, const char *what)
{
    slong X = A->nq->pres->gens->n, c = A->nlayers;
    char *text = strbuf_dup_str(A->map_str);
    char **img = flint_malloc(X * sizeof(char *));
    for (slong x = 0; x < X; x++)
        img[x] = strbuf_dup_str(A->gen_image_str[x]);
    /* map_str is "a -> w_a, b -> w_b" with the words of gen_image_str */
    char want[4096] = "";
    for (slong x = 0; x < X; x++) {
        size_t len = strlen(want);
        snprintf(want + len, sizeof want - len, "%s%s -> %s", x ? ", " : "", gen_name(A, x),
                 img[x]);
    }
    assert_string_equal(A->map_str, want);
    fmpz_mat_struct *M = flint_malloc(c * sizeof(fmpz_mat_struct));
    save_matrices(M, A);
    analysis_map_or_fail(A, text);
    if (strcmp(A->map_str, text) != 0)
        fail_msg("%s: %s prints back as %s", what, text, A->map_str);
    for (slong x = 0; x < X; x++)
        assert_string_equal(A->gen_image_str[x], img[x]);
    layer_matrices_equal(A, M, what);
    clear_matrices(M, c);
    flint_free(M);
    for (slong x = 0; x < X; x++)
        flint_free(img[x]);
    flint_free(img);
    flint_free(text);
}

static void maps_given_as_values(void **state)
{
    (void)state;
    seed("maps_given_as_values");
    const slong c = 4;
    analysis_t A;
    nserr_t err;
    analysis_init(A);
    nserr_init(err);
    analysis_group_or_fail(A, "free(2)", c);
    fmpz_mat_struct *Ma = flint_malloc(c * sizeof(fmpz_mat_struct));
    fmpz_mat_struct *Mb = flint_malloc(c * sizeof(fmpz_mat_struct));
    fmpz_mat_struct *W = flint_malloc(c * sizeof(fmpz_mat_struct));
    long cases = iters(6);
    for (long t = 0; t < cases; t++) {
        char alpha[1024], beta[1024], tail[2][256];
        fmpz_mat_t M1;
        fmpz_mat_init(M1, 2, 2);
        random_gl2(M1);
        const char *tl[2] = {random_tail(tail[0], sizeof tail[0], A),
                             random_tail(tail[1], sizeof tail[1], A)};
        map_text_from_matrix(alpha, sizeof alpha, A, M1, tl);
        random_matrix(M1, -2, 2);
        map_text_from_matrix(beta, sizeof beta, A, M1, NULL);
        fmpz_mat_clear(M1);
        printf("# alpha: %s; beta: %s\n", alpha, beta);

        analysis_map_or_fail(A, beta);
        save_matrices(Mb, A);
        analysis_map_or_fail(A, alpha);
        assert_true(A->valid && A->automorphism);
        save_matrices(Ma, A);
        for (slong j = 0; j < c; j++)
            fmpz_mat_init(W + j, fmpz_mat_nrows(Ma + j), fmpz_mat_ncols(Ma + j));

        /* powers 0..3 */
        for (ulong k = 0; k <= 3; k++) {
            analysis_map_or_fail(A, alpha);
            endo_t E;
            endo_init(E);
            if (analysis_power_endo(E, A, k, NULL, err) != NS_OK ||
                analysis_set_map_endo(A, E, NULL, err) != NS_OK)
                fail_msg("alpha^%lu: %s", (unsigned long)k, err->msg);
            assert_null(E->gen_img); /* moved into the analysis */
            endo_clear(E);
            for (slong j = 0; j < c; j++)
                fmpz_mat_pow(W + j, Ma + j, k);
            layer_matrices_equal(A, W, "alpha^k");
            map_value_round_trip(A, "alpha^k");
        }
        /* beta o alpha */
        analysis_map_or_fail(A, alpha);
        {
            expr_struct im[2];
            expr_init(im + 0);
            expr_init(im + 1);
            if (pres_parse_map(im, A->nq->pres, beta, 1, 1, err) != NS_OK)
                fail_msg("%s: %s", beta, err->msg);
            endo_t E;
            endo_init(E);
            if (analysis_compose_endo(E, A, im, NULL, err) != NS_OK ||
                analysis_set_map_endo(A, E, NULL, err) != NS_OK)
                fail_msg("beta o alpha: %s", err->msg);
            endo_clear(E);
            expr_clear(im + 0);
            expr_clear(im + 1);
            for (slong j = 0; j < c; j++)
                fmpz_mat_mul(W + j, Mb + j, Ma + j);
            layer_matrices_equal(A, W, "beta o alpha");
            map_value_round_trip(A, "beta o alpha");
        }
        /* alpha^-1 */
        analysis_map_or_fail(A, alpha);
        {
            endo_t E;
            endo_init(E);
            if (analysis_inverse_endo(E, A, NULL, err) != NS_OK ||
                analysis_set_map_endo(A, E, NULL, err) != NS_OK)
                fail_msg("alpha^-1: %s", err->msg);
            endo_clear(E);
            for (slong j = 0; j < c; j++)
                fmpz_mat_mul(W + j, A->layers[j].matrix, Ma + j);
            map_value_round_trip(A, "alpha^-1");
            for (slong j = 0; j < c; j++)
                if (!fmpz_mat_is_one(W + j))
                    fail_msg("alpha^-1 alpha is not the identity on layer %ld", (long)j + 1);
        }
        clear_matrices(Ma, c);
        clear_matrices(Mb, c);
        clear_matrices(W, c);
    }
    /* a derived map needs a valid map; a map of another quotient is refused */
    analysis_map_or_fail(A, "a -> a, b -> b");
    endo_t E, F;
    endo_init(E);
    endo_init(F);
    assert_int_equal(analysis_power_endo(E, A, 2, NULL, err), NS_OK);
    analysis_t B;
    analysis_init(B);
    analysis_group_or_fail(B, "free(3)", 2);
    /* handing a map to the wrong analysis is a bug of the caller */
    assert_int_equal(analysis_set_map_endo(B, E, NULL, err), NS_ERR_INTERNAL);
    assert_false(B->has_map);
    assert_int_equal(analysis_set_map_endo(A, A->endo, NULL, err), NS_ERR_INTERNAL);
    analysis_group_or_fail(A, "<a, b | a^2>", 1);
    analysis_map_or_fail(A, "a -> b, b -> a");
    assert_false(A->valid);
    assert_int_equal(analysis_power_endo(F, A, 2, NULL, err), NS_ERR_INPUT);
    assert_null(F->gen_img);
    endo_clear(E);
    endo_clear(F);
    analysis_clear(B);
    flint_free(Ma);
    flint_free(Mb);
    flint_free(W);
    nserr_clear(err);
    analysis_clear(A);
}

/* On a free group the analysis takes each layer's characteristic polynomial
 * from layer 1 by Brandt's formula (src/charpoly.h); it must be that of the
 * layer matrix it shows, by FLINT's fmpz_mat_charpoly (independent), also
 * after a power and for a map that is singular on layer 1. */
static void free_group_charpolys_are_those_of_the_matrices(void **state)
{
    (void)state;
    static const char *maps[] = {"a -> a^2 b, b -> a b c, c -> b c",
                                 "a -> a b^2, b -> a b^2, c -> c [a,b]", "a -> b, b -> c, c -> a"};
    for (int m = 0; m < 3; m++) {
        analysis_t A;
        analysis_init(A);
        analysis_group_or_fail(A, "<a, b, c | >", 5);
        analysis_map_or_fail(A, maps[m]);
        fmpz_poly_t cp;
        fmpz_poly_init(cp);
        for (slong j = 0; j < A->nlayers; j++) {
            const analysis_layer_struct *L = A->layers + j;
            slong d = fmpz_mat_nrows(L->matrix);
            fmpz_poly_zero(cp);
            fmpz_mat_charpoly(cp, L->matrix);
            assert_int_equal(fmpz_poly_degree(cp), d);
            for (slong k = 0; k <= d; k++)
                if (!fmpz_equal(L->charpoly + k, fmpz_poly_get_coeff_ptr(cp, k)))
                    fail_msg("map %d, layer %ld: coefficient %ld differs", m, (long)(j + 1),
                             (long)k);
        }
        fmpz_poly_clear(cp);
        analysis_clear(A);
    }
}

/* Records the stages named and stops at the first one equal to ctx->stop. */
typedef struct {
    char seen[4096];
    const char *stop;
} stage_log;

static int log_stages(void *ctx, const char *stage, double f)
{
    stage_log *l = ctx;
    (void)f;
    if (stage == NULL)
        return 0;
    size_t n = strlen(l->seen);
    snprintf(l->seen + n, sizeof l->seen - n, "%s|", stage);
    return l->stop != NULL && strcmp(stage, l->stop) == 0;
}

/* On a presentation without relators, layers 2..c take Brandt's formula
 * (charpoly.h) and once went through factorisation, root isolation and the
 * radius without a word to the hook.  Every layer names the same phases as
 * the general route, and a stop at any of them cancels the analysis.  The
 * phase names are the engine's own (spectrum.h). */
static void free_group_spectra_are_named_and_stoppable(void **state)
{
    (void)state;
    static const char *const phases[] = {"charpoly", "factors", "roots", "radius"};
    const char *map = "a -> a^2 b, b -> a b c, c -> b c";
    analysis_t A;
    nserr_t err;
    stage_log l = {"", NULL};
    ns_progress_t p = {log_stages, &l};
    analysis_init(A);
    nserr_init(err);
    analysis_group_or_fail(A, "<a, b, c | >", 5);
    assert_int_equal(analysis_set_map_text(A, map, 1, 1, &p, err), NS_OK);
    assert_int_equal(A->nlayers, 5);
    for (slong j = 1; j <= 5; j++)
        for (int k = 0; k < 4; k++) {
            char want[96];
            snprintf(want, sizeof want, "spectra: layer %ld of 5 (%s)|", (long)j, phases[k]);
            if (strstr(l.seen, want) == NULL)
                fail_msg("stage '%s' not named; seen: %s", want, l.seen);
        }
    for (int k = 0; k < 4; k++) {
        char stop[96];
        snprintf(stop, sizeof stop, "spectra: layer 4 of 5 (%s)", phases[k]);
        l.seen[0] = '\0';
        l.stop = stop;
        assert_int_equal(analysis_set_map_text(A, map, 1, 1, &p, err), NS_ERR_CANCELLED);
        if (strstr(l.seen, stop) == NULL)
            fail_msg("stop at '%s' not reached; seen: %s", stop, l.seen);
    }
    nserr_clear(err);
    analysis_clear(A);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(torus_lefschetz_and_reidemeister),
        cmocka_unit_test(free_nilpotent_brandt_traces),
        cmocka_unit_test(heisenberg_centre_times_det),
        cmocka_unit_test(free_nilpotent_rank2_class4_r_infinity),
        cmocka_unit_test(free_nilpotent_rank2_class3_finite_reidemeister),
        cmocka_unit_test(free_nilpotent_rank2_class3_example),
        cmocka_unit_test(growth_rate_is_rho1),
        cmocka_unit_test(growth_rate_nilpotent_map),
        cmocka_unit_test(growth_rate_unipotent_map),
        cmocka_unit_test(growth_rate_torsion_keeps_it_one),
        cmocka_unit_test(validity_relator_in_gamma3),
        cmocka_unit_test(validity_fails_in_abelianisation),
        cmocka_unit_test(failure_forced_image_heisenberg),
        cmocka_unit_test(maps_given_as_values),
        cmocka_unit_test(free_group_charpolys_are_those_of_the_matrices),
        cmocka_unit_test(free_group_spectra_are_named_and_stoppable),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
