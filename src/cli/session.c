/*
 * session.c - the steps every analysing command takes: load the units and the
 * campaign, settle the operating temperature and the confidence level, run
 * the analysis, tell which samples could not be fitted, write JSON and CSV.
 */
#include <gsl/gsl_errno.h>
#include <sys/ioctl.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#include "arrank/batches.h"
#include "arrank/output.h"
#include "cli.h"

/*
 * Progress on stderr: only when stderr is a terminal, only once the work has
 * taken a second, at most ten updates a second, on one line that is cleared
 * when the work is done (so a fast run shows nothing).
 */
typedef struct {
    struct timespec start, last;
    int shown;
} progress_state;

static double seconds_between(const struct timespec *a, const struct timespec *b)
{
    return (double)(b->tv_sec - a->tv_sec) + 1e-9 * (double)(b->tv_nsec - a->tv_nsec);
}

static void show_progress(void *ctx, const char *stage, size_t done, size_t total)
{
    progress_state *ps = ctx;
    struct timespec now;
    clock_gettime(CLOCK_MONOTONIC, &now);
    if (seconds_between(&ps->start, &now) < 1.0 ||
        (ps->shown && seconds_between(&ps->last, &now) < 0.1))
        return;
    ps->last = now;
    ps->shown = 1;
    if (total > 1)
        fprintf(stderr, "\rarrank: %s %zu/%zu (%.0f%%)\033[K", stage, done, total,
                100.0 * (double)done / (double)total);
    else
        fprintf(stderr, "\rarrank: %s\033[K", stage);
    fflush(stderr);
}

static void end_progress(progress_state *ps)
{
    if (ps && ps->shown) {
        fputs("\r\033[K", stderr);
        fflush(stderr);
        ps->shown = 0;
    }
}

/* The campaign folder, or several read one by one and merged (arrank/batches.h). */
static arrank_status load_campaigns(const cli_args *args, cli_session *s, progress_state *ps,
                                    arrank_error *err)
{
    if (args->n_campaigns <= 1)
        return arrank_campaign_load_with(args->campaign_dir, s->units, &args->load,
                                         ps ? show_progress : NULL, ps, &s->campaign, err);
    arrank_campaign *parts[CLI_MAX_CAMPAIGNS] = {NULL};
    arrank_status st = ARRANK_OK;
    for (size_t k = 0; k < args->n_campaigns; k++) /* no output lands in any of them */
        cli_stage_guard_also(args->campaign_dirs[k]);
    for (size_t k = 0; k < args->n_campaigns && st == ARRANK_OK; k++)
        st = arrank_campaign_load_with(args->campaign_dirs[k], s->units, &args->load,
                                       ps ? show_progress : NULL, ps, &parts[k], err);
    if (st != ARRANK_OK) {
        for (size_t k = 0; k < args->n_campaigns; k++)
            arrank_campaign_free(parts[k]);
        return st;
    }
    return arrank_batches_merge(parts, args->n_campaigns, s->units, &s->campaign, err);
}

