/*
 * transport.c - the transport criteria of one sample (arrank/transport.h,
 * transport_internal.h): mass (Weisz-Prater, Mears) and heat (Mears'
 * interphase and Anderson's intraparticle criteria, Prater's temperature
 * rise, the hot-spot caution for an exothermic reaction at high
 * conversion).  The published numbers, and the sample's metadata (particle,
 * pellet, diffusivity, film and heat transfer coefficients, conductivity,
 * concentration, reaction enthalpy, feed) read through the unit database to
 * compute them; the heat checks in plain words.
 */
#include "arrank/transport.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>

#include "arrank/fit.h"
#include "transport_internal.h"
#include "util.h"

/* Weisz-Prater limits (eta >= 0.95) from Weisz & Prater (1954) and Weisz
   (1957) as tabulated by Madon & Boudart, Ind. Eng. Chem. Fundam. 21:438
   (1982): 6 for zero, 0.6 for first, 0.3 for second order.  With no order
   given we use 0.3, the general rule (Vannice, Kinetics of Catalytic
   Reactions, 2005). */
#define WP_LIMIT_ORDER0 6.0
#define WP_LIMIT_ORDER1 0.6
#define WP_LIMIT_ORDER2 0.3
#define WP_LIMIT_GENERAL 0.3
/* Mears criterion for external mass transfer, 5 % rate deviation (Mears 1971;
   the form credited to Hudgins 1972 in Madon & Boudart 1982). */
#define MEARS_LIMIT 0.15
/* Heat criteria, 5 % rate deviation, as tabulated by Madon & Boudart, Ind.
   Eng. Chem. Fundam. 21:438 (1982): Mears, Ind. Eng. Chem. Process Des.
   Dev. 10:541 (1971), interphase, |dH| r_v R_p E / (h T_b^2 R) < 0.15;
   Anderson, Chem. Eng. Sci. 18:147 (1963), intraparticle, |dH| r_v R_p^2 /
   (lambda_e T_s) < 0.75 R T_s / E. */
#define HEAT_MEARS_LIMIT 0.15
#define HEAT_ANDERSON_LIMIT 0.75

double arrank_transport_weisz_prater(double rate_mol_m3_s, double radius_m, double diff_m2_s,
                                     double conc_mol_m3)
{
    if (!(rate_mol_m3_s > 0 && radius_m > 0 && diff_m2_s > 0 && conc_mol_m3 > 0) ||
        !isfinite(rate_mol_m3_s * radius_m * diff_m2_s * conc_mol_m3))
        return NAN;
    return rate_mol_m3_s * radius_m * radius_m / (diff_m2_s * conc_mol_m3);
}

double arrank_transport_mears(double rate_mol_m3_s, double radius_m, double order, double film_m_s,
                              double conc_mol_m3)
{
    if (!(rate_mol_m3_s > 0 && radius_m > 0 && order > 0 && film_m_s > 0 && conc_mol_m3 > 0) ||
        !isfinite(rate_mol_m3_s * radius_m * order * film_m_s * conc_mol_m3))
        return NAN;
    return rate_mol_m3_s * radius_m * order / (film_m_s * conc_mol_m3);
}

/* 1 when dH is finite and the other five are finite and positive (the
   inputs of both heat numbers). */
static int heat_inputs_ok(double dh, double r, double rad, double ea, double k, double T)
{
    return isfinite(dh) && r > 0 && rad > 0 && ea > 0 && k > 0 && T > 0 &&
           isfinite(r * rad * ea * k * T);
}

double arrank_transport_heat_mears(double enthalpy_J_mol, double rate_mol_m3_s, double radius_m,
                                   double ea_J_mol, double h_W_m2_K, double temp_K)
{
    if (!heat_inputs_ok(enthalpy_J_mol, rate_mol_m3_s, radius_m, ea_J_mol, h_W_m2_K, temp_K))
        return NAN;
    /* Mears 1971 via Madon & Boudart 1982 */
    return fabs(enthalpy_J_mol) * rate_mol_m3_s * radius_m * ea_J_mol /
           (h_W_m2_K * temp_K * temp_K * ARRANK_R_J_MOL_K);
}

