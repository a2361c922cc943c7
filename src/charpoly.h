/* charpoly.h — the characteristic polynomial det(xI - M) of an integer
 * matrix, cancellable and spread over threads.
 *
 * Why our own: FLINT's fmpz_mat_charpoly (2.9) computes the same thing by
 * the same multimodular method, but it cannot be interrupted and runs on one
 * core, and the layers of a nilpotent quotient reach dimensions in the
 * hundreds where one call takes minutes.  This module exists only for that:
 * it reduces M modulo word-size primes, computes each residue by the
 * Hessenberg method with FLINT's vector arithmetic (nmod_mat_charpoly cannot
 * be stopped either, and one prime of a 1344-dimensional layer took it close
 * to a minute; ours takes about a third of that and asks whether to stop
 * every 2^20 element operations), combines the residues by signed Chinese
 * remaindering, polls the caller's progress hook inside and between primes
 * and works on several primes at once.  Below CHARPOLY_OWN_MIN_DIM it
 * simply calls fmpz_mat_charpoly.
 *
 * How many primes: the product m of the primes must exceed 2B, where B
 * bounds every |c_k| (symmetric residues then give the exact coefficients,
 * so the result does not depend on how many primes were used beyond that).
 * With c_k = (-1)^k e_k(eigenvalues) = (-1)^k (sum of the k x k principal
 * minors of M), B is the least of three bounds, each evaluated with upward
 * rounding (Arb's mag_t), so the minimum is a proven bound:
 *   - Hadamard (J. Hadamard, "Resolution d'une question relative aux
 *     determinants", Bull. Sci. Math. 17, 1893): a principal minor on the
 *     index set S is at most prod_{i in S} |row i|_2, so
 *     |c_k| <= e_k(|row 1|_2, ..., |row d|_2) <= prod_i (1 + |row i|_2),
 *     and the same with columns;
 *   - Gershgorin (S. Gershgorin, "Ueber die Abgrenzung der Eigenwerte einer
 *     Matrix", Izv. Akad. Nauk SSSR 6, 1931): every |lambda| <= R, the least
 *     of the largest absolute row sum and column sum, so
 *     |c_k| <= C(d,k) R^k <= (1 + R)^d.
 * The Hadamard bound on the principal minors is the tighter one for the
 * dense layer matrices of nilpotent quotients (about 5,900 bits instead of
 * 8,600 for the 335-dimensional layer of free(2) at class 12).
 * All three only see the matrix and are far above the truth on the layers
 * of a nilpotent group (2,547 bits where 783 are needed on layer 6 of
 * surface(2) under a Dehn twist per handle).  A caller that knows the
 * layer structure passes its own proven bound to charpoly_compute_bounded;
 * charpoly_lie_bound_bits gives one from the eigenvalues of layer 1 (1,108
 * bits there: 18 primes instead of 42), and the least bound is used.
 *
 * Threads are POSIX threads created and joined inside one call; nothing is
 * shared between calls and the progress hook is only ever called from the
 * calling thread. */
#ifndef NILSTEP_CHARPOLY_H
#define NILSTEP_CHARPOLY_H

#include <flint/fmpz_mat.h>
#include <flint/fmpz_poly.h>
#include <mag.h>

#include "nserr.h"

/* Below this dimension fmpz_mat_charpoly is quick enough and is used. */
#define CHARPOLY_OWN_MIN_DIM 12

/* At most this many worker threads. */
#define CHARPOLY_MAX_THREADS 8

/* b such that every coefficient of det(xI - M) is less than 2^b in
 * absolute value (M square), by the bounds above; 0 for d = 0. */
slong charpoly_bound_bits(const fmpz_mat_t M);

/* The number of word-size primes (each above 2^62) that charpoly_compute
 * uses for M. */
slong charpoly_num_primes(const fmpz_mat_t M);

/* The number of primes charpoly_compute_bounded uses for M and bound_bits:
 * as charpoly_num_primes, with the bound min(charpoly_bound_bits(M),
 * bound_bits) when bound_bits >= 0. */
slong charpoly_num_primes_bounded(const fmpz_mat_t M, slong bound_bits);

