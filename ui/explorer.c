/* explorer.c — the explorer's main loop: terminal setup and restore, key
 * dispatch through the screens' tables, the computations the actions ask
 * for (with progress and cancel), opening and saving sessions.  See app.h
 * for the shape of the whole. */
#include "explorer.h"

#include <curses.h>
#include <langinfo.h>
#include <locale.h>
#include <signal.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <termios.h>
#include <time.h>
#include <unistd.h>

#include "analysis.h"
#include "app.h"
#include "frame.h"
#include "screens.h"
#include "defaults.h"
#include "export.h"
#include "filepath.h"
#include "report.h"
#include "paint.h"
#include "memlimit.h"
#include "recovery.h"

#define EXPLORER_MIN_COLS  80
#define EXPLORER_MIN_LINES 24

/* ---- small helpers -------------------------------------------------- */

static char *explorer_strdup(const char *s)
{
    size_t n = strlen(s) + 1;
    char *d = malloc(n);
    if (d == NULL)
        abort();
    memcpy(d, s, n);
    return d;
}

/* ---- terminal ---------------------------------------------------------- */

static volatile sig_atomic_t explorer_curses_on;

/* A termination request (SIGINT, SIGTERM, SIGHUP) only sets this flag; the
 * main loop (or the progress hook, which then cancels the computation)
 * sees it, keeps a recovery copy of unsaved work, restores the terminal and
 * dies of the same signal.  Nothing but the flag is touched here: curses
 * is not async-signal-safe. */
static volatile sig_atomic_t explorer_term_signal;

static void explorer_on_term_signal(int sig)
{
    explorer_term_signal = sig;
}

/* The terminal modes before curses, for the fatal signals below. */
static struct termios explorer_saved_tty;
static volatile sig_atomic_t explorer_saved_tty_ok;

/* SIGQUIT and SIGABRT end the program at once: put the terminal modes
 * back with tcsetattr (async-signal-safe), then die of the same signal so
 * the exit status tells what happened. */
static void explorer_on_fatal_signal(int sig)
{
    if (explorer_saved_tty_ok)
        tcsetattr(STDIN_FILENO, TCSANOW, &explorer_saved_tty);
    signal(sig, SIG_DFL);
    raise(sig);
}

static void explorer_catch_signals(void)
{
    static const int term[] = {SIGINT, SIGTERM, SIGHUP};
    static const int fatal[] = {SIGQUIT, SIGABRT};
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sigemptyset(&sa.sa_mask);
    sa.sa_handler = explorer_on_term_signal;
    for (size_t i = 0; i < sizeof term / sizeof term[0]; i++)
        sigaction(term[i], &sa, NULL);
    sa.sa_handler = explorer_on_fatal_signal;
    for (size_t i = 0; i < sizeof fatal / sizeof fatal[0]; i++)
        sigaction(fatal[i], &sa, NULL);
}

static int explorer_term_start(explorer_app *app)
{
    if (!isatty(STDIN_FILENO) || !isatty(STDOUT_FILENO)) {
        fprintf(stderr, "nilstep: the explorer needs a terminal "
                        "(nilstep report FILE writes the analysis as text)\n");
        return 1;
    }
    if (tcgetattr(STDIN_FILENO, &explorer_saved_tty) == 0)
        explorer_saved_tty_ok = 1;
    if (initscr() == NULL) {
        fprintf(stderr, "nilstep: cannot initialise the terminal\n");
        return 1;
    }
    explorer_curses_on = 1;
    explorer_catch_signals();
    cbreak();
    noecho();
    nonl();
    keypad(stdscr, TRUE);
    set_escdelay(25); /* Esc cancels: do not wait long for a sequence */
    curs_set(0);
    const char *cs = nl_langinfo(CODESET);
    app->utf8 = cs != NULL && (strcmp(cs, "UTF-8") == 0 || strcmp(cs, "utf8") == 0);
    paint_set_ascii(!app->utf8);
    paint_init(!paint_no_color_requested());
    return 0;
}

static void explorer_term_stop(void)
{
    if (explorer_curses_on) {
        endwin();
        explorer_curses_on = 0;
    }
}

/* ---- drawing: the frame is always painted whole from the state -------- */

static void explorer_draw_too_small(explorer_app *app)
{
    int y = LINES / 2 - 1;
    if (y < 0)
        y = 0;
    paint_textf(y, 0, COLS, ROLE_ERROR, "Terminal too small: %dx%d.", COLS, LINES);
    paint_textf(y + 1, 0, COLS, ROLE_NORMAL, "nilstep needs at least %dx%d.", EXPLORER_MIN_COLS,
                EXPLORER_MIN_LINES);
    paint_text(y + 2, 0, COLS, ROLE_DIM,
               app->vm->dirty ? "Enlarge it to go on (unsaved changes)."
                              : "Enlarge it, or q to quit.");
}

static int explorer_too_small(void)
{
    return COLS < EXPLORER_MIN_COLS || LINES < EXPLORER_MIN_LINES;
}

static void explorer_draw(explorer_app *app)
{
    erase();
    curs_set(0);
    if (explorer_too_small()) {
        explorer_draw_too_small(app);
    } else {
        switch (app->screen) {
        case SCREEN_MAIN:
            screen_main_draw(app);
            break;
        case SCREEN_LAYER:
            screen_layer_draw(app);
            break;
        case SCREEN_HELP:
            screen_help_draw(app);
            break;
        case SCREEN_MEMBERS:
            screen_members_draw(app);
            break;
        case SCREEN_FULL:
            screen_full_draw(app);
            break;
        case SCREEN_ITERATE:
            screen_iterate_draw(app);
            break;
        case SCREEN_BOUNDS:
            screen_bounds_draw(app);
            break;
        case SCREEN_NOTES:
            screen_notes_draw(app);
            break;
        }
        if (app->prompt != PROMPT_NONE)
            prompt_draw(app); /* places the cursor last */
    }
    refresh();
}

