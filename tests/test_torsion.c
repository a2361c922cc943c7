/* test_torsion.c — the torsion subgroup T of Gc, the layers of Gc/T, and
 * the invariants on Gc through its finite part.  Each expected value is
 * worked out by hand in the comment beside it, from the sources named
 * there; finite groups are checked by brute force in tests/ref_torsion.py. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <string.h>
#include <cmocka.h>
#include "testutil.h"

#include "analysis.h"
#include "torsion.h"

static void set_map(analysis_t A, const char *map)
{
    analysis_map_or_fail(A, map);
    assert_true(A->valid);
}

static slong si(const fmpz_t x)
{
    return fmpz_get_si(x);
}

/* T is a normal subgroup mapped into itself by alpha: adding the
 * conjugates of its generators by every pc generator, and their images,
 * leaves its order unchanged; each generator has order dividing |T|. */
static void check_t_closed(const analysis_t A)
{
    const nq_struct *Q = A->nq;
    const torsion_struct *T = A->tors;
    slong n = Q->pcp->n, s = T->sub->len;
    pcp_work_t W;
    pcp_work_init(W, Q->pcp);
    tsub_t S;
    tsub_init(S, n);
    tsub_add(S, W, T->sub->elt, s, NULL, 0, n);
    fmpz *conj = _fmpz_vec_init(FLINT_MAX(n, 1) * n);
    for (slong k = 0; k < n; k++)
        fmpz_one(conj + k * n + k);
    fmpz *img = _fmpz_vec_init(FLINT_MAX(s, 1) * n);
    if (A->has_map && A->valid)
        for (slong i = 0; i < s; i++)
            endo_apply(A->endo, Q, img + i * n, T->sub->elt + i * n, W);
    tsub_add(S, W, img, A->has_map ? s : 0, conj, n, n);
    fmpz_t o;
    fmpz_init(o);
    tsub_order(o, S);
    assert_true(fmpz_equal(o, T->order));
    fmpz *y = _fmpz_vec_init(FLINT_MAX(n, 1));
    for (slong i = 0; i < s; i++) {
        pcp_elt_pow(W, y, T->sub->elt + i * n, T->order);
        assert_true(_fmpz_vec_is_zero(y, n));
    }
    _fmpz_vec_clear(y, FLINT_MAX(n, 1));
    fmpz_clear(o);
    _fmpz_vec_clear(conj, FLINT_MAX(n, 1) * n);
    _fmpz_vec_clear(img, FLINT_MAX(s, 1) * n);
    tsub_clear(S);
    pcp_work_clear(W);
}

/* G = <a, t | t^-1 a t = a^-1> (the Klein bottle group).  [a,t] = a^-2, so
 * gamma_(j+1)(G) = <a^(2^j)> and Gc = G/gamma_(c+1) = Z/2^c x| Z with t
 * inverting a.  Hence T = <a> = Z/2^c, layer 1 = Z + Z/2 (t, a), layer j >= 2
 * = Z/2 (a^(2^(j-1))), and Gc/T = Z: layer 1 Z, the others 0.
 *
 * alpha: a -> a, t -> t^3.  On Gc/T = Z alpha is x3, so L = 1 - 3 = -2,
 * N = 2 (Anosov 1985) and Gc/T has R = 2 twisted classes, t^0 and t^1.
 * R on Gc = sum over them of R(tau_g alpha|T) (doc/torsion.md):
 *   g = 1: alpha|T = id on Z/2^c, R = |coker 0| = 2^c;
 *   g = t: a -> t a t^-1 = a^-1, R = |coker(1 - (-1))| = |Z/2^c / 2| = 2.
 * So R = 2^c + 2.  alpha is one-to-one (identity on T, x3 on Z) with image
 * <a, t^3> of index 3. */
static void klein_bottle_quotients(void **state)
{
    (void)state;
    for (slong c = 2; c <= 5; c++) {
        analysis_t A;
        analysis_init(A);
        analysis_group_or_fail(A, "<a, t | t^-1 a t = a^-1>", c);
        const torsion_struct *T = A->tors;
        assert_int_equal(si(T->order), 1L << c);
        assert_true(T->abelian);
        assert_int_equal(T->ninv, 1);
        assert_int_equal(si(T->inv), 1L << c);
        assert_false(T->finite);
        assert_true(T->quotient_layers_free);
        assert_int_equal(A->layers[0].layer->free_rank, 1);
        for (slong j = 0; j < c; j++) {
            assert_int_equal(T->q_ntors[j], 0);
            assert_int_equal(A->layers[j].layer->free_rank, j == 0 ? 1 : 0);
        }
        set_map(A, "a -> a, t -> t^3");
        check_t_closed(A);
        assert_null(A->undefined_reason);
        assert_int_equal(si(A->lefschetz), -2);
        assert_int_equal(si(A->nielsen), 2);
        assert_int_equal(A->reid_kind, ANALYSIS_REID_FINITE);
        assert_int_equal(si(A->reidemeister), (1L << c) + 2);
        assert_true(A->injective_defined && A->injective);
        assert_true(A->index_defined);
        assert_int_equal(si(A->image_index), 3);
        analysis_clear(A);
    }
}

