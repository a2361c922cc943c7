/* cli.c — see cli.h.  The only place besides the explorer that prints. */
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>
#include "analysis.h"
#include "cli.h"
#include "memlimit.h"
#include "report.h"
#include "session.h"

void cli_print_help(FILE *out)
{
    fputs("usage: nilstep [FILE]\n"
          "       nilstep report [--format text|json|latex] FILE\n"
          "       nilstep report --group PRES --class C [--map MAP] [--format text|json|latex]\n"
          "                      [--power K] [--then MAP2] [--inverse]\n"
          "                      [--digits N] [--time-limit SECONDS] [--max-memory SIZE]\n"
          "       nilstep scan (FILE | --group PRES --class C) --family TEMPLATE\n"
          "                    --range NAME=LO..HI ... [options]   (nilstep scan --help)\n"
          "       nilstep scan --summary OUT\n"
          "       nilstep iterate [--steps N] [--every K] [--element WORD]... [--format F]\n"
          "                       [--ball-memory MIB] [--digits N]\n"
          "                       (FILE | --group PRES --class C --map MAP)\n"
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
          "    --digits N        significant digits of every decimal in the text and\n"
          "                      LaTeX reports, 1..30 (default 10; JSON keeps 30)\n"
          "    --time-limit S    stop after S seconds (exit 3, naming the stage)\n"
          "    --max-memory SIZE stop when FLINT and GMP would hold more than SIZE\n"
          "                      (e.g. 512M, 4G; default: half the physical memory)\n"
          "    --max-pc N        refuse a class whose quotient may need more than N\n"
          "                      pc generators (default 4000): the lower classes are\n"
          "                      reported, with exit status 3\n"
          "  scan                many maps of one group: a family with integer\n"
          "                      parameters, or JSON Lines on standard input, written\n"
          "                      as JSON Lines (nilstep scan --help)\n"
          "  iterate             the iterates alpha^n(w), n = 0..N: normal word, exact\n"
          "                      coordinates per layer, digits, homogeneous norm and its\n"
          "                      n-th root beside the growth rate, exact word length\n"
          "    --steps N         last step, 0..1000000000 (default: the session's iterate\n"
          "                      steps, else 20)\n"
          "    --every K         print every K-th step (and always the last)\n"
          "    --element WORD    the element w (repeatable; default: the session's iterate\n"
          "                      word, else every generator and the largest root)\n"
          "    --format F        text (default), json or csv (one row per element and n)\n"
          "    --ball-memory MIB memory for the word-length search (default 256; 0: none)\n"
          "    --digits N        significant digits of the text format's decimals, 1..30\n"
          "                      (default 10; JSON and CSV keep every digit)\n"
          "\n"
          "Conventions: [x,y] = x^-1 y^-1 x y, [x,y,z] = [[x,y],z], x^y = y^-1 x y;\n"
          "gamma_1 = G, gamma_(j+1) = [gamma_j, G]; layer j is gamma_j/gamma_(j+1),\n"
          "shown as Z^r + Z/d1 + ... with d1 | d2 | ...; matrices act on column\n"
          "vectors (column k holds the image of basis element k).\n"
          "\n"
          "Exit status of report: 0 done, 1 the map is not well defined on the\n"
          "class-c quotient, 2 bad input or usage, 3 a resource limit was hit,\n"
          "4 an internal error (a bug: please report it).\n",
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
    if (err->status == NS_ERR_INTERNAL)
        return 4;
    if (err->status == NS_ERR_LIMIT || err->status == NS_ERR_CANCELLED)
        return 3;
    return 2;
}

/* Progress and the time limit: every call from the engine lands here. */
typedef struct {
    int shown;         /* a progress line is on stderr */
    int tty;           /* stderr is a terminal: show progress */
    double limit;      /* --time-limit in seconds, 0 none */
    double start;      /* when the run began */
    double last_shown; /* when the line was last written */
    int timed_out;
    char stage[128]; /* the last stage the engine named */
} progress_state;

static double cli_now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* Shows "nilstep: STAGE [NN%]" on a terminal (at most ten times a second)
 * and stops the computation when the time limit has passed. */
static int show_progress(void *ctx, const char *stage, double fraction)
{
    progress_state *p = ctx;
    double now = cli_now();
    if (stage)
        snprintf(p->stage, sizeof p->stage, "%s", stage);
    if (p->limit > 0 && now - p->start > p->limit) {
        p->timed_out = 1;
        return 1;
    }
    if (p->tty && (stage || now - p->last_shown >= 0.1)) {
        p->last_shown = now;
        if (fraction >= 0 && fraction <= 1)
            fprintf(stderr, "\r\033[Knilstep: %s  %3.0f%%", p->stage, 100 * fraction);
        else
            fprintf(stderr, "\r\033[Knilstep: %s", p->stage);
        fflush(stderr);
        p->shown = 1;
    }
    return 0;
}

static void progress_erase(progress_state *p)
{
    if (p->shown)
        fputs("\r\033[K", stderr);
    p->shown = 0;
}

/* The exit status for a failed stage: a time-limit stop names the stage
 * the engine was in; anything else goes through report_error. */
static int stage_error(progress_state *p, const nserr_t err, const char *where, const char *doing)
{
    progress_erase(p);
    if (p->timed_out && err->status == NS_ERR_CANCELLED) {
        fprintf(stderr, "nilstep report: time limit of %g s reached while %s (%s)\n", p->limit,
                doing, p->stage[0] ? p->stage : "starting");
        return 3;
    }
    return report_error(err, where);
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
        analysis_view_t V;
        analysis_get_view(V, A);
        slong X = V->pres->gens->n;
        expr_struct *im = flint_malloc(FLINT_MAX(X, 1) * sizeof(expr_struct));
        for (slong x = 0; x < X; x++)
            expr_init(im + x);
        st = pres_parse_map(im, V->pres, then, 1, 1, err);
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

/* What `nilstep report` was asked, as given (values unparsed). */
typedef struct {
    const char *format, *file, *group, *cls, *map, *power, *then;
    const char *time_limit, *max_memory, *max_pc, *digits;
    int inverse;
} cli_options;

/* Fills o from the arguments.  Returns -1 when they are usable, else the
 * exit status (0 after --help, 2 after a usage message).  A missing value
 * is named by its option (an argument starting with "--" is never taken as
 * a value); an option given twice is an error. */
static int cli_parse_args(cli_options *o, int argc, char **argv)
{
    static const struct {
        const char *name;
        size_t slot; /* offset of the const char * in cli_options */
    } opts[] = {
        {"--format", offsetof(cli_options, format)},
        {"--group", offsetof(cli_options, group)},
        {"--class", offsetof(cli_options, cls)},
        {"--map", offsetof(cli_options, map)},
        {"--power", offsetof(cli_options, power)},
        {"--then", offsetof(cli_options, then)},
        {"--time-limit", offsetof(cli_options, time_limit)},
        {"--max-memory", offsetof(cli_options, max_memory)},
        {"--max-pc", offsetof(cli_options, max_pc)},
        {"--digits", offsetof(cli_options, digits)},
    };
    char msg[300];
    memset(o, 0, sizeof *o);
    for (int i = 1; i < argc; i++) {
        const char *a = argv[i];
        size_t k = 0, nopts = sizeof opts / sizeof opts[0];
        while (k < nopts && strcmp(a, opts[k].name) != 0)
            k++;
        if (k < nopts) {
            const char **slot = (const char **)((char *)o + opts[k].slot);
            if (*slot != NULL) {
                snprintf(msg, sizeof msg, "option '%s' given twice", a);
                return usage(msg);
            }
            if (i + 1 >= argc || strncmp(argv[i + 1], "--", 2) == 0) {
                snprintf(msg, sizeof msg, "option '%s' needs a value", a);
                return usage(msg);
            }
            *slot = argv[++i];
        } else if (!strcmp(a, "--inverse")) {
            if (o->inverse)
                return usage("option '--inverse' given twice");
            o->inverse = 1;
        } else if (!strcmp(a, "--help") || !strcmp(a, "-h")) {
            cli_print_help(stdout);
            return 0;
        } else if (a[0] == '-' && a[1] != '\0') {
            snprintf(msg, sizeof msg, "unknown option '%.200s'", a);
            return usage(msg);
        } else if (o->file) {
            return usage("only one FILE may be given");
        } else {
            o->file = a;
        }
    }
    if (o->format == NULL)
        o->format = "text";
    if (report_parse_format(o->format) < 0)
        return usage("--format takes text, json or latex");
    if (o->file && (o->group || o->cls || o->map))
        return usage("give either FILE or --group/--class/--map, not both");
    if (!o->file && !o->group)
        return usage("no FILE and no --group given");
    if (o->group && !o->cls)
        return usage("--group needs --class");
    if (o->time_limit) {
        char *end;
        double t = strtod(o->time_limit, &end);
        if (*o->time_limit == '\0' || *end != '\0' || !(t > 0) || t > 1e9)
            return usage("--time-limit takes a positive number of seconds");
    }
    if (o->max_pc) {
        char *end;
        long m = strtol(o->max_pc, &end, 10);
        if (*o->max_pc == '\0' || *end != '\0' || m < 1 || m > 1000000)
            return usage("--max-pc takes a whole number of pc generators from 1 to 1000000");
    }
    if (o->digits) {
        char *end;
        long d = strtol(o->digits, &end, 10);
        if (*o->digits == '\0' || *end != '\0' || d < 1 || d > ANALYSIS_DIGITS) {
            snprintf(msg, sizeof msg,
                     "--digits %.40s: the number of significant digits must be a whole number "
                     "from 1 to %d",
                     o->digits, ANALYSIS_DIGITS);
            return usage(msg);
        }
    }
    if (o->max_memory) {
        size_t m;
        if (memlimit_parse_size(&m, o->max_memory) != 0)
            return usage("--max-memory takes a size such as 512M or 4G (K, M, G, T: powers "
                         "of 1024)");
    }
    return -1;
}

/* Runs the report o describes; returns the exit status. */
static int cli_run(const cli_options *o)
{
    int fmt = report_parse_format(o->format);
    if (o->max_memory) {
        size_t m = 0;
        memlimit_parse_size(&m, o->max_memory);
        memlimit_set_max_memory(m, "the --max-memory limit");
    }
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
    progress_state ps;
    memset(&ps, 0, sizeof ps);
    ps.tty = isatty(2);
    ps.limit = o->time_limit ? strtod(o->time_limit, NULL) : 0;
    ps.start = cli_now();
    ns_progress_t prog = {show_progress, &ps};
    const ns_progress_t *pp = ps.tty || ps.limit > 0 ? &prog : NULL;
    if (o->file) {
        if (session_load(s, o->file, err) != NS_OK) {
            status = report_error(err, o->file);
            goto done;
        }
        where_group = where_map = o->file;
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
        gtext = o->group;
        mtext = o->map;
        char *end;
        c = strtol(o->cls, &end, 10);
        if (*o->cls == '\0' || *end != '\0' || c < 1 || c > NQ_MAX_CLASS) {
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
    char doing[64];
    snprintf(doing, sizeof doing, "computing the class-%ld quotient", c);
    if (o->max_pc)
        A->max_pc = strtol(o->max_pc, NULL, 10);
    ns_status st = analysis_set_group(A, G, (slong)c, pp, err);
    int cut_short = 0; /* the pc-generator limit stopped below class c */
    if (st == NS_ERR_LIMIT && A->has_group) {
        progress_erase(&ps);
        fprintf(stderr, "nilstep report: %s (--max-pc raises the limit)\n", err->msg);
        cut_short = 1;
    } else if (st != NS_OK) {
        status = stage_error(&ps, err, where_group, doing);
        goto done;
    }
    progress_erase(&ps);
    if (mtext) {
        st = analysis_set_map_text(A, mtext, mline, mcol, pp, err);
        if (st != NS_OK) {
            status = stage_error(&ps, err, where_map, "analysing the map");
            goto done;
        }
        progress_erase(&ps);
        status = derived_map(A, o->power, o->then, pp, err);
        if (status != 0) {
            if (ps.timed_out) {
                progress_erase(&ps);
                fprintf(stderr, "nilstep report: time limit of %g s reached while %s (%s)\n",
                        ps.limit, "deriving the map", ps.stage);
                status = 3;
            }
            goto done;
        }
        progress_erase(&ps);
        if (o->inverse) {
            st = analysis_set_inverse(A, pp, err);
            if (st != NS_OK) {
                status = stage_error(&ps, err, "--inverse", "inverting the map");
                goto done;
            }
            progress_erase(&ps);
        }
    } else if (o->power || o->then || o->inverse) {
        status = usage("--power, --then and --inverse need a map");
        goto done;
    }
    char *out = report_get_str_digits(A, (report_format)fmt, title,
                                      o->digits ? strtol(o->digits, NULL, 10)
                                                : REPORT_DEFAULT_DIGITS);
    fputs(out, stdout);
    flint_free(out);
    if (A->has_map && !A->valid)
        status = 1;
    else if (cut_short)
        status = 3;
    else if (A->has_map && A->limit_hit) {
        /* the report is written, but a named counting limit left a number out */
        fprintf(stderr, "nilstep report: %s\n", A->limit->msg);
        status = 3;
    }
done:
    progress_erase(&ps);
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

int cli_report(int argc, char **argv)
{
    cli_options o;
    int status = cli_parse_args(&o, argc, argv);
    return status >= 0 ? status : cli_run(&o);
}
