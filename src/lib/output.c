/*
 * output.c - the table for people, JSON and CSV for programs.
 *
 * All three writers read the same arrank_analysis.  Every number carries its
 * unit in its key or column header.  Saving goes through a temporary file in
 * the target's folder, fsync and rename, so an interrupted or failed write
 * never leaves half a file; special files (/dev/stdout, a pipe) are written
 * directly since they cannot be renamed onto.
 */
#include "arrank/output.h"

#include <csv.h>
#include <errno.h>
#include <jansson.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "arrank/version.h"
#include "diagnosis_out.h"
#include "util.h"
#include "number.h"
#include "rank_out.h"

#define NAME_WIDTH_MAX 28 /* longer sample names are shortened in the table */

/* Ranked samples first, in rank order, then the others in file order.
   Returns a new array of n_results indices, or NULL when out of memory. */
static size_t *display_order(const arrank_analysis *a)
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

/* ---- JSON ---------------------------------------------------------------- */

static json_t *jnum(double v)
{
    return isfinite(v) ? json_real(v) : json_null();
}

static json_t *jpair(double lo, double hi)
{
    return json_pack("[o, o]", jnum(lo), jnum(hi));
}

static json_t *jstr(const char *s)
{
    return s ? json_string(s) : json_null();
}

static json_t *flags_json(unsigned flags)
{
    json_t *arr = json_array();
    for (unsigned bit = 1; bit && bit < (1u << ARRANK_FLAG_COUNT); bit <<= 1)
        if (flags & bit)
            json_array_append_new(arr, json_string(arrank_flag_name(bit)));
    return arr;
}

static json_t *points_json(const arrank_result *res)
{
    const arrank_sample *s = res->sample;
    json_t *arr = json_array();
    for (size_t i = 0; i < s->n_points; i++) {
        const arrank_point *p = &s->points[i];
        json_t *o = json_object();
        json_object_set_new(o, "line", json_integer(p->line));
        json_object_set_new(o, "T_K", jnum(p->temp_K));
        json_object_set_new(o, "rate", jnum(p->rate));
        json_object_set_new(o, "rate_sd", jnum(p->rate_sd));
        json_object_set_new(o, "conversion", jnum(p->conversion));
        json_object_set_new(o, "time_on_stream_s", jnum(p->time_on_stream_s));
        json_object_set_new(o, "run", p->run >= 0 ? json_string(s->runs[p->run]) : json_null());
        json_object_set_new(o, "used", json_boolean(res->used[i]));
        json_array_append_new(arr, o);
    }
    return arr;
}

