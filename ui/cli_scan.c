/* cli_scan.c — `nilstep scan`: the command line around src/scan.h.  The
 * engine analyses and formats each member; this file reads the arguments
 * and the input lines, writes the result lines and the summaries. */
#include <errno.h>
#include <fcntl.h>
#include <signal.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>
#include "cli.h"
#include "jsonl.h"
#include "scan.h"
#include "session.h"
#include "strbuf.h"

#define MAX_RANGES 64
#define MAX_LINE (1 << 20) /* longest input line read */

static int scan_usage(const char *msg)
{
    fprintf(stderr, "nilstep scan: %s\n", msg);
    fputs("usage: nilstep scan (FILE | --group PRES --class C) --family TEMPLATE\n"
          "                    --range NAME=LO..HI ... [--sample N --seed S]\n"
          "                    [--only PROPERTY ...] [--growth-between A B] [--jobs N]\n"
          "                    [--shard K/N | --shard slurm] [--resume OUT] [--output OUT]\n"
          "       nilstep scan (FILE | --group PRES --class C) [options] < MAPS.jsonl\n"
          "       nilstep scan --summary OUT\n"
          "(nilstep scan --help for more)\n",
          stderr);
    return 2;
}

void cli_print_scan_help(FILE *out)
{
    fputs("usage: nilstep scan (FILE | --group PRES --class C) --family TEMPLATE\n"
          "                    --range NAME=LO..HI ... [--sample N --seed S]\n"
          "                    [--only PROPERTY ...] [--growth-between A B] [--jobs N]\n"
          "                    [--shard K/N | --shard slurm] [--resume OUT] [--output OUT]\n"
          "       nilstep scan (FILE | --group PRES --class C) [options] < MAPS.jsonl\n"
          "       nilstep scan --summary OUT\n"
          "\n"
          "Analyses many maps of one group; the quotient is computed once.\n"
          "  --family TEMPLATE    a map whose exponents may be integer parameters,\n"
          "                       e.g. 'a -> a^p b^q, b -> a^r b^s'\n"
          "  --range NAME=LO..HI  the inclusive range of one parameter (one per parameter)\n"
          "  --sample N --seed S  N points drawn uniformly from the box instead of all\n"
          "  --only PROPERTY      keep members with this property (repeatable, all must\n"
          "                       hold): valid, automorphism, injective, hyperbolic,\n"
          "                       expanding, finite-reidemeister\n"
          "  --growth-between A B keep members whose growth rate lies in [A, B]\n"
          "  --jobs N             threads (default: the number of cores); the output does\n"
          "                       not depend on N\n"
          "  --shard K/N          only the K-th of N disjoint slices of the family\n"
          "  --shard slurm        the slice of this task of a Slurm job array\n"
          "  --resume OUT         append to OUT, skipping the members already in it\n"
          "  --output OUT         write the results to OUT instead of standard output\n"
          "  --summary OUT        read a result file: counts and growth rates\n"
          "Without --family, maps are read from standard input, one JSON object per\n"
          "line with \"id\" and \"map\".  Output: JSON Lines, one object per member kept,\n"
          "in member order.  Exit status: 0 done, 1 some input lines or members\n"
          "failed (messages on stderr), 2 bad input or usage, 3 a limit was hit or\n"
          "SIGINT/SIGTERM stopped the run (lines stay whole; --resume goes on),\n"
          "4 an internal error (a bug: please report it).\n",
          out);
}

static int scan_error(const nserr_t err, const char *where)
{
    char buf[700];
    nserr_format(buf, sizeof buf, err, where);
    fprintf(stderr, "%s\n", buf);
    if (err->status == NS_ERR_INTERNAL)
        return 4;
    return err->status == NS_ERR_LIMIT || err->status == NS_ERR_CANCELLED ? 3 : 2;
}

/* Reads one line of any length (up to MAX_LINE); NULL at the end.  *complete
 * is 0 when the line had no newline (the end of a file cut short). */
