/* test_nq.c — the nilpotent quotient algorithm (nq.h) against published
 * formulas, textbook groups and small derivations written out next to the
 * checks.
 *
 * Sources, each named again beside the check that uses it:
 *  [Witt]   E. Witt, "Treue Darstellung Liescher Ringe", J. reine angew.
 *           Math. 177 (1937): layer n of the free group of rank r is free
 *           abelian of rank (1/n) sum_{d|n} mu(d) r^(n/d).
 *  [Labute] J. P. Labute, "On the descending central series of groups with a
 *           single defining relation", J. Algebra 14 (1970): for the
 *           orientable surface group of genus g, layer n is free abelian of
 *           rank (1/n) sum_{d|n} mu(n/d) sum_{i=0}^{floor(d/2)} (-1)^i
 *           d/(d-i) C(d-i,i) (2g)^(d-2i).
 *  [Gor]    D. Gorenstein, Finite Groups (1968), ch. 5: the dihedral and
 *           generalised quaternion groups of order 2^n have class n-1
 *           (from memory).
 *  [CM]     H. S. M. Coxeter, W. O. J. Moser, Generators and Relations for
 *           Discrete Groups (1957): the binary icosahedral group
 *           <s, t | (s t)^2 = s^3 = t^5> of order 120, which is perfect
 *           (from memory; the order 120 was confirmed independently by
 *           coset enumeration with sympy 1.11, FpGroup.order()).
 *  [SNF]    Smith normal form: Z^n modulo the row lattice of A is
 *           Z^(n - rank A) + sum Z/d_i over the invariant factors d_i > 1;
 *           the small cases below are worked by hand in the comments.
 *  [KM]     M. I. Kargapolov, Ju. I. Merzljakov, Fundamentals of the Theory
 *           of Groups (1979), §16-17: UT(n, Z) is nilpotent of class n-1 and
 *           gamma_j / gamma_(j+1) is free abelian of rank n-j (from memory).
 *
 * Conventions (doc/design.md §2.1): [x,y] = x^-1 y^-1 x y, [x,y,z] = [[x,y],z];
 * layer j = gamma_j / gamma_(j+1). */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <stdio.h>
#include <string.h>

#include <flint/fmpz_mat.h>
#include <flint/nmod_mat.h>
#include <flint/ulong_extras.h>

#include "nq.h"
#include "testutil.h"

/* ------------------------------------------------------------- helpers */

/* Evaluates the word text (in the input generators of Q) into out. */
static void eval_word(const nq_t Q, fmpz *out, const char *text)
{
    expr_t w;
    nserr_t err;
    expr_init(w);
    nserr_init(err);
    if (expr_parse(w, text, 1, 1, Q->pres->gens, err) != NS_OK)
        fail_msg("expr_parse(\"%s\") failed: %s", text, err->msg);
    if (nq_eval(Q, out, w, NULL, err) != NS_OK)
        fail_msg("nq_eval(\"%s\") failed: %s", text, err->msg);
    expr_clear(w);
}

/* Checks layer j (1-based): free rank, and the torsion invariants
 * tors[0..ntors-1] (invariant factors, d_1 | d_2 | ...). */
static void check_layer(const nq_t Q, slong j, slong free_rank, slong ntors, const slong *tors)
{
    assert_true(j >= 1 && j <= Q->nlayers);
    const layer_struct *L = Q->layers + j - 1;
    if (L->free_rank != free_rank || L->ntors != ntors)
        fail_msg("layer %ld: free rank %ld (expected %ld), %ld torsion invariants "
                 "(expected %ld)",
                 (long)j, (long)L->free_rank, (long)free_rank, (long)L->ntors, (long)ntors);
    for (slong k = 0; k < ntors; k++)
        if (!fmpz_equal_si(L->torsion + k, tors[k])) {
            char *s = fmpz_get_str(NULL, 10, L->torsion + k);
            fail_msg("layer %ld: torsion invariant %ld is %s, expected %ld", (long)j, (long)k, s,
                     (long)tors[k]);
        }
}

/* Structural invariants every result must satisfy, whatever the group. */
static void check_shape(const nq_t Q)
{
    const pcp_struct *P = Q->pcp;
    assert_int_equal(Q->nlayers, Q->class_reached);
    assert_true(Q->class_reached <= Q->class_requested);
    slong next = 0, hirsch = 0;
    for (slong j = 1; j <= Q->nlayers; j++) {
        const layer_struct *L = Q->layers + j - 1;
        assert_int_equal(L->weight, j);
        assert_int_equal(L->start, next);
        assert_true(L->count >= 1);
        slong finite = 0;
        for (slong k = L->start; k < L->start + L->count; k++) {
            assert_int_equal(P->weight[k], j);
            if (!fmpz_is_zero(P->relorder + k))
                finite++;
        }
        assert_int_equal(L->free_rank, L->count - finite);
        for (slong k = 0; k < L->ntors; k++) {
            assert_true(fmpz_cmp_si(L->torsion + k, 1) > 0);
            if (k > 0)
                assert_true(fmpz_divisible(L->torsion + k, L->torsion + k - 1));
        }
        hirsch += L->free_rank;
        next += L->count;
    }
    assert_int_equal(next, P->n);
    assert_int_equal(hirsch, Q->hirsch_length);
}

/* Order of the class-c quotient when it is finite: the product of the
 * layers' torsion invariants.  Returns 0 when some layer has free rank. */
static slong quotient_order(const nq_t Q)
{
    slong order = 1;
    for (slong j = 0; j < Q->nlayers; j++) {
        if (Q->layers[j].free_rank)
            return 0;
        for (slong k = 0; k < Q->layers[j].ntors; k++)
            order *= fmpz_get_si(Q->layers[j].torsion + k);
    }
    return order;
}

static int is_identity(const fmpz *u, slong n)
{
    return _fmpz_vec_is_zero(u, n);
}

/* Whether the word text (in the input generators of Q) is 1 in Q. */
static int word_is_trivial(const nq_t Q, const char *text)
{
    slong n = Q->pcp->n;
    fmpz *u = _fmpz_vec_init(n);
    eval_word(Q, u, text);
    int trivial = is_identity(u, n);
    _fmpz_vec_clear(u, n);
    return trivial;
}

/* Q passes check_shape, and its series stabilised at class c. */
static void check_stabilised_at(const nq_t Q, slong c)
{
    check_shape(Q);
    assert_int_equal(Q->class_reached, c);
    assert_int_equal(Q->stabilised, 1);
}

/* Moebius function of n >= 1 by trial division. */
static int moebius(slong n)
{
    int mu = 1;
    for (slong p = 2; p * p <= n; p++)
        if (n % p == 0) {
            n /= p;
            if (n % p == 0)
                return 0;
            mu = -mu;
        }
    if (n > 1)
        mu = -mu;
    return mu;
}

/* [Witt]: rank of layer n of the free group of rank r. */
static void witt_rank(fmpz_t out, ulong r, ulong n)
{
    fmpz_t s, t;
    fmpz_init(s);
    fmpz_init(t);
    for (ulong d = 1; d <= n; d++) {
        if (n % d)
            continue;
        fmpz_set_ui(t, r);
        fmpz_pow_ui(t, t, n / d);
        fmpz_mul_si(t, t, moebius((slong)d));
        fmpz_add(s, s, t);
    }
    fmpz_divexact_ui(out, s, n);
    fmpz_clear(s);
    fmpz_clear(t);
}

/* [Labute]: rank of layer n of the genus-g surface group. */
static void labute_rank(fmpz_t out, ulong g, ulong n)
{
    fmpz_t s, inner, t, b;
    fmpz_init(s);
    fmpz_init(inner);
    fmpz_init(t);
    fmpz_init(b);
    for (ulong d = 1; d <= n; d++) {
        if (n % d)
            continue;
        fmpz_zero(inner);
        for (ulong i = 0; i <= d / 2; i++) {
            /* (-1)^i d/(d-i) C(d-i, i) (2g)^(d-2i); d C(d-i,i) is divisible
             * by d-i, the quotient being C(d-i,i) + C(d-i-1,i-1). */
            fmpz_bin_uiui(b, d - i, i);
            fmpz_mul_ui(b, b, d);
            fmpz_divexact_ui(b, b, d - i);
            fmpz_set_ui(t, 2 * g);
            fmpz_pow_ui(t, t, d - 2 * i);
            fmpz_mul(t, t, b);
            if (i % 2)
                fmpz_sub(inner, inner, t);
            else
                fmpz_add(inner, inner, t);
        }
        fmpz_mul_si(inner, inner, moebius((slong)(n / d)));
        fmpz_add(s, s, inner);
    }
    fmpz_divexact_ui(out, s, n);
    fmpz_clear(s);
    fmpz_clear(inner);
    fmpz_clear(t);
    fmpz_clear(b);
}

/* [Labute] for one relator r in gamma_q(F) \ gamma_(q+1)(F), F free of rank
 * m, whose image in layer q of F (the free Lie ring) is not a proper
 * multiple: layer n of G = F/<<r>> is free abelian of rank
 * c_n = (1/n) sum_{d|n} mu(n/d) s_d, where prod_n (1 - t^n)^(c_n) =
 * 1 - m t + t^q, i.e. the s_d are the power sums with
 * sum_d s_d t^d = -t P'(t) / P(t), P = 1 - m t + t^q:
 * s_1 = m, s_d = m s_(d-1) - s_(d-q) - q [d = q] (s_0 = 0).  For q = 2
 * and m = 2g it is the surface-group formula above. */
