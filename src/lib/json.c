/*
 * json.c - the results as JSON for programs, streamed sample by sample.
 *
 * One record per sample: the fit with its intervals, the rate at T, rank and
 * ranking statistics, flags, the points left out with their reasons and a
 * summary of the diagnosis.  With detail (--json-points) each record also
 * holds every point and the whole diagnosis (per-point regime and local Ea,
 * the curvature tests' numbers, criteria, quality).  Every number carries its
 * unit in its key; quantiles come from the pipeline (analysis.c).
 */
#include "json.h"

#include <jansson.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/cautions.h"
#include "arrank/diagnose.h"
#include "arrank/version.h"
#include "number.h"
#include "util.h"
#include "diagnosis_out.h"
#include "json_testing.h"
#include "rank_out.h"

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
        json_t *file = json_string(arrank_point_file(s, p)); /* null when not UTF-8 */
        json_object_set_new(o, "file", file ? file : json_null());
        json_object_set_new(o, "line", json_integer(p->line));
        json_object_set_new(o, "T_K", jnum(p->temp_K));
        json_object_set_new(o, "rate", jnum(p->rate));
        json_object_set_new(o, "rate_sd", jnum(p->rate_sd));
        json_object_set_new(o, "conversion", jnum(p->conversion));
        json_object_set_new(o, "time_on_stream_s", jnum(p->time_on_stream_s));
        json_object_set_new(o, "run", p->run >= 0 ? json_string(s->runs[p->run]) : json_null());
        json_object_set_new(o, "used", json_boolean(res->used[i]));
        /* why the reader left the point out (arrank_point.omitted), null when usable */
        json_object_set_new(o, "left_out", jstr(p->omitted));
        json_object_set_new(o, "left_out_column", p->omitted && p->omitted_column > 0
                                                      ? json_integer(p->omitted_column)
                                                      : json_null());
        json_array_append_new(arr, o);
    }
    return arr;
}

/* Keys of the diagnosis (diagnose.c) that the record per sample leaves out
   unless the detail is asked for: the per-point arrays and the numbers
   behind the verdicts.  What stays is the summary: excluded points with their
   reasons, the kinetic window, the curvature verdict, findings and notes. */
static const char *const detail_keys[] = {"regime", "local_ea_kJ_mol", "criteria", "quality",
                                          NULL};
static const char *const curvature_detail_keys[] = {"quadratic", "series_resistance",
                                                    "local_ea", NULL};

/* The diagnosis's keys merged into the sample object o: all of them with
   detail, else the summary.  Without a diagnosis, its main keys are null. */
static void merge_diagnosis(json_t *o, const arrank_result *res, int detail)
{
    json_t *diag = arrank_diagnosis_json(res);
    if (json_is_object(diag)) {
        if (!detail) {
            for (const char *const *k = detail_keys; *k; k++)
                json_object_del(diag, *k);
            json_t *curv = json_object_get(diag, "curvature");
            for (const char *const *k = curvature_detail_keys; curv && *k; k++)
                json_object_del(curv, *k);
        }
        json_object_update(o, diag);
    } else {
        static const char *const all[] = {"regime", "excluded", "curvature", "criteria",
                                          "quality", NULL};
        static const char *const summary[] = {"excluded", "curvature", NULL};
        for (const char *const *k = detail ? all : summary; *k; k++)
            json_object_set_new(o, *k, json_null());
    }
    json_decref(diag);
}

/* The keys that follow a sample's own into o: the diagnosis's (diagnose.c:
   excluded, kinetic window, curvature, ...) and the ranking statistics'
   (rank.c: p_best, group, p_beats, bootstrap interval, model). */
static void merge_rest(json_t *o, const arrank_analysis *a, const arrank_result *res, int detail)
{
    merge_diagnosis(o, res, detail);
    json_t *stats = arrank_sample_stats_json(a, (size_t)(res - a->results));
    if (stats) {
        json_object_update(o, stats);
        json_decref(stats);
    }
}

/* A stability hold at one temperature (arrank_hold, verdicts.h): the drift
   of ln r with time on stream, its verdict and its words; null for any other
   sample. */
