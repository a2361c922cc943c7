/* test_pcp.c — nilpotent presentations and collection (pcp.h).
 *
 * Property tests on the presentations that nq_compute produces for several
 * groups, with random elements (a printed seed; NILSTEP_SEED overrides it,
 * NILSTEP_ITER scales the iteration counts):
 *   - the group axioms and the power, commutator and conjugate operations,
 *     for small exponents and for exponents around 10^40;
 *   - agreement of collection from the left with an independent oracle
 *     written here: naive rewriting of a list of letters a_g^(+-1), which
 *     repeatedly fixes the leftmost adjacent pair that is out of order using
 *     only the defining conjugate and power relations;
 *   - closed formulas for the Heisenberg group, derived by hand below;
 *   - the consistency test of pcp.h on every computed presentation, and on
 *     two small presentations written by hand, one consistent and one not.
 *
 * Convention (doc/design.md §2.1): [x,y] = x^-1 y^-1 x y, x^y = y^-1 x y. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <flint/fmpz_mat.h>

#include "nq.h"
#include "pcp.h"
#include "testutil.h"

/* ------------------------------------------------------ seed, random */

/* a random integer with |x| < 2^bits, either sign */
static void rnd_fmpz_bits(fmpz_t x, int bits)
{
    fmpz_zero(x);
    for (int b = 0; b < bits; b += 32) {
        fmpz_mul_2exp(x, x, 32);
        fmpz_add_ui(x, x, (ulong)(rng_next() & 0xffffffffu));
    }
    fmpz_fdiv_r_2exp(x, x, (ulong)bits);
    if (rng_next() & 1)
        fmpz_neg(x, x);
}

static int setup_seed(void **state)
{
    (void)state;
    return rng_setup_program("test_pcp");
}

/* ------------------------------------------------- groups under test */

/* Each group comes with the sizes of its "huge" random exponents: bits for
 * the coordinates of infinite generators, and for the exponents of powers.
 * Collection from the left costs far more than O(log e) collection steps
 * in class 3 and 4 (measured: about (log e)^4 steps in N(2,3) and N(2,4)),
 * so 10^40-sized coordinates are used where the class allows it and smaller
 * ones elsewhere, to keep the file within a few seconds. */
typedef struct {
    const char *name;
    const char *text;
    slong c;
    int big_bits; /* coordinates of infinite generators in "huge" elements */
    int pow_bits; /* exponents of powers in the "huge" runs */
} group_case;

static const group_case groups[] = {
    {"N(2,4)", "<a, b>", 4, 16, 6},
    {"N(3,3)", "<a, b, c>", 3, 16, 8},
    {"genus-2 surface group, class 4", "<a1, b1, a2, b2 | [a1,b1] [a2,b2]>", 4, 6, 4},
    {"D32", "<a, b | a^16, b^2, (a b)^2>", 6, 133, 66},
    {"Z/6 x Z/4", "<a, b | a^6, b^4, [a,b]>", 2, 133, 66},
    {"<a, b | a^2 b^4>, class 4", "<a, b | a^2 b^4>", 4, 133, 12},
    {"central a^2 = [b,a]", "<a, b, c | c = [b,a], [c,a], [c,b], a^2 = c>", 3, 133, 66},
    {"Q16", "<a, b | a^8, a^4 = b^2, b^-1 a b = a^-1>", 5, 133, 66},
    {"Heisenberg mod 3", "<x, y | [x,y]^3, [x,y,x], [x,y,y]>", 3, 133, 20},
};
#define NCASES ((slong)(sizeof groups / sizeof groups[0]))

/* A random element in normal form.  Finite generators get an exponent in
 * [0, m); infinite ones one in [-small, small], or, when huge > 0, one with
 * up to huge bits (133 bits: about 10^40) with probability 1/2. */
static void rnd_elt(fmpz *u, const pcp_struct *P, slong small, int huge)
{
    for (slong k = 0; k < P->n; k++) {
        if (!fmpz_is_zero(P->relorder + k)) {
            assert_true(fmpz_abs_fits_ui(P->relorder + k));
            fmpz_set_ui(u + k, rng_next() % fmpz_get_ui(P->relorder + k));
            continue;
        }
        if (huge && (rng_next() & 1))
            rnd_fmpz_bits(u + k, huge);
        else
            fmpz_set_si(u + k, rng_range(-small, small));
        if (rng_next() % 4 == 0)
            fmpz_zero(u + k);
    }
}

/* ---------------------------------------------------- element helpers */

static char *vec_str(const fmpz *u, slong n)
{
    size_t cap = 16, len = 0;
    char *s = malloc(cap);
    s[len++] = '(';
    for (slong k = 0; k < n; k++) {
        char *e = fmpz_get_str(NULL, 10, u + k);
        size_t need = len + strlen(e) + 4;
        if (need > cap) {
            cap = 2 * need;
            s = realloc(s, cap);
        }
        len += (size_t)sprintf(s + len, "%s%s", k ? "," : "", e);
        flint_free(e);
    }
    s = realloc(s, len + 2);
    s[len++] = ')';
    s[len] = '\0';
    return s;
}

/* Fails with the group, what was checked and the inputs when a != b. */
static void expect_equal(const fmpz *a, const fmpz *b, slong n, const char *group, const char *what,
                         const fmpz *x, const fmpz *y, const fmpz *z)
{
    if (_fmpz_vec_equal(a, b, n))
        return;
    char *sa = vec_str(a, n), *sb = vec_str(b, n);
    char *sx = x ? vec_str(x, n) : NULL, *sy = y ? vec_str(y, n) : NULL;
    char *sz = z ? vec_str(z, n) : NULL;
    print_error("%s: %s fails\n  x = %s\n  y = %s\n  z = %s\n  one side  %s\n  other     %s\n",
                group, what, sx ? sx : "-", sy ? sy : "-", sz ? sz : "-", sa, sb);
    free(sa);
    free(sb);
    free(sx);
    free(sy);
    free(sz);
    fail();
}

/* ======================================================== the oracle =====
 *
 * Words are lists of letters: +(g+1) for a_g, -(g+1) for a_g^-1.  normalise
 * rewrites a word until no rule applies, always at the leftmost place where
 * one does:
 *   a_g^-1 for finite a_g         -> a_g^(m_g - 1) (pow_g)^-1
 *   a_g^e a_g^-e                  -> (nothing)
 *   x y with gen(x) > gen(y)      -> y x^y, where x^y comes from the
 *                                    conjugate relation a_k^(a_i) (inverted
 *                                    for x = a_k^-1), or for y = a_i^-1 with
 *                                    a_i infinite from a_k^(a_i^-1), which
 *                                    the oracle derives itself (below)
 *   a_g^(m_g) for finite a_g      -> pow_g
 * What is left is a_0^(u_0) ... a_(n-1)^(u_(n-1)) with 0 <= u_g < m_g for
 * finite a_g: the normal form.  The oracle reads only P->relorder, P->pow,
 * P->conj and P->trivial: the inverse tables that pcp_complete derives with
 * the engine's own collection are not used. */

typedef struct {
    slong len, alloc;
    slong *x;
} word;

static void word_init(word *w)
{
    w->len = w->alloc = 0;
    w->x = NULL;
}

static void word_clear(word *w)
{
    free(w->x);
    word_init(w);
}

