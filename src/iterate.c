/* iterate.c — see iterate.h. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "iterate_norm.h"
#include "spectrum.h"
#include "strbuf.h"

void iterate_map_init(iterate_map_t M)
{
    memset(M, 0, sizeof(iterate_map_struct));
    fmpz_init(M->pow10);
    M->pow10_k = -1;
}

static void poly_clear(iterate_table_struct *t)
{
    if (t->nmono) {
        _fmpz_vec_clear(t->nz_val, FLINT_MAX(t->nz_start[t->nmono], 1));
        flint_free(t->nz_idx);
        flint_free(t->nz_start);
        flint_free(t->mono);
    }
    t->nmono = 0;
    t->mono = t->nz_start = t->nz_idx = NULL;
    t->nz_val = NULL;
}

static void table_clear(iterate_table_struct *t, slong n, slong deg)
{
    if (t->img)
        _fmpz_vec_clear(t->img, FLINT_MAX(n * n, 1));
    if (t->diff)
        _fmpz_vec_clear(t->diff, FLINT_MAX(n * (deg + 1) * n, 1));
    t->img = t->diff = NULL;
    poly_clear(t);
}

/* ---- the map as a polynomial in the exponents ------------------------- */

#define ITERATE_MAX_MONO 3000

/* Appends every d >= 0 on variables i.. with sum w_i d_i <= budget to
 * list (cur holds the choices for variables < i); stops past the cap. */
static void mono_enum(slong **list, slong *len, slong *alloc, slong *cur, const slong *w, slong n,
                      slong i, slong budget)
{
    if (*len > ITERATE_MAX_MONO)
        return;
    if (i == n) {
        if (*len == *alloc) {
            *alloc = 2 * *alloc + 16;
            *list = flint_realloc(*list, *alloc * n * sizeof(slong));
        }
        memcpy(*list + *len * n, cur, n * sizeof(slong));
        (*len)++;
        return;
    }
    for (slong d = 0; d * w[i] <= budget; d++) {
        cur[i] = d;
        mono_enum(list, len, alloc, cur, w, n, i + 1, budget - d * w[i]);
    }
    cur[i] = 0;
}

/* Index of the exponent vector d in the lexicographically sorted list. */
static slong mono_find(const slong *list, slong len, slong n, const slong *d)
{
    slong lo = 0, hi = len - 1;
    while (lo <= hi) {
        slong mid = (lo + hi) / 2;
        int c = 0;
        for (slong i = 0; i < n && c == 0; i++)
            c = (list[mid * n + i] > d[i]) - (list[mid * n + i] < d[i]);
        if (c == 0)
            return mid;
        if (c < 0)
            lo = mid + 1;
        else
            hi = mid - 1;
    }
    return -1;
}

/* out := the polynomial of t at x. */
static void poly_eval(const iterate_map_struct *M, const iterate_table_struct *t, fmpz *out,
                      const fmpz *x)
{
    slong n = M->n, c = M->deg;
    /* binom(x_i, d) for d = 0..c */
    fmpz *B = _fmpz_vec_init(n * (c + 1));
    fmpz_t f, prod, acc;
    fmpz_init(f);
    fmpz_init(prod);
    fmpz_init(acc);
    for (slong i = 0; i < n; i++) {
        fmpz *b = B + i * (c + 1);
        fmpz_one(b);
        slong top = c / M->P->weight[i];
        for (slong d = 1; d <= top && !fmpz_is_zero(b + d - 1); d++) {
            fmpz_sub_ui(f, x + i, (ulong)(d - 1));
            fmpz_mul(b + d, b + d - 1, f);
            fmpz_divexact_ui(b + d, b + d, (ulong)d);
        }
    }
    fmpz *res = _fmpz_vec_init(n);
    for (slong m = 0; m < t->nmono; m++) {
        const slong *d = t->mono + m * n;
        fmpz_one(prod);
        for (slong i = 0; i < n && !fmpz_is_zero(prod); i++)
            if (d[i])
                fmpz_mul(prod, prod, B + i * (c + 1) + d[i]);
        if (fmpz_is_zero(prod))
            continue;
        for (slong q = t->nz_start[m]; q < t->nz_start[m + 1]; q++)
            fmpz_addmul(res + t->nz_idx[q], t->nz_val + q, prod);
    }
    _fmpz_vec_swap(out, res, n);
    _fmpz_vec_clear(res, n);
    _fmpz_vec_clear(B, n * (c + 1));
    fmpz_clear(f);
    fmpz_clear(prod);
    fmpz_clear(acc);
}

/* Builds t's polynomial from its values at the lattice points: vals
 * (nmono x n) at the points mono.  Newton's formula on the lower set:
 * coef_d = sum_(e <= d) (-1)^|d - e| prod_i binom(d_i, e_i) f(e). */