static json_t *hold_json(const arrank_result *res)
{
    const arrank_hold *h = res->hold;
    if (!h)
        return json_null();
    const arrank_drift *dr = &h->drift;
    json_t *o = json_object();
    json_object_set_new(o, "temp_K", jnum(dr->temp_ref_K));
    json_object_set_new(o, "n_points", json_integer((json_int_t)dr->n_points));
    json_object_set_new(o, "time_on_stream_h", jpair(dr->time_min_h, dr->time_max_h));
    json_object_set_new(o, "ln_rate_at_0", jnum(dr->ln_rate_ref));
    json_object_set_new(o, "slope_ln_rate_per_h", jnum(dr->slope_ln_per_h));
    json_object_set_new(o, "slope_se", jnum(dr->slope_se));
    json_object_set_new(o, "dof", jnum(dr->dof));
    json_object_set_new(o, "t", jnum(dr->t));
    json_object_set_new(o, "p", jnum(dr->p));
    json_object_set_new(o, "change", jnum(dr->change));
    json_object_set_new(o, "change_ci", jpair(h->change_lo, h->change_hi));
    json_object_set_new(o, "verdict", json_string(dr->verdict < 0   ? "deactivation"
                                                  : dr->verdict > 0 ? "activation"
                                                                    : "none"));
    json_object_set_new(o, "words", jstr(h->words));
    return o;
}

static json_t *sample_json(const arrank_analysis *a, const arrank_result *res, int detail)
{
    const double t = res->t_quantile; /* the pipeline's (analysis.c) */
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
    /* the model in force: the ones rate_at_T_ci uses (analysis_models.c) */
    json_object_set_new(o, "dof", jnum(ok ? res->interval_dof : nan));
    json_object_set_new(o, "t_quantile", jnum(ok ? res->interval_t : nan));
    /* s = sqrt(rss/dof) is the scatter of ln r only for unweighted fits; for
       weighted ones it is sqrt(chi2/dof), named so */
    json_object_set_new(o, "resid_sd_ln_rate", jnum(ok && !f->weighted ? f->resid_sd : nan));
    json_object_set_new(o, "r2", jnum(ok ? f->r2 : nan));
    json_object_set_new(o, "weighted", json_boolean(ok && f->weighted));
    json_object_set_new(o, "chi2_dof", jnum(ok ? f->chi2_dof : nan));
    json_object_set_new(o, "sqrt_chi2_dof", jnum(ok && f->weighted ? f->resid_sd : nan));
    int pred = ok && res->has_prediction;
    json_object_set_new(o, "rate_at_T", jnum(pred ? res->at_T.rate : nan));
    json_object_set_new(o, "rate_at_T_ci",
                        jpair(pred ? res->at_T.rate_lo : nan, pred ? res->at_T.rate_hi : nan));
    json_object_set_new(o, "ln_rate_at_T_se", jnum(pred ? res->at_T.ln_rate_se : nan));
    json_object_set_new(o, "extrapolation_K", jnum(pred ? res->at_T.extrapolation_K : nan));
    json_object_set_new(o, "extrapolation_rel", jnum(pred ? res->at_T.extrapolation_rel : nan));
    json_object_set_new(o, "rank", res->rank > 0 ? json_integer(res->rank) : json_null());
    json_object_set_new(o, "flags", flags_json(res->flags));
    json_object_set_new(o, "error", jstr(res->error));
    json_object_set_new(o, "error_line", res->error && res->error_line > 0
                                             ? json_integer(res->error_line) : json_null());
    json_object_set_new(o, "error_column", res->error && res->error_column > 0
                                               ? json_integer(res->error_column) : json_null());
    json_object_set_new(o, "skipped", json_boolean(s->skipped));
    json_t *notes = json_array();
    for (size_t i = 0; i < s->n_notes; i++)
        json_array_append_new(notes, json_string(s->notes[i]));
    json_object_set_new(o, "notes", notes);
    json_object_set_new(o, "stability_hold", hold_json(res));
    if (detail)
        json_object_set_new(o, "points", points_json(res));
    merge_rest(o, a, res, detail);
    return o;
}

/* The files the campaign did not use: each unreadable file (a sample with
   `skipped`) with the line, column and reason of its error, then each file
   read but not used ("PATH: why" in campaign->unused, a byte-identical copy),
   without a line or column. */
