/* test_expr.c — the word language: parsing, errors with locations, printing,
 * exponent sums.
 *
 * Meaning is checked outside the parser: words are evaluated in SL(2,Z) with
 * a -> [[1,2],[0,1]], b -> [[1,0],[2,1]], which generate a free group of
 * rank 2 (I. N. Sanov, 1947), so two words in a, b are equal exactly when
 * their matrices are.  The conventions checked are those of doc/design.md §2.1:
 * [x,y] = x^-1 y^-1 x y, [x,y,z] = [[x,y],z], x^y = y^-1 x y.
 *
 * Random tests print their seed; NILSTEP_SEED replays one, NILSTEP_ITER
 * multiplies the number of cases. */
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
#include <flint/fmpz_mat.h>

#include "expr.h"
#include "testutil.h"
#include "countalloc.h"

/* ------------------------------------------------------------------------ */
/* Helpers                                                                   */

static void make_names(names_t g, const char *const *list, int n)
{
    names_init(g);
    for (int i = 0; i < n; i++)
        names_add(g, list[i]);
}

static const char *const abc[] = {"a", "b", "c"};

/* Parses text in generators a, b, c and expects success. */
static void parse_ok(expr_t e, const char *text)
{
    names_t g;
    nserr_t err;
    ns_status st;

    make_names(g, abc, 3);
    nserr_init(err);
    st = expr_parse(e, text, 1, 1, g, err);
    if (st != NS_OK)
        print_error("parsing '%s': %d:%d %s\n", text, err->line, err->col, err->msg);
    assert_int_equal(st, NS_OK);
    names_clear(g);
}

/* Expects text to fail with the status, position and message given. */
static void expect_error(const char *text, int line, int col, ns_status status,
                         const char *msg)
{
    names_t g;
    nserr_t err;
    expr_t e;
    ns_status st;

    make_names(g, abc, 3);
    nserr_init(err);
    expr_init(e);
    st = expr_parse(e, text, 1, 1, g, err);
    if (st == NS_OK || err->line != line || err->col != col || strcmp(err->msg, msg) != 0)
        print_error("input '%s': got status %d at %d:%d '%s'\n", text, st, err->line, err->col,
                    err->msg);
    assert_int_equal(st, status);
    assert_int_equal(err->status, status);
    assert_int_equal(err->line, line);
    assert_int_equal(err->col, col);
    assert_string_equal(err->msg, msg);
    assert_null(e->root);
    expr_clear(e);
    names_clear(g);
}

static void expect_print(const char *text, const char *printed)
{
    names_t g;
    expr_t e;
    char *s;

    make_names(g, abc, 3);
    expr_init(e);
    parse_ok(e, text);
    s = expr_get_str(e, g);
    assert_string_equal(s, printed);
    flint_free(s);
    expr_clear(e);
    names_clear(g);
}

/* ---- evaluation in SL(2,Z) ---- */

/* Sanov's generators for a and b; c gets a third matrix (not free with
 * a, b, but the conventions hold in every group). */
static void sanov_init(fmpz_mat_struct *gens)
{
    for (int i = 0; i < 3; i++) {
        fmpz_mat_init(gens + i, 2, 2);
        fmpz_mat_one(gens + i);
    }
    fmpz_set_si(fmpz_mat_entry(gens + 0, 0, 1), 2);
    fmpz_set_si(fmpz_mat_entry(gens + 1, 1, 0), 2);
    fmpz_set_si(fmpz_mat_entry(gens + 2, 0, 0), 2);
    fmpz_set_si(fmpz_mat_entry(gens + 2, 0, 1), 1);
    fmpz_set_si(fmpz_mat_entry(gens + 2, 1, 0), 1);
    fmpz_set_si(fmpz_mat_entry(gens + 2, 1, 1), 1);
}

static void sanov_clear(fmpz_mat_struct *gens)
{
    for (int i = 0; i < 3; i++)
        fmpz_mat_clear(gens + i);
}

/* Matrix of a word given as a plain letter string: "aBb" = a b^-1 b
 * (capital = inverse).  An independent spelling of the same element. */
static void eval_letters(fmpz_mat_t out, const char *letters, const fmpz_mat_struct *gens)
{
    fmpz_mat_t t, x;
    fmpz_mat_init(t, 2, 2);
    fmpz_mat_init(x, 2, 2);
    fmpz_mat_one(out);
    for (const char *p = letters; *p; p++) {
        int i = (*p >= 'a') ? *p - 'a' : *p - 'A';
        if (*p < 'a')
            mat_inv_unimodular(x, gens + i);
        else
            fmpz_mat_set(x, gens + i);
        fmpz_mat_mul(t, out, x);
        fmpz_mat_swap(out, t);
    }
    fmpz_mat_clear(t);
    fmpz_mat_clear(x);
}

