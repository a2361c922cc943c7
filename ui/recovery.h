/* recovery.h — the recovery copy of unsaved work (internal to ui/).
 *
 * While a session has unsaved changes the explorer keeps a copy of it, in
 * session format 1, under
 *     $XDG_STATE_HOME/nilstep/   (or ~/.local/state/nilstep/ when unset)
 * named NAME-HASH.nilstep: NAME is the session file's name (or "untitled"
 * for the built-in scenario) and HASH a 64-bit FNV-1a hash (Fowler, Noll,
 * Vo) of its absolute path, so each session has its own copy.  The copy is
 * written a few seconds after a change and when a termination signal
 * arrives, removed after a save or an explicit discard, and offered back on
 * the next start on that session.  Strings returned here are malloc'd. */
#ifndef NILSTEP_UI_RECOVERY_H
#define NILSTEP_UI_RECOVERY_H

#include "session.h"

/* The recovery file for the session at path (NULL: the built-in
 * scenario), or NULL when neither XDG_STATE_HOME nor HOME is set. */
char *recovery_path_for(const char *path);

/* Writes s to rpath (creating the directory, mode 0700). */
ns_status recovery_write(const char *rpath, const session_t s, nserr_t err);

/* Removes the copy (no error when there is none). */
void recovery_remove(const char *rpath);

/* What the recovered session rec changes in file: one line
 * "title, map: <recovered map>" naming the keys that differ with the
 * recovered values of the short ones; "" when they agree. */
char *recovery_describe(const session_t file, const session_t rec);

#endif