static slong one_relator_rank(slong m, slong q, slong n)
{
    slong s[32] = {0};
    assert_true(n < 32);
    for (slong d = 1; d <= n; d++) {
        s[d] = (d == 1 ? m : m * s[d - 1]) - (d > q ? s[d - q] : 0) - (d == q ? q : 0);
    }
    slong sum = 0;
    for (slong d = 1; d <= n; d++)
        if (n % d == 0)
            sum += moebius(n / d) * s[d];
    assert_true(sum % n == 0);
    return sum / n;
}

/* Every layer 1..c of Q is free abelian of the rank rank(j). */
static void check_free_layers(const nq_t Q, slong c, void (*rank)(fmpz_t, ulong, ulong),
                              ulong param, const char *what)
{
    fmpz_t want;
    fmpz_init(want);
    assert_int_equal(Q->class_reached, c);
    assert_int_equal(Q->stabilised, 0);
    check_shape(Q);
    for (slong j = 1; j <= c; j++) {
        rank(want, param, (ulong)j);
        const layer_struct *L = Q->layers + j - 1;
        if (!fmpz_equal_si(want, L->free_rank) || L->ntors != 0) {
            char *s = fmpz_get_str(NULL, 10, want);
            fail_msg("%s: layer %ld has free rank %ld and %ld torsion invariants; "
                     "the formula gives free rank %s, no torsion",
                     what, (long)j, (long)L->free_rank, (long)L->ntors, s);
        }
    }
    fmpz_clear(want);
}

/* ------------------------------------------- the formulas themselves */

/* Guards the C versions of the formulas against the values printed in the
 * literature before the engine is compared with them. */
static void formulas_match_known_values(void **state)
{
    (void)state;
    /* [Witt], rank 2: 2, 1, 2, 3, 6, 9, 18, 30, 56, 99 (the classical table
     * of dimensions of the free Lie algebra on two generators), then 186,
     * 335, 630 (the numbers of binary Lyndon words of length 11..13,
     * OEIS A001037; from memory). */
    static const slong w2[] = {2, 1, 2, 3, 6, 9, 18, 30, 56, 99, 186, 335, 630};
    /* [Witt], rank 3: 3, 3, 8, 18, 48, 116, then 312, 810 (ternary Lyndon
     * words of length 7, 8, OEIS A027376; from memory). */
    static const slong w3[] = {3, 3, 8, 18, 48, 116, 312, 810};
    /* [Labute], genus 2: 4, 5, 16, 45, 144. */
    static const slong l2[] = {4, 5, 16, 45, 144};
    fmpz_t v;
    fmpz_init(v);
    for (ulong n = 1; n <= 13; n++) {
        witt_rank(v, 2, n);
        assert_true(fmpz_equal_si(v, w2[n - 1]));
    }
    for (ulong n = 1; n <= 8; n++) {
        witt_rank(v, 3, n);
        assert_true(fmpz_equal_si(v, w3[n - 1]));
    }
    for (ulong n = 1; n <= 5; n++) {
        labute_rank(v, 2, n);
        assert_true(fmpz_equal_si(v, l2[n - 1]));
    }
    fmpz_clear(v);
}

/* ---------------------------------------------------- free groups */

static void witt_free_rank2_class10(void **state)
{
    (void)state;
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<a, b | >", 10);
    check_free_layers(Q, 10, witt_rank, 2, "free group of rank 2 [Witt]");
    /* 2+1+2+3+6+9+18+30+56+99 */
    assert_int_equal(Q->hirsch_length, 226);
    nq_clear(Q);
}

static void witt_free_rank3_class6(void **state)
{
    (void)state;
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<a, b, c>", 6);
    check_free_layers(Q, 6, witt_rank, 3, "free group of rank 3 [Witt]");
    nq_clear(Q);
}

static void witt_free_rank4_class4(void **state)
{
    (void)state;
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "free(4)", 4);
    check_free_layers(Q, 4, witt_rank, 4, "free group of rank 4 [Witt]");
    nq_clear(Q);
}

/* The family free(3) is the same group as <a, b, c>: same layers and the
 * same labels. */
static void free_family_matches_explicit_presentation(void **state)
{
    (void)state;
    nq_t A, B;
    nq_init(A);
    nq_init(B);
    compute_quotient(A, "free(3)", 4);
    compute_quotient(B, "<a, b, c>", 4);
    assert_int_equal(A->pcp->n, B->pcp->n);
    for (slong k = 0; k < A->pcp->n; k++)
        assert_string_equal(A->labels[k], B->labels[k]);
    nq_clear(A);
    nq_clear(B);
}

/* ------------------------------------------------- surface groups */

static void labute_surface_genus2_class6(void **state)
{
    (void)state;
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<a1, b1, a2, b2 | [a1,b1] [a2,b2]>", 6);
    check_free_layers(Q, 6, labute_rank, 2, "genus-2 surface group [Labute]");
    nq_clear(Q);
}

static void labute_surface_genus3_class4(void **state)
{
    (void)state;
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "surface(3)", 4);
    /* [Labute] with g = 3: 6, 14, 64, 280. */
    check_free_layers(Q, 4, labute_rank, 3, "genus-3 surface group [Labute]");
    nq_clear(Q);
}

/* Genus 1 is Z^2: [Labute] gives rank 0 from layer 2 on, so the series
 * stabilises after class 1. */
static void surface_genus1_is_abelian(void **state)
{
    (void)state;
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<a1, b1 | [a1,b1]>", 5);
    check_stabilised_at(Q, 1);
    check_layer(Q, 1, 2, 0, NULL);
    nq_clear(Q);
}

/* ------------------------------------------------- finite 2-groups */

/* The checks shared by the dihedral and generalised quaternion groups of
 * order 2^n [Gor], for Q computed from text at a class above n - 1: the
 * series stabilises at class n - 1, layer 1 is Z/2 + Z/2, layers 2 .. n-1
 * are Z/2, and the order is 2^n. */
static void check_maximal_class_2group(const nq_t Q, const char *text, int n)
{
    static const slong two2[] = {2, 2}, two[] = {2};
    check_shape(Q);
    if (Q->class_reached != n - 1 || !Q->stabilised)
        fail_msg("%s: class %ld, stabilised %d; expected class %d, stabilised [Gor]", text,
                 (long)Q->class_reached, Q->stabilised, n - 1);
    check_layer(Q, 1, 0, 2, two2);
    for (int j = 2; j <= n - 1; j++)
        check_layer(Q, j, 0, 1, two);
    assert_int_equal(quotient_order(Q), 1 << n);
}

/* [Gor] D_(2^n) = <a, b | a^(2^(n-1)), b^2, (a b)^2>, of order 2^n and
 * class n-1: layer 1 = Z/2 + Z/2, layers 2 .. n-1 = Z/2; asked for a larger
 * class the series stabilises. */
static void dihedral_2groups(void **state)
{
    (void)state;
    for (int n = 3; n <= 7; n++) {
        char text[96];
        snprintf(text, sizeof text, "<a, b | a^%d, b^2, (a b)^2>", 1 << (n - 1));
        nq_t Q;
        nq_init(Q);
        compute_quotient(Q, text, n + 2);
        check_maximal_class_2group(Q, text, n);
        nq_clear(Q);
    }
}

/* D8 exactly as asked for: class 5 requested, class 2 reached. */
static void dihedral8(void **state)
{
    (void)state;
    static const slong two2[] = {2, 2}, two[] = {2};
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<a, b | a^4, b^2, (a b)^2>", 5);
    check_shape(Q);
    assert_int_equal(Q->class_requested, 5);
    assert_int_equal(Q->class_reached, 2);
    assert_int_equal(Q->stabilised, 1);
    check_layer(Q, 1, 0, 2, two2);
    check_layer(Q, 2, 0, 1, two);
    assert_int_equal(quotient_order(Q), 8);
    /* The rotation a has order 4, the reflection b order 2 [Gor]. */
    assert_false(word_is_trivial(Q, "a^2"));
    assert_true(word_is_trivial(Q, "a^4"));
    assert_true(word_is_trivial(Q, "b^2"));
    /* b a b^-1 = a^-1 in D8. */
    assert_true(word_is_trivial(Q, "b a b^-1 a"));
    nq_clear(Q);
}

/* [Gor] Q_(2^n) = <a, b | a^(2^(n-1)), a^(2^(n-2)) = b^2, b^-1 a b = a^-1>,
 * of order 2^n and class n-1; Q8 (n = 3) has class 2. */
static void quaternion_2groups(void **state)
{
    (void)state;
    for (int n = 3; n <= 6; n++) {
        char text[128];
        snprintf(text, sizeof text, "<a, b | a^%d, a^%d = b^2, b^-1 a b = a^-1>", 1 << (n - 1),
                 1 << (n - 2));
        nq_t Q;
        nq_init(Q);
        compute_quotient(Q, text, n + 2);
        check_maximal_class_2group(Q, text, n);
        /* The generalised quaternion group has a single involution, the
         * central a^(2^(n-2)) = b^2; in particular (a b)^2 is not 1, unlike
         * in the dihedral group of the same order. */
        assert_false(word_is_trivial(Q, "(a b)^2"));
        assert_true(word_is_trivial(Q, "(a b)^4"));
        nq_clear(Q);
    }
}

