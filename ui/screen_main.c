/* screen_main.c — the main screen: the group, the generator images, the
 * table of layers with the bounds and the growth rate, the invariants.
 *
 *   row 0            header bar: title, file, [modified]
 *   rows 1-2         the presentation; class, Hirsch length
 *   middle           images (one per generator), then the layer table;
 *                    both scroll to keep their selection in view
 *   bottom block     bounds and growth rate; the invariants panel
 *                    (or the failing relators, or why nothing is shown)
 *   LINES-2          messages;  LINES-1  keys */
#include <curses.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "app.h"
#include "frame.h"
#include "screens.h"
#include "lineedit.h"
#include "numfmt.h"
#include "paint.h"

#define SIG_DIGITS  10 /* significant digits of radii in the table */
#define BOTTOM_ROWS 6  /* the bounds and invariants block */

/* Table columns (start, width); they add up to 79 so the table fits 80. */
enum {
    COL_J = 2,
    W_J = 3,
    COL_LAYER = 6,
    W_LAYER = 18,
    COL_RHO = 25,
    W_RHO = 14,
    COL_ROOT = 40,
    W_ROOT = 14,
    COL_DET = 55,
    W_DET = 11,
    COL_DIM = 67,
    W_DIM = 12,
    COL_BASIS = 81
};

static const char *sym(const explorer_app *app, const char *utf8, const char *ascii)
{
    return app->utf8 ? utf8 : ascii;
}

static int map_valid(const analysis_view_struct *A)
{
    return A->has_group && A->has_map && A->valid;
}

/* Rows given to the images and to the table. */
static void main_layout(const explorer_app *app, int *img_y, int *ni, int *tab_y, int *nt)
{
    /* rows 0-4: header, group (2), blank, images heading; then the images,
     * a blank, the table's two heading rows, its rows; the bottom block
     * and the two bottom lines take the rest */
    int budget = LINES - 2 - BOTTOM_ROWS - 8;
    int ngens = (int)app->vm->ngens, nl = (int)app->vm->nlayers;
    if (nl < 1)
        nl = 1;
    if (ngens + nl <= budget) {
        *ni = ngens;
    } else {
        *ni = budget / 3;
        if (*ni < 1)
            *ni = 1;
        if (*ni > ngens)
            *ni = ngens;
    }
    *nt = budget - *ni;
    *img_y = 5;
    *tab_y = *img_y + *ni + 2;
}

/* Scrolls so that row sel of n shows in rows rows, and never leaves rows
 * empty at the end while rows are hidden at the top (after the window
 * grew). */
static void keep_in_view(int *top, int sel, int rows, int n)
{
    if (sel < *top)
        *top = sel;
    if (sel >= *top + rows)
        *top = sel - rows + 1;
    if (*top > n - rows)
        *top = n - rows;
    if (*top < 0)
        *top = 0;
}

/* Every pc generator of the quotient is one of: a generator of a free
 * part, of a torsion factor, or dependent (the layer's relations express it
 * through the others: an invariant factor 1). */
static void pc_accounting(const explorer_app *app, long *free_, long *tors, long *dep)
{
    analysis_view_t A;
    analysis_get_view(A, app->A);
    *free_ = *tors = *dep = 0;
    for (slong j = 0; j < A->nlayers; j++) {
        analysis_layer_view_t L;
        analysis_get_layer_view(L, app->A, j);
        *free_ += (long)L->free_rank;
        *tors += (long)L->ntors;
        *dep += (long)(L->count - L->free_rank - L->ntors);
    }
}

static void draw_group(explorer_app *app)
{
    analysis_view_t A;
    analysis_get_view(A, app->A);
    paint_text(1, 0, 9, ROLE_HEADING, "Group");
    paint_text(1, 9, COLS - 9, ROLE_NORMAL, app->group_text);
    if (A->has_group) {
        char extra[160] = "", parts[160];
        if (A->stabilised && A->class_reached < app->cls)
            snprintf(extra, sizeof extra, "   series stable from class %ld",
                     (long)A->class_reached);
        long fr, to, de;
        pc_accounting(app, &fr, &to, &de);
        int k = snprintf(parts, sizeof parts, "%ld free", fr);
        if (to)
            k += snprintf(parts + k, sizeof parts - (size_t)k, ", %ld torsion", to);
        if (de)
            snprintf(parts + k, sizeof parts - (size_t)k, ", %ld dependent", de);
        paint_textf(2, 9, COLS - 9, ROLE_NORMAL,
                    "class %ld   Hirsch length %ld   %ld pc generators (%s)%s", (long)app->cls,
                    (long)A->hirsch_length, (long)A->npc, parts, extra);
    } else {
        paint_textf(2, 9, COLS - 9, ROLE_NORMAL, "class %ld   (quotient not computed)",
                    (long)app->cls);
    }
}