/* ---- progress and cancel during long computations --------------------- */

typedef struct {
    explorer_app *app;
    const char *what;
    struct timespec start, last;
    int drawn;
    int cancelled;
    slong cls;       /* quotients: the class asked for */
    slong nlayers;   /* maps: the layers whose spectra are computed */
    char stage[128]; /* the last stage the engine named, in words */
    double fraction; /* of the whole computation, or -1 */
} explorer_progress;

/* The engine's stage in the words of the progress line: "class 5: tails"
 * is layer 5 of the quotient being built; other stages ("spectra: layer 3
 * of 7") are shown as they come.  Stage NULL or fraction < 0 (a poll) keep the last
 * one. */
static void explorer_progress_note(explorer_progress *p, const char *stage, double f)
{
    long j;
    int n = 0;
    if (stage && p->cls > 0 && sscanf(stage, "class %ld: %n", &j, &n) == 1 && n > 0) {
        snprintf(p->stage, sizeof p->stage, "layer %ld of %ld: %s", j, (long)p->cls, stage + n);
        if (f >= 0)
            p->fraction = ((double)(j - 1) + f) / (double)p->cls;
    } else if (stage) {
        snprintf(p->stage, sizeof p->stage, "%s", stage);
        if (f >= 0)
            p->fraction = f;
    }
}

static double explorer_seconds_since(const struct timespec *t)
{
    struct timespec now;
    clock_gettime(CLOCK_MONOTONIC, &now);
    return (double)(now.tv_sec - t->tv_sec) + 1e-9 * (double)(now.tv_nsec - t->tv_nsec);
}

/* A resize during a computation: the analysis being computed may be
 * half-built (an in-place map analysis), so the frame shows only the
 * header and what is running; the progress line follows. */
static void explorer_draw_busy(explorer_progress *p)
{
    explorer_app *app = p->app;
    erase();
    if (explorer_too_small()) {
        explorer_draw_too_small(app);
    } else {
        app_draw_header(app, "computing");
        paint_textf(LINES / 2 - 1, 2, COLS - 4, ROLE_HEADING, "Computing: %s.", p->what);
        paint_text(LINES / 2, 2, COLS - 4, ROLE_DIM,
                   "The results appear when it is done; Esc cancels and keeps the previous "
                   "ones.");
    }
    refresh();
}


/* Called by the engine from inside the computation: redraws a progress
 * line now and then and polls the keyboard without blocking, so that Esc
 * cancels and a resize repaints, all without threads. */
static int explorer_progress_cb(void *ctx, const char *stage, double fraction)
{
    explorer_progress *p = ctx;
    explorer_progress_note(p, stage, fraction);
    if (p->drawn && explorer_seconds_since(&p->last) < 0.05)
        return p->cancelled;
    clock_gettime(CLOCK_MONOTONIC, &p->last);
    p->drawn = 1;
    wint_t ch;
    int r;
    explorer_app *app = p->app;
    while ((r = get_wch(&ch)) != ERR) {
        if (r == OK && ch == UIKEY_ESC)
            p->cancelled = 1;
        else if (r == KEY_CODE_YES && ch == KEY_RESIZE)
            explorer_draw_busy(p); /* the analysis is half-built: do not paint it */
        else
            app_typeahead_push(app, r == KEY_CODE_YES ? UIKEY_FN((int)ch) : (int)ch);
    }
    if (explorer_term_signal)
        p->cancelled = 1; /* the main loop keeps the work and ends */
    if (!explorer_too_small()) {
        int y = LINES - 2;
        paint_fill(y, 0, COLS, ROLE_NORMAL);
        char bar[24] = "";
        if (p->fraction >= 0 && p->fraction <= 1) {
            int k = (int)(p->fraction * 20 + 0.5);
            for (int i = 0; i < 20; i++)
                bar[i] = i < k ? '#' : '.';
            bar[20] = '\0';
        }
        paint_textf(y, 0, COLS, ROLE_MARKER, "%s: %s %s%s%s %.1f s  %s", p->what, p->stage,
                    bar[0] ? "[" : "", bar, bar[0] ? "]" : "", explorer_seconds_since(&p->start),
                    p->cancelled ? "cancelling..." : "(Esc cancels)");
        refresh();
    }
    return p->cancelled;
}

static void explorer_progress_begin(explorer_progress *p, ns_progress_t *hook, explorer_app *app,
                                    const char *what)
{
    memset(p, 0, sizeof *p);
    p->app = app;
    p->what = what;
    p->fraction = -1;
    clock_gettime(CLOCK_MONOTONIC, &p->start);
    hook->fn = explorer_progress_cb;
    hook->ctx = p;
    if (explorer_curses_on) {
        nodelay(stdscr, TRUE);
        explorer_progress_cb(p, "starting", -1);
    } else {
        hook->fn = NULL;
    }
}

/* How long the main loop waits for a key before it looks at signals and
 * the recovery copy (milliseconds). */
#define EXPLORER_POLL_MS 250

static void explorer_progress_end(void)
{
    if (explorer_curses_on) {
        nodelay(stdscr, FALSE);
        timeout(EXPLORER_POLL_MS);
    }
}

/* ---- the document ------------------------------------------------------ */

/* What a session file turns into before anything is computed. */
typedef struct {
    pres_t pres;
    char *group_text; /* one line, as pres_get_str prints it */
    slong cls;
    size_t ngens;
    char **names;
    char **images;
    char *title;
} explorer_parts;

static void explorer_parts_init(explorer_parts *p)
{
    memset(p, 0, sizeof *p);
    pres_init(p->pres);
}

static void explorer_parts_clear(explorer_parts *p)
{
    pres_clear(p->pres);
    for (size_t i = 0; i < p->ngens; i++) {
        free(p->names[i]);
        free(p->images[i]);
    }
    free(p->names);
    free(p->images);
    free(p->group_text);
    free(p->title);
    memset(p, 0, sizeof *p);
}

/* Parses the group and the map of s (in the file's coordinates) and prints
 * each image back, so the explorer edits one image per generator. */
