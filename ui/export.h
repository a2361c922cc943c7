/* export.h — what the explorer's export key (x) writes besides the
 * reports (those are report_get_str's, so that they equal `nilstep report`
 * of the same session): the matrix of one layer as plain text, and the
 * file name offered for each kind.  Strings returned are the caller's to
 * free(). */
#ifndef NILSTEP_UI_EXPORT_H
#define NILSTEP_UI_EXPORT_H

#include "analysis_view.h"

/* The kinds of export, as the keys that choose them at the prompt. */
enum { EXPORT_TEXT = 't', EXPORT_JSON = 'j', EXPORT_LATEX = 'l', EXPORT_MATRIX = 'm' };

/* The matrix M_j of A's map on layer j (1-based) as text: '#' lines saying
 * what it is (title when not NULL, group, class, map, layer, basis, the
 * convention that column k holds the image of e_k), then one line per row,
 * entries separated by one blank, so that tools reading whitespace-separated
 * numbers with '#' comments (numpy.loadtxt, awk, ...) take it as it is.  A
 * layer with torsion adds the action on all its pc generators as '#'
 * lines.  NULL when A has no valid map or no layer j. */
char *export_matrix_text(const analysis_struct *A, slong j, const char *title);

/* The file name offered for an export of kind `kind` (layer j for a
 * matrix) of the session at session_path (NULL: not saved yet): the
 * session's name without ".nilstep", else "untitled", with ".txt",
 * ".json", ".tex" or "-M<j>.txt". */
char *export_suggest_name(const char *session_path, int kind, slong j);

/* "the text report", "the JSON report", "the LaTeX report", "matrix M<j>"
 * (static storage, valid until the next call). */
const char *export_kind_name(int kind, slong j);

#endif
