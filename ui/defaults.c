/* defaults.c — the built-in default scenario: the automorphism of the free
 * nilpotent group of rank 2 and class 3 induced by the matrix [[2,1],[1,1]]
 * on the abelianisation.  It is hyperbolic on layers 1 and 3 but acts on
 * layer 2 by its determinant 1, so the whole map is not hyperbolic and the
 * gap between the bounds shows.  Our own example. */
#include "defaults.h"

const char *defaults_session_text(void)
{
    return "nilstep session 1\n"
           "# The matrix [[2,1],[1,1]] lifted to the free nilpotent group of\n"
           "# rank 2 and class 3: an automorphism whose growth rate is the\n"
           "# golden ratio squared.\n"
           "title   Golden automorphism of the free 3-step group on two letters\n"
           "group   <a, b | >\n"
           "class   3\n"
           "map     a -> a^2 b, b -> a b\n";
}

const char *defaults_session_name(void)
{
    return "(built-in default scenario)";
}
