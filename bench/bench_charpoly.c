/* bench_charpoly.c — characteristic polynomials of the largest layers nilstep
 * meets: the 810-dimensional layer 8 of the free group of rank 3 at class 8
 * and the 335-dimensional layer 12 of the free group of rank 2 at class 12
 * (Witt's formula gives both dimensions), under maps of our own choosing.
 *
 * For each case it prints: the dimension; the number of primes our proven
 * bound asks for next to the number the coefficients actually need; then
 * two routes, each with a floor measured in the same run and the ratio
 * time / floor:
 *   - charpoly_free_lie, the route the analysis takes on a free group
 *     (Brandt's formula from the layer-1 matrix, charpoly.h), against the
 *     least any multimodular method could spend: FLINT's nmod_mat_charpoly
 *     for one prime times the primes the coefficients need (a perfect
 *     bound), divided by the threads;
 *   - charpoly_compute, for any matrix (skipped with NILSTEP_BENCH_QUICK),
 *     against FLINT's nmod_mat_charpoly for one prime times the primes of
 *     the same proven bound, divided by the threads, i.e. FLINT's own
 *     arithmetic with the same bound and perfect parallel speed-up;
 * and the machine's load average, so that figures from a loaded machine
 * are read as such.
 * Then a group that is not free, layer 6 of surface(2) at class 6 under a
 * Dehn twist on each handle (with NILSTEP_BENCH_DEEP also layer 7 of
 * surface(2) at class 7 and layer 5 of surface(3) at class 5, minutes
 * each, the general bound's run the longest; arguments pick cases by
 * the keys listed at main): the primes of the general bound and of the bound
 * from layer 1's eigenvalues (charpoly_lie_bound_bits, the analysis'
 * route) and what the coefficients need; charpoly_compute_bounded with the
 * latter and (unless NILSTEP_BENCH_QUICK) charpoly_compute with the
 * former, each against FLINT's nmod_mat_charpoly for one prime times its
 * own primes over the threads.
 * The result is checked against FLINT's fmpz_mat_charpoly only when
 * NILSTEP_BENCH_CHECK is set (it takes minutes).  Targets (issue 10): the
 * 810-dimensional case in at most 10 s. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#include <flint/fmpz_vec.h>
#include <flint/nmod_mat.h>
#include <flint/nmod_poly.h>
#include <flint/ulong_extras.h>

#include "charpoly.h"
#include "endo.h"
#include "layer.h"
#include "nq.h"
#include "pres.h"
#include "spectrum.h"

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static void print_load(void)
{
    double l[3];
    FILE *f = fopen("/proc/loadavg", "r");
    if (f != NULL && fscanf(f, "%lf %lf %lf", &l[0], &l[1], &l[2]) == 3)
        printf("  machine load average %.2f %.2f %.2f on %ld processors\n", l[0], l[1], l[2],
               sysconf(_SC_NPROCESSORS_ONLN));
    if (f != NULL)
        fclose(f);
}

/* M := the matrix the map induces on the top layer of the class-c quotient. */
static int layer_matrix(fmpz_mat_t M, fmpz_mat_t M1, const char *group, slong c,
                        const char *map)
{
    pres_t P;
    nq_t Q;
    endo_t E;
    nserr_t err;
    int ok = 0;
    pres_init(P);
    nq_init(Q);
    endo_init(E);
    nserr_init(err);
    double t0 = now();
    expr_struct *im = NULL;
    slong ngens = 0;
    if (pres_parse(P, group, 1, 1, err) != NS_OK || nq_compute(Q, P, c, NULL, err) != NS_OK)
        goto done;
    ngens = P->gens->n;
    im = flint_malloc(sizeof(expr_struct) * ngens);
    for (slong i = 0; i < ngens; i++)
        expr_init(im + i);
    if (pres_parse_map(im, P, map, 1, 1, err) != NS_OK
        || endo_set(E, Q, im, NULL, err) != NS_OK)
        goto done;
    layer_struct *L = Q->layers + (c - 1); /* borrowed from the quotient */
    layer_ensure_coords(L);
    fmpz_mat_t A;
    fmpz_mat_init(A, 0, 0);
    endo_layer_matrices(A, M, E, L);
    layer_ensure_coords(Q->layers + 0);
    endo_layer_matrices(A, M1, E, Q->layers + 0);
    fmpz_mat_clear(A);
    printf("  %s class %ld, %s: quotient and layer matrix in %.2f s (not timed below)\n", group,
           (long)c, map, now() - t0);
    ok = 1;
done:
    if (!ok)
        fprintf(stderr, "bench_charpoly: %s\n", err->msg);
    for (slong i = 0; i < ngens; i++)
        expr_clear(im + i);
    flint_free(im);
    endo_clear(E);
    nq_clear(Q);
    pres_clear(P);
    return ok;
}

