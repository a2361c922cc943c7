/* test_endo.c — endomorphisms of computed quotients (endo.h): evaluation,
 * composition, powers and inverses, checked against the definitions on
 * random elements.
 *
 *  - alpha is a homomorphism: alpha(g h) = alpha(g) alpha(h);
 *  - (alpha o beta)(g) = alpha(beta(g));
 *  - alpha^k(g) = alpha(alpha(... g)), and every layer matrix of alpha^k is
 *    the k-th power of alpha's (the layers are functorial), so in
 *    particular M1(alpha^k) = M1^k;
 *  - for an automorphism, alpha o alpha^-1 and alpha^-1 o alpha are the
 *    identity on the generators, compared as elements of the quotient;
 *  - a map that is not onto has no inverse (NS_ERR_INPUT).
 *
 * Groups: free(2) at class 4, free(3) at class 3, and the Heisenberg group
 * x1, y1, z (heisenberg(1)) at class 2, all with torsion-free layers, so
 * that every exponent vector is a normal form.
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
#include <flint/fmpz_poly.h>
#include <flint/fmpz_vec.h>

#include "endo.h"
#include "layer.h"
#include "nq.h"
#include "pres.h"
#include "testutil.h"

static void seed(const char *test)
{
    rng_seed_test(test, 20261201ULL, "NILSTEP_SEED replays it");
}

/* ------------------------------------------------------------------------ */

typedef struct {
    const char *pres;
    slong c;
    const char *not_onto; /* a map onto a proper subgroup */
} group_case;

static const group_case groups[] = {
    {"free(2)", 4, "a -> a^2, b -> b"},
    {"free(3)", 3, "a -> a, b -> b c, c -> c^3"},
    {"heisenberg(1)", 2, "x1 -> x1 y1, y1 -> x1^2 y1^2, z -> [x1 y1, x1^2 y1^2]"},
};

/* compute_quotient, for the groups above: every pc generator has infinite
 * order. */
static void compute_torsion_free(nq_t Q, const char *pres, slong c)
{
    compute_quotient(Q, pres, c);
    for (slong k = 0; k < Q->pcp->n; k++)
        assert_true(fmpz_is_zero(Q->pcp->relorder + k));
}

/* Runs check on the quotient of every group above, with a work space for
 * its arithmetic. */
static void for_every_group(void (*check)(const nq_t Q, pcp_work_t W, const group_case *gc))
{
    for (size_t gi = 0; gi < sizeof groups / sizeof groups[0]; gi++) {
        nq_t Q;
        nq_init(Q);
        compute_torsion_free(Q, groups[gi].pres, groups[gi].c);
        pcp_work_t W;
        pcp_work_init(W, Q->pcp);
        check(Q, W, groups + gi);
        pcp_work_clear(W);
        nq_clear(Q);
    }
}

static void random_elt(fmpz *g, slong n, long bound)
{
    for (slong k = 0; k < n; k++)
        fmpz_set_si(g + k, rng_range(-bound, bound));
}

/* A random endomorphism given by a map text whose layer-1 part is M
 * (entries in [-2, 2]) and whose images carry random commutator tails.
 * For heisenberg(1) the image of z is [x1', y1'], which makes it valid. */