static ns_status explorer_parts_from_session(explorer_parts *p, const session_t s, nserr_t err)
{
    if (s->group.text == NULL || s->cls <= 0)
        return nserr_set(err, NS_ERR_INPUT, 0, 0, "the session has no group or no class");
    ns_status st = pres_parse(p->pres, s->group.text, s->group.line, s->group.col, err);
    if (st != NS_OK)
        return st;
    char *g = pres_get_str(p->pres);
    p->group_text = explorer_strdup(g);
    flint_free(g);
    p->cls = s->cls;
    p->title = explorer_strdup(s->title.text ? s->title.text : "untitled");
    for (char *c = p->title; *c; c++)
        if (*c == '\n')
            *c = ' ';
    slong X = p->pres->gens->n;
    p->ngens = (size_t)X;
    p->names = calloc(p->ngens ? p->ngens : 1, sizeof(char *));
    p->images = calloc(p->ngens ? p->ngens : 1, sizeof(char *));
    if (p->names == NULL || p->images == NULL)
        abort();
    for (slong x = 0; x < X; x++)
        p->names[x] = explorer_strdup(p->pres->gens->name[x]);
    if (s->map.text == NULL)
        return NS_OK; /* the identity, which the view model fills in */
    expr_struct *im = flint_malloc(FLINT_MAX(X, 1) * sizeof(expr_struct));
    for (slong x = 0; x < X; x++)
        expr_init(im + x);
    st = pres_parse_map(im, p->pres, s->map.text, s->map.line, s->map.col, err);
    if (st == NS_OK) {
        for (slong x = 0; x < X; x++) {
            char *t = expr_get_str(im + x, p->pres->gens);
            p->images[x] = explorer_strdup(t);
            flint_free(t);
        }
    }
    for (slong x = 0; x < X; x++)
        expr_clear(im + x);
    flint_free(im);
    return st;
}

static analysis_struct *explorer_analysis_new(void)
{
    analysis_struct *A = malloc(sizeof *A);
    if (A == NULL)
        abort();
    analysis_init(A);
    return A;
}

static void explorer_analysis_free(analysis_struct *A)
{
    if (A) {
        analysis_clear(A);
        free(A);
    }
}

/* Computes the class-cls quotient of G into a new analysis; NULL (and err
 * set) on failure or cancel, so the caller can keep what it had. */
static analysis_struct *explorer_compute_group_from(explorer_app *app, const pres_t G,
                                                    slong cls, const analysis_struct *from,
                                                    nserr_t err);

static analysis_struct *explorer_compute_group(explorer_app *app, const pres_t G, slong cls,
                                               nserr_t err)
{
    return explorer_compute_group_from(app, G, cls, NULL, err);
}

/* The same; with from (an analysis of the same presentation) a lower class
 * is its prefix and a higher one extends it instead of starting again. */
static analysis_struct *explorer_compute_group_from(explorer_app *app, const pres_t G,
                                                    slong cls, const analysis_struct *from,
                                                    nserr_t err)
{
    char what[64];
    snprintf(what, sizeof what, "class-%ld quotient", (long)cls);
    explorer_progress pr;
    ns_progress_t hook;
    explorer_progress_begin(&pr, &hook, app, what);
    pr.cls = cls;
    analysis_struct *B = explorer_analysis_new();
    ns_status st = from ? analysis_set_group_from(B, from, cls, &hook, err)
                        : analysis_set_group(B, G, cls, &hook, err);
    explorer_progress_end();
    if (st != NS_OK) {
        explorer_analysis_free(B);
        if (pr.cancelled) /* Esc: keys typed for a result that will not come */
            app->ntypeahead = app->typeahead_head = 0;
        return NULL;
    }
    return B;
}

/* Analyses map text on the group of Q, in a new analysis that borrows Q's
 * group, so that the one shown stays whole until the new one is done.
 * Returns NS_ERR_CANCELLED (and *out NULL) on Esc; otherwise *out is the
 * new analysis, without a map when the map failed (err says why). */
static ns_status explorer_map_on(explorer_app *app, const analysis_struct *Q, const char *text,
                                 analysis_struct **out, nserr_t err)
{
    *out = NULL;
    explorer_progress pr;
    ns_progress_t hook;
    explorer_progress_begin(&pr, &hook, app, "analysing the map");
    pr.nlayers = Q->nlayers;
    analysis_struct *M = explorer_analysis_new();
    analysis_share_group(M, Q);
    ns_status st = analysis_set_map_text(M, text, 1, 1, &hook, err);
    explorer_progress_end();
    if (st == NS_ERR_CANCELLED || pr.cancelled) {
        explorer_analysis_free(M);
        app->ntypeahead = app->typeahead_head = 0;
        return NS_ERR_CANCELLED;
    }
    if (st != NS_OK)
        analysis_clear_map(M);
    *out = M;
    return st;
}

/* Analyses the current images.  A failure leaves the analysis without a
 * map and says why in place of the numbers; a cancel leaves everything as
 * it was and returns 1. */
static int explorer_apply_map(explorer_app *app)
{
    if (app->Q == NULL || !app->A->has_group)
        return 0;
    char *text = viewmodel_map_text(app->vm, 0, NULL);
    nserr_t err;
    nserr_init(err);
    analysis_struct *M;
    ns_status st = explorer_map_on(app, app->Q, text, &M, err);
    free(text);
    if (st == NS_ERR_CANCELLED) {
        nserr_clear(err);
        if (!app->A->has_map) /* nothing to keep: say why there are no numbers */
            snprintf(app->group_problem, sizeof app->group_problem,
                     "map not analysed: cancelled (e edits an image, c computes again)");
        return 1;
    }
    screen_iterate_forget(app); /* its run iterates the old map */
    explorer_analysis_free(app->A);
    app->A = M;
    if (st != NS_OK) {
        snprintf(app->group_problem, sizeof app->group_problem, "map not analysed: %s", err->msg);
        app_status(app, 1, "map not analysed: %s", err->msg);
    } else {
        app->group_problem[0] = '\0';
    }
    nserr_clear(err);
    return 0;
}

