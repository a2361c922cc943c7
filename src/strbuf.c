/* strbuf.c — see strbuf.h. */
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include <flint/flint.h>

#include "strbuf.h"

void strbuf_init(strbuf_t b)
{
    b->cap = 64;
    b->len = 0;
    b->s = flint_malloc(b->cap);
    b->s[0] = '\0';
}

void strbuf_clear(strbuf_t b)
{
    flint_free(b->s);
    b->s = NULL;
    b->len = b->cap = 0;
}

/* Room for n more bytes and the terminating NUL. */
static void strbuf_grow(strbuf_t b, size_t n)
{
    if (b->len + n + 1 > b->cap) {
        size_t cap = b->cap ? b->cap : 64;
        while (b->len + n + 1 > cap)
            cap *= 2;
        b->s = flint_realloc(b->s, cap);
        b->cap = cap;
    }
}

void strbuf_putn(strbuf_t b, const char *s, size_t n)
{
    strbuf_grow(b, n);
    memcpy(b->s + b->len, s, n);
    b->len += n;
    b->s[b->len] = '\0';
}

void strbuf_puts(strbuf_t b, const char *s)
{
    strbuf_putn(b, s, strlen(s));
}

char *strbuf_take(strbuf_t b)
{
    char *s = b->s;
    b->s = NULL;
    b->len = b->cap = 0;
    return s;
}

void strbuf_printf(strbuf_t b, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(NULL, 0, fmt, ap);
    va_end(ap);
    if (n <= 0)
        return;
    strbuf_grow(b, (size_t)n);
    va_start(ap, fmt);
    vsnprintf(b->s + b->len, (size_t)n + 1, fmt, ap);
    va_end(ap);
    b->len += (size_t)n;
}

void strbuf_put_json_str(strbuf_t b, const char *s)
{
    strbuf_puts(b, "\"");
    for (const unsigned char *p = (const unsigned char *)s; *p; p++) {
        if (*p == '"' || *p == '\\')
            strbuf_printf(b, "\\%c", *p);
        else if (*p == '\n')
            strbuf_puts(b, "\\n");
        else if (*p == '\t')
            strbuf_puts(b, "\\t");
        else if (*p < 0x20)
            strbuf_printf(b, "\\u%04x", *p);
        else
            strbuf_putn(b, (const char *)p, 1);
    }
    strbuf_puts(b, "\"");
}

void strbuf_put_latex_str(strbuf_t b, const char *s)
{
    for (const char *p = s; *p; p++) {
        switch (*p) {
        case '\\':
            strbuf_puts(b, "\\textbackslash{}");
            break;
        case '{': case '}': case '$': case '&': case '#': case '_': case '%':
            strbuf_printf(b, "\\%c", *p);
            break;
        case '^':
            strbuf_puts(b, "\\^{}");
            break;
        case '~':
            strbuf_puts(b, "\\~{}");
            break;
        default:
            strbuf_putn(b, p, 1);
        }
    }
}

char *strbuf_dup_strn(const char *s, size_t n)
{
    char *t = flint_malloc(n + 1);
    memcpy(t, s, n);
    t[n] = '\0';
    return t;
}

char *strbuf_dup_str(const char *s)
{
    return strbuf_dup_strn(s, strlen(s));
}
