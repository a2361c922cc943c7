/* iterate.h — the iterates alpha^n(w) of an endomorphism of a computed
 * class-c quotient, exactly, with their coordinates per layer and the
 * homogeneous norm.
 *
 * The map is kept as the images of the pc generators under alpha^(2^b),
 * b = 0, 1, ..., each table the square of the last (built on demand), so
 * that x -> alpha^k(x) costs O(log k) table applications for any k: the
 * route for --steps in the millions printed every K-th step.
 *
 * Applying a table T to g = a_0^(g_0) ... a_(n-1)^(g_(n-1)) is the product
 * T_0^(g_0) ... T_(n-1)^(g_(n-1)).  In a presentation without finite
 * relative orders the coordinates of e -> T_k^e are integer-valued
 * polynomials of degree <= c in e (P. Hall, "Nilpotent groups", 1957);
 * each table keeps their forward differences at 0, so a power is one
 * evaluation of c + 1 binomials whatever the size of e.  With finite
 * relative orders the map is lifted, when it can be, to the torsion-free
 * group H of the same presentation without its power relations (the
 * cover, iterate.c states the conditions and why they suffice), the
 * tables and polynomials below live in H, and each result is reduced to
 * the quotient by collection.  When there is no such lift, the map is
 * lifted to the free nilpotent group F of the same class on the input
 * generators (every map lifts there), the tables live in F, and each
 * result is brought down layer by layer with products in F only (route
 * FREE, iterate.c).  Only when F is too large (or a check fails), the
 * exponents of finite generators are already reduced (normal form,
 * 0 <= g_k < m_k) and the others go by pcp_elt_pow, whose cost grows with
 * the bit length of the exponent, never with its value, one application
 * of the map at a time.
 *
 * Faster still, in those presentations the coordinates of alpha(x) are
 * integer-valued polynomials in the exponents x of weighted degree <= c (a
 * pc generator of weight w counting w), because multiplication and powers
 * are (Hall).  Each table is kept as that polynomial in the binomial basis
 * prod_i binom(x_i, d_i), sum_i w_i d_i <= c: the first interpolated from
 * values of alpha at the lattice points d by collection and checked by
 * collection at further points, each square interpolated from its
 * predecessor composed with itself.  A step is then a few hundred products
 * of integers, with no collection at all.  When the basis is too large
 * (ITERATE_MAX_MONO) or a check fails the table applies by collection.
 *
 * Coordinates: for layer j the weight-j exponents v of the normal form;
 * the free part phi v in the layer basis of layer.h (the basis `report`
 * shows), the torsion part the canonical representative of
 * v - sigma phi v modulo the layer's relations, read at the pivot columns
 * of their Hermite form (each entry in [0, pivot)).
 *
 * The homogeneous norm N(g) = sum_j ||v_j||^(1/j), ||.|| the Euclidean norm
 * of the free coordinates of weight j, is comparable to word length on a
 * torsion-free nilpotent group (Y. Guivarc'h, "Croissance polynomiale et
 * periodes des fonctions harmoniques", Bull. SMF 101, 1973; H. Bass, Proc.
 * LMS 25, 1972), so N(alpha^n(w))^(1/n) tends to the growth rate when w
 * carries the top growth.
 *
 * Nothing here prints.  Strings are flint_malloc'd (flint_free).  The
 * functions that return Arb balls are in iterate_norm.h, so that this
 * header does not need Arb's (the explorer's screens include it). */
#ifndef NILSTEP_ITERATE_H
#define NILSTEP_ITERATE_H

#include "endo.h"
#include "layer.h"
#include "nq.h"

/* One table: images of the pc generators (n x n) and, for torsion-free
 * presentations, the forward differences of e -> image^e ((c+1) x n per
 * generator), NULL otherwise. */
typedef struct {
    fmpz *img;
    fmpz *diff;
    /* the whole map as a polynomial in the exponents (see iterate.c), or
     * nmono = 0 when it was not built */
    slong nmono;
    slong *mono;    /* nmono x n: the exponents d of prod_i binom(x_i, d_i) */
    slong *nz_start; /* nmono + 1: coefficient runs */
    slong *nz_idx;   /* the coordinate of each coefficient */
    fmpz *nz_val;    /* the coefficients */
} iterate_table_struct;

/* How a map's iterates are computed (iterate.c): in the quotient itself
 * with Hall polynomials (torsion-free), through a lift to the cover H,
 * through the free nilpotent group F of the same class when no lift to H
 * was found, or one application at a time in the quotient. */
typedef enum {
    ITERATE_ROUTE_HALL = 0,
    ITERATE_ROUTE_COVER,
    ITERATE_ROUTE_FREE,
    ITERATE_ROUTE_STEP
} iterate_route;

