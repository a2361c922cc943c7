/* spectrum_str.c — decimal strings of certified balls and of the spectral
 * values, and polynomials as text.  Strings follow the engine's scheme
 * (strbuf.h): flint_malloc'd, freed with flint_free().
 *
 * The digits of a ball come from Arb's arb_get_str, which prints the
 * midpoint correct to one unit in the last place; only two rules of our own
 * remain: an exact integer prints exactly, and a ball too wide for the
 * requested number of digits gives NULL (the caller refines or prints
 * fewer digits).  The layout (plain notation for decimal exponents -5 ..
 * digits-1, otherwise "d.ddde+N") is the one spectrum.h documents. */
#include <ctype.h>
#include <stdlib.h>
#include <string.h>
#include <flint/fmpz.h>
#include <flint/fmpz_factor.h>

#include "spectrum_internal.h"
#include "strbuf.h"

/* Digits used when a caller passes digits <= 0 to an eigenvalue string. */
#define EIGENVALUE_DIGITS_DEFAULT 16

static void put_fmpz(strbuf_t b, const fmpz_t x)
{
    char *t = fmpz_get_str(NULL, 10, x); /* flint_malloc'd */
    strbuf_puts(b, t);
    flint_free(t);
}

static void put_power(strbuf_t b, slong e, int style)
{
    strbuf_printf(b, style == SPECTRUM_STR_LATEX ? "^{%ld}" : "^%ld", (long)e);
}

static void put_poly(strbuf_t b, const fmpz_poly_t f, int style)
{
    slong n = fmpz_poly_degree(f);
    int first = 1;
    fmpz_t c;

    if (n < 0) {
        strbuf_puts(b, "0");
        return;
    }
    fmpz_init(c);
    for (slong i = n; i >= 0; i--) {
        const fmpz *a = f->coeffs + i;
        if (fmpz_is_zero(a))
            continue;
        int neg = fmpz_sgn(a) < 0;
        fmpz_abs(c, a);
        if (first) {
            if (neg)
                strbuf_puts(b, "-");
        } else
            strbuf_puts(b, neg ? " - " : " + ");
        first = 0;
        if (i == 0 || !fmpz_is_one(c)) {
            put_fmpz(b, c);
            if (i > 0 && style == SPECTRUM_STR_ASCII)
                strbuf_puts(b, "*");
        }
        if (i >= 1) {
            strbuf_puts(b, "x");
            if (i >= 2)
                put_power(b, i, style);
        }
    }
    fmpz_clear(c);
}

/* The n significant digits dig[0..n) of a number whose first digit has
 * decimal exponent E, in the documented layout. */
static void put_decimal(strbuf_t b, int neg, const char *dig, slong n, slong E)
{
    if (neg)
        strbuf_puts(b, "-");
    if (E >= 0 && E < n) {
        strbuf_putn(b, dig, (size_t)(E + 1));
        if (E + 1 < n) {
            strbuf_puts(b, ".");
            strbuf_putn(b, dig + E + 1, (size_t)(n - E - 1));
        }
    } else if (E < 0 && E >= -5) {
        strbuf_puts(b, "0.");
        for (slong i = 0; i < -E - 1; i++)
            strbuf_puts(b, "0");
        strbuf_putn(b, dig, (size_t)n);
    } else {
        strbuf_putn(b, dig, 1);
        if (n > 1) {
            strbuf_puts(b, ".");
            strbuf_putn(b, dig + 1, (size_t)(n - 1));
        }
        strbuf_printf(b, "e%c%ld", E < 0 ? '-' : '+', (long)(E < 0 ? -E : E));
    }
}

