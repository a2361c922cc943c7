/* analysis.h — everything nilstep shows about a group and a map, computed
 * once and kept as plain data for the report writers and the explorer.
 *
 * Two stages, so that editing a generator image never re-runs the nilpotent
 * quotient algorithm:
 *   analysis_set_group  — parses nothing; runs the nilpotent quotient of
 *                         the presentation to the class (slow, cancellable);
 *   analysis_set_map    — images of the generators; validity, layer
 *                         matrices, spectra, bounds and invariants (fast).
 *                         The map comes as text (analysis_set_map_text),
 *                         as parsed words (analysis_set_map) or as a value,
 *                         an endo_t of the quotient (analysis_set_map_endo:
 *                         powers, composites, inverses, iterates), never
 *                         through a round trip via text.
 * All strings (and arrays of strings) are owned by the analysis, allocated
 * with flint_malloc as everywhere in the engine (strbuf.h), and stay valid
 * until the next analysis_set_* or analysis_clear; the static texts
 * (growth_reason, undefined_reason, inverse_reason) are never freed.
 * The explorer's screens read it through analysis_view.h, which gives what
 * they show without the internal structures and their headers. */
#ifndef NILSTEP_ANALYSIS_H
#define NILSTEP_ANALYSIS_H

#include <flint/fmpz_mat.h>
#include "analysis_view.h"
#include "endo.h"
#include "layer.h"
#include "nq.h"
#include "pres.h"
#include "spectrum.h"
#include "torsion.h"

#define ANALYSIS_DIGITS 30 /* significant digits of the decimal strings */

typedef struct {
    /* the layer as a group: the quotient's own (A->nq->layers[j-1]), or for
     * j > class_reached a trivial layer owned by the analysis; borrowed, with
     * its coordinates computed */
    const layer_struct *layer;
    char *group_str;       /* "Z^5", "Z^2 + Z/2 + Z/4", "0" */
    /* the map on it (only when the analysis has a valid map) */
    fmpz_mat_t matrix;     /* free_rank x free_rank; column k = image of basis k */
    fmpz_mat_t action;     /* count x count: images of the layer's pc generators,
                              modulo the layer's power relations */
    char *charpoly_str;    /* "x^2 - 3x + 1" */
    char *charpoly_factored_str; /* "(x - 1)^2*(x^2 - 3*x + 1)" */
    char *charpoly_latex;  /* the factored form in LaTeX */
    fmpz *charpoly;        /* free_rank + 1 coefficients, constant term first */
    char *rho_str;         /* spectral radius, ANALYSIS_DIGITS digits ("0" exactly) */
    char *rho_minpoly_str; /* minimal polynomial of rho, or NULL if not computed */
    char *rho_closed_str;  /* rho in closed form when its minimal polynomial has
                              degree 2 ("(3 + sqrt(5))/2"), else NULL */
    char *rho_closed_latex; /* the same in LaTeX ("\frac{3+\sqrt{5}}{2}") */
    char *root_bound_str;  /* rho^(1/weight) */
    fmpz_t det;            /* det M */
    fmpz_t det_i_minus;    /* det(I - M) */
    slong nev;
    char **ev_str;         /* nev eigenvalues (with multiplicity), decreasing modulus */
    char **ev_abs_str;     /* their moduli */
    slong n_unimodular;    /* eigenvalues with |lambda| = 1, decided exactly */
    slong n_above_one;     /* |lambda| > 1 */
    char *entropy_str;     /* sum of log|lambda| over |lambda| > 1 */
    spectrum_t spectrum;   /* the full spectral data of matrix */
} analysis_layer_struct;

/* analysis_failure_struct and analysis_reid_kind: analysis_view.h */

