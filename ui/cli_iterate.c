/* cli_iterate.c — `nilstep iterate`: the iterates alpha^n(w) as text, JSON
 * or CSV.  The numbers come from src/iterate.h and src/wordlen.h; this file
 * only reads options and formats. */
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>
#include "analysis.h"
#include "cli.h"
#include "report.h"
#include "iterate_norm.h"
#include "session.h"
#include "spectrum.h"
#include "strbuf.h"
#include "wordlen.h"

#define ITER_MAX_STEPS 1000000000L
#define ITER_DEFAULT_STEPS 20
#define ITER_DIGITS 30

enum { FMT_TEXT, FMT_JSON, FMT_CSV };

static int iter_usage(const char *msg)
{
    fprintf(stderr, "nilstep iterate: %s\n", msg);
    fputs("usage: nilstep iterate [--steps N] [--every K] [--element WORD]... [--format F]\n"
          "                       [--ball-memory MIB] [--digits N]\n"
          "                       (FILE | --group PRES --class C --map MAP)\n"
          "(nilstep --help for more)\n",
          stderr);
    return 2;
}

static int iter_error(const nserr_t err, const char *where)
{
    char buf[700];
    nserr_format(buf, sizeof buf, err, where);
    fprintf(stderr, "%s\n", buf);
    if (err->status == NS_ERR_LIMIT || err->status == NS_ERR_CANCELLED)
        return 3;
    return 2;
}

/* A whole number lo..hi from an option value; located message otherwise. */
static int parse_count(long *out, const char *opt, const char *s, long lo, long hi)
{
    char *end;
    errno = 0;
    long v = strtol(s, &end, 10);
    if (*s == '\0' || *end != '\0' || errno == ERANGE || v < lo || v > hi) {
        fprintf(stderr,
                "nilstep iterate: %s: error: expected a whole number from %ld to %ld, "
                "found '%.100s'\n",
                opt, lo, hi, s);
        return 0;
    }
    *out = v;
    return 1;
}

typedef struct {
    int shown;
} iter_progress_state;

static int iter_show_progress(void *ctx, const char *stage, double fraction)
{
    iter_progress_state *p = ctx;
    (void)fraction;
    if (stage) {
        fprintf(stderr, "\r\033[Knilstep: %s", stage);
        fflush(stderr);
        p->shown = 1;
    }
    return 0;
}

/* The largest of the roots over the elements at each printed step. */
typedef struct {
    slong npts;
    ulong *n;
    arb_struct *max;
    int *have;
} iter_maxroot;

/* As many certified digits as the ball allows, at most ITER_DIGITS. */
static char *ball_str(const arb_t x)
{
    for (slong d = ITER_DIGITS; d >= 1; d--) {
        char *s = spectrum_ball_get_str(x, d); /* flint_malloc'd */
        if (s)
            return s;
    }
    char *s = arb_get_str(x, 5, 0);
    char *t = strbuf_dup_str(s);
    flint_free(s);
    return t;
}

typedef struct {
    int fmt;
    const char *growth;
    slong nlayers;
    int first_elt;
    int first_step;
    strbuf_struct *copy; /* JSON of the steps kept for the top-level list, or NULL */
    slong digits;        /* significant digits of the text format's decimals */
} iter_out;

/* s (flint_malloc'd or NULL) rounded to the text format's digits; takes s. */
static char *text_digits(const iter_out *o, char *s)
{
    if (s == NULL || o->fmt != FMT_TEXT)
        return s;
    char *r = spectrum_decimals_round(s, o->digits);
    flint_free(s);
    return r;
}

static void put_vec_json(strbuf_t b, const fmpz *v, slong len)
{
    strbuf_puts(b, "[");
    for (slong k = 0; k < len; k++) {
        char *s = fmpz_get_str(NULL, 10, v + k);
        strbuf_printf(b, "%s\"%s\"", k ? ", " : "", s);
        flint_free(s);
    }
    strbuf_puts(b, "]");
}

