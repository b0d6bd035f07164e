/*
 * points.c - points.csv: every point of every sample, one row each, in a
 * tidy long table (sample order as in the campaign, points in file order),
 * streamed row by row.
 *
 * Columns (README "points.csv"): sample, file, line, T_K, T_file,
 * T_file_unit, rate, rate_sd (report unit), conversion (fraction),
 * time_on_stream_s, run, used (1/0), regime, local_ea_kJ_mol, fitted (the
 * fitted ln r at the point's temperature, ln of the report unit), residual
 * (ln rate - fitted), reason (why the point is left out: the reader's reason
 * for a point it could not use, else the diagnosis's; empty when used).
 * T_file and T_file_unit are the temperature as the file wrote it and the
 * unit of its header (arrank_point.temp_file, arrank_point_temp_unit); file
 * is the point's own file, also for a sample merged from several files.
 */
#include "points.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include "arrank/diagnose.h"
#include "files.h"

static const char *const columns[] = {
    "sample", "file", "line", "T_K", "T_file", "T_file_unit", "rate", "rate_sd", "conversion",
    "time_on_stream_s", "run", "used", "regime", "local_ea_kJ_mol", "fitted", "residual",
    "reason"};

/* Why point k of res is not in the fit: the reader's reason when it left the
   point out (arrank_point.omitted), else the diagnosis's, or the sample's own
   when it was not fitted at all. */
static const char *left_out_reason(const arrank_analysis *a, const arrank_result *res, size_t k,
                                   char *buf, size_t n)
{
    if (res->sample->points[k].omitted)
        return res->sample->points[k].omitted;
    if (res->error) {
        snprintf(buf, n, "sample not fitted: %s", res->error);
        return buf;
    }
    const struct arrank_diagnosis *d = res->diagnosis;
    if (d && k < d->n_points && d->points[k].reason)
        return d->points[k].reason;
    const char *run = arrank_analysis_run_reason(a, res, k, buf, n); /* --no-diagnose */
    return run ? run : "left out of the fit";
}

static void write_point(const arrank_analysis *a, const arrank_result *res, size_t k,
                        arrank_csv_row *row)
{
    const arrank_sample *s = res->sample;
    const arrank_point *p = &s->points[k];
    const struct arrank_diagnosis *d = res->diagnosis;
    const arrank_point_diag *pd = d && k < d->n_points ? &d->points[k] : NULL;
    const arrank_arrhenius *fit = &res->fit;
    int fitted = res->error == NULL, used = fitted && res->used && res->used[k];
    arrank_files_csv_field(row, s->id, 0);
    arrank_files_csv_field(row, arrank_point_file(s, p), 0); /* a merged sample's own files */
    arrank_files_csv_num(row, (double)p->line, 0);
    arrank_files_csv_num(row, p->temp_K, 0);
    arrank_files_csv_num(row, p->temp_file, 0);
    const char *unit = arrank_point_temp_unit(s, p);
    arrank_files_csv_field(row, unit ? unit : "", 0);
    arrank_files_csv_num(row, p->rate, 0);
    arrank_files_csv_num(row, p->rate_sd, 0);
    arrank_files_csv_num(row, p->conversion, 0);
    arrank_files_csv_num(row, p->time_on_stream_s, 0);
    arrank_files_csv_field(row, p->run >= 0 ? s->runs[p->run] : "", 0);
    arrank_files_csv_field(row, used ? "1" : "0", 0);
    arrank_files_csv_field(row, pd ? arrank_regime_name(pd->regime) : "", 0);
    arrank_files_csv_num(row, pd ? pd->local_ea_J_mol / 1000.0 : NAN, 0);
    /* the fitted line ln r = b0 + b1 (1/T - 1/T_ref) (fit.h) at the point */
    double y = fitted ? fit->b0 + fit->b1 * (1.0 / p->temp_K - 1.0 / fit->T_ref_K) : NAN;
    arrank_files_csv_num(row, y, 0);
    arrank_files_csv_num(row, p->rate > 0 ? log(p->rate) - y : NAN, 0);
    char buf[600];
    arrank_files_csv_field(row, used ? "" : left_out_reason(a, res, k, buf, sizeof buf), 1);
}

/* One sample's rows (arrank_files_csv_items: the samples on the workers). */
static void sample_points(void *ctx, size_t i, arrank_csv_row *row)
{
    const arrank_analysis *a = ctx;
    const arrank_result *res = &a->results[i];
    for (size_t k = 0; k < res->sample->n_points; k++)
        write_point(a, res, k, row);
}

arrank_status arrank_points_write(const arrank_analysis *a, FILE *f, arrank_error *err)
{
    arrank_csv_row *row = malloc(sizeof *row);
    if (!row)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    row->f = f;
    row->n = 0;
    const size_t n_columns = sizeof columns / sizeof *columns;
    for (size_t c = 0; c < n_columns; c++)
        arrank_files_csv_field(row, columns[c], c + 1 == n_columns);
    arrank_files_csv_flush(row);
    free(row);
    arrank_status st = arrank_files_csv_items(a->n_results, sample_points, (void *)a, f, err);
    if (st == ARRANK_OK && ferror(f))
        return arrank_errorf(err, ARRANK_EIO, "write failed");
    return st;
}
