/* torsion.c — see torsion.h and doc/torsion.md. */
#include <stdint.h>
#include <string.h>
#include <flint/fmpz_mat.h>
#include "strbuf.h"
#include "torsion.h"

/* ------------------------------------------------- induced sequences */

void tsub_init(tsub_t S, slong n)
{
    memset(S, 0, sizeof(tsub_struct));
    S->n = n;
    S->at = flint_malloc(FLINT_MAX(n, 1) * sizeof(slong));
    for (slong p = 0; p < n; p++)
        S->at[p] = -1;
}

void tsub_clear(tsub_t S)
{
    if (S->len) {
        _fmpz_vec_clear(S->elt, S->len * S->n);
        _fmpz_vec_clear(S->lead_exp, S->len);
        _fmpz_vec_clear(S->relord, S->len);
    }
    flint_free(S->lead);
    flint_free(S->at);
    memset(S, 0, sizeof(tsub_struct));
}

void tsub_order(fmpz_t order, const tsub_t S)
{
    fmpz_one(order);
    for (slong i = 0; i < S->len; i++)
        fmpz_mul(order, order, S->relord + i);
}

static void cut(fmpz *x, slong keep, slong n)
{
    for (slong p = keep; p < n; p++)
        fmpz_zero(x + p);
}

static slong first_nonzero(const fmpz *x, slong keep)
{
    for (slong p = 0; p < keep; p++)
        if (!fmpz_is_zero(x + p))
            return p;
    return -1;
}

/* Reduces x by the sequence: x := u_i^-c_i x for the leading element each
 * time.  Returns -1 when x becomes trivial (c, if given, then holds the
 * exponents: x = u_1^c_1 ... u_s^c_s), else the leading position of what
 * is left. */
static slong tsub_sift(const tsub_t S, pcp_work_t W, fmpz *x, slong keep, fmpz *c)
{
    slong n = S->n;
    fmpz *y = _fmpz_vec_init(n);
    fmpz_t q;
    fmpz_init(q);
    slong res;
    for (;;) {
        slong p = first_nonzero(x, keep);
        if (p < 0 || W->overflow) { /* a cancelled collection changes nothing */
            res = -1;
            break;
        }
        slong i = S->at[p];
        if (i < 0 || !fmpz_divisible(x + p, S->lead_exp + i)) {
            res = p;
            break;
        }
        fmpz_divexact(q, x + p, S->lead_exp + i);
        if (c)
            fmpz_set(c + i, q);
        fmpz_neg(q, q);
        pcp_elt_pow(W, y, S->elt + i * n, q);
        pcp_elt_mul(W, x, y, x);
        cut(x, keep, n);
    }
    fmpz_clear(q);
    _fmpz_vec_clear(y, n);
    return res;
}

/* A queue of vectors waiting to be sifted. */
typedef struct {
    slong n, len, alloc;
    fmpz *v;
} vqueue;

static void vq_push(vqueue *Q, const fmpz *x)
{
    if (Q->len == Q->alloc) {
        slong na = FLINT_MAX(16, 2 * Q->alloc);
        Q->v = flint_realloc(Q->v, na * Q->n * sizeof(fmpz));
        memset(Q->v + Q->alloc * Q->n, 0, (na - Q->alloc) * Q->n * sizeof(fmpz));
        Q->alloc = na;
    }
    _fmpz_vec_set(Q->v + Q->len * Q->n, x, Q->n);
    Q->len++;
}

/* Queues what must sift to 1 once element i is in place: its relative
 * power, its commutators with the others and (normal closure) its
 * conjugates. */
static void queue_closure(vqueue *Q, const tsub_t S, pcp_work_t W, slong i, const fmpz *conj_by,
                          slong nconj, slong keep)
{
    slong n = S->n;
    fmpz *y = _fmpz_vec_init(n);
    const fmpz *u = S->elt + i * n;
    pcp_elt_pow(W, y, u, S->relord + i);
    cut(y, keep, n);
    vq_push(Q, y);
    for (slong l = 0; l < S->len; l++) {
        if (l == i)
            continue;
        pcp_elt_comm(W, y, u, S->elt + l * n);
        cut(y, keep, n);
        vq_push(Q, y);
    }
    for (slong k = 0; k < nconj; k++) {
        pcp_elt_conj(W, y, u, conj_by + k * n);
        cut(y, keep, n);
        vq_push(Q, y);
    }
    _fmpz_vec_clear(y, n);
}

static void tsub_append(tsub_t S, slong p)
{
    slong n = S->n, s = S->len;
    fmpz *e = _fmpz_vec_init((s + 1) * n);
    fmpz *le = _fmpz_vec_init(s + 1), *ro = _fmpz_vec_init(s + 1);
    if (s) {
        _fmpz_vec_swap(e, S->elt, s * n);
        _fmpz_vec_swap(le, S->lead_exp, s);
        _fmpz_vec_swap(ro, S->relord, s);
        _fmpz_vec_clear(S->elt, s * n);
        _fmpz_vec_clear(S->lead_exp, s);
        _fmpz_vec_clear(S->relord, s);
    }
    S->elt = e;
    S->lead_exp = le;
    S->relord = ro;
    S->lead = flint_realloc(S->lead, (s + 1) * sizeof(slong));
    S->lead[s] = p;
    S->at[p] = s;
    S->len = s + 1;
}

void tsub_set(tsub_t D, const tsub_t S)
{
    tsub_clear(D);
    tsub_init(D, S->n);
    for (slong i = 0; i < S->len; i++) {
        tsub_append(D, S->lead[i]);
        _fmpz_vec_set(D->elt + i * S->n, S->elt + i * S->n, S->n);
        fmpz_set(D->lead_exp + i, S->lead_exp + i);
        fmpz_set(D->relord + i, S->relord + i);
    }
}

/* Sorts the sequence by leading position. */
static void tsub_sort(tsub_t S)
{
    slong n = S->n;
    for (slong i = 1; i < S->len; i++)
        for (slong k = i; k > 0 && S->lead[k - 1] > S->lead[k]; k--) {
            _fmpz_vec_swap(S->elt + (k - 1) * n, S->elt + k * n, n);
            fmpz_swap(S->lead_exp + k - 1, S->lead_exp + k);
            fmpz_swap(S->relord + k - 1, S->relord + k);
            slong t = S->lead[k - 1];
            S->lead[k - 1] = S->lead[k];
            S->lead[k] = t;
        }
    for (slong i = 0; i < S->len; i++)
        S->at[S->lead[i]] = i;
}

