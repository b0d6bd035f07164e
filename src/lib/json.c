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

#include "arrank/version.h"
#include "util.h"
#include "internal.h" /* arrank_diagnosis_json, arrank_sample_stats_json, arrank_rank_stats_json */

static const char *by_name(arrank_rank_by by)
{
    switch (by) {
    case ARRANK_BY_EA: return "ea";
    case ARRANK_BY_PREFACTOR: return "prefactor";
    case ARRANK_BY_RATE: break;
    }
    return "rate_at_T";
}

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
    if (detail)
        json_object_set_new(o, "points", points_json(res));
    /* diagnostics (diagnose.c): excluded, kinetic window, curvature, ... */
    merge_diagnosis(o, res, detail);
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
    json_object_set_new(root, "ranked_by", a->n_ranked ? json_string(by_name(a->options.by))
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
#define SAMPLE_INDENT "\n    " /* a sample's lines sit 4 spaces in, inside "samples" */

/* A growing text: samples' JSON, indented to their depth. */
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

/* json_dump_callback's sink: every line break (jansson writes none inside a
   string, where it escapes them) gets the sample's indentation after it.
   jansson hands over a token at a time, so the bytes are copied one by one
   into room for the worst case (every byte a line break). */
static int indent_sink(const char *s, size_t len, void *data)
{
    text_buf *b = data;
    const size_t step = sizeof SAMPLE_INDENT - 1;
    if (text_room(b, len * step))
        return -1;
    char *p = b->mem + b->n;
    for (size_t k = 0; k < len; k++) {
        if (s[k] == '\n') {
            memcpy(p, SAMPLE_INDENT, step);
            p += step;
        } else {
            *p++ = s[k];
        }
    }
    b->n = (size_t)(p - b->mem);
    return 0;
}

/* One sample's text, its separator first, appended to b; -1 when out of memory. */
static int sample_text(const arrank_analysis *a, size_t i, int detail, text_buf *b)
{
    json_t *o = sample_json(a, &a->results[i], detail);
    int bad = !o || text_put(b, i ? "," SAMPLE_INDENT : SAMPLE_INDENT,
                             (i ? 1 : 0) + sizeof SAMPLE_INDENT - 1) ||
              json_dump_callback(o, indent_sink, b, JSON_FLAGS) != 0;
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
    size_t n = j->to - j->from, share = (n + j->workers - 1) / j->workers;
    size_t lo = j->from + w * share, hi = lo + share < j->to ? lo + share : j->to;
    j->out[w].n = 0;
    for (size_t i = lo; i < hi && !j->nomem[w]; i++)
        j->nomem[w] = sample_text(j->a, i, j->detail, &j->out[w]) != 0;
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
 * are built, dumped (indented to their depth: jansson indents by nesting
 * only, so the bytes are those of one whole dump) and written a block at a
 * time.  Memory holds one block, whatever the campaign's size.
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
