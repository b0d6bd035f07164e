/*
 * test_transport.c - the heat checks of the diagnosis (transport.c): Mears'
 * interphase and Anderson's intraparticle heat criteria, Prater's
 * temperature rise, the hot-spot caution with the feed's adiabatic rise,
 * the `heat` flag, the entries each check needs, and the units of the
 * metadata.
 *
 * External references, named beside each check: every expected number is
 * worked by hand in the comment beside it from the published definitions,
 *  - Mears, Ind. Eng. Chem. Process Des. Dev. 10:541 (1971), interphase
 *    heat: |dH| r_v R_p E / (h T_b^2 R) < 0.15, as tabulated by Madon &
 *    Boudart, Ind. Eng. Chem. Fundam. 21:438 (1982);
 *  - Anderson, Chem. Eng. Sci. 18:147 (1963), intraparticle heat:
 *    |dH| r_v R_p^2 / (lambda_e T_s) < 0.75 R T_s / E, same table;
 *  - Prater, Chem. Eng. Sci. 8:284 (1958): dT_max = (-dH) D_e C_s / lambda_e;
 *  - the adiabatic rise of the feed, (-dH) y_A0 X / c_p (an energy balance
 *    on the feed; common practice);
 * (tests/data/transport.md, section Heat), with R = 8.31446261815324
 * J/(mol K), exact in the 2019 SI (tests/data/constants.md).
 *
 * The rates are noise-free Arrhenius rates (Ea 95 kJ/mol), so the fitted Ea
 * is 95 kJ/mol to rounding (checked first) and the hand values hold.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>
#include <jansson.h>

#include "../src/lib/diagnosis_out.h"
#include "arrank/analysis.h"
#include "arrank/campaign.h"
#include "arrank/diagnose.h"
#include "arrank/diagnosis_out.h"
#include "arrank/fit.h"
#include "arrank/transport.h"
#include "arrank/units.h"
#include "helpers.h"

/* the hand calculations below: R (2019 SI, exact), E of the data */
#define GAS_R 8.31446261815324
#define EA_J_MOL 95000.0
#define TOL 1e-6 /* relative: the fitted Ea matches 95 kJ/mol to ~1e-9 */
#define HAND "hand calculation from the published definition (see the comment)"

/* ---- one sample through the pipeline ------------------------------------------- */

/* A sample's CSV text: metadata lines, then n points from 500 to 550 K with
   rate 3.7 umol/(g s) at 550 K and Ea 95 kJ/mol; a conversion column when
   conv is not NULL. */
static char *sample_text(const char *id, const char *meta, size_t n, const double *conv)
{
    size_t cap = 4096 + 128 * n;
    char *b = malloc(cap);
    assert_non_null(b);
    int k = snprintf(b, cap, "# sample = %s\n%sT [K], rate [umol/(g*s)]%s\n", id, meta,
                     conv ? ", conversion" : "");
    for (size_t i = 0; i < n; i++) {
        double T = 500.0 + 50.0 * (double)i / (double)(n - 1);
        double r = 3.7 * exp(-EA_J_MOL / GAS_R * (1.0 / T - 1.0 / 550.0));
        k += snprintf(b + k, cap - (size_t)k, "%.6f, %.12g", T, r);
        if (conv)
            k += snprintf(b + k, cap - (size_t)k, ", %.6f", conv[i]);
        k += snprintf(b + k, cap - (size_t)k, "\n");
    }
    return b;
}

typedef struct {
    arrank_campaign *c;
    arrank_analysis *a;
    const arrank_result *res;
    const arrank_diagnosis *d;
} one;

