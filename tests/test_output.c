/*
 * test_output.c - the rows of the text table (output.c) against the same rows
 * built here with printf, cell by cell, the way the layout is specified:
 * every number with snprintf ("%.1f", "%.2f", "%.0f", "%.3f", "%.3g"), each
 * cell cut at 127 bytes as a 128-byte snprintf buffer cuts it, padded with
 * "%-*s" / "%*s", and the sample name escaped (arrank/text.h: control
 * characters as \n, \033, bytes that are not UTF-8 as \xHH) and shortened to
 * the column by code points.  output.c writes rows in place with
 * number.c's formatters, takes a shortcut for plain ASCII names, and
 * formats the rows on worker threads; this checks all of it byte for byte.
 *
 * The analyses are made up in memory, not fitted, so the values can range
 * where no fit would take them: names of every kind (UTF-8, control
 * characters, stray continuation bytes, exactly the column width and one
 * more), rates over 24 decades, non-finite ones, values too large for the
 * fast formatters (the whole cell then comes from snprintf and is cut),
 * error rows, excluded points, every flag.  Invented values, not measurements.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <gsl/gsl_errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/analysis.h"
#include "arrank/campaign.h"
#include "arrank/fit.h"
#include "arrank/output.h"
#include "arrank/analysis_stats.h"
#include "arrank/text.h"
#include "arrank/verdicts.h"
#include "../src/lib/util.h"
#include "../src/lib/json_testing.h"
#include "helpers.h"

#define NAME_MAX_COLS 28 /* the table's widest name column (output.c NAME_WIDTH_MAX) */

/* Fixed-seed noise: helpers.h's splitmix64. */
static uint64_t rng_state = 0x9E3779B97F4A7C15ull;

static uint64_t rng_next(void)
{
    return splitmix(&rng_state);
}

/* 10^u, u uniform in [lo, hi]. */
static double log_uniform(double lo, double hi)
{
    return pow(10.0, lo + (hi - lo) * uniform01(&rng_state));
}

/* A value that is now and then non-finite or too large for the fast formatters. */
static double odd_sometimes(double v)
{
    switch (rng_next() % 40) {
    case 0: return NAN;
    case 1: return INFINITY;
    case 2: return -INFINITY;
    case 3: return v * 1e45; /* %.1f of it is more than 47 bytes */
    case 4: return -v * 1e60;
    case 5: return 0.0;
    case 6: return -0.0;
    default: return v;
    }
}

/* A name of a kind chosen at random, into buf (size >= 200). */
static void random_name(char *buf, int short_only)
{
    static const char *const multi[] = {"\xC3\xA9", "\xCE\xB1", "\xE4\xB8\xAD", "\xE2\x82\xAC",
                                        "\xF0\x9F\x94\xA5", "\xC2\xB5"};
    size_t n = 0;
    int kind = (int)(rng_next() % 5);
    size_t len = short_only ? 1 + rng_next() % 12 : 1 + rng_next() % 40;
    if (!short_only && rng_next() % 6 == 0)
        len = NAME_MAX_COLS + (rng_next() % 3) - 1; /* the limit, one under, one over */
    for (size_t i = 0; i < len && n < 180; i++) {
        uint64_t r = rng_next();
        if (kind <= 1 || r % 10 < 6) {
            buf[n++] = (char)(0x20 + r % 95); /* printable ASCII, space included */
        } else if (kind == 2 || r % 10 < 8) {
            const char *m = multi[(r >> 8) % (sizeof multi / sizeof multi[0])];
            memcpy(buf + n, m, strlen(m));
            n += strlen(m);
        } else if (kind == 3) {
            static const char ctl[] = {0x01, 0x09, 0x0A, 0x1B, 0x1F, 0x7F};
            buf[n++] = ctl[(r >> 8) % sizeof ctl];
        } else {
            buf[n++] = (char)(0x80 + (r >> 8) % 64); /* a stray continuation byte */
        }
    }
    buf[n] = '\0';
}

/* Terminal columns of UTF-8 text: a CJK character or an emoji takes two
   (arrank_text_columns, held to Python's unicodedata in test_text.c). */
