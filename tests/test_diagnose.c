/*
 * test_diagnose.c - the diagnostics against data generated from published
 * models, and the transport criteria against hand calculations.
 *
 * External references, named beside each check:
 *  - the effectiveness factor of a first-order reaction in an isothermal
 *    sphere, eta = (3/phi^2)(phi coth phi - 1) (Thiele, Ind. Eng. Chem.
 *    31:916, 1939; Weisz & Prater, Adv. Catal. 6:143, 1954), and its falsified
 *    kinetics: E_app/E = 0.56 at phi = 10 and 0.52 at phi = 30, tending to
 *    (E + E_D)/2 (computed in the project's domain notes from that formula);
 *  - film control: a transport conductance in series with the kinetics,
 *    1/r = 1/k + 1/k_t, with k_t weakly temperature dependent, giving an
 *    apparent Ea of a few kJ/mol (Adiabatic Fixed-Bed Reactors, Practical
 *    Guides in Chemical Engineering, sec. 2.6);
 *  - Weisz-Prater and Mears numbers: hand calculations from the published
 *    definitions (see the test's comment);
 *  - Student's t p-values: SciPy (see test_t_p_scipy).
 * Random scatter comes from GSL's mt19937 with fixed seeds, so every run sees
 * the same data sets.
 */
#include <float.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>
#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>
#include <jansson.h>

#include "../src/lib/diagnosis_out.h"
#include "../src/lib/regress_testing.h"
#include "../src/lib/series_testing.h"
#include "../src/lib/stats.h"
#include "arrank/analysis.h"
#include "arrank/campaign.h"
#include "arrank/diagnose.h"
#include "arrank/diagnosis_out.h"
#include "arrank/fit.h"
#include "arrank/transport.h"
#include "arrank/units.h"

static const double R = ARRANK_R_J_MOL_K;
static arrank_units *units;

/* ---- building campaigns in memory ------------------------------------------ */

typedef struct {
    size_t n;
    double T_K[64], rate[64], conv[64], tos_h[64];
    const char *run[64];
    const char *meta; /* extra "# key = value" lines, or NULL */
    int with_conv, with_tos;
} data;

static char *xstrdup(const char *s)
{
    char *d = malloc(strlen(s) + 1);
    assert_non_null(d);
    strcpy(d, s);
    return d;
}

/* CSV text of one sample in the campaign format (rates in umol/(g*s)). */
static char *csv_text(const char *id, const data *dt, const char *rate_unit)
{
    size_t cap = 4096 + dt->n * 160;
    char *b = malloc(cap);
    assert_non_null(b);
    int k = snprintf(b, cap, "# sample = %s\n%s", id, dt->meta ? dt->meta : "");
    k += snprintf(b + k, cap - (size_t)k, "T [K], rate [%s]%s%s%s\n", rate_unit,
                  dt->run[0] ? ", run" : "", dt->with_conv ? ", conversion" : "",
                  dt->with_tos ? ", time_on_stream [h]" : "");
    for (size_t i = 0; i < dt->n; i++) {
        k += snprintf(b + k, cap - (size_t)k, "%.6f, %.10g", dt->T_K[i], dt->rate[i]);
        if (dt->run[0])
            k += snprintf(b + k, cap - (size_t)k, ", %s", dt->run[i]);
        if (dt->with_conv)
            k += snprintf(b + k, cap - (size_t)k, ", %.6f", dt->conv[i]);
        if (dt->with_tos)
            k += snprintf(b + k, cap - (size_t)k, ", %.4f", dt->tos_h[i]);
        k += snprintf(b + k, cap - (size_t)k, "\n");
    }
    return b;
}

/* A campaign of n samples parsed from CSV text (the reader's own path). */
static arrank_campaign *campaign_of(size_t n, const data *const *dts, const char *const *ids,
                                    const char *const *rate_units)
{
    arrank_campaign *c = calloc(1, sizeof *c);
    assert_non_null(c);
    c->path = xstrdup("memory");
    c->name = xstrdup("memory");
    c->title = xstrdup("memory");
    c->operating_temp_K = NAN;
    c->confidence = NAN;
    c->samples = calloc(n, sizeof *c->samples);
    assert_non_null(c->samples);
    for (size_t i = 0; i < n; i++) {
        char *text = csv_text(ids[i], dts[i], rate_units[i]);
        char name[64];
        snprintf(name, sizeof name, "%s.csv", ids[i]);
        arrank_error err;
        arrank_error_clear(&err);
        arrank_status st =
            arrank_sample_parse(name, text, strlen(text), units, NULL, &c->samples[i], &err);
        if (st != ARRANK_OK)
            printf("# parse failed: %s\n", err.message);
        assert_int_equal(st, ARRANK_OK);
        c->n_samples++;
        free(text);
    }
    c->rate_unit = xstrdup(rate_units[0]);
    c->basis = c->samples[0].basis;
    return c;
}

static arrank_analysis *analyse(const arrank_campaign *c, const arrank_options *opt)
{
    arrank_analysis *a = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st = arrank_analysis_run(c, opt, &a, &err);
    if (st != ARRANK_OK)
        printf("# analysis failed: %s\n", err.message);
    assert_int_equal(st, ARRANK_OK);
    return a;
}

/* One sample through the whole pipeline. */
typedef struct {
    arrank_campaign *c;
    arrank_analysis *a;
    const arrank_result *res;
    const arrank_diagnosis *d;
} one;

static one run_one(const data *dt, const arrank_options *opt)
{
    const data *dts[1] = {dt};
    const char *ids[1] = {"Kestrel-7"};
    const char *ru[1] = {"umol/(g*s)"};
    one o;
    o.c = campaign_of(1, dts, ids, ru);
    o.a = analyse(o.c, opt);
    o.res = &o.a->results[0];
    assert_null(o.res->error);
    o.d = o.res->diagnosis;
    assert_non_null(o.d);
    return o;
}

static void one_free(one *o)
{
    arrank_analysis_free(o->a);
    arrank_campaign_free(o->c);
}

static void print_findings(const arrank_result *res)
{
    arrank_error err;
    arrank_error_clear(&err);
    fflush(stdout);
    /* as TAP comments so they never look like a result line */
    char *buf = NULL;
    size_t len = 0;
    FILE *m = open_memstream(&buf, &len);
    assert_non_null(m);
    assert_int_equal(arrank_diagnosis_write_text(m, res, &err), ARRANK_OK);
    fclose(m);
    for (char *line = strtok(buf, "\n"); line; line = strtok(NULL, "\n"))
        printf("# %s\n", line);
    free(buf);
}

/* ---- generators --------------------------------------------------------------- */

/* Evenly spaced temperatures. */
static void temps(data *dt, size_t n, double lo_K, double hi_K)
{
    dt->n = n;
    for (size_t i = 0; i < n; i++)
        dt->T_K[i] = lo_K + (hi_K - lo_K) * (double)i / (double)(n - 1);
}

/* Intrinsic first-order rate constant as a rate, umol/(g s). */
static double k_kin(double T_K, double ea_J_mol, double k_ref, double T_ref_K)
{
    return k_ref * exp(-ea_J_mol / R * (1.0 / T_K - 1.0 / T_ref_K));
}

/* Effectiveness factor of a first-order reaction in an isothermal sphere
   (Thiele 1939; Weisz & Prater 1954): eta = (3/phi^2)(phi coth phi - 1);
   the series form for small phi keeps it exact to rounding near 0. */
static double eta_sphere(double phi)
{
    if (phi < 1e-3)
        return 1.0 - phi * phi / 15.0;
    return 3.0 / (phi * phi) * (phi / tanh(phi) - 1.0);
}

/* Pore-diffusion-limited rates: phi = phi_ref sqrt((k/k_ref)/(D/D_ref)),
   D_e ~ T^0.5 (Knudsen-like, weakly T dependent). */
static void pore_data(data *dt, double ea, double phi_ref, double T_ref, double sigma,
                      gsl_rng *rng)
{
    for (size_t i = 0; i < dt->n; i++) {
        double T = dt->T_K[i];
        double k = k_kin(T, ea, 2.0, T_ref);
        double phi = phi_ref * sqrt((k / 2.0) / sqrt(T / T_ref));
        dt->rate[i] = eta_sphere(phi) * k * exp(rng ? gsl_ran_gaussian(rng, sigma) : 0.0);
    }
}

static void kinetic_data(data *dt, double ea, double sigma, gsl_rng *rng)
{
    for (size_t i = 0; i < dt->n; i++)
        dt->rate[i] = k_kin(dt->T_K[i], ea, 1.3, 500.0) * exp(gsl_ran_gaussian(rng, sigma));
}

/* Least-squares slope of ln(eta k) against 1/T between two temperatures,
   from the exact model (no noise): the local apparent Ea the data carry. */
static double exact_local_ea(double ea, double phi_ref, double T_ref, double T1, double T2)
{
    data a = {0};
    a.n = 2;
    a.T_K[0] = T1;
    a.T_K[1] = T2;
    pore_data(&a, ea, phi_ref, T_ref, 0.0, NULL);
    return -R * (log(a.rate[1]) - log(a.rate[0])) / (1.0 / T2 - 1.0 / T1);
}

/* ---- pore diffusion -------------------------------------------------------------- */

