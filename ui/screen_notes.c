/* screen_notes.c — the session's comment (the '#' lines at the top of its
 * file) and its notes (the `note` keys), which the analysis never reads:
 * shown line by line, each line editable, lines and notes added and
 * removed.
 *
 * Text the user has not seen is never saved unasked: the explorer
 * remembers the document (title, presentation, class, images) as it was
 * when the comment and notes were last shown or confirmed — on opening,
 * here, or at the question before a save — and a save after the document
 * changed asks first (prompt.c, PROMPT_CONFIRM_NOTES). */
#include <curses.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "app.h"
#include "frame.h"
#include "lineedit.h"
#include "paint.h"
#include "screens.h"

static char *notes_strdup(const char *s)
{
    size_t n = strlen(s) + 1;
    char *d = malloc(n);
    if (d == NULL)
        abort();
    memcpy(d, s, n);
    return d;
}

/* ---- the document's signature --------------------------------------- */

char *notes_signature(const explorer_app *app)
{
    char *map = viewmodel_map_text(app->vm, 0, NULL);
    char cls[32];
    snprintf(cls, sizeof cls, "%ld", (long)app->cls);
    size_t n = strlen(app->title) + strlen(app->group_text) + strlen(cls) + strlen(map) + 4;
    char *s = malloc(n);
    if (s == NULL)
        abort();
    snprintf(s, n, "%s\n%s\n%s\n%s", app->title, app->group_text, cls, map);
    free(map);
    return s;
}

void notes_mark_seen(explorer_app *app)
{
    free(app->notes_seen);
    app->notes_seen = notes_signature(app);
}

static int notes_has_text(const explorer_app *app)
{
    const session_struct *d = app->doc;
    if (d->comments.text && d->comments.text[0])
        return 1;
    for (slong i = 0; i < d->nnotes; i++)
        if (d->notes[i].text && d->notes[i].text[0])
            return 1;
    return 0;
}

int notes_unseen(const explorer_app *app)
{
    if (!notes_has_text(app))
        return 0;
    if (app->notes_seen == NULL)
        return 1;
    char *now = notes_signature(app);
    int differ = strcmp(now, app->notes_seen) != 0;
    free(now);
    return differ;
}

/* ---- lines ------------------------------------------------------------ */

/* A text split at '\n' (malloc'd copies; *n of them). */
static char **notes_split(const char *text, size_t *n)
{
    *n = 0;
    if (text == NULL || text[0] == '\0')
        return NULL;
    size_t cap = 1;
    for (const char *p = text; *p; p++)
        cap += *p == '\n';
    char **v = malloc(cap * sizeof *v);
    if (v == NULL)
        abort();
    const char *a = text;
    for (;;) {
        const char *e = strchr(a, '\n');
        size_t len = e ? (size_t)(e - a) : strlen(a);
        char *l = malloc(len + 1);
        if (l == NULL)
            abort();
        memcpy(l, a, len);
        l[len] = '\0';
        v[(*n)++] = l;
        if (e == NULL)
            break;
        a = e + 1;
    }
    return v;
}

static char *notes_join(char **v, size_t n)
{
    size_t len = 1;
    for (size_t i = 0; i < n; i++)
        len += strlen(v[i]) + 1;
    char *s = malloc(len);
    if (s == NULL)
        abort();
    s[0] = '\0';
    for (size_t i = 0; i < n; i++) {
        if (i)
            strcat(s, "\n");
        strcat(s, v[i]);
    }
    return s;
}

static void notes_free_lines(char **v, size_t n)
{
    for (size_t i = 0; i < n; i++)
        free(v[i]);
    free(v);
}

/* The rows of the screen: comment lines, then the lines of each note; a
 * block without lines has one placeholder row (line -1). */
typedef struct {
    int note;  /* -1: the comment; else the note's index */
    long line; /* the line in it, -1 for a placeholder */
    char *text;
} notes_row;

