/* endo.c — see endo.h. */
#include <string.h>
#include "endo.h"

void endo_init(endo_t E)
{
    memset(E, 0, sizeof(endo_struct));
}

void endo_clear(endo_t E)
{
    slong n = E->n;
    if (E->gen_img)
        _fmpz_vec_clear(E->gen_img, FLINT_MAX(E->ngens * n, 1));
    if (E->fail_val)
        _fmpz_vec_clear(E->fail_val, FLINT_MAX(E->nfail * n, 1));
    if (E->pc_img)
        _fmpz_vec_clear(E->pc_img, FLINT_MAX(n * n, 1));
    for (slong j = 0; j < E->nlayers; j++)
        fmpz_mat_clear(E->act + j);
    flint_free(E->act);
    flint_free(E->fail_rel);
    endo_init(E);
}

/* The layer-j coordinates (cnt entries, added with factor f) of [a_p, a_q]
 * for p of weight j-1 and q of weight 1, from the conjugate relation
 * a_p^(a_q) = a_p [a_p, a_q]. */
static void comm_coords_addmul(fmpz *v, const nq_t Q, const layer_struct *L, slong p,
                               slong q, const fmpz_t f)
{
    const pcp_struct *P = Q->pcp;
    if (p == q)
        return;
    fmpz_t g;
    fmpz_init_set(g, f);
    if (p < q) {
        slong t = p;
        p = q;
        q = t;
        fmpz_neg(g, g);
    }
    if (p < P->ncore && !P->trivial[pcp_slot(p, q)]) {
        const pcw_struct *w = P->conj + pcp_slot(p, q);
        for (slong t = 0; t < w->len; t++) {
            slong k = w->gen[t];
            if (k >= L->start && k < L->start + L->count)
                fmpz_addmul(v + k - L->start, g, w->exp + t);
        }
    }
    fmpz_clear(g);
}

/* col += f (the layer-j coordinates of [a_x, a_y]), x of weight j-1 and y
 * of weight 1, from the actions on layers j-1 and 1 by bilinearity. */
static void comm_col_addmul(fmpz *col, const endo_t E, const nq_t Q, slong j, slong x, slong y,
                            const fmpz_t f)
{
    const layer_struct *L = Q->layers + j, *L0 = Q->layers + j - 1, *L1 = Q->layers;
    const fmpz_mat_struct *A0 = E->act + j - 1, *A1 = E->act;
    slong ca = x - L0->start, cb = y - L1->start;
    fmpz_t g;
    fmpz_init(g);
    for (slong p = 0; p < L0->count; p++) {
        if (fmpz_is_zero(fmpz_mat_entry(A0, p, ca)))
            continue;
        for (slong q = 0; q < L1->count; q++) {
            fmpz_mul(g, fmpz_mat_entry(A0, p, ca), fmpz_mat_entry(A1, q, cb));
            fmpz_mul(g, g, f);
            if (!fmpz_is_zero(g))
                comm_coords_addmul(col, Q, L, L0->start + p, L1->start + q, g);
        }
    }
    fmpz_clear(g);
}

/* The actions on the layers, layer 1 from the generator images and layer j
 * from layers j-1 and 1 by bilinearity of the commutator; a generator
 * defined as a product (pcp.h) gets the combination of its terms' columns,
 * the layer being abelian. */
static void layer_actions(endo_t E, const nq_t Q)
{
    slong n = Q->pcp->n, c = Q->class_reached;
    E->nlayers = c;
    E->act = flint_malloc(FLINT_MAX(c, 1) * sizeof(fmpz_mat_struct));
    fmpz_t f;
    fmpz_init(f);
    for (slong j = 0; j < c; j++) {
        const layer_struct *L = Q->layers + j;
        fmpz_mat_init(E->act + j, L->count, L->count);
        fmpz *col = _fmpz_vec_init(FLINT_MAX(L->count, 1));
        for (slong k = 0; k < L->count; k++) {
            const pcp_def_struct *d = Q->pcp->def + L->start + k;
            _fmpz_vec_zero(col, L->count);
            if (d->kind == PCP_DEF_PROD) {
                for (slong t = 0; t < d->len; t++) {
                    if (d->tb[t] < 0)
                        _fmpz_vec_scalar_addmul_fmpz(col, E->gen_img + d->ta[t] * n + L->start,
                                                     L->count, d->exp + t);
                    else
                        comm_col_addmul(col, E, Q, j, d->ta[t], d->tb[t], d->exp + t);
                }
            } else if (j == 0) {
                _fmpz_vec_set(col, E->gen_img + d->a * n + L->start, L->count);
            } else {
                fmpz_one(f);
                comm_col_addmul(col, E, Q, j, d->a, d->b, f);
            }
            for (slong i = 0; i < L->count; i++)
                fmpz_swap(fmpz_mat_entry(E->act + j, i, k), col + i);
        }
        _fmpz_vec_clear(col, FLINT_MAX(L->count, 1));
    }
    fmpz_clear(f);
}

