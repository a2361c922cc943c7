/* plot.c — see plot.h. */
#include "plot.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define CP_HLINE 0x2500  /* ─ */
#define CP_VLINE 0x2502  /* │ */
#define CP_CROSS 0x253C  /* ┼ */
#define CP_DOTTED 0x250A /* ┊ */
#define CP_POINT 0x25CF  /* ● */
#define CP_FULL 0x2588   /* █ */

void plot_canvas_init(plot_canvas *c, int w, int h, int ascii)
{
    c->w = w < 1 ? 1 : w;
    c->h = h < 1 ? 1 : h;
    c->ascii = ascii;
    c->dots = calloc((size_t)c->w * (size_t)c->h, 1);
    c->glyph = calloc((size_t)c->w * (size_t)c->h, sizeof(uint32_t));
    if (c->dots == NULL || c->glyph == NULL)
        abort();
}

void plot_canvas_clear(plot_canvas *c)
{
    free(c->dots);
    free(c->glyph);
    memset(c, 0, sizeof *c);
}

void plot_dot(plot_canvas *c, int dx, int dy)
{
    if (dx < 0 || dy < 0 || dx >= 2 * c->w || dy >= 4 * c->h)
        return;
    /* braille dot numbering: left column 1 2 3 7, right column 4 5 6 8 */
    static const unsigned char bit[2][4] = {{0x01, 0x02, 0x04, 0x40}, {0x08, 0x10, 0x20, 0x80}};
    c->dots[(dy / 4) * c->w + dx / 2] |= bit[dx % 2][dy % 4];
}

void plot_line(plot_canvas *c, int x0, int y0, int x1, int y1)
{
    /* Bresenham */
    int dx = abs(x1 - x0), sx = x0 < x1 ? 1 : -1;
    int dy = -abs(y1 - y0), sy = y0 < y1 ? 1 : -1;
    int e = dx + dy;
    for (;;) {
        plot_dot(c, x0, y0);
        if (x0 == x1 && y0 == y1)
            break;
        int e2 = 2 * e;
        if (e2 >= dy) {
            e += dy;
            x0 += sx;
        }
        if (e2 <= dx) {
            e += dx;
            y0 += sy;
        }
    }
}

void plot_glyph(plot_canvas *c, int x, int y, uint32_t cp)
{
    if (x < 0 || y < 0 || x >= c->w || y >= c->h)
        return;
    c->glyph[y * c->w + x] = cp;
}

void plot_glyph_under(plot_canvas *c, int x, int y, uint32_t cp)
{
    if (x < 0 || y < 0 || x >= c->w || y >= c->h)
        return;
    if (c->dots[y * c->w + x] == 0 && c->glyph[y * c->w + x] == 0)
        c->glyph[y * c->w + x] = cp;
}

static char ascii_of(uint32_t cp)
{
    switch (cp) {
    case CP_HLINE:
        return '-';
    case CP_VLINE:
        return '|';
    case CP_CROSS:
        return '+';
    case CP_DOTTED:
        return ':';
    case CP_POINT:
        return 'o';
    case CP_FULL:
        return '#';
    default:
        if (cp >= 0x2589 && cp <= 0x258F) /* partial blocks */
            return '=';
        return cp < 0x80 ? (char)cp : '?';
    }
}

static int put_utf8(char *s, uint32_t cp)
{
    if (cp < 0x80) {
        s[0] = (char)cp;
        return 1;
    }
    if (cp < 0x800) {
        s[0] = (char)(0xC0 | (cp >> 6));
        s[1] = (char)(0x80 | (cp & 0x3F));
        return 2;
    }
    s[0] = (char)(0xE0 | (cp >> 12));
    s[1] = (char)(0x80 | ((cp >> 6) & 0x3F));
    s[2] = (char)(0x80 | (cp & 0x3F));
    return 3;
}

char *plot_canvas_row(const plot_canvas *c, int y)
{
    char *s = malloc((size_t)c->w * 3 + 1);
    if (s == NULL)
        abort();
    int at = 0;
    for (int x = 0; x < c->w; x++) {
        uint32_t g = y >= 0 && y < c->h ? c->glyph[y * c->w + x] : 0;
        unsigned char d = y >= 0 && y < c->h ? c->dots[y * c->w + x] : 0;
        if (c->ascii) {
            char ch = ' ';
            if (g)
                ch = ascii_of(g);
            else if (d) {
                int up = (d & 0x1B) != 0, down = (d & 0xE4) != 0; /* rows 0-1, rows 2-3 */
                ch = up && down ? ':' : up ? '\'' : '.';
            }
            s[at++] = ch;
        } else if (g) {
            at += put_utf8(s + at, g);
        } else if (d) {
            at += put_utf8(s + at, 0x2800u + d);
        } else {
            s[at++] = ' ';
        }
    }
    s[at] = '\0';
    return s;
}

