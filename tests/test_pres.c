/* test_pres.c — presentations, built-in families and maps.
 *
 * The families are checked against matrix models, outside the parser:
 * heisenberg(n) in the (n+2)x(n+2) integer matrices x_i = 1+E(1,i+1),
 * y_i = 1+E(i+1,n+2), z = 1+E(1,n+2) (the standard matrix form of the
 * Heisenberg group), and unitriangular(n) in UT(n,Z) with e(i,i+1) the
 * elementary matrix 1+E(i,i+1).  Every relator must evaluate to the identity
 * there, and the "u = v" relations must not be trivially true (u alone is
 * not the identity), so a wrong relation fails the test. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

#include <flint/flint.h>
#include <flint/fmpz.h>
#include <flint/fmpz_vec.h>
#include <flint/fmpz_mat.h>

#include "pres.h"
#include "testutil.h"

/* ------------------------------------------------------------------------ */
/* Helpers                                                                   */

static void expect_pres_error(const char *text, int line, int col, ns_status status,
                              const char *msg)
{
    pres_t p;
    nserr_t err;
    ns_status st;

    pres_init(p);
    nserr_init(err);
    st = pres_parse(p, text, 1, 1, err);
    if (st != status || err->line != line || err->col != col || strcmp(err->msg, msg) != 0)
        print_error("input '%s': got status %d at %d:%d '%s'\n", text, st, err->line, err->col,
                    err->msg);
    assert_int_equal(st, status);
    assert_int_equal(err->line, line);
    assert_int_equal(err->col, col);
    assert_string_equal(err->msg, msg);
    assert_int_equal(p->gens->n, 0);
    pres_clear(p);
}

/* Every relator of p is the identity under the generator matrices. */
static void check_relators_hold(const pres_t p, const fmpz_mat_struct *gens, slong dim)
{
    fmpz_mat_t m;
    fmpz_mat_init(m, dim, dim);
    for (slong i = 0; i < p->nrels; i++) {
        eval_in_matrices(m, p->rels[i].root, gens);
        if (!fmpz_mat_is_one(m))
            fail_msg("relation %ld '%s' fails in the matrix model", (long)i, p->text[i]);
        /* "u = v" must say something: u alone is not the identity. */
        if (strchr(p->text[i], '=') != NULL) {
            eval_in_matrices(m, p->rels[i].root->kids[0], gens);
            assert_false(fmpz_mat_is_one(m));
        }
    }
    fmpz_mat_clear(m);
}

static fmpz_mat_struct *elementary_matrices(slong dim, slong count, const slong *row,
                                            const slong *col)
{
    fmpz_mat_struct *g = flint_malloc(sizeof(fmpz_mat_struct) * count);
    for (slong i = 0; i < count; i++) {
        fmpz_mat_init(g + i, dim, dim);
        fmpz_mat_one(g + i);
        fmpz_one(fmpz_mat_entry(g + i, row[i], col[i]));
    }
    return g;
}

static void free_matrices(fmpz_mat_struct *g, slong count)
{
    for (slong i = 0; i < count; i++)
        fmpz_mat_clear(g + i);
    flint_free(g);
}

/* ------------------------------------------------------------------------ */
/* <gens | relations>                                                        */

static void parse_should_read_generators_and_relations(void **state)
{
    pres_t p;
    (void)state;

    pres_init(p);
    parse_pres_or_fail(p, "<a, b, c | [a,b] = c, [a,c],\n   [b,c]>");
    assert_int_equal(p->gens->n, 3);
    assert_string_equal(p->gens->name[2], "c");
    assert_int_equal(p->nrels, 3);
    /* "u = v" is stored as u v^-1 */
    {
        const expr_node *r = p->rels[0].root;
        assert_int_equal(r->kind, EXPR_MUL);
        assert_int_equal(r->nkids, 2);
        assert_int_equal(r->kids[0]->kind, EXPR_COMM);
        assert_int_equal(r->kids[1]->kind, EXPR_POW);
        assert_true(fmpz_equal_si(r->kids[1]->exp, -1));
        assert_int_equal(r->kids[1]->kids[0]->kind, EXPR_GEN);
        assert_int_equal(r->kids[1]->kids[0]->gen, 2);
    }
    assert_string_equal(p->text[0], "[a,b] = c");
    assert_string_equal(p->text[2], "[b,c]");
    assert_int_equal(p->line[0], 1);
    assert_int_equal(p->col[0], 12);
    assert_int_equal(p->line[2], 2);
    assert_int_equal(p->col[2], 4);
    pres_clear(p);
}