static char *read_line(FILE *f, int *complete)
{
    strbuf_t b;
    strbuf_init(b);
    int c, any = 0;
    *complete = 0;
    while ((c = getc(f)) != EOF) {
        any = 1;
        if (c == '\n') {
            *complete = 1;
            break;
        }
        if (b->len < MAX_LINE) {
            char ch = (char)c;
            strbuf_putn(b, &ch, 1);
        }
    }
    if (!any) {
        strbuf_clear(b);
        return NULL;
    }
    return strbuf_take(b);
}

static int parse_ulong(unsigned long long *out, const char *s, unsigned long long max)
{
    char *end;
    if (*s < '0' || *s > '9')
        return 0;
    errno = 0;
    unsigned long long v = strtoull(s, &end, 10);
    if (*end != '\0' || errno || v > max)
        return 0;
    *out = v;
    return 1;
}

/* SIGINT or SIGTERM (what a batch system sends before it kills a job): stop
 * after the member being written, keep every line whole, say how to go on. */
static volatile sig_atomic_t scan_interrupted;

static void on_stop_signal(int sig)
{
    (void)sig;
    scan_interrupted = 1;
}

/* ---- Resume: what an earlier run already wrote -------------------------- */

typedef struct {
    long long last_index; /* family: the largest member number seen; -1 none */
    char **ids;           /* maps from stdin: the ids seen (JSON text), sorted */
    size_t nids, capids;
} done_set;

static int cmp_str(const void *a, const void *b)
{
    return strcmp(*(char *const *)a, *(char *const *)b);
}

/* Reads OUT; cuts off a last line without newline (a write cut short).
 * Returns 0, or an exit status after a message. */
static int read_done(done_set *d, const char *path, const char *group_json, long cls)
{
    d->last_index = -1;
    FILE *f = fopen(path, "r");
    if (!f) {
        if (errno == ENOENT)
            return 0;
        fprintf(stderr, "nilstep scan: %s: %s\n", path, strerror(errno));
        return 2;
    }
    jsonl_obj_t o;
    jsonl_obj_init(o);
    nserr_t err;
    nserr_init(err);
    long keep = 0, lineno = 0;
    int complete, status = 0;
    char *line;
    while ((line = read_line(f, &complete)) != NULL) {
        lineno++;
        if (!complete) {
            flint_free(line);
            break;
        }
        if (jsonl_parse(o, line, err) != NS_OK) {
            fprintf(stderr, "%s:%ld:%d: error: not a scan result: %s\n", path, lineno, err->col,
                    err->msg);
            status = 2;
            flint_free(line);
            break;
        }
        const char *g = jsonl_get(o, "group"), *c = jsonl_get(o, "class");
        if ((g && strcmp(g, group_json)) || (c && atol(c) != cls)) {
            fprintf(stderr,
                    "%s:%ld:1: error: a result of another group or class; resume a scan with "
                    "the same group and class\n",
                    path, lineno);
            status = 2;
            flint_free(line);
            break;
        }
        const char *ix = jsonl_get(o, "index"), *id = jsonl_get(o, "id");
        unsigned long long v;
        if (ix && parse_ulong(&v, ix, (unsigned long long)1 << 62)) {
            if ((long long)v > d->last_index)
                d->last_index = (long long)v;
        } else if (id) {
            if (d->nids == d->capids) {
                d->capids = d->capids ? 2 * d->capids : 64;
                d->ids = flint_realloc(d->ids, d->capids * sizeof(char *));
            }
            d->ids[d->nids++] = strbuf_dup_str(id);
        } else {
            fprintf(stderr, "%s:%ld:1: error: a scan result needs \"index\" or \"id\"\n", path,
                    lineno);
            status = 2;
            flint_free(line);
            break;
        }
        keep = ftell(f);
        flint_free(line);
    }
    fclose(f);
    jsonl_obj_clear(o);
    nserr_clear(err);
    if (status == 0) {
        struct stat sb;
        if (stat(path, &sb) == 0 && sb.st_size > keep && truncate(path, keep) != 0) {
            fprintf(stderr, "nilstep scan: %s: %s\n", path, strerror(errno));
            status = 2;
        }
    }
    if (d->nids)
        qsort(d->ids, d->nids, sizeof(char *), cmp_str);
    return status;
}

static int done_has_id(const done_set *d, const char *id)
{
    return d->nids && bsearch(&id, d->ids, d->nids, sizeof(char *), cmp_str) != NULL;
}

