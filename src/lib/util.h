/*
 * util.h - small helpers for the whole library (util.c), inside libarrank
 * only: strings and worker threads.
 */
#ifndef ARRANK_UTIL_H
#define ARRANK_UTIL_H

#include <stdarg.h>
#include <stddef.h>

#include "arrank/error.h"

/* strdup that returns NULL for NULL. */
char *arrank_strdup(const char *s);

/* printf into a new string (malloc); NULL when out of memory. */
char *arrank_strfmt(const char *f, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 1, 2)))
#endif
    ;
char *arrank_vstrfmt(const char *f, va_list ap)
#if defined(__GNUC__)
    __attribute__((format(printf, 1, 0)))
#endif
    ;

/* Append s (owned from here on) to the list *arr of *n strings.  0, or -1
   when s is NULL or memory runs out (s is freed). */
int arrank_strings_push(char ***arr, size_t *n, char *s);

/* ---- util.c: worker threads ---- */

/* How many workers to use for `items` independent pieces of work: the online
   CPUs (or the environment variable ARRANK_THREADS, a positive integer),
   at most 8, and at most one per min_items_per_worker items; at least 1. */
size_t arrank_workers_for(size_t items, size_t min_items_per_worker);

/* Tests: use n workers wherever there are n items (0: back to the default).
   Results never depend on the number of workers; this lets tests prove it. */
void arrank_workers_force(int n);

/* Run fn(ctx, w) for w = 0..n-1, w = 0 on the calling thread and the others on
   new threads, and return when all have finished.  A thread that cannot be
   started runs its share on the calling thread afterwards, so fn must take
   its work from a shared queue (an atomic counter), not a fixed slice. */
void arrank_workers_run(size_t n, void (*fn)(void *ctx, size_t worker), void *ctx);

/* Items first..n-1 on `workers` workers (at most 8): item(ctx, i, worker, err)
   for each, `chunk` items at a time from a shared counter, so the items must
   be independent; `worker` (0..workers-1) lets ctx keep per-worker state.
   Returns ARRANK_OK, or the failure with the lowest i with its error in
   *err, as a loop in order would.  progress (may be NULL) is called from the
   calling thread only, with `stage`, done rising to n (done starts at first). */
arrank_status arrank_workers_each(size_t first, size_t n, size_t chunk, size_t workers,
                                  arrank_status (*item)(void *ctx, size_t i, size_t worker,
                                                        arrank_error *err),
                                  void *ctx, arrank_progress_fn progress, void *progress_ctx,
                                  const char *stage, arrank_error *err);

#endif
