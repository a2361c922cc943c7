/* pcp.h — nilpotent (polycyclic) presentations and collection.
 *
 * A presentation on pc generators a_0 .. a_(n-1), ordered by weight, with
 *   relative orders m_i (0 = infinite),
 *   power relations      a_i^(m_i)   = pow[i]          (finite a_i),
 *   conjugate relations  a_k^(a_i)    = conj(k,i)       (i < k),
 *                        a_k^(a_i^-1) = conjm(k,i),
 * every right-hand side a normal word in generators > i (resp. > k for
 * powers).  Generators i, k with weight[i] + weight[k] > maxweight commute;
 * generators of weight maxweight are central.
 *
 * Elements are dense exponent vectors (fmpz, length n) in normal form
 * a_0^(u_0) ... a_(n-1)^(u_(n-1)), 0 <= u_i < m_i for finite a_i.
 *
 * Collection is collection from the left (C. R. Leedham-Green and
 * L. H. Soicher, "Collection from the left and other strategies",
 * J. Symbolic Comput. 9, 1990; M. Vaughan-Lee, "Collection from the left",
 * same volume, 1990): the collected part is a vector, and multiplying by a_i
 * conjugates the uncollected tail by a_i through the stored relations.
 * Large exponents: when no relative order is finite, x^e and conjugation
 * by a_i^e are evaluated as integer-valued polynomials in e (Hall), from
 * at most maxweight + 1 small values (fewer for elements of higher weight:
 * the degree bound is proved in pcp.c); otherwise conjugation by a_i^e uses the
 * automorphisms x -> x^(a_i^(2^b)) built by repeated squaring. */
#ifndef NILSTEP_PCP_H
#define NILSTEP_PCP_H

#include <flint/flint.h>
#include <flint/fmpz.h>
#include <flint/fmpz_vec.h>
#include "expr.h"
#include "nserr.h"

/* A normal word: generators gen[0] < gen[1] < ... with nonzero exponents. */
typedef struct {
    slong len, alloc;
    slong *gen;
    fmpz *exp;
} pcw_struct;
typedef pcw_struct pcw_t[1];

void pcw_init(pcw_t w);
void pcw_clear(pcw_t w);
void pcw_set(pcw_t dst, const pcw_t src);
void pcw_zero(pcw_t w);
/* Appends a_g^e (g larger than every generator already in w; e != 0). */
void pcw_push(pcw_t w, slong g, const fmpz_t e);
/* The word of the vector u of length n. */
void pcw_set_vec(pcw_t w, const fmpz *u, slong n);
/* u (length n, zeroed first) := the vector of w. */
void pcw_get_vec(fmpz *u, slong n, const pcw_t w);
int pcw_is_gen(const pcw_t w, slong g); /* w == a_g exactly */

typedef enum { PCP_DEF_NONE = 0, PCP_DEF_IMAGE, PCP_DEF_COMM, PCP_DEF_PROD } pcp_def_kind;

/* How a generator was introduced by the nilpotent quotient algorithm:
 * IMAGE: a_k is the image of input generator a;  COMM: a_k = [a_a, a_b]
 * with weight[b] = 1 and weight[a] = weight[k] - 1;  PROD: a_k is the
 * product, in this order, of the len terms t^(exp[t]), where term t is the
 * image of input generator ta[t] when tb[t] < 0 (weight[k] = 1), else the
 * commutator [a_(ta[t]), a_(tb[t])] (weights weight[k] - 1 and 1).  A
 * product is needed where no single commutators (images) generate the
 * layer minimally (doc/design.md §9.1).  The definition holds exactly in
 * the presentation, not only modulo the next layer.  ta, tb and exp are
 * owned by the definition (pcp_def_clear), NULL unless kind is PROD. */
typedef struct {
    pcp_def_kind kind;
    slong a, b;
    slong len;
    slong *ta, *tb;
    fmpz *exp;
} pcp_def_struct;

/* dst := a copy of src (dst is cleared first; dst != src). */
void pcp_def_set(pcp_def_struct *dst, const pcp_def_struct *src);
void pcp_def_clear(pcp_def_struct *d);
/* d := the product definition of len terms (arrays copied); kind PROD. */
void pcp_def_set_prod(pcp_def_struct *d, slong len, const slong *ta, const slong *tb,
                      const fmpz *exp);

typedef struct {
    slong n;            /* number of pc generators */
    slong maxweight;    /* class bound of the presentation */
    slong ncore;        /* generators >= ncore are central (weight maxweight) */
    slong *weight;      /* n weights, non-decreasing, >= 1 */
    fmpz *relorder;     /* n relative orders, 0 = infinite */
    pcw_struct *pow;    /* n power words (empty for infinite a_i) */
    pcw_struct *powinv; /* n inverses of the power words */
    /* For 0 <= i < k < ncore, slot T(k,i) = k(k-1)/2 + i: */
    pcw_struct *conj;     /* a_k^(a_i) */
    pcw_struct *conjinv;  /* (a_k^-1)^(a_i) */
    pcw_struct *conjm;    /* a_k^(a_i^-1) */
    pcw_struct *conjminv; /* (a_k^-1)^(a_i^-1) */
    char *trivial;        /* 1: a_k and a_i commute */
    slong *commute_from;  /* n: every k >= commute_from[i] commutes with a_i */
    pcp_def_struct *def;  /* n definitions (owned: pcp_clear frees them) */
    int torsion_free;     /* no finite relative order (set by pcp_complete);
                             then large powers go by Hall polynomials */
} pcp_struct;
typedef pcp_struct pcp_t[1];

