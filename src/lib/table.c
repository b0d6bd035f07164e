/*
 * table.c - the table for people on the terminal: one row per sample, ranked
 * samples first in rank order, then the others in file order; below it the
 * flags that occur in words, what P(best) and the groups mean, the
 * compensation verdict and, with --model, the model's parameters.
 *
 * The writer reads only the analysis: every quantile comes from the pipeline
 * (arrank_result.t_quantile, interval_t).
 */
#include "table.h"
#include "table_internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/analysis_stats.h"
#include "arrank/cautions.h"
#include "arrank/text.h"
#include "number.h"
#include "util.h"

#define NAME_WIDTH_MAX 28 /* longer sample names are shortened in the table */

/* Ranked samples first, in rank order, then the others in file order.
   Returns a new array of n_results indices, or NULL when out of memory. */
size_t *arrank_table_order(const arrank_analysis *a)
{
    size_t *order = malloc((a->n_results ? a->n_results : 1) * sizeof *order);
    if (!order)
        return NULL;
    size_t k = 0;
    for (; k < a->n_ranked; k++)
        order[k] = a->order[k];
    for (size_t i = 0; i < a->n_results; i++)
        if (a->results[i].rank == 0)
            order[k++] = i;
    return order;
}

/* The names of the flags set, joined by sep, into buf (size n), cut as snprintf
   cuts; the extrapolated flag says how far when extra (its text) is given. */
static void flags_joined(unsigned flags, char *buf, size_t n, const char *sep, const char *extra)
{
    buf[0] = '\0';
    size_t len = 0, sep_len = strlen(sep);
    for (unsigned bit = 1; bit && bit < (1u << ARRANK_FLAG_COUNT); bit <<= 1) {
        if (!(flags & bit))
            continue;
        const char *name = bit == ARRANK_FLAG_EXTRAPOLATED && extra ? extra : arrank_flag_name(bit);
        size_t name_len = strlen(name), s_len = len ? sep_len : 0;
        if (s_len + name_len >= n - len) { /* does not fit: what snprintf keeps of it */
            snprintf(buf + len, n - len, "%s%s", len ? sep : "", name);
            break;
        }
        memcpy(buf + len, sep, s_len);
        memcpy(buf + len + s_len, name, name_len + 1);
        len += s_len + name_len;
    }
}

/* Display width of UTF-8 text: terminal columns (arrank_text_columns: a CJK
   character takes two), not bytes. */
size_t arrank_table_text_width(const char *s)
{
    return arrank_text_columns(s, strlen(s));
}

/* Width of text from a file as the table shows it: control characters and
   bytes that are not UTF-8 escaped (arrank/text.h, "a\\nb"). */
static size_t shown_width(const char *s)
{
    if (arrank_text_is_clean(s))
        return arrank_table_text_width(s);
    char esc[4 * NAME_WIDTH_MAX + 64]; /* cut: still wider than any name column */
    arrank_text_escape(s, esc, sizeof esc);
    return arrank_table_text_width(esc);
}

/* Copy raw into buf shortened to at most width columns ("..." at the
   end), control characters and bytes that are not UTF-8 escaped first
   (arrank/text.h: a name "a<line break>b" is shown "a\\nb" on one line), so
   a name cannot break the layout or the terminal. */
static void fit_text(const char *raw, size_t width, char *buf, size_t n)
{
    /* an escaped text cut at 175 bytes still has more than NAME_WIDTH_MAX
       code points (4 bytes each at most), so "..." is decided as for the
       whole */
    char esc[4 * NAME_WIDTH_MAX + 64];
    const char *s = raw;
    if (!arrank_text_is_clean(raw)) {
        arrank_text_escape(raw, esc, sizeof esc);
        s = esc;
    }
    size_t w = arrank_table_text_width(s), out = 0, cols = 0, keep = w > width ? width - 3 : w;
    for (const char *p = s; *p && out + 4 < n; p++) {
        unsigned char c = (unsigned char)*p;
        if ((c & 0xC0) != 0x80) { /* a character starts: does it fit in keep columns? */
            size_t len = 1;
            while (((unsigned char)p[len] & 0xC0) == 0x80)
                len++;
            size_t cw = arrank_text_columns(p, len);
            if (cols + cw > keep)
                break;
            cols += cw;
        }
        buf[out++] = (c < 0x20 || c == 0x7F) ? '?' : (char)c;
    }
    if (w > width && out + 4 <= n) {
        memcpy(buf + out, "...", 3);
        out += 3;
    }
    buf[out] = '\0';
}

