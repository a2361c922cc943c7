/* screen_help.c — every key and what it does, read from the same key
 * tables the screens dispatch with, so the help cannot fall behind. */
#include <curses.h>
#include <stdio.h>
#include <string.h>

#include "app.h"
#include "frame.h"
#include "screens.h"
#include "lineedit.h"
#include "paint.h"

/* Lines of the help, in order; a NULL keys entry is a heading. */
typedef struct {
    const char *keys;
    const char *text;
} help_line;

static int help_collect(help_line *out, int cap)
{
    const ui_keymap *maps[] = {screen_main_keys(),    screen_layer_keys(),
                               prompt_keys(),         screen_members_keys(),
                               screen_full_keys(),    screen_iterate_keys(),
                               screen_bounds_keys(),  screen_notes_keys(),
                               screen_help_keys()};
    int n = 0;
#define HELP_PUT(k, t)         \
    do {                       \
        if (n < cap) {         \
            out[n].keys = (k); \
            out[n].text = (t); \
        }                      \
        n++;                   \
    } while (0)
    HELP_PUT("", "nilstep shows an endomorphism of a finitely presented group on its class-c");
    HELP_PUT("", "nilpotent quotient, one layer of the lower central series per table row.");
    HELP_PUT("", "Marks in the table: U after the rho_j that attains the upper bound max rho_j,");
    HELP_PUT("", "L after the rho_j^(1/j) that attains the lower bound max rho_j^(1/j).");
    HELP_PUT("", "");
    for (size_t m = 0; m < sizeof maps / sizeof maps[0]; m++) {
        HELP_PUT(NULL, maps[m]->title);
        for (size_t i = 0; i < maps[m]->n; i++)
            if (maps[m]->bindings[i].keys)
                HELP_PUT(maps[m]->bindings[i].keys, maps[m]->bindings[i].help);
        HELP_PUT("", "");
    }
    HELP_PUT(NULL, "Anywhere");
    HELP_PUT("Ctrl-C", "leave at once, without saving");
#undef HELP_PUT
    return n;
}

/* One screen row of the help: a help line's text is wrapped at blanks to
 * the width left for it, so that nothing is cut at the minimum size. */
typedef struct {
    const char *keys; /* NULL: heading; "": plain text or a continuation */
    int indent;       /* first column of the text */
    char text[256];
} help_row;

static int help_wrap(help_row *out, int cap, const help_line *l, int width)
{
    int indent = l->keys == NULL || l->keys[0] == '\0' ? 1 : 22;
    int w = width - indent;
    if (w < 10)
        w = 10;
    const char *s = l->text;
    int n = 0;
    do {
        size_t len = strlen(s);
        size_t take = len;
        if (lineedit_utf8_ncols(s) > (size_t)w) {
            take = lineedit_utf8_offset(s, (size_t)w);
            size_t b = take;
            while (b > 0 && s[b] != ' ')
                b--;
            if (b > 0)
                take = b;
        }
        if (n < cap) {
            out[n].keys = n == 0 ? l->keys : "";
            out[n].indent = n == 0 ? indent : (indent == 22 ? 24 : indent + 2);
            snprintf(out[n].text, sizeof out[n].text, "%.*s", (int)take, s);
        }
        n++;
        s += take;
        while (*s == ' ')
            s++;
        w = width - (indent == 22 ? 24 : indent + 2);
    } while (*s);
    return n;
}

void screen_help_draw(explorer_app *app)
{
    app_draw_header(app, "keys");
    help_line lines[256];
    int nl = help_collect(lines, 256);
    if (nl > 256)
        nl = 256;
    static help_row rows_v[1024];
    int n = 0;
    for (int i = 0; i < nl && n < 1024; i++)
        n += help_wrap(rows_v + n, 1024 - n, &lines[i], COLS - 1);
    if (n > 1024)
        n = 1024;
    int rows = LINES - 3;
    if (app->help_scroll > n - rows)
        app->help_scroll = n - rows;
    if (app->help_scroll < 0)
        app->help_scroll = 0;
    for (int r = 0; r < rows && app->help_scroll + r < n; r++) {
        const help_row *l = &rows_v[app->help_scroll + r];
        int y = 1 + r;
        if (l->keys == NULL) {
            paint_text(y, l->indent, COLS - l->indent, ROLE_HEADING, l->text);
        } else {
            if (l->keys[0] != '\0')
                paint_text(y, 3, 18, ROLE_KEY, l->keys);
            paint_text(y, l->indent, COLS - l->indent, ROLE_NORMAL, l->text);
        }
    }
    if (n > rows)
        paint_textf(LINES - 2, 0, COLS, ROLE_DIM, "lines %d-%d of %d", app->help_scroll + 1,
                    app->help_scroll + rows < n ? app->help_scroll + rows : n, n);
    app_draw_hints(app, screen_help_keys());
}

static int act_back(explorer_app *app)
{
    app->screen = app->help_return == SCREEN_HELP ? SCREEN_MAIN : app->help_return;
    return ACT_REDRAW;
}

static int act_up(explorer_app *app)
{
    app->help_scroll--;
    return ACT_REDRAW;
}

static int act_down(explorer_app *app)
{
    app->help_scroll++;
    return ACT_REDRAW;
}

static int act_page_up(explorer_app *app)
{
    app->help_scroll -= LINES - 4;
    return ACT_REDRAW;
}

static int act_page_down(explorer_app *app)
{
    app->help_scroll += LINES - 4;
    return ACT_REDRAW;
}

static const ui_binding help_bindings[] = {
    {UIKEY_ESC, act_back, "Esc / q / ?", "leave the help", "Esc back"},
    {'q', act_back, NULL, NULL, NULL},
    {'?', act_back, NULL, NULL, NULL},
    {UIKEY_FN(KEY_UP), act_up, "Up / k", "scroll up", "j/k scroll"},
    {'k', act_up, NULL, NULL, NULL},
    {UIKEY_FN(KEY_DOWN), act_down, "Down / j", "scroll down", NULL},
    {'j', act_down, NULL, NULL, NULL},
    {UIKEY_FN(KEY_PPAGE), act_page_up, "PgUp / b", "one page up", NULL},
    {'b', act_page_up, NULL, NULL, NULL},
    {UIKEY_FN(KEY_NPAGE), act_page_down, "PgDn / Space", "one page down", NULL},
    {' ', act_page_down, NULL, NULL, NULL},
};

static const ui_keymap help_keymap = {"Help", help_bindings,
                                      sizeof help_bindings / sizeof help_bindings[0]};

const ui_keymap *screen_help_keys(void)
{
    return &help_keymap;
}

int screen_help_open(explorer_app *app)
{
    app->help_return = app->screen;
    app->screen = SCREEN_HELP;
    app->help_scroll = 0;
    return ACT_REDRAW;
}
