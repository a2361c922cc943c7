/* screen_iterate.c — the iterates alpha^n(w) of the selected generator or a
 * typed element: a table of n, decimal digits per layer, the n-th root of
 * the homogeneous norm and the exact word length where the ball reaches,
 * above a plot of the roots converging to the growth-rate line.
 *
 * The run is computed in slices from the main loop (screen_iterate_tick):
 * each slice works for at most ITER_SLICE_MS and the keyboard is read
 * between slices, so input is never held up longer than that (a single step
 * with enormous numbers may take longer; keys typed meanwhile are polled and
 * kept, and Esc stops it).  Esc stops a run and keeps what was computed.
 * The session's `iterate` key gives the element and the number of steps on
 * entry, and a run started here writes them back. */
#include <curses.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "app.h"
#include "frame.h"
#include "screens.h"
#include "iterate.h"
#include "paint.h"
#include "plot.h"
#include "wordlen.h"

#define ITER_SLICE_MS 25
#define ITER_UI_MAX_STEPS 100000L
#define ITER_UI_DEFAULT_STEPS 100
#define ITER_UI_BALL (64UL << 20)

struct screen_iterate_state {
    int have;          /* a run exists (maybe finished or stopped) */
    int running;       /* more steps to compute */
    int ball_running;  /* word lengths still being searched */
    char *word;        /* the element as typed or the generator name */
    slong gen;         /* the generator it is, or -1 */
    long steps;        /* the last step asked for */
    iterate_map_t M;
    wordlen_t ball;
    int have_ball;
    fmpz *x;           /* alpha^at(w) */
    slong npc;
    ulong at;
    /* one entry per computed step n = 0..at */
    long npts, cap;
    double *root;      /* NAN at n = 0 */
    long *wl;          /* word length, -1 unknown */
    char **digits;     /* "1 3 5" */
    fmpz *elts;        /* kept while their word length is open: npc each */
    long wl_next;      /* first step whose word length is open */
    double growth;
    char msg[1400];
};

static double ms_since(const struct timespec *t)
{
    struct timespec now;
    clock_gettime(CLOCK_MONOTONIC, &now);
    return 1e3 * (double)(now.tv_sec - t->tv_sec) + 1e-6 * (double)(now.tv_nsec - t->tv_nsec);
}

static void run_clear(screen_iterate_state *s)
{
    if (s->have) {
        iterate_map_clear(s->M);
        if (s->have_ball)
            wordlen_clear(s->ball);
        _fmpz_vec_clear(s->x, FLINT_MAX(s->npc, 1));
        for (long i = 0; i < s->npts; i++)
            free(s->digits[i]);
        if (s->elts)
            _fmpz_vec_clear(s->elts, FLINT_MAX(s->cap * s->npc, 1));
    }
    free(s->root);
    free(s->wl);
    free(s->digits);
    free(s->word);
    long steps = s->steps;
    memset(s, 0, sizeof *s);
    s->steps = steps;
}

void screen_iterate_forget(explorer_app *app)
{
    if (app->iter) {
        run_clear(app->iter);
        free(app->iter);
        app->iter = NULL;
    }
}

static screen_iterate_state *state_of(explorer_app *app)
{
    if (app->iter == NULL) {
        app->iter = calloc(1, sizeof *app->iter);
        if (app->iter == NULL)
            abort();
        app->iter->steps = app->doc->iterate_steps > 0 ? (long)app->doc->iterate_steps
                                                       : ITER_UI_DEFAULT_STEPS;
        if (app->iter->steps > ITER_UI_MAX_STEPS)
            app->iter->steps = ITER_UI_MAX_STEPS;
    }
    return app->iter;
}

