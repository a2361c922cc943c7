/* report.c — see report.h. */
#include <stdlib.h>
#include <string.h>
#include <flint/fmpz_mat.h>
#include "report.h"
#include "strbuf.h"

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

static void put_fmpz(strbuf_t b, const fmpz_t x)
{
    char *s = fmpz_get_str(NULL, 10, x);
    strbuf_puts(b, s);
    flint_free(s);
}

/* The Lefschetz, Nielsen and Reidemeister numbers, each after its label;
 * inf is written for an infinite Reidemeister number. */
static void put_fixed_point_numbers(strbuf_t b, const analysis_t A, const char *l_label,
                                    const char *n_label, const char *r_label, const char *inf)
{
    strbuf_puts(b, l_label);
    put_fmpz(b, A->lefschetz);
    strbuf_puts(b, n_label);
    put_fmpz(b, A->nielsen);
    strbuf_puts(b, r_label);
    if (A->reid_kind == ANALYSIS_REID_INFINITE)
        strbuf_puts(b, inf);
    else
        put_fmpz(b, A->reidemeister);
}

static const char *yes_no(int v)
{
    return v ? "yes" : "no";
}


/* "a -> w_a, b -> w_b" from one word per input generator. */
static void put_map_words(strbuf_t b, const analysis_t A, char *const *w)
{
    const names_struct *g = A->nq->pres->gens;
    for (slong x = 0; x < g->n; x++)
        strbuf_printf(b, "%s%s -> %s", x ? ", " : "", g->name[x], w[x]);
}

/* ---------------------------------------------- the torsion subgroup */

/* "Z^2 + Z/2", "0": layer j of Gc/T. */
static void put_quotient_group(strbuf_t b, const analysis_layer_struct *L, const torsion_t T,
                               slong j, int latex)
{
    int any = 0;
    if (L->layer->free_rank > 0) {
        strbuf_puts(b, latex ? "\\mathbb{Z}" : "Z");
        if (L->layer->free_rank > 1)
            strbuf_printf(b, latex ? "^{%ld}" : "^%ld", (long)L->layer->free_rank);
        any = 1;
    }
    slong nt = j < T->nlayers ? T->q_ntors[j] : 0;
    for (slong t = 0; t < nt; t++) {
        strbuf_puts(b, any ? (latex ? " \\oplus " : " + ") : "");
        strbuf_puts(b, latex ? "\\mathbb{Z}/" : "Z/");
        put_fmpz(b, T->q_tors[j] + t);
        any = 1;
    }
    if (!any)
        strbuf_puts(b, "0");
}

/* "alpha(u) = word = normal word", the word left out when it is the
 * normal word. */
static void text_failure_side(strbuf_t b, const char *side, const char *word, const char *image)
{
    strbuf_printf(b, "      alpha(%s) = ", side);
    if (word && strcmp(word, image) != 0)
        strbuf_printf(b, "%s = ", word);
    strbuf_printf(b, "%s\n", image);
}

static void text_failure(strbuf_t b, const analysis_t A, const analysis_failure_struct *f)
{
    if (f->lowest_class <= 1)
        strbuf_puts(b, "      fails already on the class-1 quotient\n");
    else
        strbuf_printf(b, "      fails from class %ld on (holds on the class-%ld quotient)\n",
                      (long)f->lowest_class, (long)(f->lowest_class - 1));
    text_failure_side(b, f->lhs, f->lhs_word, f->lhs_image);
    if (strcmp(f->rhs, "1") != 0) /* a plain relator: alpha(1) = 1 says nothing */
        text_failure_side(b, f->rhs, f->rhs_word, f->rhs_image);
    if (f->forced_gen >= 0)
        strbuf_printf(b, "      the relation forces %s -> %s\n",
                      A->nq->pres->gens->name[f->forced_gen], f->forced_image);
}

/* "Z/2 + Z/4", "trivial" or "not abelian". */
static void put_torsion_structure(strbuf_t b, const torsion_t T, int latex)
{
    if (fmpz_is_one(T->order)) {
        strbuf_puts(b, latex ? "1" : "trivial");
        return;
    }
    if (!T->abelian) {
        strbuf_puts(b, latex ? "\\text{not abelian}" : "not abelian");
        return;
    }
    for (slong t = 0; t < T->ninv; t++) {
        strbuf_puts(b, t ? (latex ? " \\oplus " : " + ") : "");
        strbuf_puts(b, latex ? "\\mathbb{Z}/" : "Z/");
        put_fmpz(b, T->inv + t);
    }
}