static int run(const char *name, const char *group, slong c, const char *map)
{
    fmpz_mat_t M, M1;
    fmpz_poly_t cp, ref;
    nserr_t err;
    printf("%s\n", name);
    fmpz_mat_init(M, 0, 0);
    fmpz_mat_init(M1, 0, 0);
    if (!layer_matrix(M, M1, group, c, map)) {
        fmpz_mat_clear(M);
        fmpz_mat_clear(M1);
        return 1;
    }
    slong d = fmpz_mat_nrows(M), np = charpoly_num_primes(M);
    long threads = sysconf(_SC_NPROCESSORS_ONLN);
    if (threads < 1)
        threads = 1;
    if (threads > CHARPOLY_MAX_THREADS)
        threads = CHARPOLY_MAX_THREADS;
    fmpz_poly_init(cp);
    fmpz_poly_init(ref);
    nserr_init(err);
    print_load();

    /* the floor: FLINT's nmod_mat_charpoly on one prime of the same size */
    nmod_mat_t Mp;
    nmod_poly_t r;
    mp_limb_t p = n_nextprime(UWORD(1) << (FLINT_BITS - 2), 1);
    nmod_mat_init(Mp, d, d, p);
    nmod_poly_init(r, p);
    double t0 = now();
    fmpz_mat_get_nmod_mat(Mp, M);
    nmod_mat_charpoly(r, Mp);
    double one = now() - t0;
    nmod_mat_clear(Mp);
    nmod_poly_clear(r);
    double floor = one * (double)np / (double)FLINT_MIN(threads, np);

    /* the route the analysis takes on a free group: Brandt's formula from
       the layer-1 matrix (charpoly.h) */
    t0 = now();
    ns_status st = charpoly_free_lie(cp, M1, c, NULL, err);
    double tl = now() - t0;
    slong need = FLINT_ABS(_fmpz_vec_max_bits(cp->coeffs, cp->length));
    slong np_need = (need + 1) / 62 + 1;
    /* the least any multimodular method could spend: FLINT's per-prime
       arithmetic on only the primes the coefficients need (a perfect
       bound), perfectly parallel */
    double floor_need = one * (double)np_need / (double)FLINT_MIN(threads, np_need);
    printf("  dimension %ld; bound %ld bits -> %ld primes (the coefficients need %ld bits, %ld "
           "primes)\n",
           (long)d, (long)charpoly_bound_bits(M), (long)np, (long)need, (long)np_need);
    printf("  %-48s %8s %8s %6s\n", "", "time", "floor", "ratio");
    printf("  %-48s %7.2fs %7.2fs %6.2f\n", "charpoly_free_lie (Brandt), the analysis' route", tl,
           floor_need, tl / floor_need);
    int bad = st != NS_OK;
    if (!getenv("NILSTEP_BENCH_QUICK")) {
        fmpz_poly_t g;
        fmpz_poly_init(g);
        t0 = now();
        st = charpoly_compute(g, M, 0, NULL, err);
        double t = now() - t0;
        printf("  %-48s %7.2fs %7.2fs %6.2f\n", "charpoly_compute (any matrix), all processors",
               t, floor, t / floor);
        if (st != NS_OK || !fmpz_poly_equal(g, cp)) {
            printf("  MISMATCH between the two routes\n");
            bad = 1;
        }
        fmpz_poly_clear(g);
    }
    if (getenv("NILSTEP_BENCH_CHECK")) {
        fmpz_poly_zero(ref);
        t0 = now();
        fmpz_mat_charpoly(ref, M);
        printf("  %-40s %7.2fs\n", "fmpz_mat_charpoly (FLINT, its own bound)", now() - t0);
        if (!fmpz_poly_equal(ref, cp)) {
            printf("  MISMATCH with fmpz_mat_charpoly\n");
            bad = 1;
        }
    }
    fmpz_poly_clear(cp);
    fmpz_poly_clear(ref);
    fmpz_mat_clear(M);
    fmpz_mat_clear(M1);
    return bad;
}

