/* charpoly.c — det(xI - M) prime by prime, in parallel threads; the bound
 * and the reason this module exists are stated in charpoly.h. */
#include <errno.h>
#include <pthread.h>
#include <stdatomic.h>
#include <time.h>
#include <unistd.h>

#include <flint/nmod_mat.h>
#include <flint/nmod_poly.h>
#include <flint/fmpz_vec.h>
#include <flint/nmod_vec.h>
#include <flint/ulong_extras.h>
#include <arb.h>

#include "charpoly.h"

/* How long the calling thread waits for the workers between two polls of
 * the progress hook. */
#define POLL_NS 20000000L

/* An upper bound of prod_i (1 + |line i|_2) over the rows (cols = 0)
 * or the columns (cols = 1) of M, as a mag_t product. */
static void hadamard_lines(mag_t res, const fmpz_mat_t M, int cols)
{
    slong d = fmpz_mat_nrows(M);
    mag_t s, t;
    mag_init(s);
    mag_init(t);
    mag_one(res);
    for (slong i = 0; i < d; i++) {
        mag_zero(s);
        for (slong j = 0; j < d; j++) {
            const fmpz *x = cols ? fmpz_mat_entry(M, j, i) : fmpz_mat_entry(M, i, j);
            if (fmpz_is_zero(x))
                continue;
            mag_set_fmpz(t, x);
            mag_mul(t, t, t);
            mag_add(s, s, t);
        }
        mag_sqrt(s, s);
        mag_add_ui(s, s, 1);
        mag_mul(res, res, s);
    }
    mag_clear(s);
    mag_clear(t);
}

/* (1 + R)^d with R the largest absolute row sum (cols = 0) or column sum
 * (cols = 1). */
static void gershgorin(mag_t res, const fmpz_mat_t M, int cols)
{
    slong d = fmpz_mat_nrows(M);
    mag_t s, t, r;
    mag_init(s);
    mag_init(t);
    mag_init(r);
    mag_zero(r);
    for (slong i = 0; i < d; i++) {
        mag_zero(s);
        for (slong j = 0; j < d; j++) {
            mag_set_fmpz(t, cols ? fmpz_mat_entry(M, j, i) : fmpz_mat_entry(M, i, j));
            mag_add(s, s, t);
        }
        mag_max(r, r, s);
    }
    mag_add_ui(r, r, 1);
    mag_pow_ui(res, r, (ulong)d);
    mag_clear(s);
    mag_clear(t);
    mag_clear(r);
}

slong charpoly_bound_bits(const fmpz_mat_t M)
{
    mag_t best, b;
    slong bits;

    if (fmpz_mat_nrows(M) == 0)
        return 0;
    mag_init(best);
    mag_init(b);
    hadamard_lines(best, M, 0);
    for (int k = 1; k < 4; k++) {
        if (k == 1)
            hadamard_lines(b, M, 1);
        else
            gershgorin(b, M, k - 2);
        if (mag_cmp(b, best) < 0)
            mag_swap(b, best);
    }
    /* a finite nonzero mag_t is below 2^(its exponent); every bound is at
       least 1, the leading coefficient */
    bits = FLINT_MAX(fmpz_get_si(MAG_EXPREF(best)), 1);
    mag_clear(best);
    mag_clear(b);
    return bits;
}

slong charpoly_num_primes_bounded(const fmpz_mat_t M, slong bound_bits)
{
    slong bits = charpoly_bound_bits(M);
    if (bound_bits >= 0 && bound_bits < bits)
        bits = bound_bits;
    /* primes above 2^62 each add more than 62 bits; the product must reach
       2^(bits + 1) > 2B */
    return (bits + 1) / 62 + 1;
}

slong charpoly_num_primes(const fmpz_mat_t M)
{
    return charpoly_num_primes_bounded(M, -1);
}

/* One content alpha of charpoly_lie_bound_bits: the bound u^alpha of the
 * moduli of its roots and their number m(alpha) (at most d). */
typedef struct {
    mag_struct v;
    slong m;
} lie_root_struct;

static int lie_root_cmp_desc(const void *a, const void *b)
{
    return mag_cmp(&((const lie_root_struct *)b)->v, &((const lie_root_struct *)a)->v);
}

static int moebius(slong n);

