/* pres.c — presentations <gens | relations>, built-in families, and maps
 * given by the images of the generators. */
#include <stdio.h>
#include <string.h>

#include <flint/flint.h>
#include <flint/fmpz.h>

#include "pres.h"
#include "strbuf.h"

/* Size limits of the families: beyond them the relation lists get too long
 * to be useful, and a typo like heisenberg(100000) must not eat the memory. */
#define FREE_MAX_RANK 1000
#define HEISENBERG_MAX 100
#define SURFACE_MAX_GENUS 500
#define UNITRIANGULAR_MAX 16
/* Generators written out in <...> or raag(...): names are found by linear
 * search, and no nilpotent quotient of a larger group is within reach. */
#define PRES_MAX_GENS 1000

/* ------------------------------------------------------------------------ */
/* Storage                                                                   */

void pres_init(pres_t p)
{
    names_init(p->gens);
    p->nrels = 0;
    p->rels = NULL;
    p->text = NULL;
    p->line = NULL;
    p->col = NULL;
}

void pres_clear(pres_t p)
{
    for (slong i = 0; i < p->nrels; i++) {
        expr_clear(p->rels + i);
        flint_free(p->text[i]);
    }
    flint_free(p->rels);
    flint_free(p->text);
    flint_free(p->line);
    flint_free(p->col);
    names_clear(p->gens);
    pres_init(p);
}


/* Appends a relator; takes root and text (flint_malloc'd).  Only used on
 * presentations this file built from pres_init, whose arrays have room for
 * the next power of two of relations. */
static void pres_push_rel(pres_t p, expr_node *root, char *text, int line, int col)
{
    slong n = p->nrels + 1;
    if ((p->nrels & (p->nrels - 1)) == 0) {
        slong cap = p->nrels ? 2 * p->nrels : 1;
        p->rels = flint_realloc(p->rels, sizeof(expr_struct) * cap);
        p->text = flint_realloc(p->text, sizeof(char *) * cap);
        p->line = flint_realloc(p->line, sizeof(int) * cap);
        p->col = flint_realloc(p->col, sizeof(int) * cap);
    }
    p->rels[n - 1].root = root;
    p->text[n - 1] = text;
    p->line[n - 1] = line;
    p->col[n - 1] = col;
    p->nrels = n;
}

void pres_set(pres_t dst, const pres_t src)
{
    if (dst == src)
        return;
    pres_clear(dst);
    names_set(dst->gens, src->gens);
    for (slong i = 0; i < src->nrels; i++)
        pres_push_rel(dst, expr_node_copy(src->rels[i].root),
                      strbuf_dup_str(src->text && src->text[i] ? src->text[i] : ""),
                      src->line ? src->line[i] : 0, src->col ? src->col[i] : 0);
}

void pres_swap(pres_t a, pres_t b)
{
    pres_struct t = *a;
    *a = *b;
    *b = t;
}

/* ------------------------------------------------------------------------ */
/* Helpers for building relators                                             */

static expr_node *gen_node(slong i, int line, int col)
{
    expr_node *n = expr_node_new(EXPR_GEN, line, col);
    n->gen = i;
    return n;
}

static expr_node *comm2(expr_node *x, expr_node *y)
{
    expr_node *n = expr_node_new(EXPR_COMM, x->line, x->col);
    expr_node_add_kid(n, x);
    expr_node_add_kid(n, y);
    return n;
}

/* u v^-1, the relator of "u = v"; takes both. */
static expr_node *relation_node(expr_node *u, expr_node *v)
{
    expr_node *inv = expr_node_new(EXPR_POW, v->line, v->col);
    expr_node *n = expr_node_new(EXPR_MUL, u->line, u->col);
    fmpz_set_si(inv->exp, -1);
    expr_node_add_kid(inv, v);
    expr_node_add_kid(n, u);
    expr_node_add_kid(n, inv);
    return n;
}

/* Adds the relator u (v == NULL) or the relation u = v, with its text. */
static void push_built(pres_t p, expr_node *u, expr_node *v, int line, int col)
{
    char *us = expr_node_get_str(u, p->gens);
    char *text;

    if (v == NULL) {
        pres_push_rel(p, u, us, line, col);
        return;
    }
    char *vs = expr_node_get_str(v, p->gens);
    size_t n = strlen(us) + strlen(vs) + 4;
    text = flint_malloc(n);
    snprintf(text, n, "%s = %s", us, vs);
    flint_free(us);
    flint_free(vs);
    pres_push_rel(p, relation_node(u, v), text, line, col);
}

