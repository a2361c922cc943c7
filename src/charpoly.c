/* charpoly.c — det(xI - M) prime by prime, in parallel threads; the bound
 * and the reason this module exists are stated in charpoly.h. */
#include <errno.h>
#include <pthread.h>
#include <time.h>
#include <unistd.h>

#include <flint/nmod_mat.h>
#include <flint/nmod_poly.h>
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

slong charpoly_num_primes(const fmpz_mat_t M)
{
    /* primes above 2^62 each add more than 62 bits; the product must reach
       2^(bits + 1) > 2B */
    return (charpoly_bound_bits(M) + 1) / 62 + 1;
}

/* The work shared by the calling thread and the workers of one call. */
typedef struct {
    const fmpz_mat_struct *M;
    const mp_limb_t *primes;
    nmod_poly_struct *res; /* one per prime, initialised by the caller */
    slong nprimes, next, done;
    int stop;
    pthread_mutex_t lock;
    pthread_cond_t cond;
} job_struct;

static void charpoly_mod(nmod_poly_t res, const fmpz_mat_t M, mp_limb_t p)
{
    nmod_mat_t Mp;
    slong d = fmpz_mat_nrows(M);
    nmod_mat_init(Mp, d, d, p);
    fmpz_mat_get_nmod_mat(Mp, M);
    nmod_mat_charpoly(res, Mp);
    nmod_mat_clear(Mp);
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
        charpoly_mod(J->res + i, J->M, J->primes[i]);
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
    J.nprimes = charpoly_num_primes(M);
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
            charpoly_mod(J.res + i, M, primes[i]);
            if (i + 1 < J.nprimes)
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
        for (slong i = 0; i < J.nprimes; i++) {
            fmpz_poly_CRT_ui(cp, cp, m, J.res + i, 1);
            fmpz_mul_ui(m, m, primes[i]);
        }
        fmpz_clear(m);
    }
    for (slong i = 0; i < J.nprimes; i++)
        nmod_poly_clear(J.res + i);
    flint_free(J.res);
    flint_free(primes);
    if (cancelled)
        return nserr_set(err, NS_ERR_CANCELLED, 0, 0, "cancelled");
    return NS_OK;
}