void tsub_add(tsub_t S, pcp_work_t W, const fmpz *gens, slong ngens, const fmpz *conj_by,
              slong nconj, slong keep)
{
    slong n = S->n;
    const pcp_struct *P = W->P;
    vqueue Q = {n, 0, 0, NULL};
    fmpz *x = _fmpz_vec_init(n), *y = _fmpz_vec_init(n), *z = _fmpz_vec_init(n);
    fmpz_t g, a, b, f, k, mg;
    fmpz_init(g);
    fmpz_init(a);
    fmpz_init(b);
    fmpz_init(f);
    fmpz_init(k);
    fmpz_init(mg);
    for (slong t = 0; t < ngens; t++) {
        _fmpz_vec_set(x, gens + t * n, n);
        cut(x, keep, n);
        vq_push(&Q, x);
    }
    while (Q.len > 0 && !W->overflow) {
        Q.len--;
        _fmpz_vec_swap(x, Q.v + Q.len * n, n);
        slong p = tsub_sift(S, W, x, keep, NULL);
        if (p < 0)
            continue;
        const fmpz *m = P->relorder + p;
        /* only elements of finite order are ever added, and their leading
         * pc generator has finite relative order; anything else would be a
         * broken invariant, which we refuse to loop on */
        if (fmpz_is_zero(m)) {
            S->broken = 1;
            continue;
        }
        slong i = S->at[p];
        if (i < 0) {
            fmpz_gcd(g, x + p, m);
            if (!fmpz_equal(g, x + p)) {
                /* x^k leads with exponent gcd(x_p, m_p); x itself is
                 * sifted again afterwards */
                fmpz_divexact(f, x + p, g);
                fmpz_divexact(mg, m, g);
                if (fmpz_is_one(mg))
                    fmpz_one(k);
                else
                    fmpz_invmod(k, f, mg);
                vq_push(&Q, x);
                pcp_elt_pow(W, y, x, k);
                cut(y, keep, n);
                _fmpz_vec_swap(x, y, n);
            }
            tsub_append(S, p);
            i = S->len - 1;
            _fmpz_vec_set(S->elt + i * n, x, n);
            fmpz_set(S->lead_exp + i, x + p);
            fmpz_divexact(S->relord + i, m, x + p);
        } else {
            /* combine: u^a x^b leads with gcd(e, x_p) */
            fmpz *u = S->elt + i * n;
            fmpz_xgcd(g, a, b, S->lead_exp + i, x + p);
            pcp_elt_pow(W, y, u, a);
            pcp_elt_pow(W, z, x, b);
            pcp_elt_mul(W, y, y, z);
            cut(y, keep, n);
            vq_push(&Q, u);
            vq_push(&Q, x);
            _fmpz_vec_set(u, y, n);
            fmpz_set(S->lead_exp + i, g);
            fmpz_divexact(S->relord + i, m, g);
        }
        queue_closure(&Q, S, W, i, conj_by, nconj, keep);
    }
    if (Q.alloc)
        _fmpz_vec_clear(Q.v, Q.alloc * n);
    _fmpz_vec_clear(x, n);
    _fmpz_vec_clear(y, n);
    _fmpz_vec_clear(z, n);
    fmpz_clear(g);
    fmpz_clear(a);
    fmpz_clear(b);
    fmpz_clear(f);
    fmpz_clear(k);
    fmpz_clear(mg);
    tsub_sort(S);
}

/* The mixed-radix index of a member x of S (x is destroyed); -1 if x is
 * not in S. */
static slong tsub_index(const tsub_t S, pcp_work_t W, fmpz *x, fmpz *c)
{
    _fmpz_vec_zero(c, S->len);
    if (tsub_sift(S, W, x, S->n, c) >= 0)
        return -1;
    slong idx = 0;
    for (slong i = 0; i < S->len; i++)
        idx = idx * fmpz_get_si(S->relord + i) + fmpz_get_si(c + i);
    return idx;
}

/* x := u_1^c_1 ... u_s^c_s for the mixed-radix index idx. */
static void tsub_element(fmpz *x, const tsub_t S, pcp_work_t W, slong idx)
{
    slong n = S->n;
    fmpz *y = _fmpz_vec_init(n);
    fmpz_t e;
    fmpz_init(e);
    _fmpz_vec_zero(x, n);
    slong *c = flint_malloc(FLINT_MAX(S->len, 1) * sizeof(slong));
    for (slong i = S->len - 1; i >= 0; i--) {
        slong r = fmpz_get_si(S->relord + i);
        c[i] = idx % r;
        idx /= r;
    }
    for (slong i = 0; i < S->len; i++) {
        if (!c[i])
            continue;
        fmpz_set_si(e, c[i]);
        pcp_elt_pow(W, y, S->elt + i * n, e);
        pcp_elt_mul(W, x, x, y);
    }
    flint_free(c);
    fmpz_clear(e);
    _fmpz_vec_clear(y, n);
}

/* ------------------------------------------------------- the subgroup */

void torsion_init(torsion_t T)
{
    memset(T, 0, sizeof(torsion_struct));
    tsub_init(T->sub, 0);
    fmpz_init(T->order);
    fmpz_one(T->order);
    T->abelian = 1;              /* the trivial group, until computed */
    T->quotient_layers_free = 1;
}

void torsion_clear(torsion_t T)
{
    for (slong i = 0; T->gen_str && i < T->sub->len; i++)
        flint_free(T->gen_str[i]);
    flint_free(T->gen_str);
    tsub_clear(T->sub);
    for (slong k = 0; k < T->nsteps; k++)
        tsub_clear(T->steps + k);
    flint_free(T->steps);
    fmpz_clear(T->order);
    if (T->ninv)
        _fmpz_vec_clear(T->inv, T->ninv);
    for (slong j = 0; j < T->nlayers; j++)
        if (T->q_ntors[j])
            _fmpz_vec_clear(T->q_tors[j], T->q_ntors[j]);
    flint_free(T->q_ntors);
    flint_free(T->q_tors);
    if (T->nlayers)
        _fmpz_vec_clear(T->u_ord, T->nlayers);
    memset(T, 0, sizeof(torsion_struct));
}

/* The element with layer coordinates v (count entries) at layer L, in
 * normal form, cut to the layer's end. */
static void layer_element(fmpz *x, pcp_work_t W, const layer_struct *L, const fmpz *v, slong n)
{
    _fmpz_vec_zero(x, n);
    for (slong k = 0; k < L->count; k++)
        if (!fmpz_is_zero(v + k))
            pcp_collect_gen(W, x, L->start + k, v + k);
    cut(x, L->start + L->count, n);
}

/* Basis of the integer left kernel of A (rows r with r A = 0), as the rows
 * of K (allocated here). */