static json_t *files_not_used_json(const arrank_analysis *a)
{
    const arrank_campaign *c = a->campaign;
    json_t *arr = json_array();
    for (size_t i = 0; arr && i < a->n_results; i++) {
        const arrank_sample *s = a->results[i].sample;
        if (!s->skipped)
            continue;
        json_array_append_new(
            arr, json_pack("{s:o, s:o, s:o, s:o}", "file", jstr(s->file), "line",
                           s->problem_line > 0 ? json_integer(s->problem_line) : json_null(),
                           "column",
                           s->problem_column > 0 ? json_integer(s->problem_column) : json_null(),
                           "reason", jstr(s->problem)));
    }
    for (size_t k = 0; arr && k < c->n_unused; k++) {
        /* the base name, as a sample's "file" */
        const char *u = c->unused[k], *slash = strrchr(u, '/'), *base = slash ? slash + 1 : u;
        const char *sep = strstr(base, ": ");
        json_t *file = sep ? json_stringn(base, (size_t)(sep - base)) : json_string(base);
        json_array_append_new(arr, json_pack("{s:o, s:o, s:o, s:o}", "file",
                                             file ? file : json_null(), "line", json_null(),
                                             "column", json_null(), "reason",
                                             jstr(sep ? sep + 2 : NULL)));
    }
    return arr;
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
    json_object_set_new(root, "n_files", json_integer((json_int_t)c->n_files));
    json_object_set_new(root, "files_not_used", files_not_used_json(a));
    /* cautions.c: the same lines as the table's and check's */
    json_t *cautions = json_array();
    char **lines = NULL;
    size_t n = 0;
    if (!cautions || arrank_cautions_list(a, &lines, &n, NULL) != ARRANK_OK) {
        json_decref(cautions);
        json_decref(root);
        return NULL;
    }
    for (size_t k = 0; k < n; k++)
        json_array_append_new(cautions, json_string(lines[k]));
    arrank_cautions_free(lines, n);
    json_object_set_new(root, "cautions", cautions);
    return root;
}

#define JSON_FLAGS (JSON_INDENT(2) | JSON_REAL_PRECISION(15) | JSON_PRESERVE_ORDER)
/* A sample's record: one line, 4 spaces in inside "samples" (jansson
   without an indent writes ", " and ": " and no line break). */
#define RECORD_FLAGS (JSON_REAL_PRECISION(15) | JSON_PRESERVE_ORDER)

/* A growing text: samples' JSON records. */
typedef struct {
    char *mem;
    size_t n, cap;
} text_buf;

/* Room for need more bytes; -1 when out of memory. */
static int text_room(text_buf *b, size_t need)
{
    if (b->cap - b->n >= need)
        return 0;
    size_t cap = b->cap ? 2 * b->cap : (size_t)1 << 16;
    while (cap - b->n < need)
        cap *= 2;
    char *m = realloc(b->mem, cap);
    if (!m)
        return -1;
    b->mem = m;
    b->cap = cap;
    return 0;
}

static int text_put(text_buf *b, const char *s, size_t len)
{
    if (text_room(b, len))
        return -1;
    memcpy(b->mem + b->n, s, len);
    b->n += len;
    return 0;
}

/* json_dump_callback's sink: the bytes appended as they come. */
static int text_sink(const char *s, size_t len, void *data)
{
    return text_put(data, s, len);
}

/*
 * The record per sample written directly (the fast path): the sample's own
 * keys go straight into the text with the bytes jansson would write for them
 * (json_dumps with JSON_FLAGS), and only the diagnosis summary and the
 * ranking statistics, whose keys belong to diagnose.c and rank.c, go through
 * jansson.  Building every number as a jansson object and printing it with
 * printf took most of the JSON's time.  The general path (jansson for
 * everything, arrank_json_reference(1)) is kept for the test that holds the
 * two byte for byte (tests/test_output.c).
 */
static int json_reference = 0;

void arrank_json_reference(int on)
{
    json_reference = on;
}


static void put_text(text_buf *b, int *bad, const char *s, size_t len)
{
    if (text_put(b, s, len))
        *bad = 1;
}

#define PUT(lit) put_text(b, bad, lit, sizeof lit - 1)

/* A real as jansson prints it with JSON_REAL_PRECISION(15): "%.15g" (number.c
   writes what snprintf would), ".0" added when it has neither '.' nor 'e', the
   exponent without '+' and leading zeros; null when not finite (jnum). */
static void put_real(text_buf *b, int *bad, double v)
{
    if (!isfinite(v)) {
        PUT("null");
        return;
    }
    char buf[64];
    int len = arrank_format_general(buf, sizeof buf - 3, 15, v);
    if (len <= 0 || (size_t)len >= sizeof buf - 3) {
        *bad = 1;
        return;
    }
    char *e = memchr(buf, 'e', (size_t)len);
    if (!e && !memchr(buf, '.', (size_t)len)) {
        memcpy(buf + len, ".0", 2);
        len += 2;
    }
    if (e) {
        char *start = e + 1, *end = e + 2;
        if (*start == '-')
            start++;
        while (*end == '0')
            end++;
        if (end != start) {
            memmove(start, end, (size_t)(buf + len - end));
            len -= (int)(end - start);
        }
    }
    put_text(b, bad, buf, (size_t)len);
}

