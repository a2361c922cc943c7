/* screen_full.c — every value of the main screen in full: the selected
 * image and layer, the bounds, the invariants with all their digits, the
 * failing relators, the last message.  Whatever a narrow cell or line of
 * the main screen had to shorten is here whole, wrapped to the width of
 * the terminal. */
#include <curses.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "app.h"
#include "frame.h"
#include "screens.h"
#include "lineedit.h"
#include "paint.h"

static void full_int(paint_lines *t, const char *label, const fmpz_t v)
{
    char *s = fmpz_get_str(NULL, 10, v);
    size_t nd = strlen(s) - (s[0] == '-');
    paint_lines_add(t, ROLE_NUMBER, "  %s = %s", label, s);
    if (nd > 12)
        paint_lines_add(t, ROLE_DIM, "    (%zu digits)", nd);
    flint_free(s);
}

static void full_build(explorer_app *app, paint_lines *t)
{
    analysis_view_t A;
    analysis_get_view(A, app->A);
    const char *arrow = app->utf8 ? "\xE2\x86\xA6" : "->";
    paint_lines_add(t, ROLE_HEADING, "Title");
    paint_lines_add(t, ROLE_NORMAL, "  %s", app->title);
    paint_lines_add(t, ROLE_HEADING, "Group, class %ld", (long)app->cls);
    paint_lines_add(t, ROLE_NORMAL, "  %s", app->group_text);
    if (app->group_problem[0])
        paint_lines_add(t, ROLE_ERROR, "  %s", app->group_problem);
    if (app->status[0])
        paint_lines_add(t, app->status_error ? ROLE_ERROR : ROLE_NORMAL, "  last message: %s",
                        app->status_error ? app_error_text(app->status) : app->status);
    paint_lines_add(t, ROLE_NORMAL, "%s", "");

    size_t i = app->vm->sel_image;
    if (i < app->vm->ngens) {
        paint_lines_add(t, ROLE_HEADING, "Selected image");
        paint_lines_add(t, ROLE_NORMAL, "  %s %s %s", app->vm->names[i], arrow, app->vm->images[i]);
        if (A->has_map && A->gen_image_str)
            paint_lines_add(t, ROLE_NUMBER, "  = %s", A->gen_image_str[i]);
        paint_lines_add(t, ROLE_NORMAL, "%s", "");
    }
    if (A->has_group && app->vm->sel_layer < (size_t)A->nlayers) {
        slong j = (slong)app->vm->sel_layer;
        analysis_layer_view_t L;
        analysis_get_layer_view(L, app->A, j);
        paint_lines_add(t, ROLE_HEADING, "Selected layer %ld: %s", (long)(j + 1),
                        L->group_str ? L->group_str : "?");
        if (A->has_map && A->valid && L->rho_str) {
            paint_lines_add(t, ROLE_NUMBER, "  rho_%ld = %s", (long)(j + 1), L->rho_str);
            paint_lines_add(t, ROLE_NUMBER, "  rho_%ld^(1/%ld) = %s", (long)(j + 1), (long)(j + 1),
                            L->root_bound_str);
            full_int(t, "det M", L->det);
            full_int(t, "det(I - M)", L->det_i_minus);
        }
        for (slong k = 0; k < L->free_rank; k++)
            paint_lines_add(t, ROLE_NORMAL, "  e%ld = %s", (long)(k + 1), L->basis[k]);
        paint_lines_add(t, ROLE_NORMAL, "%s", "");
    }
    if (!A->has_map) {
        paint_lines_add(t, ROLE_ERROR, "No map analysed.");
    } else if (!A->valid) {
        paint_lines_add(t, ROLE_HEADING, "Relations that do not hold in the class-%ld quotient",
                        (long)app->cls);
        for (slong k = 0; k < A->nfail; k++) {
            paint_lines_add(t, ROLE_NORMAL, "  %s  %s  %s", A->fail_relator[k], arrow,
                            A->fail_image[k]);
            if (A->failures)
                screen_main_failure_lines(app, k, t, 1);
        }
    } else {
        paint_lines_add(t, ROLE_HEADING, "Growth");
        paint_lines_add(t, ROLE_NUMBER, "  lower bound L = %s (layer %ld)", A->lower_bound_str,
                        (long)A->lower_layer);
        paint_lines_add(t, ROLE_NUMBER, "  growth rate   = %s", A->growth_str);
        paint_lines_add(t, ROLE_NUMBER, "  upper bound U = %s (layer %ld)", A->upper_bound_str,
                        (long)A->upper_layer);
        if (A->growth_reason)
            paint_lines_add(t, ROLE_NORMAL, "  %s", A->growth_reason);
        paint_lines_add(t, ROLE_NORMAL, "%s", "");
        paint_lines_add(t, ROLE_HEADING, "Invariants");
        paint_lines_add(t, ROLE_NUMBER, "  entropy = %s",
                        A->entropy_str ? A->entropy_str : "not defined");
        if (A->log_growth_str)
            paint_lines_add(t, ROLE_NUMBER, "  log growth rate = %s", A->log_growth_str);
        if (A->lefschetz_defined) {
            full_int(t, "Lefschetz", A->lefschetz);
            full_int(t, "Nielsen", A->nielsen);
            if (A->reid_kind == ANALYSIS_REID_FINITE)
                full_int(t, "Reidemeister", A->reidemeister);
            else
                paint_lines_add(t, ROLE_NUMBER, "  Reidemeister = %s",
                                A->reid_kind == ANALYSIS_REID_INFINITE ? "infinite"
                                                                       : "not defined");
        } else {
            paint_lines_add(t, ROLE_NORMAL, "  Lefschetz, Nielsen, Reidemeister: not defined (%s)",
                            A->undefined_reason ? A->undefined_reason : "see the report");
        }
        if (A->index_defined)
            full_int(t, "index of the image", A->image_index);
    }
}