static void poly_interpolate(const iterate_map_struct *M, iterate_table_struct *t,
                             const fmpz *vals)
{
    slong n = M->n, N = t->nmono;
    fmpz *coef = _fmpz_vec_init(N * n);
    slong *e = flint_malloc(n * sizeof(slong)), *nzv = flint_malloc(n * sizeof(slong));
    fmpz_t w;
    fmpz_init(w);
    for (slong m = 0; m < N; m++) {
        const slong *d = t->mono + m * n;
        slong nnz = 0;
        for (slong i = 0; i < n; i++) {
            e[i] = 0;
            if (d[i])
                nzv[nnz++] = i;
        }
        /* mixed-radix walk over e <= d on the nonzero positions */
        for (;;) {
            slong idx = mono_find(t->mono, N, n, e);
            /* weight prod_i binom(d_i, e_i), sign (-1)^(sum d_i - e_i) */
            fmpz_t b;
            fmpz_init(b);
            fmpz_one(w);
            slong par = 0;
            for (slong q = 0; q < nnz; q++) {
                slong i = nzv[q];
                fmpz_bin_uiui(b, (ulong)d[i], (ulong)e[i]);
                fmpz_mul(w, w, b);
                par += d[i] - e[i];
            }
            fmpz_clear(b);
            if (par & 1)
                fmpz_neg(w, w);
            _fmpz_vec_scalar_addmul_fmpz(coef + m * n, vals + idx * n, n, w);
            slong q = 0;
            while (q < nnz && e[nzv[q]] == d[nzv[q]]) {
                e[nzv[q]] = 0;
                q++;
            }
            if (q == nnz)
                break;
            e[nzv[q]]++;
        }
    }
    /* sparse runs of the nonzero coefficients */
    slong nz = 0;
    for (slong q = 0; q < N * n; q++)
        nz += !fmpz_is_zero(coef + q);
    t->nz_start = flint_malloc((N + 1) * sizeof(slong));
    t->nz_idx = flint_malloc(FLINT_MAX(nz, 1) * sizeof(slong));
    t->nz_val = _fmpz_vec_init(FLINT_MAX(nz, 1));
    nz = 0;
    for (slong m = 0; m < N; m++) {
        t->nz_start[m] = nz;
        for (slong l = 0; l < n; l++)
            if (!fmpz_is_zero(coef + m * n + l)) {
                t->nz_idx[nz] = l;
                fmpz_swap(t->nz_val + nz, coef + m * n + l);
                nz++;
            }
    }
    t->nz_start[N] = nz;
    fmpz_clear(w);
    flint_free(e);
    flint_free(nzv);
    _fmpz_vec_clear(coef, N * n);
}

/* The lattice points of the basis into t (t->mono, t->nmono); 0 when the
 * basis is too large. */
static int poly_points(const iterate_map_struct *M, iterate_table_struct *t)
{
    slong n = M->n, len = 0, alloc = 0;
    slong *list = NULL, *cur = flint_calloc(FLINT_MAX(n, 1), sizeof(slong));
    mono_enum(&list, &len, &alloc, cur, M->P->weight, n, 0, M->deg);
    flint_free(cur);
    if (len > ITERATE_MAX_MONO || n == 0) {
        flint_free(list);
        return 0;
    }
    t->mono = list;
    t->nmono = len;
    return 1;
}

void iterate_map_clear(iterate_map_t M)
{
    for (slong b = 0; b < M->ntab; b++)
        table_clear(M->tab + b, M->n, M->deg);
    flint_free(M->tab);
    if (M->cover) {
        pcp_clear(M->cover);
        flint_free(M->cover);
    }
    fmpz_clear(M->pow10);
    iterate_map_init(M);
}

/* The Hall polynomial data of table t: for each pc generator k the forward
 * differences at 0 of e -> img_k^e from the values at e = 0..deg. */
static void table_make_diff(iterate_map_t M, iterate_table_struct *t, pcp_work_t W)
{
    slong n = M->n, D = M->deg;
    t->diff = _fmpz_vec_init(FLINT_MAX(n * (D + 1) * n, 1));
    for (slong k = 0; k < n && !W->overflow; k++) {
        fmpz *s = t->diff + k * (D + 1) * n;
        for (slong e = 1; e <= D; e++)
            pcp_elt_mul(W, s + e * n, s + (e - 1) * n, t->img + k * n);
        for (slong d = 1; d <= D; d++)
            for (slong e = D; e >= d; e--)
                _fmpz_vec_sub(s + e * n, s + e * n, s + (e - 1) * n, n);
    }
}

/* out := img_k^e under table t. */
static void table_pow(iterate_map_t M, const iterate_table_struct *t, fmpz *out, slong k,
                      const fmpz_t e, pcp_work_t W)
{
    slong n = M->n, D = M->deg;
    if (t->diff == NULL) {
        pcp_elt_pow(W, out, t->img + k * n, e);
        return;
    }
    /* f(e) = sum_d (Delta^d f)(0) binom(e, d), binom(e, d) built as
     * e (e-1) ... (e-d+1) / d!, exact at every step */
    const fmpz *s = t->diff + k * (D + 1) * n;
    fmpz_t b, f;
    fmpz_init_set_ui(b, 1);
    fmpz_init(f);
    _fmpz_vec_zero(out, n);
    for (slong d = 0; d <= D; d++) {
        if (d > 0) {
            fmpz_sub_ui(f, e, (ulong)(d - 1));
            fmpz_mul(b, b, f);
            fmpz_divexact_ui(b, b, (ulong)d);
            if (fmpz_is_zero(b))
                break; /* 0 <= e < d: every later binomial vanishes too */
        }
        _fmpz_vec_scalar_addmul_fmpz(out, s + d * n, n, b);
    }
    fmpz_clear(b);
    fmpz_clear(f);
}

