/* nq.c — the nilpotent quotient algorithm; see nq.h for the method. */
#include <stdio.h>
#include <string.h>
#include <flint/fmpz_lll.h>
#include <flint/fmpz_mat.h>
#include "elim.h"
#include "nq.h"
#include "strbuf.h"

/* The number of tails is the other resource limit (the pc generators are
 * limited by the caller, NQ_DEFAULT_MAX_PC in nq.h). */
#define NQ_MAX_TAILS 60000

typedef enum { TAIL_POW, TAIL_IMG, TAIL_CONJ } tail_kind;

typedef struct {
    tail_kind kind;
    slong a, b; /* POW: a_a;  IMG: input generator a;  CONJ: a_a^(a_b) */
} tail_struct;

void nq_init(nq_t Q)
{
    memset(Q, 0, sizeof(nq_struct));
    pres_init(Q->pres);
    pcp_init(Q->pcp);
}

static void free_layers(nq_t Q)
{
    for (slong j = 0; j < Q->nlayers; j++)
        layer_clear(Q->layers + j);
    flint_free(Q->layers);
    Q->layers = NULL;
    Q->nlayers = 0;
}

void nq_clear(nq_t Q)
{
    if (Q->images)
        _fmpz_vec_clear(Q->images, FLINT_MAX(Q->pres->gens->n * Q->pcp->n, 1));
    if (Q->labels) {
        for (slong k = 0; k < Q->pcp->n; k++)
            flint_free(Q->labels[k]);
        flint_free(Q->labels);
    }
    free_layers(Q);
    pcp_clear(Q->pcp);
    pres_clear(Q->pres);
    memset(Q, 0, sizeof(nq_struct));
    pres_init(Q->pres);
    pcp_init(Q->pcp);
}

static int progress_stage(const ns_progress_t *p, slong c, const char *what, double f)
{
    char buf[96];
    snprintf(buf, sizeof buf, "class %ld: %s", (long)c, what);
    return ns_progress_report(p, buf, f);
}

/* v (ns entries) reduced modulo the torsion relations of q: each torsion
 * coordinate ends in [0, d). */
static void reduce_central(fmpz *v, const elim_quotient_t q)
{
    slong ns = q->nsurv;
    fmpz_t k;
    fmpz_init(k);
    for (slong s = 0; s < ns; s++) {
        if (fmpz_is_zero(q->order + s))
            continue;
        fmpz_fdiv_q(k, v + s, q->order + s);
        if (!fmpz_is_zero(k))
            _fmpz_vec_scalar_submul_fmpz(v, q->rel + s * ns, ns, k);
    }
    fmpz_clear(k);
}

/* Appends base + sum_s v_s a_(base+s) to the word w. */
static void push_central(pcw_t w, const fmpz *v, slong ns, slong base)
{
    for (slong s = 0; s < ns; s++)
        if (!fmpz_is_zero(v + s))
            pcw_push(w, base + s, v + s);
}

/* The reduced expression of tail column t in the survivors. */
static void tail_value(fmpz *v, const elim_quotient_t q, slong t)
{
    if (q->nsurv == 0)
        return; /* nothing survives (q->expr may be NULL) */
    _fmpz_vec_set(v, q->expr + t * q->nsurv, q->nsurv);
    reduce_central(v, q);
}

/* w := the class-c right-hand side of a_k^(a_i): the stored word, or a_k
 * itself for a pair that commuted. */
static void old_conj_word(pcw_t w, const pcp_struct *P, slong k, slong i)
{
    slong s = pcp_slot(k, i);
    if (k < P->ncore && !P->trivial[s])
        pcw_set(w, P->conj + s);
    else {
        fmpz_t one;
        fmpz_init_set_ui(one, 1);
        pcw_zero(w);
        pcw_push(w, k, one);
        fmpz_clear(one);
    }
}

/* Sets the power relations of the survivors (indices base.. in P). */
static void set_survivor_powers(pcp_t P, const elim_quotient_t q, slong base)
{
    slong ns = q->nsurv;
    fmpz *v = _fmpz_vec_init(ns);
    pcw_t w;
    pcw_init(w);
    for (slong s = 0; s < ns; s++) {
        if (fmpz_is_zero(q->order + s))
            continue;
        _fmpz_vec_neg(v, q->rel + s * ns, ns);
        fmpz_zero(v + s);
        reduce_central(v, q);
        pcw_zero(w);
        push_central(w, v, ns, base);
        pcp_set_power(P, base + s, q->order + s, w);
    }
    pcw_clear(w);
    _fmpz_vec_clear(v, ns);
}

/* The layer-basis phase (drop_redundant_survivors, swap_in_commutator_tails,
 * minimise_survivors) polls progress through this.  work counts coefficient
 * operations weighted by the limbs of the integers they touch, so that a
 * cancel is seen after about NQ_POLL_WORK limb operations however large
 * the entries have grown; every routine also polls once when it starts. */
#define NQ_POLL_WORK (1L << 18)
typedef struct {
    const ns_progress_t *p; /* may be NULL */
    slong work;
    int stopped;            /* the hook asked to stop: every routine returns */
} nq_poll;

static int nq_poll_add(nq_poll *w, slong ops)
{
    if (w->stopped)
        return 1;
    w->work += ops;
    if (w->work < NQ_POLL_WORK)
        return 0;
    w->work = 0;
    w->stopped = ns_progress_report(w->p, NULL, -1.0);
    return w->stopped;
}

static int nq_poll_now(nq_poll *w)
{
    return nq_poll_add(w, NQ_POLL_WORK);
}

/* sum over v of 1 + its size in limbs: the cost of one pass over v */
static slong vec_limbs(const fmpz *v, slong n)
{
    slong l = n;
    for (slong i = 0; i < n; i++)
        l += fmpz_size(v + i);
    return l;
}

static int drop_redundant_survivors(elim_quotient_t q, nq_poll *w);

/* A change of basis of a new layer (minimise_survivors): some survivors
 * are new generators, each a combination of the survivors before. */
typedef struct {
    slong nold;     /* survivors before */
    slong *oldsurv; /* nold: their columns (tails; input generators in class 1) */
    slong nsurv;    /* survivors after */
    slong *which;   /* nsurv: the new generator a survivor is, or -1 (an old one) */
    slong nnew;
    fmpz *comb;     /* nnew x nold: new generator k = sum_j comb[k][j] (old survivor j) */
} basis_change_struct;

static void basis_change_init(basis_change_struct *B)
{
    memset(B, 0, sizeof(basis_change_struct));
}

static void basis_change_clear(basis_change_struct *B)
{
    flint_free(B->oldsurv);
    flint_free(B->which);
    if (B->comb)
        _fmpz_vec_clear(B->comb, B->nnew * B->nold);
    basis_change_init(B);
}

static int minimise_survivors(elim_quotient_t q, basis_change_struct *B, nq_poll *w);

/* d := the definition of survivor s when it is a new generator of B: the
 * product of the terms of the old survivors, old survivor column col
 * giving the term (ta[col], tb[col]) (tb < 0: an image).  Returns 0 when s
 * is an old survivor (d untouched). */
static int basis_change_def(pcp_def_struct *d, const basis_change_struct *B, slong s,
                            const slong *ta, const slong *tb)
{
    if (B->which == NULL || B->which[s] < 0)
        return 0;
    const fmpz *v = B->comb + B->which[s] * B->nold;
    slong len = 0;
    slong *a = flint_malloc(B->nold * sizeof(slong)), *b = flint_malloc(B->nold * sizeof(slong));
    fmpz *e = _fmpz_vec_init(B->nold);
    for (slong j = 0; j < B->nold; j++) {
        if (fmpz_is_zero(v + j))
            continue;
        a[len] = ta[B->oldsurv[j]];
        b[len] = tb[B->oldsurv[j]];
        fmpz_set(e + len, v + j);
        len++;
    }
    if (len == 1 && fmpz_is_one(e)) {
        /* an old survivor after all: its own definition */
        pcp_def_clear(d);
        d->kind = b[0] < 0 ? PCP_DEF_IMAGE : PCP_DEF_COMM;
        d->a = a[0];
        d->b = b[0] < 0 ? 0 : b[0];
    } else
        pcp_def_set_prod(d, len, a, b, e);
    flint_free(a);
    flint_free(b);
    _fmpz_vec_clear(e, B->nold);
    return 1;
}

static ns_status class_one(nq_t Q, pcp_work_t W, nserr_t err)
{
    slong X = Q->pres->gens->n;
    elim_t E;
    elim_quotient_t q;
    fmpz *row = _fmpz_vec_init(X);
    elim_init(E, X);
    elim_quotient_init(q);
    for (slong r = 0; r < Q->pres->nrels; r++) {
        expr_exponent_sums(row, Q->pres->rels + r, X);
        elim_add_dense(E, row);
    }
    elim_get_quotient(q, E);
    nq_poll nopoll = {NULL, 0, 0};
    drop_redundant_survivors(q, &nopoll);
    basis_change_struct B;
    basis_change_init(&B);
    if (!(Q->flags & NQ_KEEP_DEPENDENT))
        minimise_survivors(q, &B, &nopoll);
    slong ns = q->nsurv;
    slong *wt = flint_malloc(FLINT_MAX(ns, 1) * sizeof(slong));
    for (slong s = 0; s < ns; s++)
        wt[s] = 1;
    pcp_reset(Q->pcp, ns, wt, 1);
    set_survivor_powers(Q->pcp, q, 0);
    {
        /* survivor column x is input generator x: the term is its image */
        slong *ta = flint_malloc(FLINT_MAX(X, 1) * sizeof(slong));
        slong *tb = flint_malloc(FLINT_MAX(X, 1) * sizeof(slong));
        for (slong x = 0; x < X; x++) {
            ta[x] = x;
            tb[x] = -1;
        }
        for (slong s = 0; s < ns; s++) {
            if (basis_change_def(Q->pcp->def + s, &B, s, ta, tb))
                continue;
            Q->pcp->def[s].kind = PCP_DEF_IMAGE;
            Q->pcp->def[s].a = q->surv[s];
        }
        flint_free(ta);
        flint_free(tb);
    }
    basis_change_clear(&B);
    Q->images = _fmpz_vec_init(FLINT_MAX(X * ns, 1));
    for (slong x = 0; x < X; x++)
        tail_value(Q->images + x * ns, q, x);
    W->P = Q->pcp;
    pcp_complete(Q->pcp, W);
    flint_free(wt);
    _fmpz_vec_clear(row, X);
    elim_quotient_clear(q);
    elim_clear(E);
    (void)err;
    return NS_OK;
}