static void random_map_text(char *buf, size_t cap, const nq_t Q, int automorphism)
{
    const names_struct *g = Q->pres->gens;
    slong X = g->n, r = Q->layers[0].free_rank;
    long M[3][3];
    /* automorphisms: random column operations on the identity (det 1),
     * then possibly one column negated (det -1) */
    for (slong i = 0; i < r; i++)
        for (slong k = 0; k < r; k++)
            M[i][k] = automorphism ? (i == k ? 1 : 0) : rng_range(-2, 2);
    if (automorphism) {
        for (long s = 0; s < 3; s++) {
            slong i = rng_range(0, r - 1), k = rng_range(0, r - 1);
            if (i == k)
                continue;
            long t = rng_range(0, 1) ? 1 : -1;
            /* column k += t * column i */
            for (slong row = 0; row < r; row++)
                M[row][k] += t * M[row][i];
        }
        if (rng_range(0, 1))
            for (slong row = 0; row < r; row++)
                M[row][0] = -M[row][0];
    }
    char img[3][256];
    for (slong k = 0; k < r; k++) {
        img[k][0] = '\0';
        for (slong i = 0; i < r; i++)
            if (M[i][k]) {
                size_t len = strlen(img[k]);
                snprintf(img[k] + len, sizeof img[k] - len, "%s%s^%ld", len ? " " : "",
                         g->name[i], M[i][k]);
            }
        long parts = rng_range(0, 2);
        for (long p = 0; p < parts; p++) {
            size_t len = strlen(img[k]);
            snprintf(img[k] + len, sizeof img[k] - len, "%s[%s,%s]^%ld", len ? " " : "",
                     g->name[rng_range(0, r - 1)], g->name[rng_range(0, r - 1)], rng_range(-3, 3));
        }
        if (!img[k][0])
            strcpy(img[k], "1");
    }
    buf[0] = '\0';
    for (slong x = 0; x < X; x++) {
        size_t len = strlen(buf);
        if (x < r)
            snprintf(buf + len, cap - len, "%s%s -> %s", x ? ", " : "", g->name[x], img[x]);
        else /* heisenberg(1): z -> [x1', y1'] */
            snprintf(buf + len, cap - len, ", %s -> [%s, %s]", g->name[x], img[0], img[1]);
    }
}

static void set_endo(endo_t E, const nq_t Q, const char *map)
{
    slong X = Q->pres->gens->n;
    expr_struct *im = flint_malloc(X * sizeof(expr_struct));
    nserr_t err;
    nserr_init(err);
    for (slong x = 0; x < X; x++)
        expr_init(im + x);
    if (pres_parse_map(im, Q->pres, map, 1, 1, err) != NS_OK)
        fail_msg("pres_parse_map(%s): %s", map, err->msg);
    if (endo_set(E, Q, im, NULL, err) != NS_OK)
        fail_msg("endo_set(%s): %s", map, err->msg);
    if (!E->valid)
        fail_msg("%s should be well defined", map);
    for (slong x = 0; x < X; x++)
        expr_clear(im + x);
    flint_free(im);
    nserr_clear(err);
}

static void assert_elt_equal(const nq_t Q, const fmpz *u, const fmpz *v, const char *what,
                             const char *map)
{
    slong n = Q->pcp->n;
    if (!_fmpz_vec_equal(u, v, n)) {
        char *a = nq_elt_get_str(Q, u), *b = nq_elt_get_str(Q, v);
        fail_msg("%s: %s != %s (map %s)", what, a, b, map);
    }
}

/* ------------------------------------------------------------------------ */

static void endo_is_a_homomorphism_on(const nq_t Q, pcp_work_t W, const group_case *gc)
{
    (void)gc;
    slong n = Q->pcp->n;
    fmpz *g = _fmpz_vec_init(n), *h = _fmpz_vec_init(n), *gh = _fmpz_vec_init(n);
    fmpz *ag = _fmpz_vec_init(n), *ah = _fmpz_vec_init(n), *agh = _fmpz_vec_init(n);
    char map[1024];
    for (long t = 0; t < count_scaled_by("NILSTEP_ITER", 10); t++) {
        endo_t E;
        endo_init(E);
        random_map_text(map, sizeof map, Q, 0);
        set_endo(E, Q, map);
        /* the images of the generators are what the text says */
        for (slong x = 0; x < Q->pres->gens->n; x++) {
            endo_apply(E, Q, ag, Q->images + x * n, W);
            assert_elt_equal(Q, ag, E->gen_img + x * n, "alpha(generator)", map);
        }
        for (long s = 0; s < 5; s++) {
            random_elt(g, n, 4);
            random_elt(h, n, 4);
            pcp_elt_mul(W, gh, g, h);
            endo_apply(E, Q, ag, g, W);
            endo_apply(E, Q, ah, h, W);
            endo_apply(E, Q, agh, gh, W);
            pcp_elt_mul(W, ag, ag, ah);
            assert_elt_equal(Q, agh, ag, "alpha(g h) vs alpha(g) alpha(h)", map);
        }
        endo_clear(E);
    }
    assert_false(W->overflow);
    _fmpz_vec_clear(g, n);
    _fmpz_vec_clear(h, n);
    _fmpz_vec_clear(gh, n);
    _fmpz_vec_clear(ag, n);
    _fmpz_vec_clear(ah, n);
    _fmpz_vec_clear(agh, n);
}

