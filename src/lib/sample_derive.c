/*
 * sample_derive.c - rates of a sample file without a rate column, from its
 * conversion column and its feed metadata (README "Rates from conversion"),
 * part of the sample module (sample.c reads the file; the campaign reader
 * calls arrank_sample_derive_rates once campaign.ini's keys are in).
 */
#include "arrank/rates.h"
#include "arrank/sample.h"
#include "number.h"
#include "sample_internal.h"
#include "util.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* The molar gas constant, J/(mol K): CODATA 2018, exact since the 2019 SI
   (the value of ARRANK_R_J_MOL_K in arrank/fit.h, a higher layer). */
#define GAS_CONSTANT_J_MOL_K 8.31446261815324

/* The metadata entry of key that counts (the last), or NULL. */
static const arrank_meta *meta_entry(const arrank_sample *s, const char *key)
{
    for (size_t i = s->n_meta; i-- > 0;)
        if (arrank_ascii_casecmp(s->meta[i].key, key) == 0)
            return &s->meta[i];
    return NULL;
}

/* Metadata value, as a quantity converted to si_unit; 1 when present and valid,
   0 when absent, -1 (err filled) when present but not a quantity of that kind. */
static int meta_quantity(arrank_sample *s, arrank_units *units, const char *key,
                         const char *si_unit, double *value, arrank_error *err)
{
    const char *text = arrank_sample_meta(s, key);
    if (!text)
        return 0;
    arrank_error qe;
    arrank_error_clear(&qe);
    if (arrank_units_parse_quantity(units, text, si_unit, value, &qe) != ARRANK_OK ||
        !isfinite(*value)) {
        const arrank_meta *m = meta_entry(s, key);
        arrank_error_at(err, ARRANK_EPARSE, m ? m->source : s->path, m ? m->line : 0, 0,
                        "%s '%s' is not a quantity in %s: %s", key, text, si_unit, qe.message);
        return -1;
    }
    return 1;
}

/* Derive step 1: feed_flow as a molar flow, mol/s: given as an amount per
   time, or as a volume per time at flow_reference_temperature and
   flow_reference_pressure (default 273.15 K and 101.325 kPa, the usual
   "standard" volume; common practice) through the ideal gas law.  *got is 1
   when present, 0 when absent. */
static arrank_status feed_flow(arrank_sample *s, arrank_units *units, double *flow, int *got,
                               arrank_error *err)
{
    *got = meta_quantity(s, units, "feed_flow", "mol/s", flow, err);
    if (*got >= 0)
        return ARRANK_OK;
    *got = 1;
    /* not an amount per time: a volume per time at reference conditions */
    double vol = NAN, T_ref = 273.15, P_ref = 101325.0;
    arrank_error ignored;
    arrank_error_clear(&ignored);
    if (meta_quantity(s, units, "feed_flow", "m3/s", &vol, &ignored) != 1) {
        const char *text = arrank_sample_meta(s, "feed_flow");
        const arrank_meta *m = meta_entry(s, "feed_flow");
        return arrank_error_at(err, ARRANK_EUNIT, m ? m->source : s->path, m ? m->line : 0, 0,
                               "feed_flow '%s' is neither an amount nor a volume per time "
                               "(e.g. 2.5 umol/s or 50 mL/min)", text);
    }
    if (meta_quantity(s, units, "flow_reference_pressure", "Pa", &P_ref, err) < 0)
        return ARRANK_EPARSE;
    const char *tr = arrank_sample_meta(s, "flow_reference_temperature");
    arrank_error te;
    arrank_error_clear(&te);
    if (tr && arrank_units_parse_temperature(units, tr, &T_ref, &te) != ARRANK_OK) {
        /* the message of its own record: formatting err->message into itself overlaps */
        const arrank_meta *m = meta_entry(s, "flow_reference_temperature");
        return arrank_error_at(err, ARRANK_EPARSE, m ? m->source : s->path, m ? m->line : 0, 0,
                               "flow_reference_temperature '%s': %s", tr, te.message);
    }
    *flow = P_ref * vol / (GAS_CONSTANT_J_MOL_K * T_ref); /* ideal gas */
    return ARRANK_OK;
}