static void word_fit(word *w, slong len)
{
    if (len <= w->alloc)
        return;
    w->alloc = len > 2 * w->alloc ? len : 2 * w->alloc;
    w->x = realloc(w->x, (size_t)w->alloc * sizeof(slong));
}

static void word_push(word *w, slong letter)
{
    word_fit(w, w->len + 1);
    w->x[w->len++] = letter;
}

static void word_append(word *w, const word *v)
{
    word_fit(w, w->len + v->len);
    if (v->len)
        memcpy(w->x + w->len, v->x, (size_t)v->len * sizeof(slong));
    w->len += v->len;
}

/* w := w with the inverse of v appended */
static void word_append_inv(word *w, const word *v)
{
    word_fit(w, w->len + v->len);
    for (slong k = v->len - 1; k >= 0; k--)
        w->x[w->len++] = -v->x[k];
}

/* Replaces w[pos .. pos+del-1] by ins[0 .. nins-1]. */
static void word_splice(word *w, slong pos, slong del, const slong *ins, slong nins)
{
    slong nl = w->len - del + nins;
    word_fit(w, nl);
    if (w->len > pos + del)
        memmove(w->x + pos + nins, w->x + pos + del, (size_t)(w->len - pos - del) * sizeof(slong));
    if (nins)
        memcpy(w->x + pos, ins, (size_t)nins * sizeof(slong));
    w->len = nl;
}

/* |e| > limit */
static int too_big(const fmpz_t e, slong limit)
{
    return !fmpz_fits_si(e) || fmpz_get_si(e) > limit || fmpz_get_si(e) < -limit;
}

/* The letters of a normal word (|exponents| <= limit, else returns 1). */
static int word_from_pcw(word *w, const pcw_struct *v, int inverse, slong limit)
{
    w->len = 0;
    for (slong t = 0; t < v->len; t++)
        if (too_big(v->exp + t, limit))
            return 1;
    for (slong t = 0; t < v->len; t++) {
        slong idx = inverse ? v->len - 1 - t : t;
        slong e = fmpz_get_si(v->exp + idx);
        slong letter = (v->gen[idx] + 1) * (e > 0 ? 1 : -1) * (inverse ? -1 : 1);
        for (slong r = 0; r < (e > 0 ? e : -e); r++)
            word_push(w, letter);
    }
    return 0;
}

/* The letters of a vector in normal form. */
static int word_from_vec(word *w, const fmpz *u, slong n, slong limit)
{
    w->len = 0;
    for (slong g = 0; g < n; g++) {
        if (too_big(u + g, limit))
            return 1;
        slong e = fmpz_get_si(u + g);
        for (slong r = 0; r < (e > 0 ? e : -e); r++)
            word_push(w, e > 0 ? g + 1 : -(g + 1));
    }
    return 0;
}

typedef struct {
    const pcp_struct *P;
    word *conjm; /* per slot: a_k^(a_i^-1), derived lazily */
    char *have;  /* per slot: conjm computed */
    slong steps, budget;
    int over; /* ran out of budget, or an exponent was too large */
} oracle;

static void oracle_init(oracle *O, const pcp_struct *P, slong budget)
{
    O->P = P;
    slong ns = P->ncore * (P->ncore - 1) / 2;
    O->conjm = calloc((size_t)(ns ? ns : 1), sizeof(word));
    O->have = calloc((size_t)(ns ? ns : 1), 1);
    O->steps = 0;
    O->budget = budget;
    O->over = 0;
}

static void oracle_clear(oracle *O)
{
    slong ns = O->P->ncore * (O->P->ncore - 1) / 2;
    for (slong s = 0; s < ns; s++)
        word_clear(O->conjm + s);
    free(O->conjm);
    free(O->have);
}

static int commute(const pcp_struct *P, slong k, slong i)
{
    return k >= P->ncore || P->trivial[pcp_slot(k, i)];
}

static void normalise(oracle *O, word *w);

/* out := the letters of a_k^(a_i) (inverse = 1: of (a_k^-1)^(a_i)). */
static void conj_forward(oracle *O, word *out, slong k, slong i, int inverse)
{
    out->len = 0;
    if (commute(O->P, k, i)) {
        word_push(out, inverse ? -(k + 1) : k + 1);
        return;
    }
    if (word_from_pcw(out, O->P->conj + pcp_slot(k, i), inverse, 1000))
        O->over = 1;
}

/* The letters of a_k^(a_i^-1) for infinite a_i: the y in the subgroup
 * beyond i with y^(a_i) = a_k.  Conjugation by a_i is the identity modulo
 * higher weight, so y <- y (y^(a_i))^-1 a_k gains a weight per round; y^(a_i)
 * is computed letter by letter from the forward relations. */
static const word *conj_backward(oracle *O, slong k, slong i)
{
    slong s = pcp_slot(k, i);
    if (O->have[s])
        return O->conjm + s;
    word y, z, t;
    word_init(&y);
    word_init(&z);
    word_init(&t);
    word_push(&y, k + 1);
    int done = 0;
    for (slong round = 0; round <= O->P->maxweight + 2 && !O->over; round++) {
        z.len = 0;
        for (slong l = 0; l < y.len; l++) {
            slong g = (y.x[l] > 0 ? y.x[l] : -y.x[l]) - 1;
            conj_forward(O, &t, g, i, y.x[l] < 0);
            word_append(&z, &t);
        }
        normalise(O, &z);
        if (z.len == 1 && z.x[0] == k + 1) {
            done = 1;
            break;
        }
        word_append_inv(&y, &z);
        word_push(&y, k + 1);
        normalise(O, &y);
    }
    if (!done)
        O->over = 1;
    word_clear(&z);
    word_clear(&t);
    O->conjm[s] = y;
    O->have[s] = 1;
    return O->conjm + s;
}

static void normalise(oracle *O, word *w)
{
    const pcp_struct *P = O->P;
    word t;
    word_init(&t);
    slong p = 0;
    while (p < w->len && !O->over) {
        if (++O->steps > O->budget) {
            O->over = 1;
            break;
        }
        slong x = w->x[p], gx = (x > 0 ? x : -x) - 1;
        if (x < 0 && !fmpz_is_zero(P->relorder + gx)) {
            /* a^-1 = a^(m-1) (a^m)^-1 */
            slong m = fmpz_get_si(P->relorder + gx);
            if (word_from_pcw(&t, P->pow + gx, 1, 1000)) {
                O->over = 1;
                break;
            }
            slong *ins = malloc((size_t)(m - 1 + t.len + 1) * sizeof(slong));
            for (slong r = 0; r < m - 1; r++)
                ins[r] = gx + 1;
            if (t.len)
                memcpy(ins + m - 1, t.x, (size_t)t.len * sizeof(slong));
            word_splice(w, p, 1, ins, m - 1 + t.len);
            free(ins);
            p = p > 0 ? p - 1 : 0;
            continue;
        }
        if (p + 1 == w->len)
            break;
        slong y = w->x[p + 1], gy = (y > 0 ? y : -y) - 1;
        if (y < 0 && !fmpz_is_zero(P->relorder + gy)) {
            p++; /* the rule above rewrites it first */
            continue;
        }
        if (gx == gy && x == -y) {
            word_splice(w, p, 2, NULL, 0);
            p = p > 0 ? p - 1 : 0;
            continue;
        }
        if (gx > gy) {
            /* x y = y x^y */
            if (y > 0)
                conj_forward(O, &t, gx, gy, x < 0);
            else {
                t.len = 0;
                if (commute(P, gx, gy))
                    word_push(&t, x);
                else if (x > 0)
                    word_append(&t, conj_backward(O, gx, gy));
                else
                    word_append_inv(&t, conj_backward(O, gx, gy));
            }
            if (O->over)
                break;
            word_fit(&t, t.len + 1);
            memmove(t.x + 1, t.x, (size_t)t.len * sizeof(slong));
            t.x[0] = y;
            t.len++;
            word_splice(w, p, 2, t.x, t.len);
            p = p > 0 ? p - 1 : 0;
            continue;
        }
        if (x == y && x > 0 && !fmpz_is_zero(P->relorder + gx)) {
            slong m = fmpz_get_si(P->relorder + gx), start = p + 1;
            while (start > 0 && w->x[start - 1] == x)
                start--;
            if (p + 1 - start + 1 == m) {
                if (word_from_pcw(&t, P->pow + gx, 0, 1000)) {
                    O->over = 1;
                    break;
                }
                word_splice(w, start, m, t.x, t.len);
                p = start > 0 ? start - 1 : 0;
                continue;
            }
        }
        p++;
    }
    word_clear(&t);
}