/* An empty presentation (n = 0). */
void pcp_init(pcp_t P);
void pcp_clear(pcp_t P);
void pcp_swap(pcp_t a, pcp_t b);
/* Makes P a presentation on n generators with the given weights (copied)
 * and maxweight; all relative orders infinite, all relations trivial,
 * definitions NONE.  Callers then set relorder, pow and conj through the
 * setters below and finish with pcp_complete. */
void pcp_reset(pcp_t P, slong n, const slong *weight, slong maxweight);
/* P := the quotient of the complete presentation src by the generators of
 * weight > maxweight (<= src->maxweight): its first generators, every
 * relation and every derived table cut to them.  Cutting is a homomorphism,
 * so no collection is needed; with maxweight = src->maxweight it copies. */
void pcp_set_prefix(pcp_t P, const pcp_t src, slong maxweight);

/* Sets a_k^(a_i) = w (i < k).  Only pairs with k < ncore may be nontrivial. */
void pcp_set_conj(pcp_t P, slong k, slong i, const pcw_t w);
/* Sets m_i = m (> 0) and a_i^m = w. */
void pcp_set_power(pcp_t P, slong i, const fmpz_t m, const pcw_t w);
static inline slong pcp_slot(slong k, slong i) { return k * (k - 1) / 2 + i; }

/* Work area for collection: the presentation it reads and a cancel hook.
 * One per thread of computation; the presentation is only read.  When the
 * hook asks to stop, overflow is set, every operation on W returns at once
 * (leaving garbage in its output) and the functions below that report it
 * return nonzero ("stopped"); callers turn that into NS_ERR_CANCELLED
 * (nserr.h states the convention).  There is no step limit: sizes are
 * limited before the work, by the callers (nq.c). */
typedef struct {
    const pcp_struct *P;
    ulong steps;          /* collection steps done (the hook is polled by them) */
    int overflow;         /* the hook asked to stop */
    const ns_progress_t *progress; /* may be NULL; polled every 2^12 steps */
    int plain;            /* 1: never the polynomial route (tests compare the
                             two routes); 0 after pcp_work_init */
} pcp_work_struct;
typedef pcp_work_struct pcp_work_t[1];

void pcp_work_init(pcp_work_t W, const pcp_t P);
void pcp_work_clear(pcp_work_t W);

/* Derives the inverse power words and the inverse conjugates from pow and
 * conj (descending over i: everything for a_i uses only generators > i).
 * Returns 0, or 1 when stopped. */
int pcp_complete(pcp_t P, pcp_work_t W);

/* The same tables for a presentation P that extends prev by central
 * generators of weight P->maxweight = prev->maxweight + 1 (indices
 * prev->n ..): P's relations are prev's times words in those generators.
 * Each inverse word is prev's times a central correction found by one
 * collection (the inverse of w t, t central, is w^-1 t^-1), instead of
 * inverting and iterating from scratch; where that does not apply it falls
 * back to pcp_complete's way.  Returns 0, or 1 when W ran out of budget. */
int pcp_complete_from(pcp_t P, const pcp_t prev, pcp_work_t W);

/* u := u * a_i^e.  u has P->n entries in normal form. */
void pcp_collect_gen(pcp_work_t W, fmpz *u, slong i, const fmpz_t e);
/* u := u * w. */
void pcp_collect_word(pcp_work_t W, fmpz *u, const pcw_t w);

/* Element operations on vectors of length n; out may alias the inputs. */
void pcp_elt_mul(pcp_work_t W, fmpz *out, const fmpz *u, const fmpz *v);
void pcp_elt_inv(pcp_work_t W, fmpz *out, const fmpz *u);
void pcp_elt_pow(pcp_work_t W, fmpz *out, const fmpz *u, const fmpz_t e);
void pcp_elt_comm(pcp_work_t W, fmpz *out, const fmpz *u, const fmpz *v);
/* out := v^-1 u v */
void pcp_elt_conj(pcp_work_t W, fmpz *out, const fmpz *u, const fmpz *v);

/* Evaluates the word e with generator g mapped to images + g * n.  Returns
 * 0, or 1 when stopped. */
int pcp_eval_expr(pcp_work_t W, fmpz *out, const expr_node *e, const fmpz *images);

/* Writes the element as a word in pc generator names "name[k]", e.g.
 * "a^2 [b,a]^-1"; names has n entries.  Caller frees with flint_free. */
char *pcp_elt_get_str(const pcp_t P, const fmpz *u, char *const *names);

/* The consistency test words of a nilpotent presentation (C. C. Sims,
 * Computation with Finitely Presented Groups, 1994, ch. 9; Holt, Eick and
 * O'Brien, Handbook of Computational Group Theory, 2005, ch. 8):
 *   (a_k a_j) a_i = a_k (a_j a_i)                  k > j > i,
 *   (a_j^(m_j-1) a_j) a_i = a_j^(m_j-1) (a_j a_i)  j > i, a_j finite,
 *   (a_j a_i^(m_i-1)) a_i = a_j (a_i^(m_i-1) a_i)  j > i, a_i finite,
 *   (a_i^(m_i-1) a_i) a_i = a_i (a_i^(m_i-1) a_i)  a_i finite,
 *   (a_j a_i^-1) a_i = a_j                         j > i, a_i infinite,
 * skipping those whose weights add up to more than maxweight (they hold
 * because such generators commute).  fn gets both collected sides of each
 * test and returns nonzero to stop.  Returns 0 when all tests ran, 1 when
 * fn stopped the run, -1 when the hook stopped it (W->overflow). */
typedef int (*pcp_consistency_fn)(void *ctx, const fmpz *lhs, const fmpz *rhs);
int pcp_consistency_run(const pcp_t P, pcp_work_t W, pcp_consistency_fn fn, void *ctx);

/* 1 if every test word above collects to the same element both ways. */
int pcp_is_consistent(const pcp_t P, pcp_work_t W);

#endif
