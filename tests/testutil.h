/* testutil.h — helpers shared by the C unit tests.
 *
 * Every tests/test_*.c is a program of its own, so everything here is
 * static inline: a file uses what it needs and the rest costs nothing.
 * Include it after <cmocka.h>.
 *
 *  - random numbers: splitmix64 (S. Vigna's public-domain generator), seeded
 *    from NILSTEP_SEED so that a failing run can be replayed; two ways of
 *    scaling iteration counts from the environment;
 *  - presentations and nilpotent quotients that must parse and compute,
 *    failing the test with the engine's message otherwise;
 *  - the value of a word in a group of integer matrices, for checks that do
 *    not go through the engine's own arithmetic. */
#ifndef NILSTEP_TESTUTIL_H
#define NILSTEP_TESTUTIL_H

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

#include <flint/flint.h>
#include <flint/fmpz.h>
#include <flint/fmpz_mat.h>

#include "analysis.h"
#include "nq.h"

/* ------------------------------------------------------------------------ */
/* Random numbers and iteration counts                                       */

/* The generator's state (a function, so that files without random tests
 * carry no unused variable). */
static inline uint64_t *rng_state(void)
{
    static uint64_t state;
    return &state;
}

static inline uint64_t rng_next(void)
{
    uint64_t z = (*rng_state() += 0x9E3779B97F4A7C15ULL);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
    return z ^ (z >> 31);
}

/* Uniform in [lo, hi], for small ranges. */
static inline long rng_range(long lo, long hi)
{
    return lo + (long)(rng_next() % (uint64_t)(hi - lo + 1));
}

/* Seeds the generator at the start of one test from NILSTEP_SEED (any base
 * strtoull reads), or from fallback when it is unset, and prints
 * "# test: seed N (note)". */
static inline void rng_seed_test(const char *test, uint64_t fallback, const char *note)
{
    const char *e = getenv("NILSTEP_SEED");
    *rng_state() = e ? strtoull(e, NULL, 0) : fallback;
    printf("# %s: seed %llu (%s)\n", test, (unsigned long long)*rng_state(), note);
}

/* NILSTEP_ITER has one meaning in every test: a scale factor for the
 * iteration counts.  The scale is the positive number in var (fractions
 * allowed); unset, 0, negative or not a number count as 1.  The result is
 * n times the scale, rounded down, and never less than 1: a test always runs
 * at least one iteration. */
static inline long count_scaled_by(const char *var, long n)
{
    const char *e = getenv(var);
    double k = e && *e ? atof(e) : 1.0;
    double v = (double)n * (k > 0 ? k : 1.0);
    return v < 1 ? 1 : (long)v;
}

/* The scale of iters(): a positive number from NILSTEP_ITER, read once by
 * rng_setup_program. */
static inline double *iter_scale(void)
{
    static double scale = 1.0;
    return &scale;
}

/* For files that seed once for all their tests (from a cmocka group setup):
 * the seed from NILSTEP_SEED (an empty value counts as unset) or 20261201,
 * the scale of iters() from NILSTEP_ITER; prints both after the program's
 * name.  Returns 0, as a group setup does. */
static inline int rng_setup_program(const char *program)
{
    const char *s = getenv("NILSTEP_SEED");
    uint64_t seed = s && *s ? strtoull(s, NULL, 0) : 20261201u;
    const char *it = getenv("NILSTEP_ITER");
    if (it && *it && atof(it) > 0)
        *iter_scale() = atof(it);
    *rng_state() = seed;
    printf("%s: seed %llu, iteration scale %g "
           "(NILSTEP_SEED, NILSTEP_ITER to change)\n",
           program, (unsigned long long)seed, *iter_scale());
    return 0;
}

/* base iterations scaled as rng_setup_program read NILSTEP_ITER (the
 * meaning of count_scaled_by); at least 1. */
static inline slong iters(slong base)
{
    double v = base * *iter_scale();
    return v < 1 ? 1 : (slong)v;
}

/* ------------------------------------------------------------------------ */
/* Presentations and quotients                                               */

/* p := the presentation text; fails the test when it does not parse. */
static inline void parse_pres_or_fail(pres_t p, const char *text)
{
    nserr_t err;
    nserr_init(err);
    if (pres_parse(p, text, 1, 1, err) != NS_OK)
        fail_msg("pres_parse(\"%s\") failed at %d:%d: %s", text, err->line, err->col, err->msg);
}

/* Q := the class-c quotient of the group given by text; fails the test
 * when the text does not parse or nq_compute fails. */
/* The analysis of the class-c quotient of the presentation text, or the
 * test fails with the engine's message. */
static inline void analysis_group_or_fail(analysis_t A, const char *pres, slong c)
{
    pres_t G;
    nserr_t err;
    pres_init(G);
    nserr_init(err);
    parse_pres_or_fail(G, pres);
    if (analysis_set_group(A, G, c, NULL, err) != NS_OK)
        fail_msg("analysis_set_group(%s, %ld): %s", pres, (long)c, err->msg);
    pres_clear(G);
    nserr_clear(err);
}