static void text_torsion(strbuf_t b, const analysis_t A)
{
    const torsion_struct *T = A->tors;
    strbuf_puts(b, "\ntorsion subgroup T (the elements of finite order of the class-c quotient Gc)\n");
    strbuf_puts(b, "  order         ");
    put_fmpz(b, T->order);
    strbuf_puts(b, T->finite ? "  (Gc is finite: T = Gc)\n  structure     "
                             : "\n  structure     ");
    put_torsion_structure(b, T, 0);
    strbuf_puts(b, "\n  generators    ");
    for (slong i = 0; i < T->sub->len; i++)
        strbuf_printf(b, "%s%s", i ? ", " : "", T->gen_str[i]);
    strbuf_puts(b, T->sub->len ? "\n" : "1\n");
    strbuf_puts(b, "torsion-free quotient Gc/T (same free parts and bases; the induced map has "
                   "the matrices M_j of Gc)\n");
    strbuf_puts(b, "layer  group                order of T in the layer\n");
    for (slong j = 0; j < A->nlayers; j++) {
        const analysis_layer_struct *L = A->layers + j;
        strbuf_t g;
        strbuf_init(g);
        put_quotient_group(g, L, T, j, 0);
        strbuf_printf(b, "%5ld  %-20s ", (long)L->layer->weight, g->s);
        strbuf_clear(g);
        if (j < T->nlayers)
            put_fmpz(b, T->u_ord + j);
        else
            strbuf_puts(b, "1");
        strbuf_puts(b, "\n");
    }
}

static void json_matrix(strbuf_t b, const fmpz_mat_t M);

static void json_torsion(strbuf_t b, const analysis_t A)
{
    const torsion_struct *T = A->tors;
    strbuf_puts(b, ",\n \"torsion_subgroup\": {\"order\": ");
    put_fmpz(b, T->order);
    strbuf_printf(b, ", \"finite_quotient\": %s, \"abelian\": %s, \"invariants\": ",
                  T->finite ? "true" : "false", T->abelian ? "true" : "false");
    if (T->abelian) {
        strbuf_puts(b, "[");
        for (slong t = 0; t < T->ninv; t++) {
            if (t)
                strbuf_puts(b, ", ");
            put_fmpz(b, T->inv + t);
        }
        strbuf_puts(b, "]");
    } else
        strbuf_puts(b, "null");
    strbuf_puts(b, ", \"generators\": [");
    for (slong i = 0; i < T->sub->len; i++) {
        if (i)
            strbuf_puts(b, ", ");
        strbuf_put_json_str(b, T->gen_str[i]);
    }
    strbuf_puts(b, "], \"layer_orders\": [");
    for (slong j = 0; j < A->nlayers; j++) {
        if (j)
            strbuf_puts(b, ", ");
        if (j < T->nlayers)
            put_fmpz(b, T->u_ord + j);
        else
            strbuf_puts(b, "1");
    }
    strbuf_printf(b, "]},\n \"torsion_free_quotient\": {\"hirsch_length\": %ld, "
                     "\"torsion_free_layers\": %s,\n   \"layers\": [",
                  (long)A->nq->hirsch_length, T->quotient_layers_free ? "true" : "false");
    for (slong j = 0; j < A->nlayers; j++) {
        const analysis_layer_struct *L = A->layers + j;
        slong nt = j < T->nlayers ? T->q_ntors[j] : 0;
        strbuf_printf(b, "%s\n     {\"weight\": %ld, \"free_rank\": %ld, \"torsion\": [",
                      j ? "," : "", (long)L->layer->weight, (long)L->layer->free_rank);
        for (slong t = 0; t < nt; t++) {
            if (t)
                strbuf_puts(b, ", ");
            put_fmpz(b, T->q_tors[j] + t);
        }
        strbuf_t g;
        strbuf_init(g);
        put_quotient_group(g, L, T, j, 0);
        strbuf_puts(b, "], \"group\": ");
        strbuf_put_json_str(b, g->s);
        strbuf_clear(g);
        strbuf_printf(b, ", \"pc_generators\": %ld, \"basis\": [", (long)(L->layer->free_rank + nt));
        for (slong k = 0; k < L->layer->free_rank; k++) {
            if (k)
                strbuf_puts(b, ", ");
            strbuf_put_json_str(b, L->layer->basis[k]);
        }
        strbuf_puts(b, "]}");
    }
    /* the induced map: on the free parts it is M_j, as on Gc */
    strbuf_puts(b, "],\n   \"induced_map\": ");
    if (!A->has_map || !A->valid)
        strbuf_puts(b, "null");
    else {
        strbuf_puts(b, "{\"layers\": [");
        for (slong j = 0; j < A->nlayers; j++) {
            strbuf_printf(b, "%s{\"weight\": %ld, \"matrix\": ", j ? ", " : "",
                          (long)A->layers[j].layer->weight);
            json_matrix(b, A->layers[j].matrix);
            strbuf_puts(b, "}");
        }
        strbuf_puts(b, "]}");
    }
    strbuf_puts(b, "}");
}

static void latex_torsion(strbuf_t b, const analysis_t A)
{
    const torsion_struct *T = A->tors;
    strbuf_puts(b, "\n\\medskip\\noindent Torsion subgroup $T$ of $G_c$: order $");
    put_fmpz(b, T->order);
    strbuf_puts(b, "$, $T \\cong ");
    put_torsion_structure(b, T, 1);
    strbuf_puts(b, "$, generated by \\texttt{");
    for (slong i = 0; i < T->sub->len; i++) {
        if (i)
            strbuf_puts(b, ", ");
        strbuf_put_latex_str(b, T->gen_str[i]);
    }
    strbuf_puts(b, T->sub->len ? "}" : "1}");
    strbuf_puts(b, ". Layers of the torsion-free quotient $G_c/T$:");
    for (slong j = 0; j < A->nlayers; j++) {
        strbuf_printf(b, "%s $", j ? "," : "");
        put_quotient_group(b, A->layers + j, T, j, 1);
        strbuf_puts(b, "$");
    }
    strbuf_puts(b, ".\\\\\n");
}

