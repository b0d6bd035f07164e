/*
 * arrank/campaign.h - reading a campaign folder into memory.
 *
 * A campaign is a folder with one CSV file per catalyst sample and an optional
 * campaign.ini (format: README.md, "The campaign format").  Loading converts
 * every temperature to kelvin and every rate to the campaign's report unit
 * (campaign.ini rate_unit, else the first sample's rate unit), so the stages
 * after it see one unit system.
 *
 * Two kinds of problem:
 *  - a malformed file (bad unit, non-numeric cell, ragged row, ...) stops the
 *    load: the call returns an error with path, line and column;
 *  - a well-formed sample that cannot be fitted (fewer than 3 points, a single
 *    temperature, a rate <= 0) is kept, with `problem` set; the analysis lists
 *    it with that reason and leaves it out of the ranking.
 */
#ifndef ARRANK_CAMPAIGN_H
#define ARRANK_CAMPAIGN_H

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
#define ARRANK_CAMPAIGN_MAX_FILES 200000L             /* sample files in one folder */
#define ARRANK_CAMPAIGN_MAX_FILE_BYTES (256L * 1024L * 1024L) /* size of one sample file */

/* One measured point.  Quantities absent from the file are NAN. */
typedef struct {
    double temp_K;           /* temperature, K */
    double rate;             /* rate in the campaign's report unit (campaign.rate_unit) */
    double rate_sd;          /* standard deviation of rate, same unit; NAN if not given */
    double conversion;       /* fractional conversion 0..1 (file may say % ); NAN if none */
    double time_on_stream_s; /* s; NAN if none */
    int run;                 /* index into sample.runs; -1 if no run column */
    long line;               /* physical line of the point in its file (1-based) */
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
    char *file;           /* base name of the CSV */
    arrank_basis basis;   /* from the rate unit's dimension */
    char *rate_unit_file; /* rate unit as written in the file's header */
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
    /* 1 when the file has no rate column and the rates were derived from its
       conversion column and feed metadata (README "Rates from conversion"). */
    int rates_derived;
} arrank_sample;

typedef struct {
    char *path;                 /* folder as given */
    char *name;                 /* base name of the folder */
    char *title;                /* campaign.ini title, else name */
    double operating_temp_K;    /* campaign.ini operating_temperature; NAN if unset */
    double confidence;          /* campaign.ini confidence; NAN if unset */
    char *rate_unit;            /* report unit, udunits spelling, e.g. "umol/(g*s)" */
    arrank_basis basis;         /* basis of rate_unit */
    arrank_sample *samples;     /* sorted by file name */
    size_t n_samples;
    char **notes;               /* campaign-level notes (unknown ini keys, ...) */
    size_t n_notes;
} arrank_campaign;

/*
 * Read the folder at dir.  On success *out is a new campaign owned by the
 * caller (free with arrank_campaign_free).  On failure *out is NULL and err
 * says which file, line and column.  units may still be reading its database
 * (arrank_units_create_background): the folder is listed meanwhile, and a
 * database that failed is reported as arrank_units_ready reports it.
 */
arrank_status arrank_campaign_load(const char *dir, arrank_units *units, arrank_campaign **out,
                                   arrank_error *err);


/* arrank_campaign_load that reports progress per sample file (progress may be NULL).
   The files after the first are read on worker threads (as arrank_analysis_run,
   analysis.h); the campaign and any error are the same as read in order. */
arrank_status arrank_campaign_load_progress(const char *dir, arrank_units *units,
                                            arrank_progress_fn progress, void *progress_ctx,
                                            arrank_campaign **out, arrank_error *err);

void arrank_campaign_free(arrank_campaign *campaign);

/*
 * Read campaign.ini text from a memory buffer (for tests and fuzzing), with
 * the same rules as arrank_campaign_load.  name is used as path in messages
 * and as the campaign's path and name.  On success *out is a new campaign
 * with no samples (free with arrank_campaign_free): title, operating
 * temperature, rate unit, confidence and notes as the text sets them; each
 * [sample ID] section gets a "matches no sample" note.  On failure *out is NULL.
 */
arrank_status arrank_campaign_parse_ini(const char *name, const char *data, size_t len,
                                        arrank_units *units, arrank_campaign **out,
                                        arrank_error *err);

/*
 * Read one sample file from a memory buffer (for tests and fuzzing).  name is
 * used as path in messages and for the id.  report_unit may be NULL: the
 * file's own rate unit is then used (and returned in sample->rate_unit_file).
 * On success the sample is filled (free with arrank_sample_clear).
 */
arrank_status arrank_sample_parse(const char *name, const char *data, size_t len,
                                  arrank_units *units, const char *report_unit,
                                  arrank_sample *sample, arrank_error *err);

void arrank_sample_clear(arrank_sample *sample);

/* Value of metadata key (last one wins), or NULL. */
const char *arrank_sample_meta(const arrank_sample *sample, const char *key);

#endif