/* u := the exponent vector of a normal word. */
static void word_to_vec(fmpz *u, slong n, const word *w)
{
    _fmpz_vec_zero(u, n);
    for (slong l = 0; l < w->len; l++) {
        slong g = (w->x[l] > 0 ? w->x[l] : -w->x[l]) - 1;
        if (w->x[l] > 0)
            fmpz_add_ui(u + g, u + g, 1);
        else
            fmpz_sub_ui(u + g, u + g, 1);
    }
}

/* ===================================================== property tests */

typedef struct {
    const group_case *g;
    nq_t Q;
    pcp_work_t W;
    slong n;
    fmpz *x, *y, *z, *a, *b, *c, *d;
} ctx;

static void ctx_init(ctx *C, const group_case *g)
{
    C->g = g;
    nq_init(C->Q);
    compute_quotient(C->Q, g->text, g->c);
    pcp_work_init(C->W, C->Q->pcp);
    C->n = C->Q->pcp->n;
    slong m = C->n ? C->n : 1;
    C->x = _fmpz_vec_init(m);
    C->y = _fmpz_vec_init(m);
    C->z = _fmpz_vec_init(m);
    C->a = _fmpz_vec_init(m);
    C->b = _fmpz_vec_init(m);
    C->c = _fmpz_vec_init(m);
    C->d = _fmpz_vec_init(m);
}

static void ctx_clear(ctx *C)
{
    slong m = C->n ? C->n : 1;
    _fmpz_vec_clear(C->x, m);
    _fmpz_vec_clear(C->y, m);
    _fmpz_vec_clear(C->z, m);
    _fmpz_vec_clear(C->a, m);
    _fmpz_vec_clear(C->b, m);
    _fmpz_vec_clear(C->c, m);
    _fmpz_vec_clear(C->d, m);
    pcp_work_clear(C->W);
    nq_clear(C->Q);
}

/* Runs check(C, 0) iters(small) times, then check(C, 1) -- the "huge"
 * variant -- iters(huge) times, on every group under test. */
static void run_on_every_group(void (*check)(ctx *C, int huge), slong small, slong huge)
{
    for (slong k = 0; k < NCASES; k++) {
        ctx C;
        ctx_init(&C, groups + k);
        for (slong it = 0; it < iters(small); it++)
            check(&C, 0);
        for (slong it = 0; it < iters(huge); it++)
            check(&C, 1);
        ctx_clear(&C);
    }
}

/* Every computed presentation passes its own consistency test. */
static void computed_presentations_are_consistent(void **state)
{
    (void)state;
    for (slong k = 0; k < NCASES; k++) {
        ctx C;
        ctx_init(&C, groups + k);
        if (!pcp_is_consistent(C.Q->pcp, C.W))
            fail_msg("%s: pcp_is_consistent is 0", groups[k].name);
        ctx_clear(&C);
    }
}

/* (xy)z = x(yz), 1x = x1 = x, x x^-1 = x^-1 x = 1, (x^-1)^-1 = x. */
static void group_axioms_one(ctx *C, int huge)
{
    const char *nm = C->g->name;
    slong n = C->n;
    pcp_work_struct *W = C->W;
    const pcp_struct *P = C->Q->pcp;
    int bits = huge ? C->g->big_bits : 0;
    rnd_elt(C->x, P, 4, bits);
    rnd_elt(C->y, P, 4, bits);
    rnd_elt(C->z, P, 4, bits);
    pcp_elt_mul(W, C->a, C->x, C->y);
    pcp_elt_mul(W, C->a, C->a, C->z); /* out aliases the first input */
    pcp_elt_mul(W, C->b, C->y, C->z);
    pcp_elt_mul(W, C->b, C->x, C->b); /* out aliases the second input */
    expect_equal(C->a, C->b, n, nm, "(xy)z = x(yz)", C->x, C->y, C->z);

    _fmpz_vec_zero(C->c, n);
    pcp_elt_mul(W, C->a, C->c, C->x);
    expect_equal(C->a, C->x, n, nm, "1x = x", C->x, NULL, NULL);
    pcp_elt_mul(W, C->a, C->x, C->c);
    expect_equal(C->a, C->x, n, nm, "x1 = x", C->x, NULL, NULL);

    pcp_elt_inv(W, C->a, C->x);
    pcp_elt_mul(W, C->b, C->x, C->a);
    expect_equal(C->b, C->c, n, nm, "x x^-1 = 1", C->x, NULL, NULL);
    pcp_elt_mul(W, C->b, C->a, C->x);
    expect_equal(C->b, C->c, n, nm, "x^-1 x = 1", C->x, NULL, NULL);
    pcp_elt_inv(W, C->b, C->a);
    expect_equal(C->b, C->x, n, nm, "(x^-1)^-1 = x", C->x, NULL, NULL);

    /* (xy)^-1 = y^-1 x^-1 */
    pcp_elt_mul(W, C->a, C->x, C->y);
    pcp_elt_inv(W, C->a, C->a);
    pcp_elt_inv(W, C->b, C->y);
    pcp_elt_inv(W, C->c, C->x);
    pcp_elt_mul(W, C->b, C->b, C->c);
    expect_equal(C->a, C->b, n, nm, "(xy)^-1 = y^-1 x^-1", C->x, C->y, NULL);

    /* every result is in normal form */
    for (slong k = 0; k < n; k++)
        if (!fmpz_is_zero(P->relorder + k))
            assert_true(fmpz_sgn(C->a + k) >= 0 && fmpz_cmp(C->a + k, P->relorder + k) < 0);
    assert_false(W->overflow);
}

static void group_axioms(void **state)
{
    (void)state;
    run_on_every_group(group_axioms_one, 40, 8);
}