static one run(const char *id, const char *meta, size_t n, const double *conv, int use_all)
{
    one o;
    o.c = calloc(1, sizeof *o.c);
    assert_non_null(o.c);
    o.c->path = strdup("memory");
    o.c->name = strdup("memory");
    o.c->title = strdup("memory");
    o.c->rate_unit = strdup("umol/(g*s)");
    o.c->operating_temp_K = NAN;
    o.c->confidence = NAN;
    o.c->samples = calloc(1, sizeof *o.c->samples);
    assert_non_null(o.c->samples);
    char *text = sample_text(id, meta, n, conv);
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st = arrank_sample_parse("heat.csv", text, strlen(text), units, NULL,
                                           &o.c->samples[0], &err);
    if (st != ARRANK_OK)
        print_error("parse: %s\n", err.message);
    assert_int_equal(st, ARRANK_OK);
    free(text);
    o.c->n_samples = 1;
    o.c->basis = o.c->samples[0].basis;
    arrank_options opt = arrank_options_defaults();
    opt.units = units;
    opt.use_all = use_all;
    st = arrank_analysis_run(o.c, &opt, &o.a, &err);
    if (st != ARRANK_OK)
        print_error("analysis: %s\n", err.message);
    assert_int_equal(st, ARRANK_OK);
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

/* The check command's text of the sample (arrank_diagnosis_write_text). */
static char *check_text(const one *o)
{
    char *buf = NULL;
    size_t len = 0;
    FILE *m = open_memstream(&buf, &len);
    assert_non_null(m);
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_diagnosis_write_text(m, o->res, &err), ARRANK_OK);
    assert_int_equal(fclose(m), 0);
    return buf;
}

/* 1 when some string of v[n] contains every one of the NULL-ended parts. */
static int has_text(char *const *v, size_t n, const char *first, ...)
{
    for (size_t k = 0; k < n; k++) {
        va_list ap;
        va_start(ap, first);
        int all = 1;
        for (const char *p = first; p; p = va_arg(ap, const char *))
            all &= strstr(v[k], p) != NULL;
        va_end(ap);
        if (all)
            return 1;
    }
    return 0;
}

/* Particle and pellet as in every case below: 6 mm particles (R_p = 3e-3
   m), pellet density 1.25 g/cm3 = 1250 kg/m3, D_e 0.002 cm2/s = 2e-7
   m2/s, C_b 8.2 mol/m3. */
#define PELLET                                                                                     \
    "# particle_diameter = 6 mm\n# pellet_density = 1.25 g/cm3\n"                                 \
    "# effective_diffusivity = 0.002 cm2/s\n# bulk_concentration = 8.2 mol/m3\n"

/* ---- the published numbers -------------------------------------------------------- */

/*
 * Inputs shared by the hand calculations: |dH| = 120 kJ/mol = 1.2e5 J/mol;
 * rate 3.7 umol/(g s) = 3.7e-3 mol/(kg s) times 1250 kg/m3 -> r_v = 4.625
 * mol/(m3 s); R_p = 3e-3 m; E = 9.5e4 J/mol; T = 550 K, T^2 = 302500 K2.
 *
 * Mears interphase, h = 400 W/(m2 K):
 *   numerator   |dH| r_v R_p E = 1.2e5 * 4.625 * 3e-3 * 9.5e4 = 1.58175e8
 *   denominator h T^2 R = 400 * 302500 * 8.31446261815324 = 1.006049977e9
 *   value = 0.1572238 (above 0.15: fails)
 * h = 440 W/(m2 K): denominator 1.106654975e9, value = 0.1429307 (passes).
 *
 * Anderson intraparticle, lambda_e = 0.24 W/(m K):
 *   left  |dH| r_v R_p^2 / (lambda_e T_s) = 1.2e5 * 4.625 * 9e-6 / (0.24 * 550)
 *         = 4.995 / 132 = 0.03784091
 *   right 0.75 R T_s / E = 0.75 * 8.31446261815324 * 550 / 9.5e4 = 0.03610227
 *   left > right: fails; as one number, 0.75 * left / right = 0.7861190
 * lambda_e = 0.26 W/(m K): left = 4.995 / 143 = 0.03493007 < right: passes;
 *   0.75 * left / right = 0.7256483.
 *
 * Prater, lambda_e = 0.24 W/(m K), D_e = 2e-7 m2/s, C_s = 8.2 mol/m3:
 *   dT_max = 1.2e5 * 2e-7 * 8.2 / 0.24 = 0.1968 / 0.24 = 0.82 K;
 *   beta = 0.82 / 550 = 1.4909091e-3.
 *
 * Adiabatic rise, y_A0 = 0.05, X = 0.204, c_p = 30 J/(mol K):
 *   1.2e5 * 0.05 * 0.204 / 30 = 1224 / 30 = 40.8 K.
 */
