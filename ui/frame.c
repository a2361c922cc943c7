/* frame.c — what every screen shares, below the screens and the
 * dispatcher (frame.h): the header bar, the message line, the key line,
 * the status message and the typeahead queue. */
#include "frame.h"

#include <curses.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "defaults.h"
#include "lineedit.h"
#include "paint.h"

void app_status(explorer_app *app, int is_error, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(app->status, sizeof app->status, fmt, ap);
    va_end(ap);
    app->status_error = is_error;
}

const char *app_error_text(const char *msg)
{
    /* "FILE:L:C: error: why" from nserr_format: one "error:" is enough */
    const char *e = strstr(msg, "error: ");
    static char buf[sizeof ((explorer_app *)0)->status];
    if (e == NULL)
        return msg;
    snprintf(buf, sizeof buf, "%.*s%s", (int)(e - msg), msg, e + 7);
    return buf;
}

void app_draw_header(explorer_app *app, const char *where)
{
    paint_fill(0, 0, COLS, ROLE_BAR);
    /* The file name gives way from the left; "[modified]" always shows. */
    const char *file = app->path            ? app->path
                       : app->doc_is_member ? "(a scan member, not saved)"
                                            : defaults_session_name();
    const char *mod = app->vm->dirty ? " [modified] " : " ";
    /* the screen's own part first (it says where we are), the file name in
     * what is left, at most half the bar */
    char left[700];
    snprintf(left, sizeof left, " nilstep %s %s", app->utf8 ? "\xE2\x80\xA2" : "|", where);
    int room = COLS - 2 - (int)lineedit_utf8_ncols(left) - (int)strlen(mod);
    if (room > COLS / 2 - (int)strlen(mod))
        room = COLS / 2 - (int)strlen(mod);
    if (room < 12)
        room = 12;
    int flen = (int)lineedit_utf8_ncols(file);
    char right[700];
    if (flen > room)
        snprintf(right, sizeof right, "%s%s%s", app->utf8 ? "\xE2\x80\xA6" : "~",
                 file + lineedit_utf8_offset(file, (size_t)(flen - room + 1)), mod);
    else
        snprintf(right, sizeof right, "%s%s", file, mod);
    int rw = (int)lineedit_utf8_ncols(right);
    paint_text(0, 0, COLS - rw - 1, ROLE_BAR, left);
    paint_text(0, COLS - rw, rw, ROLE_BAR, right);
}

void app_draw_status(explorer_app *app)
{
    int y = LINES - 2;
    paint_fill(y, 0, COLS, ROLE_NORMAL);
    if (app->status[0] == '\0')
        return;
    if (app->status_error) {
        int w = paint_text(y, 0, COLS, ROLE_ERROR, "error: ");
        paint_text(y, w, COLS - w, ROLE_ERROR, app_error_text(app->status));
    } else {
        paint_text(y, 0, COLS, ROLE_GOOD, app->status);
    }
}

void app_draw_hints(explorer_app *app, const ui_keymap *km)
{
    (void)app;
    int y = LINES - 1, x = 0;
    paint_fill(y, 0, COLS, ROLE_NORMAL);
    for (size_t i = 0; i < km->n; i++) {
        const ui_binding *b = &km->bindings[i];
        if (b->hint == NULL)
            continue;
        /* "key label": the key is the part before the first blank */
        const char *sp = strchr(b->hint, ' ');
        size_t klen = sp ? (size_t)(sp - b->hint) : strlen(b->hint);
        int need = (int)lineedit_utf8_ncols(b->hint);
        if (x + need > COLS)
            break;
        char key[32];
        snprintf(key, sizeof key, "%.*s", (int)klen, b->hint);
        x += paint_text(y, x, COLS - x, ROLE_KEY, key);
        x += paint_text(y, x, COLS - x, ROLE_NORMAL, sp ? sp : "");
        x += 2;
    }
}

/* Queues a key typed during a computation; the queue grows as needed. */
void app_typeahead_push(explorer_app *app, int key)
{
    if (app->typeahead_head > 0 && app->typeahead_head + app->ntypeahead == app->typeahead_cap) {
        memmove(app->typeahead, app->typeahead + app->typeahead_head,
                app->ntypeahead * sizeof app->typeahead[0]);
        app->typeahead_head = 0;
    }
    if (app->ntypeahead == app->typeahead_cap) {
        size_t cap = app->typeahead_cap ? 2 * app->typeahead_cap : 256;
        int *t = realloc(app->typeahead, cap * sizeof *t);
        if (t == NULL)
            abort();
        app->typeahead = t;
        app->typeahead_cap = cap;
    }
    app->typeahead[app->typeahead_head + app->ntypeahead++] = key;
}
