/* bench_progress_gap.c — how long the engine goes without calling its
 * progress hook, which bounds how late Esc cancels and how rarely the
 * explorer can redraw.  A hook that records the gaps between its calls runs
 * through the quotient of free(3) at class 8 (elimination is the longest
 * stretch) and through surface(3) at class 5 with two Dehn twists per
 * handle (b -> a b, then a -> b a; quotient, then the map: the spectra of
 * the largest layer take minutes, so that run ends at the budget).
 * Prints, per run, the longest gap and the stage it ended in, next to the
 * target of 100 ms, then the longest gap in each stage (the stage named by
 * the hook's last call before the gap; layer and class numbers are kept;
 * the eight longest of at least 10 ms).  An argument (free, surface)
 * runs only that input.
 * Gaps are measured in wall-clock time and in the CPU time of the calling
 * thread (what the engine controls; on a loaded machine the wall clock also
 * counts waiting for a processor).
 * A run stops (cancelled through the hook) after 60 s
 * (NILSTEP_BENCH_BUDGET overrides it).  Nothing is asserted; the machine's
 * load shows in the figures. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "analysis.h"

static double budget_s = 60.0;

#define MAX_STAGES 64

typedef struct {
    char name[128];
    double worst, worst_cpu;
    long calls;
} stage_gap;

typedef struct {
    double start, last, worst, last_cpu, worst_cpu;
    char stage[128], worst_stage[300];
    long calls;
    stage_gap per[MAX_STAGES];
    int nper;
} gaps;

/* Counts a gap against the stage that was running during it. */
static void note_stage_gap(gaps *g, double gap, double cpu)
{
    int i;
    for (i = 0; i < g->nper; i++)
        if (strcmp(g->per[i].name, g->stage) == 0)
            break;
    if (i == g->nper) {
        if (g->nper == MAX_STAGES)
            i = MAX_STAGES - 1; /* the last slot collects the rest */
        else {
            snprintf(g->per[i].name, sizeof g->per[i].name, "%s", g->stage);
            g->per[i].worst = 0;
            g->per[i].worst_cpu = 0;
            g->per[i].calls = 0;
            g->nper++;
        }
    }
    if (gap > g->per[i].worst)
        g->per[i].worst = gap;
    if (cpu > g->per[i].worst_cpu)
        g->per[i].worst_cpu = cpu;
    g->per[i].calls++;
}

static int by_worst(const void *a, const void *b)
{
    double x = ((const stage_gap *)a)->worst, y = ((const stage_gap *)b)->worst;
    return x < y ? 1 : x > y ? -1 : 0;
}

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* CPU time of the calling thread, the only one that calls the hook: on a
 * loaded machine the wall-clock gaps include time the thread waited for a
 * processor, which no poll can shorten. */
static double cpu_now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_THREAD_CPUTIME_ID, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static int record(void *ctx, const char *stage, double fraction)
{
    gaps *g = ctx;
    (void)fraction;
    double t = now(), c = cpu_now();
    note_stage_gap(g, t - g->last, c - g->last_cpu);
    if (c - g->last_cpu > g->worst_cpu)
        g->worst_cpu = c - g->last_cpu;
    g->last_cpu = c;
    if (t - g->last > g->worst) {
        g->worst = t - g->last;
        snprintf(g->worst_stage, sizeof g->worst_stage, "%s -> %s", g->stage,
                 stage ? stage : "(same stage)");
    }
    if (stage)
        snprintf(g->stage, sizeof g->stage, "%s", stage);
    g->last = t;
    g->calls++;
    return t - g->start > budget_s;
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
    g.last_cpu = cpu_now();
    ns_status st = pres_parse(G, group, 1, 1, err);
    if (st == NS_OK)
        st = analysis_set_group(A, G, c, &hook, err);
    if (st == NS_OK && map)
        st = analysis_set_map_text(A, map, 1, 1, &hook, err);
    record(&g, "end", -1);
    printf("%-34s longest gap %7.1f ms wall, %.1f ms CPU (target 100 ms); wall in %s; "
           "%ld calls in %.1f s%s\n",
           name, 1000 * g.worst, 1000 * g.worst_cpu, g.worst_stage, g.calls, now() - g.start,
           st == NS_OK ? "" : " (stopped)");
    printf("    %-58s %11s %10s\n", "stage (longest stretch without a call)", "wall", "CPU");
    qsort(g.per, (size_t)g.nper, sizeof g.per[0], by_worst);
    for (int i = 0; i < g.nper && i < 8 && g.per[i].worst >= 0.01; i++)
        printf("    %-58s %8.1f ms %7.1f ms%s (%ld calls)\n", g.per[i].name,
               1000 * g.per[i].worst, 1000 * g.per[i].worst_cpu,
               g.per[i].worst_cpu > 0.1 ? " over" : "", g.per[i].calls);
    nserr_clear(err);
    analysis_clear(A);
    pres_clear(G);
}

int main(int argc, char **argv)
{
    const char *only = argc > 1 ? argv[1] : "";
    const char *b = getenv("NILSTEP_BENCH_BUDGET");
    if (b && atof(b) > 0)
        budget_s = atof(b);
    if (strstr("free", only))
        run("free(3), class 8", "free(3)", 8, NULL);
    if (strstr("surface", only))
        run("surface(3), class 5, Dehn twists", "surface(3)", 5,
        "a1 -> b1 a1, b1 -> b1 a1 b1, a2 -> b2 a2, b2 -> b2 a2 b2, "
        "a3 -> b3 a3, b3 -> b3 a3 b3");
    flint_cleanup_master();
    return 0;
}