static void endo_is_a_homomorphism(void **state)
{
    (void)state;
    seed("endo_is_a_homomorphism");
    for_every_group(endo_is_a_homomorphism_on);
}

static void endo_compose_is_apply_in_sequence_on(const nq_t Q, pcp_work_t W, const group_case *gc)
{
    (void)gc;
    nserr_t err;
    nserr_init(err);
    slong n = Q->pcp->n;
    fmpz *g = _fmpz_vec_init(n), *u = _fmpz_vec_init(n), *v = _fmpz_vec_init(n);
    char ma[1024], mb[1024], both[2100];
    for (long t = 0; t < count_scaled_by("NILSTEP_ITER", 10); t++) {
        endo_t a, b, ab;
        endo_init(a);
        endo_init(b);
        endo_init(ab);
        random_map_text(ma, sizeof ma, Q, 0);
        random_map_text(mb, sizeof mb, Q, 0);
        snprintf(both, sizeof both, "alpha = %s; beta = %s", ma, mb);
        set_endo(a, Q, ma);
        set_endo(b, Q, mb);
        assert_int_equal(endo_compose(ab, a, b, Q, NULL, err), NS_OK);
        assert_true(ab->valid);
        for (long s = 0; s < 5; s++) {
            random_elt(g, n, 3);
            endo_apply(b, Q, u, g, W);
            endo_apply(a, Q, u, u, W);
            endo_apply(ab, Q, v, g, W);
            assert_elt_equal(Q, v, u, "(alpha o beta)(g) vs alpha(beta(g))", both);
        }
        endo_clear(a);
        endo_clear(b);
        endo_clear(ab);
    }
    _fmpz_vec_clear(g, n);
    _fmpz_vec_clear(u, n);
    _fmpz_vec_clear(v, n);
    nserr_clear(err);
}

static void endo_compose_is_apply_in_sequence(void **state)
{
    (void)state;
    seed("endo_compose_is_apply_in_sequence");
    for_every_group(endo_compose_is_apply_in_sequence_on);
}

