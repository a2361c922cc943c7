/* report.h — the analysis as text, JSON (DESIGN §6 keys) or LaTeX. */
#ifndef NILSTEP_REPORT_H
#define NILSTEP_REPORT_H

#include "analysis.h"

typedef enum { REPORT_TEXT, REPORT_JSON, REPORT_LATEX } report_format;

/* Parses "text", "json", "latex"; returns -1 for anything else. */
int report_parse_format(const char *s);

/* The report of A (which must have a group; the map part is written when A
 * has a map).  title may be NULL.  Returns a string the caller frees with
 * flint_free(). */
char *report_get_str(const analysis_t A, report_format fmt, const char *title);

#endif
