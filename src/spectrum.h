/* spectrum.h — exact and certified eigenvalue data of an integer matrix.
 *
 * A spectrum_t holds, for a square integer matrix M of dimension d >= 0:
 * the characteristic polynomial p(x) = det(xI - M) and its factorisation
 * over Z, det M, det(I - M), the eigenvalues as certified complex balls,
 * the exact position of every eigenvalue relative to the unit circle, the
 * spectral radius (exactly as an algebraic number when the exactness budget
 * allows it, always as a certified ball), and the entropy contribution
 * sum_{|lambda| > 1} log |lambda|.  d = 0 is the zero space: p = 1, no
 * eigenvalues, det M = det(I - M) = 1, spectral radius 0.
 *
 * Every yes/no answer about the spectrum (is |lambda| = 1, which eigenvalue
 * has the largest modulus, is rho_a = rho_b) is decided exactly or not at
 * all; no floating tolerance is ever used.  The tools:
 *
 * - Ball arithmetic and certified polynomial roots from Arb
 *   (F. Johansson, "Arb: efficient arbitrary-precision midpoint-radius
 *   interval arithmetic", IEEE Transactions on Computers 66(8), 2017).
 *   A root ball returned by arb_fmpz_poly_complex_roots for a squarefree
 *   polynomial contains exactly one root, and real roots are certified real.
 * - Exact algebraic numbers from Calcium's qqbar type
 *   (F. Johansson, "Calcium: computing in exact real and complex fields",
 *   ISSAC 2021).
 * - Kronecker's theorem (L. Kronecker, "Zwei Saetze ueber Gleichungen mit
 *   ganzzahligen Coefficienten", J. reine angew. Math. 53, 1857): a monic
 *   integer polynomial with f(0) != 0 all of whose roots lie in the closed
 *   unit disc has only roots of unity as roots.  Since the product of the
 *   roots of an irreducible monic factor f != x is +-f(0), a nonzero
 *   integer, such a factor with no root outside the unit disc has all its
 *   roots on the circle, hence is cyclotomic.
 *
 * How "|lambda| = 1" is decided, per irreducible factor f of p (all factors
 * are monic because p is):
 *   1. f = x - a: exactly, |a| against 1.
 *   2. f cyclotomic (FLINT's fmpz_poly_is_cyclotomic): every root has
 *      modulus 1.
 *   3. f not palindromic: no root has modulus 1.  If |lambda| = 1 then
 *      conj(lambda) = 1/lambda is also a root of f, so f and its reversal
 *      x^n f(1/x) (also irreducible) share a root, hence are proportional,
 *      hence f is palindromic or anti-palindromic; an irreducible
 *      anti-palindromic f has f(1) = 0, so f = x - 1, covered by case 2.
 *   4. f palindromic of degree 2m, not cyclotomic: f(x) = x^m g(x + 1/x)
 *      for a monic integer g of degree m (g is irreducible and squarefree).
 *      A root lambda has |lambda| = 1 iff t = lambda + 1/lambda is real with
 *      |t| <= 2, and t = +-2 is impossible (it would make (x -+ 1)^2 divide
 *      f).  So f has exactly u = 2 * #{real roots t of g, |t| < 2} roots on
 *      the circle; the real roots of g come certified from Arb and each is
 *      compared with +-2 by refining its ball (it is never equal).  Then the
 *      root balls of f are refined until exactly u of them have a modulus
 *      ball containing 1: those are the unimodular roots, and every other
 *      root is on the side its ball shows.
 * This works in every degree; no qqbar arithmetic is needed for it.
 *
 * How the spectral radius rho is made exact:
 *   - rho = 0 iff p = x^d (nilpotent);  rho = 1 iff no eigenvalue lies
 *     outside the unit disc and M is not nilpotent (Kronecker, above).
 *   - Otherwise the roots whose modulus ball can reach the maximum are the
 *     candidates; their factors are refined a few times to separate them.
 *     Each surviving candidate gets an exact modulus: for a real root
 *     lambda of f, |lambda| is the root of f(x) (lambda > 0) or of
 *     (-1)^n f(-x) (lambda < 0) lying in the ball +-lambda, no qqbar_abs
 *     needed; for a non-real root, qqbar_abs is used only when
 *     deg f <= SPECTRUM_QQBAR_ABS_MAX_DEGREE.  When all candidates have an
 *     exact modulus, rho is their exact maximum (qqbar comparisons).
 *     Otherwise rho has no exact form (spectrum_radius_is_exact returns 0),
 *     but its certified ball is the maximum of the candidates' modulus balls
 *     and can be refined to any precision.
 *
 * Ownership: the caller owns a spectrum_t; spectrum_init / spectrum_clear
 * must be paired.  Pointers returned by accessors are borrowed: valid until
 * the spectrum is recomputed or cleared.  Strings returned by *_get_str
 * functions follow the engine's string scheme (strbuf.h): allocated with
 * flint_malloc, released with flint_free().
 * Functions taking a const spectrum_t leave it unchanged (refinements work
 * on temporaries).  No function keeps global state, prints or exits.
 *
 * The characteristic polynomial comes from charpoly.h (FLINT's arithmetic,
 * cancellable and threaded); the module's own files are listed in
 * spectrum_internal.h. */