/* The relation as written, with every run of blanks, line breaks and
 * comments between its tokens shown as one space (messages are one line). */
static char *collapse_text(const char *start, const char *end)
{
    char *d = flint_malloc((size_t)(end - start) + 1);
    size_t k = 0;
    const char *s = start;

    while (s < end) {
        if (*s == '#' || *s == ' ' || *s == '\t' || *s == '\r' || *s == '\n' || *s == '\f' ||
            *s == '\v') {
            while (s < end) {
                if (*s == '#') {
                    while (s < end && *s != '\n')
                        s++;
                } else if (*s == ' ' || *s == '\t' || *s == '\r' || *s == '\n' || *s == '\f' ||
                           *s == '\v') {
                    s++;
                } else {
                    break;
                }
            }
            if (k > 0 && s < end)
                d[k++] = ' ';
        } else {
            d[k++] = *s++;
        }
    }
    d[k] = '\0';
    return d;
}

static ns_status err_at_tok(nserr_t err, ns_status st, const expr_tok_struct *t,
                            const char *what)
{
    char d[80];
    _expr_tok_describe(d, sizeof d, t);
    return nserr_set(err, st, t->line, t->col, "%s, found %s", what, d);
}

static ns_status err_unexpected(nserr_t err, const expr_tok_struct *t)
{
    char d[80];
    _expr_tok_describe(d, sizeof d, t);
    return nserr_set(err, NS_ERR_SYNTAX, t->line, t->col, "unexpected %s", d);
}

static int short_len(size_t len)
{
    return len > 64 ? 64 : (int)len;
}

/* The error for the token t where what was expected; at the end of the text,
 * the '<' or '(' token open is reported as never closed instead. */
static ns_status err_expected(nserr_t err, const expr_tok_struct *t, const char *what,
                              const expr_tok_struct *open)
{
    int angle = open->kind == EXPR_TOK_LANGLE;
    if (t->kind == EXPR_TOK_END)
        return nserr_set(err, NS_ERR_SYNTAX, t->line, t->col,
                         "expected '%c' to close '%c' opened at %d:%d", angle ? '>' : ')',
                         angle ? '<' : '(', open->line, open->col);
    return err_at_tok(err, NS_ERR_SYNTAX, t, what);
}

/* Adds the name t as the next generator of p and records its position in
 * (*lines, *cols), which grow with p->gens.  Fails on a name listed before
 * and beyond PRES_MAX_GENS; messages call a generator what (plural whats). */
static ns_status add_named_gen(pres_t p, int **lines, int **cols, const expr_tok_struct *t,
                               const char *what, const char *whats, nserr_t err)
{
    slong prev = names_find(p->gens, t->start, t->len);
    if (prev >= 0)
        return nserr_set(err, NS_ERR_INPUT, t->line, t->col,
                         "%s '%.*s' listed twice (first at %d:%d)", what, short_len(t->len),
                         t->start, (*lines)[prev], (*cols)[prev]);
    if (p->gens->n >= PRES_MAX_GENS)
        return nserr_set(err, NS_ERR_LIMIT, t->line, t->col, "more than %d %s", PRES_MAX_GENS,
                         whats);
    char *name = flint_malloc(t->len + 1);
    memcpy(name, t->start, t->len);
    name[t->len] = '\0';
    names_add(p->gens, name);
    flint_free(name);
    *lines = flint_realloc(*lines, sizeof(int) * p->gens->n);
    *cols = flint_realloc(*cols, sizeof(int) * p->gens->n);
    (*lines)[p->gens->n - 1] = t->line;
    (*cols)[p->gens->n - 1] = t->col;
    return NS_OK;
}

/* ------------------------------------------------------------------------ */
/* <gens | relations>                                                        */