static void test_pore_sphere(void **state)
{
    (void)state;
    /* E = 112.4 kJ/mol; phi = 1 at 523 K; 12 points over 450-630 K give phi
       from about 0.15 (eta > 0.998) to about 17 (eta ~ 0.17); 1.5 % scatter. */
    const double ea = 112400.0, T_ref = 523.0;
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 20240611);
    data dt = {0};
    temps(&dt, 12, 450.0, 630.0);
    pore_data(&dt, ea, 1.0, T_ref, 0.015, rng);
    gsl_rng_free(rng);
    arrank_options opt = arrank_options_defaults();
    one o = run_one(&dt, &opt);
    print_findings(o.res);
    const arrank_diagnosis *d = o.d;

    assert_true(d->curvature.detected);
    assert_int_equal(d->curvature.direction, ARRANK_BEND_DOWN);
    /* hot end: the two hottest points are pore-diffusion-like */
    assert_int_equal(d->points[11].regime, ARRANK_REGIME_PORE);
    assert_int_equal(d->points[10].regime, ARRANK_REGIME_PORE);
    /* cold end kinetic */
    for (size_t i = 0; i < 4; i++)
        assert_int_equal(d->points[i].regime, ARRANK_REGIME_KINETIC);
    /* local Ea of the hottest window tends to half the intrinsic value:
       exact model over 610-630 K gives the reference, and the strong-limit
       ratios 0.56 (phi = 10) and 0.52 (phi = 30) (domain notes, computed from
       Thiele's sphere formula) bound it; tolerance: the window's own standard
       error at 1.5 % scatter is about 6 kJ/mol, so +/- 0.08 in the ratio. */
    const arrank_local_ea *hot = &d->curvature.local[d->curvature.n_local - 1];
    double ratio = hot->ea_J_mol / ea;
    double exact = exact_local_ea(ea, 1.0, T_ref, 610.0, 630.0) / ea;
    printf("# hottest window %.0f-%.0f K: Ea %.1f kJ/mol, ratio %.3f (exact model %.3f)\n",
           hot->temp_lo_K, hot->temp_hi_K, hot->ea_J_mol / 1000, ratio, exact);
    assert_true(exact > 0.50 && exact < 0.60);
    assert_true(fabs(ratio - exact) < 0.08);
    assert_true(ratio > 0.42 && ratio < 0.68);
    /* the kinetic window is found and its refit's interval holds the true Ea */
    assert_true(d->window_applied);
    assert_true(o.res->flags & ARRANK_FLAG_TRANSPORT);
    assert_true(o.res->flags & ARRANK_FLAG_EXCLUDED);
    assert_true(o.res->flags & ARRANK_FLAG_CURVED);
    const arrank_arrhenius *f = &o.res->fit;
    double t = arrank_t_quantile(0.95, f->dof);
    printf("# window %.0f-%.0f K, %zu points: Ea %.1f +/- %.1f kJ/mol (true %.1f)\n",
           f->T_min_K, f->T_max_K, f->n, f->ea_J_mol / 1000, t * f->ea_se_J_mol / 1000,
           ea / 1000);
    assert_true(f->n >= 4 && f->n < 12);
    assert_true(fabs(f->ea_J_mol - ea) <= t * f->ea_se_J_mol);
    /* every left-out point has a reason, and none is silent */
    for (size_t i = 0; i < dt.n; i++) {
        if (!o.res->used[i]) {
            assert_non_null(d->points[i].reason);
            assert_true(d->points[i].excluded);
        } else
            assert_null(d->points[i].reason);
    }
    /* the cause list names pore diffusion as supported */
    int pore_named = 0;
    for (size_t k = 0; k < d->curvature.n_causes; k++)
        pore_named |= d->curvature.causes[k].supported &&
                      strcmp(d->curvature.causes[k].cause, "pore diffusion") == 0;
    assert_true(pore_named);
    one_free(&o);
}

/* With --use-all nothing is left out but the regimes are still reported. */
static void test_use_all(void **state)
{
    (void)state;
    data dt = {0};
    temps(&dt, 12, 450.0, 630.0);
    pore_data(&dt, 112400.0, 1.0, 523.0, 0.0, NULL);
    arrank_options opt = arrank_options_defaults();
    opt.use_all = 1;
    one o = run_one(&dt, &opt);
    assert_int_equal(o.res->n_used, 12);
    assert_false(o.d->window_applied);
    assert_false(o.res->flags & ARRANK_FLAG_EXCLUDED);
    assert_int_equal(o.d->points[11].regime, ARRANK_REGIME_PORE);
    assert_true(o.res->flags & ARRANK_FLAG_CURVED);
    one_free(&o);
}

/* ---- film diffusion --------------------------------------------------------------- */

static void test_film(void **state)
{
    (void)state;
    /* 1/r = 1/k + 1/(k_t (T/T_ref)^0.75): kinetics E = 87.3 kJ/mol; the film
       conductance equals the kinetic rate at about 540 K and is 15 % of it
       at 600 K; 11 points over 470-600 K, 1 % scatter. */
    const double ea = 87300.0;
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 777001);
    data dt = {0};
    temps(&dt, 11, 470.0, 600.0);
    double kt_ref = k_kin(540.0, ea, 1.0, 500.0);
    for (size_t i = 0; i < dt.n; i++) {
        double T = dt.T_K[i];
        double k = k_kin(T, ea, 1.0, 500.0), kt = kt_ref * pow(T / 540.0, 0.75);
        dt.rate[i] = 1.0 / (1.0 / k + 1.0 / kt) * exp(gsl_ran_gaussian(rng, 0.01));
    }
    gsl_rng_free(rng);
    arrank_options opt = arrank_options_defaults();
    one o = run_one(&dt, &opt);
    print_findings(o.res);
    const arrank_diagnosis *d = o.d;
    assert_true(d->curvature.detected);
    assert_int_equal(d->curvature.direction, ARRANK_BEND_DOWN);
    assert_int_equal(d->points[10].regime, ARRANK_REGIME_FILM);
    assert_int_equal(d->points[0].regime, ARRANK_REGIME_KINETIC);
    /* the series-resistance model beats the line by a wide margin */
    assert_true(d->curvature.series_fitted);
    assert_true(d->curvature.series_p < 1e-3);
    assert_true(d->curvature.aicc_series < d->curvature.aicc_line - 4.0);
    assert_true(o.res->flags & ARRANK_FLAG_TRANSPORT);
    one_free(&o);
}

/* ---- causes named from the local Ea's ratio and level (issue 14 item 2) ------------ */

typedef struct {
    size_t sets, curved, film_named, pore_named, transport_unsure, excluded;
    size_t reason_film, reason_pore, reason_onset, reason_other, deepest_film, deepest_pore;
    size_t deepest_onset;
} cause_tally;

static int cause_supported(const arrank_diagnosis *d, const char *name)
{
    for (size_t k = 0; k < d->curvature.n_causes; k++)
        if (d->curvature.causes[k].supported && strcmp(d->curvature.causes[k].cause, name) == 0)
            return 1;
    return 0;
}

static void tally_causes(const one *o, cause_tally *t)
{
    const arrank_diagnosis *d = o->d;
    t->sets++;
    if (!(d->curvature.detected && d->curvature.direction == ARRANK_BEND_DOWN))
        return;
    t->curved++;
    t->film_named += cause_supported(d, "film (external) mass transfer");
    t->pore_named += cause_supported(d, "pore diffusion");
    for (size_t k = 0; k < d->curvature.n_causes; k++)
        t->transport_unsure += strcmp(d->curvature.causes[k].cause,
                                      "transport limitation (pore or film)") == 0;
    /* every excluded point's reason, and the reason of the most limited one
       (lowest local Ea among the excluded) */
    size_t deepest = SIZE_MAX;
    for (size_t i = 0; i < d->n_points; i++) {
        const arrank_point_diag *pd = &d->points[i];
        if (!pd->excluded || !pd->reason)
            continue;
        t->excluded++;
        if (strncmp(pd->reason, "film-limited point", 18) == 0)
            t->reason_film++;
        else if (strncmp(pd->reason, "pore-limited point", 18) == 0)
            t->reason_pore++;
        else if (strncmp(pd->reason, "where the bend begins", 21) == 0)
            t->reason_onset++;
        else
            t->reason_other++;
        if (isfinite(pd->local_ea_J_mol) &&
            (deepest == SIZE_MAX || pd->local_ea_J_mol < d->points[deepest].local_ea_J_mol))
            deepest = i;
    }
    if (deepest != SIZE_MAX) {
        const char *r = d->points[deepest].reason;
        t->deepest_film += strncmp(r, "film-limited point", 18) == 0;
        t->deepest_pore += strncmp(r, "pore-limited point", 18) == 0;
        t->deepest_onset += strncmp(r, "where the bend begins", 21) == 0;
    }
}

static void print_causes(const char *what, const cause_tally *t)
{
    printf("# %s: %zu sets, %zu bent down; named: film %zu, pore %zu, 'pore or film' %zu; "
           "%zu excluded points: film-limited %zu, pore-limited %zu, bend begins %zu, "
           "other %zu; the most limited excluded point: film %zu, pore %zu, bend begins %zu\n",
           what, t->sets, t->curved, t->film_named, t->pore_named, t->transport_unsure,
           t->excluded, t->reason_film, t->reason_pore, t->reason_onset, t->reason_other,
           t->deepest_film, t->deepest_pore, t->deepest_onset);
}

/*
 * Seeded bent sets of the two transport regimes, 10 points over 470-590 K,
 * 1.5 % scatter, intrinsic Ea 90 kJ/mol:
 *  - film only: 1/r = 1/k + 1/(k_t T/T_ref), no pore term (the series form
 *    of film control, Adiabatic Fixed-Bed Reactors sec. 2.6), with k = k_t
 *    at 525-545 K, so that the hottest points reach k/k_t of about 4-8 and a
 *    local Ea near or below 30 kJ/mol (ratio under 0.4, as in the issue's
 *    case; a milder film limitation whose local Ea stays in the pore-like
 *    range cannot be told from pore diffusion by the local Ea);
 *  - pore only: Thiele's first-order sphere, eta = (3/phi^2)(phi coth phi -
 *    1) (Thiele 1939), phi = 1 at 480-500 K, so that the hottest local Ea
 *    approaches half the intrinsic one (Weisz & Prater 1954).
 * Required: film sets name film control and not pore diffusion, and their
 * most limited points are left out as film-limited; pore sets name pore
 * diffusion and not film control; "where the bend begins" only for points
 * whose local Ea is still above 0.8 of the window's.
 */
#define CAUSE_SETS 60

