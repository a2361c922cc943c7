/* scan.c — see scan.h. */
#include <ctype.h>
#include <errno.h>
#include <pthread.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <calcium/qqbar.h>
#include "scan.h"
#include "strbuf.h"

void scan_init(scan_t S)
{
    memset(S, 0, sizeof(scan_struct));
    analysis_init(S->group);
    names_init(S->params);
    fmpz_init(S->box);
    fmpz_one(S->box);
    fmpq_init(S->window_lo);
    fmpq_init(S->window_hi);
}

static void clear_template(scan_t S)
{
    if (S->tmpl) {
        for (slong x = 0; x < S->group->nq->pres->gens->n; x++)
            expr_clear(S->tmpl + x);
        flint_free(S->tmpl);
    }
    S->tmpl = NULL;
    S->has_template = 0;
}

void scan_clear(scan_t S)
{
    clear_template(S);
    analysis_clear(S->group);
    names_clear(S->params);
    flint_free(S->lo);
    flint_free(S->hi);
    flint_free(S->range_col);
    fmpz_clear(S->box);
    fmpq_clear(S->window_lo);
    fmpq_clear(S->window_hi);
    flint_free(S->group_json);
}

ns_status scan_set_group(scan_t S, const pres_t G, slong c, const ns_progress_t *progress,
                         nserr_t err)
{
    clear_template(S);
    flint_free(S->group_json);
    S->group_json = NULL;
    ns_status st = analysis_set_group(S->group, G, c, progress, err);
    if (st == NS_OK) {
        char *p = pres_get_str(S->group->nq->pres);
        strbuf_t b;
        strbuf_init(b);
        strbuf_put_json_str(b, p);
        S->group_json = strbuf_take(b);
        flint_free(p);
    }
    return st;
}

/* ---- The family ---------------------------------------------------------- */

/* Reads a signed decimal integer of at most 10^18 in absolute value at
 * *p; advances *p.  Returns 0 when there is none or it is too large. */
static int read_bounded(long long *out, const char **p)
{
    const char *s = *p;
    int neg = 0;
    if (*s == '-' || *s == '+')
        neg = *s++ == '-';
    if (!isdigit((unsigned char)*s))
        return 0;
    long long v = 0;
    for (; isdigit((unsigned char)*s); s++) {
        if (v > SCAN_MAX_ABS / 10)
            return -1;
        v = 10 * v + (*s - '0');
        if (v > SCAN_MAX_ABS)
            return -1;
    }
    *out = neg ? -v : v;
    *p = s;
    return 1;
}

ns_status scan_add_range(scan_t S, const char *spec, nserr_t err)
{
    const char *p = spec;
    if (!isalpha((unsigned char)*p))
        return nserr_set(err, NS_ERR_SYNTAX, 1, 1,
                         "expected NAME=LO..HI, e.g. p=-3..3 (a name starts with a letter)");
    while (isalnum((unsigned char)*p) || *p == '_')
        p++;
    size_t nlen = (size_t)(p - spec);
    if (*p != '=')
        return nserr_set(err, NS_ERR_SYNTAX, 1, (int)(p - spec) + 1,
                         "expected '=' after the parameter name (NAME=LO..HI)");
    if (S->group->has_group && names_find(S->group->nq->pres->gens, spec, nlen) >= 0)
        return nserr_set(err, NS_ERR_INPUT, 1, 1,
                         "'%.*s' is a generator of the group, not a parameter", (int)nlen, spec);
    if (names_find(S->params, spec, nlen) >= 0)
        return nserr_set(err, NS_ERR_INPUT, 1, 1, "second range for parameter '%.*s'", (int)nlen,
                         spec);
    p++;
    long long lo, hi;
    const char *at = p;
    int r = read_bounded(&lo, &p);
    if (r <= 0)
        return nserr_set(err, r < 0 ? NS_ERR_LIMIT : NS_ERR_SYNTAX, 1, (int)(at - spec) + 1,
                         r < 0 ? "bound beyond 10^18 in absolute value"
                               : "expected an integer lower bound (NAME=LO..HI)");
    if (p[0] != '.' || p[1] != '.')
        return nserr_set(err, NS_ERR_SYNTAX, 1, (int)(p - spec) + 1,
                         "expected '..' between the bounds (NAME=LO..HI)");
    p += 2;
    at = p;
    r = read_bounded(&hi, &p);
    if (r <= 0)
        return nserr_set(err, r < 0 ? NS_ERR_LIMIT : NS_ERR_SYNTAX, 1, (int)(at - spec) + 1,
                         r < 0 ? "bound beyond 10^18 in absolute value"
                               : "expected an integer upper bound (NAME=LO..HI)");
    if (*p != '\0')
        return nserr_set(err, NS_ERR_SYNTAX, 1, (int)(p - spec) + 1,
                         "unexpected text after the range");
    if (lo > hi)
        return nserr_set(err, NS_ERR_INPUT, 1, (int)(nlen + 2),
                         "empty range: LO = %lld is greater than HI = %lld", lo, hi);
    char *name = strbuf_dup_strn(spec, nlen);
    slong k = names_add(S->params, name);
    flint_free(name);
    S->lo = flint_realloc(S->lo, (k + 1) * sizeof(slong));
    S->hi = flint_realloc(S->hi, (k + 1) * sizeof(slong));
    S->lo[k] = (slong)lo;
    S->hi[k] = (slong)hi;
    fmpz_t w;
    fmpz_init(w);
    fmpz_set_si(w, (slong)hi);
    fmpz_sub_si(w, w, (slong)lo);
    fmpz_add_ui(w, w, 1);
    fmpz_mul(S->box, S->box, w);
    fmpz_clear(w);
    return NS_OK;
}