static void put_vec_text(strbuf_t b, const fmpz *v, slong len)
{
    strbuf_puts(b, "(");
    for (slong k = 0; k < len; k++) {
        char *s = fmpz_get_str(NULL, 10, v + k);
        strbuf_printf(b, "%s%s", k ? ", " : "", s);
        flint_free(s);
    }
    strbuf_puts(b, ")");
}

/* CSV field: quoted, quotes doubled. */
static void put_csv_str(strbuf_t b, const char *s)
{
    strbuf_puts(b, "\"");
    for (; *s; s++) {
        if (*s == '"')
            strbuf_puts(b, "\"\"");
        else if (*s == '\n' || *s == '\r')
            strbuf_puts(b, " ");
        else
            strbuf_putn(b, s, 1);
    }
    strbuf_puts(b, "\"");
}

static void emit_step(strbuf_t b, iter_out *o, const nq_t Q, const char *elt_text,
                      const iterate_point_t p, slong wl, const wordlen_t ball)
{
    char *word = nq_elt_get_str(Q, p->elt);
    char *norm = text_digits(o, iterate_point_norm_str(p, ITER_DIGITS));
    char *root = text_digits(o, iterate_point_root_str(p, ITER_DIGITS));
    if (o->fmt == FMT_JSON) {
        strbuf_printf(b, "%s\n      {\"n\": %lu, \"element\": ", o->first_step ? "" : ",",
                      (unsigned long)p->n);
        strbuf_put_json_str(b, word);
        strbuf_puts(b, ", \"layers\": [");
        for (slong j = 0; j < p->nlayers; j++) {
            const iterate_layer_struct *L = p->layers + j;
            strbuf_printf(b, "%s{\"weight\": %ld, \"coordinates\": ", j ? ", " : "",
                          (long)L->weight);
            put_vec_json(b, L->coords, L->free_rank);
            strbuf_puts(b, ", \"torsion\": ");
            put_vec_json(b, L->torsion, L->ntors);
            strbuf_printf(b, ", \"digits\": %ld}", (long)L->digits);
        }
        strbuf_puts(b, "], \"norm\": ");
        if (norm)
            strbuf_put_json_str(b, norm);
        else
            strbuf_puts(b, "null");
        strbuf_puts(b, ", \"norm_root\": ");
        if (root)
            strbuf_put_json_str(b, root);
        else
            strbuf_puts(b, "null");
        strbuf_puts(b, ", \"word_length\": ");
        if (wl >= 0)
            strbuf_printf(b, "%ld", (long)wl);
        else
            strbuf_puts(b, "null");
        strbuf_puts(b, "}");
        if (o->copy)
            strbuf_puts(o->copy, b->s);
    } else if (o->fmt == FMT_CSV) {
        put_csv_str(b, elt_text);
        strbuf_printf(b, ",%lu,", (unsigned long)p->n);
        if (wl >= 0)
            strbuf_printf(b, "%ld", (long)wl);
        strbuf_printf(b, ",%s,%s,%s", norm ? norm : "", root ? root : "", o->growth);
        for (slong j = 0; j < p->nlayers; j++)
            strbuf_printf(b, ",%ld", (long)p->layers[j].digits);
        strbuf_puts(b, ",");
        put_csv_str(b, word);
        strbuf_puts(b, "\n");
    } else {
        strbuf_printf(b, "  n = %lu: %s\n", (unsigned long)p->n, word);
        for (slong j = 0; j < p->nlayers; j++) {
            const iterate_layer_struct *L = p->layers + j;
            strbuf_printf(b, "    layer %ld: ", (long)L->weight);
            put_vec_text(b, L->coords, L->free_rank);
            if (L->ntors) {
                strbuf_puts(b, " torsion ");
                put_vec_text(b, L->torsion, L->ntors);
            }
            strbuf_printf(b, "  digits %ld\n", (long)L->digits);
        }
        strbuf_printf(b, "    norm %s  root %s  word length ", norm ? norm : "?",
                      root ? root : "-");
        if (wl >= 0)
            strbuf_printf(b, "%ld\n", (long)wl);
        else if (ball->complete_radius >= 0)
            strbuf_printf(b, "> %ld\n", (long)ball->complete_radius);
        else
            strbuf_puts(b, "not searched\n");
    }
    o->first_step = 0;
    flint_free(word);
    flint_free(norm);
    flint_free(root);
}

