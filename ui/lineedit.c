/* lineedit.c — one-line UTF-8 editor; see lineedit.h. */
#include "lineedit.h"

#include <stdlib.h>
#include <string.h>

/* Out of memory in the UI is not recoverable in any useful way. */
static void *lineedit_xrealloc(void *p, size_t n)
{
    void *q = realloc(p, n);
    if (q == NULL)
        abort();
    return q;
}

static void lineedit_reserve(lineedit_t e, size_t need)
{
    if (need + 1 <= e->cap)
        return;
    size_t cap = e->cap ? e->cap : 32;
    while (cap < need + 1)
        cap *= 2;
    e->buf = lineedit_xrealloc(e->buf, cap);
    e->cap = cap;
}

void lineedit_init(lineedit_t e)
{
    e->buf = NULL;
    e->len = 0;
    e->cap = 0;
    e->cur = 0;
    lineedit_reserve(e, 0);
    e->buf[0] = '\0';
}

void lineedit_clear(lineedit_t e)
{
    free(e->buf);
    e->buf = NULL;
    e->len = e->cap = e->cur = 0;
}

/* Length of the valid UTF-8 sequence at s (1..4), or 0 if it is not one.
 * Overlong forms and surrogates count as invalid. */
static size_t lineedit_seq_len(const unsigned char *s, size_t avail)
{
    unsigned char c = s[0];
    if (c < 0x80)
        return 1;
    size_t n;
    uint32_t cp;
    if (c >= 0xC2 && c <= 0xDF) {
        n = 2;
        cp = c & 0x1F;
    } else if (c >= 0xE0 && c <= 0xEF) {
        n = 3;
        cp = c & 0x0F;
    } else if (c >= 0xF0 && c <= 0xF4) {
        n = 4;
        cp = c & 0x07;
    } else {
        return 0;
    }
    if (avail < n)
        return 0;
    for (size_t i = 1; i < n; i++) {
        if ((s[i] & 0xC0) != 0x80)
            return 0;
        cp = (cp << 6) | (s[i] & 0x3F);
    }
    if ((n == 3 && cp < 0x800) || (n == 4 && (cp < 0x10000 || cp > 0x10FFFF)))
        return 0;
    if (cp >= 0xD800 && cp <= 0xDFFF)
        return 0;
    return n;
}

static int lineedit_is_control(uint32_t cp)
{
    return cp < 0x20 || cp == 0x7F || (cp >= 0x80 && cp < 0xA0);
}

static size_t lineedit_encode(char out[4], uint32_t cp)
{
    if (cp < 0x80) {
        out[0] = (char)cp;
        return 1;
    }
    if (cp < 0x800) {
        out[0] = (char)(0xC0 | (cp >> 6));
        out[1] = (char)(0x80 | (cp & 0x3F));
        return 2;
    }
    if (cp < 0x10000) {
        out[0] = (char)(0xE0 | (cp >> 12));
        out[1] = (char)(0x80 | ((cp >> 6) & 0x3F));
        out[2] = (char)(0x80 | (cp & 0x3F));
        return 3;
    }
    out[0] = (char)(0xF0 | (cp >> 18));
    out[1] = (char)(0x80 | ((cp >> 12) & 0x3F));
    out[2] = (char)(0x80 | ((cp >> 6) & 0x3F));
    out[3] = (char)(0x80 | (cp & 0x3F));
    return 4;
}

/* Decodes the (valid) sequence at s. */
static uint32_t lineedit_decode(const unsigned char *s, size_t n)
{
    if (n == 1)
        return s[0];
    uint32_t cp = s[0] & (n == 2 ? 0x1F : n == 3 ? 0x0F : 0x07);
    for (size_t i = 1; i < n; i++)
        cp = (cp << 6) | (s[i] & 0x3F);
    return cp;
}

void lineedit_set_text(lineedit_t e, const char *text)
{
    e->len = 0;
    e->cur = 0;
    if (text == NULL)
        text = "";
    size_t n = strlen(text);
    lineedit_reserve(e, n);
    const unsigned char *s = (const unsigned char *)text;
    size_t i = 0;
    while (i < n) {
        size_t k = lineedit_seq_len(s + i, n - i);
        if (k == 0 || lineedit_is_control(lineedit_decode(s + i, k))) {
            e->buf[e->len++] = '?';
            i += k ? k : 1;
        } else {
            memcpy(e->buf + e->len, s + i, k);
            e->len += k;
            i += k;
        }
    }
    e->buf[e->len] = '\0';
    e->cur = e->len;
}

