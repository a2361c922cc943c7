/* endo.h — an endomorphism of a computed class-c quotient, given by the
 * images of the input generators.
 *
 * The images are evaluated in the quotient; the map is well defined there
 * iff every relator's image is trivial.  The image of every pc generator
 * then follows from its definition: images of input generators for weight
 * 1, and alpha([a_k, a_i]) = [alpha(a_k), alpha(a_i)] above — so a new map
 * never re-runs the nilpotent quotient algorithm. */
#ifndef NILSTEP_ENDO_H
#define NILSTEP_ENDO_H

#include <flint/fmpz_mat.h>
#include "layer.h"
#include "nq.h"

typedef struct {
    slong n, ngens;
    fmpz *gen_img;  /* ngens x n: the images of the input generators */
    int valid;
    slong nfail;
    slong *fail_rel; /* indices of relators whose image is not trivial */
    fmpz *fail_val;  /* nfail x n: those images */
    fmpz *pc_img;    /* n x n: alpha(a_k), computed on first use (valid maps
                        only); NULL until then */
    slong nlayers;
    fmpz_mat_struct *act; /* nlayers: the action on each layer's pc
                             generators (valid maps only) */
} endo_struct;
typedef endo_struct endo_t[1];

void endo_init(endo_t E);
void endo_clear(endo_t E);

/* images: Q->pres->gens.n words in the input generators. */
ns_status endo_set(endo_t E, const nq_t Q, const expr_struct *images,
                   const ns_progress_t *progress, nserr_t err);

/* Sets E from images of the input generators given as elements (ngens x n);
 * used for compositions and powers. */
ns_status endo_set_elts(endo_t E, const nq_t Q, const fmpz *gen_img,
                        const ns_progress_t *progress, nserr_t err);

/* Computes the images of all pc generators if they are not there yet (a
 * cache: E is logically unchanged).  Returns 1 when W was stopped
 * (pcp.h). */
int endo_ensure_pc_images(const endo_t E, const nq_t Q, pcp_work_t W);

/* out := alpha(g) for a valid map (out may alias g). */
void endo_apply(const endo_t E, const nq_t Q, fmpz *out, const fmpz *g, pcp_work_t W);

/* out := a o b (first b, then a); both valid. */
ns_status endo_compose(endo_t out, const endo_t a, const endo_t b, const nq_t Q,
                       const ns_progress_t *progress, nserr_t err);
/* out := a^k, k >= 0 (repeated squaring). */
ns_status endo_pow(endo_t out, const endo_t a, ulong k, const nq_t Q,
                   const ns_progress_t *progress, nserr_t err);
/* out := a^-1 for an automorphism of a quotient whose layers are
 * torsion-free, solved layer by layer; NS_ERR_INPUT if a is not one. */
ns_status endo_inverse(endo_t out, const endo_t a, const nq_t Q, const ns_progress_t *progress,
                       nserr_t err);

/* The action on layer L: A (count x count) has as column k the weight-j
 * coordinates of alpha(a_(start+k)); M = phi A sigma (free_rank square) is
 * the induced matrix on the free part. */
void endo_layer_matrices(fmpz_mat_t A, fmpz_mat_t M, const endo_t E, const layer_t L);

#endif