/* out := t applied to g (out may alias g). */
static void table_apply(iterate_map_t M, const iterate_table_struct *t, fmpz *out,
                        const fmpz *g, pcp_work_t W)
{
    slong n = M->n;
    if (t->nmono) {
        poly_eval(M, t, out, g);
        return;
    }
    fmpz *acc = _fmpz_vec_init(FLINT_MAX(n, 1));
    fmpz *p = _fmpz_vec_init(FLINT_MAX(n, 1));
    int first = 1;
    for (slong k = 0; k < n && !W->overflow; k++) {
        if (fmpz_is_zero(g + k))
            continue;
        table_pow(M, t, p, k, g + k, W);
        if (first)
            _fmpz_vec_swap(acc, p, n);
        else
            pcp_elt_mul(W, acc, acc, p);
        first = 0;
    }
    _fmpz_vec_set(out, acc, n);
    _fmpz_vec_clear(acc, FLINT_MAX(n, 1));
    _fmpz_vec_clear(p, FLINT_MAX(n, 1));
}

/* The polynomial of the first table, from collection at the lattice
 * points, then checked by collection at points off the lattice set (with
 * entries up to 40 in absolute value); dropped when a check fails. */
static void poly_build_first(iterate_map_t M, iterate_table_struct *t, pcp_work_t W)
{
    slong n = M->n;
    iterate_table_struct tmp = *t;
    tmp.nmono = 0;
    tmp.mono = NULL;
    if (!poly_points(M, &tmp))
        return;
    slong N = tmp.nmono;
    fmpz *vals = _fmpz_vec_init(N * n), *pt = _fmpz_vec_init(n), *a = _fmpz_vec_init(n);
    tmp.nmono = 0; /* table_apply by collection while sampling */
    for (slong m = 0; m < N && !W->overflow; m++) {
        for (slong i = 0; i < n; i++)
            fmpz_set_si(pt + i, tmp.mono[m * n + i]);
        table_apply(M, &tmp, vals + m * n, pt, W);
    }
    tmp.nmono = N;
    if (!W->overflow)
        poly_interpolate(M, &tmp, vals);
    int ok = !W->overflow;
    ulong r = 0x2545F4914F6CDD1DUL;
    for (int check = 0; check < 4 && ok; check++) {
        for (slong i = 0; i < n; i++) {
            r ^= r << 13;
            r ^= r >> 7;
            r ^= r << 17;
            fmpz_set_si(pt + i, (slong)(r % 81) - 40);
        }
        iterate_table_struct coll = *t;
        coll.nmono = 0;
        table_apply(M, &coll, a, pt, W);
        poly_eval(M, &tmp, vals, pt);
        ok = !W->overflow && _fmpz_vec_equal(a, vals, n);
    }
    if (ok) {
        t->nmono = tmp.nmono;
        t->mono = tmp.mono;
        t->nz_start = tmp.nz_start;
        t->nz_idx = tmp.nz_idx;
        t->nz_val = tmp.nz_val;
    } else {
        poly_clear(&tmp);
    }
    _fmpz_vec_clear(vals, N * n);
    _fmpz_vec_clear(pt, n);
    _fmpz_vec_clear(a, n);
}

/* The polynomial of the square of table last into t (same basis): its
 * values at the lattice points are last composed with itself. */
static void poly_build_square(iterate_map_t M, const iterate_table_struct *last,
                              iterate_table_struct *t)
{
    slong n = M->n, N = last->nmono;
    t->mono = flint_malloc(N * n * sizeof(slong));
    memcpy(t->mono, last->mono, N * n * sizeof(slong));
    t->nmono = N;
    fmpz *vals = _fmpz_vec_init(N * n), *pt = _fmpz_vec_init(n);
    for (slong m = 0; m < N; m++) {
        for (slong i = 0; i < n; i++)
            fmpz_set_si(pt + i, t->mono[m * n + i]);
        poly_eval(M, last, pt, pt);
        poly_eval(M, last, vals + m * n, pt);
    }
    poly_interpolate(M, t, vals);
    _fmpz_vec_clear(vals, N * n);
    _fmpz_vec_clear(pt, n);
}

static ns_status cancelled(nserr_t err)
{
    return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "the iteration was stopped");
}

/* ---- a torsion-free cover for presentations with finite relative orders
 *
 * Let G be presented by P with some finite relative orders.  H is the group
 * of P without its power relations: the same generators, all of infinite
 * order, the same conjugate relations and the same commuting pairs.  When
 * that presentation is consistent (the test words of pcp_is_consistent;
 * C. C. Sims, Computation with Finitely Presented Groups, 1994, ch. 9), its
 * normal words are the elements of H, H is nilpotent and torsion-free with
 * the weight filtration of P, and Hall's polynomials hold in it (the route
 * of the torsion-free case).  Every relation of H holds in G, so
 * rho: a_i -> a_i is a homomorphism of H onto G (von Dyck); rho of a vector
 * is the collection of its word in G, and a G-normal vector read in H is a
 * preimage of itself.
 *
 * The lift of alpha: A(a_k) = [A(a_a), A(a_b)] in H for a generator defined
 * as the commutator [a_a, a_b], else alpha(a_k) read in H.  A extends to an
 * endomorphism of H iff it respects H's relations a_k^(a_i) = conj(k,i),
 * checked for every pair i < k < commute_from[i]; the other pairs commute
 * in H, and so do their images, since A maps a generator of weight w into
 * H_w (the generators of weight >= w) and [H_v, H_w] <= H_(v+w) = 1 for
 * v + w > c.  rho A and alpha rho are then homomorphisms H -> G; checked to
 * agree on the generators, they agree everywhere, so
 *     alpha^k(x) = rho(A^k(x))     for x G-normal, read in H.
 * That is the route: iterate in H with the Hall tables and repeated
 * squaring, whatever the size of the exponents, then reduce by rho.  The
 * exponents of the finite generators are reduced once per call, by
 * collection in G (pcp.c reduces powers inside finite subgroups modulo
 * their order before powering).  When a check fails, or P without its power
 * relations is inconsistent, the map steps one application at a time in G.
 */