static size_t columns(const char *s)
{
    return arrank_text_columns(s, strlen(s));
}

/*
 * The name cell as specified: at most width columns, a longer name cut to
 * the characters that fit in width - 3 columns and "..." (a character keeps
 * the continuation bytes that follow it), at most 116 bytes of the name (the
 * table's 120-byte name buffer), control characters as '?', then spaces up
 * to width columns.
 */
static void expected_name(FILE *out, const char *raw, size_t width)
{
    /* control characters and bytes that are not UTF-8 escaped first
       (arrank/text.h): "a\\nb" for a name with a line break */
    char s[1024];
    arrank_text_escape(raw, s, sizeof s);
    size_t cols = columns(s), keep = cols > width ? width - 3 : cols, kept = 0, bytes = 0;
    char shown[200];
    for (const char *p = s; *p && bytes < 116; p++) {
        unsigned char c = (unsigned char)*p;
        if ((c & 0xC0) != 0x80) {
            size_t len = 1;
            while (((unsigned char)p[len] & 0xC0) == 0x80)
                len++;
            size_t w = arrank_text_columns(p, len);
            if (kept + w > keep)
                break;
            kept += w;
        }
        shown[bytes++] = (char)c;
    }
    shown[bytes] = '\0';
    if (cols > width)
        strcat(shown, "...");
    fputs(shown, out);
    for (size_t w = columns(shown); w < width; w++)
        fputc(' ', out);
}

/* A cell as snprintf into 128 bytes makes it, then left- or right-aligned. */
__attribute__((format(printf, 4, 5)))
static void cell(FILE *out, size_t width, int right, const char *fmt, ...)
{
    char text[128];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(text, sizeof text, fmt, ap);
    va_end(ap);
    fprintf(out, right ? "%*s" : "%-*s", (int)width, text);
}

/* "%.3g", or "-" when not finite: a rate as the table shows it. */
static const char *rate_text(char *buf, double v)
{
    if (!isfinite(v))
        return "-";
    snprintf(buf, 48, "%.3g", v);
    return buf;
}

typedef struct {
    arrank_campaign campaign;
    arrank_analysis a;
    arrank_sample *samples;
    struct arrank_sample_stats *stats;
    struct arrank_rank_stats rank_stats;
} fake;

