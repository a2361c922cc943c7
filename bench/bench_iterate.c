/* bench_iterate.c — iterates alpha^n(w) (src/iterate.c) and the slices of
 * the explorer's iterates screen.
 *
 *  1. 1000 iterates of the automorphism a -> b, b -> c, c -> a b of the
 *     free nilpotent group of rank 3 and class 4 (Hirsch length 32), each
 *     described (coordinates per layer, digits, the root of the norm):
 *     target 1 s;
 *  2. 10,000 iterates of a -> a^2 b, b -> a b on the Heisenberg group:
 *     target 1 s;
 *  3. the longest single step in 1 and 2, and the longest slice of the
 *     word-length search cut at 25 ms as the explorer cuts it: the
 *     explorer reads keys between steps and slices, target 50 ms;
 *  4. torsion (<a, b | [a,b]^6> at class 3, the torsion-layers scenario,
 *     a -> a^2 b, b -> a b): 300 iterates step by step, target 1 s; 10,000
 *     iterates in jumps of 1000 (as --every 1000 asks), target 1 s; 300
 *     iterates of an element with 100-digit exponents, target 1 s.  Each
 *     of these stops after a budget of 60 s of wall time and says at which
 *     step (the route that stepped in the torsion group itself took hours
 *     for 300 steps);
 *  5. a map with no lift to the cover: <a, b | [a,b]^6> at class 6 (no
 *     cover there), a -> a^2 b, b -> a b, 300 iterates in jumps of 10,
 *     through the free nilpotent group of class 6: target 1 s (stepping in
 *     the torsion group took 57 s of CPU for 30 steps).
 * Nothing is asserted; the machine may be shared, so the CPU time of the
 * thread is printed beside the wall clock (under load the wall clock of a
 * 25 ms slice also counts the time other processes hold the cores). */
#include <stdio.h>
#include <time.h>

#include "endo.h"
#include "iterate_norm.h"
#include "pres.h"
#include "wordlen.h"

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* CPU time of this thread: on a shared machine the wall clock also counts
 * the time other processes hold the cores; both are printed. */
static double cpu_now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_THREAD_CPUTIME_ID, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static double longest_step, longest_step_cpu;

static void print_load(void)
{
    double l[3];
    FILE *f = fopen("/proc/loadavg", "r");
    if (f != NULL && fscanf(f, "%lf %lf %lf", &l[0], &l[1], &l[2]) == 3)
        printf("  machine load average %.2f %.2f %.2f\n", l[0], l[1], l[2]);
    if (f != NULL)
        fclose(f);
}

static int setup(nq_t Q, endo_t E, const char *pres_text, slong c, const char *map)
{
    pres_t G;
    nserr_t err;
    pres_init(G);
    nserr_init(err);
    int ok = pres_parse(G, pres_text, 1, 1, err) == NS_OK &&
             nq_compute(Q, G, c, NULL, err) == NS_OK;
    slong X = G->gens->n;
    expr_struct *im = flint_malloc(X * sizeof(expr_struct));
    for (slong x = 0; x < X; x++)
        expr_init(im + x);
    ok = ok && pres_parse_map(im, Q->pres, map, 1, 1, err) == NS_OK &&
         endo_set(E, Q, im, NULL, err) == NS_OK && E->valid;
    for (slong x = 0; x < X; x++)
        expr_clear(im + x);
    flint_free(im);
    if (!ok)
        fprintf(stderr, "bench_iterate: %s: %s\n", pres_text, err->msg);
    pres_clear(G);
    return ok;
}

/* steps iterates in jumps of `every` (1: each step), each described;
 * the start is the first generator, or with big set that generator to the
 * power 10^99 + 7 times the second to the power -3 (10^99 + 7) when
 * there are two.  Stops after budget seconds of wall time. */
/* Stops a call once the budget's deadline has passed. */
static int deadline_hook(void *ctx, const char *stage, double fraction)
{
    (void)stage;
    (void)fraction;
    return now() > *(const double *)ctx;
}

