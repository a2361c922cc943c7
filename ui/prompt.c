/* prompt.c — the prompts in front of a screen: a line editor for an image,
 * the presentation, the title or a path, and the yes/no questions.  Text
 * being typed is parsed at every keystroke (parsing only; the analysis
 * runs when Enter applies it) and an error is pointed at with a caret
 * under its column. */
#include <curses.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <sys/stat.h>
#include <unistd.h>

#include "app.h"
#include "export.h"
#include "filepath.h"
#include "frame.h"
#include "screens.h"
#include "paint.h"

#define PROMPT_ROWS 4

static char *prompt_strdup(const char *s)
{
    size_t n = strlen(s) + 1;
    char *d = malloc(n);
    if (d == NULL)
        abort();
    memcpy(d, s, n);
    return d;
}

static int prompt_is_text(prompt_kind k)
{
    return k == PROMPT_IMAGE || k == PROMPT_GROUP || k == PROMPT_TITLE || k == PROMPT_SAVE_AS ||
           k == PROMPT_OPEN || k == PROMPT_ITERATE || k == PROMPT_EXPORT ||
           k == PROMPT_NOTE;
}

/* Prompts that take a file name: "~" expands, Tab completes. */
static int prompt_is_path(prompt_kind k)
{
    return k == PROMPT_SAVE_AS || k == PROMPT_OPEN || k == PROMPT_EXPORT;
}

static void prompt_drop_cands(explorer_app *app)
{
    filepath_free_list(app->cands, app->ncands);
    app->cands = NULL;
    app->ncands = 0;
}

void prompt_open(explorer_app *app, prompt_kind kind, const char *text)
{
    prompt_drop_cands(app);
    app->prompt = kind;
    app->edit_scroll = 0;
    lineedit_set_text(app->edit, text ? text : "");
    prompt_check(app);
}

/* Parses the image being typed within the whole map, so that every error
 * the engine would report is found; the column comes back into the image. */
static void check_image(explorer_app *app, const char *text)
{
    slong X = app->pres->gens->n;
    char *map = viewmodel_map_text(app->vm, app->edit_index, text);
    expr_struct *im = flint_malloc(FLINT_MAX(X, 1) * sizeof(expr_struct));
    for (slong x = 0; x < X; x++)
        expr_init(im + x);
    nserr_t err;
    nserr_init(err);
    ns_status st = pres_parse_map(im, app->pres, map, 1, 1, err);
    if (st == NS_OK) {
        app->edit_ok = 1;
        snprintf(app->edit_msg, sizeof app->edit_msg,
                 "parses; Enter applies it, Esc leaves it as it was");
    } else {
        app->edit_ok = 0;
        /* The image alone, so that positions inside the message ("opened
         * at 1:5") count in the image's own columns too. */
        nserr_t alone_err;
        nserr_init(alone_err);
        expr_t alone;
        expr_init(alone);
        ns_status st2 = expr_parse(alone, text, 1, 1, app->pres->gens, alone_err);
        expr_clear(alone);
        size_t img = (size_t)-1;
        int col = 0;
        if (st2 != NS_OK && alone_err->line == 1 && alone_err->col > 0) {
            app->edit_caret = alone_err->col;
            snprintf(app->edit_msg, sizeof app->edit_msg, "column %d: %s", alone_err->col,
                     alone_err->msg);
        } else if (err->col > 0 &&
                   viewmodel_locate_column(app->vm, app->edit_index, text, err->col, &img, &col) &&
                   img == app->edit_index) {
            app->edit_caret = col;
            snprintf(app->edit_msg, sizeof app->edit_msg, "column %d: %s", col, err->msg);
        } else if (err->col > 0 && img < app->vm->ngens) {
            snprintf(app->edit_msg, sizeof app->edit_msg, "in the image of %s: %s",
                     app->vm->names[img], err->msg);
        } else {
            snprintf(app->edit_msg, sizeof app->edit_msg, "%s", err->msg);
        }
        nserr_clear(alone_err);
    }
    for (slong x = 0; x < X; x++)
        expr_clear(im + x);
    flint_free(im);
    free(map);
    nserr_clear(err);
}

static void check_group(explorer_app *app, const char *text)
{
    pres_t G;
    pres_init(G);
    nserr_t err;
    nserr_init(err);
    if (pres_parse(G, text, 1, 1, err) == NS_OK) {
        app->edit_ok = 1;
        snprintf(app->edit_msg, sizeof app->edit_msg,
                 "parses: %ld generator%s, %ld relation%s; Enter computes the quotient",
                 (long)G->gens->n, G->gens->n == 1 ? "" : "s", (long)G->nrels,
                 G->nrels == 1 ? "" : "s");
    } else {
        app->edit_ok = 0;
        if (err->line == 1 && err->col > 0) {
            app->edit_caret = err->col;
            snprintf(app->edit_msg, sizeof app->edit_msg, "column %d: %s", err->col, err->msg);
        } else {
            snprintf(app->edit_msg, sizeof app->edit_msg, "%s", err->msg);
        }
    }
    pres_clear(G);
    nserr_clear(err);
}

