/* report.c — see report.h. */
#include <stdlib.h>
#include <string.h>
#include <flint/fmpz_mat.h>
#include "report.h"
#include "sbuf.h"

/* Matrices larger than this are left out of the LaTeX report. */
#define REPORT_LATEX_MAX_DIM 8

int report_parse_format(const char *s)
{
    if (!strcmp(s, "text"))
        return REPORT_TEXT;
    if (!strcmp(s, "json"))
        return REPORT_JSON;
    if (!strcmp(s, "latex"))
        return REPORT_LATEX;
    return -1;
}

static void put_fmpz(sbuf_t b, const fmpz_t x)
{
    char *s = fmpz_get_str(NULL, 10, x);
    sbuf_puts(b, s);
    flint_free(s);
}

static const char *yes_no(int v)
{
    return v ? "yes" : "no";
}

static char *presentation(const analysis_t A)
{
    char *p = pres_get_str(A->nq->pres);
    char *s = malloc(strlen(p) + 1);
    strcpy(s, p);
    flint_free(p);
    return s;
}

/* The images of the inverse of an automorphism of a quotient with
 * torsion-free layers, or NULL.  Computed here, not in the analysis,
 * because it collects the images of every pc generator: too slow to redo at
 * every keystroke of the explorer. */
static char **inverse_images(const analysis_t A)
{
    if (!A->has_map || !A->valid || !A->automorphism || !A->layers_torsion_free)
        return NULL;
    char **v = NULL;
    nserr_t err;
    nserr_init(err);
    if (analysis_inverse_images(&v, A, NULL, err) != NS_OK)
        v = NULL;
    nserr_clear(err);
    return v;
}

static void free_images(const analysis_t A, char **v)
{
    if (!v)
        return;
    for (slong x = 0; x < A->nq->pres->gens->n; x++)
        free(v[x]);
    free(v);
}

/* ------------------------------------------------------------------ text */

static void text_matrix(sbuf_t b, const fmpz_mat_t M, const char *indent)
{
    slong r = fmpz_mat_nrows(M), c = fmpz_mat_ncols(M);
    size_t w = 1;
    for (slong i = 0; i < r; i++)
        for (slong j = 0; j < c; j++) {
            size_t k = fmpz_sizeinbase(fmpz_mat_entry(M, i, j), 10) +
                       (fmpz_sgn(fmpz_mat_entry(M, i, j)) < 0);
            if (k > w)
                w = k;
        }
    for (slong i = 0; i < r; i++) {
        sbuf_printf(b, "%s[", indent);
        for (slong j = 0; j < c; j++) {
            char *s = fmpz_get_str(NULL, 10, fmpz_mat_entry(M, i, j));
            sbuf_printf(b, "%s%*s", j ? " " : "", (int)w, s);
            flint_free(s);
        }
        sbuf_puts(b, "]\n");
    }
}

