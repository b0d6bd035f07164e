/*
 * test_reader_paths.c - the sample reader's two ways through a data line give
 * one answer.  sample.c splits a data line without a quote character itself
 * and hands every other line (and the header) to libcsv; here each input is
 * read both ways (arrank_sample_plain_lines, src/lib/sample_testing.h) and the
 * results must be identical: the same sample down to the bits of every number,
 * or the same error (status, path, line, column, message).
 *
 * Inputs: every file of the fuzzers' corpora (tests/fuzz/corpus/<harness>/),
 * every file and every folder of the bad-input corpus (tests/bad/), the demo
 * campaign, and a few thousand generated files made of the characters that
 * steer a CSV reader (delimiters, blanks, quotes, CR and LF, '#', digits) with
 * a fixed seed, so that a difference is reproducible.
 *
 * Run from the top of the source tree (tests/run.sh does).
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <dirent.h>
#include <gsl/gsl_errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "arrank/campaign.h"
#include "arrank/units.h"
#include "../src/lib/sample_testing.h"
#include "helpers.h"

#define DEMO "campaigns/zeolite-ni-screen"

/* Bitwise equality, so that NAN equals NAN and -0.0 differs from 0.0. */
static int same_bits(double a, double b)
{
    return memcmp(&a, &b, sizeof a) == 0;
}

static int same_text(const char *a, const char *b)
{
    return (!a && !b) || (a && b && strcmp(a, b) == 0);
}

static void same_list(char **a, size_t na, char **b, size_t nb, const char *what,
                      const char *where)
{
    if (na != nb)
        fail_msg("%s: %zu %s one way, %zu the other", where, na, what, nb);
    for (size_t i = 0; i < na; i++)
        if (!same_text(a[i], b[i]))
            fail_msg("%s: %s %zu differs: '%s' / '%s'", where, what, i, a[i], b[i]);
}

static void same_sample(const arrank_sample *a, const arrank_sample *b, const char *where)
{
    if (!same_text(a->id, b->id) || !same_text(a->path, b->path) ||
        !same_text(a->file, b->file) || !same_text(a->rate_unit_file, b->rate_unit_file) ||
        !same_text(a->temp_unit_file, b->temp_unit_file) ||
        a->basis != b->basis || a->rates_derived != b->rates_derived)
        fail_msg("%s: id, path, file, rate unit, basis or derived flag differ", where);
    if (!same_text(a->problem, b->problem) || a->problem_line != b->problem_line)
        fail_msg("%s: problem differs: '%s' / '%s'", where, a->problem ? a->problem : "(none)",
                 b->problem ? b->problem : "(none)");
    if (a->n_points != b->n_points)
        fail_msg("%s: %zu points one way, %zu the other", where, a->n_points, b->n_points);
    for (size_t i = 0; i < a->n_points; i++) {
        const arrank_point *p = &a->points[i], *q = &b->points[i];
        if (!same_bits(p->temp_K, q->temp_K) || !same_bits(p->rate, q->rate) ||
            !same_bits(p->rate_sd, q->rate_sd) || !same_bits(p->conversion, q->conversion) ||
            !same_bits(p->time_on_stream_s, q->time_on_stream_s) || p->run != q->run ||
            p->line != q->line || !same_bits(p->temp_file, q->temp_file))
            fail_msg("%s: point %zu differs", where, i);
    }
    same_list(a->runs, a->n_runs, b->runs, b->n_runs, "runs", where);
    same_list(a->notes, a->n_notes, b->notes, b->n_notes, "notes", where);
    if (a->n_meta != b->n_meta)
        fail_msg("%s: %zu metadata entries one way, %zu the other", where, a->n_meta, b->n_meta);
    for (size_t i = 0; i < a->n_meta; i++)
        if (!same_text(a->meta[i].key, b->meta[i].key) ||
            !same_text(a->meta[i].value, b->meta[i].value) ||
            !same_text(a->meta[i].source, b->meta[i].source) ||
            a->meta[i].line != b->meta[i].line)
            fail_msg("%s: metadata entry %zu differs", where, i);
}

static void same_error(arrank_status sa, const arrank_error *a, arrank_status sb,
                       const arrank_error *b, const char *where)
{
    if (sa != sb)
        fail_msg("%s: status %d one way, %d the other (%s / %s)", where, (int)sa, (int)sb,
                 a->message, b->message);
    if (sa == ARRANK_OK)
        return;
    if (a->status != b->status || strcmp(a->path, b->path) != 0 || a->line != b->line ||
        a->column != b->column || strcmp(a->message, b->message) != 0)
        fail_msg("%s: errors differ: %s:%ld:%ld: %s / %s:%ld:%ld: %s", where, a->path, a->line,
                 a->column, a->message, b->path, b->line, b->column, b->message);
}

