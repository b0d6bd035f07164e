/*
 * helpers.h - small helpers shared by the cmocka test programs: the unit
 * database as a group fixture, temporary folders under $TMPDIR, writing and
 * reading whole files, and relative comparisons that name their source.
 *
 * Header only (static inline), because the Makefile builds each test program
 * from its one tests/test_<module>.c; a program that does not call a helper
 * pays nothing for it.  Failures stop the test through cmocka's assertions,
 * except check_rel, which counts them so that a table of cases reports every
 * bad row before the test fails.
 */
#ifndef ARRANK_TESTS_HELPERS_H
#define ARRANK_TESTS_HELPERS_H

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>
#include <dirent.h>
#include <gsl/gsl_errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "arrank/units.h"

/* ---- the unit database ------------------------------------------------- */

/* Made by units_setup, freed by units_teardown: the tests of a program share it. */
static arrank_units *units;

/* cmocka group setup: GSL's aborting handler off, the unit database loaded
   (-1, with the reason printed, when it cannot be). */
static inline int units_setup(void **state)
{
    (void)state;
    gsl_set_error_handler_off();
    arrank_error err;
    arrank_error_clear(&err);
    units = arrank_units_create(&err);
    if (!units)
        print_error("arrank_units_create: %s\n", err.message);
    return units ? 0 : -1;
}

/* cmocka group teardown for units_setup. */
static inline int units_teardown(void **state)
{
    (void)state;
    arrank_units_free(units);
    units = NULL;
    return 0;
}

/* ---- folders and files ------------------------------------------------- */

/* A new empty folder under $TMPDIR (else /tmp); temp_dir_remove removes it
   and frees the path. */
static inline char *temp_dir_make(void)
{
    const char *tmp = getenv("TMPDIR");
    char templ[4096];
    snprintf(templ, sizeof templ, "%s/arrank-test-XXXXXX", tmp && *tmp ? tmp : "/tmp");
    char *d = mkdtemp(templ);
    assert_non_null(d);
    char *path = strdup(d);
    assert_non_null(path);
    return path;
}

/* Remove path and everything below it (links are removed, not followed).
   Returns 0 when path itself is gone. */
static inline int tree_remove(const char *path)
{
    DIR *d = opendir(path);
    if (!d)
        return unlink(path);
    struct dirent *e;
    while ((e = readdir(d)) != NULL) {
        if (strcmp(e->d_name, ".") == 0 || strcmp(e->d_name, "..") == 0)
            continue;
        char sub[4096];
        if ((size_t)snprintf(sub, sizeof sub, "%s/%s", path, e->d_name) >= sizeof sub)
            continue; /* cannot be named, so it stays, and so does the folder */
        struct stat sb;
        if (lstat(sub, &sb) == 0 && S_ISDIR(sb.st_mode))
            tree_remove(sub);
        else
            unlink(sub);
    }
    closedir(d);
    return rmdir(path);
}

/* Remove a folder made by temp_dir_make with all it holds (it must be gone
   after) and free its path. */
static inline void temp_dir_remove(char *dir)
{
    assert_int_equal(tree_remove(dir), 0);
    free(dir);
}

/* Write text to dir/name, byte for byte. */
static inline void file_write(const char *dir, const char *name, const char *text)
{
    char path[4096];
    assert_true((size_t)snprintf(path, sizeof path, "%s/%s", dir, name) < sizeof path);
    FILE *f = fopen(path, "wb");
    assert_non_null(f);
    assert_int_equal(fwrite(text, 1, strlen(text), f), strlen(text));
    assert_int_equal(fclose(f), 0);
}

/* The whole of a file, not NUL-terminated, its size in *len; the caller frees it. */
static inline char *file_slurp(const char *path, size_t *len)
{
    FILE *f = fopen(path, "rb");
    assert_non_null(f);
    char *buf = NULL;
    size_t cap = 0, n = 0;
    for (;;) {
        if (n == cap) {
            cap = cap ? cap * 2 : 4096;
            buf = realloc(buf, cap);
            assert_non_null(buf);
        }
        size_t got = fread(buf + n, 1, cap - n, f);
        n += got;
        if (got == 0)
            break;
    }
    assert_int_equal(ferror(f), 0);
    fclose(f);
    *len = n;
    return buf;
}

/* ---- environment ------------------------------------------------------- */

/* Set name=value for a test; returns the old value (NULL: unset) for env_restore. */
static inline char *env_set(const char *name, const char *value)
{
    const char *old = getenv(name);
    char *saved = old ? strdup(old) : NULL;
    assert_true(!old || saved);
    assert_int_equal(setenv(name, value, 1), 0);
    return saved;
}

/* Put back what env_set found, and free it. */
static inline void env_restore(const char *name, char *saved)
{
    if (saved)
        assert_int_equal(setenv(name, saved, 1), 0);
    else
        assert_int_equal(unsetenv(name), 0);
    free(saved);
}

/* ---- comparisons ------------------------------------------------------- */

/* Relative difference, with an absolute floor for values that should be 0. */
static inline double rel_diff(double got, double want)
{
    const double scale = fabs(want) > 0 ? fabs(want) : 1.0;
    return fabs(got - want) / scale;
}

/* Fail the test unless got is within rel (relative; absolute when want is 0)
   of want; the message names what was compared and the source of want. */
static inline void check_close(double got, double want, double rel, const char *what,
                               const char *source)
{
    const double scale = fabs(want) > 0 ? fabs(want) : 1.0;
    if (!(fabs(got - want) <= rel * scale)) {
        print_error("%s: got %.17g, want %.17g (rel tol %g; source: %s)\n", what, got, want, rel,
                    source);
        fail();
    }
}

/* Count and print a failed comparison (with its source) without stopping. */
static inline int check_rel(double got, double want, double tol, const char *what,
                            const char *source)
{
    const double d = rel_diff(got, want);
    if (!(d <= tol)) {
        printf("# %s: got %.17g want %.17g (rel diff %.3g > %.3g) [%s]\n", what, got, want, d,
               tol, source);
        return 1;
    }
    return 0;
}

/* ---- deterministic noise: splitmix64 and Box-Muller (no global state) ---- */

/* The next 64 bits of splitmix64; the state is the caller's. */
static inline uint64_t splitmix(uint64_t *s)
{
    uint64_t z = (*s += 0x9E3779B97F4A7C15ull);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
    return z ^ (z >> 31);
}

/* Uniform on (0, 1), never 0 or 1: 53 bits, centred in their cell. */
static inline double uniform01(uint64_t *s)
{
    return ((double)(splitmix(s) >> 11) + 0.5) / 9007199254740992.0;
}

/* A standard normal variate by the Box-Muller transform. */
static inline double gauss(uint64_t *s)
{
    const double u1 = uniform01(s), u2 = uniform01(s);
    return sqrt(-2.0 * log(u1)) * cos(6.283185307179586 * u2);
}

/* The widest line of text on a terminal: code points, not bytes, colour
   sequences (ESC [ ... m) not counted. */
static inline size_t term_widest_line(const char *text)
{
    size_t best = 0, w = 0;
    for (const char *p = text; *p; p++) {
        if (*p == '\033' && p[1] == '[') {
            while (*p && *p != 'm')
                p++;
            if (!*p)
                break;
            continue;
        }
        if (*p == '\n') {
            w = 0;
            continue;
        }
        w += ((unsigned char)*p & 0xC0) != 0x80;
        best = w > best ? w : best;
    }
    return best;
}

#endif
