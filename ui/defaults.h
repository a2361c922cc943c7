/* defaults.h — the built-in default scenario. */
#ifndef NILSTEP_DEFAULTS_H
#define NILSTEP_DEFAULTS_H

/* The session file text that `nilstep` opens without a FILE argument
 * (session format 1).  Static storage; never freed. */
const char *defaults_session_text(void);

/* The name shown for it in place of a file name. */
const char *defaults_session_name(void);

#endif