static void test_causes_film_and_pore(void **state)
{
    (void)state;
    const double ea = 90e3;
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 14002);
    cause_tally film = {0}, pore = {0};
    arrank_options opt = arrank_options_defaults();
    for (size_t k = 0; k < CAUSE_SETS; k++) {
        data dt = {0};
        temps(&dt, 10, 470.0, 590.0);
        const double T_eq = 525.0 + 20.0 * (double)(k % 5) / 4.0;
        const double kt_ref = k_kin(T_eq, ea, 1.0, 500.0);
        for (size_t i = 0; i < dt.n; i++) {
            const double T = dt.T_K[i], kk = k_kin(T, ea, 1.0, 500.0);
            const double kt = kt_ref * T / T_eq;
            dt.rate[i] = 1.0 / (1.0 / kk + 1.0 / kt) * exp(gsl_ran_gaussian(rng, 0.015));
        }
        one o = run_one(&dt, &opt);
        if (k == 0)
            print_findings(o.res);
        tally_causes(&o, &film);
        one_free(&o);
    }
    for (size_t k = 0; k < CAUSE_SETS; k++) {
        data dt = {0};
        temps(&dt, 10, 470.0, 590.0);
        pore_data(&dt, ea, 1.0, 480.0 + 20.0 * (double)(k % 5) / 4.0, 0.015, rng);
        one o = run_one(&dt, &opt);
        if (k == 0)
            print_findings(o.res);
        tally_causes(&o, &pore);
        one_free(&o);
    }
    gsl_rng_free(rng);
    print_causes("film only", &film);
    print_causes("pore only", &pore);
    /* the sets bend (power of the curvature test, measured above) */
    assert_true(film.curved >= CAUSE_SETS * 9 / 10);
    assert_true(pore.curved >= CAUSE_SETS * 9 / 10);
    /* film: named in every bent set, pore diffusion never as supported */
    assert_int_equal(film.film_named, film.curved);
    assert_int_equal(film.pore_named, 0);
    assert_int_equal(film.deepest_film, film.curved);
    assert_int_equal(film.reason_pore, 0);
    /* pore: named in most bent sets, film control in none */
    assert_true(pore.pore_named >= pore.curved * 9 / 10);
    assert_int_equal(pore.film_named, 0);
    assert_int_equal(pore.reason_film, 0);
    assert_int_equal(film.reason_other + pore.reason_other, 0);
}

/* ---- false alarms and power ----------------------------------------------------- */

/*
 * 200 seeded straight data sets and 200 seeded moderately limited ones, each
 * 10 temperatures evenly over 480-560 K (80 K) with 3 % lognormal scatter and
 * an intrinsic Ea drawn between 80 and 140 kJ/mol.
 * "Moderately limited" here means: pore diffusion in a sphere with Thiele
 * modulus 4 at the hottest point, so the hottest rate is 56 % of the kinetic
 * one (eta(4) = 0.5630 from Thiele's formula: 0.1875 (4 coth 4 - 1)) while the coldest is within
 * 1-5 % of it; stronger than the onset, well short of full pore control.
 * Required by the project: at most 5 % of the straight sets flagged curved,
 * at least 90 % of the limited ones.  The rule (quadratic term, two-sided
 * 2 % level) was chosen before these data; a stand-alone simulation of the
 * same design gave about 2 % and 96 %.
 */
static void test_false_alarm_and_power(void **state)
{
    (void)state;
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 4159);
    arrank_options opt = arrank_options_defaults();
    size_t false_alarm = 0, hits = 0, trials = 200;
    for (size_t k = 0; k < trials; k++) {
        double ea = 80000.0 + 60000.0 * gsl_rng_uniform(rng);
        data dt = {0};
        temps(&dt, 10, 480.0, 560.0);
        kinetic_data(&dt, ea, 0.03, rng);
        one o = run_one(&dt, &opt);
        false_alarm += o.d->curvature.detected;
        one_free(&o);

        data lim = {0};
        temps(&lim, 10, 480.0, 560.0);
        /* phi_ref at T_ref = 560 K is the hottest point's modulus (the
           generator's D ~ T^0.5 factor is 1 there) */
        pore_data(&lim, ea, 4.0, 560.0, 0.03, rng);
        one p = run_one(&lim, &opt);
        hits += p.d->curvature.detected && p.d->curvature.direction == ARRANK_BEND_DOWN;
        one_free(&p);
    }
    gsl_rng_free(rng);
    printf("# straight sets flagged curved: %zu of %zu; limited sets flagged: %zu of %zu\n",
           false_alarm, trials, hits, trials);
    assert_true(eta_sphere(4.0) > 0.5629 && eta_sphere(4.0) < 0.5631);
    assert_true(false_alarm <= trials / 20);
    assert_true(hits * 10 >= trials * 9);
}

/*
 * The kinetic window is chosen from the same data it is fitted to, so its
 * nominal 95 % interval cannot keep its full coverage (inference after
 * selection).  Measured here on 300 seeded copies of the pore-diffusion set
 * of test_pore_sphere at 3 % scatter; a stand-alone run of 200 gave 92 %.
 * Required: at least 85 %, and the mean error of the window's Ea within
 * 2 % of the intrinsic value.
 */
static void test_window_coverage(void **state)
{
    (void)state;
    const double ea = 112400.0;
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 271828);
    arrank_options opt = arrank_options_defaults();
    size_t cover = 0, trials = 300;
    double err_sum = 0;
    for (size_t k = 0; k < trials; k++) {
        data dt = {0};
        temps(&dt, 12, 450.0, 630.0);
        pore_data(&dt, ea, 1.0, 523.0, 0.03, rng);
        one o = run_one(&dt, &opt);
        const arrank_arrhenius *f = &o.res->fit;
        double t = arrank_t_quantile(0.95, f->dof);
        cover += fabs(f->ea_J_mol - ea) <= t * f->ea_se_J_mol;
        err_sum += f->ea_J_mol - ea;
        one_free(&o);
    }
    gsl_rng_free(rng);
    printf("# window interval holds the intrinsic Ea in %zu of %zu sets; mean error %.2f "
           "kJ/mol\n",
           cover, trials, err_sum / (double)trials / 1000.0);
    assert_true(cover * 100 >= trials * 85);
    assert_true(fabs(err_sum / (double)trials) < 0.02 * ea);
}

/* ---- transport criteria ------------------------------------------------------------ */

/*
 * Hand calculation from the published definitions (no book example is quoted
 * here, since its numbers could not be checked): Weisz & Prater (1954)
 * Phi = r_obs,v R_p^2 / (D_e C_s); Mears (1971), in the form tabulated by
 * Madon & Boudart (1982), r_obs,v R_p n / (k_c C_b).
 * Inputs: rate 3.7 umol/(g s) = 3.7e-3 mol/(kg s), pellet density 1250 kg/m3
 * -> r_v = 4.625 mol/(m3 s); particle diameter 300 um -> R_p = 1.5e-4 m;
 * D_e = 2.0e-7 m2/s; C = 8.2 mol/m3 (about 20 % of a gas at 1 bar, 293 K);
 * k_c = 0.05 m/s; n = 1.
 *   Phi   = 4.625 * (1.5e-4)^2 / (2.0e-7 * 8.2) = 1.040625e-7 / 1.64e-6
 *         = 0.0634527...
 *   Mears = 4.625 * 1.5e-4 * 1 / (0.05 * 8.2) = 6.9375e-4 / 0.41 = 1.692073e-3
 */
static void test_weisz_prater_mears(void **state)
{
    (void)state;
    double wp = arrank_transport_weisz_prater(4.625, 1.5e-4, 2.0e-7, 8.2);
    double me = arrank_transport_mears(4.625, 1.5e-4, 1.0, 0.05, 8.2);
    assert_true(fabs(wp / 0.0634527439 - 1.0) < 1e-9);
    assert_true(fabs(me / 1.69207317e-3 - 1.0) < 1e-8);
    assert_true(isnan(arrank_transport_weisz_prater(-1.0, 1.5e-4, 2.0e-7, 8.2)));
    assert_true(isnan(arrank_transport_mears(4.625, 1.5e-4, 1.0, 0.0, 8.2)));

    /* the same numbers from sample metadata, rate at the hottest point */
    data dt = {0};
    temps(&dt, 6, 500.0, 550.0);
    for (size_t i = 0; i < dt.n; i++)
        dt.rate[i] = k_kin(dt.T_K[i], 95000.0, 3.7, 550.0);
    dt.meta = "# particle_diameter = 300 um\n"
              "# pellet_density = 1.25 g/cm3\n"
              "# effective_diffusivity = 0.002 cm2/s\n"
              "# bulk_concentration = 8.2 mol/m3\n"
              "# film_coefficient = 5 cm/s\n"
              "# reaction_order = 1\n";
    arrank_options opt = arrank_options_defaults();
    one o = run_one(&dt, &opt);
    print_findings(o.res);
    assert_true(o.d->weisz_prater.computed);
    assert_true(fabs(o.d->weisz_prater.value / 0.0634527439 - 1.0) < 1e-6);
    /* first order: limit 0.6 (Weisz & Prater 1954 via Madon & Boudart 1982) */
    assert_true(fabs(o.d->weisz_prater.threshold - 0.6) < 1e-12);
    assert_true(o.d->weisz_prater.passes);
    assert_true(o.d->mears.computed);
    assert_true(fabs(o.d->mears.value / 1.69207317e-3 - 1.0) < 1e-6);
    assert_true(fabs(o.d->mears.threshold - 0.15) < 1e-12);
    assert_true(o.d->mears.passes);
    assert_non_null(strstr(o.d->weisz_prater.source, "Madon & Boudart"));
    one_free(&o);

    /*
     * The thresholds against the textbook's worked derivation (Vannice,
     * Kinetics of Catalytic Reactions, 2005, pp. 63-65, as summarised on the
     * Wikipedia page "Weisz-Prater criterion", read): N_WP <= 3 beta with
     * eta = 1 - n beta / 4; for eta = 0.95, beta = 0.2 / n, so the limit is
     * 0.6 for first order and 0.3 for second order.
     */
    const double eta = 0.95;
    for (int order = 1; order <= 2; order++) {
        double limit = 3.0 * (1.0 - eta) * 4.0 / order;
        dt.meta = order == 1 ? "# particle_diameter = 300 um\n# pellet_density = 1250 kg/m3\n"
                               "# effective_diffusivity = 2e-7 m2/s\n"
                               "# bulk_concentration = 8.2 mol/m3\n# reaction_order = 1\n"
                             : "# particle_diameter = 300 um\n# pellet_density = 1250 kg/m3\n"
                               "# effective_diffusivity = 2e-7 m2/s\n"
                               "# bulk_concentration = 8.2 mol/m3\n# reaction_order = 2\n";
        o = run_one(&dt, &opt);
        assert_true(o.d->weisz_prater.computed);
        assert_true(fabs(o.d->weisz_prater.threshold - limit) < 1e-12);
        one_free(&o);
    }

    /* a hundredfold larger particle fails Weisz-Prater: Phi x 1e4 = 634.5 */
    dt.meta = "# particle_diameter = 30 mm\n"
              "# pellet_density = 1250 kg/m3\n"
              "# effective_diffusivity = 2e-7 m2/s\n"
              "# bulk_concentration = 8.2 mol/m3\n";
    o = run_one(&dt, &opt);
    assert_true(o.d->weisz_prater.computed);
    assert_true(fabs(o.d->weisz_prater.value / 634.527439 - 1.0) < 1e-6);
    assert_false(o.d->weisz_prater.passes);
    /* no order given: the general 0.3 rule (Vannice 2005) */
    assert_true(fabs(o.d->weisz_prater.threshold - 0.3) < 1e-12);
    assert_false(o.d->mears.computed);
    assert_non_null(o.d->mears.detail);
    one_free(&o);
}