static void run_jumps(const char *what, const char *pres_text, slong c, const char *map,
                      long steps, long every, int big, double target, double budget, int load)
{
    nq_t Q;
    endo_t E;
    nq_init(Q);
    endo_init(E);
    if (!setup(Q, E, pres_text, c, map))
        goto done;
    iterate_map_t M;
    nserr_t err;
    iterate_map_init(M);
    nserr_init(err);
    double t0 = now(), c0 = cpu_now();
    iterate_map_set(M, Q, E, NULL, err);
    slong n = Q->pcp->n;
    fmpz *x = _fmpz_vec_init(n);
    fmpz_one(x); /* the first generator */
    if (big) {
        fmpz_set_ui(x, 10);
        fmpz_pow_ui(x, x, 99);
        fmpz_add_ui(x, x, 7);
        if (n > 1) {
            fmpz_mul_ui(x + 1, x, 3);
            fmpz_neg(x + 1, x + 1);
        }
    }
    iterate_point_t p;
    iterate_point_init(p);
    arb_t r;
    arb_init(r);
    double root = 0, t_adv = 0, deadline = t0 + budget;
    ns_progress_t hook = {deadline_hook, &deadline};
    long k = 0;
    while (k < steps) {
        long jump = every < steps - k ? every : steps - k;
        double s = now(), sc = cpu_now();
        if (iterate_map_advance(M, x, (ulong)jump, &hook, err) != NS_OK)
            break; /* the budget is spent */
        k += jump;
        t_adv += now() - s;
        iterate_point_set(p, M, x, (ulong)k);
        iterate_point_root(r, p, 64);
        root = arf_get_d(arb_midref(r), ARF_RND_NEAR);
        s = now() - s;
        sc = cpu_now() - sc;
        if (every == 1 && s > longest_step)
            longest_step = s;
        if (every == 1 && sc > longest_step_cpu)
            longest_step_cpu = sc;
    }
    double t = now() - t0, tc = cpu_now() - c0;
    char jumps[64] = "";
    if (every > 1)
        snprintf(jumps, sizeof jumps, " in jumps of %ld", every);
    printf("%-52s %6ld iterates%s  %8.3f s wall, %.3f s CPU  (target %.0f s; the steps %.3f s "
           "wall, describing them the rest)  root at n = %ld: %.6f  Hirsch length %ld%s\n",
           what, k, jumps, t, tc, target, t_adv, k, root, (long)Q->hirsch_length,
           k < steps ? "  STOPPED by the budget" : "");
    if (load)
        print_load();
    arb_clear(r);
    iterate_point_clear(p);
    _fmpz_vec_clear(x, n);
    iterate_map_clear(M);
    nserr_clear(err);
done:
    endo_clear(E);
    nq_clear(Q);
}

static void run(const char *what, const char *pres_text, slong c, const char *map, long steps,
                double target)
{
    run_jumps(what, pres_text, c, map, steps, 1, 0, target, 1e9, 0);
}

typedef struct {
    double start, longest, cpu_start, longest_cpu;
} slice_clock;

static int slice_hook(void *ctx, const char *stage, double fraction)
{
    (void)stage;
    (void)fraction;
    slice_clock *c = ctx;
    return now() - c->start > 0.025;
}

static void slices(void)
{
    nq_t Q;
    pres_t G;
    nserr_t err;
    nq_init(Q);
    pres_init(G);
    nserr_init(err);
    pres_parse(G, "<a, b | [a,b,a], [a,b,b]>", 1, 1, err);
    nq_compute(Q, G, 2, NULL, err);
    wordlen_t B;
    wordlen_init(B, Q, 64UL << 20);
    slice_clock c = {0, 0, 0, 0};
    ns_progress_t hook = {slice_hook, &c};
    double t0 = now();
    long nslices = 0;
    while (!B->stopped && now() - t0 < 10) {
        c.start = now();
        c.cpu_start = cpu_now();
        wordlen_grow(B, &hook);
        double s = now() - c.start, sc = cpu_now() - c.cpu_start;
        if (s > c.longest)
            c.longest = s;
        if (sc > c.longest_cpu)
            c.longest_cpu = sc;
        nslices++;
    }
    printf("%-52s %6ld slices   longest %.1f ms wall, %.1f ms CPU  (target 50 ms), radius %ld, "
           "%lu elements\n",
           "word-length search in 25 ms slices (Heisenberg)", nslices, 1e3 * c.longest,
           1e3 * c.longest_cpu,
           (long)B->complete_radius, (unsigned long)B->count);
    wordlen_clear(B);
    pres_clear(G);
    nq_clear(Q);
    nserr_clear(err);
}

int main(void)
{
    run("free nilpotent rank 3 class 4, a -> b, b -> c, c -> a b", "free(3)", 4,
        "a -> b, b -> c, c -> a b", 1000, 1);
    run("Heisenberg, a -> a^2 b, b -> a b", "<a, b | [a,b,a], [a,b,b]>", 2, "a -> a^2 b, b -> a b",
        10000, 1);
    printf("%-52s longest single step %.2f ms wall, %.2f ms CPU  (target 50 ms)\n",
           "explorer: one step", 1e3 * longest_step, 1e3 * longest_step_cpu);
    slices();
    const char *tors = "<a, b | [a,b]^6>", *tmap = "a -> a^2 b, b -> a b";
    run_jumps("torsion-layers (Z/6 in layers 2, 3), step by step", tors, 3, tmap, 300, 1, 0, 1,
              60, 1);
    run_jumps("torsion-layers, --every 1000", tors, 3, tmap, 10000, 1000, 0, 1, 60, 1);
    run_jumps("torsion-layers, from a^(10^99+7) b^(-3 (10^99+7))", tors, 3, tmap, 300, 1, 1, 1, 60, 1);
    /* no cover at class 6 (inconsistent without the power relations), so
       no lift: through the free nilpotent group of class 6 */
    run_jumps("<a,b | [a,b]^6> class 6 (no lift), --every 10", tors, 6, tmap, 300, 10, 0, 1, 60,
              1);
    return 0;
}