static void done_clear(done_set *d)
{
    for (size_t k = 0; k < d->nids; k++)
        flint_free(d->ids[k]);
    flint_free(d->ids);
}

/* ---- Input from stdin, output, progress --------------------------------- */

typedef struct {
    FILE *in;
    ulong lineno;
    const done_set *done;
} input_ctx;

static int next_input(void *ctx, scan_item *item)
{
    input_ctx *c = ctx;
    for (;;) {
        int complete;
        char *line = read_line(c->in, &complete);
        if (!line)
            return 0;
        c->lineno++;
        const char *p = line;
        while (*p == ' ' || *p == '\t' || *p == '\r')
            p++;
        if (*p == '\0') {
            flint_free(line);
            continue;
        }
        item->index = c->lineno;
        jsonl_obj_t o;
        jsonl_obj_init(o);
        nserr_t err;
        nserr_init(err);
        if (jsonl_parse(o, line, err) != NS_OK) {
            item->failed = 1;
            snprintf(item->msg, sizeof item->msg, "column %d: %.300s", err->col, err->msg);
        } else {
            const char *id = jsonl_get(o, "id"), *map = jsonl_get(o, "map");
            char *text = jsonl_string_value(map);
            if (!id) {
                item->failed = 1;
                snprintf(item->msg, sizeof item->msg, "the object has no \"id\"");
            } else if (!text) {
                item->failed = 1;
                snprintf(item->msg, sizeof item->msg,
                         map ? "\"map\" is not a string" : "the object has no \"map\"");
            } else if (done_has_id(c->done, id)) {
                flint_free(text);
                jsonl_obj_clear(o);
                nserr_clear(err);
                flint_free(line);
                memset(item, 0, sizeof(scan_item));
                continue; /* already in the output being resumed */
            } else {
                item->id_json = strbuf_dup_str(id);
                item->map_text = text;
                text = NULL;
            }
            flint_free(text);
        }
        jsonl_obj_clear(o);
        nserr_clear(err);
        flint_free(line);
        return 1;
    }
}

typedef struct {
    int fd;
    int write_failed;
    const char *out_name;
    ulong tried, valid, kept, failed;
    int from_stdin;
    /* progress */
    int tty;
    ulong total; /* 0: unknown */
    double start, last_shown;
} out_ctx;

static double now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* One whole line with one write where possible, then flushed to the file. */
static int write_all(int fd, const char *s, size_t n)
{
    while (n > 0) {
        ssize_t w = write(fd, s, n);
        if (w < 0) {
            if (errno == EINTR)
                continue;
            return -1;
        }
        s += w;
        n -= (size_t)w;
    }
    return 0;
}

static void emit(void *ctx, const scan_result *r)
{
    out_ctx *c = ctx;
    c->tried++;
    if (r->status != NS_OK) {
        c->failed++;
        if (c->tty)
            fputs("\r\033[K", stderr);
        if (c->from_stdin && r->err->line == 0)
            fprintf(stderr, "<stdin>:%lu: error: %s\n", (unsigned long)r->index, r->err->msg);
        else if (c->from_stdin)
            fprintf(stderr, "<stdin>:%lu: error: in \"map\" at column %d: %s\n",
                    (unsigned long)r->index, r->err->col, r->err->msg);
        else
            fprintf(stderr, "nilstep scan: member %lu: %s\n", (unsigned long)r->index,
                    r->err->msg);
        return;
    }
    c->valid += r->valid != 0;
    if (!r->kept || c->write_failed)
        return;
    c->kept++;
    size_t n = strlen(r->line);
    char *buf = flint_malloc(n + 2);
    memcpy(buf, r->line, n);
    buf[n] = '\n';
    buf[n + 1] = '\0';
    if (write_all(c->fd, buf, n + 1) != 0) {
        fprintf(stderr, "nilstep scan: writing %s: %s\n", c->out_name, strerror(errno));
        c->write_failed = 1;
    }
    flint_free(buf);
}