static void test_formulas(void **state)
{
    (void)state;
    const double dh = -1.2e5, rv = 4.625, rp = 3e-3, T = 550.0;
    check_close(arrank_transport_heat_mears(dh, rv, rp, EA_J_MOL, 400.0, T), 0.1572238, 1e-6,
                "Mears interphase heat number, h = 400", "Mears 1971; " HAND);
    check_close(arrank_transport_heat_mears(dh, rv, rp, EA_J_MOL, 440.0, T), 0.1429307, 1e-6,
                "Mears interphase heat number, h = 440", "Mears 1971; " HAND);
    check_close(arrank_transport_heat_anderson(dh, rv, rp, EA_J_MOL, 0.24, T), 0.7861190, 1e-6,
                "Anderson number, lambda 0.24", "Anderson 1963; " HAND);
    check_close(arrank_transport_heat_anderson(dh, rv, rp, EA_J_MOL, 0.26, T), 0.7256483, 1e-6,
                "Anderson number, lambda 0.26", "Anderson 1963; " HAND);
    /* the sign of dH does not matter to either criterion */
    assert_true(arrank_transport_heat_mears(-dh, rv, rp, EA_J_MOL, 400.0, T) ==
                arrank_transport_heat_mears(dh, rv, rp, EA_J_MOL, 400.0, T));
    check_close(arrank_transport_prater_rise(dh, 2e-7, 8.2, 0.24), 0.82, 1e-12,
                "Prater rise", "Prater 1958; " HAND);
    /* endothermic: the centre is colder, the same 0.82 K */
    check_close(arrank_transport_prater_rise(-dh, 2e-7, 8.2, 0.24), -0.82, 1e-12,
                "Prater rise, endothermic", "Prater 1958; " HAND);
    check_close(arrank_transport_adiabatic_rise(dh, 0.05, 0.204, 30.0), 40.8, 1e-12,
                "adiabatic rise", "energy balance on the feed (common practice); " HAND);
    /* no heat of reaction, no heat effect: 0, which passes */
    assert_true(arrank_transport_heat_mears(0.0, rv, rp, EA_J_MOL, 400.0, T) == 0.0);
    /* bad input: NAN */
    assert_true(isnan(arrank_transport_heat_mears(NAN, rv, rp, EA_J_MOL, 400.0, T)));
    assert_true(isnan(arrank_transport_heat_mears(dh, rv, rp, EA_J_MOL, 0.0, T)));
    assert_true(isnan(arrank_transport_heat_anderson(dh, rv, rp, -EA_J_MOL, 0.24, T)));
    assert_true(isnan(arrank_transport_heat_anderson(dh, rv, 0.0, EA_J_MOL, 0.24, T)));
    assert_true(isnan(arrank_transport_prater_rise(dh, 2e-7, 8.2, 0.0)));
    assert_true(isnan(arrank_transport_adiabatic_rise(dh, 1.5, 0.204, 30.0)));
    assert_true(isnan(arrank_transport_adiabatic_rise(dh, 0.05, 0.204, 0.0)));
}

/* ---- the criteria from a sample's metadata ------------------------------------------ */

/* The fitted Ea is the one of the hand calculations, and every point is in
   the fit (the heat numbers are largest at the hottest point, 550 K). */
static void assert_plain_fit(const one *o)
{
    check_close(o->res->fit.ea_J_mol, EA_J_MOL, 1e-7, "fitted Ea of noise-free rates",
                "the data's own Ea");
    assert_int_equal(o->res->n_used, 6);
}

/* Just above the interphase limit (h = 400), just below Anderson's
   (lambda_e = 0.26): the interphase criterion fails, the flag is set; the
   hand values as in test_formulas. */
