/*
 * util.c - small helpers shared inside the library (util.h): strings, the
 * lines of input text, and the worker threads that read and analyse samples.
 */
#include <pthread.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdatomic.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "number.h"
#include "util.h"

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

char *arrank_join_path(const char *dir, const char *name)
{
    size_t nd = strlen(dir), nn = strlen(name);
    int slash = nd > 0 && dir[nd - 1] != '/';
    char *p = malloc(nd + (size_t)slash + nn + 1);
    if (!p)
        return NULL;
    memcpy(p, dir, nd);
    if (slash)
        p[nd] = '/';
    memcpy(p + nd + (size_t)slash, name, nn + 1);
    return p;
}

char *arrank_vstrfmt(const char *f, va_list ap)
{
    /* One formatting pass into a stack buffer covers every message of the
       diagnosis; a longer one (a long sample name) is formatted again at its
       length. */
    char small[512];
    va_list ap2;
    va_copy(ap2, ap);
    int n = vsnprintf(small, sizeof small, f, ap2);
    va_end(ap2);
    if (n < 0)
        return NULL;
    char *s = malloc((size_t)n + 1);
    if (!s)
        return NULL;
    if ((size_t)n < sizeof small)
        memcpy(s, small, (size_t)n + 1);
    else
        vsnprintf(s, (size_t)n + 1, f, ap);
    return s;
}

char *arrank_strfmt(const char *f, ...)
{
    va_list ap;
    va_start(ap, f);
    char *s = arrank_vstrfmt(f, ap);
    va_end(ap);
    return s;
}

int arrank_strings_push(char ***arr, size_t *n, char *s)
{
    if (!s)
        return -1;
    char **a = realloc(*arr, (*n + 1) * sizeof *a);
    if (!a) {
        free(s);
        return -1;
    }
    a[(*n)++] = s;
    *arr = a;
    return 0;
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

void arrank_workers_share(size_t from, size_t to, size_t workers, size_t w, size_t *lo,
                          size_t *hi)
{
    size_t share = (to - from + workers - 1) / workers;
    *lo = from + w * share < to ? from + w * share : to;
    *hi = *lo + share < to ? *lo + share : to;
}

typedef struct {
    void (*fn)(void *ctx, size_t worker);
    void *ctx;
    size_t worker;
} worker_start;

/* Every worker runs in the C locale, rounding to nearest, whatever the host
   program set: the library's numbers never depend on it (number.h). */
static void run_in_c(void (*fn)(void *ctx, size_t worker), void *ctx, size_t worker)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    fn(ctx, worker);
    arrank_numbers_c_leave(&env);
}

static void *worker_main(void *arg)
{
    worker_start *ws = arg;
    run_in_c(ws->fn, ws->ctx, ws->worker);
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
    run_in_c(fn, ctx, 0);
    for (size_t w = 1; w < n; w++) {
        if (started[w])
            pthread_join(th[w], NULL);
        else /* no thread to be had: the work is still done, here */
            run_in_c(fn, ctx, w);
    }
}

/*
 * The ordered work queue behind arrank_workers_each (internal.h).  Each
 * worker takes the next `chunk` items from a shared counter.  The error
 * reported is the one a loop in order would give: the failure with the
 * lowest index.  Once an item has failed no worker starts a chunk beyond it,
 * and every chunk before it is still finished, so the lowest failure is
 * always found.
 */
typedef struct {
    size_t n, chunk;
    arrank_status (*item)(void *ctx, size_t i, size_t worker, arrank_error *err);
    void *ctx;
    arrank_progress_fn progress;
    void *progress_ctx;
    const char *stage;
    atomic_size_t next, done, first_fail;
    size_t reported; /* last count given to progress (worker 0 only) */
    size_t fail_at[MAX_WORKERS];
    arrank_error fail_err[MAX_WORKERS];
} each_job;

static void each_worker(void *ctx, size_t w)
{
    each_job *j = ctx;
    j->fail_at[w] = SIZE_MAX;
    for (;;) {
        size_t start = atomic_fetch_add(&j->next, j->chunk);
        if (start >= j->n || start > atomic_load(&j->first_fail))
            break;
        size_t end = start + j->chunk < j->n ? start + j->chunk : j->n;
        for (size_t i = start; i < end; i++) {
            arrank_error e;
            arrank_error_clear(&e);
            if (j->item(j->ctx, i, w, &e) != ARRANK_OK) {
                if (i < j->fail_at[w]) {
                    j->fail_at[w] = i;
                    j->fail_err[w] = e;
                }
                size_t seen = atomic_load(&j->first_fail);
                while (i < seen && !atomic_compare_exchange_weak(&j->first_fail, &seen, i)) {
                }
                break; /* the rest of this chunk comes after the failure */
            }
        }
        size_t done = atomic_fetch_add(&j->done, end - start) + (end - start);
        if (w == 0 && j->progress) { /* progress from the calling thread only */
            j->reported = done < j->n ? done : j->n;
            j->progress(j->progress_ctx, j->stage, j->reported, j->n);
        }
    }
}

