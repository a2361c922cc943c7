/* wordlen.c — see wordlen.h. */
#include <string.h>
#include "wordlen.h"

static ulong hash_key(const slong *k, slong n)
{
    ulong h = 0x9e3779b97f4a7c15UL;
    for (slong i = 0; i < n; i++) {
        h ^= (ulong)k[i] + 0x9e3779b97f4a7c15UL + (h << 6) + (h >> 2);
        h *= 0xff51afd7ed558ccdUL;
    }
    return h ^ (h >> 29);
}

size_t wordlen_memory(const wordlen_t B)
{
    return (size_t)B->alloc * ((size_t)B->n * sizeof(slong) + sizeof(int)) +
           (size_t)(B->nslot + B->old_nslot) * sizeof(ulong);
}

/* Index of key k in the table slot (nslot entries), or -1. */
static slong find_in(const wordlen_t B, const ulong *slot, ulong nslot, const slong *k)
{
    if (nslot == 0)
        return -1;
    ulong m = nslot - 1, h = hash_key(k, B->n) & m;
    while (slot[h]) {
        ulong idx = slot[h] - 1;
        if (memcmp(B->elts + idx * B->n, k, (size_t)B->n * sizeof(slong)) == 0)
            return (slong)idx;
        h = (h + 1) & m;
    }
    return -1;
}

/* Index of key k in the ball, or -1.  While the table is being doubled the
 * elements not yet moved are found in the old one. */
static slong find(const wordlen_t B, const slong *k)
{
    slong idx = find_in(B, B->slot, B->nslot, k);
    if (idx < 0 && B->old_slot)
        idx = find_in(B, B->old_slot, B->old_nslot, k);
    return idx;
}

/* Enters element idx (not yet in the table) into the current table. */
static void put(wordlen_t B, ulong idx)
{
    ulong m = B->nslot - 1, h = hash_key(B->elts + idx * B->n, B->n) & m;
    while (B->slot[h])
        h = (h + 1) & m;
    B->slot[h] = idx + 1;
}

/* Moves up to `steps` elements of the old table into the new one and frees
 * the old table when all are moved.  Doubling the table at once would
 * stall one slice of the search for as long as re-entering the whole ball
 * takes (about 100 ms at a million elements); spread over the inserts that
 * follow, four per insert, it is done long before the next doubling (a
 * whole ball's worth of inserts away), and no slice waits for it. */
static void migrate(wordlen_t B, ulong steps)
{
    for (; B->old_slot && steps > 0; steps--) {
        if (B->migrated == B->old_count) {
            flint_free(B->old_slot);
            B->old_slot = NULL;
            B->old_nslot = 0;
            break;
        }
        put(B, B->migrated++);
    }
}

static void grow_table(wordlen_t B, ulong nslot)
{
    migrate(B, B->old_count + 1); /* a doubling still under way (never in
                                     practice: see migrate) */
    B->old_slot = B->slot;
    B->old_nslot = B->nslot;
    B->old_count = B->count - 1; /* the new element is entered by add */
    B->migrated = 0;
    B->nslot = nslot;
    B->slot = flint_calloc(nslot, sizeof(ulong));
    if (B->old_nslot == 0) {
        flint_free(B->old_slot);
        B->old_slot = NULL;
    }
}

/* Adds k at distance d if the budget allows; 0 done, 1 no room. */
static int add(wordlen_t B, const slong *k, int d)
{
    size_t n = (size_t)B->n;
    ulong alloc = B->alloc, nslot = B->nslot;
    if (B->count + 1 > alloc)
        alloc = FLINT_MAX(2 * alloc, 64);
    if (2 * (B->count + 1) > nslot)
        nslot = FLINT_MAX(2 * nslot, 128);
    /* a doubling keeps the old table until everything is moved */
    size_t old = nslot != B->nslot ? B->nslot : B->old_nslot;
    size_t need = (size_t)alloc * (n * sizeof(slong) + sizeof(int)) +
                  ((size_t)nslot + old) * sizeof(ulong);
    if (need > B->budget)
        return 1;
    if (alloc != B->alloc) {
        B->elts = flint_realloc(B->elts, FLINT_MAX(alloc * n, 1) * sizeof(slong));
        B->dist = flint_realloc(B->dist, alloc * sizeof(int));
        B->alloc = alloc;
    }
    memcpy(B->elts + B->count * n, k, n * sizeof(slong));
    B->dist[B->count] = d;
    B->count++;
    if (nslot != B->nslot)
        grow_table(B, nslot);
    put(B, B->count - 1);
    migrate(B, 4);
    return 0;
}

