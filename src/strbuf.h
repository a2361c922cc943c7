/* strbuf.h — a growing string allocated with FLINT's allocator.
 *
 * Internal to the engine: the printers of expr, pres and session and the
 * report writers build their strings here, and their callers free them with
 * flint_free(). */
#ifndef NILSTEP_STRBUF_H
#define NILSTEP_STRBUF_H

#include <stddef.h>

typedef struct {
    char *s; /* flint_malloc'd and NUL-terminated once initialised */
    size_t len, cap;
} strbuf_struct;
typedef strbuf_struct strbuf_t[1];

/* b holds the empty string. */
void strbuf_init(strbuf_t b);
void strbuf_clear(strbuf_t b);

/* Append the n bytes at s (which need not be NUL-terminated), or the
 * string s. */
void strbuf_putn(strbuf_t b, const char *s, size_t n);
void strbuf_puts(strbuf_t b, const char *s);

/* Appends printf-style formatted text. */
void strbuf_printf(strbuf_t b, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
/* Appends s as a JSON string literal, quotes included. */
void strbuf_put_json_str(strbuf_t b, const char *s);
/* Appends s with the LaTeX special characters escaped. */
void strbuf_put_latex_str(strbuf_t b, const char *s);

/* Hands the string over to the caller (flint_free()); b is left empty and
 * needs strbuf_init before it is used again. */
char *strbuf_take(strbuf_t b);

#endif
