/* utf8.h — validating UTF-8 in input text.
 *
 * Internal to the engine: the scanner of expr and the reader of session
 * files accept the same characters. */
#ifndef NILSTEP_UTF8_H
#define NILSTEP_UTF8_H

#include <stddef.h>

/* Length in bytes of the character at u, of which n bytes are available:
 * 1 for an ASCII byte, 2 to 4 for a well-formed multi-byte sequence; 0 when
 * n is 0 or the bytes are not valid UTF-8 (a stray continuation byte, a
 * truncated sequence, an overlong form, a surrogate, or a code point past
 * U+10FFFF). */
size_t utf8_char_len(const unsigned char *u, size_t n);

#endif
