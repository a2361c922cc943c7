/* test_analysis_view.c — the read-only view of an analysis
 * (analysis_view.h): it shows the same values the analysis holds, and
 * those values are the known ones:
 *
 *  - free nilpotent group of rank 2, class 3: layer ranks 2, 1, 2 (Witt's
 *    formula, Witt 1937), Hirsch length 5; the map induced by
 *    [[2,1],[1,1]] has eigenvalues (3 +- sqrt 5)/2 on the abelianisation
 *    (roots of x^2 - 3x + 1) and acts on layer 2 by det = 1 (layer 2 of a
 *    free nilpotent group of rank 2 is the exterior square);
 *  - Z^2 = <a, b | [a,b]>: the series stabilises at class 1;
 *  - Z x Z/2 = <a, b | b^2, [a,b]>: T = Z/2 (order 2, abelian, one
 *    invariant 2), layer 1 is Z + Z/2;
 *  - an analysis without a group shows nothing. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <math.h>
#include <string.h>
#include <cmocka.h>

#include "analysis.h"
#include "testutil.h"

static void free_rank2_class3_golden(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "<a, b | >", 3);
    analysis_map_or_fail(A, "a -> a^2 b, b -> a b");
    analysis_view_t V;
    analysis_get_view(V, A);
    assert_true(V->has_group);
    assert_int_equal(V->class_requested, 3);
    assert_int_equal(V->class_reached, 3);
    assert_false(V->stabilised);
    assert_int_equal(V->hirsch_length, 5); /* 2 + 1 + 2 (Witt) */
    assert_int_equal(V->npc, 5);
    assert_int_equal(V->nlayers, 3);
    assert_true(V->layers_torsion_free);
    assert_int_equal(V->pres->gens->n, 2);
    assert_ptr_equal(V->quotient, A->nq);
    assert_ptr_equal(V->endo, A->endo);
    /* the map stage: the analysis' own strings, not copies */
    assert_true(V->has_map && V->valid && V->automorphism);
    assert_ptr_equal(V->growth_str, A->growth_str);
    assert_ptr_equal(V->map_str, A->map_str);
    assert_ptr_equal(V->lower_bound_str, A->lower_bound_str);
    assert_ptr_equal(V->upper_bound_str, A->upper_bound_str);
    assert_int_equal(V->upper_layer, A->upper_layer);
    assert_true(fmpz_equal(V->lefschetz, A->lefschetz));
    assert_int_equal(V->reid_kind, A->reid_kind);
    assert_false(V->hyperbolic); /* layer 2 is multiplied by det = 1 */

    static const slong rank[3] = {2, 1, 2}; /* Witt 1937 */
    for (slong j = 0; j < 3; j++) {
        analysis_layer_view_t L;
        analysis_get_layer_view(L, A, j);
        assert_int_equal(L->weight, j + 1);
        assert_int_equal(L->free_rank, rank[j]);
        assert_int_equal(L->count, rank[j]);
        assert_int_equal(L->ntors, 0);
        assert_int_equal(L->q_ntors, 0);
        assert_ptr_equal(L->group_str, A->layers[j].group_str);
        assert_ptr_equal(L->rho_str, A->layers[j].rho_str);
        assert_ptr_equal(L->matrix, A->layers[j].matrix);
        assert_int_equal(fmpz_mat_nrows(L->matrix), rank[j]);
        assert_int_equal(L->nev, rank[j]);
        assert_non_null(L->basis);
        assert_non_null(L->pc_labels);
    }
    analysis_layer_view_t L2;
    analysis_get_layer_view(L2, A, 1);
    assert_true(fmpz_is_one(L2->det)); /* det [[2,1],[1,1]] = 1 */

    /* eigenvalues of layer 1 in doubles: (3 +- sqrt 5)/2, real */
    double re[2], im[2];
    for (slong k = 0; k < 2; k++)
        assert_int_equal(analysis_get_eigenvalue_d(re + k, im + k, A, 0, k), 1);
    double big = (3 + sqrt(5.0)) / 2, small = (3 - sqrt(5.0)) / 2;
    assert_true(fabs(re[0] - big) < 1e-12 && im[0] == 0); /* decreasing modulus */
    assert_true(fabs(re[1] - small) < 1e-12 && im[1] == 0);
    /* out of range: nothing */
    assert_int_equal(analysis_get_eigenvalue_d(re, im, A, 0, 2), 0);
    assert_true(re[0] == 0 && im[0] == 0);
    assert_int_equal(analysis_get_eigenvalue_d(re, im, A, 3, 0), 0);
    analysis_clear(A);
}

static void abelian_stabilises(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "<a, b | [a,b]>", 3);
    analysis_view_t V;
    analysis_get_view(V, A);
    assert_true(V->has_group);
    assert_int_equal(V->class_reached, 1);
    assert_true(V->stabilised);
    assert_int_equal(V->npc, 2);
    assert_int_equal(V->hirsch_length, 2);
    assert_int_equal(V->nlayers, 3); /* the trivial layers 2 and 3 included */
    assert_false(V->has_map);
    assert_null(V->endo);
    analysis_layer_view_t L;
    analysis_get_layer_view(L, A, 2);
    assert_int_equal(L->count, 0);
    assert_int_equal(L->free_rank, 0);
    analysis_clear(A);
}

static void torsion_z_times_z2(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "<a, b | b^2, [a,b]>", 2);
    analysis_view_t V;
    analysis_get_view(V, A);
    assert_false(V->layers_torsion_free);
    assert_true(fmpz_equal_ui(V->tors_order, 2));
    assert_true(V->tors_abelian);
    assert_int_equal(V->tors_ninv, 1);
    assert_true(fmpz_equal_ui(V->tors_inv, 2));
    assert_false(V->tors_finite);
    analysis_layer_view_t L;
    analysis_get_layer_view(L, A, 0);
    assert_int_equal(L->free_rank, 1);
    assert_int_equal(L->ntors, 1);
    assert_string_equal(L->group_str, "Z + Z/2");
    analysis_clear(A);
}

static void no_group(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_view_t V;
    analysis_get_view(V, A);
    assert_false(V->has_group);
    assert_false(V->has_map);
    assert_int_equal(V->nlayers, 0);
    assert_null(V->quotient);
    assert_null(V->endo);
    assert_null(V->pres);
    double re, im;
    assert_int_equal(analysis_get_eigenvalue_d(&re, &im, A, 0, 0), 0);
    analysis_clear(A);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(free_rank2_class3_golden),
        cmocka_unit_test(abelian_stabilises),
        cmocka_unit_test(torsion_z_times_z2),
        cmocka_unit_test(no_group),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