/* Puts the new quotient Q (may be NULL: no group) in place, with an
 * analysis that borrows it and has no map yet. */
static void explorer_adopt_analysis(explorer_app *app, analysis_struct *Q)
{
    screen_iterate_forget(app);     /* its run borrows the old analysis */
    explorer_analysis_free(app->A); /* it borrows app->Q: first */
    explorer_analysis_free(app->Q);
    app->Q = Q;
    app->A = explorer_analysis_new();
    if (Q)
        analysis_share_group(app->A, Q);
    viewmodel_set_nlayers(app->vm, app->A->has_group ? (size_t)app->A->nlayers : 0);
    app->table_top = 0;
    app->detail_scroll = 0;
}

/* As explorer_adopt_analysis, with the map already analysed in M. */
static void explorer_adopt_both(explorer_app *app, analysis_struct *Q, analysis_struct *M)
{
    screen_iterate_forget(app); /* its run borrows the old analysis */
    explorer_analysis_free(app->A);
    explorer_analysis_free(app->Q);
    app->Q = Q;
    app->A = M;
    viewmodel_set_nlayers(app->vm, (size_t)M->nlayers);
    if (app->vm->sel_layer >= (size_t)M->nlayers)
        app->vm->sel_layer = M->nlayers ? (size_t)M->nlayers - 1 : 0;
}

/* Makes parts the open document (taking over its contents); A may be
 * NULL when the quotient could not be computed. */
static void explorer_adopt_parts(explorer_app *app, explorer_parts *p, analysis_struct *A)
{
    pres_set(app->pres, p->pres);
    free(app->group_text);
    app->group_text = p->group_text;
    p->group_text = NULL;
    free(app->title);
    app->title = p->title;
    p->title = NULL;
    app->cls = p->cls;
    viewmodel_set_generators(app->vm, p->ngens, (const char *const *)p->names,
                             (const char *const *)p->images);
    viewmodel_mark_saved(app->vm);
    /* a new document starts at its first image and layer (the session's
     * cursor, read afterwards, may say otherwise) */
    app->vm->sel_image = 0;
    app->vm->sel_layer = 0;
    app->image_top = 0;
    app->group_edited = app->map_edited = app->title_edited = 0;
    explorer_adopt_analysis(app, A);
    app->screen = SCREEN_MAIN;
    /* the file's comment and notes were written for what it holds */
    notes_mark_seen(app);
}

/* The document for presentation G (text) and class cls: every generator
 * whose name survives keeps its image when that image still parses in G;
 * the others map to themselves.  *nreset counts the images reset. */
static void explorer_doc_for(explorer_app *app, viewmodel_doc *d, const pres_t G,
                             const char *text, slong cls, int *nreset)
{
    viewmodel_doc_get(d, app->vm, app->title, text, (long)cls);
    *nreset = 0;
    size_t n = (size_t)G->gens->n;
    char **names = calloc(n ? n : 1, sizeof *names);
    char **images = calloc(n ? n : 1, sizeof *images);
    if (names == NULL || images == NULL)
        abort();
    for (size_t x = 0; x < n; x++) {
        const char *name = G->gens->name[x];
        names[x] = explorer_strdup(name);
        const char *keep = NULL;
        for (size_t i = 0; i < app->vm->ngens; i++)
            if (strcmp(app->vm->names[i], name) == 0)
                keep = app->vm->images[i];
        if (keep) {
            expr_t e;
            expr_init(e);
            nserr_t err;
            nserr_init(err);
            if (expr_parse(e, keep, 1, 1, G->gens, err) != NS_OK) {
                keep = NULL;
                (*nreset)++;
            }
            expr_clear(e);
            nserr_clear(err);
        }
        images[x] = explorer_strdup(keep ? keep : name);
    }
    for (size_t i = 0; i < d->ngens; i++) {
        free(d->names[i]);
        free(d->images[i]);
    }
    free(d->names);
    free(d->images);
    d->names = names;
    d->images = images;
    d->ngens = n;
}

/* "a -> x, b -> y" of a document's images. */
static char *explorer_doc_map_text(const viewmodel_doc *d)
{
    viewmodel_t tmp;
    viewmodel_init(tmp);
    viewmodel_set_generators(tmp, d->ngens, (const char *const *)d->names,
                             (const char *const *)d->images);
    char *m = viewmodel_map_text(tmp, 0, NULL);
    viewmodel_clear(tmp);
    return m;
}

/* Takes back an undo or redo of a document edit whose quotient was not
 * computed: the history and the title go back to where they were. */
static void explorer_revert_history(explorer_app *app)
{
    if (app->from_history == 'U')
        viewmodel_redo(app->vm);
    else if (app->from_history == 'R')
        viewmodel_undo(app->vm);
    if (app->vm->current_doc) {
        free(app->title);
        app->title = explorer_strdup(app->vm->current_doc->title);
    }
}

/* Recomputes the quotient for app->pending_group / pending_cls, then the
 * map on it.  Only when both are done does anything change: on failure
 * or cancel the old presentation, class, images and numbers stay.  A
 * change made here is one undoable step (unless it is itself an undo or
 * redo: app->from_history). */
