/* bench_scan.c — scans (src/scan.h), against the targets of README "Scans":
 *
 *  1. the 2401 maps a -> a^p b^q, b -> a^r b^s, p, q, r, s in [-3, 3], on
 *     the free nilpotent group of rank 2 and class 4, with 1 and with 2
 *     threads: at most 2 s with 2 threads, and at least 1.7 times faster
 *     than with 1;
 *  2. 100,000 maps of the Heisenberg group drawn from a box (every one well
 *     defined: z goes to the commutator of the images of x1 and y1), with
 *     2 threads: at most 30 s;
 *  3. peak memory independent of the number of members: the peak resident
 *     size after 10,000 sampled members and after all 100,000.
 *
 * Result lines are formatted as for the command and thrown away.  Nothing
 * is asserted: the figures are printed next to the targets, and the load
 * average is printed with them, since two threads only help on a machine
 * that has two idle cores.  NILSTEP_ITER scales part 2 (default 1). */
#include <stdio.h>
#include <stdlib.h>
#include <sys/resource.h>
#include <time.h>

#include "scan.h"

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static long peak_kib(void)
{
    struct rusage ru;
    getrusage(RUSAGE_SELF, &ru);
    return ru.ru_maxrss;
}

typedef struct {
    unsigned long members, bytes;
} sink;

static void discard(void *ctx, const scan_result *r)
{
    sink *s = ctx;
    s->members++;
    if (r->line)
        for (const char *p = r->line; *p; p++)
            s->bytes++;
}

/* Sets up S; returns 0 on success. */
static int setup(scan_t S, const char *group, slong c, const char *family, const char **ranges,
                 int nranges)
{
    pres_t G;
    nserr_t err;
    pres_init(G);
    nserr_init(err);
    int bad = pres_parse(G, group, 1, 1, err) != NS_OK ||
              scan_set_group(S, G, c, NULL, err) != NS_OK;
    for (int k = 0; k < nranges && !bad; k++)
        bad = scan_add_range(S, ranges[k], err) != NS_OK;
    if (!bad)
        bad = scan_set_template(S, family, err) != NS_OK;
    if (bad)
        fprintf(stderr, "bench_scan: %s\n", err->msg);
    pres_clear(G);
    nserr_clear(err);
    return bad;
}

static double run(const scan_t S, int jobs, unsigned long *members)
{
    sink s = {0, 0};
    scan_run_opts o = {0};
    o.jobs = jobs;
    o.skip_through = -1;
    o.emit = discard;
    o.emit_ctx = &s;
    nserr_t err;
    nserr_init(err);
    double t0 = now();
    if (scan_run(S, &o, err) != NS_OK)
        fprintf(stderr, "bench_scan: %s\n", err->msg);
    double t = now() - t0;
    nserr_clear(err);
    *members = s.members;
    return t;
}

int main(void)
{
    double load[3] = {0, 0, 0};
    FILE *f = fopen("/proc/loadavg", "r");
    if (f) {
        if (fscanf(f, "%lf %lf %lf", load, load + 1, load + 2) != 3)
            load[0] = -1;
        fclose(f);
    }
    printf("load average at start: %.2f (1 min), %.2f (5 min)\n", load[0], load[1]);

    scan_t S;
    scan_init(S);
    const char *r4[] = {"p=-3..3", "q=-3..3", "r=-3..3", "s=-3..3"};
    if (setup(S, "free(2)", 4, "a -> a^p b^q, b -> a^r b^s", r4, 4))
        return 1;
    unsigned long n1, n2;
    double t1 = run(S, 1, &n1);
    double t2 = run(S, 2, &n2);
    printf("free(2) class 4, box [-3,3]^4: %lu maps, --jobs 1 %.3f s, --jobs 2 %.3f s "
           "(target <= 2 s), speed-up %.2fx (target >= 1.7x)\n",
           n2, t1, t2, t1 / t2);
    scan_clear(S);

    long iter = 1;
    const char *it = getenv("NILSTEP_ITER");
    if (it && atol(it) > 0)
        iter = atol(it);
    scan_init(S);
    const char *rh[] = {"p=-9..9", "q=-9..9", "r=-9..9", "s=-9..9", "u=-9..9", "v=-9..9"};
    if (setup(S, "heisenberg(1)", 2,
              "x1 -> x1^p y1^q z^u, y1 -> x1^r y1^s z^v, z -> [x1^p y1^q z^u, x1^r y1^s z^v]",
              rh, 6))
        return 1;
    scan_set_sample(S, 10000, 1);
    unsigned long ns;
    double ts = run(S, 2, &ns);
    long peak_small = peak_kib();
    scan_set_sample(S, 100000 * (ulong)iter, 1);
    double tl = run(S, 2, &ns);
    long peak_large = peak_kib();
    printf("heisenberg(1), %lu sampled maps, --jobs 2: %.2f s (target <= 30 s for 100,000)\n",
           ns, tl);
    printf("peak resident memory: %ld KiB after 10,000 members (%.2f s), %ld KiB after %lu "
           "(independent of the member count: %+ld KiB)\n",
           peak_small, ts, peak_large, ns, peak_large - peak_small);
    scan_clear(S);
    f = fopen("/proc/loadavg", "r");
    if (f) {
        if (fscanf(f, "%lf", load) != 1)
            load[0] = -1;
        fclose(f);
    }
    printf("load average at end: %.2f (1 min)\n", load[0]);
    flint_cleanup_master();
    return 0;
}