/* Read data both ways with one report unit; 1 when it was a readable sample. */
static int both_ways_unit(const char *name, const char *data, size_t len,
                          const char *report_unit)
{
    arrank_sample fast, slow;
    arrank_error ef, es;
    arrank_error_clear(&ef);
    arrank_error_clear(&es);
    arrank_sample_plain_lines(1);
    arrank_status sf = arrank_sample_parse(name, data, len, units, report_unit, &fast, &ef);
    arrank_sample_plain_lines(0);
    arrank_status ss = arrank_sample_parse(name, data, len, units, report_unit, &slow, &es);
    arrank_sample_plain_lines(1);
    same_error(sf, &ef, ss, &es, name);
    if (sf == ARRANK_OK) {
        same_sample(&fast, &slow, name);
        arrank_sample_clear(&fast);
        arrank_sample_clear(&slow);
    }
    return sf == ARRANK_OK;
}

/* Both ways with the file's own rate unit and with a campaign's report unit. */
static int both_ways(const char *name, const char *data, size_t len)
{
    int ok = both_ways_unit(name, data, len, NULL);
    both_ways_unit(name, data, len, "mmol/(kg*s)");
    return ok;
}

static int is_dir(const char *path)
{
    struct stat sb;
    return stat(path, &sb) == 0 && S_ISDIR(sb.st_mode);
}

/* Every regular file directly in dir, read both ways; counts files and readable samples. */
static void files_both_ways(const char *dir, size_t *files, size_t *samples)
{
    DIR *d = opendir(dir);
    if (!d)
        fail_msg("cannot open %s", dir);
    struct dirent *e;
    while ((e = readdir(d)) != NULL) {
        if (e->d_name[0] == '.')
            continue;
        char path[1024];
        snprintf(path, sizeof path, "%s/%s", dir, e->d_name);
        if (is_dir(path))
            continue;
        size_t len;
        char *data = file_slurp(path, &len);
        *samples += (size_t)both_ways(path, data, len);
        (*files)++;
        free(data);
    }
    closedir(d);
}

/* The subfolders of root, each passed to fn. */
static size_t each_subfolder(const char *root, void (*fn)(const char *, void *), void *ctx)
{
    DIR *d = opendir(root);
    if (!d)
        fail_msg("cannot open %s", root);
    size_t n = 0;
    struct dirent *e;
    while ((e = readdir(d)) != NULL) {
        char path[1024];
        snprintf(path, sizeof path, "%s/%s", root, e->d_name);
        if (e->d_name[0] == '.' || !is_dir(path))
            continue;
        fn(path, ctx);
        n++;
    }
    closedir(d);
    return n;
}

typedef struct {
    size_t files, samples;
} counts;

static void folder_files(const char *dir, void *ctx)
{
    counts *c = ctx;
    files_both_ways(dir, &c->files, &c->samples);
}

static void corpus_files(void **state)
{
    (void)state;
    counts c = {0, 0};
    assert_int_equal(each_subfolder("tests/fuzz/corpus", folder_files, &c), 4);
    /* the corpora hold over fifty inputs, some of them readable samples */
    assert_true(c.files >= 50);
    assert_true(c.samples >= 5);
}

static void bad_files(void **state)
{
    (void)state;
    counts c = {0, 0};
    assert_true(each_subfolder("tests/bad", folder_files, &c) >= 30);
    assert_true(c.files >= 30);
}

static void demo_files(void **state)
{
    (void)state;
    size_t files = 0, samples = 0;
    files_both_ways(DEMO, &files, &samples);
    assert_int_equal(files, 15); /* 14 samples and campaign.ini */
    assert_int_equal(samples, 14);
}

/* A whole folder loaded both ways: same campaign or same error. */
static void load_both_ways(const char *dir, void *ctx)
{
    size_t *loaded = ctx;
    arrank_campaign *fast = NULL, *slow = NULL;
    arrank_error ef, es;
    arrank_error_clear(&ef);
    arrank_error_clear(&es);
    arrank_sample_plain_lines(1);
    arrank_status sf = arrank_campaign_load(dir, units, &fast, &ef);
    arrank_sample_plain_lines(0);
    arrank_status ss = arrank_campaign_load(dir, units, &slow, &es);
    arrank_sample_plain_lines(1);
    same_error(sf, &ef, ss, &es, dir);
    if (sf == ARRANK_OK) {
        if (fast->n_samples != slow->n_samples || !same_text(fast->rate_unit, slow->rate_unit))
            fail_msg("%s: sample count or report unit differ", dir);
        same_list(fast->notes, fast->n_notes, slow->notes, slow->n_notes, "notes", dir);
        for (size_t i = 0; i < fast->n_samples; i++)
            same_sample(&fast->samples[i], &slow->samples[i], fast->samples[i].path);
        (*loaded)++;
    }
    arrank_campaign_free(fast);
    arrank_campaign_free(slow);
}

static void folders(void **state)
{
    (void)state;
    size_t loaded = 0;
    assert_true(each_subfolder("tests/bad", load_both_ways, &loaded) >= 30);
    load_both_ways(DEMO, &loaded);
    assert_true(loaded >= 1); /* the demo at least */
}