static void left_kernel(fmpz_mat_t K, const fmpz_mat_t A)
{
    slong m = fmpz_mat_nrows(A), c = fmpz_mat_ncols(A);
    if (c == 0) {
        fmpz_mat_init(K, m, m);
        fmpz_mat_one(K);
        return;
    }
    fmpz_mat_t H, U;
    fmpz_mat_init(H, m, c);
    fmpz_mat_init(U, m, m);
    fmpz_mat_hnf_transform(H, U, A);
    slong rank = fmpz_mat_rank(H);
    fmpz_mat_init(K, m - rank, m);
    slong row = 0;
    for (slong i = 0; i < m; i++) {
        if (!fmpz_mat_is_zero_row(H, i))
            continue;
        for (slong k = 0; k < m; k++)
            fmpz_set(fmpz_mat_entry(K, row, k), fmpz_mat_entry(U, i, k));
        row++;
    }
    fmpz_mat_clear(H);
    fmpz_mat_clear(U);
}

/* One step of the transfer argument: S holds the torsion of G/gamma_k;
 * replaces it by the torsion of G/gamma_(k+1) (L is layer k). */
static void torsion_step(tsub_t S, pcp_work_t W, const layer_struct *L, const fmpz *conj_by,
                         slong nconj)
{
    slong n = S->n, s = S->len, r = L->free_rank, cnt = L->count;
    slong keep = L->start + L->count;
    fmpz_t nexp;
    fmpz_init(nexp);
    tsub_order(nexp, S);
    slong cap = 16, ng = 0;
    fmpz *gens = _fmpz_vec_init(cap * n);
#define PUSH_GEN(vec)                                                                            \
    do {                                                                                         \
        if (ng == cap) {                                                                         \
            fmpz *g2 = _fmpz_vec_init(2 * cap * n);                                              \
            _fmpz_vec_swap(g2, gens, cap * n);                                                   \
            _fmpz_vec_clear(gens, cap * n);                                                      \
            gens = g2;                                                                           \
            cap *= 2;                                                                            \
        }                                                                                        \
        _fmpz_vec_set(gens + ng * n, (vec), n);                                                  \
        ng++;                                                                                    \
    } while (0)
    fmpz *x = _fmpz_vec_init(n), *y = _fmpz_vec_init(n);
    fmpz *v = _fmpz_vec_init(FLINT_MAX(cnt, 1));

    /* the torsion of the layer: the kernel of its free-part coordinates */
    fmpz_mat_t phiT, K;
    fmpz_mat_init(phiT, cnt, r);
    fmpz_mat_transpose(phiT, L->phi);
    left_kernel(K, phiT);
    for (slong i = 0; i < fmpz_mat_nrows(K); i++) {
        layer_element(x, W, L, K->rows[i], n);
        PUSH_GEN(x);
    }
    fmpz_mat_clear(K);
    fmpz_mat_clear(phiT);

    /* the kernel of x -> x^n on <S, layer> modulo the layer's torsion */
    fmpz_mat_t V;
    fmpz_mat_init(V, s + r, r);
    for (slong i = 0; i < s; i++) {
        pcp_elt_pow(W, y, S->elt + i * n, nexp);
        cut(y, keep, n);
        for (slong k = 0; k < cnt; k++)
            fmpz_set(v + k, y + L->start + k);
        for (slong a = 0; a < r; a++) {
            fmpz *e = fmpz_mat_entry(V, i, a);
            for (slong k = 0; k < cnt; k++)
                fmpz_addmul(e, fmpz_mat_entry(L->phi, a, k), v + k);
        }
    }
    for (slong a = 0; a < r; a++)
        fmpz_set(fmpz_mat_entry(V, s + a, a), nexp);
    left_kernel(K, V);
    fmpz *b = _fmpz_vec_init(FLINT_MAX(r, 1) * n);
    for (slong a = 0; a < r; a++) {
        for (slong k = 0; k < cnt; k++)
            fmpz_set(v + k, fmpz_mat_entry(L->sigma, k, a));
        layer_element(b + a * n, W, L, v, n);
    }
    for (slong i = 0; i < fmpz_mat_nrows(K); i++) {
        _fmpz_vec_zero(x, n);
        for (slong t = 0; t < s + r; t++) {
            const fmpz *e = fmpz_mat_entry(K, i, t);
            if (fmpz_is_zero(e))
                continue;
            pcp_elt_pow(W, y, t < s ? S->elt + t * n : b + (t - s) * n, e);
            pcp_elt_mul(W, x, x, y);
        }
        cut(x, keep, n);
        PUSH_GEN(x);
    }
    fmpz_mat_clear(K);
    fmpz_mat_clear(V);
    _fmpz_vec_clear(b, FLINT_MAX(r, 1) * n);
    /* the commutators of the old generators ([P, P] up to normal closure) */
    for (slong i = 0; i < s; i++)
        for (slong l = i + 1; l < s; l++) {
            pcp_elt_comm(W, x, S->elt + i * n, S->elt + l * n);
            cut(x, keep, n);
            PUSH_GEN(x);
        }
#undef PUSH_GEN
    tsub_t S2;
    tsub_init(S2, n);
    tsub_add(S2, W, gens, ng, conj_by, nconj, keep);
    tsub_clear(S);
    *S = *S2;
    _fmpz_vec_clear(gens, cap * n);
    _fmpz_vec_clear(x, n);
    _fmpz_vec_clear(y, n);
    _fmpz_vec_clear(v, FLINT_MAX(cnt, 1));
    fmpz_clear(nexp);
}

/* Invariant factors (> 1) of Z^cols / (rows of A); *nt of them. */
static fmpz *snf_torsion(slong *nt, slong *free_rank, const fmpz_mat_t A, slong cols)
{
    slong m = fmpz_mat_nrows(A);
    *nt = 0;
    if (m == 0) {
        *free_rank = cols;
        return NULL;
    }
    fmpz_mat_t D;
    fmpz_mat_init(D, m, cols);
    fmpz_mat_snf(D, A);
    slong rank = 0, cnt = 0;
    for (slong i = 0; i < FLINT_MIN(m, cols); i++)
        if (!fmpz_is_zero(fmpz_mat_entry(D, i, i))) {
            rank++;
            if (!fmpz_is_one(fmpz_mat_entry(D, i, i)))
                cnt++;
        }
    *free_rank = cols - rank;
    fmpz *t = cnt ? _fmpz_vec_init(cnt) : NULL;
    for (slong i = 0, k = 0; i < FLINT_MIN(m, cols); i++) {
        const fmpz *d = fmpz_mat_entry(D, i, i);
        if (!fmpz_is_zero(d) && !fmpz_is_one(d))
            fmpz_abs(t + k++, d);
    }
    *nt = cnt;
    fmpz_mat_clear(D);
    return t;
}