static int tick(void *ctx, ulong done)
{
    out_ctx *c = ctx;
    (void)done;
    if (c->write_failed || scan_interrupted)
        return 1;
    if (!c->tty)
        return 0;
    double t = now();
    if (t - c->last_shown < 0.2)
        return 0;
    c->last_shown = t;
    double rate = (double)c->tried / FLINT_MAX(t - c->start, 1e-9);
    if (c->total) {
        double left = (double)(c->total - FLINT_MIN(c->tried, c->total)) / FLINT_MAX(rate, 1e-9);
        fprintf(stderr, "\r\033[Knilstep scan: %lu/%lu  %.0f/s  %.0f s left",
                (unsigned long)c->tried, (unsigned long)c->total, rate, left);
    } else {
        fprintf(stderr, "\r\033[Knilstep scan: %lu  %.0f/s", (unsigned long)c->tried, rate);
    }
    return 0;
}

/* ---- --summary ----------------------------------------------------------- */

typedef struct {
    char *rate;
    double v;
    ulong count;
} rate_count;

static int cmp_rate(const void *a, const void *b)
{
    const rate_count *x = a, *y = b;
    if (x->v != y->v)
        return x->v < y->v ? -1 : 1;
    return strcmp(x->rate, y->rate);
}

static int summary(const char *path)
{
    FILE *f = fopen(path, "r");
    if (!f) {
        fprintf(stderr, "nilstep scan: %s: %s\n", path, strerror(errno));
        return 2;
    }
    static const char *const flags[] = {"automorphism", "injective", "hyperbolic", "expanding"};
    ulong members = 0, valid = 0, nflag[4] = {0}, finite_reid = 0;
    rate_count *rc = NULL;
    size_t nrc = 0, caprc = 0;
    jsonl_obj_t o;
    jsonl_obj_init(o);
    nserr_t err;
    nserr_init(err);
    int complete, status = 0;
    long lineno = 0;
    char *line;
    while ((line = read_line(f, &complete)) != NULL) {
        lineno++;
        if (jsonl_parse(o, line, err) != NS_OK) {
            fprintf(stderr, "%s:%ld:%d: error: %s\n", path, lineno, err->col, err->msg);
            status = 1;
            flint_free(line);
            continue;
        }
        flint_free(line);
        members++;
        const char *v = jsonl_get(o, "valid");
        if (!v || strcmp(v, "true"))
            continue;
        valid++;
        for (int k = 0; k < 4; k++) {
            const char *x = jsonl_get(o, flags[k]);
            nflag[k] += x && !strcmp(x, "true");
        }
        const char *re = jsonl_get(o, "reidemeister");
        finite_reid += re && re[0] >= '0' && re[0] <= '9';
        char *g = jsonl_string_value(jsonl_get(o, "growth_rate"));
        if (!g)
            continue;
        size_t k = 0;
        while (k < nrc && strcmp(rc[k].rate, g))
            k++;
        if (k == nrc) {
            if (nrc == caprc) {
                caprc = caprc ? 2 * caprc : 16;
                rc = flint_realloc(rc, caprc * sizeof(rate_count));
            }
            rc[nrc].rate = g;
            rc[nrc].v = strtod(g, NULL);
            rc[nrc].count = 0;
            nrc++;
        } else {
            flint_free(g);
        }
        rc[k].count++;
    }
    fclose(f);
    jsonl_obj_clear(o);
    nserr_clear(err);
    printf("members              %lu\n", (unsigned long)members);
    printf("valid                %lu\n", (unsigned long)valid);
    printf("not well defined     %lu\n", (unsigned long)(members - valid));
    for (int k = 0; k < 4; k++)
        printf("%-20s %lu\n", flags[k], (unsigned long)nflag[k]);
    printf("finite Reidemeister  %lu\n", (unsigned long)finite_reid);
    qsort(rc, nrc, sizeof(rate_count), cmp_rate);
    printf("\ngrowth rate                       members\n");
    for (size_t k = 0; k < nrc; k++) {
        printf("%-33s %lu\n", rc[k].rate, (unsigned long)rc[k].count);
        flint_free(rc[k].rate);
    }
    flint_free(rc);
    return status;
}

/* ---- The command --------------------------------------------------------- */

