/* sbuf.h — a growing string for writers that build text (reports). */
#ifndef NILSTEP_SBUF_H
#define NILSTEP_SBUF_H

#include <stddef.h>

typedef struct {
    char *s;    /* always NUL-terminated once initialised */
    size_t len, cap;
} sbuf_struct;
typedef sbuf_struct sbuf_t[1];

void sbuf_init(sbuf_t b);
void sbuf_clear(sbuf_t b);
void sbuf_puts(sbuf_t b, const char *s);
void sbuf_printf(sbuf_t b, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
/* Appends s as a JSON string literal, quotes included. */
void sbuf_put_json_str(sbuf_t b, const char *s);
/* Appends s with the LaTeX special characters escaped. */
void sbuf_put_latex_str(sbuf_t b, const char *s);
/* Hands the string over to the caller (free()); b is left empty. */
char *sbuf_take(sbuf_t b);

#endif