/* ----------------------------------------------- abelian torsion */

/* Z/6 + Z/4 = Z/2 + Z/12 [SNF]: diag(6, 4) has gcd 2 and determinant 24. */
static void abelian_torsion_invariant_factors(void **state)
{
    (void)state;
    static const slong tors[] = {2, 12};
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<a, b | a^6, b^4, [a,b]>", 3);
    check_stabilised_at(Q, 1);
    check_layer(Q, 1, 0, 2, tors);
    assert_int_equal(Q->hirsch_length, 0);
    /* orders in Z/6 + Z/4: a has order 6, a b has order lcm(6, 4) = 12 */
    assert_false(word_is_trivial(Q, "a^3"));
    assert_true(word_is_trivial(Q, "a^6 b^4"));
    assert_true(word_is_trivial(Q, "(a b)^12"));
    assert_false(word_is_trivial(Q, "(a b)^6"));
    nq_clear(Q);
}

/* <a, b | a^2 b^-1, b^2> is Z/4 [SNF]: the exponent-sum matrix
 * [[2, -1], [0, 2]] has entry gcd 1 and determinant 4.  Its echelon form
 * keeps both columns (pivots 2 and 2), so the layer's invariant must come
 * from the whole power-relation block (doc/design.md §9.4), not the pivots. */
static void layer_torsion_from_whole_block(void **state)
{
    (void)state;
    static const slong tors[] = {4};
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<a, b | a^2 b^-1, b^2>", 2);
    check_stabilised_at(Q, 1);
    check_layer(Q, 1, 0, 1, tors);
    assert_false(word_is_trivial(Q, "a^2"));
    assert_true(word_is_trivial(Q, "a^4"));
    nq_clear(Q);
}

/* No redundant pc generators where a relation can drop one (nq.c,
 * drop_redundant_survivors): the count of pc generators is the Hirsch
 * length plus the number of invariant factors.
 *  - <a, b | a^2 b^-1, b^2>: b = a^2, so layer 1 is Z/4 on a alone
 *    (derived by hand; the echelon form kept a of order 2 and b);
 *  - <a, b | a^3 b, b^5>: b = a^-3 and a^15 = 1, Z/15 on one generator
 *    (derived by hand);
 *  - the genus-2 surface group at class 6: Labute's ranks 4, 5, 16, 45,
 *    144, 440 (J. P. Labute, J. Algebra 14, 1970), torsion-free layers, so
 *    exactly 654 pc generators (two relations with a unit entry used to
 *    leave 656). */
static void no_redundant_pc_generators(void **state)
{
    (void)state;
    static const slong z4[] = {4}, z15[] = {15};
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<a, b | a^2 b^-1, b^2>", 2);
    check_layer(Q, 1, 0, 1, z4);
    assert_int_equal(Q->pcp->n, 1);
    nq_clear(Q);
    nq_init(Q);
    compute_quotient(Q, "<a, b | a^3 b, b^5>", 2);
    check_layer(Q, 1, 0, 1, z15);
    assert_int_equal(Q->pcp->n, 1);
    assert_false(word_is_trivial(Q, "a^5"));
    assert_false(word_is_trivial(Q, "a^3"));
    assert_true(word_is_trivial(Q, "a^15"));
    assert_true(word_is_trivial(Q, "b a^3"));
    nq_clear(Q);
    nq_init(Q);
    compute_quotient(Q, "surface(2)", 6);
    static const slong labute[] = {4, 5, 16, 45, 144, 440};
    for (slong j = 1; j <= 6; j++)
        check_layer(Q, j, labute[j - 1], 0, NULL);
    assert_int_equal(Q->hirsch_length, 654);
    assert_int_equal(Q->pcp->n, 654);
    nq_clear(Q);
    /* class 7: [Labute] rank 1440 (labute_rank above), torsion-free, so
       2094 pc generators.  A relation of the layer there has coprime
       entries but no unit (12, 8, 4, 3, 11, 5, ...), which only a
       commutator tail that is no survivor can resolve (it used to leave
       2095). */
    nq_init(Q);
    compute_quotient(Q, "surface(2)", 7);
    fmpz_t r7;
    fmpz_init(r7);
    labute_rank(r7, 2, 7);
    assert_true(fmpz_equal_si(r7, 1440));
    fmpz_clear(r7);
    check_layer(Q, 7, 1440, 0, NULL);
    assert_int_equal(Q->hirsch_length, 2094);
    assert_int_equal(Q->pcp->n, 2094);
    nq_clear(Q);
}

/* ---------------------------- minimal pc generators (product definitions) */

static void expect_same_quotient(const nq_t A, const nq_t B);

/* nq.h: every layer has exactly free rank + number of invariant factors > 1
 * pc generators; the presentation is consistent, and the label of every pc
 * generator, a word in the input generators, evaluates to that generator
 * (labels of product definitions are products in parentheses). */
static void check_minimal(const nq_t Q, const char *what)
{
    check_shape(Q);
    slong want = 0;
    for (slong j = 0; j < Q->nlayers; j++) {
        const layer_struct *L = Q->layers + j;
        if (L->count != L->free_rank + L->ntors)
            fail_msg("%s: layer %ld has %ld pc generators for free rank %ld and %ld "
                     "invariant factors",
                     what, (long)j + 1, (long)L->count, (long)L->free_rank, (long)L->ntors);
        want += L->free_rank + L->ntors;
    }
    assert_int_equal(Q->pcp->n, want);
    slong n = Q->pcp->n;
    pcp_work_t W;
    pcp_work_init(W, Q->pcp);
    if (!pcp_is_consistent(Q->pcp, W))
        fail_msg("%s: the presentation is not consistent", what);
    pcp_work_clear(W);
    fmpz *u = _fmpz_vec_init(FLINT_MAX(n, 1));
    for (slong k = 0; k < n; k++) {
        eval_word(Q, u, Q->labels[k]);
        for (slong i = 0; i < n; i++)
            if (!fmpz_equal_si(u + i, i == k))
                fail_msg("%s: the label %s does not evaluate to pc generator %ld", what,
                         Q->labels[k], (long)k + 1);
    }
    _fmpz_vec_clear(u, FLINT_MAX(n, 1));
}

/* Layers that no single commutators generate minimally (doc/design.md
 * §9.1).  Before product definitions these kept dependent generators:
 * 15 pc generators for Hirsch length 9, 31 for 20, 24 for 20, 89 for 70,
 * 2 for 1 and 2 for Z/6.  Sources of the layer invariants:
 *  - the four one-relator groups: [Labute] with one_relator_rank (the
 *    relator's image in the free Lie ring is 2[a,b,b] + 3[a,b,a], resp.
 *    6[a,b] + 10[a,c] + 15[b,c], 2[a,b] + 5[a,c] + 3[b,c], 2[a,b] + 3[c,d]:
 *    coprime coefficients on basic commutators, so not a proper multiple);
 *    the same values came from a run of the engine before this change;
 *  - <a, b | a^2 b^3>: exponent sums [2 3], Smith form [1 0], so
 *    layer 1 is Z [SNF, by hand], and with a cyclic abelianisation the
 *    series stabilises at class 1;
 *  - <a, b | a^2, b^3>: diag(2, 3) has invariant factors 1, 6: Z/6 [SNF],
 *    abelian, stable at class 1. */
static void minimal_pc_generators(void **state)
{
    (void)state;
    static const struct {
        const char *text;
        slong c, m, q; /* one relator in gamma_q of F of rank m; q = 0: none */
        slong cmin;    /* check_minimal on the prefix of this class: its
                          label words grow long (class 6 of the second
                          group: minutes) */
    } cases[] = {
        {"<a, b | [a,b,b]^2 [a,b,a]^3>", 6, 2, 3, 6},
        /* class 6: its Smith forms once grew to 588,000-bit integers and
           the class did not end; Labute: 3, 2, 5, 10, 24, 50 */
        {"<a, b, c | [a,b]^6 [a,c]^10 [b,c]^15>", 6, 3, 2, 4},
        {"<a, b, c | [a,b]^2 [b,c]^3 [a,c]^5>", 4, 3, 2, 4},
        {"<a, b, c, d | [a,b]^2 [c,d]^3>", 4, 4, 2, 4},
    };
    static const slong hirsch[] = {9, 94, 20, 70};
    for (size_t t = 0; t < sizeof cases / sizeof cases[0]; t++) {
        nq_t Q;
        nq_init(Q);
        compute_quotient(Q, cases[t].text, cases[t].c);
        for (slong j = 1; j <= cases[t].c; j++)
            check_layer(Q, j, one_relator_rank(cases[t].m, cases[t].q, j), 0, NULL);
        assert_int_equal(Q->hirsch_length, hirsch[t]);
        assert_int_equal(Q->pcp->n, hirsch[t]);
        nq_t P;
        nq_init(P);
        nserr_t err;
        nserr_init(err);
        assert_int_equal(nq_set_class(P, Q, cases[t].cmin, 0, NULL, err), NS_OK);
        check_minimal(P, cases[t].text);
        nq_clear(P);
        nq_clear(Q);
    }
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<a, b | a^2 b^3>", 1);
    check_layer(Q, 1, 1, 0, NULL);
    check_minimal(Q, "<a, b | a^2 b^3>");
    assert_int_equal(Q->pcp->n, 1);
    assert_true(word_is_trivial(Q, "a^2 b^3"));
    assert_false(word_is_trivial(Q, "a"));
    assert_false(word_is_trivial(Q, "b"));
    /* a = t^3, b = t^-2 for a generator t of Z (up to sign) */
    assert_true(word_is_trivial(Q, "a^2 b^3"));
    assert_true(word_is_trivial(Q, "(a b)^3 a^-1"));
    nq_clear(Q);
    nq_init(Q);
    compute_quotient(Q, "<a, b | a^2 b^3>", 4);
    check_stabilised_at(Q, 1);
    check_minimal(Q, "<a, b | a^2 b^3> class 4");
    nq_clear(Q);
    nq_init(Q);
    static const slong z6[] = {6};
    compute_quotient(Q, "<a, b | a^2, b^3>", 3);
    check_stabilised_at(Q, 1);
    check_layer(Q, 1, 0, 1, z6);
    check_minimal(Q, "<a, b | a^2, b^3>");
    assert_true(word_is_trivial(Q, "(a b)^6"));
    assert_false(word_is_trivial(Q, "(a b)^3"));
    assert_false(word_is_trivial(Q, "(a b)^2"));
    nq_clear(Q);
}