double arrank_transport_heat_anderson(double enthalpy_J_mol, double rate_mol_m3_s,
                                      double radius_m, double ea_J_mol, double lambda_W_m_K,
                                      double temp_K)
{
    if (!heat_inputs_ok(enthalpy_J_mol, rate_mol_m3_s, radius_m, ea_J_mol, lambda_W_m_K, temp_K))
        return NAN;
    /* Anderson 1963 via Madon & Boudart 1982, both sides divided by R T_s / E */
    return fabs(enthalpy_J_mol) * rate_mol_m3_s * radius_m * radius_m * ea_J_mol /
           (lambda_W_m_K * ARRANK_R_J_MOL_K * temp_K * temp_K);
}

double arrank_transport_prater_rise(double enthalpy_J_mol, double diff_m2_s, double conc_mol_m3,
                                    double lambda_W_m_K)
{
    if (!(isfinite(enthalpy_J_mol) && diff_m2_s > 0 && conc_mol_m3 > 0 && lambda_W_m_K > 0) ||
        !isfinite(diff_m2_s * conc_mol_m3 * lambda_W_m_K))
        return NAN;
    /* Prater 1958, centre concentration zero */
    return -enthalpy_J_mol * diff_m2_s * conc_mol_m3 / lambda_W_m_K;
}

double arrank_transport_adiabatic_rise(double enthalpy_J_mol, double fraction, double conversion,
                                       double cp_J_mol_K)
{
    if (!(isfinite(enthalpy_J_mol) && fraction > 0 && fraction <= 1 && conversion >= 0 &&
          conversion <= 1 && cp_J_mol_K > 0 && isfinite(cp_J_mol_K)))
        return NAN;
    /* energy balance on the feed (common practice) */
    return -enthalpy_J_mol * fraction * conversion / cp_J_mol_K;
}

/* The metadata the criteria read, in SI; NAN when absent or unreadable. */
typedef struct {
    double dp_m, rho_p, rho_bed, de, cb, kc, order;
    int have_order;
    double dh_J_mol;     /* reaction_enthalpy */
    double lambda_W_m_K; /* pellet_conductivity */
    double h_W_m2_K;     /* heat_transfer_coefficient */
    double cp_J_mol_K;   /* feed_heat_capacity */
    double y_feed;       /* feed_fraction */
} criteria_in;

/* The observed rates as rates per mass in SI: rate_si = scale * rate +
   offset; why is NULL when they are per mass, else why they cannot be. */
typedef struct {
    arrank_conversion to_si;
    const char *why;
} rate_si;

/* Parse one metadata quantity; NAN when absent; a note when unreadable. */
static double meta_quantity(arrank_dwork *wk, arrank_units *u, const char *key, const char *si)
{
    const char *v = arrank_sample_meta(wk->s, key);
    if (!v)
        return NAN;
    double out = NAN;
    arrank_error e;
    arrank_error_clear(&e);
    if (arrank_units_parse_quantity(u, v, si, &out, &e) != ARRANK_OK) {
        arrank_dwork_note(wk, "metadata '%s = %s' could not be read (%s); criteria that need it are skipped",
             key, v, e.message);
        return NAN;
    }
    return out;
}

/* One metadata entry a check needs, and whether it is there. */
typedef struct {
    const char *name;
    int have;
} entry;

/* "not computed: needs A, B and C", naming only the entries that are
   missing; NULL (no text) when none is. */
static char *needs_text(arrank_dwork *wk, const entry *e, size_t n)
{
    size_t miss[16], m = 0;
    for (size_t k = 0; k < n && m < sizeof miss / sizeof *miss; k++)
        if (!e[k].have)
            miss[m++] = k;
    if (m == 0)
        return NULL;
    char buf[512];
    size_t len = (size_t)snprintf(buf, sizeof buf, "not computed: needs ");
    for (size_t j = 0; j < m && len < sizeof buf; j++)
        len += (size_t)snprintf(buf + len, sizeof buf - len, "%s%s",
                                j == 0 ? "" : (j + 1 == m ? " and " : ", "), e[miss[j]].name);
    return arrank_dwork_fmt(wk, "%s", buf);
}