/* Above this many pc generators the cover is not tried (its checks are
 * quadratic in n). */
#define ITERATE_COVER_MAX_PC 400

/* out := rho(y): the word of y collected in G (out may alias y). */
static void cover_reduce(const iterate_map_struct *M, fmpz *out, const fmpz *y, pcp_work_t WG)
{
    slong n = M->n;
    pcw_t w;
    pcw_init(w);
    pcw_set_vec(w, y, n);
    _fmpz_vec_zero(out, n);
    pcp_collect_word(WG, out, w);
    pcw_clear(w);
}

/* out := A(w) for a word w, A given by the images lift (n x n) in H. */
static void cover_apply_word(pcp_work_t WH, fmpz *out, const pcw_struct *w, const fmpz *lift,
                             slong n)
{
    fmpz *t = _fmpz_vec_init(n);
    _fmpz_vec_zero(out, n);
    for (slong q = 0; q < w->len && !WH->overflow; q++) {
        pcp_elt_pow(WH, t, lift + w->gen[q] * n, w->exp + q);
        pcp_elt_mul(WH, out, out, t);
    }
    _fmpz_vec_clear(t, n);
}

/* At most this many lifts are tried (3^6: every adjustment by -1, 0, 1 of
 * six pairs), for up to 16 pc generators; 27 up to 64, then one. */
#define ITERATE_COVER_MAX_TRIES 729

/* 1 when generator k is defined as a product of commutators of earlier
 * generators (pcp.h), lifted as the product of their lifts. */
static int cover_def_is_product(const pcp_def_struct *d, slong k)
{
    int prod = d->kind == PCP_DEF_PROD && d->len > 0;
    for (slong q = 0; q < d->len && prod; q++)
        prod = d->tb[q] >= 0 && d->ta[q] < k && d->tb[q] < k;
    return prod;
}

/* The lift given by the images img (n x n, in G) adjusted by the kernel
 * elements z (nz x n, in H): A(a_k) = img_k prod_j z_j^(t[k][j]) for the
 * generators not defined as commutators or products of commutators (t:
 * their rows, in order, of nz entries in -1..1), commutators and their
 * products of those above.  1 when A respects H's
 * relations and rho A = alpha rho on the generators. */
static int cover_try_lift(iterate_map_t M, fmpz *lift, const fmpz *img, const fmpz *z, slong nz,
                          const int *t, pcp_work_t WH, pcp_work_t WG)
{
    const pcp_struct *G = M->Q->pcp;
    slong n = G->n, row = 0;
    fmpz *l = _fmpz_vec_init(n), *r = _fmpz_vec_init(n);
    fmpz_t e;
    fmpz_init(e);
    int ok = 1;
    for (slong k = 0; k < n; k++) {
        const pcp_def_struct *d = G->def + k;
        if (d->kind == PCP_DEF_COMM && d->a < k && d->b < k) {
            pcp_elt_comm(WH, lift + k * n, lift + d->a * n, lift + d->b * n);
            continue;
        }
        if (cover_def_is_product(d, k)) {
            /* a product of commutators (pcp.h): the product of their lifts */
            _fmpz_vec_zero(lift + k * n, n);
            for (slong q = 0; q < d->len; q++) {
                pcp_elt_comm(WH, l, lift + d->ta[q] * n, lift + d->tb[q] * n);
                pcp_elt_pow(WH, l, l, d->exp + q);
                pcp_elt_mul(WH, lift + k * n, lift + k * n, l);
            }
            continue;
        }
        _fmpz_vec_set(lift + k * n, img + k * n, n);
        for (slong j = 0; j < nz; j++)
            if (t[row * nz + j]) {
                fmpz_set_si(e, t[row * nz + j]);
                pcp_elt_pow(WH, l, z + j * n, e);
                pcp_elt_mul(WH, lift + k * n, lift + k * n, l);
            }
        row++;
    }
    /* A respects the relations of H */
    for (slong i = 0; i < n && ok && !WH->overflow; i++)
        for (slong k = i + 1; k < G->commute_from[i] && ok && !WH->overflow; k++) {
            pcp_elt_conj(WH, l, lift + k * n, lift + i * n);
            if (G->trivial[pcp_slot(k, i)])
                _fmpz_vec_set(r, lift + k * n, n);
            else
                cover_apply_word(WH, r, WH->P->conj + pcp_slot(k, i), lift, n);
            ok = _fmpz_vec_equal(l, r, n);
        }
    /* rho A = alpha rho on the generators */
    for (slong k = 0; k < n && ok && !WH->overflow && !WG->overflow; k++) {
        cover_reduce(M, l, lift + k * n, WG);
        ok = _fmpz_vec_equal(l, img + k * n, n);
    }
    fmpz_clear(e);
    _fmpz_vec_clear(l, n);
    _fmpz_vec_clear(r, n);
    return ok && !WH->overflow && !WG->overflow;
}