/* (x^m)^k = x^(mk), x^m x^k = x^(m+k), x^0 = 1, x^1 = x, x^-1 = inverse. */
static void powers_one(ctx *C, int huge)
{
    const char *nm = C->g->name;
    slong n = C->n;
    pcp_work_struct *W = C->W;
    fmpz_t m, k, mk;
    fmpz_init(m);
    fmpz_init(k);
    fmpz_init(mk);
    rnd_elt(C->x, C->Q->pcp, 3, huge ? C->g->big_bits : 0);
    if (huge) {
        rnd_fmpz_bits(m, C->g->pow_bits);
        rnd_fmpz_bits(k, C->g->pow_bits);
    } else {
        fmpz_set_si(m, rng_range(-25, 25));
        fmpz_set_si(k, rng_range(-25, 25));
    }
    fmpz_mul(mk, m, k);
    pcp_elt_pow(W, C->a, C->x, m);
    pcp_elt_pow(W, C->a, C->a, k);
    pcp_elt_pow(W, C->b, C->x, mk);
    expect_equal(C->a, C->b, n, nm, "(x^m)^k = x^(mk)", C->x, NULL, NULL);
    fmpz_add(mk, m, k);
    pcp_elt_pow(W, C->a, C->x, m);
    pcp_elt_pow(W, C->c, C->x, k);
    pcp_elt_mul(W, C->a, C->a, C->c);
    pcp_elt_pow(W, C->b, C->x, mk);
    expect_equal(C->a, C->b, n, nm, "x^m x^k = x^(m+k)", C->x, NULL, NULL);

    fmpz_zero(m);
    pcp_elt_pow(W, C->a, C->x, m);
    _fmpz_vec_zero(C->b, n);
    expect_equal(C->a, C->b, n, nm, "x^0 = 1", C->x, NULL, NULL);
    fmpz_one(m);
    pcp_elt_pow(W, C->a, C->x, m);
    expect_equal(C->a, C->x, n, nm, "x^1 = x", C->x, NULL, NULL);
    fmpz_set_si(m, -1);
    pcp_elt_pow(W, C->a, C->x, m);
    pcp_elt_inv(W, C->b, C->x);
    expect_equal(C->a, C->b, n, nm, "x^-1 = inverse", C->x, NULL, NULL);
    /* x^3 = x x x, with the product written out */
    fmpz_set_si(m, 3);
    pcp_elt_pow(W, C->a, C->x, m);
    pcp_elt_mul(W, C->b, C->x, C->x);
    pcp_elt_mul(W, C->b, C->b, C->x);
    expect_equal(C->a, C->b, n, nm, "x^3 = x x x", C->x, NULL, NULL);
    assert_false(W->overflow);
    fmpz_clear(m);
    fmpz_clear(k);
    fmpz_clear(mk);
}

static void powers(void **state)
{
    (void)state;
    run_on_every_group(powers_one, 25, 6);
}

/* [x,y] = x^-1 y^-1 x y and x^y = y^-1 x y through products; conjugation
 * is a homomorphism; [x,y]^-1 = [y,x]; x^y = x [x,y]. */
static void commutators_one(ctx *C, int huge)
{
    const char *nm = C->g->name;
    slong n = C->n;
    pcp_work_struct *W = C->W;
    int bits = huge ? C->g->big_bits : 0;
    rnd_elt(C->x, C->Q->pcp, 4, bits);
    rnd_elt(C->y, C->Q->pcp, 4, bits);
    rnd_elt(C->z, C->Q->pcp, 4, bits);

    pcp_elt_comm(W, C->a, C->x, C->y);
    pcp_elt_inv(W, C->b, C->x);
    pcp_elt_inv(W, C->c, C->y);
    pcp_elt_mul(W, C->b, C->b, C->c);
    pcp_elt_mul(W, C->b, C->b, C->x);
    pcp_elt_mul(W, C->b, C->b, C->y);
    expect_equal(C->a, C->b, n, nm, "[x,y] = x^-1 y^-1 x y", C->x, C->y, NULL);

    pcp_elt_comm(W, C->b, C->y, C->x);
    pcp_elt_inv(W, C->b, C->b);
    expect_equal(C->a, C->b, n, nm, "[x,y]^-1 = [y,x]", C->x, C->y, NULL);

    pcp_elt_conj(W, C->b, C->x, C->y);
    pcp_elt_inv(W, C->c, C->y);
    pcp_elt_mul(W, C->c, C->c, C->x);
    pcp_elt_mul(W, C->c, C->c, C->y);
    expect_equal(C->b, C->c, n, nm, "x^y = y^-1 x y", C->x, C->y, NULL);

    pcp_elt_mul(W, C->c, C->x, C->a);
    expect_equal(C->b, C->c, n, nm, "x^y = x [x,y]", C->x, C->y, NULL);

    /* (x z)^y = x^y z^y */
    pcp_elt_mul(W, C->c, C->x, C->z);
    pcp_elt_conj(W, C->c, C->c, C->y);
    pcp_elt_conj(W, C->d, C->z, C->y);
    pcp_elt_mul(W, C->d, C->b, C->d);
    expect_equal(C->c, C->d, n, nm, "(xz)^y = x^y z^y", C->x, C->y, C->z);

    /* x^(yz) = (x^y)^z */
    pcp_elt_mul(W, C->c, C->y, C->z);
    pcp_elt_conj(W, C->c, C->x, C->c);
    pcp_elt_conj(W, C->d, C->b, C->z);
    expect_equal(C->c, C->d, n, nm, "x^(yz) = (x^y)^z", C->x, C->y, C->z);

    /* The Hall-Witt identity [x, y^-1, z]^y [y, z^-1, x]^z [z, x^-1, y]^x = 1
     * in our conventions (D. J. S. Robinson, A Course in the Theory of
     * Groups, 1982, 5.1.5(iv); from memory). */
    fmpz *t = _fmpz_vec_init(n ? n : 1), *acc = _fmpz_vec_init(n ? n : 1);
    const fmpz *v[3] = {C->x, C->y, C->z};
    _fmpz_vec_zero(acc, n);
    for (int r = 0; r < 3; r++) {
        const fmpz *p = v[r], *q = v[(r + 1) % 3], *s = v[(r + 2) % 3];
        pcp_elt_inv(W, t, q);
        pcp_elt_comm(W, t, p, t);
        pcp_elt_comm(W, t, t, s);
        pcp_elt_conj(W, t, t, q);
        pcp_elt_mul(W, acc, acc, t);
    }
    _fmpz_vec_zero(t, n);
    expect_equal(acc, t, n, nm, "Hall-Witt identity", C->x, C->y, C->z);
    _fmpz_vec_clear(t, n ? n : 1);
    _fmpz_vec_clear(acc, n ? n : 1);
    assert_false(W->overflow);
}

static void commutators_and_conjugates(void **state)
{
    (void)state;
    run_on_every_group(commutators_one, 20, 3);
}

/* u a_i^e1 a_i^e2 = u a_i^(e1+e2), through pcp_collect_gen directly: this is
 * where conjugation by large powers of a generator happens. */
