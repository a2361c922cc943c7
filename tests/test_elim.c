/* test_elim.c — sparse integer echelon form and quotients (elim.h) against
 * FLINT's dense normal forms on random small integer matrices (a printed
 * seed; NILSTEP_SEED overrides it, NILSTEP_ITER scales the counts).
 *
 * For a matrix A with rows added to an elim_t:
 *   - Z^n / (row lattice of A) read off elim_get_quotient, namely
 *     Z^(free survivors) + Z^nsurv-part modulo the survivors' relation
 *     block, has the invariant factors of fmpz_mat_snf(A) and free rank
 *     n - rank(A) (the Smith normal form: H. J. S. Smith, "On systems of
 *     linear indeterminate equations and congruences", Phil. Trans. 151,
 *     1861);
 *   - the pivots are those of the Hermite normal form fmpz_mat_hnf(A), as
 *     elim.h promises;
 *   - the column expressions map a vector of Z^n to zero modulo the
 *     survivors' relations exactly when it lies in the lattice, membership
 *     being decided independently by reduction against fmpz_mat_hnf(A). */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <stdio.h>
#include <stdlib.h>

#include <flint/fmpz_mat.h>

#include "elim.h"
#include "testutil.h"

/* ------------------------------------------------------ seed, random */

static int setup_seed(void **state)
{
    (void)state;
    return rng_setup_program("test_elim");
}

/* A random m x n matrix in one of several styles: sparse with small
 * entries, dense small, unit-heavy (as the tail relations are), with a
 * huge entry now and then, and with rows that are combinations of earlier
 * rows (so that the rank drops). */
static void rnd_matrix(fmpz_mat_t A)
{
    slong m = fmpz_mat_nrows(A), n = fmpz_mat_ncols(A);
    int style = (int)(rng_next() % 5);
    fmpz_mat_zero(A);
    for (slong i = 0; i < m; i++) {
        if (style == 4 && i >= 2 && rng_next() % 2) {
            /* a combination of two earlier rows */
            slong p = rng_range(0, i - 1), q = rng_range(0, i - 1);
            slong a = rng_range(-3, 3), b = rng_range(-3, 3);
            for (slong j = 0; j < n; j++) {
                fmpz_mul_si(fmpz_mat_entry(A, i, j), fmpz_mat_entry(A, p, j), a);
                fmpz_addmul_si(fmpz_mat_entry(A, i, j), fmpz_mat_entry(A, q, j), b);
            }
            continue;
        }
        for (slong j = 0; j < n; j++) {
            fmpz *x = fmpz_mat_entry(A, i, j);
            switch (style) {
            case 0: /* sparse */
                if (rng_next() % 3 == 0)
                    fmpz_set_si(x, rng_range(-6, 6));
                break;
            case 1: /* dense small */
                fmpz_set_si(x, rng_range(-9, 9));
                break;
            case 2: /* mostly units and even numbers */
                if (rng_next() % 2)
                    fmpz_set_si(x, (slong[]){-1, 1, 2, -2, 4, 6}[rng_next() % 6]);
                break;
            case 3: /* some huge entries */
                if (rng_next() % 3 == 0) {
                    fmpz_set_si(x, rng_range(-5, 5));
                    if (rng_next() % 4 == 0) {
                        fmpz_mul_2exp(x, x, 70 + rng_next() % 60);
                        fmpz_add_si(x, x, rng_range(-7, 7));
                    }
                }
                break;
            default:
                if (rng_next() % 2)
                    fmpz_set_si(x, rng_range(-4, 4));
            }
        }
    }
}

static void add_rows(elim_t E, const fmpz_mat_t A)
{
    slong n = fmpz_mat_ncols(A);
    fmpz *row = _fmpz_vec_init(n);
    for (slong i = 0; i < fmpz_mat_nrows(A); i++) {
        for (slong j = 0; j < n; j++)
            fmpz_set(row + j, fmpz_mat_entry(A, i, j));
        elim_add_dense(E, row);
    }
    _fmpz_vec_clear(row, n);
}

