/* torsion.h — the torsion subgroup T of a computed class-c quotient Gc,
 * the torsion-free quotient Gc/T, and the counts that need the finite part:
 * Reidemeister numbers, fixed points, fixed conjugacy classes.
 *
 * In a finitely generated nilpotent group the elements of finite order form
 * a finite characteristic subgroup T and Gc/T is torsion-free (Mal'cev 1949;
 * see P. Hall, "Nilpotent groups", 1957, or D. Segal, "Polycyclic groups",
 * 1983, ch. 1).  T is found one class at a time: if F is the torsion
 * subgroup of G/gamma_k and P its preimage in G/gamma_(k+1), the layer
 * A = gamma_k/gamma_(k+1) is central in P of index n = |F|, so x -> x^n is
 * the transfer P -> A (Schur), a homomorphism; the torsion of G/gamma_(k+1)
 * is its kernel modulo the torsion of A.  doc/torsion.md gives the proof
 * and the counting formulas used below.
 *
 * Finite subgroups are kept as induced polycyclic sequences (D. F. Holt,
 * B. Eick, E. A. O'Brien, Handbook of Computational Group Theory, 2005,
 * §8.3): elements u_1 .. u_s with strictly increasing leading pc
 * generators p_i, leading exponents e_i dividing m_(p_i), so that every
 * element is u_1^c_1 ... u_s^c_s with 0 <= c_i < m_(p_i)/e_i, uniquely. */
#ifndef NILSTEP_TORSION_H
#define NILSTEP_TORSION_H

#include "endo.h"
#include "layer.h"
#include "nq.h"

/* Counting stops beyond this many elements (finite Gc, or the number of
 * twisted classes of Gc/T times |T|): NS_ERR_LIMIT names it. */
#define TORSION_MAX_COUNT 1000000

typedef struct {
    slong n;        /* pc generators of the group */
    slong len;      /* length s of the sequence */
    fmpz *elt;      /* len x n */
    slong *lead;    /* leading pc generator of each element */
    fmpz *lead_exp; /* e_i */
    fmpz *relord;   /* m_(p_i) / e_i */
    slong *at;      /* n: the index of the element leading at p, or -1 */
    int broken;     /* an element of infinite order was offered (a bug) */
} tsub_struct;
typedef tsub_struct tsub_t[1];

typedef struct {
    int computed;
    tsub_t sub;        /* the torsion subgroup T */
    fmpz_t order;      /* |T| */
    int abelian;
    slong ninv;
    fmpz *inv;         /* abelian invariants d_1 | d_2 | ... (> 1) when abelian */
    char **gen_str;    /* sub->len normal words (flint_free) */
    int finite;        /* Gc is finite (T = Gc) */
    /* Gc/T, layer by layer: layer j of Gc/T is L_j / U_j, U_j the image of
     * T meet gamma_j; the free parts and their bases are those of L_j. */
    slong nlayers;
    fmpz *u_ord;       /* nlayers: |U_j| */
    slong *q_ntors;    /* nlayers: invariant factors of L_j / U_j */
    fmpz **q_tors;
    int quotient_layers_free; /* every L_j / U_j is torsion-free */
    slong nsteps;
    tsub_struct *steps; /* steps[k]: the torsion subgroup of G/gamma_(k+1)
                           (k < nsteps; steps[0] = 1), for the isolator
                           series of Gc/T; only when T was computed by steps */
} torsion_struct;
typedef torsion_struct torsion_t[1];

void torsion_init(torsion_t T);
void torsion_clear(torsion_t T);

/* Computes T and the layers of Gc/T; layers[0 .. class_reached-1] are the
 * layers of Q (layer_compute), given by pointers.  Cancellable. */
ns_status torsion_compute(torsion_t T, const nq_t Q, const layer_struct *const *layers,
                          const ns_progress_t *progress, nserr_t err);

/* The map on Gc: what the finite part decides.  E must be a valid map. */
typedef struct {
    int injective_on_t;      /* alpha restricted to T is one-to-one */
    int finite_injective;    /* finite Gc: alpha one-to-one (= onto) */
    fmpz_t image_order;      /* finite Gc: |alpha(Gc)| */
    fmpz_t t_image_order;    /* |alpha(T)|, always */
    int fixed_defined;       /* finite Gc: the two counts below */
    fmpz_t fixed_elements;   /* #{x : alpha(x) = x} */
    int fixed_classes_defined; /* finite Gc and alpha an automorphism */
    fmpz_t fixed_classes;    /* conjugacy classes C with alpha(C) = C */
    int reid_defined;        /* R below is the exact finite value */
    fmpz_t reidemeister;
    const char *reid_method; /* static text: how R was obtained */
} torsion_map_struct;
typedef torsion_map_struct torsion_map_t[1];

void torsion_map_init(torsion_map_t M);
void torsion_map_clear(torsion_map_t M);

/* Fills M for the valid map E.  mats: the free-part matrices M_j of the
 * layers (class_reached of them); reid_infinite: some det(I - M_j) = 0, so
 * R is infinite on Gc/T and on Gc.  Counting more than TORSION_MAX_COUNT
 * elements returns NS_ERR_LIMIT with the limit named in err; what was
 * decided before stays in M. */
ns_status torsion_map_compute(torsion_map_t M, const torsion_t T, const nq_t Q,
                              const layer_struct *const *layers,
                              const fmpz_mat_struct *const *mats,
                              const endo_t E, int reid_infinite, const ns_progress_t *progress,
                              nserr_t err);

/* Internal pieces, exposed for the tests. */
void tsub_init(tsub_t S, slong n);
void tsub_clear(tsub_t S);
/* Adds the elements gens (ngens x n) and closes: S becomes the induced
 * sequence of <S, gens>, or of its normal closure when conj_by (nconj x n)
 * is given.  Vectors are cut to the first `keep` coordinates (a quotient by
 * a tail of the pc series); keep = n for the whole group. */
void tsub_add(tsub_t S, pcp_work_t W, const fmpz *gens, slong ngens, const fmpz *conj_by,
              slong nconj, slong keep);
void tsub_order(fmpz_t order, const tsub_t S);
void tsub_set(tsub_t D, const tsub_t S);

#endif
