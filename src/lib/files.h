/*
 * files.h - writing an output file atomically (files.c): temporary file in
 * the target's folder, fsync, rename.  Inside libarrank only; the public
 * entry is arrank_output_save_with (arrank/output.h).
 */
#ifndef ARRANK_FILES_H
#define ARRANK_FILES_H

#include <stdio.h>

#include "arrank/error.h"

/* Produces the content on stream; EIO on a write error. */
typedef arrank_status (*arrank_files_writer)(FILE *stream, void *ctx, arrank_error *err);

/*
 * Write to path through writer(stream, ctx, err): atomically (temp file +
 * fsync + rename) for a regular file, in place for a device or pipe, to
 * stdout when path is "-".  Parent folders are created.  EIO with the path on
 * failure; nothing is left behind.
 */
arrank_status arrank_files_save(const char *path, arrank_files_writer writer, void *ctx,
                                arrank_error *err);

/* CSV rows built in memory and written a few kilobytes at a time (stdio's
   per-call locking cost more than the formatting).  Set f and n = 0; call
   arrank_files_csv_flush at the end. */
typedef struct {
    FILE *f;
    size_t n;
    char buf[8192];
} arrank_csv_row;

/* One CSV field and its separator (',' or, when last, a line break): quoted
   (RFC 4180, libcsv) only when it holds a comma, quote, line break or edge
   space, so numbers stay plain for spreadsheets and scripts. */
void arrank_files_csv_field(arrank_csv_row *row, const char *s, int last);

/* A number as a CSV field, "%.10g" (empty when not finite). */
void arrank_files_csv_num(arrank_csv_row *row, double v, int last);

/* Write out what the row buffer holds. */
void arrank_files_csv_flush(arrank_csv_row *row);

/* Items 0..n-1 of a table (a row, or a sample's rows) written to f in that
   order: item(ctx, i, row) puts item i's rows through row.  The items are
   formatted on the workers (util.c), a block at a time, each worker into
   its own memory stream; the streams are written in order, so the bytes are
   the same for any number of workers.  item must only read what it shares.
   ENOMEM, or EIO when f fails. */
arrank_status arrank_files_csv_items(size_t n, void (*item)(void *ctx, size_t i,
                                                             arrank_csv_row *row),
                                     void *ctx, FILE *f, arrank_error *err);

#endif