static void print_matrix(const char *what, const fmpz_mat_t A)
{
    print_error("%s (%ld x %ld):\n", what, (long)fmpz_mat_nrows(A), (long)fmpz_mat_ncols(A));
    for (slong i = 0; i < fmpz_mat_nrows(A); i++) {
        print_error("  [");
        for (slong j = 0; j < fmpz_mat_ncols(A); j++) {
            char *s = fmpz_get_str(NULL, 10, fmpz_mat_entry(A, i, j));
            print_error(" %s", s);
            flint_free(s);
        }
        print_error(" ]\n");
    }
}

/* The diagonal entries d > 1 of a Smith form, in order; *nfree := number of
 * zero diagonal entries plus the columns beyond the diagonal. */
static slong snf_torsion(fmpz *tors, slong *nfree, const fmpz_mat_t A)
{
    slong m = fmpz_mat_nrows(A), n = fmpz_mat_ncols(A), nt = 0, rank = 0;
    if (m == 0 || n == 0) {
        *nfree = n;
        return 0;
    }
    fmpz_mat_t S;
    fmpz_mat_init(S, m, n);
    fmpz_mat_snf(S, A);
    for (slong k = 0; k < FLINT_MIN(m, n); k++) {
        const fmpz *d = fmpz_mat_entry(S, k, k);
        if (fmpz_is_zero(d))
            continue;
        rank++;
        if (!fmpz_is_pm1(d))
            fmpz_abs(tors + nt++, d);
    }
    *nfree = n - rank;
    fmpz_mat_clear(S);
    return nt;
}

/* 1 if v lies in the row lattice of A: reduction against the Hermite
 * normal form, computed by FLINT. */
static int in_lattice_hnf(const fmpz *v, const fmpz_mat_t H)
{
    slong n = fmpz_mat_ncols(H);
    fmpz *u = _fmpz_vec_init(n);
    fmpz_t q;
    fmpz_init(q);
    _fmpz_vec_set(u, v, n);
    int ok = 1;
    for (slong i = 0; i < fmpz_mat_nrows(H) && ok; i++) {
        slong p = 0;
        while (p < n && fmpz_is_zero(fmpz_mat_entry(H, i, p)))
            p++;
        if (p == n)
            break; /* zero rows come last */
        for (slong c = 0; c < p; c++)
            if (!fmpz_is_zero(u + c))
                ok = 0;
        if (!ok)
            break;
        if (!fmpz_divisible(u + p, fmpz_mat_entry(H, i, p))) {
            ok = 0;
            break;
        }
        fmpz_divexact(q, u + p, fmpz_mat_entry(H, i, p));
        for (slong c = p; c < n; c++)
            fmpz_submul(u + c, q, fmpz_mat_entry(H, i, c));
    }
    if (ok && !_fmpz_vec_is_zero(u, n))
        ok = 0;
    fmpz_clear(q);
    _fmpz_vec_clear(u, n);
    return ok;
}

/* 1 if v maps to zero in the quotient read off Q: t = sum_c v_c expr[c],
 * then reduce by the triangular survivor relations. */
static int in_lattice_elim(const fmpz *v, const elim_quotient_t Q)
{
    slong ns = Q->nsurv;
    if (ns == 0)
        return 1;
    fmpz *t = _fmpz_vec_init(ns);
    fmpz_t q;
    fmpz_init(q);
    for (slong c = 0; c < Q->ncols; c++)
        if (!fmpz_is_zero(v + c))
            _fmpz_vec_scalar_addmul_fmpz(t, Q->expr + c * ns, ns, v + c);
    int ok = 1;
    for (slong s = 0; s < ns && ok; s++) {
        if (fmpz_is_zero(t + s))
            continue;
        if (fmpz_is_zero(Q->order + s) || !fmpz_divisible(t + s, Q->order + s)) {
            ok = 0;
            break;
        }
        fmpz_divexact(q, t + s, Q->order + s);
        _fmpz_vec_scalar_submul_fmpz(t, Q->rel + s * ns, ns, q);
    }
    fmpz_clear(q);
    _fmpz_vec_clear(t, ns);
    return ok;
}

/* The structure elim.h promises for the quotient, and its invariants
 * against fmpz_mat_snf. */
