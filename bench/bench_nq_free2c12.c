/* bench_nq_free2c12.c — nq_compute on the free group of rank 2 at class 12 (Witt's formula);
 * a target of issue 10 (see DEVELOPERS.md, Benchmarks).  Prints the layer
 * ranks next to the formula's and the CPU time of nq_compute;
 * bench/run-bench adds the whole process's wall time and peak memory.
 * Exits 1 if a rank disagrees with the formula. */
#include "bench_nq_common.h"

int main(void)
{
    static const bench_nq_case b = {
        .program = "bench_nq_free2c12",
        .group = "free group of rank 2",
        .text = "<a, b>",
        .c = 12,
        .formula = "Witt",
        .rank = witt_rank,
        .param = 2,
    };
    return bench_nq_run(&b);
}