/* Marks the parameters used by POW nodes of the tree. */
static void mark_params(int *used, const expr_node *n)
{
    if (n == NULL)
        return;
    if (n->kind == EXPR_POW && n->param >= 0)
        used[n->param] = 1;
    for (slong i = 0; i < n->nkids; i++)
        mark_params(used, n->kids[i]);
}

ns_status scan_set_template(scan_t S, const char *text, nserr_t err)
{
    if (!S->group->has_group)
        return nserr_set(err, NS_ERR_INPUT, 1, 1, "no group for the family");
    clear_template(S);
    const pres_struct *G = S->group->nq->pres;
    slong X = G->gens->n;

    /* An exponent that is a name but neither a generator nor a parameter
     * would otherwise read as a conjugate by an unknown generator. */
    expr_scan_t sc;
    _expr_scan_init(sc, text, 1, 1);
    while (sc->tok.kind != EXPR_TOK_END) {
        if (sc->tok.kind == EXPR_TOK_CARET) {
            _expr_scan_next(sc);
            if (sc->tok.kind == EXPR_TOK_LPAREN)
                _expr_scan_next(sc);
            if (sc->tok.kind == EXPR_TOK_MINUS || sc->tok.kind == EXPR_TOK_PLUS)
                _expr_scan_next(sc);
            const expr_tok_struct *t = &sc->tok;
            if (t->kind == EXPR_TOK_NAME && names_find(G->gens, t->start, t->len) < 0 &&
                names_find(S->params, t->start, t->len) < 0)
                return nserr_set(err, NS_ERR_INPUT, t->line, t->col,
                                 "parameter '%.*s' has no range (give --range %.*s=LO..HI)",
                                 t->len > 64 ? 64 : (int)t->len, t->start,
                                 t->len > 64 ? 64 : (int)t->len, t->start);
            continue;
        }
        _expr_scan_next(sc);
    }

    expr_struct *im = flint_malloc(FLINT_MAX(X, 1) * sizeof(expr_struct));
    for (slong x = 0; x < X; x++)
        expr_init(im + x);
    ns_status st = pres_parse_map_params(im, G, S->params, text, 1, 1, err);
    if (st == NS_OK) {
        int *used = flint_calloc(FLINT_MAX(S->params->n, 1), sizeof(int));
        for (slong x = 0; x < X; x++)
            mark_params(used, im[x].root);
        for (slong k = 0; k < S->params->n && st == NS_OK; k++)
            if (!used[k])
                st = nserr_set(err, NS_ERR_INPUT, 1, 1,
                               "parameter '%s' has a range but does not occur in the family",
                               S->params->name[k]);
        flint_free(used);
    }
    if (st != NS_OK) {
        for (slong x = 0; x < X; x++)
            expr_clear(im + x);
        flint_free(im);
        return st;
    }
    S->tmpl = im;
    S->has_template = 1;
    return NS_OK;
}

