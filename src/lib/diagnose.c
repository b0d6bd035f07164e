/*
 * diagnose.c - one sample's diagnosis (include/arrank/diagnose.h): the
 * stage's entry.  It reads the sample, its first fit and the points in it,
 * and calls the parts in order: conversion (quality.c), curvature of the
 * plot as measured (curvature.c, series.c), runs, repeats and drift
 * (quality.c), the kinetic window grown from the cold end while it stays
 * straight, the regime of every point, outliers on the set to be fitted
 * (quality.c); then, after the pipeline's refit, transport criteria
 * (transport.c), the mixed-basis check, the causes of a bend and every
 * conclusion in plain words with its evidence.  Thresholds are named below
 * with their sources.
 *
 * It never refits, sets flags or writes: the pipeline (analysis.c) applies
 * the proposed exclusions and sets the flags; diagnosis_out.c writes.
 */
#include "arrank/diagnose.h"

#include <ctype.h>
#include <math.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/screen.h"
#include "curvature.h"
#include "number.h"
#include "quality.h"
#include "regress.h"
#include "series.h"
#include "stats.h"
#include "transport_internal.h"
#include "util.h"

/* ---- thresholds ----------------------------------------------------------- */

/* Once a bend is detected, the kinetic window grows from the cold end while
   each new temperature passes three one-sided tests at this level: where the
   bend starts is a milder question than whether there is one, and a window
   that stops a little early only widens the interval (our choice; the test
   suite measures the coverage of the refit's interval). */
#define TRIM_LEVEL 0.10
/* Local apparent Ea below this: film-diffusion-like.  Film control gives
   4-12 kJ/mol in gases (Adiabatic Fixed-Bed Reactors, sec. 2.6); 20 kJ/mol
   is the usual "suspect" line (from memory; the issue quotes 10-20). */
#define FILM_EA_J_MOL 20000.0
/* Pore diffusion halves the apparent Ea in the strong limit (Weisz & Prater
   1954) and no further; for a first-order sphere E_app/E = 0.73 at phi = 3
   and 0.56 at phi = 10 (DOMAIN notes, computed).  A local Ea between these
   fractions of the kinetic window's Ea is pore-diffusion-like; below
   PORE_RATIO_LO it has gone past what pore diffusion can do, which only a
   film (series) resistance does: 1/r = 1/k + 1/k_t takes the local Ea
   towards k_t's few kJ/mol (issue 14: 0.4 leaves room for scatter below the
   strong-limit half, our choice). */
#define PORE_RATIO_LO 0.40
#define PORE_RATIO_HI 0.80
/* A local Ea whose standard error exceeds this fraction of the window's Ea
   is too uncertain to classify (our choice). */
#define THIN_SE_FRAC 0.25
/* The kinetic window keeps at least this many temperatures (the few-points
   flag threshold, common practice). */
#define MIN_WINDOW_TEMPS 4
/* Most steps the kinetic window takes from the cold end (see there). */
#define WINDOW_MAX_STEPS 256

/* Working arrays of a diagnosis up to this size live on the stack (about 60
   points); larger samples allocate them. */
#define SCRATCH_SMALL_BYTES 6144

static const double R = ARRANK_R_J_MOL_K;

/* ---- small helpers -------------------------------------------------------- */

const char *arrank_regime_name(arrank_regime regime)
{
    switch (regime) {
    case ARRANK_REGIME_KINETIC: return "kinetic";
    case ARRANK_REGIME_PORE: return "pore_diffusion";
    case ARRANK_REGIME_FILM: return "film_diffusion";
    case ARRANK_REGIME_UNCLASSIFIED: break;
    }
    return "unclassified";
}

const char *arrank_bend_name(arrank_bend bend)
{
    switch (bend) {
    case ARRANK_BEND_DOWN: return "concave-down";
    case ARRANK_BEND_UP: return "concave-up";
    case ARRANK_BEND_NONE: break;
    }
    return "none";
}

static void push_str(arrank_dwork *wk, char ***arr, size_t *n, char *s)
{
    if (arrank_strings_push(arr, n, s) != 0)
        wk->nomem = 1;
}

/* A note made of the k texts joined: the one note every sample gets, built
   without a printf pass. */
static void note_join(arrank_dwork *wk, const char *const *parts, size_t k)
{
    size_t len = 0;
    for (size_t i = 0; i < k; i++)
        len += strlen(parts[i]);
    char *s = malloc(len + 1);
    if (s) {
        size_t o = 0;
        for (size_t i = 0; i < k; i++) {
            size_t m = strlen(parts[i]);
            memcpy(s + o, parts[i], m);
            o += m;
        }
        s[o] = '\0';
    }
    push_str(wk, &wk->d->notes, &wk->d->n_notes, s);
}

/* %zu of v into out (at least 21 bytes). */
static void size_t_text(char *out, size_t v)
{
    char tmp[24];
    size_t k = 0;
    do {
        tmp[k++] = (char)('0' + v % 10);
        v /= 10;
    } while (v);
    for (size_t i = 0; i < k; i++)
        out[i] = tmp[k - 1 - i];
    out[k] = '\0';
}

static void add_cause(arrank_dwork *wk, int supported, char *cause, char *evidence)
{
    arrank_curvature *cv = &wk->d->curvature;
    if (!cause || !evidence) {
        free(cause);
        free(evidence);
        wk->nomem = 1;
        return;
    }
    arrank_cause *a = realloc(cv->causes, (cv->n_causes + 1) * sizeof *a);
    if (!a) {
        free(cause);
        free(evidence);
        wk->nomem = 1;
        return;
    }
    cv->causes = a;
    a[cv->n_causes].cause = cause;
    a[cv->n_causes].evidence = evidence;
    a[cv->n_causes].supported = supported;
    cv->n_causes++;
}

/* Declared basis word, normalised: "mass", "metal_mass", "area", "site" or
   the lowercase text itself. */
static void declared_basis(const arrank_sample *s, char *out, size_t n)
{
    const char *v = arrank_sample_meta(s, "basis");
    out[0] = '\0';
    if (!v || n == 0)
        return;
    size_t k = 0;
    for (; v[k] && k + 1 < n; k++)
        out[k] = (char)tolower((unsigned char)v[k]);
    out[k] = '\0';
    /* trim */
    while (k > 0 && isspace((unsigned char)out[k - 1]))
        out[--k] = '\0';
    const char *aliases[][2] = {
        {"catalyst_mass", "mass"}, {"per_mass", "mass"},     {"metal", "metal_mass"},
        {"surface", "area"},       {"bet_area", "area"},     {"per_area", "area"},
        {"tof", "site"},           {"turnover", "site"},     {"per_site", "site"},
    };
    for (size_t i = 0; i < sizeof aliases / sizeof *aliases; i++)
        if (strcmp(out, aliases[i][0]) == 0)
            snprintf(out, n, "%s", aliases[i][1]);
}

