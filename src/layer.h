/* layer.h — a layer gamma_j / gamma_(j+1) of a computed quotient: the one
 * description of a layer in nilstep.  The quotient (nq.h) owns its layers
 * and computes each once; endomorphisms, the analysis and the writers
 * borrow them.
 *
 * The layer is Z^count / (rows of rel), one row per finite pc generator of
 * weight j (its relative order minus the weight-j part of its power word).
 * As a group it is Z^free_rank + Z/d_1 + ... + Z/d_ntors, the invariant
 * factors d_i > 1 from the Smith normal form of rel.
 *
 * Its free part F_j = layer / torsion is Z^free_rank; the coordinate map
 * phi (free_rank x count) is a basis of the integer kernel of rel, read off
 * a Hermite normal form with transform of rel^T, and sigma (count x
 * free_rank) is a right inverse (phi sigma = I) from the inverse transform:
 * the free-part basis vector k is the layer element sigma[:,k], labelled
 * basis[k].  When the layer has no finite generator both are the identity
 * and the basis is the layer's own pc generators.  Otherwise every pc
 * generator outside the support of rel (the columns where it is nonzero)
 * is a basis element on its own, listed first in order, and the Hermite
 * form with transform and its inverse are taken on the support only, so
 * their cost follows the relations, not the layer (1450 pc generators in
 * layer 7 of the genus-2 surface group, 10 of them in the support).  They
 * are computed on first use (layer_ensure_coords), once. */
#ifndef NILSTEP_LAYER_H
#define NILSTEP_LAYER_H

#include <flint/fmpz_mat.h>
#include "pcp.h"

typedef struct {
    /* the layer as a group (layer_set) */
    slong weight;          /* j */
    slong start, count;    /* its pc generators: start .. start+count-1 */
    slong nfinite;         /* those of finite relative order */
    slong free_rank;       /* count - nfinite */
    slong ntors;
    fmpz *torsion;         /* ntors invariant factors d_1 | d_2 | ..., all > 1 */
    fmpz_mat_t rel;        /* nfinite x count: the relation block */
    char *const *pc_labels; /* count labels of its pc generators, borrowed
                               from the quotient ("a", "[b,a]") */
    /* coordinates on the free part (layer_ensure_coords) */
    int has_coords;
    fmpz_mat_t hnf;        /* nfinite x count: the Hermite normal form of rel */
    fmpz_mat_t phi;        /* free_rank x count */
    fmpz_mat_t sigma;      /* count x free_rank */
    char **basis;          /* free_rank labels, e.g. "x^-1 y^2", owned */
} layer_struct;
typedef layer_struct layer_t[1];

/* An empty layer (weight 0, no generators). */
void layer_init(layer_t L);
void layer_clear(layer_t L);

/* Reads the layer of weight j whose pc generators in P are start ..
 * start+count-1 (labels: the quotient's P->n labels, kept by pointer, so
 * they must outlive L): its relation block and invariant factors.  The
 * coordinates are left for layer_ensure_coords.  count 0 gives the trivial
 * layer. */
void layer_set(layer_t L, const pcp_t P, slong j, slong start, slong count,
               char *const *labels);

/* Computes hnf, phi, sigma and basis if they are not there yet: a cache,
 * so L is logically unchanged (not safe to call on one layer from two
 * threads at once). */
void layer_ensure_coords(const layer_t L);

/* Reduces the layer vector v (count entries) in place to the canonical
 * representative of its class modulo the rows of rel: each pivot entry of
 * the Hermite form ends in [0, pivot).  Needs the coordinates. */
void layer_reduce_vec(const layer_t L, fmpz *v);

/* 1 if the layer vector v (count entries) lies in the row lattice of rel. */
int layer_is_trivial_vec(const layer_t L, const fmpz *v);

#endif