void wordlen_init(wordlen_t B, const nq_t Q, size_t budget)
{
    memset(B, 0, sizeof(wordlen_struct));
    B->Q = Q;
    B->n = Q->pcp->n;
    B->budget = budget;
    B->complete_radius = -1;
    slong X = Q->pres->gens->n;
    B->gens = flint_malloc(FLINT_MAX(2 * X, 1) * sizeof(pcw_struct));
    pcp_work_t W;
    pcp_work_init(W, Q->pcp);
    fmpz *v = _fmpz_vec_init(FLINT_MAX(B->n, 1));
    for (slong x = 0; x < X; x++) {
        pcw_init(B->gens + 2 * x);
        pcw_init(B->gens + 2 * x + 1);
        pcw_set_vec(B->gens + 2 * x, Q->images + x * B->n, B->n);
        pcp_elt_inv(W, v, Q->images + x * B->n);
        pcw_set_vec(B->gens + 2 * x + 1, v, B->n);
    }
    B->ngen = 2 * X;
    _fmpz_vec_clear(v, FLINT_MAX(B->n, 1));
    pcp_work_clear(W);
    slong *zero = flint_calloc(FLINT_MAX(B->n, 1), sizeof(slong));
    if (budget > 0 && add(B, zero, 0) == 0)
        B->complete_radius = 0;
    else {
        B->stopped = 1;
        B->stop_reason = "no memory budget for the ball";
    }
    flint_free(zero);
}

void wordlen_clear(wordlen_t B)
{
    for (slong g = 0; g < B->ngen; g++)
        pcw_clear(B->gens + g);
    flint_free(B->gens);
    flint_free(B->elts);
    flint_free(B->dist);
    flint_free(B->slot);
    flint_free(B->old_slot);
    memset(B, 0, sizeof(wordlen_struct));
}

int wordlen_grow(wordlen_t B, const ns_progress_t *progress)
{
    if (B->stopped)
        return 0;
    slong n = B->n;
    if (!B->expanding) {
        B->expanding = 1;
        B->sphere_end = B->count;
        B->cursor = B->sphere_start;
    }
    ulong start = B->cursor, end = B->sphere_end;
    int d = (int)B->complete_radius + 1;
    pcp_work_t W;
    pcp_work_init(W, B->Q->pcp);
    W->progress = progress;
    fmpz *u = _fmpz_vec_init(FLINT_MAX(n, 1));
    slong *key = flint_malloc(FLINT_MAX(n, 1) * sizeof(slong));
    int cancelled = 0;
    ulong i;
    for (i = start; i < end && !B->stopped && !cancelled; i++) {
        for (slong g = 0; g < B->ngen && !B->stopped; g++) {
            for (slong k = 0; k < n; k++)
                fmpz_set_si(u + k, B->elts[i * n + k]);
            pcp_collect_word(W, u, B->gens + g);
            if (W->overflow) {
                cancelled = 1;
                break;
            }
            int fits = 1;
            for (slong k = 0; k < n && fits; k++) {
                if (!fmpz_fits_si(u + k))
                    fits = 0;
                else
                    key[k] = fmpz_get_si(u + k);
            }
            if (!fits) {
                B->stopped = 1;
                B->stop_reason = "coordinates beyond machine integers";
                break;
            }
            if (find(B, key) >= 0)
                continue;
            if (add(B, key, d)) {
                B->stopped = 1;
                B->stop_reason = "memory budget reached";
            }
        }
        if (cancelled)
            break; /* element i is expanded again on the next call */
        /* a poll between elements too, for balls of cheap elements */
        if (((i - start) & 0x3f) == 0x3f && progress &&
            ns_progress_report(progress, NULL, -1.0)) {
            cancelled = 1;
            i++;
            break;
        }
    }
    B->cursor = i;
    if (!cancelled && !B->stopped) {
        B->expanding = 0;
        B->complete_radius = d;
        B->sphere_start = end;
        if (B->count == end) {
            /* nothing new: the ball is the whole (finite) group */
            B->stopped = 1;
            B->stop_reason = "the ball is the whole group";
        }
    }
    _fmpz_vec_clear(u, FLINT_MAX(n, 1));
    flint_free(key);
    pcp_work_clear(W);
    return cancelled;
}

slong wordlen_lookup(const wordlen_t B, const fmpz *g)
{
    slong n = B->n;
    if (B->count == 0)
        return -1;
    slong *key = flint_malloc(FLINT_MAX(n, 1) * sizeof(slong));
    slong res = -1;
    int fits = 1;
    for (slong k = 0; k < n && fits; k++) {
        if (!fmpz_fits_si(g + k))
            fits = 0;
        else
            key[k] = fmpz_get_si(g + k);
    }
    if (fits) {
        slong idx = find(B, key);
        if (idx >= 0)
            res = B->dist[idx];
    }
    flint_free(key);
    return res;
}

slong wordlen_get(wordlen_t B, const fmpz *g, slong max_radius, const ns_progress_t *progress)
{
    slong r = wordlen_lookup(B, g);
    if (r >= 0)
        return r;
    for (slong k = 0; k < B->n; k++)
        if (!fmpz_fits_si(g + k))
            return -1; /* far beyond any ball that fits in memory */
    while (!B->stopped && (max_radius < 0 || B->complete_radius < max_radius)) {
        if (wordlen_grow(B, progress))
            return -2;
        r = wordlen_lookup(B, g);
        if (r >= 0)
            return r;
    }
    return -1;
}