slong charpoly_lie_bound_bits(const mag_struct *u, slong r, slong n, slong d)
{
    if (d <= 0)
        return 0;
    if (r <= 0 || n < 1)
        return -1;
    /* the contents alpha: compositions of n into r parts */
    fmpz_t cnt;
    fmpz_init(cnt);
    fmpz_bin_uiui(cnt, (ulong)(n + r - 1), (ulong)(r - 1));
    int too_many = fmpz_cmp_si(cnt, CHARPOLY_LIE_MAX_CONTENTS) > 0;
    slong ncont = too_many ? 0 : fmpz_get_si(cnt);
    fmpz_clear(cnt);
    if (too_many)
        return -1;

    fmpz *fac = _fmpz_vec_init(n + 1);
    for (slong i = 0; i <= n; i++)
        fmpz_fac_ui(fac + i, (ulong)i);
    lie_root_struct *roots = flint_malloc(sizeof(lie_root_struct) * ncont);
    slong *alpha = flint_calloc((size_t)r, sizeof(slong));
    fmpz_t m, t;
    mag_t pw;
    fmpz_init(m);
    fmpz_init(t);
    mag_init(pw);
    slong nroots = 0;
    alpha[0] = n;
    for (;;) {
        /* m(alpha) = (1/n) sum_{e | gcd alpha} mu(e) (n/e)! / prod (alpha_i/e)! */
        slong g = 0;
        for (slong i = 0; i < r; i++)
            g = (slong)n_gcd((ulong)g, (ulong)alpha[i]);
        fmpz_zero(m);
        for (slong e = 1; e <= g; e++) {
            int mu = g % e == 0 ? moebius(e) : 0;
            if (mu == 0)
                continue;
            fmpz_set(t, fac + n / e);
            for (slong i = 0; i < r; i++)
                fmpz_divexact(t, t, fac + alpha[i] / e);
            if (mu > 0)
                fmpz_add(m, m, t);
            else
                fmpz_sub(m, m, t);
        }
        fmpz_divexact_si(m, m, n);
        if (!fmpz_is_zero(m)) {
            lie_root_struct *R = roots + nroots++;
            R->m = fmpz_cmp_si(m, d) > 0 ? d : fmpz_get_si(m);
            mag_init(&R->v);
            mag_one(&R->v);
            for (slong i = 0; i < r; i++)
                if (alpha[i] > 0) {
                    mag_pow_ui(pw, u + i, (ulong)alpha[i]);
                    mag_mul(&R->v, &R->v, pw);
                }
        }
        /* the next composition (from (n, 0, ..., 0) to (0, ..., 0, n)):
           the last part before the end that is nonzero gives one unit to
           its right neighbour, which also takes what the end held */
        if (alpha[r - 1] == n)
            break;
        slong h = r - 2;
        while (alpha[h] == 0)
            h--;
        slong end = alpha[r - 1];
        alpha[r - 1] = 0;
        alpha[h]--;
        alpha[h + 1] = end + 1;
    }
    flint_free(alpha);
    fmpz_clear(m);
    fmpz_clear(t);
    _fmpz_vec_clear(fac, n + 1);

    /* the d largest bounds with multiplicity, each as (1 + u^alpha) */
    qsort(roots, (size_t)nroots, sizeof(lie_root_struct), lie_root_cmp_desc);
    mag_t prod;
    mag_init(prod);
    mag_one(prod);
    slong left = d;
    for (slong i = 0; i < nroots; i++) {
        if (left > 0) {
            slong take = FLINT_MIN(left, roots[i].m);
            mag_add_ui(pw, &roots[i].v, 1);
            mag_pow_ui(pw, pw, (ulong)take);
            mag_mul(prod, prod, pw);
            left -= take;
        }
        mag_clear(&roots[i].v);
    }
    flint_free(roots);
    mag_clear(pw);
    slong bits = left > 0 ? -1 : FLINT_MAX(fmpz_get_si(MAG_EXPREF(prod)), 1);
    mag_clear(prod);
    return bits;
}

/* The work shared by the calling thread and the workers of one call. */
typedef struct {
    const fmpz_mat_struct *M;
    const mp_limb_t *primes;
    nmod_poly_struct *res; /* one per prime, initialised by the caller */
    slong nprimes, next, done;
    atomic_int stop;       /* read by the workers inside a prime, unlocked */
    pthread_mutex_t lock;
    pthread_cond_t cond;
} job_struct;

