/* paint.c — see paint.h. */
#include "paint.h"

#include <curses.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>

#include "numfmt.h"

static int paint_attrs[ROLE_COUNT];
static int paint_ascii;

/* Monochrome theme: attributes only. */
static const int paint_mono[ROLE_COUNT] = {
    [ROLE_NORMAL] = A_NORMAL,    [ROLE_BAR] = A_REVERSE,   [ROLE_HEADING] = A_BOLD,
    [ROLE_SELECTED] = A_REVERSE, [ROLE_NUMBER] = A_NORMAL, [ROLE_MARKER] = A_BOLD,
    [ROLE_ERROR] = A_BOLD,       [ROLE_GOOD] = A_NORMAL,   [ROLE_DIM] = A_DIM,
    [ROLE_KEY] = A_BOLD,
};

/* Colour theme: foreground, background (-1 = the terminal's) and extra
 * attributes per role. */
static const struct {
    short fg, bg;
    int attr;
} paint_colour[ROLE_COUNT] = {
    [ROLE_NORMAL] = {-1, -1, A_NORMAL},
    [ROLE_BAR] = {COLOR_WHITE, COLOR_BLUE, A_BOLD},
    [ROLE_HEADING] = {COLOR_CYAN, -1, A_BOLD},
    [ROLE_SELECTED] = {COLOR_BLACK, COLOR_CYAN, A_NORMAL},
    [ROLE_NUMBER] = {COLOR_GREEN, -1, A_NORMAL},
    [ROLE_MARKER] = {COLOR_YELLOW, -1, A_BOLD},
    [ROLE_ERROR] = {COLOR_RED, -1, A_BOLD},
    [ROLE_GOOD] = {COLOR_GREEN, -1, A_NORMAL},
    [ROLE_DIM] = {-1, -1, A_DIM},
    [ROLE_KEY] = {COLOR_YELLOW, -1, A_BOLD},
};

int paint_no_color_requested(void)
{
    const char *v = getenv("NO_COLOR");
    return v != NULL && v[0] != '\0';
}

void paint_init(int colour)
{
    if (colour && has_colors() && start_color() == OK) {
        use_default_colors();
        for (int r = 0; r < ROLE_COUNT; r++) {
            init_pair((short)(r + 1), paint_colour[r].fg, paint_colour[r].bg);
            paint_attrs[r] = (int)COLOR_PAIR(r + 1) | paint_colour[r].attr;
        }
        return;
    }
    for (int r = 0; r < ROLE_COUNT; r++)
        paint_attrs[r] = paint_mono[r];
}

void paint_set_ascii(int ascii)
{
    paint_ascii = ascii;
}

int paint_attr(paint_role role)
{
    return paint_attrs[role];
}

int paint_text(int y, int x, int w, paint_role role, const char *s)
{
    if (w <= 0 || y < 0 || y >= LINES || x >= COLS)
        return 0;
    if (x + w > COLS)
        w = COLS - x;
    char buf[4096];
    numfmt_clip(buf, sizeof buf, s, (size_t)w, paint_ascii);
    attrset(paint_attrs[role]);
    mvaddstr(y, x, buf);
    attrset(A_NORMAL);
    int n = 0;
    for (const char *p = buf; *p; p++)
        if (((unsigned char)*p & 0xC0) != 0x80)
            n++;
    return n;
}

int paint_textf(int y, int x, int w, paint_role role, const char *fmt, ...)
{
    char buf[4096];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(buf, sizeof buf, fmt, ap);
    va_end(ap);
    return paint_text(y, x, w, role, buf);
}

void paint_fill(int y, int x, int w, paint_role role)
{
    if (w <= 0 || y < 0 || y >= LINES || x >= COLS)
        return;
    if (x + w > COLS)
        w = COLS - x;
    attrset(paint_attrs[role]);
    mvhline(y, x, ' ', w);
    attrset(A_NORMAL);
}

void paint_lines_add(paint_lines *t, paint_role role, const char *fmt, ...)
{
    if (t->n == t->cap) {
        t->cap = t->cap ? 2 * t->cap : 64;
        t->v = realloc(t->v, (size_t)t->cap * sizeof *t->v);
        if (t->v == NULL)
            abort();
    }
    va_list ap;
    va_start(ap, fmt);
    int len = vsnprintf(NULL, 0, fmt, ap);
    va_end(ap);
    char *s = malloc((size_t)len + 1);
    if (s == NULL)
        abort();
    va_start(ap, fmt);
    vsnprintf(s, (size_t)len + 1, fmt, ap);
    va_end(ap);
    t->v[t->n].role = role;
    t->v[t->n].text = s;
    t->n++;
}

void paint_lines_free(paint_lines *t)
{
    for (int i = 0; i < t->n; i++)
        free(t->v[i].text);
    free(t->v);
}
