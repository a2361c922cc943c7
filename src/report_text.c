/* report_text.c — the plain-text report (report.h). */
#include <stdlib.h>
#include <string.h>
#include <flint/fmpz_mat.h>
#include "report_internal.h"

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

static void text_torsion(strbuf_t b, const analysis_t A)
{
    const torsion_struct *T = A->tors;
    strbuf_puts(b, "\ntorsion subgroup T (the elements of finite order of the class-c quotient Gc)\n");
    strbuf_puts(b, "  order         ");
    report_put_fmpz(b, T->order);
    strbuf_puts(b, T->finite ? "  (Gc is finite: T = Gc)\n  structure     "
                             : "\n  structure     ");
    report_put_torsion_structure(b, T, 0);
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
        report_put_quotient_group(g, L, T, j, 0);
        strbuf_printf(b, "%5ld  %-20s ", (long)L->layer->weight, g->s);
        strbuf_clear(g);
        if (j < T->nlayers)
            report_put_fmpz(b, T->u_ord + j);
        else
            strbuf_puts(b, "1");
        strbuf_puts(b, "\n");
    }
}

/* The invariants when some layer has torsion, each with what it is
 * computed on. */
static void text_torsion_invariants(strbuf_t b, const analysis_t A, report_decs *D)
{
    const torsion_map_struct *M = A->tmap;
    strbuf_printf(b, "entropy       %s  (rational layers: the free parts)\n",
                  report_dec(D, A->entropy_str));
    if (A->log_growth_str)
        strbuf_printf(b, "log growth    %s  (a lower bound for the entropy)\n",
                      report_dec(D, A->log_growth_str));
    strbuf_puts(b, "Lefschetz     ");
    report_put_fmpz(b, A->lefschetz);
    strbuf_puts(b, "  (nilmanifold of Gc/T, Anosov 1985)\nNielsen       ");
    report_put_fmpz(b, A->nielsen);
    strbuf_puts(b, "  (nilmanifold of Gc/T)\nReidemeister  ");
    if (A->reid_kind == ANALYSIS_REID_INFINITE)
        strbuf_printf(b, "infinite  (on Gc: %s)\n", M->reid_method);
    else if (A->reid_kind == ANALYSIS_REID_FINITE) {
        report_put_fmpz(b, A->reidemeister);
        strbuf_printf(b, "  (on Gc, torsion included; %s)\n", M->reid_method);
    } else
        strbuf_printf(b, "not computed  (%s)\n", A->limit->msg);
    if (M->fixed_defined) {
        strbuf_puts(b, "fixed points  ");
        report_put_fmpz(b, M->fixed_elements);
        strbuf_puts(b, "  (elements x of Gc with alpha(x) = x)\n");
    }
    if (M->fixed_classes_defined) {
        strbuf_puts(b, "fixed classes ");
        report_put_fmpz(b, M->fixed_classes);
        strbuf_puts(b, "  (conjugacy classes C of Gc with alpha(C) = C)\n");
    }
    strbuf_printf(b, "automorphism  %s\n", report_yes_no(A->automorphism));
    strbuf_printf(b, "injective     %s  (on Gc, torsion included)\n", report_yes_no(A->injective));
    if (A->index_defined) {
        strbuf_puts(b, "image index   ");
        report_put_fmpz(b, A->image_index);
        strbuf_puts(b, "  (in Gc)\n");
    }
    strbuf_printf(b, "hyperbolic    %s  (rational layers)\n", report_yes_no(A->hyperbolic));
    strbuf_printf(b, "expanding     %s  (rational layers)\n", report_yes_no(A->expanding));
}

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

void report_text(strbuf_t b, const analysis_t A, const char *title, report_decs *D)
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
        strbuf_printf(b, "  rho           %s", report_dec(D, L->rho_str));
        if (L->rho_closed_str)
            strbuf_printf(b, " = %s", L->rho_closed_str);
        strbuf_puts(b, "\n");
        if (L->rho_minpoly_str)
            strbuf_printf(b, "  rho is a root of %s\n", L->rho_minpoly_str);
        strbuf_printf(b, "  rho^(1/%ld)     %s\n", (long)L->layer->weight,
                      report_dec(D, L->root_bound_str));
        strbuf_puts(b, "  det           ");
        report_put_fmpz(b, L->det);
        strbuf_puts(b, "\n  det(I - M)    ");
        report_put_fmpz(b, L->det_i_minus);
        strbuf_puts(b, "\n  eigenvalues\n");
        for (slong k = 0; k < L->nev; k++)
            strbuf_printf(b, "    %-44s |.| = %s\n", report_dec(D, L->ev_str[k]),
                          report_dec(D, L->ev_abs_str[k]));
    }
    strbuf_puts(b, "\n");
    strbuf_printf(b, "lower bound   %s  (max rho_j^(1/j), layer %ld)\n",
                  report_dec(D, A->lower_bound_str),
                (long)A->lower_layer);
    strbuf_printf(b, "upper bound   %s  (max rho_j, layer %ld)\n",
                  report_dec(D, A->upper_bound_str),
                (long)A->upper_layer);
    strbuf_printf(b, "growth rate   %s  (%s)\n", report_dec(D, A->growth_str),
                  A->growth_reason);
    if (!A->layers_torsion_free) {
        text_torsion_invariants(b, A, D);
    } else if (A->undefined_reason) {
        strbuf_printf(b, "entropy, Lefschetz, Nielsen, Reidemeister numbers: not defined (%s)\n",
                    A->undefined_reason);
    } else {
        strbuf_printf(b, "entropy       %s\n", report_dec(D, A->entropy_str));
        if (A->log_growth_str)
            strbuf_printf(b, "log growth    %s  (a lower bound for the entropy)\n",
                        report_dec(D, A->log_growth_str));
        report_put_fixed_point_numbers(b, A, "Lefschetz     ", "\nNielsen       ",
                                "\nReidemeister  ", "infinite");
        strbuf_puts(b, "\n");
    }
    if (A->layers_torsion_free) {
        strbuf_printf(b, "automorphism  %s\n", report_yes_no(A->automorphism));
        if (!A->undefined_reason) {
            strbuf_printf(b, "injective     %s\n", report_yes_no(A->injective));
            if (A->index_defined) {
                strbuf_puts(b, "image index   ");
                report_put_fmpz(b, A->image_index);
                strbuf_puts(b, "\n");
            }
        }
        strbuf_printf(b, "hyperbolic    %s\n", report_yes_no(A->hyperbolic));
        strbuf_printf(b, "expanding     %s\n", report_yes_no(A->expanding));
    }
    if (A->inverse_requested) {
        strbuf_puts(b, "inverse       ");
        if (A->inverse_str)
            report_put_map_words(b, A, A->inverse_str);
        else
            strbuf_printf(b, "none (%s)", A->inverse_reason);
        strbuf_puts(b, "\n");
    }
}