static const char *wp_source(double order, int have, double *limit)
{
    if (have && order == 0.0) {
        *limit = WP_LIMIT_ORDER0;
        return "Weisz & Prater 1954 / Weisz 1957 via Madon & Boudart 1982, zero order";
    }
    if (have && order == 1.0) {
        *limit = WP_LIMIT_ORDER1;
        return "Weisz & Prater 1954 / Weisz 1957 via Madon & Boudart 1982, first order";
    }
    if (have && order == 2.0) {
        *limit = WP_LIMIT_ORDER2;
        return "Weisz & Prater 1954 / Weisz 1957 via Madon & Boudart 1982, second order";
    }
    *limit = WP_LIMIT_GENERAL;
    return "general rule, Vannice, Kinetics of Catalytic Reactions (2005)";
}

/* Every number unknown, nothing to say (the state before the metadata are
   looked at). */
static void criteria_clear(arrank_diagnosis *d)
{
    arrank_criterion *cr[4] = {&d->weisz_prater, &d->mears, &d->heat.interphase,
                               &d->heat.intraparticle};
    for (size_t k = 0; k < 4; k++)
        cr[k]->value = cr[k]->threshold = cr[k]->temp_K = NAN;
    arrank_prater *pr = &d->heat.prater;
    pr->rise_K = pr->beta = pr->temp_K = NAN;
    arrank_hot_spot *hs = &d->heat.hot_spot;
    hs->enthalpy_J_mol = hs->conversion_max = hs->temp_K = hs->adiabatic_rise_K = NAN;
    hs->line = 0;
}

/* The highest conversion among the usable points (those of the first fit,
   left out or not: points above the limit are left out of the fit). */
static void highest_conversion(arrank_dwork *wk)
{
    const arrank_diagnosis *d = wk->d;
    arrank_hot_spot *hs = &wk->d->heat.hot_spot;
    for (size_t k = 0; k < d->n_order; k++) {
        const arrank_point *p = &wk->pt[d->order[k]];
        if (isfinite(p->conversion) && !(p->conversion <= hs->conversion_max)) {
            hs->conversion_max = p->conversion;
            hs->temp_K = p->temp_K;
            hs->line = p->line;
            hs->source = p->source;
        }
    }
}

/* ---- mass transfer -------------------------------------------------------------- */

/* Weisz-Prater and Mears at the hottest point. */
static void mass_criteria(arrank_dwork *wk, const criteria_in *in, const rate_si *rs)
{
    arrank_diagnosis *d = wk->d;
    size_t hot = 0;
    for (size_t i = 1; i < wk->np; i++)
        if (wk->pt[i].temp_K > wk->pt[hot].temp_K)
            hot = i;
    double r_mass = rs->why ? NAN : rs->to_si.scale * wk->pt[hot].rate + rs->to_si.offset;
    double rho = isfinite(in->rho_p) ? in->rho_p : in->rho_bed;
    double r_v = r_mass * rho; /* mol/(m3 s) per particle (or bed) volume */
    double rad = in->dp_m / 2.0;

    arrank_criterion *wp = &d->weisz_prater;
    wp->source = wp_source(in->order, in->have_order, &wp->threshold);
    wp->temp_K = wk->pt[hot].temp_K;
    const entry wp_needs[] = {{"particle_diameter", isfinite(in->dp_m)},
                              {"pellet_density", isfinite(in->rho_p)},
                              {"effective_diffusivity", isfinite(in->de)},
                              {"bulk_concentration", isfinite(in->cb)}};
    if (rs->why)
        wp->detail = arrank_dwork_fmt(wk, "not computed: %s", rs->why);
    else if (!(wp->detail = needs_text(wk, wp_needs, sizeof wp_needs / sizeof *wp_needs))) {
        /* surface concentration taken as the bulk one (film resistance
           neglected: common practice for this check) */
        wp->value = arrank_transport_weisz_prater(r_mass * in->rho_p, rad, in->de, in->cb);
        wp->computed = isfinite(wp->value);
        wp->passes = wp->computed && wp->value < wp->threshold;
        wp->detail = arrank_dwork_fmt(wk,
                         "r_v = %.4g mol/(m3 s) at %.1f K, R_p = %.4g m (half the diameter), "
                         "D_e = %.4g m2/s, C_s = C_b = %.4g mol/m3",
                         r_mass * in->rho_p, wp->temp_K, rad, in->de, in->cb);
    }
    arrank_criterion *me = &d->mears;
    me->threshold = MEARS_LIMIT;
    me->source = "Mears 1971 (form of Hudgins 1972) via Madon & Boudart 1982";
    me->temp_K = wk->pt[hot].temp_K;
    const entry me_needs[] = {{"particle_diameter", isfinite(in->dp_m)},
                              {"pellet_density (or bed_density)", isfinite(rho)},
                              {"film_coefficient", isfinite(in->kc)},
                              {"bulk_concentration", isfinite(in->cb)}};
    if (rs->why)
        me->detail = arrank_dwork_fmt(wk, "not computed: %s", rs->why);
    else if (!(me->detail = needs_text(wk, me_needs, sizeof me_needs / sizeof *me_needs))) {
        me->value = arrank_transport_mears(r_v, rad, in->order, in->kc, in->cb);
        me->computed = isfinite(me->value);
        me->passes = me->computed && me->value < me->threshold;
        me->detail = arrank_dwork_fmt(wk,
                         "r_v = %.4g mol/(m3 s) at %.1f K (%s density), R_p = %.4g m, n = %g%s, "
                         "k_c = %.4g m/s, C_b = %.4g mol/m3",
                         r_v, me->temp_K, isfinite(in->rho_p) ? "pellet" : "bed", rad, in->order,
                         in->have_order ? "" : " (assumed)", in->kc, in->cb);
    }
}

