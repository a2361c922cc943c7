/* expr.c — words of the input language: trees, scanner, parser, printer.
 *
 * The walks in this file (free, copy, print, exponent sums) use an explicit
 * stack, so a deep tree never overflows the C stack here.  Not every walk
 * does: the evaluation in pcp.c (pcp_eval_expr) recurses once per level of
 * the tree.  That is safe because trees stay shallow: the parser recurses
 * once per bracket level and brackets nest at most EXPR_MAX_DEPTH, and the
 * trees pres.c builds for the built-in families are a few levels deep. */
#include <ctype.h>
#include <limits.h>
#include <stdio.h>
#include <string.h>

#include <flint/flint.h>
#include <flint/fmpz.h>

#include "expr.h"
#include "strbuf.h"
#include "utf8.h"

/* ------------------------------------------------------------------------ */
/* Generator names                                                           */

void names_init(names_t g)
{
    g->n = 0;
    g->name = NULL;
}

void names_clear(names_t g)
{
    for (slong i = 0; i < g->n; i++)
        flint_free(g->name[i]);
    flint_free(g->name);
    g->n = 0;
    g->name = NULL;
}

void names_set(names_t dst, const names_t src)
{
    if (dst == src)
        return;
    names_clear(dst);
    if (src->n == 0)
        return;
    dst->name = flint_malloc(sizeof(char *) * src->n);
    for (slong i = 0; i < src->n; i++)
        dst->name[i] = strbuf_dup_strn(src->name[i], strlen(src->name[i]));
    dst->n = src->n;
}

slong names_add(names_t g, const char *name)
{
    g->name = flint_realloc(g->name, sizeof(char *) * (g->n + 1));
    g->name[g->n] = strbuf_dup_strn(name, strlen(name));
    return g->n++;
}

slong names_find(const names_t g, const char *name, size_t len)
{
    for (slong i = 0; i < g->n; i++)
        if (strncmp(g->name[i], name, len) == 0 && g->name[i][len] == '\0')
            return i;
    return -1;
}

/* ------------------------------------------------------------------------ */
/* Nodes                                                                     */

expr_node *expr_node_new(expr_kind kind, int line, int col)
{
    expr_node *n = flint_malloc(sizeof(expr_node));
    n->kind = kind;
    n->gen = 0;
    n->param = -1;
    fmpz_init(n->exp);
    n->nkids = 0;
    n->kids = NULL;
    n->nsyl = 0;
    n->syl = NULL;
    n->line = line;
    n->col = col;
    return n;
}

expr_node *expr_node_new_run(expr_syl *syl, slong nsyl, int line, int col)
{
    expr_node *n = expr_node_new(EXPR_RUN, line, col);
    n->syl = syl;
    n->nsyl = nsyl;
    return n;
}

void expr_node_add_kid(expr_node *parent, expr_node *kid)
{
    /* Exact-size reallocation: kids arrays handed in by callers carry no
     * capacity, so any other growth rule could overrun them. */
    parent->kids = flint_realloc(parent->kids, sizeof(expr_node *) * (parent->nkids + 1));
    parent->kids[parent->nkids++] = kid;
}

/* A growable array of node pointers, used as a stack by the walks. */
typedef struct {
    expr_node **v;
    slong n, cap;
} node_stack;

static void node_stack_push(node_stack *st, expr_node *n)
{
    if (st->n == st->cap) {
        st->cap = st->cap ? 2 * st->cap : 32;
        st->v = flint_realloc(st->v, sizeof(expr_node *) * st->cap);
    }
    st->v[st->n++] = n;
}

void expr_node_free(expr_node *n)
{
    node_stack st = {NULL, 0, 0};

    if (n == NULL)
        return;
    node_stack_push(&st, n);
    while (st.n > 0) {
        expr_node *x = st.v[--st.n];
        for (slong i = 0; i < x->nkids; i++)
            if (x->kids[i] != NULL)
                node_stack_push(&st, x->kids[i]);
        flint_free(x->kids);
        flint_free(x->syl);
        fmpz_clear(x->exp);
        flint_free(x);
    }
    flint_free(st.v);
}

/* Copies everything but the kids, for which it allocates room. */
static expr_node *node_copy_shallow(const expr_node *src)
{
    expr_node *d = expr_node_new(src->kind, src->line, src->col);
    d->gen = src->gen;
    d->param = src->param;
    fmpz_set(d->exp, src->exp);
    d->nkids = src->nkids;
    if (src->nkids > 0) {
        d->kids = flint_malloc(sizeof(expr_node *) * src->nkids);
        for (slong i = 0; i < src->nkids; i++)
            d->kids[i] = NULL;
    }
    if (src->nsyl > 0) {
        d->syl = flint_malloc(sizeof(expr_syl) * src->nsyl);
        memcpy(d->syl, src->syl, sizeof(expr_syl) * src->nsyl);
        d->nsyl = src->nsyl;
    }
    return d;
}

expr_node *expr_node_copy(const expr_node *n)
{
    node_stack src = {NULL, 0, 0}, dst = {NULL, 0, 0};
    expr_node *root;

    if (n == NULL)
        return NULL;
    root = node_copy_shallow(n);
    node_stack_push(&src, (expr_node *)n);
    node_stack_push(&dst, root);
    while (src.n > 0) {
        const expr_node *s = src.v[--src.n];
        expr_node *d = dst.v[--dst.n];
        for (slong i = 0; i < s->nkids; i++) {
            if (s->kids[i] == NULL)
                continue;
            d->kids[i] = node_copy_shallow(s->kids[i]);
            node_stack_push(&src, s->kids[i]);
            node_stack_push(&dst, d->kids[i]);
        }
    }
    flint_free(src.v);
    flint_free(dst.v);
    return root;
}

static int has_image(const expr_node *n, const expr_struct *images, slong nimages)
{
    return n->kind == EXPR_GEN && n->gen >= 0 && n->gen < nimages && images[n->gen].root;
}