/* ---- the pictures ---------------------------------------------------- */

void plot_series_range(double *lo, double *hi, const double *ys, int n, double ref)
{
    double a = ref, b = ref;
    for (int i = 0; i < n; i++) {
        if (!isfinite(ys[i]))
            continue;
        if (ys[i] < a)
            a = ys[i];
        if (ys[i] > b)
            b = ys[i];
    }
    double m = (b - a) * 0.05;
    if (m <= 0)
        m = fabs(a) * 0.05 + 0.05;
    *lo = a - m;
    *hi = b + m;
}

static int dot_row(const plot_canvas *c, double y, double lo, double hi)
{
    int H = 4 * c->h;
    double t = (hi - y) / (hi - lo);
    int r = (int)lround(t * (H - 1));
    return r < 0 ? 0 : r >= H ? H - 1 : r;
}

int plot_series(plot_canvas *c, const double *ys, int n, double lo, double hi, double ref)
{
    int W = 2 * c->w, px = 0, py = 0, have = 0;
    for (int i = 0; i < n; i++) {
        if (!isfinite(ys[i])) {
            have = 0;
            continue;
        }
        int x = n > 1 ? (int)lround((double)i * (W - 1) / (n - 1)) : 0;
        int y = dot_row(c, ys[i], lo, hi);
        if (have)
            plot_line(c, px, py, x, y);
        else
            plot_dot(c, x, y);
        px = x;
        py = y;
        have = 1;
    }
    if (!(ref >= lo && ref <= hi))
        return -1;
    int row = dot_row(c, ref, lo, hi) / 4;
    for (int x = 0; x < c->w; x++)
        plot_glyph_under(c, x, row, CP_HLINE);
    return row;
}

double plot_complex(plot_canvas *c, const double *re, const double *im, int n)
{
    double R = 1.25;
    for (int i = 0; i < n; i++) {
        double m = hypot(re[i], im[i]) * 1.1;
        if (isfinite(m) && m > R)
            R = m;
    }
    int W = 2 * c->w, H = 4 * c->h;
    double cx = (W - 1) / 2.0, cy = (H - 1) / 2.0;
    /* dots are square: one scale for both axes, the disc fits the
     * smaller side */
    double half = (W < H ? W : H) / 2.0 - 0.5;
    double s = half / R;
    int steps = 8 * (W + H);
    for (int k = 0; k < steps; k++) {
        double t = 2 * M_PI * k / steps;
        plot_dot(c, (int)lround(cx + s * cos(t)), (int)lround(cy - s * sin(t)));
    }
    int ccol = (int)lround(cx) / 2, crow = (int)lround(cy) / 4;
    for (int x = 0; x < c->w; x++)
        plot_glyph_under(c, x, crow, CP_HLINE);
    for (int y = 0; y < c->h; y++)
        plot_glyph_under(c, ccol, y, y == crow ? CP_CROSS : CP_VLINE);
    plot_glyph(c, ccol, crow, CP_CROSS);
    for (int i = 0; i < n; i++) {
        if (!isfinite(re[i]) || !isfinite(im[i]))
            continue;
        int dx = (int)lround(cx + s * re[i]), dy = (int)lround(cy - s * im[i]);
        plot_glyph(c, dx / 2, dy / 4, CP_POINT);
    }
    return R;
}

void plot_bars(plot_canvas *c, const double *v, int n, double vmax, double m1, double m2)
{
    if (!(vmax > 0))
        vmax = 1;
    int rows = n < c->h ? n : c->h;
    for (int i = 0; i < rows; i++) {
        double len = v[i] / vmax * c->w;
        if (!(len > 0))
            continue;
        long eighths = lround(len * 8);
        if (eighths > 8L * c->w)
            eighths = 8L * c->w;
        int full = (int)(eighths / 8), part = (int)(eighths % 8);
        for (int x = 0; x < full; x++)
            plot_glyph(c, x, i, CP_FULL);
        if (part)
            plot_glyph(c, full, i, 0x2590u - (uint32_t)part); /* ▏ = 1/8 .. ▉ = 7/8 */
    }
    const double marks[2] = {m1, m2};
    const uint32_t glyphs[2] = {CP_VLINE, CP_DOTTED};
    for (int k = 0; k < 2; k++) {
        if (!(marks[k] >= 0))
            continue;
        int col = (int)(marks[k] / vmax * c->w);
        if (col >= c->w)
            col = c->w - 1;
        for (int y = 0; y < c->h; y++)
            plot_glyph_under(c, col, y, glyphs[k]);
    }
}
