/*
 * cli.h - what the arrank program's commands share: the option parser, the
 * campaign loading step, exit statuses and error printing.  The commands
 * (cmd_<name>.c) hold no science: they parse, call the library, print.
 */
#ifndef ARRANK_CLI_H
#define ARRANK_CLI_H

#include <stddef.h>
#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/campaign.h"
#include "arrank/error.h"
#include "arrank/textfit.h"
#include "arrank/units.h"

/* Exit statuses (README "Exit status"; never renumbered). */
enum {
    EXIT_OK = 0,
    EXIT_DATA = 1,     /* bad input data, or nothing could be fitted */
    EXIT_USAGE = 2,    /* bad command line */
    EXIT_IO = 3,       /* a file or folder could not be read or written */
    EXIT_PLOT = 4,     /* gnuplot failed on a figure */
    EXIT_NOGNUPLOT = 5 /* gnuplot is not installed */
};

/* Which options a command accepts (bit set). */
enum {
    OPT_AT = 1u << 0,         /* --at T */
    OPT_OUTPUTS = 1u << 1,    /* --json FILE|-, --csv FILE|-, --json-points, --points FILE|- */
    OPT_CONFIDENCE = 1u << 2, /* --confidence 0.95 */
    OPT_BY = 1u << 3,         /* --by rate|ea|prefactor */
    OPT_DIAGNOSE = 1u << 4,   /* --use-all, --drop-outliers, --conversion-limit */
    OPT_DRAWS = 1u << 5,      /* --draws, --pairs, --bootstrap, --normal: P(best), bootstrap */
    OPT_MODEL = 1u << 6,      /* --errors, --model */
    OPT_OUT_DIR = 1u << 7,    /* --out DIR */
    OPT_FORMAT = 1u << 8,     /* --format svg|png|pdf (repeatable) */
    OPT_READ = 1u << 9,       /* --strict, --no-merge: every command that reads a campaign */
    OPT_TABLE = 1u << 10,     /* --wide: the table on a terminal */
    OPT_REFERENCE = 1u << 11, /* --reference ID */
    OPT_MULTI = 1u << 12,     /* several campaign folders (not an option: a permission) */
    OPT_PLAN = 1u << 13,      /* --budget, --goal, --target, --width, --step, --reach,
                                 --max-temperature, --simulations, --bend, --sample,
                                 --run-sheet */
    OPT_FIGURES = 1u << 14,   /* --show N|all|ID,ID */
    OPT_SEED = 1u << 15,      /* --seed N */
    OPT_SIZE = 1u << 16,      /* --size slide|page|square|WxH: every command that draws */
    OPT_STATS = OPT_SEED | OPT_DRAWS
};

#define CLI_MAX_CAMPAIGNS 64
#define CLI_MAX_PLAN_SAMPLES 64

#define CLI_MAX_FORMATS 8

typedef struct {
    const char *command;
    const char *campaign_dir;  /* the first (or only) campaign folder */
    const char *campaign_dirs[CLI_MAX_CAMPAIGNS]; /* every folder given, in order */
    size_t n_campaigns;
    const char *at_text;      /* --at as written, NULL if not given */
    const char *json_path;    /* NULL if not asked */
    const char *csv_path;
    const char *points_path;  /* --points FILE|-: points.csv; NULL if not asked */
    int json_points;          /* --json-points: the JSON keeps every point and the whole diagnosis */
    int wide;                 /* --wide: every column of the table on a terminal too */
    const char *out_dir;
    const char *formats[CLI_MAX_FORMATS];
    size_t n_formats;
    const char *show_text;    /* --show as written, NULL if not given */
    const char *size_text;    /* --size as written */
    int confidence_given;
    int at_K_set;             /* compare: the second campaign takes the first's T */
    double at_K;
    int by_given;
    arrank_options options;
    arrank_load_options load; /* --strict, --no-merge */
    /* arrank plan: the options as written, read by cmd_plan.c (NULL: not given) */
    const char *plan_opt[9];  /* budget, goal, target, width, step, reach, max-temperature,
                                 simulations, bend, in the order of cli_plan_option_names */
    const char *run_sheet_path;
    const char *plan_samples[CLI_MAX_PLAN_SAMPLES];
    size_t n_plan_samples;
    int argc;                 /* the whole command line, for the report */
    char **argv;
} cli_args;

/* One command of the program. */
typedef struct {
    const char *name;
    int (*run)(int argc, char **argv);
    const char *summary; /* one line for `arrank --help` */
} cli_command;

/*
 * Parse argv (argv[0] is the command name) for a command accepting `accepted`
 * options; usage is printed for --help.  Returns -1 when parsing succeeded,
 * otherwise the exit status to use (0 after --help, EXIT_USAGE on an error,
 * already printed).
 */
int cli_parse(int argc, char **argv, unsigned accepted, const char *usage, cli_args *args);

/* Print "arrank: <formatted error>" on stderr. */
void cli_print_error(const arrank_error *err);

