/* nserr.h — status codes, located errors and the progress/cancel hook.
 *
 * Every engine function that can fail on user input returns an ns_status and
 * fills an nserr_t owned by the caller.  Nothing in src/ prints or exits. */
#ifndef NILSTEP_NSERR_H
#define NILSTEP_NSERR_H

#include <stddef.h>

typedef enum {
    NS_OK = 0,
    NS_ERR_SYNTAX,    /* input text does not parse; line/col point at it */
    NS_ERR_INPUT,     /* parses, but is not meaningful (unknown key, bad class) */
    NS_ERR_LIMIT,     /* a resource limit stopped the computation */
    NS_ERR_CANCELLED, /* the progress callback asked to stop */
    NS_ERR_IO,        /* a file could not be read or written */
    NS_ERR_INTERNAL   /* a broken invariant: a bug in nilstep, not bad input */
} ns_status;

/* Conventions for computations that stop early, one for the whole engine:
 *  - a resource limit (a size the engine refuses to go beyond) is
 *    NS_ERR_LIMIT with a message naming the limit;
 *  - the progress hook asking to stop is NS_ERR_CANCELLED;
 *  - inside, a computation on a pcp_work_t stops when the hook asks (its
 *    overflow flag); functions on it return nonzero for "stopped" and their
 *    callers turn that into NS_ERR_CANCELLED.
 * Internal errors are NS_ERR_INTERNAL; in debug builds NS_ASSERT checks the
 * invariant where it should hold and aborts with its location. */

/* A located error.  line and col are 1-based; 0 means "no location". */
typedef struct {
    ns_status status;
    int line;
    int col;
    char msg[512];
} nserr_struct;
typedef nserr_struct nserr_t[1];

void nserr_init(nserr_t e);
void nserr_clear(nserr_t e);

/* Records status, location and a printf-style message in e; returns status
 * so that callers can write `return nserr_set(err, ...)`. */
ns_status nserr_set(nserr_t e, ns_status status, int line, int col,
                    const char *fmt, ...)
    __attribute__((format(printf, 5, 6)));

/* Writes "FILE:LINE:COL: error: MSG" (FILE and the location are left out
 * when NULL / 0) into buf of size n, always NUL-terminated.  An internal
 * error reads "FILE: internal error, please report: MSG". */
void nserr_format(char *buf, size_t n, const nserr_t e, const char *file);

/* NS_ASSERT(cond): an invariant checked in debug builds (without NDEBUG:
 * the Debug and sanitizer builds), where a failure prints the condition
 * and its place on stderr and aborts; nothing in release builds.  FLINT's
 * own FLINT_ASSERT cannot serve: it is compiled out of Debian's FLINT. */
#ifdef NDEBUG
#define NS_ASSERT(cond) ((void)0)
#else
#define NS_ASSERT(cond) ((cond) ? (void)0 : ns_assert_fail(#cond, __FILE__, __LINE__))
#endif
void ns_assert_fail(const char *cond, const char *file, int line) __attribute__((noreturn));

/* Progress hook for long computations.  stage is a short phrase
 * ("class 4: consistency"), fraction in [0,1] or negative when unknown.
 * Returning nonzero asks the computation to stop with NS_ERR_CANCELLED.
 * A NULL function pointer means "no progress wanted". */
typedef int (*ns_progress_fn)(void *ctx, const char *stage, double fraction);

typedef struct {
    ns_progress_fn fn;
    void *ctx;
} ns_progress_t;

/* Calls the hook if any; returns 1 when the caller must cancel. */
int ns_progress_report(const ns_progress_t *p, const char *stage, double fraction);

#endif