/* A layer of a group that is not free: no Brandt route, but the bound of
 * charpoly_lie_bound_bits from layer 1's certified eigenvalues (the route
 * the analysis takes, src/analysis.c) against the general bound of
 * charpoly.h; each timed against its floor, FLINT's nmod_mat_charpoly for
 * one prime times its primes over the threads. */
static int run_nonfree(const char *name, const char *group, slong c, const char *map)
{
    fmpz_mat_t M, M1;
    fmpz_poly_t cp, g;
    spectrum_t S1;
    nserr_t err;
    printf("%s\n", name);
    fmpz_mat_init(M, 0, 0);
    fmpz_mat_init(M1, 0, 0);
    if (!layer_matrix(M, M1, group, c, map)) {
        fmpz_mat_clear(M);
        fmpz_mat_clear(M1);
        return 1;
    }
    fmpz_poly_init(cp);
    fmpz_poly_init(g);
    spectrum_init(S1);
    nserr_init(err);
    slong d = fmpz_mat_nrows(M), r = fmpz_mat_nrows(M1);
    long threads = sysconf(_SC_NPROCESSORS_ONLN);
    threads = FLINT_MAX(1, FLINT_MIN(threads, CHARPOLY_MAX_THREADS));
    print_load();

    /* the bound: layer 1's spectrum (small) and the Witt contents */
    double t0 = now();
    int bad = spectrum_compute(S1, M1, err) != NS_OK;
    mag_struct *u = flint_malloc(sizeof(mag_struct) * FLINT_MAX(r, 1));
    for (slong i = 0; i < r; i++) {
        mag_init(u + i);
        arb_get_mag(u + i, spectrum_eigenvalue_abs(S1, i));
    }
    slong bits = charpoly_lie_bound_bits(u, r, c, d);
    double tb = now() - t0;
    slong np_old = charpoly_num_primes(M), np_new = charpoly_num_primes_bounded(M, bits);

    nmod_mat_t Mp;
    nmod_poly_t rp;
    mp_limb_t p = n_nextprime(UWORD(1) << (FLINT_BITS - 2), 1);
    nmod_mat_init(Mp, d, d, p);
    nmod_poly_init(rp, p);
    t0 = now();
    fmpz_mat_get_nmod_mat(Mp, M);
    nmod_mat_charpoly(rp, Mp);
    double one = now() - t0;
    nmod_mat_clear(Mp);
    nmod_poly_clear(rp);

    t0 = now();
    bad |= charpoly_compute_bounded(cp, M, bits, 0, NULL, err) != NS_OK;
    double t_new = now() - t0;
    slong need = FLINT_ABS(_fmpz_vec_max_bits(cp->coeffs, cp->length));
    printf("  dimension %ld; general bound %ld bits -> %ld primes; layer-1 bound %ld bits -> "
           "%ld primes (in %.3f s); the coefficients need %ld bits, %ld primes\n",
           (long)d, (long)charpoly_bound_bits(M), (long)np_old, (long)bits, (long)np_new, tb,
           (long)need, (long)((need + 1) / 62 + 1));
    printf("  %-48s %8s %8s %6s\n", "", "time", "floor", "ratio");
    double f_new = one * (double)np_new / (double)FLINT_MIN(threads, np_new);
    printf("  %-48s %7.2fs %7.2fs %6.2f\n", "charpoly_compute_bounded (layer-1 bound)", t_new,
           f_new, t_new / f_new);
    if (!getenv("NILSTEP_BENCH_QUICK")) {
        t0 = now();
        bad |= charpoly_compute(g, M, 0, NULL, err) != NS_OK;
        double t_old = now() - t0;
        double f_old = one * (double)np_old / (double)FLINT_MIN(threads, np_old);
        printf("  %-48s %7.2fs %7.2fs %6.2f\n", "charpoly_compute (general bound)", t_old, f_old,
               t_old / f_old);
        if (!fmpz_poly_equal(g, cp)) {
            printf("  MISMATCH between the two bounds\n");
            bad = 1;
        }
    }
    if (getenv("NILSTEP_BENCH_CHECK")) {
        fmpz_poly_zero(g);
        fmpz_mat_charpoly(g, M);
        if (!fmpz_poly_equal(g, cp)) {
            printf("  MISMATCH with fmpz_mat_charpoly\n");
            bad = 1;
        }
    }
    print_load();
    for (slong i = 0; i < r; i++)
        mag_clear(u + i);
    flint_free(u);
    spectrum_clear(S1);
    nserr_clear(err);
    fmpz_poly_clear(cp);
    fmpz_poly_clear(g);
    fmpz_mat_clear(M);
    fmpz_mat_clear(M1);
    return bad;
}

