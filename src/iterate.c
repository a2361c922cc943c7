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

static void free_fields_clear(iterate_map_t M);

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
    slong n = M->tn, c = M->deg;
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
    slong n = M->tn, N = t->nmono;
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
    slong n = M->tn, len = 0, alloc = 0;
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
        table_clear(M->tab + b, M->tn, M->deg);
    flint_free(M->tab);
    free_fields_clear(M);
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
    slong n = M->tn, D = M->deg;
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
    slong n = M->tn, D = M->deg;
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
    slong n = M->tn;
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
    slong n = M->tn;
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
    slong n = M->tn, N = last->nmono;
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

/* ---- the free nilpotent group as a cover every map lifts to
 *
 * When no lift of alpha to H was found (or H does not exist), let F be the
 * free nilpotent group of class c on the input generators x_1..x_r (the
 * nilpotent quotient of the presentation without relators) and
 * pi: F -> G, x_i -> its value in G.  pi is a homomorphism: F's relators
 * are the commutators of weight c + 1, which hold in G (von Dyck's
 * theorem), and it is onto.  F is free in the variety of nilpotent groups
 * of class <= c, so A: F -> F, x_i -> a preimage of alpha(x_i), is an
 * endomorphism, and pi A = alpha pi holds on the x_i, hence on F:
 *     alpha^k(pi y) = pi(A^k y)        for every y in F.
 * F is torsion-free and its presentation consistent (Sims 1994, ch. 9),
 * so A^k y goes by the Hall tables and repeated squaring (P. Hall,
 * "Nilpotent groups", 1957) at a cost independent of the exponents' size.
 *
 * pi(y) is then computed layer by layer without collection in G.  Write
 * F_w, G_w for the generators of weight >= w (the lower central series),
 * pre(a_k) in F_(weight k) for the preimage of G's pc generator a_k
 * (from its definition: images, commutators, products of them; pcp.h),
 * f_j for F's pc generators.  The kernel elements
 *     kappa_j = f_j pre(pi(f_j))^-1,   mu_k = pre(a_k)^(m_k) pre(pow_k)^-1
 * (pre of a G-normal word is the product of the pre(a_k) to its
 * exponents; pow_k the power word of a finite a_k) map to 1.  For y in F_w
 * with weight-w exponents y_j, pi(y) = prod_k a_k^(e_k) mod G_(w+1), e_k
 * = sum_j y_j [exponent of a_k in pi(f_j)] over the weight-w a_k; with
 * e_k = q_k m_k + x_k (0 <= x_k < m_k; x_k = e_k, q_k = 0 for infinite
 * a_k) and X = prod_k pre(a_k)^(x_k),
 *     z = X^-1 y prod_j kappa_j^(-y_j) prod_k mu_k^(-q_k)
 * lies in F_(w+1) (modulo F_(w+1) the factors add up to
 * sum_k (e_k - x_k - q_k m_k) pre(a_k) = 0, since pow_k lies in
 * G_(w+1)) and pi(z) = pi(X)^-1 pi(y), so pi(y) = prod_k a_k^(x_k) pi(z),
 * G-normal in its weight-w part.  After c layers z = 1.  Every product is
 * in F, where powers go by Hall's polynomials.  The construction is
 * checked (pi(pre(a_k)) = a_k, pi(A f_j) = alpha(pi(f_j)), the weights
 * above) and the route not taken when a check fails. */

/* Above this many pc generators F is not built. */
#define ITERATE_FREE_MAX_PC 400

/* out := prod_j rows_j^(y_j) (rows: len x W->P->n) in W's presentation. */
static void free_eval_vec(pcp_work_t W, fmpz *out, const fmpz *y, slong len, const fmpz *rows)
{
    slong m = W->P->n;
    fmpz *t = _fmpz_vec_init(FLINT_MAX(m, 1)), *acc = _fmpz_vec_init(FLINT_MAX(m, 1));
    for (slong j = 0; j < len && !W->overflow; j++) {
        if (fmpz_is_zero(y + j))
            continue;
        pcp_elt_pow(W, t, rows + j * m, y + j);
        pcp_elt_mul(W, acc, acc, t);
    }
    _fmpz_vec_set(out, acc, m);
    _fmpz_vec_clear(t, FLINT_MAX(m, 1));
    _fmpz_vec_clear(acc, FLINT_MAX(m, 1));
}

/* The values of the pc generators of a presentation with definitions def
 * (nd of them) in W's presentation, given the values of the input
 * generators (inputs, rows of W->P->n), into out (nd rows); 0 when a
 * definition is missing. */