typedef struct {
    const char *file, *group, *cls, *family, *sample, *seed, *jobs, *shard, *resume, *output;
    const char *summary, *grow_a, *grow_b;
    const char *range[MAX_RANGES];
    int nrange;
    const char *only[16];
    int nonly;
} scan_args;

static int parse_args(scan_args *a, int argc, char **argv)
{
    memset(a, 0, sizeof *a);
    for (int i = 1; i < argc; i++) {
        const char *s = argv[i];
        const char **slot = NULL;
        char msg[300];
        if (!strcmp(s, "--help") || !strcmp(s, "-h")) {
            cli_print_scan_help(stdout);
            return -1;
        }
        if (!strcmp(s, "--growth-between")) {
            if (i + 2 >= argc)
                return scan_usage("--growth-between needs two numbers A B");
            a->grow_a = argv[++i];
            a->grow_b = argv[++i];
            continue;
        }
        if (!strcmp(s, "--group"))
            slot = &a->group;
        else if (!strcmp(s, "--class"))
            slot = &a->cls;
        else if (!strcmp(s, "--family"))
            slot = &a->family;
        else if (!strcmp(s, "--sample"))
            slot = &a->sample;
        else if (!strcmp(s, "--seed"))
            slot = &a->seed;
        else if (!strcmp(s, "--jobs"))
            slot = &a->jobs;
        else if (!strcmp(s, "--shard"))
            slot = &a->shard;
        else if (!strcmp(s, "--resume"))
            slot = &a->resume;
        else if (!strcmp(s, "--output"))
            slot = &a->output;
        else if (!strcmp(s, "--summary"))
            slot = &a->summary;
        else if (!strcmp(s, "--range")) {
            if (a->nrange == MAX_RANGES)
                return scan_usage("too many --range options");
            slot = &a->range[a->nrange++];
        } else if (!strcmp(s, "--only")) {
            if (a->nonly == 16)
                return scan_usage("too many --only options");
            slot = &a->only[a->nonly++];
        } else if (s[0] == '-' && s[1] != '\0') {
            snprintf(msg, sizeof msg, "unknown option '%.200s'", s);
            return scan_usage(msg);
        } else if (a->file) {
            return scan_usage("only one FILE may be given");
        } else {
            a->file = s;
            continue;
        }
        if (i + 1 >= argc) {
            snprintf(msg, sizeof msg, "option '%s' needs a value", s);
            return scan_usage(msg);
        }
        if (*slot && slot != &a->range[a->nrange - 1] && slot != &a->only[a->nonly - 1]) {
            snprintf(msg, sizeof msg, "option '%s' given twice", s);
            return scan_usage(msg);
        }
        *slot = argv[++i];
    }
    return 0;
}

/* --shard K/N or slurm. */
static int parse_shard(unsigned long long *k, unsigned long long *n, const char *s)
{
    if (!strcmp(s, "slurm")) {
        const char *id = getenv("SLURM_ARRAY_TASK_ID"), *mn = getenv("SLURM_ARRAY_TASK_MIN"),
                   *cnt = getenv("SLURM_ARRAY_TASK_COUNT");
        unsigned long long vi, vm, vc;
        if (!id || !mn || !cnt)
            return scan_usage("--shard slurm: SLURM_ARRAY_TASK_ID, SLURM_ARRAY_TASK_MIN and "
                              "SLURM_ARRAY_TASK_COUNT must be set (run it in an sbatch --array "
                              "job)");
        if (!parse_ulong(&vi, id, 1000000000) || !parse_ulong(&vm, mn, 1000000000) ||
            !parse_ulong(&vc, cnt, 1000000000) || vc == 0 || vi < vm || vi - vm >= vc)
            return scan_usage("--shard slurm: the array must be contiguous (e.g. "
                              "--array=0-3), and its task variables whole numbers");
        *k = vi - vm + 1;
        *n = vc;
        return 0;
    }
    const char *slash = strchr(s, '/');
    char kbuf[32];
    if (!slash || (size_t)(slash - s) >= sizeof kbuf)
        return scan_usage("--shard takes K/N (1 <= K <= N) or slurm");
    memcpy(kbuf, s, (size_t)(slash - s));
    kbuf[slash - s] = '\0';
    if (!parse_ulong(k, kbuf, 1000000000) || !parse_ulong(n, slash + 1, 1000000000) || *k < 1 ||
        *k > *n)
        return scan_usage("--shard takes K/N with 1 <= K <= N, e.g. --shard 2/4");
    return 0;
}