#ifndef NILSTEP_SPECTRUM_H
#define NILSTEP_SPECTRUM_H

#include <flint/flint.h>
#include <flint/fmpz.h>
#include <flint/fmpz_mat.h>
#include <flint/fmpz_poly.h>
#include <flint/fmpz_poly_factor.h>
#include <arb.h>
#include <acb.h>
#include <calcium/qqbar.h>

#include "nserr.h"

/* Every stored eigenvalue ball has acb_rel_accuracy_bits >= this, i.e.
 * radius < 2^-SPECTRUM_ROOT_BITS times the larger of |Re| and |Im|. */
#define SPECTRUM_ROOT_BITS 100

/* Exactness budget: the exact modulus of a dominant non-real eigenvalue is
 * computed with qqbar_abs only when its irreducible factor has at most this
 * degree (the result can have degree n(n-1); degree 16 costs ~50 ms). */
#define SPECTRUM_QQBAR_ABS_MAX_DEGREE 16

/* Refinement cap in bits.  Refinements that are guaranteed to terminate
 * (separating a root from the unit circle) stop with NS_ERR_LIMIT beyond
 * it; comparisons that are not guaranteed to terminate stop at
 * SPECTRUM_CMP_PREC_MAX and report SPECTRUM_CMP_UNDECIDED. */
#define SPECTRUM_PREC_MAX (1L << 16)
#define SPECTRUM_CMP_PREC_MAX 2048

/* Default number of significant digits of the decimal strings. */
#define SPECTRUM_DIGITS_DEFAULT 30

/* Returned by the comparison functions when the answer cannot be
 * certified within the budget (see spectrum_cmp_radius). */
#define SPECTRUM_CMP_UNDECIDED 2

/* Styles for the polynomial strings:
 *   PLAIN  "(x - 2)^2 (x^2 - 3x + 1)"        for people
 *   ASCII  "(x - 2)^2*(x^2 - 3*x + 1)"       explicit products, for tools
 *   LATEX  "(x - 2)^{2} (x^{2} - 3x + 1)"    for LaTeX reports */
#define SPECTRUM_STR_PLAIN 0
#define SPECTRUM_STR_ASCII 1
#define SPECTRUM_STR_LATEX 2