/* Asked about every CHARPOLY_CHECK_WORK element operations inside one
 * prime; nonzero stops the prime. */
typedef int (*check_fn)(void *ctx);

/* res := det(xI - A) for A over Z/pZ, p prime; A is overwritten.  The
 * Hessenberg method (H. Cohen, A Course in Computational Algebraic Number
 * Theory, GTM 138, Springer 1993, section 2.2.4): A is brought to upper
 * Hessenberg form H by Gaussian similarity transforms, column by column,
 * then p_m = det(xI - H_m) of the leading m x m blocks follows from
 *   p_m = (x - h_mm) p_(m-1) - sum_(i<m) h_im (h_(i+1,i) ... h_(m,m-1)) p_(i-1).
 * Ours rather than nmod_mat_charpoly because that call cannot be stopped
 * (a 1344-dimensional layer takes close to a minute per prime there; this
 * takes about a third of the time, bench_charpoly) — the arithmetic is
 * FLINT's vector arithmetic.  Returns 1 when check asked to stop. */
static int charpoly_mod_hessenberg(nmod_poly_t res, nmod_mat_t A, check_fn check, void *ctx)
{
    slong n = A->r, work = 0;
    nmod_t mod = A->mod;
    mp_limb_t **a = A->rows;
    mp_ptr u = _nmod_vec_init(n + 1);
    mp_ptr P;
    int stopped = 0;

#define CHARPOLY_CHECK_WORK (WORD(1) << 20)
#define CHECK_AFTER(w)                                                       \
    do {                                                                     \
        work += (w);                                                         \
        if (work >= CHARPOLY_CHECK_WORK) {                                   \
            work = 0;                                                        \
            if (check && check(ctx)) {                                       \
                stopped = 1;                                                 \
                goto done;                                                   \
            }                                                                \
        }                                                                    \
    } while (0)

    P = NULL;
    for (slong j = 0; j + 2 < n; j++) {
        slong i = j + 1;
        CHECK_AFTER(n * (n - j) + (n - j) * (n - j));
        while (i < n && a[i][j] == 0)
            i++;
        if (i == n)
            continue; /* column j is already in Hessenberg form */
        if (i != j + 1) { /* swap i and j + 1: rows, then columns */
            mp_ptr t = a[i];
            a[i] = a[j + 1];
            a[j + 1] = t;
            for (slong r = 0; r < n; r++) {
                mp_limb_t x = a[r][i];
                a[r][i] = a[r][j + 1];
                a[r][j + 1] = x;
            }
        }
        /* rows i -= u_i row j+1 clear column j below the subdiagonal;
           then column j+1 += sum u_i column i completes the similarity
           (entries left of column j are zero in every row involved) */
        mp_limb_t inv = n_invmod(a[j + 1][j], mod.n);
        int any = 0;
        for (i = j + 2; i < n; i++) {
            u[i] = 0;
            if (a[i][j] == 0)
                continue;
            u[i] = n_mulmod2_preinv(a[i][j], inv, mod.n, mod.ninv);
            _nmod_vec_scalar_addmul_nmod(a[i] + j, a[j + 1] + j, n - j, nmod_neg(u[i], mod), mod);
            any = 1;
        }
        if (!any)
            continue;
        int limbs = _nmod_vec_dot_bound_limbs(n - j - 2, mod);
        for (slong r = 0; r < n; r++) {
            mp_limb_t s = _nmod_vec_dot(a[r] + j + 2, u + j + 2, n - j - 2, mod, limbs);
            a[r][j + 1] = nmod_add(a[r][j + 1], s, mod);
        }
    }

    /* p_m (degree m, m + 1 coefficients) at P + m (m + 1) / 2 */
    P = _nmod_vec_init((n + 1) * (n + 2) / 2);
#define POLY(m) (P + (m) * ((m) + 1) / 2)
    POLY(0)[0] = 1;
    for (slong m = 1; m <= n; m++) {
        mp_ptr q = POLY(m), prev = POLY(m - 1);
        mp_limb_t t = 1;
        CHECK_AFTER(m * m / 2 + 1);
        q[0] = 0;
        for (slong k = 0; k < m; k++)
            q[k + 1] = prev[k];
        _nmod_vec_scalar_addmul_nmod(q, prev, m, nmod_neg(a[m - 1][m - 1], mod), mod);
        for (slong i = m - 1; i >= 1 && t != 0; i--) {
            t = n_mulmod2_preinv(t, a[i][i - 1], mod.n, mod.ninv);
            mp_limb_t c = n_mulmod2_preinv(a[i - 1][m - 1], t, mod.n, mod.ninv);
            if (c != 0)
                _nmod_vec_scalar_addmul_nmod(q, POLY(i - 1), i, nmod_neg(c, mod), mod);
        }
    }
    nmod_poly_fit_length(res, n + 1);
    _nmod_vec_set(res->coeffs, POLY(n), n + 1);
    res->length = n + 1;
    _nmod_poly_normalise(res);
#undef POLY
#undef CHECK_AFTER
done:
    if (P != NULL)
        _nmod_vec_clear(P);
    _nmod_vec_clear(u);
    return stopped;
}