/* A run g1^e1 g2^e2 ... with the images put in: the product of the
 * images' powers (a generator without an image stays itself). */
static expr_node *run_substitute(const expr_node *n, const expr_struct *images, slong nimages)
{
    expr_node *m = expr_node_new(EXPR_MUL, n->line, n->col);
    for (slong i = 0; i < n->nsyl; i++) {
        expr_syl s = n->syl[i];
        expr_node *x;
        if (s.gen >= 0 && s.gen < nimages && images[s.gen].root) {
            x = expr_node_copy(images[s.gen].root);
        } else {
            x = expr_node_new(EXPR_GEN, n->line, n->col);
            x->gen = s.gen;
        }
        if (s.exp != EXPR_SYL_BARE) {
            expr_node *p = expr_node_new(EXPR_POW, n->line, n->col);
            fmpz_set_si(p->exp, s.exp);
            expr_node_add_kid(p, x);
            x = p;
        }
        expr_node_add_kid(m, x);
    }
    return m;
}

expr_node *expr_node_substitute(const expr_node *n, const expr_struct *images, slong nimages)
{
    node_stack st = {NULL, 0, 0};

    if (n == NULL)
        return NULL;
    if (has_image(n, images, nimages))
        return expr_node_copy(images[n->gen].root);
    if (n->kind == EXPR_RUN)
        return run_substitute(n, images, nimages);
    expr_node *root = expr_node_copy(n);
    /* walk the copy; the pasted images are not walked again */
    node_stack_push(&st, root);
    while (st.n > 0) {
        expr_node *d = st.v[--st.n];
        for (slong i = 0; i < d->nkids; i++) {
            expr_node *k = d->kids[i];
            if (k == NULL)
                continue;
            if (has_image(k, images, nimages)) {
                d->kids[i] = expr_node_copy(images[k->gen].root);
                expr_node_free(k);
            } else if (k->kind == EXPR_RUN) {
                d->kids[i] = run_substitute(k, images, nimages);
                expr_node_free(k);
            } else {
                node_stack_push(&st, k);
            }
        }
    }
    flint_free(st.v);
    return root;
}

char *expr_name_get_latex(const char *name)
{
    strbuf_t b;
    strbuf_init(b);
    size_t k = 0;
    while (isalpha((unsigned char)name[k]))
        k++;
    if (k == 0) { /* not a name of the input language: text as it is */
        strbuf_puts(b, "\\mathrm{");
        strbuf_put_latex_str(b, name);
        strbuf_puts(b, "}");
        return strbuf_take(b);
    }
    if (k > 1)
        strbuf_puts(b, "\\mathit{");
    strbuf_putn(b, name, k);
    if (k > 1)
        strbuf_puts(b, "}");
    const char *r = name + k;
    if (*r == '_')
        r++;
    if (*r) {
        strbuf_puts(b, "_{");
        for (; *r; r++) {
            if (*r == '_')
                strbuf_puts(b, ",");
            else
                strbuf_putn(b, r, 1);
        }
        strbuf_puts(b, "}");
    }
    return strbuf_take(b);
}

/* Needs parentheses as the base of a power or conjugate. */
static int latex_needs_parens(const expr_node *n)
{
    return n->kind == EXPR_MUL || n->kind == EXPR_RUN || n->kind == EXPR_POW ||
           n->kind == EXPR_CONJ;
}

static void latex_put(strbuf_t b, const expr_node *n, const names_t g, int depth)
{
    if (depth > 1000) {
        strbuf_puts(b, "\\dots");
        return;
    }
    switch (n->kind) {
    case EXPR_ONE:
        strbuf_puts(b, "1");
        break;
    case EXPR_GEN: {
        char *s = n->gen >= 0 && n->gen < g->n ? expr_name_get_latex(g->name[n->gen])
                                               : strbuf_dup_str("?");
        strbuf_puts(b, s);
        flint_free(s);
        break;
    }
    case EXPR_MUL:
        for (slong i = 0; i < n->nkids; i++) {
            if (i)
                strbuf_puts(b, " ");
            latex_put(b, n->kids[i], g, depth + 1);
        }
        break;
    case EXPR_COMM:
        strbuf_puts(b, "[");
        for (slong i = 0; i < n->nkids; i++) {
            if (i)
                strbuf_puts(b, ", ");
            latex_put(b, n->kids[i], g, depth + 1);
        }
        strbuf_puts(b, "]");
        break;
    case EXPR_RUN:
        for (slong i = 0; i < n->nsyl; i++) {
            expr_syl s = n->syl[i];
            char *nm = s.gen >= 0 && s.gen < g->n ? expr_name_get_latex(g->name[s.gen])
                                                  : strbuf_dup_str("?");
            strbuf_printf(b, "%s%s", i ? " " : "", nm);
            flint_free(nm);
            if (s.exp != EXPR_SYL_BARE)
                strbuf_printf(b, "^{%ld}", (long)s.exp);
        }
        break;
    case EXPR_POW:
    case EXPR_CONJ: {
        int par = latex_needs_parens(n->kids[0]);
        strbuf_puts(b, par ? "(" : "");
        latex_put(b, n->kids[0], g, depth + 1);
        strbuf_puts(b, par ? ")^{" : "^{");
        if (n->kind == EXPR_CONJ) {
            latex_put(b, n->kids[1], g, depth + 1);
        } else {
            char *e = fmpz_get_str(NULL, 10, n->exp);
            strbuf_puts(b, e);
            flint_free(e);
            if (n->param >= 0)
                strbuf_printf(b, " p_{%ld}", (long)n->param + 1);
        }
        strbuf_puts(b, "}");
        break;
    }
    }
}

char *expr_node_get_latex(const expr_node *n, const names_t g)
{
    strbuf_t b;
    strbuf_init(b);
    latex_put(b, n, g, 0);
    return strbuf_take(b);
}

/* ------------------------------------------------------------------------ */
/* Whole words                                                               */

