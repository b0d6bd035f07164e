/*
 * cmd_compare.c - `arrank compare CAMP_A CAMP_B [--at T]`: two campaigns
 * sample by sample (arrank/compare.h).
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/analysis_compare.h"
#include "arrank/compare_out.h"
#include "arrank/plot_compare.h"
#include "arrank/plot.h"
#include "cli.h"

static const char usage[] =
    "usage: arrank compare CAMP_A CAMP_B [--at T] [--out DIR] [options]\n"
    "\n"
    "Match the samples of two campaign folders by id (fresh against aged, before\n"
    "against after regeneration, rig A against rig B) and give, per sample, the\n"
    "ratio of the rates at T (B over A) and the change in Ea (B minus A), each\n"
    "with its interval (independent fits, Welch degrees of freedom) and a verdict\n"
    "at the run's confidence with Holm's correction across the samples.  Ids found\n"
    "in one campaign only are listed.\n"
    "\n"
    "  --at T              operating temperature with its unit: 250C, 523.15K\n"
    "                      (default: operating_temperature in CAMP_A's campaign.ini)\n"
    "  --extrapolate       compare even when T lies more than 100 K outside every\n"
    "                      sample's measured range (refused otherwise)\n"
    "  --json FILE|-       the comparison as JSON ('-' for standard output)\n"
    "  --csv FILE|-        the comparison as CSV, one row per matched sample\n"
    "  --out DIR           also draw the paired figure DIR/compare.EXT (one line per\n"
    "                      sample from A to B, log rate axis) with compare.html (the\n"
    "                      report: table and figure on one page), compare.json and\n"
    "                      compare.csv beside it\n"
    "  --format svg|png|pdf  figure format, repeatable (default svg)\n"
    "  --size S            figure canvas: slide (1280x720), page (960x720, default),\n"
    "                      square (900x900) or WxH in px\n"
    "  --wide              on a terminal, every column of the table however wide\n"
    "  --reference ID      a reference catalyst tested in both: each rate is first\n"
    "                      taken relative to its own campaign's reference (the\n"
    "                      rig's drift corrected); default: as measured, unless\n"
    "                      both campaign.ini name the same reference\n"
    "  --confidence C      two-sided level of every interval and the tests' level\n"
    "                      (default CAMP_A's campaign.ini, else 0.95)\n"
    "  --use-all, --drop-outliers, --conversion-limit X, --no-diagnose, --run LABEL,\n"
    "  --errors, --model, --strict, --no-merge\n"
    "                      as for 'arrank rank', applied to both campaigns\n"
    "\n"
    "Exit status: 0 ok, 1 bad input data or nothing fittable, 2 usage,\n"
    "3 a file could not be read or written, 4 gnuplot failed, 5 gnuplot not found.\n";

/* One file of the --out folder, made in priv: the comparison in format, or
   the report page (html, with the figure svg inline) when svg is given. */
static arrank_status out_file(const char *priv, const char *name, const arrank_comparison *cmp,
                              arrank_compare_format format, const char *svg, arrank_error *err)
{
    char path[4200];
    snprintf(path, sizeof path, "%s/%s", priv, name);
    FILE *f = fopen(path, "w");
    if (!f)
        return arrank_errorf(err, ARRANK_EIO, "cannot write '%s'", path);
    arrank_status st = svg ? arrank_compare_html_write(cmp, svg, f, err)
                           : arrank_compare_write(cmp, format, f, err);
    if (fclose(f) != 0 && st == ARRANK_OK)
        st = arrank_errorf(err, ARRANK_EIO, "cannot write '%s'", path);
    return st;
}