static void draw_images(explorer_app *app, int y0, int rows)
{
    analysis_view_t A;
    analysis_get_view(A, app->A);
    viewmodel_struct *vm = app->vm;
    int x = paint_text(y0 - 1, 0, COLS, ROLE_HEADING, "Images of the generators");
    if (vm->ngens > (size_t)rows)
        paint_textf(y0 - 1, x, COLS - x, ROLE_DIM, "  (%zu of %zu shown)", (size_t)rows, vm->ngens);
    keep_in_view(&app->image_top, (int)vm->sel_image, rows, (int)vm->ngens);
    int namew = 0; /* names padded so that the arrows line up */
    for (size_t i = 0; i < vm->ngens; i++)
        if ((int)lineedit_utf8_ncols(vm->names[i]) > namew)
            namew = (int)lineedit_utf8_ncols(vm->names[i]);
    for (int r = 0; r < rows; r++) {
        size_t i = (size_t)(app->image_top + r);
        if (i >= vm->ngens)
            break;
        int y = y0 + r, sel = i == vm->sel_image;
        paint_role role = sel ? ROLE_SELECTED : ROLE_NORMAL;
        if (sel)
            paint_fill(y, 0, COLS, role);
        int cx = paint_text(y, 0, 2, role, sel ? "> " : "  ");
        cx += paint_textf(y, cx, COLS - cx, role, "%s%*s %s ", vm->names[i],
                          namew - (int)lineedit_utf8_ncols(vm->names[i]), "",
                          sym(app, "\xE2\x86\xA6", "->"));
        int room = COLS - cx;
        /* the normal form in the pc labels, when it says something new */
        const char *nf = A->has_map && A->gen_image_str ? A->gen_image_str[i] : NULL;
        if (nf && strcmp(nf, vm->images[i]) != 0 && room > 40) {
            int w = paint_text(y, cx, room - 24, role, vm->images[i]);
            paint_textf(y, cx + w + 3, COLS - cx - w - 3, sel ? role : ROLE_DIM, "= %s", nf);
        } else {
            paint_text(y, cx, room, role, vm->images[i]);
        }
    }
}

static void table_header(explorer_app *app, int y)
{
    int x = paint_text(y - 1, 0, COLS, ROLE_HEADING, "Layers of the lower central series");
    analysis_view_t A;
    analysis_get_view(A, app->A);
    if (A->has_group && !A->layers_torsion_free)
        paint_text(y - 1, x, COLS - x, ROLE_DIM, "  (t: the layer has torsion)");
    paint_fill(y, 0, COLS, ROLE_NORMAL);
    paint_text(y, COL_J, W_J, ROLE_HEADING, "  j");
    paint_text(y, COL_LAYER, W_LAYER, ROLE_HEADING, "layer");
    paint_text(y, COL_RHO, W_RHO, ROLE_HEADING, sym(app, "\xCF\x81j", "rho_j"));
    paint_text(y, COL_ROOT, W_ROOT, ROLE_HEADING, sym(app, "\xCF\x81j^(1/j)", "rho_j^(1/j)"));
    paint_text(y, COL_DET, W_DET, ROLE_HEADING, "det Mj");
    paint_text(y, COL_DIM, W_DIM, ROLE_HEADING, sym(app, "det(I\xE2\x88\x92Mj)", "det(I-Mj)"));
    if (COLS > COL_BASIS + 10)
        paint_text(y, COL_BASIS, COLS - COL_BASIS, ROLE_HEADING, "basis");
}

/* A number cell: the value cut to SIG_DIGITS, then a marker letter. */
static void number_cell(int y, int x, int w, paint_role role, const char *dec, const char *marker)
{
    char num[64];
    numfmt_decimal(num, sizeof num, dec, SIG_DIGITS);
    int k = paint_text(y, x, w - 2, role == ROLE_SELECTED ? role : ROLE_NUMBER, num);
    if (marker)
        paint_text(y, x + k + 1, 1, role == ROLE_SELECTED ? role : ROLE_MARKER, marker);
}

/* An integer cell: whole, or shortened to a true "1.2~e40 (41 digits)". */
static void integer_cell(explorer_app *app, int y, int x, int w, paint_role role, const fmpz_t v)
{
    char *s = fmpz_get_str(NULL, 10, v);
    char buf[96];
    numfmt_integer(buf, sizeof buf, s, (size_t)(w - 1), !app->utf8);
    paint_text(y, x, w - 1, role == ROLE_SELECTED ? role : ROLE_NUMBER, buf);
    flint_free(s);
}

