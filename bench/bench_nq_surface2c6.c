/* bench_nq_surface2c6.c — nq_compute on the genus-2 surface group at class 6 (Labute's formula).
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

/* J. P. Labute, "On the descending central series of groups with a single
 * defining relation", J. Algebra 14 (1970): layer n of the genus-g surface
 * group has rank (1/n) sum_{d|n} mu(n/d) sum_{i=0}^{floor(d/2)} (-1)^i
 * d/(d-i) C(d-i,i) (2g)^(d-2i). */
static void expected_rank(fmpz_t out, ulong g, ulong n)
{
    fmpz_t inner, t, b;
    fmpz_init(inner);
    fmpz_init(t);
    fmpz_init(b);
    fmpz_zero(out);
    for (ulong d = 1; d <= n; d++) {
        if (n % d)
            continue;
        fmpz_zero(inner);
        for (ulong i = 0; i <= d / 2; i++) {
            fmpz_bin_uiui(b, d - i, i);
            fmpz_mul_ui(b, b, d);
            fmpz_divexact_ui(b, b, d - i);
            fmpz_set_ui(t, 2 * g);
            fmpz_pow_ui(t, t, d - 2 * i);
            fmpz_mul(t, t, b);
            if (i % 2)
                fmpz_sub(inner, inner, t);
            else
                fmpz_add(inner, inner, t);
        }
        fmpz_mul_si(inner, inner, moebius((long)(n / d)));
        fmpz_add(out, out, inner);
    }
    fmpz_divexact_ui(out, out, n);
    fmpz_clear(inner);
    fmpz_clear(t);
    fmpz_clear(b);
}

int main(void)
{
    const char *text = "<a1, b1, a2, b2 | [a1,b1] [a2,b2]>";
    const slong c = 6;
    const ulong param = 2;
    pres_t p;
    nserr_t err;
    nq_t Q;
    pres_init(p);
    nserr_init(err);
    nq_init(Q);
    if (pres_parse(p, text, 1, 1, err) != NS_OK) {
        fprintf(stderr, "bench_nq_surface2c6: %s\n", err->msg);
        return 1;
    }
    double t0 = cpu_seconds();
    ns_status st = nq_compute(Q, p, c, NULL, err);
    double t1 = cpu_seconds();
    if (st != NS_OK) {
        fprintf(stderr, "bench_nq_surface2c6: nq_compute: %s\n", err->msg);
        return 1;
    }
    printf("bench_nq_surface2c6: genus-2 surface group, class %ld\n", (long)c);
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
    printf("\n  Labute:");
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