static ns_status parse_angle(pres_t p, expr_scan_t s, nserr_t err)
{
    expr_tok_struct open = s->tok;
    int *gline = NULL, *gcol = NULL;
    ns_status st = NS_OK;

    _expr_scan_next(s);
    if (s->tok.kind == EXPR_TOK_RANGLE || s->tok.kind == EXPR_TOK_BAR)
        return nserr_set(err, NS_ERR_INPUT, s->tok.line, s->tok.col,
                         "a presentation needs at least one generator");

    /* Generators. */
    for (;;) {
        if (s->tok.kind != EXPR_TOK_NAME) {
            st = err_expected(err, &s->tok, "expected a generator name", &open);
            goto done;
        }
        st = add_named_gen(p, &gline, &gcol, &s->tok, "generator", "generators", err);
        if (st != NS_OK)
            goto done;
        _expr_scan_next(s);
        if (s->tok.kind == EXPR_TOK_COMMA) {
            _expr_scan_next(s);
            continue;
        }
        if (s->tok.kind == EXPR_TOK_BAR || s->tok.kind == EXPR_TOK_RANGLE)
            break;
        st = err_expected(err, &s->tok, "expected ',', '|' or '>' after a generator", &open);
        goto done;
    }

    /* Relations. */
    if (s->tok.kind == EXPR_TOK_BAR) {
        _expr_scan_next(s);
        if (s->tok.kind != EXPR_TOK_RANGLE) {
            for (;;) {
                expr_tok_struct first = s->tok;
                expr_node *u = NULL, *v = NULL;

                if (!_expr_tok_starts_word(s->tok.kind)) {
                    st = err_expected(err, &s->tok, "expected a relation", &open);
                    goto done;
                }
                if ((st = _expr_parse_word(&u, s, p->gens, 0, err)) != NS_OK)
                    goto done;
                if (s->tok.kind == EXPR_TOK_EQUALS) {
                    _expr_scan_next(s);
                    if (!_expr_tok_starts_word(s->tok.kind)) {
                        expr_node_free(u);
                        st = err_at_tok(err, NS_ERR_SYNTAX, &s->tok,
                                        "expected a word after '='");
                        goto done;
                    }
                    if ((st = _expr_parse_word(&v, s, p->gens, 0, err)) != NS_OK) {
                        expr_node_free(u);
                        goto done;
                    }
                    if (s->tok.kind == EXPR_TOK_EQUALS) {
                        expr_node_free(u);
                        expr_node_free(v);
                        st = nserr_set(err, NS_ERR_SYNTAX, s->tok.line, s->tok.col,
                                       "a relation has at most one '='");
                        goto done;
                    }
                }
                pres_push_rel(p, v ? relation_node(u, v) : u,
                              collapse_text(first.start, s->prev_end), first.line, first.col);
                if (s->tok.kind == EXPR_TOK_COMMA) {
                    _expr_scan_next(s);
                    if (s->tok.kind == EXPR_TOK_RANGLE) {
                        st = nserr_set(err, NS_ERR_SYNTAX, s->tok.line, s->tok.col,
                                       "expected a relation after ','");
                        goto done;
                    }
                    continue;
                }
                if (s->tok.kind == EXPR_TOK_RANGLE)
                    break;
                if (s->tok.kind == EXPR_TOK_BAD || s->tok.kind == EXPR_TOK_RPAREN ||
                    s->tok.kind == EXPR_TOK_RBRACK)
                    st = err_unexpected(err, &s->tok);
                else
                    st = err_expected(err, &s->tok, "expected ',' or '>' after a relation", &open);
                goto done;
            }
        }
    }
    _expr_scan_next(s); /* the '>' */

done:
    flint_free(gline);
    flint_free(gcol);
    return st;
}

/* ------------------------------------------------------------------------ */
/* Families                                                                  */

static void add_gen_fmt(pres_t p, const char *fmt, long a, long b)
{
    char name[48];
    snprintf(name, sizeof name, fmt, a, b);
    names_add(p->gens, name);
}

/* free(r): a, b, c, ... for r <= 26, else x1 ... xr. */
static void build_free(pres_t p, long r)
{
    for (long i = 0; i < r; i++) {
        if (r <= 26)
            add_gen_fmt(p, "%c", 'a' + i, 0);
        else
            add_gen_fmt(p, "x%ld", i + 1, 0);
    }
}

/* heisenberg(n): x1..xn, y1..yn, z; [xi,yi] = z, every other commutator of
 * two generators trivial (z central). */
static void build_heisenberg(pres_t p, long n, int line, int col)
{
    long z = 2 * n;
    for (long i = 1; i <= n; i++)
        add_gen_fmt(p, "x%ld", i, 0);
    for (long i = 1; i <= n; i++)
        add_gen_fmt(p, "y%ld", i, 0);
    names_add(p->gens, "z");
#define X(i) gen_node((i) - 1, line, col)
#define Y(i) gen_node(n + (i) - 1, line, col)
    for (long i = 1; i <= n; i++)
        push_built(p, comm2(X(i), Y(i)), gen_node(z, line, col), line, col);
    for (long i = 1; i <= n; i++)
        for (long j = i + 1; j <= n; j++) {
            push_built(p, comm2(X(i), X(j)), NULL, line, col);
            push_built(p, comm2(Y(i), Y(j)), NULL, line, col);
        }
    for (long i = 1; i <= n; i++)
        for (long j = 1; j <= n; j++)
            if (i != j)
                push_built(p, comm2(X(i), Y(j)), NULL, line, col);
    for (long i = 1; i <= n; i++) {
        push_built(p, comm2(X(i), gen_node(z, line, col)), NULL, line, col);
        push_built(p, comm2(Y(i), gen_node(z, line, col)), NULL, line, col);
    }
#undef X
#undef Y
}