static void report_text(sbuf_t b, const analysis_t A, const char *title)
{
    const nq_struct *Q = A->nq;
    char *pres = presentation(A);
    sbuf_printf(b, "nilstep report%s%s\n\n", title ? ": " : "", title ? title : "");
    sbuf_printf(b, "group         %s\n", pres);
    sbuf_printf(b, "class         %ld", (long)A->class_requested);
    if (Q->stabilised)
        sbuf_printf(b, "  (the series stabilises at class %ld: every larger class gives the "
                       "same quotient)",
                    (long)Q->class_reached);
    sbuf_printf(b, "\nHirsch length %ld\npc generators %ld\n\n", (long)Q->hirsch_length,
                (long)Q->pcp->n);
    sbuf_puts(b, "layer  group                basis of the free part\n");
    for (slong j = 0; j < A->nlayers; j++) {
        const analysis_layer_struct *L = A->layers + j;
        sbuf_printf(b, "%5ld  %-20s ", (long)L->weight, L->group_str);
        for (slong k = 0; k < L->free_rank; k++)
            sbuf_printf(b, "%s%s", k ? ", " : "", L->basis[k]);
        sbuf_puts(b, "\n");
    }
    free(pres);
    if (!A->has_map)
        return;
    sbuf_printf(b, "\nmap           %s\n", A->map_str);
    if (!A->valid) {
        sbuf_printf(b, "not well defined on the class-%ld quotient: %ld relator%s not mapped "
                       "to 1\n",
                    (long)A->class_requested, (long)A->nfail, A->nfail == 1 ? " is" : "s are");
        for (slong k = 0; k < A->nfail; k++)
            sbuf_printf(b, "  %s  ->  %s\n", A->fail_relator[k], A->fail_image[k]);
        return;
    }
    sbuf_printf(b, "              an endomorphism of the class-%ld quotient\n",
                (long)A->class_requested);
    for (slong x = 0; x < Q->pres->gens->n; x++)
        sbuf_printf(b, "              %s -> %s\n", Q->pres->gens->name[x], A->gen_image_str[x]);
    for (slong j = 0; j < A->nlayers; j++) {
        const analysis_layer_struct *L = A->layers + j;
        sbuf_printf(b, "\nlayer %ld: %s\n", (long)L->weight, L->group_str);
        if (L->ntors > 0 && L->npc > 0) {
            sbuf_puts(b, "  action on the layer's pc generators (modulo its power relations)\n");
            text_matrix(b, L->action, "    ");
        }
        if (L->free_rank == 0)
            continue;
        sbuf_puts(b, "  matrix\n");
        text_matrix(b, L->matrix, "    ");
        sbuf_printf(b, "  charpoly      %s\n", L->charpoly_factored_str);
        sbuf_printf(b, "  rho           %s\n", L->rho_str);
        if (L->rho_minpoly_str)
            sbuf_printf(b, "  rho is a root of %s\n", L->rho_minpoly_str);
        sbuf_printf(b, "  rho^(1/%ld)     %s\n", (long)L->weight, L->root_bound_str);
        sbuf_puts(b, "  det           ");
        put_fmpz(b, L->det);
        sbuf_puts(b, "\n  det(I - M)    ");
        put_fmpz(b, L->det_i_minus);
        sbuf_puts(b, "\n  eigenvalues\n");
        for (slong k = 0; k < L->nev; k++)
            sbuf_printf(b, "    %-44s |.| = %s\n", L->ev_str[k], L->ev_abs_str[k]);
    }
    sbuf_puts(b, "\n");
    sbuf_printf(b, "lower bound   %s  (max rho_j^(1/j), layer %ld)\n", A->lower_bound_str,
                (long)A->lower_layer);
    sbuf_printf(b, "upper bound   %s  (max rho_j, layer %ld)\n", A->upper_bound_str,
                (long)A->upper_layer);
    sbuf_printf(b, "growth rate   %s  (%s)\n", A->growth_str, A->growth_reason);
    if (A->undefined_reason) {
        sbuf_printf(b, "entropy, Lefschetz, Nielsen, Reidemeister numbers: not defined (%s)\n",
                    A->undefined_reason);
    } else {
        sbuf_printf(b, "entropy       %s\n", A->entropy_str);
        if (A->log_growth_str)
            sbuf_printf(b, "log growth    %s  (a lower bound for the entropy)\n",
                        A->log_growth_str);
        sbuf_puts(b, "Lefschetz     ");
        put_fmpz(b, A->lefschetz);
        sbuf_puts(b, "\nNielsen       ");
        put_fmpz(b, A->nielsen);
        sbuf_puts(b, "\nReidemeister  ");
        if (A->reid_kind == ANALYSIS_REID_INFINITE)
            sbuf_puts(b, "infinite");
        else
            put_fmpz(b, A->reidemeister);
        sbuf_puts(b, "\n");
    }
    sbuf_printf(b, "automorphism  %s\n", yes_no(A->automorphism));
    if (!A->undefined_reason) {
        sbuf_printf(b, "injective     %s\n", yes_no(A->injective));
        if (A->index_defined) {
            sbuf_puts(b, "image index   ");
            put_fmpz(b, A->image_index);
            sbuf_puts(b, "\n");
        }
    }
    sbuf_printf(b, "hyperbolic    %s\n", yes_no(A->hyperbolic));
    sbuf_printf(b, "expanding     %s\n", yes_no(A->expanding));
    char **inv = inverse_images(A);
    if (inv) {
        sbuf_puts(b, "inverse       ");
        for (slong x = 0; x < Q->pres->gens->n; x++)
            sbuf_printf(b, "%s%s -> %s", x ? ", " : "", Q->pres->gens->name[x], inv[x]);
        sbuf_puts(b, "\n");
    }
    free_images(A, inv);
}

/* ------------------------------------------------------------------ JSON */

static void json_fmpz_or_null(sbuf_t b, int defined, const fmpz_t x)
{
    if (defined)
        put_fmpz(b, x);
    else
        sbuf_puts(b, "null");
}

static void json_str_or_null(sbuf_t b, const char *s)
{
    if (s)
        sbuf_put_json_str(b, s);
    else
        sbuf_puts(b, "null");
}