static void put_int(text_buf *b, int *bad, long long v)
{
    char buf[32];
    int len = snprintf(buf, sizeof buf, "%lld", v);
    put_text(b, bad, buf, (size_t)len);
}

/* Length of the valid UTF-8 sequence at s (1 to 4), 0 when invalid, as
   jansson checks it (RFC 3629: no overlong forms, no surrogates, at most
   U+10FFFF). */
static size_t utf8_len(const unsigned char *s)
{
    unsigned c = s[0];
    if (c < 0x80)
        return 1;
    size_t n = c >= 0xF0 ? 4 : c >= 0xE0 ? 3 : c >= 0xC2 ? 2 : 0;
    if (n == 0 || c > 0xF4)
        return 0;
    unsigned long cp = c & (0x7F >> n);
    for (size_t k = 1; k < n; k++) {
        if ((s[k] & 0xC0) != 0x80)
            return 0;
        cp = (cp << 6) | (s[k] & 0x3F);
    }
    if ((n == 3 && cp < 0x800) || (n == 4 && cp < 0x10000) || cp > 0x10FFFF ||
        (cp >= 0xD800 && cp <= 0xDFFF))
        return 0;
    return n;
}

/* 1 when json_string would take s (valid UTF-8). */
static int utf8_ok(const char *s)
{
    for (const unsigned char *p = (const unsigned char *)s; *p;) {
        if (*p < 0x80) { /* ASCII, most of what is written: no call */
            p++;
            continue;
        }
        size_t n = utf8_len(p);
        if (!n)
            return 0;
        p += n;
    }
    return 1;
}

/* s as a JSON string, escaped as jansson escapes it: \\ \" \b \f \n \r \t
   and \u00XX for the other control characters; UTF-8 as it stands. */
static void put_string(text_buf *b, int *bad, const char *s)
{
    PUT("\"");
    const char *run = s;
    for (const char *p = s;; p++) {
        unsigned char c = (unsigned char)*p;
        if (c >= 0x20 && c != '"' && c != '\\')
            continue;
        put_text(b, bad, run, (size_t)(p - run));
        if (c == '\0')
            break;
        char esc[8];
        const char *t = c == '"' ? "\\\"" : c == '\\' ? "\\\\" : c == '\b' ? "\\b"
                      : c == '\f' ? "\\f" : c == '\n' ? "\\n" : c == '\r' ? "\\r"
                      : c == '\t' ? "\\t" : NULL;
        if (!t) {
            snprintf(esc, sizeof esc, "\\u%04X", (unsigned)c);
            t = esc;
        }
        put_text(b, bad, t, strlen(t));
        run = p + 1;
    }
    PUT("\"");
}

static void put_bool(text_buf *b, int *bad, int v)
{
    if (v)
        PUT("true");
    else
        PUT("false");
}

/* The next key of the sample; *first says whether it is the first. */
static void put_key(text_buf *b, int *bad, int *first, const char *key)
{
    if (!*first)
        PUT(", ");
    *first = 0;
    PUT("\"");
    put_text(b, bad, key, strlen(key));
    PUT("\": ");
}

static void key_real(text_buf *b, int *bad, int *first, const char *key, double v)
{
    put_key(b, bad, first, key);
    put_real(b, bad, v);
}

static void key_pair(text_buf *b, int *bad, int *first, const char *key, double lo, double hi)
{
    put_key(b, bad, first, key);
    PUT("[");
    put_real(b, bad, lo);
    PUT(", ");
    put_real(b, bad, hi);
    PUT("]");
}

/* A string key: left out when s is not valid UTF-8 or NULL (json_string
   fails and json_object_set_new sets nothing), except that NULL is null
   where null_if_null (jstr). */
static void key_string(text_buf *b, int *bad, int *first, const char *key, const char *s,
                       int null_if_null)
{
    if (!s ? !null_if_null : !utf8_ok(s))
        return;
    put_key(b, bad, first, key);
    if (s)
        put_string(b, bad, s);
    else
        PUT("null");
}

/* An array of strings (flags, notes); the ones json_string refuses are left out. */
static void key_strings(text_buf *b, int *bad, int *first, const char *key,
                        const char *const *v, size_t n)
{
    put_key(b, bad, first, key);
    size_t k = 0;
    for (size_t i = 0; i < n; i++) {
        if (!v[i] || !utf8_ok(v[i]))
            continue;
        if (k++ == 0)
            PUT("[");
        else
            PUT(", ");
        put_string(b, bad, v[i]);
    }
    if (k)
        PUT("]");
    else
        PUT("[]");
}