static void draw_table(explorer_app *app, int y0, int rows)
{
    analysis_view_t A;
    analysis_get_view(A, app->A);
    table_header(app, y0);
    if (!A->has_group) {
        paint_text(y0 + 1, 2, COLS - 2, ROLE_ERROR, "No quotient to show.");
        paint_text(y0 + 2, 2, COLS - 2, ROLE_NORMAL, app->group_problem);
        paint_text(y0 + 3, 2, COLS - 2, ROLE_DIM,
                   "c computes it again, -/+ change the class, p edits the presentation.");
        return;
    }
    rows -= 1;
    keep_in_view(&app->table_top, (int)app->vm->sel_layer, rows, (int)A->nlayers);
    int valid = map_valid(A);
    for (int r = 0; r < rows; r++) {
        slong j = app->table_top + r; /* 0-based */
        if (j >= A->nlayers)
            break;
        analysis_layer_view_t L;
        analysis_get_layer_view(L, app->A, j);
        int y = y0 + 1 + r, sel = (size_t)j == app->vm->sel_layer;
        paint_role role = sel ? ROLE_SELECTED : ROLE_NORMAL;
        if (sel)
            paint_fill(y, 0, COLS, role);
        paint_text(y, 0, 2, role, sel ? "> " : "  ");
        paint_textf(y, COL_J, W_J, role, "%3ld", (long)(j + 1));
        paint_text(y, COL_LAYER, W_LAYER - 1, role, L->group_str ? L->group_str : "?");
        if (L->ntors > 0) /* a torsion row: its torsion goes to T or to Gc/T */
            paint_text(y, COL_J + W_J, 1, sel ? role : ROLE_MARKER, "t");
        if (valid && L->rho_str) {
            number_cell(y, COL_RHO, W_RHO, role, L->rho_str, A->upper_layer == j + 1 ? "U" : NULL);
            number_cell(y, COL_ROOT, W_ROOT, role, L->root_bound_str,
                        A->lower_layer == j + 1 ? "L" : NULL);
            integer_cell(app, y, COL_DET, W_DET, role, L->det);
            integer_cell(app, y, COL_DIM, W_DIM, role, L->det_i_minus);
        } else {
            paint_text(y, COL_RHO, W_RHO, role, "-");
            paint_text(y, COL_ROOT, W_ROOT, role, "-");
            paint_text(y, COL_DET, W_DET, role, "-");
            paint_text(y, COL_DIM, W_DIM, role, "-");
        }
        if (COLS > COL_BASIS + 10 && L->basis && L->free_rank > 0) {
            char basis[512] = "";
            size_t k = 0;
            for (slong b = 0; b < L->free_rank && k + 2 < sizeof basis; b++)
                k += (size_t)snprintf(basis + k, sizeof basis - k, "%s%s", b ? ", " : "",
                                      L->basis[b]);
            paint_text(y, COL_BASIS, COLS - COL_BASIS, sel ? role : ROLE_DIM, basis);
        }
    }
    if (A->nlayers > rows)
        paint_textf(y0 - 1, 36, COLS - 36, ROLE_DIM, "(rows %d-%ld of %ld)", app->table_top + 1,
                    (long)FLINT_MIN(A->nlayers, app->table_top + rows), (long)A->nlayers);
}

static const char *yes_no(int v)
{
    return v ? "yes" : "no";
}

/* Decimal strings compared as numbers (equal strings are equal). */
static int dec_le(const char *a, const char *b)
{
    return strcmp(a, b) == 0 || strtod(a, NULL) <= strtod(b, NULL);
}

/* The integers of one line, each whole or shortened to a true form so
 * that all of them fit in w columns: "label value" pairs. */
typedef struct {
    const char *label;
    char *digits; /* flint_malloc'd, or NULL for text */
    const char *text;
} inv_item;

static void draw_items(explorer_app *app, int y, int x, int w, inv_item *it, int n)
{
    int fixed = 0, nnum = 0;
    for (int k = 0; k < n; k++) {
        fixed += (int)lineedit_utf8_ncols(it[k].label) + 1 + (k ? 3 : 0);
        if (it[k].digits)
            nnum++;
        else
            fixed += (int)lineedit_utf8_ncols(it[k].text);
    }
    /* room for the numbers: whole when they fit, else shared out */
    int need = 0;
    for (int k = 0; k < n; k++)
        if (it[k].digits)
            need += (int)strlen(it[k].digits);
    int avail = w - x - fixed;
    int budget = nnum ? avail / nnum : 0;
    for (int k = 0; k < n; k++) {
        char buf[128];
        const char *v = it[k].text;
        if (it[k].digits) {
            size_t width = need <= avail ? strlen(it[k].digits) : (size_t)FLINT_MAX(budget, 1);
            numfmt_integer(buf, sizeof buf, it[k].digits, width, !app->utf8);
            v = buf;
        }
        x += paint_textf(y, x, w - x, ROLE_NORMAL, "%s%s ", k ? "   " : "", it[k].label);
        x += paint_text(y, x, w - x, it[k].digits ? ROLE_NUMBER : ROLE_NORMAL, v);
    }
}