/* A made-up analysis of n samples; ranked: some of them ranked in a random order. */
static void make_fake(fake *fk, size_t n, int ranked, int with_T, int with_stats, size_t boot,
                      int short_names)
{
    memset(fk, 0, sizeof *fk);
    fk->campaign.name = "made-up";
    fk->campaign.title = "Made-up campaign (test)";
    fk->campaign.rate_unit = rng_next() % 2 ? "umol/(g*s)" : "mol/(m^2*s)";
    fk->campaign.basis = ARRANK_BASIS_MASS;
    fk->campaign.n_samples = n;
    arrank_analysis *a = &fk->a;
    a->campaign = &fk->campaign;
    a->options = arrank_options_defaults();
    a->options.operating_temp_K = with_T ? 400.0 + 300.0 * uniform01(&rng_state) : NAN;
    a->options.confidence = 0.8 + 0.19 * uniform01(&rng_state);
    a->options.bootstrap = boot;
    a->n_results = n;
    a->results = calloc(n, sizeof *a->results);
    fk->samples = calloc(n, sizeof *fk->samples);
    fk->stats = calloc(n, sizeof *fk->stats);
    a->order = calloc(n, sizeof *a->order);
    assert_non_null(a->results);
    assert_non_null(fk->samples);
    assert_non_null(fk->stats);
    assert_non_null(a->order);
    for (size_t i = 0; i < n; i++) {
        arrank_sample *s = &fk->samples[i];
        char name[200];
        random_name(name, short_names);
        s->id = strdup(name);
        assert_non_null(s->id);
        s->n_points = 3 + rng_next() % 30;
        arrank_result *res = &a->results[i];
        res->sample = s;
        res->flags = (unsigned)(rng_next() % 3 == 0 ? rng_next() % (1u << ARRANK_FLAG_COUNT) : 0);
        if (rng_next() % 12 == 0) {
            res->error = strdup(rng_next() % 2 ? "only 2 data points; a fit needs 3"
                                               : "'x' is not a number in column 'T'");
            assert_non_null(res->error);
            s->skipped = rng_next() % 2; /* a file the reader could not read */
            continue;
        }
        arrank_arrhenius *f = &res->fit;
        f->n = rng_next() % 4 == 0 ? s->n_points - 1 - rng_next() % 2 : s->n_points;
        f->dof = (double)f->n - 2.0;
        f->weighted = (int)(rng_next() % 2);
        f->resid_sd = log_uniform(-3.0, 0.5);
        f->chi2_dof = f->weighted ? f->resid_sd * f->resid_sd : NAN;
        /* the model in force: now and then the modified form's n - 3 */
        res->interval_dof = f->dof - (double)(rng_next() % 2);
        res->interval_t = arrank_t_quantile(a->options.confidence, res->interval_dof);
        /* the pipeline's quantile (analysis.c), which the table reads */
        res->t_quantile = arrank_t_quantile(a->options.confidence, f->dof);
        f->T_min_K = odd_sometimes(300.0 + 400.0 * uniform01(&rng_state));
        f->T_max_K = odd_sometimes(f->T_min_K + 200.0 * uniform01(&rng_state));
        f->ea_J_mol = odd_sometimes(log_uniform(3.0, 5.7) * (rng_next() % 10 ? 1.0 : -1.0));
        f->ea_se_J_mol = odd_sometimes(log_uniform(1.0, 4.5));
        f->ln_A = odd_sometimes(-30.0 + 90.0 * uniform01(&rng_state));
        f->ln_A_se = odd_sometimes(log_uniform(-3.0, 1.0));
        res->has_prediction = with_T;
        double rate = log_uniform(-12.0, 12.0);
        res->at_T.rate = odd_sometimes(rate);
        res->at_T.rate_lo = odd_sometimes(rate * (1.0 - 0.5 * uniform01(&rng_state)));
        res->at_T.rate_hi = odd_sometimes(rate * (1.0 + 2.0 * uniform01(&rng_state)));
        /* how far outside the range: none, under a kelvin, around 9.95 K, far */
        if (res->flags & ARRANK_FLAG_EXTRAPOLATED) {
            static const double far_K[] = {0.0, 0.2, 9.94, 9.96, 12.0, 150.5};
            res->at_T.extrapolation_K = far_K[rng_next() % 6];
            res->at_T.extrapolation_rel = res->at_T.extrapolation_K / 80.0;
        }
        struct arrank_sample_stats *ss = &fk->stats[i];
        ss->p_best = rng_next() % 8 ? uniform01(&rng_state) * (rng_next() % 2 ? 1.0 : 1e-4) : NAN;
        ss->group = (int)(rng_next() % 60);
        ss->has_bootstrap = boot > 0 && rng_next() % 5 != 0;
        ss->rate_lo_boot = odd_sometimes(rate * (1.0 - 0.4 * uniform01(&rng_state)));
        ss->rate_hi_boot = odd_sometimes(rate * (1.0 + 1.5 * uniform01(&rng_state)));
        if (rng_next() % 10)
            res->stats = ss;
    }
    /* the ranked ones, best first: fitted samples in a random order */
    for (size_t i = 0; ranked && i < n; i++)
        if (!a->results[i].error && rng_next() % 7 != 0)
            a->order[a->n_ranked++] = i;
    for (size_t i = a->n_ranked; i > 1; i--) {
        size_t j = rng_next() % i, t = a->order[i - 1];
        a->order[i - 1] = a->order[j];
        a->order[j] = t;
    }
    for (size_t k = 0; k < a->n_ranked; k++)
        a->results[a->order[k]].rank = (int)k + 1;
    if (with_stats && a->n_ranked) {
        fk->rank_stats.draws = 1000;
        snprintf(fk->rank_stats.compensation.sentence,
                 sizeof fk->rank_stats.compensation.sentence, "%s",
                 "No line of ln A on Ea to explain in this made-up set.");
        a->rank_stats = &fk->rank_stats;
    }
}