static void grow_arrays(screen_iterate_state *s)
{
    if (s->npts < s->cap)
        return;
    long nc = s->cap ? 2 * s->cap : 256;
    s->root = realloc(s->root, (size_t)nc * sizeof *s->root);
    s->wl = realloc(s->wl, (size_t)nc * sizeof *s->wl);
    s->digits = realloc(s->digits, (size_t)nc * sizeof *s->digits);
    if (s->root == NULL || s->wl == NULL || s->digits == NULL)
        abort();
    fmpz *ne = _fmpz_vec_init(FLINT_MAX(nc * s->npc, 1));
    if (s->elts) {
        _fmpz_vec_swap(ne, s->elts, s->cap * s->npc);
        _fmpz_vec_clear(s->elts, FLINT_MAX(s->cap * s->npc, 1));
    }
    s->elts = ne;
    s->cap = nc;
}

/* Records the point alpha^at(w) = s->x. */
static void record(screen_iterate_state *s)
{
    grow_arrays(s);
    iterate_point_t p;
    iterate_point_init(p);
    iterate_point_set(p, s->M, s->x, s->at);
    long i = s->npts++;
    s->root[i] = NAN;
    if (s->at > 0)
        s->root[i] = iterate_point_root_d(p);
    char buf[256];
    size_t k = 0;
    buf[0] = '\0';
    for (slong j = 0; j < p->nlayers && k + 24 < sizeof buf; j++)
        k += (size_t)snprintf(buf + k, sizeof buf - k, "%s%ld", j ? " " : "",
                              (long)p->layers[j].digits);
    s->digits[i] = malloc(k + 1);
    if (s->digits[i] == NULL)
        abort();
    memcpy(s->digits[i], buf, k + 1);
    s->wl[i] = -1;
    _fmpz_vec_set(s->elts + i * s->npc, s->x, s->npc);
    iterate_point_clear(p);
}

/* The session's iterate key := this run's element and steps (a change
 * makes the session unsaved). */
static void remember(explorer_app *app, const screen_iterate_state *s)
{
    const char *old = app->doc->iterate_word.text;
    if (old && s->word && strcmp(old, s->word) == 0 && app->doc->iterate_steps == s->steps)
        return;
    session_set_iterate(app->doc, s->word, s->steps);
    viewmodel_mark_dirty(app->vm);
}

/* Starts a run on the word text (a generator when gen >= 0); keep: the
 * session's iterate key takes the element and steps (a choice of the
 * user's, not the run opened by default on entry). */
static void run_start(explorer_app *app, const char *text, slong gen, int keep)
{
    screen_iterate_state *s = state_of(app);
    run_clear(s);
    analysis_view_t A;
    analysis_get_view(A, app->A);
    if (!A->has_group || !A->has_map || !A->valid) {
        snprintf(s->msg, sizeof s->msg, "no well-defined map to iterate%s%.700s",
                 app->group_problem[0] ? ": " : "", app->group_problem);
        return;
    }
    nserr_t err;
    nserr_init(err);
    expr_t e;
    expr_init(e);
    const nq_struct *Q = A->quotient;
    s->npc = A->npc;
    s->x = _fmpz_vec_init(FLINT_MAX(s->npc, 1));
    s->have = 1; /* from here on run_clear frees M, x */
    if (expr_parse(e, text, 1, 1, A->pres->gens, err) != NS_OK ||
        iterate_map_set(s->M, Q, A->endo, NULL, err) != NS_OK ||
        iterate_map_eval(s->M, s->x, e, NULL, err) != NS_OK) {
        snprintf(s->msg, sizeof s->msg, "%d:%d: %.600s", err->line, err->col, err->msg);
        expr_clear(e);
        run_clear(s);
        nserr_clear(err);
        return;
    }
    expr_clear(e);
    nserr_clear(err);
    s->word = malloc(strlen(text) + 1);
    if (s->word == NULL)
        abort();
    strcpy(s->word, text);
    s->gen = gen;
    wordlen_init(s->ball, Q, ITER_UI_BALL);
    s->have_ball = 1;
    s->growth = A->growth_str ? strtod(A->growth_str, NULL) : NAN;
    s->at = 0;
    record(s);
    s->running = s->steps > 0;
    s->ball_running = 1;
    if (keep)
        remember(app, s);
}