static int free_values_by_def(pcp_work_t W, fmpz *out, const pcp_def_struct *def, slong nd,
                              const fmpz *inputs)
{
    slong m = W->P->n;
    fmpz *t = _fmpz_vec_init(FLINT_MAX(m, 1));
    int ok = 1;
    for (slong k = 0; k < nd && ok && !W->overflow; k++) {
        const pcp_def_struct *d = def + k;
        fmpz *o = out + k * m;
        if (d->kind == PCP_DEF_IMAGE) {
            _fmpz_vec_set(o, inputs + d->a * m, m);
        } else if (d->kind == PCP_DEF_COMM && d->a >= 0 && d->b >= 0 && d->a < k && d->b < k) {
            pcp_elt_comm(W, o, out + d->a * m, out + d->b * m);
        } else if (d->kind == PCP_DEF_PROD) {
            _fmpz_vec_zero(o, m);
            for (slong q = 0; q < d->len && ok; q++) {
                if (d->tb[q] < 0)
                    _fmpz_vec_set(t, inputs + d->ta[q] * m, m);
                else if (d->ta[q] < k && d->tb[q] < k)
                    pcp_elt_comm(W, t, out + d->ta[q] * m, out + d->tb[q] * m);
                else
                    ok = 0;
                pcp_elt_pow(W, t, t, d->exp + q);
                pcp_elt_mul(W, o, o, t);
            }
        } else
            ok = 0;
    }
    _fmpz_vec_clear(t, FLINT_MAX(m, 1));
    return ok;
}

/* out (n entries, G-normal) := pi(y) for y in F (tn entries), layer by
 * layer (see above); WF on F.  0 when the remainder after the last layer
 * is not 1 (a broken construction; free_build checks). */
static int free_project(const iterate_map_struct *M, fmpz *out, const fmpz *y, pcp_work_t WF)
{
    const pcp_struct *G = M->Q->pcp, *F = M->P;
    slong n = M->n, tn = M->tn;
    fmpz *z = _fmpz_vec_init(tn), *X = _fmpz_vec_init(tn), *t = _fmpz_vec_init(tn);
    fmpz *q = _fmpz_vec_init(n), *yw = _fmpz_vec_init(tn);
    fmpz_t e, neg;
    fmpz_init(e);
    fmpz_init(neg);
    _fmpz_vec_set(z, y, tn);
    _fmpz_vec_zero(out, n);
    for (slong w = 1; w <= M->deg && !WF->overflow; w++) {
        _fmpz_vec_zero(X, tn);
        for (slong k = 0; k < n; k++) {
            if (G->weight[k] != w)
                continue;
            fmpz_zero(e);
            for (slong j = 0; j < tn; j++)
                if (F->weight[j] == w)
                    fmpz_addmul(e, z + j, M->f_in_g + j * n + k);
            fmpz_zero(q + k);
            if (fmpz_is_zero(G->relorder + k))
                fmpz_set(out + k, e);
            else
                fmpz_fdiv_qr(q + k, out + k, e, G->relorder + k);
            if (!fmpz_is_zero(out + k)) {
                pcp_elt_pow(WF, t, M->g_to_f + k * tn, out + k);
                pcp_elt_mul(WF, X, X, t);
            }
        }
        _fmpz_vec_set(yw, z, tn);
        pcp_elt_inv(WF, X, X);
        pcp_elt_mul(WF, z, X, z);
        for (slong j = 0; j < tn && !WF->overflow; j++)
            if (F->weight[j] == w && !fmpz_is_zero(yw + j)) {
                fmpz_neg(neg, yw + j);
                pcp_elt_pow(WF, t, M->kappa + j * tn, neg);
                pcp_elt_mul(WF, z, z, t);
            }
        for (slong k = 0; k < n && !WF->overflow; k++)
            if (G->weight[k] == w && !fmpz_is_zero(q + k)) {
                fmpz_neg(neg, q + k);
                pcp_elt_pow(WF, t, M->mu + k * tn, neg);
                pcp_elt_mul(WF, z, z, t);
            }
    }
    int ok = _fmpz_vec_is_zero(z, tn);
    fmpz_clear(e);
    fmpz_clear(neg);
    _fmpz_vec_clear(z, tn);
    _fmpz_vec_clear(X, tn);
    _fmpz_vec_clear(t, tn);
    _fmpz_vec_clear(q, n);
    _fmpz_vec_clear(yw, tn);
    return ok;
}

