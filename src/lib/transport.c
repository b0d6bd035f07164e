/*
 * transport.c - the Weisz-Prater and Mears criteria of one sample
 * (arrank/transport.h, transport_internal.h): the published numbers, and the
 * sample's metadata (particle, pellet, diffusivity, film coefficient,
 * concentration) read through the unit database to compute them at the
 * hottest point.
 */
#include "arrank/transport.h"

#include <math.h>
#include <stdarg.h>
#include <stdlib.h>

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

static char *fmt(arrank_dwork *wk, const char *f, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

static char *fmt(arrank_dwork *wk, const char *f, ...)
{
    va_list ap;
    va_start(ap, f);
    char *s = arrank_vstrfmt(f, ap);
    va_end(ap);
    if (!s)
        wk->nomem = 1;
    return s;
}

static void note(arrank_dwork *wk, const char *f, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

static void note(arrank_dwork *wk, const char *f, ...)
{
    va_list ap;
    va_start(ap, f);
    char *s = arrank_vstrfmt(f, ap);
    va_end(ap);
    if (arrank_strings_push(&wk->d->notes, &wk->d->n_notes, s) != 0)
        wk->nomem = 1;
}

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

typedef struct {
    double dp_m, rho_p, rho_bed, de, cb, kc, order;
    int have_order;
} criteria_in;

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
        note(wk, "metadata '%s = %s' could not be read (%s); criteria that need it are skipped",
             key, v, e.message);
        return NAN;
    }
    return out;
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

void arrank_transport_criteria(arrank_dwork *wk, const char *rate_unit, arrank_units *u,
                               const char *units_why)
{
    arrank_diagnosis *d = wk->d;
    static const char *keys[] = {"particle_diameter", "particle_radius", "pellet_density",
                                 "bed_density", "effective_diffusivity", "bulk_concentration",
                                 "film_coefficient", "reaction_order"};
    int any = 0;
    for (size_t k = 0; k < sizeof keys / sizeof *keys; k++)
        any |= arrank_sample_meta(wk->s, keys[k]) != NULL;
    d->weisz_prater.value = d->mears.value = NAN;
    d->weisz_prater.threshold = d->mears.threshold = NAN;
    d->weisz_prater.temp_K = d->mears.temp_K = NAN;
    if (!any)
        return;
    if (!u) { /* the caller's database only: none is loaded here */
        note(wk, "transport criteria skipped: %s", units_why ? units_why : "no unit database");
        return;
    }
    arrank_error e;
    arrank_error_clear(&e);
    criteria_in in;
    in.dp_m = meta_quantity(wk, u, "particle_diameter", "m");
    double rp = meta_quantity(wk, u, "particle_radius", "m");
    if (!isfinite(in.dp_m) && isfinite(rp))
        in.dp_m = 2.0 * rp;
    in.rho_p = meta_quantity(wk, u, "pellet_density", "kg/m3");
    in.rho_bed = meta_quantity(wk, u, "bed_density", "kg/m3");
    in.de = meta_quantity(wk, u, "effective_diffusivity", "m2/s");
    in.cb = meta_quantity(wk, u, "bulk_concentration", "mol/m3");
    in.kc = meta_quantity(wk, u, "film_coefficient", "m/s");
    in.order = meta_quantity(wk, u, "reaction_order", "1");
    in.have_order = isfinite(in.order);
    if (!in.have_order)
        in.order = 1.0;

    /* the hottest point's observed rate, in SI per mass */
    size_t hot = 0;
    for (size_t i = 1; i < wk->np; i++)
        if (wk->pt[i].temp_K > wk->pt[hot].temp_K)
            hot = i;
    const char *unit = rate_unit ? rate_unit : wk->s->rate_unit_file;
    arrank_basis basis = ARRANK_BASIS_UNKNOWN;
    arrank_conversion to_si = {NAN, 0};
    double r_mass = NAN;
    if (unit && arrank_units_rate(u, unit, &basis, &to_si, &e) == ARRANK_OK &&
        basis == ARRANK_BASIS_MASS)
        r_mass = to_si.scale * wk->pt[hot].rate + to_si.offset;

    double rho = isfinite(in.rho_p) ? in.rho_p : in.rho_bed;
    double r_v = r_mass * rho; /* mol/(m3 s) per particle (or bed) volume */
    double rad = in.dp_m / 2.0;
    const char *why_rate = basis == ARRANK_BASIS_MASS
                               ? NULL
                               : "the rates are not per mass, so no rate per particle volume";

    arrank_criterion *wp = &d->weisz_prater;
    wp->source = wp_source(in.order, in.have_order, &wp->threshold);
    wp->temp_K = wk->pt[hot].temp_K;
    if (why_rate)
        wp->detail = fmt(wk, "not computed: %s", why_rate);
    else if (!isfinite(in.dp_m) || !isfinite(in.rho_p) || !isfinite(in.de) || !isfinite(in.cb))
        wp->detail = fmt(wk, "not computed: needs particle_diameter, pellet_density, "
                             "effective_diffusivity and bulk_concentration");
    else {
        /* surface concentration taken as the bulk one (film resistance
           neglected: common practice for this check) */
        wp->value = arrank_transport_weisz_prater(r_mass * in.rho_p, rad, in.de, in.cb);
        wp->computed = isfinite(wp->value);
        wp->passes = wp->computed && wp->value < wp->threshold;
        wp->detail = fmt(wk,
                         "r_v = %.4g mol/(m3 s) at %.1f K, R_p = %.4g m (half the diameter), "
                         "D_e = %.4g m2/s, C_s = C_b = %.4g mol/m3",
                         r_mass * in.rho_p, wp->temp_K, rad, in.de, in.cb);
    }
    arrank_criterion *me = &d->mears;
    me->threshold = MEARS_LIMIT;
    me->source = "Mears 1971 (form of Hudgins 1972) via Madon & Boudart 1982";
    me->temp_K = wk->pt[hot].temp_K;
    if (why_rate)
        me->detail = fmt(wk, "not computed: %s", why_rate);
    else if (!isfinite(in.dp_m) || !isfinite(rho) || !isfinite(in.kc) || !isfinite(in.cb))
        me->detail = fmt(wk, "not computed: needs particle_diameter, pellet_density (or "
                             "bed_density), film_coefficient and bulk_concentration");
    else {
        me->value = arrank_transport_mears(r_v, rad, in.order, in.kc, in.cb);
        me->computed = isfinite(me->value);
        me->passes = me->computed && me->value < me->threshold;
        me->detail = fmt(wk,
                         "r_v = %.4g mol/(m3 s) at %.1f K (%s density), R_p = %.4g m, n = %g%s, "
                         "k_c = %.4g m/s, C_b = %.4g mol/m3",
                         r_v, me->temp_K, isfinite(in.rho_p) ? "pellet" : "bed", rad, in.order,
                         in.have_order ? "" : " (assumed)", in.kc, in.cb);
    }
}
