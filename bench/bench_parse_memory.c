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
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "analysis.h"
#include "countalloc.h"

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

    pres_init(G);
    analysis_init(A);
    nserr_init(err);
    countalloc_install();
    t0 = now();
    if (pres_parse(G, text, 1, 1, err) != NS_OK) {
        printf("parse failed: %s\n", err->msg);
        return 1;
    }
    t1 = now();
    long long held = countalloc_now, peak = countalloc_peak;
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
           (double)countalloc_now / (double)n, (double)countalloc_peak / (double)n, t2 - t1);
    analysis_clear(A);
    pres_clear(G);
    nserr_clear(err);
    countalloc_uninstall();
    free(text);
    return 0;
}
