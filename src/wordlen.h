/* wordlen.h — exact word length in a computed class-c quotient, by
 * breadth-first search of balls.
 *
 * The generating set is the given (input) generators and their inverses,
 * as elements of the quotient.  The ball of radius r is grown sphere by
 * sphere (each element of the last sphere times each generator, kept if
 * not seen before), so the radius at which an element first appears is its
 * word length.  Balls grow polynomially (degree the homogeneous dimension,
 * Bass 1972; Guivarc'h 1973), so a memory budget decides how far one gets:
 * when the next element would not fit, the search stops for good and says
 * where (complete_radius).  Lengths found are exact; an element not found
 * has length > complete_radius.
 *
 * Elements are stored as vectors of machine integers (an element whose
 * coordinates do not fit stops the search like the budget).  Nothing here
 * prints. */
#ifndef NILSTEP_WORDLEN_H
#define NILSTEP_WORDLEN_H

#include "nq.h"

#define WORDLEN_DEFAULT_BUDGET (256UL << 20) /* bytes */

typedef struct {
    const nq_struct *Q; /* borrowed; must outlive the search */
    slong n;            /* pc generators */
    slong ngen;         /* generators with their inverses */
    pcw_struct *gens;   /* ngen words */
    size_t budget;      /* bytes */
    /* the ball: elements in order of discovery */
    slong *elts;        /* count x n */
    int *dist;          /* count */
    ulong count, alloc;
    /* open-addressing hash of indices + 1 into elts */
    ulong *slot;
    ulong nslot;        /* power of 2 */
    /* while the table is being doubled: the old table, the elements it
     * holds (indices < old_count) and how many are moved (wordlen.c) */
    ulong *old_slot;
    ulong old_nslot, old_count, migrated;
    slong complete_radius; /* every element of length <= this is in the ball */
    ulong sphere_start;    /* first element of the sphere complete_radius */
    ulong sphere_end;      /* ... and one past its last (when expanding) */
    ulong cursor;          /* the next element of that sphere to expand */
    int expanding;         /* 1: a sphere is half expanded (resumable) */
    int stopped;           /* 1: the budget (or a coordinate overflow) ended
                              the search */
    const char *stop_reason; /* static text when stopped */
} wordlen_struct;
typedef wordlen_struct wordlen_t[1];

/* budget in bytes; 0 means no search at all (every length unknown,
 * complete_radius -1). */
void wordlen_init(wordlen_t B, const nq_t Q, size_t budget);
void wordlen_clear(wordlen_t B);

/* The bytes the search holds now. */
size_t wordlen_memory(const wordlen_t B);

/* Grows the ball one sphere.  Returns 0 when the sphere was added (or the
 * search had already stopped: see B->stopped), 1 when progress cancelled:
 * the next call resumes where this one stopped, and what was found so far
 * is already exact (every element found is at distance complete_radius + 1,
 * since the smaller ones are all in the ball), so a caller with a time
 * budget per call (the explorer) grows a large sphere in slices. */
int wordlen_grow(wordlen_t B, const ns_progress_t *progress);

/* The word length of g, growing the ball until g is in it, the budget
 * ends the search, or the ball reaches max_radius (< 0: no limit).
 * Returns the length, -1 when unknown (then the length is
 * > B->complete_radius), -2 when progress cancelled (call again to go
 * on). */
slong wordlen_get(wordlen_t B, const fmpz *g, slong max_radius, const ns_progress_t *progress);

/* The length if g is already in the ball, else -1; never grows. */
slong wordlen_lookup(const wordlen_t B, const fmpz *g);

#endif
