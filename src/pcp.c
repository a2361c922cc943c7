/* pcp.c — nilpotent presentations and collection from the left.
 * See pcp.h for the method and its sources. */
#include <stdlib.h>
#include <string.h>
#include "pcp.h"
#include "strbuf.h"

/* ---------------------------------------------------------------- words */

void pcw_init(pcw_t w)
{
    w->len = w->alloc = 0;
    w->gen = NULL;
    w->exp = NULL;
}

void pcw_clear(pcw_t w)
{
    if (w->alloc) {
        _fmpz_vec_clear(w->exp, w->alloc);
        flint_free(w->gen);
    }
    pcw_init(w);
}

static void pcw_fit(pcw_t w, slong len)
{
    if (len <= w->alloc)
        return;
    slong na = FLINT_MAX(len, 2 * w->alloc);
    w->gen = flint_realloc(w->gen, na * sizeof(slong));
    w->exp = flint_realloc(w->exp, na * sizeof(fmpz));
    for (slong k = w->alloc; k < na; k++)
        fmpz_init(w->exp + k);
    w->alloc = na;
}

void pcw_zero(pcw_t w)
{
    for (slong k = 0; k < w->len; k++)
        fmpz_zero(w->exp + k);
    w->len = 0;
}

void pcw_set(pcw_t dst, const pcw_t src)
{
    if (dst == src)
        return;
    pcw_zero(dst);
    pcw_fit(dst, src->len);
    for (slong k = 0; k < src->len; k++) {
        dst->gen[k] = src->gen[k];
        fmpz_set(dst->exp + k, src->exp + k);
    }
    dst->len = src->len;
}

void pcw_push(pcw_t w, slong g, const fmpz_t e)
{
    pcw_fit(w, w->len + 1);
    w->gen[w->len] = g;
    fmpz_set(w->exp + w->len, e);
    w->len++;
}

void pcw_set_vec(pcw_t w, const fmpz *u, slong n)
{
    pcw_zero(w);
    for (slong k = 0; k < n; k++)
        if (!fmpz_is_zero(u + k))
            pcw_push(w, k, u + k);
}

void pcw_get_vec(fmpz *u, slong n, const pcw_t w)
{
    _fmpz_vec_zero(u, n);
    for (slong k = 0; k < w->len; k++)
        fmpz_set(u + w->gen[k], w->exp + k);
}

int pcw_is_gen(const pcw_t w, slong g)
{
    return w->len == 1 && w->gen[0] == g && fmpz_is_one(w->exp);
}

/* ------------------------------------------------------- presentations */

static void pcp_free_tables(pcp_t P)
{
    slong nslots = P->ncore * (P->ncore - 1) / 2;
    for (slong i = 0; i < P->n; i++) {
        pcw_clear(P->pow + i);
        pcw_clear(P->powinv + i);
    }
    for (slong s = 0; s < nslots; s++) {
        pcw_clear(P->conj + s);
        pcw_clear(P->conjinv + s);
        pcw_clear(P->conjm + s);
        pcw_clear(P->conjminv + s);
    }
    if (P->n) {
        _fmpz_vec_clear(P->relorder, P->n);
        flint_free(P->weight);
        flint_free(P->pow);
        flint_free(P->powinv);
        flint_free(P->commute_from);
        for (slong i = 0; i < P->n; i++)
            pcp_def_clear(P->def + i);
        flint_free(P->def);
    }
    if (nslots) {
        flint_free(P->conj);
        flint_free(P->conjinv);
        flint_free(P->conjm);
        flint_free(P->conjminv);
        flint_free(P->trivial);
    }
}

void pcp_def_clear(pcp_def_struct *d)
{
    if (d->len > 0) {
        flint_free(d->ta);
        flint_free(d->tb);
        _fmpz_vec_clear(d->exp, d->len);
    }
    memset(d, 0, sizeof(pcp_def_struct));
}

void pcp_def_set_prod(pcp_def_struct *d, slong len, const slong *ta, const slong *tb,
                      const fmpz *exp)
{
    pcp_def_clear(d);
    d->kind = PCP_DEF_PROD;
    d->len = len;
    if (len == 0)
        return;
    d->ta = flint_malloc(len * sizeof(slong));
    d->tb = flint_malloc(len * sizeof(slong));
    d->exp = _fmpz_vec_init(len);
    memcpy(d->ta, ta, len * sizeof(slong));
    memcpy(d->tb, tb, len * sizeof(slong));
    _fmpz_vec_set(d->exp, exp, len);
}

void pcp_def_set(pcp_def_struct *dst, const pcp_def_struct *src)
{
    if (src->kind == PCP_DEF_PROD) {
        pcp_def_set_prod(dst, src->len, src->ta, src->tb, src->exp);
        return;
    }
    pcp_def_clear(dst);
    *dst = *src;
}

void pcp_init(pcp_t P)
{
    memset(P, 0, sizeof(pcp_struct));
}

void pcp_clear(pcp_t P)
{
    pcp_free_tables(P);
    pcp_init(P);
}

void pcp_swap(pcp_t a, pcp_t b)
{
    pcp_struct t = *a;
    *a = *b;
    *b = t;
}

