/* memlimit.h — memory and abort hooks for FLINT and GMP (internal to ui/).
 *
 * The engine never checks allocations (it aborts through FLINT's allocator,
 * as src/strbuf.h states); the program installs these hooks first thing so
 * that running out of memory is an orderly exit 3 with a message on stderr
 * naming the limit that was hit, never an abort with FLINT's message on
 * stdout.  Every block FLINT and GMP allocate is counted; an allocation
 * that would take the count over the limit (--max-memory; by default half
 * of the physical memory) fails before it is made.  The state here is the
 * program's, not the engine's, so these globals are allowed. */
#ifndef NILSTEP_UI_MEMLIMIT_H
#define NILSTEP_UI_MEMLIMIT_H

#include <stddef.h>

/* Installs the hooks with the default limit.  Call before any FLINT use. */
void memlimit_install(void);

/* The limit in bytes, and how it is named in messages (e.g. "--max-memory"
 * or "the default memory limit"). */
void memlimit_set_max_memory(size_t bytes, const char *name);
size_t memlimit_max_memory(void);
size_t memlimit_default_max_memory(void);

/* Bytes FLINT and GMP hold now. */
size_t memlimit_used_memory(void);

/* Called once, with no limit in force, just before the program exits on
 * running out of memory (the explorer keeps a recovery copy and restores
 * the terminal); NULL for none. */
void memlimit_set_emergency(void (*fn)(void));

/* Reads a size: a whole number of bytes, or with a suffix K, M, G, T
 * (binary: 1K = 1024).  Returns 0 on success. */
int memlimit_parse_size(size_t *out, const char *text);

#endif