static void collect_gen_splits(void **state)
{
    (void)state;
    for (slong k = 0; k < NCASES; k++) {
        ctx C;
        ctx_init(&C, groups + k);
        const pcp_struct *P = C.Q->pcp;
        fmpz_t e1, e2, e;
        fmpz_init(e1);
        fmpz_init(e2);
        fmpz_init(e);
        for (slong it = 0; it < iters(40) && C.n > 0; it++) {
            int huge = it % 4 == 3;
            rnd_elt(C.x, P, 4, huge ? groups[k].big_bits : 0);
            slong i = rng_range(0, C.n - 1);
            if (huge) {
                rnd_fmpz_bits(e1, groups[k].big_bits);
                rnd_fmpz_bits(e2, groups[k].big_bits);
            } else {
                fmpz_set_si(e1, rng_range(-30, 30));
                fmpz_set_si(e2, rng_range(-30, 30));
            }
            fmpz_add(e, e1, e2);
            _fmpz_vec_set(C.a, C.x, C.n);
            pcp_collect_gen(C.W, C.a, i, e1);
            pcp_collect_gen(C.W, C.a, i, e2);
            _fmpz_vec_set(C.b, C.x, C.n);
            pcp_collect_gen(C.W, C.b, i, e);
            expect_equal(C.a, C.b, C.n, groups[k].name, "u a_i^e1 a_i^e2 = u a_i^(e1+e2)", C.x,
                         NULL, NULL);
            /* and u a_i^e = u * (the vector of a_i^e) */
            _fmpz_vec_zero(C.c, C.n);
            pcp_collect_gen(C.W, C.c, i, e);
            pcp_elt_mul(C.W, C.c, C.x, C.c);
            expect_equal(C.b, C.c, C.n, groups[k].name, "u a_i^e = u * (a_i^e)", C.x, NULL, NULL);
        }
        fmpz_clear(e1);
        fmpz_clear(e2);
        fmpz_clear(e);
        ctx_clear(&C);
    }
}

/* Collection from the left agrees with the rewriting oracle: products and
 * inverses of small random elements, and random letter words collected one
 * letter at a time. */
static void agrees_with_rewriting_oracle(void **state)
{
    (void)state;
    slong checked = 0, skipped = 0;
    for (slong k = 0; k < NCASES; k++) {
        ctx C;
        ctx_init(&C, groups + k);
        const pcp_struct *P = C.Q->pcp;
        slong n = C.n;
        oracle O;
        oracle_init(&O, P, 2000000);
        word w, v;
        word_init(&w);
        word_init(&v);
        fmpz_t e;
        fmpz_init(e);
        for (slong it = 0; it < iters(25); it++) {
            /* x y */
            rnd_elt(C.x, P, 2, 0);
            rnd_elt(C.y, P, 2, 0);
            word_from_vec(&w, C.x, n, 1000);
            word_from_vec(&v, C.y, n, 1000);
            word_append(&w, &v);
            O.steps = 0;
            normalise(&O, &w);
            if (O.over) {
                skipped++;
                O.over = 0;
                continue;
            }
            word_to_vec(C.a, n, &w);
            pcp_elt_mul(C.W, C.b, C.x, C.y);
            expect_equal(C.b, C.a, n, groups[k].name, "x y: collection vs rewriting oracle", C.x,
                         C.y, NULL);
            /* x^-1 */
            word_from_vec(&v, C.x, n, 1000);
            w.len = 0;
            word_append_inv(&w, &v);
            O.steps = 0;
            normalise(&O, &w);
            if (!O.over) {
                word_to_vec(C.a, n, &w);
                pcp_elt_inv(C.W, C.b, C.x);
                expect_equal(C.b, C.a, n, groups[k].name, "x^-1: collection vs rewriting oracle",
                             C.x, NULL, NULL);
                checked++;
            } else {
                skipped++;
                O.over = 0;
            }
            /* a random word of 8 letters */
            w.len = 0;
            _fmpz_vec_zero(C.b, n);
            for (int l = 0; l < 8 && n > 0; l++) {
                slong g = rng_range(0, n - 1);
                slong s = (rng_next() & 1) ? 1 : -1;
                word_push(&w, s * (g + 1));
                fmpz_set_si(e, s);
                pcp_collect_gen(C.W, C.b, g, e);
            }
            O.steps = 0;
            normalise(&O, &w);
            if (O.over) {
                skipped++;
                O.over = 0;
                continue;
            }
            word_to_vec(C.a, n, &w);
            expect_equal(C.b, C.a, n, groups[k].name,
                         "random letters: collection vs rewriting oracle", NULL, NULL, NULL);
            checked += 2;
        }
        fmpz_clear(e);
        word_clear(&w);
        word_clear(&v);
        oracle_clear(&O);
        ctx_clear(&C);
    }
    printf("test_pcp: oracle comparisons %ld, skipped over budget %ld\n", (long)checked,
           (long)skipped);
    /* the oracle must actually have been exercised */
    assert_true(checked >= 10 * skipped);
    assert_true(checked > 0);
}

/* The oracle itself on a case worked by hand: in the Heisenberg group with
 * pc generators x, y, z = [y,x] the word y x collects to x y z. */
static void oracle_sanity(void **state)
{
    (void)state;
    group_case g = {"Heisenberg", "<x, y | [x,y,x], [x,y,y]>", 2, 133, 66};
    ctx C;
    ctx_init(&C, &g);
    assert_int_equal(C.n, 3);
    oracle O;
    oracle_init(&O, C.Q->pcp, 100000);
    word w;
    word_init(&w);
    word_push(&w, 2);
    word_push(&w, 1); /* y x */
    normalise(&O, &w);
    word_to_vec(C.a, 3, &w);
    assert_true(fmpz_equal_si(C.a + 0, 1) && fmpz_equal_si(C.a + 1, 1) &&
                fmpz_equal_si(C.a + 2, 1));
    w.len = 0;
    word_push(&w, -2);
    word_push(&w, -1); /* y^-1 x^-1 = x^-1 y^-1 [y^-1, x^-1] = x^-1 y^-1 z */
    normalise(&O, &w);
    word_to_vec(C.a, 3, &w);
    assert_true(fmpz_equal_si(C.a + 0, -1) && fmpz_equal_si(C.a + 1, -1) &&
                fmpz_equal_si(C.a + 2, 1));
    assert_false(O.over);
    word_clear(&w);
    oracle_clear(&O);
    ctx_clear(&C);
}

/* The Heisenberg group <x, y | [x,y,x], [x,y,y]> with pc generators x, y,
 * z = [y,x] (derived by hand: y x = x y [y,x] and z is central, so
 * y^b x^a = x^a y^b z^(ab)):
 *   (a,b,c)(a',b',c') = (a+a', b+b', c+c'+b a'),
 *   (a,b,c)^k = (ka, kb, kc + ab k(k-1)/2)          (induction on k),
 * checked with exponents around 10^40 and powers around 10^20. */