static arrank_basis basis_dimension(const char *word)
{
    if (strcmp(word, "mass") == 0 || strcmp(word, "metal_mass") == 0)
        return ARRANK_BASIS_MASS;
    if (strcmp(word, "area") == 0)
        return ARRANK_BASIS_AREA;
    if (strcmp(word, "site") == 0)
        return ARRANK_BASIS_SITE;
    return ARRANK_BASIS_UNKNOWN;
}

/* Declared basis against the sample's own rate unit; 1 with why on a mismatch. */
static int own_basis_mismatch(const arrank_sample *s, char *why, size_t n)
{
    char mine[32];
    declared_basis(s, mine, sizeof mine);
    if (!mine[0])
        return 0;
    arrank_basis dim = basis_dimension(mine);
    if (dim != ARRANK_BASIS_UNKNOWN && s->basis != ARRANK_BASIS_UNKNOWN && dim != s->basis) {
        if (why)
            snprintf(why, n, "declared basis '%s' does not match the rate unit '%s' (%s basis)",
                     mine, s->rate_unit_file ? s->rate_unit_file : "?",
                     arrank_basis_name(s->basis));
        return 1;
    }
    return 0;
}

int arrank_diagnose_campaign_basis(const arrank_campaign *c, char *why, size_t n)
{
    if (why && n)
        why[0] = '\0';
    if (!c || c->n_samples < 2)
        return 0;
    /* one pass: every sample against the first one */
    const arrank_sample *ref = &c->samples[0];
    char mine[32], other[32];
    declared_basis(ref, mine, sizeof mine);
    for (size_t i = 1; i < c->n_samples; i++) {
        const arrank_sample *o = &c->samples[i];
        if (o->basis != ARRANK_BASIS_UNKNOWN && ref->basis != ARRANK_BASIS_UNKNOWN &&
            o->basis != ref->basis) {
            if (why)
                snprintf(why, n, "sample '%s' is on a %s basis and '%s' on a %s basis", ref->id,
                         arrank_basis_name(ref->basis), o->id, arrank_basis_name(o->basis));
            return 1;
        }
        declared_basis(o, other, sizeof other);
        if (mine[0] && other[0] && strcmp(mine, other) != 0) {
            if (why)
                snprintf(why, n, "sample '%s' declares basis '%s' and '%s' declares '%s'",
                         ref->id, mine, o->id, other);
            return 1;
        }
    }
    return 0;
}

int arrank_diagnose_basis(const arrank_campaign *c, const arrank_sample *s, char *why, size_t n)
{
    if (why && n)
        why[0] = '\0';
    return own_basis_mismatch(s, why, n) || arrank_diagnose_campaign_basis(c, why, n);
}

static void set_excluded(arrank_dwork *wk, size_t i, char *reason)
{
    arrank_point_diag *pd = &wk->d->points[i];
    if (!reason) {
        wk->nomem = 1;
        return;
    }
    if (pd->excluded) {
        free(reason);
        return;
    }
    pd->excluded = 1;
    pd->reason = reason;
}

static double kj(double j)
{
    return j / 1000.0;
}