/* ---- runs ------------------------------------------------------------------------- */

/* Heating ramp then cooling ramp over the same set points. */
static void ramp_pair(data *dt, double loss, double sigma, unsigned long seed)
{
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, seed);
    const double T[6] = {483.15, 498.15, 513.15, 528.15, 543.15, 558.15};
    dt->n = 12;
    for (size_t i = 0; i < 6; i++) {
        dt->T_K[i] = T[i] + gsl_ran_gaussian(rng, 0.2);
        dt->run[i] = "up";
        dt->T_K[6 + i] = T[5 - i] + gsl_ran_gaussian(rng, 0.2);
        dt->run[6 + i] = "down";
    }
    for (size_t i = 0; i < 12; i++) {
        double act = i < 6 ? 1.0 : 1.0 - loss;
        dt->rate[i] = act * k_kin(dt->T_K[i], 104000.0, 0.85, 520.0) *
                      exp(gsl_ran_gaussian(rng, sigma));
    }
    gsl_rng_free(rng);
}

static void test_deactivation_pair(void **state)
{
    (void)state;
    arrank_options opt = arrank_options_defaults();
    /* 20 % activity lost between the heating and the cooling ramp, 3 % scatter */
    data dt = {0};
    ramp_pair(&dt, 0.20, 0.03, 99117);
    one o = run_one(&dt, &opt);
    print_findings(o.res);
    assert_true(o.res->flags & ARRANK_FLAG_DEACTIVATION);
    assert_false(o.res->flags & ARRANK_FLAG_ACTIVATION);
    assert_int_equal(o.d->n_runs, 1);
    assert_string_equal(o.d->runs[0].label_ref, "up");
    assert_string_equal(o.d->runs[0].label, "down");
    assert_string_equal(o.d->runs[0].method, "paired");
    assert_int_equal(o.d->runs[0].n_pairs, 6);
    assert_true(fabs(o.d->runs[0].change + 0.20) < 0.05);
    one_free(&o);

    /* a clean pair on ten seeds: never flagged */
    for (unsigned long seed = 1; seed <= 10; seed++) {
        data c = {0};
        ramp_pair(&c, 0.0, 0.03, 5000 + seed);
        one p = run_one(&c, &opt);
        assert_false(p.res->flags & (ARRANK_FLAG_DEACTIVATION | ARRANK_FLAG_ACTIVATION));
        assert_int_equal(p.d->runs[0].verdict, 0);
        one_free(&p);
    }
}

/* A reference temperature repeated at the end, no run column; and drift with
   time on stream on a randomised temperature order. */
static void test_repeats_and_drift(void **state)
{
    (void)state;
    arrank_options opt = arrank_options_defaults();
    data dt = {0};
    const double T[8] = {490, 500, 510, 520, 530, 540, 550, 500};
    dt.n = 8;
    for (size_t i = 0; i < 8; i++) {
        dt.T_K[i] = T[i];
        dt.rate[i] = k_kin(T[i], 98000.0, 1.0, 520.0) * (i == 7 ? 0.75 : 1.0) *
                     (1.0 + 0.01 * ((double)(i % 3) - 1.0));
    }
    one o = run_one(&dt, &opt);
    print_findings(o.res);
    assert_int_equal(o.d->n_runs, 1);
    assert_string_equal(o.d->runs[0].label, "pass 2");
    assert_true(o.res->flags & ARRANK_FLAG_DEACTIVATION);
    /* one repeated point: "1 point", not "1 points" */
    assert_int_equal(o.d->runs[0].n_pairs, 1);
    assert_true(o.d->n_findings >= 1);
    int said = 0;
    for (size_t k = 0; k < o.d->n_findings; k++)
        said |= strstr(o.d->findings[k], "(reference line, 1 point, t = ") != NULL;
    assert_true(said);
    one_free(&o);

    /* a ramp, then a hold at 520 K losing 3 % a step (made-up numbers): each
       return to 520 K is a repeat, and the ten that fell are said in one
       line, not ten; the two that did not, one by one */
    data dh = {0};
    const double ramp[7] = {490, 500, 510, 520, 530, 540, 550};
    for (size_t i = 0; i < 7; i++) {
        dh.T_K[dh.n] = ramp[i];
        dh.rate[dh.n++] = k_kin(ramp[i], 98000.0, 1.0, 520.0) * (1.0 + 0.01 * (double)(i % 2));
    }
    for (size_t k = 0; k < 12; k++) {
        dh.T_K[dh.n] = 520.0;
        dh.rate[dh.n++] = (k < 2 ? 1.0 : exp(-0.03 * (double)k)) *
                          (1.0 + 0.005 * ((double)(k % 3) - 1.0));
    }
    o = run_one(&dh, &opt);
    print_findings(o.res);
    int one_line = 0, by_one = 0, kept = 0;
    for (size_t k = 0; k < o.d->n_findings; k++) {
        one_line += strstr(o.d->findings[k], "repeats of passes 4-13 (10 of 12 repeats) are ") !=
                    NULL;
        by_one += strncmp(o.d->findings[k], "repeat 'pass ", 13) == 0;
    }
    for (size_t k = 0; k < o.d->n_notes; k++)
        kept += strncmp(o.d->notes[k], "repeat 'pass ", 13) == 0;
    assert_int_equal(o.d->n_runs, 12);
    assert_int_equal(one_line, 1);
    assert_int_equal(by_one, 0);
    assert_int_equal(kept, 2);
    one_free(&o);

    /* drift: 1.5 %/h loss over 10 h, temperatures in shuffled order */
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 31337);
    const double Ts[10] = {515, 485, 545, 500, 530, 490, 540, 505, 525, 510};
    data dr = {0};
    dr.n = 10;
    dr.with_tos = 1;
    for (size_t i = 0; i < 10; i++) {
        dr.T_K[i] = Ts[i];
        dr.tos_h[i] = 1.0 + (double)i;
        dr.rate[i] = k_kin(Ts[i], 98000.0, 1.0, 520.0) * exp(-0.015 * dr.tos_h[i]) *
                     exp(gsl_ran_gaussian(rng, 0.01));
    }
    gsl_rng_free(rng);
    o = run_one(&dr, &opt);
    print_findings(o.res);
    assert_true(o.d->drift.tested);
    assert_true(fabs(o.d->drift.slope_ln_per_h + 0.015) < 0.006);
    assert_int_equal(o.d->drift.verdict, -1);
    assert_true(o.res->flags & ARRANK_FLAG_DEACTIVATION);
    one_free(&o);
}

/* ---- conversion ---------------------------------------------------------------------- */

static void test_conversion(void **state)
{
    (void)state;
    data dt = {0};
    temps(&dt, 8, 480.0, 550.0);
    dt.with_conv = 1;
    for (size_t i = 0; i < dt.n; i++) {
        dt.rate[i] = k_kin(dt.T_K[i], 91000.0, 2.2, 515.0);
        dt.conv[i] = 0.012 * dt.rate[i] / k_kin(480.0, 91000.0, 2.2, 515.0);
    }
    /* conversions run from 1.2 % to about 14 % at 550 K: the last one or two
       are above 10 % */
    size_t above = 0;
    for (size_t i = 0; i < dt.n; i++)
        above += dt.conv[i] > 0.10;
    assert_true(above >= 1);
    arrank_options opt = arrank_options_defaults();
    one o = run_one(&dt, &opt);
    print_findings(o.res);
    assert_int_equal(o.d->n_high_conversion, above);
    assert_true(o.res->flags & ARRANK_FLAG_HIGH_CONVERSION);
    assert_true(o.d->points[7].high_conversion);
    assert_false(o.res->used[7]);
    assert_non_null(strstr(o.d->points[7].reason, "differential limit"));
    assert_false(o.d->points[0].high_conversion);
    one_free(&o);

    /* a 5 % limit (the stricter advice) flags more points */
    opt.conversion_limit = 0.05;
    o = run_one(&dt, &opt);
    assert_true(o.d->n_high_conversion > above);
    one_free(&o);
}


/* ---- outliers ------------------------------------------------------------------------- */