static void heisenberg_closed_formulas(void **state)
{
    (void)state;
    group_case g = {"Heisenberg", "<x, y | [x,y,x], [x,y,y]>", 2, 133, 66};
    ctx C;
    ctx_init(&C, &g);
    assert_int_equal(C.n, 3);
    assert_string_equal(C.Q->labels[2], "[y,x]");
    fmpz_t k, t;
    fmpz_init(k);
    fmpz_init(t);
    for (slong it = 0; it < iters(200); it++) {
        for (int j = 0; j < 3; j++) {
            rnd_fmpz_bits(C.x + j, it % 2 ? 133 : 8);
            rnd_fmpz_bits(C.y + j, it % 2 ? 133 : 8);
        }
        pcp_elt_mul(C.W, C.a, C.x, C.y);
        fmpz_add(C.b + 0, C.x + 0, C.y + 0);
        fmpz_add(C.b + 1, C.x + 1, C.y + 1);
        fmpz_add(C.b + 2, C.x + 2, C.y + 2);
        fmpz_addmul(C.b + 2, C.x + 1, C.y + 0);
        expect_equal(C.a, C.b, 3, g.name, "product formula", C.x, C.y, NULL);

        rnd_fmpz_bits(k, it % 2 ? 66 : 6);
        pcp_elt_pow(C.W, C.a, C.x, k);
        fmpz_mul(C.b + 0, C.x + 0, k);
        fmpz_mul(C.b + 1, C.x + 1, k);
        fmpz_mul(C.b + 2, C.x + 2, k);
        fmpz_sub_ui(t, k, 1);
        fmpz_mul(t, t, k);
        fmpz_divexact_ui(t, t, 2);
        fmpz_mul(t, t, C.x + 0);
        fmpz_addmul(C.b + 2, t, C.x + 1);
        expect_equal(C.a, C.b, 3, g.name, "power formula", C.x, NULL, NULL);

        /* [x,y] = z^(b a' - a b') for x = (a,b,.), y = (a',b',.): the
         * commutator is bilinear in class 2 and [x,y] = [y,x]^-1 = z^-1 on
         * the generators. */
        pcp_elt_comm(C.W, C.a, C.x, C.y);
        fmpz_zero(C.b + 0);
        fmpz_zero(C.b + 1);
        fmpz_mul(C.b + 2, C.x + 1, C.y + 0);
        fmpz_submul(C.b + 2, C.x + 0, C.y + 1);
        expect_equal(C.a, C.b, 3, g.name, "commutator formula", C.x, C.y, NULL);
    }
    fmpz_clear(k);
    fmpz_clear(t);
    ctx_clear(&C);
}

/* ============================================ a faithful matrix model =====
 *
 * UT(4, Z), the upper unitriangular 4 x 4 integer matrices, is generated by
 * the elementary matrices E12, E23, E34.  The family unitriangular(4) names
 * them e12, e23, e34; test_nq checks that its class-3 quotient has layers
 * Z^3, Z^2, Z.  Here: (1) every relator of the family holds for the
 * matrices, so g -> E_g defines a homomorphism phi from the computed
 * quotient onto UT(4, Z) [onto: the E_(i,i+1) generate]; (2) both groups
 * are torsion-free nilpotent of Hirsch length 6 = 3 + 2 + 1, so phi is an
 * isomorphism (its kernel would be a normal subgroup of Hirsch length 0,
 * hence finite, hence trivial).  The product, inverse, power and commutator
 * of the engine are then compared with plain matrix arithmetic (fmpz_mat),
 * with coordinates of about 2^40.  A unipotent M = I + N has N^4 = 0, so
 * M^e = I + e N + C(e,2) N^2 + C(e,3) N^3 for every integer e. */

/* out := M^e for a 4 x 4 unitriangular M and any integer e. */
static void ut_pow(fmpz_mat_t out, const fmpz_mat_t M, const fmpz_t e)
{
    fmpz_mat_t N, Nj, R;
    fmpz_t binom, t;
    fmpz_mat_init(N, 4, 4);
    fmpz_mat_init(Nj, 4, 4);
    fmpz_mat_init(R, 4, 4);
    fmpz_init(binom);
    fmpz_init(t);
    fmpz_mat_one(R);
    fmpz_mat_sub(N, M, R);
    fmpz_mat_one(Nj);
    fmpz_one(binom);
    for (ulong j = 1; j <= 3; j++) {
        /* binom := C(e, j) = C(e, j-1) (e - j + 1) / j */
        fmpz_sub_ui(t, e, j - 1);
        fmpz_mul(binom, binom, t);
        fmpz_divexact_ui(binom, binom, j);
        fmpz_mat_mul(Nj, Nj, N);
        fmpz_mat_scalar_addmul_fmpz(R, Nj, binom);
    }
    fmpz_mat_set(out, R);
    fmpz_mat_clear(N);
    fmpz_mat_clear(Nj);
    fmpz_mat_clear(R);
    fmpz_clear(binom);
    fmpz_clear(t);
}

static void ut_inv(fmpz_mat_t out, const fmpz_mat_t M)
{
    fmpz_t m1;
    fmpz_init_set_si(m1, -1);
    ut_pow(out, M, m1);
    fmpz_clear(m1);
}

/* out := [A, B] = A^-1 B^-1 A B */
static void ut_comm(fmpz_mat_t out, const fmpz_mat_t A, const fmpz_mat_t B)
{
    fmpz_mat_t Ai, Bi, T;
    fmpz_mat_init(Ai, 4, 4);
    fmpz_mat_init(Bi, 4, 4);
    fmpz_mat_init(T, 4, 4);
    ut_inv(Ai, A);
    ut_inv(Bi, B);
    fmpz_mat_mul(T, Ai, Bi);
    fmpz_mat_mul(T, T, A);
    fmpz_mat_mul(out, T, B);
    fmpz_mat_clear(Ai);
    fmpz_mat_clear(Bi);
    fmpz_mat_clear(T);
}

/* The matrix of a word of the input language; gens holds one matrix per
 * input generator. */
static void ut_eval(fmpz_mat_t out, const expr_node *e, const fmpz_mat_struct *gens)
{
    fmpz_mat_t x;
    switch (e->kind) {
    case EXPR_ONE:
        fmpz_mat_one(out);
        break;
    case EXPR_GEN:
        fmpz_mat_set(out, gens + e->gen);
        break;
    case EXPR_POW:
        fmpz_mat_init(x, 4, 4);
        ut_eval(x, e->kids[0], gens);
        ut_pow(out, x, e->exp);
        fmpz_mat_clear(x);
        break;
    case EXPR_MUL:
    case EXPR_COMM:
    case EXPR_CONJ: {
        fmpz_mat_t acc, t;
        fmpz_mat_init(acc, 4, 4);
        fmpz_mat_init(x, 4, 4);
        fmpz_mat_init(t, 4, 4);
        ut_eval(acc, e->kids[0], gens);
        for (slong k = 1; k < e->nkids; k++) {
            ut_eval(x, e->kids[k], gens);
            if (e->kind == EXPR_MUL)
                fmpz_mat_mul(acc, acc, x);
            else if (e->kind == EXPR_COMM)
                ut_comm(acc, acc, x);
            else {
                ut_inv(t, x); /* acc^x = x^-1 acc x */
                fmpz_mat_mul(t, t, acc);
                fmpz_mat_mul(acc, t, x);
            }
        }
        fmpz_mat_set(out, acc);
        fmpz_mat_clear(acc);
        fmpz_mat_clear(x);
        fmpz_mat_clear(t);
        break;
    }
    case EXPR_RUN: {
        fmpz_mat_t acc;
        fmpz_t ex;
        fmpz_mat_init(acc, 4, 4);
        fmpz_mat_init(x, 4, 4);
        fmpz_init(ex);
        fmpz_mat_one(acc);
        for (slong k = 0; k < e->nsyl; k++) {
            fmpz_set_si(ex, expr_syl_exp(e->syl[k]));
            ut_pow(x, gens + e->syl[k].gen, ex);
            fmpz_mat_mul(acc, acc, x);
        }
        fmpz_mat_set(out, acc);
        fmpz_mat_clear(acc);
        fmpz_mat_clear(x);
        fmpz_clear(ex);
        break;
    }
    }
}