int endo_ensure_pc_images(const endo_t E, const nq_t Q, pcp_work_t W)
{
    if (E->pc_img || !E->valid)
        return W->overflow;
    slong n = Q->pcp->n;
    fmpz *img = _fmpz_vec_init(FLINT_MAX(n * n, 1));
    fmpz *term = _fmpz_vec_init(FLINT_MAX(n, 1));
    for (slong k = 0; k < n && !W->overflow; k++) {
        const pcp_def_struct *d = Q->pcp->def + k;
        if (d->kind == PCP_DEF_IMAGE)
            _fmpz_vec_set(img + k * n, E->gen_img + d->a * n, n);
        else if (d->kind == PCP_DEF_COMM)
            pcp_elt_comm(W, img + k * n, img + d->a * n, img + d->b * n);
        else {
            /* the definition holds exactly (pcp.h), so its image is the
               product of the images of its terms */
            fmpz *u = img + k * n;
            _fmpz_vec_zero(u, n);
            for (slong t = 0; t < d->len && !W->overflow; t++) {
                if (d->tb[t] < 0)
                    _fmpz_vec_set(term, E->gen_img + d->ta[t] * n, n);
                else
                    pcp_elt_comm(W, term, img + d->ta[t] * n, img + d->tb[t] * n);
                pcp_elt_pow(W, term, term, d->exp + t);
                pcp_elt_mul(W, u, u, term);
            }
        }
    }
    _fmpz_vec_clear(term, FLINT_MAX(n, 1));
    if (W->overflow) {
        _fmpz_vec_clear(img, FLINT_MAX(n * n, 1));
        return 1;
    }
    ((endo_struct *)E)->pc_img = img; /* the cache of a logically const E */
    return 0;
}

static ns_status finish(endo_t E, const nq_t Q, pcp_work_t W, nserr_t err)
{
    slong n = Q->pcp->n;
    fmpz *val = _fmpz_vec_init(FLINT_MAX(n, 1));
    E->valid = 1;
    for (slong r = 0; r < Q->pres->nrels && !W->overflow; r++) {
        pcp_eval_expr(W, val, Q->pres->rels[r].root, E->gen_img);
        if (_fmpz_vec_is_zero(val, n))
            continue;
        E->valid = 0;
        E->fail_rel = flint_realloc(E->fail_rel, (E->nfail + 1) * sizeof(slong));
        fmpz *nv = _fmpz_vec_init((E->nfail + 1) * n);
        if (E->fail_val) {
            _fmpz_vec_set(nv, E->fail_val, E->nfail * n);
            _fmpz_vec_clear(E->fail_val, FLINT_MAX(E->nfail * n, 1));
        }
        _fmpz_vec_set(nv + E->nfail * n, val, n);
        E->fail_val = nv;
        E->fail_rel[E->nfail++] = r;
    }
    if (E->valid && !W->overflow)
        layer_actions(E, Q);
    _fmpz_vec_clear(val, FLINT_MAX(n, 1));
    if (W->overflow)
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "the map's analysis was stopped");
    return NS_OK;
}

/* The common part of endo_set and endo_set_elts: the images come either as
 * words (images) or as elements (gen_img). */
static ns_status endo_set_from(endo_t E, const nq_t Q, const expr_struct *images,
                               const fmpz *gen_img, const ns_progress_t *progress,
                               nserr_t err)
{
    endo_clear(E);
    slong n = Q->pcp->n, X = Q->pres->gens->n;
    E->n = n;
    E->ngens = X;
    E->gen_img = _fmpz_vec_init(FLINT_MAX(X * n, 1));
    pcp_work_t W;
    pcp_work_init(W, Q->pcp);
    W->progress = progress;
    if (images)
        for (slong x = 0; x < X && !W->overflow; x++)
            pcp_eval_expr(W, E->gen_img + x * n, images[x].root, Q->images);
    else
        _fmpz_vec_set(E->gen_img, gen_img, X * n);
    ns_status st = finish(E, Q, W, err);
    pcp_work_clear(W);
    if (st != NS_OK)
        endo_clear(E);
    return st;
}