void expr_init(expr_t e)
{
    e->root = NULL;
}

void expr_clear(expr_t e)
{
    expr_node_free(e->root);
    e->root = NULL;
}

void expr_set(expr_t dst, const expr_t src)
{
    expr_node *copy;

    if (dst == src)
        return;
    copy = expr_node_copy(src->root);
    expr_node_free(dst->root);
    dst->root = copy;
}

void expr_swap(expr_t a, expr_t b)
{
    expr_node *t = a->root;
    a->root = b->root;
    b->root = t;
}

/* ------------------------------------------------------------------------ */
/* Scanner                                                                   */

static int is_letter(int c)
{
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z');
}

static int is_digit(int c)
{
    return c >= '0' && c <= '9';
}

static int is_blank(int c)
{
    return c == ' ' || c == '\t' || c == '\r' || c == '\n' || c == '\f' || c == '\v';
}

/* Takes one byte; columns count code points, so UTF-8 continuation bytes
 * do not move the column.  Counters saturate instead of overflowing. */
static void scan_take(expr_scan_struct *s)
{
    unsigned char c = (unsigned char)s->text[s->pos];

    s->pos++;
    if (c == '\n') {
        if (s->line < INT_MAX)
            s->line++;
        s->col = 1;
    } else if ((c & 0xC0) != 0x80) {
        if (s->col < INT_MAX)
            s->col++;
    }
}

static void scan_read_token(expr_scan_struct *s)
{
    expr_tok_struct *t = &s->tok;
    const unsigned char *u = (const unsigned char *)s->text;
    int nl = 0;

    for (;;) {
        unsigned char c = u[s->pos];
        if (c == '#') {
            while (u[s->pos] != '\0' && u[s->pos] != '\n')
                scan_take(s);
        } else if (is_blank(c)) {
            if (c == '\n')
                nl = 1;
            scan_take(s);
        } else {
            break;
        }
    }

    t->start = s->text + s->pos;
    t->line = s->line;
    t->col = s->col;
    t->nl_before = nl;
    t->bad_number = 0;

    unsigned char c = u[s->pos];
    size_t begin = s->pos;
    if (c == '\0') {
        t->kind = EXPR_TOK_END;
    } else if (is_letter(c)) {
        t->kind = EXPR_TOK_NAME;
        while (is_letter(u[s->pos]) || is_digit(u[s->pos]) || u[s->pos] == '_')
            scan_take(s);
    } else if (is_digit(c)) {
        t->kind = EXPR_TOK_INT;
        while (is_digit(u[s->pos]))
            scan_take(s);
        /* "1.5" and "1/2" become one bad token so that the message can say
         * what is wrong with the number instead of with the '.'. */
        if ((u[s->pos] == '.' || u[s->pos] == '/') && is_digit(u[s->pos + 1])) {
            t->bad_number = 1;
            scan_take(s);
            while (is_digit(u[s->pos]))
                scan_take(s);
        }
    } else if (c == '-' && u[s->pos + 1] == '>') {
        t->kind = EXPR_TOK_ARROW;
        scan_take(s);
        scan_take(s);
    } else {
        switch (c) {
        case '*': t->kind = EXPR_TOK_STAR; break;
        case '^': t->kind = EXPR_TOK_CARET; break;
        case '(': t->kind = EXPR_TOK_LPAREN; break;
        case ')': t->kind = EXPR_TOK_RPAREN; break;
        case '[': t->kind = EXPR_TOK_LBRACK; break;
        case ']': t->kind = EXPR_TOK_RBRACK; break;
        case ',': t->kind = EXPR_TOK_COMMA; break;
        case '-': t->kind = EXPR_TOK_MINUS; break;
        case '+': t->kind = EXPR_TOK_PLUS; break;
        case '<': t->kind = EXPR_TOK_LANGLE; break;
        case '>': t->kind = EXPR_TOK_RANGLE; break;
        case '|': t->kind = EXPR_TOK_BAR; break;
        case '=': t->kind = EXPR_TOK_EQUALS; break;
        case ';': t->kind = EXPR_TOK_SEMI; break;
        default: t->kind = EXPR_TOK_BAD; break;
        }
        scan_take(s);
        /* Keep a whole UTF-8 character in one bad token, for the message. */
        if (t->kind == EXPR_TOK_BAD && c >= 0xC0) {
            int k = 0;
            while (k < 3 && (u[s->pos] & 0xC0) == 0x80) {
                scan_take(s);
                k++;
            }
        }
    }
    t->len = s->pos - begin;
}

void _expr_scan_init(expr_scan_t s, const char *text, int line, int col)
{
    s->text = text;
    s->pos = 0;
    s->line = line > 0 ? line : 1;
    s->col = col > 0 ? col : 1;
    s->prev_end = text;
    scan_read_token(s);
}

void _expr_scan_next(expr_scan_t s)
{
    s->prev_end = s->tok.start + s->tok.len;
    if (s->tok.kind != EXPR_TOK_END)
        scan_read_token(s);
}

expr_tok_kind _expr_scan_peek(const expr_scan_t s)
{
    expr_scan_struct copy = *s;
    _expr_scan_next(&copy);
    return copy.tok.kind;
}

void _expr_tok_describe(char *buf, size_t n, const expr_tok_struct *t)
{
    const unsigned char *u = (const unsigned char *)t->start;
    int len = t->len > 40 ? 40 : (int)t->len;
    const char *more = t->len > 40 ? "..." : "";

    if (n == 0)
        return;
    switch (t->kind) {
    case EXPR_TOK_END:
        snprintf(buf, n, "end of text");
        break;
    case EXPR_TOK_INT:
        snprintf(buf, n, "number '%.*s%s'", len, t->start, more);
        break;
    case EXPR_TOK_BAD:
        if (u[0] >= 0x20 && u[0] < 0x7F)
            snprintf(buf, n, "character '%c'", u[0]);
        else if (u[0] >= 0x80 && utf8_char_len(u, t->len) == t->len)
            snprintf(buf, n, "character '%.*s'", (int)t->len, t->start);
        else
            snprintf(buf, n, "byte 0x%02x", u[0]);
        break;
    default:
        snprintf(buf, n, "'%.*s%s'", len, t->start, more);
        break;
    }
}

