/* screens.h — the contract of each screen and of the prompt (internal to
 * ui/; DEVELOPERS.md, "The explorer's layers"): a draw function that paints
 * the whole frame from the state and a key table whose actions change the
 * state and return ACT_* flags (app.h).  The dispatcher (explorer.c) calls
 * them; a screen may call another screen's or the prompt's functions
 * (the help screen lists every key table, an action opens a prompt), but
 * never the dispatcher. */
#ifndef NILSTEP_UI_SCREENS_H
#define NILSTEP_UI_SCREENS_H

#include "app.h"
#include "paint.h"

void screen_main_draw(explorer_app *app);
const ui_keymap *screen_main_keys(void);
/* Adds the lines that tell failing relation k of app->A to t (full: for
 * the full screen, under a line naming the relation); returns how many. */
int screen_main_failure_lines(const explorer_app *app, slong k, paint_lines *t, int full);

void screen_layer_draw(explorer_app *app);
const ui_keymap *screen_layer_keys(void);

void screen_full_draw(explorer_app *app);
const ui_keymap *screen_full_keys(void);

void screen_help_draw(explorer_app *app);
const ui_keymap *screen_help_keys(void);
/* The key action every screen binds to `?`: opens the help, which returns
 * to the screen it was opened from. */
int screen_help_open(explorer_app *app);

/* The members of a scan result file (nilstep scan's JSON Lines). */
void screen_members_draw(explorer_app *app);
const ui_keymap *screen_members_keys(void);
/* Reads the file into *out; -1 with msg set when it has no scan result. */
int members_load(members_t **out, const char *path, char *msg, size_t msgsize);
/* Loads path and shows its members (status message on failure). */
int members_show(explorer_app *app, const char *path);
/* Back to the member list from another screen (a key action). */
int members_act_return(explorer_app *app);
void members_free(members_t *m);
/* The iterates screen (screen_iterate.c): _open enters it (running the
 * session's iterate word, else the selected generator); _busy says a run
 * wants computing time, which the main loop gives by calling _tick (one
 * slice of at most 25 ms) whenever no key is waiting; _forget drops the
 * run (the analysis it borrows changed); _set_word and _check_word serve
 * PROMPT_ITERATE. */
void screen_iterate_draw(explorer_app *app);
const ui_keymap *screen_iterate_keys(void);
void screen_iterate_open(explorer_app *app);
int screen_iterate_busy(const explorer_app *app);
int screen_iterate_tick(explorer_app *app);
void screen_iterate_forget(explorer_app *app);
void screen_iterate_set_word(explorer_app *app, const char *text);
void screen_iterate_check_word(explorer_app *app, const char *text);

/* The bounds chart and the eigenvalue picture (screen_charts.c); the rows
 * of the picture for layer j + 1 in w x h cells plus a legend line (*nrows of
 * them; free each and the array with free()), NULL when there is nothing
 * to draw. */
void screen_bounds_draw(explorer_app *app);
const ui_keymap *screen_bounds_keys(void);
char **screen_charts_eigen_rows(const explorer_app *app, slong j, int w, int h, int *nrows);

/* The session's comment and notes (screen_notes.c).  _signature is the
 * document as the comment and notes are judged against (title,
 * presentation, class, images; free()); _mark_seen records the current
 * one as seen; _unseen says there is comment or note text and the
 * document changed since it was last seen; _open enters the screen (a key
 * action); _apply_edit applies PROMPT_NOTE's text. */
void screen_notes_draw(explorer_app *app);
const ui_keymap *screen_notes_keys(void);
char *notes_signature(const explorer_app *app);
void notes_mark_seen(explorer_app *app);
int notes_unseen(const explorer_app *app);
int screen_notes_open(explorer_app *app);
void notes_apply_edit(explorer_app *app, const char *text);

/* Draws the prompt over the bottom of the frame. */
void prompt_draw(explorer_app *app);
/* Handles one key while a prompt is open; returns ACT_* flags. */
int prompt_key(explorer_app *app, int key);
/* Opens a prompt of that kind (text prompts start with text). */
void prompt_open(explorer_app *app, prompt_kind kind, const char *text);
/* Parses the text being typed and sets edit_ok / edit_msg / edit_caret. */
void prompt_check(explorer_app *app);
/* The export key (x) of the main screen and the layer detail: asks what
 * to write (a report or the selected layer's matrix), then where. */
int prompt_act_export(explorer_app *app);
/* The line editor's own keys, for the help screen. */
const ui_keymap *prompt_keys(void);

#endif