static void free_fake(fake *fk)
{
    for (size_t i = 0; i < fk->a.n_results; i++) {
        free(fk->samples[i].id);
        free(fk->a.results[i].error);
    }
    free(fk->a.results);
    free(fk->a.order);
    free(fk->samples);
    free(fk->stats);
}

/* The flags as the table lists them: the extrapolated one with how far
   ("%.1f" under 9.95 K, else "%.0f"). */
static void expected_flags(FILE *out, const arrank_result *res)
{
    unsigned flags = res->flags;
    int any = 0;
    for (unsigned bit = 1; bit < (1u << ARRANK_FLAG_COUNT); bit <<= 1)
        if (flags & bit) {
            double out_K = res->at_T.extrapolation_K;
            if (bit == ARRANK_FLAG_EXTRAPOLATED && res->has_prediction && out_K > 0)
                fprintf(out, "%sextrapolated %.*f K", any++ ? ", " : "", out_K < 9.95 ? 1 : 0,
                        out_K);
            else
                fprintf(out, "%s%s", any++ ? ", " : "", arrank_flag_name(bit));
        }
    if (!any)
        fputc('-', out);
}

/* The table's rows for fk, built with printf (caller frees). */
static char *expected_rows(const fake *fk)
{
    const arrank_analysis *a = &fk->a;
    const arrank_options *o = &a->options;
    int have_T = isfinite(o->operating_temp_K), have_stats = a->rank_stats != NULL;
    size_t name_w = 6; /* "sample" */
    for (size_t i = 0; i < a->n_results; i++) {
        char esc[1024];
        arrank_text_escape(a->results[i].sample->id, esc, sizeof esc);
        if (columns(esc) > name_w)
            name_w = columns(esc);
    }
    if (name_w > NAME_MAX_COLS)
        name_w = NAME_MAX_COLS;
    char head[200];
    snprintf(head, sizeof head, "ln A [ln(%s)]", fk->campaign.rate_unit);
    size_t w_lna = columns(head) > 22 ? columns(head) : 22;
    snprintf(head, sizeof head, "rate at %.2f K [%s]", o->operating_temp_K,
             fk->campaign.rate_unit);
    size_t w_rate = columns(head) > 26 ? columns(head) : 26;

    char *text = NULL;
    size_t len = 0;
    FILE *out = open_memstream(&text, &len);
    assert_non_null(out);
    size_t *shown = calloc(a->n_results, sizeof *shown), k = 0;
    assert_non_null(shown);
    for (; k < a->n_ranked; k++)
        shown[k] = a->order[k];
    for (size_t i = 0; i < a->n_results; i++)
        if (!a->results[i].rank)
            shown[k++] = i;
    for (k = 0; k < a->n_results; k++) {
        const arrank_result *res = &a->results[shown[k]];
        const arrank_arrhenius *f = &res->fit;
        const struct arrank_sample_stats *ss = res->rank ? res->stats : NULL;
        if (a->n_ranked) {
            res->rank ? cell(out, 4, 1, "%d", res->rank) : cell(out, 4, 1, "-");
            fputs("  ", out);
            if (have_stats) {
                ss && isfinite(ss->p_best) ? cell(out, 7, 1, "%.3f", ss->p_best)
                                           : cell(out, 7, 1, "-");
                fputs("  ", out);
                ss && ss->group > 0 ? cell(out, 5, 1, "%d", ss->group) : cell(out, 5, 1, "-");
                fputs("  ", out);
            }
        }
        expected_name(out, res->sample->id, name_w);
        fputs("  ", out);
        if (res->error) {
            cell(out, 5, 1, "%zu", res->sample->n_points);
            fprintf(out, "  %s: %s\n", res->sample->skipped ? "file not used" : "not fitted",
                    res->error);
            continue;
        }
        double t = arrank_t_quantile(o->confidence, f->dof);
        f->n < res->sample->n_points ? cell(out, 5, 1, "%zu/%zu", f->n, res->sample->n_points)
                                     : cell(out, 5, 1, "%zu", f->n);
        fputs("  ", out);
        if (!o->rank) { /* fit's table: the line's dof (table.c) */
            isfinite(f->dof) && f->dof >= 0 ? cell(out, 3, 1, "%.0f", f->dof)
                                             : cell(out, 3, 1, "-");
            fputs("  ", out);
        }
        cell(out, 11, 0, "%.0f-%.0f", f->T_min_K, f->T_max_K);
        fputs("  ", out);
        double ea = f->ea_J_mol / 1e3, se = f->ea_se_J_mol / 1e3;
        cell(out, 22, 0, "%.1f [%.1f, %.1f]", ea, ea - t * se, ea + t * se);
        fputs("  ", out);
        cell(out, w_lna, 0, "%.2f [%.2f, %.2f]", f->ln_A, f->ln_A - t * f->ln_A_se,
             f->ln_A + t * f->ln_A_se);
        if (!o->rank) { /* and the scatter: ln r's SD in %, or sqrt(chi2/dof) in "sd" */
            fputs("  ", out);
            double sp = 100.0 * f->resid_sd;
            f->weighted ? cell(out, 9, 0, "%.2f sd", f->resid_sd)
                        : cell(out, 9, 0, "%.*f%%", sp < 9.95 ? 1 : 0, sp);
        }
        if (have_T) {
            char r0[48], r1[48], r2[48];
            fputs("  ", out);
            cell(out, w_rate, 0, "%s [%s, %s]", rate_text(r0, res->at_T.rate),
                 rate_text(r1, res->at_T.rate_lo), rate_text(r2, res->at_T.rate_hi));
            if (have_stats && o->bootstrap > 0) {
                fputs("  ", out);
                const struct arrank_sample_stats *bs = res->stats;
                if (bs && bs->has_bootstrap)
                    cell(out, 26, 0, "[%s, %s]", rate_text(r1, bs->rate_lo_boot),
                         rate_text(r2, bs->rate_hi_boot));
                else
                    cell(out, 26, 0, "-");
            }
        }
        fputs("  ", out);
        expected_flags(out, res);
        fputc('\n', out);
    }
    free(shown);
    assert_int_equal(fclose(out), 0);
    return text;
}