static json_t *sample_json(const arrank_analysis *a, const arrank_result *res, double t)
{
    const arrank_sample *s = res->sample;
    const arrank_arrhenius *f = &res->fit;
    int ok = res->error == NULL;
    double nan = NAN;
    double ea = ok ? f->ea_J_mol / 1000.0 : nan, ea_se = ok ? f->ea_se_J_mol / 1000.0 : nan;
    double lnA = ok ? f->ln_A : nan, lnA_se = ok ? f->ln_A_se : nan;
    json_t *o = json_object();
    json_object_set_new(o, "id", json_string(s->id));
    json_object_set_new(o, "file", json_string(s->file));
    json_object_set_new(o, "basis", json_string(arrank_basis_name(s->basis)));
    json_object_set_new(o, "rate_unit_in_file", jstr(s->rate_unit_file));
    json_object_set_new(o, "n_points", json_integer((json_int_t)s->n_points));
    json_object_set_new(o, "n_used", json_integer((json_int_t)(ok ? f->n : res->n_used)));
    json_object_set_new(o, "ea_kJ_mol", jnum(ea));
    json_object_set_new(o, "ea_kJ_mol_se", jnum(ea_se));
    json_object_set_new(o, "ea_kJ_mol_ci", jpair(ea - t * ea_se, ea + t * ea_se));
    json_object_set_new(o, "ln_A", jnum(lnA));
    json_object_set_new(o, "ln_A_se", jnum(lnA_se));
    json_object_set_new(o, "ln_A_ci", jpair(lnA - t * lnA_se, lnA + t * lnA_se));
    json_object_set_new(o, "corr_ea_lnA", jnum(ok ? f->corr_ea_lnA : nan));
    json_object_set_new(o, "T_ref_K", jnum(ok ? f->T_ref_K : nan));
    json_object_set_new(o, "T_min_K", jnum(ok ? f->T_min_K : nan));
    json_object_set_new(o, "T_max_K", jnum(ok ? f->T_max_K : nan));
    json_object_set_new(o, "ln_rate_at_T_ref", jnum(ok ? f->b0 : nan));
    json_object_set_new(o, "ln_rate_at_T_ref_se", jnum(ok ? sqrt(f->cov[0][0]) : nan));
    json_object_set_new(o, "cov_ea_kJ_mol_ln_A", jnum(ok ? f->cov_ea_lnA_J_mol / 1000.0 : nan));
    json_object_set_new(o, "dof", jnum(ok ? f->dof : nan));
    json_object_set_new(o, "t_quantile", jnum(ok ? t : nan));
    json_object_set_new(o, "resid_sd_ln_rate", jnum(ok ? f->resid_sd : nan));
    json_object_set_new(o, "r2", jnum(ok ? f->r2 : nan));
    json_object_set_new(o, "weighted", json_boolean(ok && f->weighted));
    json_object_set_new(o, "chi2_dof", jnum(ok ? f->chi2_dof : nan));
    int pred = ok && res->has_prediction;
    json_object_set_new(o, "rate_at_T", jnum(pred ? res->at_T.rate : nan));
    json_object_set_new(o, "rate_at_T_ci",
                        jpair(pred ? res->at_T.rate_lo : nan, pred ? res->at_T.rate_hi : nan));
    json_object_set_new(o, "ln_rate_at_T_se", jnum(pred ? res->at_T.ln_rate_se : nan));
    json_object_set_new(o, "rank", res->rank > 0 ? json_integer(res->rank) : json_null());
    json_object_set_new(o, "flags", flags_json(res->flags));
    json_object_set_new(o, "error", jstr(res->error));
    json_object_set_new(o, "error_line", res->error && res->error_line > 0
                                             ? json_integer(res->error_line) : json_null());
    json_t *notes = json_array();
    for (size_t i = 0; i < s->n_notes; i++)
        json_array_append_new(notes, json_string(s->notes[i]));
    json_object_set_new(o, "notes", notes);
    json_object_set_new(o, "points", points_json(res));
    /* diagnostics (diagnose.c): regime, excluded, curvature, criteria, ... */
    json_t *diag = arrank_diagnosis_json(res);
    if (json_is_object(diag))
        json_object_update(o, diag);
    else
        for (const char *const *k = (const char *const[]){"regime", "excluded", "curvature",
                                                           "criteria", "quality", NULL};
             *k; k++)
            json_object_set_new(o, *k, json_null());
    json_decref(diag);
    /* rank.c: p_best, group, p_beats, bootstrap interval, model */
    json_t *stats = arrank_sample_stats_json(a, (size_t)(res - a->results));
    if (stats) {
        json_object_update(o, stats);
        json_decref(stats);
    }
    return o;
}

/* The whole document except the samples, whose array is left empty: write_json streams them. */
static json_t *analysis_json(const arrank_analysis *a)
{
    const arrank_campaign *c = a->campaign;
    json_t *root = json_object();
    json_object_set_new(root, "program", json_string("arrank"));
    json_object_set_new(root, "version", json_string(ARRANK_VERSION));
    json_object_set_new(root, "campaign", json_string(c->name));
    json_object_set_new(root, "title", jstr(c->title));
    json_object_set_new(root, "operating_temperature_K", jnum(a->options.operating_temp_K));
    json_object_set_new(root, "rate_unit", json_string(c->rate_unit));
    json_object_set_new(root, "basis", json_string(arrank_basis_name(c->basis)));
    json_object_set_new(root, "confidence", json_real(a->options.confidence));
    json_object_set_new(root, "ranked_by", a->n_ranked ? json_string(arrank_rank_by_name(a->options.by))
                                                       : json_null());
    json_object_set_new(root, "R_J_mol_K", json_real(ARRANK_R_J_MOL_K));
    json_object_set_new(root, "samples", json_array());
    /* rank.c: compensation and ranking_uncertainty */
    json_t *rank_stats = arrank_rank_stats_json(a);
    if (rank_stats) {
        json_object_update(root, rank_stats);
        json_decref(rank_stats);
    }
    json_t *notes = json_array();
    for (size_t i = 0; i < c->n_notes; i++)
        json_array_append_new(notes, json_string(c->notes[i]));
    json_object_set_new(root, "notes", notes);
    return root;
}