typedef struct
{
    slong dim;                     /* d */
    fmpz_poly_t charpoly;          /* det(xI - M), monic of degree d */
    fmpz_poly_factor_t factors;    /* content 1; monic irreducible factors
                                      sorted: x first, then by degree, then
                                      by coefficients from the constant up */
    fmpz_t det;                    /* det M = (-1)^d p(0) */
    fmpz_t det_one_minus;          /* det(I - M) = p(1) */

    /* Distinct roots, factor by factor: factor k owns the deg(p_k)
       consecutive entries starting at root_start[k], in Arb's order (real
       roots ascending, then conjugate pairs, upper half-plane first). */
    slong nroots;
    slong *root_start;             /* length factors->num + 1 */
    acb_ptr roots;
    arb_ptr root_abs;              /* |root|; exactly 1 when unimodular */
    slong *root_factor;
    int *root_side;                /* -1, 0, 1: |root| <, =, > 1, exact */
    slong *fac_unimodular;         /* per factor: number of roots on |z|=1 */

    slong *eig_root;               /* length d: index into roots; sorted by
                                      decreasing modulus midpoint */
    slong count_below, count_on, count_above;   /* with multiplicity */

    arb_t radius;                  /* certified ball of rho */
    int radius_exact;              /* radius_qqbar holds rho */
    qqbar_t radius_qqbar;
    slong ndom;                    /* factors that may attain rho (all that */
    slong *dom;                    /*  do when rho is exact) */

    arb_t entropy;                 /* sum_{|lambda|>1} log|lambda| */

    slong charpoly_primes;         /* primes charpoly_compute_bounded used;
                                      0 when FLINT's fmpz_mat_charpoly did the
                                      work (small d) or cp was given */
} spectrum_struct;

typedef spectrum_struct spectrum_t[1];

/* ---- life cycle ------------------------------------------------------ */

/* Initialises S to the spectrum of the 0x0 matrix.  Pair with
 * spectrum_clear. */
void spectrum_init(spectrum_t S);

/* Releases everything S owns. */
void spectrum_clear(spectrum_t S);

/* Computes the spectrum of M into S (previous contents are replaced).
 * M is read only and is not referenced afterwards.  Returns NS_OK;
 * NS_ERR_INPUT when M is not square; NS_ERR_LIMIT when a refinement needed
 * more than SPECTRUM_PREC_MAX bits (not observed in practice).  On error S
 * holds the spectrum of the 0x0 matrix and err says why.
 * Cost: charpoly (charpoly.h) and factorisation (FLINT), certified roots of each
 * irreducible factor (Arb), qqbar_abs of at most a few factors of degree
 * <= SPECTRUM_QQBAR_ABS_MAX_DEGREE. */
ns_status spectrum_compute(spectrum_t S, const fmpz_mat_t M, nserr_t err);

/* The same, polling progress (may be NULL) while the characteristic
 * polynomial of a large matrix is computed (charpoly.h) and between the
 * factors whose roots are isolated; each phase is named as a stage:
 * "charpoly", "factors", "roots", "radius".  fmpz_poly_factor and each
 * factor's root isolation and exact radius are single library calls that
 * are not interrupted (bench_progress_gap measures them).  A nonzero answer
 * stops with NS_ERR_CANCELLED and S as for d = 0. */
ns_status spectrum_compute_progress(spectrum_t S, const fmpz_mat_t M,
                                    const ns_progress_t *progress, nserr_t err);

/* The same with a proven coefficient bound from the caller: every
 * coefficient of det(xI - M) is less than 2^bound_bits in absolute value
 * (charpoly_compute_bounded; bound_bits < 0: none, as
 * spectrum_compute_progress).  The layers of a nilpotent group get it from
 * layer 1 (charpoly_lie_bound_bits, src/analysis.c). */
ns_status spectrum_compute_bounded(spectrum_t S, const fmpz_mat_t M, slong bound_bits,
                                   const ns_progress_t *progress, nserr_t err);

/* The same from the characteristic polynomial cp of the matrix (monic; its
 * degree is the dimension), for a caller that knows it by another route
 * (charpoly_free_lie).  progress (may be NULL) is polled as above from
 * "factors" on; the caller names its own "charpoly" phase.  NS_ERR_INPUT
 * when cp is not monic. */
ns_status spectrum_set_charpoly(spectrum_t S, const fmpz_poly_t cp,
                                const ns_progress_t *progress, nserr_t err);