/* Plain words for the causes of a detected bend. */
static void name_causes(arrank_dwork *wk, const size_t *sorted, size_t n, double ea_window,
                        int has_repeats)
{
    arrank_diagnosis *d = wk->d;
    arrank_curvature *cv = &d->curvature;
    int runs_down = 0, runs_up = 0;
    for (size_t j = 0; j < d->n_runs; j++) {
        runs_down |= d->runs[j].verdict < 0;
        runs_up |= d->runs[j].verdict > 0;
    }
    runs_down |= d->drift.verdict < 0;
    runs_up |= d->drift.verdict > 0;
    size_t n_pore = 0, n_film = 0, hot_conv = 0;
    double lo_pore = INFINITY, lo_film = INFINITY, t_pore = NAN, t_film = NAN;
    char tbuf[120];
    for (size_t k = 0; k < n; k++) {
        const arrank_point_diag *pd = &d->points[sorted[k]];
        if (pd->regime == ARRANK_REGIME_PORE) {
            n_pore++;
            if (pd->local_ea_J_mol < lo_pore) {
                lo_pore = pd->local_ea_J_mol;
                t_pore = wk->pt[sorted[k]].temp_K;
            }
        } else if (pd->regime == ARRANK_REGIME_FILM) {
            n_film++;
            if (pd->local_ea_J_mol < lo_film) {
                lo_film = pd->local_ea_J_mol;
                t_film = wk->pt[sorted[k]].temp_K;
            }
        }
        if (pd->high_conversion && k >= n / 2)
            hot_conv++;
    }
    char series[256];
    if (isfinite(cv->series_F) && isfinite(cv->aicc_line))
        snprintf(series, sizeof series,
                 "series-resistance model against a straight line: F = %.3g, p = %.2g, "
                 "AICc lower by %.1f",
                 cv->series_F, cv->series_p, cv->aicc_line - cv->aicc_series);
    else if (isfinite(cv->series_F))
        snprintf(series, sizeof series,
                 "series-resistance model against a straight line: F = %.3g, p = %.2g",
                 cv->series_F, cv->series_p);
    else if (!(cv->detected && cv->direction == ARRANK_BEND_DOWN))
        snprintf(series, sizeof series,
                 "series-resistance model not fitted (it is fitted to a detected downward bend)");
    else
        snprintf(series, sizeof series, "series-resistance model not fitted");
    const arrank_criterion *wp = &d->weisz_prater, *me = &d->mears;

    if (cv->direction == ARRANK_BEND_DOWN) {
        if (hot_conv)
            add_cause(wk, 1, arrank_dwork_fmt(wk, "conversion above the differential limit"),
                      arrank_dwork_fmt(wk, "%zu point(s) in the hot half are above the %.0f %% limit, so their "
                              "rates understate the differential rate",
                          hot_conv, 100.0 * d->conversion_limit));
        if (runs_down)
            add_cause(wk, 1, arrank_dwork_fmt(wk, "deactivation during the measurements"),
                      arrank_dwork_fmt(wk, "later runs or later times show lower activity at the same "
                              "temperature (see the run and drift checks)"));
        if (n_pore)
            add_cause(wk, 1, arrank_dwork_fmt(wk, "pore diffusion"),
                      arrank_dwork_fmt(wk, "local apparent Ea falls to %.0f kJ/mol at %s against %.0f "
                              "kJ/mol in the kinetic window (ratio %.2f; strong pore diffusion "
                              "gives about one half); %s%s%s",
                          kj(lo_pore),
                          arrank_sample_temp_text(wk->s, t_pore, NAN, 0, tbuf, sizeof tbuf),
                          kj(ea_window), lo_pore / ea_window, series,
                          wp->computed ? "; " : "",
                          wp->computed ? (wp->passes ? "but the Weisz-Prater number is below its "
                                                       "limit, which argues against it"
                                                     : "and the Weisz-Prater number is above "
                                                       "its limit")
                                       : ""));
        if (n_film)
            add_cause(wk, 1, arrank_dwork_fmt(wk, "film (external) mass transfer"),
                      arrank_dwork_fmt(wk, "local apparent Ea falls to %.0f kJ/mol at %s against %.0f "
                              "kJ/mol in the kinetic window (ratio %.2f), below %.0f kJ/mol or "
                              "%.1f of the window's: past the one half that pore diffusion gives "
                              "at most; %s%s%s",
                          kj(lo_film),
                          arrank_sample_temp_text(wk->s, t_film, NAN, 0, tbuf, sizeof tbuf),
                          kj(ea_window), lo_film / ea_window,
                          kj(FILM_EA_J_MOL), PORE_RATIO_LO, series,
                          me->computed ? "; " : "",
                          me->computed ? (me->passes ? "but the Mears number is below its limit, "
                                                       "which argues against it"
                                                     : "and the Mears number is above its limit")
                                       : ""));
        if (n_film && !n_pore)
            add_cause(wk, 0, arrank_dwork_fmt(wk, "pore diffusion as well"),
                      arrank_dwork_fmt(wk, "not told apart: film control takes the local apparent Ea through "
                              "the pore-like range (%.1f-%.1f of the window's) on its way down",
                          PORE_RATIO_LO, PORE_RATIO_HI));
        if (!n_pore && !n_film)
            add_cause(wk, 0, arrank_dwork_fmt(wk, "transport limitation (pore or film)"),
                      arrank_dwork_fmt(wk, "%s; the local slopes do not single out a transport regime", series));
        if (!runs_down && !has_repeats)
            add_cause(wk, 0, arrank_dwork_fmt(wk, "deactivation on a rising temperature ramp"),
                      arrank_dwork_fmt(wk, "not testable: no repeat, cooling branch or time on stream; "
                              "repeat a cold point at the end to check"));
        add_cause(wk, 0, arrank_dwork_fmt(wk, "adsorption-equilibrium shift or change of rate-determining step"),
                  arrank_dwork_fmt(wk, "bends the plot the same way; not testable from rate against "
                          "temperature alone (vary partial pressures)"));
        add_cause(wk, 0, arrank_dwork_fmt(wk, "approach to equilibrium"),
                  arrank_dwork_fmt(wk, "check the equilibrium conversion at the hottest point"));
    } else if (cv->direction == ARRANK_BEND_UP) {
        if (runs_up)
            add_cause(wk, 1, arrank_dwork_fmt(wk, "activation during the measurements"),
                      arrank_dwork_fmt(wk, "later runs or later times show higher activity at the same "
                              "temperature (see the run and drift checks)"));
        add_cause(wk, 0, arrank_dwork_fmt(wk, "a second route with a higher activation energy"),
                  arrank_dwork_fmt(wk, "the apparent Ea rises from %.0f kJ/mol at the cold end to %.0f kJ/mol "
                          "at the hot end (quadratic fit)",
                      kj(cv->ea_cold_J_mol), kj(cv->ea_hot_J_mol)));
        add_cause(wk, 0, arrank_dwork_fmt(wk, "blank activity of the reactor or support"),
                  arrank_dwork_fmt(wk, "not testable from these data: measure an empty or support-only run"));
        add_cause(wk, 0, arrank_dwork_fmt(wk, "hot spots (bed hotter than the thermocouple)"),
                  arrank_dwork_fmt(wk, "likely with an exothermic reaction at high conversion: use an in-bed "
                          "thermocouple and dilute the bed"));
    }
}

/* The curvature test in plain words: a finding for a detected bend with its
   likely causes, else a note saying what could have been seen. */
static void describe_curvature(arrank_dwork *wk, const size_t *sorted, size_t n)
{
    arrank_diagnosis *d = wk->d;
    arrank_curvature *cv = &d->curvature;
    if (!cv->tested)
        arrank_dwork_note(wk,
             "curvature not detected: %zu points at %zu temperatures are too few to test "
             "(needs %d points at %d temperatures)",
             cv->n, arrank_regress_count_temps(wk->pt, sorted, n), ARRANK_CURVE_MIN_POINTS,
             ARRANK_CURVE_MIN_TEMPS);
    else if (!cv->detected) {
        /* every sample that passes gets this note: its numbers go through
           number.c's exact formatters (the same bytes as printf, faster) */
        char t_txt[48], p_txt[48], lv_txt[48], sc_txt[48], n_txt[24];
        const int have_scatter = isfinite(wk->scatter);
        if (have_scatter)
            arrank_format_fixed(sc_txt, sizeof sc_txt, 1, 100.0 * wk->scatter);
        arrank_format_fixed(t_txt, sizeof t_txt, 2, cv->quad_t);
        arrank_format_general(p_txt, sizeof p_txt, 2, cv->quad_p);
        arrank_format_general(lv_txt, sizeof lv_txt, 2, cv->level);
        size_t_text(n_txt, cv->n);
        /* "curvature not detected: quadratic term t = %s, p = %s (level %s)
           with %zu points[ and %s %% scatter]; only bending ... would show" */
        const char *parts[] = {"curvature not detected: quadratic term t = ",
                               t_txt,
                               ", p = ",
                               p_txt,
                               " (level ",
                               lv_txt,
                               ") with ",
                               n_txt,
                               " points",
                               have_scatter ? " and " : "",
                               have_scatter ? sc_txt : "",
                               have_scatter ? " % scatter" : "",
                               "; only bending well beyond the scatter would show"};
        note_join(wk, parts, sizeof parts / sizeof parts[0]);
    } else {
        char local[320] = "", cold[120], hot[120];
        if (cv->n_local >= 2)
            snprintf(local, sizeof local,
                     "; local apparent Ea %.0f kJ/mol at %s and %.0f kJ/mol at %s",
                     kj(cv->local[0].ea_J_mol),
                     arrank_sample_temp_text(wk->s, cv->local[0].temp_lo_K,
                                             cv->local[0].temp_hi_K, 0, cold, sizeof cold),
                     kj(cv->local[cv->n_local - 1].ea_J_mol),
                     arrank_sample_temp_text(wk->s, cv->local[cv->n_local - 1].temp_lo_K,
                                            cv->local[cv->n_local - 1].temp_hi_K, 0, hot,
                                            sizeof hot));
        arrank_dwork_finding(wk, "the Arrhenius plot bends %s (%s): quadratic term t = %.2f, p = %.2g at level "
                    "%.2g%s",
                arrank_bend_name(cv->direction),
                cv->direction == ARRANK_BEND_DOWN ? "slope flattens at the hot end"
                                                  : "slope steepens at the hot end",
                cv->quad_t, cv->quad_p, cv->level, local);
        for (size_t k = 0; k < cv->n_causes; k++)
            if (cv->causes[k].supported)
                arrank_dwork_finding(wk, "likely cause: %s: %s", cv->causes[k].cause, cv->causes[k].evidence);
        for (size_t k = 0; k < cv->n_causes; k++)
            if (!cv->causes[k].supported)
                arrank_dwork_note(wk, "possible cause: %s: %s", cv->causes[k].cause, cv->causes[k].evidence);
    }
}

