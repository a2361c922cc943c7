/* analysis_view.h — the read-only face of an analysis for the explorer's
 * screens: what they show, as plain values and borrowed strings, without
 * the engine's internal structures (the quotient's pc presentation, the
 * layers as groups, the torsion subgroup, the spectra) and without the
 * Arb, Acb and Calcium headers those need.  A screen includes this header
 * instead of analysis.h (tests/test_ui_layers.sh checks that).
 *
 * A view owns nothing, so it has no _init/_clear: analysis_get_view and
 * analysis_get_layer_view fill it with pointers into the analysis, valid
 * until the next analysis_set_* or analysis_clear on it (analysis.h).
 * Fill one where it is used (each frame a screen draws), never keep it
 * across a computation. */
#ifndef NILSTEP_ANALYSIS_VIEW_H
#define NILSTEP_ANALYSIS_VIEW_H

#include <flint/flint.h>
#include <flint/fmpz.h>
#include <flint/fmpz_mat.h>
#include "endo.h"
#include "nq.h"
#include "pres.h"

/* The analysis itself (analysis.h); a screen holds it only by pointer. */
typedef struct analysis_struct analysis_struct;

typedef enum {
    ANALYSIS_REID_UNDEFINED = 0,
    ANALYSIS_REID_FINITE,
    ANALYSIS_REID_INFINITE
} analysis_reid_kind;

/* One relation that the map does not respect, told in the user's own
 * terms.  A relation "u = v" has the sides u and v; a plain relator w the
 * sides w and 1.  Each image of a side is given twice: as a word in the
 * input generators (the side with every generator replaced by its image
 * as the user wrote it, e.g. alpha([a,b]) = [a^2,b]), and as the normal
 * word in the pc labels, which are left-normed commutators of the input
 * generators (e.g. [b,a]^-2) or products of them in parentheses (nq.h),
 * still words in the input generators: the first is what the user typed, the second
 * lets two images be compared letter by letter. */
typedef struct {
    slong relation;        /* index into the relations of the presentation */
    char *lhs, *rhs;       /* the sides as written; rhs "1" for a relator */
    char *lhs_word, *rhs_word;   /* alpha(side) in the input generators, or
                                    NULL for a map given as a value */
    char *lhs_image, *rhs_image; /* alpha(side) as normal words */
    /* the least c' <= class at which the relation fails on the class-c'
     * quotient: the weight of the leading pc generator of
     * alpha(lhs) alpha(rhs)^-1 (the class-c' quotient is the prefix of
     * weight <= c', and normal words are unique) */
    slong lowest_class;
    /* a relation x = w or w = x with x an input generator that does not
     * occur in w defines x: its image must be alpha(w).  forced_gen is x
     * (or -1), forced_image that image as a word in the input generators
     * (lhs_word/rhs_word of w; its normal word for a map given as a
     * value).  Setting it makes this relation hold. */
    slong forced_gen;
    char *forced_image;
} analysis_failure_struct;

/* The fields mean what the analysis fields of the same name mean
 * (analysis.h); the others say where they come from. */
typedef struct {
    /* the group stage */
    int has_group;
    slong class_requested;
    slong class_reached;       /* layers the quotient algorithm computed */
    int stabilised;            /* gamma_(class_reached+1) is known trivial */
    slong hirsch_length;
    slong npc;                 /* pc generators of the quotient */
    const pres_struct *pres;   /* the input presentation (its generators
                                  name words typed for the quotient) */
    slong nlayers;             /* layers 0 .. nlayers-1: analysis_get_layer_view */
    int layers_torsion_free;
    /* the torsion subgroup T of Gc (when some layer has torsion) */
    const fmpz *tors_order;    /* |T| */
    int tors_abelian;
    slong tors_ninv;
    const fmpz *tors_inv;      /* tors_ninv invariants d_1 | d_2 | ... when abelian */
    int tors_finite;           /* Gc is finite (T = Gc) */
    /* handles for engine calls on this quotient and map (nq_eval,
     * iterate_map_set, wordlen_init): passed on, never read */
    const nq_struct *quotient; /* NULL without a group */
    const endo_struct *endo;   /* NULL without a map */

    /* the map stage */
    int has_map;
    const char *map_str;
    int valid;
    slong nfail;
    char *const *fail_relator;
    char *const *fail_image;
    char *const *gen_image_str;
    const analysis_failure_struct *failures; /* nfail, or NULL */
    const char *lower_bound_str;
    slong lower_layer;
    const char *upper_bound_str;
    slong upper_layer;
    const char *growth_str;
    const char *growth_reason;
    const char *log_growth_str;
    const char *undefined_reason;
    const char *entropy_str;
    int lefschetz_defined;
    const fmpz *lefschetz;
    const fmpz *nielsen;
    analysis_reid_kind reid_kind;
    const fmpz *reidemeister;
    int automorphism;
    int injective_defined;
    int injective;
    int index_defined;
    const fmpz *image_index;
    int hyperbolic;
    int expanding;
    /* the finite part (torsion.h, torsion_map_struct) */
    int fixed_defined;
    const fmpz *fixed_elements;
    int fixed_classes_defined;
    const fmpz *fixed_classes;
    int limit_hit;
    const char *limit_msg;     /* the limit's message when limit_hit */
} analysis_view_struct;
typedef analysis_view_struct analysis_view_t[1];

/* One layer gamma_j / gamma_(j+1), j = weight. */
typedef struct {
    slong weight;
    const char *group_str;     /* "Z^5", "Z^2 + Z/2 + Z/4", "0" */
    slong count;               /* its pc generators */
    slong free_rank;
    slong ntors;               /* torsion invariant factors */
    char *const *pc_labels;    /* count labels ("a", "[b,a]"), or NULL */
    char *const *basis;        /* free_rank labels of the free basis */
    slong q_ntors;             /* invariant factors of the layer of Gc/T */
    /* the map on it (when the view has a valid map) */
    const fmpz_mat_struct *matrix;
    const fmpz_mat_struct *action;
    const char *charpoly_str;
    const char *charpoly_factored_str;
    const char *rho_str;
    const char *rho_minpoly_str;
    const char *root_bound_str;
    const fmpz *det;
    const fmpz *det_i_minus;
    slong nev;
    char *const *ev_str;
    char *const *ev_abs_str;
    slong n_unimodular;
    slong n_above_one;
    const char *entropy_str;
} analysis_layer_view_struct;
typedef analysis_layer_view_struct analysis_layer_view_t[1];

/* The view of A (which may lack a group or a map). */
void analysis_get_view(analysis_view_t V, const analysis_struct *A);

/* The view of layer j + 1 (0 <= j < nlayers; A must have a group). */
void analysis_get_layer_view(analysis_layer_view_t L, const analysis_struct *A, slong j);

/* The k-th eigenvalue of the map on layer j + 1 (as analysis_get_layer_view;
 * 0 <= k < nev) as the midpoints of its certified ball in doubles, for
 * pictures: 1, or 0 (and 0 + 0i) when there is none. */
int analysis_get_eigenvalue_d(double *re, double *im, const analysis_struct *A, slong j, slong k);

#endif
