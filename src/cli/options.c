/*
 * options.c - the option parser the commands share, and error printing.
 *
 * Options are long only, written `--name value` or `--name=value`; each
 * command says which groups it accepts, so `arrank fit --draws 5` is a usage
 * error rather than silently ignored.
 */
#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <stdint.h>
#include <strings.h>

#include "arrank/version.h"
#include "arrank/text.h"
#include "cli.h"

typedef struct {
    const char *name;
    unsigned group;
    int takes_value;
} option_spec;

static const option_spec option_table[] = {
    {"--at", OPT_AT, 1},
    {"--extrapolate", OPT_AT, 0},
    {"--json", OPT_OUTPUTS, 1},
    {"--csv", OPT_OUTPUTS, 1},
    {"--json-points", OPT_OUTPUTS, 0},
    {"--points", OPT_OUTPUTS, 1},
    {"--confidence", OPT_CONFIDENCE, 1},
    {"--by", OPT_BY, 1},
    {"--use-all", OPT_DIAGNOSE, 0},
    {"--drop-outliers", OPT_DIAGNOSE, 0},
    {"--conversion-limit", OPT_DIAGNOSE, 1},
    {"--no-diagnose", OPT_DIAGNOSE, 0},
    {"--run", OPT_DIAGNOSE, 1},
    {"--seed", OPT_SEED, 1},
    {"--draws", OPT_DRAWS, 1},
    {"--pairs", OPT_DRAWS, 1},
    {"--bootstrap", OPT_DRAWS, 1},
    {"--normal", OPT_DRAWS, 0},
    {"--errors", OPT_MODEL, 1},
    {"--model", OPT_MODEL, 1},
    {"--out", OPT_OUT_DIR, 1},
    {"--format", OPT_FORMAT, 1},
    {"--strict", OPT_READ, 0},
    {"--no-merge", OPT_READ, 0},
    {"--wide", OPT_TABLE, 0},
    {"--reference", OPT_REFERENCE, 1},
    {"--budget", OPT_PLAN, 1},
    {"--goal", OPT_PLAN, 1},
    {"--target", OPT_PLAN, 1},
    {"--width", OPT_PLAN, 1},
    {"--step", OPT_PLAN, 1},
    {"--reach", OPT_PLAN, 1},
    {"--max-temperature", OPT_PLAN, 1},
    {"--simulations", OPT_PLAN, 1},
    {"--bend", OPT_PLAN, 1},
    {"--sample", OPT_PLAN, 1},
    {"--run-sheet", OPT_PLAN, 1},
    {"--show", OPT_FIGURES, 1},
    {"--size", OPT_SIZE, 1},
};

const char *const cli_plan_option_names[9] = {"--budget", "--goal",  "--target",
                                              "--width",  "--step",  "--reach",
                                              "--max-temperature", "--simulations", "--bend"};

/* A plan option: kept as written for cmd_plan.c.  -1, or EXIT_USAGE. */
static int apply_plan(cli_args *a, const char *name, const char *value)
{
    if (strcmp(name, "--run-sheet") == 0) {
        a->run_sheet_path = value;
        return -1;
    }
    if (strcmp(name, "--sample") == 0) {
        if (a->n_plan_samples == CLI_MAX_PLAN_SAMPLES) {
            cli_fail("too many --sample options (at most %d)", CLI_MAX_PLAN_SAMPLES);
            return EXIT_USAGE;
        }
        a->plan_samples[a->n_plan_samples++] = value;
        return -1;
    }
    for (size_t k = 0; k < 9; k++)
        if (strcmp(name, cli_plan_option_names[k]) == 0)
            a->plan_opt[k] = value;
    return -1;
}

/* Every message is one line on the terminal: whatever reached it from a
   file (ids, units, file names) is shown with its control characters and
   invalid bytes escaped (arrank/text.h), so that a name cannot clear the
   screen or split the message. */
void cli_fail(const char *fmt, ...)
{
    char msg[ARRANK_ERROR_PATH_MAX + ARRANK_ERROR_MSG_MAX + 256];
    char shown[4 * sizeof msg];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(msg, sizeof msg, fmt, ap);
    va_end(ap);
    arrank_text_escape(msg, shown, sizeof shown);
    fprintf(stderr, "arrank: %s\n", shown);
}

