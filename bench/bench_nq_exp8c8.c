/* bench_nq_exp8c8.c — nq_compute on <a, b | a^8, b^8> at class 8, a target
 * of issue 10 (at most 2 s; see DEVELOPERS.md, Benchmarks).  The expected
 * layer orders (base-2 logarithms) are fixed from a run of the engine, the
 * same values as tests/test_nq.c (two_generator_exponent_4_and_8); layers
 * 1..2 are checked independently against sympy in tests/ref_lower_central.py.
 * Exits 1 if a layer differs. */
#include "bench_nq_common.h"

int main(void)
{
    /* from a run of the engine (tests/test_nq.c) */
    static const slong log2_order[8] = {6, 3, 5, 7, 13, 18, 35, 54};
    return bench_nq_run_2group("bench_nq_exp8c8", "<a, b | a^8, b^8>", 8, log2_order);
}