/* Print "arrank: <message>" on stderr (printf-style). */
void cli_fail(const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 1, 2)))
#endif
    ;

/* Exit status for a library status. */
int cli_exit_status(arrank_status status, const arrank_error *err);

/*
 * Load the units, the campaign, settle the operating temperature (--at, else
 * campaign.ini, else NAN; `need_T` makes a missing one a usage error) and the
 * confidence (--confidence, else campaign.ini, else 0.95), then run the
 * analysis.  On success returns -1 and fills the three outputs (free them with
 * cli_session_free); otherwise prints the error and returns the exit status.
 */
typedef struct {
    arrank_units *units;
    arrank_campaign *campaign;
    arrank_analysis *analysis;
} cli_session;

int cli_session_open(cli_args *args, int need_T, cli_session *session);
void cli_session_free(cli_session *session);
/* At the end of a command that succeeded: keep the session for the exit
   instead of freeing it (ARRANK_FREE_AT_EXIT=1: free it). */
void cli_session_leave(cli_session *session);

/* Tell on stderr which files were not used (FILE:LINE:COLUMN: reason; file
   not used), which points were left out and which samples could not be
   fitted, then one summary line when files were not used. */
void cli_report_unfitted(const cli_session *session);

/* Write --json/--csv/--points outputs (if asked).  Returns -1 or an exit status. */
int cli_write_outputs(const cli_args *args, const cli_session *session);

/* The figure options --show and --size into po (arrank_plot_options).
   Returns -1 or EXIT_USAGE (printed). */
#include "arrank/plot.h"
int cli_figure_options(const cli_args *args, arrank_plot_options *po);

/* 1 when one of those outputs goes to standard output ('-'), which then
   holds nothing else. */
int cli_outputs_to_stdout(const cli_args *args);

/* Output folder helpers (cmd_plot.c): "plots/<campaign name>" (caller
   frees); the --format options as ARRANK_PLOT_* bits (SVG when none). */
char *cli_default_out_dir(const arrank_campaign *campaign);
unsigned cli_plot_formats(const cli_args *args);

/*
 * Outputs, all or nothing (stage.c).  cli_stage_begin names the campaign
 * whose folder and inputs are never written.  cli_stage_file stages one
 * output file (a temporary made with mkstemp beside it) and returns the
 * stream to write it to; cli_stage_dir stages a whole output folder (a
 * private folder made with mkdtemp) and returns the folder to write into.
 * Both refuse a destination that is an input or inside the campaign folder
 * (EXIT_USAGE) and return NULL with *rc set (already printed); otherwise *rc
 * is -1.  cli_stage_commit, after every output of the run is written,
 * creates missing folders and renames everything into place (-1, or an exit
 * status with everything removed); cli_stage_abort removes every temporary.
 * SIGINT, SIGTERM and SIGHUP remove them too.  cli_stage_check only checks a
 * destination (-1 or an exit status, printed).
 */
void cli_stage_begin(const arrank_campaign *campaign);
/* Several campaigns in one run: dir, another campaign folder, is refused as
   a destination too (for the rest of the process). */
void cli_stage_guard_also(const char *dir);

/* The file in an output folder that names the campaign its outputs belong to
   (the campaign folder's absolute path, one line). */
#define CLI_CAMPAIGN_MARK ".arrank.campaign"

/* Outputs that never collide: when dir is the default output folder
   (is_default), refuse if it holds another campaign's outputs (EXIT_USAGE,
   printed, naming both), else record this campaign in the staged private
   folder priv.  A folder named with --out is left as the user chose it.
   -1 when the run may go on. */
int cli_stage_claim(const char *dir, const char *priv, int is_default);
int cli_stage_check(const char *path, int is_dir);
FILE *cli_stage_file(const char *path, int *rc);
const char *cli_stage_dir(const char *dir, int *rc);
void cli_stage_written(FILE *f);
int cli_stage_commit(void);
void cli_stage_abort(void);

/* The width and colour of the table on standard output: the terminal's
   (TIOCGWINSZ, else COLUMNS, else 80; --wide: no limit), colour unless
   NO_COLOR or TERM=dumb; piped or redirected {0, 0}, the piped table. */
arrank_table_options cli_table_options(const cli_args *args);

/*
 * The whole of `fit` and `rank` after parsing: open the session, print the
 * table (unless JSON or CSV goes to stdout), tell the unfitted samples, write
 * the outputs.  Returns the exit status.
 */
int cli_analyse_and_print(cli_args *args, int need_T);

/* Command entry points. */
int cmd_fit(int argc, char **argv);
int cmd_rank(int argc, char **argv);
int cmd_check(int argc, char **argv);
int cmd_plot(int argc, char **argv);
int cmd_report(int argc, char **argv);
int cmd_compare(int argc, char **argv);
int cmd_plan(int argc, char **argv);

/* The names of the plan options held in cli_args.plan_opt, in its order. */
extern const char *const cli_plan_option_names[9];

#endif