arrank_status arrank_workers_each(size_t first, size_t n, size_t chunk, size_t workers,
                                  arrank_status (*item)(void *ctx, size_t i, size_t worker,
                                                        arrank_error *err),
                                  void *ctx, arrank_progress_fn progress, void *progress_ctx,
                                  const char *stage, arrank_error *err)
{
    if (first >= n)
        return ARRANK_OK;
    each_job *j = calloc(1, sizeof *j);
    if (!j)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    j->n = n;
    j->chunk = chunk ? chunk : 1;
    j->item = item;
    j->ctx = ctx;
    j->progress = progress;
    j->progress_ctx = progress_ctx;
    j->stage = stage;
    atomic_init(&j->next, first);
    atomic_init(&j->done, first);
    atomic_init(&j->first_fail, SIZE_MAX);
    if (workers < 1)
        workers = 1;
    if (workers > MAX_WORKERS)
        workers = MAX_WORKERS;
    arrank_workers_run(workers, each_worker, j);
    size_t worst = SIZE_MAX, who = 0;
    for (size_t w = 0; w < workers; w++)
        if (j->fail_at[w] < worst) {
            worst = j->fail_at[w];
            who = w;
        }
    arrank_status st = ARRANK_OK;
    if (worst != SIZE_MAX) {
        *err = j->fail_err[who];
        st = err->status;
    } else if (progress && j->reported < n) {
        progress(progress_ctx, stage, n, n);
    }
    free(j);
    return st;
}

/* ---- text of the input files ------------------------------------------------ */

int arrank_ascii_casecmp_n(const char *a, const char *b, size_t n)
{
    for (size_t i = 0; i < n; i++) {
        int ca = arrank_ascii_lower((unsigned char)a[i]), cb = arrank_ascii_lower((unsigned char)b[i]);
        if (ca != cb || ca == 0)
            return ca - cb;
    }
    return 0;
}

char *arrank_dup_range(const char *s, size_t n)
{
    char *d = malloc(n + 1);
    if (!d)
        return NULL;
    memcpy(d, s, n);
    d[n] = '\0';
    return d;
}

const char *arrank_base_name(const char *path)
{
    const char *slash = strrchr(path, '/');
    return slash ? slash + 1 : path;
}

int arrank_grow_to(void **array, size_t *cap, size_t need, size_t elem)
{
    if (need <= *cap)
        return 0;
    size_t n = *cap ? *cap : 8;
    while (n < need) {
        if (n > SIZE_MAX / 2 / elem)
            return -1;
        n *= 2;
    }
    void *p = realloc(*array, n * elem);
    if (!p)
        return -1;
    *array = p;
    *cap = n;
    return 0;
}

int arrank_list_add(char ***list, size_t *n, size_t *cap, const char *text)
{
    if (arrank_grow((void **)list, cap, *n + 1, sizeof **list) != 0)
        return -1;
    char *copy = arrank_strdup(text);
    if (!copy)
        return -1;
    (*list)[(*n)++] = copy;
    return 0;
}

void arrank_list_free(char **list, size_t n)
{
    for (size_t i = 0; i < n; i++)
        free(list[i]);
    free(list);
}

long arrank_nul_line(const char *data, size_t len)
{
    const char *nul = memchr(data, '\0', len);
    if (!nul)
        return 0;
    long line = 1;
    for (const char *q = data; q < nul; q++)
        if (*q == '\n' || (*q == '\r' && !(q + 1 < nul && q[1] == '\n')))
            line++;
    return line;
}

void arrank_os_message(int errnum, char *buf, size_t n)
{
    snprintf(buf, n, "%s", strerror(errnum));
    if (buf[0] >= 'A' && buf[0] <= 'Z' && !(buf[1] >= 'A' && buf[1] <= 'Z'))
        buf[0] = (char)arrank_ascii_lower((unsigned char)buf[0]);
}