/* The word text and the letter string are the same element of F(a,b). */
static void expect_meaning(const char *text, const char *letters)
{
    fmpz_mat_struct gens[3];
    fmpz_mat_t x, y;
    expr_t e;

    sanov_init(gens);
    fmpz_mat_init(x, 2, 2);
    fmpz_mat_init(y, 2, 2);
    expr_init(e);
    parse_ok(e, text);
    eval_in_matrices(x, e->root, gens);
    eval_letters(y, letters, gens);
    if (!fmpz_mat_equal(x, y))
        print_error("'%s' is not '%s'\n", text, letters);
    assert_true(fmpz_mat_equal(x, y));
    expr_clear(e);
    fmpz_mat_clear(x);
    fmpz_mat_clear(y);
    sanov_clear(gens);
}

/* ------------------------------------------------------------------------ */
/* Meaning                                                                   */

static void commutator_should_be_x_inverse_y_inverse_x_y(void **state)
{
    (void)state;
    expect_meaning("[a,b]", "ABab");
    expect_meaning("[b,a]", "BAba");
    /* The other convention would give a b a^-1 b^-1, a different element
     * of the free group: the check can fail. */
    {
        fmpz_mat_struct gens[3];
        fmpz_mat_t x, y;
        sanov_init(gens);
        fmpz_mat_init(x, 2, 2);
        fmpz_mat_init(y, 2, 2);
        eval_letters(x, "ABab", gens);
        eval_letters(y, "abAB", gens);
        assert_false(fmpz_mat_equal(x, y));
        fmpz_mat_clear(x);
        fmpz_mat_clear(y);
        sanov_clear(gens);
    }
}

static void commutators_should_be_left_normed(void **state)
{
    (void)state;
    /* [a,b,a] = [[a,b],a] = [a,b]^-1 a^-1 [a,b] a */
    expect_meaning("[a,b,a]", "BAba" "A" "ABab" "a");
    {
        expr_t x, y;
        fmpz_mat_struct gens[3];
        fmpz_mat_t mx, my;
        sanov_init(gens);
        fmpz_mat_init(mx, 2, 2);
        fmpz_mat_init(my, 2, 2);
        expr_init(x);
        expr_init(y);
        parse_ok(x, "[a,b,b,a]");
        parse_ok(y, "[[[a,b],b],a]");
        eval_in_matrices(mx, x->root, gens);
        eval_in_matrices(my, y->root, gens);
        assert_true(fmpz_mat_equal(mx, my));
        expr_clear(x);
        expr_clear(y);
        fmpz_mat_clear(mx);
        fmpz_mat_clear(my);
        sanov_clear(gens);
    }
}

static void conjugate_should_be_y_inverse_x_y(void **state)
{
    (void)state;
    expect_meaning("a^b", "Bab");
    expect_meaning("a^(b^-1)", "baB");
    expect_meaning("a^(a b)", "BAaab");
    expect_meaning("a^[a,b]", "BAba" "a" "ABab");
}

static void powers_should_bind_tighter_than_products(void **state)
{
    (void)state;
    expect_meaning("a b^2", "abb");
    expect_meaning("a^2 b", "aab");
    expect_meaning("(a b)^2", "abab");
    expect_meaning("(a b)^-3", "BABABA");
    expect_meaning("a^-1 b^+2", "Abb");
    expect_meaning("a^(-2)", "AA");
    expect_meaning("[a,b]^2", "ABab" "ABab");
    expect_meaning("[a b, b^2]", "BA" "BB" "ab" "bb");
    expect_meaning("a*b * a", "aba");
    expect_meaning("1", "");
    expect_meaning("a 1 b", "ab");
    expect_meaning("a^0", "");
    expect_meaning("a # comment [\n b", "ab");
}

/* ------------------------------------------------------------------------ */
/* Trees                                                                     */