static void pad_print(FILE *f, const char *s, size_t width, int right)
{
    size_t w = arrank_table_text_width(s);
    if (right)
        for (size_t i = w; i < width; i++)
            fputc(' ', f);
    fputs(s, f);
    if (!right)
        for (size_t i = w; i < width; i++)
            fputc(' ', f);
}

/* snprintf(cell, n, "%lld", v) for a cell of at least 24 bytes; returns the length. */
static size_t int_text(char *cell, long long value)
{
    char tmp[24], *end = tmp + sizeof tmp;
    unsigned long long v = value < 0 ? 0ULL - (unsigned long long)value : (unsigned long long)value;
    const char *d = arrank_digits_before(end, v, 1);
    size_t k = 0;
    if (value < 0)
        cell[k++] = '-';
    while (d < end)
        cell[k++] = *d++;
    cell[k] = '\0';
    return k;
}

/*
 * Table rows are written straight into a growing block of memory, each cell
 * formatted in place and padded in one go: formatting into a cell, then
 * measuring, copying and padding it, took most of the table's time.  Every
 * cell but the name and the error text is ASCII (numbers in the C locale,
 * "-", brackets), so its width in columns is its length in bytes.  Cells are
 * cut at CELL_MAX bytes, as the 128-byte cell buffers of snprintf cut them.
 */
typedef struct {
    char *mem;
    size_t n, cap;
    int nomem;
} row_buf;

#define CELL_MAX 127   /* bytes of a cell at most (a 128-byte buffer with its NUL) */
#define NUM_ROOM 48    /* room for one number: longer ones make the whole cell a snprintf */
/* Room a row may need besides its error text: at most 11 cells of at most
   CELL_MAX bytes, each padded to a width under 160 columns (the headers are
   formatted into 160-byte buffers), the name (under 120 bytes), 511 bytes of
   flags and the separators; writing a number may put a NUL NUM_ROOM bytes on. */
#define ROW_ROOM 8192

/* Room for need more bytes at r->mem + r->n; NULL (and r->nomem) when out of memory. */
static char *row_room(row_buf *r, size_t need)
{
    if (r->nomem)
        return NULL;
    if (r->cap - r->n < need) {
        size_t cap = r->cap ? 2 * r->cap : (size_t)1 << 16;
        while (cap - r->n < need)
            cap *= 2;
        char *m = realloc(r->mem, cap);
        if (!m) {
            r->nomem = 1;
            return NULL;
        }
        r->mem = m;
        r->cap = cap;
    }
    return r->mem + r->n;
}

/* k spaces at p; a short pad is one fixed-size copy (a row has room to spare). */
static char *put_spaces(char *p, size_t k)
{
    static const char spaces[32] = "                                ";
    if (k <= sizeof spaces)
        memcpy(p, spaces, sizeof spaces);
    else
        memset(p, ' ', k);
    return p + k;
}

static char *put_text(char *p, const char *s, size_t len)
{
    memcpy(p, s, len);
    return p + len;
}

/* An ASCII cell of len bytes, right-aligned in width columns. */
static char *put_right(char *p, const char *s, size_t len, size_t width)
{
    if (len > CELL_MAX)
        len = CELL_MAX;
    if (len < width)
        p = put_spaces(p, width - len);
    return put_text(p, s, len);
}

/* The ASCII cell written from start to end: cut to CELL_MAX bytes and
   left-aligned in width columns. */
static char *end_left(char *start, char *end, size_t width)
{
    size_t len = (size_t)(end - start);
    if (len > CELL_MAX) {
        len = CELL_MAX;
        end = start + len;
    }
    return len < width ? put_spaces(end, width - len) : end;
}

/* The name cell: fit_text's text padded to width columns.  A name of
   printable ASCII that fits is fit_text's answer as it stands. */
static char *put_name(char *p, const char *s, size_t width)
{
    size_t i = 0;
    unsigned char c;
    while ((c = (unsigned char)s[i]) >= 0x20 && c < 0x7F && i < width)
        i++;
    if (c == '\0') {
        p = put_text(p, s, i);
        return put_spaces(p, width - i);
    }
    char name[4 * NAME_WIDTH_MAX + 8];
    fit_text(s, width, name, sizeof name);
    size_t w = arrank_table_text_width(name);
    p = put_text(p, name, strlen(name));
    return w < width ? put_spaces(p, width - w) : p;
}