/* ---- computing in slices --------------------------------------------- */

typedef struct {
    explorer_app *app;
    struct timespec start;
    int deadline; /* 1: stop at the end of the slice (resumable work only) */
    int esc;
} slice_ctx;

/* Polls the keyboard inside a long step: Esc stops, other keys wait in
 * the type-ahead for the main loop. */
static int slice_progress(void *ctx, const char *stage, double fraction)
{
    (void)stage;
    (void)fraction;
    slice_ctx *c = ctx;
    wint_t ch;
    int r, delay = wgetdelay(stdscr);
    nodelay(stdscr, TRUE);
    while ((r = get_wch(&ch)) != ERR) {
        if (r == OK && ch == UIKEY_ESC && !c->esc)
            c->esc = 1; /* a second Esc waits: it goes back */
        else
            app_typeahead_push(c->app, r == KEY_CODE_YES ? UIKEY_FN((int)ch) : (int)ch);
    }
    wtimeout(stdscr, delay); /* the main loop's own polling goes on */
    if (c->esc)
        return 1;
    return c->deadline && ms_since(&c->start) > ITER_SLICE_MS;
}

int screen_iterate_busy(const explorer_app *app)
{
    return app->screen == SCREEN_ITERATE && app->iter && app->iter->have &&
           (app->iter->running || app->iter->ball_running);
}

static void stop_run(screen_iterate_state *s)
{
    s->running = s->ball_running = 0;
}

int screen_iterate_tick(explorer_app *app)
{
    screen_iterate_state *s = app->iter;
    if (s == NULL || !s->have)
        return ACT_NONE;
    slice_ctx c = {app, {0, 0}, 0, 0};
    clock_gettime(CLOCK_MONOTONIC, &c.start);
    ns_progress_t hook = {slice_progress, &c};
    nserr_t err;
    nserr_init(err);
    while (s->running && ms_since(&c.start) < ITER_SLICE_MS) {
        c.deadline = 0;
        if (iterate_map_advance(s->M, s->x, 1, &hook, err) != NS_OK)
            break;
        s->at++;
        record(s);
        if ((long)s->at >= s->steps)
            s->running = 0;
    }
    /* word lengths: the open one first, growing the ball in slices */
    while (!c.esc && s->ball_running && s->wl_next < s->npts &&
           ms_since(&c.start) < ITER_SLICE_MS) {
        c.deadline = 1;
        slong r = wordlen_get(s->ball, s->elts + s->wl_next * s->npc, -1, &hook);
        if (r == -2)
            break;
        s->wl[s->wl_next] = r;
        if (r < 0) {
            /* out of reach for good: later iterates are looked up only */
            s->ball_running = 0;
            for (long i = s->wl_next + 1; i < s->npts; i++)
                s->wl[i] = wordlen_lookup(s->ball, s->elts + i * s->npc);
        }
        s->wl_next++;
    }
    if (!s->running && s->wl_next >= s->npts)
        s->ball_running = 0;
    if (c.esc) {
        stop_run(s);
        app_status(app, 0, "stopped at n = %lu; what was computed stays", (unsigned long)s->at);
    }
    nserr_clear(err);
    return ACT_REDRAW;
}

/* ---- drawing --------------------------------------------------------- */

static const char *sym(const explorer_app *app, const char *utf8, const char *ascii)
{
    return app->utf8 ? utf8 : ascii;
}