static void parse_should_accept_presentations_without_relations(void **state)
{
    pres_t p;
    (void)state;

    pres_init(p);
    parse_pres_or_fail(p, "<a, b>");
    assert_int_equal(p->gens->n, 2);
    assert_int_equal(p->nrels, 0);
    parse_pres_or_fail(p, "  # free group\n<x1, y_2 | >  # done\n");
    assert_int_equal(p->gens->n, 2);
    assert_string_equal(p->gens->name[1], "y_2");
    assert_int_equal(p->nrels, 0);
    pres_clear(p);
}

static void parse_should_keep_relation_text_on_one_line(void **state)
{
    pres_t p;
    (void)state;

    pres_init(p);
    parse_pres_or_fail(p, "<a, b | a^2 # square\n   =\n b^3>");
    assert_string_equal(p->text[0], "a^2 = b^3");
    pres_clear(p);
}

static void parse_should_reject_duplicate_generators_with_both_locations(void **state)
{
    (void)state;
    expect_pres_error("<a, b,\n a | a>", 2, 2, NS_ERR_INPUT,
                      "generator 'a' listed twice (first at 1:2)");
}

static void parse_should_reject_malformed_presentations_with_location(void **state)
{
    (void)state;
    expect_pres_error("<>", 1, 2, NS_ERR_INPUT, "a presentation needs at least one generator");
    expect_pres_error("< | a>", 1, 3, NS_ERR_INPUT, "a presentation needs at least one generator");
    expect_pres_error("<a, 1>", 1, 5, NS_ERR_SYNTAX, "expected a generator name, found number '1'");
    expect_pres_error("<a b>", 1, 4, NS_ERR_SYNTAX,
                      "expected ',', '|' or '>' after a generator, found 'b'");
    expect_pres_error("<a | [a,a], >", 1, 13, NS_ERR_SYNTAX, "expected a relation after ','");
    expect_pres_error("<a | a\n", 2, 1, NS_ERR_SYNTAX, "expected '>' to close '<' opened at 1:1");
    expect_pres_error("<a | a> a", 1, 9, NS_ERR_SYNTAX,
                      "unexpected 'a' after the end of the presentation");
    expect_pres_error("<a, b | a = b = a>", 1, 15, NS_ERR_SYNTAX,
                      "a relation has at most one '='");
    expect_pres_error("<a, b | [a, c]>", 1, 13, NS_ERR_INPUT, "unknown generator 'c'");
    expect_pres_error("<a, b | [a, b>", 1, 14, NS_ERR_SYNTAX,
                      "expected ']' to close '[' opened at 1:9");
    expect_pres_error("<a | a =>", 1, 9, NS_ERR_SYNTAX, "expected a word after '=', found '>'");
    expect_pres_error("a, b", 1, 1, NS_ERR_SYNTAX,
                      "expected '<' to start a presentation or a family such as heisenberg(1), "
                      "found 'a'");
    expect_pres_error("", 1, 1, NS_ERR_SYNTAX,
                      "expected a presentation such as <a, b | [a,b]>");
}

static void parse_should_limit_the_number_of_generators(void **state)
{
    size_t cap = 1002 * 8 + 16, len = 0;
    char *text = malloc(cap);
    pres_t p;
    nserr_t err;
    (void)state;

    len += (size_t)snprintf(text + len, cap - len, "<");
    for (int i = 1; i <= 1001; i++)
        len += (size_t)snprintf(text + len, cap - len, "%sg%d", i > 1 ? "," : "", i);
    snprintf(text + len, cap - len, ">");
    pres_init(p);
    nserr_init(err);
    assert_int_equal(pres_parse(p, text, 1, 1, err), NS_ERR_LIMIT);
    assert_int_equal(err->col, (int)(strstr(text, "g1001") - text) + 1);
    assert_string_equal(err->msg, "more than 1000 generators");
    /* 1000 are fine */
    *strstr(text, ",g1001") = '>';
    *(strstr(text, "g1000>") + 6) = '\0';
    assert_int_equal(pres_parse(p, text, 1, 1, err), NS_OK);
    assert_int_equal(p->gens->n, 1000);
    pres_clear(p);
    free(text);
}