static void parse_should_build_flat_products_and_keep_big_exponents(void **state)
{
    expr_t e;
    fmpz_t big;
    (void)state;

    expr_init(e);
    /* the letters a, b, c (across the parentheses) are one run; the power
     * too big for a syllable keeps its own node with the fmpz exponent */
    parse_ok(e, "a (b c) a^123456789012345678901234567890");
    assert_int_equal(e->root->kind, EXPR_MUL);
    assert_int_equal(e->root->nkids, 2);
    assert_int_equal(e->root->kids[0]->kind, EXPR_RUN);
    assert_int_equal(e->root->kids[0]->nsyl, 3);
    assert_int_equal(e->root->kids[0]->syl[2].gen, 2);
    assert_int_equal(e->root->kids[1]->kind, EXPR_POW);
    fmpz_init(big);
    fmpz_set_str(big, "123456789012345678901234567890", 10);
    assert_true(fmpz_equal(e->root->kids[1]->exp, big));
    fmpz_clear(big);

    /* syllables: bare letters, small exponents (also written "(n)"), the
     * largest 32-bit ones; -2^31 and beyond are fmpz powers */
    parse_ok(e, "a b^-2 c^(3) a^1 b^0 c^2147483647 a^-2147483647");
    assert_int_equal(e->root->kind, EXPR_RUN);
    assert_int_equal(e->root->nsyl, 7);
    assert_int_equal(e->root->syl[0].exp, EXPR_SYL_BARE);
    assert_int_equal(expr_syl_exp(e->root->syl[0]), 1);
    assert_int_equal(e->root->syl[1].exp, -2);
    assert_int_equal(e->root->syl[2].exp, 3);
    assert_int_equal(e->root->syl[3].exp, 1);
    assert_int_equal(e->root->syl[4].exp, 0);
    assert_int_equal(e->root->syl[5].exp, INT32_MAX);
    assert_int_equal(e->root->syl[6].exp, -INT32_MAX);
    parse_ok(e, "a b^-2147483648 c");
    assert_int_equal(e->root->kind, EXPR_MUL);
    assert_int_equal(e->root->nkids, 3);
    assert_int_equal(e->root->kids[1]->kind, EXPR_POW);
    /* a lone letter or power of a letter stays a node of its own */
    parse_ok(e, "(a)^5");
    assert_int_equal(e->root->kind, EXPR_POW);
    assert_int_equal(e->root->kids[0]->kind, EXPR_GEN);
    parse_ok(e, "[a,b] c^2 [a,c]");
    assert_int_equal(e->root->kind, EXPR_MUL);
    assert_int_equal(e->root->kids[1]->kind, EXPR_POW);
    assert_int_equal(e->root->kids[1]->kids[0]->gen, 2);
    assert_int_equal(e->root->kids[1]->line, 1);
    assert_int_equal(e->root->kids[1]->col, 7);

    parse_ok(e, "a^-99999999999999999999999");
    assert_int_equal(e->root->kind, EXPR_POW);
    assert_true(fmpz_sgn(e->root->exp) < 0);
    {
        fmpz_t want;
        fmpz_init(want);
        fmpz_set_str(want, "-99999999999999999999999", 10);
        assert_true(fmpz_equal(e->root->exp, want));
        fmpz_clear(want);
    }

    parse_ok(e, "a^b");
    assert_int_equal(e->root->kind, EXPR_CONJ);
    assert_int_equal(e->root->kids[1]->kind, EXPR_GEN);
    assert_int_equal(e->root->kids[1]->gen, 1);

    parse_ok(e, "[a,b,c]");
    assert_int_equal(e->root->kind, EXPR_COMM);
    assert_int_equal(e->root->nkids, 3);
    expr_clear(e);
}

static void parse_should_record_node_positions(void **state)
{
    names_t g;
    nserr_t err;
    expr_t e;
    (void)state;

    make_names(g, abc, 3);
    nserr_init(err);
    expr_init(e);
    assert_int_equal(expr_parse(e, "a\n  [b,c]^2", 5, 10, g, err), NS_OK);
    assert_int_equal(e->root->kids[0]->line, 5);
    assert_int_equal(e->root->kids[0]->col, 10);
    assert_int_equal(e->root->kids[1]->line, 6);
    assert_int_equal(e->root->kids[1]->col, 3);
    expr_clear(e);
    names_clear(g);
}

/* ------------------------------------------------------------------------ */
/* Errors                                                                    */

static void parse_should_reject_unknown_generator_with_location(void **state)
{
    (void)state;
    expect_error("a b d", 1, 5, NS_ERR_INPUT, "unknown generator 'd'");
    expect_error("a\n [b, dd]", 2, 6, NS_ERR_INPUT, "unknown generator 'dd'");
}

static void parse_should_use_the_callers_coordinates(void **state)
{
    names_t g;
    nserr_t err;
    expr_t e;
    (void)state;

    make_names(g, abc, 3);
    nserr_init(err);
    expr_init(e);
    /* First line starts at column 9 of line 4; later lines at column 1. */
    assert_int_equal(expr_parse(e, "a x", 4, 9, g, err), NS_ERR_INPUT);
    assert_int_equal(err->line, 4);
    assert_int_equal(err->col, 11);
    assert_int_equal(expr_parse(e, "a\n    b x", 4, 9, g, err), NS_ERR_INPUT);
    assert_int_equal(err->line, 5);
    assert_int_equal(err->col, 7);
    /* Columns count characters, not bytes: "é" is one column. */
    assert_int_equal(expr_parse(e, "# é\n  é x", 1, 1, g, err), NS_ERR_SYNTAX);
    assert_int_equal(err->line, 2);
    assert_int_equal(err->col, 3);
    assert_string_equal(err->msg, "unexpected character 'é'");
    expr_clear(e);
    names_clear(g);
}