void scan_set_sample(scan_t S, ulong n, ulong seed)
{
    S->sample = n;
    S->seed = seed;
}

static const struct {
    const char *name;
    int bit;
} properties[] = {
    {"valid", SCAN_VALID},           {"automorphism", SCAN_AUTOMORPHISM},
    {"injective", SCAN_INJECTIVE},   {"hyperbolic", SCAN_HYPERBOLIC},
    {"expanding", SCAN_EXPANDING},   {"finite-reidemeister", SCAN_FINITE_REIDEMEISTER},
};

ns_status scan_add_property(scan_t S, const char *name, nserr_t err)
{
    for (size_t k = 0; k < sizeof properties / sizeof properties[0]; k++)
        if (!strcmp(name, properties[k].name)) {
            S->props |= properties[k].bit;
            return NS_OK;
        }
    return nserr_set(err, NS_ERR_INPUT, 1, 1,
                     "unknown property '%.60s' (valid, automorphism, injective, hyperbolic, "
                     "expanding, finite-reidemeister)",
                     name);
}

/* "12", "-1.25", "+3." as an exact rational; 0 when malformed. */
static int decimal_get_fmpq(fmpq_t out, const char *s)
{
    const char *p = s;
    int neg = 0;
    if (*p == '-' || *p == '+')
        neg = *p++ == '-';
    if (!isdigit((unsigned char)*p) && !(*p == '.' && isdigit((unsigned char)p[1])))
        return 0;
    fmpz_t num, den;
    fmpz_init(num);
    fmpz_init_set_ui(den, 1);
    int dot = 0, digits = 0;
    for (; *p; p++) {
        if (*p == '.' && !dot) {
            dot = 1;
            continue;
        }
        if (!isdigit((unsigned char)*p) || ++digits > 1000)
            break;
        fmpz_mul_ui(num, num, 10);
        fmpz_add_ui(num, num, (ulong)(*p - '0'));
        if (dot)
            fmpz_mul_ui(den, den, 10);
    }
    int ok = *p == '\0';
    if (ok) {
        if (neg)
            fmpz_neg(num, num);
        fmpq_set_fmpz_frac(out, num, den);
    }
    fmpz_clear(num);
    fmpz_clear(den);
    return ok;
}

ns_status scan_set_growth_window(scan_t S, const char *a, const char *b, nserr_t err)
{
    if (!decimal_get_fmpq(S->window_lo, a))
        return nserr_set(err, NS_ERR_SYNTAX, 1, 1, "'%.60s' is not a decimal number", a);
    if (!decimal_get_fmpq(S->window_hi, b))
        return nserr_set(err, NS_ERR_SYNTAX, 1, 1, "'%.60s' is not a decimal number", b);
    if (fmpq_cmp(S->window_lo, S->window_hi) > 0)
        return nserr_set(err, NS_ERR_INPUT, 1, 1, "empty window: %s is greater than %s", a, b);
    S->has_window = 1;
    return NS_OK;
}

ns_status scan_member_count(ulong *n, const scan_t S, nserr_t err)
{
    if (S->sample) {
        *n = S->sample;
        return NS_OK;
    }
    if (fmpz_cmp_ui(S->box, SCAN_MAX_MEMBERS) > 0) {
        char *d = fmpz_get_str(NULL, 10, S->box);
        nserr_set(err, NS_ERR_LIMIT, 1, 1,
                  "the box has %.100s members, more than 10^9: draw some with --sample N", d);
        flint_free(d);
        return NS_ERR_LIMIT;
    }
    *n = fmpz_get_ui(S->box);
    return NS_OK;
}

/* splitmix64 (Steele, Lea, Flood 2014). */
static ulong splitmix_next(ulong *state)
{
    uint64_t z = (*state += UINT64_C(0x9E3779B97F4A7C15));
    z = (z ^ (z >> 30)) * UINT64_C(0xBF58476D1CE4E5B9);
    z = (z ^ (z >> 27)) * UINT64_C(0x94D049BB133111EB);
    return (ulong)(z ^ (z >> 31));
}

