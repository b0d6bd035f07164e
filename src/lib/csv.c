/*
 * csv.c - the results as CSV, one row per sample (ranked samples first, in
 * rank order), units in the header; streamed row by row.  Quantiles come
 * from the pipeline (analysis.c).
 */
#include "csv.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/analysis_stats.h"
#include "arrank/cautions.h"
#include "arrank/text.h"
#include "files.h"

static void write_row(const arrank_analysis *a, const arrank_result *res, arrank_csv_row *row);

/* Several campaigns: the campaign column; a reference: the sample against it
   (README "results.csv").  Only then, so that a run without them keeps its
   columns. */
static void reference_header(const arrank_analysis *a, arrank_csv_row *row)
{
    if (a->campaign->n_parts)
        arrank_files_csv_field(row, "campaign", !a->reference);
    if (!a->reference)
        return;
    const char *cols[] = {"is_reference", "ratio_to_reference", "ratio_to_reference_ci_low",
                          "ratio_to_reference_ci_high", "p_better_than_reference",
                          "ea_minus_reference [kJ/mol]", "ea_minus_reference_ci_low [kJ/mol]",
                          "ea_minus_reference_ci_high [kJ/mol]"};
    for (size_t i = 0; i < sizeof cols / sizeof *cols; i++)
        arrank_files_csv_field(row, cols[i], i + 1 == sizeof cols / sizeof *cols);
}

static void reference_cells(const arrank_analysis *a, const arrank_result *res,
                            arrank_csv_row *row)
{
    const arrank_campaign *c = a->campaign;
    if (c->n_parts)
        arrank_files_csv_field(row,
                               c->part_names[arrank_campaign_part(c, (size_t)(res - a->results))],
                               !a->reference);
    if (!a->reference)
        return;
    const struct arrank_sample_stats *ss = res->stats;
    const int has = ss && ss->has_reference, self = has && ss->is_reference;
    const int ratio = has && ss->has_ratio;
    arrank_files_csv_field(row, !has ? "" : self ? "1" : "0", 0);
    arrank_files_csv_num(row, ratio ? exp(ss->ratio.est) : NAN, 0);
    arrank_files_csv_num(row, ratio && !self ? exp(ss->ratio.lo) : NAN, 0);
    arrank_files_csv_num(row, ratio && !self ? exp(ss->ratio.hi) : NAN, 0);
    arrank_files_csv_num(row, has ? ss->p_better : NAN, 0);
    arrank_files_csv_num(row, has ? ss->ea_diff.est / 1e3 : NAN, 0);
    arrank_files_csv_num(row, has && !self ? ss->ea_diff.lo / 1e3 : NAN, 0);
    arrank_files_csv_num(row, has && !self ? ss->ea_diff.hi / 1e3 : NAN, 1);
}

/* The rows in the order they are written, formatted on the workers. */
typedef struct {
    const arrank_analysis *a;
    size_t *order; /* result index of each row */
} rows_job;

static void row_item(void *ctx, size_t i, arrank_csv_row *row)
{
    const rows_job *j = ctx;
    write_row(j->a, &j->a->results[j->order[i]], row);
}

static arrank_status write_csv(const arrank_analysis *a, FILE *f, arrank_error *err)
{
    arrank_csv_row *row = malloc(sizeof *row);
    if (!row)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    row->f = f;
    row->n = 0;
    /* the cautions (cautions.c) as comment lines above the header: readers
       skip lines that start with '#' (README "results.csv") */
    char **lines = NULL;
    size_t n_lines = 0;
    arrank_status st = arrank_cautions_list(a, &lines, &n_lines, err);
    if (st != ARRANK_OK) {
        free(row);
        return st;
    }
    for (size_t k = 0; k < n_lines; k++) {
        /* a control character in an id would end the comment line: escaped
           here (text.h); the rows keep every id exact */
        char shown[4096];
        arrank_text_escape(lines[k], shown, sizeof shown);
        fprintf(f, "# caution: %s\n", shown);
    }
    arrank_cautions_free(lines, n_lines);
    const char *u = a->campaign->rate_unit;
    char h[6][160];
    snprintf(h[0], sizeof h[0], "ln_A [ln(%s)]", u);
    snprintf(h[1], sizeof h[1], "ln_A_se [ln(%s)]", u);
    snprintf(h[2], sizeof h[2], "ln_A_ci_low [ln(%s)]", u);
    snprintf(h[3], sizeof h[3], "ln_A_ci_high [ln(%s)]", u);
    const char *fixed[] = {"rank", "id", "file", "n_points", "n_used", "ea [kJ/mol]",
                           "ea_se [kJ/mol]", "ea_ci_low [kJ/mol]", "ea_ci_high [kJ/mol]"};
    for (size_t i = 0; i < sizeof fixed / sizeof *fixed; i++)
        arrank_files_csv_field(row, fixed[i], 0);
    for (int i = 0; i < 4; i++)
        arrank_files_csv_field(row, h[i], 0);
    char rh[3][200];
    snprintf(rh[0], sizeof rh[0], "rate_at_T [%s]", u);
    snprintf(rh[1], sizeof rh[1], "rate_at_T_ci_low [%s]", u);
    snprintf(rh[2], sizeof rh[2], "rate_at_T_ci_high [%s]", u);
    const char *tail[] = {"corr_ea_lnA", "T_ref [K]", "T_min [K]", "T_max [K]", "T_op [K]",
                          rh[0], rh[1], rh[2], "confidence", "p_best", "group", "flags", "error", "error_line",
                          "error_column", "extrapolation [K]", "extrapolation_rel"};
    const int more = a->reference || a->campaign->n_parts; /* columns after the tail */
    for (size_t i = 0; i < sizeof tail / sizeof *tail; i++)
        arrank_files_csv_field(row, tail[i], !more && i + 1 == sizeof tail / sizeof *tail);
    if (more)
        reference_header(a, row);

    arrank_files_csv_flush(row);
    free(row);
    /* ranked samples first, in rank order, then the others in file order */
    rows_job job = {a, malloc((a->n_results ? a->n_results : 1) * sizeof *job.order)};
    if (!job.order)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    size_t n = 0;
    for (size_t k = 0; k < a->n_ranked; k++)
        job.order[n++] = a->order[k];
    for (size_t i = 0; i < a->n_results; i++)
        if (a->results[i].rank == 0)
            job.order[n++] = i;
    st = arrank_files_csv_items(n, row_item, &job, f, err);
    free(job.order);
    if (st == ARRANK_OK && ferror(f))
        return arrank_errorf(err, ARRANK_EIO, "write failed");
    return st;
}