void cli_print_error(const arrank_error *err)
{
    char buf[ARRANK_ERROR_PATH_MAX + ARRANK_ERROR_MSG_MAX + 64];
    arrank_error_format(err, buf, sizeof buf);
    cli_fail("%s", buf);
}

int cli_exit_status(arrank_status status, const arrank_error *err)
{
    switch (status) {
    case ARRANK_OK: return EXIT_OK;
    case ARRANK_EIO:
    case ARRANK_ENOMEM: return EXIT_IO;
    case ARRANK_EPLOT: return EXIT_PLOT;
    case ARRANK_ENOGNUPLOT: return EXIT_NOGNUPLOT;
    case ARRANK_EINVAL:
        /* a bad value inside a file is a data error; on the command line, usage */
        return err && err->path[0] ? EXIT_DATA : EXIT_USAGE;
    default: return EXIT_DATA;
    }
}

static int parse_count(const char *name, const char *text, unsigned long max, size_t *out)
{
    char *end;
    errno = 0;
    unsigned long long v = strtoull(text, &end, 10);
    if (errno || end == text || *end || text[0] == '-' || v > max) {
        cli_fail("%s '%s' is not a whole number from 0 to %lu", name, text, max);
        return EXIT_USAGE;
    }
    *out = (size_t)v;
    return -1;
}

/* A fraction written as 0.05 or 5%. */
static int parse_fraction(const char *name, const char *text, double *out)
{
    char *end;
    errno = 0;
    double v = strtod(text, &end);
    if (end != text && *end == '%' && end[1] == '\0')
        v /= 100.0;
    else if (end == text || *end)
        v = NAN;
    if (errno || !(v > 0.0 && v < 1.0)) {
        /* "5" for 5 %: say both readings rather than guess */
        if (isfinite(v) && v >= 1.0 && v < 100.0 && *end == '\0')
            cli_fail("%s '%s' must be a fraction between 0 and 1: for %s %% write %s%% or %g",
                     name, text, text, text, v / 100.0);
        else
            cli_fail("%s '%s' must be a fraction between 0 and 1, e.g. 0.95 or 95%%", name,
                     text);
        return EXIT_USAGE;
    }
    *out = v;
    return -1;
}

