/* screen_layer.c — one layer in full: its basis as commutators, the matrix
 * of the map on its free part, the factored characteristic polynomial, the
 * eigenvalues with their moduli, det and det(I - M), with every digit the
 * engine gives.  The text is built as a list of lines and scrolled. */
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

static const char *sym(const explorer_app *app, const char *utf8, const char *ascii)
{
    return app->utf8 ? utf8 : ascii;
}

/* A matrix as right-aligned rows "[ 2  1 ]". */
static void detail_matrix(paint_lines *t, const fmpz_mat_t M)
{
    slong r = fmpz_mat_nrows(M), c = fmpz_mat_ncols(M);
    if (r == 0 || c == 0) {
        paint_lines_add(t, ROLE_NUMBER, "  (the zero space)");
        return;
    }
    int *w = calloc((size_t)c, sizeof *w);
    if (w == NULL)
        abort();
    for (slong j = 0; j < c; j++)
        for (slong i = 0; i < r; i++) {
            int len = (int)fmpz_sizeinbase(fmpz_mat_entry(M, i, j), 10) + 1;
            if (len > w[j])
                w[j] = len;
        }
    for (slong i = 0; i < r; i++) {
        size_t cap = 16;
        for (slong j = 0; j < c; j++)
            cap += (size_t)w[j] + 2;
        char *row = malloc(cap);
        if (row == NULL)
            abort();
        size_t k = (size_t)snprintf(row, cap, "  [");
        for (slong j = 0; j < c; j++) {
            char *s = fmpz_get_str(NULL, 10, fmpz_mat_entry(M, i, j));
            k += (size_t)snprintf(row + k, cap - k, " %*s", w[j], s);
            flint_free(s);
        }
        snprintf(row + k, cap - k, " ]");
        paint_lines_add(t, ROLE_NUMBER, "%s", row);
        free(row);
    }
    free(w);
}