/* phi(u) = prod_k M_k^(u_k) */
static void ut_phi(fmpz_mat_t out, const fmpz *u, const fmpz_mat_struct *pcmat, slong n)
{
    fmpz_mat_t t;
    fmpz_mat_init(t, 4, 4);
    fmpz_mat_one(out);
    for (slong k = 0; k < n; k++) {
        if (fmpz_is_zero(u + k))
            continue;
        ut_pow(t, pcmat + k, u + k);
        fmpz_mat_mul(out, out, t);
    }
    fmpz_mat_clear(t);
}

static void expect_mat_equal(const fmpz_mat_t A, const fmpz_mat_t B, const char *what,
                             const fmpz *x, const fmpz *y, slong n)
{
    if (fmpz_mat_equal(A, B))
        return;
    char *sx = vec_str(x, n), *sy = y ? vec_str(y, n) : NULL;
    print_error("UT(4): %s differs from the matrix computation\n  x = %s\n  y = %s\n", what, sx,
                sy ? sy : "-");
    free(sx);
    free(sy);
    fail();
}

static void unitriangular_matrix_model(void **state)
{
    (void)state;
    group_case g = {"UT(4)", "unitriangular(4)", 5, 40, 20};
    ctx C;
    ctx_init(&C, &g);
    const pcp_struct *P = C.Q->pcp;
    const pres_struct *G = C.Q->pres;
    slong n = C.n, X = G->gens->n;
    assert_int_equal(X, 3);
    assert_int_equal(n, 6);
    assert_int_equal(C.Q->hirsch_length, 6);

    fmpz_mat_struct *gm = flint_malloc(X * sizeof(fmpz_mat_struct));
    for (slong x = 0; x < X; x++) {
        const char *nm = G->gens->name[x];
        assert_true(nm[0] == 'e' && strlen(nm) == 3);
        fmpz_mat_init(gm + x, 4, 4);
        fmpz_mat_one(gm + x);
        fmpz_one(fmpz_mat_entry(gm + x, nm[1] - '1', nm[2] - '1'));
    }
    fmpz_mat_t A, B, T;
    fmpz_mat_init(A, 4, 4);
    fmpz_mat_init(B, 4, 4);
    fmpz_mat_init(T, 4, 4);
    /* (1) the relators hold for the matrices */
    for (slong r = 0; r < G->nrels; r++) {
        ut_eval(A, G->rels[r].root, gm);
        if (!fmpz_mat_is_one(A))
            fail_msg("UT(4): relator %s is not 1 for the elementary matrices", G->text[r]);
    }
    /* the pc generators' matrices, from their definitions */
    fmpz_mat_struct *pm = flint_malloc(n * sizeof(fmpz_mat_struct));
    for (slong k = 0; k < n; k++) {
        fmpz_mat_init(pm + k, 4, 4);
        if (P->def[k].kind == PCP_DEF_IMAGE)
            fmpz_mat_set(pm + k, gm + P->def[k].a);
        else {
            assert_int_equal(P->def[k].kind, PCP_DEF_COMM);
            ut_comm(pm + k, pm + P->def[k].a, pm + P->def[k].b);
        }
    }
    /* the images of the generators map to the elementary matrices */
    for (slong x = 0; x < X; x++) {
        ut_phi(A, C.Q->images + x * n, pm, n);
        expect_mat_equal(A, gm + x, "image of a generator", C.Q->images + x * n, NULL, n);
    }
    fmpz_t e;
    fmpz_init(e);
    for (slong it = 0; it < iters(12); it++) {
        int bits = it % 2 ? g.big_bits : 0;
        rnd_elt(C.x, P, 5, bits);
        rnd_elt(C.y, P, 5, bits);
        pcp_elt_mul(C.W, C.a, C.x, C.y);
        ut_phi(A, C.a, pm, n);
        ut_phi(B, C.x, pm, n);
        ut_phi(T, C.y, pm, n);
        fmpz_mat_mul(B, B, T);
        expect_mat_equal(A, B, "x y", C.x, C.y, n);

        pcp_elt_inv(C.W, C.a, C.x);
        ut_phi(A, C.a, pm, n);
        ut_phi(B, C.x, pm, n);
        ut_inv(B, B);
        expect_mat_equal(A, B, "x^-1", C.x, NULL, n);

        rnd_fmpz_bits(e, it % 2 ? g.pow_bits : 7);
        pcp_elt_pow(C.W, C.a, C.x, e);
        ut_phi(A, C.a, pm, n);
        ut_phi(B, C.x, pm, n);
        ut_pow(B, B, e);
        expect_mat_equal(A, B, "x^e", C.x, NULL, n);

        pcp_elt_comm(C.W, C.a, C.x, C.y);
        ut_phi(A, C.a, pm, n);
        ut_phi(B, C.x, pm, n);
        ut_phi(T, C.y, pm, n);
        ut_comm(B, B, T);
        expect_mat_equal(A, B, "[x,y]", C.x, C.y, n);

        /* faithfulness as a sanity check of the model: phi(x) = 1 iff x = 1 */
        ut_phi(A, C.x, pm, n);
        assert_int_equal(fmpz_mat_is_one(A), _fmpz_vec_is_zero(C.x, n));
    }
    fmpz_clear(e);
    for (slong k = 0; k < n; k++)
        fmpz_mat_clear(pm + k);
    for (slong x = 0; x < X; x++)
        fmpz_mat_clear(gm + x);
    flint_free(pm);
    flint_free(gm);
    fmpz_mat_clear(A);
    fmpz_mat_clear(B);
    fmpz_mat_clear(T);
    ctx_clear(&C);
}

/* The polynomial route (Hall) with the degree bound proved in pcp.c against
 * plain collection (W->plain = 1: square and multiply, and conjugation by
 * repeated squaring of the automorphism), on torsion-free presentations up
 * to class 7, for elements whose lowest weight ranges over every layer,
 * exponents of 5 to 8 bits of either sign (large enough for the polynomial
 * route, small enough for plain collection), x^e and conjugation of the
 * tail beyond a_i by a_i^e. */
static void hall_route_agrees_with_plain_collection(void **state)
{
    (void)state;
    static const struct {
        const char *name, *text;
        slong c;
    } tf[] = {
        {"free(2), class 7", "<a, b>", 7},
        {"free(3), class 4", "<a, b, c>", 4},
        {"genus-2 surface group, class 4", "<a1, b1, a2, b2 | [a1,b1] [a2,b2]>", 4},
        {"<a, b | [a,b,b]>, class 6", "<a, b | [a,b,b]>", 6},
    };
    for (size_t g = 0; g < sizeof tf / sizeof tf[0]; g++) {
        nq_t Q;
        nq_init(Q);
        compute_quotient(Q, tf[g].text, tf[g].c);
        const pcp_struct *P = Q->pcp;
        slong n = P->n;
        assert_true(P->torsion_free);
        pcp_work_t Wh, Wp;
        pcp_work_init(Wh, Q->pcp);
        pcp_work_init(Wp, Q->pcp);
        Wp->plain = 1;
        fmpz *u = _fmpz_vec_init(n), *h = _fmpz_vec_init(n), *q = _fmpz_vec_init(n);
        fmpz_t e;
        fmpz_init(e);
        for (slong it = 0; it < iters(25); it++) {
            rnd_elt(u, P, 3, 0);
            /* lowest weight w: zero every coordinate of weight < w */
            slong w = rng_range(1, tf[g].c);
            for (slong k = 0; k < n && P->weight[k] < w; k++)
                fmpz_zero(u + k);
            rnd_fmpz_bits(e, (int)rng_range(5, 8));
            if (fmpz_bits(e) <= 4)
                fmpz_add_ui(e, e, 17);
            pcp_elt_pow(Wh, h, u, e);
            pcp_elt_pow(Wp, q, u, e);
            expect_equal(h, q, n, tf[g].name, "x^e by Hall polynomials = by squaring", u, NULL,
                         NULL);
            /* u a_i^e: conjugates the part of u beyond i by a_i^e */
            slong i = rng_range(0, n - 1);
            _fmpz_vec_set(h, u, n);
            _fmpz_vec_set(q, u, n);
            pcp_collect_gen(Wh, h, i, e);
            pcp_collect_gen(Wp, q, i, e);
            expect_equal(h, q, n, tf[g].name, "u a_i^e by Hall polynomials = by squaring", u,
                         NULL, NULL);
        }
        fmpz_clear(e);
        _fmpz_vec_clear(u, n);
        _fmpz_vec_clear(h, n);
        _fmpz_vec_clear(q, n);
        pcp_work_clear(Wh);
        pcp_work_clear(Wp);
        nq_clear(Q);
    }
}

