/* analysis.c — see analysis.h.  The growth-rate argument is written out
 * in the README ("Why the growth rate is rho_1"). */
#include <stdlib.h>
#include <string.h>
#include "analysis.h"
#include "charpoly.h"
#include "elim.h"
#include "strbuf.h"

static void free_strs(char **v, slong n)
{
    if (!v)
        return;
    for (slong k = 0; k < n; k++)
        flint_free(v[k]);
    flint_free(v);
}

static void layer_map_clear(analysis_layer_struct *L)
{
    flint_free(L->charpoly_str);
    flint_free(L->charpoly_factored_str);
    flint_free(L->charpoly_latex);
    flint_free(L->rho_str);
    flint_free(L->rho_minpoly_str);
    flint_free(L->rho_closed_str);
    flint_free(L->rho_closed_latex);
    L->rho_closed_str = L->rho_closed_latex = NULL;
    flint_free(L->root_bound_str);
    flint_free(L->entropy_str);
    free_strs(L->ev_str, L->nev);
    free_strs(L->ev_abs_str, L->nev);
    if (L->charpoly)
        _fmpz_vec_clear(L->charpoly, L->layer->free_rank + 1);
    L->charpoly_str = L->charpoly_factored_str = L->charpoly_latex = NULL;
    L->rho_str = L->rho_minpoly_str = L->root_bound_str = L->entropy_str = NULL;
    L->ev_str = L->ev_abs_str = NULL;
    L->charpoly = NULL;
    L->nev = 0;
    L->n_unimodular = L->n_above_one = 0;
    fmpz_mat_clear(L->matrix);
    fmpz_mat_clear(L->action);
    fmpz_mat_init(L->matrix, 0, 0);
    fmpz_mat_init(L->action, 0, 0);
    fmpz_zero(L->det);
    fmpz_zero(L->det_i_minus);
    spectrum_clear(L->spectrum);
    spectrum_init(L->spectrum);
}

void analysis_clear_map(analysis_t A)
{
    slong X = A->has_group ? A->nq->pres->gens->n : 0;
    flint_free(A->map_str);
    A->map_str = NULL;
    free_strs(A->fail_relator, A->nfail);
    free_strs(A->fail_image, A->nfail);
    for (slong k = 0; A->failures && k < A->nfail; k++) {
        analysis_failure_struct *f = A->failures + k;
        flint_free(f->lhs);
        flint_free(f->rhs);
        flint_free(f->lhs_word);
        flint_free(f->rhs_word);
        flint_free(f->lhs_image);
        flint_free(f->rhs_image);
        flint_free(f->forced_image);
    }
    flint_free(A->failures);
    A->failures = NULL;
    free_strs(A->gen_image_str, A->gen_image_str ? X : 0);
    free_strs(A->inverse_str, A->inverse_str ? X : 0);
    A->inverse_str = NULL;
    A->inverse_reason = NULL;
    A->inverse_requested = 0;
    A->fail_relator = A->fail_image = A->gen_image_str = NULL;
    A->nfail = 0;
    A->has_map = A->valid = 0;
    flint_free(A->lower_bound_str);
    flint_free(A->upper_bound_str);
    flint_free(A->growth_str);
    flint_free(A->log_growth_str);
    flint_free(A->entropy_str);
    A->lower_bound_str = A->upper_bound_str = A->growth_str = NULL;
    A->log_growth_str = A->entropy_str = NULL;
    A->lower_layer = A->upper_layer = 0;
    A->growth_reason = NULL;
    A->undefined_reason = NULL;
    A->lefschetz_defined = A->index_defined = 0;
    A->reid_kind = ANALYSIS_REID_UNDEFINED;
    fmpz_zero(A->lefschetz);
    fmpz_zero(A->nielsen);
    fmpz_zero(A->reidemeister);
    fmpz_zero(A->image_index);
    A->automorphism = A->injective = A->hyperbolic = A->expanding = 0;
    A->injective_defined = 0;
    torsion_map_clear(A->tmap);
    torsion_map_init(A->tmap);
    A->limit_hit = 0;
    nserr_clear(A->limit);
    nserr_init(A->limit);
    endo_clear(A->endo);
    for (slong j = 0; j < A->nlayers; j++)
        layer_map_clear(A->layers + j);
}

static void clear_group(analysis_t A)
{
    analysis_clear_map(A);
    if (A->group_borrowed) {
        /* only the map-stage members of the layers are A's own */
        for (slong j = 0; j < A->nlayers; j++) {
            analysis_layer_struct *L = A->layers + j;
            fmpz_mat_clear(L->matrix);
            fmpz_mat_clear(L->action);
            fmpz_clear(L->det);
            fmpz_clear(L->det_i_minus);
            spectrum_clear(L->spectrum);
        }
        flint_free(A->layers);
        A->layers = NULL;
        A->nlayers = 0;
        A->has_group = A->group_borrowed = 0;
        nq_init(A->nq); /* forget the borrowed struct; nothing to free */
        torsion_init(A->tors); /* likewise the borrowed torsion subgroup */
        return;
    }
    for (slong j = 0; j < A->nlayers; j++) {
        analysis_layer_struct *L = A->layers + j;
        flint_free(L->group_str);
        fmpz_mat_clear(L->matrix);
        fmpz_mat_clear(L->action);
        fmpz_clear(L->det);
        fmpz_clear(L->det_i_minus);
        spectrum_clear(L->spectrum);
    }
    for (slong j = A->nq->class_reached; j < A->nlayers; j++)
        layer_clear(A->trivial_layers + j - A->nq->class_reached);
    flint_free(A->layers);
    flint_free(A->trivial_layers);
    A->layers = NULL;
    A->trivial_layers = NULL;
    A->nlayers = 0;
    A->has_group = 0;
    torsion_clear(A->tors);
    torsion_init(A->tors);
    nq_clear(A->nq);
}