/* Raising the class above layers whose basis was changed: layer 3 of
 * <a, b | [a,b,b]^2 [a,b,a]^3> is one product of commutators, and layers
 * 4.. are built on it.  Checked against [Labute] (one_relator_rank with
 * m = 2, q = 3: 2, 1, 1, 1, 2, 2, 4), minimality and consistency
 * (check_minimal), nq_set_class from class 3 against nq_compute, and
 * the two collection routes (Hall polynomials and plain collection, pcp.h)
 * on a large power of each pc generator. */
static void raising_the_class_over_a_product_basis(void **state)
{
    (void)state;
    const char *text = "<a, b | [a,b,b]^2 [a,b,a]^3>";
    nq_t lo;
    nq_init(lo);
    compute_quotient(lo, text, 3);
    assert_int_equal(lo->pcp->def[3].kind, PCP_DEF_PROD);
    nserr_t err;
    nserr_init(err);
    for (slong c = 4; c <= 7; c++) {
        nq_t got, want;
        nq_init(got);
        nq_init(want);
        assert_int_equal(nq_set_class(got, lo, c, 0, NULL, err), NS_OK);
        compute_quotient(want, text, c);
        expect_same_quotient(got, want);
        for (slong j = 1; j <= c; j++)
            check_layer(got, j, one_relator_rank(2, 3, j), 0, NULL);
        check_minimal(got, text);
        /* x^e by Hall polynomials and by plain collection agree */
        slong n = got->pcp->n;
        pcp_work_t Wh, Wp;
        pcp_work_init(Wh, got->pcp);
        pcp_work_init(Wp, got->pcp);
        Wp->plain = 1;
        fmpz *x = _fmpz_vec_init(n), *h = _fmpz_vec_init(n), *pl = _fmpz_vec_init(n);
        fmpz_t e;
        fmpz_init_set_si(e, 37);
        for (slong k = 0; k < n; k++) {
            /* a_0 a_k^-1 a_1^2 */
            _fmpz_vec_zero(x, n);
            fmpz_one(x);
            fmpz_sub_ui(x + k, x + k, 1);
            fmpz_t two;
            fmpz_init_set_ui(two, 2);
            pcp_collect_gen(Wh, x, 1, two);
            fmpz_clear(two);
            pcp_elt_pow(Wh, h, x, e);
            pcp_elt_pow(Wp, pl, x, e);
            assert_true(_fmpz_vec_equal(h, pl, n));
        }
        fmpz_clear(e);
        _fmpz_vec_clear(x, n);
        _fmpz_vec_clear(h, n);
        _fmpz_vec_clear(pl, n);
        pcp_work_clear(Wh);
        pcp_work_clear(Wp);
        nq_clear(got);
        nq_clear(want);
    }
    nserr_clear(err);
    nq_clear(lo);
}

/* Random one- and two-relator presentations on two or three generators
 * (powers, commutators and triple commutators with small exponents):
 * the quotient has minimal pc generators (check_minimal), and it is the
 * same group as the route that keeps dependent generators (NQ_KEEP_DEPENDENT,
 * nq.h; the engine before product definitions): the same layer invariants,
 * and random words are trivial in one exactly when they are in the other
 * (normal words are unique, so trivial means the zero vector). */
static void minimal_route_is_the_same_quotient(void **state)
{
    (void)state;
    rng_seed_test("minimal_route_is_the_same_quotient", 20261202ULL,
                  "NILSTEP_SEED replays it");
    static const char *const gens[] = {"a", "b", "c"};
    slong changed = 0, rounds = count_scaled_by("NILSTEP_ITER", 40);
    for (slong it = 0; it < rounds; it++) {
        int X = (int)rng_range(2, 3);
        char text[512], rel[200];
        int len = snprintf(text, sizeof text, "<%s", gens[0]);
        for (int x = 1; x < X; x++)
            len += snprintf(text + len, sizeof text - len, ", %s", gens[x]);
        len += snprintf(text + len, sizeof text - len, " | ");
        int nrel = (int)rng_range(1, 2);
        for (int r = 0; r < nrel; r++) {
            /* two or three blocks with exponents like 2 and 3 make the
               relations that single commutators do not resolve */
            int rl = 0, nblocks = (int)rng_range(2, 3);
            for (int k = 0; k < nblocks; k++) {
                const char *x = gens[rng_range(0, X - 1)], *y = gens[rng_range(0, X - 1)];
                const char *z = gens[rng_range(0, X - 1)];
                /* no units: those relations single commutators resolve */
                static const long ex[] = {2, 3, 4, 5, 6, 10, 15, -2, -3, -5};
                long e = ex[rng_range(0, 9)];
                switch (rng_range(0, 5)) {
                case 0:
                    rl += snprintf(rel + rl, sizeof rel - rl, "%s%s^%ld", k ? " " : "", x, e);
                    break;
                case 1:
                case 2:
                case 3:
                    rl += snprintf(rel + rl, sizeof rel - rl, "%s[%s,%s]^%ld", k ? " " : "", x,
                                   y, e);
                    break;
                default:
                    rl += snprintf(rel + rl, sizeof rel - rl, "%s[%s,%s,%s]^%ld", k ? " " : "",
                                   x, y, z, e);
                }
            }
            len += snprintf(text + len, sizeof text - len, "%s%s", r ? ", " : "", rel);
        }
        snprintf(text + len, sizeof text - len, ">");
        slong c = rng_range(2, X == 2 ? 5 : 4);
        nq_t Q, K;
        nq_init(Q);
        nq_init(K);
        compute_quotient(Q, text, c);
        compute_quotient_flags(K, text, c, NQ_KEEP_DEPENDENT);
        check_minimal(Q, text);
        changed += Q->pcp->n != K->pcp->n;
        assert_int_equal(Q->nlayers, K->nlayers);
        assert_int_equal(Q->stabilised, K->stabilised);
        for (slong j = 0; j < Q->nlayers; j++) {
            const layer_struct *x = Q->layers + j, *y = K->layers + j;
            if (x->free_rank != y->free_rank || x->ntors != y->ntors)
                fail_msg("%s class %ld: layer %ld differs between the routes", text, (long)c,
                         (long)j + 1);
            for (slong k = 0; k < x->ntors; k++)
                assert_true(fmpz_equal(x->torsion + k, y->torsion + k));
        }
        for (int w = 0; w < 8; w++) {
            char word[256];
            int wl = 0, nl = (int)rng_range(1, 10);
            for (int k = 0; k < nl; k++)
                wl += snprintf(word + wl, sizeof word - wl, "%s%s^%ld", k ? " " : "",
                               gens[rng_range(0, X - 1)], rng_range(-3, 3));
            if (w % 2) /* a power of a commutator: lands in the upper layers */
                snprintf(word + wl, sizeof word - wl, " [%s,%s,%s]^%ld", gens[0], gens[1],
                         gens[rng_range(0, X - 1)], rng_range(1, 12));
            if (word_is_trivial(Q, word) != word_is_trivial(K, word))
                fail_msg("%s class %ld: %s is trivial in one route only", text, (long)c, word);
        }
        nq_clear(Q);
        nq_clear(K);
    }
    printf("# minimal_route_is_the_same_quotient: %ld of %ld quotients had dependent "
           "generators on the other route\n",
           (long)changed, (long)rounds);
}

/* <a, b | a^2 b^4>: the exponent-sum matrix is [2 4], so the
 * abelianisation is Z + Z/2 [SNF].
 *
 * Layer 2 (derived by hand): in class 2 commutators are bilinear and
 * a^2 = b^-4 is central, so [b,a]^2 = [b,a^2] = 1; and [b,a] != 1 because
 * a -> reflection, b -> rotation of order 4 maps the group onto D8, where
 * the commutator is nontrivial.  So layer 2 = Z/2.
 *
 * Higher layers (derived by hand): Z = <a^2> is central, and
 * G/Z = <a, b | a^2, b^4> = Z/2 * Z/4 = H.  a^2 maps to 4 under the
 * homomorphism G -> Z, a -> 2, b -> -1, so Z meets gamma_2(G) trivially,
 * and then gamma_k(G)/gamma_(k+1)(G) = gamma_k(H)/gamma_(k+1)(H) for every
 * k >= 2 (Dedekind's law on gamma_k(G) Z / gamma_(k+1)(G) Z).  The check
 * compares the two computations layer by layer. */
