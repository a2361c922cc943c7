/* nserr.c — located errors and the progress hook. */
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "nserr.h"

void nserr_init(nserr_t e)
{
    e->status = NS_OK;
    e->line = 0;
    e->col = 0;
    e->msg[0] = '\0';
}

void nserr_clear(nserr_t e)
{
    nserr_init(e);
}

ns_status nserr_set(nserr_t e, ns_status status, int line, int col, const char *fmt, ...)
{
    va_list ap;

    e->status = status;
    e->line = line > 0 ? line : 0;
    e->col = (line > 0 && col > 0) ? col : 0;
    va_start(ap, fmt);
    vsnprintf(e->msg, sizeof e->msg, fmt, ap);
    va_end(ap);
    return status;
}

void nserr_format(char *buf, size_t n, const nserr_t e, const char *file)
{
    char where[64];

    if (buf == NULL || n == 0)
        return;
    if (e->line > 0 && e->col > 0)
        snprintf(where, sizeof where, "%d:%d", e->line, e->col);
    else if (e->line > 0)
        snprintf(where, sizeof where, "%d", e->line);
    else
        where[0] = '\0';

    if (e->status == NS_ERR_INTERNAL) {
        if (file != NULL)
            snprintf(buf, n, "%s: internal error, please report: %s", file, e->msg);
        else
            snprintf(buf, n, "internal error, please report: %s", e->msg);
        return;
    }
    if (file != NULL && where[0] != '\0')
        snprintf(buf, n, "%s:%s: error: %s", file, where, e->msg);
    else if (file != NULL)
        snprintf(buf, n, "%s: error: %s", file, e->msg);
    else if (where[0] != '\0')
        snprintf(buf, n, "%s: error: %s", where, e->msg);
    else
        snprintf(buf, n, "error: %s", e->msg);
}

int ns_progress_report(const ns_progress_t *p, const char *stage, double fraction)
{
    if (p == NULL || p->fn == NULL)
        return 0;
    return p->fn(p->ctx, stage, fraction) != 0;
}

void ns_assert_fail(const char *cond, const char *file, int line)
{
    /* the one place the engine prints: a broken invariant in a debug build */
    fprintf(stderr, "%s:%d: nilstep invariant failed: %s\n", file, line, cond);
    abort();
}