/* Builds H into M->cover when P without its power relations is
 * consistent, and a lift of alpha (the images img in G, n x n) into the
 * first table when one is found; 1 then (M->P is H), 0 otherwise.  A stop
 * of the hook sets WG->overflow.
 *
 * The lifts of alpha differ by the kernel of rho.  The first one tried
 * takes the normal words of the images; when it does not respect H's
 * relations, the images of the generators not defined as commutators are
 * multiplied by -1, 0 or 1 times the kernel elements z_j = a_j^(m_j)
 * pow_j^-1 of the finite generators of weight 1 (rho(z_j) = 1 by the power
 * relation a_j^(m_j) = pow_j), up to ITERATE_COVER_MAX_TRIES choices: e.g.
 * b -> b^-1 on <a, b | a^2, b^6> at class 3, whose normal word b^5 does
 * not respect the relation [b,a,a] = [b,a,b] of H, lifts so (the checks
 * decide; the search only proposes). */
/* The cover's presentation: G's conjugate relations with the exponents
 * of finite generators as stored (symmetric = 0) or as symmetric residues
 * in (-m/2, m/2] (symmetric = 1: a stored [b,a]^5 of order 6 becomes
 * [b,a]^-1, which is what the cover may need to be consistent); NULL when
 * it is not consistent, when a changed word is not the same element of G
 * (then rho would not be a homomorphism), or for symmetric = 1 when no
 * word changes. */
static pcp_struct *cover_presentation(const pcp_struct *G, int symmetric, pcp_work_t WG)
{
    slong n = G->n;
    pcp_struct *H = flint_malloc(sizeof(pcp_struct));
    pcp_init(H);
    pcp_reset(H, n, G->weight, G->maxweight);
    pcw_t w;
    pcw_init(w);
    fmpz *u = _fmpz_vec_init(n), *v = _fmpz_vec_init(n);
    int changed = 0, ok = 1;
    for (slong k = 1; k < G->ncore && ok && !WG->overflow; k++)
        for (slong i = 0; i < k && ok; i++) {
            slong s = pcp_slot(k, i);
            if (G->trivial[s])
                continue;
            pcw_set(w, G->conj + s);
            int ch = 0;
            for (slong q = 0; q < w->len && symmetric; q++) {
                const fmpz *m = G->relorder + w->gen[q];
                if (!fmpz_is_zero(m) && fmpz_cmp_ui(m, 2) > 0) {
                    fmpz_mul_2exp(w->exp + q, w->exp + q, 1);
                    if (fmpz_cmp(w->exp + q, m) > 0) {
                        fmpz_fdiv_q_2exp(w->exp + q, w->exp + q, 1);
                        fmpz_sub(w->exp + q, w->exp + q, m);
                        ch = 1;
                    } else
                        fmpz_fdiv_q_2exp(w->exp + q, w->exp + q, 1);
                }
            }
            if (ch) {
                /* the changed word must be the same element of G */
                _fmpz_vec_zero(u, n);
                pcp_collect_word(WG, u, w);
                pcw_get_vec(v, n, G->conj + s);
                ok = _fmpz_vec_equal(u, v, n);
                changed = 1;
            }
            pcp_set_conj(H, k, i, w);
        }
    for (slong k = 0; k < n; k++)
        pcp_def_set(H->def + k, G->def + k);
    if (ok && (changed || !symmetric) && !WG->overflow) {
        pcp_work_t WH;
        pcp_work_init(WH, H);
        WH->progress = WG->progress;
        ok = !pcp_complete(H, WH) && pcp_is_consistent(H, WH);
        if (WH->overflow)
            WG->overflow = 1;
    } else
        ok = 0;
    pcw_clear(w);
    _fmpz_vec_clear(u, n);
    _fmpz_vec_clear(v, n);
    if (!ok || WG->overflow) {
        pcp_clear(H);
        flint_free(H);
        return NULL;
    }
    return H;
}

/* A lift of alpha to H (the images img in G, n x n) into lift; 1 when one
 * is found (see cover_build). */
static int cover_lift(iterate_map_t M, fmpz *lift, const fmpz *img, pcp_struct *H, pcp_work_t WG)
{
    const pcp_struct *G = M->Q->pcp;
    slong n = G->n;
    pcp_work_t WH;
    pcp_work_init(WH, H);
    WH->progress = WG->progress;
    int ok = 0;
    /* the kernel elements z_j and the generators they adjust */
    slong nz = 0, nfree = 0;
    for (slong j = 0; j < n; j++) {
        nz += G->weight[j] == 1 && !fmpz_is_zero(G->relorder + j);
        nfree += !(G->def[j].kind == PCP_DEF_COMM && G->def[j].a < j && G->def[j].b < j) &&
                 !cover_def_is_product(G->def + j, j);
    }
    fmpz *z = _fmpz_vec_init(FLINT_MAX(nz * n, 1)), *w = _fmpz_vec_init(n);
    slong q = 0;
    for (slong j = 0; j < n; j++)
        if (G->weight[j] == 1 && !fmpz_is_zero(G->relorder + j)) {
            fmpz_set(z + q * n + j, G->relorder + j);
            pcw_get_vec(w, n, G->pow + j);
            pcp_elt_inv(WH, w, w);
            pcp_elt_mul(WH, z + q * n, z + q * n, w);
            q++;
        }
    slong npairs = nz * nfree;
    int *t = flint_calloc(FLINT_MAX(npairs, 1), sizeof(int));
    /* each try checks O(n^2) relations: fewer tries for larger n */
    slong maxtries = n <= 16 ? ITERATE_COVER_MAX_TRIES : n <= 64 ? 27 : 1;
    for (slong tries = 0; tries < maxtries && !WH->overflow && !WG->overflow; tries++) {
        ok = cover_try_lift(M, lift, img, z, nz, t, WH, WG);
        if (ok)
            break;
        /* the next choice: t counts in base 3 with digits 0, 1, -1 */
        slong p = 0;
        while (p < npairs && t[p] == -1)
            t[p++] = 0;
        if (p == npairs)
            break;
        t[p] = t[p] == 0 ? 1 : -1;
    }
    flint_free(t);
    _fmpz_vec_clear(z, FLINT_MAX(nz * n, 1));
    _fmpz_vec_clear(w, n);
    if (WH->overflow)
        WG->overflow = 1;
    return ok && !WG->overflow;
}

