/* export.c — see export.h. */
#include "export.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "strbuf.h"

/* flint_malloc'd strbuf text as a malloc'd string (the explorer frees with
 * free()). */
static char *export_take(strbuf_t b)
{
    char *t = strbuf_take(b);
    size_t n = strlen(t) + 1;
    char *d = malloc(n);
    if (d == NULL)
        abort();
    memcpy(d, t, n);
    flint_free(t);
    return d;
}

/* Every line of a free text behind "# ", so that a title or a map that
 * runs over several lines stays in the comment. */
static void export_comment(strbuf_t b, const char *label, const char *text)
{
    strbuf_printf(b, "# %s", label);
    for (const char *p = text; *p; p++) {
        if (*p == '\n')
            strbuf_puts(b, "\n#   ");
        else
            strbuf_putn(b, p, 1);
    }
    strbuf_puts(b, "\n");
}

static void export_rows(strbuf_t b, const fmpz_mat_struct *M, const char *prefix)
{
    for (slong r = 0; r < fmpz_mat_nrows(M); r++) {
        strbuf_puts(b, prefix);
        for (slong c = 0; c < fmpz_mat_ncols(M); c++) {
            char *s = fmpz_get_str(NULL, 10, fmpz_mat_entry(M, r, c));
            strbuf_printf(b, "%s%s", c ? " " : "", s);
            flint_free(s);
        }
        strbuf_puts(b, "\n");
    }
}

char *export_matrix_text(const analysis_struct *A, slong j, const char *title)
{
    analysis_view_t V;
    analysis_get_view(V, A);
    if (!V->has_group || !V->has_map || !V->valid || j < 1 || j > V->nlayers)
        return NULL;
    analysis_layer_view_t L;
    analysis_get_layer_view(L, A, j - 1);
    strbuf_t b;
    strbuf_init(b);
    strbuf_printf(b, "# nilstep: matrix M%ld of the map on layer %ld (gamma_%ld/gamma_%ld = %s)\n",
                  (long)j, (long)j, (long)j, (long)(j + 1), L->group_str ? L->group_str : "?");
    if (title)
        export_comment(b, "title ", title);
    char *pres = pres_get_str(V->pres);
    strbuf_printf(b, "# group %s, class %ld\n", pres, (long)V->class_requested);
    flint_free(pres);
    export_comment(b, "map   ", V->map_str);
    strbuf_puts(b, "# basis of the free part:");
    if (L->free_rank == 0)
        strbuf_puts(b, " none (the zero space: no rows follow)");
    for (slong k = 0; k < L->free_rank; k++)
        strbuf_printf(b, "%s e%ld = %s", k ? "," : "", (long)(k + 1), L->basis[k]);
    strbuf_puts(b, "\n# column k holds the coordinates of the image of e_k\n");
    if (L->ntors > 0 && L->action) {
        strbuf_printf(b, "# the action on the layer's %ld pc generators, torsion included:\n",
                      (long)L->count);
        export_rows(b, L->action, "#   ");
    }
    if (L->matrix)
        export_rows(b, L->matrix, "");
    return export_take(b);
}

char *export_suggest_name(const char *session_path, int kind, slong j)
{
    const char *base = session_path ? session_path : "untitled";
    size_t n = strlen(base);
    if (n > 8 && strcmp(base + n - 8, ".nilstep") == 0)
        n -= 8;
    char suffix[48];
    switch (kind) {
    case EXPORT_JSON:
        snprintf(suffix, sizeof suffix, ".json");
        break;
    case EXPORT_LATEX:
        snprintf(suffix, sizeof suffix, ".tex");
        break;
    case EXPORT_MATRIX:
        snprintf(suffix, sizeof suffix, "-M%ld.txt", (long)j);
        break;
    default:
        snprintf(suffix, sizeof suffix, ".txt");
        break;
    }
    size_t sl = strlen(suffix);
    char *d = malloc(n + sl + 1);
    if (d == NULL)
        abort();
    memcpy(d, base, n);
    memcpy(d + n, suffix, sl + 1);
    return d;
}

const char *export_kind_name(int kind, slong j)
{
    static char buf[64];
    switch (kind) {
    case EXPORT_JSON:
        return "the JSON report";
    case EXPORT_LATEX:
        return "the LaTeX report";
    case EXPORT_MATRIX:
        snprintf(buf, sizeof buf, "matrix M%ld", (long)j);
        return buf;
    default:
        return "the text report";
    }
}
