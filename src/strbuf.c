/* strbuf.c — see strbuf.h. */
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

void strbuf_putn(strbuf_t b, const char *s, size_t n)
{
    if (b->len + n + 1 > b->cap) {
        size_t cap = b->cap ? b->cap : 64;
        while (b->len + n + 1 > cap)
            cap *= 2;
        b->s = flint_realloc(b->s, cap);
        b->cap = cap;
    }
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