/* "%.<prec>f [%.<prec>f, %.<prec>f]" of v, lo and hi at p; returns the end
   (not cut: end_left cuts). */
char *arrank_table_put_interval(char *p, int prec, double v, double lo, double hi)
{
    char *start = p;
    const double x[3] = {v, lo, hi};
    for (int i = 0; i < 3; i++) {
        int len = arrank_format_fixed(p, NUM_ROOM, prec, x[i]);
        if (len < 0 || len >= NUM_ROOM) /* huge: the whole cell as snprintf writes it */
            return start + snprintf(start, CELL_MAX + 1, "%.*f [%.*f, %.*f]", prec, v, prec,
                                    lo, prec, hi);
        p += len;
        if (i < 2)
            p = i == 0 ? put_text(p, " [", 2) : put_text(p, ", ", 2);
    }
    *p++ = ']';
    return p;
}

/* A rate as the table shows it ("%.3g", or "-" when not finite) at p; returns the end. */
char *arrank_table_put_rate(char *p, double v)
{
    if (!isfinite(v)) {
        *p = '-';
        return p + 1;
    }
    return p + arrank_format_general(p, NUM_ROOM, 3, v); /* a few bytes: never cut */
}

char *arrank_table_put_dof(char *p, const arrank_result *res)
{
    const double dof = res->fit.dof;
    if (!(isfinite(dof) && dof >= 0 && dof < 1e15)) {
        *p = '-';
        return p + 1;
    }
    return p + int_text(p, (long long)dof);
}

/* The scatter about the line (fit's table): the residual standard deviation
   of ln r in percent for an unweighted fit, sqrt(chi2/dof) for a weighted
   one (arrank_arrhenius.resid_sd is either, fit.h), "-" when not finite. */
char *arrank_table_put_scatter(char *p, const arrank_result *res)
{
    const arrank_arrhenius *fit = &res->fit;
    const double s = fit->resid_sd;
    if (!isfinite(s) || s > 1e6) {
        *p = '-';
        return p + 1;
    }
    if (fit->weighted) {
        p += arrank_format_fixed(p, NUM_ROOM, 2, s);
        return put_text(p, " sd", 3);
    }
    p += arrank_format_fixed(p, NUM_ROOM, 100.0 * s < 9.95 ? 1 : 0, 100.0 * s);
    *p++ = '%';
    return p;
}

/* The modified or transition-state parameters under the main table
   (--model): the table above keeps the plain Arrhenius Ea for comparison. */
static void write_model_table(const arrank_analysis *a, FILE *f)
{
    int eyring = a->options.model == ARRANK_MODEL_EYRING;
    fprintf(f, "\n%s, %g%% intervals:\n", eyring
                ? "transition-state form r = (k_B T/h) exp(dS/R) exp(-dH/RT)"
                : "modified form r = A (T/T_ref)^n exp(-E/RT)",
            100.0 * a->options.confidence);
    if (eyring)
        fprintf(f, "  %-28s  %-24s  %s\n", "sample", "dH [kJ/mol]", "dS [J/(mol*K)]");
    else
        fprintf(f, "  %-28s  %-24s  %-22s  %s\n", "sample", "E [kJ/mol]", "n", "corr(E, n)");
    int collinear = 0;
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *res = &a->results[i];
        if (res->error || !res->stats || !res->stats->has_model)
            continue;
        const arrank_model_fit *m = &res->stats->model;
        const double t = res->interval_t; /* the model's, the pipeline's (analysis_models.c) */
        char name[4 * NAME_WIDTH_MAX + 8], c1[64], c2[64];
        fit_text(res->sample->id, NAME_WIDTH_MAX, name, sizeof name);
        if (eyring) {
            snprintf(c1, sizeof c1, "%.1f [%.1f, %.1f]", m->dH_J_mol / 1e3,
                     (m->dH_J_mol - t * m->dH_se_J_mol) / 1e3,
                     (m->dH_J_mol + t * m->dH_se_J_mol) / 1e3);
            snprintf(c2, sizeof c2, "%.1f [%.1f, %.1f]", m->dS_J_mol_K,
                     m->dS_J_mol_K - t * m->dS_se_J_mol_K, m->dS_J_mol_K + t * m->dS_se_J_mol_K);
            fprintf(f, "  ");
            pad_print(f, name, NAME_WIDTH_MAX, 0);
            fprintf(f, "  %-24s  %s\n", c1, c2);
        } else {
            snprintf(c1, sizeof c1, "%.1f [%.1f, %.1f]", m->E_J_mol / 1e3,
                     (m->E_J_mol - t * m->E_se_J_mol) / 1e3,
                     (m->E_J_mol + t * m->E_se_J_mol) / 1e3);
            snprintf(c2, sizeof c2, "%.2f [%.2f, %.2f]", m->n_T, m->n_T - t * m->n_T_se,
                     m->n_T + t * m->n_T_se);
            fprintf(f, "  ");
            pad_print(f, name, NAME_WIDTH_MAX, 0);
            fprintf(f, "  %-24s  %-22s  %.4f%s\n", c1, c2, m->corr_E_n, m->collinear ? " *" : "");
            collinear |= m->collinear;
        }
    }
    if (collinear)
        fprintf(f, "  * E and n are nearly collinear over this temperature span: neither is well\n"
                   "    determined alone; fix n (0 or 1) or widen the span\n");
}