/* Every conclusion in plain words, in a fixed order; f is the final fit. */
static void describe(arrank_dwork *wk, const arrank_arrhenius *f, const size_t *sorted, size_t n,
                     double conf)
{
    arrank_diagnosis *d = wk->d;
    describe_curvature(wk, sorted, n);
    for (size_t k = 0; k < n; k++) {
        size_t i = sorted[k];
        const arrank_point_diag *pd = &d->points[i];
        char where[256], tbuf[120];
        if (pd->high_conversion)
            arrank_dwork_finding(wk, "conversion %.1f %% on %s at %s is above the %.0f %% "
                        "differential limit: the rate there is not a differential rate",
                    100.0 * wk->pt[i].conversion,
                    arrank_dwork_where(wk, wk->pt[i].line, wk->pt[i].source, where, sizeof where),
                    arrank_sample_temp_text(wk->s, wk->pt[i].temp_K, NAN, 1, tbuf, sizeof tbuf),
                    100.0 * d->conversion_limit);
    }
    /* what the fit did, not a problem of the data: a note */
    const double t_win = f ? arrank_t_quantile(conf, f->dof) : NAN;
    const double t_all = arrank_t_quantile(conf, d->ea_all_dof);
    char span[160];
    if (d->window_applied && f)
        arrank_dwork_note(wk, "fitted on the kinetic window, %zu points at %s: Ea %.1f kJ/mol "
                    "(%.4g %% interval %.1f-%.1f, standard error %.1f), against %.1f kJ/mol "
                    "(%.1f-%.1f, standard error %.1f) on every point",
                d->window_n,
                arrank_sample_temp_text(wk->s, d->window_lo_K, d->window_hi_K, 1, span,
                                        sizeof span),
                kj(f->ea_J_mol),
                100.0 * conf, kj(f->ea_J_mol - t_win * f->ea_se_J_mol),
                kj(f->ea_J_mol + t_win * f->ea_se_J_mol), kj(f->ea_se_J_mol),
                kj(d->ea_all_J_mol), kj(d->ea_all_J_mol - t_all * d->ea_all_se_J_mol),
                kj(d->ea_all_J_mol + t_all * d->ea_all_se_J_mol), kj(d->ea_all_se_J_mol));
    arrank_quality_describe_runs(wk);
    for (size_t k = 0; k < n; k++) {
        size_t i = sorted[k];
        const arrank_point_diag *pd = &d->points[i];
        if (!pd->outlier)
            continue;
        char where[256], tbuf[120];
        arrank_dwork_finding(wk,
                "point on %s at %s is %s: studentized residual %.2f (limit %.2f), "
                "Cook's distance %.2f (limit %.0f); %s",
                arrank_dwork_where(wk, wk->pt[i].line, wk->pt[i].source, where, sizeof where),
                arrank_sample_temp_text(wk->s, wk->pt[i].temp_K, NAN, 1, tbuf, sizeof tbuf),
                fabs(pd->student_resid) > d->outlier_t_limit ? "an outlier" : "influential",
                pd->student_resid, d->outlier_t_limit, pd->cooks_d, ARRANK_COOK_LIMIT,
                pd->excluded ? "left out of the fit as asked"
                             : "kept in the fit (outliers are left out only on request)");
    }
    const arrank_criterion *cr[2] = {&d->weisz_prater, &d->mears};
    const char *crname[2] = {"Weisz-Prater number", "Mears number"};
    const char *crbad[2] = {"internal (pore) diffusion may limit the rate",
                            "external (film) mass transfer may limit the rate"};
    const char *crgood[2] = {"no internal diffusion limitation expected",
                             "no external mass-transfer limitation expected"};
    for (int k = 0; k < 2; k++) {
        if (!cr[k]->detail)
            continue;
        if (!cr[k]->computed)
            arrank_dwork_note(wk, "%s %s", crname[k], cr[k]->detail);
        else if (cr[k]->passes)
            arrank_dwork_note(wk, "%s %.3g at %s is below %.3g (%s): %s; %s", crname[k], cr[k]->value,
                 arrank_sample_temp_text(wk->s, cr[k]->temp_K, NAN, 1, span, sizeof span),
                 cr[k]->threshold, cr[k]->source, crgood[k], cr[k]->detail);
        else
            arrank_dwork_finding(wk, "%s %.3g at %s is above %.3g (%s): %s; %s", crname[k], cr[k]->value,
                    arrank_sample_temp_text(wk->s, cr[k]->temp_K, NAN, 1, span, sizeof span),
                    cr[k]->threshold, cr[k]->source, crbad[k], cr[k]->detail);
    }
}

/* The regime of a point hotter than the kinetic window, from its local Ea's
   level and its ratio to the window's Ea ea_w: film-like below FILM_EA_J_MOL
   or PORE_RATIO_LO, pore-like up to PORE_RATIO_HI. */
static void regime_of_excluded(arrank_dwork *wk, size_t i, double ea_w)
{
    arrank_point_diag *pd = &wk->d->points[i];
    double le = pd->local_ea_J_mol;
    pd->regime = ARRANK_REGIME_UNCLASSIFIED;
    if (!isfinite(le) || !(ea_w > 0))
        return;
    if (le < FILM_EA_J_MOL || le < PORE_RATIO_LO * ea_w)
        pd->regime = ARRANK_REGIME_FILM;
    else if (le <= PORE_RATIO_HI * ea_w)
        pd->regime = ARRANK_REGIME_PORE;
}

arrank_diagnose_options arrank_diagnose_options_defaults(void)
{
    arrank_diagnose_options o;
    memset(&o, 0, sizeof o);
    o.conversion_limit = 0.10;
    o.confidence = 0.95;
    return o;
}

/* ---- step 2: curvature of the plot as measured --------------------------------- */

