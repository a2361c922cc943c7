/* bench_spectrum.c — timings of spectrum_compute and the decimal strings on
 * matrices of the sizes nilstep meets: a random 100x100 matrix with entries
 * in [-3, 3], and the 56x56 third exterior power of a random 8x8 matrix
 * (its eigenvalues are the products of three eigenvalues of the 8x8 one, as
 * for a layer of a free nilpotent group, and its charpoly has large
 * irreducible factors).  Seeded by NILSTEP_SEED (default 1). */
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include "spectrum.h"

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double) t.tv_sec + 1e-9 * (double) t.tv_nsec;
}

static void random_matrix(fmpz_mat_t M, flint_rand_t st, slong bound)
{
    slong i, j;
    for (i = 0; i < fmpz_mat_nrows(M); i++)
        for (j = 0; j < fmpz_mat_ncols(M); j++)
            fmpz_set_si(fmpz_mat_entry(M, i, j),
                        (slong) n_randint(st, 2 * bound + 1) - bound);
}

/* Third exterior power: entry (I, J) is the 3x3 minor of A with rows I and
 * columns J, over the 3-subsets in lexicographic order. */
static void exterior_cube(fmpz_mat_t E, const fmpz_mat_t A)
{
    slong n = fmpz_mat_nrows(A), sub[200][3], ns = 0, a, b, c, I, J, r, s;
    fmpz_mat_t m;
    fmpz_mat_init(m, 3, 3);
    for (a = 0; a < n; a++)
        for (b = a + 1; b < n; b++)
            for (c = b + 1; c < n; c++)
            {
                sub[ns][0] = a;
                sub[ns][1] = b;
                sub[ns][2] = c;
                ns++;
            }
    for (I = 0; I < ns; I++)
        for (J = 0; J < ns; J++)
        {
            for (r = 0; r < 3; r++)
                for (s = 0; s < 3; s++)
                    fmpz_set(fmpz_mat_entry(m, r, s),
                             fmpz_mat_entry(A, sub[I][r], sub[J][s]));
            fmpz_mat_det(fmpz_mat_entry(E, I, J), m);
        }
    fmpz_mat_clear(m);
}

static void run(const char *name, const fmpz_mat_t M)
{
    spectrum_t S;
    nserr_t err;
    double t0, t1, t2;
    char *rho, *ent;
    slong k, maxdeg = 0;

    spectrum_init(S);
    nserr_init(err);
    t0 = now();
    if (spectrum_compute(S, M, err) != NS_OK)
    {
        printf("%s: error: %s\n", name, err->msg);
        spectrum_clear(S);
        return;
    }
    t1 = now();
    rho = spectrum_radius_get_str(S, 30);
    ent = spectrum_entropy_get_str(S, 30);
    t2 = now();
    for (k = 0; k < spectrum_factors(S)->num; k++)
        if (fmpz_poly_degree(spectrum_factors(S)->p + k) > maxdeg)
            maxdeg = fmpz_poly_degree(spectrum_factors(S)->p + k);
    printf("%s: compute %.3f s, strings %.3f s; %ld factors, largest degree "
           "%ld; rho %s (%s), entropy %s; |z|<1: %ld, =1: %ld, >1: %ld\n",
           name, t1 - t0, t2 - t1, (long) spectrum_factors(S)->num,
           (long) maxdeg, rho, spectrum_radius_is_exact(S) ? "exact" : "ball",
           ent, (long) spectrum_count_below_one(S),
           (long) spectrum_count_on_one(S), (long) spectrum_count_above_one(S));
    flint_free(rho);
    flint_free(ent);
    spectrum_clear(S);
    nserr_clear(err);
}

int main(void)
{
    const char *e = getenv("NILSTEP_SEED");
    ulong seed = e ? strtoul(e, NULL, 10) : 1;
    flint_rand_t st;
    fmpz_mat_t M, A, E;
    int rep;

    printf("bench_spectrum: NILSTEP_SEED=%lu\n", seed);
    flint_randinit(st);
    flint_randseed(st, seed, seed ^ 0x5bd1e995UL);

    fmpz_mat_init(M, 100, 100);
    for (rep = 0; rep < 3; rep++)
    {
        random_matrix(M, st, 3);
        run("random 100x100, entries in [-3,3]", M);
    }
    fmpz_mat_clear(M);

    fmpz_mat_init(A, 8, 8);
    fmpz_mat_init(E, 56, 56);
    for (rep = 0; rep < 3; rep++)
    {
        random_matrix(A, st, 3);
        exterior_cube(E, A);
        run("exterior cube of random 8x8 (56x56)", E);
    }
    fmpz_mat_clear(A);
    fmpz_mat_clear(E);

    flint_randclear(st);
    flint_cleanup_master();
    return 0;
}
