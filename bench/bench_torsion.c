/* bench_torsion.c — the torsion subgroup T and Gc/T next to the quotient
 * itself, and the count of twisted classes of a finite Gc.
 *
 * Goals (doc/torsion.md): torsion_compute within 2x the CPU time of
 * nq_compute for the genus-2 surface group times Z/2 and for <a, b | a^8,
 * b^8>, both at class 6; R(alpha) for a finite Gc of about 10^5 elements
 * (the Heisenberg group mod 47, 47^3 = 103823) within 5 s.  Prints the
 * figures and whether each goal is met; exits 1 only when a result is wrong
 * (|T| = 2 for the first group, T = Gc for the second, and for the third
 * R = 47: alpha = (x -> x^2 y, y -> x y) acts on the abelianisation
 * (Z/47)^2 by M = [[2,1],[1,1]] and on the centre by det M = 1, so by the
 * sum formula of doc/torsion.md over the central series Z/47 < G, with
 * det(I - M) = -1 a unit mod 47, R = |coker(1 - 1) on Z/47| = 47). */
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include "endo.h"
#include "layer.h"
#include "nq.h"
#include "torsion.h"

static double cpu(void)
{
    return (double)clock() / CLOCKS_PER_SEC;
}

typedef struct {
    pres_t p;
    nq_t Q;
    const layer_struct **lp;
    torsion_t T;
} run_t;

static int setup(run_t *r, const char *text, slong c, double *t_nq, double *t_tors)
{
    nserr_t err;
    nserr_init(err);
    pres_init(r->p);
    nq_init(r->Q);
    torsion_init(r->T);
    if (pres_parse(r->p, text, 1, 1, err) != NS_OK) {
        fprintf(stderr, "bench_torsion: %s\n", err->msg);
        return 1;
    }
    double t0 = cpu();
    if (nq_compute(r->Q, r->p, c, NULL, err) != NS_OK) {
        fprintf(stderr, "bench_torsion: nq_compute: %s\n", err->msg);
        return 1;
    }
    double t1 = cpu();
    slong cr = r->Q->class_reached;
    r->lp = malloc((size_t)FLINT_MAX(cr, 1) * sizeof(layer_struct *));
    for (slong j = 0; j < cr; j++) {
        /* the quotient owns its layers; their free-part coordinates are
         * computed on first use, as the analysis does */
        layer_ensure_coords(r->Q->layers + j);
        r->lp[j] = r->Q->layers + j;
    }
    double t2 = cpu();
    if (torsion_compute(r->T, r->Q, r->lp, NULL, err) != NS_OK) {
        fprintf(stderr, "bench_torsion: torsion_compute: %s\n", err->msg);
        return 1;
    }
    double t3 = cpu();
    *t_nq = t1 - t0;
    *t_tors = t3 - t2;
    nserr_clear(err);
    return 0;
}

static void teardown(run_t *r)
{
    free(r->lp);
    torsion_clear(r->T);
    nq_clear(r->Q);
    pres_clear(r->p);
}

static int quotient_case(const char *name, const char *text, slong c, int want_finite,
                         slong want_order)
{
    run_t r;
    double tq, tt;
    if (setup(&r, text, c, &tq, &tt))
        return 1;
    int ok = r.T->finite == want_finite && (want_order < 0 || fmpz_equal_si(r.T->order, want_order));
    printf("bench_torsion: %s, class %ld: %ld pc generators, |T| = ", name, (long)c,
           (long)r.Q->pcp->n);
    fmpz_print(r.T->order);
    printf("%s\n  nq_compute %.3f s CPU, torsion_compute %.3f s CPU (%.2fx; goal <= 2x: %s)%s\n",
           r.T->finite ? " (T = Gc)" : "", tq, tt, tq > 0 ? tt / tq : 0.0,
           tt <= 2 * tq + 0.01 ? "met" : "MISSED", ok ? "" : "  WRONG RESULT");
    teardown(&r);
    return ok ? 0 : 1;
}

static int counting_case(void)
{
    const char *text = "<x, y | x^47, y^47, [x,y,x], [x,y,y]>";
    run_t r;
    double tq, tt;
    if (setup(&r, text, 2, &tq, &tt))
        return 1;
    nserr_t err;
    nserr_init(err);
    expr_struct im[2];
    expr_init(im);
    expr_init(im + 1);
    endo_t E;
    endo_init(E);
    torsion_map_t M;
    torsion_map_init(M);
    int ok = 0;
    if (pres_parse_map(im, r.p, "x -> x^2 y, y -> x y", 1, 1, err) == NS_OK &&
        endo_set(E, r.Q, im, NULL, err) == NS_OK && E->valid) {
        slong cr = r.Q->class_reached;
        fmpz_mat_struct *mats = malloc((size_t)FLINT_MAX(cr, 1) * sizeof(fmpz_mat_struct));
        const fmpz_mat_struct **mp = malloc((size_t)FLINT_MAX(cr, 1) * sizeof(fmpz_mat_struct *));
        for (slong j = 0; j < cr; j++) {
            fmpz_mat_t A;
            fmpz_mat_init(A, 0, 0);
            fmpz_mat_init(mats + j, 0, 0);
            endo_layer_matrices(A, mats + j, E, r.lp[j]);
            fmpz_mat_clear(A);
            mp[j] = mats + j;
        }
        double t0 = cpu();
        ns_status st = torsion_map_compute(M, r.T, r.Q, r.lp, mp, E, 0, NULL, err);
        double t1 = cpu();
        ok = st == NS_OK && M->reid_defined && fmpz_equal_si(M->reidemeister, 47);
        printf("bench_torsion: twisted classes of Gc = Heisenberg mod 47 (|Gc| = ");
        fmpz_print(r.T->order);
        printf("): R = ");
        fmpz_print(M->reidemeister);
        printf(", fixed points ");
        fmpz_print(M->fixed_elements);
        printf(", fixed classes ");
        fmpz_print(M->fixed_classes);
        printf("\n  torsion_map_compute %.3f s CPU (goal <= 5 s: %s)%s\n", t1 - t0,
               t1 - t0 <= 5.0 ? "met" : "MISSED", ok ? "" : "  WRONG RESULT");
        for (slong j = 0; j < cr; j++)
            fmpz_mat_clear(mats + j);
        free(mats);
        free(mp);
    } else
        fprintf(stderr, "bench_torsion: the map: %s\n", err->msg);
    torsion_map_clear(M);
    endo_clear(E);
    expr_clear(im);
    expr_clear(im + 1);
    nserr_clear(err);
    teardown(&r);
    return ok ? 0 : 1;
}

int main(void)
{
    int bad = 0;
    bad |= quotient_case("genus-2 surface group x Z/2",
                         "<a1, b1, a2, b2, z | [a1,b1][a2,b2], z^2, [z,a1], [z,b1], [z,a2], "
                         "[z,b2]>",
                         6, 0, 2);
    bad |= quotient_case("<a, b | a^8, b^8>", "<a, b | a^8, b^8>", 6, 1, -1);
    bad |= counting_case();
    return bad;
}
