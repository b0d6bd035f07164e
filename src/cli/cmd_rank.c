/*
 * cmd_rank.c - `arrank rank CAMPAIGN --at T`: the samples ranked at the operating temperature.
 */
#include "cli.h"

static const char usage[] =
    "usage: arrank rank CAMPAIGN... [--at T] [--by rate|ea|prefactor|ratio] [options]\n"
    "\n"
    "Fit every sample and rank the batch: by the rate at the operating\n"
    "temperature (default), by lowest apparent activation energy (--by ea) or by\n"
    "highest pre-exponential factor (--by prefactor).  Samples that cannot be\n"
    "fitted are listed with the reason and not ranked.\n"
    "\n"
    "Several campaign folders are read as one run: ids that occur in more than\n"
    "one are named CAMPAIGN/ID; with a reference in every campaign each rate is\n"
    "taken relative to its own campaign's reference, and its drift is named.\n"
    "\n"
    "  --at T              operating temperature with its unit: 250C, 250degC,\n"
    "                      523.15K, 482F (default: operating_temperature in\n"
    "                      campaign.ini; one of the two is needed)\n"
    "  --extrapolate       rank by rate even when T lies more than 100 K outside\n"
    "                      every sample's measured range (refused otherwise)\n"
    "  --by KEY            rate (default), ea, prefactor or ratio (to the reference)\n"
    "  --json FILE|-       write the results as JSON, one record per sample ('-' for\n"
    "                      standard output)\n"
    "  --json-points       the JSON also holds every point and the whole diagnosis\n"
    "  --csv FILE|-        write the results as CSV ('-' for standard output)\n"
    "  --points FILE|-     write every point as CSV, one row each (points.csv)\n"
    "  --reference ID      the reference catalyst (default: reference in campaign.ini):\n"
    "                      each rate at T as a ratio to it, P(better), Ea difference\n"
    "  --confidence C      two-sided level of every interval, 0.95 or 95% (default\n"
    "                      campaign.ini confidence, else 0.95)\n"
    "  --use-all           fit every point: no kinetic window\n"
    "  --drop-outliers     leave flagged outliers out of the fit\n"
    "  --conversion-limit X  differential-reactor limit, e.g. 10% (default)\n"
    "  --no-diagnose       skip the diagnostics\n"
    "  --run LABEL         only the run with this label of each sample (its run\n"
    "                      column, or its file when one sample has several files);\n"
    "                      samples without it are listed as not fitted\n"
    "  --strict            all or nothing: a file that cannot be read or a cell that\n"
    "                      is not a number stops the run (default: that file is\n"
    "                      skipped, that point left out, each named on stderr)\n"
    "  --no-merge          two files with one sample id are an error (default: one\n"
    "                      sample, each file a run; a byte-identical copy unused)\n"
    "  --errors relative|absolute   error model of the rates (default relative)\n"
    "  --wide              on a terminal, every column of the table however wide\n"
    "                      (by default the table fits the terminal: columns of\n"
    "                      least priority are left out, and a line says which)\n"
    "  --model arrhenius|modified|eyring   rate law (default arrhenius)\n"
    "  --seed N            seed of the Monte Carlo draws and the bootstrap (default 1)\n"
    "  --draws N           Monte Carlo draws for P(best) (default 10000)\n"
    "  --pairs N           samples in the pairwise P(i beats j) table (default 20)\n"
    "  --bootstrap N       also give a residual-bootstrap interval, N resamples\n"
    "  --normal            draw from the normal rather than the t distribution\n"
    "\n"
    "Exit status: 0 ok (at least one sample fitted; files not used are named on\n"
    "stderr), 1 bad input data or nothing fittable, 2 usage,\n"
    "3 a file could not be read or written.\n";

int cmd_rank(int argc, char **argv)
{
    cli_args args;
    int rc = cli_parse(argc, argv,
                       OPT_REFERENCE | OPT_MULTI | OPT_AT | OPT_OUTPUTS | OPT_CONFIDENCE | OPT_BY |
                           OPT_DIAGNOSE | OPT_MODEL | OPT_STATS | OPT_TABLE,
                       usage,
                       &args);
    if (rc != -1)
        return rc;
    return cli_analyse_and_print(&args, 1);
}