int cli_session_open(cli_args *args, int need_T, cli_session *s)
{
    memset(s, 0, sizeof *s);
    arrank_error err;
    arrank_error_clear(&err);
    gsl_set_error_handler_off();

    /* The unit database is read while the campaign folder is listed. */
    s->units = arrank_units_create_background(&err);
    if (!s->units) {
        cli_print_error(&err);
        return EXIT_IO;
    }
    double at_K = NAN;
    if (args->at_text) {
        if (arrank_units_ready(s->units, &err) != ARRANK_OK) {
            cli_print_error(&err);
            cli_session_free(s);
            return EXIT_IO;
        }
        arrank_status st = arrank_units_parse_temperature(s->units, args->at_text, &at_K, &err);
        if (st != ARRANK_OK) {
            cli_fail("--at: %s", err.message);
            cli_session_free(s);
            return EXIT_USAGE;
        }
    }
    progress_state ps_store;
    progress_state *ps = NULL;
    if (isatty(STDERR_FILENO)) {
        memset(&ps_store, 0, sizeof ps_store);
        clock_gettime(CLOCK_MONOTONIC, &ps_store.start);
        ps = &ps_store;
    }
    arrank_status st = load_campaigns(args, s, ps, &err);
    end_progress(ps);
    if (st != ARRANK_OK) {
        cli_print_error(&err);
        cli_session_free(s);
        return cli_exit_status(st, &err);
    }
    if (!args->at_text)
        at_K = args->at_K_set ? args->at_K : s->campaign->operating_temp_K;
    if (need_T && !isfinite(at_K) && arrank_by_needs_T(args->options.by)) {
        cli_fail("no operating temperature: give one with --at (e.g. --at 250C) or set "
                 "operating_temperature in %s/campaign.ini", args->campaign_dir);
        cli_session_free(s);
        return EXIT_USAGE;
    }
    args->options.operating_temp_K = at_K;
    if (!args->confidence_given && isfinite(s->campaign->confidence))
        args->options.confidence = s->campaign->confidence;

    /* only a ranking is refused far outside every sample's range: fit and
       check show each sample's own extrapolation, flagged */
    if (strcmp(args->command, "fit") == 0 || strcmp(args->command, "check") == 0 ||
        (strcmp(args->command, "compare") == 0 &&
         args->options.max_extrapolation_K == INFINITY))
        args->options.max_extrapolation_K = INFINITY;
    /* fit shows each sample's parameters in file order; rank orders them */
    if (strcmp(args->command, "fit") == 0)
        args->options.rank = 0;
    args->options.units = s->units;
    args->options.progress = ps ? show_progress : NULL;
    args->options.progress_ctx = ps;
    st = arrank_analysis_run(s->campaign, &args->options, &s->analysis, &err);
    end_progress(ps);
    args->options.units = NULL;
    args->options.progress = NULL;
    args->options.progress_ctx = NULL;
    if (st == ARRANK_EDATA && !args->load.strict) {
        /* nothing could be fitted: every file and sample with its reason, then why the
           run stops */
        cli_report_unfitted(s);
        if (args->options.run) { /* the analysis's reasons are gone with it: the first */
            cli_print_error(&err);
            cli_fail("no sample in '%s' could be fitted on run '%s' (--run)",
                     args->campaign_dir, args->options.run);
        } else {
            cli_fail("no sample in '%s' could be fitted", args->campaign_dir);
        }
        cli_session_free(s);
        return EXIT_DATA;
    }
    if (st != ARRANK_OK) {
        cli_print_error(&err);
        cli_session_free(s);
        return cli_exit_status(st, &err);
    }
    return -1;
}

/*
 * The end of a command that succeeded: the process exits next, and the
 * operating system takes its memory back at once, where freeing a large
 * campaign block by block takes longer than ranking it (about 20 ms for
 * 10,000 samples).  The session stays reachable from `kept`, so it is not a
 * leak.  ARRANK_FREE_AT_EXIT=1 frees it as usual, so that leak checkers see
 * every free (tests/valgrind.sh runs both ways).
 */
static cli_session kept;

void cli_session_leave(cli_session *s)
{
    const char *env = getenv("ARRANK_FREE_AT_EXIT");
    if (env && strcmp(env, "1") == 0) {
        cli_session_free(s);
        return;
    }
    cli_session_free(&kept); /* a second session in one process: free the first */
    kept = *s;
    memset(s, 0, sizeof *s);
}

void cli_session_free(cli_session *s)
{
    arrank_analysis_free(s->analysis);
    arrank_campaign_free(s->campaign);
    arrank_units_free(s->units);
    memset(s, 0, sizeof *s);
}

void cli_report_unfitted(const cli_session *s)
{
    const arrank_campaign *c = s->campaign;
    const arrank_analysis *a = s->analysis;
    size_t not_used = c->n_unused;
    for (size_t i = 0; i < c->n_samples; i++) {
        const arrank_sample *smp = &c->samples[i];
        arrank_error e;
        if (smp->skipped) {
            arrank_error_at(&e, ARRANK_EDATA, smp->path, smp->problem_line, smp->problem_column,
                            "%s; file not used", smp->problem);
            cli_print_error(&e);
            not_used++;
            continue;
        }
        for (size_t k = 0; smp->n_omitted && k < smp->n_points; k++) {
            const arrank_point *p = &smp->points[k];
            if (!p->omitted)
                continue;
            arrank_error_at(&e, ARRANK_EDATA, smp->path, p->line, p->omitted_column,
                            "%s; point left out", p->omitted);
            cli_print_error(&e);
        }
        /* the analysis's reason, or the reader's when nothing could be fitted */
        const char *why = a && i < a->n_results ? a->results[i].error : smp->problem;
        long line = a && i < a->n_results ? a->results[i].error_line : smp->problem_line;
        if (!why)
            continue;
        arrank_error_at(&e, ARRANK_EDATA, smp->path, line, 0, "%s; sample '%s' not fitted", why,
                        smp->id);
        cli_print_error(&e);
    }
    for (size_t i = 0; i < c->n_unused; i++)
        cli_fail("%s", c->unused[i]);
    if (not_used)
        cli_fail("%zu of %zu file%s not used; see above", not_used, c->n_files,
                 c->n_files == 1 ? "" : "s");
}

