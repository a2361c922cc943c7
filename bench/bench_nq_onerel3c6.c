/* bench_nq_onerel3c6.c — nq_compute on <a, b, c | [a,b]^6 [a,c]^10 [b,c]^15>
 * at class 6, a one-relator group whose layers 2.. need a change of basis
 * (no single commutators generate them minimally; doc/design.md §9.1): its
 * Smith forms once grew to 588,000-bit integers and the class did not end
 * in five minutes.  The relator lies in gamma_2 of the free group of rank 3
 * with image 6[a,b] + 10[a,c] + 15[b,c] in the free Lie ring, coprime
 * coefficients on a basis, so not a proper multiple: Labute's formula with
 * q = 2, m = 3 gives the ranks (3, 2, 5, 10, 24, 50).  Exits 1 if a rank
 * disagrees. */
#include "bench_nq_common.h"

int main(void)
{
    static const bench_nq_case b = {
        .program = "bench_nq_onerel3c6",
        .group = "<a, b, c | [a,b]^6 [a,c]^10 [b,c]^15>",
        .text = "<a, b, c | [a,b]^6 [a,c]^10 [b,c]^15>",
        .c = 6,
        .formula = "Labute",
        .rank = labute_rank_q2,
        .param = 3,
    };
    return bench_nq_run(&b);
}