static void mixed_torsion_one_relator(void **state)
{
    (void)state;
    static const slong two[] = {2};
    nq_t G, H;
    nq_init(G);
    nq_init(H);
    compute_quotient(G, "<a, b | a^2 b^4>", 6);
    compute_quotient(H, "<a, b | a^2, b^4>", 6);
    check_shape(G);
    check_shape(H);
    check_layer(G, 1, 1, 1, two);
    check_layer(G, 2, 0, 1, two);
    assert_int_equal(G->class_reached, H->class_reached);
    for (slong j = 2; j <= G->class_reached; j++) {
        const layer_struct *x = G->layers + j - 1, *y = H->layers + j - 1;
        assert_int_equal(x->free_rank, y->free_rank);
        assert_int_equal(x->ntors, y->ntors);
        for (slong k = 0; k < x->ntors; k++)
            assert_true(fmpz_equal(x->torsion + k, y->torsion + k));
    }
    /* H's abelianisation is Z/2 + Z/4 [SNF] */
    static const slong t24[] = {2, 4};
    check_layer(H, 1, 0, 2, t24);
    /* The relator holds; a^2 has infinite order (it maps to 4 in Z). */
    assert_true(word_is_trivial(G, "a^2 b^4"));
    assert_false(word_is_trivial(G, "a^2"));
    assert_false(word_is_trivial(G, "a^123456789012345678901234567890"));
    nq_clear(G);
    nq_clear(H);
}

/* --------------------------------------------- torsion-free class 2 */

/* The Heisenberg group: free nilpotent of rank 2 and class 2; layers Z^2
 * and Z ([Witt] with c = 2 and the relators killing weight 3), stable from
 * class 2 on. */
static void heisenberg(void **state)
{
    (void)state;
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<x, y | [x,y,x], [x,y,y]>", 4);
    check_stabilised_at(Q, 2);
    check_layer(Q, 1, 2, 0, NULL);
    check_layer(Q, 2, 1, 0, NULL);
    assert_int_equal(Q->hirsch_length, 3);
    nq_clear(Q);

    /* The (2n+1)-dimensional Heisenberg group: layers Z^(2n) and Z. */
    for (int n = 1; n <= 3; n++) {
        char text[32];
        snprintf(text, sizeof text, "heisenberg(%d)", n);
        nq_init(Q);
        compute_quotient(Q, text, 4);
        check_stabilised_at(Q, 2);
        check_layer(Q, 1, 2 * n, 0, NULL);
        check_layer(Q, 2, 1, 0, NULL);
        nq_clear(Q);
    }
}

/* The Heisenberg group with [x,y]^3 = 1: layers Z^2 and Z/3. */
static void heisenberg_mod3(void **state)
{
    (void)state;
    static const slong three[] = {3};
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<x, y | [x,y]^3, [x,y,x], [x,y,y]>", 4);
    check_stabilised_at(Q, 2);
    check_layer(Q, 1, 2, 0, NULL);
    check_layer(Q, 2, 0, 1, three);
    nq_clear(Q);
}

/* [KM] UT(4, Z): class 3, layers Z^3, Z^2, Z. */
static void unitriangular4(void **state)
{
    (void)state;
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "unitriangular(4)", 6);
    check_stabilised_at(Q, 3);
    check_layer(Q, 1, 3, 0, NULL);
    check_layer(Q, 2, 2, 0, NULL);
    check_layer(Q, 3, 1, 0, NULL);
    nq_clear(Q);
}

/* doc/design.md §9.4 names <a, b | c = [b,a] central, a^2 = c> as a group
 * whose layer torsion does not lift.  Derived by hand: the group is
 * nilpotent of class 2, and since c = [b,a] is central, [b, a^k] = c^k; as
 * a^2 = c is central too, c^2 = [b,a^2] = 1.  The exponent sums give layer 1
 * = Z + Z/2 (c = 0 and 2a = 0), and layer 2 = <c> = Z/2: c != 1 because
 * a -> r, b -> s, c -> r^2 maps the group onto D8 = <r, s | r^4, s^2,
 * (r s)^2>, where [s,r] = s r^-1 s r = r^2 is central of order 2.  Hence a
 * has order exactly 4 (a^2 = c != 1, a^4 = c^2 = 1), and b infinite order. */
static void hidden_torsion_example(void **state)
{
    (void)state;
    static const slong two[] = {2};
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<a, b, c | c = [b,a], [c,a], [c,b], a^2 = c>", 5);
    check_stabilised_at(Q, 2);
    check_layer(Q, 1, 1, 1, two);
    check_layer(Q, 2, 0, 1, two);
    assert_int_equal(Q->hirsch_length, 1);
    assert_false(word_is_trivial(Q, "a^2"));
    assert_true(word_is_trivial(Q, "a^2 c^-1"));
    assert_true(word_is_trivial(Q, "a^4"));
    assert_false(word_is_trivial(Q, "b^1000"));
    nq_clear(Q);
}

/* Layer torsion that does not lift (derived by hand): in
 * <x, y, z | [y,x] = z^2, [z,x], [z,y]> the exponent sums give layer 1
 * = Z^2 + Z/2 (z is a commutator's square root: 2z = 0), yet z has infinite
 * order.  Proof: x -> I + E12, y -> I + E23, z -> I - E13/2 (3 x 3 upper
 * unitriangular matrices over Z[1/2]) satisfies the relations, as
 * [I + E23, I + E12] = I - E13, and z maps to an element of infinite order.
 * Layer 2 = <[y,x]> = <z^2> = Z, and the group has class 2. */
static void layer_torsion_need_not_lift(void **state)
{
    (void)state;
    static const slong two[] = {2};
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<x, y, z | [y,x] = z^2, [z,x], [z,y]>", 4);
    check_stabilised_at(Q, 2);
    check_layer(Q, 1, 2, 1, two);
    check_layer(Q, 2, 1, 0, NULL);
    slong n = Q->pcp->n;
    fmpz *u = _fmpz_vec_init(n), *v = _fmpz_vec_init(n);
    eval_word(Q, u, "z^2");
    eval_word(Q, v, "[y,x]");
    assert_true(_fmpz_vec_equal(u, v, n));
    assert_false(is_identity(u, n));
    assert_false(word_is_trivial(Q, "z^1000000"));
    _fmpz_vec_clear(u, n);
    _fmpz_vec_clear(v, n);
    nq_clear(Q);
}

/* ------------------------------------------------- perfect groups */

/* [CM] The binary icosahedral group <s, t | (s t)^2 = s^3 = t^5> is perfect:
 * the exponent-sum matrix [[-1, 2], [3, -5]] has determinant -1. */
static void binary_icosahedral_is_perfect(void **state)
{
    (void)state;
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<s, t | (s t)^2 = s^3, s^3 = t^5>", 4);
    check_stabilised_at(Q, 0);
    assert_int_equal(Q->nlayers, 0);
    assert_int_equal(Q->pcp->n, 0);
    assert_int_equal(Q->hirsch_length, 0);
    nq_clear(Q);
}

/* <s, t | s^2 = t^3, s^2 = (s t)^5> is NOT perfect: the exponent-sum
 * matrix [[2, -3], [-3, -5]] has determinant -19, so the abelianisation is
 * Z/19 [SNF].  A cyclic abelianisation forces gamma_2 = gamma_3 (layer 2 is
 * spanned by the images of [x,y] for generators x, y, which are bilinear and
 * alternating in the cyclic layer 1), so the series stabilises at class 1. */
static void triangle_presentation_with_cyclic_abelianisation(void **state)
{
    (void)state;
    static const slong t19[] = {19};
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<s, t | s^2 = t^3, s^2 = (s t)^5>", 4);
    check_stabilised_at(Q, 1);
    check_layer(Q, 1, 0, 1, t19);
    nq_clear(Q);
}

/* ---------------------------------------------------------- labels */

/* Our labelling convention: a layer-j generator defined as [a_k, a_i] with
 * a_i of weight 1 is labelled by the left-normed commutator of the labels. */
static void labels_free_nilpotent_2_3(void **state)
{
    (void)state;
    static const char *want[] = {"a", "b", "[b,a]", "[b,a,a]", "[b,a,b]"};
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<a, b>", 3);
    assert_int_equal(Q->pcp->n, 5);
    for (slong k = 0; k < 5; k++)
        assert_string_equal(Q->labels[k], want[k]);
    /* and the labels mean what they say: the pc generator labelled [b,a]
     * is the commutator b^-1 a^-1 b a of the images, and so on. */
    fmpz *u = _fmpz_vec_init(5);
    for (slong k = 2; k < 5; k++) {
        eval_word(Q, u, want[k]);
        for (slong l = 0; l < 5; l++)
            assert_true(fmpz_equal_si(u + l, l == k));
    }
    eval_word(Q, u, "b^-1 a^-1 b a");
    assert_true(fmpz_is_one(u + 2));
    char *s = nq_elt_get_str(Q, u);
    assert_string_equal(s, "[b,a]");
    flint_free(s);
    eval_word(Q, u, "a^2 [b,a]^-3");
    s = nq_elt_get_str(Q, u);
    assert_string_equal(s, "a^2 [b,a]^-3");
    flint_free(s);
    _fmpz_vec_clear(u, 5);
    nq_clear(Q);
}