/* m := the exponent of G^ab = layer 1 when it is finite (the largest
 * invariant factor of its power-relation block), else 0.  Every layer is
 * then finite of exponent dividing m: gamma_(c+1)/gamma_(c+2) is spanned by
 * the [x, y] with x in gamma_c, and [x, y]^m = [x, y^m] modulo gamma_(c+2)
 * with y^m in gamma_2. */
static void abelian_exponent(fmpz_t m, const pcp_struct *P)
{
    slong f = 0;
    while (f < P->n && P->weight[f] == 1)
        f++;
    fmpz_zero(m);
    for (slong k = 0; k < f; k++)
        if (fmpz_is_zero(P->relorder + k))
            return;
    if (f == 0)
        return;
    fmpz_mat_t A, S;
    fmpz_mat_init(A, f, f);
    fmpz_mat_init(S, f, f);
    for (slong k = 0; k < f; k++) {
        fmpz_set(fmpz_mat_entry(A, k, k), P->relorder + k);
        const pcw_struct *w = P->pow + k;
        for (slong t = 0; t < w->len; t++)
            if (w->gen[t] < f)
                fmpz_sub(fmpz_mat_entry(A, k, w->gen[t]), fmpz_mat_entry(A, k, w->gen[t]),
                         w->exp + t);
    }
    fmpz_mat_snf(S, A);
    for (slong k = 0; k < f; k++)
        if (fmpz_cmpabs(fmpz_mat_entry(S, k, k), m) > 0)
            fmpz_abs(m, fmpz_mat_entry(S, k, k));
    fmpz_mat_clear(A);
    fmpz_mat_clear(S);
}

typedef struct step_struct step_struct;
static void step_add_relation(step_struct *S, const fmpz *row);

typedef struct {
    slong n, T;
    step_struct *S;
    fmpz *row;
    int bad;
} cons_ctx;

static int cons_row(void *vctx, const fmpz *l, const fmpz *r)
{
    cons_ctx *c = vctx;
    if (!_fmpz_vec_equal(l, r, c->n)) {
        c->bad = 1; /* the class-c quotient was not consistent */
        return 1;
    }
    _fmpz_vec_sub(c->row, l + c->n, r + c->n, c->T);
    if (!_fmpz_vec_is_zero(c->row, c->T))
        step_add_relation(c->S, c->row);
    return 0;
}

/* The state of one step c -> c+1, shared by its phases.  Each phase
 * reads what the earlier ones left here; step_clear frees whatever exists. */
struct step_struct {
    slong c;            /* the class of the presentation being extended */
    slong n, X, nslots; /* pc generators, input generators, conjugate slots */
    /* the tails: one new central generator per relation that is not a
     * definition; the commutator tails [a_k, a_i] (weight 1, weight c) last */
    slong T, cap, last; /* tails, allocated, first commutator tail */
    tail_struct *tails;
    slong *tailof;      /* nslots: the tail of conjugate slot s, or -1 */
    slong *powtail;     /* n: the tail of a_i's power relation, or -1 */
    slong *imgtail;     /* X: the tail of input generator x's image, or -1 */
    /* the tailed presentation on N = n + T generators and the images */
    slong N;
    pcp_t E;
    fmpz *img;          /* X x N */
    /* the relation lattice on the tails and its quotient */
    elim_t L;
    elim_quotient_t q;
    /* nq_tail_relations_get_mat only: every relation is also kept here,
     * densely (nrows x T), and not put into L */
    int keep;
    slong nrows, arows;
    fmpz *rows;
    slong max_entries;  /* > 0: rows beyond this many entries are only counted */
    int over;           /* 1: some were */
    int flags;          /* the quotient's NQ_ flags */
    basis_change_struct basis; /* the new layer's change of basis, if any */
};

static void step_add_relation(step_struct *S, const fmpz *row)
{
    if (!S->keep) {
        elim_add_dense(S->L, row);
        return;
    }
    slong T = S->T;
    if (S->max_entries > 0 && S->nrows + 1 > S->max_entries / FLINT_MAX(T, 1)) {
        S->nrows++; /* over the cap: counted for the message, not kept */
        S->over = 1;
        return;
    }
    if (S->nrows == S->arows) {
        slong a = FLINT_MAX(16, 2 * S->arows);
        S->rows = flint_realloc(S->rows, a * T * sizeof(fmpz));
        memset(S->rows + S->arows * T, 0, (a - S->arows) * T * sizeof(fmpz));
        S->arows = a;
    }
    _fmpz_vec_set(S->rows + S->nrows * T, row, T);
    S->nrows++;
}

static void step_init(step_struct *S, const nq_t Q, slong c)
{
    memset(S, 0, sizeof(step_struct));
    S->c = c;
    S->flags = Q->flags;
    basis_change_init(&S->basis);
    S->n = Q->pcp->n;
    S->X = Q->pres->gens->n;
    S->nslots = S->n * (S->n - 1) / 2;
    S->cap = 16;
    S->tails = flint_malloc(S->cap * sizeof(tail_struct));
    S->tailof = flint_malloc(FLINT_MAX(S->nslots, 1) * sizeof(slong));
    S->powtail = flint_malloc(FLINT_MAX(S->n, 1) * sizeof(slong));
    S->imgtail = flint_malloc(FLINT_MAX(S->X, 1) * sizeof(slong));
    pcp_init(S->E);
    elim_init(S->L, 0);
    elim_quotient_init(S->q);
}

static void step_clear(step_struct *S)
{
    basis_change_clear(&S->basis);
    if (S->rows) {
        _fmpz_vec_clear(S->rows, S->arows * S->T);
    }
    elim_quotient_clear(S->q);
    elim_clear(S->L);
    if (S->img)
        _fmpz_vec_clear(S->img, FLINT_MAX(S->X * S->N, 1));
    pcp_clear(S->E);
    flint_free(S->tails);
    flint_free(S->tailof);
    flint_free(S->powtail);
    flint_free(S->imgtail);
}

static slong add_tail(step_struct *S, tail_kind kind, slong a, slong b)
{
    if (S->T == S->cap) {
        S->cap *= 2;
        S->tails = flint_realloc(S->tails, S->cap * sizeof(tail_struct));
    }
    S->tails[S->T].kind = kind;
    S->tails[S->T].a = a;
    S->tails[S->T].b = b;
    return S->T++;
}

/* Phase 1: a tail on every power relation, on every image of an input
 * generator and every conjugate relation of weight <= c+1 that is not a
 * definition; the commutator tails of weight (c, 1) last. */
static ns_status step_plan_tails(step_struct *S, const nq_t Q, nserr_t err)
{
    const pcp_struct *P = Q->pcp;
    slong n = S->n, X = S->X, c = S->c;
    char *isdef = flint_calloc(FLINT_MAX(S->nslots, 1), 1);
    char *imgdef = flint_calloc(FLINT_MAX(X, 1), 1);
    /* a product definition defines no single relation: every relation it
       uses keeps its tail, and step_tail_relations ties the tails together */
    for (slong g = 0; g < n; g++) {
        if (P->def[g].kind == PCP_DEF_COMM)
            isdef[pcp_slot(P->def[g].a, P->def[g].b)] = 1;
        else if (P->def[g].kind == PCP_DEF_IMAGE)
            imgdef[P->def[g].a] = 1;
    }
    for (slong s = 0; s < S->nslots; s++)
        S->tailof[s] = -1;
    for (slong i = 0; i < n; i++)
        S->powtail[i] = fmpz_is_zero(P->relorder + i) ? -1 : add_tail(S, TAIL_POW, i, 0);
    for (slong x = 0; x < X; x++)
        S->imgtail[x] = imgdef[x] ? -1 : add_tail(S, TAIL_IMG, x, 0);
    for (slong k = 0; k < n; k++)
        for (slong i = 0; i < k; i++) {
            slong wi = P->weight[i], wk = P->weight[k];
            if (wi + wk > c + 1 || isdef[pcp_slot(k, i)] || (wi == 1 && wk == c))
                continue;
            S->tailof[pcp_slot(k, i)] = add_tail(S, TAIL_CONJ, k, i);
        }
    S->last = S->T;
    for (slong k = 0; k < n; k++)
        for (slong i = 0; i < k; i++)
            if (P->weight[i] == 1 && P->weight[k] == c)
                S->tailof[pcp_slot(k, i)] = add_tail(S, TAIL_CONJ, k, i);
    flint_free(isdef);
    flint_free(imgdef);
    if (S->T > NQ_MAX_TAILS)
        return nserr_set(err, NS_ERR_LIMIT, 0, 0, "class %ld needs %ld tails (limit %d)",
                         (long)(c + 1), (long)S->T, NQ_MAX_TAILS);
    return NS_OK;
}

/* Phase 2: the tailed presentation on n + T generators, and the images of
 * the input generators in it. */