static void json_matrix(sbuf_t b, const fmpz_mat_t M)
{
    sbuf_puts(b, "[");
    for (slong i = 0; i < fmpz_mat_nrows(M); i++) {
        sbuf_puts(b, i ? ", [" : "[");
        for (slong j = 0; j < fmpz_mat_ncols(M); j++) {
            if (j)
                sbuf_puts(b, ", ");
            put_fmpz(b, fmpz_mat_entry(M, i, j));
        }
        sbuf_puts(b, "]");
    }
    sbuf_puts(b, "]");
}

static void report_json(sbuf_t b, const analysis_t A, const char *title)
{
    const nq_struct *Q = A->nq;
    char *pres = presentation(A);
    sbuf_puts(b, "{\"format\": \"nilstep-report\", \"version\": 1,\n");
    sbuf_puts(b, " \"title\": ");
    json_str_or_null(b, title);
    sbuf_puts(b, ",\n \"group\": {\"presentation\": ");
    sbuf_put_json_str(b, pres);
    free(pres);
    sbuf_puts(b, ", \"generators\": [");
    for (slong x = 0; x < Q->pres->gens->n; x++) {
        if (x)
            sbuf_puts(b, ", ");
        sbuf_put_json_str(b, Q->pres->gens->name[x]);
    }
    sbuf_printf(b,
                "],\n   \"class\": %ld, \"class_reached\": %ld, \"stabilised\": %s, "
                "\"hirsch_length\": %ld, \"pc_generators\": %ld, \"torsion_free_layers\": %s,\n"
                "   \"layers\": [",
                (long)A->class_requested, (long)Q->class_reached,
                Q->stabilised ? "true" : "false", (long)Q->hirsch_length, (long)Q->pcp->n,
                A->layers_torsion_free ? "true" : "false");
    for (slong j = 0; j < A->nlayers; j++) {
        const analysis_layer_struct *L = A->layers + j;
        sbuf_printf(b, "%s\n     {\"weight\": %ld, \"free_rank\": %ld, \"torsion\": [", j ? "," : "",
                    (long)L->weight, (long)L->free_rank);
        for (slong t = 0; t < L->ntors; t++) {
            if (t)
                sbuf_puts(b, ", ");
            put_fmpz(b, L->torsion + t);
        }
        sbuf_puts(b, "], \"group\": ");
        sbuf_put_json_str(b, L->group_str);
        sbuf_printf(b, ", \"pc_generators\": %ld, \"basis\": [", (long)L->npc);
        for (slong k = 0; k < L->free_rank; k++) {
            if (k)
                sbuf_puts(b, ", ");
            sbuf_put_json_str(b, L->basis[k]);
        }
        sbuf_puts(b, "]}");
    }
    sbuf_puts(b, "]}");
    if (!A->has_map) {
        sbuf_puts(b, "}\n");
        return;
    }
    sbuf_puts(b, ",\n \"map\": {\"text\": ");
    sbuf_put_json_str(b, A->map_str);
    sbuf_printf(b, ", \"valid\": %s, \"failures\": [", A->valid ? "true" : "false");
    for (slong k = 0; k < A->nfail; k++) {
        sbuf_puts(b, k ? ", {\"relator\": " : "{\"relator\": ");
        sbuf_put_json_str(b, A->fail_relator[k]);
        sbuf_puts(b, ", \"image\": ");
        sbuf_put_json_str(b, A->fail_image[k]);
        sbuf_puts(b, "}");
    }
    sbuf_puts(b, "],\n   \"images\": {");
    for (slong x = 0; x < Q->pres->gens->n; x++) {
        if (x)
            sbuf_puts(b, ", ");
        sbuf_put_json_str(b, Q->pres->gens->name[x]);
        sbuf_puts(b, ": ");
        sbuf_put_json_str(b, A->gen_image_str[x]);
    }
    sbuf_puts(b, "},\n   \"layers\": [");
    for (slong j = 0; A->valid && j < A->nlayers; j++) {
        const analysis_layer_struct *L = A->layers + j;
        sbuf_printf(b, "%s\n     {\"weight\": %ld, \"matrix\": ", j ? "," : "", (long)L->weight);
        json_matrix(b, L->matrix);
        sbuf_puts(b, ", \"charpoly\": [");
        for (slong k = 0; k <= L->free_rank; k++) {
            if (k)
                sbuf_puts(b, ", ");
            put_fmpz(b, L->charpoly + k);
        }
        sbuf_puts(b, "], \"charpoly_factored\": ");
        sbuf_put_json_str(b, L->charpoly_factored_str);
        sbuf_puts(b, ", \"spectral_radius\": ");
        sbuf_put_json_str(b, L->rho_str);
        sbuf_puts(b, ", \"spectral_radius_minpoly\": ");
        json_str_or_null(b, L->rho_minpoly_str);
        sbuf_puts(b, ", \"root_bound\": ");
        sbuf_put_json_str(b, L->root_bound_str);
        sbuf_puts(b, ", \"det\": ");
        put_fmpz(b, L->det);
        sbuf_puts(b, ", \"det_one_minus\": ");
        put_fmpz(b, L->det_i_minus);
        sbuf_puts(b, ", \"action\": ");
        json_matrix(b, L->action);
        sbuf_printf(b, ", \"unimodular_eigenvalues\": %ld, \"eigenvalues\": [",
                    (long)L->n_unimodular);
        for (slong k = 0; k < L->nev; k++) {
            if (k)
                sbuf_puts(b, ", ");
            sbuf_put_json_str(b, L->ev_str[k]);
        }
        sbuf_puts(b, "]}");
    }
    sbuf_puts(b, "]");
    if (A->valid) {
        sbuf_puts(b, ",\n   \"lower_bound\": ");
        sbuf_put_json_str(b, A->lower_bound_str);
        sbuf_printf(b, ", \"lower_bound_layer\": %ld, \"upper_bound\": ", (long)A->lower_layer);
        sbuf_put_json_str(b, A->upper_bound_str);
        sbuf_printf(b, ", \"upper_bound_layer\": %ld,\n   \"growth_rate\": ", (long)A->upper_layer);
        sbuf_put_json_str(b, A->growth_str);
        sbuf_puts(b, ", \"growth_reason\": ");
        sbuf_put_json_str(b, A->growth_reason);
        sbuf_puts(b, ", \"log_growth_rate\": ");
        json_str_or_null(b, A->log_growth_str);
        sbuf_puts(b, ",\n   \"entropy\": ");
        json_str_or_null(b, A->entropy_str);
        sbuf_puts(b, ", \"lefschetz\": ");
        json_fmpz_or_null(b, A->lefschetz_defined, A->lefschetz);
        sbuf_puts(b, ", \"nielsen\": ");
        json_fmpz_or_null(b, A->lefschetz_defined, A->nielsen);
        sbuf_puts(b, ", \"reidemeister\": ");
        if (A->reid_kind == ANALYSIS_REID_INFINITE)
            sbuf_puts(b, "\"infinite\"");
        else
            json_fmpz_or_null(b, A->reid_kind == ANALYSIS_REID_FINITE, A->reidemeister);
        sbuf_puts(b, ", \"undefined_reason\": ");
        json_str_or_null(b, A->undefined_reason);
        sbuf_printf(b,
                    ",\n   \"automorphism\": %s, \"injective\": %s, \"hyperbolic\": %s, "
                    "\"expanding\": %s, \"image_index\": ",
                    A->automorphism ? "true" : "false", A->injective ? "true" : "false",
                    A->hyperbolic ? "true" : "false", A->expanding ? "true" : "false");
        json_fmpz_or_null(b, A->index_defined, A->image_index);
        sbuf_printf(b, ", \"injective_defined\": %s", A->injective_defined ? "true" : "false");
        sbuf_puts(b, ",\n   \"inverse\": ");
        char **inv = inverse_images(A);
        if (inv) {
            sbuf_puts(b, "{");
            for (slong x = 0; x < Q->pres->gens->n; x++) {
                if (x)
                    sbuf_puts(b, ", ");
                sbuf_put_json_str(b, Q->pres->gens->name[x]);
                sbuf_puts(b, ": ");
                sbuf_put_json_str(b, inv[x]);
            }
            sbuf_puts(b, "}");
        } else
            sbuf_puts(b, "null");
        free_images(A, inv);
    }
    sbuf_puts(b, "}}\n");
}

