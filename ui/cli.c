/* cli.c — see cli.h.  The only place besides the explorer that prints. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>
#include "analysis.h"
#include "cli.h"
#include "report.h"
#include "session.h"

void cli_print_help(FILE *out)
{
    fputs("usage: nilstep [FILE]\n"
          "       nilstep report [--format text|json|latex] FILE\n"
          "       nilstep report --group PRES --class C [--map MAP] [--format text|json|latex]\n"
          "                      [--power K] [--then MAP2] [--inverse]\n"
          "       nilstep scan (FILE | --group PRES --class C) --family TEMPLATE\n"
          "                    --range NAME=LO..HI ... [options]   (nilstep scan --help)\n"
          "       nilstep scan --summary OUT\n"
          "       nilstep --help | --version\n"
          "\n"
          "Explores an endomorphism of a finitely presented group on its class-c\n"
          "nilpotent quotient: the lower central series layer by layer, the matrices\n"
          "the map induces on the layers, their spectral radii, the bounds and the\n"
          "exact growth rate, entropy, Lefschetz, Nielsen and Reidemeister numbers.\n"
          "\n"
          "  nilstep [FILE]      the terminal explorer on a session file (format 1);\n"
          "                      without FILE, the built-in default scenario\n"
          "  report              the same analysis as text, JSON or LaTeX\n"
          "    --format F        text (default), json or latex\n"
          "    --group PRES      a presentation, e.g. '<a, b | [a,b,a], [a,b,b]>'\n"
          "    --class C         the nilpotency class, 1..64\n"
          "    --map MAP         images of the generators, e.g. 'a -> a^2 b, b -> a b'\n"
          "    --power K         analyse the K-th power of the map instead (K < 0: of\n"
          "                      its inverse, for automorphisms)\n"
          "    --then MAP2       analyse the composite: first the map, then MAP2\n"
          "    --inverse         also compute the images of the inverse of the\n"
          "                      (resulting) map, for automorphisms\n"
          "  scan                many maps of one group: a family with integer\n"
          "                      parameters, or JSON Lines on standard input, written\n"
          "                      as JSON Lines (nilstep scan --help)\n"
          "\n"
          "Conventions: [x,y] = x^-1 y^-1 x y, [x,y,z] = [[x,y],z], x^y = y^-1 x y;\n"
          "gamma_1 = G, gamma_(j+1) = [gamma_j, G]; layer j is gamma_j/gamma_(j+1),\n"
          "shown as Z^r + Z/d1 + ... with d1 | d2 | ...; matrices act on column\n"
          "vectors (column k holds the image of basis element k).\n"
          "\n"
          "Exit status of report: 0 done, 1 the map is not well defined on the\n"
          "class-c quotient, 2 bad input or usage, 3 a resource limit was hit.\n",
          out);
}

static int usage(const char *msg)
{
    fprintf(stderr, "nilstep report: %s\n", msg);
    fputs("usage: nilstep report [--format text|json|latex] FILE\n"
          "       nilstep report --group PRES --class C [--map MAP] [--format F]\n"
          "(nilstep --help for more)\n",
          stderr);
    return 2;
}

static int report_error(const nserr_t err, const char *where)
{
    char buf[700];
    nserr_format(buf, sizeof buf, err, where);
    fprintf(stderr, "%s\n", buf);
    if (err->status == NS_ERR_LIMIT || err->status == NS_ERR_CANCELLED)
        return 3;
    return 2;
}

typedef struct {
    int shown;
} progress_state;

/* Progress on stderr, only when it is a terminal. */
static int show_progress(void *ctx, const char *stage, double fraction)
{
    progress_state *p = ctx;
    (void)fraction;
    if (stage) {
        fprintf(stderr, "\r\033[Knilstep: %s", stage);
        fflush(stderr);
        p->shown = 1;
    }
    return 0;
}

/* Replaces the analysed map by alpha^k (--power) and then by beta o alpha
 * (--then MAP: first the map, then MAP), each handed over as a value.
 * Returns an exit status. */
static int derived_map(analysis_t A, const char *power, const char *then,
                       const ns_progress_t *pp, nserr_t err)
{
    if ((power || then) && !A->valid) {
        fprintf(stderr, "nilstep report: --power and --then need a well-defined map\n");
        return 1;
    }
    ns_status st = NS_OK;
    endo_t E;
    endo_init(E);
    if (power) {
        char *end;
        long k = strtol(power, &end, 10);
        if (*power == '\0' || *end != '\0' || k < -1000000 || k > 1000000)
            return usage("--power takes a whole number from -1000000 to 1000000");
        if (k < 0) {
            /* alpha^-k = (alpha^-1)^k, for automorphisms */
            st = analysis_inverse_endo(E, A, pp, err);
            if (st == NS_OK)
                st = analysis_set_map_endo(A, E, pp, err);
            k = -k;
        }
        if (st == NS_OK)
            st = analysis_power_endo(E, A, (ulong)k, pp, err);
        if (st == NS_OK)
            st = analysis_set_map_endo(A, E, pp, err);
        if (st != NS_OK) {
            endo_clear(E);
            return report_error(err, "--power");
        }
    }
    if (then) {
        slong X = A->nq->pres->gens->n;
        expr_struct *im = flint_malloc(FLINT_MAX(X, 1) * sizeof(expr_struct));
        for (slong x = 0; x < X; x++)
            expr_init(im + x);
        st = pres_parse_map(im, A->nq->pres, then, 1, 1, err);
        if (st == NS_OK)
            st = analysis_compose_endo(E, A, im, pp, err);
        for (slong x = 0; x < X; x++)
            expr_clear(im + x);
        flint_free(im);
        if (st == NS_OK)
            st = analysis_set_map_endo(A, E, pp, err);
        if (st != NS_OK) {
            endo_clear(E);
            return report_error(err, "--then");
        }
    }
    endo_clear(E);
    return 0;
}