/* --json, --csv and the --out folder, all or nothing (stage.c).  -1 or an exit status. */
static int write_outputs(const cli_args *args, const cli_session *sa, const cli_session *sb,
                         const arrank_comparison *cmp)
{
    const struct {
        const char *path;
        arrank_compare_format format;
    } out[] = {{args->json_path, ARRANK_COMPARE_JSON}, {args->csv_path, ARRANK_COMPARE_CSV}};
    /* neither campaign folder nor any input is ever written */
    (void)sb;
    cli_stage_guard_also(args->campaign_dirs[1]);
    cli_stage_begin(sa->campaign);
    arrank_error err;
    arrank_error_clear(&err);
    for (size_t i = 0; i < 2; i++) {
        if (!out[i].path)
            continue;
        int rc = -1, to_stdout = strcmp(out[i].path, "-") == 0;
        FILE *f = to_stdout ? stdout : cli_stage_file(out[i].path, &rc);
        if (!f) {
            cli_stage_abort();
            return rc;
        }
        arrank_status st = arrank_compare_write(cmp, out[i].format, f, &err);
        if (st != ARRANK_OK) {
            cli_print_error(&err);
            cli_stage_abort();
            return cli_exit_status(st, &err);
        }
    }
    if (args->out_dir) {
        int rc = -1;
        const char *priv = cli_stage_dir(args->out_dir, &rc);
        if (!priv) {
            cli_stage_abort();
            return rc;
        }
        arrank_plot_options po = arrank_plot_defaults();
        po.formats = cli_plot_formats(args);
        (void)cli_figure_options(args, &po); /* --size, checked in cmd_compare */
        char svg[4200]; /* the report page has the SVG inline when one was drawn */
        snprintf(svg, sizeof svg, "%s/compare.svg", priv);
        arrank_status st = out_file(priv, "compare.json", cmp, ARRANK_COMPARE_JSON, NULL, &err);
        if (st == ARRANK_OK)
            st = out_file(priv, "compare.csv", cmp, ARRANK_COMPARE_CSV, NULL, &err);
        if (st == ARRANK_OK)
            st = arrank_compare_plot(cmp, priv, &po, &err);
        if (st == ARRANK_OK)
            st = out_file(priv, "compare.html", cmp, ARRANK_COMPARE_JSON, svg, &err);
        if (st != ARRANK_OK) {
            cli_print_error(&err);
            cli_stage_abort();
            return cli_exit_status(st, &err);
        }
    }
    return cli_stage_commit();
}

/* Both campaigns analysed at one temperature and level: -1 or an exit status. */
static int open_both(cli_args *args, cli_session *sa, cli_session *sb)
{
    const char *dirs[2] = {args->campaign_dirs[0], args->campaign_dirs[1]};
    args->campaign_dir = dirs[0];
    args->n_campaigns = 1; /* each opened on its own */
    int rc = cli_session_open(args, 1, sa);
    if (rc != -1)
        return rc;
    cli_report_unfitted(sa);
    /* the second campaign at the first's temperature and level */
    args->at_K_set = 1;
    args->at_K = args->options.operating_temp_K;
    args->confidence_given = 1;
    args->campaign_dir = dirs[1];
    rc = cli_session_open(args, 1, sb);
    if (rc != -1) {
        cli_session_free(sa);
        return rc;
    }
    cli_report_unfitted(sb);
    args->n_campaigns = 2;
    return -1;
}

int cmd_compare(int argc, char **argv)
{
    cli_args args;
    int rc = cli_parse(argc, argv,
                       OPT_MULTI | OPT_REFERENCE | OPT_AT | OPT_OUTPUTS | OPT_CONFIDENCE | OPT_DIAGNOSE |
                           OPT_MODEL | OPT_OUT_DIR | OPT_FORMAT | OPT_SIZE | OPT_TABLE,
                       usage, &args);
    if (rc != -1)
        return rc;
    arrank_plot_options po = arrank_plot_defaults(); /* --size checked before any reading */
    if ((rc = cli_figure_options(&args, &po)) != -1)
        return rc;
    if (args.n_campaigns != 2) {
        cli_fail("compare: give two campaign folders (CAMP_A CAMP_B), got %zu; see 'arrank "
                 "compare --help'", args.n_campaigns);
        return EXIT_USAGE;
    }
    if (args.points_path || args.json_points) {
        cli_fail("compare: --points and --json-points belong to fit and rank; see 'arrank "
                 "compare --help'");
        return EXIT_USAGE;
    }
    args.options.rank = 0; /* each campaign's fits; the comparison is the result */
    cli_session sa, sb;
    rc = open_both(&args, &sa, &sb);
    if (rc != -1)
        return rc;
    arrank_comparison *cmp = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st = arrank_compare_run(sa.analysis, sb.analysis, sa.units, &cmp, &err);
    if (st != ARRANK_OK) {
        cli_print_error(&err);
        rc = cli_exit_status(st, &err);
    }
    if (rc == -1 && !cli_outputs_to_stdout(&args)) {
        const arrank_table_options topt = cli_table_options(&args);
        st = arrank_compare_write_term(cmp, &topt, stdout, &err);
        if (st == ARRANK_OK && fflush(stdout) != 0)
            st = arrank_errorf(&err, ARRANK_EIO, "cannot write to standard output");
        if (st != ARRANK_OK) {
            cli_print_error(&err);
            rc = cli_exit_status(st, &err);
        }
    }
    if (rc == -1)
        rc = write_outputs(&args, &sa, &sb, cmp);
    arrank_compare_free(cmp);
    cli_session_free(&sb);
    cli_session_free(&sa);
    return rc == -1 ? EXIT_OK : rc;
}