static void test_interphase_fails(void **state)
{
    (void)state;
    one o = run("Heron-3", PELLET "# reaction_enthalpy = -120 kJ/mol\n"
                                  "# heat_transfer_coefficient = 400 W/(m2*K)\n"
                                  "# pellet_conductivity = 0.26 W/(m*K)\n",
                6, NULL, 0);
    assert_plain_fit(&o);
    const arrank_heat_checks *h = &o.d->heat;
    assert_true(h->interphase.computed);
    check_close(h->interphase.value, 0.1572238, TOL, "interphase heat number", "Mears 1971; " HAND);
    check_close(h->interphase.threshold, 0.15, 0, "interphase limit",
                "Mears 1971 via Madon & Boudart 1982");
    check_close(h->interphase.temp_K, 550.0, 1e-9, "interphase worst point", HAND);
    assert_false(h->interphase.passes);
    assert_non_null(strstr(h->interphase.source, "Mears 1971"));
    assert_true(h->intraparticle.computed);
    check_close(h->intraparticle.value, 0.7256483, TOL, "Anderson number", "Anderson 1963; " HAND);
    check_close(h->intraparticle.threshold, 0.75, 0, "Anderson limit",
                "Anderson 1963 via Madon & Boudart 1982");
    assert_true(h->intraparticle.passes);
    assert_non_null(strstr(h->intraparticle.source, "Anderson 1963"));
    assert_true(o.res->flags & ARRANK_FLAG_HEAT);
    /* a finding for the failing criterion, a note for the passing one */
    assert_true(has_text(o.d->findings, o.d->n_findings, "Mears interphase heat number 0.157",
                         "above 0.15", "Mears 1971", NULL));
    assert_true(has_text(o.d->notes, o.d->n_notes, "Anderson intraparticle heat number 0.726",
                         "below 0.75", "Anderson 1963", NULL));
    /* Prater: lambda_e = 0.26 -> 0.1968 / 0.26 = 0.7569231 K, beta at 550 K
       = 1.3762238e-3 */
    assert_true(h->prater.computed);
    check_close(h->prater.rise_K, 0.7569231, TOL, "Prater rise", "Prater 1958; " HAND);
    check_close(h->prater.beta, 1.3762238e-3, TOL, "Prater beta", "Prater 1958; " HAND);
    /* and in the check command's text, with values, limits and sources */
    char *text = check_text(&o);
    assert_non_null(strstr(text, "problem: Mears interphase heat number 0.157 at 550.0 K is "
                                 "above 0.15 (Mears 1971 via Madon & Boudart 1982)"));
    assert_non_null(strstr(text, "note: Anderson intraparticle heat number 0.726 at 550.0 K is "
                                 "below 0.75 (Anderson 1963 via Madon & Boudart 1982)"));
    assert_non_null(strstr(text, "note: Prater temperature rise (Prater 1958): the pellet "
                                 "centre is at most 0.757 K hotter than its surface"));
    free(text);
    one_free(&o);
}

/* Just below the interphase limit (h = 440), just above Anderson's
   (lambda_e = 0.24): the intraparticle criterion fails, the flag is set. */