const char *lineedit_get_text(const lineedit_t e)
{
    return e->buf;
}

int lineedit_insert(lineedit_t e, uint32_t cp)
{
    if (lineedit_is_control(cp) || cp > 0x10FFFF || (cp >= 0xD800 && cp <= 0xDFFF))
        return 0;
    char enc[4];
    size_t k = lineedit_encode(enc, cp);
    lineedit_reserve(e, e->len + k);
    memmove(e->buf + e->cur + k, e->buf + e->cur, e->len - e->cur + 1);
    memcpy(e->buf + e->cur, enc, k);
    e->len += k;
    e->cur += k;
    return 1;
}

/* Byte offsets of the neighbouring code point boundaries; the buffer is
 * valid UTF-8, so continuation bytes are exactly 10xxxxxx. */
static size_t lineedit_prev(const lineedit_t e, size_t pos)
{
    if (pos == 0)
        return 0;
    pos--;
    while (pos > 0 && ((unsigned char)e->buf[pos] & 0xC0) == 0x80)
        pos--;
    return pos;
}

static size_t lineedit_next(const lineedit_t e, size_t pos)
{
    if (pos >= e->len)
        return e->len;
    pos++;
    while (pos < e->len && ((unsigned char)e->buf[pos] & 0xC0) == 0x80)
        pos++;
    return pos;
}

static void lineedit_cut(lineedit_t e, size_t from, size_t to)
{
    memmove(e->buf + from, e->buf + to, e->len - to + 1);
    e->len -= to - from;
}

int lineedit_apply(lineedit_t e, lineedit_cmd cmd)
{
    size_t p;
    switch (cmd) {
    case LINEEDIT_LEFT:
        e->cur = lineedit_prev(e, e->cur);
        return 0;
    case LINEEDIT_RIGHT:
        e->cur = lineedit_next(e, e->cur);
        return 0;
    case LINEEDIT_HOME:
        e->cur = 0;
        return 0;
    case LINEEDIT_END:
        e->cur = e->len;
        return 0;
    case LINEEDIT_BACKSPACE:
        if (e->cur == 0)
            return 0;
        p = lineedit_prev(e, e->cur);
        lineedit_cut(e, p, e->cur);
        e->cur = p;
        return 1;
    case LINEEDIT_DELETE:
        if (e->cur >= e->len)
            return 0;
        lineedit_cut(e, e->cur, lineedit_next(e, e->cur));
        return 1;
    case LINEEDIT_KILL_LINE:
        if (e->len == 0)
            return 0;
        e->len = e->cur = 0;
        e->buf[0] = '\0';
        return 1;
    case LINEEDIT_KILL_TO_END:
        if (e->cur >= e->len)
            return 0;
        e->len = e->cur;
        e->buf[e->len] = '\0';
        return 1;
    }
    return 0;
}

size_t lineedit_utf8_ncols(const char *s)
{
    size_t n = 0;
    for (; *s; s++)
        if (((unsigned char)*s & 0xC0) != 0x80)
            n++;
    return n;
}

size_t lineedit_utf8_offset(const char *s, size_t col)
{
    size_t i = 0, c = 0;
    while (s[i]) {
        if (((unsigned char)s[i] & 0xC0) != 0x80) {
            if (c == col)
                return i;
            c++;
        }
        i++;
    }
    return i;
}

size_t lineedit_cursor_col(const lineedit_t e)
{
    size_t n = 0;
    for (size_t i = 0; i < e->cur; i++)
        if (((unsigned char)e->buf[i] & 0xC0) != 0x80)
            n++;
    return n;
}

size_t lineedit_ncols(const lineedit_t e)
{
    return lineedit_utf8_ncols(e->buf);
}

void lineedit_set_cursor_col(lineedit_t e, size_t col)
{
    e->cur = lineedit_utf8_offset(e->buf, col);
}