/* The table of fk with `workers` workers into *text (caller frees). */
static void table_of(const fake *fk, int workers, char **text, size_t *len)
{
    FILE *out = open_memstream(text, len);
    assert_non_null(out);
    arrank_error err;
    arrank_error_clear(&err);
    arrank_workers_force(workers);
    arrank_status st = arrank_output_write(&fk->a, ARRANK_OUTPUT_TABLE, out, &err);
    arrank_workers_force(0);
    assert_int_equal(st, ARRANK_OK);
    assert_int_equal(fclose(out), 0);
}

/* The rows of the table: after the column headings, which end in "  flags\n". */
static void check_rows(const fake *fk, const char *what)
{
    char *want = expected_rows(fk);
    for (int workers = 1; workers <= 3; workers += 2) {
        char *table = NULL;
        size_t table_len = 0;
        table_of(fk, workers, &table, &table_len);
        const char *rows = strstr(table, "  flags\n");
        assert_non_null(rows);
        rows += strlen("  flags\n");
        size_t n = strlen(want);
        if (strncmp(rows, want, n) != 0 || (rows[n] != '\0' && rows[n] != '\n')) {
            size_t i = 0;
            while (rows[i] && rows[i] == want[i])
                i++;
            size_t from = i > 40 ? i - 40 : 0;
            fail_msg("%s, %d workers: row bytes differ at %zu:\n table '%.80s'\n printf '%.80s'",
                     what, workers, i, rows + from, want + from);
        }
        free(table);
    }
    free(want);
}

