/* report.c — see report.h: the format switch and what the three writers
 * share (report_internal.h); the writers are report_text.c,
 * report_json.c and report_latex.c. */
#include <stdlib.h>
#include <string.h>
#include <flint/fmpz_mat.h>
#include "report_internal.h"

int report_parse_format(const char *s)
{
    if (!strcmp(s, "text"))
        return REPORT_TEXT;
    if (!strcmp(s, "json"))
        return REPORT_JSON;
    if (!strcmp(s, "latex"))
        return REPORT_LATEX;
    return -1;
}

void report_put_fmpz(strbuf_t b, const fmpz_t x)
{
    char *s = fmpz_get_str(NULL, 10, x);
    strbuf_puts(b, s);
    flint_free(s);
}

/* The Lefschetz, Nielsen and Reidemeister numbers, each after its label;
 * inf is written for an infinite Reidemeister number. */
void report_put_fixed_point_numbers(strbuf_t b, const analysis_t A, const char *l_label,
                                    const char *n_label, const char *r_label, const char *inf)
{
    strbuf_puts(b, l_label);
    report_put_fmpz(b, A->lefschetz);
    strbuf_puts(b, n_label);
    report_put_fmpz(b, A->nielsen);
    strbuf_puts(b, r_label);
    if (A->reid_kind == ANALYSIS_REID_INFINITE)
        strbuf_puts(b, inf);
    else
        report_put_fmpz(b, A->reidemeister);
}

const char *report_yes_no(int v)
{
    return v ? "yes" : "no";
}

/* "a -> w_a, b -> w_b" from one word per input generator. */
void report_put_map_words(strbuf_t b, const analysis_t A, char *const *w)
{
    const names_struct *g = A->nq->pres->gens;
    for (slong x = 0; x < g->n; x++)
        strbuf_printf(b, "%s%s -> %s", x ? ", " : "", g->name[x], w[x]);
}

/* "Z^2 + Z/2", "0": layer j of Gc/T. */
void report_put_quotient_group(strbuf_t b, const analysis_layer_struct *L, const torsion_t T,
                               slong j, int latex)
{
    int any = 0;
    if (L->layer->free_rank > 0) {
        strbuf_puts(b, latex ? "\\mathbb{Z}" : "Z");
        if (L->layer->free_rank > 1)
            strbuf_printf(b, latex ? "^{%ld}" : "^%ld", (long)L->layer->free_rank);
        any = 1;
    }
    slong nt = j < T->nlayers ? T->q_ntors[j] : 0;
    for (slong t = 0; t < nt; t++) {
        strbuf_puts(b, any ? (latex ? " \\oplus " : " + ") : "");
        strbuf_puts(b, latex ? "\\mathbb{Z}/" : "Z/");
        report_put_fmpz(b, T->q_tors[j] + t);
        any = 1;
    }
    if (!any)
        strbuf_puts(b, "0");
}

/* "Z/2 + Z/4", "trivial" or "not abelian". */
void report_put_torsion_structure(strbuf_t b, const torsion_t T, int latex)
{
    if (fmpz_is_one(T->order)) {
        strbuf_puts(b, latex ? "1" : "trivial");
        return;
    }
    if (!T->abelian) {
        strbuf_puts(b, latex ? "\\text{not abelian}" : "not abelian");
        return;
    }
    for (slong t = 0; t < T->ninv; t++) {
        strbuf_puts(b, t ? (latex ? " \\oplus " : " + ") : "");
        strbuf_puts(b, latex ? "\\mathbb{Z}/" : "Z/");
        report_put_fmpz(b, T->inv + t);
    }
}

const char *report_dec(report_decs *D, const char *s)
{
    if (s == NULL)
        return s;
    if (D->n == D->cap) {
        D->cap = 2 * D->cap + 8;
        D->v = flint_realloc(D->v, D->cap * sizeof(char *));
    }
    return D->v[D->n++] = spectrum_decimals_round(s, D->digits);
}

char *report_get_str_digits(const analysis_t A, report_format fmt, const char *title,
                            slong digits)
{
    strbuf_t b;
    strbuf_init(b);
    report_decs D = {digits < 1 ? REPORT_DEFAULT_DIGITS : digits, NULL, 0, 0};
    if (fmt == REPORT_JSON)
        report_json(b, A, title);
    else if (fmt == REPORT_LATEX)
        report_latex(b, A, title, &D);
    else
        report_text(b, A, title, &D);
    for (slong k = 0; k < D.n; k++)
        flint_free(D.v[k]);
    flint_free(D.v);
    return strbuf_take(b);
}

char *report_get_str(const analysis_t A, report_format fmt, const char *title)
{
    return report_get_str_digits(A, fmt, title, REPORT_DEFAULT_DIGITS);
}
