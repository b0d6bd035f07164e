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
#include "table.h"

arrank_status arrank_output_write(const arrank_analysis *analysis, arrank_output_format format,
                                  FILE *stream, arrank_error *err)
{
    switch (format) {
    case ARRANK_OUTPUT_JSON: return arrank_json_write(analysis, 0, stream, err);
    case ARRANK_OUTPUT_JSON_POINTS: return arrank_json_write(analysis, 1, stream, err);
    case ARRANK_OUTPUT_CSV: return arrank_csv_write(analysis, stream, err);
    case ARRANK_OUTPUT_POINTS: return arrank_points_write(analysis, stream, err);
    case ARRANK_OUTPUT_TABLE: return arrank_table_write(analysis, stream, err);
    }
    return arrank_errorf(err, ARRANK_EINVAL, "unknown output format %d", (int)format);
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

arrank_status arrank_output_save(const arrank_analysis *analysis, arrank_output_format format,
                                 const char *path, arrank_error *err)
{
    struct save_ctx ctx = {analysis, format};
    return arrank_files_save(path, save_writer, &ctx, err);
}
