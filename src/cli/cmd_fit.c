/*
 * cmd_fit.c - `arrank fit CAMPAIGN [--at T]`: the per-sample fits.
 */
#include "cli.h"

static const char usage[] =
    "usage: arrank fit CAMPAIGN... [--at T] [options]\n"
    "\n"
    "Fit every sample of the campaign folder to the Arrhenius form and print\n"
    "the apparent activation energy, ln A and, with --at, the rate at T, each\n"
    "with its confidence interval, one sample per line in file order.  fit does\n"
    "not rank: 'arrank rank' orders the samples, with P(best) and groups.\n"
    "\n"
    "Several campaign folders are read as one run: ids that occur in more than\n"
    "one are named CAMPAIGN/ID; with a reference in every campaign each rate is\n"
    "taken relative to its own campaign's reference, and its drift is named.\n"
    "\n"
    "  --at T              temperature with its unit: 250C, 250degC, 523.15K, 482F\n"
    "                      (default: operating_temperature in campaign.ini, if any)\n"
    "  --extrapolate       accepted as for rank; fit never refuses a temperature far\n"
    "                      outside the measured ranges: it flags each sample\n"
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
    "\n"
    "Exit status: 0 ok (at least one sample fitted; files not used are named on\n"
    "stderr), 1 bad input data or nothing fittable, 2 usage,\n"
    "3 a file could not be read or written.\n";

int cmd_fit(int argc, char **argv)
{
    cli_args args;
    int rc = cli_parse(argc, argv,
                       OPT_REFERENCE | OPT_MULTI | OPT_AT | OPT_OUTPUTS | OPT_CONFIDENCE |
                           OPT_DIAGNOSE | OPT_MODEL | OPT_TABLE,
                       usage, &args);
    if (rc != -1)
        return rc;
    return cli_analyse_and_print(&args, 0);
}