/* The feed metadata of a derived sample, in SI. */
typedef struct {
    double flow_mol_s, fraction, mass_kg;
    int integral; /* rate_form integral (1) or differential (0) */
} feed;

/* Derive step 2: the feed metadata, all present and valid. */
static arrank_status feed_metadata(arrank_sample *s, arrank_units *units, feed *f,
                                   arrank_error *err)
{
    const char *missing = NULL;
    int got = 0;
    arrank_status st = feed_flow(s, units, &f->flow_mol_s, &got, err);
    if (st != ARRANK_OK)
        return st;
    if (got == 0)
        missing = "feed_flow";
    int gf = meta_quantity(s, units, "feed_fraction", "1", &f->fraction, err);
    if (gf < 0)
        return ARRANK_EPARSE;
    if (gf == 0 && !missing)
        missing = "feed_fraction";
    int gm = meta_quantity(s, units, "mass", "kg", &f->mass_kg, err);
    if (gm == 0)
        gm = meta_quantity(s, units, "catalyst_mass", "kg", &f->mass_kg, err);
    if (gm < 0)
        return ARRANK_EPARSE;
    if (gm == 0 && !missing)
        missing = "mass";
    if (missing) /* at the header, whose 'conversion' column asks for it */
        return arrank_error_at(err, ARRANK_EPARSE, s->path, s->header_line, 0,
                               "no rate column, so the rates are derived from 'conversion', "
                               "but metadata '%s' is missing; add e.g. '# feed_flow = 50 "
                               "mL/min', '# feed_fraction = 5 %%' and '# mass = 50 mg'",
                               missing);
    /* a flow, fraction or mass of zero (or less) derives no rate: said at its line */
    static const char *const keys[] = {"feed_flow", "feed_fraction", "mass", "catalyst_mass"};
    const double values[] = {f->flow_mol_s, f->fraction, f->mass_kg, f->mass_kg};
    for (size_t k = 0; k < sizeof keys / sizeof keys[0]; k++) {
        const arrank_meta *m = meta_entry(s, keys[k]);
        if (!m || (k == 2 && gm == 0) || (k == 3 && meta_entry(s, "mass")))
            continue;
        if (!(values[k] > 0.0) || (k == 1 && values[k] > 1.0))
            return arrank_error_at(err, ARRANK_EPARSE, m->source, m->line, 0,
                                   "%s '%s' %s; rates from conversion need a positive value",
                                   m->key, m->value,
                                   k == 1 && values[k] > 1.0 ? "is above 1 (100 %)"
                                                             : "is not positive");
    }
    const char *form = arrank_sample_meta(s, "rate_form");
    f->integral = 0;
    if (form && arrank_ascii_casecmp(form, "integral") == 0)
        f->integral = 1;
    else if (form && arrank_ascii_casecmp(form, "differential") != 0)
        return arrank_error_at(err, ARRANK_EPARSE, meta_entry(s, "rate_form")->source,
                               meta_entry(s, "rate_form")->line, 0,
                               "rate_form '%s' is not known; use differential or integral",
                               form);
    return ARRANK_OK;
}

/* Derive step 3: the rate of every point, mol/(kg*s), into rate[n_points]. */
static arrank_status derived_rates(const arrank_sample *s, const feed *f, double *rate,
                                   arrank_error *err)
{
    size_t n = s->n_points;
    double *buf = malloc(4 * (n ? n : 1) * sizeof *buf);
    if (!buf)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    double *X = buf, *F = buf + n, *y = buf + 2 * n, *W = buf + 3 * n;
    for (size_t i = 0; i < n; i++) {
        X[i] = s->points[i].conversion;
        F[i] = f->flow_mol_s;
        y[i] = f->fraction;
        W[i] = f->mass_kg;
        if (X[i] >= 1.0) {
            long line = s->points[i].line;
            free(buf);
            return arrank_error_at(err, ARRANK_EPARSE, s->path, line, 0,
                                   "conversion 1 leaves no rate to derive; complete conversion "
                                   "is outside the differential and first-order forms");
        }
    }
    arrank_error de;
    arrank_error_clear(&de);
    arrank_status st = arrank_rates_derive(X, F, y, W, n, f->integral, rate, &de);
    free(buf);
    if (st == ARRANK_ENOMEM)
        return arrank_errorf(err, st, "out of memory");
    if (st != ARRANK_OK)
        return arrank_error_at(err, ARRANK_EPARSE, s->path, 0, 0, "%s", de.message);
    return ARRANK_OK;
}

