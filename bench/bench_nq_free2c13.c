/* bench_nq_free2c13.c — nq_compute on the free group of rank 2 at class 13 (Witt's formula);
 * 1377 pc generators; a target of issue 10: at most 60 s and 1 GiB (see
 * DEVELOPERS.md, Benchmarks).  Prints the layer
 * ranks next to the formula's and the CPU time of nq_compute;
 * bench/run-bench adds the whole process's wall time and peak memory.
 * Exits 1 if a rank disagrees with the formula. */
#include "bench_nq_common.h"

int main(void)
{
    static const bench_nq_case b = {
        .program = "bench_nq_free2c13",
        .group = "free group of rank 2",
        .text = "<a, b>",
        .c = 13,
        .formula = "Witt",
        .rank = witt_rank,
        .param = 2,
    };
    return bench_nq_run(&b);
}