/* The --json/--csv/--points destinations: refused before any work is shown
   when one is an input or inside the campaign folder.  -1 or an exit status. */
static int check_outputs(const cli_args *args, const cli_session *s)
{
    cli_stage_begin(s->campaign);
    const char *paths[] = {args->json_path, args->csv_path, args->points_path};
    for (size_t i = 0; i < sizeof paths / sizeof paths[0]; i++) {
        if (!paths[i] || strcmp(paths[i], "-") == 0)
            continue;
        int rc = cli_stage_check(paths[i], 0);
        if (rc != -1)
            return rc;
    }
    return -1;
}

int cli_outputs_to_stdout(const cli_args *args)
{
    const char *paths[] = {args->json_path, args->csv_path, args->points_path};
    for (size_t i = 0; i < sizeof paths / sizeof *paths; i++)
        if (paths[i] && strcmp(paths[i], "-") == 0)
            return 1;
    return 0;
}

int cli_write_outputs(const cli_args *args, const cli_session *s)
{
    arrank_error err;
    arrank_error_clear(&err);
    const struct {
        const char *path;
        arrank_output_format format;
    } out[] = {{args->json_path,
                args->json_points ? ARRANK_OUTPUT_JSON_POINTS : ARRANK_OUTPUT_JSON},
               {args->csv_path, ARRANK_OUTPUT_CSV},
               {args->points_path, ARRANK_OUTPUT_POINTS}};
    cli_stage_begin(s->campaign);
    for (size_t i = 0; i < sizeof out / sizeof *out; i++) {
        if (!out[i].path)
            continue;
        int to_stdout = strcmp(out[i].path, "-") == 0;
        int rc = -1;
        FILE *f = to_stdout ? stdout : cli_stage_file(out[i].path, &rc);
        if (!f) {
            cli_stage_abort();
            return rc;
        }
        arrank_status st = arrank_output_write(s->analysis, out[i].format, f, &err);
        if (st == ARRANK_OK && to_stdout && fflush(stdout) != 0)
            st = arrank_errorf(&err, ARRANK_EIO, "cannot write to standard output");
        if (st == ARRANK_OK && !to_stdout)
            cli_stage_written(f);
        if (st != ARRANK_OK) {
            cli_print_error(&err);
            cli_stage_abort();
            return cli_exit_status(st, &err);
        }
    }
    return cli_stage_commit();
}

/*
 * The table on standard output: on a terminal, fitted to its width (the
 * window size from the terminal, else COLUMNS, else 80; --wide: no limit),
 * coloured unless NO_COLOR is set and not empty (no-color.org) or TERM is
 * "dumb".  Piped or redirected, the table is the same as ever, every column,
 * for scripts (COLUMNS is not read then).  The same for compare's and a
 * plan's table.
 */
arrank_table_options cli_table_options(const cli_args *args)
{
    arrank_table_options t = {0, 0};
    if (!isatty(STDOUT_FILENO))
        return t;
    struct winsize ws;
    const char *columns = getenv("COLUMNS");
    if (ioctl(STDOUT_FILENO, TIOCGWINSZ, &ws) == 0 && ws.ws_col > 0)
        t.width = ws.ws_col;
    else if (columns && atoi(columns) > 0)
        t.width = (size_t)atoi(columns);
    else
        t.width = 80;
    if (args->wide)
        t.width = 0;
    const char *no_color = getenv("NO_COLOR"), *term = getenv("TERM");
    t.colour = !(no_color && *no_color) && !(term && strcmp(term, "dumb") == 0);
    return t;
}

int cli_analyse_and_print(cli_args *args, int need_T)
{
    cli_session s;
    int rc = cli_session_open(args, need_T, &s);
    if (rc != -1)
        return rc;
    rc = check_outputs(args, &s);
    if (rc != -1) {
        cli_session_free(&s);
        return rc;
    }
    arrank_error err;
    arrank_error_clear(&err);
    /* JSON or CSV on stdout replaces the table there */
    int to_stdout = cli_outputs_to_stdout(args);
    if (!to_stdout) {
        const arrank_table_options topt = cli_table_options(args);
        arrank_status st = arrank_output_table(s.analysis, &topt, stdout, &err);
        if (st == ARRANK_OK && fflush(stdout) != 0)
            st = arrank_errorf(&err, ARRANK_EIO, "cannot write to standard output");
        if (st != ARRANK_OK) {
            cli_print_error(&err);
            cli_session_free(&s);
            return cli_exit_status(st, &err);
        }
    }
    cli_report_unfitted(&s);
    rc = cli_write_outputs(args, &s);
    cli_session_leave(&s);
    return rc == -1 ? EXIT_OK : rc;
}
