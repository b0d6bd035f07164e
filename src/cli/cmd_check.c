/*
 * cmd_check.c - `arrank check CAMPAIGN`: every problem the diagnostics find,
 * in plain words, sample by sample.
 *
 * The command runs the same analysis as `fit` and `rank` (the same kinetic
 * window, exclusions and flags), then prints for each sample each problem
 * with its evidence and every point left out of the fit with its reason.
 * Finding problems is the purpose of the command, not an error: the exit
 * status is 0 whenever the campaign could be read and analysed.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/cautions.h"
#include "arrank/diagnose.h"
#include "arrank/diagnosis_out.h"
#include "arrank/output.h"
#include "arrank/plot.h"
#include "arrank/text.h"
#include "arrank/textfit.h"
#include "cli.h"

static const char usage[] =
    "usage: arrank check CAMPAIGN [--at T] [options]\n"
    "\n"
    "Check every sample of the campaign folder and say, in plain words, what is\n"
    "wrong with its data and why: a bent Arrhenius plot and its likely causes\n"
    "(transport limitation, deactivation, too much conversion, ...), points that\n"
    "look pore- or film-diffusion limited, the kinetic window used for the fit\n"
    "and every point left out with its reason, the Weisz-Prater and Mears numbers\n"
    "when the sample's metadata give particle and transport data, the heat\n"
    "criteria (Mears' interphase and Anderson's intraparticle numbers, Prater's\n"
    "temperature rise) and the hot-spot caution for an exothermic reaction run\n"
    "above the conversion limit, shifts between runs, drift with time on stream,\n"
    "outliers and mixed normalisation bases.\n"
    "A bend that is not detected is not shown to be absent: with few points or\n"
    "much scatter only strong bending can be seen.\n"
    "\n"
    "  --at T              operating temperature with its unit (250C, 523.15K);\n"
    "                      adds the extrapolation check\n"
    "  --use-all           fit every point: no kinetic window\n"
    "  --drop-outliers     leave flagged outliers out of the fit\n"
    "  --run LABEL         only the run with this label of each sample (its run\n"
    "                      column, or its file when one sample has several files);\n"
    "                      samples without it are listed as not fitted\n"
    "  --conversion-limit X  differential-reactor limit, e.g. 5% or 0.05\n"
    "                      (default 10%)\n"
    "  --confidence C      two-sided level of every interval (default 0.95)\n"
    "  --json FILE|-       also write the results with a summary of the diagnostics\n"
    "                      as JSON, one record per sample\n"
    "  --json-points       the JSON also holds every point and the whole diagnosis\n"
    "  --csv FILE|-        also write the results as CSV\n"
    "  --points FILE|-     also write every point as CSV, one row each (points.csv)\n"
    "  --out DIR           also draw each sample's figures of the checks into DIR\n"
    "                      (made if missing; as 'arrank plot' draws them):\n"
    "                      diagnostics-NN[-ID].EXT (residuals, local apparent Ea)\n"
    "                      and, for a file with a time_on_stream column,\n"
    "                      time-on-stream-NN[-ID].EXT (rate against time on stream\n"
    "                      with the drift test's fitted line and its interval)\n"
    "  --format F          svg (default), png or pdf for --out; repeat for more\n"
    "  --size S            their canvas: slide (1280x720), page (960x720, default),\n"
    "                      square (900x900) or WxH in px\n"
    "  --strict            all or nothing: a file that cannot be read or a cell that\n"
    "                      is not a number stops the run (default: that file is\n"
    "                      skipped, that point left out, each named on stderr)\n"
    "  --no-merge          two files with one sample id are an error (default: one\n"
    "                      sample, each file a run; a byte-identical copy unused)\n"
    "  --wide              on a terminal, one line per item however long (the\n"
    "                      report is wrapped to the terminal's width otherwise;\n"
    "                      piped, it is one line per item)\n"
    "\n"
    "Fitted kinetics are apparent and hold only within the tested conditions;\n"
    "do not use them for reactor design or safety limits.\n"
    "\n"
    "Exit status: 0 the campaign was checked (problems found or not), 1 bad input\n"
    "data, 2 usage, 3 a file could not be read or written, 4 gnuplot failed on a\n"
    "figure, 5 gnuplot not found (--out; nothing is written then).\n";

/*
 * Where the report goes: straight to the stream when it is piped (width 0:
 * one line per item, for grep), else into memory a sample at a time and
 * onto the terminal wrapped at its width, each item's continuation lines
 * indented HANG columns past the item (README "The table on a terminal").
 */