static void parse_should_name_the_unclosed_bracket(void **state)
{
    (void)state;
    expect_error("[a,\n  b", 2, 4, NS_ERR_SYNTAX, "expected ']' to close '[' opened at 1:1");
    expect_error("a (b c", 1, 7, NS_ERR_SYNTAX, "expected ')' to close '(' opened at 1:3");
    expect_error("[a, b)", 1, 6, NS_ERR_SYNTAX, "expected ']' to close '[' opened at 1:1");
    expect_error("(a b]", 1, 5, NS_ERR_SYNTAX, "expected ')' to close '(' opened at 1:1");
}

static void parse_should_reject_stray_closers(void **state)
{
    (void)state;
    expect_error("a b)", 1, 4, NS_ERR_SYNTAX, "unexpected ')'");
    expect_error("a]", 1, 2, NS_ERR_SYNTAX, "unexpected ']'");
    expect_error("a, b", 1, 2, NS_ERR_SYNTAX, "unexpected ','");
    expect_error(")", 1, 1, NS_ERR_SYNTAX, "unexpected ')'");
}

static void parse_should_reject_the_empty_word(void **state)
{
    (void)state;
    expect_error("", 1, 1, NS_ERR_SYNTAX, "empty word (the identity is written 1)");
    expect_error("  # only a comment\n", 1, 1, NS_ERR_SYNTAX,
                 "empty word (the identity is written 1)");
    expect_error("a ()", 1, 4, NS_ERR_SYNTAX, "empty parentheses (the identity is written 1)");
}

static void parse_should_reject_short_or_empty_commutators(void **state)
{
    (void)state;
    expect_error("[a]", 1, 1, NS_ERR_SYNTAX, "commutator needs at least two entries");
    expect_error("b []", 1, 3, NS_ERR_SYNTAX, "commutator needs at least two entries");
    expect_error("[a,]", 1, 4, NS_ERR_SYNTAX, "empty entry in commutator");
    expect_error("[a,,b]", 1, 4, NS_ERR_SYNTAX, "empty entry in commutator");
}

static void parse_should_require_integer_exponents(void **state)
{
    (void)state;
    expect_error("a^1.5", 1, 3, NS_ERR_SYNTAX, "exponent must be an integer");
    expect_error("a^(1/2)", 1, 4, NS_ERR_SYNTAX, "exponent must be an integer");
    expect_error("a^-b", 1, 4, NS_ERR_SYNTAX,
                 "exponent must be an integer (to conjugate by an inverse write x^(y^-1))");
    expect_error("a^- 1.0", 1, 5, NS_ERR_SYNTAX, "exponent must be an integer");
    expect_error("a^", 1, 3, NS_ERR_SYNTAX, "expected an exponent after '^', found end of text");
    expect_error("a^)", 1, 3, NS_ERR_SYNTAX, "expected an exponent after '^', found ')'");
}

static void parse_should_reject_chained_carets(void **state)
{
    (void)state;
    const char *m = "a second '^' is ambiguous: add parentheses, as in (a^2)^3, a^(b^-1) or (a^b)^c";
    expect_error("a^2^3", 1, 4, NS_ERR_SYNTAX, m);
    expect_error("a^b^-1", 1, 4, NS_ERR_SYNTAX, m);
    expect_error("b [a,b]^c^2", 1, 10, NS_ERR_SYNTAX, m);
}

static void parse_should_reject_stray_numbers_and_characters(void **state)
{
    (void)state;
    expect_error("a 2", 1, 3, NS_ERR_SYNTAX,
                 "unexpected number '2' (only 1, the identity, can stand as a factor)");
    expect_error("a % b", 1, 3, NS_ERR_SYNTAX, "unexpected character '%'");
    expect_error("(a % b)", 1, 4, NS_ERR_SYNTAX, "unexpected character '%'");
    expect_error("* a", 1, 1, NS_ERR_SYNTAX, "unexpected '*'");
    expect_error("a *", 1, 4, NS_ERR_SYNTAX, "expected a factor after '*', found end of text");
    expect_error("a = b", 1, 3, NS_ERR_SYNTAX, "unexpected '='");
    expect_error("a \xff", 1, 3, NS_ERR_SYNTAX, "unexpected byte 0xff");
}