void analysis_init(analysis_t A)
{
    memset(A, 0, sizeof(analysis_struct));
    nq_init(A->nq);
    endo_init(A->endo);
    fmpz_init(A->lefschetz);
    fmpz_init(A->nielsen);
    fmpz_init(A->reidemeister);
    fmpz_init(A->image_index);
    torsion_init(A->tors);
    torsion_map_init(A->tmap);
    nserr_init(A->limit);
}

void analysis_clear(analysis_t A)
{
    clear_group(A);
    torsion_clear(A->tors);
    torsion_map_clear(A->tmap);
    nserr_clear(A->limit);
    endo_clear(A->endo);
    nq_clear(A->nq);
    fmpz_clear(A->lefschetz);
    fmpz_clear(A->nielsen);
    fmpz_clear(A->reidemeister);
    fmpz_clear(A->image_index);
}

/* "Z^2 + Z/2 + Z/4", "Z", "0" */
static char *group_string(slong r, const fmpz *tors, slong nt)
{
    strbuf_t b;
    strbuf_init(b);
    if (r == 1)
        strbuf_puts(b, "Z");
    else if (r > 1)
        strbuf_printf(b, "Z^%ld", (long)r);
    for (slong t = 0; t < nt; t++) {
        char *d = fmpz_get_str(NULL, 10, tors + t);
        strbuf_printf(b, "%sZ/%s", b->len ? " + " : "", d);
        flint_free(d);
    }
    if (b->len == 0)
        strbuf_puts(b, "0");
    return strbuf_take(b);
}

static ns_status finish_group(analysis_t A, slong c, ns_status st, const ns_progress_t *progress,
                              nserr_t err);

ns_status analysis_set_group(analysis_t A, const pres_t G, slong c, const ns_progress_t *progress,
                             nserr_t err)
{
    clear_group(A);
    ns_status st = nq_compute_max(A->nq, G, c, A->max_pc ? A->max_pc : NQ_DEFAULT_MAX_PC,
                                  progress, err);
    return finish_group(A, c, st, progress, err);
}

ns_status analysis_set_group_from(analysis_t A, const analysis_t from, slong c,
                                  const ns_progress_t *progress, nserr_t err)
{
    clear_group(A);
    ns_status st = nq_set_class(A->nq, from->nq, c, A->max_pc ? A->max_pc : NQ_DEFAULT_MAX_PC,
                                progress, err);
    return finish_group(A, c, st, progress, err);
}

/* The group stage after the quotient: the layers as shown, and the torsion.
 * A quotient cut short by the pc-generator limit is analysed at the class
 * it reached, and the limit error is returned after that. */
static ns_status finish_group(analysis_t A, slong c, ns_status st, const ns_progress_t *progress,
                              nserr_t err)
{
    if (st != NS_OK && !(st == NS_ERR_LIMIT && A->nq->class_reached > 0 &&
                         A->nq->class_reached < c))
        return st;
    if (ns_progress_report(progress, "layers", -1.0))
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    ns_status limit = st;
    int cancelled = 0;
    if (st == NS_ERR_LIMIT)
        c = A->nq->class_reached;
    A->has_group = 1;
    A->class_requested = c;
    A->nlayers = c;
    A->layers = flint_calloc((size_t)c, sizeof(analysis_layer_struct));
    slong reached = A->nq->class_reached;
    A->trivial_layers = flint_malloc(FLINT_MAX(c - reached, 1) * sizeof(layer_struct));
    A->layers_torsion_free = 1;
    for (slong j = 1; j <= c; j++) {
        analysis_layer_struct *L = A->layers + j - 1;
        /* a poll per layer (coordinates of an 810-dimensional layer take a
           while); a stop is obeyed after the loop, whose layers clear_group
           needs whole */
        if (ns_progress_report(progress, NULL, -1.0))
            cancelled = 1;
        fmpz_mat_init(L->matrix, 0, 0);
        fmpz_mat_init(L->action, 0, 0);
        fmpz_init(L->det);
        fmpz_init(L->det_i_minus);
        spectrum_init(L->spectrum);
        if (j <= reached) {
            L->layer = A->nq->layers + j - 1;
            layer_ensure_coords(L->layer);
        } else {
            layer_struct *T = A->trivial_layers + j - 1 - reached;
            layer_init(T);
            layer_set(T, A->nq->pcp, j, A->nq->pcp->n, 0, A->nq->labels);
            layer_ensure_coords(T);
            L->layer = T;
        }
        if (L->layer->ntors)
            A->layers_torsion_free = 0;
        L->group_str = group_string(L->layer->free_rank, L->layer->torsion, L->layer->ntors);
    }
    if (cancelled) {
        clear_group(A);
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    }
    if (!A->layers_torsion_free) {
        slong cr = A->nq->class_reached;
        const layer_struct **lp = flint_malloc(FLINT_MAX(cr, 1) * sizeof(layer_struct *));
        for (slong j = 0; j < cr; j++)
            lp[j] = A->layers[j].layer;
        st = torsion_compute(A->tors, A->nq, lp, progress, err);
        flint_free(lp);
        if (st != NS_OK) {
            clear_group(A);
            return st;
        }
    }
    return limit;
}