static void endo_pow_matches_iteration_and_matrix_powers_on(const nq_t Q, pcp_work_t W,
                                                            const group_case *gc)
{
    (void)gc;
    nserr_t err;
    nserr_init(err);
    slong n = Q->pcp->n, c = Q->class_reached;
    const layer_struct *L = Q->layers; /* the quotient's own layers */
    fmpz *g = _fmpz_vec_init(n), *u = _fmpz_vec_init(n), *v = _fmpz_vec_init(n);
    fmpz_mat_t A, M, Mk, P, Pk;
    fmpz_mat_init(A, 0, 0);
    fmpz_mat_init(M, 0, 0);
    fmpz_mat_init(Mk, 0, 0);
    fmpz_mat_init(P, 0, 0);
    fmpz_mat_init(Pk, 0, 0);
    char map[1024];
    for (long t = 0; t < count_scaled_by("NILSTEP_ITER", 6); t++) {
        endo_t a, ak;
        endo_init(a);
        endo_init(ak);
        random_map_text(map, sizeof map, Q, t % 2);
        set_endo(a, Q, map);
        for (ulong k = 0; k <= 5; k++) {
            assert_int_equal(endo_pow(ak, a, k, Q, NULL, err), NS_OK);
            assert_true(ak->valid);
            for (long s = 0; s < 3; s++) {
                random_elt(g, n, 3);
                _fmpz_vec_set(u, g, n);
                for (ulong i = 0; i < k; i++)
                    endo_apply(a, Q, u, u, W);
                endo_apply(ak, Q, v, g, W);
                assert_elt_equal(Q, v, u, "alpha^k(g) vs k applications", map);
            }
            for (slong j = 0; j < c; j++) {
                endo_layer_matrices(A, M, a, L + j);
                endo_layer_matrices(P, Pk, ak, L + j);
                fmpz_mat_clear(Mk);
                fmpz_mat_init(Mk, fmpz_mat_nrows(M), fmpz_mat_ncols(M));
                fmpz_mat_pow(Mk, M, k);
                if (!fmpz_mat_equal(Pk, Mk))
                    fail_msg("layer %ld matrix of alpha^%lu is not M^%lu (map %s)", (long)j + 1, k,
                             k, map);
            }
        }
        endo_clear(a);
        endo_clear(ak);
    }
    /* a larger power: alpha^13 = alpha^8 o alpha^4 o alpha */
    {
        endo_t a, p13, p8, p4, t1, t2;
        endo_init(a);
        endo_init(p13);
        endo_init(p8);
        endo_init(p4);
        endo_init(t1);
        endo_init(t2);
        random_map_text(map, sizeof map, Q, 1);
        set_endo(a, Q, map);
        assert_int_equal(endo_pow(p13, a, 13, Q, NULL, err), NS_OK);
        assert_int_equal(endo_pow(p8, a, 8, Q, NULL, err), NS_OK);
        assert_int_equal(endo_pow(p4, a, 4, Q, NULL, err), NS_OK);
        assert_int_equal(endo_compose(t1, p4, a, Q, NULL, err), NS_OK);
        assert_int_equal(endo_compose(t2, p8, t1, Q, NULL, err), NS_OK);
        for (slong x = 0; x < Q->pres->gens->n; x++)
            assert_elt_equal(Q, p13->gen_img + x * n, t2->gen_img + x * n,
                             "alpha^13 vs alpha^8 o alpha^4 o alpha", map);
        endo_clear(a);
        endo_clear(p13);
        endo_clear(p8);
        endo_clear(p4);
        endo_clear(t1);
        endo_clear(t2);
    }
    assert_false(W->overflow);
    fmpz_mat_clear(A);
    fmpz_mat_clear(M);
    fmpz_mat_clear(Mk);
    fmpz_mat_clear(P);
    fmpz_mat_clear(Pk);
    _fmpz_vec_clear(g, n);
    _fmpz_vec_clear(u, n);
    _fmpz_vec_clear(v, n);
    nserr_clear(err);
}

static void endo_pow_matches_iteration_and_matrix_powers(void **state)
{
    (void)state;
    seed("endo_pow_matches_iteration_and_matrix_powers");
    for_every_group(endo_pow_matches_iteration_and_matrix_powers_on);
}