/* One sample's row. */
static void write_row(const arrank_analysis *a, const arrank_result *res, arrank_csv_row *row)
{
    const arrank_arrhenius *fit = &res->fit;
    int ok = !res->error;
    double t = res->t_quantile; /* the pipeline's (analysis.c) */
    char rank[32] = "";
    if (res->rank)
        snprintf(rank, sizeof rank, "%d", res->rank);
    arrank_files_csv_field(row, rank, 0);
    arrank_files_csv_field(row, res->sample->id, 0);
    arrank_files_csv_field(row, res->sample->file, 0);
    arrank_files_csv_num(row, (double)res->sample->n_points, 0);
    arrank_files_csv_num(row, (double)(ok ? fit->n : res->n_used), 0);
    double ea = ok ? fit->ea_J_mol / 1e3 : NAN, se = ok ? fit->ea_se_J_mol / 1e3 : NAN;
    arrank_files_csv_num(row, ea, 0);
    arrank_files_csv_num(row, se, 0);
    arrank_files_csv_num(row, ea - t * se, 0);
    arrank_files_csv_num(row, ea + t * se, 0);
    double la = ok ? fit->ln_A : NAN, lse = ok ? fit->ln_A_se : NAN;
    arrank_files_csv_num(row, la, 0);
    arrank_files_csv_num(row, lse, 0);
    arrank_files_csv_num(row, la - t * lse, 0);
    arrank_files_csv_num(row, la + t * lse, 0);
    arrank_files_csv_num(row, ok ? fit->corr_ea_lnA : NAN, 0);
    arrank_files_csv_num(row, ok ? fit->T_ref_K : NAN, 0);
    arrank_files_csv_num(row, ok ? fit->T_min_K : NAN, 0);
    arrank_files_csv_num(row, ok ? fit->T_max_K : NAN, 0);
    arrank_files_csv_num(row, a->options.operating_temp_K, 0);
    int p = ok && res->has_prediction;
    arrank_files_csv_num(row, p ? res->at_T.rate : NAN, 0);
    arrank_files_csv_num(row, p ? res->at_T.rate_lo : NAN, 0);
    arrank_files_csv_num(row, p ? res->at_T.rate_hi : NAN, 0);
    arrank_files_csv_num(row, a->options.confidence, 0);
    const struct arrank_sample_stats *ss = res->stats;
    arrank_files_csv_num(row, ss ? ss->p_best : NAN, 0);
    arrank_files_csv_num(row, ss && ss->group > 0 ? (double)ss->group : NAN, 0);
    /* flag names are [a-z_]: never quoted */
    char flags[512];
    size_t n = 0;
    for (unsigned bit = 1; bit && bit < (1u << ARRANK_FLAG_COUNT); bit <<= 1)
        if (res->flags & bit) {
            const char *name = arrank_flag_name(bit);
            size_t len = strlen(name);
            if (n)
                flags[n++] = ';';
            memcpy(flags + n, name, len); /* 13 names of under 20 bytes fit */
            n += len;
        }
    flags[n] = '\0';
    arrank_files_csv_field(row, flags, 0);
    arrank_files_csv_field(row, res->error ? res->error : "", 0);
    /* where the error points in the sample's file; empty when nowhere */
    arrank_files_csv_num(row, res->error && res->error_line > 0 ? (double)res->error_line : NAN,
                         0);
    arrank_files_csv_num(row,
                         res->error && res->error_column > 0 ? (double)res->error_column : NAN,
                         0);
    /* how far the operating temperature lies outside the measured range: K,
       and against the span; 0 inside, empty without a prediction */
    arrank_files_csv_num(row, p ? res->at_T.extrapolation_K : NAN, 0);
    const int more = a->reference || a->campaign->n_parts;
    arrank_files_csv_num(row, p ? res->at_T.extrapolation_rel : NAN, !more);
    if (more)
        reference_cells(a, res, row);
}


arrank_status arrank_csv_write(const arrank_analysis *analysis, FILE *stream, arrank_error *err)
{
    return write_csv(analysis, stream, err);
}
