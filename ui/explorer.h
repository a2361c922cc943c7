/* explorer.h — the interactive terminal explorer (curses). */
#ifndef NILSTEP_UI_EXPLORER_H
#define NILSTEP_UI_EXPLORER_H

/* Opens the session file at path (NULL: the built-in default scenario; a
 * path that does not exist yet starts from the default scenario and is
 * where `s` saves) and runs the explorer until the user quits.  A file
 * that cannot be read or parsed is reported on stderr before the terminal
 * is taken over.  Returns the process exit status: 0 after a normal quit,
 * 2 for a file that cannot be opened, 1 when the terminal cannot be used. */
int explorer_run(const char *path);

#endif