#define JSON_FLAGS (JSON_INDENT(2) | JSON_REAL_PRECISION(15) | JSON_PRESERVE_ORDER)

/* Write text with every line after the first indented by `indent` spaces. */
static void write_indented(FILE *f, const char *text, int indent)
{
    for (const char *nl; (nl = strchr(text, '\n')) != NULL; text = nl + 1)
        fprintf(f, "%.*s\n%*s", (int)(nl - text), text, indent, "");
    fputs(text, f);
}

/*
 * The document is written the way json_dumpf would write it whole, but one
 * sample at a time: a campaign of 100,000 samples as one jansson tree took
 * gigabytes.  The document without samples is dumped with an empty
 * "samples" array, split there, and each sample object is dumped and
 * indented to its depth in between (jansson indents by nesting only, so the
 * bytes are the same).
 */
static arrank_status write_json(const arrank_analysis *a, FILE *f, arrank_error *err)
{
    static const char placeholder[] = "\n  \"samples\": []";
    json_t *root = analysis_json(a);
    char *text = root ? json_dumps(root, JSON_FLAGS) : NULL;
    json_decref(root);
    char *at = text ? strstr(text, placeholder) : NULL;
    if (!at) {
        free(text);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    size_t head = (size_t)(at - text) + sizeof placeholder - 2; /* up to and with the '[' */
    fwrite(text, 1, head, f);
    arrank_status st = ARRANK_OK;
    for (size_t i = 0; i < a->n_results && st == ARRANK_OK; i++) {
        const arrank_result *res = &a->results[i];
        double t = res->error ? NAN : arrank_t_quantile(a->options.confidence, res->fit.dof);
        json_t *o = sample_json(a, res, t);
        char *one = o ? json_dumps(o, JSON_FLAGS) : NULL;
        json_decref(o);
        if (!one) {
            st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            break;
        }
        fputs(i ? ",\n    " : "\n    ", f);
        write_indented(f, one, 4);
        free(one);
    }
    if (st == ARRANK_OK) {
        if (a->n_results)
            fputs("\n  ", f);
        fputs(text + head, f);
        if (fputc('\n', f) == EOF || ferror(f))
            st = arrank_errorf(err, ARRANK_EIO, "write failed");
    }
    free(text);
    return st;
}

/* ---- CSV ----------------------------------------------------------------- */

/* One field, quoted (RFC 4180) only when it holds a comma, quote, line break
   or edge space, so numbers stay plain for spreadsheets and scripts. */
static void csv_field(FILE *f, const char *s, int last)
{
    size_t n = strlen(s);
    if (strpbrk(s, ",\"\r\n") || (n && (s[0] == ' ' || s[n - 1] == ' ')))
        csv_fwrite(f, s, n);
    else
        fputs(s, f);
    fputc(last ? '\n' : ',', f);
}

static void csv_num(FILE *f, double v, int last)
{
    char buf[64] = "";
    if (isfinite(v))
        snprintf(buf, sizeof buf, "%.10g", v);
    csv_field(f, buf, last);
}

/* The names of the flags set, joined by sep, into buf (size n), cut as snprintf cuts. */
static void flags_joined(unsigned flags, char *buf, size_t n, const char *sep)
{
    buf[0] = '\0';
    size_t len = 0, sep_len = strlen(sep);
    for (unsigned bit = 1; bit && bit < (1u << ARRANK_FLAG_COUNT); bit <<= 1) {
        if (!(flags & bit))
            continue;
        const char *name = arrank_flag_name(bit);
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

static arrank_status write_csv(const arrank_analysis *a, FILE *f, arrank_error *err)
{
    const char *u = a->campaign->rate_unit;
    char h[6][160];
    snprintf(h[0], sizeof h[0], "ln_A [ln(%s)]", u);
    snprintf(h[1], sizeof h[1], "ln_A_se [ln(%s)]", u);
    snprintf(h[2], sizeof h[2], "ln_A_ci_low [ln(%s)]", u);
    snprintf(h[3], sizeof h[3], "ln_A_ci_high [ln(%s)]", u);
    const char *fixed[] = {"rank", "id", "file", "n_points", "n_used", "ea [kJ/mol]",
                           "ea_se [kJ/mol]", "ea_ci_low [kJ/mol]", "ea_ci_high [kJ/mol]"};
    for (size_t i = 0; i < sizeof fixed / sizeof *fixed; i++)
        csv_field(f, fixed[i], 0);
    for (int i = 0; i < 4; i++)
        csv_field(f, h[i], 0);
    char rh[3][200];
    snprintf(rh[0], sizeof rh[0], "rate_at_T [%s]", u);
    snprintf(rh[1], sizeof rh[1], "rate_at_T_ci_low [%s]", u);
    snprintf(rh[2], sizeof rh[2], "rate_at_T_ci_high [%s]", u);
    const char *tail[] = {"corr_ea_lnA", "T_ref [K]", "T_min [K]", "T_max [K]", "T_op [K]",
                          rh[0], rh[1], rh[2], "confidence", "p_best", "group", "flags", "error"};
    for (size_t i = 0; i < sizeof tail / sizeof *tail; i++)
        csv_field(f, tail[i], i + 1 == sizeof tail / sizeof *tail);

    size_t *order = display_order(a);
    if (!order)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    for (size_t k = 0; k < a->n_results; k++) {
        const arrank_result *res = &a->results[order[k]];
        const arrank_arrhenius *fit = &res->fit;
        int ok = !res->error;
        double t = ok ? arrank_t_quantile(a->options.confidence, fit->dof) : NAN;
        char rank[32] = "";
        if (res->rank)
            snprintf(rank, sizeof rank, "%d", res->rank);
        csv_field(f, rank, 0);
        csv_field(f, res->sample->id, 0);
        csv_field(f, res->sample->file, 0);
        csv_num(f, (double)res->sample->n_points, 0);
        csv_num(f, (double)(ok ? fit->n : res->n_used), 0);
        double ea = ok ? fit->ea_J_mol / 1e3 : NAN, se = ok ? fit->ea_se_J_mol / 1e3 : NAN;
        csv_num(f, ea, 0);
        csv_num(f, se, 0);
        csv_num(f, ea - t * se, 0);
        csv_num(f, ea + t * se, 0);
        double la = ok ? fit->ln_A : NAN, lse = ok ? fit->ln_A_se : NAN;
        csv_num(f, la, 0);
        csv_num(f, lse, 0);
        csv_num(f, la - t * lse, 0);
        csv_num(f, la + t * lse, 0);
        csv_num(f, ok ? fit->corr_ea_lnA : NAN, 0);
        csv_num(f, ok ? fit->T_ref_K : NAN, 0);
        csv_num(f, ok ? fit->T_min_K : NAN, 0);
        csv_num(f, ok ? fit->T_max_K : NAN, 0);
        csv_num(f, a->options.operating_temp_K, 0);
        int p = ok && res->has_prediction;
        csv_num(f, p ? res->at_T.rate : NAN, 0);
        csv_num(f, p ? res->at_T.rate_lo : NAN, 0);
        csv_num(f, p ? res->at_T.rate_hi : NAN, 0);
        csv_num(f, a->options.confidence, 0);
        const struct arrank_sample_stats *ss = res->stats;
        csv_num(f, ss ? ss->p_best : NAN, 0);
        csv_num(f, ss && ss->group > 0 ? (double)ss->group : NAN, 0);
        char flags[512];
        flags_joined(res->flags, flags, sizeof flags, ";");
        csv_field(f, flags, 0);
        csv_field(f, res->error ? res->error : "", 1);
    }
    free(order);
    if (ferror(f))
        return arrank_errorf(err, ARRANK_EIO, "write failed");
    return ARRANK_OK;
}

/* ---- table ---------------------------------------------------------------- */

/* Display width of UTF-8 text: code points, not bytes. */
static size_t text_width(const char *s)
{
    size_t w = 0;
    for (; *s; s++)
        if (((unsigned char)*s & 0xC0) != 0x80)
            w++;
    return w;
}

/* Copy s into buf shortened to at most width code points ("..." at the end),
   with control characters shown as '?', so a name cannot break the layout. */
static void fit_text(const char *s, size_t width, char *buf, size_t n)
{
    size_t w = text_width(s), out = 0, cps = 0, keep = w > width ? width - 3 : w;
    for (const char *p = s; *p && out + 4 < n; p++) {
        unsigned char c = (unsigned char)*p;
        if ((c & 0xC0) != 0x80) {
            if (cps == keep)
                break;
            cps++;
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
    size_t w = text_width(s);
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
    size_t w = text_width(name);
    p = put_text(p, name, strlen(name));
    return w < width ? put_spaces(p, width - w) : p;
}

/* "%.<prec>f [%.<prec>f, %.<prec>f]" of v, lo and hi at p; returns the end
   (not cut: end_left cuts). */
static char *put_interval(char *p, int prec, double v, double lo, double hi)
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
static char *put_rate(char *p, double v)
{
    if (!isfinite(v)) {
        *p = '-';
        return p + 1;
    }
    return p + arrank_format_general(p, NUM_ROOM, 3, v); /* a few bytes: never cut */
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
        double t = arrank_t_quantile(a->options.confidence, m->dof);
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

/* What every row of the table needs: the layout and the analysis. */
typedef struct {
    const arrank_analysis *a;
    const size_t *order;
    size_t name_w, w_rank, w_pb, w_grp, w_n, w_T, w_ea, w_lna, w_rate, w_boot;
    int have_T, have_stats;
} table_ctx;

/* Row k of the table (display order) appended to r. */
static void table_row(const table_ctx *tc, size_t k, row_buf *r, unsigned *seen_flags,
                      int *any_error)
{
    const arrank_analysis *a = tc->a;
    const arrank_options *o = &a->options;
    const arrank_result *res = &a->results[tc->order[k]];
    const arrank_arrhenius *fit = &res->fit;
    char *p = row_room(r, ROW_ROOM + (res->error ? strlen(res->error) : 0));
    if (!p)
        return;
    char *const row = p, cell[CELL_MAX + 1];
    if (a->n_ranked) {
        if (res->rank) {
            p = put_right(p, cell, int_text(cell, res->rank), tc->w_rank);
        } else {
            p = put_right(p, "-", 1, tc->w_rank);
        }
        p = put_text(p, "  ", 2);
        if (tc->have_stats) {
            const struct arrank_sample_stats *ss = res->rank ? res->stats : NULL;
            if (ss && isfinite(ss->p_best)) {
                int len = arrank_format_fixed(cell, sizeof cell, 3, ss->p_best);
                p = put_right(p, cell, len < 0 ? 0 : (size_t)len, tc->w_pb);
            } else {
                p = put_right(p, "-", 1, tc->w_pb);
            }
            p = put_text(p, "  ", 2);
            if (ss && ss->group > 0) {
                p = put_right(p, cell, int_text(cell, ss->group), tc->w_grp);
            } else {
                p = put_right(p, "-", 1, tc->w_grp);
            }
            p = put_text(p, "  ", 2);
        }
    }
    p = put_name(p, res->sample->id, tc->name_w);
    p = put_text(p, "  ", 2);
    if (res->error) {
        p = put_right(p, cell, int_text(cell, (long long)res->sample->n_points), tc->w_n);
        p = put_text(p, "  not fitted: ", 14);
        p = put_text(p, res->error, strlen(res->error));
        *p++ = '\n';
        r->n += (size_t)(p - row);
        *any_error = 1;
        return;
    }
    double t = arrank_t_quantile(o->confidence, fit->dof);
    if (fit->n < res->sample->n_points) {
        int len = snprintf(cell, sizeof cell, "%zu/%zu", fit->n, res->sample->n_points);
        p = put_right(p, cell, len < 0 ? 0 : (size_t)len, tc->w_n);
    } else {
        p = put_right(p, cell, int_text(cell, (long long)fit->n), tc->w_n);
    }
    p = put_text(p, "  ", 2);
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
    p = end_left(start, put_interval(p, 1, ea, ea - t * se, ea + t * se), tc->w_ea);
    p = put_text(p, "  ", 2);
    start = p;
    p = put_interval(p, 2, fit->ln_A, fit->ln_A - t * fit->ln_A_se, fit->ln_A + t * fit->ln_A_se);
    p = end_left(start, p, tc->w_lna);
    if (tc->have_T) {
        p = put_text(p, "  ", 2);
        start = p;
        p = put_rate(p, res->at_T.rate);
        p = put_text(p, " [", 2);
        p = put_rate(p, res->at_T.rate_lo);
        p = put_text(p, ", ", 2);
        p = put_rate(p, res->at_T.rate_hi);
        *p++ = ']';
        p = end_left(start, p, tc->w_rate);
        if (tc->have_stats && o->bootstrap > 0) {
            p = put_text(p, "  ", 2);
            const struct arrank_sample_stats *ss = res->stats;
            start = p;
            if (ss && ss->has_bootstrap) {
                *p++ = '[';
                p = put_rate(p, ss->rate_lo_boot);
                p = put_text(p, ", ", 2);
                p = put_rate(p, ss->rate_hi_boot);
                *p++ = ']';
            } else {
                *p++ = '-';
            }
            p = end_left(start, p, tc->w_boot);
        }
    }
    p = put_text(p, "  ", 2);
    if (res->flags) {
        flags_joined(res->flags, p, 512, ", "); /* as many bytes as ever: under 512 */
        p += strlen(p);
    } else {
        *p++ = '-';
    }
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
    const table_ctx *tc;
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
static void table_row_ahead(const table_ctx *tc, size_t k, size_t hi, row_buf *r,
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
    row_buf *r = &j->rows[w];
    r->n = 0;
    for (size_t k = lo; k < hi; k++)
        table_row_ahead(j->tc, k, hi, r, &j->seen[w], &j->any_error[w]);
}

static arrank_status table_rows(const table_ctx *tc, FILE *f, unsigned *seen_flags,
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
        size_t w = text_width(results[i].sample->id);
        if (w > name_w)
            name_w = w;
    }
    return name_w > NAME_WIDTH_MAX ? NAME_WIDTH_MAX : name_w;
}

static arrank_status write_table(const arrank_analysis *a, FILE *f, arrank_error *err)
{
    const arrank_campaign *c = a->campaign;
    const arrank_options *o = &a->options;
    int have_T = isfinite(o->operating_temp_K);
    const size_t name_w = name_width(a);

    fprintf(f, "campaign '%s': %zu samples, rates in %s (%s basis), %g%% intervals\n",
            c->title ? c->title : c->name, c->n_samples, c->rate_unit,
            arrank_basis_name(c->basis), 100.0 * o->confidence);
    if (have_T)
        fprintf(f, "operating temperature %.2f K (%.2f degC)%s%s\n", o->operating_temp_K,
                o->operating_temp_K - 273.15, a->n_ranked ? ", ranked by " : "",
                a->n_ranked ? (o->by == ARRANK_BY_EA ? "lowest Ea"
                               : o->by == ARRANK_BY_PREFACTOR ? "highest pre-exponential factor"
                                                              : "rate at the operating temperature")
                            : "");
    fputc('\n', f);

    char rate_head[160];
    snprintf(rate_head, sizeof rate_head, "rate at %.2f K [%s]", o->operating_temp_K,
             c->rate_unit);
    char lnA_head[160];
    snprintf(lnA_head, sizeof lnA_head, "ln A [ln(%s)]", c->rate_unit);
    const size_t w_rank = 4, w_n = 5, w_T = 11, w_ea = 22, w_la = 22;
    size_t w_rate = have_T ? text_width(rate_head) : 0;
    if (w_rate && w_rate < 26)
        w_rate = 26;
    size_t w_lna = text_width(lnA_head) > w_la ? text_width(lnA_head) : w_la;

    const int have_stats = a->rank_stats != NULL; /* rank.h */
    const size_t w_pb = 7, w_grp = 5, w_boot = 26;
    if (a->n_ranked) {
        pad_print(f, "rank", w_rank, 0);
        fputs("  ", f);
        if (have_stats) {
            pad_print(f, "P(best)", w_pb, 1);
            fputs("  ", f);
            pad_print(f, "group", w_grp, 1);
            fputs("  ", f);
        }
    }
    pad_print(f, "sample", name_w, 0);
    fputs("  ", f);
    pad_print(f, "n", w_n, 1);
    fputs("  ", f);
    pad_print(f, "T range [K]", w_T, 0);
    fputs("  ", f);
    pad_print(f, "Ea [kJ/mol]", w_ea, 0);
    fputs("  ", f);
    pad_print(f, lnA_head, w_lna, 0);
    if (have_T) {
        fputs("  ", f);
        pad_print(f, rate_head, w_rate, 0);
        if (have_stats && o->bootstrap > 0) {
            fputs("  ", f);
            pad_print(f, "bootstrap interval", w_boot, 0);
        }
    }
    fputs("  flags\n", f);

    unsigned seen_flags = 0;
    int any_error = 0;
    size_t *order = display_order(a);
    if (!order)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    const table_ctx tc = {.a = a,
                          .order = order,
                          .name_w = name_w,
                          .w_rank = w_rank,
                          .w_pb = w_pb,
                          .w_grp = w_grp,
                          .w_n = w_n,
                          .w_T = w_T,
                          .w_ea = w_ea,
                          .w_lna = w_lna,
                          .w_rate = w_rate,
                          .w_boot = w_boot,
                          .have_T = have_T,
                          .have_stats = have_stats};
    arrank_status rows_st = table_rows(&tc, f, &seen_flags, &any_error, err);
    free(order);
    if (rows_st != ARRANK_OK)
        return rows_st;

    if (seen_flags || any_error)
        fputc('\n', f);
    for (unsigned bit = 1; bit && bit < (1u << ARRANK_FLAG_COUNT); bit <<= 1)
        if (seen_flags & bit)
            fprintf(f, "  %-16s %s\n", arrank_flag_name(bit), arrank_flag_words(bit));
    if (have_stats) {
        /* rank.h: what the groups mean, and the compensation verdict in words */
        fprintf(f, "\nP(best): share of %zu %s draws in which the sample ranks first. "
                   "Samples in one group\nare not significantly different from the group's "
                   "first sample (Holm, %g%%).\n",
                a->rank_stats->draws, o->normal_draws ? "normal" : "Student-t",
                100.0 * o->confidence);
        /* the sentence wrapped at 96 columns, for a terminal */
        const char *w = a->rank_stats->compensation.sentence;
        while (*w) {
            size_t len = strlen(w), cut = len;
            if (len > 96) {
                cut = 96;
                while (cut > 0 && w[cut] != ' ')
                    cut--;
                if (cut == 0)
                    cut = 96;
            }
            fprintf(f, "%.*s\n", (int)cut, w);
            w += cut;
            while (*w == ' ')
                w++;
        }
    }
    if (o->model != ARRANK_MODEL_ARRHENIUS)
        write_model_table(a, f);
    if (have_T && (seen_flags & ARRANK_FLAG_EXTRAPOLATED))
        fprintf(f, "\nCaution: rates outside the measured temperature range are extrapolations of\n"
                   "apparent kinetics; do not use them for reactor design or safety limits.\n");
    if (ferror(f))
        return arrank_errorf(err, ARRANK_EIO, "write failed");
    return ARRANK_OK;
}

arrank_status arrank_output_write(const arrank_analysis *analysis, arrank_output_format format,
                                  FILE *stream, arrank_error *err)
{
    switch (format) {
    case ARRANK_OUTPUT_JSON: return write_json(analysis, stream, err);
    case ARRANK_OUTPUT_CSV: return write_csv(analysis, stream, err);
    case ARRANK_OUTPUT_TABLE: return write_table(analysis, stream, err);
    }
    return arrank_errorf(err, ARRANK_EINVAL, "unknown output format %d", (int)format);
}

/* ---- atomic save ----------------------------------------------------------- */

/* mkdir -p for the folder part of path. */
static arrank_status make_parent(const char *path, arrank_error *err)
{
    char *dir = arrank_strdup(path);
    if (!dir)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    char *slash = strrchr(dir, '/');
    if (!slash || slash == dir) {
        free(dir);
        return ARRANK_OK;
    }
    *slash = '\0';
    for (char *p = dir + 1; ; p++) {
        if (*p == '/' || *p == '\0') {
            char save = *p;
            *p = '\0';
            if (mkdir(dir, 0777) != 0 && errno != EEXIST) {
                arrank_status st = arrank_errorf(err, ARRANK_EIO, "cannot create folder '%s': %s",
                                                 dir, strerror(errno));
                free(dir);
                return st;
            }
            *p = save;
            if (save == '\0')
                break;
        }
    }
    free(dir);
    return ARRANK_OK;
}

arrank_status arrank_output_save_with(const char *path,
                                      arrank_status (*writer)(FILE *, void *, arrank_error *),
                                      void *ctx, arrank_error *err)
{
    if (strcmp(path, "-") == 0) {
        arrank_status st = writer(stdout, ctx, err);
        if (st == ARRANK_OK && fflush(stdout) != 0)
            return arrank_errorf(err, ARRANK_EIO, "cannot write to standard output: %s",
                                 strerror(errno));
        return st;
    }
    struct stat sb;
    if (stat(path, &sb) == 0 && !S_ISREG(sb.st_mode)) {
        /* a device or pipe: write in place */
        FILE *f = fopen(path, "w");
        if (!f)
            return arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path, strerror(errno));
        arrank_status st = writer(f, ctx, err);
        int bad = fclose(f) != 0;
        if (st == ARRANK_OK && bad)
            st = arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path, strerror(errno));
        else if (st == ARRANK_EIO)
            arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path, strerror(errno));
        return st;
    }
    arrank_status st = make_parent(path, err);
    if (st != ARRANK_OK)
        return st;
    size_t n = strlen(path) + 16;
    char *tmp = malloc(n);
    if (!tmp)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    snprintf(tmp, n, "%s.tmpXXXXXX", path);
    int fd = mkstemp(tmp);
    if (fd < 0) {
        st = arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path, strerror(errno));
        free(tmp);
        return st;
    }
    FILE *f = fdopen(fd, "w");
    if (!f) {
        st = arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path, strerror(errno));
        close(fd);
        unlink(tmp);
        free(tmp);
        return st;
    }
    st = writer(f, ctx, err);
    int saved_errno = 0;
    if (fflush(f) != 0 || fsync(fileno(f)) != 0)
        saved_errno = errno ? errno : EIO;
    if (fclose(f) != 0 && !saved_errno)
        saved_errno = errno ? errno : EIO;
    if (st == ARRANK_OK && saved_errno)
        st = arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path, strerror(saved_errno));
    else if (st == ARRANK_EIO)
        arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path,
                      strerror(saved_errno ? saved_errno : EIO));
    if (st == ARRANK_OK) {
        /* mkstemp makes 0600; results are ordinary files */
        mode_t mask = umask(0);
        umask(mask);
        chmod(tmp, 0666 & ~mask);
        if (rename(tmp, path) != 0)
            st = arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path, strerror(errno));
    }
    if (st != ARRANK_OK)
        unlink(tmp);
    free(tmp);
    return st;
}

struct save_ctx {
    const arrank_analysis *analysis;
    arrank_output_format format;
};

static arrank_status save_writer(FILE *f, void *ctx, arrank_error *err)
{
    const struct save_ctx *s = ctx;
    return arrank_output_write(s->analysis, s->format, f, err);
}

arrank_status arrank_output_save(const arrank_analysis *analysis, arrank_output_format format,
                                 const char *path, arrank_error *err)
{
    struct save_ctx ctx = {analysis, format};
    return arrank_output_save_with(path, save_writer, &ctx, err);
}