static void parse_should_report_positions_in_the_callers_coordinates(void **state)
{
    pres_t p;
    nserr_t err;
    (void)state;

    pres_init(p);
    nserr_init(err);
    assert_int_equal(pres_parse(p, "<a, b |\n     [a,b,a],\n     [a,b,d]>", 7, 9, err),
                     NS_ERR_INPUT);
    assert_int_equal(err->line, 9);
    assert_int_equal(err->col, 11);
    assert_string_equal(err->msg, "unknown generator 'd'");
    pres_clear(p);
}

static void get_str_should_print_a_presentation_that_parses_back(void **state)
{
    const char *inputs[] = {
        "<a, b, c | [a,b] = c, [a,c], [b,c]>",
        "<a,b|(a b)^-3 a^b = 1, [a b, b^2]^7>",
        "<a>",
        "heisenberg(2)",
        "surface(3)",
        "unitriangular(5)",
        "raag(a b c d; a-b b-c c-d)",
        "free(30)",
    };
    (void)state;

    for (size_t i = 0; i < sizeof inputs / sizeof inputs[0]; i++) {
        pres_t p, q, r;
        char *s1, *s2;
        pres_init(p);
        pres_init(q);
        pres_init(r);
        parse_pres_or_fail(p, inputs[i]);
        s1 = pres_get_str(p);
        parse_pres_or_fail(q, s1);
        s2 = pres_get_str(q);
        assert_string_equal(s1, s2);
        assert_int_equal(p->gens->n, q->gens->n);
        assert_int_equal(p->nrels, q->nrels);
        for (slong k = 0; k < p->nrels; k++) {
            fmpz *x = _fmpz_vec_init(p->gens->n), *y = _fmpz_vec_init(p->gens->n);
            expr_exponent_sums(x, p->rels + k, p->gens->n);
            expr_exponent_sums(y, q->rels + k, q->gens->n);
            assert_true(_fmpz_vec_equal(x, y, p->gens->n));
            _fmpz_vec_clear(x, p->gens->n);
            _fmpz_vec_clear(y, p->gens->n);
        }
        /* pres_set gives an independent copy. */
        pres_set(r, p);
        pres_clear(p);
        {
            char *s3 = pres_get_str(r);
            assert_string_equal(s1, s3);
            flint_free(s3);
        }
        flint_free(s1);
        flint_free(s2);
        pres_clear(q);
        pres_clear(r);
    }
}

static void get_str_should_print_relations_as_written(void **state)
{
    pres_t p;
    char *s;
    (void)state;

    pres_init(p);
    parse_pres_or_fail(p, "< a,b | [a , b]=a^2 , a*b >");
    s = pres_get_str(p);
    assert_string_equal(s, "<a, b | [a,b] = a^2, a b>");
    flint_free(s);
    pres_clear(p);
}

/* ------------------------------------------------------------------------ */
/* Families                                                                  */

static void free_family_should_name_letters_then_indexed_names(void **state)
{
    pres_t p;
    (void)state;

    pres_init(p);
    parse_pres_or_fail(p, "free(3)");
    assert_int_equal(p->gens->n, 3);
    assert_string_equal(p->gens->name[0], "a");
    assert_string_equal(p->gens->name[2], "c");
    assert_int_equal(p->nrels, 0);
    parse_pres_or_fail(p, "free(26)");
    assert_string_equal(p->gens->name[25], "z");
    parse_pres_or_fail(p, "free(27)");
    assert_string_equal(p->gens->name[0], "x1");
    assert_string_equal(p->gens->name[26], "x27");
    pres_clear(p);
}

static void heisenberg_should_hold_in_its_matrix_model(void **state)
{
    (void)state;
    for (slong n = 1; n <= 4; n++) {
        char text[32];
        pres_t p;
        slong dim = n + 2, ng = 2 * n + 1;
        slong *row = flint_malloc(sizeof(slong) * ng), *col = flint_malloc(sizeof(slong) * ng);
        fmpz_mat_struct *g;

        for (slong i = 0; i < n; i++) {
            row[i] = 0; /* x_i = 1 + E(1, i+1) */
            col[i] = i + 1;
            row[n + i] = i + 1; /* y_i = 1 + E(i+1, n+2) */
            col[n + i] = n + 1;
        }
        row[2 * n] = 0; /* z = 1 + E(1, n+2) */
        col[2 * n] = n + 1;
        g = elementary_matrices(dim, ng, row, col);

        snprintf(text, sizeof text, "heisenberg(%ld)", (long)n);
        pres_init(p);
        parse_pres_or_fail(p, text);
        assert_int_equal(p->gens->n, 2 * n + 1);
        assert_string_equal(p->gens->name[0], "x1");
        assert_string_equal(p->gens->name[n], "y1");
        assert_string_equal(p->gens->name[2 * n], "z");
        /* [xi,yi] = z for each i, all other pairs of the 2n+1 generators
         * commute: C(2n+1, 2) pairs, n of them with z on the right. */
        assert_int_equal(p->nrels, (2 * n + 1) * (2 * n) / 2);
        check_relators_hold(p, g, dim);
        free_matrices(g, ng);
        flint_free(row);
        flint_free(col);
        pres_clear(p);
    }
}