static int apply(cli_args *a, const char *name, const char *value)
{
    arrank_options *o = &a->options;
    if (strcmp(name, "--sample") == 0 || strcmp(name, "--run-sheet") == 0 ||
        strcmp(name, "--budget") == 0 || strcmp(name, "--goal") == 0 ||
        strcmp(name, "--target") == 0 || strcmp(name, "--width") == 0 ||
        strcmp(name, "--step") == 0 || strcmp(name, "--reach") == 0 ||
        strcmp(name, "--max-temperature") == 0 || strcmp(name, "--simulations") == 0 ||
        strcmp(name, "--bend") == 0)
        return apply_plan(a, name, value);
    if (strcmp(name, "--at") == 0)
        a->at_text = value;
    else if (strcmp(name, "--json") == 0)
        a->json_path = value;
    else if (strcmp(name, "--csv") == 0)
        a->csv_path = value;
    else if (strcmp(name, "--json-points") == 0)
        a->json_points = 1;
    else if (strcmp(name, "--points") == 0)
        a->points_path = value;
    else if (strcmp(name, "--out") == 0)
        a->out_dir = value;
    else if (strcmp(name, "--show") == 0)
        a->show_text = value;
    else if (strcmp(name, "--size") == 0)
        a->size_text = value;
    else if (strcmp(name, "--confidence") == 0) {
        a->confidence_given = 1;
        return parse_fraction(name, value, &o->confidence);
    } else if (strcmp(name, "--by") == 0) {
        a->by_given = 1;
        if (strcasecmp(value, "rate") == 0)
            o->by = ARRANK_BY_RATE;
        else if (strcasecmp(value, "ea") == 0)
            o->by = ARRANK_BY_EA;
        else if (strcasecmp(value, "prefactor") == 0)
            o->by = ARRANK_BY_PREFACTOR;
        else if (strcasecmp(value, "ratio") == 0)
            o->by = ARRANK_BY_RATIO;
        else {
            cli_fail("--by '%s' is not known; use rate, ea, prefactor or ratio", value);
            return EXIT_USAGE;
        }
    } else if (strcmp(name, "--extrapolate") == 0)
        o->max_extrapolation_K = INFINITY;
    else if (strcmp(name, "--use-all") == 0)
        o->use_all = 1;
    else if (strcmp(name, "--drop-outliers") == 0)
        o->drop_outliers = 1;
    else if (strcmp(name, "--no-diagnose") == 0)
        o->diagnose = 0;
    else if (strcmp(name, "--run") == 0)
        o->run = value;
    else if (strcmp(name, "--reference") == 0) {
        if (!value[0]) {
            cli_fail("--reference needs a sample id");
            return EXIT_USAGE;
        }
        o->reference = value;
    }
    else if (strcmp(name, "--strict") == 0)
        a->load.strict = 1;
    else if (strcmp(name, "--no-merge") == 0)
        a->load.no_merge = 1;
    else if (strcmp(name, "--wide") == 0)
        a->wide = 1;
    else if (strcmp(name, "--conversion-limit") == 0)
        return parse_fraction(name, value, &o->conversion_limit);
    else if (strcmp(name, "--seed") == 0) {
        size_t v;
        int rc = parse_count(name, value, 4294967295UL, &v);
        o->seed = (unsigned long)v;
        return rc;
    } else if (strcmp(name, "--draws") == 0) {
        int rc = parse_count(name, value, 100000000UL, &o->draws);
        if (rc == -1 && o->draws < 100) {
            cli_fail("--draws '%s' is too few for a probability; use at least 100", value);
            return EXIT_USAGE;
        }
        return rc;
    } else if (strcmp(name, "--pairs") == 0)
        return parse_count(name, value, 1000UL, &o->pairs);
    else if (strcmp(name, "--bootstrap") == 0)
        return parse_count(name, value, 1000000UL, &o->bootstrap);
    else if (strcmp(name, "--normal") == 0)
        o->normal_draws = 1;
    else if (strcmp(name, "--errors") == 0) {
        if (strcmp(value, "relative") == 0)
            o->errors = ARRANK_ERRORS_RELATIVE;
        else if (strcmp(value, "absolute") == 0)
            o->errors = ARRANK_ERRORS_ABSOLUTE;
        else {
            cli_fail("--errors '%s' is not known; use relative or absolute", value);
            return EXIT_USAGE;
        }
    } else if (strcmp(name, "--model") == 0) {
        if (strcmp(value, "arrhenius") == 0)
            o->model = ARRANK_MODEL_ARRHENIUS;
        else if (strcmp(value, "modified") == 0)
            o->model = ARRANK_MODEL_MODIFIED;
        else if (strcmp(value, "eyring") == 0)
            o->model = ARRANK_MODEL_EYRING;
        else {
            cli_fail("--model '%s' is not known; use arrhenius, modified or eyring", value);
            return EXIT_USAGE;
        }
    } else if (strcmp(name, "--format") == 0) {
        if (strcmp(value, "svg") && strcmp(value, "png") && strcmp(value, "pdf")) {
            cli_fail("--format '%s' is not known; use svg, png or pdf", value);
            return EXIT_USAGE;
        }
        if (a->n_formats == CLI_MAX_FORMATS) {
            cli_fail("too many --format options");
            return EXIT_USAGE;
        }
        a->formats[a->n_formats++] = value;
    }
    return -1;
}