static void check_quotient(const fmpz_mat_t A, const elim_t E, const elim_quotient_t Q)
{
    slong n = fmpz_mat_ncols(A), ns = Q->nsurv;
    assert_int_equal(Q->ncols, n);
    /* survivors: increasing, exactly the columns whose pivot is not 1 */
    slong s = 0;
    for (slong c = 0; c < n; c++) {
        int unit = fmpz_is_one(elim_pivot(E, c));
        if (unit)
            continue;
        assert_true(s < ns);
        assert_int_equal(Q->surv[s], c);
        assert_true(fmpz_equal(Q->order + s, elim_pivot(E, c)));
        s++;
    }
    assert_int_equal(s, ns);
    /* expr of a survivor column is its unit vector; rel is upper
     * triangular with the order on the diagonal, zero rows for free ones */
    slong nfree_elim = 0;
    for (slong a = 0; a < ns; a++) {
        for (slong b = 0; b < ns; b++) {
            assert_true(fmpz_equal_si(Q->expr + Q->surv[a] * ns + b, a == b));
            const fmpz *r = Q->rel + a * ns + b;
            if (fmpz_is_zero(Q->order + a) || b < a)
                assert_true(fmpz_is_zero(r));
            else if (b == a)
                assert_true(fmpz_equal(r, Q->order + a));
        }
        if (fmpz_is_zero(Q->order + a))
            nfree_elim++;
        else
            assert_true(fmpz_cmp_si(Q->order + a, 1) > 0);
    }
    /* invariants: the survivors' relation block against the whole matrix */
    slong nfree_flint, nfree_block;
    fmpz *t1 = _fmpz_vec_init(n + 1), *t2 = _fmpz_vec_init(ns + 1);
    slong k1 = snf_torsion(t1, &nfree_flint, A);
    fmpz_mat_t R;
    fmpz_mat_init(R, ns, ns);
    for (slong a = 0; a < ns; a++)
        for (slong b = 0; b < ns; b++)
            fmpz_set(fmpz_mat_entry(R, a, b), Q->rel + a * ns + b);
    slong k2 = snf_torsion(t2, &nfree_block, R);
    int same = nfree_flint == nfree_elim && nfree_flint == nfree_block && k1 == k2 &&
               _fmpz_vec_equal(t1, t2, k1);
    if (!same) {
        print_matrix("matrix", A);
        print_matrix("survivor relations", R);
        print_error("free rank: snf %ld, elim %ld, block %ld; torsion count: snf %ld, "
                    "block %ld\n",
                    (long)nfree_flint, (long)nfree_elim, (long)nfree_block, (long)k1, (long)k2);
        fail();
    }
    fmpz_mat_clear(R);
    _fmpz_vec_clear(t1, n + 1);
    _fmpz_vec_clear(t2, ns + 1);
}

static void quotient_matches_snf(void **state)
{
    (void)state;
    for (slong it = 0; it < iters(400); it++) {
        slong m = rng_range(1, 9), n = rng_range(1, 8);
        fmpz_mat_t A;
        fmpz_mat_init(A, m, n);
        rnd_matrix(A);
        elim_t E;
        elim_quotient_t Q;
        elim_init(E, n);
        elim_quotient_init(Q);
        add_rows(E, A);
        elim_get_quotient(Q, E);
        check_quotient(A, E, Q);
        elim_quotient_clear(Q);
        elim_clear(E);
        fmpz_mat_clear(A);
    }
}

/* elim.h: the echelon pivots equal those of the Hermite normal form up to
 * sign; here they are stored positive, and a column has a pivot exactly
 * when the HNF has one there. */
static void pivots_match_hnf(void **state)
{
    (void)state;
    for (slong it = 0; it < iters(300); it++) {
        slong m = rng_range(1, 9), n = rng_range(1, 8);
        fmpz_mat_t A, H;
        fmpz_mat_init(A, m, n);
        fmpz_mat_init(H, m, n);
        rnd_matrix(A);
        fmpz_mat_hnf(H, A);
        elim_t E;
        elim_init(E, n);
        add_rows(E, A);
        fmpz *want = _fmpz_vec_init(n);
        for (slong i = 0; i < m; i++)
            for (slong c = 0; c < n; c++)
                if (!fmpz_is_zero(fmpz_mat_entry(H, i, c))) {
                    fmpz_abs(want + c, fmpz_mat_entry(H, i, c));
                    break;
                }
        for (slong c = 0; c < n; c++)
            if (!fmpz_equal(elim_pivot(E, c), want + c)) {
                print_matrix("matrix", A);
                print_matrix("hnf", H);
                fail_msg("column %ld: elim pivot differs from the HNF pivot", (long)c);
            }
        _fmpz_vec_clear(want, n);
        elim_clear(E);
        fmpz_mat_clear(A);
        fmpz_mat_clear(H);
    }
}