/* A tighter bound for a caller that knows where M comes from: the layer
 * matrices of a group whose graded Lie ring is generated in degree 1.
 *
 * Let A be an r x r matrix (over C) with eigenvalues lambda_1..lambda_r
 * and |lambda_i| <= u_i, and let p(x) be a monic divisor of degree d of
 * P_n(x) = det(xI - L_n(A)), L_n the degree-n part of the free Lie
 * algebra on C^r (W. Magnus 1937, E. Witt 1937, as for charpoly_free_lie
 * below).  Then every coefficient of p is less than 2^b in absolute value,
 * b = charpoly_lie_bound_bits(u, r, n, d).
 *
 * Why.  (1) The roots of P_n.  L_n is graded by content: the part of
 * content alpha (each bracket monomial using letter i alpha_i times) has
 * dimension
 *   m(alpha) = (1/n) sum_{e | gcd alpha} mu(e) (n/e)! / prod_i (alpha_i/e)!,
 * the number of Lyndon words of content alpha (E. Witt, "Treue Darstellung
 * Liescher Ringe", J. reine angew. Math. 177, 1937; K.-T. Chen, R. H. Fox,
 * R. C. Lyndon, "Free differential calculus IV", Ann. of Math. 68, 1958).
 * A = diag(lambda) acts on that part by lambda^alpha = prod lambda_i^alpha_i,
 * so P_n(x) = prod_alpha (x - lambda^alpha)^m(alpha) for diagonalisable A.
 * Both sides are polynomials in the entries of A: the left because L_n(A)
 * is the restriction of the n-th tensor power of A to an invariant
 * subspace with a fixed basis, the right because its coefficients are
 * symmetric polynomials in the lambda_i with integer coefficients, hence
 * polynomials in the coefficients of det(xI - A).  Diagonalisable matrices
 * are dense in M_r(C), so the identity holds for every A: the roots of P_n
 * are the lambda^alpha with multiplicity m(alpha), whatever A's Jordan
 * form (H. Brandt, Trans. AMS 56, 1944, states it as a character).
 * (2) The roots mu_1..mu_d of p are a sub-multiset of those, and
 * |c_k(p)| = |e_k(mu)| <= e_k(|mu|) <= prod_i (1 + |mu_i|) (the e_k of
 * nonnegative numbers add up to that product).  (3) The product only grows
 * when each |mu_i| is replaced by its bound u^alpha, and the sub-multiset
 * by the d largest u^alpha (with multiplicity): the bound is
 *   prod over the d largest u^alpha (with multiplicity) of (1 + u^alpha),
 * evaluated with upward rounding (Arb's mag_t).
 * Mignotte's factor bound (M. Mignotte, "An inequality about factors of
 * polynomials", Math. Comp. 28, 1974: |c_k(p)| <= C(d,k) ||P_n||_2) was
 * the alternative: it needs P_n's coefficients (degree Witt's rank, in the
 * thousands), and ||P_n||_2 >= M(P_n) (M the Mahler measure) counts every
 * root of P_n, also those of the cofactor, where the product above counts
 * only d roots and exceeds max_k e_k of their bounds by at most a factor
 * d + 1 (for (x - 1)^d: 2^d against C(d, d/2)).
 *
 * u: r upper bounds of the moduli (mag_t, e.g. arb_get_mag of certified
 * modulus balls); n >= 1; d >= 0.  Returns -1 when it cannot say: d
 * exceeds Witt's rank of L_n (p cannot divide P_n: the caller's data are
 * not what this assumes), or there are more than CHARPOLY_LIE_MAX_CONTENTS
 * contents alpha (C(n + r - 1, r - 1)) to enumerate; 0 for d = 0. */
#define CHARPOLY_LIE_MAX_CONTENTS 200000
slong charpoly_lie_bound_bits(const mag_struct *u, slong r, slong n, slong d);

/* cp := det(xI - M) for a square M.  threads <= 0 means one per online
 * processor (at most CHARPOLY_MAX_THREADS); 1 computes in the calling
 * thread.  progress (may be NULL) is polled inside and between primes
 * (one thread) or every 20 ms while waiting for the threads, which then stop
 * within 2^20 element operations; a nonzero answer stops with NS_ERR_CANCELLED and
 * cp = 0.  Returns NS_OK otherwise. */
ns_status charpoly_compute(fmpz_poly_t cp, const fmpz_mat_t M, slong threads,
                           const ns_progress_t *progress, nserr_t err);

/* The same with a coefficient bound from the caller (e.g.
 * charpoly_lie_bound_bits): bound_bits >= 0 promises that every
 * coefficient of det(xI - M) is less than 2^bound_bits in absolute value,
 * and the primes then follow the least of that and charpoly_bound_bits(M)
 * (the old bound is kept as a cap); bound_bits < 0 is charpoly_compute.
 * A promise that is wrong gives a wrong polynomial: it must be proven. */
ns_status charpoly_compute_bounded(fmpz_poly_t cp, const fmpz_mat_t M, slong bound_bits,
                                   slong threads, const ns_progress_t *progress, nserr_t err);

/* The layers of a free nilpotent group need no multimodular work at all.
 * Layer n of the free group F of rank r is the degree-n part L_n of the
 * free Lie ring on Z^r (W. Magnus, "Ueber Beziehungen zwischen hoeheren
 * Kommutatoren", J. reine angew. Math. 177, 1937; E. Witt, "Treue
 * Darstellung Liescher Ringe", same volume), functorially: an endomorphism
 * with matrix A on F/[F,F] induces L_n(A) on gamma_n/gamma_(n+1), so over Q
 * the layer matrix is conjugate to L_n(A).  Its power sums follow from
 * Brandt's character formula (H. Brandt, "The free Lie ring and Lie
 * representations of the full linear group", Trans. AMS 56, 1944):
 *   tr L_n(A)^k = tr L_n(A^k) = (1/n) sum_{d | n} mu(d) (tr A^(kd))^(n/d),
 * a polynomial identity in the entries of A (true on the dense set of
 * diagonalisable invertible A, hence for all A).  The traces tr A^m come
 * from the recurrence of A's own characteristic polynomial, and the
 * coefficients from the power sums by Newton's identities, exactly in
 * integers: no coefficient bound is involved.
 *
 * cp := det(xI - L_n(A)) for a square r x r integer A and n >= 1, of
 * degree Witt's (1/n) sum_{d | n} mu(d) r^(n/d).  progress (may be NULL) is
 * polled once per coefficient; a nonzero answer stops with
 * NS_ERR_CANCELLED and cp = 0.  NS_ERR_LIMIT when that degree exceeds
 * CHARPOLY_FREE_LIE_MAX_DIM. */
#define CHARPOLY_FREE_LIE_MAX_DIM 1000000
ns_status charpoly_free_lie(fmpz_poly_t cp, const fmpz_mat_t A, slong n,
                            const ns_progress_t *progress, nserr_t err);

/* Witt's rank (1/n) sum_{d | n} mu(d) r^(n/d) of L_n on Z^r, or -1 when it
 * exceeds CHARPOLY_FREE_LIE_MAX_DIM. */
slong charpoly_witt_rank(slong r, slong n);

#endif
