/* layer.c — see layer.h. */
#include <string.h>
#include "elim.h"
#include "layer.h"
#include "strbuf.h"

void layer_init(layer_t L)
{
    memset(L, 0, sizeof(layer_struct));
    fmpz_mat_init(L->rel, 0, 0);
    fmpz_mat_init(L->phi, 0, 0);
    fmpz_mat_init(L->sigma, 0, 0);
    fmpz_mat_init(L->hnf, 0, 0);
}

void layer_clear(layer_t L)
{
    if (L->basis)
        for (slong k = 0; k < L->free_rank; k++)
            flint_free(L->basis[k]);
    flint_free(L->basis);
    if (L->torsion)
        _fmpz_vec_clear(L->torsion, FLINT_MAX(L->ntors, 1));
    fmpz_mat_clear(L->rel);
    fmpz_mat_clear(L->phi);
    fmpz_mat_clear(L->sigma);
    fmpz_mat_clear(L->hnf);
    memset(L, 0, sizeof(layer_struct));
}

/* "x^2 y^-1" for the layer element v in labels. */
static char *vec_label(const fmpz *v, slong n, char *const *labels)
{
    strbuf_t b;
    strbuf_init(b);
    for (slong k = 0; k < n; k++) {
        if (fmpz_is_zero(v + k))
            continue;
        strbuf_printf(b, "%s%s", b->len ? " " : "", labels[k]);
        if (!fmpz_is_one(v + k)) {
            char *e = fmpz_get_str(NULL, 10, v + k);
            strbuf_printf(b, "^%s", e);
            flint_free(e);
        }
    }
    return strbuf_take(b);
}

void layer_set(layer_t L, const pcp_t P, slong j, slong start, slong count,
               char *const *labels)
{
    layer_clear(L);
    layer_init(L);
    slong f = 0;
    for (slong k = start; k < start + count; k++)
        if (!fmpz_is_zero(P->relorder + k))
            f++;
    L->weight = j;
    L->start = start;
    L->count = count;
    L->nfinite = f;
    L->free_rank = count - f;
    L->pc_labels = labels + start;
    fmpz_mat_clear(L->rel);
    fmpz_mat_init(L->rel, f, count);
    slong row = 0;
    for (slong k = start; k < start + count; k++) {
        if (fmpz_is_zero(P->relorder + k))
            continue;
        fmpz_set(fmpz_mat_entry(L->rel, row, k - start), P->relorder + k);
        const pcw_struct *w = P->pow + k;
        for (slong t = 0; t < w->len; t++)
            if (w->gen[t] < start + count)
                fmpz_sub(fmpz_mat_entry(L->rel, row, w->gen[t] - start),
                         fmpz_mat_entry(L->rel, row, w->gen[t] - start), w->exp + t);
        row++;
    }
    if (f == 0)
        return;
    /* The invariants come from the Smith form of the whole relation block,
     * not from the relative orders. */
    fmpz_mat_t S;
    fmpz_mat_init(S, f, count);
    fmpz_mat_snf(S, L->rel);
    slong nt = 0;
    for (slong k = 0; k < f; k++)
        if (!fmpz_is_one(fmpz_mat_entry(S, k, k)))
            nt++;
    L->ntors = nt;
    if (nt > 0) {
        L->torsion = _fmpz_vec_init(nt);
        nt = 0;
        for (slong k = 0; k < f; k++)
            if (!fmpz_is_one(fmpz_mat_entry(S, k, k)))
                fmpz_abs(L->torsion + nt++, fmpz_mat_entry(S, k, k));
    }
    fmpz_mat_clear(S);
}