void scan_member_params(slong *vals, const scan_t S, ulong i)
{
    slong P = S->params->n;
    if (S->sample) {
        /* one stream per member: the point depends on (seed, i) only */
        ulong st = S->seed ^ (i * UINT64_C(0xD1B54A32D192ED03));
        splitmix_next(&st);
        for (slong k = 0; k < P; k++) {
            ulong w = (ulong)(S->hi[k] - S->lo[k]) + 1; /* <= 2*10^18 + 1 */
            ulong limit = UINT64_MAX - UINT64_MAX % w; /* reject to stay uniform */
            ulong r;
            do
                r = splitmix_next(&st);
            while (r >= limit);
            vals[k] = S->lo[k] + (slong)(r % w);
        }
        return;
    }
    for (slong k = P - 1; k >= 0; k--) {
        ulong w = (ulong)(S->hi[k] - S->lo[k]) + 1;
        vals[k] = S->lo[k] + (slong)(i % w);
        i /= w;
    }
}

/* ---- One member ---------------------------------------------------------- */

typedef struct {
    expr_node *node;
    slong param;
    slong sign;
} hole;

typedef struct {
    analysis_t A;        /* borrows the shared group */
    expr_struct *img;    /* this thread's copy of the template */
    hole *holes;
    slong nholes;
    slong *vals;
} worker;

static void collect_holes(worker *w, expr_node *n)
{
    if (n == NULL)
        return;
    if (n->kind == EXPR_POW && n->param >= 0) {
        w->holes = flint_realloc(w->holes, (w->nholes + 1) * sizeof(hole));
        w->holes[w->nholes].node = n;
        w->holes[w->nholes].param = n->param;
        w->holes[w->nholes].sign = fmpz_get_si(n->exp);
        w->nholes++;
    }
    for (slong i = 0; i < n->nkids; i++)
        collect_holes(w, n->kids[i]);
}

static void worker_init(worker *w, const scan_t S)
{
    memset(w, 0, sizeof(worker));
    analysis_init(w->A);
    analysis_share_group(w->A, S->group);
    slong X = S->group->nq->pres->gens->n;
    if (S->has_template) {
        w->img = flint_malloc(FLINT_MAX(X, 1) * sizeof(expr_struct));
        for (slong x = 0; x < X; x++) {
            expr_init(w->img + x);
            expr_set(w->img + x, S->tmpl + x);
            collect_holes(w, w->img[x].root);
        }
    }
    w->vals = flint_malloc(FLINT_MAX(S->params->n, 1) * sizeof(slong));
}

static void worker_clear(worker *w, const scan_t S)
{
    if (w->img) {
        for (slong x = 0; x < S->group->nq->pres->gens->n; x++)
            expr_clear(w->img + x);
        flint_free(w->img);
    }
    flint_free(w->holes);
    flint_free(w->vals);
    analysis_clear(w->A);
}

static void json_fmpz_or_null(strbuf_t b, int defined, const fmpz_t x)
{
    if (defined) {
        char *s = fmpz_get_str(NULL, 10, x);
        strbuf_puts(b, s);
        flint_free(s);
    } else {
        strbuf_puts(b, "null");
    }
}

static void json_str_or_null(strbuf_t b, const char *s)
{
    if (s)
        strbuf_put_json_str(b, s);
    else
        strbuf_puts(b, "null");
}

static const char *json_bool(int v) { return v ? "true" : "false"; }

/* 1 if the growth rate of the analysed valid map is the spectral radius
 * on layer 1 (the other cases are exactly 0 or 1; analysis.c). */
static int growth_is_rho1(const analysis_t A)
{
    return A->class_requested > 0 && A->nq->class_reached > 0 &&
           spectrum_radius_cmp_one(A->layers[0].spectrum) >= 0;
}

/* Sign of (growth rate - q), or 2 when it cannot be decided. */
static int growth_cmp(const analysis_t A, const fmpq_t q)
{
    if (!growth_is_rho1(A)) {
        fmpq_t g;
        fmpq_init(g);
        fmpq_set_si(g, strcmp(A->growth_str, "0") ? 1 : 0, 1);
        int c = fmpq_cmp(g, q);
        fmpq_clear(g);
        return c < 0 ? -1 : c > 0;
    }
    const spectrum_struct *Sp = A->layers[0].spectrum;
    if (spectrum_radius_is_exact(Sp)) {
        qqbar_t x;
        qqbar_init(x);
        qqbar_set_fmpq(x, q);
        int c = qqbar_cmp_re(spectrum_radius_qqbar(Sp), x);
        qqbar_clear(x);
        return c < 0 ? -1 : c > 0;
    }
    int c = 2;
    arb_t r, y;
    arb_init(r);
    arb_init(y);
    for (slong prec = 128; prec <= 4096 && c == 2; prec *= 2) {
        spectrum_radius_arb(r, Sp, prec);
        arb_set_fmpq(y, q, prec);
        if (arb_lt(r, y))
            c = -1;
        else if (arb_gt(r, y))
            c = 1;
    }
    arb_clear(r);
    arb_clear(y);
    return c;
}