static ns_status step_tailed_presentation(step_struct *S, const nq_t Q, pcp_work_t W,
                                          nserr_t err)
{
    const pcp_struct *P = Q->pcp;
    slong n = S->n, X = S->X, c = S->c, N = n + S->T;
    S->N = N;
    slong *wt = flint_malloc(N * sizeof(slong));
    for (slong g = 0; g < N; g++)
        wt[g] = g < n ? P->weight[g] : c + 1;
    pcp_reset(S->E, N, wt, c + 1);
    flint_free(wt);
    pcw_t w;
    pcw_init(w);
    fmpz_t one;
    fmpz_init_set_ui(one, 1);
    for (slong i = 0; i < n; i++) {
        if (fmpz_is_zero(P->relorder + i))
            continue;
        pcw_set(w, P->pow + i);
        pcw_push(w, n + S->powtail[i], one);
        pcp_set_power(S->E, i, P->relorder + i, w);
    }
    slong copied = 0;
    for (slong k = 0; k < n; k++)
        for (slong i = 0; i < k; i++) {
            slong s = pcp_slot(k, i);
            if (P->weight[i] + P->weight[k] > c + 1)
                continue;
            /* a poll now and then: free(3) at class 8 copies 130,000
               relations here */
            if ((++copied & 0x3ff) == 0 && W->progress &&
                ns_progress_report(W->progress, NULL, -1.0)) {
                fmpz_clear(one);
                pcw_clear(w);
                return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled in class %ld",
                                 (long)(c + 1));
            }
            old_conj_word(w, P, k, i);
            if (S->tailof[s] >= 0)
                pcw_push(w, n + S->tailof[s], one);
            pcp_set_conj(S->E, k, i, w);
        }
    fmpz_clear(one);
    pcw_clear(w);
    S->img = _fmpz_vec_init(FLINT_MAX(X * N, 1));
    for (slong x = 0; x < X; x++) {
        _fmpz_vec_set(S->img + x * N, Q->images + x * n, n);
        if (S->imgtail[x] >= 0)
            fmpz_one(S->img + x * N + n + S->imgtail[x]);
    }
    W->P = S->E;
    if (pcp_complete_from(S->E, Q->pcp, W))
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled in class %ld", (long)(c + 1));
    return NS_OK;
}

/* Part of phase 3: a generator a_g defined as a product D of commutators
 * (or images) is, in the tailed presentation, D times a combination of
 * the tails of D's relations, none of which is a definition.  As for a
 * commutator definition, whose relation simply gets no tail, a_g is taken
 * to be D itself in the covering group (that only names an element of
 * it), which makes the tail part of D a_g^-1 zero: one linear relation,
 * computed by collecting D in the tailed presentation. */
static ns_status step_definition_relations(step_struct *S, const nq_t Q, pcp_work_t W,
                                           nserr_t err)
{
    const pcp_struct *P = Q->pcp;
    slong n = S->n, N = S->N;
    ns_status st = NS_OK;
    fmpz *u = _fmpz_vec_init(N), *t = _fmpz_vec_init(N);
    fmpz *x = _fmpz_vec_init(N), *y = _fmpz_vec_init(N);
    for (slong g = 0; g < n && st == NS_OK; g++) {
        const pcp_def_struct *d = P->def + g;
        if (d->kind != PCP_DEF_PROD)
            continue;
        _fmpz_vec_zero(u, N);
        for (slong k = 0; k < d->len; k++) {
            if (d->tb[k] < 0)
                _fmpz_vec_set(t, S->img + d->ta[k] * N, N);
            else {
                _fmpz_vec_zero(x, N);
                _fmpz_vec_zero(y, N);
                fmpz_one(x + d->ta[k]);
                fmpz_one(y + d->tb[k]);
                pcp_elt_comm(W, t, x, y);
            }
            pcp_elt_pow(W, t, t, d->exp + k);
            pcp_elt_mul(W, u, u, t);
        }
        if (W->overflow) {
            st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled in class %ld",
                           (long)(S->c + 1));
            break;
        }
        fmpz_sub_ui(u + g, u + g, 1);
        NS_ASSERT(_fmpz_vec_is_zero(u, n));
        if (!_fmpz_vec_is_zero(u, n))
            st = nserr_set(err, NS_ERR_INTERNAL, 0, 0,
                           "the definition of pc generator %ld does not hold in class %ld",
                           (long)g + 1, (long)S->c);
        else if (!_fmpz_vec_is_zero(u + n, S->T))
            step_add_relation(S, u + n);
    }
    _fmpz_vec_clear(u, N);
    _fmpz_vec_clear(t, N);
    _fmpz_vec_clear(x, N);
    _fmpz_vec_clear(y, N);
    return st;
}

/* Phase 3: every consistency test and every relator gives a linear
 * relation between the tails; they go into the lattice L. */
static ns_status step_tail_relations(step_struct *S, const nq_t Q, pcp_work_t W,
                                     const ns_progress_t *prog, nserr_t err)
{
    slong n = S->n, T = S->T, c = S->c, N = S->N;
    elim_clear(S->L);
    elim_init(S->L, T);
    {
        fmpz_t m;
        fmpz_init(m);
        abelian_exponent(m, Q->pcp);
        if (!fmpz_is_zero(m))
            elim_set_modulus(S->L, m);
        else
            elim_defer(S->L); /* sparsest rows first (elim.h) */
        fmpz_clear(m);
    }
    if (progress_stage(prog, c + 1, "consistency", 0.3))
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    cons_ctx cc = {n, T, S, _fmpz_vec_init(FLINT_MAX(T, 1)), 0};
    int rc = pcp_consistency_run(S->E, W, cons_row, &cc);
    _fmpz_vec_clear(cc.row, FLINT_MAX(T, 1));
    if (rc < 0)
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled in class %ld", (long)(c + 1));
    NS_ASSERT(!cc.bad);
    if (cc.bad)
        return nserr_set(err, NS_ERR_INTERNAL, 0, 0,
                         "the class-%ld presentation is not consistent", (long)c);
    if (progress_stage(prog, c + 1, "relators", 0.7))
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    ns_status st = NS_OK;
    fmpz *val = _fmpz_vec_init(N);
    for (slong r = 0; r < Q->pres->nrels; r++) {
        if (pcp_eval_expr(W, val, Q->pres->rels[r].root, S->img)) {
            st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled in class %ld", (long)(c + 1));
            break;
        }
        NS_ASSERT(_fmpz_vec_is_zero(val, n));
        if (!_fmpz_vec_is_zero(val, n)) {
            st = nserr_set(err, NS_ERR_INTERNAL, 0, 0, "relator %ld is not trivial in class %ld",
                           (long)r + 1, (long)c);
            break;
        }
        if (!_fmpz_vec_is_zero(val + n, T))
            step_add_relation(S, val + n);
    }
    _fmpz_vec_clear(val, N);
    if (st == NS_OK)
        st = step_definition_relations(S, Q, W, err);
    return st;
}

/* Fewer survivors where the echelon form kept redundant ones.  A survivor
 * with a non-unit pivot d has the relation d t_s + sum_(s' > s) r_s' t_s' = 0;
 * when some later r_b is a unit, t_b is an integer combination of the
 * others and need not be a generator, although its column had no unit
 * pivot in the order the elimination used (in the genus-2 surface group
 * at class 6 two of the 442 survivors are so; the layer is free of rank
 * 440).  Such columns b are picked greedily (each relation used for one b
 * and b substituted out of the others), put first, and the survivor
 * lattice Z^ns / R is brought to echelon form again in that order: their
 * pivots are then 1, so they leave, and the expressions of all tails are
 * rewritten in the survivors that remain.  The survivors that remain are
 * still commutator tails with their definitions; a relation without a
 * unit entry (2 t_1 + 3 t_2 = 0) is left to swap_in_commutator_tails, and
 * what that leaves to minimise_survivors. */
/* The unimodular 2 x 2 step that takes (x, y) to (g, 0), g = gcd(x, y) =
 * u x + v y, a = x/g, b = y/g: pairs (p, q) := (u p + v q, a q - b p).
 * Shared by the row steps of the survivor lattice and the column steps of
 * snf_transform. */
typedef struct {
    fmpz_t u, v, a, b, t;
} gcd_pair;

static void gcd_pair_init(gcd_pair *s, const fmpz_t x, const fmpz_t y)
{
    fmpz_t g;
    fmpz_init(g);
    fmpz_init(s->u);
    fmpz_init(s->v);
    fmpz_init(s->a);
    fmpz_init(s->b);
    fmpz_init(s->t);
    fmpz_xgcd(g, s->u, s->v, x, y);
    fmpz_divexact(s->a, x, g);
    fmpz_divexact(s->b, y, g);
    fmpz_clear(g);
}

static void gcd_pair_apply(gcd_pair *s, fmpz_t p, fmpz_t q)
{
    fmpz_mul(s->t, s->u, p);
    fmpz_addmul(s->t, s->v, q);
    fmpz_mul(q, s->a, q);
    fmpz_submul(q, s->b, p);
    fmpz_swap(p, s->t);
}

static void gcd_pair_clear(gcd_pair *s)
{
    fmpz_clear(s->u);
    fmpz_clear(s->v);
    fmpz_clear(s->a);
    fmpz_clear(s->b);
    fmpz_clear(s->t);
}

/* x, y (n entries) := u x + v y, (a/g) y - (b/g) x with a = x[c],
 * b = y[c], g = gcd(a, b) = u a + v b: a unimodular step after which
 * x[c] = g and y[c] = 0. */
static void row_gcd_step(fmpz *x, fmpz *y, slong n, slong c)
{
    gcd_pair s;
    gcd_pair_init(&s, x + c, y + c);
    for (slong j = 0; j < n; j++)
        gcd_pair_apply(&s, x + j, y + j);
    gcd_pair_clear(&s);
}

