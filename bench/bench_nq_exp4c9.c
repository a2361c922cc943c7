/* bench_nq_exp4c9.c — nq_compute on <a, b | a^4, b^4> at class 9, a target
 * of issue 10 (at most 2 s; see DEVELOPERS.md, Benchmarks).  The expected
 * layer orders (base-2 logarithms) are fixed from a run of the engine, the
 * same values as tests/test_nq.c (two_generator_exponent_4_and_8); layers
 * 1..3 are checked independently against sympy in tests/ref_lower_central.py.
 * Exits 1 if a layer differs. */
#include "bench_nq_common.h"

int main(void)
{
    /* from a run of the engine (tests/test_nq.c) */
    static const slong log2_order[9] = {4, 2, 3, 4, 7, 9, 17, 24, 43};
    return bench_nq_run_2group("bench_nq_exp4c9", "<a, b | a^4, b^4>", 9, log2_order);
}
