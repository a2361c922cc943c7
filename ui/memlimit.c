/* memlimit.c — see memlimit.h. */
#include "memlimit.h"

#include <gmp.h>
#include <malloc.h>
#include <stdatomic.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <unistd.h>

#include <flint/flint.h>

/* Atomic: `nilstep scan --jobs N` allocates from several threads at once. */
static _Atomic size_t memlimit_used;
static size_t memlimit_max = SIZE_MAX;
static const char *memlimit_name = "the default memory limit";
static void (*memlimit_emergency)(void);
static int memlimit_dying;

size_t memlimit_default_max_memory(void)
{
    long pages = sysconf(_SC_PHYS_PAGES), size = sysconf(_SC_PAGESIZE);
    if (pages <= 0 || size <= 0)
        return SIZE_MAX;
    return (size_t)pages / 2 * (size_t)size;
}

void memlimit_set_max_memory(size_t bytes, const char *name)
{
    memlimit_max = bytes;
    memlimit_name = name;
}

size_t memlimit_max_memory(void)
{
    return memlimit_max;
}

size_t memlimit_used_memory(void)
{
    return memlimit_used;
}

void memlimit_set_emergency(void (*fn)(void))
{
    memlimit_emergency = fn;
}

/* Ends the program: exit 3 with the limit named on stderr. */
static void memlimit_die(size_t request, int ours)
{
    if (memlimit_dying)
        _exit(3);
    memlimit_dying = 1;
    size_t lim = memlimit_max;
    memlimit_max = SIZE_MAX; /* the emergency may allocate */
    char msg[400];
    if (ours) {
        snprintf(msg, sizeof msg,
                 "nilstep: out of memory: %zu more bytes would exceed %s of %zu MiB "
                 "(%zu MiB in use)\n",
                 request, memlimit_name, lim >> 20, memlimit_used >> 20);
    } else {
        struct rlimit rl;
        char as[64] = "unlimited";
        if (getrlimit(RLIMIT_AS, &rl) == 0 && rl.rlim_cur != RLIM_INFINITY)
            snprintf(as, sizeof as, "%llu MiB", (unsigned long long)(rl.rlim_cur >> 20));
        snprintf(msg, sizeof msg,
                 "nilstep: out of memory: the system refused %zu more bytes "
                 "(%zu MiB in use; address-space limit, ulimit -v: %s)\n",
                 request, memlimit_used >> 20, as);
    }
    /* the emergency first: the explorer gives the terminal back, so that
     * the message stays readable */
    if (memlimit_emergency)
        memlimit_emergency();
    if (write(STDERR_FILENO, msg, strlen(msg)) < 0) {
        /* nothing more to do */
    }
    _exit(3);
}

/* Makes room for n more bytes in the count, or dies. */
static void memlimit_reserve(size_t n)
{
    if (n > memlimit_max || memlimit_used > memlimit_max - n)
        memlimit_die(n, 1);
}

static void *memlimit_malloc(size_t n)
{
    memlimit_reserve(n);
    void *p = malloc(n ? n : 1);
    if (p == NULL)
        memlimit_die(n, 0);
    memlimit_used += malloc_usable_size(p);
    return p;
}

static void *memlimit_calloc(size_t k, size_t n)
{
    if (n != 0 && k > SIZE_MAX / n)
        memlimit_die(SIZE_MAX, 1);
    memlimit_reserve(k * n);
    void *p = calloc(k ? k : 1, n ? n : 1);
    if (p == NULL)
        memlimit_die(k * n, 0);
    memlimit_used += malloc_usable_size(p);
    return p;
}

/* Takes u bytes off the count, never below 0: blocks from before the hooks
 * were installed were never counted. */
static void memlimit_sub(size_t u)
{
    size_t cur = atomic_load_explicit(&memlimit_used, memory_order_relaxed);
    while (!atomic_compare_exchange_weak_explicit(&memlimit_used, &cur, u > cur ? 0 : cur - u,
                                                  memory_order_relaxed, memory_order_relaxed))
        ;
}

static void memlimit_uncount(void *p)
{
    memlimit_sub(malloc_usable_size(p));
}

static void *memlimit_realloc(void *p, size_t n)
{
    if (p == NULL)
        return memlimit_malloc(n);
    size_t old = malloc_usable_size(p);
    if (n > old)
        memlimit_reserve(n - old);
    void *q = realloc(p, n ? n : 1);
    if (q == NULL)
        memlimit_die(n, 0);
    memlimit_sub(old);
    memlimit_used += malloc_usable_size(q); /* an atomic read-modify-write */
    return q;
}

static void memlimit_free(void *p)
{
    if (p == NULL)
        return;
    memlimit_uncount(p);
    free(p);
}

static void *memlimit_gmp_realloc(void *p, size_t old, size_t n)
{
    (void)old;
    return memlimit_realloc(p, n);
}

static void memlimit_gmp_free(void *p, size_t n)
{
    (void)n;
    memlimit_free(p);
}

/* FLINT calls this on an internal error, after printing its message. */
static FLINT_NORETURN void memlimit_on_flint_abort(void)
{
    static const char msg[] = "nilstep: internal error in FLINT (its message is above); "
                              "please report it\n";
    if (write(STDERR_FILENO, msg, sizeof msg - 1) < 0) {
        /* nothing more to do */
    }
    fflush(stdout);
    if (!memlimit_dying && memlimit_emergency) {
        memlimit_dying = 1;
        memlimit_max = SIZE_MAX;
        memlimit_emergency();
    }
    _exit(4);
}

int memlimit_parse_size(size_t *out, const char *text)
{
    char *end;
    if (text == NULL || text[0] < '0' || text[0] > '9')
        return -1;
    unsigned long long v = strtoull(text, &end, 10);
    unsigned shift = 0;
    switch (*end) {
    case '\0':
        break;
    case 'k': case 'K': shift = 10; end++; break;
    case 'm': case 'M': shift = 20; end++; break;
    case 'g': case 'G': shift = 30; end++; break;
    case 't': case 'T': shift = 40; end++; break;
    default:
        return -1;
    }
    if (*end == 'i' && end[1] == 'B')
        end += 2;
    else if (*end == 'B')
        end++;
    if (*end != '\0' || v == 0 || v > (SIZE_MAX >> shift))
        return -1;
    *out = (size_t)v << shift;
    return 0;
}

void memlimit_install(void)
{
    memlimit_max = memlimit_default_max_memory();
    __flint_set_memory_functions(memlimit_malloc, memlimit_calloc, memlimit_realloc, memlimit_free);
    mp_set_memory_functions(memlimit_malloc, memlimit_gmp_realloc, memlimit_gmp_free);
    flint_set_abort(memlimit_on_flint_abort);
}