static void test_outlier(void **state)
{
    (void)state;
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 86420);
    data dt = {0};
    temps(&dt, 9, 470.0, 550.0);
    kinetic_data(&dt, 101000.0, 0.02, rng);
    gsl_rng_free(rng);
    dt.rate[4] *= 1.25; /* one point 25 % high in the middle */
    arrank_options opt = arrank_options_defaults();
    one o = run_one(&dt, &opt);
    print_findings(o.res);
    assert_true(o.d->points[4].outlier);
    assert_true(fabs(o.d->points[4].student_resid) > o.d->outlier_t_limit);
    assert_true(o.res->used[4]); /* flagged, not dropped */
    assert_int_equal(o.d->n_outliers, 1);
    assert_true(o.res->flags & ARRANK_FLAG_OUTLIER);
    assert_int_equal(o.res->n_used, 9);
    /* Every studentized residual against its definition: the deleted residual
       y_i - yhat_(i)(x_i) over its standard error sqrt(s_(i)^2 + se(yhat_(i))^2),
       both from a fit without point i (Belsley, Kuh & Welsch, Regression
       Diagnostics, 1980, sec. 2.1), here by the library's own Arrhenius fit. */
    const arrank_point *pt = o.c->samples[0].points; /* as read back from the CSV text */
    for (size_t i = 0; i < dt.n; i++) {
        double t8[9], r8[9];
        size_t m = 0;
        for (size_t k = 0; k < dt.n; k++)
            if (k != i) {
                t8[m] = pt[k].temp_K;
                r8[m++] = pt[k].rate;
            }
        arrank_arrhenius f;
        arrank_prediction pr;
        arrank_error e;
        arrank_error_clear(&e);
        assert_int_equal(arrank_fit_arrhenius(t8, r8, NULL, m, &f, &e), ARRANK_OK);
        assert_int_equal(arrank_fit_predict(&f, pt[i].temp_K, 0.95, &pr, &e), ARRANK_OK);
        const double want = (log(pt[i].rate) - pr.ln_rate) /
                            sqrt(f.resid_sd * f.resid_sd + pr.ln_rate_se * pr.ln_rate_se);
        assert_true(fabs(o.d->points[i].student_resid - want) <= 1e-10 * fabs(want) + 1e-12);
    }
    one_free(&o);

    opt.drop_outliers = 1;
    o = run_one(&dt, &opt);
    assert_false(o.res->used[4]);
    assert_int_equal(o.res->n_used, 8);
    assert_non_null(strstr(o.d->points[4].reason, "outlier"));
    assert_true(o.res->flags & ARRANK_FLAG_EXCLUDED);
    one_free(&o);
}

/* ---- concave-up, few points, mixed basis, JSON -------------------------------------- */

static void test_concave_up(void **state)
{
    (void)state;
    /* two parallel routes, 60 and 180 kJ/mol, equal at 540 K */
    data dt = {0};
    temps(&dt, 10, 470.0, 600.0);
    for (size_t i = 0; i < dt.n; i++)
        dt.rate[i] = k_kin(dt.T_K[i], 60000.0, 1.0, 540.0) +
                     k_kin(dt.T_K[i], 180000.0, 1.0, 540.0);
    arrank_options opt = arrank_options_defaults();
    one o = run_one(&dt, &opt);
    print_findings(o.res);
    assert_true(o.d->curvature.detected);
    assert_int_equal(o.d->curvature.direction, ARRANK_BEND_UP);
    assert_int_equal(o.res->n_used, 10); /* no window for an upward bend */
    assert_false(o.res->flags & ARRANK_FLAG_TRANSPORT);
    for (size_t k = 0; k < o.d->curvature.n_causes; k++)
        assert_null(strstr(o.d->curvature.causes[k].cause, "diffusion"));
    one_free(&o);
}

static void test_few_points(void **state)
{
    (void)state;
    data dt = {0};
    temps(&dt, 4, 500.0, 530.0);
    for (size_t i = 0; i < dt.n; i++)
        dt.rate[i] = k_kin(dt.T_K[i], 90000.0, 1.0, 515.0) * (i == 3 ? 0.6 : 1.0);
    arrank_options opt = arrank_options_defaults();
    one o = run_one(&dt, &opt);
    assert_false(o.d->curvature.tested);
    assert_false(o.d->curvature.detected);
    json_t *j = arrank_diagnosis_json(o.res);
    assert_string_equal(json_string_value(json_object_get(json_object_get(j, "curvature"),
                                                          "verdict")),
                        "not detected");
    json_decref(j);
    assert_int_equal(o.res->n_used, 4);
    one_free(&o);
}

static void test_mixed_basis(void **state)
{
    (void)state;
    data a = {0}, b = {0};
    temps(&a, 5, 500.0, 540.0);
    temps(&b, 5, 500.0, 540.0);
    for (size_t i = 0; i < 5; i++) {
        a.rate[i] = k_kin(a.T_K[i], 90000.0, 1.0, 515.0);
        b.rate[i] = k_kin(b.T_K[i], 80000.0, 0.4, 515.0);
    }
    a.meta = "# basis = mass\n";
    b.meta = "# basis = metal_mass\n";
    const data *dts[2] = {&a, &b};
    const char *ids[2] = {"Osprey-2", "Osprey-3"};
    const char *ru[2] = {"umol/(g*s)", "umol/(g*s)"};
    arrank_campaign *c = campaign_of(2, dts, ids, ru);
    arrank_options opt = arrank_options_defaults();
    arrank_analysis *an = analyse(c, &opt);
    assert_true(an->results[0].flags & ARRANK_FLAG_MIXED_BASIS);
    assert_true(an->results[1].flags & ARRANK_FLAG_MIXED_BASIS);
    char why[256];
    assert_true(arrank_diagnose_basis(c, &c->samples[0], why, sizeof why));
    assert_non_null(strstr(why, "metal_mass"));
    arrank_analysis_free(an);
    arrank_campaign_free(c);

    /* a declared basis that contradicts the unit */
    b.meta = "# basis = site\n";
    a.meta = NULL;
    const data *dts2[2] = {&a, &b};
    c = campaign_of(2, dts2, ids, ru);
    assert_true(arrank_diagnose_basis(c, &c->samples[1], why, sizeof why));
    assert_non_null(strstr(why, "does not match"));
    assert_false(arrank_diagnose_basis(c, &c->samples[0], why, sizeof why));
    arrank_campaign_free(c);
}

/*
 * The campaign-wide basis check compares every sample's declared basis with
 * the first one's, after the aliases, case and blanks: the same words,
 * another wording of the same basis and a real mix.
 */
static void test_campaign_basis_words(void **state)
{
    (void)state;
    static const struct {
        const char *meta[4]; /* "basis" metadata of each sample; NULL: none */
        int mixed;
        const char *why; /* part of the reason, when mixed */
    } cases[] = {
        {{"mass", "mass", "mass", "mass"}, 0, NULL},
        {{"mass", "Mass", "catalyst_mass", "per_mass"}, 0, NULL},
        {{"catalyst_mass", "mass", "catalyst_mass", "MASS"}, 0, NULL},
        {{NULL, "mass", "metal", "area"}, 0, NULL}, /* the first declares nothing */
        {{"mass", NULL, "mass", NULL}, 0, NULL},
        {{"mass", "mass", "metal_mass", "mass"}, 1,
         "'Cu-1' declares basis 'mass' and 'Cu-3' declares 'metal_mass'"},
        {{"surface", "bet_area", "area", "per_site"}, 1,
         "'Cu-1' declares basis 'area' and 'Cu-4' declares 'site'"},
    };
    const char *ids[4] = {"Cu-1", "Cu-2", "Cu-3", "Cu-4"};
    const char *ru[4] = {"umol/(g*s)", "umol/(g*s)", "umol/(g*s)", "umol/(g*s)"};
    for (size_t k = 0; k < sizeof cases / sizeof *cases; k++) {
        data d[4] = {{0}};
        char meta[4][64];
        const data *dts[4];
        for (size_t i = 0; i < 4; i++) {
            temps(&d[i], 5, 500.0, 540.0);
            for (size_t j = 0; j < 5; j++)
                d[i].rate[j] = k_kin(d[i].T_K[j], 90000.0 - 1000.0 * (double)i, 1.0, 515.0);
            if (cases[k].meta[i]) {
                snprintf(meta[i], sizeof meta[i], "# basis = %s\n", cases[k].meta[i]);
                d[i].meta = meta[i];
            }
            dts[i] = &d[i];
        }
        arrank_campaign *c = campaign_of(4, dts, ids, ru);
        char why[256];
        assert_int_equal(arrank_diagnose_campaign_basis(c, why, sizeof why), cases[k].mixed);
        if (cases[k].mixed)
            assert_non_null(strstr(why, cases[k].why));
        else
            assert_string_equal(why, "");
        arrank_campaign_free(c);
    }
}

static void test_json_shape(void **state)
{
    (void)state;
    data dt = {0};
    temps(&dt, 12, 450.0, 630.0);
    pore_data(&dt, 112400.0, 1.0, 523.0, 0.0, NULL);
    arrank_options opt = arrank_options_defaults();
    one o = run_one(&dt, &opt);
    json_t *j = arrank_diagnosis_json(o.res);
    assert_non_null(j);
    json_t *reg = json_object_get(j, "regime");
    assert_int_equal(json_array_size(reg), 12);
    assert_string_equal(json_string_value(json_array_get(reg, 0)), "kinetic");
    assert_string_equal(json_string_value(json_array_get(reg, 11)), "pore_diffusion");
    json_t *ex = json_object_get(j, "excluded");
    assert_true(json_array_size(ex) >= 1);
    assert_int_equal(json_array_size(ex), 12 - o.res->n_used);
    json_t *e0 = json_array_get(ex, json_array_size(ex) - 1);
    assert_int_equal(json_integer_value(json_object_get(e0, "line")),
                     o.c->samples[0].points[11].line);
    assert_true(fabs(json_real_value(json_object_get(e0, "temp_K")) - 630.0) < 1e-9);
    assert_true(json_is_string(json_object_get(e0, "reason")));
    json_t *cv = json_object_get(j, "curvature");
    assert_string_equal(json_string_value(json_object_get(cv, "verdict")), "detected");
    assert_string_equal(json_string_value(json_object_get(cv, "direction")), "concave-down");
    assert_true(json_is_object(json_object_get(cv, "quadratic")));
    assert_true(json_is_object(json_object_get(cv, "series_resistance")));
    assert_true(json_is_array(json_object_get(cv, "local_ea")));
    assert_true(json_is_object(json_object_get(j, "criteria")));
    assert_true(json_is_object(json_object_get(j, "quality")));
    char *text = json_dumps(j, JSON_COMPACT);
    assert_non_null(text);
    free(text);
    json_decref(j);
    one_free(&o);
}

