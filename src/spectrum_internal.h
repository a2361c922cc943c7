/* spectrum_internal.h — what the files of the spectrum module share.
 *
 * The module is one idea (spectrum.h states the contracts and the
 * mathematics) split along its seams, one file each:
 *   spectrum.c        life cycle, the computation in order, accessors
 *   spectrum_roots.c  polynomial helpers, certified roots, the unit circle
 *   spectrum_radius.c the exact spectral radius, refinement on demand
 *                     (radius, root bound, entropy) and the comparisons
 *   spectrum_str.c    number and polynomial formatting
 * The characteristic polynomial itself comes from charpoly.h.
 * Nothing here is part of the engine's interface: only spectrum_*.c include
 * this header. */
#ifndef NILSTEP_SPECTRUM_INTERNAL_H
#define NILSTEP_SPECTRUM_INTERNAL_H

#include "spectrum.h"

/* Rounds of precision doubling spent separating the candidates for the
 * spectral radius before exact arithmetic takes over. */
#define SPECTRUM_TIE_ROUNDS 3

/* ---- polynomial helpers (spectrum_roots.c) ---------------------------- */

/* 1 iff f = x. */
int spectrum_poly_is_x(const fmpz_poly_t f);

/* Total order used to sort factors: x first, then by degree, then by the
 * coefficients from the constant term up. */
int spectrum_poly_cmp(const fmpz_poly_struct *a, const fmpz_poly_struct *b);

/* res = (-1)^n f(-x): roots negated, monic stays monic. */
void spectrum_poly_reflect(fmpz_poly_t res, const fmpz_poly_t f);

/* ---- roots and the unit circle (spectrum_roots.c) --------------------- */

/* Roots of the squarefree f (degree n >= 1) into r[0..n), each with
 * acb_rel_accuracy_bits >= bits, each ball containing exactly one root;
 * Arb's order and conventions (real roots first with an exactly zero
 * imaginary part).  A linear factor gives its exact root. */
void spectrum_roots_certified(acb_ptr r, const fmpz_poly_t f, slong bits);

/* Number of roots of the monic irreducible f on the unit circle (the
 * method is explained in spectrum.h). */
ns_status spectrum_roots_unimodular(slong *u, const fmpz_poly_t f, nserr_t err);

/* Roots r, moduli a and exact sides of the monic irreducible f that has u
 * roots on the unit circle; roots at accuracy >= bits, refined until every
 * real part that is 0 is exactly 0 and every side is decided. */
ns_status spectrum_roots_classify(acb_ptr r, arb_ptr a, int *side,
                                  const fmpz_poly_t f, slong u, slong bits,
                                  nserr_t err);

/* Roots of factor k of S, refined to `bits` and classified, into S's
 * per-root arrays. */
ns_status spectrum_roots_compute_factor(spectrum_t S, slong k, slong bits,
                                        nserr_t err);

/* ---- the exact radius (spectrum_radius.c) ----------------------------- */

/* Sets S->radius, radius_exact, radius_qqbar and the dominant factors from
 * the classified roots. */
ns_status spectrum_radius_compute(spectrum_t S, nserr_t err);

#endif
