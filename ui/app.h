/* app.h — the explorer's state and the contract between its parts
 * (internal to ui/).
 *
 * The explorer is a small state machine: one screen at a time (main table,
 * layer detail, help), optionally with a prompt in front of it (a line
 * editor or a yes/no question).  Each screen has a draw function that
 * paints the whole frame from the state, and a table of key bindings whose
 * actions change the state and return what must happen next (ACT_* flags);
 * only the main loop in explorer.c acts on those flags, computes, and
 * redraws.  Nothing here does group theory: every number comes from the
 * analysis_t, which the main loop feeds.  screens.h declares the screens
 * and the prompt, frame.h what they share (header, message and key lines);
 * DEVELOPERS.md ("The explorer's layers") says who may include whom.
 *
 * Ownership: explorer_app owns everything it points to; the screens only
 * read it, except through the actions. */
#ifndef NILSTEP_UI_APP_H
#define NILSTEP_UI_APP_H

#include <stddef.h>

#include "analysis_view.h"
#include "lineedit.h"
#include "pres.h"
#include "session.h"
#include "viewmodel.h"

/* What an action asks of the main loop. */
enum {
    ACT_NONE = 0,
    ACT_REDRAW = 1, /* the frame must be painted again */
    ACT_MAP = 2,    /* the images changed: analyse the map again */
    ACT_GROUP = 4,  /* app->pending_group / pending_cls: recompute the quotient */
    ACT_OPEN = 8,   /* app->pending_doc: open it (recomputes everything) */
    ACT_SAVE = 16,  /* write the session to app->path */
    ACT_QUIT = 32,
    ACT_RESTORE = 64, /* take the recovery copy (app->recovered) */
    ACT_DISCARD = 128, /* remove the recovery copy */
    ACT_EXPORT = 256   /* write export_kind to app->pending_path (export.h) */
};

typedef enum {
    SCREEN_MAIN,
    SCREEN_LAYER,
    SCREEN_HELP,
    SCREEN_MEMBERS,
    SCREEN_FULL,
    SCREEN_ITERATE,
    SCREEN_BOUNDS,
    SCREEN_NOTES /* the session's comment and notes */
} screen_id;

typedef enum {
    PROMPT_NONE,
    PROMPT_IMAGE, /* editing the image of generator edit_index */
    PROMPT_GROUP, /* editing the presentation */
    PROMPT_TITLE,
    PROMPT_SAVE_AS,      /* a path to save to */
    PROMPT_OPEN,         /* a path to open */
    PROMPT_CONFIRM_QUIT, /* unsaved changes: y quits */
    PROMPT_CONFIRM_OPEN, /* unsaved changes: y goes on to PROMPT_OPEN */
    PROMPT_RECOVER,      /* a recovery copy exists: r restores, d discards */
    PROMPT_ITERATE,      /* an element for the iterates screen */
    PROMPT_EXPORT_KIND,  /* x: which report or the matrix (t j l m) */
    PROMPT_EXPORT,       /* the file to export to */
    PROMPT_CONFIRM_OVERWRITE, /* the export file exists: y replaces it */
    PROMPT_NOTE,         /* a line of the comment or of a note */
    PROMPT_CONFIRM_NOTES /* saving: the comment and notes predate changes */
} prompt_kind;

/* Keys: a Unicode character is its code point; a curses function key
 * (KEY_UP, KEY_RESIZE ...) is UIKEY_FN(code), above every code point. */
#define UIKEY_FN(k)   (0x200000 | (k))
#define UIKEY_ESC     27
#define UIKEY_CTRL(c) ((c)&0x1f)

typedef struct explorer_app_struct explorer_app;
typedef struct members_struct members_t; /* screen_members.c */
/* The iterates screen's run (screen_iterate.c), NULL until it is used. */
typedef struct screen_iterate_state screen_iterate_state;

/* One line of a key table: the action runs on `key`; `keys` and `help` are
 * what the help screen shows (the first binding of an action carries
 * them, further keys for the same action leave them NULL); `hint` is the
 * short label of the bottom line, NULL when the key is left out there. */
typedef struct {
    int key;
    int (*action)(explorer_app *app);
    const char *keys;
    const char *help;
    const char *hint;
} ui_binding;