ns_status endo_set(endo_t E, const nq_t Q, const expr_struct *images,
                   const ns_progress_t *progress, nserr_t err)
{
    return endo_set_from(E, Q, images, NULL, progress, err);
}

ns_status endo_set_elts(endo_t E, const nq_t Q, const fmpz *gen_img,
                        const ns_progress_t *progress, nserr_t err)
{
    return endo_set_from(E, Q, NULL, gen_img, progress, err);
}

void endo_apply(const endo_t E, const nq_t Q, fmpz *out, const fmpz *g, pcp_work_t W)
{
    slong n = Q->pcp->n;
    if (endo_ensure_pc_images(E, Q, W))
        return;
    fmpz *acc = _fmpz_vec_init(FLINT_MAX(n, 1));
    fmpz *t = _fmpz_vec_init(FLINT_MAX(n, 1));
    for (slong k = 0; k < n && !W->overflow; k++) {
        if (fmpz_is_zero(g + k))
            continue;
        pcp_elt_pow(W, t, E->pc_img + k * n, g + k);
        pcp_elt_mul(W, acc, acc, t);
    }
    _fmpz_vec_set(out, acc, n);
    _fmpz_vec_clear(acc, FLINT_MAX(n, 1));
    _fmpz_vec_clear(t, FLINT_MAX(n, 1));
}

ns_status endo_compose(endo_t out, const endo_t a, const endo_t b, const nq_t Q,
                       const ns_progress_t *progress, nserr_t err)
{
    slong n = Q->pcp->n, X = Q->pres->gens->n;
    fmpz *img = _fmpz_vec_init(FLINT_MAX(X * n, 1));
    pcp_work_t W;
    pcp_work_init(W, Q->pcp);
    W->progress = progress;
    for (slong x = 0; x < X; x++)
        endo_apply(a, Q, img + x * n, b->gen_img + x * n, W);
    ns_status st = W->overflow ? nserr_set(err, NS_ERR_CANCELLED, 0, 0, "composition stopped")
                               : endo_set_elts(out, Q, img, progress, err);
    pcp_work_clear(W);
    _fmpz_vec_clear(img, FLINT_MAX(X * n, 1));
    return st;
}

ns_status endo_pow(endo_t out, const endo_t a, ulong k, const nq_t Q,
                   const ns_progress_t *progress, nserr_t err)
{
    slong n = Q->pcp->n, X = Q->pres->gens->n;
    /* the identity map */
    fmpz *id = _fmpz_vec_init(FLINT_MAX(X * n, 1));
    _fmpz_vec_set(id, Q->images, X * n);
    endo_t res, base, t;
    endo_init(res);
    endo_init(base);
    endo_init(t);
    ns_status st = endo_set_elts(res, Q, id, progress, err);
    if (st == NS_OK)
        st = endo_set_elts(base, Q, a->gen_img, progress, err);
    while (st == NS_OK && k) {
        if (k & 1) {
            st = endo_compose(t, base, res, Q, progress, err);
            endo_clear(res);
            memcpy(res, t, sizeof(endo_struct));
            endo_init(t);
        }
        k >>= 1;
        if (st == NS_OK && k) {
            st = endo_compose(t, base, base, Q, progress, err);
            endo_clear(base);
            memcpy(base, t, sizeof(endo_struct));
            endo_init(t);
        }
    }
    if (st == NS_OK) {
        endo_clear(out);
        memcpy(out, res, sizeof(endo_struct));
        endo_init(res);
    }
    endo_clear(res);
    endo_clear(base);
    endo_clear(t);
    _fmpz_vec_clear(id, FLINT_MAX(X * n, 1));
    return st;
}

void endo_layer_matrices(fmpz_mat_t A, fmpz_mat_t M, const endo_t E, const layer_t L)
{
    slong cnt = L->count, r = L->free_rank;
    layer_ensure_coords(L);
    fmpz_mat_clear(A);
    fmpz_mat_init(A, cnt, cnt);
    if (L->weight >= 1 && L->weight <= E->nlayers)
        fmpz_mat_set(A, E->act + L->weight - 1);
    fmpz_mat_clear(M);
    fmpz_mat_init(M, r, r);
    if (L->nfinite == 0) {
        /* a free layer: phi and sigma are identities (layer.h), and two
           products of that size took 16 s on the 1344-dimensional layer 5
           of surface(3) without a progress poll */
        fmpz_mat_set(M, A);
        return;
    }
    fmpz_mat_t T;
    fmpz_mat_init(T, r, cnt);
    if (r > 0) {
        fmpz_mat_mul(T, L->phi, A);
        fmpz_mat_mul(M, T, L->sigma);
    }
    fmpz_mat_clear(T);
}