/* Iterates one element: w0 is the element, printed at n = 0, every, 2 every,
 * ... and always at steps.  Returns NS_OK or the status that stopped it. */
static ns_status run_element(iter_out *o, iterate_map_t M, const nq_t Q, slong n, wordlen_t ball,
                             const char *elt_text, const fmpz *w0, ulong steps, ulong every,
                             iter_maxroot *mx, const ns_progress_t *pp, nserr_t err)
{
    fmpz *x = _fmpz_vec_init(FLINT_MAX(n, 1));
    _fmpz_vec_set(x, w0, n);
    iterate_point_t p;
    iterate_point_init(p);
    arb_t r;
    arb_init(r);
    strbuf_t b;
    strbuf_init(b);
    ns_status st = NS_OK;
    if (o->fmt == FMT_JSON) {
        strbuf_printf(b, "%s\n    {\"element\": ", o->first_elt ? "" : ",");
        strbuf_put_json_str(b, elt_text);
        strbuf_puts(b, ", \"steps\": [");
    } else if (o->fmt == FMT_TEXT) {
        strbuf_printf(b, "%selement %s\n", o->first_elt ? "" : "\n", elt_text);
    }
    o->first_elt = 0;
    o->first_step = 1;
    fputs(b->s, stdout);
    ulong at = 0;
    slong idx = 0;
    int ball_done = 0;
    for (;;) {
        iterate_point_set(p, M, x, at);
        slong wl = -1;
        if (!ball_done) {
            wl = wordlen_get(ball, x, -1, pp);
            if (wl == -2) {
                st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "word lengths stopped");
                break;
            }
            /* once an iterate is out of reach, later ones are too (the ball
             * has stopped growing): only look them up */
            if (wl < 0 && ball->stopped)
                ball_done = 1;
        } else {
            wl = wordlen_lookup(ball, x);
        }
        strbuf_clear(b);
        strbuf_init(b);
        emit_step(b, o, Q, elt_text, p, wl, ball);
        fputs(b->s, stdout);
        if (at > 0) {
            iterate_point_root(r, p, 4 * ITER_DIGITS + 192);
            if (!mx->have[idx])
                arb_set(mx->max + idx, r);
            else
                arb_max(mx->max + idx, mx->max + idx, r, 4 * ITER_DIGITS + 192);
            mx->have[idx] = 1;
        }
        mx->n[idx] = at;
        idx++;
        if (at == steps)
            break;
        ulong next = steps - at > every ? at + every : steps;
        st = iterate_map_advance(M, x, next - at, pp, err);
        if (st != NS_OK)
            break;
        at = next;
    }
    strbuf_clear(b);
    strbuf_init(b);
    if (o->fmt == FMT_JSON)
        strbuf_puts(b, "\n    ]}");
    fputs(b->s, stdout);
    strbuf_clear(b);
    arb_clear(r);
    iterate_point_clear(p);
    _fmpz_vec_clear(x, FLINT_MAX(n, 1));
    return st;
}

