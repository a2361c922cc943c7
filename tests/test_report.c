/* test_report.c — the report writers (report.h): the whole text and LaTeX
 * reports of one map checked line by line against values worked out by
 * hand, the inverse only on request, and the torsion action.
 *
 * The map alpha: a -> a^2 b, b -> a b on the free nilpotent group N(2,2)
 * (free(2), class 2), worked out without the engine:
 *  - layer 1 is Z^2 on a, b; the columns of M1 are the exponent sums of the
 *    images: (2, 1) and (1, 1), so M1 = [2 1; 1 1], trace 3, det 1,
 *    charpoly x^2 - 3x + 1, det(I - M1) = 1 - 3 + 1 = -1;
 *  - layer 2 is Z on [b,a], and a map of N(2,2) multiplies it by det M1
 *    (the commutator is bilinear and alternating), so M2 = [1],
 *    det(I - M2) = 0;
 *  - the eigenvalues of M1 are (3 +- sqrt 5)/2 = phi^2 and phi^-2, so
 *    rho_1 = phi^2 = 2.618033988749894848204586834365638... and the entropy
 *    log phi^2 = 0.962423650119206894995517826848736... (phi the golden
 *    ratio; the digits were checked with python3-sympy: N((3+sqrt(5))/2, 30),
 *    N(log((3+sqrt(5))/2), 30), N((3-sqrt(5))/2, 16));
 *  - Lefschetz = det(I - M1) det(I - M2) = 0, Nielsen = |L| = 0, and the
 *    Reidemeister number is infinite because det(I - M2) = 0 (Dekimpe and
 *    Goncalves 2014: R = |L| when finite, infinite exactly when some
 *    det(I - M_j) vanishes);
 *  - M1 is unimodular, so alpha is an automorphism, injective with image
 *    index 1; |eigenvalue| = 1 on layer 2, so neither hyperbolic nor
 *    expanding; the growth rate is rho_1 (Koberda 2013).
 *  - the inverse: M1^-1 = [1 -1; -1 2] gives a -> a b^-1 and
 *    b -> a^-1 b^2 up to layer 2, and by hand alpha(a b^-1) = a^2 b b^-1 a^-1
 *    = a, alpha(a^-1 b^2 [b,a]^-1) = b^-1 a^-2 (a b)^2 [b,a]^-1
 *    = b^-1 a^-1 b a b [b,a]^-1 = [b,a] b [b,a]^-1 = b ([b,a] is central). */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <stdio.h>
#include <string.h>
#include <cmocka.h>

#include <flint/flint.h>

#include "analysis.h"
#include "report.h"
#include "testutil.h"

/* Compares line by line, so that a failure names the first line that
 * differs. */
static void assert_report(const char *got, const char *want, const char *what)
{
    int line = 1;
    const char *g = got, *w = want;
    while (*g || *w) {
        const char *ge = strchr(g, '\n'), *we = strchr(w, '\n');
        size_t gl = ge ? (size_t)(ge - g) : strlen(g), wl = we ? (size_t)(we - w) : strlen(w);
        if (gl != wl || strncmp(g, w, gl) != 0)
            fail_msg("%s, line %d:\n  got  '%.*s'\n  want '%.*s'", what, line, (int)gl, g,
                     (int)wl, w);
        g += gl + (ge != NULL);
        w += wl + (we != NULL);
        line++;
    }
}