static void explorer_do_group(explorer_app *app)
{
    char *text = app->pending_group ? app->pending_group : explorer_strdup(app->group_text);
    app->pending_group = NULL;
    slong cls = app->pending_cls > 0 ? app->pending_cls : app->cls;
    app->pending_cls = 0;
    int hist = app->from_history;
    app->from_history = 0;
    nserr_t err;
    nserr_init(err);
    pres_t G;
    pres_init(G);
    viewmodel_doc after;
    memset(&after, 0, sizeof after);
    if (pres_parse(G, text, 1, 1, err) != NS_OK) {
        app_status(app, 1, "presentation: %d:%d: %s", err->line, err->col, err->msg);
        app->from_history = hist;
        explorer_revert_history(app);
        goto done;
    }
    /* the same presentation at another class: extend or cut what we have */
    int derive = app->Q && app->Q->has_group && cls != app->cls &&
                 strcmp(text, app->group_text) == 0;
    slong old_cls = app->cls;
    analysis_struct *B = explorer_compute_group_from(app, G, cls, derive ? app->Q : NULL, err);
    if (B == NULL) {
        /* a cancel is the user's choice, not an error; c asks again */
        app_status(app, err->status != NS_ERR_CANCELLED,
                   "class %ld not computed (%s); kept class %ld (c tries again)", (long)cls,
                   err->msg, (long)app->cls);
        if (!hist) {
            free(app->retry_group);
            app->retry_group = text;
            app->retry_cls = cls;
            text = NULL;
        }
        app->from_history = hist;
        explorer_revert_history(app);
        goto done;
    }
    int nreset = 0;
    if (hist)
        viewmodel_doc_get(&after, app->vm, app->title, text, (long)cls);
    else
        explorer_doc_for(app, &after, G, text, cls, &nreset);
    char *map = explorer_doc_map_text(&after);
    analysis_struct *M;
    ns_status st = explorer_map_on(app, B, map, &M, err);
    free(map);
    if (st == NS_ERR_CANCELLED) {
        explorer_analysis_free(B);
        app_status(app, 0, "cancelled: kept class %ld and the numbers before it",
                   (long)app->cls);
        if (!hist) {
            free(app->retry_group);
            app->retry_group = text;
            app->retry_cls = cls;
            text = NULL;
        }
        app->from_history = hist;
        explorer_revert_history(app);
        goto done;
    }
    free(app->retry_group);
    app->retry_group = NULL;
    app->retry_cls = 0;
    int changed = strcmp(text, app->group_text) != 0 || cls != app->cls;
    if (!hist && changed) {
        viewmodel_doc before;
        viewmodel_doc_get(&before, app->vm, app->title, app->group_text, (long)app->cls);
        viewmodel_push_doc(app->vm, &before, &after);
    }
    if (st != NS_OK) {
        snprintf(app->group_problem, sizeof app->group_problem, "map not analysed: %s", err->msg);
        app_status(app, 1, "map not analysed: %s", err->msg);
    } else {
        analysis_view_t V;
        analysis_get_view(V, B);
        app->group_problem[0] = '\0';
        if (nreset)
            app_status(app, 0, "class %ld: Hirsch length %ld; %d image%s no longer parse%s: "
                               "reset to the identity (u undoes)",
                       (long)cls, (long)V->hirsch_length, nreset, nreset == 1 ? "" : "s",
                       nreset == 1 ? "s" : "");
        else {
            char how[64] = "";
            if (derive)
                snprintf(how, sizeof how, " (%s class %ld)",
                         cls > old_cls ? "extended from" : "prefix of", (long)old_cls);
            app_status(app, 0, "class %ld: Hirsch length %ld%s%s", (long)cls,
                       (long)V->hirsch_length, how, changed && !hist ? " (u undoes)" : "");
        }
    }
    pres_set(app->pres, G);
    free(app->group_text);
    app->group_text = text;
    text = NULL;
    app->cls = cls;
    explorer_adopt_both(app, B, M);
    if (changed) {
        app->group_edited = 1;
        app->map_edited = 1;
    }
done:
    viewmodel_doc_clear(&after);
    free(text);
    pres_clear(G);
    nserr_clear(err);
}

static void explorer_drop_recovery(explorer_app *app);
static void explorer_check_leftovers(explorer_app *app);

/* Opens app->pending_doc (loaded by the open prompt).  Nothing changes
 * unless the new quotient is computed. */
static void explorer_do_open(explorer_app *app)
{
    nserr_t err;
    nserr_init(err);
    explorer_parts p;
    explorer_parts_init(&p);
    char *path = app->pending_path;
    app->pending_path = NULL;
    app->has_pending_doc = 0;
    const char *shown = path ? path : "the member"; /* a scan member has no file yet */
    if (explorer_parts_from_session(&p, app->pending_doc, err) != NS_OK) {
        char buf[700];
        nserr_format(buf, sizeof buf, err, shown);
        app_status(app, 1, "%s", buf);
        goto done;
    }
    analysis_struct *B = explorer_compute_group(app, p.pres, p.cls, err);
    if (B == NULL) {
        app_status(app, err->status != NS_ERR_CANCELLED, "%s not opened: %s", shown, err->msg);
        goto done;
    }
    session_swap(app->doc, app->pending_doc);
    explorer_adopt_parts(app, &p, B);
    viewmodel_set_cursor(app->vm, app->doc->cursor_layer, app->doc->cursor_image);
    explorer_drop_recovery(app); /* leaving unsaved work was confirmed */
    free(app->path);
    app->path = path;
    path = NULL;
    app->group_problem[0] = '\0';
    explorer_apply_map(app);
    if (app->group_problem[0] == '\0') /* else apply_map said what went wrong */
        app_status(app, 0, "opened %s", app->path ? app->path : app->title);
    app->doc_is_member = app->path == NULL;
    if (app->path == NULL) /* a scan member: new work, kept by the recovery copy */
        viewmodel_mark_dirty(app->vm);
    explorer_check_leftovers(app);
done:
    session_clear(app->pending_doc);
    free(path);
    explorer_parts_clear(&p);
    nserr_clear(err);
}

/* s := the session as it would be saved now. */
static void explorer_build_session(explorer_app *app, session_t s)
{
    nserr_t err;
    nserr_init(err);
    session_set(s, app->doc);
    /* Keys the user did not touch keep their text from the file (layout,
     * comments in continuation lines); changed ones are written fresh. */
    if (app->title_edited || s->title.text == NULL)
        session_set_title(s, app->title);
    if (app->group_edited || s->group.text == NULL)
        session_set_group(s, app->group_text);
    session_set_class(s, (int)app->cls, err);
    if (app->map_edited || app->group_edited || s->map.text == NULL) {
        char *m = viewmodel_map_text(app->vm, 0, NULL);
        session_set_map(s, m);
        free(m);
    }
    long layer, image;
    viewmodel_get_cursor(app->vm, &layer, &image);
    session_set_cursor(s, layer, image);
    nserr_clear(err);
}

