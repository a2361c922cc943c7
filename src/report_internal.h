/* report_internal.h — what the three report writers share (internal to
 * report*.c).  report.c holds these helpers and the format switch; each
 * writer (report_text.c, report_json.c, report_latex.c) appends its whole
 * report of A to b, formatting only what the analysis holds (report.h). */
#ifndef NILSTEP_REPORT_INTERNAL_H
#define NILSTEP_REPORT_INTERNAL_H

#include "report.h"
#include "strbuf.h"

/* The decimal strings of one text or LaTeX report, rounded to the digits
 * asked for (spectrum_decimals_round) and kept until the report is done. */
typedef struct {
    slong digits;
    char **v;
    slong n, cap;
} report_decs;

/* s rounded to D->digits significant digits (owned by D; NULL stays NULL). */
const char *report_dec(report_decs *D, const char *s);

void report_text(strbuf_t b, const analysis_t A, const char *title, report_decs *D);
void report_json(strbuf_t b, const analysis_t A, const char *title);
void report_latex(strbuf_t b, const analysis_t A, const char *title, report_decs *D);

/* x in decimal. */
void report_put_fmpz(strbuf_t b, const fmpz_t x);
/* The Lefschetz, Nielsen and Reidemeister numbers, each after its label;
 * inf is written for an infinite Reidemeister number. */
void report_put_fixed_point_numbers(strbuf_t b, const analysis_t A, const char *l_label,
                                    const char *n_label, const char *r_label, const char *inf);
/* "yes" or "no" (static text). */
const char *report_yes_no(int v);
/* "a -> w_a, b -> w_b" from one word per input generator. */
void report_put_map_words(strbuf_t b, const analysis_t A, char *const *w);
/* "Z^2 + Z/2", "0": layer j of Gc/T (latex: in LaTeX). */
void report_put_quotient_group(strbuf_t b, const analysis_layer_struct *L, const torsion_t T,
                               slong j, int latex);
/* "Z/2 + Z/4", "trivial" or "not abelian" (latex: in LaTeX). */
void report_put_torsion_structure(strbuf_t b, const torsion_t T, int latex);

#endif