/* res := det(xI - M) mod p; 1 when check stopped it (res then unset). */
static int charpoly_mod(nmod_poly_t res, const fmpz_mat_t M, mp_limb_t p, check_fn check,
                        void *ctx)
{
    nmod_mat_t Mp;
    slong d = fmpz_mat_nrows(M);
    nmod_mat_init(Mp, d, d, p);
    fmpz_mat_get_nmod_mat(Mp, M);
    int stopped = charpoly_mod_hessenberg(res, Mp, check, ctx);
    nmod_mat_clear(Mp);
    return stopped;
}

static int check_job_stop(void *ctx)
{
    job_struct *J = ctx;
    return atomic_load_explicit(&J->stop, memory_order_relaxed) != 0;
}

static int check_progress(void *ctx)
{
    return ns_progress_report(ctx, NULL, -1.0);
}

static void *worker(void *arg)
{
    job_struct *J = arg;
    for (;;) {
        pthread_mutex_lock(&J->lock);
        slong i = (J->stop || J->next >= J->nprimes) ? -1 : J->next++;
        pthread_mutex_unlock(&J->lock);
        if (i < 0)
            break;
        if (charpoly_mod(J->res + i, J->M, J->primes[i], check_job_stop, J))
            break;
        pthread_mutex_lock(&J->lock);
        J->done++;
        pthread_cond_signal(&J->cond);
        pthread_mutex_unlock(&J->lock);
    }
    flint_cleanup(); /* this thread's FLINT caches */
    return NULL;
}

static slong online_processors(void)
{
    long n = sysconf(_SC_NPROCESSORS_ONLN);
    return n > 0 ? (slong)n : 1;
}

/* Runs the job on nthreads workers (nthreads >= 2); returns 1 when
 * cancelled. */
static int run_threads(job_struct *J, slong nthreads, const ns_progress_t *progress)
{
    pthread_t tid[CHARPOLY_MAX_THREADS];
    slong started = 0;
    int cancelled = 0;

    for (slong t = 0; t < nthreads; t++)
        if (pthread_create(&tid[started], NULL, worker, J) == 0)
            started++;
    if (started == 0)
        worker(J); /* no thread could be created: do the work here */

    pthread_mutex_lock(&J->lock);
    while (J->done < J->nprimes && !J->stop) {
        if (progress && progress->fn) {
            struct timespec ts;
            clock_gettime(CLOCK_REALTIME, &ts);
            ts.tv_nsec += POLL_NS;
            if (ts.tv_nsec >= 1000000000L) {
                ts.tv_sec++;
                ts.tv_nsec -= 1000000000L;
            }
            int rc = pthread_cond_timedwait(&J->cond, &J->lock, &ts);
            if (rc == ETIMEDOUT || rc == 0) {
                pthread_mutex_unlock(&J->lock);
                int stop = ns_progress_report(progress, NULL, -1.0);
                pthread_mutex_lock(&J->lock);
                if (stop) {
                    J->stop = 1;
                    cancelled = 1;
                }
            }
        } else
            pthread_cond_wait(&J->cond, &J->lock);
    }
    pthread_mutex_unlock(&J->lock);
    for (slong t = 0; t < started; t++)
        pthread_join(tid[t], NULL);
    return cancelled;
}

ns_status charpoly_compute(fmpz_poly_t cp, const fmpz_mat_t M, slong threads,
                           const ns_progress_t *progress, nserr_t err)
{
    return charpoly_compute_bounded(cp, M, -1, threads, progress, err);
}