void pcp_reset(pcp_t P, slong n, const slong *weight, slong maxweight)
{
    pcp_free_tables(P);
    pcp_init(P);
    P->n = n;
    P->maxweight = maxweight;
    if (n == 0)
        return;
    P->weight = flint_malloc(n * sizeof(slong));
    memcpy(P->weight, weight, n * sizeof(slong));
    P->relorder = _fmpz_vec_init(n);
    P->pow = flint_malloc(n * sizeof(pcw_struct));
    P->powinv = flint_malloc(n * sizeof(pcw_struct));
    P->commute_from = flint_malloc(n * sizeof(slong));
    P->def = flint_calloc(n, sizeof(pcp_def_struct));
    for (slong i = 0; i < n; i++) {
        pcw_init(P->pow + i);
        pcw_init(P->powinv + i);
    }
    P->ncore = n;
    for (slong i = 0; i < n; i++)
        if (weight[i] >= maxweight) {
            P->ncore = i;
            break;
        }
    /* Weights are sorted, so "commutes with a_i" is a suffix of indices. */
    for (slong i = 0; i < n; i++) {
        slong lo = i + 1, hi = n;
        while (lo < hi) {
            slong mid = lo + (hi - lo) / 2;
            if (weight[mid] + weight[i] > maxweight)
                hi = mid;
            else
                lo = mid + 1;
        }
        P->commute_from[i] = lo;
    }
    slong nslots = P->ncore * (P->ncore - 1) / 2;
    if (nslots) {
        P->conj = flint_malloc(nslots * sizeof(pcw_struct));
        P->conjinv = flint_malloc(nslots * sizeof(pcw_struct));
        P->conjm = flint_malloc(nslots * sizeof(pcw_struct));
        P->conjminv = flint_malloc(nslots * sizeof(pcw_struct));
        P->trivial = flint_malloc(nslots);
        memset(P->trivial, 1, nslots);
        for (slong s = 0; s < nslots; s++) {
            pcw_init(P->conj + s);
            pcw_init(P->conjinv + s);
            pcw_init(P->conjm + s);
            pcw_init(P->conjminv + s);
        }
    }
}

/* dst := the part of w on generators below m. */
static void pcw_set_prefix(pcw_t dst, const pcw_struct *w, slong m)
{
    pcw_zero(dst);
    for (slong t = 0; t < w->len && w->gen[t] < m; t++)
        pcw_push(dst, w->gen[t], w->exp + t);
}

void pcp_set_prefix(pcp_t P, const pcp_t src, slong maxweight)
{
    slong m = 0;
    while (m < src->n && src->weight[m] <= maxweight)
        m++;
    pcp_reset(P, m, src->weight, maxweight);
    P->torsion_free = 1;
    for (slong i = 0; i < m; i++) {
        fmpz_set(P->relorder + i, src->relorder + i);
        pcp_def_set(P->def + i, src->def + i);
        if (fmpz_is_zero(src->relorder + i))
            continue;
        P->torsion_free = 0;
        pcw_set_prefix(P->pow + i, src->pow + i, m);
        pcw_set_prefix(P->powinv + i, src->powinv + i, m);
    }
    /* pairs that commute in src commute here; a pair whose words reduce to
     * a_k commutes modulo the dropped generators */
    for (slong k = 1; k < P->ncore; k++)
        for (slong i = 0; i < k; i++) {
            slong s = pcp_slot(k, i);
            if (k >= src->ncore || src->trivial[s])
                continue;
            pcw_set_prefix(P->conj + s, src->conj + s, m);
            if (pcw_is_gen(P->conj + s, k)) {
                pcw_zero(P->conj + s);
                continue;
            }
            P->trivial[s] = 0;
            pcw_set_prefix(P->conjinv + s, src->conjinv + s, m);
            pcw_set_prefix(P->conjm + s, src->conjm + s, m);
            pcw_set_prefix(P->conjminv + s, src->conjminv + s, m);
        }
}

void pcp_set_conj(pcp_t P, slong k, slong i, const pcw_t w)
{
    if (pcw_is_gen(w, k))
        return;
    FLINT_ASSERT(i < k && k < P->ncore);
    slong s = pcp_slot(k, i);
    pcw_set(P->conj + s, w);
    P->trivial[s] = 0;
}

void pcp_set_power(pcp_t P, slong i, const fmpz_t m, const pcw_t w)
{
    fmpz_set(P->relorder + i, m);
    pcw_set(P->pow + i, w);
}

void pcp_work_init(pcp_work_t W, const pcp_t P)
{
    W->P = P;
    W->plain = 0;
    W->steps = 0;
    W->overflow = 0;
    W->progress = NULL;
}

void pcp_work_clear(pcp_work_t W)
{
    (void)W;
}

/* ----------------------------------------------------------- collection */

static int work_tick(pcp_work_t W)
{
    W->steps++;
    if ((W->steps & 0xfff) == 0 && W->progress &&
        ns_progress_report(W->progress, NULL, -1.0))
        W->overflow = 1;
    return W->overflow;
}

/* Moves the nonzero entries u_k, i < k < end, into a word and zeroes them.
 * Callers pass end = commute_from[i]: the entries from there on commute
 * with a_i and with every generator of weight >= weight(a_i) (their
 * weights add up to more than maxweight), so they may stay where they are
 * while a_i and anything beyond it is collected in front of them. */
static void take_tail(pcw_t T, fmpz *u, slong i, slong end)
{
    pcw_zero(T);
    for (slong k = i + 1; k < end; k++)
        if (!fmpz_is_zero(u + k)) {
            pcw_push(T, k, u + k);
            fmpz_zero(u + k);
        }
}

/* Exponents up to this size are handled by plain collection; larger ones
 * by the polynomial route when the presentation allows it. */
#define PCP_SMALL_BITS 4