static int member_kept(const scan_t S, const analysis_t A)
{
    if (!S->props && !S->has_window)
        return 1;
    if (!A->valid)
        return 0;
    if ((S->props & SCAN_AUTOMORPHISM) && !A->automorphism)
        return 0;
    if ((S->props & SCAN_INJECTIVE) && !(A->injective_defined && A->injective))
        return 0;
    if ((S->props & SCAN_HYPERBOLIC) && !A->hyperbolic)
        return 0;
    if ((S->props & SCAN_EXPANDING) && !A->expanding)
        return 0;
    if ((S->props & SCAN_FINITE_REIDEMEISTER) && A->reid_kind != ANALYSIS_REID_FINITE)
        return 0;
    if (S->has_window &&
        (growth_cmp(A, S->window_lo) == -1 || growth_cmp(A, S->window_lo) == 2 ||
         growth_cmp(A, S->window_hi) == 1 || growth_cmp(A, S->window_hi) == 2))
        return 0;
    return 1;
}

/* The member's JSON object; keys documented in README "Scans". */
static char *member_json(const scan_t S, const worker *w, ulong index, const scan_item *item)
{
    const analysis_struct *A = w->A;
    strbuf_t b;
    strbuf_init(b);
    if (item) {
        strbuf_puts(b, "{\"id\": ");
        strbuf_puts(b, item->id_json);
        strbuf_printf(b, ", \"line\": %lu", (unsigned long)index);
    } else {
        strbuf_printf(b, "{\"index\": %lu, \"params\": {", (unsigned long)index);
        for (slong k = 0; k < S->params->n; k++) {
            strbuf_puts(b, k ? ", " : "");
            strbuf_put_json_str(b, S->params->name[k]);
            strbuf_printf(b, ": %ld", (long)w->vals[k]);
        }
        strbuf_puts(b, "}");
    }
    strbuf_printf(b, ", \"group\": %s, \"class\": %ld, \"map\": ", S->group_json,
                  (long)A->class_requested);
    if (item) {
        strbuf_put_json_str(b, A->map_str); /* the text read, printed back */
    } else {
        /* the template with this member's values, as the user wrote it */
        char *t = pres_get_map_str(w->img, S->group->nq->pres);
        strbuf_put_json_str(b, t);
        flint_free(t);
    }
    strbuf_printf(b, ", \"valid\": %s", json_bool(A->valid));
    if (!A->valid) {
        strbuf_puts(b, ", \"failing_relator\": ");
        json_str_or_null(b, A->nfail ? A->fail_relator[0] : NULL);
        strbuf_puts(b, ", \"failing_image\": ");
        json_str_or_null(b, A->nfail ? A->fail_image[0] : NULL);
        strbuf_puts(b, "}");
        return strbuf_take(b);
    }
    strbuf_puts(b, ", \"growth_rate\": ");
    strbuf_put_json_str(b, A->growth_str);
    strbuf_puts(b, ", \"growth_rate_minpoly\": ");
    if (growth_is_rho1(A))
        json_str_or_null(b, A->layers[0].rho_minpoly_str);
    else
        strbuf_puts(b, strcmp(A->growth_str, "0") ? "\"x - 1\"" : "\"x\"");
    strbuf_puts(b, ", \"lower_bound\": ");
    strbuf_put_json_str(b, A->lower_bound_str);
    strbuf_printf(b, ", \"lower_bound_layer\": %ld, \"upper_bound\": ", (long)A->lower_layer);
    strbuf_put_json_str(b, A->upper_bound_str);
    strbuf_printf(b, ", \"upper_bound_layer\": %ld, \"entropy\": ", (long)A->upper_layer);
    json_str_or_null(b, A->entropy_str);
    strbuf_puts(b, ", \"lefschetz\": ");
    json_fmpz_or_null(b, A->lefschetz_defined, A->lefschetz);
    strbuf_puts(b, ", \"nielsen\": ");
    json_fmpz_or_null(b, A->lefschetz_defined, A->nielsen);
    strbuf_puts(b, ", \"reidemeister\": ");
    if (A->reid_kind == ANALYSIS_REID_INFINITE)
        strbuf_puts(b, "\"infinite\"");
    else
        json_fmpz_or_null(b, A->reid_kind == ANALYSIS_REID_FINITE, A->reidemeister);
    strbuf_printf(b, ", \"automorphism\": %s, \"injective\": %s, \"image_index\": ",
                  json_bool(A->automorphism),
                  !A->injective_defined ? "null" : json_bool(A->injective));
    json_fmpz_or_null(b, A->index_defined, A->image_index);
    strbuf_printf(b, ", \"hyperbolic\": %s, \"expanding\": %s, \"spectral_radii\": [",
                  json_bool(A->hyperbolic), json_bool(A->expanding));
    for (slong j = 0; j < A->nlayers; j++) {
        strbuf_puts(b, j ? ", " : "");
        strbuf_put_json_str(b, A->layers[j].rho_str);
    }
    strbuf_puts(b, "]}");
    return strbuf_take(b);
}