/* The survivor lattice of q brought to echelon form again over N = ns + m
 * columns taken in the order perm: column c is the old survivor perm[c] when
 * perm[c] < ns, else the tail J[perm[c] - ns], which enters with the
 * relation "tail = its expression".  Every tail's expression is rewritten
 * in the new survivors; q is replaced.  Shared by drop_redundant_survivors
 * (m = 0: only the column order changes) and swap_in_commutator_tails. */
static int requotient_survivors(elim_quotient_t q, const slong *perm, const slong *J, slong m,
                                nq_poll *w)
{
    slong ns = q->nsurv, T = q->ncols, N = ns + m;
    elim_t E;
    elim_quotient_t q2;
    elim_init(E, N);
    elim_quotient_init(q2);
    fmpz *v = _fmpz_vec_init(N);
    for (slong i = 0; i < ns; i++) {
        if (fmpz_is_zero(q->order + i))
            continue;
        for (slong c = 0; c < N; c++) {
            if (perm[c] < ns)
                fmpz_set(v + c, q->rel + i * ns + perm[c]);
            else
                fmpz_zero(v + c);
        }
        elim_add_dense(E, v);
        if (nq_poll_add(w, N * vec_limbs(v, N)))
            break;
    }
    for (slong x = 0; x < m && !w->stopped; x++) {
        for (slong c = 0; c < N; c++) {
            if (perm[c] < ns)
                fmpz_set(v + c, q->expr + J[x] * ns + perm[c]);
            else if (perm[c] == ns + x)
                fmpz_set_si(v + c, -1);
            else
                fmpz_zero(v + c);
        }
        elim_add_dense(E, v);
        if (nq_poll_add(w, N * vec_limbs(v, N)))
            break;
    }
    _fmpz_vec_clear(v, N);
    if (w->stopped || elim_get_quotient_progress(q2, E, w->p)) {
        w->stopped = 1;
        elim_clear(E);
        elim_quotient_clear(q2);
        return 1;
    }
    elim_clear(E);
    slong n2 = q2->nsurv;
    /* q's relations and orders are in E's result now: give their memory
       back before the expressions are rewritten (the peak of a deep class
       step is here: surface(2) class 7) */
    _fmpz_vec_clear(q->order, ns);
    _fmpz_vec_clear(q->rel, ns * ns);
    /* old survivor perm[c] = sum_k q2->expr[c][k] (new survivor k); every
       tail's expression follows, rewritten in place row by row: upwards
       when n2 <= ns (row t's new entries only cover old rows <= t, already
       read), downwards in a grown array otherwise (they only cover old
       rows >= t) */
    slong *col = flint_malloc(FLINT_MAX(ns, 1) * sizeof(slong));
    for (slong c = 0; c < N; c++)
        if (perm[c] < ns)
            col[perm[c]] = c;
    fmpz *row = _fmpz_vec_init(FLINT_MAX(n2, 1));
    fmpz *expr = q->expr;
    int down = n2 > ns;
    if (down) {
        expr = flint_realloc(expr, (size_t)(T * n2) * sizeof(fmpz));
        for (slong i = T * ns; i < T * n2; i++)
            fmpz_init(expr + i);
    }
    for (slong k = 0; k < T && n2 > 0 && !w->stopped; k++) {
        slong t = down ? T - 1 - k : k;
        for (slong s = 0; s < ns; s++) {
            const fmpz *x = expr + t * ns + s;
            if (fmpz_is_zero(x))
                continue;
            const fmpz *e2 = q2->expr + col[s] * n2;
            for (slong j = 0; j < n2; j++)
                if (!fmpz_is_zero(e2 + j))
                    fmpz_addmul(row + j, x, e2 + j);
            if (nq_poll_add(w, n2 * (1 + (slong)fmpz_size(x))))
                break;
        }
        for (slong j = 0; j < n2; j++) {
            fmpz_swap(expr + t * n2 + j, row + j);
            fmpz_zero(row + j);
        }
    }
    _fmpz_vec_clear(row, FLINT_MAX(n2, 1));
    flint_free(col);
    if (w->stopped) {
        /* q is left empty: a stopped step is thrown away */
        elim_quotient_clear(q2);
        flint_free(q->surv);
        _fmpz_vec_clear(expr, T * FLINT_MAX(ns, n2));
        elim_quotient_init(q);
        return 1;
    }
    /* q's expression array becomes the new one */
    for (slong i = T * n2; i < T * ns; i++)
        fmpz_zero(expr + i);
    if (n2 > 0 && !down)
        expr = flint_realloc(expr, (size_t)(T * n2) * sizeof(fmpz));
    else if (n2 == 0) {
        flint_free(expr);
        expr = _fmpz_vec_init(1);
    }
    slong *surv = flint_malloc(FLINT_MAX(n2, 1) * sizeof(slong));
    for (slong j = 0; j < n2; j++) {
        slong c = perm[q2->surv[j]];
        surv[j] = c < ns ? q->surv[c] : J[c - ns];
        /* a survivor's own expression is itself (for a tail of J it is
           so only modulo the relations) */
        _fmpz_vec_zero(expr + surv[j] * n2, n2);
        fmpz_one(expr + surv[j] * n2 + j);
    }
    /* q2's orders and relations move over, the rest of q2 and of q goes */
    fmpz *order = n2 ? q2->order : _fmpz_vec_init(1);
    fmpz *rel = n2 ? q2->rel : _fmpz_vec_init(1);
    if (n2) {
        flint_free(q2->surv);
        _fmpz_vec_clear(q2->expr, q2->ncols * n2);
    }
    elim_quotient_init(q2);
    flint_free(q->surv);
    elim_quotient_init(q);
    q->ncols = T;
    q->nsurv = n2;
    if (n2 > 0) {
        q->surv = surv;
        q->order = order;
        q->rel = rel;
        q->expr = expr;
    } else {
        flint_free(surv);
        _fmpz_vec_clear(order, 1);
        _fmpz_vec_clear(rel, 1);
        _fmpz_vec_clear(expr, FLINT_MAX(T * n2, 1));
    }
    return 0;
}

static int drop_redundant_survivors(elim_quotient_t q, nq_poll *w)
{
    slong ns = q->nsurv, nt = 0;
    if (nq_poll_now(w))
        return 1;
    for (slong s = 0; s < ns; s++)
        nt += !fmpz_is_zero(q->order + s);
    if (nt == 0)
        return 0;
    fmpz *rows = _fmpz_vec_init(nt * ns);
    nt = 0;
    for (slong s = 0; s < ns; s++)
        if (!fmpz_is_zero(q->order + s)) {
            _fmpz_vec_set(rows + nt * ns, q->rel + s * ns, ns);
            nt++;
        }
    int *used = flint_calloc(nt, sizeof(int));
    int *gone = flint_calloc(ns, sizeof(int));
    slong *perm = flint_malloc(ns * sizeof(slong));
    slong nx = 0;
    fmpz_t k;
    fmpz_init(k);
    for (;;) {
        slong r = -1, b = -1;
        for (slong i = 0; i < nt && b < 0; i++) {
            if (used[i])
                continue;
            for (slong col = ns - 1; col >= 0; col--)
                if (!gone[col] && fmpz_is_pm1(rows + i * ns + col)) {
                    r = i;
                    b = col;
                    break;
                }
        }
        if (b < 0) {
            /* no unit entry: a column whose entries over the unused
               relations have gcd 1 still gets one, by unimodular row
               operations (extended gcd, pairwise) that keep the lattice */
            for (slong col = ns - 1; col >= 0 && b < 0; col--) {
                if (gone[col])
                    continue;
                fmpz_zero(k);
                for (slong i = 0; i < nt; i++)
                    if (!used[i])
                        fmpz_gcd(k, k, rows + i * ns + col);
                if (fmpz_is_one(k))
                    b = col;
            }
            if (b < 0)
                break;
            r = -1;
            for (slong i = 0; i < nt; i++) {
                if (used[i] || fmpz_is_zero(rows + i * ns + b))
                    continue;
                if (r < 0) {
                    r = i;
                    continue;
                }
                row_gcd_step(rows + r * ns, rows + i * ns, ns, b);
                if (nq_poll_add(w, 4 * (vec_limbs(rows + r * ns, ns) +
                                        vec_limbs(rows + i * ns, ns))))
                    break;
            }
            if (w->stopped)
                break;
        }
        used[r] = 1;
        gone[b] = 1;
        perm[nx++] = b;
        for (slong i = 0; i < nt; i++) {
            if (i == r || fmpz_is_zero(rows + i * ns + b))
                continue;
            fmpz_mul(k, rows + i * ns + b, rows + r * ns + b); /* the unit is its own inverse */
            _fmpz_vec_scalar_submul_fmpz(rows + i * ns, rows + r * ns, ns, k);
            if (nq_poll_add(w, 2 * (1 + (slong)fmpz_size(k)) * vec_limbs(rows + r * ns, ns)))
                break;
        }
        if (w->stopped)
            break;
    }
    _fmpz_vec_clear(rows, nt * ns);
    flint_free(used);
    int stopped = w->stopped;
    if (nx > 0 && !stopped) {
        for (slong s = 0, i = nx; s < ns; s++)
            if (!gone[s])
                perm[i++] = s;
        stopped = requotient_survivors(q, perm, NULL, 0, w);
    }
    fmpz_clear(k);
    flint_free(gone);
    flint_free(perm);
    return stopped;
}

