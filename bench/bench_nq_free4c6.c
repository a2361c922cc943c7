/* bench_nq_free4c6.c — nq_compute on the free group of rank 4 at class 6 (Witt's formula);
 * a target of issue 10 (see DEVELOPERS.md, Benchmarks).  Prints the layer
 * ranks next to the formula's and the CPU time of nq_compute;
 * bench/run-bench adds the whole process's wall time and peak memory.
 * Exits 1 if a rank disagrees with the formula. */
#include "bench_nq_common.h"

int main(void)
{
    static const bench_nq_case b = {
        .program = "bench_nq_free4c6",
        .group = "free group of rank 4",
        .text = "<a, b, c, d>",
        .c = 6,
        .formula = "Witt",
        .rank = witt_rank,
        .param = 4,
    };
    return bench_nq_run(&b);
}
