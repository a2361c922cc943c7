/* session.h — session files, format 1 (doc/design.md §5).
 *
 *     nilstep session 1
 *     title   Doubling on a 2-step group
 *     group   <a, b | [a,b,a],
 *                     [a,b,b]>
 *     class   3
 *     map     a -> a^2, b -> b^2
 *     cursor  layer 2 image 1
 *     iterate steps 200 word a b^2
 *     note    anything; a note may repeat
 *
 * Text, UTF-8.  The first line is exactly "nilstep session 1" (a UTF-8 byte
 * order mark before it and a CR before the line break are tolerated).  Then
 * each entry is "key value": the key starts in column 1 and ends at the first
 * blank; the value starts at the next non-blank character (or on the next
 * line) and continues on following lines that start with a blank.  Blank
 * lines and lines with '#' in column 1 are comments anywhere, also between
 * continuation lines; they never end a value.
 *
 * Keys (case-sensitive; each at most once except note):
 *   group    presentation text, required (parsed by the caller: pres.h)
 *   class    nilpotency class, a whole number 1..64, required
 *   map      map text, optional (pres_parse_map)
 *   title    free text, optional
 *   note     free text, optional, any number of them
 *   cursor   view state: "layer L image I", both parts optional, any order,
 *            whole numbers 0..SESSION_MAX_INDEX
 *   iterate  iterate settings: "word W", "steps N", or both in either order.
 *            W is a word of the input language and runs to the end of the
 *            value, or, when "word" comes first, up to a final "steps N".
 *            N is a whole number 0..SESSION_MAX_INDEX.
 * In class, cursor and iterate values '#' starts a comment to the end of
 * the line (as in the input language).  In title and note it is text.
 *
 * Loading checks the structure of the file and the numbers only; it does not
 * parse the group, map or iterate word.  For those it keeps the value exactly
 * as it stands in the file (line breaks and indentation of continuation
 * lines included) with the line and column of its first character, so that
 * pres_parse(s->group.text, s->group.line, s->group.col, err) reports
 * errors in the coordinates of the file.  Columns count code points.
 *
 * Free texts (title, notes) are kept as their lines joined by '\n', with
 * leading and trailing blanks of every line removed and comment and blank
 * lines left out.
 *
 * Errors: NS_ERR_SYNTAX (bad first line, invalid UTF-8, NUL byte, indented
 * line before any key, key without value), NS_ERR_INPUT (unknown or repeated
 * key, bad number, missing group or class; missing keys carry no location),
 * NS_ERR_LIMIT (file larger than SESSION_MAX_BYTES), NS_ERR_IO (file
 * system, with the path and the system's reason). */
#ifndef NILSTEP_SESSION_H
#define NILSTEP_SESSION_H

#include <flint/flint.h>

#include "nserr.h"

#define SESSION_MAX_BYTES (16L * 1024 * 1024)
#define SESSION_MAX_CLASS 64
#define SESSION_MAX_INDEX 1000000000L

/* A text value of the file.  text is owned, NULL when the key is absent;
 * line/col is where text[0] stands in the file (1, 1 after a setter, so
 * that positions are then relative to the text itself). */
typedef struct {
    char *text;
    int line, col;
} session_text_struct;

typedef struct {
    session_text_struct title;  /* free text */
    session_text_struct group;  /* raw, as in the file; required for saving */
    session_text_struct map;    /* raw, as in the file */
    int cls;                    /* nilpotency class 1..64; 0 = absent */
    slong nnotes;
    session_text_struct *notes; /* nnotes free texts, owned; change them
                                   only with session_add_note and
                                   session_clear_notes */
    slong cursor_layer;         /* -1 = absent */
    slong cursor_image;         /* -1 = absent */
    session_text_struct iterate_word; /* raw, as in the file */
    session_text_struct comments; /* the '#' lines between the first line and
                                     the first key, kept verbatim and written
                                     back there on saving (other comments are
                                     not kept); NULL = none */
    slong iterate_steps;        /* -1 = absent */
} session_struct;
typedef session_struct session_t[1];

/* An empty session: every key absent. */
void session_init(session_t s);
/* Frees everything s owns; s is then empty (as after session_init). */
void session_clear(session_t s);
/* Deep copy; dst may alias src. */
void session_set(session_t dst, const session_t src);
void session_swap(session_t a, session_t b);
/* 1 if a and b hold the same content: texts compared line by line after
 * the normalisation of free texts (blank lines, indentation and trailing
 * blanks do not count), numbers exactly; positions are ignored. */