static void rows_as_printf_writes_them(void **state)
{
    (void)state;
    static const struct {
        const char *what;
        size_t n;
        int ranked, with_T, with_stats;
        size_t boot;
        int short_names;
    } cases[] = {
        {"ranked, P(best), bootstrap, names of every kind", 700, 1, 1, 1, 200, 0},
        {"ranked, P(best), short names", 600, 1, 1, 1, 0, 1},
        {"ranked without statistics", 300, 1, 1, 0, 0, 0},
        {"no operating temperature", 300, 1, 0, 1, 0, 0},
        {"nothing ranked", 300, 0, 1, 0, 0, 1},
        {"one sample", 1, 1, 1, 1, 50, 0},
        {"many rows for several workers", 5000, 1, 1, 1, 0, 0},
        {"fit's table: dof and scatter", 600, 0, 1, 0, 0, 0},
        {"fit's table without an operating temperature", 300, 0, 0, 0, 0, 1},
    };
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
        for (int rep = 0; rep < 3; rep++) {
            fake fk;
            make_fake(&fk, cases[c].n, cases[c].ranked, cases[c].with_T, cases[c].with_stats,
                      cases[c].boot, cases[c].short_names);
            if (strncmp(cases[c].what, "fit's", 5) == 0)
                fk.a.options.rank = 0; /* fit: each sample's fit, no ranking */
            check_rows(&fk, cases[c].what);
            free_fake(&fk);
        }
    }
}

/* The table of fk for a terminal width columns wide (arrank_output_table). */
static char *term_table_of(const fake *fk, size_t width, int colour)
{
    char *text = NULL;
    size_t len = 0;
    FILE *out = open_memstream(&text, &len);
    assert_non_null(out);
    arrank_error err;
    arrank_error_clear(&err);
    const arrank_table_options t = {width, colour};
    assert_int_equal(arrank_output_table(&fk->a, &t, out, &err), ARRANK_OK);
    assert_int_equal(fclose(out), 0);
    return text;
}

/* The widest line of text in terminal columns, ANSI colour sequences
   (ESC [ ... m) not counted; *colours: how many sequences there were. */
static size_t widest_line(const char *text, size_t *colours)
{
    size_t widest = 0, w = 0;
    *colours = 0;
    for (const char *p = text; *p; p++) {
        if (*p == '\033' && p[1] == '[') {
            p += 2;
            while (*p && *p != 'm')
                p++;
            ++*colours;
            if (!*p)
                break;
            continue;
        }
        if (*p == '\n') {
            widest = w > widest ? w : widest;
            w = 0;
        } else if (((unsigned char)*p & 0xC0) != 0x80) {
            size_t len = 1;
            while (((unsigned char)p[len] & 0xC0) == 0x80)
                len++;
            w += arrank_text_columns(p, len);
        }
    }
    return w > widest ? w : widest;
}

/* On a terminal: no line wider than the terminal, whatever the names and
   numbers (ids of every kind, cells of 127 bytes, long reasons); colour only
   when asked; width 0 without colour is the piped table, byte for byte; a
   line names the columns left out (from 60 columns: below that the
   essential columns alone may not fit). */
static void table_fits_the_terminal(void **state)
{
    (void)state;
    static const size_t widths[] = {60, 72, 80, 100, 120, 200};
    for (int mode = 0; mode < 4; mode++) {
        fake fk;
        make_fake(&fk, 300, mode != 3, mode != 2, mode < 2, mode == 0 ? 100 : 0, 0);
        if (mode == 3)
            fk.a.options.rank = 0;
        char *piped = NULL;
        size_t piped_len = 0;
        table_of(&fk, 1, &piped, &piped_len);
        char *same = term_table_of(&fk, 0, 0);
        assert_string_equal(same, piped);
        free(same);
        size_t colours, piped_w = widest_line(piped, &colours);
        for (size_t k = 0; k < sizeof widths / sizeof *widths; k++) {
            for (int colour = 0; colour <= 1; colour++) {
                char *text = term_table_of(&fk, widths[k], colour);
                size_t w = widest_line(text, &colours);
                if (w > widths[k] && getenv("SHOW_TABLE"))
                    fputs(text, stderr);
                if (w > widths[k])
                    fail_msg("mode %d, %zu columns: a line of %zu", mode, widths[k], w);
                assert_true(colour ? colours > 0 : colours == 0);
                /* the piped table is wider than every width tried: something is
                   left out and said so */
                assert_true(piped_w > widths[k]);
                assert_non_null(strstr(text, "left out to fit"));
                free(text);
            }
        }
        free(piped);
        free_fake(&fk);
    }
}