/* Two presentations written by hand on a_0, a_1 (weight 1) and a_2
 * (weight 2), with a_0^2 = 1 and a_1^(a_0) = a_1 a_2, a_2 central:
 *   a_2 infinite: not consistent, since a_1 = a_1^(a_0^2) = a_1 a_2^2 forces
 *   a_2^2 = 1 (the test word (a_1 a_0) a_0 = a_1 (a_0 a_0) sees it);
 *   a_2 of order 2: consistent, being the semidirect product
 *   (Z x Z/2) x| Z/2 in which a_0 acts by a_1 -> a_1 a_2, a_2 -> a_2 (an
 *   automorphism of order 2), where every element has exactly one normal
 *   form. */
static void hand_written_consistency(void **state)
{
    (void)state;
    static const slong wt[] = {1, 1, 2};
    for (int finite = 0; finite <= 1; finite++) {
        pcp_t P;
        pcp_work_t W;
        pcw_t w;
        fmpz_t two, one;
        pcp_init(P);
        pcw_init(w);
        fmpz_init_set_ui(two, 2);
        fmpz_init_set_ui(one, 1);
        pcp_reset(P, 3, wt, 2);
        pcp_set_power(P, 0, two, w); /* a_0^2 = 1 */
        if (finite)
            pcp_set_power(P, 2, two, w); /* a_2^2 = 1 */
        pcw_push(w, 1, one);
        pcw_push(w, 2, one);
        pcp_set_conj(P, 1, 0, w); /* a_1^(a_0) = a_1 a_2 */
        pcp_work_init(W, P);
        assert_int_equal(pcp_complete(P, W), 0);
        assert_int_equal(pcp_is_consistent(P, W), finite);
        pcp_work_clear(W);
        fmpz_clear(two);
        fmpz_clear(one);
        pcw_clear(w);
        pcp_clear(P);
    }
}


/* Counts the engine's polls (one every 2^12 collection steps). */
static int count_polls(void *ctx, const char *stage, double fraction)
{
    (void)fraction;
    if (stage == NULL)
        (*(slong *)ctx)++;
    return 0;
}

/* Collection work for the class-3 quotient of <a, b | a^(10^K)>, in polls
 * of 2^12 steps; checks the layers against the free Lie ring on x of order
 * M = 10^K and y free: L1 = Z + Z/M, L2 = Z/M ([y,x]), L3 = (Z/M)^2 ([y,x,x],
 * [y,x,y]) (Lazard's elimination; the Lie ring of Z/M * Z, from memory). */
static slong quotient_polls(slong K)
{
    char text[4200];
    int len = snprintf(text, sizeof text, "<a, b | a^1");
    for (slong k = 0; k < K; k++)
        text[len++] = '0';
    snprintf(text + len, sizeof text - (size_t)len, ">");
    pres_t G;
    nq_t Q;
    nserr_t err;
    slong polls = 0;
    ns_progress_t hook = {count_polls, &polls};
    pres_init(G);
    nq_init(Q);
    nserr_init(err);
    parse_pres_or_fail(G, text);
    if (nq_compute(Q, G, 3, &hook, err) != NS_OK)
        fail_msg("K = %ld: %s", (long)K, err->msg);
    assert_int_equal(Q->hirsch_length, 1);
    assert_int_equal(Q->pcp->n, 5); /* a, b, [b,a], [b,a,a], [b,a,b] */
    fmpz_t M;
    fmpz_init_set_ui(M, 10);
    fmpz_pow_ui(M, M, (ulong)K);
    slong finite = 0;
    for (slong i = 0; i < Q->pcp->n; i++)
        if (!fmpz_is_zero(Q->pcp->relorder + i)) {
            assert_true(fmpz_equal(Q->pcp->relorder + i, M));
            finite++;
        }
    assert_int_equal(finite, 4);
    fmpz_clear(M);
    nq_clear(Q);
    pres_clear(G);
    return polls;
}

/* Issue 8: the size of an exponent must not drive the cost beyond the
 * number of its bits (a^(10^1000) at class 3 took 18.7 s, all in the
 * consistency check, quadratic in the digits).  Counted in collection
 * steps, not timed: four times the digits may cost at most about four
 * times the work. */
static void power_cost_grows_at_most_with_the_bits(void **state)
{
    (void)state;
    slong small = quotient_polls(100), big = quotient_polls(400);
    printf("# <a,b | a^(10^K)> class 3: %ld polls of 2^12 steps for K = 100, %ld for K = 400\n",
           (long)small, (long)big);
    assert_true(big <= 6 * small + 20);
}

/* pcp_consistency_run hands both sides to the callback and stops when it
 * returns nonzero. */
static int count_tests(void *vctx, const fmpz *l, const fmpz *r)
{
    (void)l;
    (void)r;
    (*(slong *)vctx)++;
    return 0;
}

static int stop_at_first(void *vctx, const fmpz *l, const fmpz *r)
{
    (void)l;
    (void)r;
    (*(slong *)vctx)++;
    return 1;
}

static void consistency_run_callback(void **state)
{
    (void)state;
    ctx C;
    ctx_init(&C, groups + 0); /* N(2,4) */
    slong cnt = 0;
    assert_int_equal(pcp_consistency_run(C.Q->pcp, C.W, count_tests, &cnt), 0);
    assert_true(cnt > 0);
    slong one = 0;
    assert_int_equal(pcp_consistency_run(C.Q->pcp, C.W, stop_at_first, &one), 1);
    assert_int_equal(one, 1);
    ctx_clear(&C);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(computed_presentations_are_consistent),
        cmocka_unit_test(group_axioms),
        cmocka_unit_test(powers),
        cmocka_unit_test(commutators_and_conjugates),
        cmocka_unit_test(collect_gen_splits),
        cmocka_unit_test(oracle_sanity),
        cmocka_unit_test(agrees_with_rewriting_oracle),
        cmocka_unit_test(heisenberg_closed_formulas),
        cmocka_unit_test(unitriangular_matrix_model),
        cmocka_unit_test(hall_route_agrees_with_plain_collection),
        cmocka_unit_test(hand_written_consistency),
        cmocka_unit_test(consistency_run_callback),
        cmocka_unit_test(power_cost_grows_at_most_with_the_bits),
    };
    return cmocka_run_group_tests(tests, setup_seed, NULL);
}