int cli_scan(int argc, char **argv)
{
    scan_args a;
    int status = parse_args(&a, argc, argv);
    if (status)
        return status < 0 ? 0 : status;
    if (a.summary) {
        if (a.file || a.group || a.family || a.nrange)
            return scan_usage("--summary takes only the result file");
        return summary(a.summary);
    }
    if (a.file && (a.group || a.cls))
        return scan_usage("give either FILE or --group/--class, not both");
    if (!a.file && !a.group)
        return scan_usage("no FILE and no --group given");
    if (a.group && !a.cls)
        return scan_usage("--group needs --class");
    if (!a.family && (a.nrange || a.sample))
        return scan_usage("--range and --sample need --family");
    if (a.seed && !a.sample)
        return scan_usage("--seed goes with --sample");
    if (a.resume && a.output && strcmp(a.resume, a.output))
        return scan_usage("--resume OUT writes to OUT: give no other --output");
    unsigned long long jobs = 0, shard_k = 1, shard_n = 1, sample = 0, seed = 0;
    if (a.jobs && (!parse_ulong(&jobs, a.jobs, SCAN_MAX_JOBS) || jobs < 1)) {
        char msg[100];
        snprintf(msg, sizeof msg, "--jobs takes a whole number from 1 to %d", SCAN_MAX_JOBS);
        return scan_usage(msg);
    }
    if (!a.jobs) {
        long nc = sysconf(_SC_NPROCESSORS_ONLN);
        jobs = nc < 1 ? 1 : nc > SCAN_MAX_JOBS ? SCAN_MAX_JOBS : (unsigned long long)nc;
    }
    if (a.shard && (status = parse_shard(&shard_k, &shard_n, a.shard)) != 0)
        return status;
    if (a.shard && !a.family)
        return scan_usage("--shard needs --family (split a stream of maps before it)");
    if (a.sample && (!parse_ulong(&sample, a.sample, (unsigned long long)1 << 62) || !sample))
        return scan_usage("--sample takes a whole number of members, at least 1");
    if (a.seed && !parse_ulong(&seed, a.seed, UINT64_MAX))
        return scan_usage("--seed takes a whole number from 0 to 2^64 - 1");
    if (a.sample && !a.seed) {
        if (a.shard || a.resume)
            return scan_usage("--sample with --shard or --resume needs --seed, so that every "
                              "run draws the same points");
        seed = (unsigned long long)time(NULL) ^ ((unsigned long long)getpid() << 32);
        fprintf(stderr, "nilstep scan: --seed %llu\n", seed);
    }

    nserr_t err;
    nserr_init(err);
    session_t s;
    session_init(s);
    pres_t G;
    pres_init(G);
    scan_t S;
    scan_init(S);
    done_set done = {-1, NULL, 0, 0};
    out_ctx oc;
    memset(&oc, 0, sizeof oc);
    oc.fd = -1;
    const char *gtext = a.group, *where_group = a.file ? a.file : "--group";
    int gline = 1, gcol = 1;
    long c = 0;
    if (a.file) {
        if (session_load(s, a.file, err) != NS_OK) {
            status = scan_error(err, a.file);
            goto done;
        }
        gtext = s->group.text;
        gline = s->group.line;
        gcol = s->group.col;
        c = s->cls;
    } else {
        char *end;
        c = strtol(a.cls, &end, 10);
        if (*a.cls == '\0' || *end != '\0' || c < 1 || c > NQ_MAX_CLASS) {
            char msg[200];
            snprintf(msg, sizeof msg, "--class takes a whole number from 1 to %d", NQ_MAX_CLASS);
            status = scan_usage(msg);
            goto done;
        }
    }
    if (pres_parse(G, gtext, gline, gcol, err) != NS_OK ||
        scan_set_group(S, G, (slong)c, NULL, err) != NS_OK) {
        status = scan_error(err, where_group);
        goto done;
    }
    for (int k = 0; k < a.nrange; k++)
        if (scan_add_range(S, a.range[k], err) != NS_OK) {
            char where[300];
            snprintf(where, sizeof where, "--range %.200s", a.range[k]);
            status = scan_error(err, where);
            goto done;
        }
    if (a.family && scan_set_template(S, a.family, err) != NS_OK) {
        status = scan_error(err, "--family");
        goto done;
    }
    for (int k = 0; k < a.nonly; k++)
        if (scan_add_property(S, a.only[k], err) != NS_OK) {
            status = scan_error(err, "--only");
            goto done;
        }
    if (a.grow_a && scan_set_growth_window(S, a.grow_a, a.grow_b, err) != NS_OK) {
        status = scan_error(err, "--growth-between");
        goto done;
    }
    if (a.sample)
        scan_set_sample(S, (ulong)sample, (ulong)seed);
    ulong total = 0;
    if (a.family && scan_member_count(&total, S, err) != NS_OK) {
        status = scan_error(err, "--family");
        goto done;
    }

    const char *out = a.resume ? a.resume : a.output;
    if (a.resume && (status = read_done(&done, a.resume, S->group_json, c)) != 0)
        goto done;
    if (out) {
        oc.fd = open(out, O_WRONLY | O_CREAT | O_APPEND | (a.resume ? 0 : O_TRUNC), 0644);
        if (oc.fd < 0) {
            fprintf(stderr, "nilstep scan: %s: %s\n", out, strerror(errno));
            status = 2;
            goto done;
        }
        oc.out_name = out;
    } else {
        oc.fd = 1;
        oc.out_name = "standard output";
    }
    oc.from_stdin = !a.family;
    oc.tty = isatty(2);
    oc.start = oc.last_shown = now();
    if (a.family) {
        /* members of this shard still to do */
        ulong first = (ulong)shard_k - 1;
        if (done.last_index >= 0) {
            ulong st = (ulong)done.last_index + 1;
            first = st <= first ? first : st + (((ulong)shard_k - 1 + shard_n - st % shard_n) % shard_n);
        }
        oc.total = first < total ? (total - first + shard_n - 1) / shard_n : 0;
    }

    input_ctx ic = {stdin, 0, &done};
    scan_run_opts o = {0};
    o.jobs = (int)jobs;
    o.shard_k = shard_k;
    o.shard_n = shard_n;
    o.skip_through = done.last_index;
    o.next = a.family ? NULL : next_input;
    o.next_ctx = &ic;
    o.emit = emit;
    o.emit_ctx = &oc;
    o.tick = tick;
    o.tick_ctx = &oc;
    struct sigaction sa, old_int, old_term;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = on_stop_signal;
    sigemptyset(&sa.sa_mask);
    sigaction(SIGINT, &sa, &old_int);
    sigaction(SIGTERM, &sa, &old_term);
    ns_status st = scan_run(S, &o, err);
    sigaction(SIGINT, &old_int, NULL);
    sigaction(SIGTERM, &old_term, NULL);
    if (oc.tty)
        fputs("\r\033[K", stderr);
    fprintf(stderr, "nilstep scan: %lu tried, %lu valid, %lu kept", (unsigned long)oc.tried,
            (unsigned long)oc.valid, (unsigned long)oc.kept);
    if (oc.failed)
        fprintf(stderr, ", %lu failed", (unsigned long)oc.failed);
    fprintf(stderr, ", %.2f s\n", now() - oc.start);
    if (oc.write_failed) {
        status = 2;
    } else if (scan_interrupted) {
        if (out)
            fprintf(stderr, "nilstep scan: interrupted; every line written is whole, and "
                            "--resume %s goes on from there\n", out);
        else
            fprintf(stderr, "nilstep scan: interrupted; every line written is whole\n");
        status = 3;
    } else if (st != NS_OK)
        status = scan_error(err, "nilstep scan");
    else if (oc.failed)
        status = 1;
done:
    if (oc.fd > 2 && close(oc.fd) != 0 && status == 0) {
        fprintf(stderr, "nilstep scan: %s: %s\n", oc.out_name, strerror(errno));
        status = 2;
    }
    done_clear(&done);
    scan_clear(S);
    pres_clear(G);
    session_clear(s);
    nserr_clear(err);
    return status;
}