/* ---- polynomial data --------------------------------------------------- */

/* The number of word-size primes the characteristic polynomial took (see
 * the struct), for tests and benchmarks. */
slong spectrum_charpoly_primes(const spectrum_t S);

/* d, the dimension of M. */
slong spectrum_dim(const spectrum_t S);

/* det(xI - M); borrowed. */
const fmpz_poly_struct *spectrum_charpoly(const spectrum_t S);

/* Factorisation of the charpoly over Z (content 1, monic irreducible
 * factors with multiplicities, sorted as described in the struct);
 * borrowed.  For d = 0 it has no factors. */
const fmpz_poly_factor_struct *spectrum_factors(const spectrum_t S);

/* det M; borrowed. */
const fmpz *spectrum_det(const spectrum_t S);

/* det(I - M) = charpoly(1); borrowed. */
const fmpz *spectrum_det_one_minus(const spectrum_t S);

/* The factored charpoly as a string in the given SPECTRUM_STR_* style, e.g.
 * "x^2 (x - 2)^3 (x^2 - x - 1)" (PLAIN), "x^2*(x - 2)^3*(x^2 - x - 1)"
 * (ASCII), "x^{2} (x - 2)^{3} (x^{2} - x - 1)" (LATEX); "1" when d = 0.
 * Caller frees with flint_free(). */
char *spectrum_factored_get_str(const spectrum_t S, int style);

/* The expanded charpoly, e.g. "x^2 - 3x + 1" (PLAIN, LATEX: "x^{2} - 3x +
 * 1") or "x^2 - 3*x + 1" (ASCII).  Caller frees with flint_free(). */
char *spectrum_charpoly_get_str(const spectrum_t S, int style);

/* Any integer polynomial in the same styles ("0" for the zero
 * polynomial).  Caller frees with flint_free(). */
char *spectrum_poly_get_str(const fmpz_poly_t f, int style);

/* ---- eigenvalues ------------------------------------------------------- */

/* The i-th eigenvalue, 0 <= i < d, counted with multiplicity, sorted by
 * the midpoints of the modulus balls, decreasing (then by real part, then
 * imaginary part, decreasing: within a conjugate pair the one with positive
 * imaginary part comes first).  The order is for display; decisions never
 * rest on it.  Out-of-range i gives NULL.
 * The ball is certified and has acb_rel_accuracy_bits >= SPECTRUM_ROOT_BITS;
 * a real eigenvalue has an imaginary part that is exactly 0 and an
 * eigenvalue with real part 0 has an exactly 0 real part.  Borrowed. */
acb_srcptr spectrum_eigenvalue(const spectrum_t S, slong i);

/* Certified ball of |lambda_i|; exactly 1 when |lambda_i| = 1.  Borrowed. */
arb_srcptr spectrum_eigenvalue_abs(const spectrum_t S, slong i);

/* -1, 0 or 1 as |lambda_i| is <, = or > 1; exact. */
int spectrum_eigenvalue_side(const spectrum_t S, slong i);

/* Index into spectrum_factors(S) of the irreducible factor lambda_i is a
 * root of; its multiplicity is spectrum_factors(S)->exp[index]. */
slong spectrum_eigenvalue_factor(const spectrum_t S, slong i);

/* "a + bi" / "a - bi" with up to `digits` significant digits per part
 * (digits <= 0 means 16), each printed digit certified (fewer digits when
 * a part is known less precisely; Arb's "[+/- r]" notation if not even one
 * digit is); exact zeros and exact integers print as such, e.g.
 * "1.618033988749895 + 0i", "0 + 1i", "2 + 0i".  NULL for out-of-range i.
 * Caller frees with flint_free(). */
char *spectrum_eigenvalue_get_str(const spectrum_t S, slong i, slong digits);

/* |lambda_i| as a decimal string, same conventions; "1" when exactly 1. */
char *spectrum_eigenvalue_abs_get_str(const spectrum_t S, slong i,
                                      slong digits);