#define HANG 4

typedef struct {
    FILE *out;    /* the stream the report is for */
    FILE *w;      /* where it is written: out, or memory */
    char *buf;    /* the memory */
    size_t len;
    size_t width; /* the terminal's columns; 0 piped */
} report_sink;

static int sink_open(report_sink *k)
{
    k->buf = NULL;
    k->len = 0;
    k->w = k->width ? open_memstream(&k->buf, &k->len) : k->out;
    return k->w ? 0 : -1;
}

/* What was written since the sink was opened, onto out; the sink reopened
   when again.  0, or -1 on a write error or out of memory. */
static int sink_flush(report_sink *k, int again)
{
    if (!k->width)
        return 0;
    int bad = fclose(k->w) != 0;
    k->w = NULL;
    if (!bad)
        bad = arrank_textfit_write(k->out, k->buf, k->width, HANG) != 0;
    free(k->buf);
    k->buf = NULL;
    if (!bad && again)
        bad = sink_open(k) != 0;
    return bad ? -1 : 0;
}

/* --out DIR: the per-sample figures of the checks, staged with the run's
   other outputs (stage.c: all or nothing).  -1 or an exit status (printed). */
static int draw_figures(const cli_args *args, const cli_session *s, arrank_plot_files *files)
{
    cli_stage_begin(s->campaign);
    int rc = -1;
    const char *priv = cli_stage_dir(args->out_dir, &rc);
    if (!priv)
        return rc;
    rc = cli_stage_claim(args->out_dir, priv, 0);
    if (rc != -1)
        return rc;
    arrank_plot_options po = arrank_plot_defaults();
    po.formats = cli_plot_formats(args);
    (void)cli_figure_options(args, &po); /* --size, checked in cmd_check */
    po.kinds = 1u << ARRANK_FIGURE_DIAGNOSTICS | 1u << ARRANK_FIGURE_TIME_ON_STREAM;
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st = arrank_plot_write(s->analysis, priv, &po, files, &err);
    if (st != ARRANK_OK) {
        cli_print_error(&err);
        return cli_exit_status(st, &err);
    }
    return -1;
}