ns_status torsion_compute(torsion_t T, const nq_t Q, const layer_struct *const *layers,
                          const ns_progress_t *progress, nserr_t err)
{
    torsion_clear(T);
    torsion_init(T);
    const pcp_struct *P = Q->pcp;
    slong n = P->n, c = Q->class_reached;
    tsub_clear(T->sub);
    tsub_init(T->sub, n);
    T->nlayers = c;
    T->u_ord = c ? _fmpz_vec_init(c) : NULL;
    T->q_ntors = flint_calloc(FLINT_MAX(c, 1), sizeof(slong));
    T->q_tors = flint_calloc(FLINT_MAX(c, 1), sizeof(fmpz *));
    pcp_work_t W;
    pcp_work_init(W, P);
    W->progress = progress;

    int layers_free = 1, finite = 1;
    for (slong j = 0; j < c; j++)
        if (Q->layers[j].ntors)
            layers_free = 0;
    for (slong p = 0; p < n; p++)
        if (fmpz_is_zero(P->relorder + p))
            finite = 0;
    T->finite = finite;
    if (finite) {
        /* the pc generators themselves are an induced sequence of Gc */
        for (slong p = 0; p < n; p++) {
            tsub_append(T->sub, p);
            fmpz_one(T->sub->elt + p * n + p);
            fmpz_one(T->sub->lead_exp + p);
            fmpz_set(T->sub->relord + p, P->relorder + p);
        }
    } else if (!layers_free) {
        /* steps[k] = the torsion of G/gamma_(k+1), for the isolator series */
        T->nsteps = c;
        T->steps = flint_malloc(FLINT_MAX(c, 1) * sizeof(tsub_struct));
        for (slong k = 0; k < c; k++)
            tsub_init(T->steps + k, n);
        slong nconj = c ? Q->layers[0].count : 0;
        fmpz *conj_by = _fmpz_vec_init(FLINT_MAX(nconj, 1) * n);
        for (slong k = 0; k < nconj; k++)
            fmpz_one(conj_by + k * n + k);
        for (slong k = 1; k <= c; k++) {
            if (ns_progress_report(progress, "torsion subgroup", (double)k / (double)(c + 1))) {
                _fmpz_vec_clear(conj_by, FLINT_MAX(nconj, 1) * n);
                pcp_work_clear(W);
                torsion_clear(T);
                torsion_init(T);
                return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
            }
            torsion_step(T->sub, W, layers[k - 1], conj_by, nconj);
            if (W->overflow) {
                _fmpz_vec_clear(conj_by, FLINT_MAX(nconj, 1) * n);
                pcp_work_clear(W);
                torsion_clear(T);
                torsion_init(T);
                return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
            }
            if (k < c)
                tsub_set(T->steps + k, T->sub);
        }
        _fmpz_vec_clear(conj_by, FLINT_MAX(nconj, 1) * n);
    }
    /* a torsion-free central series with free factors: T = 1 */
    tsub_order(T->order, T->sub);
    slong s = T->sub->len;
    T->gen_str = flint_malloc(FLINT_MAX(s, 1) * sizeof(char *));
    for (slong i = 0; i < s; i++)
        T->gen_str[i] = nq_elt_get_str(Q, T->sub->elt + i * n);

    /* abelian?  then the invariants from the sequence's power relations */
    fmpz *x = _fmpz_vec_init(FLINT_MAX(n, 1));
    fmpz *cv = _fmpz_vec_init(FLINT_MAX(s, 1));
    T->abelian = 1;
    for (slong i = 0; i < s && T->abelian; i++)
        for (slong l = i + 1; l < s && T->abelian; l++) {
            pcp_elt_comm(W, x, T->sub->elt + i * n, T->sub->elt + l * n);
            if (first_nonzero(x, n) >= 0)
                T->abelian = 0;
        }
    if (T->abelian && s > 0) {
        fmpz_mat_t R;
        fmpz_mat_init(R, s, s);
        for (slong i = 0; i < s; i++) {
            pcp_elt_pow(W, x, T->sub->elt + i * n, T->sub->relord + i);
            _fmpz_vec_zero(cv, s);
            tsub_sift(T->sub, W, x, n, cv);
            for (slong l = 0; l < s; l++)
                fmpz_neg(fmpz_mat_entry(R, i, l), cv + l);
            fmpz_add(fmpz_mat_entry(R, i, i), fmpz_mat_entry(R, i, i), T->sub->relord + i);
        }
        slong fr;
        T->inv = snf_torsion(&T->ninv, &fr, R, s);
        fmpz_mat_clear(R);
    }
    _fmpz_vec_clear(cv, FLINT_MAX(s, 1));
    _fmpz_vec_clear(x, FLINT_MAX(n, 1));

    /* the layers of Gc/T: L_j modulo the image U_j of T meet gamma_j */
    T->quotient_layers_free = 1;
    for (slong j = 0; j < c; j++) {
        const layer_struct *L = layers[j];
        slong nu = 0;
        fmpz_one(T->u_ord + j);
        for (slong i = 0; i < s; i++)
            if (T->sub->lead[i] >= L->start && T->sub->lead[i] < L->start + L->count) {
                nu++;
                fmpz_mul(T->u_ord + j, T->u_ord + j, T->sub->relord + i);
            }
        fmpz_mat_t R;
        fmpz_mat_init(R, L->nfinite + nu, L->count);
        for (slong i = 0; i < L->nfinite; i++)
            for (slong k = 0; k < L->count; k++)
                fmpz_set(fmpz_mat_entry(R, i, k), fmpz_mat_entry(L->rel, i, k));
        for (slong i = 0, row = L->nfinite; i < s; i++)
            if (T->sub->lead[i] >= L->start && T->sub->lead[i] < L->start + L->count) {
                for (slong k = 0; k < L->count; k++)
                    fmpz_set(fmpz_mat_entry(R, row, k), T->sub->elt + i * n + L->start + k);
                row++;
            }
        slong fr;
        T->q_tors[j] = snf_torsion(T->q_ntors + j, &fr, R, L->count);
        FLINT_ASSERT(fr == L->free_rank);
        if (T->q_ntors[j])
            T->quotient_layers_free = 0;
        fmpz_mat_clear(R);
    }
    pcp_work_clear(W);
    T->computed = 1;
    return NS_OK;
}

/* ------------------------------------------------------------ counting */

void torsion_map_init(torsion_map_t M)
{
    memset(M, 0, sizeof(torsion_map_struct));
    fmpz_init(M->image_order);
    fmpz_init(M->t_image_order);
    fmpz_init(M->fixed_elements);
    fmpz_init(M->fixed_classes);
    fmpz_init(M->reidemeister);
}

