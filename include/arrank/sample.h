/*
 * arrank/sample.h - one catalyst sample: its points, metadata and notes, read
 * from one CSV file (format: README.md, "The campaign format").
 *
 * Temperatures are read into kelvin and rates into a report unit as the file
 * is read.  A malformed file is refused with its path, line and column; a
 * well-formed sample that cannot be fitted is kept with `problem` set.  A
 * folder of samples is read by arrank/campaign.h.
 */
#ifndef ARRANK_SAMPLE_H
#define ARRANK_SAMPLE_H

#include <stddef.h>

#include "arrank/error.h"
#include "arrank/units.h"

/*
 * Resource limits.  Input beyond any of them is refused with ARRANK_ELIMIT
 * (and the file, line, column where it was met), so a stray log file or a
 * runaway export cannot exhaust memory.  Each file is read with one read into
 * a buffer of its size, so memory per file is bounded by the file-size limit.
 */
#define ARRANK_CAMPAIGN_MAX_LINE_BYTES (1024L * 1024L) /* bytes in one line, terminator excluded */
#define ARRANK_CAMPAIGN_MAX_COLUMNS 1000L             /* fields in the header or a row */
#define ARRANK_CAMPAIGN_MAX_ROWS 1000000L             /* data rows in one file */
#define ARRANK_CAMPAIGN_MAX_FILE_BYTES (256L * 1024L * 1024L) /* size of one sample file */

/* One measured point.  Quantities absent from the file are NAN. */
typedef struct {
    double temp_K;           /* temperature, K */
    double rate;             /* rate in the campaign's report unit (campaign.rate_unit) */
    double rate_sd;          /* standard deviation of rate, same unit; NAN if not given */
    double conversion;       /* fractional conversion 0..1 (file may say % ); NAN if none */
    double time_on_stream_s; /* s; NAN if none */
    int run;                 /* index into sample.runs; -1 if no run column */
    int omitted_column;      /* column of the cell that left the point out (1-based), 0 if none */
    long line;               /* physical line of the point in its file (1-based) */
    /* Why the point is left out before the fit, NULL when it is usable: a cell
       with no value ('n.d.', '-', blank), below a detection limit ('< 0.01'),
       not a number, or a rate <= 0 (README "Cells").  Such a point keeps the
       values that could be read (NAN for the others); the analysis never fits
       it.  Owned by the sample. */
    char *omitted;
    /* the temperature as the file wrote it, in its file's temperature unit
       (arrank_point_temp_unit; NAN when the cell held no number); temp_K is
       it converted */
    double temp_file;
    /* the file the point is from: an index into sample.source_files when
       the sample was merged from several files, else 0 (sample.file) */
    int source;
} arrank_point;

/* A metadata entry: "# key = value" in the file or a [sample ID] key in campaign.ini. */
typedef struct {
    char *key;
    char *value;
    char *source; /* file the entry came from (sample CSV or campaign.ini) */
    long line;
} arrank_meta;

typedef struct {
    char *id;             /* sample id: metadata "sample", else the file stem */
    char *path;           /* path of the CSV as opened */
    /* device and inode of the CSV as read (0 when it could not be opened):
       how a caller knows never to write over an input (the CLI does) */
    unsigned long long file_dev, file_ino;
    char *file;           /* base name of the CSV */
    arrank_basis basis;   /* from the rate unit's dimension */
    char *rate_unit_file; /* rate unit as written in the file's header */
    char *temp_unit_file; /* temperature unit as written there, e.g. "degC" */
    /* temp_K = scale * temp_file + offset, as the reader converted (the first
       file's in a merged sample); scale 0 when no temperature was read */
    arrank_conversion temp_to_K;
    /* When files of one sample id were merged into it (arrank/campaign.h):
       each file's base name and the temperature unit its header wrote, in
       the order read; arrank_point.source indexes them, and `file` and
       `temp_unit_file` are the first file's.  0 and NULL for one file. */
    size_t n_sources;
    char **source_files, **source_temp_units;
    arrank_point *points; /* in file order */
    size_t n_points;
    char **runs; /* distinct run labels in order of first appearance */
    size_t n_runs;
    arrank_meta *meta;
    size_t n_meta;
    char **notes; /* things kept but ignored (unknown columns, unknown keys) */
    size_t n_notes;
    /* Set when the sample is readable but cannot be fitted; NULL otherwise.
       problem_line is the line it points at (0 if the whole file). */
    char *problem;
    long problem_line;
    long problem_column; /* column of problem_line it points at, 0 if none */
    /* 1 when the file could not be read at all (bad header, unit, cell, an
       unreadable file): `problem` is why, in the form the strict reader's
       error would have had, and the sample has no points.  The campaign goes
       on without it (arrank_campaign_load_with). */
    int skipped;
    size_t n_omitted; /* points with `omitted` set */
    long header_line; /* line of the header row (messages about the columns) */
    /* 1 when the file has no rate column and the rates were derived from its
       conversion column and feed metadata (README "Rates from conversion"). */
    int rates_derived;
} arrank_sample;

/*
 * Read one sample file from a memory buffer (for tests and fuzzing).  name is
 * used as path in messages and for the id.  report_unit may be NULL: the
 * file's own rate unit is then used (and returned in sample->rate_unit_file).
 * On success the sample is filled (free with arrank_sample_clear).
 */
arrank_status arrank_sample_parse(const char *name, const char *data, size_t len,
                                  arrank_units *units, const char *report_unit,
                                  arrank_sample *sample, arrank_error *err);

/*
 * How forgiving the reader is.  strict = 1 is all-or-nothing: any cell that
 * is not a number stops the read with an error (arrank_sample_parse).
 * strict = 0 leaves points out instead (arrank_point.omitted): cells with no
 * value, below a detection limit or not a number, rates <= 0; and skips rows
 * of delimiters and blanks only.  The headers, units and metadata forms read
 * are the same in both.
 */
typedef struct {
    int strict;
} arrank_read_options;

/* arrank_sample_parse with read options (NULL: strict). */
arrank_status arrank_sample_parse_with(const char *name, const char *data, size_t len,
                                       arrank_units *units, const char *report_unit,
                                       const arrank_read_options *opt, arrank_sample *sample,
                                       arrank_error *err);

void arrank_sample_clear(arrank_sample *sample);

/* The base name of the file point p of sample s is from, and the unit its
   temperature is written in there (NULL when unknown): s->file and
   s->temp_unit_file unless s was merged from several files. */
const char *arrank_point_file(const arrank_sample *s, const arrank_point *p);
const char *arrank_point_temp_unit(const arrank_sample *s, const arrank_point *p);

/*
 * A temperature of sample s as the words say it, prec digits after the
 * point (the same in any locale): "603.3 K", or "330.2 degC (603.3 K)" when
 * s's file wrote another unit (its header's own spelling; every file of a
 * merged sample the same), so that a report shows the file's value and the
 * rig's setpoint beside the kelvin.  A span lo-hi the same way, "210-230 degC
 * (483-503 K)"; hi_K NAN for one temperature.  Into buf[n] (cut to fit);
 * returns buf.
 */
const char *arrank_sample_temp_text(const arrank_sample *s, double lo_K, double hi_K, int prec,
                                    char *buf, size_t n);

/* Value of metadata key (last one wins), or NULL. */
const char *arrank_sample_meta(const arrank_sample *sample, const char *key);

#endif