/* The made-up data reach what the comparison is meant to cover. */
static void cases_are_covered(void **state)
{
    (void)state;
    fake fk;
    make_fake(&fk, 2000, 1, 1, 1, 100, 0);
    size_t plain = 0, long_plain = 0, other = 0, errors = 0, huge = 0, nonfinite = 0, excluded = 0;
    for (size_t i = 0; i < fk.a.n_results; i++) {
        const arrank_result *res = &fk.a.results[i];
        const char *id = res->sample->id;
        int ascii = 1;
        for (const char *p = id; *p; p++)
            ascii &= (unsigned char)*p >= 0x20 && (unsigned char)*p < 0x7F;
        if (ascii && strlen(id) <= NAME_MAX_COLS)
            plain++;
        else if (ascii)
            long_plain++;
        else
            other++;
        if (res->error) {
            errors++;
            continue;
        }
        huge += fabs(res->fit.ea_J_mol) > 1e40;
        nonfinite += !isfinite(res->at_T.rate);
        excluded += res->fit.n < res->sample->n_points;
    }
    assert_true(plain > 100 && long_plain > 100 && other > 500);
    assert_true(errors > 50 && huge > 20 && nonfinite > 50 && excluded > 200);
    /* cells longer than 127 bytes, which the table must cut as snprintf does */
    size_t cut = 0;
    for (size_t i = 0; i < fk.a.n_results; i++) {
        const arrank_arrhenius *f = &fk.a.results[i].fit;
        if (!fk.a.results[i].error)
            cut += snprintf(NULL, 0, "%.1f [%.1f, %.1f]", f->ea_J_mol / 1e3, f->ea_J_mol / 1e3,
                            f->ea_J_mol / 1e3) > 127;
    }
    assert_true(cut > 10);
    free_fake(&fk);
}

/* The JSON of a, lean (the record per sample) or with detail, by the fast
   path or the general one (json.c: arrank_json_reference), into *text. */
static char *json_of(const arrank_analysis *a, arrank_output_format format, int reference)
{
    char *text = NULL;
    size_t len = 0;
    FILE *out = open_memstream(&text, &len);
    assert_non_null(out);
    arrank_error err;
    arrank_error_clear(&err);
    arrank_json_reference(reference);
    arrank_status st = arrank_output_write(a, format, out, &err);
    arrank_json_reference(0);
    assert_int_equal(st, ARRANK_OK);
    assert_int_equal(fclose(out), 0);
    return text;
}

static void same_json_as(const arrank_analysis *a, arrank_output_format format, const char *what)
{
    char *fast = json_of(a, format, 0), *general = json_of(a, format, 1);
    if (strcmp(fast, general) != 0) {
        size_t i = 0;
        while (fast[i] && fast[i] == general[i])
            i++;
        size_t from = i > 60 ? i - 60 : 0;
        fail_msg("%s: JSON bytes differ at %zu:\n fast    '%.120s'\n general '%.120s'", what, i,
                 fast + from, general + from);
    }
    free(fast);
    free(general);
}

/* The record per sample, and with points (real analyses: the made-up ones
   have no points) the --json-points document, both ways. */
static void same_json(const arrank_analysis *a, const char *what, int with_points)
{
    same_json_as(a, ARRANK_OUTPUT_JSON, what);
    if (with_points)
        same_json_as(a, ARRANK_OUTPUT_JSON_POINTS, what);
}

/* The record per sample written directly (json.c's fast path) is the
   document jansson writes for the same keys, byte for byte: made-up analyses
   (names of every kind, control characters, quotes, invalid UTF-8 in names,
   notes and errors; huge, tiny, negative and non-finite numbers) and the
   demo campaign under several option sets, whose --json-points document is
   compared too. */