/* The quadratic test over base (q receives it; cv->tested says whether it
   ran), the series-resistance model for a downward bend, and the local
   apparent Ea of every point. */
/* Each local Ea window's interval at the run's confidence (t on the
   window's n - 2 degrees of freedom: wide for three temperatures, as it
   should be). */
static void local_intervals(arrank_curvature *cv, double confidence)
{
    for (size_t k = 0; k < cv->n_local; k++) {
        arrank_local_ea *le = &cv->local[k];
        const double t = le->n_points > 2 ? arrank_t_quantile(confidence, (double)le->n_points - 2)
                                          : NAN;
        const double w = t * le->ea_se_J_mol;
        le->ea_lo_J_mol = isfinite(w) ? le->ea_J_mol - w : NAN;
        le->ea_hi_J_mol = isfinite(w) ? le->ea_J_mol + w : NAN;
    }
}

static void curvature_step(arrank_dwork *wk, const size_t *base, const size_t *grp, size_t n,
                           size_t n_groups, const arrank_line *lf_all, int have_line,
                           arrank_quad_test *q)
{
    arrank_diagnosis *d = wk->d;
    arrank_curvature *cv = &d->curvature;
    cv->n = n;
    if (have_line && arrank_curvature_quad(wk, base, n, q) == 0) {
        cv->tested = 1;
        cv->quad_c_K2 = q->c_K2;
        cv->quad_c_se_K2 = q->c_se_K2;
        cv->quad_t = q->t;
        cv->quad_p = q->p;
        cv->quad_dof = q->dof;
        cv->ea_cold_J_mol = q->ea_cold;
        cv->ea_hot_J_mol = q->ea_hot;
        cv->detected = q->p < ARRANK_CURVE_LEVEL;
        if (cv->detected)
            cv->direction = q->t < 0 ? ARRANK_BEND_DOWN : ARRANK_BEND_UP;
        /* The series-resistance model can only bend the plot down, and it
           serves as evidence for the cause of a detected bend; the decision
           itself is the quadratic test's.  Fitting it (a profile over 31
           conductances, then a 3-parameter nonlinear fit) only where a
           downward bend was detected keeps a campaign of thousands of
           straight samples fast and changes no flag. */
        if (cv->detected && cv->direction == ARRANK_BEND_DOWN)
            arrank_series_fit(wk, base, n, lf_all, cv);
        else
            cv->rss_line = lf_all->rss;
    }
    if (wk->nomem)
        return;
    arrank_curvature_local(wk, base, grp, n, n_groups, cv);
    for (size_t k = 0; k < n && cv->n_local; k++)
        d->points[base[k]].local_ea_J_mol =
            cv->local[arrank_curvature_window_of(grp[k], n_groups)].ea_J_mol;
}

/* ---- step 4: the kinetic window --------------------------------------------------- */

/* 1 when the window's quadratic test still bends down one-sided at TRIM_LEVEL. */
static int window_bent(const arrank_dwork *wk, const size_t *idx, size_t n)
{
    arrank_quad_test qc;
    return arrank_curvature_quad(wk, idx, n, &qc) == 0 && qc.t < 0 &&
           qc.t < -arrank_stats_t_upper(TRIM_LEVEL, qc.dof);
}

/*
 * Grow the window over cand[0..nc) (sorted by T, set-point groups grp_c,
 * ngc of them) from its coldest MIN_WINDOW_TEMPS set points one set point at
 * a time, and stop before the first one that (a) pulls the window's Ea below
 * the coldest window's, (b) falls below the line through the colder points,
 * or (c) makes the window bend down; each one-sided at TRIM_LEVEL.  (a)
 * compares nested estimates: the variance of their difference is the
 * difference of their variances, R^2 s^2 (1/Sxx_cold - 1/Sxx) (Hausman,
 * Econometrica 46:1251, 1978).  Returns the window's length; *still_bent
 * when it still bends.
 */
static size_t grow_window(const arrank_dwork *wk, const size_t *cand, size_t nc,
                          const size_t *grp_c, size_t ngc, int *still_bent)
{
    size_t nw = 0;
    while (nw < nc && grp_c[nw] < MIN_WINDOW_TEMPS)
        nw++;
    arrank_line cold, prev;
    if (arrank_regress_line(wk, cand, nw, &cold) != 0)
        return nc;
    prev = cold;
    /* One set point a step; a sample with more than WINDOW_MAX_STEPS set
       points (a logger, not a rig) takes several a step, so that the refits
       stay O(WINDOW_MAX_STEPS n), not O(n^2). */
    const size_t step =
        ngc > WINDOW_MAX_STEPS ? (ngc + WINDOW_MAX_STEPS - 1) / WINDOW_MAX_STEPS : 1;
    for (size_t g = MIN_WINDOW_TEMPS; g < ngc; g += step) {
        size_t k2 = nw;
        while (k2 < nc && grp_c[k2] < g + step)
            k2++;
        arrank_line cur;
        if (arrank_regress_line(wk, cand, k2, &cur) != 0 || !(cur.dof > 0))
            break;
        double tcrit = arrank_stats_t_upper(TRIM_LEVEL, cur.dof);
        double var_d = R * R * cur.s2 * (1.0 / cold.sc.sxx - 1.0 / cur.sc.sxx);
        int lower = var_d > 0 && (cur.ea_J_mol - cold.ea_J_mol) / sqrt(var_d) < -tcrit;
        /* mean residual of the new temperature against the colder line,
           with its prediction variance (delta method) */
        double sw = 0, ey = 0, ex = 0;
        for (size_t j = nw; j < k2; j++) {
            sw += wk->w[cand[j]];
            ey += wk->w[cand[j]] * wk->y[cand[j]];
            ex += wk->w[cand[j]] * wk->x[cand[j]];
        }
        ey /= sw;
        ex /= sw;
        double u = (ex - prev.sc.xm) / prev.sc.sx;
        double var = prev.cov[0] + 2 * u * prev.cov[1] + u * u * prev.cov[3] + prev.s2 / sw;
        int below = prev.dof > 0 && (ey - arrank_regress_line_at(&prev, ex)) / sqrt(var) <
                                        -arrank_stats_t_upper(TRIM_LEVEL, prev.dof);
        if (lower || below || window_bent(wk, cand, k2))
            break;
        nw = k2;
        prev = cur;
    }
    /* The onset is gradual (for a sphere eta = 1 - phi^2/15 at small phi,
       from Thiele's formula), so the temperature next to the detected onset
       is itself partly affected: leave it out too. */
    if (nw < nc) {
        size_t gl = grp_c[nw - 1];
        size_t k3 = nw;
        while (k3 > 0 && grp_c[k3 - 1] == gl)
            k3--;
        if (gl >= MIN_WINDOW_TEMPS)
            nw = k3;
    }
    *still_bent = window_bent(wk, cand, nw);
    return nw;
}