/* A relation of the layer whose entries have gcd 1 but no unit
 * (2 t_1 + 3 t_2 = 0) leaves one dependent survivor after
 * drop_redundant_survivors: the layer is generated by a combination such
 * as t_1 - t_2, which is no commutator tail.  Another commutator tail t_j
 * (column >= first, not a survivor) with expression e can take the place
 * of two survivors s, b when r_s e_b - e_s r_b = +-1 for that relation r:
 * the rows r and e - t_j then span the coordinate plane of s and b, so
 * with s and b put first the echelon form has unit pivots there and both
 * leave, while t_j stays, a commutator tail with its definition (the
 * genus-2 surface group at class 7 has one such relation).  Each row is
 * tried once, with the first candidate found; the survivor lattice is
 * brought to echelon form again with the chosen columns added. */
static int swap_in_commutator_tails(elim_quotient_t q, slong first, nq_poll *w)
{
    slong ns = q->nsurv, T = q->ncols;
    if (nq_poll_now(w))
        return 1;
    if (ns == 0)
        return 0;
    char *issurv = flint_calloc(T, 1);
    for (slong s = 0; s < ns; s++)
        issurv[q->surv[s]] = 1;
    slong *J = flint_malloc(ns * sizeof(slong));
    slong *gs = flint_malloc(2 * ns * sizeof(slong));
    char *gone = flint_calloc(ns, 1);
    slong *sup = flint_malloc(ns * sizeof(slong));
    slong m = 0, ng = 0;
    fmpz_t d;
    fmpz_init(d);
    for (slong i = 0; i < ns; i++) {
        if (fmpz_is_zero(q->order + i))
            continue;
        const fmpz *r = q->rel + i * ns;
        int unit = 0;
        for (slong c = 0; c < ns && !unit; c++)
            unit = !gone[c] && fmpz_is_pm1(r + c);
        /* every minor lies in the ideal of r's entries, so their gcd must
           be 1; and with no unit in r, r_b = 0 gives no unit minor, so s
           and b both lie in r's support */
        fmpz_zero(d);
        slong ns_r = 0;
        for (slong c = 0; c < ns; c++)
            if (!gone[c] && !fmpz_is_zero(r + c)) {
                fmpz_gcd(d, d, r + c);
                sup[ns_r++] = c;
            }
        if (unit || !fmpz_is_one(d))
            continue;
        slong fs = -1, fb = -1, fj = -1;
        for (slong j = first; j < T && fj < 0; j++) {
            if (issurv[j])
                continue;
            if (nq_poll_add(w, 1 + ns_r * ns_r))
                break;
            const fmpz *e = q->expr + j * ns;
            for (slong is = 0; is < ns_r && fj < 0; is++) {
                slong s = sup[is];
                for (slong ib = 0; ib < ns_r; ib++) {
                    slong b = sup[ib];
                    if (b == s)
                        continue;
                    fmpz_mul(d, r + s, e + b);
                    fmpz_submul(d, e + s, r + b);
                    if (fmpz_is_pm1(d)) {
                        fs = s;
                        fb = b;
                        fj = j;
                        break;
                    }
                }
            }
        }
        if (w->stopped)
            break;
        if (fj < 0)
            continue;
        issurv[fj] = 1;
        J[m++] = fj;
        gone[fs] = gone[fb] = 1;
        gs[ng++] = fs;
        gs[ng++] = fb;
    }
    fmpz_clear(d);
    flint_free(issurv);
    flint_free(sup);
    if (m == 0 || w->stopped) {
        flint_free(J);
        flint_free(gs);
        flint_free(gone);
        return w->stopped;
    }
    /* columns: the old survivors, then the tails J; order: the dropped
       pairs first */
    slong N = ns + m;
    slong *perm = flint_malloc(N * sizeof(slong));
    slong k = 0;
    for (slong g = 0; g < ng; g++)
        perm[k++] = gs[g];
    for (slong c = 0; c < N; c++)
        if (c >= ns || !gone[c])
            perm[k++] = c;
    int stopped = requotient_survivors(q, perm, J, m, w);
    flint_free(perm);
    flint_free(J);
    flint_free(gs);
    flint_free(gone);
    return stopped;
}

/* ---- a new layer in Smith form, where the survivors are not minimal */

/* Column operations on the nr x nc matrix M (row-major), recorded in V
 * (nc x nc, M_0 V = M after row operations) and its inverse Vi. */
typedef struct {
    slong nr, nc;
    fmpz *M, *V, *Vi;
    nq_poll *poll;
} snf_work;

static void snf_col_swap(snf_work *w, slong i, slong j)
{
    for (slong r = 0; r < w->nr; r++)
        fmpz_swap(w->M + r * w->nc + i, w->M + r * w->nc + j);
    for (slong r = 0; r < w->nc; r++)
        fmpz_swap(w->V + r * w->nc + i, w->V + r * w->nc + j);
    _fmpz_vec_swap(w->Vi + i * w->nc, w->Vi + j * w->nc, w->nc);
}

static void snf_col_neg(snf_work *w, slong i)
{
    for (slong r = 0; r < w->nr; r++)
        fmpz_neg(w->M + r * w->nc + i, w->M + r * w->nc + i);
    for (slong r = 0; r < w->nc; r++)
        fmpz_neg(w->V + r * w->nc + i, w->V + r * w->nc + i);
    _fmpz_vec_neg(w->Vi + i * w->nc, w->Vi + i * w->nc, w->nc);
}

/* Columns i, j := u c_i + v c_j, (a/g) c_j - (b/g) c_i with a = M[r][i],
 * b = M[r][j], g = gcd = u a + v b: afterwards M[r][i] = g, M[r][j] = 0.
 * The inverse step on the rows of Vi: r_i, r_j := (a/g) r_i + (b/g) r_j,
 * u r_j - v r_i. */
static void snf_col_gcd(snf_work *w, slong r, slong i, slong j)
{
    slong nc = w->nc;
    gcd_pair s;
    gcd_pair_init(&s, w->M + r * nc + i, w->M + r * nc + j);
    fmpz *rows[2] = {w->M, w->V};
    slong nrows[2] = {w->nr, nc};
    for (int m = 0; m < 2; m++)
        for (slong k = 0; k < nrows[m]; k++)
            gcd_pair_apply(&s, rows[m] + k * nc + i, rows[m] + k * nc + j);
    fmpz *ri = w->Vi + i * nc, *rj = w->Vi + j * nc;
    for (slong k = 0; k < nc; k++) {
        fmpz_mul(s.t, s.a, ri + k);
        fmpz_addmul(s.t, s.b, rj + k);
        fmpz_mul(rj + k, s.u, rj + k);
        fmpz_submul(rj + k, s.v, ri + k);
        fmpz_swap(ri + k, s.t);
    }
    /* the pass touched columns i and j of M and V and two rows of Vi */
    nq_poll_add(w->poll, 4 * (w->nr + 2 * nc) * (1 + (slong)fmpz_size(w->M + r * nc + i) +
                                                 (slong)fmpz_size(s.u) + (slong)fmpz_size(s.v)));
    gcd_pair_clear(&s);
}

/* M to Smith form by row operations and recorded column operations (the
 * textbook elimination, smallest pivot first: the blocks that reach it are
 * small, and FLINT 2.9's fmpz_mat_snf gives no transform).  Returns the
 * rank; M[t][t] > 0 for t < rank, each dividing the next; or -1 when
 * the progress hook asked to stop (w->poll). */
static slong snf_transform(snf_work *w)
{
    slong nr = w->nr, nc = w->nc, t = 0;
    for (; t < nr && t < nc; t++) {
        if (nq_poll_add(w->poll, nr * nc))
            return -1;
        slong pr = -1, pc = -1;
        for (slong r = t; r < nr; r++)
            for (slong c = t; c < nc; c++) {
                const fmpz *x = w->M + r * nc + c;
                if (!fmpz_is_zero(x) &&
                    (pr < 0 || fmpz_cmpabs(x, w->M + pr * nc + pc) < 0)) {
                    pr = r;
                    pc = c;
                }
            }
        if (pr < 0)
            break;
        if (pr != t)
            _fmpz_vec_swap(w->M + pr * nc, w->M + t * nc, nc);
        if (pc != t)
            snf_col_swap(w, pc, t);
        for (;;) {
            for (slong r = t + 1; r < nr; r++)
                if (!fmpz_is_zero(w->M + r * nc + t)) {
                    row_gcd_step(w->M + t * nc, w->M + r * nc, nc, t);
                    if (nq_poll_add(w->poll, 4 * (vec_limbs(w->M + t * nc, nc) +
                                                  vec_limbs(w->M + r * nc, nc))))
                        return -1;
                }
            int dirty = 0;
            for (slong c = t + 1; c < nc; c++)
                if (!fmpz_is_zero(w->M + t * nc + c)) {
                    snf_col_gcd(w, t, t, c);
                    if (w->poll->stopped)
                        return -1;
                    dirty = 1;
                }
            if (dirty)
                continue; /* the column steps may have filled column t again */
            /* divisibility: a later entry that the pivot does not divide
               comes into row t, and the pivot shrinks */
            slong br = -1;
            for (slong r = t + 1; r < nr && br < 0; r++)
                for (slong c = t + 1; c < nc; c++)
                    if (!fmpz_divisible(w->M + r * nc + c, w->M + t * nc + t)) {
                        br = r;
                        break;
                    }
            if (br < 0)
                break;
            _fmpz_vec_add(w->M + t * nc, w->M + t * nc, w->M + br * nc, nc);
        }
        if (fmpz_sgn(w->M + t * nc + t) < 0)
            snf_col_neg(w, t);
    }
    return t;
}

static slong vec_bits(const fmpz *v, slong n)
{
    slong b = 0;
    for (slong i = 0; i < n; i++)
        b = FLINT_MAX(b, (slong)fmpz_bits(v + i));
    return b;
}