/* ----------------------------------------------------------------- LaTeX */

static void latex_matrix(sbuf_t b, const fmpz_mat_t M)
{
    slong r = fmpz_mat_nrows(M);
    if (r == 0) {
        sbuf_puts(b, "---");
        return;
    }
    if (r > REPORT_LATEX_MAX_DIM) {
        sbuf_printf(b, "$%ld \\times %ld$ (see the JSON report)", (long)r, (long)r);
        return;
    }
    sbuf_puts(b, "$\\begin{pmatrix}");
    for (slong i = 0; i < r; i++) {
        for (slong j = 0; j < r; j++) {
            if (j)
                sbuf_puts(b, " & ");
            put_fmpz(b, fmpz_mat_entry(M, i, j));
        }
        sbuf_puts(b, i + 1 < r ? " \\\\ " : "");
    }
    sbuf_puts(b, "\\end{pmatrix}$");
}

static void latex_group(sbuf_t b, const analysis_layer_struct *L)
{
    sbuf_puts(b, "$");
    int any = 0;
    if (L->free_rank > 0) {
        sbuf_puts(b, "\\mathbb{Z}");
        if (L->free_rank > 1)
            sbuf_printf(b, "^{%ld}", (long)L->free_rank);
        any = 1;
    }
    for (slong t = 0; t < L->ntors; t++) {
        sbuf_puts(b, any ? " \\oplus \\mathbb{Z}/" : "\\mathbb{Z}/");
        put_fmpz(b, L->torsion + t);
        any = 1;
    }
    if (!any)
        sbuf_puts(b, "0");
    sbuf_puts(b, "$");
}