char *spectrum_ball_get_str(const arb_t x, slong digits)
{
    if (digits < 1)
        digits = 1;
    if (arb_is_zero(x))
        return strbuf_dup_str("0");
    if (!arb_is_finite(x) || arb_contains_zero(x))
        return NULL;
    if (arb_is_exact(x) && arf_is_int(arb_midref(x))) { /* rule 1 */
        fmpz_t z;
        fmpz_init(z);
        arf_get_fmpz(z, arb_midref(x), ARF_RND_DOWN);
        char *s = fmpz_get_str(NULL, 10, z);
        fmpz_clear(z);
        return s;
    }

    /* Arb writes "[-]ddd.ddd", "[-]0.000ddd" or "[-]d.ddde[+-]N", or a
     * ball "[... +/- ...]" when not one digit is certain. */
    char *a = arb_get_str(x, digits, ARB_STR_NO_RADIUS), *res = NULL;
    const char *p = a;
    size_t len = strlen(a);
    char *dig = flint_malloc(len + 1);
    slong m = 0, point = -1, first = -1, E;
    int neg = 0, ok = 1;

    if (*p == '-') {
        neg = 1;
        p++;
    }
    for (; *p != '\0' && *p != 'e'; p++) {
        if (*p == '.' && point < 0)
            point = m;
        else if (*p >= '0' && *p <= '9') {
            if (first < 0 && *p != '0')
                first = m;
            dig[m++] = *p;
        } else
            ok = 0;
    }
    if (point < 0)
        point = m;
    /* the first significant digit stands point - 1 - first places left of
       the decimal point, shifted by Arb's exponent */
    E = point - 1 - first + (*p == 'e' ? atol(p + 1) : 0);
    if (ok && first >= 0 && m - first == digits) { /* rule 2: enough digits */
        strbuf_t b;
        strbuf_init(b);
        put_decimal(b, neg, dig + first, digits, E);
        res = strbuf_take(b);
    }
    flint_free(dig);
    flint_free(a);
    return res;
}

/* As many certified digits as possible, at most `digits`; Arb's ball
 * notation when not even one digit is certified. */
static char *ball_str_lenient(const arb_t x, slong digits)
{
    slong n = digits, acc;

    if (arb_is_zero(x) || (arb_is_exact(x) && arf_is_int(arb_midref(x))))
        return spectrum_ball_get_str(x, digits);
    acc = (slong)(arb_rel_accuracy_bits(x) * 0.30103);
    if (acc < n)
        n = acc;
    if (n < 1)
        n = 1;
    for (; n >= 1; n--) {
        char *s = spectrum_ball_get_str(x, n);
        if (s != NULL)
            return s;
    }
    return arb_get_str(x, 5, 0); /* flint_malloc'd */
}

char *spectrum_eigenvalue_get_str(const spectrum_t S, slong i, slong digits)
{
    acb_srcptr z = spectrum_eigenvalue(S, i);
    strbuf_t b;
    char *t;

    if (z == NULL)
        return NULL;
    if (digits <= 0)
        digits = EIGENVALUE_DIGITS_DEFAULT;
    strbuf_init(b);
    t = ball_str_lenient(acb_realref(z), digits);
    strbuf_puts(b, t);
    flint_free(t);
    if (arb_is_zero(acb_imagref(z)))
        strbuf_puts(b, " + 0i");
    else {
        arb_t im;
        arb_init(im);
        if (arb_is_negative(acb_imagref(z))) {
            arb_neg(im, acb_imagref(z));
            strbuf_puts(b, " - ");
        } else {
            arb_set(im, acb_imagref(z));
            strbuf_puts(b, " + ");
        }
        t = ball_str_lenient(im, digits);
        strbuf_puts(b, t);
        flint_free(t);
        strbuf_puts(b, "i");
        arb_clear(im);
    }
    return strbuf_take(b);
}

char *spectrum_eigenvalue_abs_get_str(const spectrum_t S, slong i, slong digits)
{
    arb_srcptr a = spectrum_eigenvalue_abs(S, i);
    if (a == NULL)
        return NULL;
    if (digits <= 0)
        digits = EIGENVALUE_DIGITS_DEFAULT;
    return ball_str_lenient(a, digits);
}

/* Decimal string of the value computed by fn at increasing precision. */
typedef void (*ball_fn)(arb_t res, const spectrum_t S, ulong j, slong prec);