static void heisenberg_1_should_have_three_generators(void **state)
{
    pres_t p;
    char *s;
    (void)state;

    pres_init(p);
    parse_pres_or_fail(p, "heisenberg(1)");
    assert_int_equal(p->gens->n, 3);
    s = pres_get_str(p);
    assert_string_equal(s, "<x1, y1, z | [x1,y1] = z, [x1,z], [y1,z]>");
    flint_free(s);
    pres_clear(p);
}

static void surface_should_have_one_balanced_relator(void **state)
{
    pres_t p;
    fmpz sums[4] = {0, 0, 0, 0};
    (void)state;

    pres_init(p);
    parse_pres_or_fail(p, "surface(2)");
    assert_int_equal(p->gens->n, 4);
    assert_string_equal(p->gens->name[0], "a1");
    assert_string_equal(p->gens->name[3], "b2");
    assert_int_equal(p->nrels, 1);
    expr_exponent_sums(sums, p->rels + 0, 4);
    for (int i = 0; i < 4; i++)
        assert_true(fmpz_is_zero(sums + i));
    assert_string_equal(p->text[0], "[a1,b1] [a2,b2]");

    /* The relator is the product of the commutators, not the identity:
     * check it in matrices (a1, b1, a2, b2 -> elementary matrices of
     * SL(3,Z)) against the product written out. */
    {
        slong row[4] = {0, 1, 0, 2}, col[4] = {1, 2, 2, 0};
        fmpz_mat_struct *g = elementary_matrices(3, 4, row, col);
        fmpz_mat_t m, want, t, inv;
        fmpz_mat_init(m, 3, 3);
        fmpz_mat_init(want, 3, 3);
        fmpz_mat_init(t, 3, 3);
        fmpz_mat_init(inv, 3, 3);
        eval_in_matrices(m, p->rels[0].root, g);
        fmpz_mat_one(want);
        for (int k = 0; k < 2; k++) {
            /* [a,b] = a^-1 b^-1 a b */
            mat_inv_unimodular(inv, g + 2 * k);
            fmpz_mat_mul(t, want, inv);
            mat_inv_unimodular(inv, g + 2 * k + 1);
            fmpz_mat_mul(want, t, inv);
            fmpz_mat_mul(t, want, g + 2 * k);
            fmpz_mat_mul(want, t, g + 2 * k + 1);
        }
        assert_true(fmpz_mat_equal(m, want));
        assert_false(fmpz_mat_is_one(m));
        fmpz_mat_clear(m);
        fmpz_mat_clear(want);
        fmpz_mat_clear(t);
        fmpz_mat_clear(inv);
        free_matrices(g, 4);
    }
    for (int i = 0; i < 4; i++)
        fmpz_clear(sums + i);
    pres_clear(p);
}

static void unitriangular_should_hold_in_UT_n_Z(void **state)
{
    (void)state;
    for (slong n = 2; n <= 7; n++) {
        char text[32];
        pres_t p;
        slong *row = flint_malloc(sizeof(slong) * n), *col = flint_malloc(sizeof(slong) * n);
        slong npos = n * (n - 1) / 2;
        fmpz_mat_struct *g;

        for (slong i = 0; i + 1 < n; i++) {
            row[i] = i;
            col[i] = i + 1;
        }
        g = elementary_matrices(n, n - 1, row, col);
        snprintf(text, sizeof text, "unitriangular(%ld)", (long)n);
        pres_init(p);
        parse_pres_or_fail(p, text);
        assert_int_equal(p->gens->n, n - 1);
        /* one relation per pair of positions i<j, minus the pairs
         * (e_ij, e_j(j+1)) that define the longer commutators */
        assert_int_equal(p->nrels, npos * (npos - 1) / 2 - (n - 1) * (n - 2) / 2);
        check_relators_hold(p, g, n);
        free_matrices(g, n - 1);
        flint_free(row);
        flint_free(col);
        pres_clear(p);
    }
}