/* ---- position relative to the unit circle (all exact) ----------------- */

/* Number of eigenvalues, with multiplicity, with |lambda| < 1, = 1, > 1.
 * They add up to d. */
slong spectrum_count_below_one(const spectrum_t S);
slong spectrum_count_on_one(const spectrum_t S);
slong spectrum_count_above_one(const spectrum_t S);

/* 1 iff some eigenvalue has modulus exactly 1. */
int spectrum_has_unimodular(const spectrum_t S);

/* 1 iff no eigenvalue has modulus 1 (true for d = 0). */
int spectrum_is_hyperbolic(const spectrum_t S);

/* 1 iff every eigenvalue has modulus > 1 (vacuously true for d = 0). */
int spectrum_is_expanding(const spectrum_t S);

/* 1 iff the charpoly is x^d, i.e. M is nilpotent (true for d = 0). */
int spectrum_is_nilpotent(const spectrum_t S);

/* ---- spectral radius ----------------------------------------------------- */

/* The certified ball of rho stored at compute time (relative radius below
 * about 2^-SPECTRUM_ROOT_BITS; exactly 0 or 1 in those cases).  Borrowed. */
arb_srcptr spectrum_radius(const spectrum_t S);

/* Sets res to a certified ball of rho whose relative accuracy is about prec
 * bits (it recomputes what is needed; S is unchanged). */
void spectrum_radius_arb(arb_t res, const spectrum_t S, slong prec);

/* -1, 0, 1 as rho <, =, > 1; exact and always available (rho < 1 only when
 * rho = 0). */
int spectrum_radius_cmp_one(const spectrum_t S);

/* 1 iff rho is known exactly (always for rho = 0, rho = 1, a real dominant
 * eigenvalue, or a dominant non-real one of degree <=
 * SPECTRUM_QQBAR_ABS_MAX_DEGREE). */
int spectrum_radius_is_exact(const spectrum_t S);

/* rho as an exact algebraic number, or NULL when not exact.  Borrowed. */
const qqbar_struct *spectrum_radius_qqbar(const spectrum_t S);

/* Sets res to the minimal polynomial of rho (primitive, positive leading
 * coefficient; x for rho = 0) and returns 1 when rho is exact; otherwise
 * sets res to 0 and returns 0. */
int spectrum_radius_minpoly(fmpz_poly_t res, const spectrum_t S);

/* The minimal polynomial of rho as a string in a SPECTRUM_STR_* style, or
 * NULL when rho is not exact.  Caller frees with flint_free(). */
char *spectrum_radius_minpoly_get_str(const spectrum_t S, int style);

/* s with every decimal number in it (digits, a point, digits, optionally
 * e+N / e-N) rounded to `digits` significant digits (half up), for
 * reports that ask for fewer digits than the analysis keeps.  Numbers with
 * at most `digits` significant digits, integers (exact) and the ball
 * notation "[m +/- r]" are copied unchanged.  A rounded number is written
 * plainly when its decimal exponent lies in -5 .. digits-2 (so that it
 * keeps a fractional digit and never looks like an exact integer),
 * otherwise as d.ddd e+N.  Rounding a string that is correct to within one
 * unit of its last digit leaves one correct to within one unit of the
 * new last digit (doc/design.md section 7).  1 <= digits.  Caller frees
 * with flint_free(). */
char *spectrum_decimals_round(const char *s, slong digits);

/* rho in closed form when its minimal polynomial a x^2 + b x + c has
 * degree 2: rho = (-b + s sqrt(d)) / (2a) with b^2 - 4ac = s^2 d, d
 * squarefree, reduced by the common divisor; the sign of the root is read
 * from rho's isolating enclosure.  PLAIN and ASCII give a form sympy reads,
 * "(3 + sqrt(5))/2", "1 + sqrt(2)", "2*sqrt(3)"; LATEX gives
 * "\frac{3+\sqrt{5}}{2}".  NULL when rho is not exact or of another
 * degree (degree 1: rho is rational and its decimal string is exact).
 * Caller frees with flint_free(). */