/* The index of the image of a map that is not one-to-one on the finite
 * part of an infinite Gc.  Worked by hand: in the class-c quotient of
 * <a, t | t^-1 a t = a^-1> the torsion subgroup is <a>, cyclic of order
 * 2^c, and Gc/T = <t> is infinite cyclic.  a -> a^(2^k), t -> t is a
 * homomorphism (t^-1 a^m t = a^-m) whose image <a^(2^k), t> has index 2^k:
 * it meets T in <a^(2^k)> and maps onto Gc/T. */
static void klein_bottle_index_not_injective(void **state)
{
    (void)state;
    for (slong c = 2; c <= 4; c++)
        for (slong k = 1; k < c; k++) {
            analysis_t A;
            analysis_init(A);
            analysis_group_or_fail(A, "<a, t | t^-1 a t = a^-1>", c);
            char map[64];
            snprintf(map, sizeof map, "a -> a^%ld, t -> t", 1L << k);
            set_map(A, map);
            assert_true(A->injective_defined);
            assert_false(A->injective);
            assert_true(A->index_defined);
            assert_int_equal(si(A->image_index), 1L << k);
            /* with t -> t^3 the free part adds its factor 3 */
            snprintf(map, sizeof map, "a -> a^%ld, t -> t^3", 1L << k);
            set_map(A, map);
            assert_true(A->index_defined);
            assert_int_equal(si(A->image_index), 3L << k);
            analysis_clear(A);
        }
}

/* A second analysis that borrows the group (as the scan threads do) sees
 * the same torsion subgroup and gets the same numbers: the Klein bottle
 * quotient at class 3 with a -> a, t -> t^3 has R = 2^3 + 2 = 10 (above). */
static void shared_group_keeps_torsion(void **state)
{
    (void)state;
    analysis_t A, B;
    analysis_init(A);
    analysis_init(B);
    analysis_group_or_fail(A, "<a, t | t^-1 a t = a^-1>", 3);
    analysis_share_group(B, A);
    assert_int_equal(si(B->tors->order), 8);
    set_map(B, "a -> a, t -> t^3");
    assert_int_equal(B->reid_kind, ANALYSIS_REID_FINITE);
    assert_int_equal(si(B->reidemeister), 10);
    analysis_clear(B);
    assert_int_equal(si(A->tors->order), 8);
    analysis_clear(A);
}

/* Gc = Z^2 x Z/2 = <a, b, z | z^2, [a,b], [a,z], [b,z]> and product maps
 * beta x gamma.  R multiplies over direct products (the twisted classes of
 * a product are the products of twisted classes; common practice); on Z^2,
 * R(beta) = |det(I - M)| when nonzero (abelian groups: the index of
 * (I - M) Z^2); on Z/2, R(id) = 2 and R(trivial) = 1.  L and N come from
 * the Z^2 factor: L = det(I - M).
 *   a -> a^3, b -> b^2, z -> z:        L = (1-3)(1-2) = 2, R = 2 * 2 = 4;
 *   a -> a^2 b, b -> a b, z -> z:       L = det [[-1,-1],[-1,0]] = -1,
 *                                       R = 1 * 2 = 2;
 *   a -> a^2 b, b -> a b, z -> 1:       R = 1 * 1 = 1;
 *   a -> a, b -> b^2, z -> z:           det(I - M) = 0, R infinite. */
