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
void pres_swap(pres_t a, pres_t b);

/* Parses "<a, b, c | [a,b] = c, [a,c], [b,c]>" (relations may be empty:
 * "<a, b | >" or "<a, b>"), or a built-in family (see the README).  Errors:
 * duplicate or malformed generator names, unknown generators, unbalanced
 * brackets, trailing text, each with its line and column.
 *
 * Details: at least one and at most 1000 generators; relations are separated by commas (no
 * comma after the last); words follow expr.h; blanks, line breaks and '#'
 * comments may stand between tokens, and only those may follow the '>'.
 * text[i] is the relation as written with each run of blanks, line breaks
 * and comments shown as one space.  On failure out is unchanged.
 *
 * Built-in families (names are case-sensitive; relations are listed in
 * text[] as printed by pres_get_str; line/col of every relation is that of
 * the family name):
 *
 *   free(r)           free group on a, b, c, ... (r <= 26) or x1, ..., xr
 *                     (r > 26); no relations; 1 <= r <= 1000.  With class c
 *                     it gives the free nilpotent group of rank r, class c.
 *   heisenberg(n)     the (2n+1)-dimensional Heisenberg group on
 *                     x1..xn, y1..yn, z: [xi,yi] = z, every other commutator
 *                     of two generators trivial (so z is central); n <= 100.
 *   surface(g)        the orientable genus-g surface group on a1, b1, ...,
 *                     ag, bg with relator [a1,b1] [a2,b2] ... [ag,bg];
 *                     1 <= g <= 500.
 *   unitriangular(n)  UT(n,Z), upper unitriangular integer matrices, on the
 *                     superdiagonal elementary matrices e12, e23, ...,
 *                     e89, e9_10, e10_11, ... with the Steinberg-type
 *                     relations rewritten in them (see pres.c for the
 *                     source); 2 <= n <= 16.
 *   raag(V; E)        right-angled Artin group: generators the vertex names
 *                     V, a relator [u,v] for each edge u-v of E, in order.
 *                     At most 1000 vertices.
 *                     Example raag(a b c d; a-b b-c c-d); commas between
 *                     items are optional; "; E" may be left out (no edges).
 *                     Repeated vertices or edges, loops u-u and unknown
 *                     vertices are located errors.
 *
 * Errors of range (family arguments too large) are NS_ERR_LIMIT; unknown or
 * repeated names NS_ERR_INPUT; everything else NS_ERR_SYNTAX. */
ns_status pres_parse(pres_t out, const char *text, int line, int col,
                     nserr_t err);

/* The two sides of relation i: for a relation written "u = v" (stored as
 * u v^-1) *lhs = u, *rhs = v and the result is 1; for a plain relator w
 * *lhs = w, *rhs = NULL and the result is 0.  The nodes are borrowed. */
int pres_relation_sides(const expr_node **lhs, const expr_node **rhs, const pres_t p, slong i);

/* "<a, b | [a,b,a], [a,b,b]>"; caller frees with flint_free. */
char *pres_get_str(const pres_t p);

/* The presentation as LaTeX math (without $ signs), e.g.
 * "\\langle a, b \\mid [a, b, a],\\allowbreak [a, b, b] \\rangle", words as
 * expr_node_get_latex writes them and a relation u = v as "u = v"; line
 * breaks are allowed after each comma.  Caller frees with flint_free. */
char *pres_get_latex(const pres_t p);

/* The images "a -> w, ..." as LaTeX math: "a \\mapsto w,\\allowbreak ...".
 * images: p->gens.n words.  Caller frees with flint_free. */
char *pres_get_map_latex(const expr_struct *images, const pres_t p);

/* Images of the generators: "a -> a^2 b, b -> b a".  images must point to
 * p->gens.n initialised expr_t (expr_init), filled on success.  Every
 * generator needs exactly one image; a missing, repeated or unknown one is
 * a located error.
 *
 * Images are separated by commas or line breaks ("a -> a b" on one line,
 * "b -> b" on the next); an image ends where "name ->" begins.  A missing
 * image is reported at the end of the text, a repeated one at the
 * repetition.  On failure images are unchanged. */
ns_status pres_parse_map(expr_struct *images, const pres_t p,
                         const char *text, int line, int col, nserr_t err);

/* The same for a map template (scan.h): exponents may also be the integer
 * parameters named in params (not generators), as in "a -> a^p b^-q";
 * see _expr_parse_word_params.  params NULL: exactly pres_parse_map. */
ns_status pres_parse_map_params(expr_struct *images, const pres_t p, const names_struct *params,
                                const char *text, int line, int col, nserr_t err);

/* "a -> a^2 b, b -> b a"; caller frees with flint_free. */
char *pres_get_map_str(const expr_struct *images, const pres_t p);

#endif