void torsion_map_clear(torsion_map_t M)
{
    fmpz_clear(M->image_order);
    fmpz_clear(M->t_image_order);
    fmpz_clear(M->fixed_elements);
    fmpz_clear(M->fixed_classes);
    fmpz_clear(M->reidemeister);
    memset(M, 0, sizeof(torsion_map_struct));
}

static slong uf_find(slong *p, slong x)
{
    while (p[x] != x) {
        p[x] = p[p[x]];
        x = p[x];
    }
    return x;
}

/* Returns 1 when the two classes were distinct. */
static int uf_union(slong *p, slong a, slong b)
{
    a = uf_find(p, a);
    b = uf_find(p, b);
    if (a == b)
        return 0;
    if (a < b)
        p[b] = a;
    else
        p[a] = b;
    return 1;
}

/* Multiplication tables of a finite Gc, so that counting needs no
 * collection per element.  Elements are numbered in mixed radix,
 * idx = sum x_p * |G_(p+1)| with G_k = <a_k, ..., a_(n-1)>.  Since
 * x = (a_0^x_0 ... a_(k-1)^x_(k-1)) t with t in G_k, and t a_k lies in G_k,
 * the product x a_k^(2^b) changes only the part of idx below |G_k|: one
 * table U[k][b] on G_k per generator and power of two, built from a single
 * collection per element of G_k (b = 0) and by composing (b > 0). */
typedef struct {
    slong n;
    slong *m;      /* relative orders */
    slong *gk;     /* n + 1: |G_k|, gk[n] = 1 */
    slong *nb;     /* tables per generator */
    int32_t ***U;  /* U[k][b][t] = index in G_k of t a_k^(2^b) */
} ftab;

static void ftab_clear(ftab *F)
{
    for (slong k = 0; k < F->n; k++) {
        for (slong b = 0; b < F->nb[k]; b++)
            flint_free(F->U[k][b]);
        flint_free(F->U[k]);
    }
    flint_free(F->U);
    flint_free(F->nb);
    flint_free(F->gk);
    flint_free(F->m);
}

/* Returns 1 when cancelled. */
static int ftab_init(ftab *F, pcp_work_t W, const ns_progress_t *progress)
{
    const pcp_struct *P = W->P;
    slong n = P->n;
    F->n = n;
    F->m = flint_malloc(FLINT_MAX(n, 1) * sizeof(slong));
    F->gk = flint_malloc((n + 1) * sizeof(slong));
    F->nb = flint_calloc(FLINT_MAX(n, 1), sizeof(slong));
    F->U = flint_calloc(FLINT_MAX(n, 1), sizeof(int32_t **));
    for (slong p = 0; p < n; p++)
        F->m[p] = fmpz_get_si(P->relorder + p);
    F->gk[n] = 1;
    for (slong p = n - 1; p >= 0; p--)
        F->gk[p] = F->gk[p + 1] * F->m[p];
    fmpz *x = _fmpz_vec_init(FLINT_MAX(n, 1));
    fmpz_t one;
    fmpz_init_set_ui(one, 1);
    int cancelled = 0;
    for (slong k = n - 1; k >= 0 && !cancelled; k--) {
        slong g = F->gk[k], nb = 1;
        while (((slong)1 << nb) < F->m[k])
            nb++;
        F->nb[k] = nb;
        F->U[k] = flint_malloc(nb * sizeof(int32_t *));
        for (slong b = 0; b < nb; b++)
            F->U[k][b] = flint_malloc(g * sizeof(int32_t));
        for (slong t = 0; t < g; t++) {
            if ((t & 1023) == 0 && ns_progress_report(progress, "multiplication tables", -1.0)) {
                cancelled = 1;
                for (slong kk = k - 1; kk >= 0; kk--)
                    F->nb[kk] = 0;
                break;
            }
            _fmpz_vec_zero(x, n);
            for (slong p = n - 1, r = t; p >= k; p--) {
                fmpz_set_si(x + p, r % F->m[p]);
                r /= F->m[p];
            }
            pcp_collect_gen(W, x, k, one);
            if (W->overflow) {
                cancelled = 1;
                for (slong kk = k - 1; kk >= 0; kk--)
                    F->nb[kk] = 0;
                break;
            }
            slong idx = 0;
            for (slong p = k; p < n; p++)
                idx = idx * F->m[p] + fmpz_get_si(x + p);
            F->U[k][0][t] = (int32_t)idx;
        }
        for (slong b = 1; b < nb && !cancelled; b++)
            for (slong t = 0; t < g; t++)
                F->U[k][b][t] = F->U[k][b - 1][F->U[k][b - 1][t]];
    }
    fmpz_clear(one);
    _fmpz_vec_clear(x, FLINT_MAX(n, 1));
    return cancelled;
}

/* x a_k^e, 0 <= e < m_k */
static slong ftab_mul_pow(const ftab *F, slong x, slong k, slong e)
{
    slong g = F->gk[k], hi = (x / g) * g, t = x % g;
    for (slong b = 0; e; b++, e >>= 1)
        if (e & 1)
            t = F->U[k][b][t];
    return hi + t;
}

/* x w, w given by its normal-form index */
static slong ftab_mul(const ftab *F, slong x, slong w)
{
    for (slong p = 0; p < F->n; p++) {
        slong e = (w / F->gk[p + 1]) % F->m[p];
        if (e)
            x = ftab_mul_pow(F, x, p, e);
    }
    return x;
}

static slong fin_index(const fmpz *x, const slong *m, slong n)
{
    slong idx = 0;
    for (slong p = 0; p < n; p++)
        idx = idx * m[p] + fmpz_get_si(x + p);
    return idx;
}

static int poll(const ns_progress_t *progress, const char *stage, slong i, slong total)
{
    if ((i & 4095) != 0)
        return 0;
    return ns_progress_report(progress, stage, (double)i / (double)FLINT_MAX(total, 1));
}