static void endo_inverse_of_automorphism_on(const nq_t Q, pcp_work_t W, const group_case *gc)
{
    nserr_t err;
    nserr_init(err);
    slong n = Q->pcp->n, X = Q->pres->gens->n;
    fmpz *g = _fmpz_vec_init(n), *u = _fmpz_vec_init(n);
    char map[1024];
    for (long t = 0; t < count_scaled_by("NILSTEP_ITER", 10); t++) {
        endo_t a, ai, c1, c2;
        endo_init(a);
        endo_init(ai);
        endo_init(c1);
        endo_init(c2);
        random_map_text(map, sizeof map, Q, 1);
        set_endo(a, Q, map);
        if (endo_inverse(ai, a, Q, NULL, err) != NS_OK)
            fail_msg("endo_inverse(%s): %s", map, err->msg);
        assert_true(ai->valid);
        assert_int_equal(endo_compose(c1, a, ai, Q, NULL, err), NS_OK);
        assert_int_equal(endo_compose(c2, ai, a, Q, NULL, err), NS_OK);
        for (slong x = 0; x < X; x++) {
            assert_elt_equal(Q, c1->gen_img + x * n, Q->images + x * n,
                             "alpha o alpha^-1 on a generator", map);
            assert_elt_equal(Q, c2->gen_img + x * n, Q->images + x * n,
                             "alpha^-1 o alpha on a generator", map);
        }
        for (long s = 0; s < 3; s++) {
            random_elt(g, n, 3);
            endo_apply(ai, Q, u, g, W);
            endo_apply(a, Q, u, u, W);
            assert_elt_equal(Q, u, g, "alpha(alpha^-1(g))", map);
        }
        endo_clear(a);
        endo_clear(ai);
        endo_clear(c1);
        endo_clear(c2);
    }
    /* not onto: no inverse */
    {
        endo_t a, ai;
        endo_init(a);
        endo_init(ai);
        set_endo(a, Q, gc->not_onto);
        assert_int_equal(endo_inverse(ai, a, Q, NULL, err), NS_ERR_INPUT);
        endo_clear(a);
        endo_clear(ai);
    }
    _fmpz_vec_clear(g, n);
    _fmpz_vec_clear(u, n);
    nserr_clear(err);
}

static void endo_inverse_of_automorphism(void **state)
{
    (void)state;
    seed("endo_inverse_of_automorphism");
    for_every_group(endo_inverse_of_automorphism_on);
}

/* Layers without torsion may still have pc generators of finite relative
 * order: in <x, y | x^2 = y^3> (the trefoil knot group; its
 * abelianisation is Z, generated by the image of x^-1 y^2, since
 * gcd(2, 3) = 1) layer 1 has two pc generators and free rank 1.  Such a
 * quotient has torsion-free layers, so automorphisms have inverses there:
 * the identity, and on <x, y, z | x^2 = y^3> (the trefoil group times Z
 * amalgamated nowhere: z is free) the automorphisms z -> z x and
 * z -> z y [z, x] of the whole group (they fix the relation), whose
 * inverses z -> z x^-1, ... are checked by composing. */
static void endo_inverse_with_finite_pc_generators(void **state)
{
    (void)state;
    static const struct {
        const char *pres;
        slong c;
        const char *maps[3];
    } cases[] = {
        {"<x, y | x^2 = y^3>", 2, {"x -> x, y -> y", NULL, NULL}},
        {"<x, y, z | x^2 = y^3>",
         3,
         {"x -> x, y -> y, z -> z", "x -> x, y -> y, z -> z x", "x -> x, y -> y, z -> z y [z,x]"}},
    };
    nserr_t err;
    nserr_init(err);
    /* both routes (nq.h): with the dependent generator kept, and with
       layer 1 generated by one product of images (no finite generator) */
    for (size_t ci = 0; ci < 2 * (sizeof cases / sizeof cases[0]); ci++) {
        nq_t Q;
        nq_init(Q);
        int keep = ci % 2 == 0;
        compute_quotient_flags(Q, cases[ci / 2].pres, cases[ci / 2].c,
                               keep ? NQ_KEEP_DEPENDENT : 0);
        slong n = Q->pcp->n, X = Q->pres->gens->n, finite = 0;
        for (slong k = 0; k < n; k++)
            finite += !fmpz_is_zero(Q->pcp->relorder + k);
        assert_true(keep ? finite > 0 : finite == 0); /* the case this test is about */
        for (slong j = 0; j < Q->nlayers; j++)
            assert_int_equal(Q->layers[j].ntors, 0);
        for (int m = 0; m < 3 && cases[ci / 2].maps[m]; m++) {
            const char *map = cases[ci / 2].maps[m];
            endo_t a, ai, c1;
            endo_init(a);
            endo_init(ai);
            endo_init(c1);
            set_endo(a, Q, map);
            if (endo_inverse(ai, a, Q, NULL, err) != NS_OK)
                fail_msg("%s on %s: endo_inverse: %s", map, cases[ci / 2].pres, err->msg);
            assert_true(ai->valid);
            assert_int_equal(endo_compose(c1, a, ai, Q, NULL, err), NS_OK);
            for (slong x = 0; x < X; x++)
                assert_elt_equal(Q, c1->gen_img + x * n, Q->images + x * n,
                                 "alpha o alpha^-1 on a generator", map);
            endo_clear(a);
            endo_clear(ai);
            endo_clear(c1);
        }
        nq_clear(Q);
    }
    nserr_clear(err);
}