static void draw_bounds_and_invariants(explorer_app *app, int y)
{
    analysis_view_t A;
    analysis_get_view(A, app->A);
    char lo[64], up[64], gr[64];
    numfmt_decimal(lo, sizeof lo, A->lower_bound_str, SIG_DIGITS);
    numfmt_decimal(up, sizeof up, A->upper_bound_str, SIG_DIGITS);
    numfmt_decimal(gr, sizeof gr, A->growth_str, SIG_DIGITS);
    const char *le = sym(app, "\xE2\x89\xA4", "<=");
    int x = paint_text(y, 0, COLS, ROLE_HEADING, "Growth  ");
    int free_parts = 0;
    for (slong j = 0; j < A->nlayers; j++) {
        analysis_layer_view_t L;
        analysis_get_layer_view(L, app->A, j);
        free_parts |= L->free_rank > 0;
    }
    if (dec_le(A->lower_bound_str, A->growth_str) && dec_le(A->growth_str, A->upper_bound_str)) {
        x += paint_text(y, x, COLS - x, ROLE_MARKER, "L ");
        x += paint_textf(y, x, COLS - x, ROLE_NUMBER, "%s", lo);
        x += paint_textf(y, x, COLS - x, ROLE_DIM, " (j=%ld)  %s  ", (long)A->lower_layer, le);
        x += paint_text(y, x, COLS - x, ROLE_NORMAL, "rate ");
        x += paint_text(y, x, COLS - x, ROLE_NUMBER, gr);
        x += paint_textf(y, x, COLS - x, ROLE_DIM, "  %s  ", le);
        x += paint_text(y, x, COLS - x, ROLE_MARKER, "U ");
        x += paint_text(y, x, COLS - x, ROLE_NUMBER, up);
        paint_textf(y, x, COLS - x, ROLE_DIM, " (j=%ld)", (long)A->upper_layer);
    } else {
        /* the bounds come from the free parts only and can miss the rate
         * (finite layers): say so instead of writing a false chain */
        x += paint_text(y, x, COLS - x, ROLE_NORMAL, "rate ");
        x += paint_text(y, x, COLS - x, ROLE_NUMBER, gr);
        if (!free_parts)
            paint_text(y, x, COLS - x, ROLE_DIM,
                       "   every layer is finite: no bounds from free parts");
        else
            paint_textf(y, x, COLS - x, ROLE_DIM,
                        "   not between L %s and U %s, which bound the free parts only", lo, up);
    }
    paint_textf(y + 1, 8, COLS - 8, ROLE_DIM, "%s", A->growth_reason ? A->growth_reason : "");

    int hx = paint_text(y + 2, 0, COLS, ROLE_HEADING, "Invariants");
    if (!A->layers_torsion_free) {
        /* T and the layers of Gc/T on the heading line */
        char line[256];
        size_t k = 0;
        char *o = fmpz_get_str(NULL, 10, A->tors_order), os[64];
        numfmt_integer(os, sizeof os, o, 40, !app->utf8);
        k += (size_t)snprintf(line, sizeof line, "   T: order %s", os);
        flint_free(o);
        for (slong t = 0; A->tors_abelian && t < A->tors_ninv && k + 40 < sizeof line; t++) {
            char *d = fmpz_get_str(NULL, 10, A->tors_inv + t), ds[40];
            numfmt_integer(ds, sizeof ds, d, 20, !app->utf8);
            k += (size_t)snprintf(line + k, sizeof line - k, "%sZ/%s", t ? " + " : " = ", ds);
            flint_free(d);
        }
        k += (size_t)snprintf(line + k, sizeof line - k, "%s   Gc/T:",
                              A->tors_finite ? " (Gc finite)" : "");
        for (slong j = 0; j < A->nlayers && k + 24 < sizeof line; j++) {
            analysis_layer_view_t L;
            analysis_get_layer_view(L, app->A, j);
            slong nt = L->q_ntors;
            k += (size_t)snprintf(line + k, sizeof line - k, "%s ", j ? "," : "");
            if (L->free_rank)
                k += (size_t)snprintf(line + k, sizeof line - k, L->free_rank > 1 ? "Z^%ld" : "Z",
                                      (long)L->free_rank);
            if (nt)
                k += (size_t)snprintf(line + k, sizeof line - k, "%s+tors",
                                      L->free_rank ? "" : "0");
            if (!L->free_rank && !nt)
                k += (size_t)snprintf(line + k, sizeof line - k, "0");
        }
        paint_text(y + 2, hx, COLS - hx, ROLE_DIM, line);
    }
    char ent[64] = "not defined", lg[64] = "-";
    if (A->entropy_str)
        numfmt_decimal(ent, sizeof ent, A->entropy_str, SIG_DIGITS);
    if (A->log_growth_str)
        numfmt_decimal(lg, sizeof lg, A->log_growth_str, SIG_DIGITS);
    const char *ent_label = A->layers_torsion_free ? "entropy" : "entropy (rational layers)";
    if (A->log_growth_str)
        paint_textf(y + 3, 2, COLS - 2, ROLE_NORMAL,
                    "%s %s   log growth rate %s (%s entropy of any map inducing it)", ent_label,
                    ent, lg, sym(app, "\xE2\x89\xA4", "<="));
    else
        paint_textf(y + 3, 2, COLS - 2, ROLE_NORMAL, "%s %s   (growth rate 0: no logarithm)",
                    ent_label, ent);
    if (A->lefschetz_defined) {
        inv_item it[5] = {{"Lefschetz", fmpz_get_str(NULL, 10, A->lefschetz), NULL},
                          {"Nielsen", fmpz_get_str(NULL, 10, A->nielsen), NULL},
                          {"Reidemeister", NULL, NULL}};
        if (A->reid_kind == ANALYSIS_REID_INFINITE)
            it[2].text = sym(app, "\xE2\x88\x9E", "infinite");
        else if (A->reid_kind == ANALYSIS_REID_FINITE)
            it[2].digits = fmpz_get_str(NULL, 10, A->reidemeister);
        else
            it[2].text = A->limit_hit ? "not computed (limit)" : "not defined";
        int n = 3;
        if (!A->layers_torsion_free) {
            it[0].label = "on Gc/T: Lefschetz";
            it[2].label = "on Gc: Reidemeister";
            if (A->fixed_defined)
                it[n++] = (inv_item){"Fix", fmpz_get_str(NULL, 10, A->fixed_elements), NULL};
            if (A->fixed_classes_defined)
                it[n++] = (inv_item){"fixed classes",
                                     fmpz_get_str(NULL, 10, A->fixed_classes), NULL};
        }
        draw_items(app, y + 4, 2, COLS, it, n);
        for (int k = 0; k < n; k++)
            flint_free(it[k].digits);
    } else {
        paint_textf(y + 4, 2, COLS - 2, ROLE_NORMAL,
                    "Lefschetz, Nielsen, Reidemeister: not defined (%s)",
                    A->undefined_reason ? A->undefined_reason : "see the report");
    }
    /* A surjective endomorphism of a finitely generated nilpotent group is
     * injective (such groups are Hopfian: Mal'cev 1940), with image of
     * index 1, even when layer torsion leaves the layer test undecided. */
    int inj_known = A->injective_defined || A->automorphism;
    int inj = A->automorphism || A->injective;
    inv_item it[5] = {{"automorphism", NULL, yes_no(A->automorphism)},
                      {A->layers_torsion_free ? "injective" : "injective (Gc)", NULL,
                       inj_known ? yes_no(inj) : "undecided"},
                      {"index", NULL, "-"},
                      {"hyperbolic", NULL, yes_no(A->hyperbolic)},
                      {"expanding", NULL, yes_no(A->expanding)}};
    if (A->index_defined)
        it[2].digits = fmpz_get_str(NULL, 10, A->image_index);
    else if (A->automorphism)
        it[2].text = "1";
    draw_items(app, y + 5, 2, COLS, it, 5);
    flint_free(it[2].digits);
}

