/* jsonl.h — one line of JSON Lines (RFC 8259 text, one object per line),
 * read as its top-level keys with each value kept as JSON text.
 *
 * Enough to read scan results and scan input back: values are checked to
 * be well-formed JSON (nesting at most JSONL_MAX_DEPTH deep) but only
 * strings are decoded, on request. */
#ifndef NILSTEP_JSONL_H
#define NILSTEP_JSONL_H

#include <flint/flint.h>
#include "nserr.h"

#define JSONL_MAX_DEPTH 64

typedef struct {
    slong n;
    char **key; /* decoded keys, flint_malloc'd */
    char **raw; /* each value exactly as written, flint_malloc'd */
} jsonl_obj_struct;
typedef jsonl_obj_struct jsonl_obj_t[1];

void jsonl_obj_init(jsonl_obj_t o);
void jsonl_obj_clear(jsonl_obj_t o);

/* Parses line (without its newline) as one JSON object.  Errors:
 * NS_ERR_SYNTAX with line 1 and the 1-based byte column; on failure o is
 * empty. */
ns_status jsonl_parse(jsonl_obj_t o, const char *line, nserr_t err);

/* The value of key as JSON text, or NULL if absent (the last one wins). */
const char *jsonl_get(const jsonl_obj_t o, const char *key);

/* The decoded string when raw is a JSON string (flint_free it), else NULL.
 * \u0000 is refused (NULL). */
char *jsonl_string_value(const char *raw);

#endif