static void test_intraparticle_fails(void **state)
{
    (void)state;
    one o = run("Heron-4", PELLET "# reaction_enthalpy = -120 kJ/mol\n"
                                  "# heat_transfer_coefficient = 440 W/(m2*K)\n"
                                  "# pellet_conductivity = 0.24 W/(m*K)\n",
                6, NULL, 0);
    assert_plain_fit(&o);
    const arrank_heat_checks *h = &o.d->heat;
    check_close(h->interphase.value, 0.1429307, TOL, "interphase heat number", "Mears 1971; " HAND);
    assert_true(h->interphase.passes);
    check_close(h->intraparticle.value, 0.7861190, TOL, "Anderson number", "Anderson 1963; " HAND);
    assert_false(h->intraparticle.passes);
    check_close(h->prater.rise_K, 0.82, TOL, "Prater rise", "Prater 1958; " HAND);
    check_close(h->prater.beta, 1.4909091e-3, TOL, "Prater beta", "Prater 1958; " HAND);
    assert_true(o.res->flags & ARRANK_FLAG_HEAT);
    assert_true(has_text(o.d->findings, o.d->n_findings, "Anderson intraparticle heat number",
                         "above 0.75", NULL));
    /* the diagnosis JSON carries each criterion with value, limit and source */
    json_t *j = arrank_diagnosis_json(o.res);
    assert_non_null(j);
    json_t *cr = json_object_get(j, "criteria");
    json_t *ip = json_object_get(cr, "intraparticle_heat");
    check_close(json_real_value(json_object_get(ip, "value")), 0.7861190, TOL,
                "JSON intraparticle value", "Anderson 1963; " HAND);
    check_close(json_real_value(json_object_get(ip, "threshold")), 0.75, 0,
                "JSON intraparticle threshold", "Anderson 1963 via Madon & Boudart 1982");
    assert_non_null(strstr(json_string_value(json_object_get(ip, "threshold_source")),
                           "Anderson 1963"));
    assert_string_equal(json_string_value(json_object_get(ip, "verdict")),
                        "above threshold: may limit the rate");
    json_t *ie = json_object_get(cr, "interphase_heat");
    check_close(json_real_value(json_object_get(ie, "value")), 0.1429307, TOL,
                "JSON interphase value", "Mears 1971; " HAND);
    assert_true(json_is_true(json_object_get(ie, "computed")));
    json_t *pr = json_object_get(cr, "prater_rise");
    check_close(json_real_value(json_object_get(pr, "rise_K")), 0.82, TOL, "JSON Prater rise",
                "Prater 1958; " HAND);
    json_decref(j);
    one_free(&o);
}

/* Both below their limits: no flag; the same numbers with the entries in
   other units (J/mol, a radius in cm, mW/(cm K), W/(cm2 K)). */
static void test_both_pass_and_units(void **state)
{
    (void)state;
    one o = run("Heron-5", PELLET "# reaction_enthalpy = -120 kJ/mol\n"
                                  "# heat_transfer_coefficient = 440 W/(m2*K)\n"
                                  "# pellet_conductivity = 0.26 W/(m*K)\n",
                6, NULL, 0);
    assert_plain_fit(&o);
    assert_true(o.d->heat.interphase.passes && o.d->heat.intraparticle.passes);
    assert_false(o.res->flags & ARRANK_FLAG_HEAT);
    const double ip = o.d->heat.interphase.value, an = o.d->heat.intraparticle.value;
    const double rise = o.d->heat.prater.rise_K;
    one_free(&o);
    /* -120000 J/mol = -120 kJ/mol; particle_radius 0.3 cm = 3 mm = half of
       6 mm; 0.044 W/(cm2 K) = 440 W/(m2 K); 2.6 mW/(cm K) = 0.26 W/(m K);
       1250 kg/m3 = 1.25 g/cm3; 2e-7 m2/s = 0.002 cm2/s */
    o = run("Heron-5b", "# particle_radius = 0.3 cm\n# pellet_density = 1250 kg/m3\n"
                        "# effective_diffusivity = 2e-7 m2/s\n# bulk_concentration = 8.2 mol/m3\n"
                        "# reaction_enthalpy = -120000 J/mol\n"
                        "# heat_transfer_coefficient = 0.044 W/(cm2*K)\n"
                        "# pellet_conductivity = 2.6 mW/(cm*K)\n",
            6, NULL, 0);
    check_close(o.d->heat.interphase.value, ip, 1e-12, "interphase, other units", "unit algebra");
    check_close(o.d->heat.intraparticle.value, an, 1e-12, "Anderson, other units", "unit algebra");
    check_close(o.d->heat.prater.rise_K, rise, 1e-12, "Prater, other units", "unit algebra");
    check_close(o.d->heat.interphase.value, 0.1429307, TOL, "interphase, other units",
                "Mears 1971; " HAND);
    one_free(&o);
    /* a radius of 0.3 mm instead of 0.3 cm: the interphase number scales
       with R_p (x 0.1: 0.01429307), Anderson's with R_p^2 (x 0.01:
       0.007256483) */
    o = run("Heron-5c", "# particle_radius = 0.3 mm\n# pellet_density = 1250 kg/m3\n"
                        "# reaction_enthalpy = -120 kJ/mol\n"
                        "# heat_transfer_coefficient = 440 W/(m2*K)\n"
                        "# pellet_conductivity = 0.26 W/(m*K)\n",
            6, NULL, 0);
    check_close(o.d->heat.interphase.value, 0.01429307, TOL, "interphase, 0.3 mm",
                "Mears 1971; " HAND);
    check_close(o.d->heat.intraparticle.value, 0.007256483, TOL, "Anderson, 0.3 mm",
                "Anderson 1963; " HAND);
    one_free(&o);
    /* an enthalpy without a unit cannot be read: a note, and the criteria say
       what they need */
    o = run("Heron-5d", PELLET "# reaction_enthalpy = -120\n"
                               "# heat_transfer_coefficient = 440 W/(m2*K)\n",
            6, NULL, 0);
    assert_false(o.d->heat.interphase.computed);
    assert_true(has_text(o.d->notes, o.d->n_notes, "metadata 'reaction_enthalpy = -120' could "
                                                   "not be read", NULL));
    assert_string_equal(o.d->heat.interphase.detail, "not computed: needs reaction_enthalpy");
    assert_false(o.res->flags & ARRANK_FLAG_HEAT);
    one_free(&o);
}