ns_status endo_inverse(endo_t out, const endo_t a, const nq_t Q, const ns_progress_t *progress,
                       nserr_t err)
{
    slong n = Q->pcp->n, X = Q->pres->gens->n, c = Q->class_reached;
    for (slong j = 0; j < c; j++)
        if (Q->layers[j].ntors > 0)
            return nserr_set(err, NS_ERR_INPUT, 0, 0,
                             "inverse maps are computed only when every layer is torsion-free");
    /* Each layer is then Z^free_rank through phi; invert the matrix M_j
     * there (unimodular for an automorphism).  The layer-j step of an
     * inverse image is sigma M_j^-1 phi. */
    fmpz_mat_struct *step = flint_malloc(FLINT_MAX(c, 1) * sizeof(fmpz_mat_struct));
    ns_status st = NS_OK;
    slong made = 0;
    for (slong j = 0; j < c; j++, made++) {
        const layer_struct *L = Q->layers + j;
        slong r = L->free_rank;
        fmpz_mat_t A, M, Mi, T;
        fmpz_t den;
        fmpz_mat_init(A, 0, 0);
        fmpz_mat_init(M, 0, 0);
        fmpz_mat_init(Mi, r, r);
        fmpz_mat_init(T, r, L->count);
        fmpz_init(den);
        endo_layer_matrices(A, M, a, L);
        fmpz_mat_init(step + j, L->count, L->count);
        int ok = r == 0 || fmpz_mat_inv(Mi, den, M);
        if (ok && r && !fmpz_is_pm1(den))
            ok = 0;
        if (ok && r && fmpz_sgn(den) < 0)
            fmpz_mat_neg(Mi, Mi);
        if (ok && r) {
            fmpz_mat_mul(T, Mi, L->phi);
            fmpz_mat_mul(step + j, L->sigma, T);
        }
        fmpz_clear(den);
        fmpz_mat_clear(A);
        fmpz_mat_clear(M);
        fmpz_mat_clear(Mi);
        fmpz_mat_clear(T);
        if (!ok) {
            st = nserr_set(err, NS_ERR_INPUT, 0, 0,
                           "the map is not an automorphism: layer %ld is not mapped onto itself",
                           (long)j + 1);
            made++;
            break;
        }
    }
    pcp_work_t W;
    pcp_work_init(W, Q->pcp);
    W->progress = progress;
    fmpz *img = _fmpz_vec_init(FLINT_MAX(X * n, 1));
    fmpz *y = _fmpz_vec_init(FLINT_MAX(n, 1)), *h = _fmpz_vec_init(FLINT_MAX(n, 1));
    fmpz *z = _fmpz_vec_init(FLINT_MAX(n, 1));
    /* For each target g find y with alpha(y) = g, one layer at a time: fix
     * y's weight-j part so that g' = alpha(y)^-1 g vanishes up to weight j. */
    for (slong x = 0; x < X && st == NS_OK && !W->overflow; x++) {
        const fmpz *g = Q->images + x * n;
        _fmpz_vec_zero(y, n);
        for (slong j = 0; j < c; j++) {
            endo_apply(a, Q, h, y, W);
            pcp_elt_inv(W, h, h);
            pcp_elt_mul(W, h, h, g);
            const layer_struct *NL = Q->layers + j;
            _fmpz_vec_zero(z, n);
            for (slong i = 0; i < NL->count; i++)
                for (slong k = 0; k < NL->count; k++)
                    fmpz_addmul(z + NL->start + i, fmpz_mat_entry(step + j, i, k),
                                h + NL->start + k);
            pcp_elt_mul(W, y, y, z);
        }
        _fmpz_vec_set(img + x * n, y, n);
    }
    if (st == NS_OK)
        st = W->overflow ? nserr_set(err, NS_ERR_CANCELLED, 0, 0, "inversion stopped")
                         : endo_set_elts(out, Q, img, progress, err);
    for (slong j = 0; j < made && j < c; j++)
        fmpz_mat_clear(step + j);
    flint_free(step);
    _fmpz_vec_clear(img, FLINT_MAX(X * n, 1));
    _fmpz_vec_clear(y, FLINT_MAX(n, 1));
    _fmpz_vec_clear(h, FLINT_MAX(n, 1));
    _fmpz_vec_clear(z, FLINT_MAX(n, 1));
    pcp_work_clear(W);
    return st;
}