/* Row k of the table (display order) appended to r. */
/* The row's rank, P(best) and group cells, each followed by two spaces. */
static char *put_rank_cells(const arrank_table_ctx *tc, const arrank_result *res, char *p)
{
    char cell[CELL_MAX + 1];
    if (res->rank)
        p = put_right(p, cell, int_text(cell, res->rank), tc->w_rank);
    else
        p = put_right(p, "-", 1, tc->w_rank);
    p = put_text(p, "  ", 2);
    if (!tc->have_stats)
        return p;
    const struct arrank_sample_stats *ss = res->rank ? res->stats : NULL;
    if (ss && isfinite(ss->p_best)) {
        int len = arrank_format_fixed(cell, sizeof cell, 3, ss->p_best);
        p = put_right(p, cell, len < 0 ? 0 : (size_t)len, tc->w_pb);
    } else {
        p = put_right(p, "-", 1, tc->w_pb);
    }
    p = put_text(p, "  ", 2);
    if (ss && ss->group > 0)
        p = put_right(p, cell, int_text(cell, ss->group), tc->w_grp);
    else
        p = put_right(p, "-", 1, tc->w_grp);
    return put_text(p, "  ", 2);
}

/* The row's flags cell: the flags in words (the extrapolation with how far
   the operating temperature lies outside the measured range), or "-". */
char *arrank_table_put_flags(const arrank_result *res, char *p)
{
    if (res->stats && res->stats->is_reference) { /* the reference catalyst's row */
        memcpy(p, "REFERENCE", 9);
        p += 9;
        if (!res->flags)
            return p;
        *p++ = ',';
        *p++ = ' ';
    }
    if (!res->flags) {
        *p++ = '-';
        return p;
    }
    char extra[64], *how_far = NULL;
    if ((res->flags & ARRANK_FLAG_EXTRAPOLATED) && res->has_prediction &&
        res->at_T.extrapolation_K > 0 && res->at_T.extrapolation_K < 1e9) {
        const double out_K = res->at_T.extrapolation_K;
        snprintf(extra, sizeof extra, "extrapolated %.*f K", out_K < 9.95 ? 1 : 0, out_K);
        how_far = extra;
    }
    flags_joined(res->flags, p, 512, ", ", how_far); /* as many bytes as ever: under 512 */
    return p + strlen(p);
}