/* ---- heat transfer -------------------------------------------------------------- */

/* Mears' interphase and Anderson's intraparticle heat numbers at every
   point of the final fit; each keeps its largest value and the point it
   came from.  ea_J_mol is the final fit's apparent activation energy. */
static void heat_criteria(arrank_dwork *wk, const criteria_in *in, const rate_si *rs,
                          double ea_J_mol)
{
    arrank_diagnosis *d = wk->d;
    arrank_criterion *cr[2] = {&d->heat.interphase, &d->heat.intraparticle};
    const double conductance[2] = {in->h_W_m2_K, in->lambda_W_m_K};
    const entry needs[2][4] = {
        {{"particle_diameter", isfinite(in->dp_m)},
         {"pellet_density", isfinite(in->rho_p)},
         {"reaction_enthalpy", isfinite(in->dh_J_mol)},
         {"heat_transfer_coefficient", isfinite(in->h_W_m2_K)}},
        {{"particle_diameter", isfinite(in->dp_m)},
         {"pellet_density", isfinite(in->rho_p)},
         {"reaction_enthalpy", isfinite(in->dh_J_mol)},
         {"pellet_conductivity", isfinite(in->lambda_W_m_K)}}};
    cr[0]->threshold = HEAT_MEARS_LIMIT;
    cr[0]->source = "Mears 1971 via Madon & Boudart 1982";
    cr[1]->threshold = HEAT_ANDERSON_LIMIT;
    cr[1]->source = "Anderson 1963 via Madon & Boudart 1982";
    const double rad = in->dp_m / 2.0;
    for (int c = 0; c < 2; c++) {
        arrank_criterion *k = cr[c];
        if (rs->why) {
            k->detail = arrank_dwork_fmt(wk, "not computed: %s", rs->why);
            continue;
        }
        if ((k->detail = needs_text(wk, needs[c], 4)) != NULL)
            continue;
        if (!(ea_J_mol > 0 && isfinite(ea_J_mol))) {
            k->detail = arrank_dwork_fmt(wk, "not computed: the fitted apparent Ea (%.1f kJ/mol) is not "
                                "positive",
                            ea_J_mol / 1000.0);
            continue;
        }
        size_t n_used = 0;
        double r_v_worst = NAN;
        for (size_t j = 0; j < d->n_order; j++) {
            size_t i = d->order[j];
            if (d->points[i].excluded)
                continue;
            n_used++;
            double r_v = (rs->to_si.scale * wk->pt[i].rate + rs->to_si.offset) * in->rho_p;
            double T = wk->pt[i].temp_K;
            double v = c == 0 ? arrank_transport_heat_mears(in->dh_J_mol, r_v, rad, ea_J_mol,
                                                             conductance[c], T)
                              : arrank_transport_heat_anderson(in->dh_J_mol, r_v, rad, ea_J_mol,
                                                                conductance[c], T);
            if (isfinite(v) && !(v <= k->value)) {
                k->value = v;
                k->temp_K = T;
                r_v_worst = r_v;
            }
        }
        k->computed = isfinite(k->value);
        k->passes = k->computed && k->value < k->threshold;
        if (!k->computed)
            k->detail = arrank_dwork_fmt(wk, "not computed: no point of the fit gives a finite value");
        else
            k->detail = arrank_dwork_fmt(wk,
                            "largest of %zu points of the fit: r_v = %.4g mol/(m3 s) at %.1f K, "
                            "R_p = %.4g m (half the diameter), dH = %.4g kJ/mol, Ea = %.1f "
                            "kJ/mol (the fit), %s = %.4g %s",
                            n_used, r_v_worst, k->temp_K, rad, in->dh_J_mol / 1000.0,
                            ea_J_mol / 1000.0, c == 0 ? "h" : "lambda_e", conductance[c],
                            c == 0 ? "W/(m2 K)" : "W/(m K)");
    }
}

