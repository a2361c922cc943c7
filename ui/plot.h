/* plot.h — character pictures for the explorer, without curses: a canvas
 * of w x h terminal cells that holds Unicode braille dots (2 x 4 per cell)
 * and glyphs, rendered row by row as UTF-8 text.  With ascii set the same
 * pictures use only printable ASCII (the locale is not UTF-8): dots become
 * ' . : (upper half, lower half, both), lines - | +, markers o # =.
 *
 * Three pictures are built on it:
 *  - plot_series: a sequence of values against its index, with a
 *    horizontal reference line (the iterates' roots and the growth rate);
 *  - plot_complex: points in the complex plane with the unit circle and
 *    the axes, equal scales (a cell is about twice as tall as wide, so a
 *    braille dot is square);
 *  - plot_bars: one horizontal bar per value in eighths of a cell, with two
 *    vertical marks (the bounds rho_j^(1/j), the growth rate, max rho_k).
 * Row 0 is the top.  Nothing here draws on the terminal: the screens copy
 * the rows.  Tested against known grids (tests/test_plot.c). */
#ifndef NILSTEP_UI_PLOT_H
#define NILSTEP_UI_PLOT_H

#include <stdint.h>

typedef struct {
    int w, h, ascii;
    unsigned char *dots; /* w*h braille bit masks */
    uint32_t *glyph;     /* w*h code points drawn over the dots; 0 = none */
} plot_canvas;

/* An empty canvas of w x h cells (w, h >= 1). */
void plot_canvas_init(plot_canvas *c, int w, int h, int ascii);
void plot_canvas_clear(plot_canvas *c);

/* Sets the dot at (dx, dy), 0 <= dx < 2w, 0 <= dy < 4h (dy = 0 at the
 * top); outside is ignored. */
void plot_dot(plot_canvas *c, int dx, int dy);
/* A straight run of dots from (x0, y0) to (x1, y1). */
void plot_line(plot_canvas *c, int x0, int y0, int x1, int y1);
/* Puts the code point cp over the cell (x, y); outside is ignored. */
void plot_glyph(plot_canvas *c, int x, int y, uint32_t cp);
/* The same only where the cell has no dot and no glyph yet. */
void plot_glyph_under(plot_canvas *c, int x, int y, uint32_t cp);

/* Row y as a NUL-terminated UTF-8 string of exactly w cells; caller frees
 * with free(). */
char *plot_canvas_row(const plot_canvas *c, int y);

/* Values ys[0..n-1] at evenly spaced columns, consecutive points joined,
 * on the vertical range [lo, hi] (lo < hi; values outside are clipped to
 * the edge), and a horizontal line at ref (not drawn when outside the
 * range) in the cells the dots leave free.  Returns the cell row of the
 * line, or -1. */
int plot_series(plot_canvas *c, const double *ys, int n, double lo, double hi, double ref);

/* A range [lo, hi] that holds ys[0..n-1] and ref with a small margin
 * (never empty). */
void plot_series_range(double *lo, double *hi, const double *ys, int n, double ref);

/* Points (re[i], im[i]) with the unit circle (dots) and the axes (glyphs
 * where free); the scale shows the disc of radius max(1.25, 1.1 max|z|).
 * Points are glyphs (a filled circle; 'o' in ASCII) and win over
 * everything else.  Returns that radius. */
double plot_complex(plot_canvas *c, const double *re, const double *im, int n);

/* Bar i (row i, i < min(n, h)) of length v[i] / vmax * w cells, in
 * eighths; marks at the columns of the values m1 and m2 (< 0: none): a
 * line in the cells the bars leave free, '|' and ':' in ASCII. */
void plot_bars(plot_canvas *c, const double *v, int n, double vmax, double m1, double m2);

#endif
