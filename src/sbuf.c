/* sbuf.c — see sbuf.h. */
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "sbuf.h"

void sbuf_init(sbuf_t b)
{
    b->cap = 64;
    b->len = 0;
    b->s = malloc(b->cap);
    b->s[0] = '\0';
}

void sbuf_clear(sbuf_t b)
{
    free(b->s);
    b->s = NULL;
    b->len = b->cap = 0;
}

static void fit(sbuf_t b, size_t extra)
{
    if (b->len + extra + 1 <= b->cap)
        return;
    while (b->len + extra + 1 > b->cap)
        b->cap *= 2;
    b->s = realloc(b->s, b->cap);
}

void sbuf_puts(sbuf_t b, const char *s)
{
    size_t n = strlen(s);
    fit(b, n);
    memcpy(b->s + b->len, s, n + 1);
    b->len += n;
}

void sbuf_printf(sbuf_t b, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(NULL, 0, fmt, ap);
    va_end(ap);
    if (n <= 0)
        return;
    fit(b, (size_t)n);
    va_start(ap, fmt);
    vsnprintf(b->s + b->len, (size_t)n + 1, fmt, ap);
    va_end(ap);
    b->len += (size_t)n;
}

void sbuf_put_json_str(sbuf_t b, const char *s)
{
    sbuf_puts(b, "\"");
    for (const unsigned char *p = (const unsigned char *)s; *p; p++) {
        if (*p == '"' || *p == '\\')
            sbuf_printf(b, "\\%c", *p);
        else if (*p == '\n')
            sbuf_puts(b, "\\n");
        else if (*p == '\t')
            sbuf_puts(b, "\\t");
        else if (*p < 0x20)
            sbuf_printf(b, "\\u%04x", *p);
        else {
            char c[2] = {(char)*p, '\0'};
            sbuf_puts(b, c);
        }
    }
    sbuf_puts(b, "\"");
}

void sbuf_put_latex_str(sbuf_t b, const char *s)
{
    for (const char *p = s; *p; p++) {
        switch (*p) {
        case '\\': sbuf_puts(b, "\\textbackslash{}"); break;
        case '{': case '}': case '$': case '&': case '#': case '_': case '%':
            sbuf_printf(b, "\\%c", *p);
            break;
        case '^': sbuf_puts(b, "\\^{}"); break;
        case '~': sbuf_puts(b, "\\~{}"); break;
        default: {
            char c[2] = {*p, '\0'};
            sbuf_puts(b, c);
        }
        }
    }
}

char *sbuf_take(sbuf_t b)
{
    char *s = b->s;
    b->s = NULL;
    b->len = b->cap = 0;
    return s;
}