static void table_row(const arrank_table_ctx *tc, size_t k, row_buf *r, unsigned *seen_flags,
                      int *any_error)
{
    const arrank_analysis *a = tc->a;
    const arrank_options *o = &a->options;
    const arrank_result *res = &a->results[tc->order[k]];
    const arrank_arrhenius *fit = &res->fit;
    /* an error text escaped takes at most 4 bytes a byte (arrank/text.h) */
    char *p = row_room(r, ROW_ROOM + (res->error ? 4 * strlen(res->error) + 1 : 0));
    if (!p)
        return;
    char *const row = p, cell[CELL_MAX + 1];
    if (a->n_ranked)
        p = put_rank_cells(tc, res, p);
    p = put_name(p, res->sample->id, tc->name_w);
    p = put_text(p, "  ", 2);
    if (res->error) {
        p = put_right(p, cell, int_text(cell, (long long)res->sample->n_points), tc->w_n);
        if (res->sample->skipped) /* a file the reader could not read */
            p = put_text(p, "  file not used: ", 17);
        else
            p = put_text(p, "  not fitted: ", 14);
        if (arrank_text_is_clean(res->error)) {
            p = put_text(p, res->error, strlen(res->error));
        } else { /* text from a file: escaped for the terminal */
            size_t len = arrank_text_escape(res->error, p, 4 * strlen(res->error) + 1);
            p += len;
        }
        *p++ = '\n';
        r->n += (size_t)(p - row);
        *any_error = 1;
        return;
    }
    const double t = res->t_quantile; /* the pipeline's (analysis.c) */
    /* n of the points offered: with --run, of the run's */
    const size_t offered = o->run ? res->n_offered : res->sample->n_points;
    if (fit->n < offered) {
        int len = snprintf(cell, sizeof cell, "%zu/%zu", fit->n, offered);
        p = put_right(p, cell, len < 0 ? 0 : (size_t)len, tc->w_n);
    } else {
        p = put_right(p, cell, int_text(cell, (long long)fit->n), tc->w_n);
    }
    p = put_text(p, "  ", 2);
    if (tc->fit_stats) {
        char *start = p;
        size_t len = (size_t)(arrank_table_put_dof(cell, res) - cell);
        p = put_right(start, cell, len, tc->w_dof);
        p = put_text(p, "  ", 2);
    }
    {
        char *start = p;
        int lo = arrank_format_fixed(p, NUM_ROOM, 0, fit->T_min_K), hi = -1;
        if (lo >= 0 && lo < NUM_ROOM) {
            p += lo;
            *p++ = '-';
            hi = arrank_format_fixed(p, NUM_ROOM, 0, fit->T_max_K);
        }
        if (hi < 0 || hi >= NUM_ROOM)
            p = start + snprintf(start, CELL_MAX + 1, "%.0f-%.0f", fit->T_min_K, fit->T_max_K);
        else
            p += hi;
        p = end_left(start, p, tc->w_T);
    }
    p = put_text(p, "  ", 2);
    double ea = fit->ea_J_mol / 1e3, se = fit->ea_se_J_mol / 1e3;
    char *start = p;
    p = end_left(start, arrank_table_put_interval(p, 1, ea, ea - t * se, ea + t * se), tc->w_ea);
    p = put_text(p, "  ", 2);
    start = p;
    p = arrank_table_put_interval(p, 2, fit->ln_A, fit->ln_A - t * fit->ln_A_se,
                                  fit->ln_A + t * fit->ln_A_se);
    p = end_left(start, p, tc->w_lna);
    if (tc->fit_stats) {
        p = put_text(p, "  ", 2);
        start = p;
        p = end_left(start, arrank_table_put_scatter(p, res), tc->w_scat);
    }
    if (tc->have_T) {
        p = put_text(p, "  ", 2);
        start = p;
        p = arrank_table_put_rate(p, res->at_T.rate);
        p = put_text(p, " [", 2);
        p = arrank_table_put_rate(p, res->at_T.rate_lo);
        p = put_text(p, ", ", 2);
        p = arrank_table_put_rate(p, res->at_T.rate_hi);
        *p++ = ']';
        p = end_left(start, p, tc->w_rate);
        if (tc->have_stats && o->bootstrap > 0) {
            p = put_text(p, "  ", 2);
            const struct arrank_sample_stats *ss = res->stats;
            start = p;
            if (ss && ss->has_bootstrap) {
                *p++ = '[';
                p = arrank_table_put_rate(p, ss->rate_lo_boot);
                p = put_text(p, ", ", 2);
                p = arrank_table_put_rate(p, ss->rate_hi_boot);
                *p++ = ']';
            } else {
                *p++ = '-';
            }
            p = end_left(start, p, tc->w_boot);
        }
    }
    p = put_text(p, "  ", 2);
    p = arrank_table_put_flags(res, p);
    *p++ = '\n';
    r->n += (size_t)(p - row);
    *seen_flags |= res->flags;
}

/*
 * The rows are formatted on the workers (util.c), TABLE_BLOCK rows at a time:
 * each worker formats a contiguous share of the block into its own buffer and
 * the buffers are written in order, so the table is the same for any number
 * of workers (tests/test_workers.c).  A block bounds the memory held (a
 * hundred-odd bytes a row) and is large enough that a campaign of 10,000
 * samples takes one round of worker threads.
 */
#define TABLE_BLOCK 16384
#define TABLE_MIN_PER_WORKER 256
#define TABLE_MAX_WORKERS 8
#define TABLE_FLUSH ((size_t)1 << 16) /* one worker: write out every 64 KiB */

typedef struct {
    const arrank_table_ctx *tc;
    size_t from, to, workers;
    row_buf rows[TABLE_MAX_WORKERS];
    unsigned seen[TABLE_MAX_WORKERS];
    int any_error[TABLE_MAX_WORKERS];
} table_job;