void prompt_check(explorer_app *app)
{
    const char *text = lineedit_get_text(app->edit);
    prompt_drop_cands(app); /* the list was for the text before */
    app->edit_caret = 0;
    app->edit_ok = 1;
    app->edit_msg[0] = '\0';
    switch (app->prompt) {
    case PROMPT_IMAGE:
        check_image(app, text);
        break;
    case PROMPT_GROUP:
        check_group(app, text);
        break;
    case PROMPT_TITLE:
        snprintf(app->edit_msg, sizeof app->edit_msg, "Enter sets the title, Esc leaves it");
        break;
    case PROMPT_ITERATE:
        screen_iterate_check_word(app, text);
        break;
    case PROMPT_NOTE:
        snprintf(app->edit_msg, sizeof app->edit_msg, "%s",
                 app->notes_edit_note >= 0 && text[strspn(text, " \t")] == '\0'
                     ? (app->notes_edit_mode == 'e' ? "Enter removes this empty line, Esc leaves it"
                                                    : "type the line; Esc leaves the note as it was")
                     : "Enter sets the line (saved with the session), Esc leaves it");
        break;
    case PROMPT_SAVE_AS:
    case PROMPT_EXPORT:
    case PROMPT_OPEN: {
        /* an empty name is not an error yet, only not ready: Enter beeps */
        char *full = filepath_expand(text);
        if (text[0] == '\0')
            snprintf(app->edit_msg, sizeof app->edit_msg, "type a file name (Tab completes)");
        else if (app->prompt == PROMPT_EXPORT)
            snprintf(app->edit_msg, sizeof app->edit_msg, "Enter writes %s to %s, Esc cancels",
                     export_kind_name(app->export_kind, app->export_layer),
                     strcmp(full, text) ? full : "this file");
        else if (strcmp(full, text) != 0) /* say where "~" leads */
            snprintf(app->edit_msg, sizeof app->edit_msg, "Enter %s %s, Esc cancels",
                     app->prompt == PROMPT_OPEN ? "opens" : "saves to", full);
        else
            snprintf(app->edit_msg, sizeof app->edit_msg, "%s",
                     app->prompt == PROMPT_OPEN ? "Enter opens this file, Esc cancels"
                                                : "Enter saves there, Esc cancels");
        free(full);
        break;
    }
    default:
        break;
    }
}

/* ---- drawing ----------------------------------------------------------- */

/* Text in w cells, its start given up (marked) when it is longer: the end
 * of a directory is the part that tells where one is. */
static void prompt_paint_tail(explorer_app *app, int y, int x, int w, paint_role role,
                              const char *s)
{
    size_t n = lineedit_utf8_ncols(s);
    if (w <= 1)
        return;
    if (n <= (size_t)w) {
        paint_text(y, x, w, role, s);
        return;
    }
    int m = paint_text(y, x, 1, ROLE_MARKER, app->utf8 ? "\xE2\x80\xA6" : "~");
    paint_text(y, x + m, w - m, role, s + lineedit_utf8_offset(s, n - (size_t)(w - m)));
}

/* The names Tab found, above the prompt box: in columns, each name whole;
 * when they do not all fit, as many as fit and how many more there are. */
static void prompt_draw_cands(explorer_app *app, int bottom)
{
    size_t n = app->ncands;
    int top = 1, avail = bottom - top; /* rows for the list and its heading */
    if (n == 0 || avail < 2)
        return;
    size_t wmax = 0;
    for (size_t i = 0; i < n; i++) {
        size_t w = lineedit_utf8_ncols(app->cands[i]);
        if (w > wmax)
            wmax = w;
    }
    int inner = COLS - 2;
    int colw = (int)wmax + 2;
    int ncol = colw > inner ? 1 : inner / colw;
    /* a name wider than the screen takes several rows */
    int rows_per = wmax > (size_t)inner ? (int)((wmax + (size_t)inner - 1) / (size_t)inner) : 1;
    size_t nrows = (n + (size_t)ncol - 1) / (size_t)ncol;
    size_t fit_rows = (size_t)(avail - 1) / (size_t)rows_per;
    size_t shown = n;
    if (nrows > fit_rows) {
        /* keep a row for "... more" */
        fit_rows = (size_t)(avail - 2) / (size_t)rows_per;
        shown = fit_rows * (size_t)ncol;
    }
    size_t used = (shown + (size_t)ncol - 1) / (size_t)ncol;
    int height = 1 + (int)used * rows_per + (shown < n ? 1 : 0);
    int y = bottom - height;
    for (int r = 0; r < height; r++)
        paint_fill(y + r, 0, COLS, ROLE_NORMAL);
    paint_fill(y, 0, COLS, ROLE_BAR);
    paint_textf(y, 1, COLS - 1, ROLE_BAR, "%zu names match (Tab completed what they share):", n);
    for (size_t i = 0; i < shown; i++) {
        int row = y + 1 + (int)(i / (size_t)ncol) * rows_per;
        int col = 1 + (int)(i % (size_t)ncol) * colw;
        const char *s = app->cands[i];
        for (int k = 0; k < rows_per && *s; k++) {
            size_t take = lineedit_utf8_offset(s, (size_t)inner);
            char *part = malloc(take + 1);
            if (part == NULL)
                abort();
            memcpy(part, s, take);
            part[take] = '\0';
            paint_text(row + k, col, inner, ROLE_NORMAL, part);
            free(part);
            s += take;
        }
    }
    if (shown < n)
        paint_textf(y + height - 1, 1, COLS - 1, ROLE_DIM,
                    "... and %zu more: type more of the name, then Tab", n - shown);
}