/* Prater's temperature rise, with beta at the hottest point of the fit. */
static void prater_rise(arrank_dwork *wk, const criteria_in *in)
{
    arrank_diagnosis *d = wk->d;
    arrank_prater *pr = &d->heat.prater;
    pr->source = "Prater 1958";
    const entry needs[] = {{"reaction_enthalpy", isfinite(in->dh_J_mol)},
                           {"effective_diffusivity", isfinite(in->de)},
                           {"bulk_concentration", isfinite(in->cb)},
                           {"pellet_conductivity", isfinite(in->lambda_W_m_K)}};
    if ((pr->detail = needs_text(wk, needs, sizeof needs / sizeof *needs)) != NULL)
        return;
    for (size_t j = 0; j < d->n_order; j++) {
        size_t i = d->order[j];
        if (!d->points[i].excluded && !(wk->pt[i].temp_K <= pr->temp_K))
            pr->temp_K = wk->pt[i].temp_K;
    }
    pr->rise_K = arrank_transport_prater_rise(in->dh_J_mol, in->de, in->cb, in->lambda_W_m_K);
    pr->beta = pr->rise_K / pr->temp_K;
    pr->computed = isfinite(pr->rise_K) && isfinite(pr->beta);
    if (!pr->computed) {
        pr->rise_K = pr->beta = NAN;
        pr->detail = arrank_dwork_fmt(wk, "not computed: the inputs give no finite rise");
        return;
    }
    /* surface concentration taken as the bulk one, as for Weisz-Prater */
    pr->detail = arrank_dwork_fmt(wk,
                     "dH = %.4g kJ/mol, D_e = %.4g m2/s, C_s = C_b = %.4g mol/m3, lambda_e = "
                     "%.4g W/(m K), centre concentration taken as zero (the bound)",
                     in->dh_J_mol / 1000.0, in->de, in->cb, in->lambda_W_m_K);
}

/* The hot-spot caution: an exothermic reaction above the conversion limit;
   the adiabatic rise of the feed at the highest conversion when the feed is
   described. */
static void hot_spot(arrank_dwork *wk, const criteria_in *in)
{
    arrank_diagnosis *d = wk->d;
    arrank_hot_spot *hs = &d->heat.hot_spot;
    hs->enthalpy_J_mol = in->dh_J_mol;
    hs->caution = in->dh_J_mol < 0 && d->n_high_conversion > 0 && isfinite(hs->conversion_max);
    if (!hs->caution)
        return;
    const entry needs[] = {{"feed_fraction", isfinite(in->y_feed)},
                           {"feed_heat_capacity", isfinite(in->cp_J_mol_K)}};
    char *missing = needs_text(wk, needs, sizeof needs / sizeof *needs);
    if (missing) {
        /* "not computed: needs ..." */
        hs->detail = arrank_dwork_fmt(wk, "adiabatic temperature rise %s", missing);
        free(missing);
        return;
    }
    hs->adiabatic_rise_K = arrank_transport_adiabatic_rise(in->dh_J_mol, in->y_feed,
                                                           hs->conversion_max, in->cp_J_mol_K);
    if (isfinite(hs->adiabatic_rise_K))
        hs->detail = arrank_dwork_fmt(wk, "y_A0 = %.4g, X = %.4g, c_p = %.4g J/(mol K)", in->y_feed,
                         hs->conversion_max, in->cp_J_mol_K);
    else
        hs->detail = arrank_dwork_fmt(wk, "adiabatic temperature rise not computed: feed_fraction %.4g or "
                             "feed_heat_capacity %.4g J/(mol K) out of range",
                         in->y_feed, in->cp_J_mol_K);
}

