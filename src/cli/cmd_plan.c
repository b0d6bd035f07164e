/*
 * cmd_plan.c - `arrank plan CAMPAIGN`: which samples to measure next, at
 * which temperatures and how often, to settle the ranking at the operating
 * temperature (or to narrow the rate-at-T intervals), within a budget of
 * runs and the stated maximum temperature.
 */
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include "arrank/analysis_plan.h"
#include "arrank/plan_out.h"
#include "arrank/plot.h"
#include "arrank/plot_plan.h"
#include "cli.h"

static const char usage[] =
    "usage: arrank plan CAMPAIGN [--at T] [--budget N] [--goal separate|precision|curvature]\n"
    "                   [options]\n"
    "\n"
    "Plan the next runs: which samples, at which temperatures, how many repeats.\n"
    "Each sample's fitted line tells in closed form how much new runs narrow its\n"
    "rate at T; the runs go one by one where they help the goal most, and the\n"
    "plan is checked by simulation (parameters drawn from each fit, the planned\n"
    "runs measured with the sample's scatter, refitted and re-ranked) beside a\n"
    "naive plan (the same runs spread evenly at the current temperatures).\n"
    "\n"
    "  --at T                 operating temperature with its unit (default:\n"
    "                         operating_temperature in campaign.ini)\n"
    "  --goal separate|precision|curvature\n"
    "                         separate (default): tell the leader apart from every\n"
    "                         other sample of its group (Holm), or its P(best)\n"
    "                         reaches --target; precision: every rate-at-T interval\n"
    "                         within --width; curvature: make a bend of --bend\n"
    "                         detectable by the quadratic test (level 0.02)\n"
    "  --budget N             new runs to spend (default 12)\n"
    "  --max-temperature T    the reactor's or the safety limit, with its unit; no run\n"
    "                         is planned above it (default: max_temperature in\n"
    "                         campaign.ini; one of the two is needed)\n"
    "  --step D               candidate grid step from T, e.g. 5K (default 5K)\n"
    "  --reach D              at most this far outside each sample's kinetic window,\n"
    "                         e.g. 10K (default 10K)\n"
    "  --target P             separate: P(best) that also settles it (default 0.95)\n"
    "  --width W              precision: relative half width, 5% or 0.05 (default 5%)\n"
    "  --bend E               curvature: the fall of the apparent Ea across each\n"
    "                         sample's allowed window to detect, e.g. 20kJ/mol\n"
    "  --sample ID            precision, curvature: plan for this sample (repeatable;\n"
    "                         default the leader's group)\n"
    "  --simulations N        simulations of each plan (default 2000)\n"
    "  --seed N               seed of the simulations and P(best) (default 1)\n"
    "  --run-sheet FILE|-     write the run sheet (plan.csv: order, sample,\n"
    "                         temperature in degC and K, repeats)\n"
    "  --json FILE|-          write the plan as JSON\n"
    "  --out DIR              draw plan.svg (the planned runs on the Arrhenius plot)\n"
    "                         into DIR\n"
    "  --format F             svg (default), png or pdf for the figure; repeatable\n"
    "  --size S               its canvas: slide (1280x720), page (960x720, default),\n"
    "                         square (900x900) or WxH in px\n"
    "  --wide                 on a terminal, every column of the table however wide\n"
    "  --confidence C, --use-all, --drop-outliers, --conversion-limit X,\n"
    "  --no-diagnose, --run LABEL, --strict, --no-merge, --extrapolate\n"
    "                         as for 'arrank rank'\n"
    "\n"
    "Candidates lie on the grid T + k step, inside each sample's kinetic window\n"
    "widened by the reach, never above the maximum temperature and never at or\n"
    "above the sample's coldest point that is transport-limited or left out of\n"
    "the fit hotter than its window.  The plan supports and does not replace\n"
    "qualified judgement and local rules.\n"
    "\n"
    "Exit status: 0 ok, 1 bad input data or nothing fittable, 2 usage (also no\n"
    "maximum temperature), 3 a file could not be read or written, 4 gnuplot\n"
    "failed, 5 gnuplot not found.\n";

/* A temperature difference written with its unit K: "5K", "5 K". */
static int parse_delta(const char *name, const char *text, double *out)
{
    char *end;
    errno = 0;
    double v = strtod(text, &end);
    while (end != text && *end == ' ')
        end++;
    if (end == text || errno || strcmp(end, "K") != 0 || !(v >= 0) || !isfinite(v) || v > 500) {
        cli_fail("%s '%s' must be a temperature difference in kelvin with its unit, e.g. 5K",
                 name, text);
        return EXIT_USAGE;
    }
    *out = v;
    return -1;
}