static void prompt_label(explorer_app *app, char *label, size_t n, char *prefix, size_t pn)
{
    const char *arrow = app->utf8 ? "\xE2\x86\xA6" : "->";
    switch (app->prompt) {
    case PROMPT_IMAGE:
        snprintf(label, n, "Image of %s", app->vm->names[app->edit_index]);
        snprintf(prefix, pn, "%s %s ", app->vm->names[app->edit_index], arrow);
        break;
    case PROMPT_GROUP:
        snprintf(label, n, "Presentation <generators | relations>");
        snprintf(prefix, pn, "group ");
        break;
    case PROMPT_TITLE:
        snprintf(label, n, "Title of the session");
        snprintf(prefix, pn, "title ");
        break;
    case PROMPT_SAVE_AS:
        snprintf(label, n, "Save the session as");
        snprintf(prefix, pn, "file ");
        break;
    case PROMPT_OPEN:
        snprintf(label, n, "Open a session file");
        snprintf(prefix, pn, "file ");
        break;
    case PROMPT_EXPORT:
        snprintf(label, n, "Write %s to", export_kind_name(app->export_kind, app->export_layer));
        snprintf(prefix, pn, "file ");
        break;
    case PROMPT_NOTE:
        if (app->notes_edit_note < 0) {
            snprintf(label, n, "A line of the comment at the top of the file");
            snprintf(prefix, pn, "# ");
        } else {
            snprintf(label, n, "A line of note %d", app->notes_edit_note + 1);
            snprintf(prefix, pn, "note ");
        }
        break;
    case PROMPT_ITERATE:
        snprintf(label, n, "Element to iterate (a word in the generators)");
        snprintf(prefix, pn, "w = ");
        break;
    default:
        label[0] = prefix[0] = '\0';
        break;
    }
}

/* Appends the lines of text (split at '\n'), each wrapped at blanks to w
 * cells and indented by two, to t. */
static void prompt_wrap_into(paint_lines *t, paint_role role, const char *text, int w)
{
    const char *s = text;
    while (s && *s) {
        const char *e = strchr(s, '\n');
        size_t len = e ? (size_t)(e - s) : strlen(s);
        char *line = malloc(len + 1);
        if (line == NULL)
            abort();
        memcpy(line, s, len);
        line[len] = '\0';
        const char *p = line;
        do {
            size_t take = strlen(p);
            if (lineedit_utf8_ncols(p) > (size_t)w) {
                take = lineedit_utf8_offset(p, (size_t)w);
                size_t b = take;
                while (b > 0 && p[b] != ' ')
                    b--;
                if (b > 0)
                    take = b;
            }
            paint_lines_add(t, role, "  %.*s", (int)take, p);
            p += take;
            while (*p == ' ')
                p++;
        } while (*p);
        free(line);
        s = e ? e + 1 : NULL;
    }
}

/* Before a save: the comment and notes, which were written before the
 * changes since they were last seen, shown whole (as far as the screen
 * goes), with the choice. */