/* y (nb entries) := y + l for the l in L = span of the rank rows of Lb
 * (rank x nb, independent) that LLL finds closest to -y: the last row of
 * the LLL-reduced basis of [[Lb, 0], [y, Mw]] with the weight Mw far
 * above every short vector of L is (+-(y + l), +-Mw) (the embedding
 * technique of R. Kannan, "Minkowski's convex body theorem and integer
 * programming", Math. Oper. Res. 12, 1987). */
static void reduce_mod_lattice(fmpz *y, const fmpz_mat_t Lb, slong rank, slong nb)
{
    slong bits = vec_bits(y, nb);
    for (slong i = 0; i < rank; i++)
        bits = FLINT_MAX(bits, vec_bits(Lb->rows[i], nb));
    fmpz_mat_t A;
    fmpz_mat_init(A, rank + 1, nb + 1);
    for (slong i = 0; i < rank; i++)
        _fmpz_vec_set(A->rows[i], Lb->rows[i], nb);
    _fmpz_vec_set(A->rows[rank], y, nb);
    fmpz_one(fmpz_mat_entry(A, rank, nb));
    fmpz_mul_2exp(fmpz_mat_entry(A, rank, nb), fmpz_mat_entry(A, rank, nb),
                  (ulong)(bits + 2 * nb + 16));
    fmpz_mat_t U; /* not read: FLINT's documentation does not promise NULL */
    fmpz_mat_init(U, rank + 1, rank + 1);
    fmpz_mat_one(U);
    fmpz_lll_t fl;
    fmpz_lll_context_init_default(fl);
    fmpz_lll(A, U, fl);
    fmpz_mat_clear(U);
    /* the weighted row: the lattice L has rank rows, so exactly one row
       of a basis has a nonzero last entry, and it is +-Mw */
    for (slong i = 0; i <= rank; i++) {
        const fmpz *m = fmpz_mat_entry(A, i, nb);
        if (fmpz_is_zero(m))
            continue;
        if (fmpz_sgn(m) > 0)
            _fmpz_vec_set(y, A->rows[i], nb);
        else
            _fmpz_vec_neg(y, A->rows[i], nb);
        break;
    }
    fmpz_mat_clear(A);
}

/* After snf_transform: the same Smith form with small integers.  The
 * coordinates on the free part (the columns rank.. of V) are a basis of
 * the integer kernel of the relations, determined up to a unimodular
 * change of that basis, which LLL makes short (A. K. Lenstra, H. W.
 * Lenstra, L. Lovasz, "Factoring polynomials with rational
 * coefficients", Math. Ann. 261, 1982; FLINT's fmpz_lll), the generators
 * (rows of Vi) following by the inverse change; each kept generator is
 * then a lift of an element of the quotient, which may be moved by any
 * element of the relation lattice L (spanned by d_i Vi_i, i < rank):
 * reduce_mod_lattice makes it short.  Vi V = I stays true modulo the
 * torsion orders and outside the kept columns, which is all that is read.
 * The textbook elimination's V and Vi grow fast (a 4 x 27 block of
 * 434-bit entries gave 2363-bit V at class 5 of
 * <a, b, c | [a,b]^6 [a,c]^10 [b,c]^15>, and the next class's relations
 * 588,000 bits).  Returns 1 when the progress hook asked to stop. */
static int snf_reduce(snf_work *w, slong rank)
{
    slong nb = w->nc, f = nb - rank;
    if (f > 0) {
        fmpz_mat_t B, U, Ui;
        fmpz_t den;
        fmpz_mat_init(B, f, nb);
        fmpz_mat_init(U, f, f);
        fmpz_mat_init(Ui, f, f);
        fmpz_init(den);
        fmpz_mat_one(U);
        for (slong j = 0; j < f; j++)
            for (slong b = 0; b < nb; b++)
                fmpz_set(fmpz_mat_entry(B, j, b), w->V + b * nb + rank + j);
        fmpz_lll_t fl;
        fmpz_lll_context_init_default(fl);
        fmpz_lll(B, U, fl);
        /* V_free := V_free U^T, so Vi_free := (U^T)^-1 Vi_free */
        fmpz_mat_inv(Ui, den, U);
        NS_ASSERT(fmpz_is_pm1(den));
        if (fmpz_sgn(den) < 0)
            fmpz_mat_neg(Ui, Ui);
        for (slong j = 0; j < f; j++)
            for (slong b = 0; b < nb; b++)
                fmpz_set(w->V + b * nb + rank + j, fmpz_mat_entry(B, j, b));
        fmpz *vi = _fmpz_vec_init(f * nb);
        for (slong j = 0; j < f; j++)
            for (slong k = 0; k < f; k++)
                _fmpz_vec_scalar_addmul_fmpz(vi + j * nb, w->Vi + (rank + k) * nb, nb,
                                             fmpz_mat_entry(Ui, k, j));
        _fmpz_vec_set(w->Vi + rank * nb, vi, f * nb);
        _fmpz_vec_clear(vi, f * nb);
        fmpz_clear(den);
        fmpz_mat_clear(B);
        fmpz_mat_clear(U);
        fmpz_mat_clear(Ui);
    }
    if (nq_poll_now(w->poll) || rank == 0)
        return w->poll->stopped;
    fmpz_mat_t Lb;
    fmpz_mat_init(Lb, rank, nb);
    for (slong i = 0; i < rank; i++)
        _fmpz_vec_scalar_mul_fmpz(Lb->rows[i], w->Vi + i * nb, nb, w->M + i * w->nc + i);
    {
        fmpz_mat_t U;
        fmpz_mat_init(U, rank, rank);
        fmpz_mat_one(U);
        fmpz_lll_t fl;
        fmpz_lll_context_init_default(fl);
        fmpz_lll(Lb, U, fl);
        fmpz_mat_clear(U);
    }
    for (slong i = 0; i < nb; i++) {
        if (i < rank && fmpz_is_pm1(w->M + i * w->nc + i))
            continue; /* a generator that leaves */
        if (nq_poll_now(w->poll))
            break;
        reduce_mod_lattice(w->Vi + i * nb, Lb, rank, nb);
    }
    fmpz_mat_clear(Lb);
    return w->poll->stopped;
}

/* Where the survivors of a new layer are still more than its free rank
 * plus its number of invariant factors > 1 (relations such as
 * 2 t_1 + 3 t_2 = 0, or t_1 of order 2 beside t_2 of order 3, that
 * drop_redundant_survivors and swap_in_commutator_tails could not
 * resolve), the columns in the support of the layer's relations are put
 * into Smith normal form: with R V = U^-1 D (V unimodular) the new
 * coordinates are x V, the new generators the rows of V^-1 (products of
 * the old survivors), their relative orders the invariant factors, and
 * the factors 1 leave.  Every tail's expression is rewritten.  The layer
 * needs it exactly when the gcd of all entries of its relations is 1 (the
 * first invariant factor); otherwise q and B are left alone, so layers
 * that were minimal keep their generators.  The survivors keep their
 * order, with the new generators (torsion first, then free) where the
 * first changed column was. */