void _expr_tok_get_fmpz(fmpz_t out, const expr_tok_struct *t)
{
    char *digits = strbuf_dup_strn(t->start, t->len);
    if (fmpz_set_str(out, digits, 10) != 0)
        fmpz_zero(out);
    flint_free(digits);
}

int _expr_tok_starts_word(expr_tok_kind k)
{
    return k == EXPR_TOK_NAME || k == EXPR_TOK_INT || k == EXPR_TOK_LPAREN ||
           k == EXPR_TOK_LBRACK;
}

/* ------------------------------------------------------------------------ */
/* Parser                                                                    */

typedef struct {
    expr_scan_struct *s;
    const names_struct *g;
    nserr_struct *err;
    const names_struct *params; /* integer parameters of a template, or NULL */
} parser;

static ns_status parse_word(expr_node **out, parser *p, int flags, int depth);

/* "unexpected X" for the current token. */
static ns_status err_unexpected(parser *p)
{
    char d[80];
    _expr_tok_describe(d, sizeof d, &p->s->tok);
    return nserr_set(p->err, NS_ERR_SYNTAX, p->s->tok.line, p->s->tok.col, "unexpected %s", d);
}

/* The closing bracket is missing where the current token stands.  A stray
 * character is the likelier culprit, so name it first. */
static ns_status err_unclosed(parser *p, char closer, char opener, int line, int col)
{
    if (p->s->tok.kind == EXPR_TOK_BAD)
        return err_unexpected(p);
    return nserr_set(p->err, NS_ERR_SYNTAX, p->s->tok.line, p->s->tok.col,
                     "expected '%c' to close '%c' opened at %d:%d", closer, opener, line, col);
}

/* Kids collected before they are handed to a node (which takes the array). */
typedef struct {
    expr_node **v;
    slong n, cap;
} kid_list;

static void kid_list_add(kid_list *k, expr_node *n)
{
    if (k->n == k->cap) {
        k->cap = k->cap ? 2 * k->cap : 4;
        k->v = flint_realloc(k->v, sizeof(expr_node *) * k->cap);
    }
    k->v[k->n++] = n;
}

static void kid_list_free(kid_list *k)
{
    for (slong i = 0; i < k->n; i++)
        expr_node_free(k->v[i]);
    flint_free(k->v);
    k->v = NULL;
    k->n = k->cap = 0;
}

static expr_node *node_with_kids(expr_kind kind, kid_list *k)
{
    expr_node *n = expr_node_new(kind, k->v[0]->line, k->v[0]->col);
    n->kids = k->v;
    n->nkids = k->n;
    k->v = NULL;
    k->n = k->cap = 0;
    return n;
}

static ns_status check_depth(parser *p, int depth)
{
    if (depth >= EXPR_MAX_DEPTH)
        return nserr_set(p->err, NS_ERR_LIMIT, p->s->tok.line, p->s->tok.col,
                         "brackets nested more than %d deep", EXPR_MAX_DEPTH);
    return NS_OK;
}

static ns_status parse_parenthesised(expr_node **out, parser *p, int depth)
{
    expr_tok_struct open = p->s->tok;
    ns_status st;

    if ((st = check_depth(p, depth)) != NS_OK)
        return st;
    _expr_scan_next(p->s);
    if (p->s->tok.kind == EXPR_TOK_RPAREN)
        return nserr_set(p->err, NS_ERR_SYNTAX, p->s->tok.line, p->s->tok.col,
                         "empty parentheses (the identity is written 1)");
    if (!_expr_tok_starts_word(p->s->tok.kind)) {
        if (p->s->tok.kind == EXPR_TOK_END)
            return err_unclosed(p, ')', '(', open.line, open.col);
        return err_unexpected(p);
    }
    if ((st = parse_word(out, p, 0, depth + 1)) != NS_OK)
        return st;
    if (p->s->tok.kind != EXPR_TOK_RPAREN) {
        expr_node_free(*out);
        *out = NULL;
        return err_unclosed(p, ')', '(', open.line, open.col);
    }
    _expr_scan_next(p->s);
    return NS_OK;
}

static ns_status parse_commutator(expr_node **out, parser *p, int depth)
{
    expr_tok_struct open = p->s->tok;
    kid_list k = {NULL, 0, 0};
    ns_status st;

    if ((st = check_depth(p, depth)) != NS_OK)
        return st;
    _expr_scan_next(p->s);
    for (;;) {
        expr_node *entry;
        expr_tok_kind kind = p->s->tok.kind;

        if (!_expr_tok_starts_word(kind)) {
            if (kind == EXPR_TOK_RBRACK && k.n == 0)
                st = nserr_set(p->err, NS_ERR_SYNTAX, open.line, open.col,
                               "commutator needs at least two entries");
            else if (kind == EXPR_TOK_COMMA || kind == EXPR_TOK_RBRACK)
                st = nserr_set(p->err, NS_ERR_SYNTAX, p->s->tok.line, p->s->tok.col,
                               "empty entry in commutator");
            else if (kind == EXPR_TOK_END)
                st = err_unclosed(p, ']', '[', open.line, open.col);
            else
                st = err_unexpected(p);
            goto fail;
        }
        if ((st = parse_word(&entry, p, 0, depth + 1)) != NS_OK)
            goto fail;
        kid_list_add(&k, entry);
        if (p->s->tok.kind == EXPR_TOK_COMMA) {
            _expr_scan_next(p->s);
            continue;
        }
        if (p->s->tok.kind == EXPR_TOK_RBRACK)
            break;
        st = err_unclosed(p, ']', '[', open.line, open.col);
        goto fail;
    }
    if (k.n < 2) {
        st = nserr_set(p->err, NS_ERR_SYNTAX, open.line, open.col,
                       "commutator needs at least two entries");
        goto fail;
    }
    _expr_scan_next(p->s);
    *out = node_with_kids(EXPR_COMM, &k);
    (*out)->line = open.line;
    (*out)->col = open.col;
    return NS_OK;

fail:
    kid_list_free(&k);
    *out = NULL;
    return st;
}

