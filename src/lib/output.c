/*
 * output.c - the public entry for the writers: picks the table (table.c),
 * JSON (json.c), CSV (csv.c) or points.csv (points.c) and saves through a
 * temporary file (files.c).  All of them read the same arrank_analysis.
 */
#include "arrank/output.h"

#include <stdio.h>

#include "csv.h"
#include "files.h"
#include "json.h"
#include "points.h"
#include "reference_out.h"
#include "table.h"
#include "number.h"

static arrank_status output_write_in_c(const arrank_analysis *analysis, arrank_output_format format,
                                       FILE *stream, arrank_error *err)
{
    switch (format) {
    case ARRANK_OUTPUT_JSON: return arrank_json_write(analysis, 0, stream, err);
    case ARRANK_OUTPUT_JSON_POINTS: return arrank_json_write(analysis, 1, stream, err);
    case ARRANK_OUTPUT_CSV: return arrank_csv_write(analysis, stream, err);
    case ARRANK_OUTPUT_POINTS: return arrank_points_write(analysis, stream, err);
    case ARRANK_OUTPUT_TABLE: {
        /* the reference catalyst's block under the table (reference_out.c) */
        arrank_status st = arrank_table_write(analysis, stream, err);
        return st == ARRANK_OK ? arrank_reference_table_write(analysis, stream, err) : st;
    }
    }
    return arrank_errorf(err, ARRANK_EINVAL, "unknown output format %d", (int)format);
}

/* The public entry: the work in the C locale, rounding to nearest, whatever the
   host program set (number.h), and then the host's settings back. */
arrank_status arrank_output_write(const arrank_analysis *analysis, arrank_output_format format,
                                  FILE *stream, arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = output_write_in_c(analysis, format, stream, err);
    arrank_numbers_c_leave(&env);
    return st;
}

arrank_status arrank_output_table(const arrank_analysis *analysis,
                                  const arrank_table_options *options, FILE *stream,
                                  arrank_error *err)
{
    if (!options || (options->width == 0 && !options->colour))
        return arrank_output_write(analysis, ARRANK_OUTPUT_TABLE, stream, err);
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st =
        arrank_table_write_term(analysis, options->width, options->colour != 0, stream, err);
    /* the reference catalyst's block, fitted to the same width */
    if (st == ARRANK_OK)
        st = arrank_reference_table_write_term(analysis, options->width, options->colour != 0,
                                               stream, err);
    arrank_numbers_c_leave(&env);
    return st;
}

arrank_status arrank_output_save_with(const char *path,
                                      arrank_status (*writer)(FILE *, void *, arrank_error *),
                                      void *ctx, arrank_error *err)
{
    return arrank_files_save(path, writer, ctx, err);
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

static arrank_status output_save_in_c(const arrank_analysis *analysis, arrank_output_format format,
                                      const char *path, arrank_error *err)
{
    struct save_ctx ctx = {analysis, format};
    return arrank_files_save(path, save_writer, &ctx, err);
}

/* The public entry: the work in the C locale, rounding to nearest, whatever the
   host program set (number.h), and then the host's settings back. */
arrank_status arrank_output_save(const arrank_analysis *analysis, arrank_output_format format,
                                 const char *path, arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = output_save_in_c(analysis, format, path, err);
    arrank_numbers_c_leave(&env);
    return st;
}