/* Generators defined as products (pcp.h): the layer matrices of a map are
 * the same as on the route that keeps dependent generators (NQ_KEEP_DEPENDENT,
 * nq.h) up to the change of basis, so their characteristic polynomials
 * agree; they are also checked against the action on the free Lie ring
 * worked out by hand.  With A the layer-1 matrix, layer 2 of a group on two
 * generators is multiplied by det A, and layer 3 of
 * <a, b | [a,b,b]^2 [a,b,a]^3> is L_3 / Z rho with L_3 = [[a,b], x]
 * (x in layer 1, acted on by det(A) A) and rho = [[a,b], 3a + 2b]; the map
 * is well defined at class 3 when A fixes the line of v = (3, 2), and the
 * quotient's eigenvalue is det(A) times A's other eigenvalue
 * det(A) / lambda.  For a -> a^7 b^4, b -> a^-9 b^-5: A = [[7, -9], [4, -5]],
 * A v = v, det 1: every layer has charpoly (x - 1)^r.  For a -> a^2,
 * b -> b^2: layer j is multiplied by 2^j.  The same on
 * <a, b, c | [a,b]^6 [a,c]^10 [b,c]^15> at class 2 (layer 2 = Lambda^2 / Z rho:
 * 4 on a rank-2 layer of product generators) and on <a, b | a^2 b^3> at
 * class 1 (a product of images: 5).  Every case also checks that the map
 * applied through the pc images (endo_apply, which evaluates the product
 * definitions) is the map evaluated on words. */