void analysis_share_group(analysis_t A, const analysis_t src)
{
    clear_group(A);
    nq_clear(A->nq);
    *A->nq = *src->nq; /* a shallow copy: every pointer still leads to src's data */
    A->has_group = 1;
    A->group_borrowed = 1;
    A->class_requested = src->class_requested;
    A->nlayers = src->nlayers;
    A->layers_torsion_free = src->layers_torsion_free;
    torsion_clear(A->tors);
    *A->tors = *src->tors; /* shallow, like nq: read only while borrowed */
    A->layers = flint_calloc((size_t)FLINT_MAX(A->nlayers, 1), sizeof(analysis_layer_struct));
    for (slong j = 0; j < A->nlayers; j++) {
        analysis_layer_struct *L = A->layers + j;
        const analysis_layer_struct *S = src->layers + j;
        /* src's layers have their coordinates (analysis_set_group computed
         * them), so threads sharing them only read */
        L->layer = S->layer;
        L->group_str = S->group_str;
        fmpz_mat_init(L->matrix, 0, 0);
        fmpz_mat_init(L->action, 0, 0);
        fmpz_init(L->det);
        fmpz_init(L->det_i_minus);
        spectrum_init(L->spectrum);
    }
}

ns_status analysis_set_map_text(analysis_t A, const char *text, int line, int col,
                                const ns_progress_t *progress, nserr_t err)
{
    if (!A->has_group)
        return nserr_set(err, NS_ERR_INPUT, line, col, "no group to map");
    slong X = A->nq->pres->gens->n;
    expr_struct *im = flint_malloc(FLINT_MAX(X, 1) * sizeof(expr_struct));
    for (slong x = 0; x < X; x++)
        expr_init(im + x);
    ns_status st = pres_parse_map(im, A->nq->pres, text, line, col, err);
    if (st == NS_OK)
        st = analysis_set_map(A, im, progress, err);
    for (slong x = 0; x < X; x++)
        expr_clear(im + x);
    flint_free(im);
    return st;
}

/* v := column k of the matrix M. */
static void mat_column(fmpz *v, const fmpz_mat_t M, slong k)
{
    for (slong i = 0; i < fmpz_mat_nrows(M); i++)
        fmpz_set(v + i, fmpz_mat_entry(M, i, k));
}

/* 1 if the map induced on the whole layer (torsion included) is nilpotent:
 * the free part is nilpotent by assumption, so some power A^N with N the
 * number of generators plus the number of prime factors of the torsion
 * order kills the layer if anything does. */
static int layer_map_nilpotent(const analysis_layer_struct *L)
{
    slong cnt = L->layer->count;
    if (cnt == 0)
        return 1;
    slong N = cnt + 1;
    for (slong t = 0; t < L->layer->ntors; t++)
        N += fmpz_bits(L->layer->torsion + t);
    fmpz_mat_t P;
    fmpz_mat_init(P, cnt, cnt);
    fmpz_mat_pow(P, L->action, (ulong)N);
    int nil = 1;
    fmpz *v = _fmpz_vec_init(cnt);
    for (slong k = 0; k < cnt && nil; k++) {
        mat_column(v, P, k);
        nil = layer_is_trivial_vec(L->layer, v);
    }
    _fmpz_vec_clear(v, cnt);
    fmpz_mat_clear(P);
    return nil;
}

/* Surjective on the layer Z^cnt / rel: the images and the relations
 * together span Z^cnt, i.e. every column gets pivot 1. */
static int layer_map_onto(const analysis_layer_struct *L)
{
    slong cnt = L->layer->count;
    if (cnt == 0)
        return 1;
    elim_t E;
    elim_init(E, cnt);
    fmpz *v = _fmpz_vec_init(cnt);
    for (slong k = 0; k < cnt; k++) {
        mat_column(v, L->action, k);
        elim_add_dense(E, v);
    }
    for (slong k = 0; k < L->layer->nfinite; k++)
        elim_add_dense(E, L->layer->rel->rows[k]);
    int onto = 1;
    for (slong k = 0; k < cnt; k++)
        if (!fmpz_is_one(elim_pivot(E, k)))
            onto = 0;
    _fmpz_vec_clear(v, cnt);
    elim_clear(E);
    return onto;
}

static char *arb_str(const arb_t x)
{
    char *s = spectrum_ball_get_str(x, ANALYSIS_DIGITS);
    return s ? s : strbuf_dup_str("(not certified)");
}

/* 1 when layer j >= 2 of the quotient is layer j of a free nilpotent group
 * (a presentation without relators) and its matrix has the dimension of
 * Witt's formula, so that charpoly_free_lie applies to the layer-1 matrix. */
static int free_group_layer(const analysis_t A, slong j)
{
    if (j < 2 || A->nq->pres->nrels != 0 || j > A->nq->class_reached)
        return 0;
    const fmpz_mat_struct *M1 = A->layers[0].matrix, *M = A->layers[j - 1].matrix;
    slong r = A->nq->pres->gens->n;
    return fmpz_mat_nrows(M1) == r && fmpz_mat_ncols(M1) == r
           && fmpz_mat_nrows(M) == charpoly_witt_rank(r, j);
}

