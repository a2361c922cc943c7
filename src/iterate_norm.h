/* iterate_norm.h — the homogeneous norm of an iterate (iterate.h) as
 * certified Arb balls.  Apart from iterate.h so that the explorer's
 * screens, which need only iterate_point_root_d, do not see Arb's
 * headers. */
#ifndef NILSTEP_ITERATE_NORM_H
#define NILSTEP_ITERATE_NORM_H

#include <arb.h>
#include "iterate.h"

/* The homogeneous norm as a certified ball at precision prec. */
void iterate_point_norm(arb_t out, const iterate_point_t p, slong prec);
/* N(p)^(1/n) at precision prec; n = 0 gives an indeterminate ball. */
void iterate_point_root(arb_t out, const iterate_point_t p, slong prec);

/* Certified decimals (as iterate_point_norm_str in iterate.h) for any
 * ball-valued quantity recomputed by fn at rising precision
 * (fn(out, ctx, prec)). */
char *iterate_decimal_str(void (*fn)(arb_t, const void *, slong), const void *ctx,
                          slong digits);

#endif