/* ---------------------------------------------------------- images */

/* In every quotient of the genus-2 surface group [a1,b1] [a2,b2] = 1, so
 * [a1,b1] is the inverse of [a2,b2]; both are nontrivial in class 2 (they
 * survive in the abelian layer 2 of rank 5 [Labute]). */
static void eval_surface_relator(void **state)
{
    (void)state;
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "surface(2)", 2);
    slong n = Q->pcp->n;
    fmpz *x = _fmpz_vec_init(n), *y = _fmpz_vec_init(n), *z = _fmpz_vec_init(n);
    eval_word(Q, x, "[a1,b1]");
    eval_word(Q, y, "[a2,b2]^-1");
    assert_true(_fmpz_vec_equal(x, y, n));
    assert_false(is_identity(x, n));
    eval_word(Q, z, "[a1,b1] [a2,b2]");
    assert_true(is_identity(z, n));
    /* [a1,a2] is independent of [a1,b1] in layer 2 */
    eval_word(Q, z, "[a1,a2]");
    assert_false(is_identity(z, n));
    assert_false(_fmpz_vec_equal(x, z, n));
    /* weight-1 images are the basis of layer 1 */
    eval_word(Q, z, "a1 b1 a2 b2");
    for (slong k = 0; k < 4; k++)
        assert_true(fmpz_is_one(z + k));
    _fmpz_vec_clear(x, n);
    _fmpz_vec_clear(y, n);
    _fmpz_vec_clear(z, n);
    nq_clear(Q);
}

/* ------------------------------------------------ cancel and limits */

typedef struct {
    int calls;
    int cancel_at; /* cancel on this call (1-based); 0 = never */
} cancel_ctx;

static int cancel_hook(void *vctx, const char *stage, double fraction)
{
    (void)stage;
    (void)fraction;
    cancel_ctx *c = vctx;
    c->calls++;
    return c->cancel_at && c->calls >= c->cancel_at;
}

static void assert_empty(const nq_t Q)
{
    assert_int_equal(Q->class_reached, 0);
    assert_int_equal(Q->nlayers, 0);
    assert_null(Q->layers);
    assert_null(Q->images);
    assert_null(Q->labels);
    assert_int_equal(Q->pcp->n, 0);
}

/* Cancelling at every one of the hook's calls; the second presentation's
 * layer 2 has a relation without a unit (2 [a,b] + 5 [a,c] + 3 [b,c] on
 * the tails), so its class step re-eliminates the survivors
 * (requotient_survivors) and is stopped inside that too. */
static void cancel_at_each_call(const char *text, slong cls);

static void cancel_leaves_nq_empty(void **state)
{
    (void)state;
    cancel_at_each_call("<a, b, c | [a,b] c^2>", 5);
    cancel_at_each_call("<a, b, c | [a,b]^2 [b,c]^3 [a,c]^5>", 3);
}

static void cancel_at_each_call(const char *text, slong cls)
{
    pres_t p;
    nserr_t err;
    pres_init(p);
    nserr_init(err);
    parse_pres_or_fail(p, text);
    /* How many times does an uncancelled run ask? */
    cancel_ctx count = {0, 0};
    ns_progress_t prog = {cancel_hook, &count};
    nq_t Q;
    nq_init(Q);
    assert_int_equal(nq_compute(Q, p, cls, &prog, err), NS_OK);
    assert_true(count.calls >= 2);
    int total = count.calls;
    /* Cancelling at each of those calls stops the run, empties Q (which held
     * a result before) and leaks nothing (checked by make asan). */
    for (int k = 1; k <= total; k++) {
        cancel_ctx cc = {0, k};
        ns_progress_t pk = {cancel_hook, &cc};
        nserr_init(err);
        ns_status st = nq_compute(Q, p, cls, &pk, err);
        if (st != NS_ERR_CANCELLED)
            fail_msg("cancel at call %d of %d: status %d", k, total, (int)st);
        assert_empty(Q);
    }
    nq_clear(Q);
    pres_clear(p);
}

/* Long collections poll the hook with a NULL stage (pcp.h: every 2^16
 * steps); free(2) at class 10 runs well over a million steps, so the polls
 * happen, and answering one of them with 1 must cancel the run. */
typedef struct {
    int polls;
} poll_ctx;

static int cancel_on_poll(void *vctx, const char *stage, double fraction)
{
    (void)fraction;
    poll_ctx *c = vctx;
    if (stage != NULL)
        return 0;
    c->polls++;
    return 1;
}

static void cancel_during_collection(void **state)
{
    (void)state;
    pres_t p;
    nserr_t err;
    pres_init(p);
    nserr_init(err);
    parse_pres_or_fail(p, "<a, b>");
    poll_ctx pc = {0};
    ns_progress_t prog = {cancel_on_poll, &pc};
    nq_t Q;
    nq_init(Q);
    ns_status st = nq_compute(Q, p, 10, &prog, err);
    assert_int_equal(pc.polls, 1);
    assert_int_equal(st, NS_ERR_CANCELLED);
    assert_empty(Q);
    nq_clear(Q);
    pres_clear(p);
}

/* The layer-basis phase of a step (dropping dependent survivors, swapping
 * in commutator tails, the Smith form of a layer) can be long: on
 * <a, b, c | [a,b]^6 [a,c]^10 [b,c]^15> at class 6 its integers grew to
 * about 588,000 bits, and it went minutes without calling the hook, so
 * Esc in the explorer could not stop it.  It reports its own stage and
 * polls with a NULL stage throughout (every NQ_POLL_WORK limb operations,
 * nq.c, and once as each of its routines starts): a cancel asked on the
 * k-th of those polls must stop the run there, with NS_ERR_CANCELLED, an
 * empty result and no further call of the hook.  Both routes (Smith form,
 * and NQ_KEEP_DEPENDENT, which has no Smith form but the same re-eliminations).
 * Before the polls were there the run did not stop (it hung in the phase
 * for over five minutes). */
typedef struct {
    int in_phase;  /* the stage "class 6: layer basis" was reported */
    int polls;     /* NULL-stage polls since then */
    int cancel_at; /* cancel on this poll of the phase */
    int after;     /* calls of the hook after it asked to stop */
    int left;      /* another stage came after the phase */
} phase_ctx;

static int cancel_in_layer_basis(void *vctx, const char *stage, double fraction)
{
    (void)fraction;
    phase_ctx *c = vctx;
    if (c->polls >= c->cancel_at) {
        c->after++;
        return 1;
    }
    if (stage != NULL) {
        if (c->in_phase)
            c->left = 1;
        c->in_phase = strcmp(stage, "class 6: layer basis") == 0;
        return 0;
    }
    if (!c->in_phase)
        return 0;
    c->polls++;
    return c->polls >= c->cancel_at;
}

static void cancel_during_layer_basis(void **state)
{
    (void)state;
    const char *text = "<a, b, c | [a,b]^6 [a,c]^10 [b,c]^15>";
    pres_t p;
    nserr_t err;
    pres_init(p);
    parse_pres_or_fail(p, text);
    static const int flags[] = {0, NQ_KEEP_DEPENDENT};
    static const int at[] = {1, 2, 8};
    for (size_t f = 0; f < sizeof flags / sizeof flags[0]; f++)
        for (size_t k = 0; k < sizeof at / sizeof at[0]; k++) {
            phase_ctx pc = {0, 0, at[k], 0, 0};
            ns_progress_t prog = {cancel_in_layer_basis, &pc};
            nq_t Q;
            nq_init(Q);
            nserr_init(err);
            ns_status st = nq_compute_flags(Q, p, 6, 0, flags[f], &prog, err);
            if (st != NS_ERR_CANCELLED || pc.left || pc.after != 0)
                fail_msg("%s, flags %d, cancel at poll %d of the layer basis of class 6: "
                         "status %d, %d polls, phase left %d, %d calls after the cancel",
                         text, flags[f], at[k], (int)st, pc.polls, pc.left, pc.after);
            assert_empty(Q);
            nq_clear(Q);
        }
    pres_clear(p);
    /* surface(2) at class 6: polls 3 to 18 of its layer basis fall where
     * requotient_survivors rewrites the tails' expressions in place (found
     * by counting them on the build of this test); a stop there must leave
     * nothing half rewritten behind (make asan) */
    pres_init(p);
    parse_pres_or_fail(p, "<a, b, c, d | [a,b] [c,d]>");
    static const int at_surface[] = {3, 10};
    for (size_t k = 0; k < sizeof at_surface / sizeof at_surface[0]; k++) {
        phase_ctx pc = {0, 0, at_surface[k], 0, 0};
        ns_progress_t prog = {cancel_in_layer_basis, &pc};
        nq_t Q;
        nq_init(Q);
        nserr_init(err);
        ns_status st = nq_compute(Q, p, 6, &prog, err);
        if (st != NS_ERR_CANCELLED || pc.left || pc.after != 0)
            fail_msg("surface(2), cancel at poll %d of the layer basis of class 6: status %d, "
                     "%d polls, phase left %d, %d calls after the cancel",
                     at_surface[k], (int)st, pc.polls, pc.left, pc.after);
        assert_empty(Q);
        nq_clear(Q);
    }
    pres_clear(p);
}