/* u := u * w^q for a word w, its inverse winv and an integer q. */
static void collect_word_pow(pcp_work_t W, fmpz *u, const pcw_t w, const pcw_t winv,
                             const fmpz_t q)
{
    if (fmpz_is_zero(q) || w->len == 0)
        return;
    if (fmpz_is_one(q)) {
        pcp_collect_word(W, u, w);
        return;
    }
    if (fmpz_equal_si(q, -1)) {
        pcp_collect_word(W, u, winv);
        return;
    }
    if (w->len == 1 && fmpz_is_zero(W->P->relorder + w->gen[0])) {
        /* (a_g^x)^q = a_g^(x q), and for infinite a_g nothing carries, so
         * this is exactly what collecting the power's normal word does */
        fmpz_t xq;
        fmpz_init(xq);
        fmpz_mul(xq, w->exp, q);
        pcp_collect_gen(W, u, w->gen[0], xq);
        fmpz_clear(xq);
        return;
    }
    slong n = W->P->n, g0 = w->gen[0];
    if (w->gen[w->len > 1 ? 1 : 0] >= W->P->ncore) {
        /* (a_g0^x z)^q = a_g0^(x q) z^q for z central, in any group (as
         * in pcp_elt_pow), without the dense vectors */
        fmpz_t xq;
        fmpz_init(xq);
        for (slong k = 0; k < w->len && !W->overflow; k++) {
            fmpz_mul(xq, w->exp + k, q);
            pcp_collect_gen(W, u, w->gen[k], xq);
        }
        fmpz_clear(xq);
        return;
    }
    fmpz *x = _fmpz_vec_init(n);
    pcw_t t;
    pcw_init(t);
    if (fmpz_bits(q) <= PCP_SMALL_BITS) {
        /* w^q for small q by collecting w (or w^-1) |q| times into 1:
         * cheaper than squaring, and everything stays in generators >=
         * g0, so only that part of x is read and zeroed */
        slong r = fmpz_get_si(q);
        const pcw_struct *v = r > 0 ? w : winv;
        for (r = FLINT_ABS(r); r > 0 && !W->overflow; r--)
            pcp_collect_word(W, x, v);
        pcw_zero(t);
        for (slong k = g0; k < n; k++)
            if (!fmpz_is_zero(x + k)) {
                pcw_push(t, k, x + k);
                fmpz_zero(x + k);
            }
        flint_free(x); /* every entry is zero again */
    } else {
        pcw_get_vec(x, n, w);
        pcp_elt_pow(W, x, x, q);
        pcw_set_vec(t, x, n);
        _fmpz_vec_clear(x, n);
    }
    pcp_collect_word(W, u, t);
    pcw_clear(t);
}

/* u_i += e, carrying through the power relation of a finite a_i.  Entries
 * of u beyond i are put back after the carried power word. */
static void add_power(pcp_work_t W, fmpz *u, slong i, const fmpz_t e)
{
    const pcp_struct *P = W->P;
    fmpz_add(u + i, u + i, e);
    const fmpz *m = P->relorder + i;
    if (fmpz_is_zero(m) || (fmpz_sgn(u + i) >= 0 && fmpz_cmp(u + i, m) < 0))
        return;
    fmpz_t q;
    pcw_t T;
    fmpz_init(q);
    pcw_init(T);
    fmpz_fdiv_qr(q, u + i, u + i, m);
    take_tail(T, u, i, P->commute_from[i]);
    collect_word_pow(W, u, P->pow + i, P->powinv + i, q);
    pcp_collect_word(W, u, T);
    pcw_clear(T);
    fmpz_clear(q);
}

/* For a presentation without finite relative orders, e -> x^e and
 * e -> y^(a_i^e) have coordinates that are integer-valued polynomials in e
 * (P. Hall, "Nilpotent groups", 1957).  Their degrees are small:
 *
 *   (x^e)_k        has degree <= floor(w_k / m)               (m = lowest
 *                  weight present in x),
 *   (y^(a_i^e))_k  has degree <= floor((w_k - m) / w_i)        (m = lowest
 *                  weight present in y),
 *
 * w_k the weight of a_k, zero below the first nonzero entry.  Proof: the
 * weights are a filtration with [a_k, a_i] of weight >= w_k + w_i, so the
 * weight-w coordinate of a product u v is u_w + v_w + a polynomial in the
 * coordinates of lower weight in which every monomial has weighted degree
 * <= w and contains a coordinate of u and one of v (C. R. Leedham-Green and
 * L. H. Soicher, "Symbolic collection using Deep Thought", LMS J. Comput.
 * Math. 1, 1998).  With f(e) = x^e, f(e+1) = f(e) x: the difference
 * f_w(e+1) - f_w(e) is x_w plus monomials whose f-part has weighted degree
 * <= w - m, of degree <= (w - m)/m in e by induction on w; so deg f_w <=
 * w/m.  With f(e) = y^(a_i^e), f(e+1) = f(e)^(a_i): every monomial of the
 * difference contains a_i (weight w_i) and at least one coordinate of f
 * (conjugating 1 gives 1); its f-part has weighted degree <= w - w_i and,
 * by induction, e-degree <= sum (w_kj - m)/w_i <= (w - w_i - m)/w_i.
 * Polynomials that agree for e >= 0 and satisfy the same recursion agree on
 * all of Z.  test_pcp checks the route against plain collection.
 *
 * So Newton's forward differences of order d vanish at every coordinate
 * whose bound is below d: from[d] is the first index (relative to the
 * first possibly nonzero one) that can still be nonzero at order d, and the
 * work shrinks with the order.  Given the values at e = 0..D in samples
 * (D+1 rows of len entries), out := the value at e:
 * f(e) = sum_d (Delta^d f)(0) binom(e, d), binom(e, d) = e (e-1) ...
 * (e-d+1) / d! for any integer e.  out has len entries. */
static void newton_eval(fmpz *out, fmpz *samples, slong D, slong len, const slong *from,
                        const fmpz_t e)
{
    for (slong d = 1; d <= D; d++) {
        slong f = from[d];
        for (slong t = D; t >= d; t--)
            _fmpz_vec_sub(samples + t * len + f, samples + t * len + f,
                          samples + (t - 1) * len + f, len - f);
    }
    fmpz_t b, g;
    fmpz_init_set_ui(b, 1);
    fmpz_init(g);
    _fmpz_vec_set(out, samples, len);
    for (slong d = 1; d <= D; d++) {
        fmpz_sub_ui(g, e, (ulong)(d - 1));
        fmpz_mul(b, b, g);
        fmpz_divexact_ui(b, b, (ulong)d);
        slong f = from[d];
        _fmpz_vec_scalar_addmul_fmpz(out + f, samples + d * len + f, len - f, b);
    }
    fmpz_clear(b);
    fmpz_clear(g);
}