/* Rows of the text wrapped to width w; row r of it is written to (*line,
 * *off) when asked. */
static int full_rows(const paint_lines *t, int w, int want, int *line, size_t *off, size_t *len)
{
    int r = 0;
    for (int i = 0; i < t->n; i++) {
        const char *s = t->v[i].text;
        size_t o = 0;
        do {
            size_t cols = lineedit_utf8_ncols(s + o);
            size_t take = cols > (size_t)w ? lineedit_utf8_offset(s + o, (size_t)w) : strlen(s + o);
            if (r == want) {
                *line = i;
                *off = o;
                *len = take;
            }
            r++;
            o += take;
        } while (s[o]);
    }
    return r;
}

void screen_full_draw(explorer_app *app)
{
    paint_lines t = {0};
    full_build(app, &t);
    int w = COLS - 2, rows = LINES - 3, line = 0;
    size_t off = 0, len = 0;
    int n = full_rows(&t, w, -1, &line, &off, &len);
    if (app->full_scroll > n - rows)
        app->full_scroll = n - rows;
    if (app->full_scroll < 0)
        app->full_scroll = 0;
    char where[96];
    int k = snprintf(where, sizeof where, "every value in full");
    if (n > rows)
        snprintf(where + k, sizeof where - (size_t)k, "   lines %d-%d of %d", app->full_scroll + 1,
                 app->full_scroll + rows < n ? app->full_scroll + rows : n, n);
    app_draw_header(app, where);
    for (int r = 0; r < rows && app->full_scroll + r < n; r++) {
        full_rows(&t, w, app->full_scroll + r, &line, &off, &len);
        char *piece = malloc(len + 1);
        if (piece == NULL)
            abort();
        memcpy(piece, t.v[line].text + off, len);
        piece[len] = '\0';
        paint_text(1 + r, 1, w, t.v[line].role, piece);
        free(piece);
    }
    paint_lines_free(&t);
    app_draw_hints(app, screen_full_keys());
}

static int act_back(explorer_app *app)
{
    app->screen = SCREEN_MAIN;
    return ACT_REDRAW;
}

static int act_up(explorer_app *app)
{
    app->full_scroll--;
    return ACT_REDRAW;
}

static int act_down(explorer_app *app)
{
    app->full_scroll++;
    return ACT_REDRAW;
}

static int act_page_up(explorer_app *app)
{
    app->full_scroll -= LINES - 4;
    return ACT_REDRAW;
}

static int act_page_down(explorer_app *app)
{
    app->full_scroll += LINES - 4;
    return ACT_REDRAW;
}

static const ui_binding full_bindings[] = {
    {UIKEY_ESC, act_back, "Esc / q / v", "back to the main screen", "Esc back"},
    {'q', act_back, NULL, NULL, NULL},
    {'v', act_back, NULL, NULL, NULL},
    {UIKEY_FN(KEY_UP), act_up, "Up / k", "scroll up one line", "j/k scroll"},
    {'k', act_up, NULL, NULL, NULL},
    {UIKEY_FN(KEY_DOWN), act_down, "Down / j", "scroll down one line", NULL},
    {'j', act_down, NULL, NULL, NULL},
    {UIKEY_FN(KEY_PPAGE), act_page_up, "PgUp / b", "scroll up one page", NULL},
    {'b', act_page_up, NULL, NULL, NULL},
    {UIKEY_FN(KEY_NPAGE), act_page_down, "PgDn / Space", "scroll down one page", NULL},
    {' ', act_page_down, NULL, NULL, NULL},
    {'?', screen_help_open, "?", "this help", "? help"},
};

static const ui_keymap full_keymap = {"Every value in full (v on the main screen)", full_bindings,
                                      sizeof full_bindings / sizeof full_bindings[0]};

const ui_keymap *screen_full_keys(void)
{
    return &full_keymap;
}