typedef struct {
    const nq_struct *Q;  /* borrowed; must outlive the map */
    const pcp_struct *P; /* where the tables live: Q's presentation, or the
                            cover when there is one */
    pcp_struct *cover;   /* owned, or NULL: the torsion-free cover H of a
                            presentation with finite relative orders (its
                            presentation without the power relations, when
                            consistent; see iterate.c); when the map lifts
                            to H, P is H and the tables hold the lift */
    nq_struct *fgroup;   /* owned, or NULL: F, the free nilpotent group of
                            the quotient's class on the input generators
                            (route FREE); then P is F's presentation and
                            the tables hold a lift of the map to F */
    fmpz *g_to_f;        /* route FREE: n x tn, preimages in F of the
                            quotient's pc generators */
    fmpz *f_in_g;        /* route FREE: tn x n, the images in the quotient
                            of F's pc generators */
    fmpz *kappa;         /* route FREE: tn x tn, f_j pre(pi(f_j))^-1 */
    fmpz *mu;            /* route FREE: n x tn, pre(a_k)^(m_k) pre(pow_k)^-1
                            for the finite a_k, 0 for the others */
    iterate_route route;
    slong n;             /* pc generators of the quotient */
    slong tn;            /* pc generators of P (= n but on route FREE) */
    slong deg;           /* degree bound of the Hall polynomials (= class) */
    int hall;            /* 1: the tables' presentation is torsion-free,
                            powers by Hall */
    slong ntab;          /* tables built: alpha^(2^0) .. alpha^(2^(ntab-1)) */
    iterate_table_struct *tab;
    slong nlayers;
    const layer_struct *layers; /* the quotient's layers, borrowed (their
                                   coordinates made sure of) */
    fmpz_t pow10;   /* a cache for counting digits: 10^pow10_k */
    slong pow10_k;
} iterate_map_struct;
typedef iterate_map_struct iterate_map_t[1];

void iterate_map_init(iterate_map_t M);
void iterate_map_clear(iterate_map_t M);

/* Takes the map E (valid, on Q) for iteration.  Q must stay alive and
 * unchanged while M is used.  NS_ERR_INPUT for a map that is not valid;
 * NS_ERR_CANCELLED when progress stopped it. */
ns_status iterate_map_set(iterate_map_t M, const nq_t Q, const endo_t E,
                          const ns_progress_t *progress, nserr_t err);

/* out := the element of the word w in the input generators, as nq_eval;
 * with a cover (a presentation with finite relative orders that is
 * consistent without its power relations), evaluated in the cover, where
 * huge exponents cost what small ones do, and reduced; without one, on
 * route FREE, evaluated in the free nilpotent group and brought down.  NS_ERR_CANCELLED
 * when progress stopped it. */
ns_status iterate_map_eval(const iterate_map_t M, fmpz *out, const expr_t w,
                           const ns_progress_t *progress, nserr_t err);

/* x := alpha^k(x) (x has n entries in normal form).  Builds the squared
 * tables it needs.  On cancel (NS_ERR_CANCELLED) x is unchanged. */
ns_status iterate_map_advance(iterate_map_t M, fmpz *x, ulong k,
                              const ns_progress_t *progress, nserr_t err);

/* ---- one iterate described -------------------------------------------- */

typedef struct {
    slong weight, free_rank, ntors;
    fmpz *coords;  /* free_rank: the free part in the layer basis */
    fmpz *torsion; /* ntors: the torsion part (see above) */
    slong digits;  /* decimal digits of the largest |entry| of coords and
                      torsion (0 counts as one digit) */
} iterate_layer_struct;

typedef struct {
    ulong n;        /* the step */
    slong npc;
    fmpz *elt;      /* alpha^n(w) as an exponent vector */
    slong nlayers;
    iterate_layer_struct *layers;
} iterate_point_struct;
typedef iterate_point_struct iterate_point_t[1];

void iterate_point_init(iterate_point_t p);
void iterate_point_clear(iterate_point_t p);

/* Describes x = alpha^n(w). */
void iterate_point_set(iterate_point_t p, const iterate_map_t M, const fmpz *x, ulong n);

/* N(p)^(1/n) as a double, the midpoint of the ball at 64 bits (for
 * pictures); NaN for n = 0.  The certified balls: iterate_norm.h. */
double iterate_point_root_d(const iterate_point_t p);

/* Certified decimals with `digits` significant digits (spectrum.h's
 * rule: every digit shown is right; exact 0 prints "0"), computing with
 * more precision until they are certified.  iterate_point_root_str
 * returns NULL for n = 0. */
char *iterate_point_norm_str(const iterate_point_t p, slong digits);
char *iterate_point_root_str(const iterate_point_t p, slong digits);

#endif