static void unitriangular_should_name_superdiagonal_generators(void **state)
{
    pres_t p;
    (void)state;

    pres_init(p);
    parse_pres_or_fail(p, "unitriangular(11)");
    assert_int_equal(p->gens->n, 10);
    assert_string_equal(p->gens->name[0], "e12");
    assert_string_equal(p->gens->name[7], "e89");
    assert_string_equal(p->gens->name[8], "e9_10");
    assert_string_equal(p->gens->name[9], "e10_11");
    parse_pres_or_fail(p, "unitriangular(3)");
    {
        char *s = pres_get_str(p);
        assert_string_equal(s, "<e12, e23 | [e12,[e12,e23]], [e23,[e12,e23]]>");
        flint_free(s);
    }
    pres_clear(p);
}

static void raag_should_add_one_commutator_per_edge(void **state)
{
    pres_t p;
    char *s;
    (void)state;

    pres_init(p);
    parse_pres_or_fail(p, "raag(a b c d; a-b b-c c-d)");
    assert_int_equal(p->gens->n, 4);
    assert_int_equal(p->nrels, 3);
    for (slong i = 0; i < 3; i++) {
        const expr_node *r = p->rels[i].root;
        assert_int_equal(r->kind, EXPR_COMM);
        assert_int_equal(r->nkids, 2);
        assert_int_equal(r->kids[0]->gen, i);
        assert_int_equal(r->kids[1]->gen, i + 1);
    }
    s = pres_get_str(p);
    assert_string_equal(s, "<a, b, c, d | [a,b], [b,c], [c,d]>");
    flint_free(s);
    parse_pres_or_fail(p, "raag(u, v, w)");
    assert_int_equal(p->gens->n, 3);
    assert_int_equal(p->nrels, 0);
    parse_pres_or_fail(p, "raag(u v;)");
    assert_int_equal(p->nrels, 0);
    parse_pres_or_fail(p, "raag(u v w; u-v, w-u)");
    assert_int_equal(p->nrels, 2);
    /* a complete graph: the free abelian group; many edges stay fast */
    {
        size_t cap = 1000000, len = 0;
        char *t = malloc(cap);
        int nv = 300;
        len += (size_t)snprintf(t + len, cap - len, "raag(");
        for (int i = 0; i < nv; i++)
            len += (size_t)snprintf(t + len, cap - len, "v%d ", i);
        len += (size_t)snprintf(t + len, cap - len, ";");
        for (int i = 0; i < nv; i++)
            for (int j = i + 1; j < nv; j++)
                len += (size_t)snprintf(t + len, cap - len, " v%d-v%d", i, j);
        snprintf(t + len, cap - len, ")");
        parse_pres_or_fail(p, t);
        assert_int_equal(p->nrels, nv * (nv - 1) / 2);
        free(t);
    }
    pres_clear(p);
}

static void raag_should_reject_bad_graphs_with_location(void **state)
{
    (void)state;
    expect_pres_error("raag(a b; a-c)", 1, 13, NS_ERR_INPUT, "unknown vertex 'c'");
    expect_pres_error("raag(a b; b-b)", 1, 11, NS_ERR_INPUT, "an edge joins two different vertices");
    expect_pres_error("raag(a b; a-b\n b-a)", 2, 2, NS_ERR_INPUT,
                      "edge b-a listed twice (first at 1:11)");
    expect_pres_error("raag(a b a)", 1, 10, NS_ERR_INPUT, "vertex 'a' listed twice (first at 1:6)");
    expect_pres_error("raag(; )", 1, 6, NS_ERR_INPUT,
                      "raag needs at least one vertex, found ';'");
    expect_pres_error("raag(a b; a b)", 1, 13, NS_ERR_SYNTAX,
                      "expected '-' between the two ends of an edge, found 'b'");
    expect_pres_error("raag(a b; a-b", 1, 14, NS_ERR_SYNTAX,
                      "expected ')' to close '(' opened at 1:5");
}