/* Adds the lines that tell failing relation k (main screen and full
 * screen alike): where it starts to fail, both sides' images in the user's
 * generators, the image it forces.  Returns the number of lines added. */
int screen_main_failure_lines(const explorer_app *app, slong k, paint_lines *t, int full)
{
    /* full: under a line that already names the relation, indented */
    analysis_view_t A;
    analysis_get_view(A, app->A);
    const char *rel = full ? " " : A->fail_relator[k], *ind = full ? "    " : "  ";
    const analysis_failure_struct *f = A->failures + k;
    const char *alpha = sym(app, "\xCE\xB1", "alpha");
    const char *to = sym(app, "\xE2\x86\xA6", "->");
    int n0 = t->n;
    if (f->lowest_class <= 1)
        paint_lines_add(t, ROLE_NORMAL, "%s   fails already on the class-1 quotient", rel);
    else
        paint_lines_add(t, ROLE_NORMAL, "%s   fails from class %ld on (holds at class %ld)", rel,
                        (long)f->lowest_class, (long)(f->lowest_class - 1));
    const char *side[2] = {f->lhs, f->rhs}, *word[2] = {f->lhs_word, f->rhs_word},
               *img[2] = {f->lhs_image, f->rhs_image};
    for (int i = 0; i < 2; i++) {
        if (i == 1 && strcmp(f->rhs, "1") == 0)
            break; /* a plain relator: alpha(1) = 1 says nothing */
        if (word[i] && strcmp(word[i], img[i]) != 0)
            paint_lines_add(t, ROLE_NUMBER, "%s%s(%s) = %s = %s", ind, alpha, side[i], word[i],
                            img[i]);
        else
            paint_lines_add(t, ROLE_NUMBER, "%s%s(%s) = %s", ind, alpha, side[i], img[i]);
    }
    if (f->forced_gen >= 0)
        paint_lines_add(t, ROLE_NUMBER, "%sthe relation forces %s %s %s   (f sets it)", ind,
                        app->vm->names[f->forced_gen], to, f->forced_image);
    return t->n - n0;
}