/* ---- the step -------------------------------------------------------------------- */

/* The metadata in SI through the unit database (notes for unreadable ones). */
static void read_inputs(arrank_dwork *wk, arrank_units *u, criteria_in *in)
{
    in->dp_m = meta_quantity(wk, u, "particle_diameter", "m");
    double rp = meta_quantity(wk, u, "particle_radius", "m");
    if (!isfinite(in->dp_m) && isfinite(rp))
        in->dp_m = 2.0 * rp;
    in->rho_p = meta_quantity(wk, u, "pellet_density", "kg/m3");
    in->rho_bed = meta_quantity(wk, u, "bed_density", "kg/m3");
    in->de = meta_quantity(wk, u, "effective_diffusivity", "m2/s");
    in->cb = meta_quantity(wk, u, "bulk_concentration", "mol/m3");
    in->kc = meta_quantity(wk, u, "film_coefficient", "m/s");
    in->order = meta_quantity(wk, u, "reaction_order", "1");
    in->have_order = isfinite(in->order);
    if (!in->have_order)
        in->order = 1.0;
    in->dh_J_mol = meta_quantity(wk, u, "reaction_enthalpy", "J/mol");
    in->lambda_W_m_K = meta_quantity(wk, u, "pellet_conductivity", "W/(m*K)");
    in->h_W_m2_K = meta_quantity(wk, u, "heat_transfer_coefficient", "W/(m2*K)");
    /* the feed's entries matter only for the hot-spot caution: read there */
    in->cp_J_mol_K = in->y_feed = NAN;
}

void arrank_transport_criteria(arrank_dwork *wk, double ea_J_mol, const char *rate_unit,
                               arrank_units *u, const char *units_why)
{
    arrank_diagnosis *d = wk->d;
    static const char *keys[] = {"particle_diameter",   "particle_radius",
                                 "pellet_density",      "bed_density",
                                 "effective_diffusivity", "bulk_concentration",
                                 "film_coefficient",    "reaction_order",
                                 "reaction_enthalpy",   "pellet_conductivity",
                                 "heat_transfer_coefficient"};
    criteria_clear(d);
    highest_conversion(wk);
    int any = 0;
    for (size_t k = 0; k < sizeof keys / sizeof *keys; k++)
        any |= arrank_sample_meta(wk->s, keys[k]) != NULL;
    if (!any)
        return;
    if (!u) { /* the caller's database only: none is loaded here */
        arrank_dwork_note(wk, "transport criteria skipped: %s", units_why ? units_why : "no unit database");
        return;
    }
    criteria_in in;
    read_inputs(wk, u, &in);

    /* the observed rates in SI per mass */
    arrank_error e;
    arrank_error_clear(&e);
    const char *unit = rate_unit ? rate_unit : wk->s->rate_unit_file;
    arrank_basis basis = ARRANK_BASIS_UNKNOWN;
    rate_si rs = {{NAN, 0}, NULL};
    if (!(unit && arrank_units_rate(u, unit, &basis, &rs.to_si, &e) == ARRANK_OK &&
          basis == ARRANK_BASIS_MASS))
        rs.why = "the rates are not per mass, so no rate per particle volume";

    mass_criteria(wk, &in, &rs);
    heat_criteria(wk, &in, &rs, ea_J_mol);
    prater_rise(wk, &in);
    if (in.dh_J_mol < 0 && d->n_high_conversion > 0) {
        in.y_feed = meta_quantity(wk, u, "feed_fraction", "1");
        in.cp_J_mol_K = meta_quantity(wk, u, "feed_heat_capacity", "J/(mol*K)");
    }
    hot_spot(wk, &in);
}

/* ---- plain words ------------------------------------------------------------------ */