int cli_iterate(int argc, char **argv)
{
    const char *format = "text", *file = NULL, *group = NULL, *cls = NULL, *map = NULL;
    const char *steps_s = NULL, *every_s = NULL, *mem_s = NULL, *digits_s = NULL;
    const char **elts = calloc((size_t)argc + 1, sizeof(char *));
    if (elts == NULL)
        abort();
    int nelts = 0;
    for (int i = 1; i < argc; i++) {
        const char *a = argv[i];
        const char **slot = NULL;
        if (!strcmp(a, "--format"))
            slot = &format;
        else if (!strcmp(a, "--group"))
            slot = &group;
        else if (!strcmp(a, "--class"))
            slot = &cls;
        else if (!strcmp(a, "--map"))
            slot = &map;
        else if (!strcmp(a, "--steps"))
            slot = &steps_s;
        else if (!strcmp(a, "--every"))
            slot = &every_s;
        else if (!strcmp(a, "--ball-memory"))
            slot = &mem_s;
        else if (!strcmp(a, "--digits"))
            slot = &digits_s;
        else if (!strcmp(a, "--element"))
            slot = &elts[nelts];
        else if (!strcmp(a, "--help") || !strcmp(a, "-h")) {
            cli_print_help(stdout);
            free(elts);
            return 0;
        } else if (a[0] == '-' && a[1] != '\0') {
            char msg[300];
            snprintf(msg, sizeof msg, "unknown option '%.200s'", a);
            free(elts);
            return iter_usage(msg);
        } else if (file) {
            free(elts);
            return iter_usage("only one FILE may be given");
        } else {
            file = a;
            continue;
        }
        if (i + 1 >= argc) {
            char msg[300];
            snprintf(msg, sizeof msg, "option '%s' needs a value", a);
            free(elts);
            return iter_usage(msg);
        }
        *slot = argv[++i];
        if (slot == &elts[nelts])
            nelts++;
    }
    int fmt = !strcmp(format, "text")   ? FMT_TEXT
              : !strcmp(format, "json") ? FMT_JSON
              : !strcmp(format, "csv")  ? FMT_CSV
                                        : -1;
    int status = 0;
    if (fmt < 0)
        status = iter_usage("--format takes text, json or csv");
    else if (file && (group || cls || map))
        status = iter_usage("give either FILE or --group/--class/--map, not both");
    else if (!file && !group)
        status = iter_usage("no FILE and no --group given");
    else if (group && !cls)
        status = iter_usage("--group needs --class");
    else if (group && !map)
        status = iter_usage("--group needs --map: iterates need a map");
    long steps = -1, every = 1, mem = (long)(WORDLEN_DEFAULT_BUDGET >> 20);
    if (status == 0 && steps_s && !parse_count(&steps, "--steps", steps_s, 0, ITER_MAX_STEPS))
        status = 2;
    if (status == 0 && every_s && !parse_count(&every, "--every", every_s, 1, ITER_MAX_STEPS))
        status = 2;
    if (status == 0 && mem_s && !parse_count(&mem, "--ball-memory", mem_s, 0, 1L << 20))
        status = 2;
    long digits = REPORT_DEFAULT_DIGITS;
    if (status == 0 && digits_s && !parse_count(&digits, "--digits", digits_s, 1, ITER_DIGITS))
        status = 2;
    if (status != 0) {
        free(elts);
        return status;
    }

    nserr_t err;
    nserr_init(err);
    session_t s;
    session_init(s);
    pres_t G;
    pres_init(G);
    analysis_t A;
    analysis_init(A);
    iterate_map_t M;
    iterate_map_init(M);
    wordlen_t ball;
    int have_ball = 0;
    expr_struct *ex = NULL;
    fmpz *w0 = NULL;
    slong n = 0; /* pc generators, once the quotient is there */
    iter_maxroot mx = {0, NULL, NULL, NULL};
    char *growth = NULL; /* the growth rate as the output format prints it */
    slong nel = 0;
    char **names = NULL;
    const char *where_group = "--group", *where_map = "--map";
    const char *gtext = group, *mtext = map;
    int gline = 1, gcol = 1, mline = 1, mcol = 1;
    long c = 0;
    if (file) {
        if (session_load(s, file, err) != NS_OK) {
            status = iter_error(err, file);
            goto done;
        }
        where_group = where_map = file;
        gtext = s->group.text;
        gline = s->group.line;
        gcol = s->group.col;
        c = s->cls;
        mtext = s->map.text;
        mline = s->map.line;
        mcol = s->map.col;
        if (mtext == NULL) {
            fprintf(stderr, "nilstep iterate: %s: error: the session has no map to iterate\n",
                    file);
            status = 2;
            goto done;
        }
        if (steps < 0 && s->iterate_steps >= 0)
            steps = (long)s->iterate_steps;
    } else {
        char *end;
        c = strtol(cls, &end, 10);
        if (*cls == '\0' || *end != '\0' || c < 1 || c > NQ_MAX_CLASS) {
            char msg[200];
            snprintf(msg, sizeof msg, "--class takes a whole number from 1 to %d", NQ_MAX_CLASS);
            status = iter_usage(msg);
            goto done;
        }
    }
    if (steps < 0)
        steps = ITER_DEFAULT_STEPS;
    if (pres_parse(G, gtext, gline, gcol, err) != NS_OK) {
        status = iter_error(err, where_group);
        goto done;
    }
    /* the elements, parsed before any long computation */
    slong X = G->gens->n;
    int from_session = nelts == 0 && file && s->iterate_word.text;
    nel = nelts ? nelts : from_session ? 1 : X;
    ex = flint_malloc((size_t)FLINT_MAX(nel, 1) * sizeof(expr_struct));
    names = calloc((size_t)FLINT_MAX(nel, 1), sizeof(char *));
    if (names == NULL)
        abort();
    for (slong e = 0; e < nel; e++)
        expr_init(ex + e);
    for (slong e = 0; e < nel; e++) {
        const char *t;
        int line = 1, col = 1;
        const char *where = "--element";
        if (nelts)
            t = elts[e];
        else if (from_session) {
            t = s->iterate_word.text;
            line = s->iterate_word.line;
            col = s->iterate_word.col;
            where = file;
        } else
            t = G->gens->name[e];
        if (expr_parse(ex + e, t, line, col, G->gens, err) != NS_OK) {
            status = iter_error(err, where);
            goto done;
        }
        names[e] = expr_get_str(ex + e, G->gens);
    }

    iter_progress_state ps = {0};
    ns_progress_t prog = {iter_show_progress, &ps};
    const ns_progress_t *pp = isatty(2) ? &prog : NULL;
    ns_status st = analysis_set_group(A, G, (slong)c, pp, err);
    if (ps.shown)
        fputs("\r\033[K", stderr);
    if (st != NS_OK) {
        status = iter_error(err, where_group);
        goto done;
    }
    st = analysis_set_map_text(A, mtext, mline, mcol, pp, err);
    if (st != NS_OK) {
        status = iter_error(err, where_map);
        goto done;
    }
    if (!A->valid) {
        fprintf(stderr,
                "nilstep iterate: %s: error: the map is not well defined on the class-%ld "
                "quotient; these relators do not map to 1:\n",
                where_map, c);
        for (slong k = 0; k < A->nfail; k++)
            fprintf(stderr, "  %s  ->  %s\n", A->fail_relator[k], A->fail_image[k]);
        status = 1;
        goto done;
    }
    analysis_view_t V;
    analysis_get_view(V, A);
    const nq_struct *Q = V->quotient;
    n = V->npc;
    w0 = _fmpz_vec_init(FLINT_MAX(nel * n, 1));
    st = iterate_map_set(M, Q, V->endo, pp, err);
    if (st != NS_OK) {
        status = iter_error(err, where_map);
        goto done;
    }
    for (slong e = 0; e < nel; e++) {
        st = iterate_map_eval(M, w0 + e * n, ex + e, pp, err);
        if (st != NS_OK) {
            status = iter_error(err, "--element");
            goto done;
        }
    }
    wordlen_init(ball, Q, (size_t)mem << 20);
    have_ball = 1;
    ulong S = (ulong)steps, K = (ulong)every;
    mx.npts = (slong)((S + K - 1) / K + 1);
    mx.n = calloc((size_t)mx.npts, sizeof(ulong));
    mx.have = calloc((size_t)mx.npts, sizeof(int));
    if (mx.n == NULL || mx.have == NULL)
        abort();
    mx.max = _arb_vec_init(mx.npts);

    strbuf_t copy;
    strbuf_init(copy);
    growth = text_digits(&(iter_out){.fmt = fmt, .digits = digits},
                         strbuf_dup_str(A->growth_str ? A->growth_str : ""));
    iter_out o = {fmt, growth, V->class_reached, 1, 1, fmt == FMT_JSON && nel == 1 ? copy : NULL,
                  digits};
    if (fmt == FMT_JSON) {
        printf("{\"growth_rate\": \"%s\", \"growth_reason\": ", o.growth);
        strbuf_t b;
        strbuf_init(b);
        strbuf_put_json_str(b, A->growth_reason ? A->growth_reason : "");
        printf("%s, \"class\": %ld, \"elements\": [", b->s, (long)V->class_reached);
        strbuf_clear(b);
    } else if (fmt == FMT_CSV) {
        printf("element,n,word_length,norm,norm_root,growth_rate");
        for (slong j = 1; j <= V->class_reached; j++)
            printf(",digits_%ld", (long)j);
        printf(",normal_word\n");
    } else {
        printf("growth rate %s\n(%s)\n\n", o.growth, A->growth_reason ? A->growth_reason : "");
    }
    for (slong e = 0; e < nel && st == NS_OK; e++)
        st = run_element(&o, M, Q, n, ball, names[e], w0 + e * n, S, K, &mx, pp, err);
    if (ps.shown)
        fputs("\r\033[K", stderr);
    if (st != NS_OK) {
        if (fmt == FMT_JSON)
            printf("]}\n");
        strbuf_clear(copy);
        status = iter_error(err, "iterate");
        goto done;
    }
    if (fmt == FMT_JSON) {
        printf("\n  ],\n  \"max_root\": [");
        for (slong i = 0; i < mx.npts; i++) {
            printf("%s{\"n\": %lu, \"norm_root\": ", i ? ", " : "", (unsigned long)mx.n[i]);
            if (mx.have[i]) {
                char *t = ball_str(mx.max + i);
                printf("\"%s\"}", t);
                flint_free(t);
            } else {
                printf("null}");
            }
        }
        printf("],\n  \"ball\": {\"radius\": %ld, \"elements\": %lu, \"memory_bytes\": %lu, "
               "\"stopped\": ",
               (long)ball->complete_radius, (unsigned long)ball->count,
               (unsigned long)wordlen_memory(ball));
        if (ball->stop_reason)
            printf("\"%s\"}", ball->stop_reason);
        else
            printf("null}");
        /* the single-element case: d["steps"] is that element's list */
        if (nel == 1)
            printf(",\n  \"steps\": [%s\n  ]", copy->s);
        printf("\n}\n");
    }
    strbuf_clear(copy);
    if (fmt == FMT_TEXT) {
        if (nel > 1) {
            printf("\nlargest root over the elements (its limit is the growth rate %s)\n",
                   o.growth);
            for (slong i = 0; i < mx.npts; i++) {
                if (!mx.have[i])
                    continue;
                char *t = text_digits(&o, ball_str(mx.max + i));
                printf("  n = %lu: %s\n", (unsigned long)mx.n[i], t);
                flint_free(t);
            }
        }
        printf("\nword lengths: ball of radius %ld complete (%lu elements, %lu bytes)%s%s\n",
               (long)ball->complete_radius, (unsigned long)ball->count,
               (unsigned long)wordlen_memory(ball), ball->stop_reason ? "; stopped: " : "",
               ball->stop_reason ? ball->stop_reason : "");
    }
done:
    flint_free(growth);
    if (mx.max)
        _arb_vec_clear(mx.max, mx.npts);
    free(mx.n);
    free(mx.have);
    if (w0)
        _fmpz_vec_clear(w0, FLINT_MAX(nel * n, 1));
    if (have_ball)
        wordlen_clear(ball);
    if (ex) {
        for (slong e = 0; e < nel; e++)
            expr_clear(ex + e);
        flint_free(ex);
    }
    if (names) {
        for (slong e = 0; e < nel; e++)
            flint_free(names[e]);
        free(names);
    }
    iterate_map_clear(M);
    analysis_clear(A);
    pres_clear(G);
    session_clear(s);
    nserr_clear(err);
    free(elts);
    if (fflush(stdout) != 0) {
        perror("nilstep: writing the iterates");
        status = 2;
    }
    return status;
}