/*
 * Rows go in rank order, so each row's result, sample, name and statistics
 * sit at scattered addresses, and waiting for them from memory took about half
 * the time of a row once the formatting was cheap (perf, 10,000 samples).
 * They are asked for a few rows ahead, in the order the pointers lead to them.
 */
#if defined(__GNUC__)
#define PREFETCH(addr) __builtin_prefetch(addr)
#else
#define PREFETCH(addr) ((void)(addr))
#endif
#define AHEAD 8 /* rows ahead for the result; its sample and stats at AHEAD / 2, the name at 2 */

/* Row k of rows ..hi into r, the data of rows further on asked for first.  (The
   asking sits with the row: gcc 12 drops a call to a function that only
   prefetches, as one without effects.) */
static void table_row_ahead(const arrank_table_ctx *tc, size_t k, size_t hi, row_buf *r,
                            unsigned *seen_flags, int *any_error)
{
    const arrank_result *results = tc->a->results;
    if (k + AHEAD < hi) {
        const char *res = (const char *)&results[tc->order[k + AHEAD]];
        for (size_t off = 0; off < sizeof(arrank_result); off += 64)
            PREFETCH(res + off);
        PREFETCH(res + sizeof(arrank_result) - 1);
    }
    if (k + AHEAD / 2 < hi) {
        const arrank_result *res = &results[tc->order[k + AHEAD / 2]];
        PREFETCH(res->sample);
        if (res->stats)
            PREFETCH(res->stats);
    }
    if (k + 2 < hi)
        PREFETCH(results[tc->order[k + 2]].sample->id);
    table_row(tc, k, r, seen_flags, any_error);
}

static void table_worker(void *ctx, size_t w)
{
    table_job *j = ctx;
    size_t n = j->to - j->from, share = (n + j->workers - 1) / j->workers;
    size_t lo = j->from + w * share, hi = lo + share < j->to ? lo + share : j->to;
    /* The worker's buffer and findings are kept in locals while the rows are
       written: the workers' entries share cache lines in j. */
    row_buf r = j->rows[w];
    unsigned seen = j->seen[w];
    int any_error = j->any_error[w];
    r.n = 0;
    for (size_t k = lo; k < hi; k++)
        table_row_ahead(j->tc, k, hi, &r, &seen, &any_error);
    j->rows[w] = r;
    j->seen[w] = seen;
    j->any_error[w] = any_error;
}

static arrank_status table_rows(const arrank_table_ctx *tc, FILE *f, unsigned *seen_flags,
                                int *any_error, arrank_error *err)
{
    const size_t n = tc->a->n_results;
    size_t workers = arrank_workers_for(n, TABLE_MIN_PER_WORKER);
    if (workers > TABLE_MAX_WORKERS)
        workers = TABLE_MAX_WORKERS;
    if (workers <= 1) {
        row_buf r = {0};
        for (size_t k = 0; k < n && !r.nomem; k++) {
            table_row_ahead(tc, k, n, &r, seen_flags, any_error);
            if (r.n >= TABLE_FLUSH) {
                fwrite(r.mem, 1, r.n, f);
                r.n = 0;
            }
        }
        if (!r.nomem)
            fwrite(r.mem, 1, r.n, f);
        free(r.mem);
        return r.nomem ? arrank_errorf(err, ARRANK_ENOMEM, "out of memory") : ARRANK_OK;
    }
    table_job *j = calloc(1, sizeof *j);
    if (!j)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    j->tc = tc;
    j->workers = workers;
    arrank_status st = ARRANK_OK;
    for (size_t from = 0; from < n && st == ARRANK_OK; from += TABLE_BLOCK) {
        j->from = from;
        j->to = from + TABLE_BLOCK < n ? from + TABLE_BLOCK : n;
        arrank_workers_run(workers, table_worker, j);
        for (size_t w = 0; w < workers; w++) {
            if (j->rows[w].nomem) {
                st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
                break;
            }
            fwrite(j->rows[w].mem, 1, j->rows[w].n, f);
        }
    }
    for (size_t w = 0; w < workers; w++) {
        *seen_flags |= j->seen[w];
        *any_error |= j->any_error[w];
        free(j->rows[w].mem);
    }
    free(j);
    return st;
}

/* Width of the name column: the widest name, at most NAME_WIDTH_MAX (so the
   search can stop there), at least the heading's.  The names are asked for
   ahead as in the rows (table_row_ahead). */