static int minimise_survivors(elim_quotient_t q, basis_change_struct *B, nq_poll *poll)
{
    slong ns = q->nsurv, T = q->ncols, nt = 0, nb = 0;
    if (nq_poll_now(poll))
        return 1;
    for (slong s = 0; s < ns; s++)
        nt += !fmpz_is_zero(q->order + s);
    if (nt == 0)
        return 0;
    char *inb = flint_calloc(ns, 1);
    fmpz_t g;
    fmpz_init(g);
    for (slong s = 0; s < ns; s++) {
        if (fmpz_is_zero(q->order + s))
            continue;
        for (slong c = 0; c < ns; c++) {
            const fmpz *x = q->rel + s * ns + c;
            if (!fmpz_is_zero(x)) {
                inb[c] = 1;
                fmpz_gcd(g, g, x);
            }
        }
    }
    int one = fmpz_is_one(g);
    fmpz_clear(g);
    if (!one) {
        flint_free(inb);
        return 0;
    }
    slong *col = flint_malloc(ns * sizeof(slong));
    for (slong c = 0; c < ns; c++)
        if (inb[c])
            col[nb++] = c;
    snf_work w;
    w.nr = nt;
    w.nc = nb;
    w.M = _fmpz_vec_init(nt * nb);
    w.V = _fmpz_vec_init(nb * nb);
    w.Vi = _fmpz_vec_init(nb * nb);
    w.poll = poll;
    for (slong i = 0; i < nb; i++) {
        fmpz_one(w.V + i * nb + i);
        fmpz_one(w.Vi + i * nb + i);
    }
    for (slong s = 0, r = 0; s < ns; s++) {
        if (fmpz_is_zero(q->order + s))
            continue;
        for (slong i = 0; i < nb; i++)
            fmpz_set(w.M + r * nb + i, q->rel + s * ns + col[i]);
        r++;
    }
    slong rank = snf_transform(&w);
    if (rank >= 0 && snf_reduce(&w, rank))
        rank = -1;
    if (rank < 0) {
        _fmpz_vec_clear(w.M, nt * nb);
        _fmpz_vec_clear(w.V, nb * nb);
        _fmpz_vec_clear(w.Vi, nb * nb);
        flint_free(col);
        flint_free(inb);
        return 1;
    }
    /* signs: each new generator's first old survivor with a positive
       exponent (d y = 0 and -d y = 0 say the same) */
    for (slong i = 0; i < nb; i++) {
        slong f = 0;
        while (f < nb && fmpz_is_zero(w.Vi + i * nb + f))
            f++;
        if (f < nb && fmpz_sgn(w.Vi + i * nb + f) < 0)
            snf_col_neg(&w, i);
    }
    /* kept: the columns of D that are not 1 */
    slong *kept = flint_malloc(nb * sizeof(slong)), nk = 0;
    for (slong i = 0; i < nb; i++)
        if (i >= rank || !fmpz_is_pm1(w.M + i * nb + i))
            kept[nk++] = i;
    slong n2 = ns - nb + nk;
    slong *surv = flint_malloc(n2 * sizeof(slong));
    slong *which = flint_malloc(n2 * sizeof(slong));
    fmpz *order = _fmpz_vec_init(n2);
    fmpz *rel = _fmpz_vec_init(n2 * n2);
    fmpz *expr = _fmpz_vec_init(T * n2);
    slong p = 0;
    for (slong s = 0; s < ns; s++) {
        if (!inb[s]) {
            /* a free survivor outside every relation: unchanged */
            surv[p] = q->surv[s];
            which[p] = -1;
            for (slong t = 0; t < T; t++)
                fmpz_set(expr + t * n2 + p, q->expr + t * ns + s);
            p++;
            continue;
        }
        if (s != col[0])
            continue;
        for (slong k = 0; k < nk; k++, p++) {
            slong i = kept[k];
            surv[p] = -1;
            which[p] = k;
            if (i < rank) {
                fmpz_abs(order + p, w.M + i * nb + i);
                fmpz_set(rel + p * n2 + p, order + p);
            }
            for (slong t = 0; t < T && !poll->stopped; t++) {
                fmpz *e = expr + t * n2 + p;
                for (slong b = 0; b < nb; b++)
                    fmpz_addmul(e, q->expr + t * ns + col[b], w.V + b * nb + i);
                nq_poll_add(poll, nb * (1 + (slong)fmpz_size(e)));
            }
        }
    }
    if (poll->stopped) {
        flint_free(surv);
        flint_free(which);
        _fmpz_vec_clear(order, n2);
        _fmpz_vec_clear(rel, n2 * n2);
        _fmpz_vec_clear(expr, T * n2);
        _fmpz_vec_clear(w.M, nt * nb);
        _fmpz_vec_clear(w.V, nb * nb);
        _fmpz_vec_clear(w.Vi, nb * nb);
        flint_free(kept);
        flint_free(col);
        flint_free(inb);
        return 1;
    }
    basis_change_clear(B);
    B->nold = ns;
    B->oldsurv = flint_malloc(ns * sizeof(slong));
    memcpy(B->oldsurv, q->surv, ns * sizeof(slong));
    B->nsurv = n2;
    B->which = which;
    B->nnew = nk;
    B->comb = _fmpz_vec_init(nk * ns);
    for (slong k = 0; k < nk; k++)
        for (slong b = 0; b < nb; b++)
            fmpz_set(B->comb + k * ns + col[b], w.Vi + kept[k] * nb + b);
    elim_quotient_clear(q);
    q->ncols = T;
    q->nsurv = n2;
    q->surv = surv;
    q->order = order;
    q->rel = rel;
    q->expr = expr;
    _fmpz_vec_clear(w.M, nt * nb);
    _fmpz_vec_clear(w.V, nb * nb);
    _fmpz_vec_clear(w.Vi, nb * nb);
    flint_free(kept);
    flint_free(col);
    flint_free(inb);
    return 0;
}

/* Phase 4: the quotient of the tails by L; only commutator tails may
 * survive (they generate the new layer). */
static ns_status step_quotient(step_struct *S, const ns_progress_t *prog, nserr_t err)
{
    if (progress_stage(prog, S->c + 1, "elimination", 0.9))
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    if (elim_flush(S->L, prog) || elim_get_quotient_progress(S->q, S->L, prog))
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    /* fewer survivors where they are dependent (doc/design.md §9.1): on
       some layers this is long, and it polls the hook throughout */
    if (progress_stage(prog, S->c + 1, "layer basis", 0.93))
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    nq_poll poll = {prog, 0, 0};
    if (drop_redundant_survivors(S->q, &poll) ||
        swap_in_commutator_tails(S->q, S->last, &poll) ||
        (!(S->flags & NQ_KEEP_DEPENDENT) && minimise_survivors(S->q, &S->basis, &poll)))
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled in class %ld",
                         (long)(S->c + 1));
    if (progress_stage(prog, S->c + 1, "new presentation", 0.95))
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    for (slong s = 0; s < S->q->nsurv; s++) {
        if (S->basis.which && S->basis.which[s] >= 0)
            continue; /* a product of survivors that were commutator tails */
        NS_ASSERT(S->q->surv[s] >= S->last);
        if (S->q->surv[s] < S->last)
            return nserr_set(err, NS_ERR_INTERNAL, 0, 0,
                             "a non-commutator tail survived in class %ld", (long)(S->c + 1));
    }
    return NS_OK;
}

/* Phase 5: the class-(c+1) presentation, the old one with the tails
 * replaced by their values in the survivors, replaces Q's. */
static ns_status step_extend(step_struct *S, nq_t Q, pcp_work_t W, nserr_t err)
{
    const pcp_struct *P = Q->pcp;
    const elim_quotient_struct *q = S->q;
    slong n = S->n, X = S->X, c = S->c, ns = q->nsurv, M = n + ns;
    slong *wt2 = flint_malloc(M * sizeof(slong));
    for (slong g = 0; g < M; g++)
        wt2[g] = g < n ? P->weight[g] : c + 1;
    pcp_t R;
    pcp_init(R);
    pcp_reset(R, M, wt2, c + 1);
    flint_free(wt2);
    fmpz *v = _fmpz_vec_init(ns);
    pcw_t w;
    pcw_init(w);
    set_survivor_powers(R, q, n);
    for (slong i = 0; i < n; i++) {
        if (fmpz_is_zero(P->relorder + i))
            continue;
        pcw_set(w, P->pow + i);
        tail_value(v, q, S->powtail[i]);
        push_central(w, v, ns, n);
        pcp_set_power(R, i, P->relorder + i, w);
    }
    for (slong k = 0; k < n; k++) {
        if (W->progress && ns_progress_report(W->progress, NULL, -1.0)) {
            pcw_clear(w);
            _fmpz_vec_clear(v, ns);
            pcp_clear(R);
            return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled in class %ld",
                             (long)(c + 1));
        }
        for (slong i = 0; i < k; i++) {
            slong s = pcp_slot(k, i);
            if (P->weight[i] + P->weight[k] > c + 1)
                continue;
            old_conj_word(w, P, k, i);
            if (S->tailof[s] >= 0) {
                tail_value(v, q, S->tailof[s]);
                push_central(w, v, ns, n);
            }
            pcp_set_conj(R, k, i, w);
        }
    }
    pcw_clear(w);
    for (slong g = 0; g < n; g++)
        pcp_def_set(R->def + g, P->def + g);
    slong *ta = NULL, *tb = NULL;
    if (S->basis.which) {
        /* the terms of the survivors before the change: their commutators */
        ta = flint_malloc(S->T * sizeof(slong));
        tb = flint_malloc(S->T * sizeof(slong));
        for (slong t = 0; t < S->T; t++) {
            ta[t] = S->tails[t].a;
            tb[t] = S->tails[t].b;
        }
    }
    for (slong s = 0; s < ns; s++) {
        if (basis_change_def(R->def + n + s, &S->basis, s, ta, tb))
            continue;
        const tail_struct *t = S->tails + q->surv[s];
        R->def[n + s].kind = PCP_DEF_COMM;
        R->def[n + s].a = t->a;
        R->def[n + s].b = t->b;
    }
    flint_free(ta);
    flint_free(tb);
    fmpz *img2 = _fmpz_vec_init(FLINT_MAX(X * M, 1));
    for (slong x = 0; x < X; x++) {
        _fmpz_vec_set(img2 + x * M, Q->images + x * n, n);
        if (S->imgtail[x] >= 0) {
            tail_value(v, q, S->imgtail[x]);
            _fmpz_vec_set(img2 + x * M + n, v, ns);
        }
    }
    _fmpz_vec_clear(v, ns);
    W->P = R;
    ns_status st = NS_OK;
    if (pcp_complete_from(R, Q->pcp, W)) {
        st = nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled in class %ld", (long)(c + 1));
        _fmpz_vec_clear(img2, FLINT_MAX(X * M, 1));
    } else {
        _fmpz_vec_clear(Q->images, FLINT_MAX(X * n, 1));
        Q->images = img2;
        pcp_swap(Q->pcp, R);
    }
    pcp_clear(R);
    return st;
}

/* One step c -> c+1 (see nq.h for the method).  *grew is set to the number
 * of new generators; 0 means the series has stabilised. */
static ns_status step(nq_t Q, slong c, pcp_work_t W, const ns_progress_t *prog, slong *grew,
                      nserr_t err)
{
    *grew = 0;
    if (progress_stage(prog, c + 1, "tails", 0.0))
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    step_struct S;
    step_init(&S, Q, c);
    ns_status st = step_plan_tails(&S, Q, err);
    if (st == NS_OK)
        st = step_tailed_presentation(&S, Q, W, err);
    if (st == NS_OK)
        st = step_tail_relations(&S, Q, W, prog, err);
    if (st == NS_OK)
        st = step_quotient(&S, prog, err);
    if (st == NS_OK && S.q->nsurv > 0) {
        *grew = S.q->nsurv;
        st = step_extend(&S, Q, W, err);
    }
    W->P = Q->pcp;
    step_clear(&S);
    return st;
}

/* "[b,a]" and "a" give "[b,a,a]"; "b" and "a" give "[b,a]". */
static char *make_label(const char *x, const char *y)
{
    strbuf_t b;
    strbuf_init(b);
    if (x[0] == '[') {
        strbuf_putn(b, x, strlen(x) - 1);
        strbuf_printf(b, ",%s]", y);
    } else
        strbuf_printf(b, "[%s,%s]", x, y);
    return strbuf_take(b);
}