static void prompt_draw_notes_question(explorer_app *app)
{
    paint_lines t = {0};
    const session_struct *d = app->doc;
    int w = COLS - 4;
    if (d->comments.text && d->comments.text[0]) {
        paint_lines_add(&t, ROLE_HEADING, "Comment at the top of the file:");
        prompt_wrap_into(&t, ROLE_NORMAL, d->comments.text, w);
    }
    for (slong i = 0; i < d->nnotes; i++)
        if (d->notes[i].text && d->notes[i].text[0]) {
            paint_lines_add(&t, ROLE_HEADING, "Note %ld:", (long)(i + 1));
            prompt_wrap_into(&t, ROLE_NORMAL, d->notes[i].text, w);
        }
    /* rows 1 .. LINES-3: a bar, the text, the question */
    int room = LINES - 3 - 2;
    int shown = t.n <= room ? t.n : room - 1;
    int y = LINES - 2 - (shown + (shown < t.n) + 2);
    paint_fill(y, 0, COLS, ROLE_BAR);
    paint_text(y, 1, COLS - 1, ROLE_BAR,
               "Before saving: this was written before your changes. Does it still hold?");
    for (int i = 0; i < shown; i++) {
        paint_fill(y + 1 + i, 0, COLS, ROLE_NORMAL);
        paint_text(y + 1 + i, 1, COLS - 1, t.v[i].role, t.v[i].text);
    }
    int q = y + 1 + shown;
    if (shown < t.n) {
        paint_fill(q, 0, COLS, ROLE_NORMAL);
        paint_textf(q++, 1, COLS - 1, ROLE_MARKER,
                    "... %d more lines: any other key, then N shows them all", t.n - shown);
    }
    paint_fill(q, 0, COLS, ROLE_NORMAL);
    paint_text(q, 1, COLS - 1, ROLE_MARKER,
               "k keeps it as it is, d drops all of it, any other key: not saved.");
    paint_fill(LINES - 1, 0, COLS, ROLE_NORMAL);
    int hx = paint_text(LINES - 1, 0, COLS, ROLE_KEY, "k");
    hx += paint_text(LINES - 1, hx, COLS - hx, ROLE_NORMAL, " keep and save  ");
    hx += paint_text(LINES - 1, hx, COLS - hx, ROLE_KEY, "d");
    hx += paint_text(LINES - 1, hx, COLS - hx, ROLE_NORMAL, " drop and save  ");
    hx += paint_text(LINES - 1, hx, COLS - hx, ROLE_KEY, "other keys");
    paint_text(LINES - 1, hx, COLS - hx, ROLE_NORMAL, " do not save");
    paint_lines_free(&t);
}