/* The sample's own keys, in sample_json's order. */
static void put_own_keys(text_buf *b, int *bad, const arrank_result *res)
{
    const double t = res->t_quantile;
    const arrank_sample *s = res->sample;
    const arrank_arrhenius *f = &res->fit;
    int ok = res->error == NULL, first = 1, *fi = &first;
    double nan = NAN;
    double ea = ok ? f->ea_J_mol / 1000.0 : nan, ea_se = ok ? f->ea_se_J_mol / 1000.0 : nan;
    double lnA = ok ? f->ln_A : nan, lnA_se = ok ? f->ln_A_se : nan;
    key_string(b, bad, fi, "id", s->id, 0);
    key_string(b, bad, fi, "file", s->file, 0);
    key_string(b, bad, fi, "basis", arrank_basis_name(s->basis), 0);
    key_string(b, bad, fi, "rate_unit_in_file", s->rate_unit_file, 1);
    put_key(b, bad, fi, "n_points");
    put_int(b, bad, (long long)s->n_points);
    put_key(b, bad, fi, "n_used");
    put_int(b, bad, (long long)(ok ? f->n : res->n_used));
    key_real(b, bad, fi, "ea_kJ_mol", ea);
    key_real(b, bad, fi, "ea_kJ_mol_se", ea_se);
    key_pair(b, bad, fi, "ea_kJ_mol_ci", ea - t * ea_se, ea + t * ea_se);
    key_real(b, bad, fi, "ln_A", lnA);
    key_real(b, bad, fi, "ln_A_se", lnA_se);
    key_pair(b, bad, fi, "ln_A_ci", lnA - t * lnA_se, lnA + t * lnA_se);
    key_real(b, bad, fi, "corr_ea_lnA", ok ? f->corr_ea_lnA : nan);
    key_real(b, bad, fi, "T_ref_K", ok ? f->T_ref_K : nan);
    key_real(b, bad, fi, "T_min_K", ok ? f->T_min_K : nan);
    key_real(b, bad, fi, "T_max_K", ok ? f->T_max_K : nan);
    key_real(b, bad, fi, "ln_rate_at_T_ref", ok ? f->b0 : nan);
    key_real(b, bad, fi, "ln_rate_at_T_ref_se", ok ? sqrt(f->cov[0][0]) : nan);
    key_real(b, bad, fi, "cov_ea_kJ_mol_ln_A", ok ? f->cov_ea_lnA_J_mol / 1000.0 : nan);
    key_real(b, bad, fi, "dof", ok ? res->interval_dof : nan);
    key_real(b, bad, fi, "t_quantile", ok ? res->interval_t : nan);
    key_real(b, bad, fi, "resid_sd_ln_rate", ok && !f->weighted ? f->resid_sd : nan);
    key_real(b, bad, fi, "r2", ok ? f->r2 : nan);
    put_key(b, bad, fi, "weighted");
    put_bool(b, bad, ok && f->weighted);
    key_real(b, bad, fi, "chi2_dof", ok ? f->chi2_dof : nan);
    key_real(b, bad, fi, "sqrt_chi2_dof", ok && f->weighted ? f->resid_sd : nan);
    int pred = ok && res->has_prediction;
    key_real(b, bad, fi, "rate_at_T", pred ? res->at_T.rate : nan);
    key_pair(b, bad, fi, "rate_at_T_ci", pred ? res->at_T.rate_lo : nan,
             pred ? res->at_T.rate_hi : nan);
    key_real(b, bad, fi, "ln_rate_at_T_se", pred ? res->at_T.ln_rate_se : nan);
    key_real(b, bad, fi, "extrapolation_K", pred ? res->at_T.extrapolation_K : nan);
    key_real(b, bad, fi, "extrapolation_rel", pred ? res->at_T.extrapolation_rel : nan);
    put_key(b, bad, fi, "rank");
    if (res->rank > 0)
        put_int(b, bad, res->rank);
    else
        PUT("null");
    const char *flags[ARRANK_FLAG_COUNT];
    size_t n_flags = 0;
    for (unsigned bit = 1; bit && bit < (1u << ARRANK_FLAG_COUNT); bit <<= 1)
        if (res->flags & bit)
            flags[n_flags++] = arrank_flag_name(bit);
    key_strings(b, bad, fi, "flags", flags, n_flags);
    key_string(b, bad, fi, "error", res->error, 1);
    put_key(b, bad, fi, "error_line");
    if (res->error && res->error_line > 0)
        put_int(b, bad, res->error_line);
    else
        PUT("null");
    put_key(b, bad, fi, "error_column");
    if (res->error && res->error_column > 0)
        put_int(b, bad, res->error_column);
    else
        PUT("null");
    put_key(b, bad, fi, "skipped");
    put_bool(b, bad, s->skipped);
    key_strings(b, bad, fi, "notes", (const char *const *)s->notes, s->n_notes);
}

