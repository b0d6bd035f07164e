/*
 * util.c - small helpers shared inside the library (internal.h): strings,
 * a chi-square tail, and the worker threads that read and analyse samples.
 */
#include <gsl/gsl_cdf.h>
#include <pthread.h>
#include <stdatomic.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "internal.h"

char *arrank_strdup(const char *s)
{
    if (!s)
        return NULL;
    size_t n = strlen(s) + 1;
    char *d = malloc(n);
    if (d)
        memcpy(d, s, n);
    return d;
}

double arrank_chi2_upper_p(double x, double k)
{
    return gsl_cdf_chisq_Q(x, k);
}

/* ---- workers ---------------------------------------------------------------- */

/* Upper bound on threads: the per-sample work scales to a few cores; more
   threads only add arenas and start-up. */
#define MAX_WORKERS 8

static atomic_int forced_workers; /* 0: not forced (arrank_workers_force) */

void arrank_workers_force(int n)
{
    atomic_store(&forced_workers, n > 0 ? n : 0);
}

size_t arrank_workers_for(size_t items, size_t min_items_per_worker)
{
    int forced = atomic_load(&forced_workers);
    long cpus = forced;
    if (!forced) {
        const char *env = getenv("ARRANK_THREADS");
        char *end = NULL;
        long v = env ? strtol(env, &end, 10) : 0;
        if (env && end != env && *end == '\0' && v > 0)
            cpus = v;
        else
            cpus = sysconf(_SC_NPROCESSORS_ONLN);
    }
    if (cpus < 1)
        cpus = 1;
    if (cpus > MAX_WORKERS)
        cpus = MAX_WORKERS;
    size_t by_items = min_items_per_worker ? items / min_items_per_worker : items;
    if (forced) /* tests: as many as asked wherever there is work for them */
        by_items = items;
    size_t w = (size_t)cpus < by_items ? (size_t)cpus : by_items;
    return w ? w : 1;
}

typedef struct {
    void (*fn)(void *ctx, size_t worker);
    void *ctx;
    size_t worker;
} worker_start;

static void *worker_main(void *arg)
{
    worker_start *ws = arg;
    ws->fn(ws->ctx, ws->worker);
    return NULL;
}

void arrank_workers_run(size_t n, void (*fn)(void *ctx, size_t worker), void *ctx)
{
    pthread_t th[MAX_WORKERS];
    worker_start ws[MAX_WORKERS];
    int started[MAX_WORKERS] = {0};
    if (n > MAX_WORKERS)
        n = MAX_WORKERS;
    for (size_t w = 1; w < n; w++) {
        ws[w] = (worker_start){fn, ctx, w};
        started[w] = pthread_create(&th[w], NULL, worker_main, &ws[w]) == 0;
    }
    fn(ctx, 0);
    for (size_t w = 1; w < n; w++) {
        if (started[w])
            pthread_join(th[w], NULL);
        else /* no thread to be had: the work is still done, here */
            fn(ctx, w);
    }
}