static const char *const want_text =
    /* the group: N(2,2) has Hirsch length 2 + 1 = 3, all pc generators free */
    "nilstep report\n"
    "\n"
    "group         <a, b>\n"
    "class         2\n"
    "Hirsch length 3\n"
    "pc generators 3\n"
    "\n"
    "layer  group                basis of the free part\n"
    "    1  Z^2                  a, b\n"
    "    2  Z                    [b,a]\n"
    "\n"
    /* the map and its images as normal words */
    "map           a -> a^2 b, b -> a b\n"
    "              an endomorphism of the class-2 quotient\n"
    "              a -> a^2 b\n"
    "              b -> a b\n"
    "\n"
    /* layer 1: M1, its charpoly, rho_1 = phi^2, det 1, det(I - M1) = -1,
     * eigenvalues phi^2 and phi^-2 (16 digits) */
    "layer 1: Z^2\n"
    "  matrix\n"
    "    [2 1]\n"
    "    [1 1]\n"
    "  charpoly      (x^2 - 3x + 1)\n"
    /* rho = (3 + sqrt 5)/2, the larger root of x^2 - 3x + 1 (by hand) */
    "  rho           2.61803398874989484820458683437 = (3 + sqrt(5))/2\n"
    "  rho is a root of x^2 - 3x + 1\n"
    "  rho^(1/1)     2.61803398874989484820458683437\n"
    "  det           1\n"
    "  det(I - M)    -1\n"
    "  eigenvalues\n"
    "    2.618033988749895 + 0i                       |.| = 2.618033988749895\n"
    "    0.3819660112501052 + 0i                      |.| = 0.3819660112501052\n"
    "\n"
    /* layer 2: M2 = det M1 = 1 */
    "layer 2: Z\n"
    "  matrix\n"
    "    [1]\n"
    "  charpoly      (x - 1)\n"
    "  rho           1\n"
    "  rho is a root of x - 1\n"
    "  rho^(1/2)     1\n"
    "  det           1\n"
    "  det(I - M)    0\n"
    "  eigenvalues\n"
    "    1 + 0i                                       |.| = 1\n"
    "\n"
    /* bounds max(phi^2, 1^(1/2)) and max(phi^2, 1), growth rho_1, entropy
     * log phi^2, the fixed-point numbers and the properties */
    "lower bound   2.61803398874989484820458683437  (max rho_j^(1/j), layer 1)\n"
    "upper bound   2.61803398874989484820458683437  (max rho_j, layer 1)\n"
    "growth rate   2.61803398874989484820458683437  (rho_1 >= 1, and the growth rate of a "
    "map of a nilpotent group is the spectral radius on the abelianisation)\n"
    "entropy       0.962423650119206894995517826849\n"
    "log growth    0.962423650119206894995517826849  (a lower bound for the entropy)\n"
    "Lefschetz     0\n"
    "Nielsen       0\n"
    "Reidemeister  infinite\n"
    "automorphism  yes\n"
    "injective     yes\n"
    "image index   1\n"
    "hyperbolic    no\n"
    "expanding     no\n";

static const char *const want_latex =
    "% nilstep report (LaTeX); needs \\usepackage{amsmath,amssymb}\n"
    "% Golden square\n"
    /* the presentation and the map in math notation */
    "\\noindent Group: $G = \\langle a,\\allowbreak b \\rangle$, class 2, Hirsch length 3.\\\\\n"
    "Map: $a \\mapsto a^{2} b,\\allowbreak b \\mapsto a b$.\n"
    "\n"
    "\\begin{tabular}{clllll}\n"
    "$j$ & $\\gamma_j/\\gamma_{j+1}$ & $M_j$ & $\\chi_{M_j}(x)$ & $\\rho_j$ & "
    "$\\rho_j^{1/j}$ \\\\\n"
    "\\hline\n"
    "1 & $\\mathbb{Z}^{2}$ & $\\begin{pmatrix}2 & 1 \\\\ 1 & 1\\end{pmatrix}$ & "
    "$(x^{2} - 3x + 1)$ & $\\frac{3+\\sqrt{5}}{2} \\approx 2.61803398874989484820458683437$ & "
    "$2.61803398874989484820458683437$ \\\\\n"
    "2 & $\\mathbb{Z}$ & $\\begin{pmatrix}1\\end{pmatrix}$ & $(x - 1)$ & $1$ & $1$ \\\\\n"
    "\\end{tabular}\n"
    "\n"
    "\\medskip\\noindent\n"
    "Lower bound $\\max_j \\rho_j^{1/j} = 2.61803398874989484820458683437$ (layer 1); "
    "upper bound $\\max_j \\rho_j = 2.61803398874989484820458683437$ (layer 1); "
    "growth rate $2.61803398874989484820458683437$.\\\\\n"
    "Entropy $h = 0.962423650119206894995517826849$; $L = 0$, $N = 0$, $R = \\infty$.\\\\\n"
    "Automorphism: yes; hyperbolic: no; expanding: no.\n";