/* The invariants when some layer has torsion, each with what it is
 * computed on. */
static void text_torsion_invariants(strbuf_t b, const analysis_t A)
{
    const torsion_map_struct *M = A->tmap;
    strbuf_printf(b, "entropy       %s  (rational layers: the free parts)\n", A->entropy_str);
    if (A->log_growth_str)
        strbuf_printf(b, "log growth    %s  (a lower bound for the entropy)\n", A->log_growth_str);
    strbuf_puts(b, "Lefschetz     ");
    put_fmpz(b, A->lefschetz);
    strbuf_puts(b, "  (nilmanifold of Gc/T, Anosov 1985)\nNielsen       ");
    put_fmpz(b, A->nielsen);
    strbuf_puts(b, "  (nilmanifold of Gc/T)\nReidemeister  ");
    if (A->reid_kind == ANALYSIS_REID_INFINITE)
        strbuf_printf(b, "infinite  (on Gc: %s)\n", M->reid_method);
    else if (A->reid_kind == ANALYSIS_REID_FINITE) {
        put_fmpz(b, A->reidemeister);
        strbuf_printf(b, "  (on Gc, torsion included; %s)\n", M->reid_method);
    } else
        strbuf_printf(b, "not computed  (%s)\n", A->limit->msg);
    if (M->fixed_defined) {
        strbuf_puts(b, "fixed points  ");
        put_fmpz(b, M->fixed_elements);
        strbuf_puts(b, "  (elements x of Gc with alpha(x) = x)\n");
    }
    if (M->fixed_classes_defined) {
        strbuf_puts(b, "fixed classes ");
        put_fmpz(b, M->fixed_classes);
        strbuf_puts(b, "  (conjugacy classes C of Gc with alpha(C) = C)\n");
    }
    strbuf_printf(b, "automorphism  %s\n", yes_no(A->automorphism));
    strbuf_printf(b, "injective     %s  (on Gc, torsion included)\n", yes_no(A->injective));
    if (A->index_defined) {
        strbuf_puts(b, "image index   ");
        put_fmpz(b, A->image_index);
        strbuf_puts(b, "  (in Gc)\n");
    }
    strbuf_printf(b, "hyperbolic    %s  (rational layers)\n", yes_no(A->hyperbolic));
    strbuf_printf(b, "expanding     %s  (rational layers)\n", yes_no(A->expanding));
}

/* ------------------------------------------------------------------ text */

static void text_matrix(strbuf_t b, const fmpz_mat_t M, const char *indent)
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
        strbuf_printf(b, "%s[", indent);
        for (slong j = 0; j < c; j++) {
            char *s = fmpz_get_str(NULL, 10, fmpz_mat_entry(M, i, j));
            strbuf_printf(b, "%s%*s", j ? " " : "", (int)w, s);
            flint_free(s);
        }
        strbuf_puts(b, "]\n");
    }
}