/* surface(g): a1, b1, ..., ag, bg with the one relator [a1,b1]...[ag,bg]. */
static void build_surface(pres_t p, long g, int line, int col)
{
    expr_node *r;

    for (long i = 1; i <= g; i++) {
        add_gen_fmt(p, "a%ld", i, 0);
        add_gen_fmt(p, "b%ld", i, 0);
    }
    if (g == 1) {
        r = comm2(gen_node(0, line, col), gen_node(1, line, col));
    } else {
        r = expr_node_new(EXPR_MUL, line, col);
        for (long i = 0; i < g; i++)
            expr_node_add_kid(r, comm2(gen_node(2 * i, line, col), gen_node(2 * i + 1, line, col)));
    }
    push_built(p, r, NULL, line, col);
}

/* The element e_ij (i < j) of UT(n,Z) as a word in the superdiagonal
 * generators: e_{i,i+1} itself, else the left-normed commutator
 * [e_{i,i+1}, e_{i+1,i+2}, ..., e_{j-1,j}] (generator k-1 is e_{k,k+1}). */
static expr_node *ut_word(long i, long j, int line, int col)
{
    expr_node *n;
    if (j == i + 1)
        return gen_node(i - 1, line, col);
    n = expr_node_new(EXPR_COMM, line, col);
    for (long k = i; k < j; k++)
        expr_node_add_kid(n, gen_node(k - 1, line, col));
    return n;
}

/* unitriangular(n): UT(n,Z) on e12, e23, ..., e(n-1)n.
 *
 * Start from the Steinberg-type presentation of UT(n,Z) on all e_ij, i < j:
 *   [e_ij, e_jk] = e_ik  (i < j < k),
 *   [e_ij, e_kl] = 1     (j != k and i != l),
 * (D. K. Biss, S. Dasgupta, A presentation for the unipotent group over rings
 * with identity, J. Algebra 237 (2001)).  It is complete because those
 * relations collect every element into a product of powers of the e_ij in a
 * fixed order, and such products are distinct matrices.  Tietze moves then
 * remove e_ij for j > i+1 through e_ij = [e_i(i+1), ..., e_(j-1)j]
 * (ut_word), which drops the relations [e_ij, e_j(j+1)] = e_i(j+1) since
 * they become identities of the free group.  With [x,y] = x^-1 y^-1 x y,
 * [1+E_ij, 1+E_jk] = 1+E_ik, so these words are the elementary matrices. */
static void build_unitriangular(pres_t p, long n, int line, int col)
{
    long npos = n * (n - 1) / 2, k = 0;
    long *pi = flint_malloc(sizeof(long) * npos), *pj = flint_malloc(sizeof(long) * npos);

    for (long i = 1; i < n; i++) {
        if (i + 1 <= 9)
            add_gen_fmt(p, "e%ld%ld", i, i + 1);
        else
            add_gen_fmt(p, "e%ld_%ld", i, i + 1);
    }
    /* Positions in order of weight j - i, so that relations among the
     * generators come first. */
    for (long w = 1; w < n; w++)
        for (long i = 1; i + w <= n; i++) {
            pi[k] = i;
            pj[k] = i + w;
            k++;
        }
    for (long a = 0; a < npos; a++)
        for (long b = a + 1; b < npos; b++) {
            long i = pi[a], j = pj[a], r = pi[b], t = pj[b];
            if (j == r) {
                if (t != r + 1)
                    push_built(p, comm2(ut_word(i, j, line, col), ut_word(r, t, line, col)),
                               ut_word(i, t, line, col), line, col);
            } else if (t == i) {
                if (j != i + 1)
                    push_built(p, comm2(ut_word(r, t, line, col), ut_word(i, j, line, col)),
                               ut_word(r, j, line, col), line, col);
            } else {
                push_built(p, comm2(ut_word(i, j, line, col), ut_word(r, t, line, col)), NULL,
                           line, col);
            }
        }
    flint_free(pi);
    flint_free(pj);
}