static ns_status parse_atom(expr_node **out, parser *p, int depth)
{
    expr_tok_struct t = p->s->tok;

    *out = NULL;
    switch (t.kind) {
    case EXPR_TOK_NAME: {
        slong i = names_find(p->g, t.start, t.len);
        if (i < 0)
            return nserr_set(p->err, NS_ERR_INPUT, t.line, t.col, "unknown generator '%.*s'",
                             t.len > 64 ? 64 : (int)t.len, t.start);
        *out = expr_node_new(EXPR_GEN, t.line, t.col);
        (*out)->gen = i;
        _expr_scan_next(p->s);
        return NS_OK;
    }
    case EXPR_TOK_INT:
        if (t.len == 1 && t.start[0] == '1' && !t.bad_number) {
            *out = expr_node_new(EXPR_ONE, t.line, t.col);
            _expr_scan_next(p->s);
            return NS_OK;
        }
        return nserr_set(p->err, NS_ERR_SYNTAX, t.line, t.col,
                         "unexpected number '%.*s' (only 1, the identity, can stand as a factor)",
                         t.len > 40 ? 40 : (int)t.len, t.start);
    case EXPR_TOK_LPAREN:
        return parse_parenthesised(out, p, depth);
    case EXPR_TOK_LBRACK:
        return parse_commutator(out, p, depth);
    default: {
        char d[80];
        _expr_tok_describe(d, sizeof d, &t);
        return nserr_set(p->err, NS_ERR_SYNTAX, t.line, t.col, "expected a word, found %s", d);
    }
    }
}

/* After '^': is this "(n)" with an optionally signed integer n? */
static int exponent_is_parenthesised_int(const expr_scan_struct *s)
{
    expr_scan_struct c = *s;

    if (c.tok.kind != EXPR_TOK_LPAREN)
        return 0;
    _expr_scan_next(&c);
    if (c.tok.kind == EXPR_TOK_MINUS || c.tok.kind == EXPR_TOK_PLUS)
        _expr_scan_next(&c);
    if (c.tok.kind != EXPR_TOK_INT)
        return 0;
    _expr_scan_next(&c);
    return c.tok.kind == EXPR_TOK_RPAREN;
}

/* Reads "[+-]n" at the current token into exp. */
static ns_status parse_signed_int(fmpz_t exp, parser *p)
{
    int neg = 0, signed_ = 0;

    if (p->s->tok.kind == EXPR_TOK_MINUS || p->s->tok.kind == EXPR_TOK_PLUS) {
        neg = p->s->tok.kind == EXPR_TOK_MINUS;
        signed_ = 1;
        _expr_scan_next(p->s);
    }
    if (p->s->tok.kind != EXPR_TOK_INT || p->s->tok.bad_number) {
        if (signed_ && p->s->tok.kind != EXPR_TOK_INT && _expr_tok_starts_word(p->s->tok.kind))
            return nserr_set(p->err, NS_ERR_SYNTAX, p->s->tok.line, p->s->tok.col,
                             "exponent must be an integer (to conjugate by an inverse "
                             "write x^(y^-1))");
        return nserr_set(p->err, NS_ERR_SYNTAX, p->s->tok.line, p->s->tok.col,
                         "exponent must be an integer");
    }
    _expr_tok_get_fmpz(exp, &p->s->tok);
    if (neg)
        fmpz_neg(exp, exp);
    _expr_scan_next(p->s);
    return NS_OK;
}

/* The name of a template parameter at t, or -1. */
static slong param_at(const parser *p, const expr_tok_struct *t)
{
    if (t->kind != EXPR_TOK_NAME || names_find(p->g, t->start, t->len) >= 0)
        return -1;
    return names_find(p->params, t->start, t->len);
}

/* After '^' in a template: p, -p, +p, (p), (-p), (+p) with p a parameter
 * make *out a POW node with that parameter (and take base); anything else
 * leaves *out NULL and the scanner where it was. */
static ns_status parse_param_exponent(expr_node **out, expr_node *base, parser *p)
{
    expr_scan_struct c = *p->s;
    int paren = 0, neg = 0;
    slong i;

    *out = NULL;
    if (c.tok.kind == EXPR_TOK_LPAREN) {
        paren = 1;
        _expr_scan_next(&c);
    }
    if (c.tok.kind == EXPR_TOK_MINUS || c.tok.kind == EXPR_TOK_PLUS) {
        neg = c.tok.kind == EXPR_TOK_MINUS;
        _expr_scan_next(&c);
    }
    if ((i = param_at(p, &c.tok)) < 0)
        return NS_OK;
    _expr_scan_next(&c);
    if (paren) {
        if (c.tok.kind != EXPR_TOK_RPAREN)
            return nserr_set(p->err, NS_ERR_SYNTAX, c.tok.line, c.tok.col,
                             "expected ')' after the parameter '%s'", p->params->name[i]);
        _expr_scan_next(&c);
    }
    *p->s = c;
    *out = expr_node_new(EXPR_POW, base->line, base->col);
    (*out)->param = i;
    fmpz_set_si((*out)->exp, neg ? -1 : 1);
    expr_node_add_kid(*out, base);
    return NS_OK;
}