static void report_text(strbuf_t b, const analysis_t A, const char *title)
{
    const nq_struct *Q = A->nq;
    char *pres = pres_get_str(A->nq->pres);
    strbuf_printf(b, "nilstep report%s%s\n\n", title ? ": " : "", title ? title : "");
    strbuf_printf(b, "group         %s\n", pres);
    strbuf_printf(b, "class         %ld", (long)A->class_requested);
    if (Q->stabilised)
        strbuf_printf(b, "  (the series stabilises at class %ld: every larger class gives the "
                       "same quotient)",
                    (long)Q->class_reached);
    strbuf_printf(b, "\nHirsch length %ld\npc generators %ld\n\n", (long)Q->hirsch_length,
                (long)Q->pcp->n);
    strbuf_puts(b, "layer  group                basis of the free part\n");
    for (slong j = 0; j < A->nlayers; j++) {
        const analysis_layer_struct *L = A->layers + j;
        strbuf_printf(b, "%5ld  %-20s ", (long)L->layer->weight, L->group_str);
        for (slong k = 0; k < L->layer->free_rank; k++)
            strbuf_printf(b, "%s%s", k ? ", " : "", L->layer->basis[k]);
        strbuf_puts(b, "\n");
    }
    flint_free(pres);
    if (!A->layers_torsion_free)
        text_torsion(b, A);
    if (!A->has_map)
        return;
    strbuf_printf(b, "\nmap           %s\n", A->map_str);
    if (!A->valid) {
        strbuf_printf(b, "not well defined on the class-%ld quotient: %ld relator%s not mapped "
                       "to 1\n",
                    (long)A->class_requested, (long)A->nfail, A->nfail == 1 ? " is" : "s are");
        for (slong k = 0; k < A->nfail; k++) {
            strbuf_printf(b, "  %s  ->  %s\n", A->fail_relator[k], A->fail_image[k]);
            text_failure(b, A, A->failures + k);
        }
        return;
    }
    strbuf_printf(b, "              an endomorphism of the class-%ld quotient\n",
                (long)A->class_requested);
    for (slong x = 0; x < Q->pres->gens->n; x++)
        strbuf_printf(b, "              %s -> %s\n", Q->pres->gens->name[x], A->gen_image_str[x]);
    for (slong j = 0; j < A->nlayers; j++) {
        const analysis_layer_struct *L = A->layers + j;
        strbuf_printf(b, "\nlayer %ld: %s\n", (long)L->layer->weight, L->group_str);
        if (L->layer->ntors > 0 && L->layer->count > 0) {
            strbuf_puts(b, "  action on the layer's pc generators (modulo its power relations)\n");
            text_matrix(b, L->action, "    ");
        }
        if (L->layer->free_rank == 0)
            continue;
        strbuf_puts(b, "  matrix\n");
        text_matrix(b, L->matrix, "    ");
        strbuf_printf(b, "  charpoly      %s\n", L->charpoly_factored_str);
        strbuf_printf(b, "  rho           %s\n", L->rho_str);
        if (L->rho_minpoly_str)
            strbuf_printf(b, "  rho is a root of %s\n", L->rho_minpoly_str);
        strbuf_printf(b, "  rho^(1/%ld)     %s\n", (long)L->layer->weight, L->root_bound_str);
        strbuf_puts(b, "  det           ");
        put_fmpz(b, L->det);
        strbuf_puts(b, "\n  det(I - M)    ");
        put_fmpz(b, L->det_i_minus);
        strbuf_puts(b, "\n  eigenvalues\n");
        for (slong k = 0; k < L->nev; k++)
            strbuf_printf(b, "    %-44s |.| = %s\n", L->ev_str[k], L->ev_abs_str[k]);
    }
    strbuf_puts(b, "\n");
    strbuf_printf(b, "lower bound   %s  (max rho_j^(1/j), layer %ld)\n", A->lower_bound_str,
                (long)A->lower_layer);
    strbuf_printf(b, "upper bound   %s  (max rho_j, layer %ld)\n", A->upper_bound_str,
                (long)A->upper_layer);
    strbuf_printf(b, "growth rate   %s  (%s)\n", A->growth_str, A->growth_reason);
    if (!A->layers_torsion_free) {
        text_torsion_invariants(b, A);
    } else if (A->undefined_reason) {
        strbuf_printf(b, "entropy, Lefschetz, Nielsen, Reidemeister numbers: not defined (%s)\n",
                    A->undefined_reason);
    } else {
        strbuf_printf(b, "entropy       %s\n", A->entropy_str);
        if (A->log_growth_str)
            strbuf_printf(b, "log growth    %s  (a lower bound for the entropy)\n",
                        A->log_growth_str);
        put_fixed_point_numbers(b, A, "Lefschetz     ", "\nNielsen       ",
                                "\nReidemeister  ", "infinite");
        strbuf_puts(b, "\n");
    }
    if (A->layers_torsion_free) {
        strbuf_printf(b, "automorphism  %s\n", yes_no(A->automorphism));
        if (!A->undefined_reason) {
            strbuf_printf(b, "injective     %s\n", yes_no(A->injective));
            if (A->index_defined) {
                strbuf_puts(b, "image index   ");
                put_fmpz(b, A->image_index);
                strbuf_puts(b, "\n");
            }
        }
        strbuf_printf(b, "hyperbolic    %s\n", yes_no(A->hyperbolic));
        strbuf_printf(b, "expanding     %s\n", yes_no(A->expanding));
    }
    if (A->inverse_requested) {
        strbuf_puts(b, "inverse       ");
        if (A->inverse_str)
            put_map_words(b, A, A->inverse_str);
        else
            strbuf_printf(b, "none (%s)", A->inverse_reason);
        strbuf_puts(b, "\n");
    }
}

/* ------------------------------------------------------------------ JSON */

static void json_fmpz_or_null(strbuf_t b, int defined, const fmpz_t x)
{
    if (defined)
        put_fmpz(b, x);
    else
        strbuf_puts(b, "null");
}

static void json_slong_or_null(strbuf_t b, int defined, slong x)
{
    if (defined)
        strbuf_printf(b, "%ld", (long)x);
    else
        strbuf_puts(b, "null");
}

static void json_bool_or_null(strbuf_t b, int defined, int v)
{
    strbuf_puts(b, !defined ? "null" : v ? "true" : "false");
}

static void json_str_or_null(strbuf_t b, const char *s)
{
    if (s)
        strbuf_put_json_str(b, s);
    else
        strbuf_puts(b, "null");
}

