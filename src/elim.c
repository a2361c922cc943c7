/* elim.c — see elim.h. */
#include <string.h>
#include "elim.h"

static void row_init(elim_row_struct *r)
{
    r->len = r->alloc = 0;
    r->col = NULL;
    r->val = NULL;
}

static void row_clear(elim_row_struct *r)
{
    if (r->alloc) {
        _fmpz_vec_clear(r->val, r->alloc);
        flint_free(r->col);
    }
    row_init(r);
}

static void row_fit(elim_row_struct *r, slong len)
{
    if (len <= r->alloc)
        return;
    slong na = FLINT_MAX(len, 2 * r->alloc);
    r->col = flint_realloc(r->col, na * sizeof(slong));
    r->val = flint_realloc(r->val, na * sizeof(fmpz));
    for (slong k = r->alloc; k < na; k++)
        fmpz_init(r->val + k);
    r->alloc = na;
}

static void row_swap(elim_row_struct *a, elim_row_struct *b)
{
    elim_row_struct t = *a;
    *a = *b;
    *b = t;
}

/* dst := a x + b y (dst distinct from x and y). */
static void row_comb(elim_row_struct *dst, const fmpz_t a, const elim_row_struct *x,
                     const fmpz_t b, const elim_row_struct *y)
{
    row_fit(dst, x->len + y->len);
    slong i = 0, j = 0, k = 0;
    while (i < x->len || j < y->len) {
        if (j >= y->len || (i < x->len && x->col[i] < y->col[j])) {
            fmpz_mul(dst->val + k, a, x->val + i);
            dst->col[k] = x->col[i++];
        } else if (i >= x->len || y->col[j] < x->col[i]) {
            fmpz_mul(dst->val + k, b, y->val + j);
            dst->col[k] = y->col[j++];
        } else {
            fmpz_mul(dst->val + k, a, x->val + i);
            fmpz_addmul(dst->val + k, b, y->val + j);
            dst->col[k] = x->col[i];
            i++;
            j++;
        }
        if (!fmpz_is_zero(dst->val + k))
            k++;
    }
    for (slong t = k; t < dst->len; t++)
        fmpz_zero(dst->val + t);
    dst->len = k;
}

void elim_init(elim_t E, slong ncols)
{
    E->ncols = ncols;
    E->piv = flint_malloc(FLINT_MAX(ncols, 1) * sizeof(elim_row_struct));
    for (slong c = 0; c < ncols; c++)
        row_init(E->piv + c);
    for (int k = 0; k < 3; k++)
        row_init(E->tmp + k);
}

void elim_clear(elim_t E)
{
    for (slong c = 0; c < E->ncols; c++)
        row_clear(E->piv + c);
    for (int k = 0; k < 3; k++)
        row_clear(E->tmp + k);
    flint_free(E->piv);
}

const fmpz *elim_pivot(const elim_t E, slong c)
{
    static const fmpz zero = 0; /* an fmpz 0 is a plain small integer */
    return E->piv[c].len ? E->piv[c].val : &zero;
}