/* ---- the entries each check needs ---------------------------------------------------- */

static void test_missing_entries(void **state)
{
    (void)state;
    /* only the particle and its density: each check names what it lacks, and
       only that */
    one o = run("Heron-6", "# particle_diameter = 6 mm\n# pellet_density = 1.25 g/cm3\n", 6,
                NULL, 0);
    const arrank_diagnosis *d = o.d;
    assert_string_equal(d->weisz_prater.detail,
                        "not computed: needs effective_diffusivity and bulk_concentration");
    assert_string_equal(d->mears.detail,
                        "not computed: needs film_coefficient and bulk_concentration");
    assert_string_equal(d->heat.interphase.detail,
                        "not computed: needs reaction_enthalpy and heat_transfer_coefficient");
    assert_string_equal(d->heat.intraparticle.detail,
                        "not computed: needs reaction_enthalpy and pellet_conductivity");
    assert_string_equal(d->heat.prater.detail,
                        "not computed: needs reaction_enthalpy, effective_diffusivity, "
                        "bulk_concentration and pellet_conductivity");
    assert_false(d->heat.interphase.computed || d->heat.intraparticle.computed ||
                 d->heat.prater.computed);
    assert_false(o.res->flags & ARRANK_FLAG_HEAT);
    char *text = check_text(&o);
    assert_non_null(strstr(text, "note: Mears number not computed: needs film_coefficient and "
                                 "bulk_concentration\n"));
    assert_non_null(strstr(text, "note: Mears interphase heat number not computed: needs "
                                 "reaction_enthalpy and heat_transfer_coefficient\n"));
    assert_non_null(strstr(text, "note: Anderson intraparticle heat number not computed: needs "
                                 "reaction_enthalpy and pellet_conductivity\n"));
    free(text);
    one_free(&o);

    /* only the enthalpy: one entry missing reads "needs X", the rest lists */
    o = run("Heron-7", PELLET "# reaction_enthalpy = -120 kJ/mol\n", 6, NULL, 0);
    assert_string_equal(o.d->mears.detail, "not computed: needs film_coefficient");
    assert_string_equal(o.d->heat.interphase.detail,
                        "not computed: needs heat_transfer_coefficient");
    assert_string_equal(o.d->heat.prater.detail, "not computed: needs pellet_conductivity");
    assert_true(o.d->weisz_prater.computed);
    one_free(&o);

    /* no transport or heat entry at all: nothing is said about them */
    o = run("Heron-8", "", 6, NULL, 0);
    assert_null(o.d->heat.interphase.detail);
    assert_null(o.d->heat.intraparticle.detail);
    assert_null(o.d->heat.prater.detail);
    assert_null(o.d->mears.detail);
    assert_false(has_text(o.d->notes, o.d->n_notes, "heat", NULL));
    one_free(&o);
}