/* Builds H into M->cover when G's presentation without its power
 * relations is consistent (as stored, else with symmetric residues), and
 * a lift of alpha (the images img in G, n x n) into the first table when
 * one is found; 1 then (M->P is H), 0 otherwise.  A stop of the hook sets
 * WG->overflow.
 *
 * The lifts of alpha differ by the kernel of rho.  The first one tried
 * takes the normal words of the images; when it does not respect H's
 * relations, the images of the generators not defined as commutators are
 * multiplied by -1, 0 or 1 times the kernel elements z_j = a_j^(m_j)
 * pow_j^-1 of the finite generators of weight 1 (rho(z_j) = 1 by the power
 * relation a_j^(m_j) = pow_j), up to ITERATE_COVER_MAX_TRIES choices: e.g.
 * b -> b^-1 on <a, b | a^2, b^6> at class 3, whose normal word b^5 does
 * not respect the relation [b,a,a] = [b,a,b] of H, lifts so (the checks
 * decide; the search only proposes). */
static int cover_build(iterate_map_t M, const fmpz *img, pcp_work_t WG)
{
    const pcp_struct *G = M->Q->pcp;
    slong n = G->n;
    if (n == 0 || n > ITERATE_COVER_MAX_PC)
        return 0;
    fmpz *lift = _fmpz_vec_init(n * n);
    int ok = 0;
    for (int symmetric = 0; symmetric < 2 && !ok && !WG->overflow; symmetric++) {
        pcp_struct *H = cover_presentation(G, symmetric, WG);
        if (H == NULL)
            continue;
        ok = cover_lift(M, lift, img, H, WG);
        if (ok || M->cover == NULL) {
            /* kept for iterate_map_eval even when the map does not lift */
            if (M->cover) {
                pcp_clear(M->cover);
                flint_free(M->cover);
            }
            M->cover = H;
        } else {
            pcp_clear(H);
            flint_free(H);
        }
    }
    if (ok) {
        M->P = M->cover;
        M->hall = 1;
        _fmpz_vec_set(M->tab->img, lift, n * n);
    }
    _fmpz_vec_clear(lift, n * n);
    return ok;
}

ns_status iterate_map_set(iterate_map_t M, const nq_t Q, const endo_t E,
                          const ns_progress_t *progress, nserr_t err)
{
    pcp_work_t W;
    pcp_work_init(W, Q->pcp);
    W->progress = progress;
    iterate_map_clear(M);
    if (!E->valid)
        return nserr_set(err, NS_ERR_INPUT, 0, 0,
                         "the map is not well defined on the quotient: nothing to iterate");
    slong n = Q->pcp->n;
    M->Q = Q;
    M->P = Q->pcp;
    M->n = n;
    M->deg = Q->pcp->maxweight;
    M->hall = Q->pcp->torsion_free;
    if (endo_ensure_pc_images(E, Q, W)) {
        pcp_work_clear(W);
        return cancelled(err);
    }
    M->tab = flint_calloc(1, sizeof(iterate_table_struct));
    M->ntab = 1;
    M->tab->img = _fmpz_vec_init(FLINT_MAX(n * n, 1));
    _fmpz_vec_set(M->tab->img, E->pc_img, n * n);
    if (!M->hall)
        cover_build(M, E->pc_img, W);
    if (M->hall && !W->overflow) {
        pcp_work_t WH;
        pcp_work_init(WH, M->P);
        WH->progress = progress;
        table_make_diff(M, M->tab, WH);
        if (!WH->overflow)
            poly_build_first(M, M->tab, WH);
        if (WH->overflow)
            W->overflow = 1;
        pcp_work_clear(WH);
    }
    int stopped = W->overflow;
    pcp_work_clear(W);
    if (stopped) {
        iterate_map_clear(M);
        return cancelled(err);
    }
    M->nlayers = Q->class_reached;
    M->layers = Q->layers;
    for (slong j = 0; j < M->nlayers; j++)
        layer_ensure_coords(Q->layers + j);
    return NS_OK;
}

/* Makes tables 0..b exist: table b+1 is table b applied to its own
 * images (alpha^(2^(b+1)) = alpha^(2^b) o alpha^(2^b)). */
static int ensure_table(iterate_map_t M, slong b, pcp_work_t W)
{
    slong n = M->n;
    while (M->ntab <= b && !W->overflow) {
        iterate_table_struct *last = M->tab + M->ntab - 1;
        iterate_table_struct t;
        memset(&t, 0, sizeof t);
        t.img = _fmpz_vec_init(FLINT_MAX(n * n, 1));
        for (slong k = 0; k < n && !W->overflow; k++)
            table_apply(M, last, t.img + k * n, last->img + k * n, W);
        if (last->nmono)
            poly_build_square(M, last, &t); /* no collection needed */
        else if (M->hall && !W->overflow)
            table_make_diff(M, &t, W);
        if (W->overflow) {
            table_clear(&t, n, M->deg);
            break;
        }
        M->tab = flint_realloc(M->tab, (M->ntab + 1) * sizeof(iterate_table_struct));
        M->tab[M->ntab++] = t;
    }
    return W->overflow;
}