ns_status charpoly_compute_bounded(fmpz_poly_t cp, const fmpz_mat_t M, slong bound_bits,
                                   slong threads, const ns_progress_t *progress, nserr_t err)
{
    slong d = fmpz_mat_nrows(M);
    if (d != fmpz_mat_ncols(M))
        return nserr_set(err, NS_ERR_INPUT, 0, 0, "charpoly: the matrix is %ld x %ld, not square",
                         (long)d, (long)fmpz_mat_ncols(M));
    if (d < CHARPOLY_OWN_MIN_DIM) {
        /* FLINT 2.9 Chinese-remainders into the old coefficients of cp:
           start from zeros (found by tests/test_charpoly.c) */
        fmpz_poly_zero(cp);
        fmpz_mat_charpoly(cp, M);
        return NS_OK;
    }

    job_struct J;
    J.M = M;
    J.nprimes = charpoly_num_primes_bounded(M, bound_bits);
    J.next = J.done = 0;
    J.stop = 0;
    mp_limb_t *primes = flint_malloc(sizeof(mp_limb_t) * J.nprimes);
    J.res = flint_malloc(sizeof(nmod_poly_struct) * J.nprimes);
    mp_limb_t p = UWORD(1) << (FLINT_BITS - 2);
    for (slong i = 0; i < J.nprimes; i++) {
        p = n_nextprime(p, 1);
        primes[i] = p;
        nmod_poly_init(J.res + i, p);
    }
    J.primes = primes;

    if (threads <= 0)
        threads = online_processors();
    threads = FLINT_MIN(FLINT_MIN(threads, CHARPOLY_MAX_THREADS), J.nprimes);

    /* asked once before any work, so that a cancel is seen however quick
       the primes are */
    int cancelled = ns_progress_report(progress, NULL, -1.0);
    if (cancelled)
        ;
    else if (threads <= 1) {
        for (slong i = 0; i < J.nprimes && !cancelled; i++) {
            cancelled = charpoly_mod(J.res + i, M, primes[i], progress ? check_progress : NULL,
                                     (void *)progress);
            if (!cancelled && i + 1 < J.nprimes)
                cancelled = ns_progress_report(progress, NULL, -1.0);
        }
    } else {
        pthread_mutex_init(&J.lock, NULL);
        pthread_cond_init(&J.cond, NULL);
        cancelled = run_threads(&J, threads, progress);
        pthread_cond_destroy(&J.cond);
        pthread_mutex_destroy(&J.lock);
    }

    fmpz_poly_zero(cp);
    if (!cancelled) {
        fmpz_t m;
        fmpz_init(m);
        fmpz_one(m);
        for (slong i = 0; i < J.nprimes && !cancelled; i++) {
            fmpz_poly_CRT_ui(cp, cp, m, J.res + i, 1);
            fmpz_mul_ui(m, m, primes[i]);
            /* hundreds of primes of a large layer add up here too */
            if ((i & 7) == 7)
                cancelled = ns_progress_report(progress, NULL, -1.0);
        }
        fmpz_clear(m);
        if (cancelled)
            fmpz_poly_zero(cp);
    }
    for (slong i = 0; i < J.nprimes; i++)
        nmod_poly_clear(J.res + i);
    flint_free(J.res);
    flint_free(primes);
    if (cancelled)
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    return NS_OK;
}

/* Moebius function of n >= 1 by trial division. */
static int moebius(slong n)
{
    int mu = 1;
    for (slong p = 2; p * p <= n; p++)
        if (n % p == 0) {
            n /= p;
            if (n % p == 0)
                return 0;
            mu = -mu;
        }
    return n > 1 ? -mu : mu;
}

slong charpoly_witt_rank(slong r, slong n)
{
    if (r < 0 || n < 1)
        return -1;
    fmpz_t s, t;
    fmpz_init(s);
    fmpz_init(t);
    for (slong d = 1; d <= n; d++)
        if (n % d == 0 && moebius(d) != 0) {
            fmpz_set_si(t, r);
            fmpz_pow_ui(t, t, (ulong)(n / d));
            if (moebius(d) > 0)
                fmpz_add(s, s, t);
            else
                fmpz_sub(s, s, t);
        }
    fmpz_divexact_si(s, s, n);
    slong res = fmpz_cmp_si(s, CHARPOLY_FREE_LIE_MAX_DIM) > 0 ? -1 : fmpz_get_si(s);
    fmpz_clear(s);
    fmpz_clear(t);
    return res;
}