void prompt_draw(explorer_app *app)
{
    int y0 = LINES - 2 - PROMPT_ROWS;
    for (int r = 0; r < PROMPT_ROWS; r++)
        paint_fill(y0 + r, 0, COLS, ROLE_NORMAL);
    if (app->prompt == PROMPT_RECOVER) {
        paint_fill(LINES - 1, 0, COLS, ROLE_NORMAL);
        int hx = paint_text(LINES - 1, 0, COLS, ROLE_KEY, "r");
        hx += paint_text(LINES - 1, hx, COLS - hx, ROLE_NORMAL, " restore  ");
        hx += paint_text(LINES - 1, hx, COLS - hx, ROLE_KEY, "d");
        paint_text(LINES - 1, hx, COLS - hx, ROLE_NORMAL, " discard");
        paint_fill(y0, 0, COLS, ROLE_BAR);
        paint_text(y0, 1, COLS - 1, ROLE_BAR,
                   "Unsaved work from an earlier run was kept. It changes:");
        paint_text(y0 + 1, 1, COLS - 1, ROLE_MARKER, app->recovery_diff);
        paint_text(y0 + 2, 1, COLS - 1, ROLE_NORMAL,
                   "r restores it (s then saves it), d discards it for good.");
        return;
    }
    if (app->prompt == PROMPT_CONFIRM_QUIT || app->prompt == PROMPT_CONFIRM_OPEN) {
        paint_fill(LINES - 1, 0, COLS, ROLE_NORMAL);
        int hx = paint_text(LINES - 1, 0, COLS, ROLE_KEY, "y");
        hx += paint_text(LINES - 1, hx, COLS - hx, ROLE_NORMAL, " yes  ");
        hx += paint_text(LINES - 1, hx, COLS - hx, ROLE_KEY, "other keys");
        paint_text(LINES - 1, hx, COLS - hx, ROLE_NORMAL, " no");
        paint_fill(y0 + 1, 0, COLS, ROLE_BAR);
        paint_text(y0 + 1, 1, COLS - 1, ROLE_BAR, "There are unsaved changes.");
        paint_text(y0 + 2, 1, COLS - 1, ROLE_MARKER,
                   app->prompt == PROMPT_CONFIRM_QUIT
                       ? "Quit without saving? y quits; any other key stays (then s saves)."
                       : "Open another file without saving? y goes on; any other key stays.");
        return;
    }
    if (app->prompt == PROMPT_CONFIRM_NOTES) {
        prompt_draw_notes_question(app);
        return;
    }
    if (app->prompt == PROMPT_EXPORT_KIND || app->prompt == PROMPT_CONFIRM_OVERWRITE) {
        paint_fill(LINES - 1, 0, COLS, ROLE_NORMAL);
        paint_fill(y0 + 1, 0, COLS, ROLE_BAR);
        if (app->prompt == PROMPT_CONFIRM_OVERWRITE) {
            int hx = paint_text(LINES - 1, 0, COLS, ROLE_KEY, "y");
            hx += paint_text(LINES - 1, hx, COLS - hx, ROLE_NORMAL, " replace it  ");
            hx += paint_text(LINES - 1, hx, COLS - hx, ROLE_KEY, "other keys");
            paint_text(LINES - 1, hx, COLS - hx, ROLE_NORMAL, " back to the name");
            paint_text(y0 + 1, 1, COLS - 1, ROLE_BAR, "The file exists:");
            prompt_paint_tail(app, y0 + 2, 1, COLS - 2, ROLE_MARKER,
                              app->pending_path ? app->pending_path : "");
            paint_text(y0 + 3, 1, COLS - 1, ROLE_NORMAL,
                       "y replaces it; any other key goes back to the file name.");
            return;
        }
        int hx = paint_text(LINES - 1, 0, COLS, ROLE_KEY, "t j l m");
        hx += paint_text(LINES - 1, hx, COLS - hx, ROLE_NORMAL, " choose  ");
        hx += paint_text(LINES - 1, hx, COLS - hx, ROLE_KEY, "other keys");
        paint_text(LINES - 1, hx, COLS - hx, ROLE_NORMAL, " cancel");
        paint_text(y0 + 1, 1, COLS - 1, ROLE_BAR,
                   "Export to a file: the report as nilstep report writes it, or a matrix");
        paint_text(y0 + 2, 1, COLS - 1, ROLE_NORMAL,
                   "t text report   j JSON report   l LaTeX report");
        analysis_view_t V;
        analysis_get_view(V, app->A);
        if (V->has_map && V->valid)
            paint_textf(y0 + 3, 1, COLS - 1, ROLE_NORMAL,
                        "m matrix M%ld of the selected layer %ld (plain rows of integers)",
                        app->export_layer, app->export_layer);
        else
            paint_text(y0 + 3, 1, COLS - 1, ROLE_DIM,
                       "(no matrix: the map is not well defined on this quotient)");
        return;
    }
    app_draw_hints(app, prompt_keys());
    char label[128], prefix[128];
    prompt_label(app, label, sizeof label, prefix, sizeof prefix);
    paint_fill(y0, 0, COLS, ROLE_BAR);
    int x = paint_textf(y0, 1, COLS - 1, ROLE_BAR, "%s", label);
    paint_text(y0, x + 3, COLS - x - 3, ROLE_BAR, "Enter applies, Esc cancels");

    int px = 1 + paint_text(y0 + 1, 1, COLS - 1, ROLE_HEADING, prefix);
    int fw = COLS - px - 1;
    /* Keep the cursor inside the visible window of the text. */
    size_t cur = lineedit_cursor_col(app->edit);
    if (cur < app->edit_scroll)
        app->edit_scroll = cur;
    if (cur >= app->edit_scroll + (size_t)fw)
        app->edit_scroll = cur - (size_t)fw + 1;
    const char *text = lineedit_get_text(app->edit);
    const char *from = text + lineedit_utf8_offset(text, app->edit_scroll);
    size_t shown = lineedit_utf8_ncols(from);
    char *win = prompt_strdup(from);
    win[lineedit_utf8_offset(win, (size_t)fw)] = '\0';
    attrset(A_NORMAL);
    mvaddstr(y0 + 1, px, win);
    free(win);
    if (app->edit_scroll > 0)
        paint_text(y0 + 1, px - 1, 1, ROLE_MARKER, "<");
    if (shown > (size_t)fw)
        paint_text(y0 + 1, COLS - 1, 1, ROLE_MARKER, ">");

    if (prompt_is_path(app->prompt)) {
        /* where a relative name leads */
        char cwd[4096];
        if (getcwd(cwd, sizeof cwd) == NULL)
            snprintf(cwd, sizeof cwd, "(the current directory cannot be read)");
        int w = paint_text(y0 + 2, 1, COLS - 1, ROLE_DIM, "in ");
        prompt_paint_tail(app, y0 + 2, 1 + w, COLS - 2 - w, ROLE_DIM, cwd);
        prompt_draw_cands(app, y0);
    }
    if (app->edit_caret > 0) {
        long cx = (long)px + app->edit_caret - 1 - (long)app->edit_scroll;
        if (cx >= px && cx < COLS)
            paint_text(y0 + 2, (int)cx, 1, ROLE_MARKER, "^");
    }
    /* the message; one that does not fit takes the row above too (no
     * caret is drawn there then), so that a file name and a reason show */
    char msg[sizeof app->edit_msg + 8];
    snprintf(msg, sizeof msg, "%s%s", app->edit_ok ? "" : "error: ",
             app->edit_ok ? app->edit_msg : app_error_text(app->edit_msg));
    paint_role mrole = app->edit_ok ? ROLE_GOOD : ROLE_ERROR;
    size_t mw = (size_t)(COLS - 2), mn = lineedit_utf8_ncols(msg);
    if (mn > mw && app->edit_caret == 0) {
        size_t cut = lineedit_utf8_offset(msg, mw), b = cut;
        while (b > 0 && msg[b] != ' ')
            b--;
        if (b > 0)
            cut = b;
        paint_fill(y0 + 2, 0, COLS, ROLE_NORMAL);
        paint_textf(y0 + 2, 1, (int)mw, mrole, "%.*s", (int)cut, msg);
        paint_text(y0 + 3, 1, (int)mw, mrole, msg + cut + (msg[cut] == ' '));
    } else {
        paint_text(y0 + 3, 1, (int)mw, mrole, msg);
    }
    curs_set(1);
    move(y0 + 1, px + (int)(cur - app->edit_scroll));
}