static void text_and_latex_of_the_golden_square(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "free(2)", 2);
    analysis_map_or_fail(A, "a -> a^2 b, b -> a b");
    char *s = report_get_str_digits(A, REPORT_TEXT, NULL, 30);
    assert_report(s, want_text, "text report");
    flint_free(s);
    s = report_get_str_digits(A, REPORT_LATEX, "Golden square", 30);
    assert_report(s, want_latex, "LaTeX report");
    flint_free(s);

    /* the inverse appears only once the analysis computed it */
    nserr_t err;
    nserr_init(err);
    assert_int_equal(analysis_set_inverse(A, NULL, err), NS_OK);
    s = report_get_str_digits(A, REPORT_TEXT, NULL, 30);
    size_t n = strlen(want_text);
    assert_int_equal(strncmp(s, want_text, n), 0);
    assert_string_equal(s + n, "inverse       a -> a b^-1, b -> a^-1 b^2 [b,a]^-1\n");
    flint_free(s);
    s = report_get_str_digits(A, REPORT_LATEX, "Golden square", 30);
    n = strlen(want_latex);
    assert_int_equal(strncmp(s, want_latex, n), 0);
    assert_string_equal(s + n, "\\\\\nInverse: $a \\mapsto a b^{-1},\\allowbreak b \\mapsto "
                               "a^{-1} b^{2} [b, a]^{-1}$.\n");
    flint_free(s);
    /* a new map forgets it */
    analysis_map_or_fail(A, "a -> a^2 b, b -> a b");
    s = report_get_str_digits(A, REPORT_TEXT, NULL, 30);
    assert_report(s, want_text, "text report after a new map");
    flint_free(s);
    /* the default: 10 significant digits in text and LaTeX, rounded from
     * phi^2 = 2.6180339887498948... and log phi^2 = 0.96242365011920689...
     * (known values; tests/ref_closed_form.py checks the radius with sympy) */
    s = report_get_str(A, REPORT_TEXT, NULL);
    assert_non_null(strstr(s, "\n  rho           2.618033989 = (3 + sqrt(5))/2\n"));
    assert_non_null(strstr(s, "\nentropy       0.9624236501\n"));
    assert_non_null(strstr(s, "\n    0.3819660113 + 0i "));
    flint_free(s);
    s = report_get_str(A, REPORT_LATEX, NULL);
    assert_non_null(strstr(s, "$\\frac{3+\\sqrt{5}}{2} \\approx 2.618033989$ & $2.618033989$"));
    flint_free(s);
    nserr_clear(err);
    analysis_clear(A);
}

/* Not an automorphism: a -> a^2 doubles layer 1 in one direction
 * (det M1 = 2), so there is no inverse and the report says why. */
static void no_inverse_is_said(void **state)
{
    (void)state;
    analysis_t A;
    nserr_t err;
    analysis_init(A);
    nserr_init(err);
    analysis_group_or_fail(A, "free(2)", 2);
    analysis_map_or_fail(A, "a -> a^2, b -> b");
    assert_int_equal(analysis_set_inverse(A, NULL, err), NS_OK);
    char *s = report_get_str(A, REPORT_TEXT, NULL);
    assert_non_null(strstr(s, "\nautomorphism  no\n"));
    assert_non_null(strstr(s, "\ninjective     yes\nimage index   4\n")); /* det M1 det M2 = 2*2 */
    assert_non_null(strstr(s, "\ninverse       none (the map is not an automorphism)\n"));
    flint_free(s);
    nserr_clear(err);
    analysis_clear(A);
}

/* A layer with torsion shows the action on its pc generators: in
 * <a, t | t^2, [a,t]> (Z + Z/2) the map a -> a t, t -> t sends the pc
 * generators a, t to (1, 1) and (0, 1); the free part Z is fixed. */
static void torsion_action_and_invalid_map(void **state)
{
    (void)state;
    analysis_t A;
    analysis_init(A);
    analysis_group_or_fail(A, "<a, t | t^2, [a,t]>", 2);
    analysis_map_or_fail(A, "a -> a t, t -> t");
    char *s = report_get_str(A, REPORT_TEXT, NULL);
    assert_non_null(strstr(s, "\nlayer 1: Z + Z/2\n"
                              "  action on the layer's pc generators (modulo its power relations)\n"
                              "    [1 0]\n"
                              "    [1 1]\n"
                              "  matrix\n"
                              "    [1]\n"));
    flint_free(s);

    /* <a, b | a^2>: the swap sends a^2 to b^2, not trivial (b has infinite
     * order in the abelianisation Z/2 + Z): the report names the relator
     * and its image and stops there */
    analysis_group_or_fail(A, "<a, b | a^2>", 1);
    analysis_map_or_fail(A, "a -> b, b -> a");
    s = report_get_str(A, REPORT_TEXT, NULL);
    const char *tail = "\nmap           a -> b, b -> a\n"
                       "not well defined on the class-1 quotient: 1 relator is not mapped to 1\n"
                       "  a^2  ->  b^2\n"
                       /* b^2 is not trivial in Z/2 + Z: it fails at class 1 */
                       "      fails already on the class-1 quotient\n"
                       "      alpha(a^2) = b^2\n";
    size_t ls = strlen(s), lt = strlen(tail);
    assert_true(ls > lt);
    assert_string_equal(s + ls - lt, tail);
    flint_free(s);
    s = report_get_str(A, REPORT_LATEX, NULL);
    assert_non_null(strstr(s, "Map: $a \\mapsto b,\\allowbreak b \\mapsto a$, not well defined "
                              "on this quotient.\n"));
    assert_null(strstr(s, "pmatrix"));
    flint_free(s);
    analysis_clear(A);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(text_and_latex_of_the_golden_square),
        cmocka_unit_test(no_inverse_is_said),
        cmocka_unit_test(torsion_action_and_invalid_map),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