/* A proven bound, in bits, on the coefficients of the characteristic
 * polynomial of layer j >= 2, from layer 1's certified eigenvalues; -1
 * (the general bound of charpoly.h alone) when layer 1's spectrum is not
 * at hand.  Why it holds: the graded Lie ring gr(Gc) = sum_j
 * gamma_j/gamma_(j+1) is generated by its degree-1 part, so over Q the
 * degree-j part is a quotient of L_j(V), V = (Gc^ab / torsion) (x) Q, by
 * a subspace the map preserves (the kernel of the bracket map L(V) ->
 * gr(Gc) (x) Q, which commutes with the map); hence det(xI - M_j) divides
 * det(xI - L_j(M_1)), M_1 the free part of layer 1 (torsion of layer 1
 * dies in V), and charpoly_lie_bound_bits applies to upper bounds of the
 * moduli of M_1's eigenvalues. */
static slong layer_charpoly_bound_bits(const analysis_t A, slong j)
{
    const spectrum_struct *S1 = A->layers[0].spectrum;
    slong r = spectrum_dim(S1), d = fmpz_mat_nrows(A->layers[j - 1].matrix);
    /* below CHARPOLY_OWN_MIN_DIM FLINT's charpoly takes no bound */
    if (j < 2 || d < CHARPOLY_OWN_MIN_DIM || r != fmpz_mat_nrows(A->layers[0].matrix))
        return -1;
    mag_struct *u = flint_malloc(sizeof(mag_struct) * FLINT_MAX(r, 1));
    for (slong i = 0; i < r; i++) {
        mag_init(u + i);
        arb_get_mag(u + i, spectrum_eigenvalue_abs(S1, i));
    }
    slong bits = charpoly_lie_bound_bits(u, r, j, d);
    for (slong i = 0; i < r; i++)
        mag_clear(u + i);
    flint_free(u);
    return bits;
}

/* The spectrum's own stages ("factorisation", ...) reach the caller's hook
 * as "spectra: layer j of n (factorisation)" at the layer's fraction. */
typedef struct {
    const ns_progress_t *outer;
    const char *prefix;
    double fraction;
} layer_progress;

static int layer_progress_fn(void *ctx, const char *stage, double f)
{
    layer_progress *p = ctx;
    char buf[160];
    (void)f;
    if (stage == NULL)
        return ns_progress_report(p->outer, NULL, -1.0);
    snprintf(buf, sizeof buf, "%s (%s)", p->prefix, stage);
    return ns_progress_report(p->outer, buf, p->fraction);
}

/* Matrices and spectra of every layer (valid map). */
static ns_status analyse_layers(analysis_t A, const ns_progress_t *progress, nserr_t err)
{
    slong c = A->nq->class_reached;
    ns_status st = NS_OK;
    nserr_t e2;
    nserr_init(e2);
    for (slong j = 1; j <= A->nlayers && st == NS_OK; j++) {
        analysis_layer_struct *L = A->layers + j - 1;
        char stage[64];
        snprintf(stage, sizeof stage, "spectra: layer %ld of %ld", (long)j, (long)A->nlayers);
        layer_progress lp = {progress, stage, (double)(j - 1) / (double)A->nlayers};
        ns_progress_t hook = {layer_progress_fn, &lp};
        if (j <= c) {
            slong cnt = L->layer->count;
            if (progress && ns_progress_report(&hook, "matrix", -1.0)) {
                st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
                break;
            }
            endo_layer_matrices(L->action, L->matrix, A->endo, L->layer);
            /* show the action by canonical representatives modulo the
             * layer's relations, so that torsion entries stay small */
            fmpz *v = _fmpz_vec_init(FLINT_MAX(cnt, 1));
            for (slong k = 0; k < cnt; k++) {
                mat_column(v, L->action, k);
                layer_reduce_vec(L->layer, v);
                for (slong i = 0; i < cnt; i++)
                    fmpz_set(fmpz_mat_entry(L->action, i, k), v + i);
            }
            _fmpz_vec_clear(v, FLINT_MAX(cnt, 1));
        }
        if (progress && ns_progress_report(progress, stage, (double)(j - 1) / (double)A->nlayers)) {
            st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
            break;
        }
        if (free_group_layer(A, j)) {
            /* a free group: Brandt's formula from layer 1 (charpoly.h); the
               phases are named and polled as on the general route */
            fmpz_poly_t cp;
            fmpz_poly_init(cp);
            if (progress && ns_progress_report(&hook, "charpoly", -1.0))
                st = nserr_set(e2, NS_ERR_CANCELLED, 0, 0, "cancelled");
            else
                st = charpoly_free_lie(cp, A->layers[0].matrix, j, progress ? &hook : NULL, e2);
            if (st == NS_OK)
                st = spectrum_set_charpoly(L->spectrum, cp, progress ? &hook : NULL, e2);
            fmpz_poly_clear(cp);
        } else
            st = spectrum_compute_bounded(L->spectrum, L->matrix,
                                          j >= 2 ? layer_charpoly_bound_bits(A, j) : -1,
                                          progress ? &hook : NULL, e2);
        if (st != NS_OK) {
            nserr_set(err, st, 0, 0, "layer %ld: %s", (long)j, e2->msg);
            break;
        }
        if (progress && ns_progress_report(&hook, "decimals", -1.0)) {
            st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
            break;
        }
        const spectrum_struct *S = L->spectrum;
        slong d = spectrum_dim(S);
        L->charpoly = _fmpz_vec_init(d + 1);
        for (slong k = 0; k <= d; k++)
            fmpz_poly_get_coeff_fmpz(L->charpoly + k, spectrum_charpoly(S), k);
        L->charpoly_str = spectrum_charpoly_get_str(S, SPECTRUM_STR_PLAIN);
        L->charpoly_factored_str = spectrum_factored_get_str(S, SPECTRUM_STR_PLAIN);
        L->charpoly_latex = spectrum_factored_get_str(S, SPECTRUM_STR_LATEX);
        L->rho_str = spectrum_radius_get_str(S, ANALYSIS_DIGITS);
        L->rho_minpoly_str = spectrum_radius_minpoly_get_str(S, SPECTRUM_STR_PLAIN);
        L->rho_closed_str = spectrum_radius_closed_get_str(S, SPECTRUM_STR_PLAIN);
        L->rho_closed_latex = spectrum_radius_closed_get_str(S, SPECTRUM_STR_LATEX);
        L->root_bound_str = spectrum_root_bound_get_str(S, (ulong)j, ANALYSIS_DIGITS);
        L->entropy_str = spectrum_entropy_get_str(S, ANALYSIS_DIGITS);
        fmpz_set(L->det, spectrum_det(S));
        fmpz_set(L->det_i_minus, spectrum_det_one_minus(S));
        L->nev = d;
        L->ev_str = flint_malloc(FLINT_MAX(d, 1) * sizeof(char *));
        L->ev_abs_str = flint_malloc(FLINT_MAX(d, 1) * sizeof(char *));
        for (slong k = 0; k < d; k++) {
            L->ev_str[k] = spectrum_eigenvalue_get_str(S, k, 16);
            L->ev_abs_str[k] = spectrum_eigenvalue_abs_get_str(S, k, 16);
        }
        L->n_unimodular = spectrum_count_on_one(S);
        L->n_above_one = spectrum_count_above_one(S);
    }
    nserr_clear(e2);
    return st;
}