static void radius_fn(arb_t res, const spectrum_t S, ulong j, slong prec)
{
    (void)j;
    spectrum_radius_arb(res, S, prec);
}

static void root_bound_fn(arb_t res, const spectrum_t S, ulong j, slong prec)
{
    spectrum_root_bound_arb(res, S, j, prec);
}

static void entropy_fn(arb_t res, const spectrum_t S, ulong j, slong prec)
{
    (void)j;
    spectrum_entropy_arb(res, S, prec);
}

static char *refined_str(const spectrum_t S, ball_fn fn, ulong j, slong digits)
{
    char *s = NULL;
    arb_t x;

    arb_init(x);
    for (slong prec = (slong)(digits * 3.33) + 24;; prec *= 2) {
        fn(x, S, j, prec);
        s = spectrum_ball_get_str(x, digits);
        if (s != NULL)
            break;
        if (prec > SPECTRUM_PREC_MAX) {
            s = ball_str_lenient(x, digits);
            break;
        }
    }
    arb_clear(x);
    return s;
}

char *spectrum_radius_get_str(const spectrum_t S, slong digits)
{
    if (digits <= 0)
        digits = SPECTRUM_DIGITS_DEFAULT;
    if (S->radius_exact && qqbar_is_integer(S->radius_qqbar)) {
        fmpz_t z;
        fmpz_init(z);
        qqbar_get_fmpz(z, S->radius_qqbar);
        char *s = fmpz_get_str(NULL, 10, z);
        fmpz_clear(z);
        return s;
    }
    return refined_str(S, radius_fn, 1, digits);
}

char *spectrum_root_bound_get_str(const spectrum_t S, ulong j, slong digits)
{
    int c = spectrum_radius_cmp_one(S);

    if (digits <= 0)
        digits = SPECTRUM_DIGITS_DEFAULT;
    if (j == 0)
        j = 1;
    if (c < 0)
        return strbuf_dup_str("0");
    if (c == 0)
        return strbuf_dup_str("1");
    if (S->radius_exact && qqbar_is_integer(S->radius_qqbar) && j <= WORD_MAX) {
        fmpz_t z, r, t;
        char *s = NULL;
        fmpz_init(z);
        fmpz_init(r);
        fmpz_init(t);
        qqbar_get_fmpz(z, S->radius_qqbar);
        fmpz_root(r, z, (slong)j);
        fmpz_pow_ui(t, r, j);
        if (fmpz_equal(t, z))
            s = fmpz_get_str(NULL, 10, r);
        fmpz_clear(z);
        fmpz_clear(r);
        fmpz_clear(t);
        if (s != NULL)
            return s;
    }
    return refined_str(S, root_bound_fn, j, digits);
}

char *spectrum_entropy_get_str(const spectrum_t S, slong digits)
{
    if (digits <= 0)
        digits = SPECTRUM_DIGITS_DEFAULT;
    if (S->count_above == 0)
        return strbuf_dup_str("0");
    return refined_str(S, entropy_fn, 1, digits);
}

char *spectrum_poly_get_str(const fmpz_poly_t f, int style)
{
    strbuf_t b;
    strbuf_init(b);
    put_poly(b, f, style);
    return strbuf_take(b);
}

char *spectrum_charpoly_get_str(const spectrum_t S, int style)
{
    return spectrum_poly_get_str(S->charpoly, style);
}

char *spectrum_radius_minpoly_get_str(const spectrum_t S, int style)
{
    if (!S->radius_exact)
        return NULL;
    return spectrum_poly_get_str(QQBAR_POLY(S->radius_qqbar), style);
}