/* Analyses member index (family) or item (maps from the caller) into r. */
static void worker_eval(worker *w, const scan_t S, ulong index, const scan_item *item,
                        scan_result *r)
{
    memset(r, 0, sizeof(scan_result));
    nserr_init(r->err);
    r->index = index;
    if (item && item->failed) {
        r->status = nserr_set(r->err, NS_ERR_SYNTAX, 0, 0, "%s", item->msg);
        return;
    }
    if (item) {
        r->status = analysis_set_map_text(w->A, item->map_text, 1, 1, NULL, r->err);
    } else {
        scan_member_params(w->vals, S, index);
        for (slong h = 0; h < w->nholes; h++)
            fmpz_set_si(w->holes[h].node->exp, w->holes[h].sign * w->vals[w->holes[h].param]);
        /* the member as a map value: its images evaluated once in the
         * shared quotient, then analysed without any text in between */
        endo_t E;
        endo_init(E);
        r->status = endo_set(E, w->A->nq, w->img, NULL, r->err);
        if (r->status == NS_OK)
            r->status = analysis_set_map_endo(w->A, E, NULL, r->err);
        endo_clear(E);
    }
    if (r->status != NS_OK)
        return;
    r->valid = w->A->valid;
    r->kept = member_kept(S, w->A);
    if (r->kept)
        r->line = member_json(S, w, index, item);
    analysis_clear_map(w->A);
}

/* ---- The runner ---------------------------------------------------------- */

typedef struct {
    int filled;
    scan_result r;
} slot;

typedef struct {
    const scan_struct *S;
    const scan_run_opts *o;
    pthread_mutex_t lock;
    pthread_cond_t cond;
    ulong total;      /* family: members; caller: unused */
    ulong next_index; /* family: the next candidate member */
    ulong step;
    int input_done;
    int stop;
    ulong handed, emitted; /* sequence numbers */
    ulong window;
    slot *slots;
} runner;

static void item_clear(scan_item *it)
{
    flint_free(it->id_json);
    flint_free(it->map_text);
    memset(it, 0, sizeof(scan_item));
}

/* Takes the next member with the lock held; 0 at the end. */
static int take_next(runner *R, ulong *index, scan_item *item)
{
    if (R->input_done || R->stop)
        return 0;
    if (R->o->next) {
        memset(item, 0, sizeof(scan_item));
        if (!R->o->next(R->o->next_ctx, item)) {
            R->input_done = 1;
            return 0;
        }
        *index = item->index;
        return 1;
    }
    if (R->next_index >= R->total) {
        R->input_done = 1;
        return 0;
    }
    *index = R->next_index;
    R->next_index = R->total - R->next_index <= R->step ? R->total : R->next_index + R->step;
    return 1;
}

static void result_clear(scan_result *r)
{
    flint_free(r->line);
    nserr_clear(r->err);
    r->line = NULL;
}