/* raag(V; E) after the '(' : vertices, optional ';' and edges u-v. */
static ns_status parse_raag(pres_t p, expr_scan_t s, const expr_tok_struct *open,
                            const expr_tok_struct *fam, nserr_t err)
{
    int *vl = NULL, *vc = NULL;
    long nedges = 0;
    slong *eu = NULL, *ev = NULL;
    int *el = NULL, *ec = NULL;
    long *seen = NULL; /* seen[u n + v] = 1 + index of the edge u-v, or 0 */
    ns_status st = NS_OK;

    while (s->tok.kind == EXPR_TOK_NAME) {
        if ((st = add_named_gen(p, &vl, &vc, &s->tok, "vertex", "vertices", err)) != NS_OK)
            goto done;
        _expr_scan_next(s);
        if (s->tok.kind == EXPR_TOK_COMMA)
            _expr_scan_next(s);
    }
    if (p->gens->n == 0) {
        st = err_at_tok(err, NS_ERR_INPUT, &s->tok, "raag needs at least one vertex");
        goto done;
    }
    if (s->tok.kind == EXPR_TOK_SEMI) {
        _expr_scan_next(s);
        while (s->tok.kind == EXPR_TOK_NAME) {
            expr_tok_struct a = s->tok, b;
            slong u = names_find(p->gens, a.start, a.len), v;
            if (u < 0) {
                st = nserr_set(err, NS_ERR_INPUT, a.line, a.col, "unknown vertex '%.*s'",
                               short_len(a.len), a.start);
                goto done;
            }
            _expr_scan_next(s);
            if (s->tok.kind != EXPR_TOK_MINUS) {
                st = err_at_tok(err, NS_ERR_SYNTAX, &s->tok,
                                "expected '-' between the two ends of an edge");
                goto done;
            }
            _expr_scan_next(s);
            b = s->tok;
            if (b.kind != EXPR_TOK_NAME) {
                st = err_at_tok(err, NS_ERR_SYNTAX, &b, "expected a vertex after '-'");
                goto done;
            }
            v = names_find(p->gens, b.start, b.len);
            if (v < 0) {
                st = nserr_set(err, NS_ERR_INPUT, b.line, b.col, "unknown vertex '%.*s'",
                               short_len(b.len), b.start);
                goto done;
            }
            if (u == v) {
                st = nserr_set(err, NS_ERR_INPUT, a.line, a.col,
                               "an edge joins two different vertices");
                goto done;
            }
            if (seen == NULL)
                seen = flint_calloc((size_t)(p->gens->n * p->gens->n), sizeof(long));
            if (seen[u * p->gens->n + v] > 0) {
                long e = seen[u * p->gens->n + v] - 1;
                st = nserr_set(err, NS_ERR_INPUT, a.line, a.col,
                               "edge %s-%s listed twice (first at %d:%d)", p->gens->name[u],
                               p->gens->name[v], el[e], ec[e]);
                goto done;
            }
            seen[u * p->gens->n + v] = seen[v * p->gens->n + u] = nedges + 1;
            if ((nedges & (nedges - 1)) == 0) { /* grow at powers of two */
                long cap = nedges ? 2 * nedges : 1;
                eu = flint_realloc(eu, sizeof(slong) * cap);
                ev = flint_realloc(ev, sizeof(slong) * cap);
                el = flint_realloc(el, sizeof(int) * cap);
                ec = flint_realloc(ec, sizeof(int) * cap);
            }
            eu[nedges] = u;
            ev[nedges] = v;
            el[nedges] = a.line;
            ec[nedges] = a.col;
            nedges++;
            _expr_scan_next(s);
            if (s->tok.kind == EXPR_TOK_COMMA)
                _expr_scan_next(s);
        }
    }
    if (s->tok.kind != EXPR_TOK_RPAREN) {
        st = err_expected(err, &s->tok, "expected a vertex, ';', an edge u-v or ')'", open);
        goto done;
    }
    _expr_scan_next(s);
    for (long e = 0; e < nedges; e++)
        push_built(p, comm2(gen_node(eu[e], fam->line, fam->col), gen_node(ev[e], fam->line, fam->col)),
                   NULL, fam->line, fam->col);

done:
    flint_free(vl);
    flint_free(vc);
    flint_free(eu);
    flint_free(ev);
    flint_free(el);
    flint_free(ec);
    flint_free(seen);
    return st;
}

typedef struct {
    const char *name;
    const char *arg;  /* for messages: "free(r)" */
    long min, max;
} family_info;