/* Column expressions: lattice vectors map to zero modulo the survivors'
 * relations, and a vector maps to zero only if it is in the lattice. */
static void expressions_kill_exactly_the_lattice(void **state)
{
    (void)state;
    slong members = 0, others = 0;
    for (slong it = 0; it < iters(300); it++) {
        slong m = rng_range(1, 8), n = rng_range(1, 7);
        fmpz_mat_t A, H;
        fmpz_mat_init(A, m, n);
        fmpz_mat_init(H, m, n);
        rnd_matrix(A);
        fmpz_mat_hnf(H, A);
        elim_t E;
        elim_quotient_t Q;
        elim_init(E, n);
        elim_quotient_init(Q);
        add_rows(E, A);
        elim_get_quotient(Q, E);
        fmpz *v = _fmpz_vec_init(n);
        for (int trial = 0; trial < 6; trial++) {
            /* a random combination of the rows ... */
            _fmpz_vec_zero(v, n);
            for (slong i = 0; i < m; i++) {
                slong c = rng_range(-5, 5);
                for (slong j = 0; j < n; j++)
                    fmpz_addmul_si(v + j, fmpz_mat_entry(A, i, j), c);
            }
            if (!in_lattice_elim(v, Q)) {
                print_matrix("matrix", A);
                fail_msg("a combination of the rows is not zero in the quotient");
            }
            members++;
            /* ... perturbed at random, judged by both methods */
            if (trial % 2) {
                slong j = rng_range(0, n - 1);
                fmpz_add_si(v + j, v + j, rng_range(-3, 3));
            } else
                for (slong j = 0; j < n; j++)
                    fmpz_set_si(v + j, rng_range(-4, 4));
            int a = in_lattice_hnf(v, H), b = in_lattice_elim(v, Q);
            if (a != b) {
                print_matrix("matrix", A);
                fail_msg("membership: HNF says %d, elim's quotient says %d", a, b);
            }
            others += !a;
        }
        _fmpz_vec_clear(v, n);
        elim_quotient_clear(Q);
        elim_clear(E);
        fmpz_mat_clear(A);
        fmpz_mat_clear(H);
    }
    /* both outcomes occurred */
    assert_true(members > 0 && others > 0);
}

/* Modular mode (elim_set_modulus, the Hermite form modulo a multiple of
 * the determinant of Domich, Kannan and Trotter 1987): the rows of A with
 * modulus M give the lattice of [A; M I], checked against FLINT's HNF and
 * SNF of that matrix; every stored entry stays in [0, M) except pivots,
 * which divide M. */
