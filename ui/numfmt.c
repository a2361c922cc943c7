/* numfmt.c — see numfmt.h. */
#include "numfmt.h"

#include <stdio.h>
#include <string.h>

#include "lineedit.h"

static int numfmt_is_digit(char c)
{
    return c >= '0' && c <= '9';
}

/* 1 if dec is [-+]digits[.digits][(e|E)[-+]digits]. */
static int numfmt_is_plain(const char *s)
{
    if (*s == '-' || *s == '+')
        s++;
    if (!numfmt_is_digit(*s))
        return 0;
    while (numfmt_is_digit(*s))
        s++;
    if (*s == '.') {
        s++;
        while (numfmt_is_digit(*s))
            s++;
    }
    if (*s == 'e' || *s == 'E') {
        s++;
        if (*s == '-' || *s == '+')
            s++;
        if (!numfmt_is_digit(*s))
            return 0;
        while (numfmt_is_digit(*s))
            s++;
    }
    return *s == '\0';
}

static void numfmt_put(char *buf, size_t n, size_t *k, char c)
{
    if (*k + 1 < n)
        buf[(*k)++] = c;
}

void numfmt_decimal(char *buf, size_t n, const char *dec, int sig)
{
    if (n == 0)
        return;
    if (dec == NULL)
        dec = "";
    if (!numfmt_is_plain(dec)) {
        size_t len = strlen(dec);
        if (len >= n)
            len = n - 1;
        memcpy(buf, dec, len);
        buf[len] = '\0';
        return;
    }
    size_t k = 0;
    const char *s = dec;
    if (*s == '-' || *s == '+')
        numfmt_put(buf, n, &k, *s++);
    int used = 0;    /* significant digits written */
    int started = 0; /* a nonzero digit has been seen */
    while (numfmt_is_digit(*s)) {
        if (*s != '0')
            started = 1;
        if (started)
            used++;
        numfmt_put(buf, n, &k, *s++);
    }
    numfmt_put(buf, n, &k, '.');
    int frac = 0;
    if (*s == '.') {
        s++;
        while (numfmt_is_digit(*s)) {
            if (*s != '0')
                started = 1;
            if (frac > 0 && started && used >= sig)
                break;
            if (started)
                used++;
            numfmt_put(buf, n, &k, *s++);
            frac++;
        }
        while (numfmt_is_digit(*s))
            s++;
    }
    if (frac == 0)
        numfmt_put(buf, n, &k, '0');
    while (*s) /* the exponent, unchanged */
        numfmt_put(buf, n, &k, *s++);
    buf[k] = '\0';
}

int numfmt_clip(char *buf, size_t n, const char *s, size_t width, int ascii)
{
    if (n == 0)
        return 0;
    const char *ell = ascii ? "~" : "\xE2\x80\xA6";
    size_t cols = lineedit_utf8_ncols(s);
    size_t bytes;
    int cut = cols > width;
    if (!cut)
        bytes = strlen(s);
    else
        bytes = width == 0 ? 0 : lineedit_utf8_offset(s, width - 1);
    size_t extra = cut && width > 0 ? strlen(ell) : 0;
    if (bytes + extra >= n) {
        /* buf too small: keep whole code points only */
        size_t col = lineedit_utf8_ncols(s);
        while (col > 0 && (bytes = lineedit_utf8_offset(s, col)) + extra >= n)
            col--;
        if (bytes + extra >= n)
            bytes = 0;
    }
    memcpy(buf, s, bytes);
    memcpy(buf + bytes, ell, extra);
    buf[bytes + extra] = '\0';
    return cut;
}

int numfmt_integer(char *buf, size_t n, const char *dig, size_t width, int ascii)
{
    if (n == 0)
        return 0;
    if (dig == NULL)
        dig = "";
    size_t len = strlen(dig);
    if (width > n - 1) /* what does not fit in buf is shortened too */
        width = n - 1;
    if (len <= width || len < 3) {
        memcpy(buf, dig, len);
        buf[len] = '\0';
        return 0;
    }
    const char *sign = dig[0] == '-' ? "-" : "";
    const char *d = dig + strlen(sign);
    size_t nd = strlen(d);
    const char *ell = ascii ? "~" : "\xE2\x80\xA6";
    /* With the digit count when it leaves room for 3 digits after the
     * point, else without (the exponent says it too). */
    char tail[64];
    size_t frac = 0;
    for (int with_count = 1; with_count >= 0; with_count--) {
        if (with_count)
            snprintf(tail, sizeof tail, "%se%zu (%zu digits)", ell, nd - 1, nd);
        else
            snprintf(tail, sizeof tail, "%se%zu", ell, nd - 1);
        size_t fixed = strlen(sign) + 2 + lineedit_utf8_ncols(tail); /* sign, d, '.' */
        frac = width > fixed ? width - fixed : 0;
        if (frac >= 3 || !with_count)
            break;
    }
    if (frac < 1)
        frac = 1;
    if (frac > nd - 1)
        frac = nd - 1;
    snprintf(buf, n, "%s%c.%.*s%s", sign, d[0], (int)frac, d + 1, tail);
    return 1;
}