/* The label of a product definition: its terms in parentheses,
 * "([b,a,a]^-1 [b,a,b])", so that a power of it reads as one. */
static char *product_label(const nq_t Q, const pcp_def_struct *d)
{
    strbuf_t b;
    strbuf_init(b);
    strbuf_puts(b, "(");
    for (slong k = 0; k < d->len; k++) {
        if (k)
            strbuf_puts(b, " ");
        if (d->tb[k] < 0)
            strbuf_puts(b, Q->pres->gens->name[d->ta[k]]);
        else {
            char *l = make_label(Q->labels[d->ta[k]], Q->labels[d->tb[k]]);
            strbuf_puts(b, l);
            flint_free(l);
        }
        if (!fmpz_is_one(d->exp + k)) {
            char *e = fmpz_get_str(NULL, 10, d->exp + k);
            strbuf_printf(b, "^%s", e);
            flint_free(e);
        }
    }
    strbuf_puts(b, ")");
    return strbuf_take(b);
}

/* The labels of the pc generators, then the layers (which keep a pointer
 * to their labels). */
static void compute_layers(nq_t Q)
{
    const pcp_struct *P = Q->pcp;
    slong c = Q->class_reached;
    Q->labels = flint_malloc(FLINT_MAX(P->n, 1) * sizeof(char *));
    for (slong k = 0; k < P->n; k++) {
        const pcp_def_struct *d = P->def + k;
        if (d->kind == PCP_DEF_IMAGE)
            Q->labels[k] = strbuf_dup_str(Q->pres->gens->name[d->a]);
        else if (d->kind == PCP_DEF_COMM)
            Q->labels[k] = make_label(Q->labels[d->a], Q->labels[d->b]);
        else
            Q->labels[k] = product_label(Q, d);
    }
    free_layers(Q);
    Q->nlayers = c;
    Q->layers = flint_malloc(FLINT_MAX(c, 1) * sizeof(layer_struct));
    Q->hirsch_length = 0;
    slong g = 0;
    for (slong j = 1; j <= c; j++) {
        layer_struct *L = Q->layers + j - 1;
        slong start = g;
        while (g < P->n && P->weight[g] == j)
            g++;
        layer_init(L);
        layer_set(L, P, j, start, g - start, Q->labels);
        Q->hirsch_length += L->free_rank;
    }
}

/* At most how many pc generators the class-(c+1) quotient can have: the
 * new layer is spanned by the commutator tails [a_k, a_i] with a_k in layer
 * c and a_i in layer 1 (nq.h), so it has at most (pc generators of layer c)
 * x (pc generators of layer 1) of them. */
static slong predicted_pcgens(const pcp_struct *P, slong c)
{
    slong n1 = 0, nc = 0;
    for (slong k = 0; k < P->n; k++) {
        n1 += P->weight[k] == 1;
        nc += P->weight[k] == c;
    }
    return P->n + n1 * nc;
}

/* Steps from Q's class to class c, refusing before a step whose predicted
 * size exceeds max_pc.  Q stays a complete quotient of the class reached. */
static ns_status run_steps(nq_t Q, slong c, slong max_pc, const ns_progress_t *progress,
                           nserr_t err)
{
    pcp_work_t W;
    pcp_work_init(W, Q->pcp);
    W->progress = progress;
    ns_status st = NS_OK;
    for (slong k = Q->class_reached; k < c && !Q->stabilised; k++) {
        slong want = predicted_pcgens(Q->pcp, k);
        if (max_pc > 0 && want > max_pc) {
            st = nserr_set(err, NS_ERR_LIMIT, 0, 0,
                           "class %ld may need up to %ld pc generators (limit %ld); "
                           "reached class %ld",
                           (long)(k + 1), (long)want, (long)max_pc, (long)k);
            break;
        }
        slong grew;
        st = step(Q, k, W, progress, &grew, err);
        if (st != NS_OK)
            break;
        if (grew == 0)
            Q->stabilised = 1;
        else
            Q->class_reached = k + 1;
    }
    pcp_work_clear(W);
    return st;
}

ns_status nq_compute_max(nq_t Q, const pres_t G, slong c, slong max_pc,
                         const ns_progress_t *progress, nserr_t err)
{
    return nq_compute_flags(Q, G, c, max_pc, 0, progress, err);
}

ns_status nq_compute_flags(nq_t Q, const pres_t G, slong c, slong max_pc, int flags,
                           const ns_progress_t *progress, nserr_t err)
{
    nq_clear(Q);
    Q->flags = flags;
    if (c < 1 || c > NQ_MAX_CLASS)
        return nserr_set(err, NS_ERR_INPUT, 0, 0, "the class must be between 1 and %d",
                         NQ_MAX_CLASS);
    pres_set(Q->pres, G);
    Q->class_requested = c;
    if (progress_stage(progress, 1, "abelianisation", 0.0)) {
        nq_clear(Q);
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    }
    pcp_work_t W;
    pcp_work_init(W, Q->pcp);
    class_one(Q, W, err);
    pcp_work_clear(W);
    Q->class_reached = Q->pcp->n ? 1 : 0;
    Q->stabilised = Q->pcp->n == 0;
    ns_status st = run_steps(Q, c, max_pc, progress, err);
    if (st != NS_OK && !(st == NS_ERR_LIMIT && Q->class_reached > 0)) {
        nq_clear(Q);
        return st;
    }
    compute_layers(Q);
    return st;
}

ns_status nq_compute(nq_t Q, const pres_t G, slong c, const ns_progress_t *progress,
                     nserr_t err)
{
    return nq_compute_max(Q, G, c, NQ_DEFAULT_MAX_PC, progress, err);
}

ns_status nq_set_class(nq_t Q, const nq_t from, slong c, slong max_pc,
                       const ns_progress_t *progress, nserr_t err)
{
    nq_clear(Q);
    if (c < 1 || c > NQ_MAX_CLASS)
        return nserr_set(err, NS_ERR_INPUT, 0, 0, "the class must be between 1 and %d",
                         NQ_MAX_CLASS);
    Q->flags = from->flags;
    pres_set(Q->pres, from->pres);
    Q->class_requested = c;
    slong keep = FLINT_MIN(c, from->class_reached);
    pcp_set_prefix(Q->pcp, from->pcp, from->pcp->n ? keep : from->pcp->maxweight);
    slong X = Q->pres->gens->n, m = Q->pcp->n, n0 = from->pcp->n;
    Q->images = _fmpz_vec_init(FLINT_MAX(X * m, 1));
    for (slong x = 0; x < X; x++)
        _fmpz_vec_set(Q->images + x * m, from->images + x * n0, m);
    Q->class_reached = keep;
    /* as nq_compute: known stabilised when a step up to class c gave nothing */
    Q->stabilised = from->stabilised && from->class_reached < c;
    ns_status st = run_steps(Q, c, max_pc, progress, err);
    if (st != NS_OK && !(st == NS_ERR_LIMIT && Q->class_reached > 0)) {
        nq_clear(Q);
        return st;
    }
    compute_layers(Q);
    return st;
}

ns_status nq_tail_relations_get_mat(fmpz_mat_t R, const nq_t Q, slong c, slong max_entries,
                                    nserr_t err)
{
    fmpz_mat_clear(R);
    fmpz_mat_init(R, 0, 0);
    if (c < 1 || c >= Q->class_reached)
        return nserr_set(err, NS_ERR_INPUT, 0, 0,
                         "no step %ld -> %ld in a quotient of class %ld", (long)c,
                         (long)(c + 1), (long)Q->class_reached);
    nq_t P; /* the class-c prefix: instant, no collection (nq_set_class) */
    nq_init(P);
    ns_status st = nq_set_class(P, Q, c, 0, NULL, err);
    if (st != NS_OK) {
        nq_clear(P);
        return st;
    }
    pcp_work_t W;
    pcp_work_init(W, P->pcp);
    step_struct S;
    step_init(&S, P, c);
    S.keep = 1;
    S.max_entries = max_entries;
    st = step_plan_tails(&S, P, err);
    if (st == NS_OK)
        st = step_tailed_presentation(&S, P, W, err);
    if (st == NS_OK)
        st = step_tail_relations(&S, P, W, NULL, err);
    if (st == NS_OK && max_entries > 0 && S.over)
        st = nserr_set(err, NS_ERR_LIMIT, 0, 0,
                       "the relation matrix of step %ld -> %ld has %ld x %ld entries "
                       "(cap %ld)",
                       (long)c, (long)(c + 1), (long)S.nrows, (long)S.T, (long)max_entries);
    if (st == NS_OK) {
        fmpz_mat_clear(R);
        fmpz_mat_init(R, S.nrows, S.T);
        for (slong i = 0; i < S.nrows; i++)
            for (slong j = 0; j < S.T; j++)
                fmpz_swap(fmpz_mat_entry(R, i, j), S.rows + i * S.T + j);
    }
    W->P = P->pcp;
    step_clear(&S);
    pcp_work_clear(W);
    nq_clear(P);
    return st;
}

ns_status nq_eval(const nq_t Q, fmpz *out, const expr_t w, const ns_progress_t *progress,
                  nserr_t err)
{
    pcp_work_t W;
    pcp_work_init(W, Q->pcp);
    W->progress = progress;
    int bad = pcp_eval_expr(W, out, w->root, Q->images);
    pcp_work_clear(W);
    if (bad)
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "evaluation stopped");
    return NS_OK;
}

char *nq_elt_get_str(const nq_t Q, const fmpz *u)
{
    return pcp_elt_get_str(Q->pcp, u, Q->labels);
}
