/* countalloc.h — an allocator for FLINT that counts the bytes it holds, now
 * and at most since the last reset, for the memory checks of the tests and
 * the memory benchmarks.  Every engine allocation goes through FLINT's
 * allocator, so installing it with countalloc_install counts the engine.
 * Header-only (static): each test or benchmark is a program of its own. */
#ifndef NILSTEP_COUNTALLOC_H
#define NILSTEP_COUNTALLOC_H

#include <malloc.h>
#include <stdlib.h>

#include <flint/flint.h>

static long long countalloc_now, countalloc_peak;

static inline void countalloc_add(long long d)
{
    countalloc_now += d;
    if (countalloc_now > countalloc_peak)
        countalloc_peak = countalloc_now;
}

static inline void *countalloc_malloc(size_t n)
{
    void *p = malloc(n);
    countalloc_add((long long)malloc_usable_size(p));
    return p;
}

static inline void *countalloc_calloc(size_t k, size_t n)
{
    void *p = calloc(k, n);
    countalloc_add((long long)malloc_usable_size(p));
    return p;
}

static inline void *countalloc_realloc(void *q, size_t n)
{
    long long before = q ? (long long)malloc_usable_size(q) : 0;
    void *p = realloc(q, n);
    /* a moved block was briefly held twice; count that for the peak */
    if (p != q && q != NULL) {
        countalloc_add((long long)malloc_usable_size(p));
        countalloc_add(-before);
    } else {
        countalloc_add((long long)malloc_usable_size(p) - before);
    }
    return p;
}

static inline void countalloc_free(void *p)
{
    if (p != NULL)
        countalloc_add(-(long long)malloc_usable_size(p));
    free(p);
}

/* Counts from zero from now on.  Blocks allocated before stay valid: every
 * hook is the C library's own, so nothing is mixed. */
static inline void countalloc_install(void)
{
    countalloc_now = countalloc_peak = 0;
    __flint_set_memory_functions(countalloc_malloc, countalloc_calloc, countalloc_realloc,
                                 countalloc_free);
}

static inline void countalloc_uninstall(void)
{
    __flint_set_memory_functions(malloc, calloc, realloc, free);
}

#endif