int cmd_check(int argc, char **argv)
{
    cli_args args;
    int rc = cli_parse(argc, argv,
                       OPT_AT | OPT_DIAGNOSE | OPT_CONFIDENCE | OPT_OUTPUTS | OPT_OUT_DIR |
                           OPT_FORMAT | OPT_SIZE | OPT_TABLE,
                       usage, &args);
    if (rc != -1)
        return rc;
    arrank_plot_options figure = arrank_plot_defaults(); /* --size checked before reading */
    if ((rc = cli_figure_options(&args, &figure)) != -1)
        return rc;
    if (!args.options.diagnose) {
        cli_fail("check: --no-diagnose leaves nothing to check; see 'arrank check --help'");
        return EXIT_USAGE;
    }
    cli_session s;
    rc = cli_session_open(&args, 0, &s);
    if (rc != -1)
        return rc;
    /* --out refused before any of the report is shown, as rank refuses its
       outputs (an input, inside the campaign folder) */
    cli_stage_begin(s.campaign);
    if (args.out_dir && (rc = cli_stage_check(args.out_dir, 1)) != -1) {
        cli_session_free(&s);
        return rc;
    }
    arrank_error err;
    arrank_error_clear(&err);
    const arrank_analysis *a = s.analysis;
    int to_stdout = cli_outputs_to_stdout(&args);
    arrank_status st = ARRANK_OK;
    /* the terminal's width as rank's table takes it; none when the report
       goes to stderr because the outputs take stdout */
    report_sink sink = {to_stdout ? stderr : stdout, NULL, NULL, 0,
                     to_stdout ? 0 : cli_table_options(&args).width};
    if (sink_open(&sink) != 0)
        st = arrank_errorf(&err, ARRANK_ENOMEM, "out of memory writing the report");
    FILE *out = sink.w;
    size_t with_problems = 0;
    char title[512]; /* from campaign.ini or the folder's name: escaped for the terminal */
    arrank_text_escape(a->campaign->title, title, sizeof title);
    char run[256] = ""; /* --run: one run of each sample, said as the table says it */
    if (args.options.run) {
        char label[200];
        arrank_text_escape(args.options.run, label, sizeof label);
        snprintf(run, sizeof run, "; only run '%s' of each sample (--run)", label);
    }
    if (st == ARRANK_OK && fprintf(out, "campaign '%s': %zu sample%s checked%s\n\n", title,
                                   a->n_results, a->n_results == 1 ? "" : "s", run) < 0)
        st = arrank_errorf(&err, ARRANK_EIO, "cannot write the report");
    for (size_t i = 0; st == ARRANK_OK && i < a->n_results; i++) {
        const arrank_result *r = &a->results[i];
        st = arrank_diagnosis_write_text(out, r, &err);
        if (st == ARRANK_OK && fputc('\n', out) == EOF)
            st = arrank_errorf(&err, ARRANK_EIO, "cannot write the report");
        if (st == ARRANK_OK && sink_flush(&sink, 1) != 0)
            st = arrank_errorf(&err, ARRANK_EIO, "cannot write the report");
        out = sink.w;
        if (r->error || (r->diagnosis && r->diagnosis->n_findings > 0) ||
            (r->flags & ~(unsigned)ARRANK_FLAG_EXCLUDED))
            with_problems++;
    }
    /* files read but not used as a sample of their own (a byte-identical
       copy): named as the rank command names them on standard error */
    const arrank_campaign *c = a->campaign;
    for (size_t k = 0; st == ARRANK_OK && k < c->n_unused; k++) {
        const char *u = c->unused[k], *slash = strrchr(u, '/');
        char shown[4096];
        arrank_text_escape(slash ? slash + 1 : u, shown, sizeof shown);
        if (fprintf(out, "%s\n\n", shown) < 0)
            st = arrank_errorf(&err, ARRANK_EIO, "cannot write the report");
    }
    if (st == ARRANK_OK &&
        fprintf(out, "%zu of %zu sample%s %s problems or could not be fitted\n", with_problems,
                a->n_results, a->n_results == 1 ? "" : "s", with_problems == 1 ? "has" : "have") < 0)
        st = arrank_errorf(&err, ARRANK_EIO, "cannot write the report");
    /* the cautions every output carries (arrank/cautions.h), one line each,
       ids escaped for the terminal */
    char **cautions = NULL;
    size_t n_cautions = 0;
    if (st == ARRANK_OK)
        st = arrank_cautions_list(a, &cautions, &n_cautions, &err);
    for (size_t k = 0; st == ARRANK_OK && k < n_cautions; k++) {
        char shown[4096];
        arrank_text_escape(cautions[k], shown, sizeof shown);
        if (fprintf(out, "caution: %s\n", shown) < 0)
            st = arrank_errorf(&err, ARRANK_EIO, "cannot write the report");
    }
    arrank_cautions_free(cautions, n_cautions);
    if (st == ARRANK_OK && sink_flush(&sink, 0) != 0)
        st = arrank_errorf(&err, ARRANK_EIO, "cannot write the report");
    if (sink.width && sink.w) { /* an error above left the memory open */
        fclose(sink.w);
        free(sink.buf);
    }
    if (st == ARRANK_OK && fflush(sink.out) != 0)
        st = arrank_errorf(&err, ARRANK_EIO, "cannot write the report");
    if (st != ARRANK_OK) {
        cli_print_error(&err);
        cli_session_free(&s);
        return cli_exit_status(st, &err);
    }
    arrank_plot_files files = {0};
    rc = args.out_dir ? draw_figures(&args, &s, &files) : -1;
    if (rc == -1) {
        rc = cli_write_outputs(&args, &s); /* commits the figures with the rest */
    } else {
        cli_stage_abort();
    }
    for (size_t k = 0; rc == -1 && k < files.n; k++) { /* the figures, as plot lists them */
        const char *slash = strrchr(files.files[k].path, '/');
        fprintf(out, "%s/%s\n", args.out_dir, slash ? slash + 1 : files.files[k].path);
    }
    arrank_plot_files_clear(&files);
    cli_session_free(&s);
    if (rc == -1 && fflush(out) != 0)
        rc = EXIT_IO;
    return rc == -1 ? EXIT_OK : rc;
}