static void bad_class_is_input_error(void **state)
{
    (void)state;
    pres_t p;
    nserr_t err;
    pres_init(p);
    parse_pres_or_fail(p, "<a, b | a^4, b^2, (a b)^2>");
    nq_t Q;
    nq_init(Q);
    static const slong bad[] = {0, -1, NQ_MAX_CLASS + 1, 65, 1000};
    for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
        nserr_init(err);
        assert_int_equal(nq_compute(Q, p, bad[k], NULL, err), NS_ERR_INPUT);
        assert_int_equal(err->status, NS_ERR_INPUT);
        assert_true(strlen(err->msg) > 0);
        assert_empty(Q);
    }
    /* The bounds themselves are accepted. */
    nserr_init(err);
    assert_int_equal(nq_compute(Q, p, 1, NULL, err), NS_OK);
    assert_int_equal(Q->class_reached, 1);
    assert_int_equal(Q->stabilised, 0);
    assert_int_equal(nq_compute(Q, p, NQ_MAX_CLASS, NULL, err), NS_OK);
    assert_int_equal(Q->class_reached, 2);
    assert_int_equal(Q->stabilised, 1);
    nq_clear(Q);
    pres_clear(p);
}

/* Recomputing into the same nq_t replaces the old result. */
static void recompute_replaces_result(void **state)
{
    (void)state;
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<a, b>", 4);
    compute_quotient(Q, "<x, y | [x,y,x], [x,y,y]>", 4);
    assert_int_equal(Q->class_reached, 2);
    assert_int_equal(Q->pcp->n, 3);
    assert_string_equal(Q->labels[2], "[y,x]");
    compute_quotient(Q, "<a, b | a^6, b^4, [a,b]>", 2);
    assert_int_equal(Q->class_reached, 1);
    nq_clear(Q);
    nq_clear(Q); /* clearing twice is harmless */
}

/* ------------------------------------------------ deeper references */

/* Witt (1937) at the depth the faster collection reaches in the normal
 * suite: free(3) to class 8 (1318 pc generators). */
static void witt_free_rank3_class8(void **state)
{
    (void)state;
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<a, b, c>", 8);
    check_free_layers(Q, 8, witt_rank, 3, "free group of rank 3 [Witt]");
    nq_clear(Q);
}

/* Witt (1937) at class 13 of free(2): 1377 pc generators, the deepest
 * target of the benchmarks.  Ranks 2, 1, 2, 3, 6, 9, 18, 30, 56, 99, 186,
 * 335, 630 (formulas_match_known_values guards the formula itself).  Long
 * (seconds in a release build, minutes under the sanitizers): it runs as
 * `test_nq --slow`, the ctest test test_nq_slow with the label slow, which
 * `make test` and `make asan` leave out and `make test-slow` runs. */
static void witt_free_rank2_class13(void **state)
{
    (void)state;
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, "<a, b>", 13);
    check_free_layers(Q, 13, witt_rank, 2, "free group of rank 2 [Witt]");
    assert_int_equal(Q->pcp->n, 1377);
    nq_clear(Q);
}

/* Layer invariants as counts of 2, 4 and 8 (all layers are finite 2-groups
 * here): {n2, n4, n8} per layer. */
static void check_two_group_layers(const char *text, slong c, const slong (*want)[3])
{
    nq_t Q;
    nq_init(Q);
    compute_quotient(Q, text, c);
    assert_int_equal(Q->class_reached, c);
    for (slong j = 1; j <= c; j++) {
        slong tors[64], nt = 0;
        for (int e = 0; e < 3; e++)
            for (slong k = 0; k < want[j - 1][e]; k++)
                tors[nt++] = 2 << e;
        check_layer(Q, j, 0, nt, tors);
    }
    nq_clear(Q);
}

/* <a, b | a^4, b^4> to class 9 and <a, b | a^8, b^8> to class 8.  The values
 * are from a run of the engine as it was before the modular elimination
 * (commit 7260913): a^4, b^4 up to class 9 (27 s then) and a^8, b^8 up to
 * class 7; a^8, b^8 class 8 never finished with it (killed at 300 s), so its
 * last layer is from the current engine only.  Layer 1 is Z/4 + Z/4 (resp.
 * Z/8 + Z/8) and layer 2 Z/4 (Z/8) by hand: the abelianisation, and
 * [a,b] of order dividing 4 since [a,b]^4 = [a^4,b] modulo gamma_3. */
static void two_generator_exponent_4_and_8(void **state)
{
    (void)state;
    static const slong four[9][3] = {{0, 2, 0}, {0, 1, 0}, {1, 1, 0}, {2, 1, 0}, {5, 1, 0},
                                     {7, 1, 0}, {15, 1, 0}, {22, 1, 0}, {41, 1, 0}};
    static const slong eight[8][3] = {{0, 0, 2}, {0, 0, 1}, {0, 1, 1},  {0, 2, 1},
                                      {0, 5, 1}, {1, 7, 1}, {2, 15, 1}, {7, 22, 1}};
    check_two_group_layers("<a, b | a^4, b^4>", 9, four);
    check_two_group_layers("<a, b | a^8, b^8>", 8, eight);
}

/* ------------------------------------------- prefixes and extensions */

static void expect_same_word(const pcw_struct *a, const pcw_struct *b, const char *what, slong k,
                             slong i)
{
    int same = a->len == b->len;
    for (slong t = 0; same && t < a->len; t++)
        same = a->gen[t] == b->gen[t] && fmpz_equal(a->exp + t, b->exp + t);
    if (!same)
        fail_msg("%s (%ld, %ld) differs", what, (long)k, (long)i);
}

/* Two quotients are the same presentation: generators, weights, relative
 * orders, every relation and derived table, definitions, labels, images
 * and layers. */
static void expect_same_quotient(const nq_t A, const nq_t B)
{
    const pcp_struct *P = A->pcp, *R = B->pcp;
    assert_int_equal(A->class_reached, B->class_reached);
    assert_int_equal(A->stabilised, B->stabilised);
    assert_int_equal(P->n, R->n);
    if (P->maxweight != R->maxweight)
        fail_msg("maxweight %ld != %ld (n %ld, reached %ld)", (long)P->maxweight, (long)R->maxweight, (long)P->n, (long)A->class_reached);
    assert_int_equal(P->ncore, R->ncore);
    assert_int_equal(P->torsion_free, R->torsion_free);
    for (slong k = 0; k < P->n; k++) {
        assert_int_equal(P->weight[k], R->weight[k]);
        assert_true(fmpz_equal(P->relorder + k, R->relorder + k));
        assert_int_equal(P->def[k].kind, R->def[k].kind);
        assert_int_equal(P->def[k].a, R->def[k].a);
        assert_int_equal(P->def[k].b, R->def[k].b);
        assert_int_equal(P->def[k].len, R->def[k].len);
        for (slong t = 0; t < P->def[k].len; t++) {
            assert_int_equal(P->def[k].ta[t], R->def[k].ta[t]);
            assert_int_equal(P->def[k].tb[t], R->def[k].tb[t]);
            assert_true(fmpz_equal(P->def[k].exp + t, R->def[k].exp + t));
        }
        assert_int_equal(P->commute_from[k], R->commute_from[k]);
        assert_string_equal(A->labels[k], B->labels[k]);
        expect_same_word(P->pow + k, R->pow + k, "power", k, k);
        expect_same_word(P->powinv + k, R->powinv + k, "inverse power", k, k);
    }
    for (slong k = 1; k < P->ncore; k++)
        for (slong i = 0; i < k; i++) {
            slong s = pcp_slot(k, i);
            assert_int_equal(P->trivial[s], R->trivial[s]);
            if (P->trivial[s])
                continue;
            expect_same_word(P->conj + s, R->conj + s, "conjugate", k, i);
            expect_same_word(P->conjinv + s, R->conjinv + s, "inverse conjugate", k, i);
            expect_same_word(P->conjm + s, R->conjm + s, "conjugate by inverse", k, i);
            expect_same_word(P->conjminv + s, R->conjminv + s, "its inverse", k, i);
        }
    assert_true(_fmpz_vec_equal(A->images, B->images, A->pres->gens->n * P->n));
    assert_int_equal(A->hirsch_length, B->hirsch_length);
    assert_int_equal(A->nlayers, B->nlayers);
    for (slong j = 0; j < A->nlayers; j++) {
        assert_int_equal(A->layers[j].free_rank, B->layers[j].free_rank);
        assert_int_equal(A->layers[j].ntors, B->layers[j].ntors);
    }
}

/* nq.h: nq_set_class gives what nq_compute gives, lowering (a prefix, no
 * collection) and raising (extending the quotient it has); checked on free,
 * one-relator, torsion and stabilising groups. */
