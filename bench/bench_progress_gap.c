/* bench_progress_gap.c — how long the engine goes without calling its
 * progress hook, which bounds how late Esc cancels and how rarely the
 * explorer can redraw.  A hook that records the gaps between its calls runs
 * through the quotient of free(3) at class 8 (elimination is the longest
 * stretch) and through surface(3) at class 5 with two Dehn twists per
 * handle (b -> a b, then a -> b a; quotient, then the map: the spectra of
 * the largest layer take minutes, so that run ends at the budget).
 * Prints, per run, the longest gap and the stage it ended in, next to the
 * target of 100 ms.  A run stops (cancelled through the hook) after
 * BUDGET_S seconds.  Nothing is asserted; the machine's load shows in the
 * figures. */
#include <stdio.h>
#include <string.h>
#include <time.h>

#include "analysis.h"

#define BUDGET_S 60.0

typedef struct {
    double start, last, worst;
    char stage[128], worst_stage[300];
    long calls;
} gaps;

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static int record(void *ctx, const char *stage, double fraction)
{
    gaps *g = ctx;
    (void)fraction;
    double t = now();
    if (t - g->last > g->worst) {
        g->worst = t - g->last;
        snprintf(g->worst_stage, sizeof g->worst_stage, "%s -> %s", g->stage,
                 stage ? stage : "(same stage)");
    }
    if (stage)
        snprintf(g->stage, sizeof g->stage, "%s", stage);
    g->last = t;
    g->calls++;
    return t - g->start > BUDGET_S;
}

static void run(const char *name, const char *group, slong c, const char *map)
{
    pres_t G;
    analysis_t A;
    nserr_t err;
    gaps g;
    memset(&g, 0, sizeof g);
    snprintf(g.stage, sizeof g.stage, "start");
    ns_progress_t hook = {record, &g};
    pres_init(G);
    analysis_init(A);
    nserr_init(err);
    g.start = g.last = now();
    ns_status st = pres_parse(G, group, 1, 1, err);
    if (st == NS_OK)
        st = analysis_set_group(A, G, c, &hook, err);
    if (st == NS_OK && map)
        st = analysis_set_map_text(A, map, 1, 1, &hook, err);
    record(&g, "end", -1);
    printf("%-34s longest gap %7.1f ms (target 100 ms) in %s; %ld calls in %.1f s%s\n", name,
           1000 * g.worst, g.worst_stage, g.calls, now() - g.start,
           st == NS_OK ? "" : " (stopped)");
    nserr_clear(err);
    analysis_clear(A);
    pres_clear(G);
}

int main(void)
{
    run("free(3), class 8", "free(3)", 8, NULL);
    run("surface(3), class 5, Dehn twists", "surface(3)", 5,
        "a1 -> b1 a1, b1 -> b1 a1 b1, a2 -> b2 a2, b2 -> b2 a2 b2, "
        "a3 -> b3 a3, b3 -> b3 a3 b3");
    flint_cleanup_master();
    return 0;
}