static size_t name_width(const arrank_analysis *a)
{
    size_t name_w = strlen("sample");
    const arrank_result *results = a->results;
    for (size_t i = 0; i < a->n_results && name_w < NAME_WIDTH_MAX; i++) {
        if (i + 2 * AHEAD < a->n_results)
            PREFETCH(results[i + 2 * AHEAD].sample);
        if (i + AHEAD < a->n_results)
            PREFETCH(results[i + AHEAD].sample->id);
        size_t w = shown_width(results[i].sample->id);
        if (w > name_w)
            name_w = w;
    }
    return name_w > NAME_WIDTH_MAX ? NAME_WIDTH_MAX : name_w;
}

/* The table's layout: column widths and what is shown. */
arrank_table_ctx arrank_table_layout(const arrank_analysis *a, const size_t *order)
{
    const arrank_options *o = &a->options;
    const char *unit = a->campaign->rate_unit;
    arrank_table_ctx tc = {.a = a, .order = order, .name_w = name_width(a), .w_rank = 4,
                           .w_pb = 7, .w_grp = 5, .w_n = 5, .w_dof = 3, .w_T = 11, .w_ea = 22,
                           .w_scat = 9, .w_boot = 26, .have_T = isfinite(o->operating_temp_K),
                           .have_stats = a->rank_stats != NULL, .fit_stats = !o->rank};
    snprintf(tc.rate_head, sizeof tc.rate_head, "rate at %.2f K [%s]", o->operating_temp_K, unit);
    snprintf(tc.lnA_head, sizeof tc.lnA_head, "ln A [ln(%s)]", unit);
    const size_t w_la = 22;
    tc.w_rate = tc.have_T ? arrank_table_text_width(tc.rate_head) : 0;
    if (tc.w_rate && tc.w_rate < 26)
        tc.w_rate = 26;
    tc.w_lna = arrank_table_text_width(tc.lnA_head) > w_la ? arrank_table_text_width(tc.lnA_head)
                                                           : w_la;
    return tc;
}

void arrank_table_intro(const arrank_table_ctx *tc, FILE *f)
{
    const arrank_analysis *a = tc->a;
    const arrank_campaign *c = a->campaign;
    const arrank_options *o = &a->options;
    char title[512], unit[256], run[256]; /* from files: escaped for the terminal (text.h) */
    arrank_text_escape(c->title ? c->title : c->name, title, sizeof title);
    arrank_text_escape(c->rate_unit, unit, sizeof unit);
    fprintf(f, "campaign '%s': %zu sample%s, rates in %s (%s basis), %g%% intervals", title,
            c->n_samples, c->n_samples == 1 ? "" : "s", unit,
            arrank_basis_name(c->basis), 100.0 * o->confidence);
    if (o->run) { /* --run: one run of each sample */
        arrank_text_escape(o->run, run, sizeof run);
        fprintf(f, "; only run '%s' of each sample (--run)", run);
    }
    fputc('\n', f);
    if (tc->have_T)
        fprintf(f, "operating temperature %.2f K (%.2f degC)%s%s\n", o->operating_temp_K,
                o->operating_temp_K - 273.15, a->n_ranked ? ", ranked by " : "",
                a->n_ranked ? (o->by == ARRANK_BY_EA ? "lowest Ea"
                               : o->by == ARRANK_BY_PREFACTOR ? "highest pre-exponential factor"
                               : o->by == ARRANK_BY_RATIO ? "rate as a ratio to the reference's"
                                                              : "rate at the operating temperature")
                            : "");
    fputc('\n', f);
}

/* The column heads of the piped table. */
static void write_heads(const arrank_table_ctx *tc, FILE *f)
{
    const arrank_analysis *a = tc->a;
    const arrank_options *o = &a->options;
    if (a->n_ranked) {
        pad_print(f, "rank", tc->w_rank, 0);
        fputs("  ", f);
        if (tc->have_stats) {
            pad_print(f, "P(best)", tc->w_pb, 1);
            fputs("  ", f);
            pad_print(f, "group", tc->w_grp, 1);
            fputs("  ", f);
        }
    }
    pad_print(f, "sample", tc->name_w, 0);
    fputs("  ", f);
    pad_print(f, "n", tc->w_n, 1);
    fputs("  ", f);
    if (tc->fit_stats) {
        pad_print(f, "dof", tc->w_dof, 1);
        fputs("  ", f);
    }
    pad_print(f, "T range [K]", tc->w_T, 0);
    fputs("  ", f);
    pad_print(f, "Ea [kJ/mol]", tc->w_ea, 0);
    fputs("  ", f);
    pad_print(f, tc->lnA_head, tc->w_lna, 0);
    if (tc->fit_stats) {
        fputs("  ", f);
        pad_print(f, "scatter", tc->w_scat, 0);
    }
    if (tc->have_T) {
        fputs("  ", f);
        pad_print(f, tc->rate_head, tc->w_rate, 0);
        if (tc->have_stats && o->bootstrap > 0) {
            fputs("  ", f);
            pad_print(f, "bootstrap interval", tc->w_boot, 0);
        }
    }
    fputs("  flags\n", f);
}

