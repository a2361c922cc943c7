/* filepath.h — file names typed at the explorer's path prompts (open,
 * save as, export): "~" expansion and Tab completion against the file
 * system.  Pure C without curses, tested alone (tests/test_filepath.c).
 *
 * Every string returned is the caller's to free() (lists: each entry and
 * the array). */
#ifndef NILSTEP_UI_FILEPATH_H
#define NILSTEP_UI_FILEPATH_H

#include <stddef.h>

/* The path the typed text names: a leading "~" alone or followed by '/'
 * is the home directory ($HOME, else the password database), "~user" or
 * "~user/..." that user's home; anything else (and a "~user" that does
 * not exist) is returned unchanged. */
char *filepath_expand(const char *typed);

/* The completions of typed (the text before the cursor):
 *   0  no name in its directory starts with the typed name;
 *   1  exactly one does: *out is typed completed to it, with '/' after a
 *      directory;
 *   2  several do: *out is typed extended to their longest common prefix
 *      (possibly unchanged) and *cands (*ncands of them, sorted, a
 *      directory with '/' after it) lists them by name alone.
 * The directory part stays as typed (a "~" is kept); only the last
 * component grows.  Names starting with '.' are offered only when the
 * typed name starts with '.'; "." and ".." never.  "~" alone (or "~user")
 * completes to "~/" ("~user/").  *out and *cands are NULL when 0. */
int filepath_complete(char **out, char ***cands, size_t *ncands, const char *typed);

/* Frees a list from filepath_complete. */
void filepath_free_list(char **list, size_t n);

#endif