/* Which cases run: every default one, or with an argument only those
 * whose key it names (free3c8, free2c12, surface2c6, surface2c7,
 * surface3c5; the last two also without NILSTEP_BENCH_DEEP). */
static int wanted(int argc, char **argv, const char *key, int by_default)
{
    if (argc < 2)
        return by_default;
    for (int i = 1; i < argc; i++)
        if (strcmp(argv[i], key) == 0)
            return 1;
    return 0;
}

int main(int argc, char **argv)
{
    int bad = 0;
    int deep = getenv("NILSTEP_BENCH_DEEP") != NULL, quick = getenv("NILSTEP_BENCH_QUICK") != NULL;
    const char *twists2 = "a1 -> b1 a1, b1 -> b1 a1 b1, a2 -> b2 a2, b2 -> b2 a2 b2";
    setvbuf(stdout, NULL, _IOLBF, 0);
    if (wanted(argc, argv, "free3c8", 1))
        bad |= run("layer 8 of free(3) at class 8 (target: at most 10 s)", "free(3)", 8,
                   "a -> a^2 b, b -> a b c, c -> b c");
    if (wanted(argc, argv, "free2c12", !quick))
        bad |= run("layer 12 of free(2) at class 12", "free(2)", 12, "a -> a^2 b, b -> a b");
    if (wanted(argc, argv, "surface2c6", 1))
        bad |= run_nonfree("layer 6 of surface(2) at class 6, a Dehn twist on each handle",
                           "surface(2)", 6, twists2);
    if (wanted(argc, argv, "surface2c7", deep))
        bad |= run_nonfree("layer 7 of surface(2) at class 7, a Dehn twist on each handle",
                           "surface(2)", 7, twists2);
    if (wanted(argc, argv, "surface3c5", deep))
        bad |= run_nonfree("layer 5 of surface(3) at class 5, a Dehn twist on each handle",
                           "surface(3)", 5,
                           "a1 -> b1 a1, b1 -> b1 a1 b1, a2 -> b2 a2, b2 -> b2 a2 b2, "
                           "a3 -> b3 a3, b3 -> b3 a3 b3");
    flint_cleanup_master();
    return bad;
}
