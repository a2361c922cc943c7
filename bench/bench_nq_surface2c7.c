/* bench_nq_surface2c7.c — nq_compute on the genus-2 surface group at class 7 (Labute's formula);
 * a target of issue 10 (see DEVELOPERS.md, Benchmarks).  Prints the layer
 * ranks next to the formula's, the CPU time of nq_compute and of the layer
 * coordinates (target: 3 s and 150 MiB for both, whole process);
 * bench/run-bench adds the whole process's wall time and peak memory.
 * Exits 1 if a rank disagrees with the formula. */
#include "bench_nq_common.h"

int main(void)
{
    static const bench_nq_case b = {
        .program = "bench_nq_surface2c7",
        .group = "genus-2 surface group",
        .text = "<a1, b1, a2, b2 | [a1,b1] [a2,b2]>",
        .c = 7,
        .formula = "Labute",
        .rank = labute_rank,
        .param = 2,
        .coords = 1, /* the report's cost beyond the quotient: once a 1450 x 1450 inverse */
    };
    return bench_nq_run(&b);
}
