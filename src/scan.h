/* scan.h — many maps of one group: a family given by a template with
 * integer parameters, or maps handed in one by one; each member analysed
 * against one shared quotient, on several threads, in a fixed order.
 *
 * The group and its quotient are computed once (scan_set_group).  A member
 * of a family is made by writing its parameter values into the exponents of
 * the parsed template (no text is printed and parsed back), evaluated once
 * as a map value (endo_set) and analysed with analysis_set_map_endo on an
 * analysis that borrows the shared quotient (analysis_share_group), one
 * analysis per thread.  Each member becomes one
 * JSON object (a line of JSON Lines, keys in README "Scans"); scan_run
 * hands the lines to the caller in member order whatever the number of
 * threads, so the output does not depend on it.  The module prints nothing.
 *
 * Members of a family are numbered 0, 1, ...: without sampling, the points
 * of the box in lexicographic order of the parameters (the first --range
 * varies slowest); with sampling, member i is the i-th point drawn, a pure
 * function of the seed and i (splitmix64, G. Steele, D. Lea, C. Flood,
 * "Fast splittable pseudorandom number generators", OOPSLA 2014), so that
 * shards and resumed runs draw the same points.  Shard K of N takes the
 * members whose number is K-1 modulo N. */
#ifndef NILSTEP_SCAN_H
#define NILSTEP_SCAN_H

#include <flint/fmpq.h>
#include "analysis.h"

#define SCAN_MAX_MEMBERS 1000000000UL /* a whole box larger than this needs sampling */
#define SCAN_MAX_ABS 1000000000000000000L /* |LO|, |HI| at most 10^18 */
#define SCAN_MAX_JOBS 256

/* Properties a member must have to be kept (scan_add_property). */
enum {
    SCAN_VALID = 1,
    SCAN_AUTOMORPHISM = 2,
    SCAN_INJECTIVE = 4,
    SCAN_HYPERBOLIC = 8,
    SCAN_EXPANDING = 16,
    SCAN_FINITE_REIDEMEISTER = 32
};

typedef struct {
    analysis_t group;          /* the shared group stage (no map) */
    char *group_json;          /* the presentation as a JSON string, for every line */
    /* the family; nparams == 0 and no template: maps come from the caller */
    int has_template;
    names_t params;            /* parameter names, in --range order */
    slong *lo, *hi;            /* their inclusive ranges */
    int *range_col;            /* where each range was given (for messages) */
    expr_struct *tmpl;         /* gens.n template images */
    fmpz_t box;                /* number of points of the box */
    ulong sample;              /* 0: the whole box; else this many random points */
    ulong seed;
    /* what is kept */
    int props;                 /* SCAN_* bits, all required */
    int has_window;
    fmpq_t window_lo, window_hi; /* growth rate in [lo, hi] */
} scan_struct;
typedef scan_struct scan_t[1];

void scan_init(scan_t S);
void scan_clear(scan_t S);

/* Computes the class-c quotient of G once for all members. */
ns_status scan_set_group(scan_t S, const pres_t G, slong c, const ns_progress_t *progress,
                         nserr_t err);

/* Adds a parameter range "NAME=LO..HI" (LO <= HI, |LO|, |HI| <= 10^18).
 * Errors point at the column in spec; a name that is a generator or was
 * given before is an error.  Call before scan_set_template. */
ns_status scan_add_range(scan_t S, const char *spec, nserr_t err);

/* Parses the family template, a map whose exponents may be parameters
 * (pres_parse_map_params); needs the group.  Errors: an exponent name that
 * is neither a generator nor has a range; a range whose parameter does not
 * occur; a box of more than SCAN_MAX_MEMBERS points without sampling
 * (checked by scan_member_count). */
ns_status scan_set_template(scan_t S, const char *text, nserr_t err);

/* Draw n points instead of taking the whole box. */
void scan_set_sample(scan_t S, ulong n, ulong seed);

/* Requires a property: "valid", "automorphism", "injective", "hyperbolic",
 * "expanding", "finite-reidemeister".  Unknown names: NS_ERR_INPUT. */
ns_status scan_add_property(scan_t S, const char *name, nserr_t err);

/* Keeps only members whose growth rate lies in [a, b]; a and b are decimal
 * numbers ("1", "2.5", "1e3" is not accepted).  Errors name the argument. */
ns_status scan_set_growth_window(scan_t S, const char *a, const char *b, nserr_t err);

/* The number of members of the family (box size or sample size);
 * NS_ERR_LIMIT when the whole box exceeds SCAN_MAX_MEMBERS. */
ns_status scan_member_count(ulong *n, const scan_t S, nserr_t err);

/* The parameter values of member i (S->params->n of them). */
void scan_member_params(slong *vals, const scan_t S, ulong i);

/* ---- Running ------------------------------------------------------------ */

/* A member handed in by the caller (maps not from a family). */
typedef struct {
    ulong index;      /* its position in the input (a line number) */
    char *id_json;    /* the member's id as JSON text; flint_malloc'd, taken over */
    char *map_text;   /* the map; flint_malloc'd, taken over; NULL with failed */
    int failed;       /* the caller could not read it: msg says why */
    char msg[400];
} scan_item;

/* One analysed member, handed to the emit callback in member order.
 * Everything is freed after the callback returns. */
typedef struct {
    ulong index;      /* member number (family) or input position */
    ns_status status; /* NS_OK, or why it could not be analysed (err) */
    nserr_t err;
    int valid, kept;
    char *line;       /* the JSON object (no newline), or NULL when !kept or failed */
} scan_result;

/* Called with the runner's lock held, from any thread: fills *item with
 * the next member and returns 1, or returns 0 at the end of the input. */
typedef int (*scan_next_fn)(void *ctx, scan_item *item);
/* Called in member order, from the thread that called scan_run. */
typedef void (*scan_emit_fn)(void *ctx, const scan_result *r);

typedef struct {
    int jobs;               /* threads; 1 runs everything in the calling thread */
    ulong shard_k, shard_n; /* shard K of N (1 <= K <= N); N = 0 or 1: all */
    long long skip_through; /* family: skip members numbered <= this (resume); -1: none */
    scan_next_fn next;      /* NULL: the family; else maps from the caller */
    void *next_ctx;
    scan_emit_fn emit;
    void *emit_ctx;
    /* polled after every emitted member with the number emitted so far;
     * nonzero stops the run (NS_ERR_CANCELLED) */
    int (*tick)(void *ctx, ulong done);
    void *tick_ctx;
} scan_run_opts;

/* Analyses the members.  Returns NS_OK, or NS_ERR_CANCELLED when tick
 * asked to stop (members already emitted stay emitted), or an error from
 * starting threads.  Per-member failures go to emit, not here. */
ns_status scan_run(const scan_t S, const scan_run_opts *o, nserr_t err);

#endif
