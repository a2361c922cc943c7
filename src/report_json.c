/* report_json.c — the JSON report (report.h; keys in doc/design.md §6.1). */
#include <stdlib.h>
#include <string.h>
#include <flint/fmpz_mat.h>
#include "report_internal.h"

static void json_matrix(strbuf_t b, const fmpz_mat_t M);

static void json_torsion(strbuf_t b, const analysis_t A)
{
    const torsion_struct *T = A->tors;
    strbuf_puts(b, ",\n \"torsion_subgroup\": {\"order\": ");
    report_put_fmpz(b, T->order);
    strbuf_printf(b, ", \"finite_quotient\": %s, \"abelian\": %s, \"invariants\": ",
                  T->finite ? "true" : "false", T->abelian ? "true" : "false");
    if (T->abelian) {
        strbuf_puts(b, "[");
        for (slong t = 0; t < T->ninv; t++) {
            if (t)
                strbuf_puts(b, ", ");
            report_put_fmpz(b, T->inv + t);
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
            report_put_fmpz(b, T->u_ord + j);
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
            report_put_fmpz(b, T->q_tors[j] + t);
        }
        strbuf_t g;
        strbuf_init(g);
        report_put_quotient_group(g, L, T, j, 0);
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

static void json_fmpz_or_null(strbuf_t b, int defined, const fmpz_t x)
{
    if (defined)
        report_put_fmpz(b, x);
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
            report_put_fmpz(b, fmpz_mat_entry(M, i, j));
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
            report_put_fmpz(b, L->layer->torsion + t);
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
            report_put_fmpz(b, L->charpoly + k);
        }
        strbuf_puts(b, "], \"charpoly_factored\": ");
        strbuf_put_json_str(b, L->charpoly_factored_str);
        strbuf_puts(b, ", \"spectral_radius\": ");
        strbuf_put_json_str(b, L->rho_str);
        strbuf_puts(b, ", \"spectral_radius_minpoly\": ");
        json_str_or_null(b, L->rho_minpoly_str);
        strbuf_puts(b, ", \"spectral_radius_closed_form\": ");
        json_str_or_null(b, L->rho_closed_str);
        strbuf_puts(b, ", \"root_bound\": ");
        strbuf_put_json_str(b, L->root_bound_str);
        strbuf_puts(b, ", \"det\": ");
        report_put_fmpz(b, L->det);
        strbuf_puts(b, ", \"det_one_minus\": ");
        report_put_fmpz(b, L->det_i_minus);
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

void report_json(strbuf_t b, const analysis_t A, const char *title)
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
