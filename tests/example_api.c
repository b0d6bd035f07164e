/*
 * example_api.c - the example of libarrank's public API: read a campaign
 * folder, fit and rank its samples at an operating temperature, and print
 * the ranking with each rate's interval.  tests/check_install.sh compiles it
 * against an installed copy through pkg-config:
 *
 *   cc example_api.c $(pkg-config --cflags --libs arrank) -o example
 *   ./example CAMPAIGN_FOLDER 270C
 *
 * Every fallible call returns an arrank_status and fills an arrank_error
 * (FILE:LINE:COLUMN and a one-line message); the library never prints or
 * exits, so the program decides what to say: here, one line and exit 1 when
 * a call failed.
 */
#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/campaign.h"
#include "arrank/error.h"
#include "arrank/units.h"

static int failed(const arrank_error *err)
{
    char line[1024];
    arrank_error_format(err, line, sizeof line);
    fprintf(stderr, "example: %s\n", line);
    return 1;
}

int main(int argc, char **argv)
{
    if (argc != 3) {
        fprintf(stderr, "usage: example CAMPAIGN_FOLDER TEMPERATURE (e.g. 270C)\n");
        return 2;
    }
    arrank_error err;
    arrank_error_clear(&err);

    /* 1. The unit database (udunits2): every unit of the files goes through it. */
    arrank_units *units = arrank_units_create(&err);
    if (!units)
        return failed(&err);

    /* 2. The operating temperature, with its unit: temperatures never have a default. */
    arrank_options opt = arrank_options_defaults();
    opt.units = units;
    if (arrank_units_parse_temperature(units, argv[2], &opt.operating_temp_K, &err) != ARRANK_OK)
        return failed(&err);

    /* 3. The campaign folder: one CSV per sample, campaign.ini if present. */
    arrank_campaign *campaign = NULL;
    if (arrank_campaign_load(argv[1], units, &campaign, &err) != ARRANK_OK)
        return failed(&err);

    /* 4. Fit, diagnose and rank (defaults: 95 % intervals, ranked by rate at T). */
    arrank_analysis *analysis = NULL;
    if (arrank_analysis_run(campaign, &opt, &analysis, &err) != ARRANK_OK)
        return failed(&err);

    /* 5. The ranking, best first; samples that could not be fitted say why. */
    printf("rank,id,ea_kJ_mol,rate_at_T,rate_at_T_lo,rate_at_T_hi,unit\n");
    for (size_t k = 0; k < analysis->n_ranked; k++) {
        const arrank_result *r = &analysis->results[analysis->order[k]];
        printf("%d,%s,%.2f,%.4g,%.4g,%.4g,%s\n", r->rank, r->sample->id,
               r->fit.ea_J_mol / 1000.0, r->at_T.rate, r->at_T.rate_lo, r->at_T.rate_hi,
               campaign->rate_unit);
    }
    for (size_t i = 0; i < analysis->n_results; i++)
        if (analysis->results[i].error)
            printf("-,%s,not fitted: %s\n", analysis->results[i].sample->id,
                   analysis->results[i].error);

    arrank_analysis_free(analysis);
    arrank_campaign_free(campaign);
    arrank_units_free(units);
    return 0;
}
