/* bench_nq_common.h — the harness of the bench_nq_* programs, one program
 * per group so that bench/run-bench reports each one's wall time and peak
 * memory on its own.
 *
 * bench_nq_run parses a presentation, runs nq_compute to the requested
 * class, and prints the layer ranks it computed next to those of a published
 * formula, then the number of pc generators and the CPU time of nq_compute.
 * It returns the program's exit status: 0 when every layer is free abelian
 * of the formula's rank and the class was reached, 1 otherwise or when
 * parsing or nq_compute fails (the error goes to stderr).
 *
 * A floor measured in the same run (issue 10), only when the environment
 * has NILSTEP_BENCH_FLOOR=1 (bench/run-bench runs each bench_nq_* program
 * a second time so, after the timed run, whose whole-process figures the
 * floor must not touch): the relation matrix of the last class step
 * (nq_tail_relations_get_mat), its rank mod the word-size prime
 * n_nextprime(2^62) by FLINT's nmod_mat_rank, and the ratios (the last
 * step's elimination) / floor and (the whole nq_compute) / floor, all CPU
 * seconds of this one process, with the 1-minute load average.  The
 * elimination is timed through the progress hook's stages ("class c:
 * elimination" up to the next stage, "class c: layer basis", so the
 * change of basis of the new layer is not counted as elimination).  Matrices of more than
 * NILSTEP_BENCH_FLOOR_CAP entries (default 16,000,000) are not built and
 * the floor is reported as skipped.
 *
 * Header-only: each benchmark is a program of its own. */
#ifndef NILSTEP_BENCH_NQ_COMMON_H
#define NILSTEP_BENCH_NQ_COMMON_H

#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include <string.h>

#include <flint/nmod_mat.h>
#include <flint/ulong_extras.h>

#include "nq.h"

/* Moebius function of n >= 1 by trial division. */
static inline long moebius(long n)
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
static inline void witt_rank(fmpz_t out, ulong r, ulong n)
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

/* J. P. Labute, "On the descending central series of groups with a single
 * defining relation", J. Algebra 14 (1970): layer n of the genus-g surface
 * group has rank (1/n) sum_{d|n} mu(n/d) sum_{i=0}^{floor(d/2)} (-1)^i
 * d/(d-i) C(d-i,i) (2g)^(d-2i). */
static inline void labute_rank_q2(fmpz_t out, ulong m, ulong n);
static inline void labute_rank(fmpz_t out, ulong g, ulong n)
{
    labute_rank_q2(out, 2 * g, n);
}

/* The same formula for one relator on m generators whose image in layer 2
 * of the free Lie ring is not a proper multiple (Labute 1970: prod_n
 * (1 - t^n)^(c_n) = 1 - m t + t^2); with m = 2g the surface group. */
static inline void labute_rank_q2(fmpz_t out, ulong m, ulong n)
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
            fmpz_set_ui(t, m);
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

static inline double bench_cpu_seconds(void)
{
    return (double)clock() / CLOCKS_PER_SEC;
}

static inline double bench_load1(void)
{
    double l = -1;
    FILE *f = fopen("/proc/loadavg", "r");
    if (f) {
        if (fscanf(f, "%lf", &l) != 1)
            l = -1;
        fclose(f);
    }
    return l;
}

/* The progress hook's context: the CPU time spent in the elimination of
 * the latest class step seen. */
typedef struct {
    int in_elim;
    double t_start, t_elim;
} bench_nq_clock;

static inline int bench_nq_stage(void *vctx, const char *stage, double fraction)
{
    (void)fraction;
    bench_nq_clock *k = vctx;
    if (!stage)
        return 0;
    double t = bench_cpu_seconds();
    if (k->in_elim) {
        k->t_elim = t - k->t_start;
        k->in_elim = 0;
    }
    size_t n = strlen(stage), m = strlen(": elimination");
    if (n >= m && strcmp(stage + n - m, ": elimination") == 0) {
        k->in_elim = 1;
        k->t_start = t;
    }
    return 0;
}

/* With NILSTEP_BENCH_FLOOR=1, prints the floor and the ratios (see the top
 * of this file); otherwise nothing. */
static inline void bench_nq_floor(const nq_t Q, double t_nq,
                                  const bench_nq_clock *k)
{
    const char *want = getenv("NILSTEP_BENCH_FLOOR");
    if (!want || strcmp(want, "1") != 0)
        return;
    if (Q->class_reached < 2) {
        printf("  floor: no class step\n");
        return;
    }
    slong cap = 16000000;
    const char *e = getenv("NILSTEP_BENCH_FLOOR_CAP");
    if (e && atol(e) > 0)
        cap = atol(e);
    slong c = Q->class_reached - 1;
    fmpz_mat_t R;
    nserr_t err;
    nserr_init(err);
    fmpz_mat_init(R, 0, 0);
    if (nq_tail_relations_get_mat(R, Q, c, cap, err) != NS_OK) {
        printf("  floor: skipped (%s)\n", err->msg);
        fmpz_mat_clear(R);
        nserr_clear(err);
        return;
    }
    mp_limb_t p = n_nextprime(UWORD(1) << 62, 1);
    nmod_mat_t M;
    nmod_mat_init(M, fmpz_mat_nrows(R), fmpz_mat_ncols(R), p);
    fmpz_mat_get_nmod_mat(M, R);
    double t0 = bench_cpu_seconds();
    slong r = nmod_mat_rank(M);
    double fl = bench_cpu_seconds() - t0;
    nmod_mat_clear(M);
    double flr = fl > 1e-6 ? fl : 1e-6; /* clock() ticks; avoid dividing by 0 */
    printf("  floor %.4f s, ratio %.3g (elimination %.4f s), ratio %.3g (nq_compute %.3f s), "
           "load %.2f; rank %ld of the %ld x %ld relations of step %ld -> %ld mod "
           "n_nextprime(2^62)\n",
           fl, k->t_elim / flr, k->t_elim, t_nq / flr, t_nq, bench_load1(), (long)r,
           (long)fmpz_mat_nrows(R), (long)fmpz_mat_ncols(R), (long)c, (long)(c + 1));
    fmpz_mat_clear(R);
    nserr_clear(err);
}