static const family_info families[] = {
    {"free", "free(r)", 1, FREE_MAX_RANK},
    {"heisenberg", "heisenberg(n)", 1, HEISENBERG_MAX},
    {"surface", "surface(g)", 1, SURFACE_MAX_GENUS},
    {"unitriangular", "unitriangular(n)", 2, UNITRIANGULAR_MAX},
    {"raag", "raag(V; E)", 0, 0},
};
#define NFAMILIES ((int)(sizeof families / sizeof families[0]))

static int ascii_ieq(const char *a, size_t alen, const char *b)
{
    if (strlen(b) != alen)
        return 0;
    for (size_t i = 0; i < alen; i++) {
        char x = a[i], y = b[i];
        if (x >= 'A' && x <= 'Z')
            x = (char)(x - 'A' + 'a');
        if (x != y)
            return 0;
    }
    return 1;
}

static ns_status parse_family(pres_t p, expr_scan_t s, nserr_t err)
{
    expr_tok_struct name = s->tok, open;
    int f = -1;
    ns_status st;

    for (int i = 0; i < NFAMILIES; i++)
        if (strlen(families[i].name) == name.len &&
            memcmp(families[i].name, name.start, name.len) == 0)
            f = i;
    if (f < 0) {
        for (int i = 0; i < NFAMILIES; i++)
            if (ascii_ieq(name.start, name.len, families[i].name))
                return nserr_set(err, NS_ERR_INPUT, name.line, name.col,
                                 "unknown family '%.*s' (names are case-sensitive: '%s')",
                                 short_len(name.len), name.start, families[i].name);
        if (_expr_scan_peek(s) == EXPR_TOK_LPAREN)
            return nserr_set(err, NS_ERR_INPUT, name.line, name.col,
                             "unknown family '%.*s' (built in: free, heisenberg, surface, "
                             "unitriangular, raag)",
                             short_len(name.len), name.start);
        return err_at_tok(err, NS_ERR_SYNTAX, &name,
                          "expected '<' to start a presentation or a family such as "
                          "heisenberg(1)");
    }
    _expr_scan_next(s);
    open = s->tok;
    if (open.kind != EXPR_TOK_LPAREN)
        return nserr_set(err, NS_ERR_SYNTAX, open.line, open.col, "expected '(' after '%s'",
                         families[f].name);
    _expr_scan_next(s);

    if (strcmp(families[f].name, "raag") == 0) {
        if ((st = parse_raag(p, s, &open, &name, err)) != NS_OK)
            return st;
    } else {
        expr_tok_struct a = s->tok;
        long v;
        fmpz_t x;

        if (a.kind != EXPR_TOK_INT || a.bad_number)
            return err_at_tok(err, NS_ERR_SYNTAX, &a, "expected a whole number");
        fmpz_init(x);
        _expr_tok_get_fmpz(x, &a);
        if (fmpz_cmp_si(x, families[f].min) < 0) {
            fmpz_clear(x);
            return nserr_set(err, NS_ERR_INPUT, a.line, a.col, "%s needs %c >= %ld",
                             families[f].arg, families[f].arg[strlen(families[f].arg) - 2],
                             families[f].min);
        }
        if (fmpz_cmp_si(x, families[f].max) > 0) {
            fmpz_clear(x);
            return nserr_set(err, NS_ERR_LIMIT, a.line, a.col, "%s is limited to %c <= %ld",
                             families[f].arg, families[f].arg[strlen(families[f].arg) - 2],
                             families[f].max);
        }
        v = (long)fmpz_get_si(x);
        fmpz_clear(x);
        _expr_scan_next(s);
        if (s->tok.kind != EXPR_TOK_RPAREN)
            return err_expected(err, &s->tok, "expected ')'", &open);
        _expr_scan_next(s);
        switch (f) {
        case 0: build_free(p, v); break;
        case 1: build_heisenberg(p, v, name.line, name.col); break;
        case 2: build_surface(p, v, name.line, name.col); break;
        default: build_unitriangular(p, v, name.line, name.col); break;
        }
    }
    return NS_OK;
}

