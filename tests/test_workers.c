/*
 * test_workers.c - reading and analysing on worker threads gives the answer a
 * single thread gives.  The files of a campaign are read, and its samples
 * fitted and diagnosed, a few at a time by as many workers as the machine has
 * (src/lib/util.c); here the worker count is forced (arrank_workers_force,
 * src/lib/util.h) to 1 and then to several, and the whole JSON output
 * must be the same byte for byte, and a campaign with bad files must fail on
 * the first bad file in name order, as a reader in order would.
 *
 * Data: the demo campaign, and a generated one of a few hundred samples with
 * a fixed seed (straight lines, transport-limited bends, few points, rate_sd
 * columns and particle metadata mixed), written to a temporary folder.
 * Generated numbers are invented test data, not measurements.
 *
 * Run from the top of the source tree (tests/run.sh does).
 */

#include <gsl/gsl_errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "arrank/analysis.h"
#include "arrank/campaign.h"
#include "arrank/diagnose.h"
#include "arrank/output.h"
#include "arrank/units.h"
#include "../src/lib/util.h"
#include "helpers.h"

#define DEMO "campaigns/zeolite-ni-screen"
#define N_GEN 300
#define R_J_MOL_K 8.314462618 /* CODATA 2018 molar gas constant */

static char *gen_dir;
static uint64_t rng_state = 0x2545F4914F6CDD1Dull; /* fixed seed (helpers.h: splitmix) */

/* Sample k of the generated campaign: the kind varies with k. */
static void write_generated_sample(const char *dir, int k)
{
    char path[4200], line[256];
    snprintf(path, sizeof path, "%s/G%04d.csv", dir, k);
    FILE *f = fopen(path, "w");
    assert_non_null(f);
    double ea = 60e3 + 80e3 * uniform01(&rng_state), ln_a = ea / (R_J_MOL_K * 520.0) + gauss(&rng_state);
    int n = k % 11 == 0 ? 6 : 12, film = k % 7 == 0, with_sd = k % 2 == 0;
    fprintf(f, "# sample = gen %d\n", k);
    if (k % 5 == 0)
        fputs("# particle_diameter = 0.4 mm\n# pellet_density = 1.2 g/cm3\n"
              "# effective_diffusivity = 2e-7 m2/s\n# bulk_concentration = 10 mol/m3\n",
              f);
    fputs(with_sd ? "T [K],rate [umol/(g*s)],rate_sd [umol/(g*s)]\n"
                  : "T [K],rate [umol/(g*s)]\n",
          f);
    for (int i = 0; i < n; i++) {
        double t = 470.0 + 110.0 * i / (n - 1);
        double rk = exp(ln_a - ea / (R_J_MOL_K * t));
        double r = film ? 1.0 / (1.0 / rk + 1.0 / (0.3 * exp(ln_a - ea / (R_J_MOL_K * 545.0))))
                        : rk;
        r *= exp(0.03 * gauss(&rng_state));
        if (with_sd)
            snprintf(line, sizeof line, "%.2f,%.6g,%.3g\n", t, r, 0.03 * r);
        else
            snprintf(line, sizeof line, "%.2f,%.6g\n", t, r);
        fputs(line, f);
    }
    assert_int_equal(fclose(f), 0);
}

static arrank_campaign *load(const char *dir, int workers)
{
    arrank_workers_force(workers);
    arrank_campaign *c = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st = arrank_campaign_load(dir, units, &c, &err);
    arrank_workers_force(0);
    if (st != ARRANK_OK)
        fail_msg("%s: %s", dir, err.message);
    return c;
}

/* The whole JSON output of rank at 530 K and the table, results.csv and
   points.csv after it, as one string (caller frees). */
static char *analyse_json(const arrank_campaign *c, int workers, int diagnose)
{
    arrank_options o = arrank_options_defaults();
    o.operating_temp_K = 530.0;
    o.diagnose = diagnose;
    o.draws = 2000;
    o.units = units;
    arrank_workers_force(workers);
    arrank_analysis *a = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st = arrank_analysis_run(c, &o, &a, &err);
    arrank_workers_force(0);
    if (st != ARRANK_OK)
        fail_msg("analysis: %s", err.message);
    char *text = NULL;
    size_t len = 0;
    FILE *f = open_memstream(&text, &len);
    assert_non_null(f);
    assert_int_equal(arrank_output_write(a, ARRANK_OUTPUT_JSON, f, &err), ARRANK_OK);
    /* the table, results.csv and points.csv too: their rows are formatted on
       the workers (output.c, files.c) */
    arrank_workers_force(workers);
    assert_int_equal(arrank_output_write(a, ARRANK_OUTPUT_TABLE, f, &err), ARRANK_OK);
    assert_int_equal(arrank_output_write(a, ARRANK_OUTPUT_CSV, f, &err), ARRANK_OK);
    assert_int_equal(arrank_output_write(a, ARRANK_OUTPUT_POINTS, f, &err), ARRANK_OK);
    arrank_workers_force(0);
    assert_int_equal(fclose(f), 0);
    arrank_analysis_free(a);
    assert_true(len > 1000);
    return text;
}