static void *worker_main(void *arg)
{
    runner *R = arg;
    worker w;
    worker_init(&w, (scan_struct *)R->S);
    pthread_mutex_lock(&R->lock);
    for (;;) {
        while (!R->stop && !R->input_done && R->handed - R->emitted >= R->window)
            pthread_cond_wait(&R->cond, &R->lock);
        ulong index, seq = R->handed;
        scan_item item;
        memset(&item, 0, sizeof item);
        if (!take_next(R, &index, &item))
            break;
        R->handed++;
        pthread_mutex_unlock(&R->lock);
        scan_result r;
        worker_eval(&w, (scan_struct *)R->S, index, R->o->next ? &item : NULL, &r);
        item_clear(&item);
        pthread_mutex_lock(&R->lock);
        R->slots[seq % R->window].r = r;
        R->slots[seq % R->window].filled = 1;
        pthread_cond_broadcast(&R->cond);
    }
    pthread_cond_broadcast(&R->cond);
    pthread_mutex_unlock(&R->lock);
    worker_clear(&w, (scan_struct *)R->S);
    flint_cleanup(); /* this thread's FLINT/Arb caches */
    return NULL;
}

ns_status scan_run(const scan_t S, const scan_run_opts *o, nserr_t err)
{
    runner R;
    memset(&R, 0, sizeof R);
    R.S = S;
    R.o = o;
    ulong K = o->shard_n > 1 ? o->shard_k : 1, N = o->shard_n > 1 ? o->shard_n : 1;
    if (!o->next) {
        if (!S->has_template)
            return nserr_set(err, NS_ERR_INPUT, 0, 0, "no family and no input");
        ns_status st = scan_member_count(&R.total, S, err);
        if (st != NS_OK)
            return st;
        ulong first = K - 1;
        if (o->skip_through >= 0) {
            ulong s = (ulong)o->skip_through + 1; /* first member not done */
            first = s <= K - 1 ? K - 1 : s + ((K - 1 + N - s % N) % N);
        }
        R.next_index = first;
        R.step = N;
    }
    int jobs = o->jobs < 1 ? 1 : o->jobs > SCAN_MAX_JOBS ? SCAN_MAX_JOBS : o->jobs;
    ns_status st = NS_OK;
    ulong done = 0;
    if (jobs == 1) {
        worker w;
        worker_init(&w, S);
        for (;;) {
            ulong index;
            scan_item item;
            memset(&item, 0, sizeof item);
            if (!take_next(&R, &index, &item))
                break;
            scan_result r;
            worker_eval(&w, S, index, o->next ? &item : NULL, &r);
            item_clear(&item);
            o->emit(o->emit_ctx, &r);
            result_clear(&r);
            done++;
            if (o->tick && o->tick(o->tick_ctx, done)) {
                st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
                break;
            }
        }
        worker_clear(&w, S);
        return st;
    }

    R.window = 8 * (ulong)jobs;
    R.slots = flint_calloc(R.window, sizeof(slot));
    pthread_mutex_init(&R.lock, NULL);
    pthread_cond_init(&R.cond, NULL);
    pthread_t *tid = flint_malloc(jobs * sizeof(pthread_t));
    int started = 0;
    for (; started < jobs; started++)
        if (pthread_create(tid + started, NULL, worker_main, &R) != 0)
            break;
    if (started == 0) {
        st = nserr_set(err, NS_ERR_LIMIT, 0, 0, "could not start a thread");
    } else {
        pthread_mutex_lock(&R.lock);
        for (;;) {
            slot *sl = R.slots + R.emitted % R.window;
            if (sl->filled) {
                scan_result r = sl->r;
                sl->filled = 0;
                pthread_mutex_unlock(&R.lock);
                if (!R.stop) {
                    o->emit(o->emit_ctx, &r);
                    done++;
                }
                result_clear(&r);
                int cancel = !R.stop && o->tick && o->tick(o->tick_ctx, done);
                pthread_mutex_lock(&R.lock);
                R.emitted++;
                if (cancel && !R.stop) {
                    R.stop = 1;
                    st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
                }
                pthread_cond_broadcast(&R.cond);
                continue;
            }
            if ((R.input_done || R.stop) && R.emitted == R.handed)
                break;
            pthread_cond_wait(&R.cond, &R.lock);
        }
        pthread_mutex_unlock(&R.lock);
    }
    for (int t = 0; t < started; t++)
        pthread_join(tid[t], NULL);
    flint_free(tid);
    pthread_mutex_destroy(&R.lock);
    pthread_cond_destroy(&R.cond);
    flint_free(R.slots);
    return st;
}
