/*
 * arrank/report.h - the review report: one self-contained HTML file.
 *
 * report.html carries everything a project review needs and nothing it has
 * to fetch: the figures as inline SVG, inline CSS (with a print stylesheet),
 * no scripts, no links to other files or to the network.  It holds the
 * ranking table, each sample's parameters and flags in words, the methods in
 * brief, the safety cautions, the program version, the command line and a
 * SHA-256 of every input file, so a reader can tell which data it describes.
 * Each sample's section gives the diagnostics in plain words, the points left
 * out of the fit with their reasons and the Weisz-Prater and Mears verdicts
 * when computed.  Every string from the data is HTML-escaped.
 *
 * The page states when it was made: the current time, or the time in the
 * environment variable SOURCE_DATE_EPOCH (decimal seconds since 1970-01-01
 * UTC, reproducible-builds.org) when it is set and not empty, so that the
 * same inputs, options and program give a byte-identical page.
 */
#ifndef ARRANK_REPORT_H
#define ARRANK_REPORT_H

#include "arrank/analysis.h"
#include "arrank/error.h"
#include "arrank/plot.h"

typedef struct {
    const char *command_line; /* as the user ran it, shown for the record; NULL: left out */
    arrank_plot_options plot; /* gnuplot program (formats are ignored: SVG is inlined) */
} arrank_report_options;

/* Defaults: no command line, gnuplot from ARRANK_GNUPLOT or PATH. */
arrank_report_options arrank_report_defaults(void);

/*
 * Write the report to path (e.g. "plots/x/report.html") atomically: temp file
 * in the same folder, then rename.  The figures are drawn by gnuplot into a
 * private temporary folder beside path and removed after inlining.  When
 * gnuplot is missing (ENOGNUPLOT) or fails (EPLOT) the report is still
 * written, without figures and with a note saying why, and that status is
 * returned with gnuplot's message.  EIO when the file cannot be written or an
 * input file cannot be read for its checksum; EINVAL, before anything is
 * written, when SOURCE_DATE_EPOCH is set but not a whole number of seconds up
 * to the year 9999; ENOMEM.
 */
arrank_status arrank_report_write(const arrank_analysis *analysis, const char *path,
                                  const arrank_report_options *options, arrank_error *err);

/*
 * SHA-256 (FIPS 180-4, through nettle) of the file at path as 64 lowercase
 * hex digits plus NUL into hex[65].  EIO when it cannot be read.
 */
arrank_status arrank_report_sha256_file(const char *path, char hex[65], arrank_error *err);

#endif