typedef struct {
    const char *title;
    const ui_binding *bindings;
    size_t n;
} ui_keymap;

struct explorer_app_struct {
    /* the document */
    session_t doc;    /* the session as loaded; keys we do not edit
                         (notes, iterate) are saved back unchanged */
    char *path;       /* where `s` saves; NULL for the built-in scenario */
    char *title;      /* shown in the header; never NULL */
    char *group_text; /* the presentation, one line */
    pres_t pres;      /* group_text parsed */
    slong cls;        /* the class asked for */
    int group_edited; /* presentation or class changed since loading */
    int map_edited;   /* an image changed since loading */
    int title_edited;
    analysis_struct *Q;      /* the quotient (group stage only), owned; NULL
                                when there is none */
    analysis_struct *A;      /* the current analysis, owned; borrows Q's group
                                (analysis_share_group); may lack a group */
    int map_action;          /* what ACT_MAP follows: 'S' an image set, 'U' an
                                undo, 'R' a redo (taken back on Esc) */
    int from_history;        /* ACT_GROUP follows an undo ('U') / redo ('R')
                                of a document edit */
    char group_problem[600]; /* why A has no group or no map, or "" */
    viewmodel_t vm;

    /* requests from actions to the main loop */
    char *pending_group; /* owned */
    slong pending_cls;
    session_t pending_doc; /* valid when has_pending_doc */
    int has_pending_doc;
    char *pending_path; /* owned */
    char *retry_group;  /* owned: a cancelled or failed quotient request, */
    slong retry_cls;    /* which c asks for again; NULL / 0 when none */

    /* the state machine */
    screen_id screen;
    screen_id help_return; /* where Esc leaves the help */
    prompt_kind prompt;
    lineedit_t edit;    /* the prompt's text */
    size_t edit_index;  /* PROMPT_IMAGE: which image */
    size_t edit_scroll; /* first code point shown */
    char edit_msg[600]; /* parse result of the text being typed */
    int edit_ok;        /* 1: it parses */
    int edit_caret;     /* 1-based column of the error in the text, 0 none */
    /* the comment and notes (screen_notes.c) */
    char *notes_seen;     /* owned: the document (notes_signature) when they
                             were last shown or confirmed; NULL never */
    int notes_were_stale; /* they were unseen when the screen opened */
    size_t notes_sel;     /* the selected row of the notes screen */
    int notes_top;        /* its first display row shown */
    int notes_edit_mode;  /* PROMPT_NOTE: 'e' replace the line, 'a' add after */
    int notes_edit_note;  /* the block: -1 the comment, else a note */
    long notes_edit_line; /* the line in it (-1: before the first) */
    int export_kind;    /* what x writes: EXPORT_* (export.h) */
    long export_layer;  /* the layer of a matrix export (1-based) */
    char *export_typed; /* owned: the export file name as typed */
    char **cands;       /* file prompts: the names Tab found (filepath.h), */
    size_t ncands;      /* listed above the prompt until the text changes */

    /* scrolling */
    int detail_scroll;
    int detail_hscroll; /* code points cut from the left of each line */
    int help_scroll;
    int full_scroll;
    int table_top; /* first layer row shown */
    int image_top; /* first image row shown */

    /* bottom line */
    char status[700];
    int status_error;

    /* keys typed while a computation ran, replayed after it (Esc excepted);
     * a queue that grows as needed, so that no key is ever dropped */
    int *typeahead;
    size_t typeahead_head, ntypeahead, typeahead_cap;

    /* the recovery copy of unsaved work (recovery.h) */
    char *recovery_path;    /* NULL: no place to keep one */
    char *recovery_text;    /* the session text last seen, or NULL */
    double recovery_due;    /* when to write it (monotonic seconds), 0 none */
    int recovery_written;   /* this run wrote the copy at recovery_path */
    session_t recovered;    /* the copy found at start (PROMPT_RECOVER) */
    char recovery_diff[2000];

    members_t *members; /* an open scan result file (screen_members.c), or NULL */
    int doc_is_member;  /* the document came from it and has no file yet */

    int utf8; /* the terminal takes UTF-8: use ρ, ↦, … */
    screen_iterate_state *iter; /* the iterates screen's run, owned */
    int running;
};

#endif
