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

/* Modular mode: every entry into [0, m); zeros dropped. */
static void row_reduce_mod(elim_row_struct *r, const fmpz_t m)
{
    slong k = 0;
    for (slong i = 0; i < r->len; i++) {
        fmpz_mod(r->val + i, r->val + i, m);
        if (fmpz_is_zero(r->val + i))
            continue;
        if (k != i) {
            r->col[k] = r->col[i];
            fmpz_swap(r->val + k, r->val + i);
        }
        k++;
    }
    for (slong t = k; t < r->len; t++)
        fmpz_zero(r->val + t);
    r->len = k;
}

static void row_set(elim_row_struct *dst, const elim_row_struct *src)
{
    row_fit(dst, src->len);
    for (slong t = src->len; t < dst->len; t++)
        fmpz_zero(dst->val + t);
    for (slong t = 0; t < src->len; t++) {
        dst->col[t] = src->col[t];
        fmpz_set(dst->val + t, src->val + t);
    }
    dst->len = src->len;
}

void elim_init(elim_t E, slong ncols)
{
    E->ncols = ncols;
    fmpz_init(E->mod);
    E->npend = E->apend = 0;
    E->pend = NULL;
    E->defer = 0;
    E->nkept = E->akept = 0;
    E->kept = NULL;
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
    for (slong k = 0; k < E->apend; k++)
        row_clear(E->pend + k);
    flint_free(E->pend);
    for (slong k = 0; k < E->akept; k++)
        row_clear(E->kept + k);
    flint_free(E->kept);
    fmpz_clear(E->mod);
    flint_free(E->piv);
}

void elim_set_modulus(elim_t E, const fmpz_t m)
{
    fmpz_abs(E->mod, m);
}

/* Queues a copy of r for insertion (modular mode). */
static void push_pending(elim_t E, const elim_row_struct *r)
{
    if (E->npend == E->apend) {
        slong na = FLINT_MAX(4, 2 * E->apend);
        E->pend = flint_realloc(E->pend, na * sizeof(elim_row_struct));
        for (slong k = E->apend; k < na; k++)
            row_init(E->pend + k);
        E->apend = na;
    }
    row_set(E->pend + E->npend, r);
    E->npend++;
}

const fmpz *elim_pivot(const elim_t E, slong c)
{
    static const fmpz zero = 0; /* an fmpz 0 is a plain small integer */
    return E->piv[c].len ? E->piv[c].val : fmpz_is_zero(E->mod) ? &zero : E->mod;
}

/* Reduces E->tmp[0] against the pivot rows and stores what is left as a
 * new pivot row.  Modular mode (m = E->mod > 0, m Z^ncols inside the
 * lattice): entries stay in [0, m), as in the Hermite normal form modulo
 * the determinant (P. D. Domich, R. Kannan and L. E. Trotter, "Hermite
 * normal form computation using modulo determinant arithmetic", Math.
 * Oper. Res. 12, 1987; J. L. Hafner and K. S. McCurley, "Asymptotically
 * fast triangularization of matrices over rings", SIAM J. Comput. 20,
 * 1991).  Reducing an entry modulo m subtracts a multiple of some m e_c, so
 * the stored rows must span every m e_c as well: when a row r with leading
 * entry d becomes the pivot row of column p, the row (m/g) r, g = gcd(d, m),
 * is queued (its entry at p vanishes modulo m), and r itself is replaced by
 * x r with x d = g modulo m.  Then r = (d/g) (x r) + y (m/g) r and
 * m e_p = (m/g) (x r) - x (m/g) r modulo the later m e_c.
 * Columns that never get a pivot row have pivot m (elim_pivot). */
static void insert_row(elim_t E)
{
    elim_row_struct *r = E->tmp, *s = E->tmp + 1, *t = E->tmp + 2;
    int modular = !fmpz_is_zero(E->mod);
    fmpz_t g, a, b, x, y;
    fmpz_init(g);
    fmpz_init(a);
    fmpz_init(b);
    fmpz_init(x);
    fmpz_init(y);
    if (modular)
        row_reduce_mod(r, E->mod);
    while (r->len) {
        slong p = r->col[0];
        elim_row_struct *P = E->piv + p;
        if (P->len == 0) {
            if (modular) {
                /* queue (m/g) r: with it the rows still span r and m e_p */
                fmpz_xgcd(g, x, y, r->val, E->mod);
                fmpz_divexact(a, E->mod, g);
                row_set(s, r);
                for (slong c = 0; c < s->len; c++)
                    fmpz_mul(s->val + c, s->val + c, a);
                row_reduce_mod(s, E->mod);
                if (s->len)
                    push_pending(E, s);
                if (!fmpz_equal(g, r->val)) {
                    /* x r has leading entry x d = g (mod m), and g < m */
                    for (slong c = 0; c < r->len; c++)
                        fmpz_mul(r->val + c, r->val + c, x);
                    row_reduce_mod(r, E->mod);
                }
                row_swap(P, r);
                break;
            }
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
            if (modular)
                row_reduce_mod(r, E->mod);
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
            if (modular) {
                /* the new pivot is a proper divisor of the old one, which
                 * divides m, so it survives the reduction */
                row_reduce_mod(P, E->mod);
                row_reduce_mod(r, E->mod);
            }
        }
    }
    fmpz_clear(g);
    fmpz_clear(a);
    fmpz_clear(b);
    fmpz_clear(x);
    fmpz_clear(y);
}