ns_status iterate_map_advance(iterate_map_t M, fmpz *x, ulong k,
                              const ns_progress_t *progress, nserr_t err)
{
    slong n = M->n;
    if (k == 0 || n == 0)
        return NS_OK;
    pcp_work_t W;
    pcp_work_init(W, M->P);
    W->progress = progress;
    fmpz *y = _fmpz_vec_init(n);
    _fmpz_vec_set(y, x, n); /* with a cover: x read in H, a preimage */
    /* one step at a time for small k (no squared tables needed), by the
     * binary digits of k otherwise; the alpha^(2^b) commute.  Without Hall
     * polynomials (finite relative orders and no cover) a squared table
     * has huge exponents in its images, and applying it costs far more
     * than k applications of alpha, whose images stay small: step singly
     * there. */
    if (k <= 4 || !M->hall) {
        for (ulong s = 0; s < k && !W->overflow; s++)
            table_apply(M, M->tab, y, y, W);
    } else {
        for (slong b = 0; (k >> b) != 0 && !W->overflow; b++) {
            if (!((k >> b) & 1))
                continue;
            if (ensure_table(M, b, W))
                break;
            table_apply(M, M->tab + b, y, y, W);
        }
    }
    if (M->P == M->cover && !W->overflow) {
        pcp_work_t WG;
        pcp_work_init(WG, M->Q->pcp);
        WG->progress = progress;
        cover_reduce(M, y, y, WG);
        if (WG->overflow)
            W->overflow = 1;
        pcp_work_clear(WG);
    }
    int stopped = W->overflow;
    pcp_work_clear(W);
    if (!stopped)
        _fmpz_vec_set(x, y, n);
    _fmpz_vec_clear(y, n);
    return stopped ? cancelled(err) : NS_OK;
}

ns_status iterate_map_eval(const iterate_map_t M, fmpz *out, const expr_t w,
                           const ns_progress_t *progress, nserr_t err)
{
    if (M->cover == NULL)
        return nq_eval(M->Q, out, w, progress, err);
    /* the input generators' values read in H are preimages under rho, a
     * homomorphism, so rho(w evaluated in H) is w evaluated in G; in H
     * huge exponents go by Hall polynomials */
    pcp_work_t WH, WG;
    pcp_work_init(WH, M->cover);
    pcp_work_init(WG, M->Q->pcp);
    WH->progress = WG->progress = progress;
    if (!pcp_eval_expr(WH, out, w->root, M->Q->images))
        cover_reduce(M, out, out, WG);
    int stopped = WH->overflow || WG->overflow;
    pcp_work_clear(WH);
    pcp_work_clear(WG);
    if (stopped)
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "evaluation stopped");
    return NS_OK;
}

/* ---- description of one iterate ------------------------------------ */

void iterate_point_init(iterate_point_t p)
{
    memset(p, 0, sizeof(iterate_point_struct));
}

void iterate_point_clear(iterate_point_t p)
{
    if (p->elt)
        _fmpz_vec_clear(p->elt, FLINT_MAX(p->npc, 1));
    for (slong j = 0; j < p->nlayers; j++) {
        iterate_layer_struct *L = p->layers + j;
        _fmpz_vec_clear(L->coords, FLINT_MAX(L->free_rank, 1));
        _fmpz_vec_clear(L->torsion, FLINT_MAX(L->ntors, 1));
    }
    flint_free(p->layers);
    iterate_point_init(p);
}

/* Decimal digits of |x|; 1 for 0.  The bit length brackets log10 |x|;
 * when a power of ten 10^hi falls inside the bracket, |x| is compared with
 * it at 64 bits (Arb balls), and exactly only when the balls overlap (|x|
 * within a relative 2^-60 or so of 10^hi): a describing step stays cheap
 * however long the coordinates grow. */
static slong decimal_digits(const iterate_map_struct *M, const fmpz_t x)
{
    if (fmpz_is_zero(x))
        return 1;
    ulong b = fmpz_bits(x); /* 2^(b-1) <= |x| < 2^b */
    const double l2 = 0.30102999566398119521;
    slong lo = (slong)((double)(b - 1) * l2 - 1e-9), hi = (slong)((double)b * l2 + 1e-9);
    if (lo == hi)
        return lo + 1;
    arb_t ax, p10;
    arb_init(ax);
    arb_init(p10);
    arb_set_round_fmpz(ax, x, 64);
    arb_abs(ax, ax);
    arb_ui_pow_ui(p10, 10, (ulong)hi, 64);
    int ge = arb_ge(ax, p10) ? 1 : arb_lt(ax, p10) ? 0 : -1;
    arb_clear(ax);
    arb_clear(p10);
    if (ge >= 0)
        return ge ? hi + 1 : hi;
    /* 10^hi may lie in the bracket: compare exactly */
    iterate_map_struct *C = (iterate_map_struct *)M; /* a cache: M is logically const */
    if (C->pow10_k != hi) {
        fmpz_ui_pow_ui(C->pow10, 10, (ulong)hi);
        C->pow10_k = hi;
    }
    return fmpz_cmpabs(x, C->pow10) >= 0 ? hi + 1 : hi;
}