static void free_fields_clear(iterate_map_t M)
{
    if (M->fgroup == NULL)
        return;
    slong n = M->n, tn = M->fgroup->pcp->n;
    _fmpz_vec_clear(M->g_to_f, FLINT_MAX(n * tn, 1));
    _fmpz_vec_clear(M->f_in_g, FLINT_MAX(tn * n, 1));
    _fmpz_vec_clear(M->kappa, FLINT_MAX(tn * tn, 1));
    _fmpz_vec_clear(M->mu, FLINT_MAX(n * tn, 1));
    nq_clear(M->fgroup);
    flint_free(M->fgroup);
    M->fgroup = NULL;
    M->g_to_f = M->f_in_g = M->kappa = M->mu = NULL;
}

/* Sets up route FREE (see above); 1 when taken.  E is the map on G with
 * its pc images.  A stop of the hook sets WG->overflow. */
static int free_build(iterate_map_t M, const endo_t E, pcp_work_t WG)
{
    const nq_struct *Q = M->Q;
    const pcp_struct *G = Q->pcp;
    slong n = G->n, r = Q->pres->gens->n, c = G->maxweight;
    if (n == 0 || c < 1 || r == 0)
        return 0;
    pres_t fp;
    pres_init(fp);
    names_set(fp->gens, Q->pres->gens);
    nq_struct *FQ = flint_malloc(sizeof(nq_struct));
    nq_init(FQ);
    nserr_t err;
    nserr_init(err);
    ns_status st = nq_compute_max(FQ, fp, c, ITERATE_FREE_MAX_PC, WG->progress, err);
    pres_clear(fp);
    if (st == NS_ERR_CANCELLED)
        WG->overflow = 1;
    if (st != NS_OK || FQ->class_reached != c || !FQ->pcp->torsion_free) {
        nq_clear(FQ);
        flint_free(FQ);
        return 0;
    }
    const pcp_struct *FP = FQ->pcp;
    slong tn = FP->n;
    M->fgroup = FQ;
    M->g_to_f = _fmpz_vec_init(FLINT_MAX(n * tn, 1));
    M->f_in_g = _fmpz_vec_init(FLINT_MAX(tn * n, 1));
    M->kappa = _fmpz_vec_init(FLINT_MAX(tn * tn, 1));
    M->mu = _fmpz_vec_init(FLINT_MAX(n * tn, 1));
    const pcp_struct *keepP = M->P;
    slong keep_tn = M->tn;
    M->P = FP; /* free_project reads P and tn */
    M->tn = tn;
    pcp_work_t WF;
    pcp_work_init(WF, FP);
    WF->progress = WG->progress;
    fmpz *u = _fmpz_vec_init(n), *v = _fmpz_vec_init(n), *t = _fmpz_vec_init(tn);
    fmpz *gen_f = _fmpz_vec_init(FLINT_MAX(r * tn, 1));
    endo_t EF;
    endo_init(EF);
    int ok = free_values_by_def(WF, M->g_to_f, G->def, n, FQ->images) &&
             free_values_by_def(WG, M->f_in_g, FP->def, tn, Q->images);
    /* the weights the layer step relies on */
    for (slong j = 0; j < tn && ok; j++)
        for (slong k = 0; k < n && ok; k++)
            ok = fmpz_is_zero(M->f_in_g + j * n + k) || G->weight[k] >= FP->weight[j];
    for (slong k = 0; k < n && ok; k++) {
        for (slong j = 0; j < tn && ok; j++)
            ok = fmpz_is_zero(M->g_to_f + k * tn + j) || FP->weight[j] >= G->weight[k];
        if (!fmpz_is_zero(G->relorder + k))
            for (slong q = 0; q < G->pow[k].len && ok; q++)
                ok = G->weight[G->pow[k].gen[q]] > G->weight[k];
    }
    /* the kernel elements */
    for (slong j = 0; j < tn && ok && !WF->overflow; j++) {
        free_eval_vec(WF, t, M->f_in_g + j * n, n, M->g_to_f);
        pcp_elt_inv(WF, t, t);
        fmpz_one(M->kappa + j * tn + j);
        pcp_elt_mul(WF, M->kappa + j * tn, M->kappa + j * tn, t);
    }
    for (slong k = 0; k < n && ok && !WF->overflow; k++) {
        if (fmpz_is_zero(G->relorder + k))
            continue;
        pcw_get_vec(u, n, G->pow + k);
        free_eval_vec(WF, t, u, n, M->g_to_f);
        pcp_elt_inv(WF, t, t);
        pcp_elt_pow(WF, M->mu + k * tn, M->g_to_f + k * tn, G->relorder + k);
        pcp_elt_mul(WF, M->mu + k * tn, M->mu + k * tn, t);
    }
    /* pi(pre(a_k)) = a_k */
    for (slong k = 0; k < n && ok && !WF->overflow; k++) {
        _fmpz_vec_zero(v, n);
        fmpz_one(v + k);
        ok = free_project(M, u, M->g_to_f + k * tn, WF) && _fmpz_vec_equal(u, v, n);
    }
    /* A: x_i -> the preimage of alpha(x_i) */
    for (slong i = 0; i < r && ok && !WF->overflow; i++)
        free_eval_vec(WF, gen_f + i * tn, E->gen_img + i * n, n, M->g_to_f);
    ok = ok && !WF->overflow && endo_set_elts(EF, FQ, gen_f, WG->progress, err) == NS_OK &&
         EF->valid && !endo_ensure_pc_images(EF, FQ, WF);
    /* pi A = alpha pi on F's pc generators */
    for (slong j = 0; j < tn && ok && !WF->overflow && !WG->overflow; j++) {
        ok = free_project(M, u, EF->pc_img + j * tn, WF);
        endo_apply(E, Q, v, M->f_in_g + j * n, WG);
        ok = ok && _fmpz_vec_equal(u, v, n);
    }
    if (WF->overflow)
        WG->overflow = 1;
    ok = ok && !WG->overflow;
    if (ok) {
        table_clear(M->tab, n, M->deg);
        M->tab->img = _fmpz_vec_init(FLINT_MAX(tn * tn, 1));
        _fmpz_vec_set(M->tab->img, EF->pc_img, tn * tn);
        M->hall = 1;
        M->route = ITERATE_ROUTE_FREE;
    } else {
        M->P = keepP;
        M->tn = keep_tn;
        free_fields_clear(M);
    }
    endo_clear(EF);
    _fmpz_vec_clear(gen_f, FLINT_MAX(r * tn, 1));
    _fmpz_vec_clear(u, n);
    _fmpz_vec_clear(v, n);
    _fmpz_vec_clear(t, tn);
    pcp_work_clear(WF);
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
    M->n = M->tn = n;
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
    M->route = M->hall ? ITERATE_ROUTE_HALL : ITERATE_ROUTE_STEP;
    if (!M->hall && cover_build(M, E->pc_img, W))
        M->route = ITERATE_ROUTE_COVER;
    else if (!M->hall && !W->overflow)
        free_build(M, E, W);
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
    slong n = M->tn;
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
    slong n = M->n, tn = M->tn;
    if (k == 0 || n == 0)
        return NS_OK;
    pcp_work_t W;
    pcp_work_init(W, M->P);
    W->progress = progress;
    fmpz *y = _fmpz_vec_init(FLINT_MAX(tn, 1));
    if (M->route == ITERATE_ROUTE_FREE)
        free_eval_vec(W, y, x, n, M->g_to_f); /* a preimage in F */
    else
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
    fmpz *out = y;
    if (M->route == ITERATE_ROUTE_FREE && !W->overflow) {
        out = _fmpz_vec_init(n);
        free_project(M, out, y, W);
    } else if (M->P == M->cover && !W->overflow) {
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
        _fmpz_vec_set(x, out, n);
    if (out != y)
        _fmpz_vec_clear(out, n);
    _fmpz_vec_clear(y, FLINT_MAX(tn, 1));
    return stopped ? cancelled(err) : NS_OK;
}

ns_status iterate_map_eval(const iterate_map_t M, fmpz *out, const expr_t w,
                           const ns_progress_t *progress, nserr_t err)
{
    if (M->cover == NULL && M->fgroup != NULL) {
        /* route FREE without H: w's value in F (x_i -> x_i) is a preimage
         * of its value in G, brought down by pi (see free_project) */
        pcp_work_t WF;
        pcp_work_init(WF, M->fgroup->pcp);
        WF->progress = progress;
        fmpz *y = _fmpz_vec_init(M->tn);
        if (!pcp_eval_expr(WF, y, w->root, M->fgroup->images))
            free_project(M, out, y, WF);
        int stopped = WF->overflow;
        _fmpz_vec_clear(y, M->tn);
        pcp_work_clear(WF);
        if (stopped)
            return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "evaluation stopped");
        return NS_OK;
    }
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