/* An energy per amount with its unit: "20kJ/mol", "20 kJ/mol", "20000 J/mol". */
static int parse_energy(const char *name, const char *text, double *out)
{
    char *end;
    errno = 0;
    double v = strtod(text, &end);
    while (end != text && *end == ' ')
        end++;
    double scale = end == text ? NAN
                   : strcmp(end, "kJ/mol") == 0 ? 1e3
                   : strcmp(end, "J/mol") == 0  ? 1.0
                                                : NAN;
    if (errno || !isfinite(scale) || !(v > 0) || !isfinite(v) || v * scale > 1e6) {
        cli_fail("%s '%s' must be an energy per amount with its unit, e.g. 20kJ/mol", name,
                 text);
        return EXIT_USAGE;
    }
    *out = v * scale;
    return -1;
}

/* A whole number from lo to hi. */
static int parse_whole(const char *name, const char *text, size_t lo, size_t hi, size_t *out)
{
    char *end;
    errno = 0;
    unsigned long long v = strtoull(text, &end, 10);
    if (errno || end == text || *end || text[0] == '-' || v < lo || v > hi) {
        cli_fail("%s '%s' is not a whole number from %zu to %zu", name, text, lo, hi);
        return EXIT_USAGE;
    }
    *out = (size_t)v;
    return -1;
}

/* A fraction: 0.05, 5%, +-5% or ±5%. */
static int parse_share(const char *name, const char *text, double *out)
{
    const char *t = text;
    if (strncmp(t, "+-", 2) == 0)
        t += 2;
    else if (strncmp(t, "\xc2\xb1", 2) == 0)
        t += 2;
    char *end;
    errno = 0;
    double v = strtod(t, &end);
    if (end != t && *end == '%' && end[1] == '\0')
        v /= 100.0;
    else if (end == t || *end)
        v = NAN;
    if (errno || !(v > 0.0 && v < 1.0)) {
        cli_fail("%s '%s' must be a fraction between 0 and 1, e.g. 0.05 or 5%%", name, text);
        return EXIT_USAGE;
    }
    *out = v;
    return -1;
}

/* The plan options from args into o (max_temp_K is read later). */
static int plan_options(const cli_args *args, arrank_plan_options *o)
{
    const char *const *v = args->plan_opt;
    *o = arrank_analysis_plan_defaults();
    int rc = -1;
    if (v[0] && (rc = parse_whole("--budget", v[0], 1, 10000, &o->budget)) != -1)
        return rc;
    if (v[1]) {
        if (strcasecmp(v[1], "separate") == 0)
            o->goal = ARRANK_GOAL_SEPARATE;
        else if (strcasecmp(v[1], "precision") == 0)
            o->goal = ARRANK_GOAL_PRECISION;
        else if (strcasecmp(v[1], "curvature") == 0)
            o->goal = ARRANK_GOAL_CURVATURE;
        else {
            cli_fail("--goal '%s' is not known; use separate, precision or curvature", v[1]);
            return EXIT_USAGE;
        }
    }
    if (v[2] && (rc = parse_share("--target", v[2], &o->target)) != -1)
        return rc;
    if (v[3] && (rc = parse_share("--width", v[3], &o->width)) != -1)
        return rc;
    if (v[4] && (rc = parse_delta("--step", v[4], &o->step_K)) != -1)
        return rc;
    if (o->step_K <= 0) {
        cli_fail("--step '%s' must be more than 0 K", v[4]);
        return EXIT_USAGE;
    }
    if (v[5] && (rc = parse_delta("--reach", v[5], &o->reach_K)) != -1)
        return rc;
    if (v[7] && (rc = parse_whole("--simulations", v[7], 100, 1000000, &o->sims)) != -1)
        return rc;
    if (v[8] && (rc = parse_energy("--bend", v[8], &o->bend_J_mol)) != -1)
        return rc;
    if (o->goal == ARRANK_GOAL_CURVATURE && !v[8]) {
        cli_fail("--goal curvature needs --bend: the fall of the apparent Ea to detect, e.g. "
                 "--bend 20kJ/mol");
        return EXIT_USAGE;
    }
    if (args->n_plan_samples && o->goal == ARRANK_GOAL_SEPARATE) {
        cli_fail("--sample names the samples of --goal precision or curvature; the separate "
                 "goal plans for the leader's group");
        return EXIT_USAGE;
    }
    o->samples = args->plan_samples;
    o->n_samples = args->n_plan_samples;
    if (args->csv_path || args->points_path || args->json_points) {
        cli_fail("plan: '--csv', '--points' and '--json-points' do not apply; the plan's "
                 "outputs are --run-sheet, --json and --out");
        return EXIT_USAGE;
    }
    return -1;
}

/* The limit: --max-temperature, else campaign.ini.  -1 or an exit status. */
static int max_temperature(const cli_args *args, const cli_session *s, double *out)
{
    *out = s->campaign->max_temp_K;
    if (!args->plan_opt[6]) {
        if (isfinite(*out))
            return -1;
        cli_fail("no maximum temperature: give the reactor's or the safety limit with "
                 "--max-temperature (e.g. --max-temperature 300C) or set max_temperature in "
                 "%s/campaign.ini", args->campaign_dir);
        return EXIT_USAGE;
    }
    arrank_error err;
    arrank_error_clear(&err);
    if (arrank_units_parse_temperature(s->units, args->plan_opt[6], out, &err) != ARRANK_OK) {
        cli_fail("--max-temperature: %s", err.message);
        return EXIT_USAGE;
    }
    return -1;
}

