/* strbuf.h — a growing string allocated with FLINT's allocator.
 *
 * The engine's one string and memory scheme, stated here once:
 *  - every string the engine returns (or stores in a structure it hands
 *    out) is allocated with flint_malloc and freed with flint_free();
 *  - strings are built with strbuf_t and copied with strbuf_dup_str;
 *  - running out of memory aborts through FLINT's allocator (flint_malloc
 *    never returns NULL; the program installs FLINT's abort hook to turn it
 *    into a message and an exit status), so the engine never checks for
 *    NULL after an allocation. */
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

/* A flint_malloc copy of s (the engine's only strdup). */
char *strbuf_dup_str(const char *s);
/* A flint_malloc copy of the n bytes at s, NUL-terminated. */
char *strbuf_dup_strn(const char *s, size_t n);

/* Hands the string over to the caller (flint_free()); b is left empty and
 * needs strbuf_init before it is used again. */
char *strbuf_take(strbuf_t b);

#endif
