/* elim.h — incremental integer row echelon form on sparse rows.
 *
 * The relation lattices of the nilpotent quotient algorithm are sparse,
 * have many more rows than columns and mostly unit pivots; FLINT 2.9's
 * dense Hermite forms are slow on them (doc/design.md §9.3).  Rows are
 * inserted one at a time and reduced against the stored pivot rows; a
 * non-divisible pivot is combined by the extended gcd, as in the
 * classical Hermite algorithm (C. Hermite 1851; see H. Cohen, A Course in
 * Computational Algebraic Number Theory, 1993, §2.4).  The echelon pivots
 * equal those of the Hermite normal form up to sign, so the quotient
 * Z^ncols / L can be read off: a column with pivot 1 is eliminated, a
 * pivot d > 1 gives an element of order d modulo later columns, and a
 * column without pivot stays free. */
#ifndef NILSTEP_ELIM_H
#define NILSTEP_ELIM_H

#include <flint/flint.h>
#include <flint/fmpz.h>
#include <flint/fmpz_vec.h>

#include "nserr.h"

typedef struct {
    slong len, alloc;
    slong *col; /* increasing */
    fmpz *val;  /* nonzero */
} elim_row_struct;

typedef struct {
    slong ncols;
    elim_row_struct *piv; /* ncols rows; piv[c].len == 0: no pivot at c */
    elim_row_struct tmp[3];
    fmpz_t mod;           /* 0, or m with m Z^ncols inside the lattice */
    slong npend, apend;   /* rows queued for insertion (modular mode) */
    elim_row_struct *pend;
    int defer;            /* 1: elim_add_dense keeps rows for elim_flush */
    slong nkept, akept;   /* rows kept, in the order they were added */
    elim_row_struct *kept;
} elim_struct;
typedef elim_struct elim_t[1];

void elim_init(elim_t E, slong ncols);
void elim_clear(elim_t E);

/* Declares that m Z^ncols lies in the lattice (m > 0), before any row is
 * added: from then on every entry is kept in [0, m) (the Hermite form
 * modulo a multiple of the determinant; see elim.c), so no entry grows
 * beyond m, and a column that gets no row has pivot m.  The caller must
 * know this: the nilpotent quotient algorithm does when the abelianisation
 * is finite of exponent m. */
void elim_set_modulus(elim_t E, const fmpz_t m);

/* Adds the row (dense, ncols entries) to the lattice. */
void elim_add_dense(elim_t E, const fmpz *row);

/* Deferred insertion (not with a modulus): after elim_defer, elim_add_dense
 * only keeps a sparse copy of each row, and elim_flush inserts the kept
 * rows, sparsest first.  On the tail relations of the nilpotent quotient
 * algorithm that order keeps the echelon rows short and their entries
 * small (free(2) class 12: 0.06 s instead of 2.7 s).  The pivots do not
 * depend on the order (they are the Hermite form's), and when every pivot
 * is 1 neither does the quotient (the survivors are then a basis of the
 * free group Z^ncols / L); otherwise elim_flush inserts the rows again in
 * the order they were added, so that the relation block of the torsion
 * survivors is exactly what direct insertion gives.  The pivots and the
 * quotient must be read only after elim_flush.  elim_flush polls progress
 * (may be NULL) between rows and returns 1 when it asked to stop (E then
 * holds part of the lattice), else 0. */
void elim_defer(elim_t E);
int elim_flush(elim_t E, const ns_progress_t *progress);

/* The pivot at column c (0 when there is none, m in modular mode);
 * positive. */
const fmpz *elim_pivot(const elim_t E, slong c);

/* The quotient Z^ncols / L.  Survivors are the columns whose pivot is not 1,
 * in increasing order.  Owned by the caller; elim_quotient_clear frees. */
typedef struct {
    slong ncols, nsurv;
    slong *surv;   /* nsurv column indices */
    fmpz *order;   /* nsurv: pivot d > 1 (torsion modulo later survivors) or 0 */
    fmpz *rel;     /* nsurv x nsurv, row s: for a torsion survivor the relation
                      d t_s + sum_{s' > s} rel[s][s'] t_s' = 0 in survivor
                      coordinates (rel[s][s] = d); zero rows for free ones */
    fmpz *expr;    /* ncols x nsurv: column c equals sum_s expr[c][s] t_s */
} elim_quotient_struct;
typedef elim_quotient_struct elim_quotient_t[1];

void elim_quotient_init(elim_quotient_t Q);
void elim_quotient_clear(elim_quotient_t Q);
void elim_get_quotient(elim_quotient_t Q, const elim_t E);
/* The same, calling progress (stage NULL) every ELIM_POLL_WORK coefficient
 * operations or so, so that a cancel is seen within milliseconds on large
 * lattices.  Returns 1 (Q left empty) when progress asked to stop, else 0. */
int elim_get_quotient_progress(elim_quotient_t Q, const elim_t E, const ns_progress_t *progress);
#define ELIM_POLL_WORK (1L << 18)

#endif