/* Bounds: the first layer attaining each maximum.  An undecidable
 * comparison (equal to thousands of bits) keeps the earlier layer. */
static void analyse_bounds(analysis_t A)
{
    slong lo = 1, up = 1;
    for (slong j = 2; j <= A->nlayers; j++) {
        int cr = spectrum_cmp_root_bound(A->layers[j - 1].spectrum, (ulong)j,
                                         A->layers[lo - 1].spectrum, (ulong)lo);
        if (cr == 1)
            lo = j;
        int cu = spectrum_cmp_radius(A->layers[j - 1].spectrum, A->layers[up - 1].spectrum);
        if (cu == 1)
            up = j;
    }
    if (A->nlayers > 0) {
        A->lower_layer = lo;
        A->upper_layer = up;
        A->lower_bound_str = strbuf_dup_str(A->layers[lo - 1].root_bound_str);
        A->upper_bound_str = strbuf_dup_str(A->layers[up - 1].rho_str);
    } else {
        A->lower_bound_str = strbuf_dup_str("0");
        A->upper_bound_str = strbuf_dup_str("0");
    }
}

/* The exact growth rate (Koberda 2013; Fel'shtyn, Jo and Lee 2014). */
static void analyse_growth(analysis_t A)
{
    if (A->nq->class_reached == 0) {
        A->growth_str = strbuf_dup_str("0");
        A->growth_reason = "the quotient is trivial";
    } else if (spectrum_radius_cmp_one(A->layers[0].spectrum) >= 0) {
        arb_t t;
        arb_init(t);
        A->growth_str = strbuf_dup_str(A->layers[0].rho_str);
        A->growth_reason = "rho_1 >= 1, and the growth rate of a map of a nilpotent group is "
                           "the spectral radius on the abelianisation";
        spectrum_radius_arb(t, A->layers[0].spectrum, 4 * ANALYSIS_DIGITS + 64);
        arb_log(t, t, 4 * ANALYSIS_DIGITS + 64);
        A->log_growth_str = arb_str(t);
        arb_clear(t);
    } else if (layer_map_nilpotent(A->layers)) {
        A->growth_str = strbuf_dup_str("0");
        A->growth_reason = "the map is nilpotent on the abelianisation, so a power of it is "
                           "trivial";
    } else {
        A->growth_str = strbuf_dup_str("1");
        A->growth_reason = "rho_1 = 0 but the map is not nilpotent on the torsion of the "
                           "abelianisation, so word lengths stay bounded and nonzero";
        A->log_growth_str = strbuf_dup_str("0");
    }
}

/* Automorphism, injectivity, hyperbolicity, entropy and the fixed-point
 * numbers. */