int session_equal(const session_t a, const session_t b);

/* Parses a whole session file held in text (NUL-terminated, so it contains
 * no NUL byte).  On success the old content of s is replaced; on failure s
 * is unchanged and err located in the file's coordinates. */
ns_status session_parse(session_t s, const char *text, nserr_t err);

/* Reads and parses the file at path (at most SESSION_MAX_BYTES; NUL bytes
 * and invalid UTF-8 are located errors; a FIFO, directory or device is
 * refused at once with NS_ERR_INPUT).  Nothing in the file is executed.
 * On failure s is unchanged. */
ns_status session_load(session_t s, const char *path, nserr_t err);

/* The session as format-1 text: keys in the order title, group, class, map,
 * cursor, iterate, notes; values start in column 9; continuation lines are
 * indented with 4 spaces; absent keys are left out.  For every session with
 * a group and a class, session_parse of the result gives a session equal
 * (session_equal) to s.  Returns a string the caller frees with flint_free. */
char *session_get_str(const session_t s);

/* Writes session_get_str(s) to path.  A symbolic link at path is followed:
 * the file it points to is written (created when the link dangles) and the
 * link stays.  Usually atomic: a temporary file "NAME.tmp-XXXXXX" next to
 * that file (NAME shortened when the name would exceed 255 bytes) is
 * written, flushed, synced, given the owner, group and mode of the file it
 * replaces (0644 for a new file) and renamed over it.  A file with several
 * hard links, or whose owner or group this process cannot give to a new
 * file, is instead rewritten in place so that it stays one file with the
 * same owner: its old content is first copied aside to "NAME.old-XXXXXX"
 * and synced, and that copy is removed once the new content is synced.
 * On any failure (a full disk, EFBIG at a file-size limit — the caller
 * should ignore SIGXFSZ) the temporary file is removed and, except in the
 * rare case of a failure half-way through an in-place rewrite (the copy
 * aside then stays and the message names it), an existing file is left
 * untouched.  A session without group or class is refused
 * (NS_ERR_INPUT). */
ns_status session_save(const session_t s, const char *path, nserr_t err);

/* Writes text (NUL-terminated) to path exactly as session_save writes a
 * session: links followed, atomic through a temporary sibling, owner,
 * group and mode kept, in place for a file with several hard links, and
 * on failure the old file untouched and err naming the file and the
 * system's reason.  For the other files the program writes (the
 * explorer's exports); nothing checks that text is a session. */
ns_status session_save_text(const char *text, const char *path, nserr_t err);

/* Files that interrupted saves of path left next to the file it names
 * (after following symbolic links): "NAME.tmp-XXXXXX" (a new version,
 * possibly incomplete) and "NAME.old-XXXXXX" (the content before an
 * in-place rewrite), with NAME as session_save shortens it.  Sets *count
 * and returns their full paths, one per line, as a string the caller
 * frees with flint_free; NULL when there are none (or the directory cannot
 * be read).  Nothing is removed: which copy matters is the user's call. */
char *session_leftovers_get_str(slong *count, const char *path);

/* Setters for the user interface.  Texts are copied (the caller keeps its
 * string) and must be UTF-8; NULL or a text of blanks removes the key.
 * A text set here has line = col = 1. */
void session_set_title(session_t s, const char *text);
void session_set_group(session_t s, const char *text);
void session_set_map(session_t s, const char *text);
/* Fails with NS_ERR_INPUT (s unchanged) unless 1 <= cls <= 64; 0 removes. */
ns_status session_set_class(session_t s, int cls, nserr_t err);
/* The comment block before the first key: lines joined by '\n', each
 * starting with '#' (a line that does not gets "# " in front, so that the
 * block reads back as comments).  NULL or blanks remove it. */
void session_set_comments(session_t s, const char *text);
void session_add_note(session_t s, const char *text);
void session_clear_notes(session_t s);
/* Negative values mean absent; values above SESSION_MAX_INDEX are clamped. */
void session_set_cursor(session_t s, slong layer, slong image);
/* word NULL: no word; steps negative: no steps.  (A word set without steps
 * that itself ends in "steps N", possible only with a generator named
 * steps, would read back as a steps clause.) */
void session_set_iterate(session_t s, const char *word, slong steps);

#endif