/* ---- the series profile against the general engine ------------------------------ */

/*
 * diagnose.c profiles the series-resistance model over ln k_t with its own
 * 2x2 solver and then fits all three parameters with its own 3x3 solver;
 * before, each grid point and the full fit were arrank_nlfit_run.  The old
 * way is kept behind a test switch (arrank_series_reference,
 * src/lib/series_testing.h), and here both run on the same data and must report
 * the same series Ea, its standard error, ln k_t, rss_series, F, p and AICc
 * to a relative 1e-6 (a claim about the optimum found, not about rounding:
 * most differences seen are below 1e-8; the largest, 7e-7 in ln k_t, comes
 * from the three-parameter fits stopping along a flat valley, with residual
 * sums equal to 1e-14), with the full
 * three-parameter fit (which gives the reported numbers) and without it
 * (arrank_series_full_fit(0): the profile's best grid point is
 * reported, as when that fit fails).  A set that differs fails with both
 * residual sums in the message, so the better optimum can be seen.
 */
#define PROFILE_REL_TOL 1e-6

typedef struct {
    size_t compared;     /* samples with a series profile */
    size_t bits_differ;  /* ... whose numbers differ in some bit between the two ways */
    double worst[7];     /* worst relative difference per field */
} profile_tally;

static const char *const profile_fields[7] = {"series Ea", "its se", "ln k_t", "rss_series",
                                              "F",         "p",      "AICc"};

/* |a - b| / max(|a|, |b|); 0 for two NANs or two equal values (infinities too). */
static double rel_diff(double a, double b)
{
    if ((isnan(a) && isnan(b)) || a == b)
        return 0.0;
    if (isnan(a) || isnan(b))
        return INFINITY;
    return fabs(a - b) / fmax(fabs(a), fabs(b));
}

static void same_series(const arrank_curvature *fast, const arrank_curvature *ref,
                        const char *where, profile_tally *t)
{
    if (fast->series_fitted != ref->series_fitted)
        fail_msg("%s: series_fitted %d with the 2x2 solver, %d with the reference", where,
                 fast->series_fitted, ref->series_fitted);
    if (isnan(fast->rss_series) && isnan(ref->rss_series))
        return; /* no profile: the plot does not bend down */
    const double v[7][2] = {{fast->series_ea_J_mol, ref->series_ea_J_mol},
                            {fast->series_ea_se_J_mol, ref->series_ea_se_J_mol},
                            {fast->series_ln_kt, ref->series_ln_kt},
                            {fast->rss_series, ref->rss_series},
                            {fast->series_F, ref->series_F},
                            {fast->series_p, ref->series_p},
                            {fast->aicc_series, ref->aicc_series}};
    int differ = 0;
    for (size_t k = 0; k < 7; k++) {
        const double d = rel_diff(v[k][0], v[k][1]);
        if (!(d <= PROFILE_REL_TOL))
            fail_msg("%s: %s %.17g with the 2x2 solver, %.17g with the reference (relative "
                     "%.3g > %g); rss_series %.17g and %.17g",
                     where, profile_fields[k], v[k][0], v[k][1], d, PROFILE_REL_TOL,
                     fast->rss_series, ref->rss_series);
        t->worst[k] = fmax(t->worst[k], d);
        differ |= memcmp(&v[k][0], &v[k][1], sizeof(double)) != 0;
    }
    t->compared++;
    t->bits_differ += differ;
}

/* Analyse c with each profile, with the full fit on or off, and compare
   every sample. */
static void both_profiles(const arrank_campaign *c, int full_fit, const char *label,
                          profile_tally *t)
{
    arrank_options opt = arrank_options_defaults();
    arrank_series_full_fit(full_fit);
    arrank_series_reference(0);
    arrank_analysis *fast = analyse(c, &opt);
    arrank_series_reference(1);
    arrank_analysis *ref = analyse(c, &opt);
    arrank_series_reference(0);
    arrank_series_full_fit(1);
    assert_int_equal(fast->n_results, ref->n_results);
    for (size_t i = 0; i < fast->n_results; i++) {
        const arrank_result *a = &fast->results[i], *b = &ref->results[i];
        char where[160];
        snprintf(where, sizeof where, "%s, sample '%s', full fit %s", label, a->sample->id,
                 full_fit ? "on" : "off");
        if (a->flags != b->flags)
            fail_msg("%s: flags %#lx with the 2x2 solver, %#lx with the reference", where,
                     (unsigned long)a->flags, (unsigned long)b->flags);
        assert_true((a->diagnosis == NULL) == (b->diagnosis == NULL));
        if (a->diagnosis)
            same_series(&a->diagnosis->curvature, &b->diagnosis->curvature, where, t);
    }
    arrank_analysis_free(fast);
    arrank_analysis_free(ref);
}

static void print_tally(const char *label, size_t sets, const profile_tally *t)
{
    printf("# %s: %zu of %zu with a series profile (%zu differ in some bit); worst relative "
           "difference:",
           label, t->compared, sets, t->bits_differ);
    for (size_t k = 0; k < 7; k++)
        printf(" %s %.2g%s", profile_fields[k], t->worst[k], k < 6 ? "," : "\n");
}

/* The demo's pore-limited extrudate (and every other demo sample). */
static void test_series_profile_demo(void **state)
{
    (void)state;
    arrank_campaign *c = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load("campaigns/zeolite-ni-screen", units, &c, &err),
                     ARRANK_OK);
    for (int full_fit = 1; full_fit >= 0; full_fit--) {
        profile_tally t = {0};
        both_profiles(c, full_fit, "demo", &t);
        print_tally(full_fit ? "demo, full fit" : "demo, profile only", c->n_samples, &t);
        assert_true(t.compared >= 1);
    }
    /* ZN-12 is the sample whose plot bends: it must have been profiled */
    arrank_options opt = arrank_options_defaults();
    arrank_analysis *a = analyse(c, &opt);
    int zn12 = 0;
    for (size_t i = 0; i < a->n_results; i++)
        if (strncmp(a->results[i].sample->id, "ZN-12", 5) == 0) {
            assert_non_null(a->results[i].diagnosis);
            assert_true(a->results[i].diagnosis->curvature.series_fitted);
            zn12 = 1;
        }
    assert_true(zn12);
    arrank_analysis_free(a);
    arrank_campaign_free(c);
}

/* Simulated bent data sets: film control (a transport conductance
   k_t (T/T_x)^m in series with the kinetics, crossing it at T_x) or pore
   diffusion in a sphere (Thiele modulus phi_hot at the hottest point), with
   lognormal scatter; with rate_sd, each point's sd is its own scatter. */
typedef enum { SIM_FILM, SIM_PORE } sim_kind;

typedef struct {
    const char *id;
    sim_kind kind;
    size_t n_lo, n_hi;         /* points per set, drawn uniformly */
    double sigma_lo, sigma_hi; /* scatter of ln r, drawn uniformly per set */
    int with_sd;               /* every point carries rate_sd: weighted fits */
    size_t sets;
    unsigned long seed;
    size_t min_compared; /* sets that must bend down enough to be profiled */
} profile_case;

static const profile_case profile_cases[] = {
    {"film, unweighted", SIM_FILM, 6, 20, 0.004, 0.045, 0, 70, 914271, 50},
    {"film, rate_sd", SIM_FILM, 6, 20, 0.004, 0.045, 1, 70, 3318807, 50},
    {"pore, unweighted", SIM_PORE, 6, 20, 0.004, 0.045, 0, 70, 5550143, 50},
    {"pore, rate_sd", SIM_PORE, 6, 20, 0.004, 0.045, 1, 70, 7071937, 50},
    {"film, 6-8 points, low scatter", SIM_FILM, 6, 8, 0.0007, 0.008, 0, 40, 260417, 25},
    {"pore, 16-20 points, high scatter", SIM_PORE, 16, 20, 0.03, 0.08, 1, 40, 1190623, 25},
};

static void simulate_bent(const profile_case *pc, gsl_rng *rng, data *dt, double *sd)
{
    const size_t n = pc->n_lo + gsl_rng_uniform_int(rng, pc->n_hi - pc->n_lo + 1);
    const double lo_K = 430.0 + 70.0 * gsl_rng_uniform(rng);
    const double span_K = 90.0 + 110.0 * gsl_rng_uniform(rng);
    const double ea = 60000.0 + 90000.0 * gsl_rng_uniform(rng);
    const double sigma = pc->sigma_lo + (pc->sigma_hi - pc->sigma_lo) * gsl_rng_uniform(rng);
    memset(dt, 0, sizeof *dt);
    temps(dt, n, lo_K, lo_K + span_K);
    /* +/- 0.8 K off the set points: apart by more than SAME_TEMP_K still */
    for (size_t i = 0; i < n; i++)
        dt->T_K[i] += 1.6 * (gsl_rng_uniform(rng) - 0.5);
    if (pc->kind == SIM_PORE) {
        const double phi_hot = pow(10.0, 0.4 + 1.1 * gsl_rng_uniform(rng));
        pore_data(dt, ea, phi_hot, dt->T_K[n - 1], 0.0, NULL);
    } else {
        const double T_x = lo_K + span_K * (0.45 + 0.45 * gsl_rng_uniform(rng));
        const double m = 0.5 + 1.25 * gsl_rng_uniform(rng);
        const double T_mid = lo_K + 0.5 * span_K, kt_x = k_kin(T_x, ea, 1.7, T_mid);
        for (size_t i = 0; i < n; i++) {
            const double T = dt->T_K[i];
            dt->rate[i] = 1.0 / (1.0 / k_kin(T, ea, 1.7, T_mid) + 1.0 / (kt_x * pow(T / T_x, m)));
        }
    }
    for (size_t i = 0; i < n; i++) {
        const double s = pc->with_sd ? sigma * (0.5 + gsl_rng_uniform(rng)) : sigma;
        dt->rate[i] *= exp(gsl_ran_gaussian(rng, s));
        sd[i] = pc->with_sd ? s * dt->rate[i] : NAN;
    }
}