void screen_iterate_draw(explorer_app *app)
{
    screen_iterate_state *s = state_of(app);
    char where[96];
    snprintf(where, sizeof where, "iterates");
    app_draw_header(app, where);
    const char *alpha = sym(app, "\xCE\xB1", "alpha");
    int y = 1;
    if (!s->have) {
        paint_text(2, 1, COLS - 2, s->msg[0] ? ROLE_ERROR : ROLE_NORMAL,
                   s->msg[0] ? s->msg : "no run: e types an element, Left/Right pick a generator");
    } else {
        analysis_view_t A;
        analysis_get_view(A, app->A);
        paint_textf(y++, 1, COLS - 2, ROLE_HEADING, "%s^n(%s), n = 0..%ld   growth rate %s", alpha,
                    s->word, s->steps, A->growth_str ? A->growth_str : "?");
        int table_rows = (LINES - 6) / 2 - 1;
        if (table_rows < 3)
            table_rows = 3;
        paint_textf(y++, 1, COLS - 2, ROLE_DIM, "%8s  %-24s %-22s %s", "n", "digits per layer",
                    "N^(1/n)", "word length");
        long first = s->npts - table_rows;
        if (first < 0)
            first = 0;
        for (long i = first; i < s->npts; i++) {
            char root[40], wl[40];
            if (isnan(s->root[i]))
                snprintf(root, sizeof root, "-");
            else
                snprintf(root, sizeof root, "%.15g", s->root[i]);
            if (s->wl[i] >= 0)
                snprintf(wl, sizeof wl, "%ld", s->wl[i]);
            else if (i >= s->wl_next && s->ball_running)
                snprintf(wl, sizeof wl, "searching");
            else
                snprintf(wl, sizeof wl, "> %ld", (long)s->ball->complete_radius);
            paint_textf(y++, 1, COLS - 2, ROLE_NUMBER, "%8ld  %-24s %-22s %s", i, s->digits[i], root,
                        wl);
        }
        y = 3 + table_rows;
        /* the plot of the roots, n = 1..at, with the growth-rate line */
        int ph = LINES - 3 - y - 1, pw = COLS - 14;
        if (ph >= 3 && pw >= 10 && s->npts > 1) {
            double lo, hi;
            plot_series_range(&lo, &hi, s->root + 1, (int)(s->npts - 1), s->growth);
            plot_canvas c;
            plot_canvas_init(&c, pw, ph, !app->utf8);
            int line = plot_series(&c, s->root + 1, (int)(s->npts - 1), lo, hi, s->growth);
            for (int r = 0; r < ph; r++) {
                char *row = plot_canvas_row(&c, r);
                paint_text(y + r, 12, pw, ROLE_NUMBER, row);
                free(row);
            }
            paint_textf(y, 1, 10, ROLE_DIM, "%10.4g", hi);
            paint_textf(y + ph - 1, 1, 10, ROLE_DIM, "%10.4g", lo);
            if (line >= 0)
                paint_textf(y + line, 1, 10, ROLE_MARKER, "GR %7.4g", s->growth);
            paint_textf(y + ph, 12, pw, ROLE_DIM, "n = 1%*s n = %lu", pw - 14, "",
                        (unsigned long)s->at);
            plot_canvas_clear(&c);
        }
        if (s->running || s->ball_running)
            paint_textf(LINES - 2, 0, COLS, ROLE_MARKER, "computing: n = %lu of %ld%s  (Esc stops)",
                        (unsigned long)s->at, s->steps,
                        s->running ? "" : ", word lengths");
    }
    if (app->status[0] && !(s->have && (s->running || s->ball_running)))
        app_draw_status(app);
    app_draw_hints(app, screen_iterate_keys());
}

/* ---- entry and actions -------------------------------------------------- */

void screen_iterate_open(explorer_app *app)
{
    screen_iterate_state *s = state_of(app);
    app->screen = SCREEN_ITERATE;
    if (s->have)
        return;
    if (app->doc->iterate_word.text)
        run_start(app, app->doc->iterate_word.text, -1, 0);
    else if (app->vm->ngens > 0)
        run_start(app, app->vm->names[app->vm->sel_image], (slong)app->vm->sel_image, 0);
}

void screen_iterate_set_word(explorer_app *app, const char *text)
{
    run_start(app, text, -1, 1);
    app->screen = SCREEN_ITERATE;
}

