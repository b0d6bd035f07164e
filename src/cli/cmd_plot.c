/*
 * cmd_plot.c - `arrank plot CAMPAIGN --at T`: the review figures, with the
 * results as JSON and CSV and every point as points.csv beside them.
 *
 * The numbers are written before gnuplot is started, so a machine without
 * gnuplot still gets results.json, results.csv and points.csv (and exit
 * status 5).
 */
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "arrank/output.h"
#include "arrank/plot.h"
#include "cli.h"

static const char usage[] =
    "usage: arrank plot CAMPAIGN... [--at T] [--out DIR] [--format svg|png|pdf]... [options]\n"
    "\n"
    "Fit every sample and draw the review figures with gnuplot, in DIR (default\n"
    "plots/<campaign folder name>/), with results.json, results.csv and points.csv\n"
    "(every point, one row each) beside them:\n"
    "  arrhenius.EXT            ln r against 1000 K/T, fitted lines with confidence\n"
    "                           bands, each sample named at its line's end\n"
    "  rate-at-T.EXT            rate at the operating temperature with its interval\n"
    "  ea-lnA.EXT               Ea against ln r at the harmonic-mean temperature,\n"
    "                           joint confidence ellipses (compensation)\n"
    "  diagnostics-NN[-ID].EXT  per sample: its Arrhenius plot, residuals and local\n"
    "                           apparent Ea on one 1000 K/T axis\n"
    "                           (NN: position in the campaign; ID: the sample id,\n"
    "                           other characters than letters, digits, '.', '_',\n"
    "                           '-' made '_')\n"
    "  time-on-stream-NN[-ID].EXT  per sample whose file has a time_on_stream\n"
    "                           column: rate against time on stream with the\n"
    "                           drift test's fitted line and its interval\n"
    "\n"
    "Several campaign folders are read as one run: ids that occur in more than\n"
    "one are named CAMPAIGN/ID; with a reference in every campaign each rate is\n"
    "taken relative to its own campaign's reference, and its drift is named.\n"
    "\n"
    "  --at T              operating temperature with its unit, e.g. 250C or 523.15K\n"
    "                      (default: operating_temperature in campaign.ini)\n"
    "  --extrapolate       rank by rate even when T lies more than 100 K outside\n"
    "                      every sample's measured range (refused otherwise)\n"
    "  --out DIR           output folder, made if missing\n"
    "  --format F          svg (default), png (twice the pixels) or pdf; repeat for more\n"
    "  --show N|N+flagged|all|ID,...\n"
    "                      samples drawn in the Arrhenius, rate and compensation\n"
    "                      figures: the top N by the ranking key (default 12), with\n"
    "                      every flagged one, all, or the samples named (ids\n"
    "                      separated by commas); the rest are named in a caption\n"
    "  --size S            slide (1280x720), page (960x720, default), square\n"
    "                      (900x900) or WxH in px; PNG has twice the pixels\n"
    "  --reference ID      the reference catalyst (default: reference in campaign.ini):\n"
    "                      each rate at T as a ratio to it, P(better), Ea difference\n"
    "  --confidence C      two-sided level of every interval (default 0.95)\n"
    "  --by KEY            rank by rate (default), ea, prefactor or ratio\n"
    "  --use-all, --drop-outliers, --conversion-limit X, --no-diagnose,\n"
    "  --errors, --model, --seed, --draws, --pairs, --bootstrap, --normal,\n"
    "  --strict, --no-merge, --run LABEL\n"
    "                      as for 'arrank rank'\n"
    "\n"
    "gnuplot is run from ARRANK_GNUPLOT if set, else found on PATH.  Every\n"
    "file is written to a private folder first and moved into DIR only when\n"
    "all of them are written: a run that fails writes nothing.  DIR may not\n"
    "be the campaign folder or inside it.\n"
    "\n"
    "Exit status: 0 ok (at least one sample fitted; files not used are named on\n"
    "stderr), 1 bad input data or nothing fittable, 2 usage (also an\n"
    "output inside the campaign folder), 3 a file could not be read or written,\n"
    "4 gnuplot failed on a figure (its message is shown; nothing is written),\n"
    "5 gnuplot not found (results.json, results.csv and points.csv are still\n"
    "written; install it with 'apt-get install gnuplot-nox').\n";

