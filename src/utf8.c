/* utf8.c — see utf8.h. */
#include "utf8.h"

size_t utf8_char_len(const unsigned char *u, size_t n)
{
    size_t need;

    if (n == 0)
        return 0;
    if (u[0] < 0x80)
        return 1;
    if (u[0] >= 0xC2 && u[0] <= 0xDF)
        need = 2;
    else if (u[0] >= 0xE0 && u[0] <= 0xEF)
        need = 3;
    else if (u[0] >= 0xF0 && u[0] <= 0xF4)
        need = 4;
    else
        return 0;
    if (n < need)
        return 0;
    for (size_t i = 1; i < need; i++)
        if ((u[i] & 0xC0) != 0x80)
            return 0;
    /* Overlong forms, surrogates and code points past U+10FFFF. */
    if (need == 3 && u[0] == 0xE0 && u[1] < 0xA0)
        return 0;
    if (need == 3 && u[0] == 0xED && u[1] >= 0xA0)
        return 0;
    if (need == 4 && u[0] == 0xF0 && u[1] < 0x90)
        return 0;
    if (need == 4 && u[0] == 0xF4 && u[1] >= 0x90)
        return 0;
    return need;
}