static void detail_build(explorer_app *app, paint_lines *t)
{
    analysis_view_t A;
    analysis_get_view(A, app->A);
    if (!A->has_group || app->vm->sel_layer >= (size_t)A->nlayers) {
        paint_lines_add(t, ROLE_ERROR, "No layer to show.");
        return;
    }
    slong j = (slong)app->vm->sel_layer + 1;
    analysis_layer_view_t L;
    analysis_get_layer_view(L, app->A, j - 1);
    const char *rho = sym(app, "\xCF\x81", "rho");
    const char *gam = sym(app, "\xCE\xB3", "gamma");

    paint_lines_add(t, ROLE_HEADING, "Layer %ld = %s%ld / %s%ld  %s  %s", (long)j, gam, (long)j,
                    gam, (long)(j + 1), sym(app, "\xE2\x89\x85", "="),
                    L->group_str ? L->group_str : "?");
    /* every pc generator of the layer is accounted for */
    long dep = (long)(L->count - L->free_rank - L->ntors);
    /* the quotient keeps no dependent generator (nq.c puts such a layer in
     * Smith form); a presentation computed otherwise still says so */
    if (dep > 0)
        paint_lines_add(t, ROLE_NORMAL,
                        "  %ld pc generator%s: %ld for the free part, %ld for torsion factors, "
                        "%ld dependent",
                        (long)L->count, L->count == 1 ? "" : "s", (long)L->free_rank,
                        (long)L->ntors, dep);
    else
        paint_lines_add(t, ROLE_NORMAL,
                        "  %ld pc generator%s: %ld for the free part, %ld for torsion factors",
                        (long)L->count, L->count == 1 ? "" : "s", (long)L->free_rank,
                        (long)L->ntors);
    if (dep > 0)
        paint_lines_add(
            t, ROLE_DIM,
            "  (dependent: the layer's relations write %s through the other pc generators,"
            " so %s nothing to the group)",
            dep == 1 ? "it" : "each of them", dep == 1 ? "it adds" : "they add");
    if (L->ntors > 0 && L->pc_labels) {
        /* the torsion is only visible on the pc generators: name them */
        char names[512] = "";
        size_t k = 0;
        for (slong g = 0; g < L->count && k + 2 < sizeof names; g++)
            k += (size_t)snprintf(names + k, sizeof names - k, "%s%s", g ? ", " : "",
                                  L->pc_labels[g]);
        paint_lines_add(t, ROLE_NORMAL, "  pc generators of the layer: %s", names);
    }
    paint_lines_add(t, ROLE_NORMAL, "%s", "");
    paint_lines_add(t, ROLE_HEADING, "Basis of the free part, as commutators");
    if (L->free_rank == 0)
        paint_lines_add(t, ROLE_NORMAL, "  (no free part)");
    for (slong k = 0; k < L->free_rank; k++)
        paint_lines_add(t, ROLE_NORMAL, "  e%ld = %s", (long)(k + 1), L->basis[k]);
    paint_lines_add(t, ROLE_NORMAL, "%s", "");

    if (!A->has_map) {
        paint_lines_add(t, ROLE_ERROR, "No map analysed: %s", app->group_problem);
        return;
    }
    if (!A->valid) {
        paint_lines_add(t, ROLE_ERROR,
                        "The images do not define an endomorphism of the class-%ld quotient,",
                        (long)app->cls);
        paint_lines_add(
            t, ROLE_ERROR,
            "so the map induces no matrix here (the main screen lists the failing relators).");
        return;
    }
    paint_lines_add(t, ROLE_HEADING, "Matrix M%ld (column k holds the image of e_k)", (long)j);
    detail_matrix(t, L->matrix);
    if (L->ntors > 0) {
        paint_lines_add(t, ROLE_NORMAL, "%s", "");
        paint_lines_add(t, ROLE_HEADING,
                        "Action on the layer's %ld pc generators, torsion included",
                        (long)L->count);
        detail_matrix(t, L->action);
    }
    paint_lines_add(t, ROLE_NORMAL, "%s", "");
    paint_lines_add(t, ROLE_HEADING, "Characteristic polynomial");
    paint_lines_add(t, ROLE_NUMBER, "  %s", L->charpoly_str ? L->charpoly_str : "-");
    paint_lines_add(t, ROLE_NORMAL, "  factored over Z: %s",
                    L->charpoly_factored_str ? L->charpoly_factored_str : "-");
    paint_lines_add(t, ROLE_NORMAL, "%s", "");
    paint_lines_add(t, ROLE_HEADING, "Spectral radius");
    paint_lines_add(t, ROLE_NUMBER, "  %s%ld = %s%s", rho, (long)j, L->rho_str ? L->rho_str : "-",
                    A->upper_layer == j ? "   U: attains the upper bound" : "");
    if (L->rho_minpoly_str)
        paint_lines_add(t, ROLE_NORMAL, "  a root of %s", L->rho_minpoly_str);
    paint_lines_add(t, ROLE_NUMBER, "  %s%ld^(1/%ld) = %s%s", rho, (long)j, (long)j,
                    L->root_bound_str ? L->root_bound_str : "-",
                    A->lower_layer == j ? "   L: attains the lower bound" : "");
    paint_lines_add(t, ROLE_NORMAL, "%s", "");
    paint_lines_add(t, ROLE_HEADING, "Eigenvalues, with multiplicity, by decreasing modulus");
    if (L->nev == 0)
        paint_lines_add(t, ROLE_NORMAL, "  (none)");
    const char *lam = sym(app, "\xCE\xBB", "lambda");
    for (slong k = 0; k < L->nev; k++)
        paint_lines_add(t, ROLE_NUMBER, "  %s%-3ld %-44s |%s%ld| = %s", lam, (long)(k + 1),
                        L->ev_str[k], lam, (long)(k + 1), L->ev_abs_str[k]);
    paint_lines_add(t, ROLE_NORMAL,
                    "  %ld of modulus > 1, %ld of modulus exactly 1 (decided exactly)",
                    (long)L->n_above_one, (long)L->n_unimodular);
    paint_lines_add(t, ROLE_NORMAL, "%s", "");
    char *d = fmpz_get_str(NULL, 10, L->det);
    char *e = fmpz_get_str(NULL, 10, L->det_i_minus);
    paint_lines_add(t, ROLE_HEADING, "Determinants");
    char l1[64], l2[64];
    snprintf(l1, sizeof l1, "det M%ld", (long)j);
    snprintf(l2, sizeof l2, "det(I %s M%ld)", sym(app, "\xE2\x88\x92", "-"), (long)j);
    int pad = (int)lineedit_utf8_ncols(l2) - (int)lineedit_utf8_ncols(l1);
    paint_lines_add(t, ROLE_NUMBER, "  %s%*s = %s", l1, pad, "", d);
    paint_lines_add(t, ROLE_NUMBER, "  %s = %s", l2, e);
    flint_free(d);
    flint_free(e);
    if (L->entropy_str)
        paint_lines_add(t, ROLE_NORMAL,
                        "  entropy of this layer: sum of log|%s| over |%s| > 1 = %s", lam, lam,
                        L->entropy_str);
    int npic = 0; /* the eigenvalues in the complex plane (screen_charts.c) */
    char **pic = screen_charts_eigen_rows(app, j - 1, 36, 9, &npic);
    if (npic > 0) {
        paint_lines_add(t, ROLE_NORMAL, "%s", "");
        paint_lines_add(t, ROLE_HEADING, "Eigenvalues in the complex plane");
    }
    for (int r = 0; r < npic; r++) {
        paint_lines_add(t, ROLE_NUMBER, "  %s", pic[r]);
        free(pic[r]);
    }
    free(pic);
}

