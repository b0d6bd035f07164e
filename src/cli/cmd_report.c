/*
 * cmd_report.c - `arrank report CAMPAIGN --at T --out DIR`: the self-contained
 * review report, DIR/report.html.
 */
#include <limits.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/report.h"
#include "cli.h"

static const char usage[] =
    "usage: arrank report CAMPAIGN... [--at T] [--out DIR] [options]\n"
    "\n"
    "Fit and rank every sample and write DIR/report.html (default DIR:\n"
    "plots/<campaign folder name>/): one self-contained page with the ranking,\n"
    "each sample's parameters and flags in words, the figures (inline SVG), the\n"
    "methods, the safety cautions, the program version, this command line and a\n"
    "SHA-256 of every input file.  It needs no other file and no network, and\n"
    "prints cleanly.\n"
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
    "  --reference ID      the reference catalyst (default: reference in campaign.ini):\n"
    "                      each rate at T as a ratio to it, P(better), Ea difference\n"
    "  --show N|all|ID,... samples drawn in the campaign figures (default: the\n"
    "                      top 12 by the ranking key); --size S: slide, page,\n"
    "                      square or WxH (as for 'arrank plot')\n"
    "  --confidence C      two-sided level of every interval (default 0.95)\n"
    "  --by KEY            rank by rate (default), ea, prefactor or ratio\n"
    "  --use-all, --drop-outliers, --conversion-limit X, --no-diagnose,\n"
    "  --errors, --model, --seed, --draws, --pairs, --bootstrap, --normal,\n"
    "  --strict, --no-merge, --run LABEL\n"
    "                      as for 'arrank rank'\n"
    "\n"
    "gnuplot is run from ARRANK_GNUPLOT if set, else found on PATH.\n"
    "\n"
    "Exit status: 0 ok (at least one sample fitted; files not used are named on\n"
    "stderr), 1 bad input data or nothing fittable, 2 usage,\n"
    "3 a file could not be read or written, 4 gnuplot failed on a figure,\n"
    "5 gnuplot not found (in both cases the report is still written, without\n"
    "figures and with a note why).\n";

/* The command line as one string, each argument shell-quoted when it holds
   anything but plain characters, so a reader can run it again. */
static char *command_line(int argc, char **argv)
{
    size_t n = 16;
    for (int i = 0; i < argc; i++)
        n += 4 * strlen(argv[i]) + 3;
    char *s = malloc(n), *p = s;
    if (!s)
        return NULL;
    p += sprintf(p, "arrank");
    for (int i = 0; i < argc; i++) {
        const char *a = argv[i];
        int plain = *a != '\0';
        for (const char *c = a; *c; c++)
            if (!strchr("abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789"
                        "-_./=:,+%@",
                        *c))
                plain = 0;
        *p++ = ' ';
        if (plain) {
            p += sprintf(p, "%s", a);
            continue;
        }
        *p++ = '\'';
        for (const char *c = a; *c; c++) {
            if (*c == '\'') {
                memcpy(p, "'\\''", 4);
                p += 4;
            } else
                *p++ = *c;
        }
        *p++ = '\'';
        *p = '\0';
    }
    return s;
}

int cmd_report(int argc, char **argv)
{
    cli_args args;
    int rc = cli_parse(argc, argv,
                       OPT_REFERENCE | OPT_MULTI | OPT_AT | OPT_CONFIDENCE | OPT_BY |
                           OPT_DIAGNOSE | OPT_MODEL | OPT_STATS | OPT_OUT_DIR | OPT_FIGURES |
                           OPT_SIZE,
                       usage, &args);
    if (rc != -1)
        return rc;
    arrank_report_options ro = arrank_report_defaults();
    rc = cli_figure_options(&args, &ro.plot);
    if (rc != -1)
        return rc;
    cli_session s;
    rc = cli_session_open(&args, 1, &s);
    if (rc != -1)
        return rc;
    char *dir = args.out_dir ? strdup(args.out_dir) : cli_default_out_dir(s.campaign);
    char *cmd = command_line(argc, argv);
    char *path = dir ? malloc(strlen(dir) + PATH_MAX + 16) : NULL; /* dir's or the private folder's */
    if (!dir || !cmd || !path) {
        cli_fail("out of memory");
        rc = EXIT_IO;
        goto done;
    }
    cli_stage_begin(s.campaign);
    const char *priv = cli_stage_dir(dir, &rc);
    if (priv)
        rc = cli_stage_claim(dir, priv, args.out_dir == NULL);
    if (rc != -1) {
        cli_stage_abort();
        goto done;
    }
    cli_report_unfitted(&s);
    sprintf(path, "%s/report.html", priv);
    ro.command_line = cmd;
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st = arrank_report_write(s.analysis, path, &ro, &err);
    sprintf(path, "%s/report.html", dir);
    if (st == ARRANK_EPLOT || st == ARRANK_ENOGNUPLOT) {
        /* the page is still written, with a note where the figures were */
        cli_print_error(&err);
        rc = cli_stage_commit();
        if (rc == -1) {
            cli_fail("%s written without figures", path);
            rc = cli_exit_status(st, &err);
        }
    } else if (st != ARRANK_OK) {
        cli_print_error(&err);
        cli_stage_abort();
        rc = cli_exit_status(st, &err);
    } else {
        rc = cli_stage_commit();
        if (rc == -1) {
            printf("%s\n", path);
            rc = fflush(stdout) == 0 ? EXIT_OK : EXIT_IO;
        }
    }
done:
    free(path);
    free(cmd);
    free(dir);
    cli_session_free(&s);
    return rc;
}