static void same_output(const char *dir, int diagnose)
{
    arrank_campaign *c1 = load(dir, 1);
    char *one = analyse_json(c1, 1, diagnose);
    for (int workers = 2; workers <= 5; workers += 3) {
        arrank_campaign *cn = load(dir, workers);
        assert_int_equal(cn->n_samples, c1->n_samples);
        char *many = analyse_json(cn, workers, diagnose);
        if (strcmp(one, many) != 0) {
            size_t i = 0;
            while (one[i] && one[i] == many[i])
                i++;
            fail_msg("%s, %d workers: output differs at byte %zu: '%.60s' / '%.60s'", dir,
                     workers, i, one + (i > 20 ? i - 20 : 0), many + (i > 20 ? i - 20 : 0));
        }
        free(many);
        arrank_campaign_free(cn);
    }
    free(one);
    arrank_campaign_free(c1);
}

static void demo_same_for_any_worker_count(void **state)
{
    (void)state;
    same_output(DEMO, 1);
    same_output(DEMO, 0);
}

static void generated_same_for_any_worker_count(void **state)
{
    (void)state;
    same_output(gen_dir, 1);
    same_output(gen_dir, 0);
}

/* The generated campaign really has what the comparison is meant to cover. */
static void generated_has_bends_and_criteria(void **state)
{
    (void)state;
    arrank_campaign *c = load(gen_dir, 3);
    assert_int_equal(c->n_samples, N_GEN);
    arrank_options o = arrank_options_defaults();
    o.operating_temp_K = 530.0;
    o.draws = 100;
    o.units = units;
    arrank_workers_force(3);
    arrank_analysis *a = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_analysis_run(c, &o, &a, &err), ARRANK_OK);
    arrank_workers_force(0);
    size_t curved = 0, series = 0, wp = 0;
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *r = &a->results[i];
        curved += (r->flags & ARRANK_FLAG_CURVED) != 0;
        if (r->diagnosis) {
            series += r->diagnosis->curvature.series_fitted != 0;
            wp += isfinite(r->diagnosis->weisz_prater.value);
        }
    }
    /* 43 of 300 are film-limited (k % 7 == 0); 60 carry particle data (k % 5 == 0) */
    assert_true(curved >= 35);
    assert_true(series >= 35);
    assert_int_equal(wp, 60);
    arrank_analysis_free(a);
    arrank_campaign_free(c);
}

/* Two bad files: whatever the workers do, the first in name order is reported. */
static void first_bad_file_is_reported(void **state)
{
    (void)state;
    char *dir = temp_dir_make(), name[16];
    for (int k = 0; k < 200; k++) {
        snprintf(name, sizeof name, "S%03d.csv", k);
        if (k == 57)
            file_write(dir, name, "T [K],rate [umol/(g*s)]\n500,1\n510,zz\n");
        else if (k == 140)
            file_write(dir, name, "T [K],rate [umol/(g*s)]\n500,1\n510,\n");
        else
            file_write(dir, name, "T [K],rate [umol/(g*s)]\n500,1\n510,1.5\n520,2.2\n");
    }
    char want[4200];
    snprintf(want, sizeof want, "%s/S057.csv", dir);
    for (int rep = 0; rep < 30; rep++) {
        int workers = 1 + rep % 4;
        arrank_workers_force(workers);
        arrank_campaign *c = NULL;
        arrank_error err;
        arrank_error_clear(&err);
        arrank_status st = arrank_campaign_load(dir, units, &c, &err);
        arrank_workers_force(0);
        assert_int_equal(st, ARRANK_EPARSE);
        assert_null(c);
        assert_string_equal(err.path, want);
        assert_int_equal(err.line, 3);
        assert_non_null(strstr(err.message, "'zz'"));
    }
    temp_dir_remove(dir);
}

static int setup(void **state)
{
    if (units_setup(state) != 0)
        return -1;
    gen_dir = temp_dir_make();
    for (int k = 0; k < N_GEN; k++)
        write_generated_sample(gen_dir, k);
    return 0;
}

static int teardown(void **state)
{
    temp_dir_remove(gen_dir);
    return units_teardown(state);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(demo_same_for_any_worker_count),
        cmocka_unit_test(generated_same_for_any_worker_count),
        cmocka_unit_test(generated_has_bends_and_criteria),
        cmocka_unit_test(first_bad_file_is_reported),
    };
    return cmocka_run_group_tests(tests, setup, teardown);
}