/* One benchmark: the group, the class, and the formula its layers follow. */
typedef struct {
    const char *program; /* prefix of every line printed */
    const char *group;   /* what the presentation is, for the first line */
    const char *text;    /* the presentation */
    slong c;             /* the class asked of nq_compute */
    const char *formula; /* the formula's name, for the line of its ranks */
    void (*rank)(fmpz_t out, ulong param, ulong n); /* rank of layer n */
    ulong param;                                    /* the formula's parameter: rank or genus */
    int coords; /* 1: also the layer coordinates every report needs (layer.h) */
} bench_nq_case;

static inline int bench_nq_run(const bench_nq_case *b)
{
    pres_t p;
    nserr_t err;
    nq_t Q;
    pres_init(p);
    nserr_init(err);
    nq_init(Q);
    if (pres_parse(p, b->text, 1, 1, err) != NS_OK) {
        fprintf(stderr, "%s: %s\n", b->program, err->msg);
        return 1;
    }
    bench_nq_clock k = {0, 0, 0};
    ns_progress_t prog = {bench_nq_stage, &k};
    double t0 = bench_cpu_seconds();
    ns_status st = nq_compute(Q, p, b->c, &prog, err);
    double t1 = bench_cpu_seconds();
    if (st != NS_OK) {
        fprintf(stderr, "%s: nq_compute: %s\n", b->program, err->msg);
        return 1;
    }
    printf("%s: %s, class %ld\n", b->program, b->group, (long)b->c);
    printf("  layer ranks:");
    int ok = Q->class_reached == b->c;
    fmpz_t want;
    fmpz_init(want);
    for (slong j = 0; j < Q->nlayers; j++) {
        printf(" %ld", (long)Q->layers[j].free_rank);
        b->rank(want, b->param, (ulong)(j + 1));
        if (!fmpz_equal_si(want, Q->layers[j].free_rank) || Q->layers[j].ntors)
            ok = 0;
    }
    printf("\n  %s:", b->formula);
    for (slong j = 1; j <= b->c; j++) {
        b->rank(want, b->param, (ulong)j);
        printf(" ");
        fmpz_print(want);
    }
    printf("\n  %ld pc generators, nq_compute %.3f s CPU%s\n", (long)Q->pcp->n, t1 - t0,
           ok ? "" : "  MISMATCH");
    bench_nq_floor(Q, t1 - t0, &k);
    if (b->coords) {
        t0 = bench_cpu_seconds();
        for (slong j = 0; j < Q->nlayers; j++)
            layer_ensure_coords(Q->layers + j);
        printf("  layer coordinates %.3f s CPU\n", bench_cpu_seconds() - t0);
    }
    fmpz_clear(want);
    nq_clear(Q);
    pres_clear(p);
    return ok ? 0 : 1;
}

/* A finite quotient: nq_compute to class c, each layer compared with the
 * base-2 logarithm of its expected order (finite 2-groups here; the values
 * come from the caller, who names their source).  Prints the layer orders,
 * the number of pc generators and the CPU time; returns 0 when every layer
 * is finite of the expected order and the class was reached. */
static inline int bench_nq_run_2group(const char *program, const char *text, slong c,
                               const slong *log2_order)
{
    pres_t p;
    nserr_t err;
    nq_t Q;
    pres_init(p);
    nserr_init(err);
    nq_init(Q);
    if (pres_parse(p, text, 1, 1, err) != NS_OK) {
        fprintf(stderr, "%s: %s\n", program, err->msg);
        return 1;
    }
    bench_nq_clock k = {0, 0, 0};
    ns_progress_t prog = {bench_nq_stage, &k};
    double t0 = bench_cpu_seconds();
    ns_status st = nq_compute(Q, p, c, &prog, err);
    double t1 = bench_cpu_seconds();
    if (st != NS_OK) {
        fprintf(stderr, "%s: nq_compute: %s\n", program, err->msg);
        return 1;
    }
    printf("%s: %s, class %ld\n  log2 of the layer orders:", program, text, (long)c);
    int ok = Q->class_reached == c;
    for (slong j = 0; j < Q->nlayers; j++) {
        const layer_struct *L = Q->layers + j;
        slong lg = 0;
        for (slong k = 0; k < L->ntors; k++) {
            slong b = (slong)fmpz_bits(L->torsion + k) - 1;
            if ((slong)fmpz_val2(L->torsion + k) != b) /* not a power of 2 */
                ok = 0;
            lg += b;
        }
        printf(" %ld", (long)lg);
        if (L->free_rank || lg != log2_order[j])
            ok = 0;
    }
    printf("\n  expected:");
    for (slong j = 0; j < c; j++)
        printf(" %ld", (long)log2_order[j]);
    printf("\n  %ld pc generators, nq_compute %.3f s CPU%s\n", (long)Q->pcp->n, t1 - t0,
           ok ? "" : "  MISMATCH");
    bench_nq_floor(Q, t1 - t0, &k);
    nq_clear(Q);
    pres_clear(p);
    return ok ? 0 : 1;
}

#endif