/* Where JSON_INDENT(2) would break the line: on one line jansson writes a
   space after a comma and nothing after an opening or before a closing
   bracket.  The byte before tells which (a value never ends in a comma). */
static void put_gap(text_buf *b, int *bad)
{
    if (b->n && b->mem[b->n - 1] == ',')
        put_text(b, bad, " ", 1);
}

/* v as json_dumps writes it with RECORD_FLAGS (objects keep their
   keys in insertion order, as jansson iterates them). */
static void put_value(text_buf *b, int *bad, json_t *v)
{
    switch (json_typeof(v)) {
    case JSON_OBJECT: {
        if (json_object_size(v) == 0) {
            PUT("{}");
            return;
        }
        const char *key;
        json_t *value;
        int first = 1;
        PUT("{");
        json_object_foreach(v, key, value) {
            if (!first)
                PUT(",");
            first = 0;
            put_gap(b, bad);
            put_string(b, bad, key);
            PUT(": ");
            put_value(b, bad, value);
        }
        put_gap(b, bad);
        PUT("}");
        return;
    }
    case JSON_ARRAY: {
        if (json_array_size(v) == 0) {
            PUT("[]");
            return;
        }
        size_t i;
        json_t *value;
        PUT("[");
        json_array_foreach(v, i, value) {
            if (i)
                PUT(",");
            put_gap(b, bad);
            put_value(b, bad, value);
        }
        put_gap(b, bad);
        PUT("]");
        return;
    }
    case JSON_STRING: put_string(b, bad, json_string_value(v)); return;
    case JSON_INTEGER: put_int(b, bad, (long long)json_integer_value(v)); return;
    case JSON_REAL: put_real(b, bad, json_real_value(v)); return;
    case JSON_TRUE: PUT("true"); return;
    case JSON_FALSE: PUT("false"); return;
    case JSON_NULL: PUT("null"); return;
    }
}

/* The next key of an object inside a record. */
static void put_key_at(text_buf *b, int *bad, int *first, const char *key)
{
    if (!*first)
        PUT(",");
    *first = 0;
    put_gap(b, bad);
    put_string(b, bad, key);
    PUT(": ");
}

/* An array of strings inside a record; the ones
   json_string refuses (invalid UTF-8) are left out, as jansson leaves them. */
static void put_strings_at(text_buf *b, int *bad, char *const *v, size_t n)
{
    size_t k = 0;
    for (size_t i = 0; i < n; i++) {
        if (!v[i] || !utf8_ok(v[i]))
            continue;
        if (k++)
            PUT(",");
        else
            PUT("[");
        put_gap(b, bad);
        put_string(b, bad, v[i]);
    }
    if (k) {
        put_gap(b, bad);
        PUT("]");
    } else {
        PUT("[]");
    }
}

/*
 * The diagnosis summary of the record (the fast path): the keys and values
 * arrank_diagnosis_json (diagnose.c) gives for excluded, kinetic_window,
 * curvature (its verdict keys) and the plain words, written from the
 * diagnosis itself.  Building the whole diagnosis as jansson objects to keep
 * these took three quarters of the JSON's time on 10,000 samples.  The names
 * are diagnose.c's, repeated here: test_output holds this path against that
 * function byte for byte, so a renamed key there fails the test.
 */
