/* frame.h — what every screen shares, below the screens and the
 * dispatcher (internal to ui/; DEVELOPERS.md, "The explorer's layers"):
 * the header bar (row 0), the message line (row LINES - 2), the key line
 * (row LINES - 1), the status message and the queue of keys typed during
 * a computation.  The screens, the prompt and the dispatcher (explorer.c)
 * call these; nothing here calls a screen or the dispatcher. */
#ifndef NILSTEP_UI_FRAME_H
#define NILSTEP_UI_FRAME_H

#include "app.h"

/* Sets the bottom-line message (printf-style). */
void app_status(explorer_app *app, int is_error, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));

/* msg without the "error: " that nserr_format puts after the location, for
 * a line that already says "error:" (static storage, valid until the next
 * call). */
const char *app_error_text(const char *msg);

/* Draws the bottom key line from a keymap's hints. */
void app_draw_hints(explorer_app *app, const ui_keymap *km);

/* Draws the message line (row LINES - 2). */
void app_draw_status(explorer_app *app);

/* The header bar (row 0) with a screen name. */
void app_draw_header(explorer_app *app, const char *where);

/* Queues a key read during a computation (by a progress hook) for the
 * main loop, which replays it afterwards; the queue grows as needed. */
void app_typeahead_push(explorer_app *app, int key);

#endif