static double explorer_now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* Seconds between a change and its recovery copy. */
#define EXPLORER_RECOVERY_DELAY 2.0

/* Writes the recovery copy now when there is unsaved work. */
static void explorer_write_recovery(explorer_app *app)
{
    app->recovery_due = 0;
    if (app->recovery_path == NULL || !app->vm->dirty)
        return;
    nserr_t err;
    nserr_init(err);
    session_t s;
    session_init(s);
    explorer_build_session(app, s);
    if (recovery_write(app->recovery_path, s, err) == NS_OK)
        app->recovery_written = 1;
    else
        app_status(app, 1, "no recovery copy: %s", err->msg);
    session_clear(s);
    nserr_clear(err);
}

/* After every action: when the unsaved work changed, schedule its copy a
 * few seconds later (a burst of keys then costs one write). */
static void explorer_note_change(explorer_app *app)
{
    if (app->recovery_path == NULL || !app->vm->dirty || app->prompt == PROMPT_RECOVER)
        return;
    session_t s;
    session_init(s);
    explorer_build_session(app, s);
    char *text = session_get_str(s);
    if (app->recovery_text == NULL || strcmp(text, app->recovery_text) != 0) {
        free(app->recovery_text);
        app->recovery_text = explorer_strdup(text);
        app->recovery_due = explorer_now() + EXPLORER_RECOVERY_DELAY;
    }
    flint_free(text);
    session_clear(s);
}

/* The copy is no longer needed: saved, discarded or quit on purpose. */
static void explorer_drop_recovery(explorer_app *app)
{
    recovery_remove(app->recovery_path);
    app->recovery_written = 0;
    app->recovery_due = 0;
    free(app->recovery_text);
    app->recovery_text = NULL;
}

/* Writes the session to pending_path (save as) or app->path. */
static void explorer_do_save(explorer_app *app)
{
    char *path = app->pending_path ? app->pending_path : app->path;
    if (path == NULL) {
        prompt_open(app, PROMPT_SAVE_AS, "");
        return;
    }
    if (notes_unseen(app)) {
        /* never save a comment or notes the user has not seen since the
         * session changed: ask (the path waits in pending_path) */
        prompt_open(app, PROMPT_CONFIRM_NOTES, "");
        return;
    }
    nserr_t err;
    nserr_init(err);
    session_t s;
    session_init(s);
    explorer_build_session(app, s);
    if (session_save(s, path, err) != NS_OK) {
        if (app->pending_path) {
            /* save as: the prompt stays open with the typed path and why */
            prompt_open(app, PROMPT_SAVE_AS, app->pending_path);
            snprintf(app->edit_msg, sizeof app->edit_msg, "not saved: %s", err->msg);
            app->edit_ok = 0;
        } else {
            app_status(app, 1, "not saved: %s", err->msg);
        }
    } else {
        session_swap(app->doc, s);
        viewmodel_mark_saved(app->vm);
        notes_mark_seen(app); /* the file now holds them with this session */
        explorer_drop_recovery(app);
        if (app->pending_path) {
            free(app->path);
            app->path = app->pending_path;
            app->pending_path = NULL;
            free(app->recovery_path);
            app->recovery_path = recovery_path_for(app->path);
        }
        app_status(app, 0, "saved %s", app->path);
    }
    free(app->pending_path);
    app->pending_path = NULL;
    session_clear(s);
    nserr_clear(err);
}

/* Writes what the export prompt chose (app->export_kind) to pending_path,
 * atomically as a session is saved.  A report is report_get_str of the
 * analysis shown with the title the session would be saved with: the
 * same text as `nilstep report` of that saved session.  A failure keeps
 * the prompt open with the typed name, the file and the reason. */
static void explorer_do_export(explorer_app *app)
{
    char *path = app->pending_path;
    app->pending_path = NULL;
    if (path == NULL)
        return;
    session_t s;
    session_init(s);
    explorer_build_session(app, s);
    const char *title = s->title.text;
    char *text = NULL;
    const char *what = export_kind_name(app->export_kind, app->export_layer);
    if (app->export_kind == EXPORT_MATRIX) {
        text = export_matrix_text(app->A, (slong)app->export_layer, title);
    } else if (app->A->has_group && app->A->has_map) {
        report_format f = app->export_kind == EXPORT_JSON    ? REPORT_JSON
                          : app->export_kind == EXPORT_LATEX ? REPORT_LATEX
                                                             : REPORT_TEXT;
        char *r = report_get_str(app->A, f, title);
        text = explorer_strdup(r);
        flint_free(r);
    }
    if (text == NULL) {
        app_status(app, 1, "not written: there is no %s to write (%s)", what,
                   app->group_problem[0] ? app->group_problem : "the map is not well defined");
    } else {
        nserr_t err;
        nserr_init(err);
        if (session_save_text(text, path, err) != NS_OK) {
            prompt_open(app, PROMPT_EXPORT, app->export_typed ? app->export_typed : path);
            snprintf(app->edit_msg, sizeof app->edit_msg, "not written: %s", err->msg);
            app->edit_ok = 0;
        } else {
            /* a relative name with the directory it went to */
            char cwd[4096];
            int rel = path[0] != '/' && getcwd(cwd, sizeof cwd) != NULL;
            app_status(app, 0, "wrote %s to %s%s%s", what, rel ? cwd : "", rel ? "/" : "", path);
        }
        nserr_clear(err);
    }
    free(text);
    free(path);
    session_clear(s);
}

/* ---- key dispatch ------------------------------------------------------ */