void iterate_point_set(iterate_point_t p, const iterate_map_t M, const fmpz *x, ulong n)
{
    iterate_point_clear(p);
    p->n = n;
    p->npc = M->n;
    p->elt = _fmpz_vec_init(FLINT_MAX(M->n, 1));
    _fmpz_vec_set(p->elt, x, M->n);
    p->nlayers = M->nlayers;
    p->layers = flint_calloc(FLINT_MAX(M->nlayers, 1), sizeof(iterate_layer_struct));
    fmpz_t big;
    fmpz_init(big);
    for (slong j = 0; j < M->nlayers; j++) {
        const layer_struct *L = M->layers + j;
        iterate_layer_struct *P = p->layers + j;
        slong cnt = L->count, r = L->free_rank;
        const fmpz *v = x + L->start;
        P->weight = L->weight;
        P->free_rank = r;
        P->coords = _fmpz_vec_init(FLINT_MAX(r, 1));
        for (slong a = 0; a < r; a++)
            for (slong b = 0; b < cnt; b++)
                fmpz_addmul(P->coords + a, fmpz_mat_entry(L->phi, a, b), v + b);
        /* torsion: v - sigma phi v reduced modulo the relations */
        fmpz *t = _fmpz_vec_init(FLINT_MAX(cnt, 1));
        _fmpz_vec_set(t, v, cnt);
        for (slong b = 0; b < cnt; b++)
            for (slong a = 0; a < r; a++)
                fmpz_submul(t + b, fmpz_mat_entry(L->sigma, b, a), P->coords + a);
        layer_reduce_vec(L, t);
        P->torsion = _fmpz_vec_init(FLINT_MAX(L->nfinite, 1));
        slong col = 0;
        for (slong row = 0; row < fmpz_mat_nrows(L->hnf); row++) {
            while (col < cnt && fmpz_is_zero(fmpz_mat_entry(L->hnf, row, col)))
                col++;
            if (col >= cnt)
                break;
            if (!fmpz_is_one(fmpz_mat_entry(L->hnf, row, col)))
                fmpz_set(P->torsion + P->ntors++, t + col);
        }
        _fmpz_vec_clear(t, FLINT_MAX(cnt, 1));
        fmpz_zero(big);
        for (slong a = 0; a < r; a++) {
            if (fmpz_cmpabs(P->coords + a, big) > 0)
                fmpz_abs(big, P->coords + a);
        }
        for (slong a = 0; a < P->ntors; a++)
            if (fmpz_cmpabs(P->torsion + a, big) > 0)
                fmpz_abs(big, P->torsion + a);
        P->digits = decimal_digits(M, big);
    }
    fmpz_clear(big);
}

void iterate_point_norm(arb_t out, const iterate_point_t p, slong prec)
{
    /* from the coordinates rounded to prec + 16 bits: squaring them
     * exactly would cost more than the step itself once they are long,
     * and the balls keep the result certified */
    arb_t t, v;
    arb_init(t);
    arb_init(v);
    arb_zero(out);
    for (slong j = 0; j < p->nlayers; j++) {
        const iterate_layer_struct *L = p->layers + j;
        arb_zero(t);
        for (slong a = 0; a < L->free_rank; a++) {
            if (fmpz_is_zero(L->coords + a))
                continue;
            arb_set_round_fmpz(v, L->coords + a, prec + 16);
            arb_addmul(t, v, v, prec + 16);
        }
        if (arb_is_zero(t))
            continue;
        /* ||v||^(1/w) = (||v||^2)^(1/(2w)); t > 0 here */
        arb_root_ui(t, t, 2 * (ulong)L->weight, prec);
        arb_add(out, out, t, prec);
    }
    arb_clear(t);
    arb_clear(v);
}

void iterate_point_root(arb_t out, const iterate_point_t p, slong prec)
{
    if (p->n == 0) {
        arb_indeterminate(out);
        return;
    }
    iterate_point_norm(out, p, prec);
    if (arb_is_zero(out))
        return;
    arb_log(out, out, prec);
    arb_div_ui(out, out, p->n, prec);
    arb_exp(out, out, prec);
}

char *iterate_decimal_str(void (*fn)(arb_t, const void *, slong), const void *ctx,
                          slong digits)
{
    arb_t x;
    arb_init(x);
    char *res = NULL;
    for (slong prec = 4 * digits + 64; prec <= (4 * digits + 64) << 12 && res == NULL;
         prec *= 2) {
        fn(x, ctx, prec);
        if (!arb_is_finite(x))
            break;
        res = spectrum_ball_get_str(x, digits); /* flint_malloc'd, or NULL */
    }
    arb_clear(x);
    return res;
}

static void norm_fn(arb_t out, const void *ctx, slong prec)
{
    iterate_point_norm(out, (const iterate_point_struct *)ctx, prec);
}

static void root_fn(arb_t out, const void *ctx, slong prec)
{
    iterate_point_root(out, (const iterate_point_struct *)ctx, prec);
}

double iterate_point_root_d(const iterate_point_t p)
{
    if (p->n == 0)
        return NAN;
    arb_t r;
    arb_init(r);
    iterate_point_root(r, p, 64);
    double d = arf_get_d(arb_midref(r), ARF_RND_NEAR);
    arb_clear(r);
    return d;
}

char *iterate_point_norm_str(const iterate_point_t p, slong digits)
{
    return iterate_decimal_str(norm_fn, p, digits);
}

char *iterate_point_root_str(const iterate_point_t p, slong digits)
{
    if (p->n == 0)
        return NULL;
    return iterate_decimal_str(root_fn, p, digits);
}