static void modular_mode_is_the_lattice_plus_m_zn(void **state)
{
    (void)state;
    static const slong mods[] = {2, 3, 4, 6, 8, 12, 16, 30, 64, 97};
    slong members = 0, others = 0;
    for (slong it = 0; it < iters(300); it++) {
        slong m = rng_range(1, 9), n = rng_range(1, 8);
        slong M = mods[rng_next() % (sizeof mods / sizeof mods[0])];
        fmpz_mat_t A, B, H;
        fmpz_mat_init(A, m, n);
        fmpz_mat_init(B, m + n, n);
        fmpz_mat_init(H, m + n, n);
        rnd_matrix(A);
        for (slong i = 0; i < m; i++)
            for (slong j = 0; j < n; j++)
                fmpz_set(fmpz_mat_entry(B, i, j), fmpz_mat_entry(A, i, j));
        for (slong j = 0; j < n; j++)
            fmpz_set_si(fmpz_mat_entry(B, m + j, j), M);
        fmpz_mat_hnf(H, B);
        elim_t E;
        elim_quotient_t Q;
        fmpz_t mm;
        fmpz_init_set_si(mm, M);
        elim_init(E, n);
        elim_set_modulus(E, mm);
        elim_quotient_init(Q);
        add_rows(E, A);
        elim_get_quotient(Q, E);
        check_quotient(B, E, Q);
        for (slong c = 0; c < n; c++) {
            const elim_row_struct *P = E->piv + c;
            for (slong k = 0; k < P->len; k++)
                assert_true(fmpz_sgn(P->val + k) > 0 && fmpz_cmp_si(P->val + k, M) < 0);
            if (P->len)
                assert_true(fmpz_divisible(mm, P->val));
            /* pivots against the HNF of [A; M I], which has full rank */
            if (!fmpz_equal(elim_pivot(E, c), fmpz_mat_entry(H, c, c))) {
                print_matrix("matrix", A);
                print_matrix("hnf of [A; M I]", H);
                fail_msg("modulus %ld, column %ld: pivot differs from the HNF", (long)M, (long)c);
            }
        }
        fmpz *v = _fmpz_vec_init(n);
        for (int trial = 0; trial < 6; trial++) {
            for (slong j = 0; j < n; j++)
                fmpz_set_si(v + j, trial % 2 ? rng_range(-4, 4) : M * rng_range(-2, 2));
            if (trial % 3 == 0)
                for (slong i = 0; i < m; i++)
                    for (slong j = 0; j < n; j++)
                        fmpz_addmul_si(v + j, fmpz_mat_entry(A, i, j), rng_range(-3, 3));
            int a = in_lattice_hnf(v, H), b = in_lattice_elim(v, Q);
            if (a != b) {
                print_matrix("matrix", A);
                fail_msg("modulus %ld: membership: HNF says %d, elim says %d", (long)M, a, b);
            }
            if (a)
                members++;
            else
                others++;
        }
        _fmpz_vec_clear(v, n);
        fmpz_clear(mm);
        elim_quotient_clear(Q);
        elim_clear(E);
        fmpz_mat_clear(A);
        fmpz_mat_clear(B);
        fmpz_mat_clear(H);
    }
    assert_true(members > 0 && others > 0);
}

/* The order in which rows arrive changes neither pivots nor invariants. */
static void row_order_does_not_matter(void **state)
{
    (void)state;
    for (slong it = 0; it < iters(150); it++) {
        slong m = rng_range(2, 8), n = rng_range(1, 7);
        fmpz_mat_t A, B;
        fmpz_mat_init(A, m, n);
        fmpz_mat_init(B, m, n);
        rnd_matrix(A);
        /* B: the rows of A in a random order */
        slong *perm = malloc((size_t)m * sizeof(slong));
        for (slong i = 0; i < m; i++)
            perm[i] = i;
        for (slong i = m - 1; i > 0; i--) {
            slong j = rng_range(0, i), t = perm[i];
            perm[i] = perm[j];
            perm[j] = t;
        }
        for (slong i = 0; i < m; i++)
            for (slong j = 0; j < n; j++)
                fmpz_set(fmpz_mat_entry(B, i, j), fmpz_mat_entry(A, perm[i], j));
        elim_t E, F;
        elim_init(E, n);
        elim_init(F, n);
        add_rows(E, A);
        add_rows(F, B);
        for (slong c = 0; c < n; c++)
            assert_true(fmpz_equal(elim_pivot(E, c), elim_pivot(F, c)));
        elim_quotient_t Q;
        elim_quotient_init(Q);
        elim_get_quotient(Q, F);
        check_quotient(A, F, Q);
        elim_quotient_clear(Q);
        free(perm);
        elim_clear(E);
        elim_clear(F);
        fmpz_mat_clear(A);
        fmpz_mat_clear(B);
    }
}

/* elim_defer / elim_flush (elim.h): the deferred, sparsest-first insertion
 * gives the pivots of direct insertion (the Hermite form's) and exactly its
 * quotient: survivors, orders, relation block and column expressions, also
 * when some pivot is not 1 (then elim_flush inserts in the original order
 * again).  Checked against direct insertion and against FLINT's Smith form
 * (check_quotient); both kinds of lattice occur. */