static void draw_failures(explorer_app *app, int y)
{
    analysis_view_t A;
    analysis_get_view(A, app->A);
    paint_textf(y, 0, COLS, ROLE_ERROR,
                "Not well defined: %ld relation%s fail%s on the class-%ld quotient (v: in full).",
                (long)A->nfail, A->nfail == 1 ? "" : "s", A->nfail == 1 ? "s" : "",
                (long)app->cls);
    paint_lines t = {0};
    for (slong k = 0; A->failures && k < A->nfail && t.n < BOTTOM_ROWS; k++)
        screen_main_failure_lines(app, k, &t, 0);
    int room = BOTTOM_ROWS - 1;
    for (int i = 0; i < t.n && i < room; i++) {
        if (i == room - 1 && t.n > room)
            paint_text(y + 1 + i, 2, COLS - 2, ROLE_DIM,
                       "... more (v shows every failing relation in full)");
        else
            paint_text(y + 1 + i, 2, COLS - 2, t.v[i].role, t.v[i].text);
    }
    paint_lines_free(&t);
}

void screen_main_draw(explorer_app *app)
{
    analysis_view_t A;
    analysis_get_view(A, app->A);
    app_draw_header(app, app->title);
    draw_group(app);
    int img_y, ni, tab_y, nt;
    main_layout(app, &img_y, &ni, &tab_y, &nt);
    draw_images(app, img_y, ni);
    draw_table(app, tab_y, nt + 1);
    /* the bottom block follows the table when the table is short */
    int used = A->has_group ? (int)FLINT_MIN(A->nlayers, nt) : 3;
    int by = tab_y + 1 + used + 1;
    if (by > LINES - 2 - BOTTOM_ROWS)
        by = LINES - 2 - BOTTOM_ROWS;
    if (!A->has_group) {
        /* draw_table said why */
    } else if (!A->has_map) {
        paint_text(by, 0, COLS, ROLE_ERROR, "No map analysed.");
        paint_text(by + 1, 2, COLS - 2, ROLE_NORMAL, app->group_problem);
    } else if (!A->valid) {
        draw_failures(app, by);
    } else {
        draw_bounds_and_invariants(app, by);
    }
    app_draw_status(app);
    app_draw_hints(app, screen_main_keys());
}

/* ---- actions ----------------------------------------------------------- */

static int act_layer_prev(explorer_app *app)
{
    return viewmodel_move_layer(app->vm, -1) ? ACT_REDRAW : ACT_NONE;
}

static int act_layer_next(explorer_app *app)
{
    return viewmodel_move_layer(app->vm, 1) ? ACT_REDRAW : ACT_NONE;
}

static int act_layer_first(explorer_app *app)
{
    return viewmodel_select_layer(app->vm, 0) ? ACT_REDRAW : ACT_NONE;
}

static int act_layer_last(explorer_app *app)
{
    return app->vm->nlayers && viewmodel_select_layer(app->vm, app->vm->nlayers - 1) ? ACT_REDRAW
                                                                                     : ACT_NONE;
}

static int act_image_prev(explorer_app *app)
{
    return viewmodel_move_image(app->vm, -1) ? ACT_REDRAW : ACT_NONE;
}

static int act_image_next(explorer_app *app)
{
    return viewmodel_move_image(app->vm, 1) ? ACT_REDRAW : ACT_NONE;
}

static int act_detail(explorer_app *app)
{
    analysis_view_t A;
    analysis_get_view(A, app->A);
    if (!A->has_group || app->vm->nlayers == 0) {
        app_status(app, 1, "no layers to show");
        return ACT_REDRAW;
    }
    app->screen = SCREEN_LAYER;
    app->detail_scroll = app->detail_hscroll = 0;
    return ACT_REDRAW;
}

static int act_edit_image(explorer_app *app)
{
    if (app->vm->ngens == 0)
        return ACT_NONE;
    app->edit_index = app->vm->sel_image;
    prompt_open(app, PROMPT_IMAGE, viewmodel_get_image(app->vm, app->edit_index));
    return ACT_REDRAW;
}