ns_status pres_parse(pres_t out, const char *text, int line, int col, nserr_t err)
{
    expr_scan_t s;
    pres_t p;
    ns_status st;

    pres_init(p);
    _expr_scan_init(s, text, line, col);
    if (s->tok.kind == EXPR_TOK_LANGLE)
        st = parse_angle(p, s, err);
    else if (s->tok.kind == EXPR_TOK_NAME)
        st = parse_family(p, s, err);
    else if (s->tok.kind == EXPR_TOK_END)
        st = nserr_set(err, NS_ERR_SYNTAX, s->tok.line, s->tok.col,
                       "expected a presentation such as <a, b | [a,b]>");
    else
        st = err_at_tok(err, NS_ERR_SYNTAX, &s->tok,
                        "expected '<' to start a presentation");
    if (st == NS_OK && s->tok.kind != EXPR_TOK_END) {
        char d[80];
        _expr_tok_describe(d, sizeof d, &s->tok);
        st = nserr_set(err, NS_ERR_SYNTAX, s->tok.line, s->tok.col,
                       "unexpected %s after the end of the presentation", d);
    }
    if (st == NS_OK)
        pres_swap(out, p);
    pres_clear(p);
    return st;
}

/* ------------------------------------------------------------------------ */
/* Printing                                                                  */

static void put_owned(strbuf_t b, char *s)
{
    strbuf_puts(b, s);
    flint_free(s);
}

/* A relation parsed from "u = v" has the '=' in its text and the tree
 * u v^-1 (relation_node); a relator written u v^-1 has no '='. */
int pres_relation_sides(const expr_node **lhs, const expr_node **rhs, const pres_t p, slong i)
{
    const expr_node *r = p->rels[i].root;

    if (p->text != NULL && p->text[i] != NULL && strchr(p->text[i], '=') != NULL &&
        r != NULL && r->kind == EXPR_MUL && r->nkids == 2 && r->kids[1]->kind == EXPR_POW &&
        r->kids[1]->nkids == 1 && fmpz_equal_si(r->kids[1]->exp, -1)) {
        *lhs = r->kids[0];
        *rhs = r->kids[1]->kids[0];
        return 1;
    }
    *lhs = r;
    *rhs = NULL;
    return 0;
}

/* A relation parsed from "u = v" prints that way again. */
static void put_relation(strbuf_t b, const pres_t p, slong i)
{
    const expr_node *u, *v;

    if (pres_relation_sides(&u, &v, p, i)) {
        put_owned(b, expr_node_get_str(u, p->gens));
        strbuf_puts(b, " = ");
        put_owned(b, expr_node_get_str(v, p->gens));
        return;
    }
    put_owned(b, expr_node_get_str(u, p->gens));
}

char *pres_get_latex(const pres_t p)
{
    strbuf_t b;
    strbuf_init(b);
    strbuf_puts(b, "\\langle ");
    for (slong i = 0; i < p->gens->n; i++) {
        if (i > 0)
            strbuf_puts(b, ",\\allowbreak ");
        put_owned(b, expr_name_get_latex(p->gens->name[i]));
    }
    if (p->nrels > 0) {
        strbuf_puts(b, " \\mid ");
        for (slong i = 0; i < p->nrels; i++) {
            const expr_node *u, *v;
            if (i > 0)
                strbuf_puts(b, ",\\allowbreak ");
            int eq = pres_relation_sides(&u, &v, p, i);
            put_owned(b, expr_node_get_latex(u, p->gens));
            if (eq) {
                strbuf_puts(b, " = ");
                put_owned(b, expr_node_get_latex(v, p->gens));
            }
        }
    }
    strbuf_puts(b, " \\rangle");
    return strbuf_take(b);
}

char *pres_get_map_latex(const expr_struct *images, const pres_t p)
{
    strbuf_t b;
    strbuf_init(b);
    for (slong i = 0; i < p->gens->n; i++) {
        if (i > 0)
            strbuf_puts(b, ",\\allowbreak ");
        put_owned(b, expr_name_get_latex(p->gens->name[i]));
        strbuf_puts(b, " \\mapsto ");
        put_owned(b, expr_node_get_latex(images[i].root, p->gens));
    }
    return strbuf_take(b);
}

char *pres_get_str(const pres_t p)
{
    strbuf_t b;

    strbuf_init(b);
    strbuf_puts(b, "<");
    for (slong i = 0; i < p->gens->n; i++) {
        if (i > 0)
            strbuf_puts(b, ", ");
        strbuf_puts(b, p->gens->name[i]);
    }
    if (p->nrels > 0) {
        strbuf_puts(b, " | ");
        for (slong i = 0; i < p->nrels; i++) {
            if (i > 0)
                strbuf_puts(b, ", ");
            put_relation(b, p, i);
        }
    }
    strbuf_puts(b, ">");
    return strbuf_take(b);
}

/* ------------------------------------------------------------------------ */
/* Maps                                                                      */