/* The map given as text analysed on A's quotient, or the test fails. */
static inline void analysis_map_or_fail(analysis_t A, const char *map)
{
    nserr_t err;
    nserr_init(err);
    if (analysis_set_map_text(A, map, 1, 1, NULL, err) != NS_OK)
        fail_msg("analysis_set_map_text(%s): %s", map, err->msg);
    nserr_clear(err);
}

/* The same with nq_compute_flags (NQ_KEEP_DEPENDENT: the route that keeps
 * dependent pc generators, nq.h). */
static inline void compute_quotient_flags(nq_t Q, const char *text, slong c, int flags)
{
    pres_t p;
    nserr_t err;
    pres_init(p);
    nserr_init(err);
    parse_pres_or_fail(p, text);
    ns_status st = nq_compute_flags(Q, p, c, NQ_DEFAULT_MAX_PC, flags, NULL, err);
    pres_clear(p);
    if (st != NS_OK)
        fail_msg("nq_compute(\"%s\", class %ld) failed (%d): %s", text, (long)c, (int)st, err->msg);
}

static inline void compute_quotient(nq_t Q, const char *text, slong c)
{
    compute_quotient_flags(Q, text, c, 0);
}

/* ------------------------------------------------------------------------ */
/* Words in integer matrices                                                 */

/* out := m^-1 for a square integer matrix of determinant +-1. */
static inline void mat_inv_unimodular(fmpz_mat_t out, const fmpz_mat_t m)
{
    fmpz_t den;
    fmpz_init(den);
    assert_true(fmpz_mat_inv(out, den, m));
    assert_true(fmpz_is_pm1(den));
    if (fmpz_is_one(den) == 0)
        fmpz_mat_neg(out, out);
    fmpz_clear(den);
}

/* out := the value of the tree n when generator i is the matrix gens[i]
 * (square, of out's size, determinant +-1), by plain matrix arithmetic:
 * [x,y] = x^-1 y^-1 x y, left-normed, and x^y = y^-1 x y.  Exponents must
 * fit a slong. */
static inline void eval_in_matrices(fmpz_mat_t out, const expr_node *n, const fmpz_mat_struct *gens)
{
    slong d = fmpz_mat_nrows(out);
    fmpz_mat_t x, y, t, u;

    fmpz_mat_init(x, d, d);
    fmpz_mat_init(y, d, d);
    fmpz_mat_init(t, d, d);
    fmpz_mat_init(u, d, d);
    switch (n->kind) {
    case EXPR_ONE:
        fmpz_mat_one(out);
        break;
    case EXPR_GEN:
        fmpz_mat_set(out, gens + n->gen);
        break;
    case EXPR_MUL:
        fmpz_mat_one(x);
        for (slong i = 0; i < n->nkids; i++) {
            eval_in_matrices(y, n->kids[i], gens);
            fmpz_mat_mul(t, x, y);
            fmpz_mat_swap(x, t);
        }
        fmpz_mat_set(out, x);
        break;
    case EXPR_POW: {
        slong e = fmpz_get_si(n->exp);
        assert_true(fmpz_fits_si(n->exp));
        eval_in_matrices(x, n->kids[0], gens);
        if (e < 0) {
            mat_inv_unimodular(t, x);
            fmpz_mat_swap(x, t);
            e = -e;
        }
        fmpz_mat_pow(out, x, (ulong)e);
        break;
    }
    case EXPR_COMM:
        eval_in_matrices(x, n->kids[0], gens);
        for (slong i = 1; i < n->nkids; i++) {
            eval_in_matrices(y, n->kids[i], gens);
            mat_inv_unimodular(t, x);
            mat_inv_unimodular(u, y);
            fmpz_mat_mul(out, t, u); /* x^-1 y^-1 */
            fmpz_mat_mul(t, out, x);
            fmpz_mat_mul(x, t, y);
        }
        fmpz_mat_set(out, x);
        break;
    case EXPR_CONJ:
        eval_in_matrices(x, n->kids[0], gens);
        eval_in_matrices(y, n->kids[1], gens);
        mat_inv_unimodular(t, y);
        fmpz_mat_mul(u, t, x);
        fmpz_mat_mul(out, u, y);
        break;
    case EXPR_RUN:
        fmpz_mat_one(x);
        for (slong i = 0; i < n->nsyl; i++) {
            slong e = expr_syl_exp(n->syl[i]);
            fmpz_mat_set(y, gens + n->syl[i].gen);
            if (e < 0) {
                mat_inv_unimodular(t, y);
                fmpz_mat_swap(y, t);
                e = -e;
            }
            fmpz_mat_pow(u, y, (ulong)e);
            fmpz_mat_mul(t, x, u);
            fmpz_mat_swap(x, t);
        }
        fmpz_mat_set(out, x);
        break;
    }
    fmpz_mat_clear(x);
    fmpz_mat_clear(y);
    fmpz_mat_clear(t);
    fmpz_mat_clear(u);
}

#endif
