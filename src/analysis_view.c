/* analysis_view.c — see analysis_view.h: pointers into the analysis, no
 * copies and no computation. */
#include <string.h>
#include "analysis.h"

void analysis_get_view(analysis_view_t V, const analysis_struct *A)
{
    memset(V, 0, sizeof *V);
    V->has_group = A->has_group;
    V->class_requested = A->class_requested;
    V->nlayers = A->has_group ? A->nlayers : 0;
    V->layers_torsion_free = A->layers_torsion_free;
    V->tors_order = A->tors->order;
    V->tors_abelian = A->tors->abelian;
    V->tors_ninv = A->tors->ninv;
    V->tors_inv = A->tors->inv;
    V->tors_finite = A->tors->finite;
    if (A->has_group) {
        V->class_reached = A->nq->class_reached;
        V->stabilised = A->nq->stabilised;
        V->hirsch_length = A->nq->hirsch_length;
        V->npc = A->nq->pcp->n;
        V->pres = A->nq->pres;
        V->quotient = A->nq;
    }

    V->has_map = A->has_map;
    V->endo = A->has_map ? A->endo : NULL;
    V->map_str = A->map_str;
    V->valid = A->valid;
    V->nfail = A->nfail;
    V->fail_relator = A->fail_relator;
    V->fail_image = A->fail_image;
    V->gen_image_str = A->gen_image_str;
    V->failures = A->failures;
    V->lower_bound_str = A->lower_bound_str;
    V->lower_layer = A->lower_layer;
    V->upper_bound_str = A->upper_bound_str;
    V->upper_layer = A->upper_layer;
    V->growth_str = A->growth_str;
    V->growth_reason = A->growth_reason;
    V->log_growth_str = A->log_growth_str;
    V->undefined_reason = A->undefined_reason;
    V->entropy_str = A->entropy_str;
    V->lefschetz_defined = A->lefschetz_defined;
    V->lefschetz = A->lefschetz;
    V->nielsen = A->nielsen;
    V->reid_kind = A->reid_kind;
    V->reidemeister = A->reidemeister;
    V->automorphism = A->automorphism;
    V->injective_defined = A->injective_defined;
    V->injective = A->injective;
    V->index_defined = A->index_defined;
    V->image_index = A->image_index;
    V->hyperbolic = A->hyperbolic;
    V->expanding = A->expanding;
    V->fixed_defined = A->tmap->fixed_defined;
    V->fixed_elements = A->tmap->fixed_elements;
    V->fixed_classes_defined = A->tmap->fixed_classes_defined;
    V->fixed_classes = A->tmap->fixed_classes;
    V->limit_hit = A->limit_hit;
    V->limit_msg = A->limit_hit ? A->limit->msg : NULL;
}

void analysis_get_layer_view(analysis_layer_view_t V, const analysis_struct *A, slong j)
{
    NS_ASSERT(A->has_group && j >= 0 && j < A->nlayers);
    const analysis_layer_struct *L = A->layers + j;
    const layer_struct *G = L->layer;
    memset(V, 0, sizeof *V);
    V->weight = j + 1;
    V->group_str = L->group_str;
    V->count = G->count;
    V->free_rank = G->free_rank;
    V->ntors = G->ntors;
    V->pc_labels = G->pc_labels;
    V->basis = G->basis;
    V->q_ntors = j < A->tors->nlayers ? A->tors->q_ntors[j] : 0;
    V->matrix = L->matrix;
    V->action = L->action;
    V->charpoly_str = L->charpoly_str;
    V->charpoly_factored_str = L->charpoly_factored_str;
    V->rho_str = L->rho_str;
    V->rho_minpoly_str = L->rho_minpoly_str;
    V->root_bound_str = L->root_bound_str;
    V->det = L->det;
    V->det_i_minus = L->det_i_minus;
    V->nev = L->nev;
    V->ev_str = L->ev_str;
    V->ev_abs_str = L->ev_abs_str;
    V->n_unimodular = L->n_unimodular;
    V->n_above_one = L->n_above_one;
    V->entropy_str = L->entropy_str;
}

int analysis_get_eigenvalue_d(double *re, double *im, const analysis_struct *A, slong j, slong k)
{
    *re = *im = 0;
    if (!A->has_group || j < 0 || j >= A->nlayers || k < 0 || k >= A->layers[j].nev)
        return 0;
    acb_srcptr z = spectrum_eigenvalue(A->layers[j].spectrum, k);
    if (z == NULL)
        return 0;
    *re = arf_get_d(arb_midref(acb_realref(z)), ARF_RND_NEAR);
    *im = arf_get_d(arb_midref(acb_imagref(z)), ARF_RND_NEAR);
    return 1;
}