static ns_status parse_factor(expr_node **out, parser *p, int depth)
{
    expr_node *base, *n;
    expr_tok_kind k;
    ns_status st;

    if ((st = parse_atom(&base, p, depth)) != NS_OK)
        return st;
    if (p->s->tok.kind != EXPR_TOK_CARET) {
        *out = base;
        return NS_OK;
    }
    _expr_scan_next(p->s);
    k = p->s->tok.kind;
    if (p->params && (st = parse_param_exponent(&n, base, p)) != NS_OK) {
        expr_node_free(base);
        return st;
    }
    if (p->params && n != NULL) {
        base = NULL;
        st = NS_OK;
    } else if (k == EXPR_TOK_MINUS || k == EXPR_TOK_PLUS || k == EXPR_TOK_INT) {
        n = expr_node_new(EXPR_POW, base->line, base->col);
        st = parse_signed_int(n->exp, p);
    } else if (exponent_is_parenthesised_int(p->s)) {
        n = expr_node_new(EXPR_POW, base->line, base->col);
        _expr_scan_next(p->s);
        st = parse_signed_int(n->exp, p);
        if (st == NS_OK)
            _expr_scan_next(p->s); /* the ')' checked by the lookahead */
    } else if (k == EXPR_TOK_NAME || k == EXPR_TOK_LPAREN || k == EXPR_TOK_LBRACK) {
        expr_node *by;
        n = expr_node_new(EXPR_CONJ, base->line, base->col);
        st = parse_atom(&by, p, depth);
        if (st == NS_OK) {
            expr_node_add_kid(n, base);
            base = NULL;
            expr_node_add_kid(n, by);
        }
    } else {
        char d[80];
        _expr_tok_describe(d, sizeof d, &p->s->tok);
        expr_node_free(base);
        return nserr_set(p->err, NS_ERR_SYNTAX, p->s->tok.line, p->s->tok.col,
                         "expected an exponent after '^', found %s", d);
    }
    if (st != NS_OK) {
        expr_node_free(base);
        expr_node_free(n);
        return st;
    }
    if (base != NULL)
        expr_node_add_kid(n, base);
    if (p->s->tok.kind == EXPR_TOK_CARET) {
        expr_node_free(n);
        return nserr_set(p->err, NS_ERR_SYNTAX, p->s->tok.line, p->s->tok.col,
                         "a second '^' is ambiguous: add parentheses, "
                         "as in (a^2)^3, a^(b^-1) or (a^b)^c");
    }
    *out = n;
    return NS_OK;
}

/* The letters of a product gathered into one EXPR_RUN (see expr.h). */
typedef struct {
    expr_syl *v;
    slong n, cap;
    int line, col; /* of the first letter */
} run_buf;

/* If f is a letter or a letter to a power that fits a syllable, the
 * syllable; else 0. */
static int node_get_syl(expr_syl *out, const expr_node *f)
{
    const expr_node *g = f;

    if (f->kind == EXPR_POW) {
        if (f->param >= 0 || f->nkids != 1 || !fmpz_fits_si(f->exp))
            return 0;
        slong e = fmpz_get_si(f->exp);
        if (e <= INT32_MIN || e > INT32_MAX)
            return 0;
        out->exp = (int32_t)e;
        g = f->kids[0];
    } else {
        out->exp = EXPR_SYL_BARE;
    }
    if (g->kind != EXPR_GEN || g->nkids != 0 || g->gen < 0 || g->gen > INT32_MAX)
        return 0;
    out->gen = (int32_t)g->gen;
    return 1;
}

static void run_buf_add(run_buf *r, expr_syl x, int line, int col)
{
    if (r->n == 0) {
        r->line = line;
        r->col = col;
    }
    if (r->n == r->cap) {
        r->cap = r->cap ? 2 * r->cap : 8;
        r->v = flint_realloc(r->v, sizeof(expr_syl) * r->cap);
    }
    r->v[r->n++] = x;
}

/* Hands the gathered letters to the product's kids: one syllable goes back
 * to the node the parser built for it (a letter, or a power of a letter at
 * the letter's position), several become one run. */
static void run_buf_flush(run_buf *r, kid_list *k)
{
    expr_node *n;

    if (r->n == 0)
        return;
    if (r->n == 1) {
        expr_node *g = expr_node_new(EXPR_GEN, r->line, r->col);
        g->gen = r->v[0].gen;
        if (r->v[0].exp == EXPR_SYL_BARE) {
            n = g;
        } else {
            n = expr_node_new(EXPR_POW, r->line, r->col);
            fmpz_set_si(n->exp, r->v[0].exp);
            expr_node_add_kid(n, g);
        }
        flint_free(r->v);
    } else {
        /* exact size: a run may hold millions of letters */
        n = expr_node_new_run(flint_realloc(r->v, sizeof(expr_syl) * r->n), r->n, r->line,
                              r->col);
    }
    kid_list_add(k, n);
    r->v = NULL;
    r->n = r->cap = 0;
}

/* Adds one factor of a product (never an EXPR_MUL) to the kids; takes f. */
static void add_factor(kid_list *k, run_buf *r, expr_node *f)
{
    expr_syl x;

    if (node_get_syl(&x, f)) {
        run_buf_add(r, x, f->line, f->col);
        expr_node_free(f);
    } else if (f->kind == EXPR_RUN) {
        for (slong i = 0; i < f->nsyl; i++)
            run_buf_add(r, f->syl[i], f->line, f->col);
        expr_node_free(f);
    } else {
        run_buf_flush(r, k);
        kid_list_add(k, f);
    }
}