static void product_with_z2(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "<a, b, z | z^2, [a,b], [a,z], [b,z]>", 2);
    assert_int_equal(si(A->tors->order), 2);
    assert_true(A->tors->quotient_layers_free);
    struct {
        const char *map;
        slong L, R;
        int injective;
    } cases[] = {
        {"a -> a^3, b -> b^2, z -> z", 2, 4, 1},
        {"a -> a^2 b, b -> a b, z -> z", -1, 2, 1},
        {"a -> a^2 b, b -> a b, z -> 1", -1, 1, 0},
        {"a -> a, b -> b^2, z -> z", 0, -1, 1},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        set_map(A, cases[k].map);
        check_t_closed(A);
        assert_int_equal(si(A->lefschetz), cases[k].L);
        assert_int_equal(si(A->nielsen), FLINT_ABS(cases[k].L));
        if (cases[k].R < 0)
            assert_int_equal(A->reid_kind, ANALYSIS_REID_INFINITE);
        else {
            assert_int_equal(A->reid_kind, ANALYSIS_REID_FINITE);
            assert_int_equal(si(A->reidemeister), cases[k].R);
        }
        assert_int_equal(A->injective, cases[k].injective);
    }
    analysis_clear(A);
}

/* <x, y, z | [y,x] = z^2, [z,x], [z,y]>: the abelianisation is Z^2 + Z/2,
 * but z has infinite order (z^2 = [y,x] generates layer 2 = Z), so T = 1:
 * layer torsion need not lift.  The group is torsion-free nilpotent with
 * the central series 1 < <z> < G, factors Z (z) and Z^2 (x, y).  For
 * x -> x^2, y -> y^3, z -> z^6 ([y^3, x^2] = [y,x]^6 = (z^6)^2 in class 2)
 * the product formula for torsion-free central series (P. Senden,
 * arXiv:2502.16651, 2025, Thm 1.1) gives R = |1 - 6| * |(1-2)(1-3)| = 10;
 * nilstep's rational layers give L = (1-2)(1-3) * (1-6) = -10. */
static void layer_torsion_that_does_not_lift(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "<x, y, z | [y,x] = z^2, [z,x], [z,y]>", 2);
    assert_int_equal(A->layers[0].layer->ntors, 1);
    assert_int_equal(si(A->tors->order), 1);
    assert_int_equal(A->tors->q_ntors[0], 1); /* Gc/T = Gc keeps Z/2 in layer 1 */
    set_map(A, "x -> x^2, y -> y^3, z -> z^6");
    assert_int_equal(si(A->lefschetz), -10);
    assert_int_equal(A->reid_kind, ANALYSIS_REID_FINITE);
    assert_int_equal(si(A->reidemeister), 10);
    analysis_clear(A);
}

/* Gc/T torsion-free but with torsion in a layer, and T != 1: products of
 * the group above (R = 10 for its map, by the product formula) with Z/2
 * (R(id) = 2, R(trivial) = 1) and with the class-3 Klein bottle quotient
 * (R = 2^3 + 2 = 10 for a -> a, t -> t^3, see klein_bottle_quotients).  R
 * multiplies over direct products, and the lower central series of a
 * direct product is the product of theirs, so Gc is the product too:
 *   (x -> x^2, y -> y^3, z -> z^6) x (w -> w)        R = 10 * 2 = 20;
 *   (x -> x^2, y -> y^3, z -> z^6) x (w -> 1)        R = 10 * 1 = 10;
 *   (a -> a, t -> t^3) x (x -> x^2, ...)            R = 10 * 10 = 100,
 *                                                   L = (-2)(-10) = 20. */
static void quotient_layers_with_torsion(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "<x, y, z, w | [y,x] = z^2, [z,x], [z,y], w^2, [w,x], [w,y], [w,z]>", 2);
    assert_int_equal(si(A->tors->order), 2);
    assert_false(A->tors->quotient_layers_free);
    set_map(A, "x -> x^2, y -> y^3, z -> z^6, w -> w");
    check_t_closed(A);
    assert_int_equal(A->reid_kind, ANALYSIS_REID_FINITE);
    assert_int_equal(si(A->reidemeister), 20);
    set_map(A, "x -> x^2, y -> y^3, z -> z^6, w -> 1");
    assert_int_equal(si(A->reidemeister), 10);
    analysis_group_or_fail(A,
              "<a, t, x, y, z | t^-1 a t = a^-1, [y,x] = z^2, [z,x], [z,y], [a,x], [a,y], "
              "[a,z], [t,x], [t,y], [t,z]>",
              3);
    assert_int_equal(si(A->tors->order), 8);
    set_map(A, "a -> a, t -> t^3, x -> x^2, y -> y^3, z -> z^6");
    check_t_closed(A);
    assert_int_equal(si(A->lefschetz), 20);
    assert_int_equal(A->reid_kind, ANALYSIS_REID_FINITE);
    assert_int_equal(si(A->reidemeister), 100);
    analysis_clear(A);
}

