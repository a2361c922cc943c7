/* layer.h — a layer gamma_j / gamma_(j+1) of a computed quotient as an
 * abelian group, with coordinates on its free part.
 *
 * The layer is Z^count / (rows of rel), one row per finite pc generator of
 * weight j (its relative order minus the weight-j part of its power word).
 * Its free part F_j = layer / torsion is Z^free_rank; the coordinate map
 * phi (free_rank x count) is a basis of the integer kernel of rel, read off
 * a Hermite normal form with transform of rel^T, and sigma (count x
 * free_rank) is a right inverse (phi sigma = I) from the inverse transform:
 * the free-part basis vector k is the layer element sigma[:,k].  When the
 * layer has no finite generator both are the identity and the basis is the
 * layer's own pc generators. */
#ifndef NILSTEP_LAYER_H
#define NILSTEP_LAYER_H

#include <flint/fmpz_mat.h>
#include "nq.h"

typedef struct {
    slong weight, start, count, free_rank, nfinite;
    fmpz_mat_t rel;   /* nfinite x count */
    fmpz_mat_t phi;   /* free_rank x count */
    fmpz_mat_t sigma; /* count x free_rank */
    fmpz_mat_t hnf;   /* nfinite x count: the Hermite normal form of rel */
    char **basis;     /* free_rank labels, owned */
} layer_struct;
typedef layer_struct layer_t[1];

void layer_init(layer_t L);
void layer_clear(layer_t L);
/* Reads layer j (1-based, j <= Q->class_reached) of Q. */
void layer_compute(layer_t L, const nq_t Q, slong j);

/* Reduces the layer vector v (count entries) in place to the canonical
 * representative of its class modulo the rows of rel: each pivot entry of
 * the Hermite form ends in [0, pivot). */
void layer_reduce_vec(const layer_t L, fmpz *v);

/* 1 if the layer vector v (count entries) lies in the row lattice of rel. */
int layer_is_trivial_vec(const layer_t L, const fmpz *v);

#endif