/* ---- keys -------------------------------------------------------------- */

static int edit_cmd(explorer_app *app, lineedit_cmd cmd)
{
    if (lineedit_apply(app->edit, cmd))
        prompt_check(app);
    return ACT_REDRAW;
}

static int act_left(explorer_app *app)
{
    return edit_cmd(app, LINEEDIT_LEFT);
}
static int act_right(explorer_app *app)
{
    return edit_cmd(app, LINEEDIT_RIGHT);
}
static int act_home(explorer_app *app)
{
    return edit_cmd(app, LINEEDIT_HOME);
}
static int act_end(explorer_app *app)
{
    return edit_cmd(app, LINEEDIT_END);
}
static int act_backspace(explorer_app *app)
{
    return edit_cmd(app, LINEEDIT_BACKSPACE);
}
static int act_delete(explorer_app *app)
{
    return edit_cmd(app, LINEEDIT_DELETE);
}
static int act_kill(explorer_app *app)
{
    return edit_cmd(app, LINEEDIT_KILL_LINE);
}
static int act_kill_end(explorer_app *app)
{
    return edit_cmd(app, LINEEDIT_KILL_TO_END);
}

/* Tab in a file prompt: completes the name before the cursor. */
static int act_complete(explorer_app *app)
{
    if (!prompt_is_path(app->prompt))
        return ACT_NONE;
    const char *text = lineedit_get_text(app->edit);
    size_t cur = lineedit_utf8_offset(text, lineedit_cursor_col(app->edit));
    char *before = malloc(cur + 1);
    if (before == NULL)
        abort();
    memcpy(before, text, cur);
    before[cur] = '\0';
    char *out, **cands;
    size_t n;
    int r = filepath_complete(&out, &cands, &n, before);
    if (r == 0) {
        prompt_check(app);
        const char *slash = strrchr(before, '/');
        snprintf(app->edit_msg, sizeof app->edit_msg, "Tab: no name starts with '%s' in %.*s",
                 slash ? slash + 1 : before, slash ? (int)(slash - before + 1) : 1,
                 slash ? before : ".");
        beep();
        free(before);
        return ACT_REDRAW;
    }
    size_t tail = strlen(text + cur);
    size_t ol = strlen(out);
    char *joined = malloc(ol + tail + 1);
    if (joined == NULL)
        abort();
    memcpy(joined, out, ol);
    memcpy(joined + ol, text + cur, tail + 1);
    lineedit_set_text(app->edit, joined);
    lineedit_set_cursor_col(app->edit, lineedit_utf8_ncols(out));
    prompt_check(app);
    app->cands = cands; /* after prompt_check, which drops an old list */
    app->ncands = n;
    free(joined);
    free(out);
    free(before);
    return ACT_REDRAW;
}

static int act_cancel(explorer_app *app)
{
    prompt_drop_cands(app);
    app->prompt = PROMPT_NONE;
    app_status(app, 0, "cancelled");
    return ACT_REDRAW;
}

static int prompt_apply_kind(explorer_app *app, prompt_kind kind, const char *text,
                             const char *path);

int prompt_act_export(explorer_app *app)
{
    analysis_view_t A;
    analysis_get_view(A, app->A);
    if (!A->has_group || !A->has_map) {
        app_status(app, 1, "nothing to export: %s",
                   app->group_problem[0] ? app->group_problem : "no map analysed");
        return ACT_REDRAW;
    }
    app->export_layer = (long)app->vm->sel_layer + 1;
    prompt_open(app, PROMPT_EXPORT_KIND, "");
    return ACT_REDRAW;
}

/* Enter on the export file name: asks before replacing a file. */
static int prompt_export_to(explorer_app *app, const char *text, const char *path)
{
    free(app->export_typed);
    app->export_typed = prompt_strdup(text);
    free(app->pending_path);
    app->pending_path = prompt_strdup(path);
    struct stat st;
    if (stat(path, &st) == 0) {
        if (!S_ISREG(st.st_mode)) {
            prompt_open(app, PROMPT_EXPORT, text);
            snprintf(app->edit_msg, sizeof app->edit_msg,
                     "not written: '%s' is not a regular file", path);
            app->edit_ok = 0;
            return ACT_REDRAW;
        }
        app->prompt = PROMPT_CONFIRM_OVERWRITE;
        return ACT_REDRAW;
    }
    return ACT_EXPORT | ACT_REDRAW;
}