/* The first index >= lo whose weight is at least w (n if none). */
static slong first_of_weight(const pcp_struct *P, slong lo, slong w)
{
    slong hi = P->n;
    while (lo < hi) {
        slong mid = lo + (hi - lo) / 2;
        if (P->weight[mid] >= w)
            hi = mid;
        else
            lo = mid + 1;
    }
    return lo;
}

/* The first nonzero entry of u (length n), or n. */
static slong first_nonzero(const fmpz *u, slong n)
{
    slong f = 0;
    while (f < n && fmpz_is_zero(u + f))
        f++;
    return f;
}


/* out := y^(a_i^e) for y in the subgroup of generators > i (y is a vector
 * of length n with zeros up to i), by the automorphisms
 * phi_b = conjugation by a_i^(sign e * 2^b), each the square of the last. */
static void conj_once(pcp_work_t W, fmpz *out, const fmpz *y, slong i);

static void conj_by_power(pcp_work_t W, fmpz *out, const fmpz *y, slong i, const fmpz_t e)
{
    const pcp_struct *P = W->P;
    if (P->torsion_free && !W->plain && fmpz_bits(e) > PCP_SMALL_BITS) {
        slong n = P->n, f = first_nonzero(y, n);
        if (f == n) {
            _fmpz_vec_zero(out, n);
            return;
        }
        slong m = P->weight[f], wi = P->weight[i], D = (P->maxweight - m) / wi, len = n - f;
        slong *from = flint_malloc((D + 1) * sizeof(slong));
        for (slong d = 0; d <= D; d++)
            from[d] = first_of_weight(P, f, m + d * wi) - f;
        fmpz *smp = _fmpz_vec_init((D + 1) * len);
        fmpz *cur = _fmpz_vec_init(n);
        _fmpz_vec_set(cur, y, n);
        _fmpz_vec_set(smp, cur + f, len);
        for (slong t = 1; t <= D; t++) {
            conj_once(W, cur, cur, i);
            _fmpz_vec_set(smp + t * len, cur + f, len);
        }
        _fmpz_vec_zero(out, f);
        newton_eval(out + f, smp, D, len, from, e);
        _fmpz_vec_clear(cur, n);
        _fmpz_vec_clear(smp, (D + 1) * len);
        flint_free(from);
        return;
    }
    slong n = P->n, cf = P->commute_from[i];
    slong lo = i + 1, cnt = cf - lo;
    int neg = fmpz_sgn(e) < 0;
    fmpz_t E;
    fmpz_init(E);
    fmpz_abs(E, e);
    fmpz *phi = _fmpz_vec_init(cnt * n);
    fmpz *nphi = _fmpz_vec_init(cnt * n);
    fmpz *res = _fmpz_vec_init(n);
    fmpz *acc = _fmpz_vec_init(n);
    fmpz *pw = _fmpz_vec_init(n);
    for (slong l = lo; l < cf; l++) {
        fmpz *row = phi + (l - lo) * n;
        if (l < P->ncore && !P->trivial[pcp_slot(l, i)])
            pcw_get_vec(row, n, neg ? P->conjm + pcp_slot(l, i) : P->conj + pcp_slot(l, i));
        else
            fmpz_one(row + l);
    }
    _fmpz_vec_set(res, y, n);
    slong bits = fmpz_bits(E);
    for (slong b = 0; b < bits && !W->overflow; b++) {
        /* apply(phi, v) = prod_l phi[l]^(v_l) */
        if (fmpz_tstbit(E, b)) {
            _fmpz_vec_zero(acc, n);
            for (slong l = lo; l < n; l++) {
                if (fmpz_is_zero(res + l))
                    continue;
                if (l >= cf)
                    pcp_collect_gen(W, acc, l, res + l);
                else {
                    pcp_elt_pow(W, pw, phi + (l - lo) * n, res + l);
                    pcp_elt_mul(W, acc, acc, pw);
                }
            }
            _fmpz_vec_swap(res, acc, n);
        }
        if (b + 1 < bits) {
            for (slong m = lo; m < cf; m++) {
                const fmpz *v = phi + (m - lo) * n;
                fmpz *dst = nphi + (m - lo) * n;
                _fmpz_vec_zero(dst, n);
                for (slong l = lo; l < n; l++) {
                    if (fmpz_is_zero(v + l))
                        continue;
                    if (l >= cf)
                        pcp_collect_gen(W, dst, l, v + l);
                    else {
                        pcp_elt_pow(W, pw, phi + (l - lo) * n, v + l);
                        pcp_elt_mul(W, dst, dst, pw);
                    }
                }
            }
            fmpz *t = phi;
            phi = nphi;
            nphi = t;
        }
    }
    _fmpz_vec_set(out, res, n);
    _fmpz_vec_clear(phi, cnt * n);
    _fmpz_vec_clear(nphi, cnt * n);
    _fmpz_vec_clear(res, n);
    _fmpz_vec_clear(acc, n);
    _fmpz_vec_clear(pw, n);
    fmpz_clear(E);
}