/* xorshift64* (Vigna, "An experimental exploration of Marsaglia's xorshift
   generators, scrambled", ACM TOMS 2016): fixed seed, reproducible inputs. */
static uint64_t rng_state = 0x9E3779B97F4A7C15ULL;

static unsigned rnd(unsigned n)
{
    rng_state ^= rng_state >> 12;
    rng_state ^= rng_state << 25;
    rng_state ^= rng_state >> 27;
    return (unsigned)((rng_state * 2685821657736338717ULL) >> 33) % n;
}

/*
 * A file: optional metadata, a header from a small set (some with quotes),
 * then lines of pieces chosen at random.  Most lines look like data (numbers
 * between delimiters), with blanks, empty fields, extra or missing
 * delimiters, comments, quotes and every kind of line end mixed in.
 */
static size_t random_file(char *buf, size_t cap)
{
    static const char *const headers[] = {
        "T [degC],rate [umol/(g*s)]",
        "T [K];rate [mmol/(kg*s)];rate_sd [mmol/(kg*s)]",
        "T [degC]\trate [umol/(g*s)]\trun",
        " T [degC] , rate [umol/(g*s)] , note ",
        "\"T [degC]\",\"rate [umol/(g*s)]\",run",
        "T [degC];rate [umol/(g*s)];conversion [%];time_on_stream [h]",
    };
    static const char *const pieces[] = {
        "350", "412.5", "1.5e-3", "0.0021", "2,5", "-3", "0", "7.25", "1e400", "abc",
        "nan", "inf", "A", "r1", ",", ";", "\t", " ", "  ", "\"", "\"\"", "#", "\r", "\n",
        "\r\n", "x", "0x10", "12.", ".5", "+4",
    };
    const char *const ends[] = {"\n", "\r\n", "\r", "\n\n", " \n", "\t\r\n"};
    const char delims[] = {',', ';', '\t', ','};
    size_t n = 0;
#define PUT(str)                                                                                \
    do {                                                                                        \
        const char *s_ = (str);                                                                 \
        size_t l_ = strlen(s_);                                                                 \
        if (n + l_ < cap) {                                                                     \
            memcpy(buf + n, s_, l_);                                                            \
            n += l_;                                                                            \
        }                                                                                       \
    } while (0)
    if (rnd(3) == 0)
        PUT("# sample = R\n# note = random\n");
    unsigned h = rnd(sizeof headers / sizeof headers[0]);
    PUT(headers[h]);
    PUT(ends[rnd(3)]);
    char delim = h == 1 || h == 5 ? ';' : h == 2 ? '\t' : ',';
    unsigned columns = h == 0 ? 2 : h == 5 ? 4 : 3;
    unsigned lines = 1 + rnd(8);
    for (unsigned l = 0; l < lines; l++) {
        if (rnd(12) == 0) { /* noise line */
            unsigned k = 1 + rnd(12);
            for (unsigned j = 0; j < k; j++)
                PUT(pieces[rnd(sizeof pieces / sizeof pieces[0])]);
        } else { /* data-like line: numbers between delimiters, sometimes blank-padded */
            unsigned fields = rnd(6) ? columns : 1 + rnd(5);
            for (unsigned j = 0; j < fields; j++) {
                if (j) {
                    char d[2] = {rnd(30) ? delim : delims[rnd(4)], '\0'};
                    PUT(d);
                }
                if (rnd(6) == 0)
                    PUT(rnd(2) ? " " : "\t");
                if (rnd(30))
                    PUT(pieces[rnd(30) ? rnd(4) : rnd(10)]);
                if (rnd(6) == 0)
                    PUT(rnd(2) ? "  " : "\t");
            }
        }
        if (l + 1 < lines || rnd(2))
            PUT(ends[rnd(sizeof ends / sizeof ends[0])]);
    }
#undef PUT
    return n;
}

static void generated_files(void **state)
{
    (void)state;
    char buf[2048];
    size_t readable = 0;
    const size_t n_files = 20000;
    for (size_t i = 0; i < n_files; i++) {
        size_t len = random_file(buf, sizeof buf);
        char name[64];
        snprintf(name, sizeof name, "gen-%zu.csv", i);
        /* DUMP_GEN=gen-N.csv writes that input to stdout, to reproduce a difference */
        if (getenv("DUMP_GEN") && strcmp(getenv("DUMP_GEN"), name) == 0)
            fwrite(buf, 1, len, stdout);
        readable += (size_t)both_ways_unit(name, buf, len, NULL);
    }
    printf("# %zu of %zu generated files readable\n", readable, n_files);
    /* both outcomes must be exercised, or the comparison proves little */
    assert_true(readable >= n_files / 20);
    assert_true(readable <= n_files - n_files / 20);
}

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(corpus_files), cmocka_unit_test(bad_files),
        cmocka_unit_test(demo_files),   cmocka_unit_test(folders),
        cmocka_unit_test(generated_files),
    };
    return cmocka_run_group_tests(tests, units_setup, units_teardown);
}
