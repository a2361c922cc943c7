/* report.h — the analysis as text, JSON (doc/design.md §6.1 keys) or LaTeX. */
#ifndef NILSTEP_REPORT_H
#define NILSTEP_REPORT_H

#include "analysis.h"

typedef enum { REPORT_TEXT, REPORT_JSON, REPORT_LATEX } report_format;

/* Parses "text", "json", "latex"; returns -1 for anything else. */
int report_parse_format(const char *s);

/* The report of A (which must have a group; the map part is written when A
 * has a map).  title may be NULL.  Returns a string the caller frees with
 * flint_free().  The writers only format what the analysis holds: nothing
 * is computed here (the inverse appears when analysis_set_inverse ran).
 *
 * JSON: the top level has "format", "version", "title", "group" and, only
 * when A has a map, "map".  The "map" object always has the same keys, in
 * the same order, whether the map is well defined or not: text, valid,
 * failures, images, layers, lower_bound, lower_bound_layer, upper_bound,
 * upper_bound_layer, growth_rate, growth_reason, log_growth_rate, entropy,
 * lefschetz, nielsen, reidemeister, undefined_reason, automorphism,
 * injective, hyperbolic, expanding, image_index, injective_defined,
 * inverse.  A value that does not exist is null: every number of a map that
 * is not well defined (its "layers" is then []), the invariants that layer
 * torsion leaves undefined, the inverse unless it was computed. */
char *report_get_str(const analysis_t A, report_format fmt, const char *title);

/* The same with every decimal of the text and LaTeX reports rounded to
 * `digits` significant digits (1 <= digits <= ANALYSIS_DIGITS; 0 means
 * REPORT_DEFAULT_DIGITS; spectrum_decimals_round says how).  The JSON
 * report keeps the analysis' full ANALYSIS_DIGITS whatever digits is.
 * report_get_str uses REPORT_DEFAULT_DIGITS. */
#define REPORT_DEFAULT_DIGITS 10
char *report_get_str_digits(const analysis_t A, report_format fmt, const char *title,
                            slong digits);

#endif