void pcp_collect_gen(pcp_work_t W, fmpz *u, slong i, const fmpz_t e)
{
    const pcp_struct *P = W->P;
    if (fmpz_is_zero(e) || work_tick(W))
        return;
    slong n = P->n, cf = P->commute_from[i];
    int tail = 0;
    for (slong k = i + 1; k < cf; k++)
        if (!fmpz_is_zero(u + k)) {
            tail = 1;
            break;
        }
    if (!tail) {
        add_power(W, u, i, e);
        return;
    }
    /* u = head a_i^(u_i) T, and T a_i^e = a_i^e T^(a_i^e). */
    pcw_t T;
    pcw_init(T);
    take_tail(T, u, i, cf);
    add_power(W, u, i, e);
    if (fmpz_is_pm1(e)) {
        int neg = fmpz_sgn(e) < 0;
        for (slong t = 0; t < T->len && !W->overflow; t++) {
            slong k = T->gen[t];
            const fmpz *x = T->exp + t;
            if (k >= cf || P->trivial[pcp_slot(k, i)]) {
                pcp_collect_gen(W, u, k, x);
                continue;
            }
            slong s = pcp_slot(k, i);
            const pcw_struct *w;
            if (fmpz_sgn(x) > 0)
                w = neg ? P->conjm + s : P->conj + s;
            else
                w = neg ? P->conjminv + s : P->conjinv + s;
            if (fmpz_is_pm1(x))
                pcp_collect_word(W, u, w);
            else {
                fmpz_t ax;
                fmpz_init(ax);
                fmpz_abs(ax, x);
                const pcw_struct *wi;
                if (fmpz_sgn(x) > 0)
                    wi = neg ? P->conjminv + s : P->conjinv + s;
                else
                    wi = neg ? P->conjm + s : P->conj + s;
                collect_word_pow(W, u, w, wi, ax);
                fmpz_clear(ax);
            }
        }
    } else {
        fmpz *y = _fmpz_vec_init(n);
        pcw_get_vec(y, n, T);
        conj_by_power(W, y, y, i, e);
        pcw_set_vec(T, y, n);
        pcp_collect_word(W, u, T);
        _fmpz_vec_clear(y, n);
    }
    pcw_clear(T);
}

void pcp_collect_word(pcp_work_t W, fmpz *u, const pcw_t w)
{
    for (slong k = 0; k < w->len && !W->overflow; k++)
        pcp_collect_gen(W, u, w->gen[k], w->exp + k);
}

/* ------------------------------------------------------------- elements */

void pcp_elt_mul(pcp_work_t W, fmpz *out, const fmpz *u, const fmpz *v)
{
    slong n = W->P->n;
    pcw_t t;
    pcw_init(t);
    pcw_set_vec(t, v, n);
    if (out != u)
        _fmpz_vec_set(out, u, n);
    pcp_collect_word(W, out, t);
    pcw_clear(t);
}

void pcp_elt_inv(pcp_work_t W, fmpz *out, const fmpz *u)
{
    /* u^-1 = a_(n-1)^(-u_(n-1)) ... a_0^(-u_0), collected from the left:
     * each step conjugates the part beyond k by a power of a_k. */
    slong n = W->P->n;
    fmpz *r = _fmpz_vec_init(n);
    fmpz_t e;
    fmpz_init(e);
    for (slong k = n - 1; k >= 0 && !W->overflow; k--) {
        if (fmpz_is_zero(u + k))
            continue;
        fmpz_neg(e, u + k);
        pcp_collect_gen(W, r, k, e);
    }
    _fmpz_vec_set(out, r, n);
    fmpz_clear(e);
    _fmpz_vec_clear(r, n);
}

void pcp_elt_pow(pcp_work_t W, fmpz *out, const fmpz *u, const fmpz_t e)
{
    slong n = W->P->n;
    fmpz *base = _fmpz_vec_init(n);
    fmpz *res = _fmpz_vec_init(n);
    fmpz_t E;
    fmpz_init(E);
    fmpz_abs(E, e);
    /* A single generator times central ones is one collection step per
     * generator: (a_g^x z)^e = a_g^(x e) z^e for z central (generators
     * >= ncore commute with everything), in any group.  This keeps the
     * cost of the conjugation automorphisms in conj_by_power independent
     * of the size of their exponents (issue 8: a^(10^1000) at class 3). */
    slong g = -1;
    int head_central = 1;
    for (slong k = 0; k < n; k++)
        if (!fmpz_is_zero(u + k)) {
            if (g < 0)
                g = k;
            else if (k < W->P->ncore) {
                head_central = 0;
                break;
            }
        }
    /* Reduce before powering: when every generator from u's first one on
     * has a finite relative order, u lies in the subgroup N they generate,
     * which is finite of order prod m_j (its normal words), so u^|N| = 1
     * (Lagrange) and only e mod |N| matters.  A carry of a huge power word
     * (cover_reduce in iterate.c) then costs what a small one does. */
    if (g >= 0 && fmpz_bits(E) > PCP_SMALL_BITS) {
        fmpz_t ord;
        fmpz_init_set_ui(ord, 1);
        for (slong k = g; k < n && !fmpz_is_zero(ord); k++)
            fmpz_mul(ord, ord, W->P->relorder + k);
        if (!fmpz_is_zero(ord) && (fmpz_sgn(e) < 0 || fmpz_cmp(e, ord) >= 0)) {
            fmpz_t r;
            fmpz_init(r);
            fmpz_fdiv_r(r, e, ord);
            pcp_elt_pow(W, out, u, r);
            fmpz_clear(r);
            fmpz_clear(ord);
            fmpz_clear(E);
            _fmpz_vec_clear(base, n);
            _fmpz_vec_clear(res, n);
            return;
        }
        fmpz_clear(ord);
    }
    if (g >= 0 && head_central) {
        for (slong k = g; k < n && !W->overflow; k++) {
            if (fmpz_is_zero(u + k))
                continue;
            fmpz_mul(E, u + k, e);
            pcp_collect_gen(W, res, k, E);
        }
    } else if (g >= 0 && W->P->torsion_free && !W->plain && fmpz_bits(e) > PCP_SMALL_BITS) {
        const pcp_struct *P = W->P;
        slong f = first_nonzero(u, n), m = P->weight[f], D = P->maxweight / m, len = n - f;
        slong *from = flint_malloc((D + 1) * sizeof(slong));
        for (slong d = 0; d <= D; d++)
            from[d] = first_of_weight(P, f, d * m) - f;
        fmpz *smp = _fmpz_vec_init((D + 1) * len);
        fmpz *cur = base; /* x^t, starting from x^0 = 1 */
        pcw_t uw;
        pcw_init(uw);
        pcw_set_vec(uw, u, n);
        for (slong t = 1; t <= D; t++) {
            pcp_collect_word(W, cur, uw);
            _fmpz_vec_set(smp + t * len, cur + f, len);
        }
        newton_eval(res + f, smp, D, len, from, e);
        pcw_clear(uw);
        flint_free(from);
        _fmpz_vec_clear(smp, (D + 1) * len);
    } else if (g >= 0) {
        /* square and multiply; only this branch needs u^-1 for e < 0 */
        if (fmpz_sgn(e) < 0)
            pcp_elt_inv(W, base, u);
        else
            _fmpz_vec_set(base, u, n);
        slong bits = fmpz_bits(E);
        for (slong b = bits - 1; b >= 0 && !W->overflow; b--) {
            pcp_elt_mul(W, res, res, res);
            if (fmpz_tstbit(E, b))
                pcp_elt_mul(W, res, res, base);
        }
    }
    _fmpz_vec_set(out, res, n);
    fmpz_clear(E);
    _fmpz_vec_clear(base, n);
    _fmpz_vec_clear(res, n);
}