static void analyse_invariants(analysis_t A)
{
    arb_t t;
    arb_init(t);
    A->automorphism = A->nq->class_reached == 0 || layer_map_onto(A->layers);
    A->hyperbolic = A->expanding = 1;
    A->injective = 1;
    fmpz_one(A->lefschetz);
    fmpz_one(A->image_index);
    int reid_inf = 0;
    for (slong j = 0; j < A->nlayers; j++) {
        const analysis_layer_struct *L = A->layers + j;
        A->hyperbolic &= spectrum_is_hyperbolic(L->spectrum);
        A->expanding &= spectrum_is_expanding(L->spectrum);
        if (fmpz_is_zero(L->det))
            A->injective = 0;
        fmpz_mul(A->image_index, A->image_index, L->det);
        fmpz_mul(A->lefschetz, A->lefschetz, L->det_i_minus);
        if (fmpz_is_zero(L->det_i_minus))
            reid_inf = 1;
        arb_add(t, t, spectrum_entropy(L->spectrum), 4 * ANALYSIS_DIGITS + 64);
    }
    fmpz_abs(A->image_index, A->image_index);
    if (!A->layers_torsion_free) {
        /* entropy, L and N from the rational layers (Gc/T); R, injectivity
         * and the index on Gc itself, through its finite part */
        A->entropy_str = arb_str(t);
        A->lefschetz_defined = 1;
        fmpz_abs(A->nielsen, A->lefschetz);
    } else {
        A->entropy_str = arb_str(t);
        A->injective_defined = 1;
        A->lefschetz_defined = 1;
        fmpz_abs(A->nielsen, A->lefschetz);
        A->reid_kind = reid_inf ? ANALYSIS_REID_INFINITE : ANALYSIS_REID_FINITE;
        if (!reid_inf)
            fmpz_abs(A->reidemeister, A->lefschetz);
        A->index_defined = A->injective;
        if (!A->injective)
            fmpz_zero(A->image_index);
    }
    arb_clear(t);
}

/* Quotients with torsion in a layer: R, injectivity and the index on Gc
 * itself, through its torsion subgroup (torsion.h); a named counting limit
 * leaves R undefined and is recorded in A->limit. */
static ns_status analyse_finite_part(analysis_t A, const ns_progress_t *progress, nserr_t err)
{
    slong c = A->nq->class_reached;
    int reid_inf = 0;
    for (slong j = 0; j < A->nlayers; j++)
        if (fmpz_is_zero(A->layers[j].det_i_minus))
            reid_inf = 1;
    if (A->layers_torsion_free) {
        A->tmap->reid_method = reid_inf ? "infinite: some det(I - M_j) = 0"
                                        : "R = |L| on the torsion-free Gc (Roman'kov 2011; "
                                          "Dekimpe-Goncalves 2014)";
        return NS_OK;
    }
    const layer_struct **lp = flint_malloc(FLINT_MAX(c, 1) * sizeof(layer_struct *));
    const fmpz_mat_struct **mp = flint_malloc(FLINT_MAX(c, 1) * sizeof(fmpz_mat_struct *));
    for (slong j = 0; j < c; j++) {
        lp[j] = A->layers[j].layer;
        mp[j] = A->layers[j].matrix;
    }
    ns_status st = torsion_map_compute(A->tmap, A->tors, A->nq, lp, mp, A->endo, reid_inf,
                                       progress, A->limit);
    flint_free(lp);
    flint_free(mp);
    if (st == NS_ERR_CANCELLED)
        return nserr_set(err, st, 0, 0, "cancelled");
    A->limit_hit = st == NS_ERR_LIMIT;
    if (A->limit_hit)
        A->undefined_reason = A->limit->msg;
    A->injective_defined = 1;
    if (A->tors->finite) {
        A->injective = A->tmap->finite_injective;
        fmpz_divexact(A->image_index, A->tors->order, A->tmap->image_order);
        A->index_defined = 1;
    } else {
        /* Every det M_j != 0 makes alpha one-to-one on the torsion-free
         * Gc/T, so alpha(Gc) meets T in alpha(T) and the index multiplies:
         * [Gc : alpha(Gc)] = [Gc/T : image] [T : alpha(T)], the first
         * factor being prod |det M_j| (already in image_index). */
        int dets_nonzero = A->injective;
        A->injective = A->injective && A->tmap->injective_on_t;
        A->index_defined = dets_nonzero;
        if (dets_nonzero) {
            fmpz_mul(A->image_index, A->image_index, A->tors->order);
            fmpz_divexact(A->image_index, A->image_index, A->tmap->t_image_order);
        } else {
            fmpz_zero(A->image_index);
        }
    }
    if (reid_inf)
        A->reid_kind = ANALYSIS_REID_INFINITE;
    else if (A->tmap->reid_defined) {
        A->reid_kind = ANALYSIS_REID_FINITE;
        fmpz_set(A->reidemeister, A->tmap->reidemeister);
    }
    return NS_OK;
}

/* Everything after the map is set on A->endo (and map_str is written):
 * the images as normal words, validity, and for a valid map the layers,
 * bounds, growth and invariants.  On error the map is forgotten. */
/* Does generator x occur in the word n? */
static int word_has_gen(const expr_node *n, slong x)
{
    const expr_node **st = flint_malloc(sizeof(expr_node *) * 16);
    slong ns = 0, cap = 16;
    int found = 0;
    st[ns++] = n;
    while (ns > 0 && !found) {
        const expr_node *d = st[--ns];
        if (d->kind == EXPR_GEN && d->gen == x)
            found = 1;
        for (slong i = 0; d->kind == EXPR_RUN && i < d->nsyl; i++)
            if (d->syl[i].gen == x)
                found = 1;
        for (slong i = 0; i < d->nkids; i++) {
            if (ns == cap) {
                cap *= 2;
                st = flint_realloc(st, sizeof(expr_node *) * cap);
            }
            st[ns++] = d->kids[i];
        }
    }
    flint_free(st);
    return found;
}

/* One side of a failing relation: its text, alpha(side) as a word in the
 * input generators (when images are known) and as a normal word; val gets
 * alpha(side).  Returns nonzero when W was stopped. */