void screen_iterate_check_word(explorer_app *app, const char *text)
{
    nserr_t err;
    nserr_init(err);
    expr_t e;
    expr_init(e);
    if (expr_parse(e, text, 1, 1, app->pres->gens, err) != NS_OK) {
        app->edit_ok = 0;
        app->edit_caret = err->col;
        snprintf(app->edit_msg, sizeof app->edit_msg, "%s", err->msg);
    } else {
        app->edit_ok = 1;
        app->edit_caret = 0;
        snprintf(app->edit_msg, sizeof app->edit_msg, "an element; Enter iterates it");
    }
    expr_clear(e);
    nserr_clear(err);
}

static int act_back(explorer_app *app)
{
    screen_iterate_state *s = state_of(app);
    if (s->running || s->ball_running) {
        stop_run(s);
        app_status(app, 0, "stopped at n = %lu; what was computed stays", (unsigned long)s->at);
        return ACT_REDRAW;
    }
    app->screen = SCREEN_MAIN;
    return ACT_REDRAW;
}

static int act_quit_screen(explorer_app *app)
{
    stop_run(state_of(app));
    app->screen = SCREEN_MAIN;
    return ACT_REDRAW;
}

static int act_type(explorer_app *app)
{
    screen_iterate_state *s = state_of(app);
    prompt_open(app, PROMPT_ITERATE, s->have && s->gen < 0 && s->word ? s->word : "");
    return ACT_REDRAW;
}

static int pick_gen(explorer_app *app, int delta)
{
    screen_iterate_state *s = state_of(app);
    size_t n = app->vm->ngens;
    if (n == 0)
        return ACT_NONE;
    long g = s->have && s->gen >= 0 ? s->gen : (long)app->vm->sel_image;
    g = ((g + delta) % (long)n + (long)n) % (long)n;
    app->vm->sel_image = (size_t)g;
    run_start(app, app->vm->names[g], g, 1);
    return ACT_REDRAW;
}

static int act_prev(explorer_app *app)
{
    return pick_gen(app, -1);
}

static int act_next(explorer_app *app)
{
    return pick_gen(app, 1);
}

static int change_steps(explorer_app *app, int up)
{
    screen_iterate_state *s = state_of(app);
    long st = up ? s->steps * 2 : s->steps / 2;
    if (st < 1)
        st = 1;
    if (st > ITER_UI_MAX_STEPS)
        st = ITER_UI_MAX_STEPS;
    s->steps = st;
    if (s->have) {
        if ((long)s->at < st)
            s->running = 1;
        remember(app, s);
    }
    app_status(app, 0, "%ld steps", st);
    return ACT_REDRAW;
}

static int act_more(explorer_app *app)
{
    return change_steps(app, 1);
}

static int act_fewer(explorer_app *app)
{
    return change_steps(app, 0);
}

static const ui_binding iterate_bindings[] = {
    {UIKEY_ESC, act_back, "Esc", "stop the run (keeping what was computed), then back", "Esc stop/back"},
    {'q', act_quit_screen, "q", "back to the main screen", NULL},
    {'e', act_type, "e", "type an element to iterate (a word in the generators)", "e element"},
    {UIKEY_FN(KEY_LEFT), act_prev, "Left / Right", "iterate the previous / next generator",
     "</> generator"},
    {UIKEY_FN(KEY_RIGHT), act_next, NULL, NULL, NULL},
    {'+', act_more, "+ / -", "double / halve the number of steps", "+/- steps"},
    {'=', act_more, NULL, NULL, NULL},
    {'-', act_fewer, NULL, NULL, NULL},
    {'?', screen_help_open, "?", "this help", "? help"},
};

static const ui_keymap iterate_keymap = {"Iterates", iterate_bindings,
                                         sizeof iterate_bindings / sizeof iterate_bindings[0]};

const ui_keymap *screen_iterate_keys(void)
{
    return &iterate_keymap;
}