/* surface(2) x Z/2: T = <z> of order 2, central; Gc/T = the class-c
 * quotient of the surface group, whose layers are torsion-free (Labute
 * 1970).  The map swapping the handles fixes z. */
static void surface_times_z2(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A,
              "<a1, b1, a2, b2, z | [a1,b1][a2,b2], z^2, [z,a1], [z,b1], [z,a2], [z,b2]>", 3);
    assert_int_equal(si(A->tors->order), 2);
    assert_string_equal(A->tors->gen_str[0], "z");
    assert_true(A->tors->quotient_layers_free);
    set_map(A, "a1 -> a2, b1 -> b2, a2 -> a1, b2 -> b1, z -> z");
    check_t_closed(A);
    assert_true(A->injective && A->automorphism);
    /* det(I - M1) = 0 for a permutation of the handles: R infinite */
    assert_int_equal(A->reid_kind, ANALYSIS_REID_INFINITE);
    analysis_clear(A);
}

/* <a, b | a^8, b^8> at class 4 is a finite 2-group of order 2^21 (the
 * torsion subgroup is everything): too large to count, so the analysis
 * names TORSION_MAX_COUNT, keeps the rest, and injectivity is still
 * decided (the swap is an automorphism: index 1). */
static void too_large_to_count(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "<a, b | a^8, b^8>", 4);
    assert_true(A->tors->finite);
    assert_true(fmpz_cmp_si(A->tors->order, TORSION_MAX_COUNT) > 0);
    set_map(A, "a -> b, b -> a");
    assert_true(A->limit_hit);
    assert_non_null(strstr(A->limit->msg, "TORSION_MAX_COUNT"));
    assert_int_equal(A->reid_kind, ANALYSIS_REID_UNDEFINED);
    assert_true(A->injective_defined && A->injective);
    assert_int_equal(si(A->image_index), 1);
    analysis_clear(A);
}

/* Cancelling while T is computed stops cleanly (no hang on a collection
 * that a cancel left unfinished) and leaves no group.  The hook lets the
 * quotient finish and cancels at the first poll after the torsion stage
 * has begun, which comes from inside collection. */
typedef struct {
    int torsion_started, polls_after;
} cancel_state;

static int cancel_in_torsion(void *ctx, const char *stage, double fraction)
{
    cancel_state *c = ctx;
    (void)fraction;
    if (stage && !strcmp(stage, "torsion subgroup") && !c->torsion_started) {
        c->torsion_started = 1;
        return 0;
    }
    if (c->torsion_started && !stage) { /* a poll from inside collection */
        c->polls_after++;
        return 1;
    }
    return 0;
}

static void cancel_during_torsion(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    pres_t G;
    nserr_t err;
    pres_init(G);
    nserr_init(err);
    parse_pres_or_fail(G, "<a, b, c | [a,b]^6, [a,c]^10, [b,c]^4>");
    cancel_state cs = {0, 0};
    ns_progress_t prog = {cancel_in_torsion, &cs};
    ns_status st = analysis_set_group(A, G, 4, &prog, err);
    assert_true(cs.torsion_started);
    assert_true(cs.polls_after > 0);
    assert_int_equal(st, NS_ERR_CANCELLED);
    assert_false(A->has_group);
    pres_clear(G);
    nserr_clear(err);
    analysis_clear(A);
}

/* Torsion-free layers: no torsion part is computed and the invariants are
 * the classical ones (the golden reports check every number). */
static void torsion_free_untouched(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "<a, b | >", 3);
    assert_true(A->layers_torsion_free);
    assert_int_equal(si(A->tors->order), 1);
    set_map(A, "a -> a^2, b -> b^2");
    /* L = (1-2)^2 (1-4) (1-8)^2 = -147 (ref_entropy.py, example 2) */
    assert_int_equal(si(A->lefschetz), -147);
    assert_int_equal(si(A->reidemeister), 147);
    assert_false(A->tmap->fixed_defined);
    analysis_clear(A);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(klein_bottle_quotients),
        cmocka_unit_test(klein_bottle_index_not_injective),
        cmocka_unit_test(shared_group_keeps_torsion),
        cmocka_unit_test(product_with_z2),
        cmocka_unit_test(layer_torsion_that_does_not_lift),
        cmocka_unit_test(quotient_layers_with_torsion),
        cmocka_unit_test(surface_times_z2),
        cmocka_unit_test(too_large_to_count),
        cmocka_unit_test(cancel_during_torsion),
        cmocka_unit_test(torsion_free_untouched),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