static int failure_side(char **text, char **word, char **image, fmpz *val, const nq_struct *Q,
                        const endo_struct *E, const expr_node *side, const expr_struct *images,
                        pcp_work_t W)
{
    slong n = Q->pcp->n;
    if (side == NULL) {
        *text = strbuf_dup_str("1");
        *word = images ? strbuf_dup_str("1") : NULL;
        *image = strbuf_dup_str("1");
        _fmpz_vec_zero(val, n);
        return 0;
    }
    *text = expr_node_get_str(side, Q->pres->gens);
    *word = NULL;
    if (images) {
        expr_node *w = expr_node_substitute(side, images, Q->pres->gens->n);
        *word = expr_node_get_str(w, Q->pres->gens);
        expr_node_free(w);
    }
    if (pcp_eval_expr(W, val, side, E->gen_img)) {
        *image = strbuf_dup_str("?");
        return 1;
    }
    *image = nq_elt_get_str(Q, val);
    return 0;
}

/* The failing relations in full (analysis_failure_struct); images are the
 * words the map was given by, or NULL for a map given as a value. */
static ns_status analyse_failures(analysis_t A, const expr_struct *images,
                                  const ns_progress_t *progress, nserr_t err)
{
    const nq_struct *Q = A->nq;
    slong n = Q->pcp->n;
    A->failures = flint_calloc(FLINT_MAX(A->nfail, 1), sizeof(analysis_failure_struct));
    fmpz *lv = _fmpz_vec_init(FLINT_MAX(n, 1)), *rv = _fmpz_vec_init(FLINT_MAX(n, 1));
    pcp_work_t W;
    pcp_work_init(W, Q->pcp);
    W->progress = progress;
    int stopped = 0;
    for (slong k = 0; k < A->nfail && !stopped; k++) {
        analysis_failure_struct *f = A->failures + k;
        const expr_node *u, *v;
        f->relation = A->endo->fail_rel[k];
        f->forced_gen = -1;
        int eq = pres_relation_sides(&u, &v, Q->pres, f->relation);
        stopped = failure_side(&f->lhs, &f->lhs_word, &f->lhs_image, lv, Q, A->endo, u,
                               images, W) ||
                  failure_side(&f->rhs, &f->rhs_word, &f->rhs_image, rv, Q, A->endo, v,
                               images, W);
        const fmpz *fv = A->endo->fail_val + k * n;
        f->lowest_class = 0;
        for (slong i = 0; i < n && !f->lowest_class; i++)
            if (!fmpz_is_zero(fv + i))
                for (slong j = 0; j < Q->nlayers && !f->lowest_class; j++)
                    if (i >= Q->layers[j].start && i < Q->layers[j].start + Q->layers[j].count)
                        f->lowest_class = Q->layers[j].weight;
        if (!eq || stopped)
            continue;
        if (u->kind == EXPR_GEN && !word_has_gen(v, u->gen)) {
            f->forced_gen = u->gen;
            f->forced_image = strbuf_dup_str(f->rhs_word ? f->rhs_word : f->rhs_image);
        } else if (v->kind == EXPR_GEN && !word_has_gen(u, v->gen)) {
            f->forced_gen = v->gen;
            f->forced_image = strbuf_dup_str(f->lhs_word ? f->lhs_word : f->lhs_image);
        }
    }
    pcp_work_clear(W);
    _fmpz_vec_clear(lv, FLINT_MAX(n, 1));
    _fmpz_vec_clear(rv, FLINT_MAX(n, 1));
    if (stopped)
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "the map's analysis was stopped");
    return NS_OK;
}

static ns_status analyse_endo(analysis_t A, const expr_struct *images,
                              const ns_progress_t *progress, nserr_t err)
{
    const nq_struct *Q = A->nq;
    slong X = Q->pres->gens->n, n = Q->pcp->n;
    A->gen_image_str = flint_malloc(FLINT_MAX(X, 1) * sizeof(char *));
    for (slong x = 0; x < X; x++)
        A->gen_image_str[x] = (nq_elt_get_str(Q, A->endo->gen_img + x * n));
    A->valid = A->endo->valid;
    if (!A->valid) {
        A->nfail = A->endo->nfail;
        A->fail_relator = flint_malloc(FLINT_MAX(A->nfail, 1) * sizeof(char *));
        A->fail_image = flint_malloc(FLINT_MAX(A->nfail, 1) * sizeof(char *));
        for (slong k = 0; k < A->nfail; k++) {
            slong r = A->endo->fail_rel[k];
            A->fail_relator[k] = strbuf_dup_str(Q->pres->text[r]);
            A->fail_image[k] = (nq_elt_get_str(Q, A->endo->fail_val + k * n));
        }
        ns_status st = analyse_failures(A, images, progress, err);
        if (st != NS_OK)
            analysis_clear_map(A);
        return st;
    }
    ns_status st = analyse_layers(A, progress, err);
    if (st != NS_OK) {
        analysis_clear_map(A);
        return st;
    }
    analyse_bounds(A);
    analyse_growth(A);
    analyse_invariants(A);
    st = analyse_finite_part(A, progress, err);
    if (st != NS_OK)
        analysis_clear_map(A);
    return st;
}

ns_status analysis_set_map(analysis_t A, const expr_struct *images, const ns_progress_t *progress,
                           nserr_t err)
{
    if (!A->has_group)
        return nserr_set(err, NS_ERR_INPUT, 0, 0, "no group to map");
    analysis_clear_map(A);
    const nq_struct *Q = A->nq;
    A->has_map = 1;
    A->map_str = (pres_get_map_str(images, Q->pres));
    ns_status st = ns_progress_report(progress, "images of the generators", -1.0)
                       ? nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled")
                       : endo_set(A->endo, Q, images, progress, err);
    if (st != NS_OK) {
        analysis_clear_map(A);
        return st;
    }
    return analyse_endo(A, images, progress, err);
}

