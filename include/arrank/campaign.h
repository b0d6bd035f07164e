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
 *  - a malformed file (bad unit, non-numeric cell, ragged row, ...) stops a
 *    strict load: the call returns an error with path, line and column; the
 *    default load of arrank_campaign_load_with keeps it as a `skipped` sample
 *    with that error as its problem, and reads the rest;
 *  - a well-formed sample that cannot be fitted (fewer than 3 points, a single
 *    temperature, a rate <= 0) is kept, with `problem` set; the analysis lists
 *    it with that reason and leaves it out of the ranking.
 */
#ifndef ARRANK_CAMPAIGN_H
#define ARRANK_CAMPAIGN_H

#include <stddef.h>

#include "arrank/error.h"
#include "arrank/sample.h"
#include "arrank/units.h"

/* Sample files in one folder (the other limits: arrank/sample.h). */
#define ARRANK_CAMPAIGN_MAX_FILES 200000L

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
    size_t n_files;             /* sample files found in the folder (*.csv, arrank's own
                                   outputs left out) */
    /* Files read but not used that are no row of their own: "PATH: why" (a
       byte-identical copy of another file).  Files that could not be read are
       samples with `skipped` set. */
    char **unused;
    size_t n_unused;
    char *reference;            /* campaign.ini reference: the reference catalyst's sample id;
                                   NULL if unset */
    /* Several campaigns read as one (arrank/batches.h); n_parts 0 and the
       three arrays NULL for a campaign read from one folder. */
    size_t n_parts;
    char **part_names;          /* [n_parts] each campaign's name (its folder's base name) */
    size_t *part_of;            /* [n_samples] the campaign each sample came from */
    char **part_ids;            /* [n_samples] each sample's id in its own campaign (the id
                                   above is "campaign/ID" where ids collide) */
    /* campaign.ini max_temperature: the reactor's or the safety limit that a
       plan (arrank/analysis_plan.h) never goes above; NAN if unset */
    double max_temp_K;
} arrank_campaign;

/* The campaign (0-based part) sample i came from: 0 for a single campaign. */
size_t arrank_campaign_part(const arrank_campaign *campaign, size_t i);

/* Sample i's id in its own campaign (its id, for a single campaign). */
const char *arrank_campaign_own_id(const arrank_campaign *campaign, size_t i);

/* How a folder is read (arrank_campaign_load_with). */
typedef struct {
    /* 1: all or nothing - a file that cannot be read, or a cell that is not a
       number, stops the load with its error (arrank_read_options.strict); two
       files with one sample id are an error.  0 (default): such a file
       becomes a sample with `skipped` and its reason, such a cell leaves its
       point out, and the rest is read. */
    int strict;
    /* 1: two files with one sample id are an error (also with strict).
       0 (default): they are one sample whose runs are the files (run label:
       the file's run column, else its name), and a file byte-identical to an
       earlier one is not used, with a note naming that one. */
    int no_merge;
} arrank_load_options;

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

/*
 * arrank_campaign_load_progress with load options; opt NULL is the default
 * (strict 0, no_merge 0: keep going, merge by id).  arrank_campaign_load and
 * arrank_campaign_load_progress read strictly (strict 1, no_merge 1).  Errors
 * of the campaign as a whole (campaign.ini, the folder, no *.csv, out of
 * memory) stop the load in every mode.  Files the program writes itself
 * (results.csv, points.csv, plan.csv) are not read as samples; a note says so.
 */
arrank_status arrank_campaign_load_with(const char *dir, arrank_units *units,
                                        const arrank_load_options *opt,
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

#endif