/* The kinetic window over cand[0..nc), only when the candidates bend down;
   q_base is the test over base when cand is base (else NULL).  Points
   hotter than the window are marked excluded = 2 (provisional).  Returns
   the window's length. */
static size_t kinetic_window(arrank_dwork *wk, const size_t *cand, size_t nc, size_t *grp_c,
                             const arrank_quad_test *q_base, int *still_bent)
{
    const arrank_curvature *cv = &wk->d->curvature;
    *still_bent = 0;
    int start_bent = 0;
    arrank_quad_test qc;
    if (cv->tested && q_base) /* cand is base: the test above is this one */
        start_bent = arrank_curvature_bends_down(q_base);
    else if (cv->tested)
        start_bent =
            arrank_curvature_quad(wk, cand, nc, &qc) == 0 && arrank_curvature_bends_down(&qc);
    size_t ngc = arrank_regress_groups(wk->pt, cand, nc, grp_c);
    if (!start_bent)
        return nc;
    size_t nw = nc;
    if (ngc <= MIN_WINDOW_TEMPS)
        *still_bent = 1;
    else
        nw = grow_window(wk, cand, nc, grp_c, ngc, still_bent);
    for (size_t j = nw; j < nc; j++)
        wk->d->points[cand[j]].excluded = 2; /* provisional: hotter than the window */
    return nw;
}

/* ---- steps 5 and 6: regimes and outliers ------------------------------------------ */

/* The regime of every point of base, and the proposed exclusions: points
   hotter than the window and above the conversion limit (unless use_all).
   ea_w is the window's Ea; film_all 1 when the line through every point is
   below FILM_EA_J_MOL. */
static void regimes(arrank_dwork *wk, const size_t *base, const size_t *grp, size_t n,
                    size_t n_groups, double ea_w, int film_all, int use_all)
{
    arrank_diagnosis *d = wk->d;
    const arrank_curvature *cv = &d->curvature;
    /* 1. the points hotter than the window: regime from the local Ea, unless
       its standard error is too large to tell */
    int film_reached = 0;
    for (size_t k = 0; k < n; k++) {
        arrank_point_diag *pd = &d->points[base[k]];
        if (pd->excluded != 2)
            continue;
        regime_of_excluded(wk, base[k], ea_w);
        if (pd->regime != ARRANK_REGIME_UNCLASSIFIED && cv->n_local &&
            cv->local[arrank_curvature_window_of(grp[k], n_groups)].ea_se_J_mol >
                THIN_SE_FRAC * ea_w)
            pd->regime = ARRANK_REGIME_UNCLASSIFIED;
        film_reached |= pd->regime == ARRANK_REGIME_FILM;
    }
    /* 2. every point's regime and the reasons of the left-out ones.  When the
       local Ea goes below what pore diffusion can give, the film resistance
       is what bends the plot, and the points on the way down through the
       pore-like range are the same film resistance growing (1/r = 1/k +
       1/k_t passes every ratio between 1 and 0), so they are film-limited too */
    for (size_t k = 0; k < n; k++) {
        size_t i = base[k];
        arrank_point_diag *pd = &d->points[i];
        if (pd->excluded == 2) {
            pd->excluded = 0;
            const int on_way = film_reached && pd->regime == ARRANK_REGIME_PORE;
            if (on_way)
                pd->regime = ARRANK_REGIME_FILM;
            const double le = pd->local_ea_J_mol, ratio = le / ea_w;
            char *why;
            if (pd->regime == ARRANK_REGIME_FILM && on_way)
                why = arrank_dwork_fmt(wk, "film-limited point: hotter than the kinetic window, local apparent "
                              "Ea %.0f kJ/mol against %.0f kJ/mol in the window (ratio %.2f), "
                              "on the way down to the film control of the hotter points",
                          kj(le), kj(ea_w), ratio);
            else if (pd->regime == ARRANK_REGIME_FILM)
                why = arrank_dwork_fmt(wk, "film-limited point: hotter than the kinetic window, local apparent "
                              "Ea %.0f kJ/mol against %.0f kJ/mol in the window (ratio %.2f; "
                              "below %.0f kJ/mol or %.1f of the window's, past what pore "
                              "diffusion can do)",
                          kj(le), kj(ea_w), ratio, kj(FILM_EA_J_MOL), PORE_RATIO_LO);
            else if (pd->regime == ARRANK_REGIME_PORE)
                why = arrank_dwork_fmt(wk, "pore-limited point: hotter than the kinetic window, local apparent "
                              "Ea %.0f kJ/mol against %.0f kJ/mol in the window (ratio %.2f; "
                              "pore diffusion gives %.1f-%.1f, one half in the strong limit)",
                          kj(le), kj(ea_w), ratio, PORE_RATIO_LO, PORE_RATIO_HI);
            else if (isfinite(le) && ea_w > 0 && ratio > PORE_RATIO_HI)
                why = arrank_dwork_fmt(wk, "where the bend begins: hotter than the kinetic window, local "
                              "apparent Ea %.0f kJ/mol against %.0f kJ/mol in the window "
                              "(ratio %.2f, above %.1f)",
                          kj(le), kj(ea_w), ratio, PORE_RATIO_HI);
            else if (isfinite(le) && ea_w > 0)
                why = arrank_dwork_fmt(wk, "hotter than the kinetic window: local apparent Ea %.0f kJ/mol "
                              "against %.0f kJ/mol in the window (ratio %.2f), too uncertain "
                              "to name a regime",
                          kj(le), kj(ea_w), ratio);
            else
                why = arrank_dwork_fmt(wk, "hotter than the kinetic window: no local apparent Ea to name a "
                              "regime");
            if (!use_all)
                set_excluded(wk, i, why);
            else
                free(why);
        } else if (film_all)
            pd->regime = ARRANK_REGIME_FILM;
        else if (pd->high_conversion)
            pd->regime = ARRANK_REGIME_UNCLASSIFIED;
        else if (cv->tested && cv->direction != ARRANK_BEND_UP)
            pd->regime = ARRANK_REGIME_KINETIC;
        else
            pd->regime = ARRANK_REGIME_UNCLASSIFIED;
        if (pd->high_conversion && !use_all)
            set_excluded(wk, i,
                         arrank_dwork_fmt(wk, "conversion %.1f %% above the %.0f %% differential limit",
                             100.0 * wk->pt[i].conversion, 100.0 * d->conversion_limit));
    }
}