static void families_should_be_case_sensitive_and_checked(void **state)
{
    (void)state;
    expect_pres_error("Heisenberg(1)", 1, 1, NS_ERR_INPUT,
                      "unknown family 'Heisenberg' (names are case-sensitive: 'heisenberg')");
    expect_pres_error("  nilpotent(3)", 1, 3, NS_ERR_INPUT,
                      "unknown family 'nilpotent' (built in: free, heisenberg, surface, "
                      "unitriangular, raag)");
    expect_pres_error("free(0)", 1, 6, NS_ERR_INPUT, "free(r) needs r >= 1");
    expect_pres_error("surface(0)", 1, 9, NS_ERR_INPUT, "surface(g) needs g >= 1");
    expect_pres_error("unitriangular(1)", 1, 15, NS_ERR_INPUT, "unitriangular(n) needs n >= 2");
    expect_pres_error("heisenberg(100000000000000000000000)", 1, 12, NS_ERR_LIMIT,
                      "heisenberg(n) is limited to n <= 100");
    expect_pres_error("free(-2)", 1, 6, NS_ERR_SYNTAX, "expected a whole number, found '-'");
    expect_pres_error("free(2", 1, 7, NS_ERR_SYNTAX, "expected ')' to close '(' opened at 1:5");
    expect_pres_error("free 2", 1, 6, NS_ERR_SYNTAX, "expected '(' after 'free'");
    expect_pres_error("free(2) <a>", 1, 9, NS_ERR_SYNTAX,
                      "unexpected '<' after the end of the presentation");
}

/* ------------------------------------------------------------------------ */
/* Maps                                                                      */

typedef struct {
    pres_t p;
    expr_struct img[3];
} map_fixture;

static void map_fixture_init(map_fixture *f, const char *pres)
{
    pres_init(f->p);
    parse_pres_or_fail(f->p, pres);
    for (int i = 0; i < 3; i++)
        expr_init(f->img + i);
}

static void map_fixture_clear(map_fixture *f)
{
    for (int i = 0; i < 3; i++)
        expr_clear(f->img + i);
    pres_clear(f->p);
}

static void expect_map_error(const char *pres, const char *text, int line, int col,
                             ns_status status, const char *msg)
{
    map_fixture f;
    nserr_t err;
    ns_status st;

    map_fixture_init(&f, pres);
    nserr_init(err);
    st = pres_parse_map(f.img, f.p, text, 1, 1, err);
    if (st != status || err->line != line || err->col != col || strcmp(err->msg, msg) != 0)
        print_error("map '%s': got %d at %d:%d '%s'\n", text, st, err->line, err->col, err->msg);
    assert_int_equal(st, status);
    assert_int_equal(err->line, line);
    assert_int_equal(err->col, col);
    assert_string_equal(err->msg, msg);
    for (int i = 0; i < 3; i++)
        assert_null(f.img[i].root);
    map_fixture_clear(&f);
}

static void map_should_read_one_image_per_generator(void **state)
{
    map_fixture f;
    nserr_t err;
    char *s;
    (void)state;

    map_fixture_init(&f, "<a, b | [a,b,a], [a,b,b]>");
    nserr_init(err);
    assert_int_equal(pres_parse_map(f.img, f.p, "b -> b a, a -> a^2 b", 1, 1, err), NS_OK);
    s = pres_get_map_str(f.img, f.p);
    assert_string_equal(s, "a -> a^2 b, b -> b a");
    flint_free(s);
    assert_int_equal(f.img[1].root->kind, EXPR_RUN); /* b a: one run of letters */

    /* line breaks separate images as well as commas do */
    assert_int_equal(pres_parse_map(f.img, f.p, "a -> a^2 b  # first\n  b -> [a,b] b\n", 1, 1, err),
                     NS_OK);
    s = pres_get_map_str(f.img, f.p);
    assert_string_equal(s, "a -> a^2 b, b -> [a,b] b");
    /* and the printed form parses back */
    assert_int_equal(pres_parse_map(f.img, f.p, s, 1, 1, err), NS_OK);
    {
        char *t = pres_get_map_str(f.img, f.p);
        assert_string_equal(s, t);
        flint_free(t);
    }
    flint_free(s);
    map_fixture_clear(&f);
}

static void map_should_report_the_missing_generator_at_the_end(void **state)
{
    (void)state;
    expect_map_error("<a, b, c>", "a -> a,\n c -> b", 2, 8, NS_ERR_INPUT,
                     "no image for generator 'b'");
    expect_map_error("<a, b, c>", "", 1, 1, NS_ERR_INPUT, "no image for generator 'a'");
}

