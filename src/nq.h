/* nq.h — the nilpotent quotient algorithm.
 *
 * Computes a consistent nilpotent presentation of G / gamma_(c+1)(G) for a
 * finitely presented G, one class at a time, following C. C. Sims,
 * Computation with Finitely Presented Groups (1994), ch. 11, and W. Nickel,
 * "Computing nilpotent quotients of finitely presented groups" (DIMACS
 * Series 25, 1996):
 *
 *  class 1: the abelianisation, from the exponent-sum matrix of the
 *           relators in echelon form;
 *  c -> c+1: put a new central generator (a "tail") on every power relation,
 *           on every conjugate relation of weight <= c+1 that is not a
 *           definition, and on every image of an input generator that is
 *           not a definition; this presents F/[K,F] for K the kernel of
 *           F -> G/gamma_(c+1)(G), once it is made consistent.  Enforce
 *           consistency (each test word gives a linear relation between
 *           tails), then evaluate the relators, which by
 *           N [K,F] = N gamma_(c+2)(F) cut out G/gamma_(c+2)(G).  The
 *           relation lattice is brought to echelon form (elim.h) with the
 *           commutator tails [a_k, a_i] (weight(a_i) = 1, weight(a_k) = c)
 *           last; they generate the new layer, so every surviving tail is
 *           one of them and carries its commutator as definition.  Where
 *           those survivors are more than the free rank plus the number
 *           of invariant factors > 1 of the layer, the layer is put into
 *           Smith form and its generators are products of commutators
 *           (PCP_DEF_PROD, pcp.h; in class 1 products of images): every
 *           layer has exactly that many pc generators.
 *
 * The series stabilises when a step produces no new generator: then
 * gamma_(c+1)(G) = gamma_(c+2)(G) and every larger class gives the same
 * quotient. */
#ifndef NILSTEP_NQ_H
#define NILSTEP_NQ_H

#include <flint/fmpz_mat.h>

#include "layer.h"
#include "pcp.h"
#include "pres.h"

typedef struct {
    pres_t pres;           /* a copy of the input presentation */
    slong class_requested;
    slong class_reached;   /* number of layers computed (<= requested) */
    int stabilised;        /* 1: gamma_(class_reached+1) is known trivial */
    pcp_t pcp;             /* the class-(class_reached) quotient */
    fmpz *images;          /* pres->gens.n rows of pcp.n: the generators' images */
    slong nlayers;         /* = class_reached */
    layer_struct *layers;  /* layer j = gamma_j / gamma_(j+1) is layers[j-1],
                              computed once here and borrowed by everyone
                              else (their coordinates on first use:
                              layer_ensure_coords) */
    char **labels;         /* pcp.n labels: "a", "[b,a]", "[b,a,a]"; a generator
                              defined as a product has its terms in
                              parentheses, "([b,a,a]^-1 [b,a,b])" */
    slong hirsch_length;
    int flags;             /* NQ_ flags of the computation */
} nq_struct;
typedef nq_struct nq_t[1];

void nq_init(nq_t Q);
void nq_clear(nq_t Q);

/* Computes the class-c quotient of G (1 <= c <= NQ_MAX_CLASS).  progress may
 * be NULL; it is told each stage and polled during collection, and a
 * nonzero answer stops with NS_ERR_CANCELLED.  On error Q is left empty
 * (as after nq_init) and err says why.
 *
 * The pc-generator limit is decided before the work: a step whose new
 * layer can have more generators than max_pc allows (at most (layer c) x
 * (layer 1) of them, nq.c) is not started; then the result is
 * NS_ERR_LIMIT with Q the complete quotient of the class reached
 * (Q->class_reached < c, layers computed), unless that is class 0.
 * max_pc <= 0 means no limit.  nq_compute uses NQ_DEFAULT_MAX_PC: the free
 * group of rank 2 reaches class 14 (2538 generators; class 15 may need
 * 4860), rank 3 class 9, the genus-3 surface group class 5 (the bound,
 * 2044, is loose for one-relator groups). */
#define NQ_MAX_CLASS 64
#define NQ_DEFAULT_MAX_PC 4000
ns_status nq_compute(nq_t Q, const pres_t G, slong c, const ns_progress_t *progress,
                     nserr_t err);
ns_status nq_compute_max(nq_t Q, const pres_t G, slong c, slong max_pc,
                         const ns_progress_t *progress, nserr_t err);

/* The same with flags.  NQ_KEEP_DEPENDENT (for tests that compare the two
 * routes): no layer is put into Smith form, so a layer whose relations no
 * single commutators resolve keeps dependent pc generators, each defined
 * by one commutator (the behaviour before product definitions).  Without
 * it every layer has exactly free rank + number of invariant factors > 1
 * pc generators.  nq_set_class keeps the flags of from. */
#define NQ_KEEP_DEPENDENT 1
ns_status nq_compute_flags(nq_t Q, const pres_t G, slong c, slong max_pc, int flags,
                           const ns_progress_t *progress, nserr_t err);

/* Q := the class-c quotient of the group of from, without starting again:
 * for c <= from->class_reached it is a prefix of from (the relations cut to
 * the generators of weight <= c; no collection, instant), otherwise from is
 * copied and extended one class at a time.  The result is the one
 * nq_compute_max gives (test_nq checks it), with the same errors and the
 * same partial result on NS_ERR_LIMIT.  from is only read; Q != from. */
ns_status nq_set_class(nq_t Q, const nq_t from, slong c, slong max_pc,
                       const ns_progress_t *progress, nserr_t err);

/* The relation matrix of the step c -> c+1 (1 <= c < Q->class_reached),
 * as the engine builds it before elimination: one row per nonzero linear
 * relation between the tails (consistency tests, relators, then one per
 * generator defined as a product, nq.c), one
 * column per tail in the engine's order (power, image and conjugate tails,
 * the commutator tails [a_k, a_i], weight(a_k) = c, weight(a_i) = 1, last).
 * When the abelianisation is finite of exponent m, m Z^cols also belongs
 * to the lattice and is not among the rows.  For benchmarks (a floor to
 * compare the elimination with) and tests; the step's collection is
 * repeated, on the class-c prefix of Q.  R must be initialised; it is
 * replaced, and owned by the caller as before.  max_entries > 0 refuses
 * (NS_ERR_LIMIT, R left 0 x 0) a matrix with more entries than that,
 * without allocating it; <= 0 means no cap.  Other errors: NS_ERR_INPUT
 * for c out of range. */
ns_status nq_tail_relations_get_mat(fmpz_mat_t R, const nq_t Q, slong c, slong max_entries,
                                    nserr_t err);

/* Evaluates a word in the input generators in the quotient; out has
 * Q->pcp->n entries.  Returns NS_OK, or NS_ERR_CANCELLED when progress
 * asked to stop. */
ns_status nq_eval(const nq_t Q, fmpz *out, const expr_t w, const ns_progress_t *progress,
                  nserr_t err);

/* The element as a word in the pc generator labels, e.g. "a^2 [b,a]^-1";
 * caller frees with flint_free. */
char *nq_elt_get_str(const nq_t Q, const fmpz *u);

#endif