static ns_status parse_word(expr_node **out, parser *p, int flags, int depth)
{
    kid_list k = {NULL, 0, 0};
    run_buf r = {NULL, 0, 0, 0, 0};
    ns_status st;

    *out = NULL;
    for (;;) {
        expr_node *f = NULL;
        expr_tok_kind kind = p->s->tok.kind;

        if (kind == EXPR_TOK_STAR) {
            if (k.n == 0 && r.n == 0) {
                st = err_unexpected(p);
                goto fail;
            }
            _expr_scan_next(p->s);
            if (!_expr_tok_starts_word(p->s->tok.kind)) {
                char d[80];
                _expr_tok_describe(d, sizeof d, &p->s->tok);
                st = nserr_set(p->err, NS_ERR_SYNTAX, p->s->tok.line, p->s->tok.col,
                               "expected a factor after '*', found %s", d);
                goto fail;
            }
        } else if (!_expr_tok_starts_word(kind)) {
            break;
        } else if ((flags & EXPR_STOP_BEFORE_ARROW) && kind == EXPR_TOK_NAME &&
                   _expr_scan_peek(p->s) == EXPR_TOK_ARROW) {
            break;
        }
        if ((st = parse_factor(&f, p, depth)) != NS_OK)
            goto fail;
        if (f->kind == EXPR_MUL) {
            /* "(a b) c" is the product a b c: splice instead of nesting. */
            for (slong i = 0; i < f->nkids; i++)
                add_factor(&k, &r, f->kids[i]);
            f->nkids = 0;
            expr_node_free(f);
        } else {
            add_factor(&k, &r, f);
        }
    }
    run_buf_flush(&r, &k);
    if (k.n == 0) {
        char d[80];
        _expr_tok_describe(d, sizeof d, &p->s->tok);
        return nserr_set(p->err, NS_ERR_SYNTAX, p->s->tok.line, p->s->tok.col,
                         "expected a word, found %s", d);
    }
    if (k.n == 1) {
        *out = k.v[0];
        flint_free(k.v);
    } else {
        *out = node_with_kids(EXPR_MUL, &k);
    }
    return NS_OK;

fail:
    flint_free(r.v);
    kid_list_free(&k);
    return st;
}

ns_status _expr_parse_word(expr_node **out, expr_scan_t s, const names_t g, int flags,
                           nserr_t err)
{
    parser p = {s, g, err, NULL};
    return parse_word(out, &p, flags, 0);
}

ns_status _expr_parse_word_params(expr_node **out, expr_scan_t s, const names_t g,
                                  const names_struct *params, int flags, nserr_t err)
{
    parser p = {s, g, err, params};
    return parse_word(out, &p, flags, 0);
}

ns_status expr_parse(expr_t out, const char *text, int line, int col, const names_t g,
                     nserr_t err)
{
    expr_scan_t s;
    parser p = {s, g, err, NULL};
    expr_node *root;
    ns_status st;

    _expr_scan_init(s, text, line, col);
    if (s->tok.kind == EXPR_TOK_END)
        return nserr_set(err, NS_ERR_SYNTAX, line > 0 ? line : 1, col > 0 ? col : 1,
                         "empty word (the identity is written 1)");
    if (!_expr_tok_starts_word(s->tok.kind))
        return err_unexpected(&p);
    if ((st = parse_word(&root, &p, 0, 0)) != NS_OK)
        return st;
    if (s->tok.kind != EXPR_TOK_END) {
        expr_node_free(root);
        return err_unexpected(&p);
    }
    expr_node_free(out->root);
    out->root = root;
    return NS_OK;
}

/* ------------------------------------------------------------------------ */
/* Printer                                                                   */

static void put_fmpz(strbuf_t b, const fmpz_t x)
{
    /* Our own buffer: fmpz_get_str(NULL, ...) may allocate through GMP. */
    size_t n = fmpz_sizeinbase(x, 10) + 2;
    char *d = flint_malloc(n);
    fmpz_get_str(d, 10, x);
    strbuf_puts(b, d);
    flint_free(d);
}

/* Where a subtree is printed; decides the parentheses it needs. */
enum { CTX_WORD, CTX_MULKID, CTX_BASE, CTX_CONJUGATOR };

static int needs_parens(const expr_node *n, int ctx)
{
    if (ctx != CTX_BASE && ctx != CTX_CONJUGATOR)
        return 0;
    if (n->kind == EXPR_MUL)
        return n->nkids >= 2; /* one kid prints in this context itself */
    if (n->kind == EXPR_RUN) /* as the product or the power it stands for */
        return n->nsyl >= 2 || (n->nsyl == 1 && n->syl[0].exp != EXPR_SYL_BARE);
    return n->kind == EXPR_POW || n->kind == EXPR_CONJ;
}

/* The letters of a run as a product prints them: "a b^-2 c^1". */
static void put_run(strbuf_t b, const expr_node *n, const names_t g)
{
    char num[16];

    for (slong i = 0; i < n->nsyl; i++) {
        expr_syl x = n->syl[i];
        if (i > 0)
            strbuf_puts(b, " ");
        strbuf_puts(b, x.gen >= 0 && x.gen < g->n ? g->name[x.gen] : "?");
        if (x.exp != EXPR_SYL_BARE) {
            snprintf(num, sizeof num, "^%d", (int)x.exp);
            strbuf_puts(b, num);
        }
    }
    if (n->nsyl == 0)
        strbuf_puts(b, "1");
}

typedef struct {
    const expr_node *n;
    int ctx;
    int parens;
    slong next; /* -1 before the node is opened, else the kid being printed */
} print_frame;