static const ui_keymap *explorer_keymap(const explorer_app *app)
{
    switch (app->screen) {
    case SCREEN_LAYER:
        return screen_layer_keys();
    case SCREEN_HELP:
        return screen_help_keys();
    case SCREEN_MEMBERS:
        return screen_members_keys();
    case SCREEN_FULL:
        return screen_full_keys();
    case SCREEN_ITERATE:
        return screen_iterate_keys();
    case SCREEN_BOUNDS:
        return screen_bounds_keys();
    case SCREEN_NOTES:
        return screen_notes_keys();
    case SCREEN_MAIN:
        break;
    }
    return screen_main_keys();
}

static int explorer_key(explorer_app *app, int key)
{
    if (key == UIKEY_FN(KEY_RESIZE) || key == UIKEY_CTRL('l'))
        return ACT_REDRAW; /* resizing is handled here only: every frame is drawn whole */
    if (explorer_too_small()) {
        if (key == 'q' && !app->vm->dirty)
            return ACT_QUIT;
        return ACT_NONE;
    }
    if (app->prompt != PROMPT_NONE)
        return prompt_key(app, key);
    const ui_keymap *km = explorer_keymap(app);
    for (size_t i = 0; i < km->n; i++)
        if (km->bindings[i].key == key && km->bindings[i].action)
            return km->bindings[i].action(app);
    return ACT_NONE;
}

/* Reads one key: a character as its code point, a function key as
 * UIKEY_FN(code). */
static int explorer_read_key(explorer_app *app)
{
    if (app->ntypeahead > 0) {
        int key = app->typeahead[app->typeahead_head++];
        if (--app->ntypeahead == 0)
            app->typeahead_head = 0;
        return key;
    }
    wint_t ch;
    int r = get_wch(&ch);
    if (r == ERR)
        return -1;
    if (r == KEY_CODE_YES)
        return UIKEY_FN((int)ch);
    return (int)ch;
}

/* Restores the recovery copy found at start (app->recovered) as unsaved
 * work on the same path. */
static void explorer_do_restore(explorer_app *app)
{
    nserr_t err;
    nserr_init(err);
    explorer_parts p;
    explorer_parts_init(&p);
    if (explorer_parts_from_session(&p, app->recovered, err) != NS_OK) {
        app_status(app, 1, "not restored: %s:%d:%d: %s", app->recovery_path, err->line, err->col,
                   err->msg);
        goto done;
    }
    analysis_struct *B = explorer_compute_group(app, p.pres, p.cls, err);
    if (B == NULL) {
        app_status(app, err->status != NS_ERR_CANCELLED, "not restored (%s); the copy stays in %s",
                   err->msg, app->recovery_path);
        goto done;
    }
    session_swap(app->doc, app->recovered);
    /* the comment and notes were seen with the file, not with the changes
     * the copy brings back: keep what was seen */
    char *seen = app->notes_seen;
    app->notes_seen = NULL;
    explorer_adopt_parts(app, &p, B);
    free(app->notes_seen);
    app->notes_seen = seen;
    viewmodel_set_cursor(app->vm, app->doc->cursor_layer, app->doc->cursor_image);
    viewmodel_mark_dirty(app->vm);
    app->group_edited = app->map_edited = app->title_edited = 1;
    app->recovery_written = 1;
    explorer_apply_map(app);
    if (app->group_problem[0] == '\0')
        app_status(app, 0, "restored the unsaved work: s saves it");
done:
    session_clear(app->recovered);
    explorer_parts_clear(&p);
    nserr_clear(err);
}

/* On opening app->path: names the files an interrupted save left there,
 * and offers a recovery copy of unsaved work from an earlier run. */
static void explorer_check_leftovers(explorer_app *app)
{
    free(app->recovery_path);
    app->recovery_path = recovery_path_for(app->path);
    free(app->recovery_text);
    app->recovery_text = NULL;
    app->recovery_due = 0;
    app->recovery_written = 0;
    if (app->path) {
        slong n;
        char *left = session_leftovers_get_str(&n, app->path);
        if (left) {
            for (char *c = left; *c; c++)
                if (*c == '\n')
                    *c = ' ';
            app_status(app, 1, "%ld file%s left by an interrupted save (check, then remove): %s",
                       (long)n, n == 1 ? "" : "s", left);
            flint_free(left);
        }
    }
    if (app->recovery_path == NULL || access(app->recovery_path, F_OK) != 0)
        return;
    nserr_t err;
    nserr_init(err);
    session_clear(app->recovered);
    session_init(app->recovered);
    if (session_load(app->recovered, app->recovery_path, err) != NS_OK) {
        app_status(app, 1, "recovery copy %s unreadable: %s", app->recovery_path, err->msg);
        free(app->recovery_path); /* leave it for the user, write none */
        app->recovery_path = NULL;
    } else {
        char *diff = recovery_describe(app->doc, app->recovered);
        if (diff[0] == '\0') {
            recovery_remove(app->recovery_path); /* nothing unsaved in it */
        } else {
            snprintf(app->recovery_diff, sizeof app->recovery_diff, "%s", diff);
            app->prompt = PROMPT_RECOVER;
        }
        free(diff);
    }
    nserr_clear(err);
}