ns_status charpoly_free_lie(fmpz_poly_t cp, const fmpz_mat_t A, slong n,
                            const ns_progress_t *progress, nserr_t err)
{
    slong r = fmpz_mat_nrows(A);
    fmpz_poly_zero(cp);
    if (r != fmpz_mat_ncols(A))
        return nserr_set(err, NS_ERR_INPUT, 0, 0, "charpoly: the matrix is %ld x %ld, not square",
                         (long)r, (long)fmpz_mat_ncols(A));
    if (n < 1)
        return nserr_set(err, NS_ERR_INPUT, 0, 0, "charpoly: layer %ld of a free Lie ring",
                         (long)n);
    slong D = charpoly_witt_rank(r, n);
    if (D < 0)
        return nserr_set(err, NS_ERR_LIMIT, 0, 0,
                         "charpoly: layer %ld of the free Lie ring of rank %ld has more than %ld "
                         "dimensions", (long)n, (long)r, (long)CHARPOLY_FREE_LIE_MAX_DIM);
    if (D == 0) {
        fmpz_poly_one(cp);
        return NS_OK;
    }
    if (ns_progress_report(progress, NULL, -1.0))
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");

    /* t[m] = tr A^m for m = 0 .. nD by Newton's identities on A's own
       characteristic polynomial x^r + a_(r-1) x^(r-1) + ... + a_0 */
    slong N = n * D;
    fmpz_poly_t chi;
    fmpz_poly_init(chi);
    fmpz_mat_charpoly(chi, A);
    fmpz *t = _fmpz_vec_init(N + 1);
    fmpz_set_si(t + 0, r);
    for (slong m = 1; m <= N; m++) {
        for (slong i = 1; i <= FLINT_MIN(m - 1, r); i++)
            fmpz_submul(t + m, fmpz_poly_get_coeff_ptr(chi, r - i), t + m - i);
        if (m <= r)
            fmpz_submul_ui(t + m, fmpz_poly_get_coeff_ptr(chi, r - m), (ulong)m);
    }
    fmpz_poly_clear(chi);

    /* q[k] = tr L_n(A)^k, k = 1 .. D (Brandt) */
    fmpz *q = _fmpz_vec_init(D + 1);
    fmpz_t x;
    fmpz_init(x);
    for (slong k = 1; k <= D; k++) {
        for (slong d = 1; d <= n; d++) {
            int mu = n % d == 0 ? moebius(d) : 0;
            if (mu == 0)
                continue;
            fmpz_pow_ui(x, t + k * d, (ulong)(n / d));
            if (mu > 0)
                fmpz_add(q + k, q + k, x);
            else
                fmpz_sub(q + k, q + k, x);
        }
        fmpz_divexact_si(q + k, q + k, n);
    }
    _fmpz_vec_clear(t, N + 1);

    /* Newton: k e_k = sum_{i=1}^k (-1)^(i-1) e_(k-i) q_i; the coefficient
       of x^(D-k) is (-1)^k e_k */
    fmpz *e = _fmpz_vec_init(D + 1);
    fmpz_one(e + 0);
    int cancelled = 0;
    for (slong k = 1; k <= D && !cancelled; k++) {
        for (slong i = 1; i <= k; i++) {
            if (i % 2)
                fmpz_addmul(e + k, e + k - i, q + i);
            else
                fmpz_submul(e + k, e + k - i, q + i);
        }
        fmpz_divexact_si(e + k, e + k, k);
        if ((k & 15) == 0)
            cancelled = ns_progress_report(progress, NULL, -1.0);
    }
    if (!cancelled) {
        fmpz_poly_fit_length(cp, D + 1);
        for (slong k = 0; k <= D; k++) {
            if (k % 2)
                fmpz_neg(x, e + k);
            else
                fmpz_set(x, e + k);
            fmpz_poly_set_coeff_fmpz(cp, D - k, x);
        }
    }
    fmpz_clear(x);
    _fmpz_vec_clear(q, D + 1);
    _fmpz_vec_clear(e, D + 1);
    if (cancelled)
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    return NS_OK;
}