static int act_apply(explorer_app *app)
{
    const char *text = lineedit_get_text(app->edit);
    prompt_check(app);
    if (!app->edit_ok ||
        ((app->prompt == PROMPT_OPEN || app->prompt == PROMPT_SAVE_AS) && text[0] == '\0')) {
        beep();
        return ACT_REDRAW;
    }
    prompt_kind kind = app->prompt;
    app->prompt = PROMPT_NONE;
    prompt_drop_cands(app);
    char *path = prompt_is_path(kind) ? filepath_expand(text) : NULL; /* "~" expanded */
    int flags = prompt_apply_kind(app, kind, text, path);
    free(path);
    return flags;
}

static int prompt_apply_kind(explorer_app *app, prompt_kind kind, const char *text,
                             const char *path)
{
    switch (kind) {
    case PROMPT_IMAGE:
        if (!viewmodel_set_image(app->vm, app->edit_index, text)) {
            app_status(app, 0, "image unchanged");
            return ACT_REDRAW;
        }
        app->map_edited = 1;
        app->map_action = 'S';
        app_status(app, 0, "image of %s applied (u undoes)", app->vm->names[app->edit_index]);
        return ACT_MAP | ACT_REDRAW;
    case PROMPT_GROUP:
        if (strcmp(text, app->group_text) == 0) {
            app_status(app, 0, "presentation unchanged");
            return ACT_REDRAW;
        }
        free(app->pending_group);
        app->pending_group = prompt_strdup(text);
        app->pending_cls = app->cls;
        return ACT_GROUP | ACT_REDRAW;
    case PROMPT_TITLE: {
        const char *t = text[0] ? text : "untitled";
        if (strcmp(t, app->title) == 0)
            return ACT_REDRAW;
        /* one undoable step, like an image edit */
        viewmodel_doc before, after;
        viewmodel_doc_get(&before, app->vm, app->title, app->group_text, (long)app->cls);
        viewmodel_doc_get(&after, app->vm, t, app->group_text, (long)app->cls);
        viewmodel_push_doc(app->vm, &before, &after);
        free(app->title);
        app->title = prompt_strdup(t);
        app->title_edited = 1;
        app_status(app, 0, "title set (u undoes)");
        return ACT_REDRAW;
    }
    case PROMPT_SAVE_AS:
        free(app->pending_path);
        app->pending_path = prompt_strdup(path);
        return ACT_SAVE | ACT_REDRAW;
    case PROMPT_EXPORT:
        return prompt_export_to(app, text, path);
    case PROMPT_NOTE:
        notes_apply_edit(app, text);
        return ACT_REDRAW;
    case PROMPT_ITERATE:
        screen_iterate_set_word(app, text);
        return ACT_REDRAW;
    case PROMPT_OPEN: {
        size_t tl = strlen(path);
        if (tl > 6 && !strcmp(path + tl - 6, ".jsonl")) /* scan results: the member list */
            return members_show(app, path);
        nserr_t err;
        nserr_init(err);
        session_clear(app->pending_doc);
        if (session_load(app->pending_doc, path, err) != NS_OK) {
            /* keep the prompt and the typed path, with the reason */
            app->prompt = PROMPT_OPEN;
            nserr_format(app->edit_msg, sizeof app->edit_msg, err, NULL);
            app->edit_ok = 0;
            app->edit_caret = 0;
            nserr_clear(err);
            return ACT_REDRAW;
        }
        nserr_clear(err);
        app->has_pending_doc = 1;
        free(app->pending_path);
        app->pending_path = prompt_strdup(path);
        return ACT_OPEN | ACT_REDRAW;
    }
    default:
        return ACT_REDRAW;
    }
}

static const ui_binding prompt_bindings[] = {
    {'\r', act_apply, "Enter", "apply the text (only when it parses)", "Enter apply"},
    {'\n', act_apply, NULL, NULL, NULL},
    {UIKEY_FN(KEY_ENTER), act_apply, NULL, NULL, NULL},
    {UIKEY_ESC, act_cancel, "Esc", "cancel: leave everything as it was", "Esc cancel"},
    {UIKEY_FN(KEY_LEFT), act_left, "Left / Right", "move the cursor one character", NULL},
    {UIKEY_FN(KEY_RIGHT), act_right, NULL, NULL, NULL},
    {UIKEY_FN(KEY_HOME), act_home, "Home / Ctrl-A", "to the start of the line", "Home/End"},
    {UIKEY_CTRL('a'), act_home, NULL, NULL, NULL},
    {UIKEY_FN(KEY_END), act_end, "End / Ctrl-E", "to the end of the line", NULL},
    {UIKEY_CTRL('e'), act_end, NULL, NULL, NULL},
    {UIKEY_FN(KEY_BACKSPACE), act_backspace, "Backspace", "delete the character before the cursor",
     NULL},
    {127, act_backspace, NULL, NULL, NULL},
    {UIKEY_CTRL('h'), act_backspace, NULL, NULL, NULL},
    {UIKEY_FN(KEY_DC), act_delete, "Delete / Ctrl-D", "delete the character under the cursor",
     NULL},
    {UIKEY_CTRL('d'), act_delete, NULL, NULL, NULL},
    {UIKEY_CTRL('u'), act_kill, "Ctrl-U", "clear the whole line", "Ctrl-U clear"},
    {UIKEY_CTRL('k'), act_kill_end, "Ctrl-K", "delete from the cursor to the end", NULL},
    {'\t', act_complete, "Tab",
     "file names: complete the name (what the matches share; several are listed); ~ is the "
     "home directory",
     NULL},
};