/* Outliers on the set to be fitted, proposed for exclusion on request. */
static void outliers(arrank_dwork *wk, const size_t *fitset, size_t nfit, int drop)
{
    const arrank_diagnosis *d = wk->d;
    arrank_quality_outliers(wk, fitset, nfit);
    if (!drop)
        return;
    for (size_t k = 0; k < nfit; k++) {
        size_t i = fitset[k];
        const arrank_point_diag *pd = &d->points[i];
        if (pd->outlier)
            set_excluded(wk, i,
                         arrank_dwork_fmt(wk, "outlier: studentized residual %.2f (limit %.2f), Cook's "
                                 "distance %.2f",
                             pd->student_resid, d->outlier_t_limit, pd->cooks_d));
    }
}

/* ---- the stage ------------------------------------------------------------------- */

/* A new diagnosis of np points with every number unknown. */
static arrank_diagnosis *diagnosis_new(size_t np, const arrank_arrhenius *fit, double limit)
{
    arrank_diagnosis *d = calloc(1, sizeof *d);
    if (!d)
        return NULL;
    d->points = calloc(np ? np : 1, sizeof *d->points);
    if (!d->points) {
        free(d);
        return NULL;
    }
    d->n_points = np;
    for (size_t i = 0; i < np; i++)
        d->points[i].local_ea_J_mol = d->points[i].student_resid = d->points[i].cooks_d = NAN;
    d->conversion_limit = limit > 0 && limit < 1 ? limit : 0.10;
    d->ea_all_J_mol = fit->ea_J_mol;
    d->ea_all_se_J_mol = fit->ea_se_J_mol;
    d->ea_all_dof = fit->dof;
    d->window_lo_K = d->window_hi_K = NAN;
    d->outlier_t_limit = NAN;
    d->ea_window_J_mol = d->scatter_ln = NAN;
    arrank_curvature *cv = &d->curvature;
    cv->level = ARRANK_CURVE_LEVEL;
    cv->quad_c_K2 = cv->quad_c_se_K2 = cv->quad_t = cv->quad_p = cv->quad_dof = NAN;
    cv->ea_cold_J_mol = cv->ea_hot_J_mol = NAN;
    cv->series_F = cv->series_p = cv->aicc_line = cv->aicc_series = NAN;
    cv->series_m = ARRANK_SERIES_M;
    cv->series_T_ref_K = cv->series_ea_J_mol = cv->series_ea_se_J_mol = NAN;
    cv->series_ln_kt = cv->rss_line = cv->rss_series = NAN;
    return d;
}

/* The usable points of the input's fit, in temperature order; in_base[i]
   marks them.  Returns their number. */
static size_t base_points(const arrank_diagnose_input *in, size_t *base, unsigned char *in_base)
{
    const arrank_sample *s = in->sample;
    size_t n = 0;
    for (size_t i = 0; i < s->n_points; i++) {
        if (!in->used[i] || !arrank_screen_usable(&s->points[i]))
            continue;
        base[n++] = i;
        in_base[i] = 1;
    }
    arrank_regress_sort(s->points, base, n);
    return n;
}

/* x = 1/T, y = ln r and the weights of every point: (r/sd)^2 when every
   point of base has a usable sd (as the fit), else 1. */
static int set_xyw(arrank_dwork *wk, const size_t *base, size_t n)
{
    int weighted = 1;
    for (size_t k = 0; k < n; k++) {
        const arrank_point *p = &wk->pt[base[k]];
        if (!(isfinite(p->rate_sd) && p->rate_sd > 0))
            weighted = 0;
    }
    for (size_t i = 0; i < wk->np; i++) {
        const arrank_point *p = &wk->pt[i];
        wk->x[i] = 1.0 / p->temp_K;
        wk->y[i] = p->rate > 0 ? log(p->rate) : NAN;
        wk->w[i] = weighted ? (p->rate / p->rate_sd) * (p->rate / p->rate_sd) : 1.0;
    }
    return weighted;
}

/* Steps 1-6 on prepared working arrays (see arrank_diagnose_propose). */
static void propose_steps(arrank_dwork *wk, size_t *base, size_t *grp, size_t *cand, size_t *grp_c,
                          int *label, const unsigned char *in_base, size_t n, int weighted,
                          const arrank_diagnose_options *opt)
{
    arrank_diagnosis *d = wk->d;
    size_t n_groups = arrank_regress_groups(wk->pt, base, n, grp);

    /* 1. conversion above the differential limit */
    size_t nc = arrank_quality_conversion(wk, base, n, cand);

    /* 2. curvature of the plot as measured */
    arrank_line lf_all;
    int have_line = arrank_regress_line(wk, base, n, &lf_all) == 0;
    if (have_line && !weighted && lf_all.dof > 0)
        wk->scatter = sqrt(lf_all.s2);
    arrank_quad_test q;
    curvature_step(wk, base, grp, n, n_groups, &lf_all, have_line, &q);
    local_intervals(&d->curvature, opt->confidence > 0 && opt->confidence < 1 ? opt->confidence
                                                                              : 0.95);
    if (wk->nomem)
        return;

    /* 3. runs and repeats, drift */
    d->has_repeats =
        arrank_quality_runs(wk, base, grp, n, n_groups, in_base, label, have_line ? &lf_all : NULL);
    /* the drift line's interval at the run's level, as every interval (the
       figure of rate against time on stream draws it) */
    if (d->drift.tested && d->drift.dof > 0)
        d->drift.t_quantile = arrank_t_quantile(
            opt->confidence > 0 && opt->confidence < 1 ? opt->confidence : 0.95, d->drift.dof);
    if (wk->nomem)
        return;

    /* 4. kinetic window (cand is sorted by T already) */
    int still_bent;
    size_t nw = kinetic_window(wk, cand, nc, grp_c, nc == n ? &q : NULL, &still_bent);

    /* 5. regimes */
    arrank_line lw;
    double ea_w = arrank_regress_line(wk, cand, nw, &lw) == 0 ? lw.ea_J_mol : NAN;
    int film_all = have_line && lf_all.ea_J_mol < FILM_EA_J_MOL;
    regimes(wk, base, grp, n, n_groups, ea_w, film_all, opt->use_all);
    if (still_bent)
        arrank_dwork_note(wk, "the hot end was trimmed down to %d temperatures and the rest still bends: the "
                 "window's Ea may still understate the intrinsic value",
             MIN_WINDOW_TEMPS);
    if (film_all)
        arrank_dwork_finding(wk, "apparent Ea %.1f kJ/mol on every point is below %.0f kJ/mol: the whole "
                    "sample may be film-controlled (no kinetic window)",
                kj(lf_all.ea_J_mol), kj(FILM_EA_J_MOL));

    /* 6. outliers on the set to be fitted */
    outliers(wk, opt->use_all ? base : cand, opt->use_all ? n : nw, opt->drop_outliers);

    d->ea_window_J_mol = ea_w;
    d->scatter_ln = wk->scatter;
    d->window_proposed = nw < nc;
}