void elim_add_dense(elim_t E, const fmpz *row)
{
    elim_row_struct *r = E->tmp, *s = E->tmp + 1, *t = E->tmp + 2;
    slong k = 0;
    for (slong c = 0; c < E->ncols; c++)
        if (!fmpz_is_zero(row + c))
            k++;
    row_fit(r, k);
    for (slong c = 0; c < r->len; c++)
        fmpz_zero(r->val + c);
    r->len = 0;
    for (slong c = 0; c < E->ncols; c++)
        if (!fmpz_is_zero(row + c)) {
            r->col[r->len] = c;
            fmpz_set(r->val + r->len, row + c);
            r->len++;
        }
    fmpz_t g, a, b, x, y;
    fmpz_init(g);
    fmpz_init(a);
    fmpz_init(b);
    fmpz_init(x);
    fmpz_init(y);
    while (r->len) {
        slong p = r->col[0];
        elim_row_struct *P = E->piv + p;
        if (P->len == 0) {
            if (fmpz_sgn(r->val) < 0)
                for (slong c = 0; c < r->len; c++)
                    fmpz_neg(r->val + c, r->val + c);
            row_swap(P, r);
            break;
        }
        if (fmpz_divisible(r->val, P->val)) {
            /* r := r - (r_p / P_p) P */
            fmpz_divexact(b, r->val, P->val);
            fmpz_neg(b, b);
            fmpz_one(a);
            row_comb(s, a, r, b, P);
            row_swap(r, s);
        } else {
            /* g = x P_p + y r_p; new pivot row x P + y r, and
             * (P_p/g) r - (r_p/g) P has a zero at p. */
            fmpz_xgcd(g, x, y, P->val, r->val);
            row_comb(t, x, P, y, r);
            fmpz_divexact(a, P->val, g);
            fmpz_divexact(b, r->val, g);
            fmpz_neg(b, b);
            row_comb(s, a, r, b, P);
            row_swap(P, t);
            if (fmpz_sgn(P->val) < 0)
                for (slong c = 0; c < P->len; c++)
                    fmpz_neg(P->val + c, P->val + c);
            row_swap(r, s);
        }
    }
    fmpz_clear(g);
    fmpz_clear(a);
    fmpz_clear(b);
    fmpz_clear(x);
    fmpz_clear(y);
}

void elim_quotient_init(elim_quotient_t Q)
{
    memset(Q, 0, sizeof(elim_quotient_struct));
}

void elim_quotient_clear(elim_quotient_t Q)
{
    if (Q->nsurv) {
        flint_free(Q->surv);
        _fmpz_vec_clear(Q->order, Q->nsurv);
        _fmpz_vec_clear(Q->rel, Q->nsurv * Q->nsurv);
    }
    if (Q->ncols && Q->nsurv)
        _fmpz_vec_clear(Q->expr, Q->ncols * Q->nsurv);
    elim_quotient_init(Q);
}

void elim_get_quotient(elim_quotient_t Q, const elim_t E)
{
    elim_quotient_clear(Q);
    slong n = E->ncols, ns = 0;
    slong *sidx = flint_malloc(FLINT_MAX(n, 1) * sizeof(slong));
    for (slong c = 0; c < n; c++) {
        const elim_row_struct *P = E->piv + c;
        sidx[c] = (P->len && fmpz_is_one(P->val)) ? -1 : ns++;
    }
    Q->ncols = n;
    Q->nsurv = ns;
    if (ns) {
        Q->surv = flint_malloc(ns * sizeof(slong));
        Q->order = _fmpz_vec_init(ns);
        Q->rel = _fmpz_vec_init(ns * ns);
        Q->expr = _fmpz_vec_init(n * ns);
    }
    /* Back substitution from the last column: a unit-pivot column is minus
     * the rest of its row. */
    for (slong c = n - 1; c >= 0; c--) {
        const elim_row_struct *P = E->piv + c;
        fmpz *ec = Q->expr + c * ns;
        if (sidx[c] >= 0) {
            Q->surv[sidx[c]] = c;
            fmpz_one(ec + sidx[c]);
            continue;
        }
        for (slong k = 1; k < P->len; k++)
            _fmpz_vec_scalar_submul_fmpz(ec, Q->expr + P->col[k] * ns, ns, P->val + k);
    }
    for (slong c = 0; c < n; c++) {
        const elim_row_struct *P = E->piv + c;
        if (sidx[c] < 0 || P->len == 0)
            continue;
        slong s = sidx[c];
        fmpz_set(Q->order + s, P->val);
        fmpz *row = Q->rel + s * ns;
        for (slong k = 0; k < P->len; k++)
            _fmpz_vec_scalar_addmul_fmpz(row, Q->expr + P->col[k] * ns, ns, P->val + k);
    }
    flint_free(sidx);
}