static void test_series_profile_simulated(void **state)
{
    (void)state;
    size_t total = 0, bits_differ = 0;
    for (size_t ci = 0; ci < sizeof profile_cases / sizeof profile_cases[0]; ci++) {
        const profile_case *pc = &profile_cases[ci];
        gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
        assert_non_null(rng);
        gsl_rng_set(rng, pc->seed);
        profile_tally full = {0}, grid = {0};
        for (size_t k = 0; k < pc->sets; k++) {
            data dt;
            double sd[64];
            simulate_bent(pc, rng, &dt, sd);
            const data *dts[1] = {&dt};
            const char *ids[1] = {"Merlin-3"};
            const char *ru[1] = {"umol/(g*s)"};
            arrank_campaign *c = campaign_of(1, dts, ids, ru);
            for (size_t i = 0; pc->with_sd && i < dt.n; i++)
                c->samples[0].points[i].rate_sd = sd[i];
            char label[96];
            snprintf(label, sizeof label, "%s, set %zu (seed %lu)", pc->id, k, pc->seed);
            both_profiles(c, 1, label, &full);
            both_profiles(c, 0, label, &grid);
            arrank_campaign_free(c);
        }
        gsl_rng_free(rng);
        char label[96];
        snprintf(label, sizeof label, "%s, full fit", pc->id);
        print_tally(label, pc->sets, &full);
        snprintf(label, sizeof label, "%s, profile only", pc->id);
        print_tally(label, pc->sets, &grid);
        assert_true(full.compared >= pc->min_compared);
        assert_int_equal(full.compared, grid.compared);
        total += full.compared;
        bits_differ += full.bits_differ + grid.bits_differ;
    }
    /* the switch really changes the path: the two solvers do not agree to the bit */
    assert_true(bits_differ > 0);
    printf("# %zu simulated sets compared\n", total);
}

/* One large sample (1,500 points, a logging rig's record) through both
   profiles: the 2x2 solver's scratch grows with the sample. */
static void test_series_profile_large(void **state)
{
    (void)state;
    const size_t n = 1500;
    const double ea = 97300.0, lo_K = 455.0, hi_K = 615.0, T_x = 575.0;
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    assert_non_null(rng);
    gsl_rng_set(rng, 4407713);
    size_t cap = 128 + n * 64;
    char *text = malloc(cap);
    assert_non_null(text);
    size_t len = (size_t)snprintf(text, cap, "# sample = Harrier-9\n"
                                             "T [K], rate [umol/(g*s)], rate_sd [umol/(g*s)]\n");
    const double kt_x = k_kin(T_x, ea, 0.93, 530.0);
    for (size_t i = 0; i < n; i++) {
        const double T = lo_K + (hi_K - lo_K) * (double)i / (double)(n - 1);
        const double r = 1.0 / (1.0 / k_kin(T, ea, 0.93, 530.0) + 1.0 / (kt_x * pow(T / T_x, 0.8)));
        const double s = 0.02 * (0.5 + gsl_rng_uniform(rng));
        const double rm = r * exp(gsl_ran_gaussian(rng, s));
        len += (size_t)snprintf(text + len, cap - len, "%.4f, %.10g, %.6g\n", T, rm, s * rm);
    }
    gsl_rng_free(rng);
    arrank_campaign *c = calloc(1, sizeof *c);
    assert_non_null(c);
    c->path = xstrdup("memory");
    c->name = xstrdup("memory");
    c->title = xstrdup("memory");
    c->operating_temp_K = NAN;
    c->confidence = NAN;
    c->samples = calloc(1, sizeof *c->samples);
    assert_non_null(c->samples);
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_sample_parse("Harrier-9.csv", text, len, units, NULL, &c->samples[0],
                                         &err),
                     ARRANK_OK);
    free(text);
    c->n_samples = 1;
    c->rate_unit = xstrdup("umol/(g*s)");
    c->basis = c->samples[0].basis;
    for (int full_fit = 1; full_fit >= 0; full_fit--) {
        profile_tally t = {0};
        both_profiles(c, full_fit, "1,500 points", &t);
        print_tally(full_fit ? "1,500 points, full fit" : "1,500 points, profile only", 1, &t);
        assert_int_equal(t.compared, 1);
    }
    arrank_campaign_free(c);
}

/* ---- straight lines in closed form against the general QR path ------------ */

/*
 * The diagnostics fit most of their straight lines (local windows, the
 * kinetic window, outliers, the line on every point) in closed form
 * (fit_line_direct in diagnose.c); the general QR path they share with the
 * quadratic test is kept behind arrank_regress_reference.  Both are
 * exact least squares, so they may differ only by rounding: every number of
 * the diagnosis must agree to relative 1e-8 and every string, flag and
 * decision exactly, on bent and straight simulated sets with and without
 * rate_sd.  The tolerance is ours: the worst seen, 5.9e-10, is the standard
 * error of a three-point window lying almost on a line, whose residual sum is
 * a small difference of rounded numbers in either path.
 */
typedef struct {
    size_t numbers, bits_differ;
    double worst;
    char worst_at[160];
} json_tally;

static void same_json(const json_t *a, const json_t *b, const char *where, json_tally *t)
{
    if (json_typeof(a) != json_typeof(b) && !(json_is_number(a) && json_is_number(b)))
        fail_msg("%s: JSON types differ", where);
    if (json_is_number(a)) {
        const double x = json_number_value(a), y = json_number_value(b);
        t->numbers++;
        if (memcmp(&x, &y, sizeof x) != 0)
            t->bits_differ++;
        const double d = fabs(x - y), scale = fmax(fabs(x), fabs(y));
        if (d > 0 && d / scale > t->worst) {
            t->worst = d / scale;
            snprintf(t->worst_at, sizeof t->worst_at, "%s", where);
        }
        if (d > 1e-8 * scale)
            fail_msg("%s: %.17g against %.17g", where, x, y);
    } else if (json_is_string(a)) {
        if (strcmp(json_string_value(a), json_string_value(b)) != 0)
            fail_msg("%s: '%s' against '%s'", where, json_string_value(a), json_string_value(b));
    } else if (json_is_array(a)) {
        if (json_array_size(a) != json_array_size(b))
            fail_msg("%s: arrays of %zu and %zu", where, json_array_size(a), json_array_size(b));
        for (size_t i = 0; i < json_array_size(a); i++)
            same_json(json_array_get(a, i), json_array_get(b, i), where, t);
    } else if (json_is_object(a)) {
        const char *key;
        const json_t *va;
        if (json_object_size(a) != json_object_size(b))
            fail_msg("%s: objects of different sizes", where);
        json_object_foreach((json_t *)a, key, va) {
            const json_t *vb = json_object_get(b, key);
            if (!vb)
                fail_msg("%s: key '%s' missing", where, key);
            char sub[160];
            snprintf(sub, sizeof sub, "%.100s.%s", where, key);
            same_json(va, vb, sub, t);
        }
    } else if (!json_equal((json_t *)a, (json_t *)b)) {
        fail_msg("%s: values differ", where);
    }
}

static json_t *diagnosis_with(const arrank_campaign *c, int reference, unsigned *flags)
{
    arrank_options o = arrank_options_defaults();
    o.units = units;
    arrank_regress_reference(reference);
    arrank_analysis *a = analyse(c, &o);
    arrank_regress_reference(0);
    json_t *j = json_object();
    assert_non_null(j);
    json_object_set_new(j, "diagnosis", arrank_diagnosis_json(&a->results[0]));
    json_object_set_new(j, "ea", json_real(a->results[0].fit.ea_J_mol));
    json_object_set_new(j, "ln_A", json_real(a->results[0].fit.ln_A));
    json_object_set_new(j, "n_used", json_integer((json_int_t)a->results[0].n_used));
    *flags = a->results[0].flags;
    arrank_analysis_free(a);
    return j;
}

static void test_line_paths(void **state)
{
    (void)state;
    json_tally t = {0, 0, 0.0, ""};
    size_t sets = 0, curved = 0;
    for (size_t ci = 0; ci < sizeof profile_cases / sizeof profile_cases[0]; ci++) {
        const profile_case *pc = &profile_cases[ci];
        gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
        assert_non_null(rng);
        gsl_rng_set(rng, pc->seed + 17);
        for (size_t k = 0; k < 40; k++) {
            data dt;
            double sd[64];
            simulate_bent(pc, rng, &dt, sd);
            if (k % 2) /* every other set straight: the same temperatures, no bend */
                kinetic_data(&dt, 70000.0 + 1000.0 * (double)k, 0.03, rng);
            const data *dts[1] = {&dt};
            const char *ids[1] = {"Osprey-5"};
            const char *ru[1] = {"umol/(g*s)"};
            arrank_campaign *c = campaign_of(1, dts, ids, ru);
            for (size_t i = 0; pc->with_sd && i < dt.n; i++)
                c->samples[0].points[i].rate_sd = sd[i];
            unsigned f_fast, f_ref;
            json_t *fast = diagnosis_with(c, 0, &f_fast);
            json_t *ref = diagnosis_with(c, 1, &f_ref);
            char where[96];
            snprintf(where, sizeof where, "%s, set %zu", pc->id, k);
            if (f_fast != f_ref)
                fail_msg("%s: flags %#x against %#x", where, f_fast, f_ref);
            same_json(fast, ref, where, &t);
            curved += (f_fast & ARRANK_FLAG_CURVED) != 0;
            sets++;
            json_decref(fast);
            json_decref(ref);
            arrank_campaign_free(c);
        }
        gsl_rng_free(rng);
    }
    printf("# %zu sets (%zu curved), %zu numbers compared, %zu differ in the last bits, "
           "worst relative difference %.2g (%s)\n",
           sets, curved, t.numbers, t.bits_differ, t.worst, t.worst_at);
    assert_true(curved >= sets / 4);
    assert_true(t.numbers > 100 * sets);
    /* the switch really changes the path */
    assert_true(t.bits_differ > 0);
}