void pcp_elt_comm(pcp_work_t W, fmpz *out, const fmpz *u, const fmpz *v)
{
    /* [u,v] = (v u)^-1 (u v) */
    slong n = W->P->n;
    fmpz *uv = _fmpz_vec_init(n);
    fmpz *vu = _fmpz_vec_init(n);
    pcp_elt_mul(W, uv, u, v);
    pcp_elt_mul(W, vu, v, u);
    pcp_elt_inv(W, vu, vu);
    pcp_elt_mul(W, out, vu, uv);
    _fmpz_vec_clear(uv, n);
    _fmpz_vec_clear(vu, n);
}

void pcp_elt_conj(pcp_work_t W, fmpz *out, const fmpz *u, const fmpz *v)
{
    slong n = W->P->n;
    fmpz *vi = _fmpz_vec_init(n);
    fmpz *t = _fmpz_vec_init(n);
    pcp_elt_inv(W, vi, v);
    pcp_elt_mul(W, t, vi, u);
    pcp_elt_mul(W, out, t, v);
    _fmpz_vec_clear(vi, n);
    _fmpz_vec_clear(t, n);
}

int pcp_eval_expr(pcp_work_t W, fmpz *out, const expr_node *e, const fmpz *images)
{
    slong n = W->P->n;
    switch (e->kind) {
    case EXPR_ONE:
        _fmpz_vec_zero(out, n);
        break;
    case EXPR_GEN:
        _fmpz_vec_set(out, images + e->gen * n, n);
        break;
    case EXPR_POW: {
        fmpz *x = _fmpz_vec_init(n);
        pcp_eval_expr(W, x, e->kids[0], images);
        pcp_elt_pow(W, out, x, e->exp);
        _fmpz_vec_clear(x, n);
        break;
    }
    case EXPR_MUL:
    case EXPR_COMM:
    case EXPR_CONJ: {
        fmpz *acc = _fmpz_vec_init(n);
        fmpz *x = _fmpz_vec_init(n);
        pcp_eval_expr(W, acc, e->kids[0], images);
        for (slong k = 1; k < e->nkids && !W->overflow; k++) {
            pcp_eval_expr(W, x, e->kids[k], images);
            if (e->kind == EXPR_MUL)
                pcp_elt_mul(W, acc, acc, x);
            else if (e->kind == EXPR_COMM)
                pcp_elt_comm(W, acc, acc, x);
            else
                pcp_elt_conj(W, acc, acc, x);
        }
        _fmpz_vec_set(out, acc, n);
        _fmpz_vec_clear(acc, n);
        _fmpz_vec_clear(x, n);
        break;
    }
    case EXPR_RUN: {
        /* the same products as an EXPR_MUL of its letters would give */
        fmpz *acc = _fmpz_vec_init(n);
        fmpz *x = _fmpz_vec_init(n);
        fmpz_t ex;
        fmpz_init(ex);
        for (slong k = 0; k < e->nsyl && !W->overflow; k++) {
            const fmpz *img = images + (slong)e->syl[k].gen * n;
            const fmpz *f = img;
            if (e->syl[k].exp != EXPR_SYL_BARE) {
                fmpz_set_si(ex, e->syl[k].exp);
                pcp_elt_pow(W, x, img, ex);
                f = x;
            }
            if (k == 0)
                _fmpz_vec_set(acc, f, n);
            else
                pcp_elt_mul(W, acc, acc, f);
        }
        _fmpz_vec_set(out, acc, n);
        fmpz_clear(ex);
        _fmpz_vec_clear(acc, n);
        _fmpz_vec_clear(x, n);
        break;
    }
    }
    return W->overflow;
}

/* ---------------------------------------------------------- completion */

/* out := y^(a_i) for y in the subgroup beyond i, using only the forward
 * tables (the backward ones are what pcp_complete is building). */
static void conj_once(pcp_work_t W, fmpz *out, const fmpz *y, slong i)
{
    fmpz_t e;
    fmpz_init_set_si(e, 1);
    /* y a_i = a_i y^(a_i): collect y a_i and drop the a_i part (m_i >= 2,
     * so no power relation fires); y is zero up to i, so out may be y. */
    if (out != y)
        _fmpz_vec_set(out, y, W->P->n);
    pcp_collect_gen(W, out, i, e);
    fmpz_zero(out + i);
    fmpz_clear(e);
}

/* y := a_k^(a_i^-1), the y with y^(a_i) = a_k: conjugation by a_i is the
 * identity modulo higher weight, so y <- y (y^(a_i))^-1 a_k gains a weight
 * each round.  z and ak are scratch vectors of W's length. */
static void conj_inverse_solve(pcp_work_t W, fmpz *y, fmpz *z, fmpz *ak, slong n, slong k,
                               slong i, slong maxweight)
{
    _fmpz_vec_zero(ak, n);
    fmpz_one(ak + k);
    _fmpz_vec_set(y, ak, n);
    for (slong round = 0; round <= maxweight + 1 && !W->overflow; round++) {
        conj_once(W, z, y, i);
        if (_fmpz_vec_equal(z, ak, n))
            break;
        pcp_elt_inv(W, z, z);
        pcp_elt_mul(W, y, y, z);
        pcp_elt_mul(W, y, y, ak);
    }
}