char *expr_node_get_str(const expr_node *root, const names_t g)
{
    strbuf_t b;
    print_frame *st = NULL;
    slong sn = 0, scap = 0;

    strbuf_init(b);
    if (root == NULL) {
        strbuf_puts(b, "1");
        return strbuf_take(b);
    }

#define PUSH(node, c)                                                        \
    do {                                                                     \
        if (sn == scap) {                                                    \
            scap = scap ? 2 * scap : 32;                                     \
            st = flint_realloc(st, sizeof(print_frame) * scap);              \
        }                                                                    \
        st[sn].n = (node);                                                   \
        st[sn].ctx = (c);                                                    \
        st[sn].parens = 0;                                                   \
        st[sn].next = -1;                                                    \
        sn++;                                                                \
    } while (0)

    PUSH(root, CTX_WORD);
    while (sn > 0) {
        slong top = sn - 1;
        const expr_node *n = st[top].n;
        int done = 0;

        if (n == NULL) {
            strbuf_puts(b, "1");
            sn--;
            continue;
        }
        if (st[top].next < 0) {
            st[top].parens = needs_parens(n, st[top].ctx);
            if (st[top].parens)
                strbuf_puts(b, "(");
            st[top].next = 0;
            switch (n->kind) {
            case EXPR_ONE:
                strbuf_puts(b, "1");
                done = 1;
                break;
            case EXPR_GEN:
                if (n->gen >= 0 && n->gen < g->n)
                    strbuf_puts(b, g->name[n->gen]);
                else
                    strbuf_puts(b, "?");
                done = 1;
                break;
            case EXPR_MUL:
                if (n->nkids == 0) {
                    strbuf_puts(b, "1");
                    done = 1;
                } else {
                    PUSH(n->kids[0], n->nkids == 1 ? st[top].ctx : CTX_MULKID);
                }
                break;
            case EXPR_POW:
            case EXPR_CONJ:
                if (n->nkids < 1) {
                    strbuf_puts(b, "1");
                    done = 1;
                } else {
                    PUSH(n->kids[0], CTX_BASE);
                }
                break;
            case EXPR_COMM:
                strbuf_puts(b, "[");
                if (n->nkids == 0)
                    done = 1;
                else
                    PUSH(n->kids[0], CTX_WORD);
                break;
            case EXPR_RUN:
                put_run(b, n, g);
                done = 1;
                break;
            }
            if (!done)
                continue;
        } else {
            slong next = st[top].next + 1;
            switch (n->kind) {
            case EXPR_MUL:
                if (next < n->nkids) {
                    strbuf_puts(b, " ");
                    st[top].next = next;
                    PUSH(n->kids[next], CTX_MULKID);
                } else {
                    done = 1;
                }
                break;
            case EXPR_POW:
                strbuf_puts(b, "^");
                put_fmpz(b, n->exp);
                done = 1;
                break;
            case EXPR_CONJ:
                if (next == 1 && n->nkids >= 2) {
                    strbuf_puts(b, "^");
                    st[top].next = next;
                    PUSH(n->kids[1], CTX_CONJUGATOR);
                } else {
                    done = 1;
                }
                break;
            case EXPR_COMM:
                if (next < n->nkids) {
                    int spaced = 0;
                    for (slong i = 0; i < n->nkids; i++)
                        if (n->kids[i] != NULL &&
                            ((n->kids[i]->kind == EXPR_MUL && n->kids[i]->nkids >= 2) ||
                             n->kids[i]->kind == EXPR_RUN))
                            spaced = 1;
                    strbuf_puts(b, spaced ? ", " : ",");
                    st[top].next = next;
                    PUSH(n->kids[next], CTX_WORD);
                } else {
                    done = 1;
                }
                break;
            default:
                done = 1;
                break;
            }
            if (!done)
                continue;
        }
        /* The node at top is complete. */
        if (n->kind == EXPR_COMM)
            strbuf_puts(b, "]");
        if (st[top].parens)
            strbuf_puts(b, ")");
        sn--;
    }
#undef PUSH
    flint_free(st);
    return strbuf_take(b);
}

char *expr_get_str(const expr_t e, const names_t g)
{
    return expr_node_get_str(e->root, g);
}

/* ------------------------------------------------------------------------ */
/* Exponent sums                                                             */

void expr_exponent_sums(fmpz *sums, const expr_t e, slong ngens)
{
    /* Pending subtrees with the multiplier that the powers above them give. */
    const expr_node **nodes = NULL;
    fmpz *mult = NULL;
    slong n = 0, cap = 0;

    for (slong i = 0; i < ngens; i++)
        fmpz_zero(sums + i);
    if (e->root == NULL)
        return;

#define PUSH_M(node, m)                                                      \
    do {                                                                     \
        if (n == cap) {                                                      \
            slong nc = cap ? 2 * cap : 32;                                   \
            nodes = flint_realloc(nodes, sizeof(*nodes) * nc);               \
            mult = flint_realloc(mult, sizeof(fmpz) * nc);                   \
            for (slong j = cap; j < nc; j++)                                 \
                fmpz_init(mult + j);                                         \
            cap = nc;                                                        \
        }                                                                    \
        nodes[n] = (node);                                                   \
        fmpz_set(mult + n, (m));                                             \
        n++;                                                                 \
    } while (0)

    {
        fmpz_t one, m;
        fmpz_init_set_ui(one, 1);
        fmpz_init(m);
        PUSH_M(e->root, one);
        while (n > 0) {
            const expr_node *x;
            n--;
            x = nodes[n];
            fmpz_swap(m, mult + n);
            if (x == NULL)
                continue;
            switch (x->kind) {
            case EXPR_GEN:
                if (x->gen >= 0 && x->gen < ngens)
                    fmpz_add(sums + x->gen, sums + x->gen, m);
                break;
            case EXPR_MUL:
                for (slong i = 0; i < x->nkids; i++)
                    PUSH_M(x->kids[i], m);
                break;
            case EXPR_POW:
                if (x->nkids >= 1 && !fmpz_is_zero(x->exp)) {
                    fmpz_mul(m, m, x->exp);
                    PUSH_M(x->kids[0], m);
                }
                break;
            case EXPR_CONJ:
                if (x->nkids >= 1)
                    PUSH_M(x->kids[0], m);
                break;
            case EXPR_RUN:
                for (slong i = 0; i < x->nsyl; i++)
                    if (x->syl[i].gen >= 0 && x->syl[i].gen < ngens)
                        fmpz_addmul_si(sums + x->syl[i].gen, m, expr_syl_exp(x->syl[i]));
                break;
            case EXPR_COMM:
            case EXPR_ONE:
                break;
            }
        }
        fmpz_clear(one);
        fmpz_clear(m);
    }
#undef PUSH_M
    for (slong j = 0; j < cap; j++)
        fmpz_clear(mult + j);
    flint_free(mult);
    flint_free(nodes);
}