static void json_matrix(strbuf_t b, const fmpz_mat_t M)
{
    strbuf_puts(b, "[");
    for (slong i = 0; i < fmpz_mat_nrows(M); i++) {
        strbuf_puts(b, i ? ", [" : "[");
        for (slong j = 0; j < fmpz_mat_ncols(M); j++) {
            if (j)
                strbuf_puts(b, ", ");
            put_fmpz(b, fmpz_mat_entry(M, i, j));
        }
        strbuf_puts(b, "]");
    }
    strbuf_puts(b, "]");
}

static const char *json_bool(int v)
{
    return v ? "true" : "false";
}

/* The title and the group: presentation, generators and its layers. */
static void json_group(strbuf_t b, const analysis_t A, const char *title)
{
    const nq_struct *Q = A->nq;
    char *pres = pres_get_str(A->nq->pres);
    strbuf_puts(b, "{\"format\": \"nilstep-report\", \"version\": 1,\n");
    strbuf_puts(b, " \"title\": ");
    json_str_or_null(b, title);
    strbuf_puts(b, ",\n \"group\": {\"presentation\": ");
    strbuf_put_json_str(b, pres);
    flint_free(pres);
    strbuf_puts(b, ", \"generators\": [");
    for (slong x = 0; x < Q->pres->gens->n; x++) {
        if (x)
            strbuf_puts(b, ", ");
        strbuf_put_json_str(b, Q->pres->gens->name[x]);
    }
    strbuf_printf(b,
                  "],\n   \"class\": %ld, \"class_reached\": %ld, \"stabilised\": %s, "
                  "\"hirsch_length\": %ld, \"pc_generators\": %ld, \"torsion_free_layers\": %s,\n"
                  "   \"layers\": [",
                  (long)A->class_requested, (long)Q->class_reached, json_bool(Q->stabilised),
                  (long)Q->hirsch_length, (long)Q->pcp->n, json_bool(A->layers_torsion_free));
    for (slong j = 0; j < A->nlayers; j++) {
        const analysis_layer_struct *L = A->layers + j;
        strbuf_printf(b, "%s\n     {\"weight\": %ld, \"free_rank\": %ld, \"torsion\": [",
                      j ? "," : "", (long)L->layer->weight, (long)L->layer->free_rank);
        for (slong t = 0; t < L->layer->ntors; t++) {
            if (t)
                strbuf_puts(b, ", ");
            put_fmpz(b, L->layer->torsion + t);
        }
        strbuf_puts(b, "], \"group\": ");
        strbuf_put_json_str(b, L->group_str);
        strbuf_printf(b, ", \"pc_generators\": %ld, \"basis\": [", (long)L->layer->count);
        for (slong k = 0; k < L->layer->free_rank; k++) {
            if (k)
                strbuf_puts(b, ", ");
            strbuf_put_json_str(b, L->layer->basis[k]);
        }
        strbuf_puts(b, "]}");
    }
    strbuf_puts(b, "]}");
}

/* The map as given, its validity, failing relators and images. */
static void json_map_images(strbuf_t b, const analysis_t A)
{
    const names_struct *g = A->nq->pres->gens;
    strbuf_puts(b, ",\n \"map\": {\"text\": ");
    strbuf_put_json_str(b, A->map_str);
    strbuf_printf(b, ", \"valid\": %s, \"failures\": [", json_bool(A->valid));
    for (slong k = 0; k < A->nfail; k++) {
        strbuf_puts(b, k ? ", {\"relator\": " : "{\"relator\": ");
        strbuf_put_json_str(b, A->fail_relator[k]);
        strbuf_puts(b, ", \"image\": ");
        strbuf_put_json_str(b, A->fail_image[k]);
        const analysis_failure_struct *f = A->failures + k;
        strbuf_printf(b, ", \"lowest_class\": %ld, \"lhs\": ", (long)f->lowest_class);
        strbuf_put_json_str(b, f->lhs);
        strbuf_puts(b, ", \"rhs\": ");
        strbuf_put_json_str(b, f->rhs);
        strbuf_puts(b, ", \"lhs_word\": ");
        json_str_or_null(b, f->lhs_word);
        strbuf_puts(b, ", \"rhs_word\": ");
        json_str_or_null(b, f->rhs_word);
        strbuf_puts(b, ", \"lhs_image\": ");
        strbuf_put_json_str(b, f->lhs_image);
        strbuf_puts(b, ", \"rhs_image\": ");
        strbuf_put_json_str(b, f->rhs_image);
        strbuf_puts(b, ", \"forced_generator\": ");
        json_str_or_null(b, f->forced_gen >= 0 ? g->name[f->forced_gen] : NULL);
        strbuf_puts(b, ", \"forced_image\": ");
        json_str_or_null(b, f->forced_image);
        strbuf_puts(b, "}");
    }
    strbuf_puts(b, "],\n   \"images\": {");
    for (slong x = 0; x < g->n; x++) {
        if (x)
            strbuf_puts(b, ", ");
        strbuf_put_json_str(b, g->name[x]);
        strbuf_puts(b, ": ");
        strbuf_put_json_str(b, A->gen_image_str[x]);
    }
    strbuf_puts(b, "}");
}