/* One decimal token t[0..len) (digits '.' digits [e[+-]digits]) rounded. */
static void round_token(strbuf_t b, const char *t, size_t len, slong digits)
{
    char *d = flint_malloc(len + 2);
    size_t nd = 0, i = 0;
    slong point = -1, e = 0;
    for (; i < len && t[i] != 'e' && t[i] != 'E'; i++) {
        if (t[i] == '.')
            point = (slong)nd;
        else
            d[nd++] = t[i];
    }
    if (i < len)
        e = strtol(t + i + 1, NULL, 10);
    if (point < 0)
        point = (slong)nd;
    size_t k = 0;
    while (k < nd && d[k] == '0')
        k++;
    if (k == nd || nd - k <= (size_t)digits) { /* zero, or short enough */
        strbuf_putn(b, t, len);
        flint_free(d);
        return;
    }
    char *sig = d + k;
    slong e10 = point + e - (slong)k - 1; /* exponent of the leading digit */
    int up = sig[digits] >= '5';
    sig[digits] = '\0';
    for (slong j = digits - 1; up && j >= 0; j--) {
        if (sig[j] == '9') {
            sig[j] = '0';
        } else {
            sig[j]++;
            up = 0;
        }
    }
    if (up) { /* 99.9 -> 100: one more leading digit, one fewer at the end */
        memmove(sig + 1, sig, (size_t)digits);
        sig[0] = '1';
        sig[digits] = '\0';
        e10++;
    }
    if (e10 >= -5 && e10 <= digits - 2) {
        if (e10 < 0) {
            strbuf_puts(b, "0.");
            for (slong j = 0; j < -e10 - 1; j++)
                strbuf_puts(b, "0");
            strbuf_puts(b, sig);
        } else {
            strbuf_putn(b, sig, (size_t)e10 + 1);
            strbuf_puts(b, ".");
            strbuf_puts(b, sig + e10 + 1);
        }
    } else {
        strbuf_putn(b, sig, 1);
        if (digits > 1) {
            strbuf_puts(b, ".");
            strbuf_puts(b, sig + 1);
        }
        strbuf_printf(b, "e%s%ld", e10 < 0 ? "-" : "+", (long)(e10 < 0 ? -e10 : e10));
    }
    flint_free(d);
}

char *spectrum_decimals_round(const char *s, slong digits)
{
    strbuf_t b;
    strbuf_init(b);
    if (digits < 1)
        digits = 1;
    for (size_t i = 0; s[i];) {
        if (s[i] == '[') { /* a ball: copied as it is */
            const char *c = strchr(s + i, ']');
            size_t n = c ? (size_t)(c - (s + i)) + 1 : strlen(s + i);
            strbuf_putn(b, s + i, n);
            i += n;
            continue;
        }
        if (isdigit((unsigned char)s[i]) && (i == 0 || !isalnum((unsigned char)s[i - 1]))) {
            size_t j = i;
            while (isdigit((unsigned char)s[j]))
                j++;
            if (s[j] == '.' && isdigit((unsigned char)s[j + 1])) {
                j++;
                while (isdigit((unsigned char)s[j]))
                    j++;
                if ((s[j] == 'e' || s[j] == 'E') &&
                    (isdigit((unsigned char)s[j + 1]) ||
                     ((s[j + 1] == '+' || s[j + 1] == '-') && isdigit((unsigned char)s[j + 2])))) {
                    j += 2;
                    while (isdigit((unsigned char)s[j]))
                        j++;
                }
                round_token(b, s + i, j - i, digits);
            } else {
                strbuf_putn(b, s + i, j - i);
            }
            i = j;
            continue;
        }
        strbuf_putn(b, s + i, 1);
        i++;
    }
    return strbuf_take(b);
}