static notes_row *notes_rows(const explorer_app *app, size_t *nrows)
{
    const session_struct *d = app->doc;
    size_t cap = 2, n = 0;
    size_t nl;
    char **cl = notes_split(d->comments.text, &nl);
    cap += nl;
    for (slong i = 0; i < d->nnotes; i++) {
        size_t k;
        char **v = notes_split(d->notes[i].text, &k);
        cap += k;
        notes_free_lines(v, k);
    }
    notes_row *r = malloc(cap * sizeof *r);
    if (r == NULL)
        abort();
    for (size_t i = 0; i < nl; i++) {
        /* shown without the '#' and one blank after it */
        const char *t = cl[i];
        if (*t == '#')
            t++;
        if (*t == ' ')
            t++;
        r[n++] = (notes_row){-1, (long)i, notes_strdup(t)};
    }
    notes_free_lines(cl, nl);
    if (nl == 0)
        r[n++] = (notes_row){-1, -1, notes_strdup("")};
    int any = 0;
    for (slong i = 0; i < d->nnotes; i++) {
        size_t k;
        char **v = notes_split(d->notes[i].text, &k);
        for (size_t j = 0; j < k; j++)
            r[n++] = (notes_row){(int)i, (long)j, notes_strdup(v[j])};
        any |= k > 0;
        notes_free_lines(v, k);
    }
    if (!any)
        r[n++] = (notes_row){(int)d->nnotes, -1, notes_strdup("")};
    *nrows = n;
    return r;
}

static void notes_free_rows(notes_row *r, size_t n)
{
    for (size_t i = 0; i < n; i++)
        free(r[i].text);
    free(r);
}

/* Replaces the lines of block `note` (-1: the comment) by v (taken). */
static void notes_set_block(explorer_app *app, int note, char **v, size_t n)
{
    session_struct *d = app->doc;
    if (note < 0) {
        for (size_t i = 0; i < n; i++) {
            /* every comment line starts with '#' */
            size_t len = strlen(v[i]);
            char *l = malloc(len + 3);
            if (l == NULL)
                abort();
            snprintf(l, len + 3, "#%s%s", len ? " " : "", v[i]);
            free(v[i]);
            v[i] = l;
        }
        char *t = notes_join(v, n);
        session_set_comments(d, n ? t : NULL);
        free(t);
    } else {
        /* the notes again, with this one replaced (or added at the end) */
        slong k = d->nnotes;
        char **keep = malloc((size_t)(k + 1) * sizeof *keep);
        if (keep == NULL)
            abort();
        for (slong i = 0; i < k; i++)
            keep[i] = notes_strdup(d->notes[i].text ? d->notes[i].text : "");
        if (note >= k)
            keep[k++] = notes_strdup("");
        free(keep[note]);
        keep[note] = notes_join(v, n);
        session_clear_notes(d);
        for (slong i = 0; i < k; i++) {
            session_add_note(d, keep[i]); /* a note left empty goes */
            free(keep[i]);
        }
        free(keep);
    }
    notes_free_lines(v, n);
    viewmodel_mark_dirty(app->vm);
}

/* The lines of block `note`, for editing (*n of them). */
static char **notes_block(const explorer_app *app, int note, size_t *n)
{
    const session_struct *d = app->doc;
    if (note >= 0) {
        *n = 0;
        return note < d->nnotes ? notes_split(d->notes[note].text, n) : NULL;
    }
    char **v = notes_split(d->comments.text, n);
    for (size_t i = 0; i < *n; i++) {
        const char *t = v[i];
        if (*t == '#')
            t++;
        if (*t == ' ')
            t++;
        char *c = notes_strdup(t);
        free(v[i]);
        v[i] = c;
    }
    return v;
}

void notes_apply_edit(explorer_app *app, const char *text)
{
    size_t n;
    char **v = notes_block(app, app->notes_edit_note, &n);
    long at = app->notes_edit_line;
    char **w = realloc(v, (n + 1) * sizeof *w);
    if (w == NULL)
        abort();
    v = w;
    int blank = text[strspn(text, " \t")] == '\0';
    if (app->notes_edit_mode == 'e' && at >= 0 && (size_t)at < n) {
        free(v[at]);
        v[at] = notes_strdup(text);
        if (blank && app->notes_edit_note >= 0) {
            /* a note keeps no blank lines: the line goes */
            free(v[at]);
            memmove(v + at, v + at + 1, (n - (size_t)at - 1) * sizeof *v);
            n--;
        }
    } else {
        /* a new line after `at` (-1: at the start) */
        if (blank && app->notes_edit_note >= 0) {
            notes_free_lines(v, n);
            app_status(app, 0, "nothing added: a note line needs some text");
            return;
        }
        size_t pos = (size_t)(at + 1);
        if (pos > n)
            pos = n;
        memmove(v + pos + 1, v + pos, (n - pos) * sizeof *v);
        v[pos] = notes_strdup(text);
        n++;
    }
    notes_set_block(app, app->notes_edit_note, v, n);
    notes_mark_seen(app);
    app_status(app, 0, "%s changed (saved with the session)",
               app->notes_edit_note < 0 ? "the comment" : "the notes");
}