/* The matrices and spectra of the layers (none for an invalid map). */
static void json_map_layers(strbuf_t b, const analysis_t A)
{
    strbuf_puts(b, ",\n   \"layers\": [");
    for (slong j = 0; A->valid && j < A->nlayers; j++) {
        const analysis_layer_struct *L = A->layers + j;
        strbuf_printf(b, "%s\n     {\"weight\": %ld, \"matrix\": ", j ? "," : "", (long)L->layer->weight);
        json_matrix(b, L->matrix);
        strbuf_puts(b, ", \"charpoly\": [");
        for (slong k = 0; k <= L->layer->free_rank; k++) {
            if (k)
                strbuf_puts(b, ", ");
            put_fmpz(b, L->charpoly + k);
        }
        strbuf_puts(b, "], \"charpoly_factored\": ");
        strbuf_put_json_str(b, L->charpoly_factored_str);
        strbuf_puts(b, ", \"spectral_radius\": ");
        strbuf_put_json_str(b, L->rho_str);
        strbuf_puts(b, ", \"spectral_radius_minpoly\": ");
        json_str_or_null(b, L->rho_minpoly_str);
        strbuf_puts(b, ", \"root_bound\": ");
        strbuf_put_json_str(b, L->root_bound_str);
        strbuf_puts(b, ", \"det\": ");
        put_fmpz(b, L->det);
        strbuf_puts(b, ", \"det_one_minus\": ");
        put_fmpz(b, L->det_i_minus);
        strbuf_puts(b, ", \"action\": ");
        json_matrix(b, L->action);
        strbuf_printf(b, ", \"unimodular_eigenvalues\": %ld, \"eigenvalues\": [",
                      (long)L->n_unimodular);
        for (slong k = 0; k < L->nev; k++) {
            if (k)
                strbuf_puts(b, ", ");
            strbuf_put_json_str(b, L->ev_str[k]);
        }
        strbuf_puts(b, "]}");
    }
    strbuf_puts(b, "]");
}

/* Bounds, growth and invariants: every key is written; a map that is not
 * well defined has none of these numbers, so all are null then. */
static void json_map_numbers(strbuf_t b, const analysis_t A)
{
    int v = A->valid;
    strbuf_puts(b, ",\n   \"lower_bound\": ");
    json_str_or_null(b, v ? A->lower_bound_str : NULL);
    strbuf_puts(b, ", \"lower_bound_layer\": ");
    json_slong_or_null(b, v, A->lower_layer);
    strbuf_puts(b, ", \"upper_bound\": ");
    json_str_or_null(b, v ? A->upper_bound_str : NULL);
    strbuf_puts(b, ", \"upper_bound_layer\": ");
    json_slong_or_null(b, v, A->upper_layer);
    strbuf_puts(b, ",\n   \"growth_rate\": ");
    json_str_or_null(b, v ? A->growth_str : NULL);
    strbuf_puts(b, ", \"growth_reason\": ");
    json_str_or_null(b, v ? A->growth_reason : NULL);
    strbuf_puts(b, ", \"log_growth_rate\": ");
    json_str_or_null(b, v ? A->log_growth_str : NULL);
    strbuf_puts(b, ",\n   \"entropy\": ");
    json_str_or_null(b, v ? A->entropy_str : NULL);
    strbuf_puts(b, ", \"lefschetz\": ");
    json_fmpz_or_null(b, v && A->lefschetz_defined, A->lefschetz);
    strbuf_puts(b, ", \"nielsen\": ");
    json_fmpz_or_null(b, v && A->lefschetz_defined, A->nielsen);
    strbuf_puts(b, ", \"reidemeister\": ");
    if (v && A->reid_kind == ANALYSIS_REID_INFINITE)
        strbuf_puts(b, "\"infinite\"");
    else
        json_fmpz_or_null(b, v && A->reid_kind == ANALYSIS_REID_FINITE, A->reidemeister);
    strbuf_puts(b, ", \"undefined_reason\": ");
    json_str_or_null(b, v ? A->undefined_reason : NULL);
    strbuf_puts(b, ",\n   \"automorphism\": ");
    json_bool_or_null(b, v, A->automorphism);
    strbuf_puts(b, ", \"injective\": ");
    json_bool_or_null(b, v && A->injective_defined, A->injective);
    strbuf_puts(b, ", \"hyperbolic\": ");
    json_bool_or_null(b, v, A->hyperbolic);
    strbuf_puts(b, ", \"expanding\": ");
    json_bool_or_null(b, v, A->expanding);
    strbuf_puts(b, ", \"image_index\": ");
    json_fmpz_or_null(b, v && A->index_defined, A->image_index);
    strbuf_puts(b, ", \"injective_defined\": ");
    json_bool_or_null(b, v, A->injective_defined);
    /* the finite part: how R was found, a counting limit, fixed points
     * (finite Gc), and what each number is computed on */
    const torsion_map_struct *M = A->tmap;
    strbuf_puts(b, ",\n   \"reidemeister_method\": ");
    json_str_or_null(b, v ? M->reid_method : NULL);
    strbuf_puts(b, ", \"limit\": ");
    json_str_or_null(b, v && A->limit_hit ? A->limit->msg : NULL);
    strbuf_puts(b, ", \"fixed_points\": ");
    json_fmpz_or_null(b, v && M->fixed_defined, M->fixed_elements);
    strbuf_puts(b, ", \"fixed_conjugacy_classes\": ");
    json_fmpz_or_null(b, v && M->fixed_classes_defined, M->fixed_classes);
    strbuf_puts(b, ",\n   \"computed_on\": ");
    if (!v) {
        strbuf_puts(b, "null");
        return;
    }
    strbuf_puts(b, "{\"entropy\": \"rational layers\", "
                   "\"bounds\": \"rational layers\", \"hyperbolic\": \"rational layers\", "
                   "\"expanding\": \"rational layers\", \"lefschetz\": \"Gc/T\", "
                   "\"nielsen\": \"Gc/T\", \"reidemeister\": \"Gc\", "
                   "\"injective\": \"Gc\", \"image_index\": \"Gc\", "
                   "\"fixed_points\": \"Gc\"}");
}