arrank_status arrank_diagnose_propose(const arrank_diagnose_input *in,
                                      const arrank_diagnose_options *opt,
                                      arrank_diagnosis **out, arrank_error *err)
{
    arrank_diagnose_options defaults = arrank_diagnose_options_defaults();
    if (!opt)
        opt = &defaults;
    *out = NULL;
    const arrank_sample *s = in->sample;
    size_t np = s->n_points;
    arrank_dwork wk = {s, s->points, np, NULL, NULL, NULL, NULL, NAN, 0, NULL};
    size_t cap = np ? np : 1;
    /* The working arrays in one block, on the stack for a usual sample: doubles
       (x, y, w and three lsq columns), then size_t (four index sets), int,
       bytes, each part a multiple of 8 bytes long so the next stays aligned. */
    const size_t scratch_bytes = cap * (6 * sizeof(double) + 4 * sizeof(size_t)) +
                                 ((cap * sizeof(int) + 7) & ~(size_t)7) + ((cap + 7) & ~(size_t)7);
    _Alignas(max_align_t) unsigned char scratch_small[SCRATCH_SMALL_BYTES];
    unsigned char *scratch = scratch_bytes <= sizeof scratch_small ? scratch_small
                                                                   : malloc(scratch_bytes);
    arrank_diagnosis *d = diagnosis_new(np, in->fit, opt->conversion_limit);
    if (!d || !scratch) {
        if (scratch != scratch_small)
            free(scratch);
        arrank_diagnosis_free(d);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    double *dbl = (double *)(void *)scratch;
    wk.x = dbl;
    wk.y = dbl + cap;
    wk.w = dbl + 2 * cap;
    wk.lsq = dbl + 3 * cap;
    wk.d = d;
    size_t *base = (size_t *)(void *)(dbl + 6 * cap);
    size_t *grp = base + cap, *cand = base + 2 * cap, *grp_c = base + 3 * cap;
    int *label = (int *)(void *)(base + 4 * cap);
    unsigned char *in_base = (unsigned char *)label + ((cap * sizeof(int) + 7) & ~(size_t)7);
    memset(in_base, 0, cap);

    size_t n = base_points(in, base, in_base);
    d->order = malloc((n ? n : 1) * sizeof *d->order);
    if (d->order) {
        memcpy(d->order, base, n * sizeof *base);
        d->n_order = n;
    } else
        wk.nomem = 1;
    int weighted = set_xyw(&wk, base, n);
    if (!wk.nomem)
        propose_steps(&wk, base, grp, cand, grp_c, label, in_base, n, weighted, opt);
    if (scratch != scratch_small)
        free(scratch);
    if (wk.nomem) {
        arrank_diagnosis_free(d);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    *out = d;
    return ARRANK_OK;
}

arrank_status arrank_diagnose_withdraw(arrank_diagnosis *d, const char *fit_error,
                                       arrank_error *err)
{
    /* too little left: keep every point and say so */
    char *s = arrank_strfmt("the points left after the exclusions cannot be fitted (%s); every "
                            "point is kept",
                            fit_error);
    for (size_t i = 0; i < d->n_points; i++) {
        d->points[i].excluded = 0;
        free(d->points[i].reason);
        d->points[i].reason = NULL;
    }
    if (arrank_strings_push(&d->notes, &d->n_notes, s) != 0)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    return ARRANK_OK;
}

arrank_status arrank_diagnose_conclude(arrank_diagnosis *d, const arrank_diagnose_input *in,
                                       const arrank_arrhenius *final_fit, int window_applied,
                                       const arrank_diagnose_options *opt, arrank_error *err)
{
    arrank_diagnose_options defaults = arrank_diagnose_options_defaults();
    if (!opt)
        opt = &defaults;
    const arrank_sample *s = in->sample;
    arrank_dwork wk = {s, s->points, s->n_points, NULL, NULL, NULL, d, d->scatter_ln, 0, NULL};
    const size_t *base = d->order, n = d->n_order;
    d->window_applied = window_applied;
    if (final_fit) {
        d->window_lo_K = final_fit->T_min_K;
        d->window_hi_K = final_fit->T_max_K;
        d->window_n = final_fit->n;
    }

    /* 8. transport criteria, mixed basis */
    arrank_transport_criteria(&wk, final_fit ? final_fit->ea_J_mol : d->ea_all_J_mol,
                              opt->rate_unit, opt->units, opt->units_why);
    char why[512];
    int mixed = own_basis_mismatch(s, why, sizeof why) ||
                (opt->basis.known && opt->basis.mixed &&
                 snprintf(why, sizeof why, "%s", opt->basis.why) >= 0);
    if (mixed) {
        d->mixed_basis = 1;
        arrank_dwork_finding(&wk, "normalisation bases are mixed: %s; rankings across bases can invert", why);
    }

    /* 9. causes and words */
    if (d->curvature.detected)
        name_causes(&wk, base, n, isfinite(d->ea_window_J_mol) ? d->ea_window_J_mol
                                                              : d->ea_all_J_mol,
                    d->has_repeats);
    describe(&wk, final_fit, base, n,
             opt->confidence > 0 && opt->confidence < 1 ? opt->confidence : 0.95);
    arrank_transport_describe(&wk);
    if (wk.nomem)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    return ARRANK_OK;
}

void arrank_diagnosis_free(arrank_diagnosis *d)
{
    if (!d)
        return;
    if (d->points)
        for (size_t i = 0; i < d->n_points; i++)
            free(d->points[i].reason);
    free(d->points);
    free(d->order);
    arrank_curvature *cv = &d->curvature;
    free(cv->local);
    for (size_t k = 0; k < cv->n_causes; k++) {
        free(cv->causes[k].cause);
        free(cv->causes[k].evidence);
    }
    free(cv->causes);
    arrank_transport_free(d);
    for (size_t j = 0; j < d->n_runs; j++) {
        free(d->runs[j].label_ref);
        free(d->runs[j].label);
    }
    free(d->runs);
    free(d->drift.note);
    for (size_t k = 0; k < d->n_findings; k++)
        free(d->findings[k]);
    free(d->findings);
    for (size_t k = 0; k < d->n_notes; k++)
        free(d->notes[k]);
    free(d->notes);
    free(d);
}

arrank_status arrank_diagnose_hold(const arrank_sample *s, double confidence, arrank_hold **out,
                                   arrank_error *err)
{
    return arrank_quality_hold(s, confidence, out, err);
}

void arrank_hold_free(arrank_hold *hold)
{
    if (hold)
        free(hold->words);
    free(hold);
}