int cli_report(int argc, char **argv)
{
    const char *format = "text", *file = NULL, *group = NULL, *cls = NULL, *map = NULL;
    const char *power = NULL, *then = NULL;
    int inverse = 0;
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
        else if (!strcmp(a, "--power"))
            slot = &power;
        else if (!strcmp(a, "--then"))
            slot = &then;
        else if (!strcmp(a, "--inverse")) {
            inverse = 1;
            continue;
        } else if (!strcmp(a, "--help") || !strcmp(a, "-h")) {
            cli_print_help(stdout);
            return 0;
        } else if (a[0] == '-' && a[1] != '\0') {
            char msg[300];
            snprintf(msg, sizeof msg, "unknown option '%.200s'", a);
            return usage(msg);
        } else if (file) {
            return usage("only one FILE may be given");
        } else {
            file = a;
            continue;
        }
        if (i + 1 >= argc) {
            char msg[300];
            snprintf(msg, sizeof msg, "option '%s' needs a value", a);
            return usage(msg);
        }
        *slot = argv[++i];
    }
    int fmt = report_parse_format(format);
    if (fmt < 0)
        return usage("--format takes text, json or latex");
    if (file && (group || cls || map))
        return usage("give either FILE or --group/--class/--map, not both");
    if (!file && !group)
        return usage("no FILE and no --group given");
    if (group && !cls)
        return usage("--group needs --class");

    nserr_t err;
    nserr_init(err);
    session_t s;
    session_init(s);
    pres_t G;
    pres_init(G);
    analysis_t A;
    analysis_init(A);
    int status = 0;
    const char *where_group, *where_map;
    const char *gtext, *mtext = NULL, *title = NULL;
    int gline = 1, gcol = 1, mline = 1, mcol = 1;
    long c = 0;
    if (file) {
        if (session_load(s, file, err) != NS_OK) {
            status = report_error(err, file);
            goto done;
        }
        where_group = where_map = file;
        gtext = s->group.text;
        gline = s->group.line;
        gcol = s->group.col;
        c = s->cls;
        if (s->map.text) {
            mtext = s->map.text;
            mline = s->map.line;
            mcol = s->map.col;
        }
        title = s->title.text;
    } else {
        where_group = "--group";
        where_map = "--map";
        gtext = group;
        mtext = map;
        char *end;
        c = strtol(cls, &end, 10);
        if (*cls == '\0' || *end != '\0' || c < 1 || c > NQ_MAX_CLASS) {
            char msg[200];
            snprintf(msg, sizeof msg, "--class takes a whole number from 1 to %d", NQ_MAX_CLASS);
            status = usage(msg);
            goto done;
        }
    }
    if (pres_parse(G, gtext, gline, gcol, err) != NS_OK) {
        status = report_error(err, where_group);
        goto done;
    }
    progress_state ps = {0};
    ns_progress_t prog = {show_progress, &ps};
    const ns_progress_t *pp = isatty(2) ? &prog : NULL;
    ns_status st = analysis_set_group(A, G, (slong)c, pp, err);
    if (ps.shown)
        fputs("\r\033[K", stderr);
    if (st != NS_OK) {
        status = report_error(err, where_group);
        goto done;
    }
    if (mtext) {
        st = analysis_set_map_text(A, mtext, mline, mcol, pp, err);
        if (ps.shown)
            fputs("\r\033[K", stderr);
        if (st != NS_OK) {
            status = report_error(err, where_map);
            goto done;
        }
        status = derived_map(A, power, then, pp, err);
        if (status != 0)
            goto done;
        if (inverse) {
            st = analysis_set_inverse(A, pp, err);
            if (ps.shown)
                fputs("\r\033[K", stderr);
            if (st != NS_OK) {
                status = report_error(err, "--inverse");
                goto done;
            }
        }
    } else if (power || then || inverse) {
        status = usage("--power, --then and --inverse need a map");
        goto done;
    }
    char *out = report_get_str(A, (report_format)fmt, title);
    fputs(out, stdout);
    flint_free(out);
    if (A->has_map && !A->valid)
        status = 1;
    else if (A->has_map && A->limit_hit) {
        /* the report is written, but a named counting limit left a number out */
        fprintf(stderr, "nilstep report: %s\n", A->limit->msg);
        status = 3;
    }
done:
    analysis_clear(A);
    pres_clear(G);
    session_clear(s);
    nserr_clear(err);
    if (fflush(stdout) != 0) {
        perror("nilstep: writing the report");
        status = 2;
    }
    return status;
}