char *cli_default_out_dir(const arrank_campaign *campaign)
{
    const char *name = campaign->name && *campaign->name ? campaign->name : "campaign";
    size_t n = strlen(name) + 8;
    char *d = malloc(n);
    if (d)
        snprintf(d, n, "plots/%s", name);
    return d;
}

unsigned cli_plot_formats(const cli_args *args)
{
    unsigned f = 0;
    for (size_t k = 0; k < args->n_formats; k++) {
        if (strcmp(args->formats[k], "svg") == 0)
            f |= ARRANK_PLOT_SVG;
        else if (strcmp(args->formats[k], "png") == 0)
            f |= ARRANK_PLOT_PNG;
        else if (strcmp(args->formats[k], "pdf") == 0)
            f |= ARRANK_PLOT_PDF;
    }
    return f ? f : ARRANK_PLOT_SVG;
}

static int save(const cli_session *s, const char *dir, const char *name,
                arrank_output_format format)
{
    size_t n = strlen(dir) + strlen(name) + 2;
    char *path = malloc(n);
    if (!path) {
        cli_fail("out of memory");
        return EXIT_IO;
    }
    snprintf(path, n, "%s/%s", dir, name);
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st = arrank_output_save(s->analysis, format, path, &err);
    free(path);
    if (st != ARRANK_OK) {
        cli_print_error(&err);
        return cli_exit_status(st, &err);
    }
    return -1;
}

int cmd_plot(int argc, char **argv)
{
    cli_args args;
    int rc = cli_parse(argc, argv,
                       OPT_REFERENCE | OPT_MULTI | OPT_AT | OPT_CONFIDENCE | OPT_BY |
                           OPT_DIAGNOSE | OPT_MODEL | OPT_STATS | OPT_OUT_DIR | OPT_FORMAT |
                           OPT_FIGURES | OPT_SIZE,
                       usage, &args);
    if (rc != -1)
        return rc;
    arrank_plot_options po = arrank_plot_defaults();
    po.formats = cli_plot_formats(&args);
    rc = cli_figure_options(&args, &po);
    if (rc != -1)
        return rc;
    cli_session s;
    rc = cli_session_open(&args, 1, &s);
    if (rc != -1)
        return rc;
    char *dir = args.out_dir ? strdup(args.out_dir) : cli_default_out_dir(s.campaign);
    if (!dir) {
        cli_fail("out of memory");
        cli_session_free(&s);
        return EXIT_IO;
    }
    /* everything goes into a private folder first, moved into dir only
       when every file is written (stage.c) */
    cli_stage_begin(s.campaign);
    const char *priv = cli_stage_dir(dir, &rc);
    if (priv)
        rc = cli_stage_claim(dir, priv, args.out_dir == NULL);
    if (rc == -1)
        rc = save(&s, priv, "results.json", ARRANK_OUTPUT_JSON);
    if (rc == -1)
        rc = save(&s, priv, "results.csv", ARRANK_OUTPUT_CSV);
    if (rc == -1)
        rc = save(&s, priv, "points.csv", ARRANK_OUTPUT_POINTS);
    arrank_plot_files files = {0};
    if (rc == -1) {
        cli_report_unfitted(&s);
        arrank_error err;
        arrank_error_clear(&err);
        arrank_status st = arrank_plot_write(s.analysis, priv, &po, &files, &err);
        if (st != ARRANK_OK) {
            cli_print_error(&err);
            rc = cli_exit_status(st, &err);
        }
        /* without gnuplot the results are still worth having (exit 5) */
        if (st == ARRANK_ENOGNUPLOT && (rc = cli_stage_commit()) == -1)
            rc = cli_exit_status(st, &err);
    }
    if (rc == -1)
        rc = cli_stage_commit();
    else
        cli_stage_abort();
    if (rc == -1) {
        printf("%s/results.json\n%s/results.csv\n%s/points.csv\n", dir, dir, dir);
        for (size_t k = 0; k < files.n; k++) {
            const char *slash = strrchr(files.files[k].path, '/');
            printf("%s/%s\n", dir, slash ? slash + 1 : files.files[k].path);
        }
        rc = fflush(stdout) == 0 ? EXIT_OK : EXIT_IO;
    }
    arrank_plot_files_clear(&files);
    free(dir);
    cli_session_free(&s);
    return rc;
}