/* ---- drawing ------------------------------------------------------------ */

/* The text of a row wrapped at blanks to w cells: the pieces (malloc'd). */
static char **notes_wrap(const char *s, int w, size_t *n)
{
    size_t cap = 4;
    char **v = malloc(cap * sizeof *v);
    if (v == NULL)
        abort();
    *n = 0;
    do {
        size_t take = strlen(s);
        if (lineedit_utf8_ncols(s) > (size_t)w) {
            take = lineedit_utf8_offset(s, (size_t)w);
            size_t b = take;
            while (b > 0 && s[b] != ' ')
                b--;
            if (b > 0)
                take = b;
        }
        if (*n == cap) {
            cap *= 2;
            char **x = realloc(v, cap * sizeof *v);
            if (x == NULL)
                abort();
            v = x;
        }
        char *p = malloc(take + 1);
        if (p == NULL)
            abort();
        memcpy(p, s, take);
        p[take] = '\0';
        v[(*n)++] = p;
        s += take;
        while (*s == ' ')
            s++;
    } while (*s);
    return v;
}

void screen_notes_draw(explorer_app *app)
{
    app_draw_header(app, "comment and notes");
    size_t nr;
    notes_row *r = notes_rows(app, &nr);
    if (app->notes_sel >= nr)
        app->notes_sel = nr - 1;
    int y = 1;
    paint_text(y++, 1, COLS - 2, ROLE_DIM,
               "Saved with the session, never read by the analysis. e edits a line, a adds one");
    paint_text(y++, 1, COLS - 2, ROLE_DIM,
               "after it, n starts a new note, d deletes a line; Esc goes back.");
    if (app->notes_were_stale)
        paint_text(y++, 1, COLS - 2, ROLE_MARKER,
                   "Written before your changes to this session: check that it still holds.");
    /* display rows: a heading before each block, each row wrapped */
    int top = y, avail = LINES - 2 - top;
    int indent = 4, w = COLS - indent - 1;
    /* scroll so that the selected row is in view: count display rows */
    int *start = malloc((nr + 1) * sizeof *start);
    if (start == NULL)
        abort();
    int total = 0;
    for (size_t i = 0; i < nr; i++) {
        if (i == 0 || r[i].note != r[i - 1].note)
            total += (i ? 2 : 1); /* a blank row and the heading */
        start[i] = total;
        size_t k;
        char **v = notes_wrap(r[i].line < 0 ? "" : r[i].text, w, &k);
        notes_free_lines(v, k);
        total += (int)k;
    }
    start[nr] = total;
    int sel0 = start[app->notes_sel], sel1 = start[app->notes_sel + 1];
    if (sel0 < app->notes_top)
        app->notes_top = sel0 > 0 && app->notes_sel == 0 ? 0 : sel0;
    if (sel1 > app->notes_top + avail)
        app->notes_top = sel1 - avail;
    if (app->notes_top < 0)
        app->notes_top = 0;
    int row = 0;
    for (size_t i = 0; i < nr; i++) {
        if (i == 0 || r[i].note != r[i - 1].note) {
            if (i)
                row++;
            char head[96];
            if (r[i].note < 0)
                snprintf(head, sizeof head, "Comment (the lines starting with # at the top)");
            else if (r[i].line < 0)
                snprintf(head, sizeof head, "Notes");
            else
                snprintf(head, sizeof head, "Note %d", r[i].note + 1);
            if (row - app->notes_top >= 0 && row - app->notes_top < avail)
                paint_text(top + row - app->notes_top, 1, COLS - 2, ROLE_HEADING, head);
            row++;
        }
        size_t k;
        const char *t = r[i].line < 0 ? (r[i].note < 0 ? "(no comment: e writes one)"
                                                         : "(no notes: e writes one)")
                                      : r[i].text;
        char **v = notes_wrap(t, w, &k);
        for (size_t j = 0; j < k; j++, row++) {
            int yy = top + row - app->notes_top;
            if (yy < top || yy >= top + avail)
                continue;
            int sel = i == app->notes_sel;
            if (sel && j == 0)
                paint_text(yy, 1, 2, ROLE_SELECTED, ">");
            paint_text(yy, indent, w, r[i].line < 0 ? ROLE_DIM : sel ? ROLE_SELECTED : ROLE_NORMAL,
                       v[j]);
        }
        notes_free_lines(v, k);
    }
    if (total > avail)
        paint_textf(LINES - 2, 0, COLS, ROLE_DIM, "rows %d-%d of %d", app->notes_top + 1,
                    app->notes_top + avail < total ? app->notes_top + avail : total, total);
    else
        app_draw_status(app);
    free(start);
    notes_free_rows(r, nr);
    app_draw_hints(app, screen_notes_keys());
    notes_mark_seen(app); /* shown: what is saved now has been seen */
}