int pcp_complete(pcp_t P, pcp_work_t W)
{
    slong n = P->n;
    P->torsion_free = 1;
    for (slong i = 0; i < n; i++)
        if (!fmpz_is_zero(P->relorder + i))
            P->torsion_free = 0;
    fmpz *y = _fmpz_vec_init(n);
    fmpz *z = _fmpz_vec_init(n);
    fmpz *ak = _fmpz_vec_init(n);
    for (slong i = n - 1; i >= 0 && !W->overflow; i--) {
        /* one poll per generator besides the step count: a single step can
         * be long in a large presentation, and cancel must stay quick */
        if (W->progress && ns_progress_report(W->progress, NULL, -1.0))
            W->overflow = 1;
        if (!fmpz_is_zero(P->relorder + i)) {
            pcw_get_vec(y, n, P->pow + i);
            pcp_elt_inv(W, y, y);
            pcw_set_vec(P->powinv + i, y, n);
        }
        if (i >= P->ncore)
            continue;
        for (slong k = i + 1; k < P->ncore; k++) {
            slong s = pcp_slot(k, i);
            if (P->trivial[s])
                continue;
            pcw_get_vec(y, n, P->conj + s);
            pcp_elt_inv(W, y, y);
            pcw_set_vec(P->conjinv + s, y, n);
        }
        /* a_k^(a_i^-1) and its inverse (conj_inverse_solve) */
        for (slong k = i + 1; k < P->ncore && !W->overflow; k++) {
            slong s = pcp_slot(k, i);
            if (P->trivial[s])
                continue;
            if (W->progress && ns_progress_report(W->progress, NULL, -1.0))
                W->overflow = 1;
            conj_inverse_solve(W, y, z, ak, n, k, i, P->maxweight);
            pcw_set_vec(P->conjm + s, y, n);
            pcp_elt_inv(W, y, y);
            pcw_set_vec(P->conjminv + s, y, n);
        }
    }
    _fmpz_vec_clear(y, n);
    _fmpz_vec_clear(z, n);
    _fmpz_vec_clear(ak, n);
    return W->overflow;
}

/* y := the normal form y0 z^-1 for the old element y0 (entries below n0)
 * and z whose entries below n0 are zero; returns 0 when z has an entry
 * below n0 (then the caller falls back to pcp_complete's way). */
static int correct_by_central(fmpz *y, const fmpz *y0, const fmpz *z, slong n0, slong n)
{
    for (slong k = 0; k < n0; k++)
        if (!fmpz_is_zero(z + k))
            return 0;
    _fmpz_vec_set(y, y0, n0);
    _fmpz_vec_neg(y + n0, z + n0, n - n0);
    return 1;
}

/* The vector of a stored word of prev (indices below prev->n), or of a_k^s
 * (s = +-1) when the stored word is absent. */
static void old_word_vec(fmpz *y, slong n, const pcw_struct *w, slong k, int s)
{
    if (w)
        pcw_get_vec(y, n, w);
    else {
        _fmpz_vec_zero(y, n);
        fmpz_set_si(y + k, s);
    }
}

int pcp_complete_from(pcp_t P, const pcp_t prev, pcp_work_t W)
{
    slong n = P->n, n0 = prev->n;
    P->torsion_free = 1;
    for (slong i = 0; i < n; i++)
        if (!fmpz_is_zero(P->relorder + i))
            P->torsion_free = 0;
    fmpz *y = _fmpz_vec_init(n);
    fmpz *y0 = _fmpz_vec_init(n);
    fmpz *z = _fmpz_vec_init(n);
    fmpz *ak = _fmpz_vec_init(n);
    for (slong i = n - 1; i >= 0 && !W->overflow; i--) {
        if (!fmpz_is_zero(P->relorder + i)) {
            /* powinv: (y0 pow) is central when y0 inverts pow modulo it */
            int done = 0;
            if (i < n0 && !fmpz_is_zero(prev->relorder + i)) {
                pcw_get_vec(y0, n, prev->powinv + i);
                _fmpz_vec_set(z, y0, n);
                pcp_collect_word(W, z, P->pow + i);
                done = correct_by_central(y, y0, z, n0, n);
            }
            if (!done) {
                pcw_get_vec(y, n, P->pow + i);
                pcp_elt_inv(W, y, y);
            }
            pcw_set_vec(P->powinv + i, y, n);
        }
        if (i >= P->ncore)
            continue;
        for (slong k = i + 1; k < P->ncore; k++) {
            slong s = pcp_slot(k, i);
            if (P->trivial[s])
                continue;
            int inprev = k < prev->ncore && !prev->trivial[s];
            int done = 0;
            if (inprev || fmpz_is_zero(P->relorder + k)) {
                old_word_vec(y0, n, inprev ? prev->conjinv + s : NULL, k, -1);
                _fmpz_vec_set(z, y0, n);
                pcp_collect_word(W, z, P->conj + s);
                done = correct_by_central(y, y0, z, n0, n);
            }
            if (!done) {
                pcw_get_vec(y, n, P->conj + s);
                pcp_elt_inv(W, y, y);
            }
            pcw_set_vec(P->conjinv + s, y, n);
        }
        /* a_k^(a_i^-1) = y0 z^-1 where y0 is the old one and y0^(a_i) =
         * a_k z with z central: one conjugation instead of pcp_complete's
         * rounds; then its inverse the same way */
        for (slong k = i + 1; k < P->ncore; k++) {
            slong s = pcp_slot(k, i);
            if (P->trivial[s])
                continue;
            int inprev = k < prev->ncore && !prev->trivial[s];
            old_word_vec(y0, n, inprev ? prev->conjm + s : NULL, k, 1);
            conj_once(W, z, y0, i);
            fmpz_sub_ui(z + k, z + k, 1);
            int done = correct_by_central(y, y0, z, n0, n);
            if (!done) {
                conj_inverse_solve(W, y, z, ak, n, k, i, P->maxweight);
            }
            pcw_set_vec(P->conjm + s, y, n);
            done = 0;
            if (inprev || fmpz_is_zero(P->relorder + k)) {
                old_word_vec(y0, n, inprev ? prev->conjminv + s : NULL, k, -1);
                _fmpz_vec_set(z, y0, n);
                pcp_collect_word(W, z, P->conjm + s);
                done = correct_by_central(z, y0, z, n0, n);
            }
            if (!done)
                pcp_elt_inv(W, z, y);
            pcw_set_vec(P->conjminv + s, z, n);
        }
    }
    _fmpz_vec_clear(y, n);
    _fmpz_vec_clear(y0, n);
    _fmpz_vec_clear(z, n);
    _fmpz_vec_clear(ak, n);
    return W->overflow;
}

