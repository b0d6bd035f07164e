/*
 * util.h - small helpers for the whole library (util.c), inside libarrank
 * only: strings and worker threads.
 */
#ifndef ARRANK_UTIL_H
#define ARRANK_UTIL_H

#include <stdarg.h>
#include <stddef.h>
#include <string.h>

#include "arrank/error.h"

/* strdup that returns NULL for NULL. */
char *arrank_strdup(const char *s);

/* "dir/name" in a new string (malloc; no second '/' when dir ends in one);
   NULL when out of memory. */
char *arrank_join_path(const char *dir, const char *name);

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

/* Worker w's share [*lo, *hi) of the items from..to-1 cut into `workers`
   contiguous shares in order (the writers' blocks: json.c, files.c); empty
   for a worker past the end. */
void arrank_workers_share(size_t from, size_t to, size_t workers, size_t w, size_t *lo,
                          size_t *hi);

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
   the _n form compares at most n bytes.  Inline: the readers call it per
   column and per metadata lookup. */
/* A blank inside a line: space or tab. */
static inline int arrank_is_blank(char c)
{
    return c == ' ' || c == '\t';
}

/* Trim blanks and line-end characters in place; returns the start. */
static inline char *arrank_trim(char *s)
{
    while (arrank_is_blank(*s) || *s == '\r' || *s == '\n')
        s++;
    size_t n = strlen(s);
    while (n > 0 && (arrank_is_blank(s[n - 1]) || s[n - 1] == '\r' || s[n - 1] == '\n'))
        s[--n] = '\0';
    return s;
}

static inline int arrank_ascii_lower(int c)
{
    return (c >= 'A' && c <= 'Z') ? c - 'A' + 'a' : c;
}

static inline int arrank_ascii_casecmp(const char *a, const char *b)
{
    for (;; a++, b++) {
        int ca = arrank_ascii_lower((unsigned char)*a), cb = arrank_ascii_lower((unsigned char)*b);
        if (ca != cb || ca == 0)
            return ca - cb;
    }
}

int arrank_ascii_casecmp_n(const char *a, const char *b, size_t n);

/* A NUL-terminated copy of the n bytes at s; NULL when out of memory. */
char *arrank_dup_range(const char *s, size_t n);

/* What follows the last '/' of path (all of it when there is none). */
const char *arrank_base_name(const char *path);

/* Grow *array (element size elem) so that it holds at least need elements,
   doubling from *cap (8 when 0).  0, or -1 when out of memory.  Inline
   when there is room (a call per data row). */
int arrank_grow_to(void **array, size_t *cap, size_t need, size_t elem);

static inline int arrank_grow(void **array, size_t *cap, size_t need, size_t elem)
{
    return need <= *cap ? 0 : arrank_grow_to(array, cap, need, elem);
}

/* Append a copy of text to a string list of *n entries (room *cap); -1 when
   out of memory.  arrank_list_free frees the entries and the list. */
int arrank_list_add(char ***list, size_t *n, size_t *cap, const char *text);
void arrank_list_free(char **list, size_t n);

/* Length of the line at s (up to end), without its line end, and the length
   of that line end in *term: 0 at the end of the text, 1 for LF or CR, 2 for
   CRLF.  Inline: a call per line of every file. */
static inline size_t arrank_line_length(const char *s, const char *end, size_t *term)
{
    /* memchr scans many bytes a step: a line ends at the first LF or CR */
    const char *nl = memchr(s, '\n', (size_t)(end - s));
    const char *stop = nl ? nl : end;
    const char *cr = stop > s ? memchr(s, '\r', (size_t)(stop - s)) : NULL;
    const char *q = cr ? cr : stop;
    *term = 0;
    if (q < end)
        *term = (*q == '\r' && q + 1 < end && q[1] == '\n') ? 2 : 1;
    return (size_t)(q - s);
}

/* Line (1-based) of the first NUL byte of the len bytes at data; 0 if none. */
long arrank_nul_line(const char *data, size_t len);

/* strerror(errnum) with a lowercase first letter (message style), into buf. */
void arrank_os_message(int errnum, char *buf, size_t n);

#endif