/* ---- keys ------------------------------------------------------------- */

int screen_notes_open(explorer_app *app)
{
    app->notes_were_stale = notes_unseen(app);
    app->screen = SCREEN_NOTES;
    app->notes_sel = 0;
    app->notes_top = 0;
    return ACT_REDRAW;
}

static int notes_selected(explorer_app *app, notes_row *out)
{
    size_t nr;
    notes_row *r = notes_rows(app, &nr);
    if (app->notes_sel >= nr)
        app->notes_sel = nr - 1;
    *out = r[app->notes_sel];
    out->text = notes_strdup(out->text);
    notes_free_rows(r, nr);
    return 1;
}

static int notes_prompt(explorer_app *app, int mode, int note, long line, const char *text)
{
    app->notes_edit_mode = mode;
    app->notes_edit_note = note;
    app->notes_edit_line = line;
    prompt_open(app, PROMPT_NOTE, text);
    return ACT_REDRAW;
}

static int act_edit(explorer_app *app)
{
    notes_row s;
    notes_selected(app, &s);
    int f = s.line < 0 ? notes_prompt(app, 'a', s.note, -1, "")
                       : notes_prompt(app, 'e', s.note, s.line, s.text);
    free(s.text);
    return f;
}

static int act_add(explorer_app *app)
{
    notes_row s;
    notes_selected(app, &s);
    int f = notes_prompt(app, 'a', s.note, s.line, "");
    free(s.text);
    return f;
}

static int act_new_note(explorer_app *app)
{
    return notes_prompt(app, 'a', (int)app->doc->nnotes, -1, "");
}

static int act_delete(explorer_app *app)
{
    notes_row s;
    notes_selected(app, &s);
    if (s.line < 0) {
        free(s.text);
        app_status(app, 0, "nothing to delete here");
        return ACT_REDRAW;
    }
    size_t n;
    char **v = notes_block(app, s.note, &n);
    free(v[s.line]);
    memmove(v + s.line, v + s.line + 1, (n - (size_t)s.line - 1) * sizeof *v);
    notes_set_block(app, s.note, v, n - 1);
    app_status(app, 0, "deleted a line of %s", s.note < 0 ? "the comment" : "the notes");
    free(s.text);
    return ACT_REDRAW;
}

static int act_up(explorer_app *app)
{
    if (app->notes_sel > 0)
        app->notes_sel--;
    return ACT_REDRAW;
}

static int act_down(explorer_app *app)
{
    app->notes_sel++; /* clamped when drawn */
    return ACT_REDRAW;
}

static int act_back(explorer_app *app)
{
    app->screen = SCREEN_MAIN;
    return ACT_REDRAW;
}

static const ui_binding notes_bindings[] = {
    {UIKEY_ESC, act_back, "Esc / q / N", "back to the main screen", "Esc back"},
    {'q', act_back, NULL, NULL, NULL},
    {'N', act_back, NULL, NULL, NULL},
    {'e', act_edit, "e / Enter", "edit the selected line", "e edit"},
    {'\r', act_edit, NULL, NULL, NULL},
    {'\n', act_edit, NULL, NULL, NULL},
    {UIKEY_FN(KEY_ENTER), act_edit, NULL, NULL, NULL},
    {'a', act_add, "a", "add a line after the selected one (same comment or note)", "a add"},
    {'n', act_new_note, "n", "start a new note", "n note"},
    {'d', act_delete, "d", "delete the selected line", "d delete"},
    {UIKEY_FN(KEY_UP), act_up, "Up / k", "the previous line", "j/k move"},
    {'k', act_up, NULL, NULL, NULL},
    {UIKEY_FN(KEY_DOWN), act_down, "Down / j", "the next line", NULL},
    {'j', act_down, NULL, NULL, NULL},
    {'?', screen_help_open, "?", "this help", "? help"},
};

static const ui_keymap notes_keymap = {"Comment and notes (N on the main screen)", notes_bindings,
                                       sizeof notes_bindings / sizeof notes_bindings[0]};

const ui_keymap *screen_notes_keys(void)
{
    return &notes_keymap;
}