static void set_class_is_compute(void **state)
{
    (void)state;
    static const struct {
        const char *text;
        slong lo, hi;
    } cases[] = {
        {"<a, b>", 3, 6},
        {"<a1, b1, a2, b2 | [a1,b1] [a2,b2]>", 2, 4},
        {"<a, b | a^4, b^4>", 3, 6},
        {"<a, b | a^2 b^4>", 2, 5},
        {"<a, b | a^8, a^4 = b^2, b^-1 a b = a^-1>", 2, 6}, /* Q16: stabilises at 4 */
        {"<a, b | [a,b]>", 1, 3},                            /* abelian: stabilises at 1 */
        {"<a | a>", 1, 2},                                   /* trivial */
    };
    for (size_t t = 0; t < sizeof cases / sizeof cases[0]; t++) {
        nq_t lo, hi, got;
        nq_init(lo);
        nq_init(hi);
        nq_init(got);
        compute_quotient(lo, cases[t].text, cases[t].lo);
        compute_quotient(hi, cases[t].text, cases[t].hi);
        nserr_t err;
        nserr_init(err);
        /* raising: lo extended to hi's class */
        assert_int_equal(nq_set_class(got, lo, cases[t].hi, 0, NULL, err), NS_OK);
        expect_same_quotient(got, hi);
        /* lowering: the prefix of hi at lo's class and at every class */
        for (slong c = 1; c <= cases[t].hi; c++) {
            nq_t want;
            nq_init(want);
            compute_quotient(want, cases[t].text, c);
            assert_int_equal(nq_set_class(got, hi, c, 0, NULL, err), NS_OK);
            expect_same_quotient(got, want);
            nq_clear(want);
        }
        nserr_clear(err);
        nq_clear(lo);
        nq_clear(hi);
        nq_clear(got);
    }
}

/* nq.h: a step that may exceed the limit is not started; the classes
 * below it come back complete with NS_ERR_LIMIT.  free(2) has 2, 3, 5, 8,
 * 14, 23 pc generators up to classes 1..6 (Witt 1937: 2, 1, 2, 3, 6, 9),
 * and the bound before class 6 is 14 + 2 * 6 = 26. */
static void limit_refuses_before_the_work(void **state)
{
    (void)state;
    pres_t p;
    pres_init(p);
    parse_pres_or_fail(p, "<a, b>");
    nserr_t err;
    nserr_init(err);
    nq_t Q;
    nq_init(Q);
    assert_int_equal(nq_compute_max(Q, p, 8, 25, NULL, err), NS_ERR_LIMIT);
    assert_int_equal(Q->class_reached, 5);
    assert_int_equal(Q->pcp->n, 14);
    assert_int_equal(Q->nlayers, 5);
    assert_non_null(strstr(err->msg, "class 6"));
    assert_int_equal(nq_compute_max(Q, p, 8, 26, NULL, err), NS_ERR_LIMIT);
    assert_int_equal(Q->class_reached, 6);
    assert_int_equal(Q->pcp->n, 23);
    assert_int_equal(nq_compute_max(Q, p, 6, 26, NULL, err), NS_OK);
    assert_int_equal(Q->class_reached, 6);
    /* extending runs into the same limit */
    nq_t R;
    nq_init(R);
    assert_int_equal(nq_set_class(R, Q, 8, 30, NULL, err), NS_ERR_LIMIT);
    assert_int_equal(R->class_reached, 6);
    nq_clear(R);
    nq_clear(Q);
    nserr_clear(err);
    pres_clear(p);
}

/* nq.h: nq_tail_relations_get_mat hands out the relation matrix of a class
 * step as the engine builds it.  For a free group every tail relation
 * comes from a consistency test (there are no relators), no power or image
 * tail exists, and the quotient of the tails by the relations is the new
 * layer, free of the rank [Witt] gives; so the matrix has one column per
 * commutator tail and rank (columns) - (Witt rank of layer c+1), over Q
 * and mod any prime (the quotient has no torsion).  The tail count follows
 * nq.h: in step c -> c+1 every [a_k, a_i] with a_k of weight c and a_i of
 * weight 1, and every other pair of weight <= c+1 that is not a definition.
 *   free(2), step 3 -> 4: pc generators a, b, [b,a], [b,a,a], [b,a,b];
 *     the pairs of weight <= 4 that are not definitions are the four
 *     (weight 3, weight 1) pairs: 4 columns, Witt rank of layer 4 =
 *     (2^4 - 2^2)/4 = 3, so rank 1 (the Jacobi identity).
 *   free(3), step 2 -> 3: nine (weight 2, weight 1) pairs, Witt rank of
 *     layer 3 = (3^3 - 3)/3 = 8, so rank 1.
 *   free(2), step 4 -> 5: weights 1,1,2,3,3,4,4,4; six (weight 4,
 *     weight 1) pairs, the two (weight 3, weight 2) pairs, and of the four
 *     (weight 3, weight 1) pairs the one that defines no generator of
 *     layer 4: 9 columns, Witt rank of layer 5 = (2^5 - 2)/5 = 6, rank 3.
 * A matrix cut by the entry cap is refused with NS_ERR_LIMIT. */
static slong rank_mod_word_prime(const fmpz_mat_t R)
{
    mp_limb_t p = n_nextprime(UWORD(1) << 62, 1);
    nmod_mat_t M;
    nmod_mat_init(M, fmpz_mat_nrows(R), fmpz_mat_ncols(R), p);
    fmpz_mat_get_nmod_mat(M, R);
    slong r = nmod_mat_rank(M);
    nmod_mat_clear(M);
    return r;
}

static void tail_relations_have_witt_rank(void **state)
{
    (void)state;
    static const struct {
        const char *text;
        slong c, cols, witt; /* step c -> c+1; columns; [Witt] rank of layer c+1 */
    } cases[] = {
        {"<a, b>", 3, 4, 3},
        {"<a, b, c>", 2, 9, 8},
        {"<a, b>", 4, 9, 6},
    };
    nserr_t err;
    nserr_init(err);
    for (size_t t = 0; t < sizeof cases / sizeof cases[0]; t++) {
        pres_t p;
        pres_init(p);
        parse_pres_or_fail(p, cases[t].text);
        nq_t Q;
        nq_init(Q);
        assert_int_equal(nq_compute(Q, p, cases[t].c + 1, NULL, err), NS_OK);
        fmpz_mat_t R;
        fmpz_mat_init(R, 0, 0);
        assert_int_equal(nq_tail_relations_get_mat(R, Q, cases[t].c, 0, err), NS_OK);
        assert_int_equal(fmpz_mat_ncols(R), cases[t].cols);
        assert_true(fmpz_mat_nrows(R) > 0);
        assert_int_equal(rank_mod_word_prime(R), fmpz_mat_ncols(R) - cases[t].witt);
        assert_int_equal(fmpz_mat_rank(R), fmpz_mat_ncols(R) - cases[t].witt);
        /* a cap below the size is refused */
        assert_int_equal(nq_tail_relations_get_mat(R, Q, cases[t].c, 1, err), NS_ERR_LIMIT);
        /* steps outside the quotient are input errors */
        assert_int_equal(nq_tail_relations_get_mat(R, Q, cases[t].c + 1, 0, err), NS_ERR_INPUT);
        assert_int_equal(nq_tail_relations_get_mat(R, Q, 0, 0, err), NS_ERR_INPUT);
        fmpz_mat_clear(R);
        nq_clear(Q);
        pres_clear(p);
    }
    nserr_clear(err);
}

int main(int argc, char **argv)
{
    if (argc > 1 && strcmp(argv[1], "--slow") == 0) {
        const struct CMUnitTest slow[] = {
            cmocka_unit_test(witt_free_rank2_class13),
        };
        return cmocka_run_group_tests(slow, NULL, NULL);
    }
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(set_class_is_compute),
        cmocka_unit_test(tail_relations_have_witt_rank),
        cmocka_unit_test(witt_free_rank3_class8),
        cmocka_unit_test(two_generator_exponent_4_and_8),
        cmocka_unit_test(limit_refuses_before_the_work),
        cmocka_unit_test(formulas_match_known_values),
        cmocka_unit_test(witt_free_rank2_class10),
        cmocka_unit_test(witt_free_rank3_class6),
        cmocka_unit_test(witt_free_rank4_class4),
        cmocka_unit_test(free_family_matches_explicit_presentation),
        cmocka_unit_test(labute_surface_genus2_class6),
        cmocka_unit_test(labute_surface_genus3_class4),
        cmocka_unit_test(surface_genus1_is_abelian),
        cmocka_unit_test(dihedral8),
        cmocka_unit_test(dihedral_2groups),
        cmocka_unit_test(quaternion_2groups),
        cmocka_unit_test(abelian_torsion_invariant_factors),
        cmocka_unit_test(layer_torsion_from_whole_block),
        cmocka_unit_test(mixed_torsion_one_relator),
        cmocka_unit_test(heisenberg),
        cmocka_unit_test(heisenberg_mod3),
        cmocka_unit_test(unitriangular4),
        cmocka_unit_test(hidden_torsion_example),
        cmocka_unit_test(no_redundant_pc_generators),
        cmocka_unit_test(minimal_pc_generators),
        cmocka_unit_test(raising_the_class_over_a_product_basis),
        cmocka_unit_test(minimal_route_is_the_same_quotient),
        cmocka_unit_test(layer_torsion_need_not_lift),
        cmocka_unit_test(binary_icosahedral_is_perfect),
        cmocka_unit_test(triangle_presentation_with_cyclic_abelianisation),
        cmocka_unit_test(labels_free_nilpotent_2_3),
        cmocka_unit_test(eval_surface_relator),
        cmocka_unit_test(cancel_leaves_nq_empty),
        cmocka_unit_test(cancel_during_collection),
        cmocka_unit_test(cancel_during_layer_basis),
        cmocka_unit_test(bad_class_is_input_error),
        cmocka_unit_test(recompute_replaces_result),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