typedef struct analysis_struct {
    /* group stage */
    int has_group;
    int group_borrowed;          /* the group stage belongs to another analysis
                                    (analysis_share_group): read, never freed */
    nq_t nq;                     /* the class-c quotient (owns a copy of the presentation) */
    slong class_requested;
    slong nlayers;               /* = class_requested (trivial layers included) */
    analysis_layer_struct *layers;
    layer_struct *trivial_layers; /* layers class_reached+1 .. class_requested */
    int layers_torsion_free;     /* every layer torsion-free */
    torsion_t tors;              /* the torsion subgroup T and the layers of
                                    Gc/T (torsion.h); T = 1 when every layer
                                    is torsion-free */

    /* map stage */
    int has_map;
    endo_t endo;                 /* the map on the quotient (internal) */
    char *map_str;               /* the map printed back: the words as given
                                    (set_map, set_map_text), or for a map
                                    given as a value (set_map_endo) the
                                    images as normal words in the pc labels */
    int valid;                   /* images define an endomorphism of the class-c quotient */
    slong nfail;
    char **fail_relator;         /* the relators whose images are not trivial */
    char **fail_image;           /* ... and their images as normal words */
    analysis_failure_struct *failures; /* nfail: each failing relation in full */
    char **gen_image_str;        /* the images as normal words in the pc labels */

    /* bounds and growth (valid map only) */
    char *lower_bound_str;       /* max_j rho_j^(1/j) */
    slong lower_layer;           /* a layer attaining it (1-based) */
    char *upper_bound_str;       /* max_j rho_j */
    slong upper_layer;
    char *growth_str;            /* the exact growth rate */
    const char *growth_reason;   /* one line: why that value (static text) */
    char *log_growth_str;        /* log of the growth rate, or NULL when it is 0 */

    /* invariants (valid map only); undefined_reason is NULL when the
     * quotient's layers are torsion-free and the numbers are defined */
    const char *undefined_reason;
    char *entropy_str;
    int lefschetz_defined;
    fmpz_t lefschetz;
    fmpz_t nielsen;
    analysis_reid_kind reid_kind;
    fmpz_t reidemeister;
    int automorphism;            /* surjective on the whole abelianisation */
    int injective_defined;       /* 0 when layer torsion leaves it undecided */
    int injective;               /* det M_j != 0 for all j (torsion-free case) */
    int index_defined;
    fmpz_t image_index;          /* prod |det M_j| when injective */
    int hyperbolic;              /* no |lambda| = 1 in any layer */
    int expanding;               /* all |lambda| > 1 in every layer */

    /* the inverse, computed only on request (analysis_set_inverse): it
     * collects the images of every pc generator, far slower than the rest */
    int inverse_requested;       /* analysis_set_inverse succeeded for this map */
    char **inverse_str;          /* nq->pres->gens.n normal words in the pc labels
                                    (the images of the input generators under
                                    the inverse), or NULL when there is none */
    const char *inverse_reason;  /* requested but none: why (static text) */

    /* the finite part (valid map, only when some layer has torsion):
     * entropy and the bounds speak of the rational layers, L and N of the
     * nilmanifold of Gc/T, R, injectivity and the index of Gc itself */
    torsion_map_t tmap;
    int limit_hit;               /* a named counting limit stopped R or the
                                    fixed points; limit->msg names it */
    nserr_t limit;
    slong max_pc;                /* the pc-generator limit of analysis_set_group
                                    (0: NQ_DEFAULT_MAX_PC); kept by the clears
                                    of the group and the map */
} analysis_struct;
typedef analysis_struct analysis_t[1];

void analysis_init(analysis_t A);
void analysis_clear(analysis_t A);

/* Runs the nilpotent quotient of G to class c and reads the layers; drops
 * any map.  On error (cancel, bad input) A is left without a group.  The
 * pc-generator limit is A->max_pc (0: NQ_DEFAULT_MAX_PC; set it before):
 * a class that would exceed it is not started (nq.h), and A then holds the
 * quotient of the class reached (A->nlayers < c) and NS_ERR_LIMIT is
 * returned with err saying which class was refused. */