/* The lines below the rows: the flags in words, P(best) and groups, the
   compensation sentence, the model table, the caution on extrapolation. */
arrank_status arrank_table_footer(const arrank_table_ctx *tc, FILE *f, unsigned seen_flags,
                                  int any_error, size_t wrap, arrank_error *err)
{
    const arrank_analysis *a = tc->a;
    const arrank_options *o = &a->options;
    if (seen_flags || any_error)
        fputc('\n', f);
    for (unsigned bit = 1; bit && bit < (1u << ARRANK_FLAG_COUNT); bit <<= 1)
        if (seen_flags & bit)
            fprintf(f, "  %-16s %s\n", arrank_flag_name(bit), arrank_flag_words(bit));
    if (tc->fit_stats)
        fprintf(f, "\nscatter: residual standard deviation of ln r about the line, in %% of the "
                   "rate;\nwith rate_sd (weighted fits) sqrt(chi2/dof), in units of the stated "
                   "rate_sd (\"sd\"):\nabout 1 when the scatter is what rate_sd says.\n");
    if (tc->have_stats) {
        /* rank.h: what the groups mean, and the compensation verdict in words */
        /* broken at 96 columns as piped; one line for a narrower terminal,
           which wraps it (table_term.c) */
        fprintf(f, "\nP(best): share of %zu %s draws in which the sample ranks first. "
                   "Samples in one group%care not significantly different from the group's "
                   "first sample (Holm, %g%%).\n",
                a->rank_stats->draws, o->normal_draws ? "normal" : "Student-t",
                wrap < 96 ? ' ' : '\n', 100.0 * o->confidence);
        /* the sentence wrapped at `wrap` columns (96 piped), for a terminal */
        const char *w = a->rank_stats->compensation.sentence;
        while (*w) {
            size_t len = strlen(w), cut = len;
            if (len > wrap) {
                cut = wrap;
                while (cut > 0 && w[cut] != ' ')
                    cut--;
                if (cut == 0)
                    cut = wrap;
            }
            fprintf(f, "%.*s\n", (int)cut, w);
            w += cut;
            while (*w == ' ')
                w++;
        }
    }
    if (o->model != ARRANK_MODEL_ARRHENIUS)
        write_model_table(a, f);
    /* cautions.c: apparent kinetics, samples extrapolated far, the ranking
       beyond the isokinetic temperature */
    {
        char **lines = NULL;
        size_t n = 0;
        arrank_status st = arrank_cautions_list(a, &lines, &n, err);
        if (st != ARRANK_OK)
            return st;
        fputc('\n', f);
        for (size_t k = 0; k < n; k++) {
            char shown[2048]; /* ids escaped for the terminal (text.h), a long list cut */
            arrank_text_escape(lines[k], shown, sizeof shown);
            fprintf(f, "Caution: %s.\n", shown);
        }
        arrank_cautions_free(lines, n);
    }
    return ARRANK_OK;
}

static arrank_status write_table(const arrank_analysis *a, FILE *f, arrank_error *err)
{
    size_t *order = arrank_table_order(a);
    if (!order)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    const arrank_table_ctx tc = arrank_table_layout(a, order);
    arrank_table_intro(&tc, f);
    write_heads(&tc, f);
    unsigned seen_flags = 0;
    int any_error = 0;
    arrank_status rows_st = table_rows(&tc, f, &seen_flags, &any_error, err);
    free(order);
    if (rows_st != ARRANK_OK)
        return rows_st;
    arrank_status st = arrank_table_footer(&tc, f, seen_flags, any_error, 96, err);
    if (st != ARRANK_OK)
        return st;
    if (ferror(f))
        return arrank_errorf(err, ARRANK_EIO, "write failed");
    return ARRANK_OK;
}

arrank_status arrank_table_write(const arrank_analysis *analysis, FILE *stream, arrank_error *err)
{
    return write_table(analysis, stream, err);
}