static void map_should_report_repeated_and_unknown_generators(void **state)
{
    (void)state;
    expect_map_error("<a, b>", "a -> a, b -> b,\n a -> b", 2, 2, NS_ERR_INPUT,
                     "second image for 'a' (first at 1:1)");
    expect_map_error("<a, b>", "a -> a, d -> b", 1, 9, NS_ERR_INPUT, "unknown generator 'd'");
    expect_map_error("<a, b>", "a -> a d, b -> b", 1, 8, NS_ERR_INPUT, "unknown generator 'd'");
}

static void map_should_reject_malformed_text_with_location(void **state)
{
    (void)state;
    expect_map_error("<a, b>", "a -> a b -> b", 1, 8, NS_ERR_SYNTAX,
                     "expected ',' or a line break before the next image");
    expect_map_error("<a, b>", "a a, b -> b", 1, 3, NS_ERR_SYNTAX,
                     "expected '->' after 'a', found 'a'");
    expect_map_error("<a, b>", "a ->, b -> b", 1, 5, NS_ERR_SYNTAX,
                     "expected the image of 'a' after '->', found ','");
    expect_map_error("<a, b>", "a -> a, b -> b,", 1, 16, NS_ERR_SYNTAX,
                     "expected 'generator -> image' after ','");
    expect_map_error("<a, b>", "a -> (a, b -> b", 1, 8, NS_ERR_SYNTAX,
                     "expected ')' to close '(' opened at 1:6");
    expect_map_error("<a, b>", "a -> a), b -> b", 1, 7, NS_ERR_SYNTAX, "unexpected ')'");
    expect_map_error("<a, b>", "-> a", 1, 1, NS_ERR_SYNTAX,
                     "expected 'generator -> image', found '->'");
}

static void map_failure_should_leave_images_unchanged(void **state)
{
    map_fixture f;
    nserr_t err;
    char *s;
    (void)state;

    map_fixture_init(&f, "<a, b>");
    nserr_init(err);
    assert_int_equal(pres_parse_map(f.img, f.p, "a -> b, b -> a", 1, 1, err), NS_OK);
    assert_int_equal(pres_parse_map(f.img, f.p, "a -> a^2, b -> c", 1, 1, err), NS_ERR_INPUT);
    s = pres_get_map_str(f.img, f.p);
    assert_string_equal(s, "a -> b, b -> a");
    flint_free(s);
    map_fixture_clear(&f);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(parse_should_read_generators_and_relations),
        cmocka_unit_test(parse_should_accept_presentations_without_relations),
        cmocka_unit_test(parse_should_keep_relation_text_on_one_line),
        cmocka_unit_test(parse_should_reject_duplicate_generators_with_both_locations),
        cmocka_unit_test(parse_should_reject_malformed_presentations_with_location),
        cmocka_unit_test(parse_should_limit_the_number_of_generators),
        cmocka_unit_test(parse_should_report_positions_in_the_callers_coordinates),
        cmocka_unit_test(get_str_should_print_a_presentation_that_parses_back),
        cmocka_unit_test(get_str_should_print_relations_as_written),
        cmocka_unit_test(free_family_should_name_letters_then_indexed_names),
        cmocka_unit_test(heisenberg_should_hold_in_its_matrix_model),
        cmocka_unit_test(heisenberg_1_should_have_three_generators),
        cmocka_unit_test(surface_should_have_one_balanced_relator),
        cmocka_unit_test(unitriangular_should_hold_in_UT_n_Z),
        cmocka_unit_test(unitriangular_should_name_superdiagonal_generators),
        cmocka_unit_test(raag_should_add_one_commutator_per_edge),
        cmocka_unit_test(raag_should_reject_bad_graphs_with_location),
        cmocka_unit_test(families_should_be_case_sensitive_and_checked),
        cmocka_unit_test(map_should_read_one_image_per_generator),
        cmocka_unit_test(map_should_report_the_missing_generator_at_the_end),
        cmocka_unit_test(map_should_report_repeated_and_unknown_generators),
        cmocka_unit_test(map_should_reject_malformed_text_with_location),
        cmocka_unit_test(map_failure_should_leave_images_unchanged),
    };
    int failed = cmocka_run_group_tests(tests, NULL, NULL);
    flint_cleanup_master(); /* FLINT's cache of big integers, for valgrind */
    return failed;
}