char *spectrum_radius_closed_get_str(const spectrum_t S, int style);

/* rho as a decimal string with `digits` significant digits (digits <= 0
 * means SPECTRUM_DIGITS_DEFAULT).  When rho is an exact integer the exact
 * integer is returned ("0", "1", "3").  Otherwise the string s has exactly
 * `digits` significant digits and |s - rho| < one unit in its last digit
 * (s is rho correctly rounded unless rho lies within that distance of a
 * rounding boundary).  Caller frees with flint_free(). */
char *spectrum_radius_get_str(const spectrum_t S, slong digits);

/* ---- root bound rho^(1/j) -------------------------------------------- */

/* Sets res to a certified ball of rho^(1/j), j >= 1, with relative accuracy
 * about prec bits; exactly 0 or 1 when rho is. */
void spectrum_root_bound_arb(arb_t res, const spectrum_t S, ulong j,
                             slong prec);

/* rho^(1/j) as a decimal string, conventions of spectrum_radius_get_str;
 * "0" for rho = 0, "1" for rho = 1, the exact integer when rho is the j-th
 * power of an integer. */
char *spectrum_root_bound_get_str(const spectrum_t S, ulong j, slong digits);

/* ---- entropy ----------------------------------------------------------- */

/* sum_{|lambda| > 1} log |lambda| (with multiplicity), the logarithm of the
 * Mahler measure of the charpoly (K. Mahler, "On some inequalities for
 * polynomials in several variables", J. London Math. Soc. 37, 1962: for
 * monic p, M(p) = prod max(1, |lambda|)).  Stored ball, borrowed; exactly
 * 0 when no eigenvalue lies outside the unit disc. */
arb_srcptr spectrum_entropy(const spectrum_t S);

/* The same at relative accuracy about prec bits. */
void spectrum_entropy_arb(arb_t res, const spectrum_t S, slong prec);

/* Decimal string of the entropy, conventions of spectrum_radius_get_str;
 * exactly "0" when no eigenvalue has modulus > 1. */
char *spectrum_entropy_get_str(const spectrum_t S, slong digits);

/* ---- comparisons (for maxima over layers) ------------------------------ */

/* Compares rho_a with rho_b: returns -1, 0 or 1, certified.  Exact when
 * both are exact (qqbar comparison).  Otherwise the balls are refined up
 * to SPECTRUM_CMP_PREC_MAX bits until they separate; equality without
 * exact forms is proved only when the sets of dominant factors coincide
 * up to x -> -x.  If none of this decides, returns SPECTRUM_CMP_UNDECIDED
 * (= 2): the two values agree to SPECTRUM_CMP_PREC_MAX bits but which is
 * larger is unknown.  a and b may be the same object. */
int spectrum_cmp_radius(const spectrum_t a, const spectrum_t b);

/* Compares rho_a^(1/ja) with rho_b^(1/jb), ja, jb >= 1, i.e. rho_a^jb with
 * rho_b^ja; exact with qqbar_pow_ui when both radii are exact.  Same
 * return convention as spectrum_cmp_radius. */
int spectrum_cmp_root_bound(const spectrum_t a, ulong ja,
                            const spectrum_t b, ulong jb);

/* ---- decimal output of certified balls ------------------------------- */

/* Decimal string of the real ball x with exactly `digits` >= 1 significant
 * digits such that |s - x0| < one unit in the last digit for every x0 in
 * x (the digits are Arb's arb_get_str; a midpoint halfway between two
 * decimals rounds as Arb rounds it); exact integers (radius 0) print
 * exactly.  Returns NULL when x is not
 * precise enough for that (then raise the precision of x) or contains 0
 * without being exactly 0 ("0" is returned for an exact 0).  Plain
 * notation for decimal exponents -5..digits-1, otherwise "d.ddde+N".
 * Caller frees with flint_free(). */
char *spectrum_ball_get_str(const arb_t x, slong digits);

#endif
