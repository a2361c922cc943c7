/* numfmt.h — shortening numbers and text for narrow table cells; pure
 * string functions (no curses), tested alone. */
#ifndef NILSTEP_UI_NUMFMT_H
#define NILSTEP_UI_NUMFMT_H

#include <stddef.h>

/* Writes the decimal string dec ("2.61803398874989484820458683437",
 * "-3", "1.5e+40") cut to at most sig significant digits into buf (size
 * n, always NUL-terminated).  Digits are cut, not rounded, so the shown
 * digits are a prefix of the engine's; the integer part is never cut, and
 * the result always has a decimal point ("2" becomes "2.0") so that a
 * radius never reads as an exact integer by accident.  Text that is not a
 * plain decimal is copied unchanged. */
void numfmt_decimal(char *buf, size_t n, const char *dec, int sig);

/* Copies at most width code points of the UTF-8 string s into buf (size
 * n); when s is longer, the last one kept is replaced by "…" (or "~" when
 * ascii is set).  Returns 1 if s was shortened. */
int numfmt_clip(char *buf, size_t n, const char *s, size_t width, int ascii);

/* Writes the integer given by its decimal digits dig ("-12345", "0") into
 * buf (size n) in at most width code points: whole when it fits, else
 * shortened in a form that is still true, "-1.23…e40 (41 digits)": the
 * leading digits (cut, not rounded), the power of ten and, when there is
 * room, the number of digits ("~" replaces "…" when ascii is set).  Keeps at least one digit
 * after the point, so a very small width may be exceeded.  Returns 1 if the
 * number was shortened. */
int numfmt_integer(char *buf, size_t n, const char *dig, size_t width, int ascii);

#endif