/* Finite Gc: everything by direct enumeration over the tables. */
static ns_status count_finite(torsion_map_t M, const nq_t Q, const endo_t E, pcp_work_t W,
                              slong N, const ns_progress_t *progress, nserr_t err)
{
    const pcp_struct *P = Q->pcp;
    slong n = P->n, g1 = Q->class_reached ? Q->layers[0].count : 0;
    ftab F;
    if (ftab_init(&F, W, progress)) {
        ftab_clear(&F);
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    }
    slong *uf = flint_malloc(N * sizeof(slong));
    fmpz *y = _fmpz_vec_init(FLINT_MAX(n, 1));
    /* the generators a_k of weight 1 generate Gc; their indices, those of
     * their inverses, of alpha(a_k)^-1 and of alpha(a_p) for every p */
    slong *zi = flint_malloc(FLINT_MAX(g1, 1) * sizeof(slong));
    slong *zinv = flint_malloc(FLINT_MAX(g1, 1) * sizeof(slong));
    slong *winv = flint_malloc(FLINT_MAX(g1, 1) * sizeof(slong));
    slong *aimg = flint_malloc(FLINT_MAX(n, 1) * sizeof(slong));
    ns_status st = NS_OK;
    for (slong k = 0; k < g1; k++) {
        zi[k] = F.gk[k + 1];
        _fmpz_vec_zero(y, n);
        fmpz_one(y + k);
        pcp_elt_inv(W, y, y);
        zinv[k] = fin_index(y, F.m, n);
        pcp_elt_inv(W, y, E->pc_img + k * n);
        winv[k] = fin_index(y, F.m, n);
    }
    for (slong p = 0; p < n; p++)
        aimg[p] = fin_index(E->pc_img + p * n, F.m, n);

    /* twisted classes: orbits of x -> z x alpha(z)^-1, z in a generating set */
    for (slong i = 0; i < N; i++)
        uf[i] = i;
    slong classes = N;
    for (slong i = 0; i < N; i++) {
        if (poll(progress, "twisted classes", i, N)) {
            st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
            break;
        }
        for (slong k = 0; k < g1; k++)
            classes -= uf_union(uf, i, ftab_mul(&F, ftab_mul(&F, zi[k], i), winv[k]));
    }
    if (st == NS_OK) {
        fmpz_set_si(M->reidemeister, classes);
        M->reid_defined = 1;
        M->reid_method = "counted: the twisted conjugacy classes of the finite group Gc";
    }

    /* fixed elements: alpha(x) = prod alpha(a_p)^(x_p), kept per prefix:
     * pre[p] = alpha(a_0^x_0 ... a_(p-1)^x_(p-1)) */
    if (st == NS_OK) {
        slong *x = flint_calloc(FLINT_MAX(n, 1), sizeof(slong));
        slong *pre = flint_calloc(n + 1, sizeof(slong));
        slong cnt = 0;
        for (slong i = 0; i < N; i++) {
            if (poll(progress, "fixed points", i, N)) {
                st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
                break;
            }
            if (i > 0) {
                /* the odometer: the last position that moved, deeper ones reset */
                slong p = n - 1;
                while (x[p] + 1 == F.m[p]) {
                    x[p] = 0;
                    p--;
                }
                x[p]++;
                pre[p + 1] = ftab_mul(&F, pre[p + 1], aimg[p]);
                for (slong q = p + 1; q < n; q++)
                    pre[q + 1] = pre[q];
            }
            if (pre[n] == i)
                cnt++;
        }
        flint_free(x);
        flint_free(pre);
        if (st == NS_OK) {
            fmpz_set_si(M->fixed_elements, cnt);
            M->fixed_defined = 1;
        }
    }

    /* alpha-fixed conjugacy classes, for automorphisms */
    if (st == NS_OK && M->finite_injective) {
        for (slong i = 0; i < N; i++)
            uf[i] = i;
        for (slong i = 0; i < N; i++) {
            if (poll(progress, "conjugacy classes", i, N)) {
                st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
                break;
            }
            for (slong k = 0; k < g1; k++)
                uf_union(uf, i, ftab_mul(&F, ftab_mul(&F, zinv[k], i), zi[k]));
        }
        slong fixed = 0;
        for (slong i = 0; i < N && st == NS_OK; i++) {
            if (uf_find(uf, i) != i)
                continue;
            slong a = 0; /* alpha(x_i) */
            for (slong p = 0; p < n; p++) {
                slong e = (i / F.gk[p + 1]) % F.m[p];
                for (slong t = 0; t < e; t++)
                    a = ftab_mul(&F, a, aimg[p]);
            }
            if (uf_find(uf, a) == i)
                fixed++;
        }
        if (st == NS_OK) {
            fmpz_set_si(M->fixed_classes, fixed);
            M->fixed_classes_defined = 1;
        }
    }
    _fmpz_vec_clear(y, FLINT_MAX(n, 1));
    flint_free(zi);
    flint_free(zinv);
    flint_free(winv);
    flint_free(aimg);
    flint_free(uf);
    ftab_clear(&F);
    return st;
}

/* R(phi) for phi(z) = g alpha(z) g^-1 on T: orbits of t -> z t phi(z)^-1.
 * tv holds the |T| elements of T by index. */
static slong count_on_t(const torsion_t T, const nq_t Q, const endo_t E, pcp_work_t W,
                        const fmpz *g, const fmpz *tv, slong NT, slong *uf)
{
    slong n = Q->pcp->n, s = T->sub->len;
    fmpz *ginv = _fmpz_vec_init(n), *w = _fmpz_vec_init(FLINT_MAX(s, 1) * n);
    fmpz *y = _fmpz_vec_init(n), *c = _fmpz_vec_init(FLINT_MAX(s, 1));
    pcp_elt_inv(W, ginv, g);
    for (slong k = 0; k < s; k++) {
        /* w_k = phi(u_k)^-1 = g alpha(u_k)^-1 g^-1 */
        endo_apply(E, Q, y, T->sub->elt + k * n, W);
        pcp_elt_inv(W, y, y);
        pcp_elt_mul(W, y, g, y);
        pcp_elt_mul(W, w + k * n, y, ginv);
    }
    for (slong i = 0; i < NT; i++)
        uf[i] = i;
    slong classes = NT;
    for (slong i = 0; i < NT; i++)
        for (slong k = 0; k < s; k++) {
            pcp_elt_mul(W, y, T->sub->elt + k * n, tv + i * n);
            pcp_elt_mul(W, y, y, w + k * n);
            slong j = tsub_index(T->sub, W, y, c);
            if (j >= 0) /* -1 only after a cancel, which the caller reports */
                classes -= uf_union(uf, i, j);
        }
    _fmpz_vec_clear(ginv, n);
    _fmpz_vec_clear(w, FLINT_MAX(s, 1) * n);
    _fmpz_vec_clear(y, n);
    _fmpz_vec_clear(c, FLINT_MAX(s, 1));
    return classes;
}

/* One factor A_w = I_w / I_(w+1) of the isolator series of Gc/T, where
 * I_w, the preimage of the torsion of G/gamma_w, is generated by lifts f_i
 * of F = tors(G/gamma_w) and by gamma_w.  With N = |F|, g -> phi(g^N) (the
 * free coordinates of the layer-w part) is N times a homomorphism
 * I_w -> Q^r with kernel I_(w+1) (Schur's transfer, as in torsion_step), so
 * A_w is the lattice spanned by phi(f_i^N) and N e_l.  b holds a basis of
 * it as elements of Gc, box the diagonal of the Hermite form of I - C,
 * C the matrix of alpha on that basis (rows: alpha(b_i) = sum C_ik b_k). */