char *spectrum_radius_closed_get_str(const spectrum_t S, int style)
{
    if (!S->radius_exact || qqbar_degree(S->radius_qqbar) != 2)
        return NULL;
    const fmpz_poly_struct *m = QQBAR_POLY(S->radius_qqbar);
    const fmpz *c = m->coeffs, *b = m->coeffs + 1, *a = m->coeffs + 2;
    fmpz_t disc, sq, d, p, q, r, g, t;
    fmpz_init(disc), fmpz_init(sq), fmpz_init(d), fmpz_init(p);
    fmpz_init(q), fmpz_init(r), fmpz_init(g), fmpz_init(t);
    fmpz_mul(disc, b, b);
    fmpz_mul(t, a, c);
    fmpz_submul_ui(disc, t, 4); /* > 0: rho and its conjugate are real */
    /* disc = sq^2 d with d squarefree */
    fmpz_factor_t fac;
    fmpz_factor_init(fac);
    fmpz_factor(fac, disc);
    fmpz_one(sq);
    fmpz_one(d);
    for (slong i = 0; i < fac->num; i++) {
        fmpz_pow_ui(t, fac->p + i, fac->exp[i] / 2);
        fmpz_mul(sq, sq, t);
        if (fac->exp[i] % 2)
            fmpz_mul(d, d, fac->p + i);
    }
    fmpz_factor_clear(fac);
    /* the sign: rho lies right of -b/(2a) iff it is the larger root */
    arb_t mid;
    arb_init(mid);
    arb_set_fmpz(mid, b);
    arb_neg(mid, mid);
    arb_div_fmpz(mid, mid, a, 64);
    arb_div_ui(mid, mid, 2, 64);
    int plus = arb_gt(acb_realref(QQBAR_ENCLOSURE(S->radius_qqbar)), mid);
    arb_clear(mid);
    fmpz_neg(p, b);
    fmpz_set(q, sq);
    if (!plus)
        fmpz_neg(q, q);
    fmpz_mul_ui(r, a, 2);
    fmpz_gcd(g, p, q);
    fmpz_gcd(g, g, r);
    fmpz_divexact(p, p, g);
    fmpz_divexact(q, q, g);
    fmpz_divexact(r, r, g);
    strbuf_t s;
    strbuf_init(s);
    int latex = style == SPECTRUM_STR_LATEX, frac = !fmpz_is_one(r);
    if (frac)
        strbuf_puts(s, latex ? "\\frac{" : "(");
    if (!fmpz_is_zero(p)) {
        put_fmpz(s, p);
        strbuf_puts(s, fmpz_sgn(q) < 0 ? (latex ? "-" : " - ") : (latex ? "+" : " + "));
    } else if (fmpz_sgn(q) < 0) {
        strbuf_puts(s, "-");
    }
    fmpz_abs(q, q);
    if (!fmpz_is_one(q)) {
        put_fmpz(s, q);
        if (!latex)
            strbuf_puts(s, "*");
    }
    strbuf_puts(s, latex ? "\\sqrt{" : "sqrt(");
    put_fmpz(s, d);
    strbuf_puts(s, latex ? "}" : ")");
    if (frac) {
        strbuf_puts(s, latex ? "}{" : ")/");
        put_fmpz(s, r);
        if (latex)
            strbuf_puts(s, "}");
    }
    fmpz_clear(disc), fmpz_clear(sq), fmpz_clear(d), fmpz_clear(p);
    fmpz_clear(q), fmpz_clear(r), fmpz_clear(g), fmpz_clear(t);
    return strbuf_take(s);
}

char *spectrum_factored_get_str(const spectrum_t S, int style)
{
    const fmpz_poly_factor_struct *fac = S->factors;
    strbuf_t b;
    int first = 1;

    strbuf_init(b);
    if (!fmpz_is_one(&fac->c) || fac->num == 0) {
        put_fmpz(b, &fac->c);
        first = 0;
    }
    for (slong k = 0; k < fac->num; k++) {
        if (!first)
            strbuf_puts(b, style == SPECTRUM_STR_ASCII ? "*" : " ");
        first = 0;
        if (spectrum_poly_is_x(fac->p + k))
            strbuf_puts(b, "x");
        else {
            strbuf_puts(b, "(");
            put_poly(b, fac->p + k, style);
            strbuf_puts(b, ")");
        }
        if (fac->exp[k] > 1)
            put_power(b, fac->exp[k], style);
    }
    return strbuf_take(b);
}