/* Appends a slot for a kept row and returns it (empty). */
static elim_row_struct *push_kept(elim_t E)
{
    if (E->nkept == E->akept) {
        slong na = FLINT_MAX(16, 2 * E->akept);
        E->kept = flint_realloc(E->kept, na * sizeof(elim_row_struct));
        for (slong k = E->akept; k < na; k++)
            row_init(E->kept + k);
        E->akept = na;
    }
    return E->kept + E->nkept++;
}

/* Inserts E->tmp[0] and whatever the insertion queues. */
static void insert_with_pending(elim_t E)
{
    insert_row(E);
    while (E->npend) {
        E->npend--;
        row_swap(E->tmp, E->pend + E->npend);
        insert_row(E);
    }
}

void elim_add_dense(elim_t E, const fmpz *row)
{
    elim_row_struct *r = E->defer ? push_kept(E) : E->tmp;
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
    if (!E->defer)
        insert_with_pending(E);
}

void elim_defer(elim_t E)
{
    FLINT_ASSERT(fmpz_is_zero(E->mod));
    E->defer = 1;
}

/* Inserts the kept rows in the order of idx (a copy each: the kept rows
 * stay for a second pass).  Returns 1 when progress asked to stop. */
static int insert_kept(elim_t E, const slong *idx, const ns_progress_t *progress)
{
    for (slong k = 0; k < E->nkept; k++) {
        if (progress && ns_progress_report(progress, NULL, -1.0))
            return 1;
        row_set(E->tmp, E->kept + idx[k]);
        insert_with_pending(E);
    }
    return 0;
}

/* The order of the sparsest-first pass: by length, ties by position. */
static int kept_before(const elim_row_struct *kept, slong x, slong y)
{
    return kept[x].len != kept[y].len ? kept[x].len < kept[y].len : x < y;
}

static void sort_by_len(slong *idx, slong n, const elim_row_struct *kept)
{
    /* a bottom-up merge sort: qsort has no context argument in C17 */
    slong *tmp = flint_malloc(FLINT_MAX(n, 1) * sizeof(slong));
    for (slong w = 1; w < n; w *= 2) {
        for (slong lo = 0; lo < n; lo += 2 * w) {
            slong mid = FLINT_MIN(lo + w, n), hi = FLINT_MIN(lo + 2 * w, n);
            slong i = lo, j = mid, k = lo;
            while (i < mid && j < hi)
                tmp[k++] = kept_before(kept, idx[j], idx[i]) ? idx[j++] : idx[i++];
            while (i < mid)
                tmp[k++] = idx[i++];
            while (j < hi)
                tmp[k++] = idx[j++];
        }
        memcpy(idx, tmp, n * sizeof(slong));
    }
    flint_free(tmp);
}

int elim_flush(elim_t E, const ns_progress_t *progress)
{
    if (!E->defer)
        return 0;
    E->defer = 0;
    slong n = E->nkept;
    slong *idx = flint_malloc(FLINT_MAX(n, 1) * sizeof(slong));
    for (slong k = 0; k < n; k++)
        idx[k] = k;
    sort_by_len(idx, n, E->kept);
    int stop = insert_kept(E, idx, progress);
    int units = 1;
    for (slong c = 0; c < E->ncols && units; c++)
        if (E->piv[c].len && !fmpz_is_one(E->piv[c].val))
            units = 0;
    if (!stop && !units) {
        for (slong c = 0; c < E->ncols; c++)
            row_clear(E->piv + c);
        for (slong k = 0; k < n; k++)
            idx[k] = k;
        stop = insert_kept(E, idx, progress);
    }
    flint_free(idx);
    for (slong k = 0; k < E->akept; k++)
        row_clear(E->kept + k);
    flint_free(E->kept);
    E->kept = NULL;
    E->nkept = E->akept = 0;
    return stop;
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
    elim_get_quotient_progress(Q, E, NULL);
}

/* Counts work and polls progress once ELIM_POLL_WORK has accumulated. */
static int elim_poll(slong *work, slong add, const ns_progress_t *progress)
{
    *work += add;
    if (*work < ELIM_POLL_WORK)
        return 0;
    *work = 0;
    return ns_progress_report(progress, NULL, -1.0);
}

int elim_get_quotient_progress(elim_quotient_t Q, const elim_t E, const ns_progress_t *progress)
{
    slong work = 0;
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
    if (ns == 0) {
        /* Z^n/L is trivial: nothing to express (and no arrays to index) */
        flint_free(sidx);
        return 0;
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
        if (elim_poll(&work, P->len * ns, progress)) {
            flint_free(sidx);
            elim_quotient_clear(Q);
            return 1;
        }
    }
    for (slong c = 0; c < n; c++) {
        const elim_row_struct *P = E->piv + c;
        if (sidx[c] < 0)
            continue;
        slong s = sidx[c];
        if (P->len == 0) {
            /* modular mode: m e_c is in the lattice */
            if (!fmpz_is_zero(E->mod)) {
                fmpz_set(Q->order + s, E->mod);
                fmpz_set(Q->rel + s * ns + s, E->mod);
            }
            continue;
        }
        fmpz_set(Q->order + s, P->val);
        fmpz *row = Q->rel + s * ns;
        for (slong k = 0; k < P->len; k++)
            _fmpz_vec_scalar_addmul_fmpz(row, Q->expr + P->col[k] * ns, ns, P->val + k);
        if (elim_poll(&work, P->len * ns, progress)) {
            flint_free(sidx);
            elim_quotient_clear(Q);
            return 1;
        }
    }
    flint_free(sidx);
    return 0;
}