/* One output file of the plan, staged: the run sheet or the JSON. */
static int write_file(const char *path, int json, const cli_session *s, const arrank_plan *p)
{
    int rc = -1;
    int to_stdout = strcmp(path, "-") == 0;
    FILE *f = to_stdout ? stdout : cli_stage_file(path, &rc);
    if (!f)
        return rc;
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st = json ? arrank_plan_out_json(s->analysis, p, f, &err)
                            : arrank_plan_out_sheet(s->analysis, p, f, &err);
    if (st != ARRANK_OK) {
        cli_print_error(&err);
        return cli_exit_status(st, &err);
    }
    return -1;
}

/* The outputs: table, run sheet, JSON, figure; all or nothing. */
static int outputs(const cli_args *args, const cli_session *s, const arrank_plan *p)
{
    arrank_error err;
    arrank_error_clear(&err);
    int to_stdout = (args->json_path && strcmp(args->json_path, "-") == 0) ||
                    (args->run_sheet_path && strcmp(args->run_sheet_path, "-") == 0);
    if (!to_stdout) {
        const arrank_table_options topt = cli_table_options(args);
        arrank_status st = arrank_plan_out_table_term(s->analysis, p, &topt, stdout, &err);
        if (st != ARRANK_OK) {
            cli_print_error(&err);
            return cli_exit_status(st, &err);
        }
    }
    cli_report_unfitted(s);
    int rc = -1;
    if (args->run_sheet_path)
        rc = write_file(args->run_sheet_path, 0, s, p);
    if (rc == -1 && args->json_path)
        rc = write_file(args->json_path, 1, s, p);
    if (rc == -1 && args->out_dir) {
        const char *priv = cli_stage_dir(args->out_dir, &rc);
        if (priv)
            rc = cli_stage_claim(args->out_dir, priv, 0);
        if (rc == -1) {
            arrank_plot_options po = arrank_plot_defaults();
            po.formats = cli_plot_formats(args);
            (void)cli_figure_options(args, &po); /* --size, checked in cmd_plan */
            arrank_status st = arrank_plot_plan(s->analysis, p, priv, &po, NULL, &err);
            if (st != ARRANK_OK) {
                cli_print_error(&err);
                rc = cli_exit_status(st, &err);
            }
        }
    }
    if (rc != -1) {
        cli_stage_abort();
        return rc;
    }
    return cli_stage_commit();
}

/* Destinations refused before any work: an input, inside the campaign. */
static int check_destinations(const cli_args *args, const cli_session *s)
{
    cli_stage_begin(s->campaign);
    int rc = -1;
    if (args->run_sheet_path && strcmp(args->run_sheet_path, "-") != 0)
        rc = cli_stage_check(args->run_sheet_path, 0);
    if (rc == -1 && args->json_path && strcmp(args->json_path, "-") != 0)
        rc = cli_stage_check(args->json_path, 0);
    if (rc == -1 && args->out_dir)
        rc = cli_stage_check(args->out_dir, 1);
    if (rc == -1 && args->json_path && args->run_sheet_path &&
        strcmp(args->json_path, "-") == 0 && strcmp(args->run_sheet_path, "-") == 0) {
        cli_fail("plan: only one of --json and --run-sheet can go to standard output");
        rc = EXIT_USAGE;
    }
    return rc;
}

int cmd_plan(int argc, char **argv)
{
    cli_args args;
    int rc = cli_parse(argc, argv,
                       OPT_AT | OPT_OUTPUTS | OPT_CONFIDENCE | OPT_DIAGNOSE | OPT_SEED |
                           OPT_OUT_DIR | OPT_FORMAT | OPT_SIZE | OPT_PLAN | OPT_TABLE,
                       usage, &args);
    if (rc != -1)
        return rc;
    arrank_plot_options figure = arrank_plot_defaults(); /* --size checked before reading */
    if ((rc = cli_figure_options(&args, &figure)) != -1)
        return rc;
    arrank_plan_options po;
    if ((rc = plan_options(&args, &po)) != -1)
        return rc;
    cli_session s;
    if ((rc = cli_session_open(&args, 1, &s)) != -1)
        return rc;
    if ((rc = max_temperature(&args, &s, &po.max_temp_K)) != -1 ||
        (rc = check_destinations(&args, &s)) != -1) {
        cli_session_free(&s);
        return rc;
    }
    arrank_plan *plan = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st = arrank_analysis_plan(s.analysis, &po, &plan, &err);
    if (st != ARRANK_OK) {
        cli_print_error(&err);
        cli_session_free(&s);
        return cli_exit_status(st, &err);
    }
    rc = outputs(&args, &s, plan);
    arrank_plan_free(plan);
    cli_session_leave(&s);
    return rc == -1 ? EXIT_OK : rc;
}