static void parse_should_limit_nesting_depth(void **state)
{
    char text[2 * (EXPR_MAX_DEPTH + 1) + 2];
    names_t g;
    nserr_t err;
    expr_t e;
    int k;
    (void)state;

    make_names(g, abc, 3);
    nserr_init(err);
    expr_init(e);
    /* EXPR_MAX_DEPTH levels parse ... */
    for (k = 0; k < EXPR_MAX_DEPTH; k++)
        text[k] = '(';
    text[k] = 'a';
    for (int j = 0; j < EXPR_MAX_DEPTH; j++)
        text[k + 1 + j] = ')';
    text[2 * EXPR_MAX_DEPTH + 1] = '\0';
    assert_int_equal(expr_parse(e, text, 1, 1, g, err), NS_OK);
    assert_int_equal(e->root->kind, EXPR_GEN);
    /* ... one more is refused at the bracket that goes too deep. */
    for (k = 0; k <= EXPR_MAX_DEPTH; k++)
        text[k] = '[';
    text[k] = '\0';
    assert_int_equal(expr_parse(e, text, 1, 1, g, err), NS_ERR_LIMIT);
    assert_int_equal(err->line, 1);
    assert_int_equal(err->col, EXPR_MAX_DEPTH + 1);
    /* A long flat word is not deep. */
    {
        size_t n = 300000;
        char *w = malloc(n + 1);
        for (size_t i = 0; i < n; i += 2) {
            w[i] = 'a';
            w[i + 1] = ' ';
        }
        w[n] = '\0';
        assert_int_equal(expr_parse(e, w, 1, 1, g, err), NS_OK);
        assert_int_equal(e->root->kind, EXPR_RUN);
        assert_int_equal(e->root->nsyl, (slong)(n / 2));
        free(w);
    }
    expr_clear(e);
    names_clear(g);
}

/* A word of millions of letters (a session of 12 MB once took 37 bytes of
 * tree per input byte, a node per letter): the tree holds at most 5 bytes
 * per input byte, parsing needs at most 13 at its peak, a copy (as the
 * quotient keeps one) costs the same again, and both print back as given.
 * Bounds of our own, from the 8-byte syllable of expr.h; the text has 3
 * letters per 8 bytes ("a b c a " at 2 bytes per letter is the densest). */
static void parse_should_cost_few_bytes_per_input_byte(void **state)
{
    names_t g;
    nserr_t err;
    expr_t e, f;
    size_t n = 4000000;
    char *w = malloc(n + 1);
    (void)state;

    for (size_t i = 0; i < n; i += 8)
        memcpy(w + i, i % 16 ? "b^-20 c " : "a b c a ", 8);
    w[n - 1] = '\0'; /* the last blank */
    make_names(g, abc, 3);
    nserr_init(err);
    expr_init(e);
    expr_init(f);
    countalloc_install();
    assert_int_equal(expr_parse(e, w, 1, 1, g, err), NS_OK);
    long long held = countalloc_now, peak = countalloc_peak;
    countalloc_peak = countalloc_now;
    expr_set(f, e);
    long long copy = countalloc_now - held, copy_peak = countalloc_peak - held;
    countalloc_uninstall();
    print_message("parse: %.2f bytes held, %.2f at the peak; copy: %.2f, %.2f at the peak "
                  "(per input byte)\n",
                  (double)held / (double)n, (double)peak / (double)n, (double)copy / (double)n,
                  (double)copy_peak / (double)n);
    assert_true(held <= 5 * (long long)n);
    assert_true(peak <= 13 * (long long)n);
    assert_true(copy_peak <= 6 * (long long)n);
    {
        char *s = expr_get_str(f, g);
        assert_int_equal(strlen(s), n - 1);
        assert_memory_equal(s, w, n - 1);
        flint_free(s);
    }
    /* freed through the counting allocator's malloc: no mixed heaps here,
     * since every hook is the C library's own */
    expr_clear(e);
    expr_clear(f);
    names_clear(g);
    free(w);
}

/* ------------------------------------------------------------------------ */
/* Printing                                                                  */

static void print_should_use_minimal_parentheses(void **state)
{
    (void)state;
    expect_print("a^2 b^-1 (a b)^3 [a,b,b] a^b a*b", "a^2 b^-1 (a b)^3 [a,b,b] a^b a b");
    expect_print("((a))", "a");
    expect_print("(a^2)^3", "(a^2)^3");
    expect_print("(a^b)^c", "(a^b)^c");
    expect_print("a^(b^-1)", "a^(b^-1)");
    expect_print("a^(b c)", "a^(b c)");
    expect_print("[a b, c^2]", "[a b, c^2]");
    expect_print("[a,(b c)^2]", "[a,(b c)^2]");
    expect_print("[[a,b],c]^-1", "[[a,b],c]^-1");
    expect_print("a^(-7)", "a^-7");
    expect_print("a^+7", "a^7");
    expect_print("(a (b c)) a", "a b c a");
    expect_print("1", "1");
    expect_print("1^5", "1^5");
}