ns_status pres_parse_map(expr_struct *images, const pres_t p, const char *text, int line,
                         int col, nserr_t err)
{
    return pres_parse_map_params(images, p, NULL, text, line, col, err);
}

ns_status pres_parse_map_params(expr_struct *images, const pres_t p, const names_struct *params,
                                const char *text, int line, int col, nserr_t err)
{
    slong n = p->gens->n;
    expr_node **img = flint_malloc(sizeof(expr_node *) * (n > 0 ? n : 1));
    int *at_line = flint_malloc(sizeof(int) * (n > 0 ? n : 1));
    int *at_col = flint_malloc(sizeof(int) * (n > 0 ? n : 1));
    expr_scan_t s;
    ns_status st = NS_OK;

    for (slong i = 0; i < n; i++)
        img[i] = NULL;
    _expr_scan_init(s, text, line, col);
    while (s->tok.kind != EXPR_TOK_END) {
        expr_tok_struct t = s->tok;
        slong g;

        if (t.kind != EXPR_TOK_NAME) {
            st = err_at_tok(err, NS_ERR_SYNTAX, &t, "expected 'generator -> image'");
            goto done;
        }
        g = names_find(p->gens, t.start, t.len);
        if (g < 0) {
            st = nserr_set(err, NS_ERR_INPUT, t.line, t.col, "unknown generator '%.*s'",
                           short_len(t.len), t.start);
            goto done;
        }
        if (img[g] != NULL) {
            st = nserr_set(err, NS_ERR_INPUT, t.line, t.col,
                           "second image for '%s' (first at %d:%d)", p->gens->name[g],
                           at_line[g], at_col[g]);
            goto done;
        }
        _expr_scan_next(s);
        if (s->tok.kind != EXPR_TOK_ARROW) {
            char what[128];
            snprintf(what, sizeof what, "expected '->' after '%s'", p->gens->name[g]);
            st = err_at_tok(err, NS_ERR_SYNTAX, &s->tok, what);
            goto done;
        }
        _expr_scan_next(s);
        if (!_expr_tok_starts_word(s->tok.kind)) {
            char what[128];
            snprintf(what, sizeof what, "expected the image of '%s' after '->'",
                     p->gens->name[g]);
            st = err_at_tok(err, NS_ERR_SYNTAX, &s->tok, what);
            goto done;
        }
        if ((st = _expr_parse_word_params(&img[g], s, p->gens, params,
                                          EXPR_STOP_BEFORE_ARROW, err)) != NS_OK)
            goto done;
        at_line[g] = t.line;
        at_col[g] = t.col;

        if (s->tok.kind == EXPR_TOK_COMMA) {
            _expr_scan_next(s);
            if (s->tok.kind == EXPR_TOK_END) {
                st = nserr_set(err, NS_ERR_SYNTAX, s->tok.line, s->tok.col,
                               "expected 'generator -> image' after ','");
                goto done;
            }
        } else if (s->tok.kind == EXPR_TOK_NAME) {
            /* The word stopped before "name ->": a new image, which needs
             * its own line when there is no comma. */
            if (!s->tok.nl_before) {
                st = nserr_set(err, NS_ERR_SYNTAX, s->tok.line, s->tok.col,
                               "expected ',' or a line break before the next image");
                goto done;
            }
        } else if (s->tok.kind != EXPR_TOK_END) {
            st = err_unexpected(err, &s->tok);
            goto done;
        }
    }
    for (slong i = 0; i < n; i++)
        if (img[i] == NULL) {
            st = nserr_set(err, NS_ERR_INPUT, s->tok.line, s->tok.col,
                           "no image for generator '%s'", p->gens->name[i]);
            goto done;
        }
    for (slong i = 0; i < n; i++) {
        expr_node_free(images[i].root);
        images[i].root = img[i];
        img[i] = NULL;
    }

done:
    for (slong i = 0; i < n; i++)
        expr_node_free(img[i]);
    flint_free(img);
    flint_free(at_line);
    flint_free(at_col);
    return st;
}

char *pres_get_map_str(const expr_struct *images, const pres_t p)
{
    strbuf_t b;

    strbuf_init(b);
    for (slong i = 0; i < p->gens->n; i++) {
        if (i > 0)
            strbuf_puts(b, ", ");
        strbuf_puts(b, p->gens->name[i]);
        strbuf_puts(b, " -> ");
        put_owned(b, expr_node_get_str(images[i].root, p->gens));
    }
    return strbuf_take(b);
}