static void deferred_insertion_is_direct_insertion(void **state)
{
    (void)state;
    slong unimodular = 0, torsion = 0;
    for (slong it = 0; it < iters(300); it++) {
        slong m = rng_range(1, 9), n = rng_range(1, 8);
        fmpz_mat_t A;
        fmpz_mat_init(A, m, n);
        rnd_matrix(A);
        if (it % 2)
            /* unit-heavy rows, as the tail relations of free groups are */
            for (slong i = 0; i < m; i++)
                for (slong j = 0; j < n; j++)
                    fmpz_set_si(fmpz_mat_entry(A, i, j),
                                (slong[]){0, 0, 0, 1, -1, 2}[rng_next() % 6]);
        elim_t E, F;
        elim_quotient_t Q, R;
        elim_init(E, n);
        elim_init(F, n);
        elim_quotient_init(Q);
        elim_quotient_init(R);
        add_rows(E, A);
        elim_defer(F);
        add_rows(F, A);
        assert_int_equal(elim_flush(F, NULL), 0);
        int units = 1;
        for (slong c = 0; c < n; c++) {
            assert_true(fmpz_equal(elim_pivot(E, c), elim_pivot(F, c)));
            if (!fmpz_is_zero(elim_pivot(E, c)) && !fmpz_is_one(elim_pivot(E, c)))
                units = 0;
        }
        unimodular += units;
        torsion += !units;
        elim_get_quotient(Q, E);
        elim_get_quotient(R, F);
        check_quotient(A, F, R);
        assert_int_equal(Q->nsurv, R->nsurv);
        if (Q->nsurv) {
            assert_memory_equal(Q->surv, R->surv, (size_t)Q->nsurv * sizeof(slong));
            assert_true(_fmpz_vec_equal(Q->order, R->order, Q->nsurv));
            assert_true(_fmpz_vec_equal(Q->rel, R->rel, Q->nsurv * Q->nsurv));
            assert_true(_fmpz_vec_equal(Q->expr, R->expr, n * Q->nsurv));
        }
        elim_quotient_clear(Q);
        elim_quotient_clear(R);
        elim_clear(E);
        elim_clear(F);
        fmpz_mat_clear(A);
    }
    assert_true(unimodular > 0 && torsion > 0);
}

static int stop_now(void *ctx, const char *stage, double fraction)
{
    (void)stage;
    (void)fraction;
    (*(int *)ctx)++;
    return 1;
}

static int go_on(void *ctx, const char *stage, double fraction)
{
    (void)stage;
    (void)fraction;
    (*(int *)ctx)++;
    return 0;
}

/* Issue 8: reading the quotient off a large lattice polls progress (Esc
 * waited 0.79 s in the explorer), stops when asked and leaves Q empty; a
 * hook that goes on gives the same quotient as none.  The lattice: 600
 * columns, row i = e_i + e_(i+1) + ... + e_(i+5) for i < 400, so the last
 * 200 columns survive and every other column is a sum of them. */
static void quotient_polls_and_cancels(void **state)
{
    (void)state;
    slong n = 600;
    elim_t E;
    elim_quotient_t Q, R;
    elim_init(E, n);
    elim_quotient_init(Q);
    elim_quotient_init(R);
    fmpz *row = _fmpz_vec_init(n);
    for (slong i = 0; i < 400; i++) {
        _fmpz_vec_zero(row, n);
        for (slong k = i; k < i + 6 && k < n; k++)
            fmpz_one(row + k);
        elim_add_dense(E, row);
    }
    int calls = 0;
    ns_progress_t stop = {stop_now, &calls};
    assert_int_equal(elim_get_quotient_progress(Q, E, &stop), 1);
    assert_int_equal(calls, 1);
    assert_int_equal(Q->nsurv, 0);
    calls = 0;
    ns_progress_t on = {go_on, &calls};
    assert_int_equal(elim_get_quotient_progress(Q, E, &on), 0);
    assert_true(calls > 0);
    elim_get_quotient(R, E);
    assert_int_equal(Q->nsurv, 200);
    assert_int_equal(R->nsurv, Q->nsurv);
    assert_true(_fmpz_vec_equal(Q->expr, R->expr, n * Q->nsurv));
    _fmpz_vec_clear(row, n);
    elim_quotient_clear(Q);
    elim_quotient_clear(R);
    elim_clear(E);
}