/* The inverse's images, or null when not requested or there is none. */
static void json_map_inverse(strbuf_t b, const analysis_t A)
{
    const names_struct *g = A->nq->pres->gens;
    strbuf_puts(b, ",\n   \"inverse\": ");
    if (!A->inverse_str) {
        strbuf_puts(b, "null");
        return;
    }
    strbuf_puts(b, "{");
    for (slong x = 0; x < g->n; x++) {
        if (x)
            strbuf_puts(b, ", ");
        strbuf_put_json_str(b, g->name[x]);
        strbuf_puts(b, ": ");
        strbuf_put_json_str(b, A->inverse_str[x]);
    }
    strbuf_puts(b, "}");
}

static void report_json(strbuf_t b, const analysis_t A, const char *title)
{
    json_group(b, A, title);
    json_torsion(b, A);
    if (A->has_map) {
        json_map_images(b, A);
        json_map_layers(b, A);
        json_map_numbers(b, A);
        json_map_inverse(b, A);
        strbuf_puts(b, "}");
    }
    strbuf_puts(b, "}\n");
}

/* ----------------------------------------------------------------- LaTeX */

static void latex_matrix(strbuf_t b, const fmpz_mat_t M)
{
    slong r = fmpz_mat_nrows(M);
    if (r == 0) {
        strbuf_puts(b, "---");
        return;
    }
    if (r > REPORT_LATEX_MAX_DIM) {
        strbuf_printf(b, "$%ld \\times %ld$ (see the JSON report)", (long)r, (long)r);
        return;
    }
    strbuf_puts(b, "$\\begin{pmatrix}");
    for (slong i = 0; i < r; i++) {
        for (slong j = 0; j < r; j++) {
            if (j)
                strbuf_puts(b, " & ");
            put_fmpz(b, fmpz_mat_entry(M, i, j));
        }
        strbuf_puts(b, i + 1 < r ? " \\\\ " : "");
    }
    strbuf_puts(b, "\\end{pmatrix}$");
}

static void latex_group(strbuf_t b, const analysis_layer_struct *L)
{
    strbuf_puts(b, "$");
    int any = 0;
    if (L->layer->free_rank > 0) {
        strbuf_puts(b, "\\mathbb{Z}");
        if (L->layer->free_rank > 1)
            strbuf_printf(b, "^{%ld}", (long)L->layer->free_rank);
        any = 1;
    }
    for (slong t = 0; t < L->layer->ntors; t++) {
        strbuf_puts(b, any ? " \\oplus \\mathbb{Z}/" : "\\mathbb{Z}/");
        put_fmpz(b, L->layer->torsion + t);
        any = 1;
    }
    if (!any)
        strbuf_puts(b, "0");
    strbuf_puts(b, "$");
}

