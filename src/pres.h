/* pres.h — finitely presented groups <gens | relations>. */
#ifndef NILSTEP_PRES_H
#define NILSTEP_PRES_H

#include "expr.h"

/* A relation "u = v" is stored as the relator u v^-1 (an EXPR_MUL of u and
 * v^-1); a plain word is stored as it is.  text[i] is the relation exactly
 * as written, for messages; line/col where it starts. */
typedef struct {
    names_t gens;
    slong nrels;
    expr_struct *rels;   /* nrels relators, owned */
    char **text;         /* nrels strings, owned */
    int *line, *col;
} pres_struct;
typedef pres_struct pres_t[1];

void pres_init(pres_t p);
void pres_clear(pres_t p);
void pres_set(pres_t dst, const pres_t src);

/* Parses "<a, b, c | [a,b] = c, [a,c], [b,c]>" (relations may be empty:
 * "<a, b | >" or "<a, b>"), or a built-in family (see the README).  Errors:
 * duplicate or malformed generator names, unknown generators, unbalanced
 * brackets, trailing text, each with its line and column. */
ns_status pres_parse(pres_t out, const char *text, int line, int col,
                     nserr_t err);

/* "<a, b | [a,b,a], [a,b,b]>"; caller frees with flint_free. */
char *pres_get_str(const pres_t p);

/* Images of the generators: "a -> a^2 b, b -> b a".  images must point to
 * p->gens.n initialised expr_t (expr_init), filled on success.  Every
 * generator needs exactly one image; a missing, repeated or unknown one is
 * a located error. */
ns_status pres_parse_map(expr_struct *images, const pres_t p,
                         const char *text, int line, int col, nserr_t err);

/* "a -> a^2 b, b -> b a"; caller frees with flint_free. */
char *pres_get_map_str(const expr_struct *images, const pres_t p);

#endif