/* Random trees over a, b, c (small exponents when for_matrices). */
static expr_node *random_node(int depth, int for_matrices)
{
    int kind = depth <= 0 ? (int)rng_range(0, 1) : (int)rng_range(0, 6);
    expr_node *n;

    switch (kind) {
    case 0:
        n = expr_node_new(EXPR_GEN, 0, 0);
        n->gen = rng_range(0, for_matrices ? 1 : 2);
        return n;
    case 1:
        if (rng_range(0, 4) != 0) {
            n = expr_node_new(EXPR_GEN, 0, 0);
            n->gen = rng_range(0, for_matrices ? 1 : 2);
        } else {
            n = expr_node_new(EXPR_ONE, 0, 0);
        }
        return n;
    case 2:
        n = expr_node_new(EXPR_MUL, 0, 0);
        for (long i = rng_range(2, 4); i > 0; i--)
            expr_node_add_kid(n, random_node(depth - 1, for_matrices));
        return n;
    case 3:
        n = expr_node_new(EXPR_POW, 0, 0);
        if (for_matrices || rng_range(0, 3) != 0) {
            fmpz_set_si(n->exp, rng_range(-3, 3));
        } else {
            fmpz_set_ui(n->exp, rng_next());
            fmpz_mul_ui(n->exp, n->exp, rng_next());
            if (rng_range(0, 1))
                fmpz_neg(n->exp, n->exp);
        }
        expr_node_add_kid(n, random_node(depth - 1, for_matrices));
        return n;
    case 4:
        n = expr_node_new(EXPR_COMM, 0, 0);
        for (long i = rng_range(2, 3); i > 0; i--)
            expr_node_add_kid(n, random_node(depth - 1, for_matrices));
        return n;
    case 5:
        n = expr_node_new(EXPR_CONJ, 0, 0);
        expr_node_add_kid(n, random_node(depth - 1, for_matrices));
        expr_node_add_kid(n, random_node(depth - 1, for_matrices));
        return n;
    default: {
        slong k = rng_range(2, 4);
        expr_syl *v = flint_malloc(sizeof(expr_syl) * k);
        for (slong i = 0; i < k; i++) {
            v[i].gen = (int32_t)rng_range(0, for_matrices ? 1 : 2);
            if (rng_range(0, 2) == 0)
                v[i].exp = EXPR_SYL_BARE;
            else if (for_matrices || rng_range(0, 3) != 0)
                v[i].exp = (int32_t)rng_range(-3, 3);
            else
                v[i].exp = rng_range(0, 1) ? INT32_MAX : -INT32_MAX;
        }
        return expr_node_new_run(v, k, 0, 0);
    }
    }
}

static void check_sums_equal(const expr_t x, const expr_t y, slong ngens)
{
    fmpz *sx = _fmpz_vec_init(ngens), *sy = _fmpz_vec_init(ngens);
    expr_exponent_sums(sx, x, ngens);
    expr_exponent_sums(sy, y, ngens);
    assert_true(_fmpz_vec_equal(sx, sy, ngens));
    _fmpz_vec_clear(sx, ngens);
    _fmpz_vec_clear(sy, ngens);
}

static void print_then_parse_should_be_stable_on_random_words(void **state)
{
    names_t g;
    nserr_t err;
    long cases = count_scaled_by("NILSTEP_ITER", 400);
    (void)state;

    rng_seed_test("round trip", 20240601ULL, "set NILSTEP_SEED to replay");
    make_names(g, abc, 3);
    nserr_init(err);
    for (long t = 0; t < cases; t++) {
        int for_matrices = (t % 2 == 0);
        expr_t x, y, z;
        char *s1, *s2;

        expr_init(x);
        expr_init(y);
        expr_init(z);
        x->root = random_node((int)rng_range(0, 5), for_matrices);
        s1 = expr_get_str(x, g);
        if (expr_parse(y, s1, 1, 1, g, err) != NS_OK)
            fail_msg("case %ld: '%s' does not parse back: %d:%d %s", t, s1, err->line, err->col,
                     err->msg);
        s2 = expr_get_str(y, g);
        if (strcmp(s1, s2) != 0)
            fail_msg("case %ld: printed '%s', reprinted '%s'", t, s1, s2);
        check_sums_equal(x, y, 3);

        /* The printed text means the same element (free group on a, b). */
        if (for_matrices) {
            fmpz_mat_struct gens[3];
            fmpz_mat_t mx, my;
            sanov_init(gens);
            fmpz_mat_init(mx, 2, 2);
            fmpz_mat_init(my, 2, 2);
            eval_in_matrices(mx, x->root, gens);
            eval_in_matrices(my, y->root, gens);
            if (!fmpz_mat_equal(mx, my))
                fail_msg("case %ld: '%s' changed its meaning", t, s1);
            fmpz_mat_clear(mx);
            fmpz_mat_clear(my);
            sanov_clear(gens);
        }
        /* expr_set gives an equal, independent tree. */
        expr_set(z, x);
        expr_clear(x);
        {
            char *s3 = expr_get_str(z, g);
            assert_string_equal(s1, s3);
            flint_free(s3);
        }
        flint_free(s1);
        flint_free(s2);
        expr_clear(y);
        expr_clear(z);
    }
    names_clear(g);
}