typedef struct {
    slong r;
    fmpz *b;   /* r x n */
    fmpz *box; /* r */
} iso_factor;

/* Returns 0, or 1 when a coordinate did not come out integral (a broken
 * invariant). */
static int iso_factor_compute(iso_factor *A, const tsub_t F, const layer_struct *L,
                              const endo_t E, const nq_t Q, pcp_work_t W)
{
    slong n = Q->pcp->n, s = F->len, r = L->free_rank, cnt = L->count;
    A->r = r;
    A->b = _fmpz_vec_init(FLINT_MAX(r, 1) * n);
    A->box = _fmpz_vec_init(FLINT_MAX(r, 1));
    if (r == 0)
        return 0;
    fmpz_t N;
    fmpz_init(N);
    tsub_order(N, F);
    fmpz *x = _fmpz_vec_init(n), *y = _fmpz_vec_init(n), *v = _fmpz_vec_init(FLINT_MAX(r, 1));
    fmpz *gens = _fmpz_vec_init((s + r) * n);
    fmpz_mat_t V, H, U, C;
    fmpz_mat_init(V, s + r, r);
    fmpz_mat_init(H, s + r, r);
    fmpz_mat_init(U, s + r, s + r);
    fmpz_mat_init(C, r, r);
    /* phi(g^N) for g = gens[t] */
#define PHI_POW(vout, g)                                                                         \
    do {                                                                                         \
        pcp_elt_pow(W, y, (g), N);                                                               \
        for (slong a_ = 0; a_ < r; a_++) {                                                       \
            fmpz_zero((vout) + a_);                                                              \
            for (slong k_ = 0; k_ < cnt; k_++)                                                   \
                fmpz_addmul((vout) + a_, fmpz_mat_entry(L->phi, a_, k_), y + L->start + k_);     \
        }                                                                                        \
    } while (0)
    for (slong i = 0; i < s; i++) {
        _fmpz_vec_set(gens + i * n, F->elt + i * n, n);
        PHI_POW(v, gens + i * n);
        for (slong a = 0; a < r; a++)
            fmpz_set(fmpz_mat_entry(V, i, a), v + a);
    }
    for (slong l = 0; l < r; l++) {
        _fmpz_vec_zero(x, n);
        for (slong k = 0; k < cnt; k++)
            if (!fmpz_is_zero(fmpz_mat_entry(L->sigma, k, l)))
                pcp_collect_gen(W, x, L->start + k, fmpz_mat_entry(L->sigma, k, l));
        _fmpz_vec_set(gens + (s + l) * n, x, n);
        fmpz_set(fmpz_mat_entry(V, s + l, l), N);
    }
    fmpz_mat_hnf_transform(H, U, V);
    /* the first r rows of H are the basis (V has rank r) */
    for (slong i = 0; i < r; i++) {
        fmpz *bi = A->b + i * n;
        _fmpz_vec_zero(bi, n);
        for (slong t = 0; t < s + r; t++) {
            if (fmpz_is_zero(fmpz_mat_entry(U, i, t)))
                continue;
            pcp_elt_pow(W, x, gens + t * n, fmpz_mat_entry(U, i, t));
            pcp_elt_mul(W, bi, bi, x);
        }
    }
    int bad = 0;
    fmpz_t q;
    fmpz_init(q);
    for (slong i = 0; i < r && !bad; i++) {
        endo_apply(E, Q, x, A->b + i * n, W);
        PHI_POW(v, x);
        /* solve c H[0..r) = v: H is upper triangular */
        for (slong k = 0; k < r && !bad; k++) {
            if (!fmpz_divisible(v + k, fmpz_mat_entry(H, k, k))) {
                bad = 1;
                break;
            }
            fmpz_divexact(q, v + k, fmpz_mat_entry(H, k, k));
            fmpz_set(fmpz_mat_entry(C, i, k), q);
            for (slong l = k; l < r; l++)
                fmpz_submul(v + l, q, fmpz_mat_entry(H, k, l));
        }
    }
#undef PHI_POW
    if (!bad) {
        fmpz_mat_t D, DH;
        fmpz_mat_init(D, r, r);
        fmpz_mat_init(DH, r, r);
        fmpz_mat_one(D);
        fmpz_mat_sub(D, D, C);
        fmpz_mat_hnf(DH, D);
        for (slong i = 0; i < r; i++)
            fmpz_set(A->box + i, fmpz_mat_entry(DH, i, i));
        fmpz_mat_clear(D);
        fmpz_mat_clear(DH);
    }
    fmpz_clear(q);
    fmpz_mat_clear(V);
    fmpz_mat_clear(H);
    fmpz_mat_clear(U);
    fmpz_mat_clear(C);
    _fmpz_vec_clear(gens, (s + r) * n);
    _fmpz_vec_clear(x, n);
    _fmpz_vec_clear(y, n);
    _fmpz_vec_clear(v, FLINT_MAX(r, 1));
    fmpz_clear(N);
    return bad;
}

/* Infinite Gc, T != 1, finite R on Gc/T:
 * R(alpha) = sum over the twisted classes [q] of Gc/T of R(tau_g alpha|T),
 * g a lift of q (doc/torsion.md).  The classes of Gc/T are the products
 * a_c ... a_1, a_w running over the box of coset representatives of
 * A_w / (1 - alpha) A_w on the isolator series (iso_factor). */