static void put_diagnosis_summary(text_buf *b, int *bad, int *first, const arrank_result *res)
{
    const struct arrank_diagnosis *d = res->diagnosis;
    if (!d) {
        put_key_at(b, bad, first, "excluded");
        PUT("null");
        put_key_at(b, bad, first, "curvature");
        PUT("null");
        return;
    }
    const arrank_sample *s = res->sample;
    put_key_at(b, bad, first, "excluded");
    size_t n_out = 0;
    for (size_t i = 0; i < d->n_points; i++) {
        if (res->used[i])
            continue;
        const char *reason = d->points[i].reason ? d->points[i].reason
                                                 : "left out before the diagnostics";
        if (!utf8_ok(reason)) /* json_pack fails on it and the entry is left out */
            continue;
        if (n_out++)
            PUT(",");
        else
            PUT("[");
        put_gap(b, bad);
        int f2 = 1;
        PUT("{");
        put_key_at(b, bad, &f2, "file"); /* null when not UTF-8, as jansson would have it */
        const char *file = arrank_point_file(s, &s->points[i]);
        if (file && utf8_ok(file))
            put_string(b, bad, file);
        else
            PUT("null");
        put_key_at(b, bad, &f2, "line");
        put_int(b, bad, s->points[i].line);
        put_key_at(b, bad, &f2, "temp_K");
        put_real(b, bad, s->points[i].temp_K);
        put_key_at(b, bad, &f2, "reason");
        put_string(b, bad, reason);
        put_gap(b, bad);
        PUT("}");
    }
    if (n_out) {
        put_gap(b, bad);
        PUT("]");
    } else {
        PUT("[]");
    }
    int f2 = 1;
    put_key_at(b, bad, first, "kinetic_window");
    PUT("{");
    put_key_at(b, bad, &f2, "applied");
    put_bool(b, bad, d->window_applied);
    put_key_at(b, bad, &f2, "temp_lo_K");
    put_real(b, bad, d->window_lo_K);
    put_key_at(b, bad, &f2, "temp_hi_K");
    put_real(b, bad, d->window_hi_K);
    put_key_at(b, bad, &f2, "n_points");
    put_int(b, bad, (long long)d->window_n);
    put_key_at(b, bad, &f2, "ea_all_points_kJ_mol");
    put_real(b, bad, d->ea_all_J_mol / 1000.0);
    put_key_at(b, bad, &f2, "ea_all_points_kJ_mol_se");
    put_real(b, bad, d->ea_all_se_J_mol / 1000.0);
    put_gap(b, bad);
    PUT("}");
    const arrank_curvature *cv = &d->curvature;
    f2 = 1;
    put_key_at(b, bad, first, "curvature");
    PUT("{");
    put_key_at(b, bad, &f2, "verdict");
    put_string(b, bad, cv->detected ? "detected" : "not detected");
    put_key_at(b, bad, &f2, "tested");
    put_bool(b, bad, cv->tested);
    put_key_at(b, bad, &f2, "direction");
    put_string(b, bad, arrank_bend_name(cv->direction));
    put_key_at(b, bad, &f2, "level");
    put_real(b, bad, cv->level);
    put_key_at(b, bad, &f2, "n_points");
    put_int(b, bad, (long long)cv->n);
    put_key_at(b, bad, &f2, "causes");
    size_t n_causes = 0;
    for (size_t k = 0; k < cv->n_causes; k++) {
        const arrank_cause *c = &cv->causes[k];
        if (!c->cause || !c->evidence || !utf8_ok(c->cause) || !utf8_ok(c->evidence))
            continue; /* json_pack fails on them */
        if (n_causes++)
            PUT(",");
        else
            PUT("[");
        put_gap(b, bad);
        int f3 = 1;
        PUT("{");
        put_key_at(b, bad, &f3, "cause");
        put_string(b, bad, c->cause);
        put_key_at(b, bad, &f3, "evidence");
        put_string(b, bad, c->evidence);
        put_key_at(b, bad, &f3, "supported");
        put_bool(b, bad, c->supported);
        put_gap(b, bad);
        PUT("}");
    }
    if (n_causes) {
        put_gap(b, bad);
        PUT("]");
    } else {
        PUT("[]");
    }
    put_gap(b, bad);
    PUT("}");
    put_key_at(b, bad, first, "findings");
    put_strings_at(b, bad, d->findings, d->n_findings);
    put_key_at(b, bad, first, "diagnosis_notes");
    put_strings_at(b, bad, d->notes, d->n_notes);
}

/* The record per sample by the fast path: the own keys, then the diagnosis
   summary and the ranking statistics, built by jansson and written here. */
static int record_text(const arrank_analysis *a, size_t i, text_buf *b)
{
    int failed = 0, *bad = &failed;
    put_text(b, bad, i ? ",\n    {" : "\n    {", i ? 7 : 6);
    put_own_keys(b, bad, &a->results[i]);
    int first = 0; /* the own keys came first */
    put_key_at(b, bad, &first, "stability_hold");
    if (a->results[i].hold) { /* rare: through jansson */
        json_t *h = hold_json(&a->results[i]);
        if (!h)
            return -1;
        put_value(b, bad, h);
        json_decref(h);
    } else
        PUT("null");
    put_diagnosis_summary(b, bad, &first, &a->results[i]);
    /* rank.c: p_best, group, p_beats, bootstrap interval, model */
    json_t *stats = arrank_sample_stats_json(a, i);
    if (!stats)
        return -1;
    const char *key;
    json_t *value;
    json_object_foreach(stats, key, value) {
        put_key_at(b, bad, &first, key);
        put_value(b, bad, value);
    }
    json_decref(stats);
    PUT("}");
    return failed ? -1 : 0;
}

