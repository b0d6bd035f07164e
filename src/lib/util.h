/*
 * util.h - small helpers for the whole library (util.c), inside libarrank
 * only: strings and worker threads.
 */
#ifndef ARRANK_UTIL_H
#define ARRANK_UTIL_H

#include <stddef.h>

#include "arrank/error.h"

/* strdup that returns NULL for NULL. */
char *arrank_strdup(const char *s);

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

/* ---- util.c: text of the input files (the sample and campaign.ini readers) ---- */

/* Case-insensitive comparison of ASCII letters, independent of the locale;
   the _n form compares at most n bytes. */
int arrank_ascii_casecmp(const char *a, const char *b);
int arrank_ascii_casecmp_n(const char *a, const char *b, size_t n);

/* A NUL-terminated copy of the n bytes at s; NULL when out of memory. */
char *arrank_dup_range(const char *s, size_t n);

/* What follows the last '/' of path (all of it when there is none). */
const char *arrank_base_name(const char *path);

/* Grow *array (element size elem) so that it holds at least need elements,
   doubling from *cap (8 when 0).  0, or -1 when out of memory. */
int arrank_grow(void **array, size_t *cap, size_t need, size_t elem);

/* Append a copy of text to a string list of *n entries (room *cap); -1 when
   out of memory.  arrank_list_free frees the entries and the list. */
int arrank_list_add(char ***list, size_t *n, size_t *cap, const char *text);
void arrank_list_free(char **list, size_t n);

/* Length of the line at s (up to end), without its line end, and the length
   of that line end in *term: 0 at the end of the text, 1 for LF or CR, 2 for
   CRLF. */
size_t arrank_line_length(const char *s, const char *end, size_t *term);

/* Line (1-based) of the first NUL byte of the len bytes at data; 0 if none. */
long arrank_nul_line(const char *data, size_t len);

/* strerror(errnum) with a lowercase first letter (message style), into buf. */
void arrank_os_message(int errnum, char *buf, size_t n);

#endif