/* One heat criterion in words: a finding when it fails, else a note. */
static void describe_criterion(arrank_dwork *wk, const arrank_criterion *c, const char *name,
                               const char *bad, const char *good)
{
    if (!c->detail)
        return;
    char at[120];
    arrank_sample_temp_text(wk->s, c->temp_K, NAN, 1, at, sizeof at);
    if (!c->computed)
        arrank_dwork_note(wk, "%s %s", name, c->detail);
    else if (c->passes)
        arrank_dwork_note(wk, "%s %.3g at %s is below %.3g (%s): %s; %s", name, c->value, at,
                          c->threshold, c->source, good, c->detail);
    else
        arrank_dwork_finding(wk, "%s %.3g at %s is above %.3g (%s): %s; %s", name, c->value, at,
                             c->threshold, c->source, bad, c->detail);
}

void arrank_transport_describe(arrank_dwork *wk)
{
    const arrank_diagnosis *d = wk->d;
    const arrank_heat_checks *h = &d->heat;
    describe_criterion(wk, &h->interphase, "Mears interphase heat number",
                       "heat transfer across the gas film may limit: the particle may be hotter "
                       "(colder if endothermic) than the gas",
                       "no interphase temperature difference expected");
    describe_criterion(wk, &h->intraparticle, "Anderson intraparticle heat number",
                       "heat conduction inside the pellet may limit: its centre may be hotter "
                       "(colder if endothermic) than its surface",
                       "no temperature difference inside the pellet expected");
    const arrank_prater *pr = &h->prater;
    char at[120];
    if (pr->detail && !pr->computed)
        arrank_dwork_note(wk, "Prater temperature rise %s", pr->detail);
    else if (pr->detail)
        arrank_dwork_note(wk, "Prater temperature rise (%s): the pellet centre is at most %.3g K %s than its "
                 "surface (beta = %.3g at %s); %s",
             pr->source, fabs(pr->rise_K), pr->rise_K >= 0 ? "hotter" : "colder", pr->beta,
             arrank_sample_temp_text(wk->s, pr->temp_K, NAN, 1, at, sizeof at), pr->detail);

    const arrank_hot_spot *hs = &h->hot_spot;
    if (!(d->n_high_conversion > 0 && isfinite(hs->conversion_max)))
        return;
    if (hs->caution) {
        char rise[200] = "", where[256];
        if (isfinite(hs->adiabatic_rise_K))
            snprintf(rise, sizeof rise,
                     "; the feed would heat up by %.3g K if none of that heat left the bed "
                     "(adiabatic rise, %s)",
                     hs->adiabatic_rise_K, hs->detail);
        else if (hs->detail)
            snprintf(rise, sizeof rise, "; %s", hs->detail);
        arrank_dwork_finding(wk, "hot-spot caution for %s: the reaction is exothermic (dH = %.4g kJ/mol) and "
                    "conversion reaches %.1f %% on %s at %s, above the %.0f %% limit: "
                    "the bed is likely hotter than the thermocouple, which biases the rates and "
                    "Ea there; dilute the bed with inert solid, run at lower conversion or "
                    "measure the temperature inside the bed%s",
                wk->s->id, hs->enthalpy_J_mol / 1000.0, 100.0 * hs->conversion_max,
                arrank_dwork_where(wk, hs->line, hs->source, where, sizeof where),
                arrank_sample_temp_text(wk->s, hs->temp_K, NAN, 1, at, sizeof at),
                100.0 * d->conversion_limit, rise);
    } else if (hs->enthalpy_J_mol > 0)
        arrank_dwork_note(wk, "endothermic reaction (dH = %.4g kJ/mol) at up to %.1f %% conversion: the bed "
                 "may be colder than the thermocouple",
             hs->enthalpy_J_mol / 1000.0, 100.0 * hs->conversion_max);
    else if (!arrank_sample_meta(wk->s, "reaction_enthalpy"))
        arrank_dwork_note(wk, "hot spots not assessed: conversion reaches %.1f %% at %s; give "
                 "reaction_enthalpy (negative when exothermic, e.g. -120 kJ/mol) to have them "
                 "checked",
             100.0 * hs->conversion_max,
             arrank_sample_temp_text(wk->s, hs->temp_K, NAN, 1, at, sizeof at));
}

void arrank_transport_free(arrank_diagnosis *d)
{
    free(d->weisz_prater.detail);
    free(d->mears.detail);
    free(d->heat.interphase.detail);
    free(d->heat.intraparticle.detail);
    free(d->heat.prater.detail);
    free(d->heat.hot_spot.detail);
}