/* One sample's text, its separator first, appended to b; -1 when out of memory. */
static int sample_text(const arrank_analysis *a, size_t i, int detail, text_buf *b)
{
    if (!json_reference) {
        if (!detail)
            return record_text(a, i, b);
        /* the detail: built by jansson, written by put_value (its reals
           by number.c, faster than jansson's printf) */
        json_t *o = sample_json(a, &a->results[i], 1);
        int failed = !o, *bad = &failed;
        if (o) {
            put_text(b, bad, i ? ",\n    " : "\n    ", i ? 6 : 5);
            put_value(b, bad, o);
        }
        json_decref(o);
        return failed ? -1 : 0;
    }
    json_t *o = sample_json(a, &a->results[i], detail);
    int bad = !o || text_put(b, i ? ",\n    " : "\n    ", i ? 6 : 5) ||
              json_dump_callback(o, text_sink, b, RECORD_FLAGS) != 0;
    json_decref(o);
    return bad ? -1 : 0;
}

/*
 * The samples are built and dumped on the workers (util.c), JSON_BLOCK at a
 * time: each worker writes a contiguous share of the block into its own
 * buffer and the buffers are written in order, so the file is the same for
 * any number of workers (tests/test_workers.c).  A block bounds the memory
 * held to a few megabytes whatever the campaign's size.
 */
#define JSON_BLOCK 2048
#define JSON_MIN_PER_WORKER 64
#define JSON_MAX_WORKERS 8

typedef struct {
    const arrank_analysis *a;
    int detail;
    size_t from, to, workers;
    text_buf out[JSON_MAX_WORKERS];
    int nomem[JSON_MAX_WORKERS];
} json_job;

static void json_worker(void *ctx, size_t w)
{
    json_job *j = ctx;
    size_t lo, hi;
    arrank_workers_share(j->from, j->to, j->workers, w, &lo, &hi);
    /* The worker's buffer is kept in a local while it is written: the
       workers' buffers share cache lines in j, and writing their lengths
       there made the cores fight over those lines (perf: 15 % of the run). */
    text_buf out = j->out[w];
    int nomem = 0;
    out.n = 0;
    for (size_t i = lo; i < hi && !nomem; i++)
        nomem = sample_text(j->a, i, j->detail, &out) != 0;
    j->out[w] = out;
    j->nomem[w] = nomem;
}

static arrank_status write_samples(const arrank_analysis *a, int detail, FILE *f,
                                   arrank_error *err)
{
    json_job *j = calloc(1, sizeof *j);
    if (!j)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    j->a = a;
    j->detail = detail;
    j->workers = arrank_workers_for(a->n_results, JSON_MIN_PER_WORKER);
    if (j->workers > JSON_MAX_WORKERS)
        j->workers = JSON_MAX_WORKERS;
    arrank_status st = ARRANK_OK;
    for (size_t from = 0; from < a->n_results && st == ARRANK_OK; from += JSON_BLOCK) {
        j->from = from;
        j->to = from + JSON_BLOCK < a->n_results ? from + JSON_BLOCK : a->n_results;
        if (j->workers > 1)
            arrank_workers_run(j->workers, json_worker, j);
        else
            json_worker(j, 0);
        for (size_t w = 0; w < j->workers && st == ARRANK_OK; w++) {
            if (j->nomem[w])
                st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            else
                fwrite(j->out[w].mem, 1, j->out[w].n, f);
        }
    }
    for (size_t w = 0; w < j->workers; w++)
        free(j->out[w].mem);
    free(j);
    return st;
}

/*
 * The document is streamed: what comes before and after the samples is
 * dumped once with an empty "samples" array and split there, and the samples
 * are built, dumped one record a line (greppable, and a third smaller than
 * indented records: README "JSON keys") and written a block at a time.
 * Memory holds one block, whatever the campaign's size.
 */
static arrank_status write_json(const arrank_analysis *a, FILE *f, int detail, arrank_error *err)
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
    arrank_status st = write_samples(a, detail, f, err);
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

arrank_status arrank_json_write(const arrank_analysis *analysis, int detail, FILE *stream,
                                arrank_error *err)
{
    return write_json(analysis, stream, detail, err);
}