static ns_status count_extension(torsion_map_t M, const torsion_t T, const nq_t Q,
                                 const layer_struct *const *layers, const endo_t E,
                                 pcp_work_t W, const ns_progress_t *progress, nserr_t err)
{
    slong n = Q->pcp->n, c = Q->class_reached;
    iso_factor *F = flint_calloc(FLINT_MAX(c, 1), sizeof(iso_factor));
    ns_status st = NS_OK;
    fmpz_t RQ, tot;
    fmpz_init(RQ);
    fmpz_init(tot);
    fmpz_one(RQ);
    for (slong j = 0; j < c && st == NS_OK; j++) {
        if (iso_factor_compute(F + j, T->steps + j, layers[j], E, Q, W))
            st = nserr_set(err, NS_ERR_INPUT, 0, 0,
                           "internal error: layer %ld of the isolator series of Gc/T", (long)j + 1);
        for (slong i = 0; i < F[j].r; i++)
            fmpz_mul(RQ, RQ, F[j].box + i);
    }
    fmpz_abs(RQ, RQ);
    fmpz_mul(tot, RQ, T->order);
    if (st == NS_OK && fmpz_cmp_si(tot, TORSION_MAX_COUNT) > 0) {
        char *a = fmpz_get_str(NULL, 10, RQ), *b = fmpz_get_str(NULL, 10, T->order);
        st = nserr_set(err, NS_ERR_LIMIT, 0, 0,
                       "Reidemeister number not counted: %s twisted classes of Gc/T times "
                       "|T| = %s exceeds the counting limit TORSION_MAX_COUNT = %d",
                       a, b, TORSION_MAX_COUNT);
        flint_free(a);
        flint_free(b);
    }
    if (st == NS_OK) {
        slong NT = fmpz_get_si(T->order), nq = fmpz_get_si(RQ);
        fmpz *tv = _fmpz_vec_init(NT * n);
        for (slong i = 0; i < NT; i++)
            tsub_element(tv + i * n, T->sub, W, i);
        slong *uf = flint_malloc(NT * sizeof(slong));
        fmpz *g = _fmpz_vec_init(n), *x = _fmpz_vec_init(n), *y = _fmpz_vec_init(n);
        fmpz_t sum, e;
        fmpz_init(sum);
        fmpz_init(e);
        for (slong q = 0; q < nq; q++) {
            if (ns_progress_report(progress, "twisted classes", (double)q / (double)nq)) {
                st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
                break;
            }
            /* decode q into box coordinates, factor by factor; g = a_c ... a_1 */
            slong rest = q;
            _fmpz_vec_zero(g, n);
            for (slong j = 0; j < c; j++) {
                _fmpz_vec_zero(x, n);
                for (slong i = 0; i < F[j].r; i++) {
                    slong h = fmpz_get_si(F[j].box + i);
                    fmpz_set_si(e, rest % h);
                    rest /= h;
                    if (fmpz_is_zero(e))
                        continue;
                    pcp_elt_pow(W, y, F[j].b + i * n, e);
                    pcp_elt_mul(W, x, x, y);
                }
                pcp_elt_mul(W, g, x, g);
            }
            fmpz_add_si(sum, sum, count_on_t(T, Q, E, W, g, tv, NT, uf));
            if (W->overflow) {
                st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
                break;
            }
        }
        if (st == NS_OK) {
            fmpz_set(M->reidemeister, sum);
            M->reid_defined = 1;
            M->reid_method = "counted: the sum over the twisted classes of Gc/T of the twisted "
                             "classes on T (doc/torsion.md)";
        }
        fmpz_clear(sum);
        fmpz_clear(e);
        _fmpz_vec_clear(tv, NT * n);
        _fmpz_vec_clear(g, n);
        _fmpz_vec_clear(x, n);
        _fmpz_vec_clear(y, n);
        flint_free(uf);
    }
    for (slong j = 0; j < c; j++) {
        _fmpz_vec_clear(F[j].b, FLINT_MAX(F[j].r, 1) * n);
        _fmpz_vec_clear(F[j].box, FLINT_MAX(F[j].r, 1));
    }
    flint_free(F);
    fmpz_clear(RQ);
    fmpz_clear(tot);
    return st;
}

ns_status torsion_map_compute(torsion_map_t M, const torsion_t T, const nq_t Q,
                              const layer_struct *const *layers,
                              const fmpz_mat_struct *const *mats,
                              const endo_t E, int reid_infinite, const ns_progress_t *progress,
                              nserr_t err)
{
    torsion_map_clear(M);
    torsion_map_init(M);
    const pcp_struct *P = Q->pcp;
    slong n = P->n, c = Q->class_reached, s = T->sub->len;
    pcp_work_t W;
    pcp_work_init(W, P);
    W->progress = progress;
    if (endo_ensure_pc_images(E, Q, W)) {
        pcp_work_clear(W);
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    }
    ns_status st = NS_OK;

    /* alpha on T: one-to-one iff alpha(T) is as large as T */
    tsub_t I;
    tsub_init(I, n);
    fmpz *im = _fmpz_vec_init(FLINT_MAX(s, 1) * n);
    for (slong i = 0; i < s; i++)
        endo_apply(E, Q, im + i * n, T->sub->elt + i * n, W);
    tsub_add(I, W, im, s, NULL, 0, n);
    if (W->overflow) {
        tsub_clear(I);
        _fmpz_vec_clear(im, FLINT_MAX(s, 1) * n);
        pcp_work_clear(W);
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    }
    fmpz_t o;
    fmpz_init(o);
    tsub_order(o, I);
    M->injective_on_t = fmpz_equal(o, T->order);
    fmpz_set(M->t_image_order, o);
    if (T->finite) {
        M->finite_injective = M->injective_on_t;
        fmpz_set(M->image_order, o);
    }
    fmpz_clear(o);
    tsub_clear(I);
    _fmpz_vec_clear(im, FLINT_MAX(s, 1) * n);

    if (T->finite) {
        if (fmpz_cmp_si(T->order, TORSION_MAX_COUNT) > 0) {
            char *a = fmpz_get_str(NULL, 10, T->order);
            st = nserr_set(err, NS_ERR_LIMIT, 0, 0,
                           "Reidemeister number and fixed points not counted: |Gc| = %s "
                           "exceeds the counting limit TORSION_MAX_COUNT = %d",
                           a, TORSION_MAX_COUNT);
            flint_free(a);
        } else
            st = count_finite(M, Q, E, W, fmpz_get_si(T->order), progress, err);
    } else if (reid_infinite) {
        M->reid_method = "infinite on Gc/T (some det(I - M_j) = 0), hence on Gc";
    } else {
        fmpz_t L;
        fmpz_init(L);
        fmpz_one(L);
        for (slong j = 0; j < c; j++) {
            slong r = layers[j]->free_rank;
            fmpz_mat_t B;
            fmpz_mat_init(B, r, r);
            fmpz_mat_one(B);
            fmpz_mat_sub(B, B, mats[j]);
            fmpz_t d;
            fmpz_init(d);
            fmpz_mat_det(d, B);
            fmpz_mul(L, L, d);
            fmpz_clear(d);
            fmpz_mat_clear(B);
        }
        fmpz_abs(L, L);
        if (fmpz_is_one(T->order)) {
            fmpz_set(M->reidemeister, L);
            M->reid_defined = 1;
            M->reid_method = "Gc is torsion-free: R = |L| (Roman'kov 2011; Dekimpe-Goncalves "
                             "2014)";
        } else
            st = count_extension(M, T, Q, layers, E, W, progress, err);
        fmpz_clear(L);
    }
    pcp_work_clear(W);
    return st;
}