static void explorer_loop(explorer_app *app)
{
    int flags = ACT_REDRAW;
    timeout(EXPLORER_POLL_MS);
    while (app->running && !explorer_term_signal) {
        if (flags & ACT_REDRAW)
            explorer_draw(app);
        if (app->recovery_due > 0 && explorer_now() >= app->recovery_due)
            explorer_write_recovery(app);
        /* a run on the iterates screen computes while no key waits */
        int busy = screen_iterate_busy(app);
        if (busy)
            timeout(0);
        int key = explorer_read_key(app);
        if (busy)
            timeout(EXPLORER_POLL_MS);
        if (key < 0) {
            flags = busy ? screen_iterate_tick(app) : ACT_NONE;
            continue;
        }
        flags = explorer_key(app, key);
        if (flags & ACT_QUIT) {
            /* quitting with unsaved work was confirmed: a discard */
            explorer_drop_recovery(app);
            break;
        }
        if (flags & ACT_RESTORE)
            explorer_do_restore(app);
        if (flags & ACT_DISCARD) {
            explorer_drop_recovery(app);
            session_clear(app->recovered);
            session_init(app->recovered);
            app_status(app, 0, "discarded the recovery copy");
        }
        if (flags & ACT_OPEN)
            explorer_do_open(app);
        if (flags & ACT_GROUP)
            explorer_do_group(app);
        else if (flags & ACT_MAP) {
            if (explorer_apply_map(app)) {
                /* Esc: the change is taken back, the numbers stay */
                if (app->map_action == 'U')
                    viewmodel_redo(app->vm);
                else if (app->map_action == 'R')
                    viewmodel_undo(app->vm);
                else
                    viewmodel_drop_last(app->vm);
                app_status(app, 0, "cancelled: the images and numbers are as before");
            }
            app->map_action = 0;
        }
        if (flags & ACT_SAVE)
            explorer_do_save(app);
        if (flags & ACT_EXPORT)
            explorer_do_export(app);
        if (flags & (ACT_OPEN | ACT_GROUP | ACT_MAP | ACT_SAVE | ACT_RESTORE))
            flags |= ACT_REDRAW;
        explorer_note_change(app);
    }
}

/* ---- entry point -------------------------------------------------------- */

static void explorer_app_init(explorer_app *app)
{
    memset(app, 0, sizeof *app);
    session_init(app->doc);
    session_init(app->pending_doc);
    session_init(app->recovered);
    pres_init(app->pres);
    viewmodel_init(app->vm);
    lineedit_init(app->edit);
    app->A = explorer_analysis_new();
    app->title = explorer_strdup("untitled");
    app->group_text = explorer_strdup("<a>");
    app->cls = 1;
    app->running = 1;
}

static void explorer_app_clear(explorer_app *app)
{
    screen_iterate_forget(app);
    session_clear(app->doc);
    session_clear(app->pending_doc);
    session_clear(app->recovered);
    free(app->typeahead);
    free(app->recovery_path);
    free(app->recovery_text);
    pres_clear(app->pres);
    viewmodel_clear(app->vm);
    lineedit_clear(app->edit);
    filepath_free_list(app->cands, app->ncands);
    explorer_analysis_free(app->A);
    explorer_analysis_free(app->Q); /* after A, which borrows it */
    members_free(app->members);
    free(app->path);
    free(app->title);
    free(app->group_text);
    free(app->pending_group);
    free(app->pending_path);
    free(app->export_typed);
    free(app->notes_seen);
    free(app->retry_group);
}

/* The running explorer, for the out-of-memory path only (memlimit.h): it
 * keeps the unsaved work and gives the terminal back before exit 3. */
static explorer_app *explorer_oom_app;

static void explorer_on_out_of_memory(void)
{
    if (explorer_oom_app)
        explorer_write_recovery(explorer_oom_app);
    explorer_term_stop();
}

int explorer_run(const char *path)
{
    setlocale(LC_ALL, "");
    explorer_app app;
    explorer_app_init(&app);
    nserr_t err;
    nserr_init(err);
    int status = 0;
    /* a scan result file opens as its member list over the default scenario */
    const char *results = NULL;
    size_t plen = path ? strlen(path) : 0;
    if (plen > 6 && !strcmp(path + plen - 6, ".jsonl")) {
        results = path;
        path = NULL;
        char msg[600];
        if (members_load(&app.members, results, msg, sizeof msg) != 0) {
            fprintf(stderr, "nilstep: %s\n", msg);
            status = 2;
            explorer_app_clear(&app);
            nserr_clear(err);
            return status;
        }
    }
    int is_new = path != NULL && access(path, F_OK) != 0;
    ns_status st;
    if (path == NULL || is_new)
        st = session_parse(app.doc, defaults_session_text(), err);
    else
        st = session_load(app.doc, path, err);
    explorer_parts p;
    explorer_parts_init(&p);
    if (st == NS_OK)
        st = explorer_parts_from_session(&p, app.doc, err);
    if (st != NS_OK) {
        char buf[700];
        nserr_format(buf, sizeof buf, err, path && !is_new ? path : defaults_session_name());
        fprintf(stderr, "nilstep: %s\n", buf);
        status = 2;
        goto done;
    }
    if (path)
        app.path = explorer_strdup(path);
    if (explorer_term_start(&app) != 0) {
        status = 1;
        goto done;
    }
    explorer_adopt_parts(&app, &p, NULL);
    explorer_draw(&app);
    analysis_struct *B = explorer_compute_group(&app, app.pres, app.cls, err);
    if (B == NULL)
        snprintf(app.group_problem, sizeof app.group_problem,
                 "the class-%ld quotient was not computed: %s", (long)app.cls, err->msg);
    explorer_adopt_analysis(&app, B);
    viewmodel_set_cursor(app.vm, app.doc->cursor_layer, app.doc->cursor_image);
    explorer_apply_map(&app);
    if (is_new)
        app_status(&app, 0, "%s is a new file: s saves this scenario there", path);
    if (results) {
        app.screen = SCREEN_MEMBERS;
        app_status(&app, 0, "scan results: Enter makes a member the current map");
    }
    explorer_check_leftovers(&app);
    explorer_oom_app = &app;
    memlimit_set_emergency(explorer_on_out_of_memory);
    explorer_loop(&app);
    memlimit_set_emergency(NULL);
    explorer_oom_app = NULL;
    int sig = explorer_term_signal;
    if (sig) {
        /* killed or hung up: keep the unsaved work, then die of the signal */
        explorer_write_recovery(&app);
        explorer_term_stop();
        signal(sig, SIG_DFL);
        raise(sig);
    }
    explorer_term_stop();
done:
    explorer_parts_clear(&p);
    explorer_app_clear(&app);
    nserr_clear(err);
    return status;
}