static const ui_keymap prompt_keymap = {"Line editor (images, presentation, title, file names)",
                                        prompt_bindings,
                                        sizeof prompt_bindings / sizeof prompt_bindings[0]};

const ui_keymap *prompt_keys(void)
{
    return &prompt_keymap;
}

int prompt_key(explorer_app *app, int key)
{
    if (app->prompt == PROMPT_RECOVER) {
        /* only an explicit answer: the copy is the user's only one */
        if (key == 'r' || key == 'R') {
            app->prompt = PROMPT_NONE;
            return ACT_RESTORE | ACT_REDRAW;
        }
        if (key == 'd' || key == 'D') {
            app->prompt = PROMPT_NONE;
            return ACT_DISCARD | ACT_REDRAW;
        }
        return ACT_NONE;
    }
    if (app->prompt == PROMPT_CONFIRM_QUIT || app->prompt == PROMPT_CONFIRM_OPEN) {
        prompt_kind kind = app->prompt;
        app->prompt = PROMPT_NONE;
        if (key != 'y' && key != 'Y') {
            app_status(app, 0, "nothing lost: still here");
            return ACT_REDRAW;
        }
        if (kind == PROMPT_CONFIRM_QUIT)
            return ACT_QUIT;
        prompt_open(app, PROMPT_OPEN, "");
        return ACT_REDRAW;
    }
    if (app->prompt == PROMPT_CONFIRM_NOTES) {
        app->prompt = PROMPT_NONE;
        if (key == 'k' || key == 'K') {
            notes_mark_seen(app);
            return ACT_SAVE | ACT_REDRAW;
        }
        if (key == 'd' || key == 'D') {
            session_set_comments(app->doc, NULL);
            session_clear_notes(app->doc);
            viewmodel_mark_dirty(app->vm);
            return ACT_SAVE | ACT_REDRAW;
        }
        free(app->pending_path);
        app->pending_path = NULL;
        app_status(app, 0, "not saved; N shows the comment and notes, s saves");
        return ACT_REDRAW;
    }
    if (app->prompt == PROMPT_EXPORT_KIND) {
        app->prompt = PROMPT_NONE;
        int k = key >= 'A' && key <= 'Z' ? key - 'A' + 'a' : key;
        analysis_view_t V;
        analysis_get_view(V, app->A);
        if (k == EXPORT_MATRIX && !(V->has_map && V->valid)) {
            app_status(app, 1, "no matrix: the map is not well defined on this quotient");
            return ACT_REDRAW;
        }
        if (k != EXPORT_TEXT && k != EXPORT_JSON && k != EXPORT_LATEX && k != EXPORT_MATRIX) {
            app_status(app, 0, "cancelled: nothing exported");
            return ACT_REDRAW;
        }
        app->export_kind = k;
        char *name = export_suggest_name(app->path, k, app->export_layer);
        prompt_open(app, PROMPT_EXPORT, name);
        free(name);
        return ACT_REDRAW;
    }
    if (app->prompt == PROMPT_CONFIRM_OVERWRITE) {
        if (key == 'y' || key == 'Y') {
            app->prompt = PROMPT_NONE;
            return ACT_EXPORT | ACT_REDRAW;
        }
        prompt_open(app, PROMPT_EXPORT, app->export_typed ? app->export_typed : "");
        snprintf(app->edit_msg, sizeof app->edit_msg, "not written: the file exists (type another name, or Enter then y replaces it)");
        return ACT_REDRAW;
    }
    if (!prompt_is_text(app->prompt))
        return ACT_NONE;
    for (size_t i = 0; i < prompt_keymap.n; i++)
        if (prompt_bindings[i].key == key)
            return prompt_bindings[i].action(app);
    if (key >= 0x20 && key < 0x200000) {
        if (lineedit_insert(app->edit, (uint32_t)key))
            prompt_check(app);
        return ACT_REDRAW;
    }
    return ACT_NONE;
}