static void product_definitions_give_the_same_layer_maps(void **state)
{
    (void)state;
    static const struct {
        const char *pres;
        slong c;
        const char *map;
        slong root; /* charpoly of layer j: (x - root^j)^rank */
    } cases[] = {
        {"<a, b | [a,b,b]^2 [a,b,a]^3>", 3, "a -> a^7 b^4, b -> a^-9 b^-5", 1},
        {"<a, b | [a,b,b]^2 [a,b,a]^3>", 3, "a -> a^2, b -> b^2", 2},
        {"<a, b, c | [a,b]^6 [a,c]^10 [b,c]^15>", 2, "a -> a^2, b -> b^2, c -> c^2", 2},
        {"<a, b | a^2 b^3>", 1, "a -> a^5, b -> b^5", 5},
    };
    seed("product_definitions_give_the_same_layer_maps");
    for (size_t t = 0; t < sizeof cases / sizeof cases[0]; t++) {
        nq_t Q, K;
        nq_init(Q);
        nq_init(K);
        compute_quotient(Q, cases[t].pres, cases[t].c);
        compute_quotient_flags(K, cases[t].pres, cases[t].c, NQ_KEEP_DEPENDENT);
        slong prods = 0;
        for (slong k = 0; k < Q->pcp->n; k++)
            prods += Q->pcp->def[k].kind == PCP_DEF_PROD;
        assert_true(prods > 0);          /* the case this test is about */
        assert_true(K->pcp->n > Q->pcp->n); /* and the other route keeps more */
        endo_t E, F;
        endo_init(E);
        endo_init(F);
        set_endo(E, Q, cases[t].map);
        set_endo(F, K, cases[t].map);
        fmpz_mat_t A, M, A2, M2;
        fmpz_mat_init(A, 0, 0);
        fmpz_mat_init(M, 0, 0);
        fmpz_mat_init(A2, 0, 0);
        fmpz_mat_init(M2, 0, 0);
        fmpz_poly_t p, p2, want, lin;
        fmpz_poly_init(p);
        fmpz_poly_init(p2);
        fmpz_poly_init(want);
        fmpz_poly_init(lin);
        for (slong j = 0; j < Q->nlayers; j++) {
            endo_layer_matrices(A, M, E, Q->layers + j);
            endo_layer_matrices(A2, M2, F, K->layers + j);
            fmpz_mat_charpoly(p, M);
            fmpz_mat_charpoly(p2, M2);
            if (!fmpz_poly_equal(p, p2))
                fail_msg("%s, %s: layer %ld charpolys differ between the routes",
                         cases[t].pres, cases[t].map, (long)j + 1);
            /* (x - root^(j+1))^rank */
            fmpz_poly_one(want);
            fmpz_poly_zero(lin);
            fmpz_poly_set_coeff_ui(lin, 1, 1);
            fmpz_t r;
            fmpz_init(r);
            fmpz_set_si(r, cases[t].root);
            fmpz_pow_ui(r, r, (ulong)(j + 1));
            fmpz_neg(r, r);
            fmpz_poly_set_coeff_fmpz(lin, 0, r);
            fmpz_clear(r);
            fmpz_poly_pow(want, lin, (ulong)Q->layers[j].free_rank);
            if (!fmpz_poly_equal(p, want))
                fail_msg("%s, %s: layer %ld has the wrong charpoly", cases[t].pres,
                         cases[t].map, (long)j + 1);
        }
        /* alpha(w) through the pc images = w evaluated on the images */
        slong n = Q->pcp->n, X = Q->pres->gens->n;
        pcp_work_t W;
        pcp_work_init(W, Q->pcp);
        fmpz *u = _fmpz_vec_init(n), *v = _fmpz_vec_init(n), *g = _fmpz_vec_init(n);
        char word[128];
        for (int it = 0; it < 20; it++) {
            int wl = 0;
            for (int k = 0, nl = (int)rng_range(1, 8); k < nl; k++)
                wl += snprintf(word + wl, sizeof word - wl, "%s%s^%ld", k ? " " : "",
                               Q->pres->gens->name[rng_range(0, X - 1)], rng_range(-3, 3));
            expr_t w;
            nserr_t err;
            expr_init(w);
            nserr_init(err);
            assert_int_equal(expr_parse(w, word, 1, 1, Q->pres->gens, err), NS_OK);
            assert_int_equal(nq_eval(Q, g, w, NULL, err), NS_OK);
            endo_apply(E, Q, u, g, W);
            pcp_eval_expr(W, v, w->root, E->gen_img);
            assert_elt_equal(Q, u, v, "alpha(w) through the pc images", cases[t].map);
            expr_clear(w);
            nserr_clear(err);
        }
        _fmpz_vec_clear(u, n);
        _fmpz_vec_clear(v, n);
        _fmpz_vec_clear(g, n);
        pcp_work_clear(W);
        fmpz_poly_clear(p);
        fmpz_poly_clear(p2);
        fmpz_poly_clear(want);
        fmpz_poly_clear(lin);
        fmpz_mat_clear(A);
        fmpz_mat_clear(M);
        fmpz_mat_clear(A2);
        fmpz_mat_clear(M2);
        endo_clear(E);
        endo_clear(F);
        nq_clear(Q);
        nq_clear(K);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(endo_is_a_homomorphism),
        cmocka_unit_test(endo_compose_is_apply_in_sequence),
        cmocka_unit_test(endo_pow_matches_iteration_and_matrix_powers),
        cmocka_unit_test(endo_inverse_of_automorphism),
        cmocka_unit_test(endo_inverse_with_finite_pc_generators),
        cmocka_unit_test(product_definitions_give_the_same_layer_maps),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