/* "a -> w_a, b -> w_b" from images given as elements: the words are the
 * normal words in the pc labels, exactly as gen_image_str shows them. */
static char *map_text_of(const nq_struct *Q, const fmpz *gen_img)
{
    strbuf_t b;
    strbuf_init(b);
    for (slong x = 0; x < Q->pres->gens->n; x++) {
        char *w = nq_elt_get_str(Q, gen_img + x * Q->pcp->n);
        strbuf_printf(b, "%s%s -> %s", x ? ", " : "", Q->pres->gens->name[x], w);
        flint_free(w);
    }
    return strbuf_take(b);
}

ns_status analysis_set_map_endo(analysis_t A, endo_t E, const ns_progress_t *progress,
                                nserr_t err)
{
    if (E == A->endo)
        return nserr_set(err, NS_ERR_INTERNAL, 0, 0, "the map to analyse is the analysed one");
    if (!A->has_group || E->n != A->nq->pcp->n || E->ngens != A->nq->pres->gens->n ||
        !E->gen_img) {
        endo_clear(E);
        return A->has_group
                   ? nserr_set(err, NS_ERR_INTERNAL, 0, 0, "the map is not one of this quotient")
                   : nserr_set(err, NS_ERR_INPUT, 0, 0, "no group to map");
    }
    endo_t M;
    memcpy(M, E, sizeof(endo_struct)); /* move first: clearing the map must not touch E */
    endo_init(E);
    analysis_clear_map(A);
    endo_clear(A->endo);
    memcpy(A->endo, M, sizeof(endo_struct));
    A->has_map = 1;
    A->map_str = map_text_of(A->nq, A->endo->gen_img);
    return analyse_endo(A, NULL, progress, err);
}

static ns_status need_valid(const analysis_t A, nserr_t err)
{
    if (!A->has_group || !A->has_map || !A->valid)
        return nserr_set(err, NS_ERR_INPUT, 0, 0, "this needs a well-defined map");
    return NS_OK;
}

ns_status analysis_power_endo(endo_t out, const analysis_t A, ulong k,
                              const ns_progress_t *progress, nserr_t err)
{
    ns_status st = need_valid(A, err);
    if (st == NS_OK)
        st = endo_pow(out, A->endo, k, A->nq, progress, err);
    if (st != NS_OK)
        endo_clear(out);
    return st;
}

ns_status analysis_compose_endo(endo_t out, const analysis_t A, const expr_struct *images2,
                                const ns_progress_t *progress, nserr_t err)
{
    ns_status st = need_valid(A, err);
    if (st != NS_OK)
        return st;
    endo_t B;
    endo_init(B);
    st = endo_set(B, A->nq, images2, progress, err);
    if (st == NS_OK && !B->valid)
        st = nserr_set(err, NS_ERR_INPUT, 0, 0,
                       "the second map is not well defined on the class-%ld quotient",
                       (long)A->class_requested);
    if (st == NS_OK)
        st = endo_compose(out, B, A->endo, A->nq, progress, err);
    if (st != NS_OK)
        endo_clear(out);
    endo_clear(B);
    return st;
}

ns_status analysis_inverse_endo(endo_t out, const analysis_t A, const ns_progress_t *progress,
                                nserr_t err)
{
    ns_status st = need_valid(A, err);
    if (st == NS_OK && !A->automorphism)
        st = nserr_set(err, NS_ERR_INPUT, 0, 0, "the map is not an automorphism");
    if (st == NS_OK)
        st = endo_inverse(out, A->endo, A->nq, progress, err);
    if (st != NS_OK)
        endo_clear(out);
    return st;
}

ns_status analysis_set_inverse(analysis_t A, const ns_progress_t *progress, nserr_t err)
{
    if (!A->has_group || !A->has_map)
        return nserr_set(err, NS_ERR_INPUT, 0, 0, "the inverse needs a map");
    const char *none = NULL;
    if (!A->valid)
        none = "the map is not well defined";
    else if (!A->automorphism)
        none = "the map is not an automorphism";
    else if (!A->layers_torsion_free)
        none = "inverse maps are computed only when every layer is torsion-free";
    char **v = NULL;
    if (!none) {
        endo_t I;
        endo_init(I);
        ns_status st = endo_inverse(I, A->endo, A->nq, progress, err);
        /* an automorphism of a quotient with torsion-free layers has an
         * inverse: endo_inverse refusing it is a bug */
        if (st == NS_ERR_INPUT) {
            char why[sizeof err->msg];
            memcpy(why, err->msg, sizeof why);
            st = nserr_set(err, NS_ERR_INTERNAL, 0, 0, "inverse of an automorphism: %s", why);
        }
        if (st != NS_OK) {
            endo_clear(I);
            return st;
        }
        slong X = A->nq->pres->gens->n, n = A->nq->pcp->n;
        v = flint_malloc(FLINT_MAX(X, 1) * sizeof(char *));
        for (slong x = 0; x < X; x++)
            v[x] = (nq_elt_get_str(A->nq, I->gen_img + x * n));
        endo_clear(I);
    }
    free_strs(A->inverse_str, A->inverse_str ? A->nq->pres->gens->n : 0);
    A->inverse_str = v;
    A->inverse_reason = none;
    A->inverse_requested = 1;
    return NS_OK;
}