ns_status analysis_set_group(analysis_t A, const pres_t G, slong c, const ns_progress_t *progress,
                             nserr_t err);

/* The same for the group of from at class c, without starting again: a
 * lower class is a prefix of from's quotient (instant), a higher one
 * extends it (nq_set_class).  from is only read. */
ns_status analysis_set_group_from(analysis_t A, const analysis_t from, slong c,
                                  const ns_progress_t *progress, nserr_t err);

/* Makes A use the group stage of src without copying or recomputing it:
 * the quotient and the layers' groups and coordinates are borrowed
 * read-only, while A keeps its own map stage.  So one quotient serves many
 * analyses at once — one per thread (scan.h): analysis_set_map on A only
 * reads the borrowed data.  src must have a group, and must neither change
 * its group nor be cleared while A borrows it; analysis_clear (or another
 * analysis_set_group) on A ends the borrowing. */
void analysis_share_group(analysis_t A, const analysis_t src);

/* Parses the map text (pres_parse_map coordinates: the text starts at line,
 * col) and analyses it.  A syntax error leaves the previous map in place and
 * returns NS_ERR_SYNTAX with the location.  A map that is not well defined
 * is not an error: valid = 0 and the failing relators are listed. */
ns_status analysis_set_map_text(analysis_t A, const char *text, int line, int col,
                                const ns_progress_t *progress, nserr_t err);

/* The same from parsed images (copied). */
ns_status analysis_set_map(analysis_t A, const expr_struct *images, const ns_progress_t *progress,
                           nserr_t err);

/* The same from a map given as a value: E is a map of this analysis'
 * quotient A->nq (from endo_set / endo_set_elts on A->nq, or from
 * analysis_power_endo, analysis_compose_endo, analysis_inverse_endo),
 * valid or not.  E is moved into the analysis and left as after endo_init;
 * it must not be A->endo itself.  map_str and gen_image_str then show the
 * images of the input generators as normal words in the pc labels, e.g.
 * "a -> a^2 b [b,a]^-1, b -> a b".  Errors: NS_ERR_CANCELLED from the
 * spectra; a map of another quotient is refused.  On error the analysis
 * is left without a map and E is cleared. */
ns_status analysis_set_map_endo(analysis_t A, endo_t E, const ns_progress_t *progress,
                                nserr_t err);

/* Forgets the map. */
void analysis_clear_map(analysis_t A);

/* Maps derived from the analysed map alpha, as values to hand to
 * analysis_set_map_endo: alpha^k (k >= 0), beta o alpha (first alpha, then
 * beta, given by images2 in the input generators; NS_ERR_INPUT if beta is
 * not well defined on the quotient) and alpha^-1 (automorphisms of
 * quotients whose layers are torsion-free; NS_ERR_INPUT otherwise).  All
 * need a valid map (NS_ERR_INPUT otherwise) and can be cancelled
 * (NS_ERR_CANCELLED).  out must be initialised (endo_init); on error it is
 * left empty, as after endo_init. */
ns_status analysis_power_endo(endo_t out, const analysis_t A, ulong k,
                              const ns_progress_t *progress, nserr_t err);
ns_status analysis_compose_endo(endo_t out, const analysis_t A, const expr_struct *images2,
                                const ns_progress_t *progress, nserr_t err);
ns_status analysis_inverse_endo(endo_t out, const analysis_t A, const ns_progress_t *progress,
                                nserr_t err);

/* Computes the inverse of the analysed map for the report (inverse_str),
 * or says why there is none (inverse_reason: the map is not well defined,
 * not an automorphism, or the layers have torsion); both are "done" and
 * set inverse_requested.  Needs a map (NS_ERR_INPUT otherwise).  Returns
 * NS_ERR_CANCELLED when stopped, and leaves the analysis as it was on any
 * error.  A new map forgets the inverse. */
ns_status analysis_set_inverse(analysis_t A, const ns_progress_t *progress, nserr_t err);

#endif