/* ---- the hot-spot caution ------------------------------------------------------------ */

/* Conversion rising to 20.4 % at the hottest point (550 K), 14 % at 540 K:
   these two are above the 10 % limit and left out of the fit. */
static const double conv6[6] = {0.020, 0.031, 0.045, 0.064, 0.140, 0.204};

static void test_hot_spot(void **state)
{
    (void)state;
    one o = run("Heron-9", "# reaction_enthalpy = -120 kJ/mol\n# feed_fraction = 5 %\n"
                           "# feed_heat_capacity = 30 J/(mol*K)\n",
                6, conv6, 0);
    const arrank_hot_spot *hs = &o.d->heat.hot_spot;
    assert_true(hs->caution);
    check_close(hs->conversion_max, 0.204, 1e-12, "highest conversion", "the data");
    check_close(hs->temp_K, 550.0, 1e-9, "its temperature", "the data");
    check_close(hs->enthalpy_J_mol, -1.2e5, 1e-12, "enthalpy in J/mol", "unit algebra");
    /* 1.2e5 * 0.05 * 0.204 / 30 = 40.8 K */
    check_close(hs->adiabatic_rise_K, 40.8, 1e-9, "adiabatic rise",
                "energy balance on the feed (common practice); " HAND);
    assert_true(o.res->flags & ARRANK_FLAG_HIGH_CONVERSION);
    /* the caution names the sample, the conversion, and what to do */
    assert_true(has_text(o.d->findings, o.d->n_findings, "hot-spot caution for Heron-9",
                         "exothermic", "20.4 %", "550.0 K", "dilute the bed", "lower conversion",
                         "inside the bed", "40.8 K", NULL));
    char *text = check_text(&o);
    assert_non_null(strstr(text, "problem: hot-spot caution for Heron-9: "));
    free(text);
    json_t *j = arrank_diagnosis_json(o.res);
    json_t *h = json_object_get(json_object_get(j, "criteria"), "hot_spot");
    assert_true(json_is_true(json_object_get(h, "caution")));
    check_close(json_real_value(json_object_get(h, "adiabatic_rise_K")), 40.8, 1e-9,
                "JSON adiabatic rise", HAND);
    check_close(json_real_value(json_object_get(h, "reaction_enthalpy_kJ_mol")), -120.0, 1e-12,
                "JSON enthalpy", "unit algebra");
    json_decref(j);
    /* the caution alone does not set the heat flag (no heat criterion ran) */
    assert_false(o.res->flags & ARRANK_FLAG_HEAT);
    one_free(&o);

    /* without the feed's entries: the caution, and what the adiabatic rise
       would need */
    o = run("Heron-10", "# reaction_enthalpy = -120 kJ/mol\n# feed_fraction = 0.05\n", 6, conv6,
            0);
    assert_true(o.d->heat.hot_spot.caution);
    assert_true(isnan(o.d->heat.hot_spot.adiabatic_rise_K));
    assert_true(has_text(o.d->findings, o.d->n_findings, "hot-spot caution for Heron-10",
                         "adiabatic temperature rise not computed: needs feed_heat_capacity",
                         NULL));
    one_free(&o);

    /* endothermic: no caution; a note that the bed may be colder */
    o = run("Heron-11", "# reaction_enthalpy = 40 kJ/mol\n", 6, conv6, 0);
    assert_false(o.d->heat.hot_spot.caution);
    assert_false(has_text(o.d->findings, o.d->n_findings, "hot-spot", NULL));
    assert_true(has_text(o.d->notes, o.d->n_notes, "endothermic", "colder", NULL));
    one_free(&o);

    /* no enthalpy given: a note saying which entry would let it be checked */
    o = run("Heron-12", "", 6, conv6, 0);
    assert_false(o.d->heat.hot_spot.caution);
    assert_true(has_text(o.d->notes, o.d->n_notes, "hot spots not assessed",
                         "give reaction_enthalpy", NULL));
    one_free(&o);

    /* exothermic but every point below the limit: no caution */
    const double low[6] = {0.01, 0.015, 0.02, 0.03, 0.045, 0.06};
    o = run("Heron-13", "# reaction_enthalpy = -120 kJ/mol\n", 6, low, 0);
    assert_false(o.d->heat.hot_spot.caution);
    assert_false(has_text(o.d->findings, o.d->n_findings, "hot-spot", NULL));
    assert_false(has_text(o.d->notes, o.d->n_notes, "hot spots", NULL));
    one_free(&o);
}

