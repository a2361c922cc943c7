/* bench_nq_free3c6.c — nq_compute on the free group of rank 3 at class 6 (Witt's formula).
 * Prints the layer ranks it computed next to the formula's and the CPU time
 * of nq_compute; bench/run-bench adds the whole process's wall time and
 * peak memory.  Exits 1 if a rank disagrees with the formula. */
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include "nq.h"

static double cpu_seconds(void)
{
    return (double)clock() / CLOCKS_PER_SEC;
}

/* Moebius function of n >= 1 by trial division. */
static long moebius(long n)
{
    long mu = 1;
    for (long p = 2; p * p <= n; p++)
        if (n % p == 0) {
            n /= p;
            if (n % p == 0)
                return 0;
            mu = -mu;
        }
    return n > 1 ? -mu : mu;
}

/* E. Witt, "Treue Darstellung Liescher Ringe", J. reine angew. Math. 177
 * (1937): layer n of the free group of rank r has rank
 * (1/n) sum_{d|n} mu(d) r^(n/d). */
static void expected_rank(fmpz_t out, ulong r, ulong n)
{
    fmpz_t t;
    fmpz_init(t);
    fmpz_zero(out);
    for (ulong d = 1; d <= n; d++)
        if (n % d == 0) {
            fmpz_set_ui(t, r);
            fmpz_pow_ui(t, t, n / d);
            fmpz_mul_si(t, t, moebius((long)d));
            fmpz_add(out, out, t);
        }
    fmpz_divexact_ui(out, out, n);
    fmpz_clear(t);
}

int main(void)
{
    const char *text = "<a, b, c>";
    const slong c = 6;
    const ulong param = 3;
    pres_t p;
    nserr_t err;
    nq_t Q;
    pres_init(p);
    nserr_init(err);
    nq_init(Q);
    if (pres_parse(p, text, 1, 1, err) != NS_OK) {
        fprintf(stderr, "bench_nq_free3c6: %s\n", err->msg);
        return 1;
    }
    double t0 = cpu_seconds();
    ns_status st = nq_compute(Q, p, c, NULL, err);
    double t1 = cpu_seconds();
    if (st != NS_OK) {
        fprintf(stderr, "bench_nq_free3c6: nq_compute: %s\n", err->msg);
        return 1;
    }
    printf("bench_nq_free3c6: free group of rank 3, class %ld\n", (long)c);
    printf("  layer ranks:");
    int ok = Q->class_reached == c;
    fmpz_t want;
    fmpz_init(want);
    for (slong j = 0; j < Q->nlayers; j++) {
        printf(" %ld", (long)Q->layers[j].free_rank);
        expected_rank(want, param, (ulong)(j + 1));
        if (!fmpz_equal_si(want, Q->layers[j].free_rank) || Q->layers[j].ntors)
            ok = 0;
    }
    printf("\n  Witt:");
    for (slong j = 1; j <= c; j++) {
        expected_rank(want, param, (ulong)j);
        printf(" ");
        fmpz_print(want);
    }
    printf("\n  %ld pc generators, nq_compute %.3f s CPU%s\n", (long)Q->pcp->n, t1 - t0,
           ok ? "" : "  MISMATCH");
    fmpz_clear(want);
    nq_clear(Q);
    pres_clear(p);
    return ok ? 0 : 1;
}