static void json_record_as_jansson_writes_it(void **state)
{
    (void)state;
    static char *const notes[] = {"plain note", "quote \" and backslash \\ and tab\t",
                                  "bell \a and del \x7f and \xc3\xa9t\xc3\xa9",
                                  "invalid \xc3\x28 UTF-8", "overlong \xc0\xaf", NULL};
    /* stability holds (arrank_hold): a verdict, none, and numbers that are
       not finite, words with a quote and invalid UTF-8 */
    arrank_hold holds[3];
    memset(holds, 0, sizeof holds);
    static char *const hold_words[] = {"held at one temperature, 250.00 degC (523.15 K): down",
                                       "held \"quoted\" \xc3\x28", NULL};
    for (int k = 0; k < 3; k++) {
        arrank_drift *dr = &holds[k].drift;
        dr->tested = 1;
        dr->temp_ref_K = 523.15;
        dr->n_points = (size_t)(5 + k);
        dr->time_min_h = 0.0;
        dr->time_max_h = 48.0 + k;
        dr->ln_rate_ref = 0.6955952207110071;
        dr->slope_ln_per_h = k == 2 ? NAN : -0.0039326913615878;
        dr->slope_se = 1.4884e-4;
        dr->dof = 3.0 + k;
        dr->t = k == 2 ? -INFINITY : -26.42;
        dr->p = 2.6e-11;
        dr->change = -0.172;
        dr->verdict = k == 0 ? -1 : k == 1 ? 1 : 0;
        holds[k].change_lo = -0.18;
        holds[k].change_hi = 1e300;
        holds[k].words = hold_words[k];
    }
    for (int rep = 0; rep < 4; rep++) {
        fake fk;
        make_fake(&fk, 1500, rep != 1, rep != 2, rep != 3, rep == 0 ? 100 : 0, rep == 3);
        for (size_t i = 0; i < fk.a.n_results; i++)
            fk.a.results[i].hold = i % 11 == 5 ? &holds[i % 3] : NULL;
        for (size_t i = 0; i < fk.a.n_results; i++) {
            arrank_sample *smp = &fk.samples[i];
            smp->file = i % 7 ? smp->id : NULL;
            smp->rate_unit_file = i % 3 ? "umol/(g*s)" : NULL;
            smp->notes = (char **)notes;
            smp->n_notes = i % 6;
            fk.a.results[i].error_line = (long)(i % 5);
            fk.a.results[i].error_column = (long)(i % 3);
            if (fk.a.results[i].error && i % 4 == 0)
                fk.a.results[i].error = strcpy(fk.a.results[i].error, "bad \xff byte\n");
        }
        same_json(&fk.a, "made-up analysis", 0);
        for (size_t i = 0; i < fk.a.n_results; i++)
            fk.a.results[i].hold = NULL; /* not theirs to free */
        free_fake(&fk);
    }
    arrank_campaign *c = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load("campaigns/zeolite-ni-screen", units, &c, &err),
                     ARRANK_OK);
    for (int opt = 0; opt < 4; opt++) {
        arrank_options o = arrank_options_defaults();
        o.operating_temp_K = 543.15;
        o.units = units;
        o.diagnose = opt != 1;
        o.model = opt == 2 ? ARRANK_MODEL_MODIFIED : ARRANK_MODEL_ARRHENIUS;
        o.bootstrap = opt == 3 ? 50 : 0;
        o.draws = 2000;
        arrank_analysis *a = NULL;
        assert_int_equal(arrank_analysis_run(c, &o, &a, &err), ARRANK_OK);
        same_json(a, "demo campaign", 1);
        arrank_analysis_free(a);
    }
    arrank_campaign_free(c);
    /* a folder as people leave it (the default reader): unreadable files
       (skipped, error_column), points left out by the reader (left_out), a
       copy not used (files_not_used), weighted fits (sqrt_chi2_dof) */
    arrank_load_options lo = {0, 0};
    assert_int_equal(arrank_campaign_load_with("tests/messy", units, &lo, NULL, NULL, &c, &err),
                     ARRANK_OK);
    arrank_options o = arrank_options_defaults();
    o.operating_temp_K = 523.15;
    o.units = units;
    o.draws = 2000;
    arrank_analysis *a = NULL;
    assert_int_equal(arrank_analysis_run(c, &o, &a, &err), ARRANK_OK);
    same_json(a, "messy campaign", 1);
    arrank_analysis_free(a);
    arrank_campaign_free(c);
}

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(rows_as_printf_writes_them),
        cmocka_unit_test(cases_are_covered),
        cmocka_unit_test(table_fits_the_terminal),
        cmocka_unit_test_setup_teardown(json_record_as_jansson_writes_it, units_setup,
                                        units_teardown),
    };
    return cmocka_run_group_tests_name("output", tests, NULL, NULL);
}