/*
 * When the points left after the proposed exclusions cannot be fitted, the
 * pipeline withdraws every proposal (arrank_diagnose_withdraw) and refits on
 * every point: here four of five points are above the conversion limit, so
 * one point would be left.
 */
static void test_withdraw(void **state)
{
    (void)state;
    data dt = {0};
    temps(&dt, 5, 480.0, 540.0);
    dt.with_conv = 1;
    for (size_t i = 0; i < dt.n; i++) {
        dt.rate[i] = k_kin(dt.T_K[i], 91000.0, 2.2, 515.0);
        dt.conv[i] = i == 0 ? 0.05 : 0.20;
    }
    arrank_options opt = arrank_options_defaults();
    one o = run_one(&dt, &opt);
    print_findings(o.res);
    assert_int_equal(o.d->n_high_conversion, 4);
    assert_true(o.res->flags & ARRANK_FLAG_HIGH_CONVERSION);
    assert_false(o.res->flags & ARRANK_FLAG_EXCLUDED);
    assert_int_equal(o.res->n_used, 5);
    assert_int_equal(o.res->fit.n, 5);
    for (size_t i = 0; i < 5; i++) {
        assert_true(o.res->used[i]);
        assert_int_equal(o.d->points[i].excluded, 0);
        assert_null(o.d->points[i].reason);
    }
    int noted = 0;
    for (size_t k = 0; k < o.d->n_notes; k++)
        noted |= strstr(o.d->notes[k], "cannot be fitted") != NULL &&
                 strstr(o.d->notes[k], "every point is kept") != NULL;
    assert_true(noted);
    assert_false(o.d->window_applied);
    one_free(&o);
}

/* ---- the stage on its own -------------------------------------------------------- */

/*
 * The diagnosis is a pure stage: arrank_diagnose_propose reads the sample,
 * its fit and its used points and changes none of them; the points it
 * proposes to leave out are those the pipeline leaves out; conclude on the
 * pipeline's final fit gives the pipeline's findings and notes, word for
 * word.  A bent sample (pore diffusion, as test_pore_sphere) so that there
 * is a window to propose.
 */
static void test_stage_pure(void **state)
{
    (void)state;
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 20240611);
    data dt = {0};
    temps(&dt, 12, 450.0, 630.0);
    pore_data(&dt, 112400.0, 1.0, 523.0, 0.015, rng);
    gsl_rng_free(rng);
    arrank_options opt = arrank_options_defaults();
    opt.units = units;
    one o = run_one(&dt, &opt);
    const arrank_sample *s = o.res->sample;
    const size_t np = s->n_points;

    /* the first fit, on every point, as the pipeline made it */
    double T[64], r[64];
    for (size_t i = 0; i < np; i++) {
        T[i] = s->points[i].temp_K;
        r[i] = s->points[i].rate;
    }
    arrank_arrhenius first, first_copy;
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_fit_arrhenius(T, r, NULL, np, &first, &err), ARRANK_OK);
    first_copy = first;
    unsigned char used[64], used_copy[64];
    memset(used, 1, np);
    memcpy(used_copy, used, np);
    arrank_diagnose_options dopt = arrank_diagnose_options_defaults();
    dopt.units = units;
    dopt.rate_unit = o.c->rate_unit;
    dopt.basis.known = 1;
    const arrank_diagnose_input in = {s, &first, used};
    arrank_diagnosis *d = NULL;
    assert_int_equal(arrank_diagnose_propose(&in, &dopt, &d, &err), ARRANK_OK);
    assert_non_null(d);
    assert_memory_equal(used, used_copy, np);
    assert_memory_equal(&first, &first_copy, sizeof first);
    size_t proposed = 0;
    for (size_t i = 0; i < np; i++) {
        assert_int_equal(d->points[i].excluded, !o.res->used[i]);
        proposed += d->points[i].excluded;
        if (d->points[i].excluded)
            assert_string_equal(d->points[i].reason, o.d->points[i].reason);
    }
    assert_true(proposed > 0);
    assert_true(d->window_proposed);
    /* the window's finding comes with the final fit, in conclude */
    assert_true(d->n_findings < o.d->n_findings);
    assert_int_equal(arrank_diagnose_conclude(d, &in, &o.res->fit, 1, &dopt, &err), ARRANK_OK);
    assert_int_equal(d->n_findings, o.d->n_findings);
    for (size_t k = 0; k < d->n_findings; k++)
        assert_string_equal(d->findings[k], o.d->findings[k]);
    assert_int_equal(d->n_notes, o.d->n_notes);
    for (size_t k = 0; k < d->n_notes; k++)
        assert_string_equal(d->notes[k], o.d->notes[k]);
    assert_true(d->window_applied);
    assert_true(d->window_lo_K == o.d->window_lo_K && d->window_hi_K == o.d->window_hi_K);
    arrank_diagnosis_free(d);
    one_free(&o);
}

/* ---- Student's t p-value (stats.c, GSL) against SciPy ---------------------- */

/*
 * The curvature, run and drift tests take their two-sided p from
 * arrank_stats_t_p (src/lib/stats.h), 2 gsl_cdf_tdist_Q(|t|, nu).  Reference:
 * SciPy 1.10, 2 scipy.stats.t.sf(t, nu), computed with Debian's
 * /usr/bin/python3 and written out with 17 digits.  Tolerance: relative 1e-13
 * for nu <= 30 (the worst seen, 6.4e-14, is at t = 4.4e150, nu = 2, where
 * GSL forms the incomplete beta's prefactor as an exponential of logarithms);
 * for nu > 30 GSL 2.7 (cdf/tdist.c) switches to series and a Cornish-Fisher
 * expansion that are off in the far tail: 2.8e-7 relative at t = 40.03,
 * nu = 199 and 1.1e-6 at t = 17.6045, nu = 31 (p = 1e-17), so 2e-6 there.
 */
typedef struct {
    double t, nu, p;
} t_case;

static const t_case t_scipy[] = {
    /* 2 * scipy.stats.t.sf(t, nu), SciPy 1.10 */
    {0, 7, 1},
    {0.4172936, 1, 0.74832816594515239},
    {37.90513, 1, 0.016791187367024212},
    {2.9178306, 2, 0.10012631306132948},
    {4.4e150, 2, 5.1652892561983471e-302},
    {3.1824463, 3, 0.050000000202831824},
    {2.5705818, 5, 0.050000002162253969},
    {1.8945786, 7, 0.10000000074834456},
    {2.2621572, 9, 0.049999996959741305},
    {48.61937, 9, 3.302441803134559e-12},
    {17.30228, 12, 7.5170331642311935e-10},
    {8.3124, 29, 3.657794593922974e-09},
    {4.9133, 31, 2.7532628819923713e-05},
    {17.6045, 31, 1.0769009910998394e-17},
    {3.71946, 44, 0.00056238700215645147},
    {12.517, 120, 1.6401980546318196e-23},
    {40.03, 199, 3.7998666558649763e-97},
    {1.9601, 201, 0.051366143451544999},
};

static void test_t_p_scipy(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof t_scipy / sizeof t_scipy[0]; k++) {
        const t_case *c = &t_scipy[k];
        const double tol = c->nu <= 30 ? 1e-13 : 2e-6;
        for (int sign = -1; sign <= 1; sign += 2) {
            const double p = arrank_stats_t_p(sign * c->t, c->nu), d = rel_diff(p, c->p);
            if (!(d <= tol))
                fail_msg("t = %g, nu = %g: p %.17g, SciPy %.17g (relative %.3g > %g)",
                         sign * c->t, c->nu, p, c->p, d, tol);
        }
    }
    /* the edges: infinite and NAN t */
    assert_true(arrank_stats_t_p(INFINITY, 9) == 0.0);
    assert_true(arrank_stats_t_p(-INFINITY, 2) == 0.0);
    assert_true(isnan(arrank_stats_t_p(NAN, 9)));
}

int main(void)
{
    gsl_set_error_handler_off();
    arrank_error err;
    arrank_error_clear(&err);
    units = arrank_units_create(&err);
    if (!units) {
        printf("not ok 1 - udunits: %s\n", err.message);
        return 1;
    }
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_pore_sphere),
        cmocka_unit_test(test_use_all),
        cmocka_unit_test(test_film),
        cmocka_unit_test(test_causes_film_and_pore),
        cmocka_unit_test(test_false_alarm_and_power),
        cmocka_unit_test(test_window_coverage),
        cmocka_unit_test(test_weisz_prater_mears),
        cmocka_unit_test(test_deactivation_pair),
        cmocka_unit_test(test_repeats_and_drift),
        cmocka_unit_test(test_conversion),
        cmocka_unit_test(test_outlier),
        cmocka_unit_test(test_concave_up),
        cmocka_unit_test(test_few_points),
        cmocka_unit_test(test_mixed_basis),
        cmocka_unit_test(test_campaign_basis_words),
        cmocka_unit_test(test_json_shape),
        cmocka_unit_test(test_series_profile_demo),
        cmocka_unit_test(test_series_profile_simulated),
        cmocka_unit_test(test_series_profile_large),
        cmocka_unit_test(test_line_paths),
        cmocka_unit_test(test_withdraw),
        cmocka_unit_test(test_stage_pure),
        cmocka_unit_test(test_t_p_scipy),
    };
    int rc = cmocka_run_group_tests_name("diagnose", tests, NULL, NULL);
    arrank_units_free(units);
    return rc;
}