static int act_identity_image(explorer_app *app)
{
    size_t i = app->vm->sel_image;
    if (i >= app->vm->ngens || !viewmodel_set_image(app->vm, i, app->vm->names[i]))
        return ACT_NONE;
    app->map_edited = 1;
    app->map_action = 'S';
    app_status(app, 0, "%s now maps to itself", app->vm->names[i]);
    return ACT_MAP | ACT_REDRAW;
}

/* The first failing relation that defines a generator whose image is not
 * already the forced one sets it (an image edit: u undoes it). */
static int act_forced_image(explorer_app *app)
{
    analysis_view_t A;
    analysis_get_view(A, app->A);
    if (!A->has_map || A->valid || !A->failures) {
        app_status(app, 1, "no failing relation forces an image");
        return ACT_REDRAW;
    }
    for (slong k = 0; k < A->nfail; k++) {
        const analysis_failure_struct *f = A->failures + k;
        size_t x = (size_t)f->forced_gen;
        if (f->forced_gen < 0 || x >= app->vm->ngens ||
            strcmp(app->vm->images[x], f->forced_image) == 0)
            continue;
        if (!viewmodel_set_image(app->vm, x, f->forced_image))
            continue;
        app->vm->sel_image = x;
        app->map_edited = 1;
        app->map_action = 'S';
        app_status(app, 0, "%s now maps to %s, as %s forces", app->vm->names[x], f->forced_image,
                   A->fail_relator[k]);
        return ACT_MAP | ACT_REDRAW;
    }
    app_status(app, 1, "no failing relation forces an image");
    return ACT_REDRAW;
}

/* After an undo or redo: image edits analyse the map again; document
 * edits (presentation, class, title) take the document's title and, when
 * the presentation or class differ, compute that quotient. */
static int after_history(explorer_app *app, int kind, int how)
{
    if (kind == 1) {
        app->map_edited = 1;
        app->map_action = how;
        app_status(app, 0, "%s: image of %s", how == 'U' ? "undone" : "redone",
                   app->vm->names[app->vm->sel_image]);
        return ACT_MAP | ACT_REDRAW;
    }
    const viewmodel_doc *d = app->vm->current_doc;
    free(app->title);
    app->title = strdup(d->title);
    if (app->title == NULL)
        abort();
    app->title_edited = 1;
    if (strcmp(d->group, app->group_text) != 0 || d->cls != app->cls) {
        free(app->pending_group);
        app->pending_group = strdup(d->group);
        if (app->pending_group == NULL)
            abort();
        app->pending_cls = d->cls;
        app->from_history = how;
        return ACT_GROUP | ACT_REDRAW;
    }
    app_status(app, 0, "%s: title", how == 'U' ? "undone" : "redone");
    return ACT_MAP | ACT_REDRAW;
}

static int act_undo(explorer_app *app)
{
    int kind = viewmodel_undo(app->vm);
    if (!kind) {
        app_status(app, 0, "nothing to undo");
        return ACT_REDRAW;
    }
    return after_history(app, kind, 'U');
}

static int act_redo(explorer_app *app)
{
    int kind = viewmodel_redo(app->vm);
    if (!kind) {
        app_status(app, 0, "nothing to redo");
        return ACT_REDRAW;
    }
    return after_history(app, kind, 'R');
}

static int change_class(explorer_app *app, slong to)
{
    if (to < 1 || to > NQ_MAX_CLASS) {
        app_status(app, 1, "the class must be between 1 and %d", NQ_MAX_CLASS);
        return ACT_REDRAW;
    }
    app->pending_cls = to;
    return ACT_GROUP;
}

static int act_class_down(explorer_app *app)
{
    return change_class(app, app->cls - 1);
}

static int act_class_up(explorer_app *app)
{
    return change_class(app, app->cls + 1);
}

static int act_recompute(explorer_app *app)
{
    /* after a cancel, the request that was cancelled, not the kept one */
    if (app->retry_group) {
        free(app->pending_group);
        app->pending_group = app->retry_group;
        app->pending_cls = app->retry_cls;
        app->retry_group = NULL;
        app->retry_cls = 0;
        return ACT_GROUP;
    }
    app->pending_cls = app->cls;
    return ACT_GROUP;
}

static int act_edit_group(explorer_app *app)
{
    prompt_open(app, PROMPT_GROUP, app->group_text);
    return ACT_REDRAW;
}

static int act_edit_title(explorer_app *app)
{
    prompt_open(app, PROMPT_TITLE, app->title);
    return ACT_REDRAW;
}

static int act_save(explorer_app *app)
{
    if (app->path == NULL) {
        prompt_open(app, PROMPT_SAVE_AS, "");
        return ACT_REDRAW;
    }
    return ACT_SAVE;
}

static int act_save_as(explorer_app *app)
{
    prompt_open(app, PROMPT_SAVE_AS, app->path ? app->path : "");
    return ACT_REDRAW;
}