void screen_layer_draw(explorer_app *app)
{
    paint_lines t = {0};
    detail_build(app, &t);
    int rows = LINES - 3;
    if (app->detail_scroll > t.n - rows)
        app->detail_scroll = t.n - rows;
    if (app->detail_scroll < 0)
        app->detail_scroll = 0;
    /* where we are goes in the header, so that no message can cover it */
    char where[160];
    int k =
        snprintf(where, sizeof where, "layer %zu of %zu", app->vm->sel_layer + 1, app->vm->nlayers);
    if (t.n > rows)
        snprintf(where + k, sizeof where - (size_t)k, "   lines %d-%d of %d",
                 app->detail_scroll + 1,
                 app->detail_scroll + rows < t.n ? app->detail_scroll + rows : t.n, t.n);
    app_draw_header(app, where);
    for (int r = 0; r < rows && app->detail_scroll + r < t.n; r++) {
        const paint_line *l = &t.v[app->detail_scroll + r];
        const char *text = l->text + lineedit_utf8_offset(l->text, (size_t)app->detail_hscroll);
        paint_text(1 + r, 1, COLS - 1, l->role, text);
    }
    paint_lines_free(&t);
    if (app->status[0])
        app_draw_status(app);
    app_draw_hints(app, screen_layer_keys());
}

/* ---- actions ----------------------------------------------------------- */

static int act_back(explorer_app *app)
{
    app->screen = SCREEN_MAIN;
    return ACT_REDRAW;
}

static int act_up(explorer_app *app)
{
    app->detail_scroll--;
    return ACT_REDRAW;
}

static int act_down(explorer_app *app)
{
    app->detail_scroll++;
    return ACT_REDRAW;
}

static int act_page_up(explorer_app *app)
{
    app->detail_scroll -= LINES - 4;
    return ACT_REDRAW;
}

static int act_page_down(explorer_app *app)
{
    app->detail_scroll += LINES - 4;
    return ACT_REDRAW;
}

static int act_scroll_left(explorer_app *app)
{
    app->detail_hscroll -= COLS / 2;
    if (app->detail_hscroll < 0)
        app->detail_hscroll = 0;
    return ACT_REDRAW;
}

static int act_scroll_right(explorer_app *app)
{
    if (app->detail_hscroll < 100000)
        app->detail_hscroll += COLS / 2;
    return ACT_REDRAW;
}

static int act_prev_layer(explorer_app *app)
{
    app->detail_scroll = app->detail_hscroll = 0;
    return viewmodel_move_layer(app->vm, -1) ? ACT_REDRAW : ACT_NONE;
}

static int act_next_layer(explorer_app *app)
{
    app->detail_scroll = app->detail_hscroll = 0;
    return viewmodel_move_layer(app->vm, 1) ? ACT_REDRAW : ACT_NONE;
}

static const ui_binding layer_bindings[] = {
    {UIKEY_ESC, act_back, "Esc / q", "back to the main screen", "Esc back"},
    {'q', act_back, NULL, NULL, NULL},
    {UIKEY_FN(KEY_BACKSPACE), act_back, NULL, NULL, NULL},
    {UIKEY_FN(KEY_LEFT), act_prev_layer, "Left / h", "the previous layer", "h/l layer"},
    {'h', act_prev_layer, NULL, NULL, NULL},
    {UIKEY_FN(KEY_RIGHT), act_next_layer, "Right / l", "the next layer", NULL},
    {'l', act_next_layer, NULL, NULL, NULL},
    {UIKEY_FN(KEY_UP), act_up, "Up / k", "scroll up one line", "j/k scroll"},
    {'k', act_up, NULL, NULL, NULL},
    {UIKEY_FN(KEY_DOWN), act_down, "Down / j", "scroll down one line", NULL},
    {'j', act_down, NULL, NULL, NULL},
    {UIKEY_FN(KEY_PPAGE), act_page_up, "PgUp / b", "scroll up one page", NULL},
    {'b', act_page_up, NULL, NULL, NULL},
    {UIKEY_FN(KEY_NPAGE), act_page_down, "PgDn / Space", "scroll down one page", NULL},
    {' ', act_page_down, NULL, NULL, NULL},
    {'<', act_scroll_left, "< / >", "scroll wide lines (big matrices) left / right", "</> wide"},
    {'>', act_scroll_right, NULL, NULL, NULL},
    {'?', screen_help_open, "?", "this help", "? help"},
    {'x', prompt_act_export, "x", "export this layer's matrix (or the report) to a file", NULL},
};

static const ui_keymap layer_keymap = {"Layer detail", layer_bindings,
                                       sizeof layer_bindings / sizeof layer_bindings[0]};

const ui_keymap *screen_layer_keys(void)
{
    return &layer_keymap;
}