static void report_latex(sbuf_t b, const analysis_t A, const char *title)
{
    char *pres = presentation(A);
    sbuf_puts(b, "% nilstep report (LaTeX); needs \\usepackage{amsmath,amssymb}\n");
    if (title) {
        sbuf_puts(b, "% ");
        sbuf_puts(b, title);
        sbuf_puts(b, "\n");
    }
    sbuf_puts(b, "\\noindent Group: \\texttt{");
    sbuf_put_latex_str(b, pres);
    free(pres);
    sbuf_printf(b, "}, class %ld, Hirsch length %ld.\\\\\n", (long)A->class_requested,
                (long)A->nq->hirsch_length);
    int maps = A->has_map && A->valid;
    if (A->has_map) {
        sbuf_puts(b, "Map: \\texttt{");
        sbuf_put_latex_str(b, A->map_str);
        sbuf_puts(b, maps ? "}.\n\n" : "}, not well defined on this quotient.\n\n");
    }
    if (maps)
        sbuf_puts(b, "\\begin{tabular}{clllll}\n$j$ & $\\gamma_j/\\gamma_{j+1}$ & $M_j$ & "
                     "$\\chi_{M_j}(x)$ & $\\rho_j$ & $\\rho_j^{1/j}$ \\\\\n\\hline\n");
    else
        sbuf_puts(b, "\\begin{tabular}{cl}\n$j$ & $\\gamma_j/\\gamma_{j+1}$ \\\\\n\\hline\n");
    for (slong j = 0; j < A->nlayers; j++) {
        const analysis_layer_struct *L = A->layers + j;
        sbuf_printf(b, "%ld & ", (long)L->weight);
        latex_group(b, L);
        if (maps) {
            sbuf_puts(b, " & ");
            latex_matrix(b, L->matrix);
            sbuf_printf(b, " & $%s$ & $%s$ & $%s$", L->charpoly_latex, L->rho_str,
                        L->root_bound_str);
        }
        sbuf_puts(b, " \\\\\n");
    }
    sbuf_puts(b, "\\end{tabular}\n");
    if (!maps)
        return;
    sbuf_puts(b, "\n\\medskip\\noindent\n");
    sbuf_printf(b, "Lower bound $\\max_j \\rho_j^{1/j} = %s$ (layer %ld); ", A->lower_bound_str,
                (long)A->lower_layer);
    sbuf_printf(b, "upper bound $\\max_j \\rho_j = %s$ (layer %ld); ", A->upper_bound_str,
                (long)A->upper_layer);
    sbuf_printf(b, "growth rate $%s$.\\\\\n", A->growth_str);
    if (A->undefined_reason) {
        sbuf_puts(b, "Entropy, Lefschetz, Nielsen and Reidemeister numbers: not defined (");
        sbuf_put_latex_str(b, A->undefined_reason);
        sbuf_puts(b, ").\\\\\n");
    } else {
        sbuf_printf(b, "Entropy $h = %s$; $L = ", A->entropy_str);
        put_fmpz(b, A->lefschetz);
        sbuf_puts(b, "$, $N = ");
        put_fmpz(b, A->nielsen);
        sbuf_puts(b, "$, $R = ");
        if (A->reid_kind == ANALYSIS_REID_INFINITE)
            sbuf_puts(b, "\\infty");
        else
            put_fmpz(b, A->reidemeister);
        sbuf_puts(b, "$.\\\\\n");
    }
    sbuf_printf(b, "Automorphism: %s; hyperbolic: %s; expanding: %s.\n",
                yes_no(A->automorphism), yes_no(A->hyperbolic), yes_no(A->expanding));
}

char *report_get_str(const analysis_t A, report_format fmt, const char *title)
{
    sbuf_t b;
    sbuf_init(b);
    if (fmt == REPORT_JSON)
        report_json(b, A, title);
    else if (fmt == REPORT_LATEX)
        report_latex(b, A, title);
    else
        report_text(b, A, title);
    return sbuf_take(b);
}