static int act_open(explorer_app *app)
{
    prompt_open(app, app->vm->dirty ? PROMPT_CONFIRM_OPEN : PROMPT_OPEN, "");
    return ACT_REDRAW;
}

static int act_full(explorer_app *app)
{
    app->screen = SCREEN_FULL;
    app->full_scroll = 0;
    return ACT_REDRAW;
}

static int act_iterates(explorer_app *app)
{
    screen_iterate_open(app);
    return ACT_REDRAW;
}

static int act_bounds(explorer_app *app)
{
    app->screen = SCREEN_BOUNDS;
    return ACT_REDRAW;
}

static int act_quit(explorer_app *app)
{
    if (app->vm->dirty) {
        prompt_open(app, PROMPT_CONFIRM_QUIT, "");
        return ACT_REDRAW;
    }
    return ACT_QUIT;
}

/* Hints come first in the order the bottom line shows them. */
static const ui_binding main_bindings[] = {
    {'?', screen_help_open, "?", "this help: every key", "? help"},
    {'q', act_quit, "q", "quit (asks first when there are unsaved changes)", "q quit"},
    {'\r', act_detail, "Enter", "open the selected layer: basis, matrix, polynomial, eigenvalues",
     "Enter detail"},
    {'\n', act_detail, NULL, NULL, NULL},
    {UIKEY_FN(KEY_ENTER), act_detail, NULL, NULL, NULL},
    {'e', act_edit_image, "e", "edit the image of the selected generator", "e edit"},
    {'u', act_undo, "u", "undo the last change of an image, the presentation, the class or the title",
     "u/r undo/redo"},
    {'r', act_redo, "r", "redo what u undid", NULL},
    {'-', act_class_down, "-", "lower the class by one (recomputes the quotient)", "-/+ class"},
    {'+', act_class_up, "+ / =", "raise the class by one (recomputes the quotient; Esc cancels)",
     NULL},
    {'=', act_class_up, NULL, NULL, NULL},
    {'p', act_edit_group, "p", "edit the presentation of the group", "p group"},
    {'L', members_act_return, "L", "back to the member list of an open scan result file", NULL},
    {'s', act_save, "s", "save the session to its file", "s save"},
    {UIKEY_FN(KEY_UP), act_layer_prev, "Up / k", "select the previous layer", NULL},
    {'k', act_layer_prev, NULL, NULL, NULL},
    {UIKEY_FN(KEY_DOWN), act_layer_next, "Down / j", "select the next layer", NULL},
    {'j', act_layer_next, NULL, NULL, NULL},
    {UIKEY_FN(KEY_HOME), act_layer_first, "Home / g", "select the first layer", NULL},
    {'g', act_layer_first, NULL, NULL, NULL},
    {UIKEY_FN(KEY_END), act_layer_last, "End / G", "select the last layer", NULL},
    {'G', act_layer_last, NULL, NULL, NULL},
    {UIKEY_FN(KEY_LEFT), act_image_prev, "Left / Shift-Tab",
     "select the previous generator's image", NULL},
    {UIKEY_FN(KEY_BTAB), act_image_prev, NULL, NULL, NULL},
    {UIKEY_FN(KEY_RIGHT), act_image_next, "Right / Tab", "select the next generator's image", NULL},
    {'\t', act_image_next, NULL, NULL, NULL},
    {'v', act_full, "v", "every value in full: the selected image and layer, all digits of "
     "every number, whole lines where the screen had to cut", "v full"},
    {'i', act_identity_image, "i", "map the selected generator to itself", NULL},
    {'f', act_forced_image, "f", "when a failing relation z = w defines a generator, give z the "
     "image the relation forces", NULL},
    {'n', act_iterates, "n", "iterates of the selected generator (or the session's element): table and plot", "n iterates"},
    {'b', act_bounds, "b", "the bounds as a chart: rho_j^(1/j) per layer, growth rate, max rho_k", NULL},
    {'c', act_recompute, "c", "compute again: after a cancel, what was cancelled", NULL},
    {'t', act_edit_title, "t", "edit the title of the session", NULL},
    {'w', act_save_as, "w", "save as: write the session to a new path", NULL},
    {'o', act_open, "o", "open another session file", NULL},
    {'N', screen_notes_open, "N",
     "the session's comment (# lines at the top of its file) and notes: read and edit them",
     NULL},
    {'x', prompt_act_export, "x",
     "export to a file: the report (text, JSON or LaTeX, as nilstep report writes it) or the "
     "selected layer's matrix",
     NULL},
    {UIKEY_CTRL('l'), NULL, "Ctrl-L", "paint the screen again", NULL},
};

static const ui_keymap main_keymap = {"Main screen", main_bindings,
                                      sizeof main_bindings / sizeof main_bindings[0]};

const ui_keymap *screen_main_keys(void)
{
    return &main_keymap;
}