/* ------------------------------------------------------------- output */

char *pcp_elt_get_str(const pcp_t P, const fmpz *u, char *const *names)
{
    strbuf_t b;
    strbuf_init(b);
    for (slong k = 0; k < P->n; k++) {
        if (fmpz_is_zero(u + k))
            continue;
        strbuf_printf(b, "%s%s", b->len ? " " : "", names[k]);
        if (!fmpz_is_one(u + k)) {
            char *e = fmpz_get_str(NULL, 10, u + k);
            strbuf_printf(b, "^%s", e);
            flint_free(e);
        }
    }
    if (b->len == 0)
        strbuf_puts(b, "1");
    return strbuf_take(b);
}

/* ---------------------------------------------------------- consistency */

int pcp_consistency_run(const pcp_t P, pcp_work_t W, pcp_consistency_fn fn, void *ctx)
{
    slong n = P->n, c = P->maxweight;
    fmpz *l = _fmpz_vec_init(n), *r = _fmpz_vec_init(n), *v = _fmpz_vec_init(n);
    fmpz_t one, mone, e;
    fmpz_init_set_si(one, 1);
    fmpz_init_set_si(mone, -1);
    fmpz_init(e);
    pcw_t t;
    pcw_init(t);
    int stop = 0;
#define UNIT(x, g) (_fmpz_vec_zero(x, n), fmpz_one((x) + (g)))
    slong tests = 0;
    /* the callback's own work (an elimination step per test in nq.c) is
       not collection: poll every 16 tests as well */
#define CHECK()                                                              \
    (stop = W->overflow || fn(ctx, l, r) ||                                  \
            ((++tests & 15) == 0 && W->progress &&                           \
             ns_progress_report(W->progress, NULL, -1.0) && (W->overflow = 1)))
    for (slong i = 0; i < n && !stop; i++) {
        for (slong j = i + 1; j < n && !stop; j++) {
            if (P->weight[i] + P->weight[j] > c)
                break;
            /* (a_k a_j) a_i = a_k (a_j a_i), k > j > i */
            for (slong k = j + 1; k < n && !stop; k++) {
                if (P->weight[i] + P->weight[j] + P->weight[k] > c)
                    break;
                UNIT(l, k);
                pcp_collect_gen(W, l, j, one);
                pcp_collect_gen(W, l, i, one);
                UNIT(v, j);
                pcp_collect_gen(W, v, i, one);
                pcw_set_vec(t, v, n);
                UNIT(r, k);
                pcp_collect_word(W, r, t);
                CHECK();
            }
            /* (a_j^(m_j-1) a_j) a_i = a_j^(m_j-1) (a_j a_i) */
            if (!stop && !fmpz_is_zero(P->relorder + j)) {
                pcw_get_vec(l, n, P->pow + j);
                pcp_collect_gen(W, l, i, one);
                _fmpz_vec_zero(r, n);
                fmpz_sub_ui(r + j, P->relorder + j, 1);
                UNIT(v, j);
                pcp_collect_gen(W, v, i, one);
                pcw_set_vec(t, v, n);
                pcp_collect_word(W, r, t);
                CHECK();
            }
            /* (a_j a_i^(m_i-1)) a_i = a_j (a_i^(m_i-1) a_i) */
            if (!stop && !fmpz_is_zero(P->relorder + i)) {
                UNIT(l, j);
                fmpz_sub_ui(e, P->relorder + i, 1);
                pcp_collect_gen(W, l, i, e);
                pcp_collect_gen(W, l, i, one);
                UNIT(r, j);
                pcp_collect_word(W, r, P->pow + i);
                CHECK();
            }
            /* (a_j a_i^-1) a_i = a_j for infinite a_i */
            if (!stop && fmpz_is_zero(P->relorder + i)) {
                UNIT(l, j);
                pcp_collect_gen(W, l, i, mone);
                pcp_collect_gen(W, l, i, one);
                UNIT(r, j);
                CHECK();
            }
        }
        /* (a_i^(m_i-1) a_i) a_i = a_i (a_i^(m_i-1) a_i) */
        if (!stop && !fmpz_is_zero(P->relorder + i) && 2 * P->weight[i] <= c) {
            pcw_get_vec(l, n, P->pow + i);
            pcp_collect_gen(W, l, i, one);
            UNIT(r, i);
            pcp_collect_word(W, r, P->pow + i);
            CHECK();
        }
    }
#undef UNIT
#undef CHECK
    int status = W->overflow ? -1 : stop ? 1 : 0;
    pcw_clear(t);
    fmpz_clear(one);
    fmpz_clear(mone);
    fmpz_clear(e);
    _fmpz_vec_clear(l, n);
    _fmpz_vec_clear(r, n);
    _fmpz_vec_clear(v, n);
    return status;
}

static int differ(void *ctx, const fmpz *l, const fmpz *r)
{
    return !_fmpz_vec_equal(l, r, *(const slong *)ctx);
}

int pcp_is_consistent(const pcp_t P, pcp_work_t W)
{
    slong n = P->n;
    return pcp_consistency_run(P, W, differ, &n) == 0;
}