/*
 * The heat criteria run on the points of the final fit only: with the two
 * hottest points above the conversion limit and left out, the largest
 * values come from the hottest point kept, 530 K, where the rate is
 * 3.7 exp(-95000/R (1/530 - 1/550)) = 3.7 exp(-0.7839364) = 1.6894387 umol/(g s)
 * -> r_v = 1.6894387e-3 * 1250 = 2.1117984 mol/(m3 s);
 * interphase (h = 440): 1.2e5 * 2.1117984 * 3e-3 * 9.5e4 / (440 * 530^2 *
 *   8.31446261815324) = 7.2223506e7 / 1.0276343e9 = 0.0702813;
 * Anderson (lambda_e = 0.26): left 1.2e5 * 2.1117984 * 9e-6 / (0.26 * 530)
 *   = 2.2807423 / 137.8 = 0.01655111, right 0.75 * 8.31446261815324 * 530 /
 *   9.5e4 = 0.03478946, 0.75 * left / right = 0.3568129.
 * With --use-all every point is in the fit and 550 K gives 0.1429307.
 */
static void test_used_points_only(void **state)
{
    (void)state;
    const char *meta = PELLET "# reaction_enthalpy = -120 kJ/mol\n"
                              "# heat_transfer_coefficient = 440 W/(m2*K)\n"
                              "# pellet_conductivity = 0.26 W/(m*K)\n";
    one o = run("Heron-14", meta, 6, conv6, 0);
    assert_int_equal(o.res->n_used, 4);
    check_close(o.d->heat.interphase.temp_K, 530.0, 1e-9, "hottest point kept", "the data");
    check_close(o.d->heat.interphase.value, 0.0702813, TOL, "interphase at 530 K",
                "Mears 1971; " HAND);
    check_close(o.d->heat.intraparticle.temp_K, 530.0, 1e-9, "hottest point kept", "the data");
    check_close(o.d->heat.intraparticle.value, 0.3568129, TOL, "Anderson at 530 K",
                "Anderson 1963; " HAND);
    one_free(&o);
    o = run("Heron-14", meta, 6, conv6, 1);
    assert_int_equal(o.res->n_used, 6);
    check_close(o.d->heat.interphase.temp_K, 550.0, 1e-9, "hottest point, every point used",
                "the data");
    check_close(o.d->heat.interphase.value, 0.1429307, TOL, "interphase at 550 K",
                "Mears 1971; " HAND);
    one_free(&o);
}

/* The flag's name and words. */
static void test_flag(void **state)
{
    (void)state;
    assert_string_equal(arrank_flag_name(ARRANK_FLAG_HEAT), "heat");
    assert_non_null(strstr(arrank_flag_words(ARRANK_FLAG_HEAT), "heat transfer may limit"));
    assert_true(ARRANK_FLAG_HEAT < (1u << ARRANK_FLAG_COUNT));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_formulas),
        cmocka_unit_test(test_interphase_fails),
        cmocka_unit_test(test_intraparticle_fails),
        cmocka_unit_test(test_both_pass_and_units),
        cmocka_unit_test(test_missing_entries),
        cmocka_unit_test(test_hot_spot),
        cmocka_unit_test(test_used_points_only),
        cmocka_unit_test(test_flag),
    };
    return cmocka_run_group_tests(tests, units_setup, units_teardown);
}