/* Small cases worked by hand. */
static void worked_examples(void **state)
{
    (void)state;
    /* No rows: Z^3, every column a free survivor. */
    elim_t E;
    elim_quotient_t Q;
    elim_init(E, 3);
    elim_quotient_init(Q);
    elim_get_quotient(Q, E);
    assert_int_equal(Q->nsurv, 3);
    for (slong s = 0; s < 3; s++)
        assert_true(fmpz_is_zero(Q->order + s));
    /* The zero row changes nothing. */
    fmpz *row = _fmpz_vec_init(3);
    elim_add_dense(E, row);
    assert_true(fmpz_is_zero(elim_pivot(E, 0)));
    /* (2, 4, 6): Z/2 + Z^2 (Smith form (2)); column 0 survives with
     * order 2, the others are free. */
    fmpz_set_si(row + 0, 2);
    fmpz_set_si(row + 1, 4);
    fmpz_set_si(row + 2, 6);
    elim_add_dense(E, row);
    elim_get_quotient(Q, E);
    assert_int_equal(Q->nsurv, 3);
    assert_true(fmpz_equal_si(Q->order + 0, 2));
    assert_true(fmpz_is_zero(Q->order + 1) && fmpz_is_zero(Q->order + 2));
    /* add (-3, 0, 1): gcd(2, 3) = 1 makes a unit pivot at column 0.  The
     * 2 x 2 minors of [[2,4,6],[-3,0,1]] are 12, 20 and 4, with gcd 4, and
     * the entries have gcd 1, so the Smith form is (1, 4) and
     * Z^3 / <(2,4,6), (-3,0,1)> = Z + Z/4. */
    fmpz_set_si(row + 0, -3);
    fmpz_set_si(row + 1, 0);
    fmpz_set_si(row + 2, 1);
    elim_add_dense(E, row);
    assert_true(fmpz_is_one(elim_pivot(E, 0)));
    elim_get_quotient(Q, E);
    slong nfree = 0, ntors = 0;
    fmpz_mat_t R, S;
    fmpz_mat_init(R, Q->nsurv, Q->nsurv);
    fmpz_mat_init(S, Q->nsurv, Q->nsurv);
    for (slong a = 0; a < Q->nsurv; a++) {
        nfree += fmpz_is_zero(Q->order + a);
        for (slong b = 0; b < Q->nsurv; b++)
            fmpz_set(fmpz_mat_entry(R, a, b), Q->rel + a * Q->nsurv + b);
    }
    fmpz_mat_snf(S, R);
    for (slong a = 0; a < Q->nsurv; a++) {
        const fmpz *d = fmpz_mat_entry(S, a, a);
        if (!fmpz_is_zero(d) && !fmpz_is_one(d)) {
            assert_true(fmpz_equal_si(d, 4));
            ntors++;
        }
    }
    assert_int_equal(nfree, 1);
    assert_int_equal(ntors, 1);
    fmpz_mat_clear(R);
    fmpz_mat_clear(S);
    _fmpz_vec_clear(row, 3);
    elim_quotient_clear(Q);
    elim_clear(E);

    /* The identity: nothing survives. */
    elim_init(E, 4);
    elim_quotient_init(Q);
    row = _fmpz_vec_init(4);
    for (slong i = 0; i < 4; i++) {
        _fmpz_vec_zero(row, 4);
        fmpz_set_si(row + i, i % 2 ? -1 : 1);
        elim_add_dense(E, row);
    }
    elim_get_quotient(Q, E);
    assert_int_equal(Q->nsurv, 0);
    _fmpz_vec_clear(row, 4);
    elim_quotient_clear(Q);
    elim_clear(E);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(worked_examples),
        cmocka_unit_test(quotient_polls_and_cancels),
        cmocka_unit_test(quotient_matches_snf),
        cmocka_unit_test(pivots_match_hnf),
        cmocka_unit_test(expressions_kill_exactly_the_lattice),
        cmocka_unit_test(row_order_does_not_matter),
        cmocka_unit_test(deferred_insertion_is_direct_insertion),
        cmocka_unit_test(modular_mode_is_the_lattice_plus_m_zn),
    };
    return cmocka_run_group_tests(tests, setup_seed, NULL);
}
