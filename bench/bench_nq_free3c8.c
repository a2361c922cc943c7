/* bench_nq_free3c8.c — nq_compute on the free group of rank 3 at class 8 (Witt's formula);
 * a target of issue 10 (see DEVELOPERS.md, Benchmarks).  Prints the layer
 * ranks next to the formula's and the CPU time of nq_compute;
 * bench/run-bench adds the whole process's wall time and peak memory.
 * Exits 1 if a rank disagrees with the formula. */
#include "bench_nq_common.h"

int main(void)
{
    static const bench_nq_case b = {
        .program = "bench_nq_free3c8",
        .group = "free group of rank 3",
        .text = "<a, b, c>",
        .c = 8,
        .formula = "Witt",
        .rank = witt_rank,
        .param = 3,
    };
    return bench_nq_run(&b);
}