/* ------------------------------------------------------------------------ */
/* Exponent sums                                                             */

static void exponent_sums_should_follow_the_definitions(void **state)
{
    expr_t e;
    fmpz sums[3] = {0, 0, 0};
    fmpz_t want;
    (void)state;

    expr_init(e);
    fmpz_init(want);
    parse_ok(e, "a^2 b^-1 (a b)^3 [a,b,b] a^b a*b c^(a b)");
    expr_exponent_sums(sums, e, 3);
    /* a: 2 + 3 + 1 + 1 = 7; b: -1 + 3 + 1 = 3; c: 1 (conjugator counts 0) */
    assert_true(fmpz_equal_si(sums + 0, 7));
    assert_true(fmpz_equal_si(sums + 1, 3));
    assert_true(fmpz_equal_si(sums + 2, 1));

    parse_ok(e, "(a^1000000000000000000000000000000 b^-1)^-1000000000000000000000000000000");
    expr_exponent_sums(sums, e, 3);
    fmpz_set_str(want, "-1000000000000000000000000000000000000000000000000000000000000", 10);
    assert_true(fmpz_equal(sums + 0, want));
    fmpz_set_str(want, "1000000000000000000000000000000", 10);
    assert_true(fmpz_equal(sums + 1, want));
    assert_true(fmpz_is_zero(sums + 2));

    parse_ok(e, "[a^5 b, c]^7 1");
    expr_exponent_sums(sums, e, 3);
    for (int i = 0; i < 3; i++)
        assert_true(fmpz_is_zero(sums + i));
    for (int i = 0; i < 3; i++)
        fmpz_clear(sums + i);
    fmpz_clear(want);
    expr_clear(e);
}

/* The exponent sum of generator i is the image under the homomorphism
 * gen i -> [[1,1],[0,1]], other generators -> identity, into the additive
 * group Z written as unitriangular matrices.  eval_in_matrices computes that
 * image by plain group arithmetic, independently of expr_exponent_sums. */
static void exponent_sums_should_match_the_abelianisation(void **state)
{
    long cases = count_scaled_by("NILSTEP_ITER", 300);
    (void)state;

    rng_seed_test("exponent sums", 20240601ULL, "set NILSTEP_SEED to replay");
    for (long t = 0; t < cases; t++) {
        expr_t x;
        fmpz sums[3] = {0, 0, 0};
        expr_init(x);
        x->root = random_node((int)rng_range(0, 5), 1);
        expr_exponent_sums(sums, x, 3);
        for (int i = 0; i < 3; i++) {
            fmpz_mat_struct gens[3];
            fmpz_mat_t m;
            for (int j = 0; j < 3; j++) {
                fmpz_mat_init(gens + j, 2, 2);
                fmpz_mat_one(gens + j);
            }
            fmpz_one(fmpz_mat_entry(gens + i, 0, 1));
            fmpz_mat_init(m, 2, 2);
            eval_in_matrices(m, x->root, gens);
            if (!fmpz_equal(fmpz_mat_entry(m, 0, 1), sums + i)) {
                names_t g;
                make_names(g, abc, 3);
                char *s = expr_get_str(x, g);
                print_error("word %s\n", s);
                flint_free(s);
                names_clear(g);
                fail_msg("case %ld, generator %d", t, i);
            }
            fmpz_mat_clear(m);
            for (int j = 0; j < 3; j++)
                fmpz_mat_clear(gens + j);
        }
        for (int i = 0; i < 3; i++)
            fmpz_clear(sums + i);
        expr_clear(x);
    }
}

/* ------------------------------------------------------------------------ */
/* Deep trees from other modules                                             */

static void deep_trees_should_copy_print_and_free_without_recursion(void **state)
{
    const slong depth = 200000;
    names_t g;
    expr_t e, f;
    expr_node *n;
    fmpz sums[3] = {0, 0, 0};
    char *s;
    (void)state;

    make_names(g, abc, 3);
    n = expr_node_new(EXPR_GEN, 0, 0);
    n->gen = 0;
    for (slong i = 0; i < depth; i++) {
        expr_node *p;
        if (i % 2 == 0) {
            p = expr_node_new(EXPR_POW, 0, 0);
            fmpz_set_si(p->exp, -1);
            expr_node_add_kid(p, n);
        } else {
            p = expr_node_new(EXPR_CONJ, 0, 0);
            expr_node *b = expr_node_new(EXPR_GEN, 0, 0);
            b->gen = 1;
            expr_node_add_kid(p, n);
            expr_node_add_kid(p, b);
        }
        n = p;
    }
    expr_init(e);
    expr_init(f);
    e->root = n;
    expr_set(f, e);
    expr_exponent_sums(sums, f, 3);
    /* depth/2 inversions of a: sign (-1)^(depth/2) = +1 for depth 200000 */
    assert_true(fmpz_equal_si(sums + 0, 1));
    assert_true(fmpz_is_zero(sums + 1));
    s = expr_get_str(f, g);
    assert_true(strlen(s) > (size_t)depth);
    assert_int_equal(strncmp(s, "(((", 3), 0);
    flint_free(s);
    expr_clear(e);
    expr_clear(f);
    for (int i = 0; i < 3; i++)
        fmpz_clear(sums + i);
    names_clear(g);
}