void layer_ensure_coords(const layer_t Lc)
{
    if (Lc->has_coords)
        return;
    layer_struct *L = (layer_struct *)Lc; /* the cache of a logically const layer */
    slong cnt = L->count, f = L->nfinite, r = L->free_rank;
    fmpz_mat_clear(L->phi);
    fmpz_mat_clear(L->sigma);
    fmpz_mat_clear(L->hnf);
    fmpz_mat_init(L->phi, r, cnt);
    fmpz_mat_init(L->sigma, cnt, r);
    fmpz_mat_init(L->hnf, f, cnt);
    if (f > 0)
        fmpz_mat_hnf(L->hnf, L->rel);
    if (f == 0) {
        fmpz_mat_one(L->phi);
        fmpz_mat_one(L->sigma);
    } else if (r > 0) {
        /* Only the columns where rel is nonzero (its support S, s of them)
         * take part: a column outside S is a free generator on its own
         * (phi and sigma are the unit vector there), so the transform and
         * its inverse are s x s instead of count x count.  On S:
         * U rel_S^T = H with H's last s - f rows zero (rel has rank f:
         * each row has its relative order at its own generator and
         * entries only at later ones); those rows of U span the integer
         * kernel of rel_S and, U being unimodular, extend to a basis; the
         * matching columns of U^-1 are a right inverse.  The basis lists
         * the columns outside S in order, then the kernel vectors of S. */
        slong *sup = flint_malloc(cnt * sizeof(slong));
        slong s = 0, a = 0;
        for (slong b = 0; b < cnt; b++) {
            int in = 0;
            for (slong i = 0; i < f && !in; i++)
                in = !fmpz_is_zero(fmpz_mat_entry(L->rel, i, b));
            if (in)
                sup[s++] = b;
            else {
                fmpz_one(fmpz_mat_entry(L->phi, a, b));
                fmpz_one(fmpz_mat_entry(L->sigma, b, a));
                a++;
            }
        }
        fmpz_mat_t A, H, U, V;
        fmpz_t den;
        fmpz_mat_init(A, s, f);
        fmpz_mat_init(H, s, f);
        fmpz_mat_init(U, s, s);
        fmpz_mat_init(V, s, s);
        fmpz_init(den);
        for (slong i = 0; i < f; i++)
            for (slong b = 0; b < s; b++)
                fmpz_set(fmpz_mat_entry(A, b, i), fmpz_mat_entry(L->rel, i, sup[b]));
        fmpz_mat_hnf_transform(H, U, A);
        fmpz_mat_inv(V, den, U);
        for (slong k = f; k < s; k++, a++)
            for (slong b = 0; b < s; b++) {
                fmpz_set(fmpz_mat_entry(L->phi, a, sup[b]), fmpz_mat_entry(U, k, b));
                fmpz_mul(fmpz_mat_entry(L->sigma, sup[b], a), fmpz_mat_entry(V, b, k), den);
            }
        NS_ASSERT(a == r);
        fmpz_clear(den);
        fmpz_mat_clear(A);
        fmpz_mat_clear(H);
        fmpz_mat_clear(U);
        fmpz_mat_clear(V);
        flint_free(sup);
    }
    L->basis = flint_malloc(FLINT_MAX(r, 1) * sizeof(char *));
    fmpz *v = _fmpz_vec_init(FLINT_MAX(cnt, 1));
    for (slong k = 0; k < r; k++) {
        for (slong b = 0; b < cnt; b++)
            fmpz_set(v + b, fmpz_mat_entry(L->sigma, b, k));
        L->basis[k] = vec_label(v, cnt, L->pc_labels);
    }
    _fmpz_vec_clear(v, FLINT_MAX(cnt, 1));
    L->has_coords = 1;
}

void layer_reduce_vec(const layer_t L, fmpz *v)
{
    layer_ensure_coords(L);
    fmpz_t q;
    fmpz_init(q);
    slong p = 0;
    for (slong r = 0; r < fmpz_mat_nrows(L->hnf); r++) {
        while (p < L->count && fmpz_is_zero(fmpz_mat_entry(L->hnf, r, p)))
            p++;
        if (p >= L->count)
            break;
        fmpz_fdiv_q(q, v + p, fmpz_mat_entry(L->hnf, r, p));
        if (!fmpz_is_zero(q))
            _fmpz_vec_scalar_submul_fmpz(v, L->hnf->rows[r], L->count, q);
    }
    fmpz_clear(q);
}

int layer_is_trivial_vec(const layer_t L, const fmpz *v)
{
    slong cnt = L->count;
    if (L->nfinite == 0)
        return _fmpz_vec_is_zero(v, cnt);
    elim_t E;
    elim_init(E, cnt);
    for (slong k = 0; k < L->nfinite; k++)
        elim_add_dense(E, L->rel->rows[k]);
    /* v is in the lattice iff adding it creates no new pivot and leaves the
     * pivots unchanged: compare the product of pivots before and after. */
    fmpz_t before, after;
    fmpz_init_set_ui(before, 1);
    fmpz_init_set_ui(after, 1);
    for (slong c = 0; c < cnt; c++)
        if (!fmpz_is_zero(elim_pivot(E, c)))
            fmpz_mul(before, before, elim_pivot(E, c));
    slong nb = 0, na = 0;
    for (slong c = 0; c < cnt; c++)
        nb += !fmpz_is_zero(elim_pivot(E, c));
    elim_add_dense(E, v);
    for (slong c = 0; c < cnt; c++)
        if (!fmpz_is_zero(elim_pivot(E, c))) {
            fmpz_mul(after, after, elim_pivot(E, c));
            na++;
        }
    int in = (na == nb) && fmpz_equal(before, after);
    fmpz_clear(before);
    fmpz_clear(after);
    elim_clear(E);
    return in;
}