/*
 * Rates of a sample without a rate column, from its conversion column and its
 * metadata (README "Rates from conversion"):
 *   feed_flow       total molar flow (amount/time), or volumetric flow
 *                   (volume/time) at reference conditions (feed_flow above);
 *   feed_fraction   mole fraction of the reactant in the feed (0.05 or 5 %);
 *   mass            catalyst mass;
 *   rate_form       differential (default): r = F y X / W, or integral
 *                   (first-order plug flow): r = F y ln(1/(1 - X)) / W.
 * The formulas are arrank_rates_derive's (rates.h).  Step 4 here:
 * the rates in the report unit, a problem for a rate of 0, the note.
 */
arrank_status arrank_sample_derive_with(arrank_sample *s, arrank_units *units,
                                        const arrank_conversion *to_report, int strict,
                                        arrank_error *err)
{
    feed f = {NAN, NAN, NAN, 0};
    arrank_status st = feed_metadata(s, units, &f, err);
    if (st != ARRANK_OK)
        return st;
    double *rate = malloc((s->n_points ? s->n_points : 1) * sizeof *rate);
    if (!rate)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    st = derived_rates(s, &f, rate, err);
    for (size_t i = 0; st == ARRANK_OK && i < s->n_points; i++) {
        arrank_point *pt = &s->points[i];
        pt->rate = to_report->scale * rate[i] + to_report->offset;
        if (pt->omitted)
            continue;
        if (!strict && !(pt->rate > 0.0)) {
            char x[48], msg[256];
            arrank_format_general(x, sizeof x, 6, pt->conversion); /* %g, in any locale */
            snprintf(msg, sizeof msg,
                     "conversion %s gives a rate of 0; a logarithm needs a positive rate", x);
            if (!(pt->omitted = strdup(msg)))
                st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            s->n_omitted++;
            continue;
        }
        if (!(pt->rate > 0.0) && !s->problem) {
            char x[48], msg[256];
            arrank_format_general(x, sizeof x, 6, pt->conversion); /* %g, in any locale */
            snprintf(msg, sizeof msg,
                     "conversion %s at line %ld gives a rate of 0; a logarithm needs a "
                     "positive rate",
                     x, pt->line);
            if (!(s->problem = strdup(msg)))
                st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            s->problem_line = pt->line;
        }
    }
    free(rate);
    if (st != ARRANK_OK)
        return st;
    char note[160];
    snprintf(note, sizeof note, "rates derived from conversion (%s form: r = F y %s / W)",
             f.integral ? "integral first-order" : "differential",
             f.integral ? "ln(1/(1-X))" : "X");
    size_t cap = s->n_notes;
    if (arrank_list_add(&s->notes, &s->n_notes, &cap, note) != 0 ||
        arrank_sample_fit_problem(s) != 0)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    return ARRANK_OK;
}

arrank_status arrank_sample_derive_rates(arrank_sample *sample, arrank_units *units,
                                         const char *report_unit, int strict, arrank_error *err)
{
    arrank_conversion conv = {1.0, 0.0};
    arrank_status st = ARRANK_OK;
    if (report_unit)
        st = arrank_units_conversion(units, ARRANK_SAMPLE_DERIVED_RATE_UNIT, report_unit, &conv,
                                     err);
    return st == ARRANK_OK ? arrank_sample_derive_with(sample, units, &conv, strict, err) : st;
}