static void names_should_find_exact_matches_only(void **state)
{
    names_t g, h;
    (void)state;

    names_init(g);
    assert_int_equal(names_add(g, "x1"), 0);
    assert_int_equal(names_add(g, "x"), 1);
    assert_int_equal(names_add(g, "x10"), 2);
    assert_int_equal(names_find(g, "x10 rest", 3), 2);
    assert_int_equal(names_find(g, "x1", 1), 1);
    assert_int_equal(names_find(g, "x1", 2), 0);
    assert_int_equal(names_find(g, "y", 1), -1);
    names_init(h);
    names_set(h, g);
    names_clear(g);
    assert_int_equal(h->n, 3);
    assert_string_equal(h->name[2], "x10");
    names_clear(h);
}

/* LaTeX of words (issue 9, item 16), written by hand from the meaning:
 * powers and conjugates as superscripts, parentheses only around a
 * product, power or conjugate as their base; names with a subscript. */
static void latex_of_words(void **state)
{
    (void)state;
    static const struct {
        const char *in, *want;
    } cases[] = {
        {"a^2 b", "a^{2} b"},
        {"[a,b]^-1", "[a, b]^{-1}"},
        {"(a b)^-3", "(a b)^{-3}"},
        {"[a b, c^2, a]", "[a b, c^{2}, a]"},
        {"a^(b c)", "a^{b c}"},
        {"(a^2)^3", "(a^{2})^{3}"},
        {"(a^b)^c", "(a^{b})^{c}"},
        {"1", "1"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        expr_t e;
        names_t g;
        expr_init(e);
        parse_ok(e, cases[i].in);
        make_names(g, abc, 3);
        char *s = expr_node_get_latex(e->root, g);
        if (strcmp(s, cases[i].want) != 0)
            fail_msg("%s: LaTeX %s, want %s", cases[i].in, s, cases[i].want);
        flint_free(s);
        names_clear(g);
        expr_clear(e);
    }
    static const char *const names[][2] = {
        {"a", "a"}, {"x1", "x_{1}"}, {"e9_10", "e_{9,10}"}, {"ab", "\\mathit{ab}"},
        {"y_2", "y_{2}"}, {"gen_b1", "\\mathit{gen}_{b1}"},
    };
    for (size_t i = 0; i < sizeof names / sizeof names[0]; i++) {
        char *s = expr_name_get_latex(names[i][0]);
        assert_string_equal(s, names[i][1]);
        flint_free(s);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(commutator_should_be_x_inverse_y_inverse_x_y),
        cmocka_unit_test(commutators_should_be_left_normed),
        cmocka_unit_test(conjugate_should_be_y_inverse_x_y),
        cmocka_unit_test(powers_should_bind_tighter_than_products),
        cmocka_unit_test(parse_should_build_flat_products_and_keep_big_exponents),
        cmocka_unit_test(parse_should_record_node_positions),
        cmocka_unit_test(parse_should_reject_unknown_generator_with_location),
        cmocka_unit_test(parse_should_use_the_callers_coordinates),
        cmocka_unit_test(parse_should_name_the_unclosed_bracket),
        cmocka_unit_test(parse_should_reject_stray_closers),
        cmocka_unit_test(parse_should_reject_the_empty_word),
        cmocka_unit_test(parse_should_reject_short_or_empty_commutators),
        cmocka_unit_test(parse_should_require_integer_exponents),
        cmocka_unit_test(parse_should_reject_chained_carets),
        cmocka_unit_test(parse_should_reject_stray_numbers_and_characters),
        cmocka_unit_test(parse_should_limit_nesting_depth),
        cmocka_unit_test(parse_should_cost_few_bytes_per_input_byte),
        cmocka_unit_test(print_should_use_minimal_parentheses),
        cmocka_unit_test(print_then_parse_should_be_stable_on_random_words),
        cmocka_unit_test(exponent_sums_should_follow_the_definitions),
        cmocka_unit_test(exponent_sums_should_match_the_abelianisation),
        cmocka_unit_test(deep_trees_should_copy_print_and_free_without_recursion),
        cmocka_unit_test(names_should_find_exact_matches_only),
        cmocka_unit_test(latex_of_words),
    };
    int failed = cmocka_run_group_tests(tests, NULL, NULL);
    flint_cleanup_master(); /* FLINT's cache of big integers, for valgrind */
    return failed;
}