int cli_parse(int argc, char **argv, unsigned accepted, const char *usage, cli_args *args)
{
    memset(args, 0, sizeof *args);
    accepted |= OPT_READ; /* every command reads a campaign */
    args->command = argv[0];
    args->options = arrank_options_defaults();
    args->argc = argc;
    args->argv = argv;
    for (int i = 1; i < argc; i++) {
        const char *arg = argv[i];
        if (strcmp(arg, "--help") == 0 || strcmp(arg, "-h") == 0) {
            fputs(usage, stdout);
            return EXIT_OK;
        }
        if (strcmp(arg, "--version") == 0) {
            printf("arrank %s\n", ARRANK_VERSION);
            return EXIT_OK;
        }
        if (strncmp(arg, "--", 2) != 0 || strcmp(arg, "--") == 0) {
            if (strcmp(arg, "--") == 0 && i + 1 < argc)
                arg = argv[++i];
            if (args->campaign_dir && !(accepted & OPT_MULTI)) {
                cli_fail("%s: unexpected argument '%s' (one campaign folder per run); "
                         "see 'arrank %s --help'", args->command, arg, args->command);
                return EXIT_USAGE;
            }
            if (args->n_campaigns == CLI_MAX_CAMPAIGNS) {
                cli_fail("%s: more than %d campaign folders", args->command,
                         CLI_MAX_CAMPAIGNS);
                return EXIT_USAGE;
            }
            if (!args->campaign_dir)
                args->campaign_dir = arg;
            args->campaign_dirs[args->n_campaigns++] = arg;
            continue;
        }
        const char *eq = strchr(arg, '=');
        size_t name_len = eq ? (size_t)(eq - arg) : strlen(arg);
        const option_spec *spec = NULL;
        for (size_t k = 0; k < sizeof option_table / sizeof *option_table; k++)
            if (strlen(option_table[k].name) == name_len &&
                strncmp(option_table[k].name, arg, name_len) == 0)
                spec = &option_table[k];
        if (!spec || !(spec->group & accepted)) {
            cli_fail("%s: unknown option '%.*s'; see 'arrank %s --help'", args->command,
                     (int)name_len, arg, args->command);
            return EXIT_USAGE;
        }
        char name[32];
        snprintf(name, sizeof name, "%.*s", (int)name_len, arg);
        const char *value = NULL;
        if (spec->takes_value) {
            if (eq)
                value = eq + 1;
            else if (i + 1 < argc)
                value = argv[++i];
            else {
                cli_fail("%s: option '%s' needs a value", args->command, name);
                return EXIT_USAGE;
            }
        } else if (eq) {
            cli_fail("%s: option '%s' takes no value", args->command, name);
            return EXIT_USAGE;
        }
        int rc = apply(args, name, value);
        if (rc != -1)
            return rc;
    }
    if (!args->campaign_dir) {
        cli_fail("%s: no campaign folder given; see 'arrank %s --help'", args->command,
                 args->command);
        return EXIT_USAGE;
    }
    if (args->json_points && !args->json_path) {
        cli_fail("%s: '--json-points' needs '--json FILE'; see 'arrank %s --help'",
                 args->command, args->command);
        return EXIT_USAGE;
    }
    return -1;
}

int cli_figure_options(const cli_args *args, arrank_plot_options *po)
{
    if (args->size_text) {
        arrank_error err;
        arrank_error_clear(&err);
        if (arrank_plot_size(args->size_text, &po->width_px, &po->height_px, &err) !=
            ARRANK_OK) {
            cli_fail("--%s", err.message); /* "--size 'X' is not known; ..." */
            return EXIT_USAGE;
        }
    }
    const char *v = args->show_text;
    if (!v)
        return -1;
    if (strcmp(v, "all") == 0) {
        po->show = SIZE_MAX;
        return -1;
    }
    /* N, or N+flagged: the top N and every flagged sample */
    char count[32];
    size_t len = strlen(v);
    const char *plus = strstr(v, "+flagged");
    if (plus && plus[8] == '\0' && plus > v && (size_t)(plus - v) < sizeof count) {
        len = (size_t)(plus - v);
        po->show_flagged = 1;
    }
    int digits = len > 0 && len < sizeof count;
    for (size_t k = 0; k < len && digits; k++)
        digits &= v[k] >= '0' && v[k] <= '9';
    if (!digits)
        po->show_flagged = 0;
    if (digits) {
        memcpy(count, v, len);
        count[len] = '\0';
        size_t n;
        int rc = parse_count("--show", count, 100000UL, &n);
        if (rc != -1)
            return rc;
        if (n == 0) {
            cli_fail("--show '0' draws nothing; give a count, 'all' or sample ids");
            return EXIT_USAGE;
        }
        po->show = n;
        return -1;
    }
    po->show_ids = v;
    return -1;
}
