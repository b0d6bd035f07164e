/*
 * main.c - the arrank program: the command table and dispatch.
 */
#include <malloc.h>
#include <stdio.h>
#include <string.h>

#include "arrank/version.h"
#include "cli.h"

static const cli_command commands[] = {
    {"fit", cmd_fit, "fit every sample: Ea, ln A and the rate at T, with intervals"},
    {"rank", cmd_rank, "rank the samples at the operating temperature (or by Ea or A)"},
    {"check", cmd_check, "say what is wrong with each sample's data, and which points are kinetic"},
    {"plot", cmd_plot, "draw the review figures (gnuplot) with results.json/.csv"},
    {"report", cmd_report, "write a self-contained HTML review report"},
    {"compare", cmd_compare, "compare two campaigns sample by sample (rate ratio, Ea change)"},
    {"plan", cmd_plan, "plan the next runs: samples, temperatures and repeats to settle a ranking"},
};

static void list_commands(FILE *f)
{
    fprintf(f, "usage: arrank COMMAND CAMPAIGN [options]\n"
               "\n"
               "Arrhenius fits, diagnostics and rankings for catalyst screening campaigns.\n"
               "A campaign is a folder with one CSV of rate against temperature per sample.\n"
               "\n"
               "commands:\n");
    for (size_t i = 0; i < sizeof commands / sizeof *commands; i++)
        fprintf(f, "  %-8s %s\n", commands[i].name, commands[i].summary);
    fprintf(f, "\n"
               "'arrank COMMAND --help' tells more; 'arrank --version' the version.\n"
               "Exit status: 0 ok, 1 bad data, 2 usage, 3 input/output, 4 plotting failed,\n"
               "5 gnuplot not found.\n");
}

int main(int argc, char **argv)
{
    /* A campaign is many small blocks allocated on several threads: grow the
       heap 16 MB at a time and do not hand memory back before the exit, so the
       kernel is asked a few times rather than thousands (glibc mallopt). */
    mallopt(M_TOP_PAD, 16 << 20);
    mallopt(M_TRIM_THRESHOLD, 256 << 20);
    if (argc < 2) {
        list_commands(stderr);
        return EXIT_USAGE;
    }
    if (strcmp(argv[1], "--help") == 0 || strcmp(argv[1], "-h") == 0 ||
        strcmp(argv[1], "help") == 0) {
        list_commands(stdout);
        return EXIT_OK;
    }
    if (strcmp(argv[1], "--version") == 0) {
        printf("arrank %s\n", ARRANK_VERSION);
        return EXIT_OK;
    }
    for (size_t i = 0; i < sizeof commands / sizeof *commands; i++)
        if (strcmp(argv[1], commands[i].name) == 0)
            return commands[i].run(argc - 1, argv + 1);
    cli_fail("'%s' is not a command; see 'arrank --help'", argv[1]);
    return EXIT_USAGE;
}
