/* lineedit.h — a one-line text editor, pure data (no curses).
 *
 * The explorer uses it for generator images, the presentation, the title and
 * path prompts.  The buffer is always valid UTF-8 and the cursor always sits
 * on a code point boundary, so no edit can split a multi-byte character.
 * Columns are counted in code points, the same unit the engine's error
 * positions use (expr.h), which lets a caret point at an error directly.
 *
 * Keys are mapped to lineedit_cmd values by the screen that owns the editor;
 * this module knows nothing about terminals. */
#ifndef NILSTEP_UI_LINEEDIT_H
#define NILSTEP_UI_LINEEDIT_H

#include <stddef.h>
#include <stdint.h>

typedef struct {
    char *buf;  /* NUL-terminated UTF-8, owned */
    size_t len; /* bytes in buf, without the NUL */
    size_t cap; /* bytes allocated */
    size_t cur; /* byte offset of the cursor, on a code point boundary */
} lineedit_struct;
typedef lineedit_struct lineedit_t[1];

typedef enum {
    LINEEDIT_LEFT,       /* one code point left */
    LINEEDIT_RIGHT,      /* one code point right */
    LINEEDIT_HOME,       /* start of the line */
    LINEEDIT_END,        /* end of the line */
    LINEEDIT_BACKSPACE,  /* delete the code point before the cursor */
    LINEEDIT_DELETE,     /* delete the code point under the cursor */
    LINEEDIT_KILL_LINE,  /* delete the whole line */
    LINEEDIT_KILL_TO_END /* delete from the cursor to the end */
} lineedit_cmd;

/* Empty line, cursor at 0. */
void lineedit_init(lineedit_t e);
void lineedit_clear(lineedit_t e);

/* Replaces the text with a copy of text (NULL = empty) and puts the cursor
 * at the end.  Bytes that do not form valid UTF-8, and control characters,
 * are replaced by '?', so the buffer stays printable valid UTF-8. */
void lineedit_set_text(lineedit_t e, const char *text);

/* The text; valid until the next call that changes e. */
const char *lineedit_get_text(const lineedit_t e);

/* Inserts one Unicode code point at the cursor.  Returns 1 if inserted, 0
 * for a control character, a surrogate or a value beyond U+10FFFF. */
int lineedit_insert(lineedit_t e, uint32_t cp);

/* Applies an editing command.  Returns 1 when the text changed, 0 when only
 * the cursor moved or nothing happened. */
int lineedit_apply(lineedit_t e, lineedit_cmd cmd);

/* Code points before the cursor, and in the whole line. */
size_t lineedit_cursor_col(const lineedit_t e);
size_t lineedit_ncols(const lineedit_t e);

/* Moves the cursor to code point column col (clamped to the line). */
void lineedit_set_cursor_col(lineedit_t e, size_t col);

/* Byte offset of code point column col in the UTF-8 string s (clamped to
 * its end), and the number of code points in s.  Shared with the screens,
 * which draw a window of the line. */
size_t lineedit_utf8_offset(const char *s, size_t col);
size_t lineedit_utf8_ncols(const char *s);

#endif