static void report_latex(strbuf_t b, const analysis_t A, const char *title)
{
    char *pres = pres_get_str(A->nq->pres);
    strbuf_puts(b, "% nilstep report (LaTeX); needs \\usepackage{amsmath,amssymb}\n");
    if (title) {
        /* every line of a multi-line title stays inside the comment */
        strbuf_puts(b, "% ");
        for (const char *p = title; *p; p++) {
            if (*p == '\n')
                strbuf_puts(b, "\n% ");
            else
                strbuf_putn(b, p, 1);
        }
        strbuf_puts(b, "\n");
    }
    strbuf_puts(b, "\\noindent Group: \\texttt{");
    strbuf_put_latex_str(b, pres);
    flint_free(pres);
    strbuf_printf(b, "}, class %ld, Hirsch length %ld.\\\\\n", (long)A->class_requested,
                (long)A->nq->hirsch_length);
    int maps = A->has_map && A->valid;
    if (A->has_map) {
        strbuf_puts(b, "Map: \\texttt{");
        strbuf_put_latex_str(b, A->map_str);
        strbuf_puts(b, maps ? "}.\n\n" : "}, not well defined on this quotient.\n\n");
    }
    if (maps)
        strbuf_puts(b, "\\begin{tabular}{clllll}\n$j$ & $\\gamma_j/\\gamma_{j+1}$ & $M_j$ & "
                     "$\\chi_{M_j}(x)$ & $\\rho_j$ & $\\rho_j^{1/j}$ \\\\\n\\hline\n");
    else
        strbuf_puts(b, "\\begin{tabular}{cl}\n$j$ & $\\gamma_j/\\gamma_{j+1}$ \\\\\n\\hline\n");
    for (slong j = 0; j < A->nlayers; j++) {
        const analysis_layer_struct *L = A->layers + j;
        strbuf_printf(b, "%ld & ", (long)L->layer->weight);
        latex_group(b, L);
        if (maps) {
            strbuf_puts(b, " & ");
            latex_matrix(b, L->matrix);
            strbuf_printf(b, " & $%s$ & $%s$ & $%s$", L->charpoly_latex, L->rho_str,
                        L->root_bound_str);
        }
        strbuf_puts(b, " \\\\\n");
    }
    strbuf_puts(b, "\\end{tabular}\n");
    if (!A->layers_torsion_free)
        latex_torsion(b, A);
    if (!maps)
        return;
    strbuf_puts(b, "\n\\medskip\\noindent\n");
    strbuf_printf(b, "Lower bound $\\max_j \\rho_j^{1/j} = %s$ (layer %ld); ", A->lower_bound_str,
                (long)A->lower_layer);
    strbuf_printf(b, "upper bound $\\max_j \\rho_j = %s$ (layer %ld); ", A->upper_bound_str,
                (long)A->upper_layer);
    strbuf_printf(b, "growth rate $%s$.\\\\\n", A->growth_str);
    if (!A->layers_torsion_free) {
        strbuf_printf(b, "Entropy (rational layers) $h = %s$; on the nilmanifold of $G_c/T$: ",
                      A->entropy_str);
        strbuf_puts(b, "$L = ");
        put_fmpz(b, A->lefschetz);
        strbuf_puts(b, "$, $N = ");
        put_fmpz(b, A->nielsen);
        strbuf_puts(b, "$; on $G_c$: ");
        if (A->reid_kind == ANALYSIS_REID_INFINITE)
            strbuf_puts(b, "$R = \\infty$");
        else if (A->reid_kind == ANALYSIS_REID_FINITE) {
            strbuf_puts(b, "$R = ");
            put_fmpz(b, A->reidemeister);
            strbuf_puts(b, "$");
        } else {
            strbuf_puts(b, "$R$ not computed (");
            strbuf_put_latex_str(b, A->limit->msg);
            strbuf_puts(b, ")");
        }
        if (A->tmap->fixed_defined) {
            strbuf_puts(b, ", $|\\mathrm{Fix}\\,\\alpha| = ");
            put_fmpz(b, A->tmap->fixed_elements);
            strbuf_puts(b, "$");
        }
        if (A->tmap->fixed_classes_defined) {
            strbuf_puts(b, ", $\\alpha$-fixed conjugacy classes: $");
            put_fmpz(b, A->tmap->fixed_classes);
            strbuf_puts(b, "$");
        }
        strbuf_printf(b, "; injective: %s", yes_no(A->injective));
        if (A->index_defined) {
            strbuf_puts(b, ", index of the image $");
            put_fmpz(b, A->image_index);
            strbuf_puts(b, "$");
        }
        strbuf_puts(b, ".\\\\\n");
    } else if (A->undefined_reason) {
        strbuf_puts(b, "Entropy, Lefschetz, Nielsen and Reidemeister numbers: not defined (");
        strbuf_put_latex_str(b, A->undefined_reason);
        strbuf_puts(b, ").\\\\\n");
    } else {
        strbuf_printf(b, "Entropy $h = %s$", A->entropy_str);
        put_fixed_point_numbers(b, A, "; $L = ", "$, $N = ", "$, $R = ", "\\infty");
        strbuf_puts(b, "$.\\\\\n");
    }
    strbuf_printf(b, "Automorphism: %s; hyperbolic: %s; expanding: %s.\n",
                yes_no(A->automorphism), yes_no(A->hyperbolic), yes_no(A->expanding));
    if (A->inverse_requested) {
        strbuf_puts(b, "\\\\\nInverse: ");
        if (A->inverse_str) {
            strbuf_t w;
            strbuf_init(w);
            put_map_words(w, A, A->inverse_str);
            strbuf_puts(b, "\\texttt{");
            strbuf_put_latex_str(b, w->s);
            strbuf_puts(b, "}.\n");
            strbuf_clear(w);
        } else {
            strbuf_puts(b, "none (");
            strbuf_put_latex_str(b, A->inverse_reason);
            strbuf_puts(b, ").\n");
        }
    }
}

char *report_get_str(const analysis_t A, report_format fmt, const char *title)
{
    strbuf_t b;
    strbuf_init(b);
    if (fmt == REPORT_JSON)
        report_json(b, A, title);
    else if (fmt == REPORT_LATEX)
        report_latex(b, A, title);
    else
        report_text(b, A, title);
    return strbuf_take(b);
}
