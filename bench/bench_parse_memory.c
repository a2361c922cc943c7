/* bench_parse_memory.c — bytes of memory per input byte when a presentation
 * with one relator of millions of letters is parsed: the 12 MB group
 * <a, b | a b a b ...> (6,000,000 letters; a session of this size once took
 * 37 bytes of tree per input byte, a node per letter, and 86 for the whole
 * report).  Counts what FLINT's allocator holds (every engine allocation goes
 * through it): after pres_parse, at the peak of the parse, and after the
 * quotient of class 2 (which keeps its own copy of the presentation).  The
 * whole `nilstep report` process is measured by bench/run-bench itself.
 * Target: at most 5 bytes per input byte for the parsed presentation (the
 * relator text it keeps included).
 * Nothing is asserted. */
#include <malloc.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "analysis.h"

static long long mem_now, mem_peak;

static void mem_count(long long d)
{
    mem_now += d;
    if (mem_now > mem_peak)
        mem_peak = mem_now;
}

static void *count_malloc(size_t n)
{
    void *p = malloc(n);
    mem_count((long long)malloc_usable_size(p));
    return p;
}

static void *count_calloc(size_t k, size_t n)
{
    void *p = calloc(k, n);
    mem_count((long long)malloc_usable_size(p));
    return p;
}

static void *count_realloc(void *q, size_t n)
{
    long long before = q ? (long long)malloc_usable_size(q) : 0;
    void *p = realloc(q, n);
    mem_count((long long)malloc_usable_size(p));
    mem_count(-before);
    return p;
}

static void count_free(void *p)
{
    if (p != NULL)
        mem_count(-(long long)malloc_usable_size(p));
    free(p);
}

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

int main(void)
{
    const size_t pairs = 3000000;
    const char *head = "<a, b | ", *tail = ">";
    size_t n = strlen(head) + 4 * pairs + strlen(tail);
    char *text = malloc(n + 1), *w;
    pres_t G;
    analysis_t A;
    nserr_t err;
    double t0, t1, t2;

    w = text + strlen(head);
    memcpy(text, head, strlen(head));
    for (size_t i = 0; i < pairs; i++, w += 4)
        memcpy(w, "a b ", 4);
    memcpy(w, tail, strlen(tail) + 1);

    __flint_set_memory_functions(count_malloc, count_calloc, count_realloc, count_free);
    pres_init(G);
    analysis_init(A);
    nserr_init(err);
    mem_now = mem_peak = 0;
    t0 = now();
    if (pres_parse(G, text, 1, 1, err) != NS_OK) {
        printf("parse failed: %s\n", err->msg);
        return 1;
    }
    t1 = now();
    long long held = mem_now, peak = mem_peak;
    if (analysis_set_group(A, G, 2, NULL, err) != NS_OK) {
        printf("quotient failed: %s\n", err->msg);
        return 1;
    }
    t2 = now();
    printf("parse of a %.1f MB presentation (%zu letters): %.2f bytes per input byte "
           "held, %.2f at the peak (target 5); %.2f s\n",
           (double)n / 1e6, 2 * pairs, (double)held / (double)n, (double)peak / (double)n,
           t1 - t0);
    printf("quotient of class 2 on it: %.2f bytes per input byte held by the engine, "
           "%.2f at the peak; %.2f s\n",
           (double)mem_now / (double)n, (double)mem_peak / (double)n, t2 - t1);
    analysis_clear(A);
    pres_clear(G);
    nserr_clear(err);
    __flint_set_memory_functions(malloc, calloc, realloc, free);
    free(text);
    return 0;
}
