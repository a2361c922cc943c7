/* screen_charts.c — pictures of the spectra (drawn by plot.c):
 *  - the bounds chart, a key away from the main screen: one bar per layer
 *    for rho_j^(1/j), with the growth rate and the upper bound max rho_k
 *    marked, so the gap between the growth rate and max rho_k is seen;
 *  - the eigenvalues of a layer in the complex plane with the unit circle,
 *    for the layer detail (hyperbolic: no point on the circle; expanding:
 *    every point outside). */
#include <curses.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "app.h"
#include "frame.h"
#include "screens.h"
#include "paint.h"
#include "plot.h"

static double num(const char *s)
{
    return s ? strtod(s, NULL) : 0.0;
}

char **screen_charts_eigen_rows(const explorer_app *app, slong j, int w, int h, int *nrows)
{
    analysis_layer_view_t L;
    analysis_get_layer_view(L, app->A, j);
    *nrows = 0;
    if (L->nev <= 0 || w < 8 || h < 3)
        return NULL;
    double *re = malloc((size_t)L->nev * sizeof(double));
    double *im = malloc((size_t)L->nev * sizeof(double));
    if (re == NULL || im == NULL)
        abort();
    for (slong k = 0; k < L->nev; k++) {
        analysis_get_eigenvalue_d(re + k, im + k, app->A, j, k);
    }
    plot_canvas c;
    plot_canvas_init(&c, w, h, !app->utf8);
    double R = plot_complex(&c, re, im, (int)L->nev);
    char **rows = malloc((size_t)(h + 1) * sizeof(char *));
    if (rows == NULL)
        abort();
    for (int y = 0; y < h; y++)
        rows[y] = plot_canvas_row(&c, y);
    char *legend = malloc(160);
    if (legend == NULL)
        abort();
    snprintf(legend, 160, "  (the disc of radius %.3g; %s eigenvalue, dots the unit circle)", R,
             app->utf8 ? "\xE2\x97\x8F" : "o");
    rows[h] = legend;
    *nrows = h + 1;
    plot_canvas_clear(&c);
    free(re);
    free(im);
    return rows;
}

void screen_bounds_draw(explorer_app *app)
{
    app_draw_header(app, "bounds chart");
    analysis_view_t A;
    analysis_get_view(A, app->A);
    if (!A->has_group || !A->has_map || !A->valid) {
        paint_text(2, 1, COLS - 2, ROLE_ERROR, "No well-defined map: no bounds to draw.");
        app_draw_hints(app, screen_bounds_keys());
        return;
    }
    const char *rho = app->utf8 ? "\xCF\x81" : "rho";
    int n = (int)A->nlayers;
    double *v = malloc((size_t)(n > 0 ? n : 1) * sizeof(double));
    if (v == NULL)
        abort();
    double gr = num(A->growth_str), up = num(A->upper_bound_str), vmax = up;
    for (int j = 0; j < n; j++) {
        analysis_layer_view_t L;
        analysis_get_layer_view(L, app->A, j);
        v[j] = num(L->root_bound_str);
        if (v[j] > vmax)
            vmax = v[j];
    }
    if (gr > vmax)
        vmax = gr;
    vmax = vmax > 0 ? vmax * 1.05 : 1;
    paint_textf(1, 1, COLS - 2, ROLE_HEADING, "%s_j^(1/j) for every layer j: the lower bounds", rho);
    int y0 = 3, rows = LINES - 3 - y0 - 3;
    if (rows > n)
        rows = n;
    int w = COLS - 30;
    plot_canvas c;
    plot_canvas_init(&c, w, rows > 0 ? rows : 1, !app->utf8);
    plot_bars(&c, v, rows, vmax, gr, up);
    for (int r = 0; r < rows; r++) {
        char *row = plot_canvas_row(&c, r);
        paint_textf(y0 + r, 1, 8, ROLE_NORMAL, "j = %d", r + 1);
        paint_textf(y0 + r, 9, 16, ROLE_NUMBER, "%.10g", v[r]);
        paint_text(y0 + r, 27, w, ROLE_NUMBER, row);
        free(row);
    }
    plot_canvas_clear(&c);
    if (rows < n)
        paint_textf(y0 + rows, 1, COLS - 2, ROLE_DIM, "(%d more layers below the screen)",
                    n - rows);
    int y = y0 + rows + 1;
    paint_textf(y++, 1, COLS - 2, ROLE_MARKER, "%s growth rate %s  (= %s_1 when %s_1 >= 1)",
                app->utf8 ? "\xE2\x94\x82" : "|", A->growth_str ? A->growth_str : "?", rho, rho);
    paint_textf(y++, 1, COLS - 2, ROLE_MARKER, "%s upper bound max %s_k = %s (layer %ld)",
                app->utf8 ? "\xE2\x94\x8A" : ":", rho, A->upper_bound_str ? A->upper_bound_str : "?",
                (long)A->upper_layer);
    free(v);
    if (app->status[0])
        app_draw_status(app);
    app_draw_hints(app, screen_bounds_keys());
}

static int act_back(explorer_app *app)
{
    app->screen = SCREEN_MAIN;
    return ACT_REDRAW;
}

static const ui_binding bounds_bindings[] = {
    {UIKEY_ESC, act_back, "Esc / q", "back to the main screen", "Esc back"},
    {'q', act_back, NULL, NULL, NULL},
    {'?', screen_help_open, "?", "this help", "? help"},
};

static const ui_keymap bounds_keymap = {"Bounds chart", bounds_bindings,
                                        sizeof bounds_bindings / sizeof bounds_bindings[0]};

const ui_keymap *screen_bounds_keys(void)
{
    return &bounds_keymap;
}
