/*
 * diagnosis_out.c - one sample's diagnosis written out (diagnosis_out.h,
 * arrank/diagnosis_out.h): as a JSON object for the writers, and in plain
 * words for people (the check command, the report).
 */
#include "arrank/diagnosis_out.h"

#include <jansson.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/analysis.h"
#include "arrank/diagnose.h"
#include "arrank/text.h"
#include "diagnosis_out.h"
#include "number.h"

/* ---- JSON ------------------------------------------------------------------- */

static json_t *jnum(double v)
{
    return isfinite(v) ? json_real(v) : json_null();
}

static json_t *jstr(const char *s)
{
    return s ? json_string(s) : json_null();
}

/* A string, or null when json_string refuses it (a file name that is not
   UTF-8): the entry it belongs to is kept. */
static json_t *jstr_or_null(const char *s)
{
    json_t *v = s ? json_string(s) : NULL;
    return v ? v : json_null();
}

static json_t *jkj(double j)
{
    return jnum(j / 1000.0);
}

static json_t *criterion_json(const arrank_criterion *c)
{
    json_t *o = json_object();
    if (!o)
        return NULL;
    json_object_set_new(o, "computed", json_boolean(c->computed));
    json_object_set_new(o, "value", c->computed ? jnum(c->value) : json_null());
    json_object_set_new(o, "threshold", jnum(c->threshold));
    json_object_set_new(o, "threshold_source", jstr(c->source));
    json_object_set_new(o, "temp_K", jnum(c->temp_K));
    json_object_set_new(o, "verdict",
                        json_string(!c->computed ? "not computed"
                                    : c->passes  ? "below threshold: negligible"
                                                 : "above threshold: may limit the rate"));
    json_object_set_new(o, "detail", jstr(c->detail));
    return o;
}

/* Prater's temperature rise: rise_K (centre above the surface, at most),
   beta, the surface temperature, source and inputs. */
static json_t *prater_json(const arrank_prater *p)
{
    json_t *o = json_object();
    if (!o)
        return NULL;
    json_object_set_new(o, "computed", json_boolean(p->computed));
    json_object_set_new(o, "rise_K", p->computed ? jnum(p->rise_K) : json_null());
    json_object_set_new(o, "beta", p->computed ? jnum(p->beta) : json_null());
    json_object_set_new(o, "temp_K", jnum(p->temp_K));
    json_object_set_new(o, "source", jstr(p->source));
    json_object_set_new(o, "detail", jstr(p->detail));
    return o;
}

/* The hot-spot caution: enthalpy, highest conversion and where, the
   adiabatic rise of the feed there. */
static json_t *hot_spot_json(const arrank_hot_spot *h)
{
    json_t *o = json_object();
    if (!o)
        return NULL;
    json_object_set_new(o, "caution", json_boolean(h->caution));
    json_object_set_new(o, "reaction_enthalpy_kJ_mol", jkj(h->enthalpy_J_mol));
    json_object_set_new(o, "conversion_max", jnum(h->conversion_max));
    json_object_set_new(o, "temp_K", jnum(h->temp_K));
    json_object_set_new(o, "line", h->line > 0 ? json_integer((json_int_t)h->line) : json_null());
    json_object_set_new(o, "adiabatic_rise_K", jnum(h->adiabatic_rise_K));
    json_object_set_new(o, "detail", jstr(h->detail));
    return o;
}

static json_t *curvature_json(const arrank_curvature *cv)
{
    json_t *o = json_object(), *q = json_object(), *sr = json_object(), *loc = json_array(),
           *causes = json_array();
    if (!o || !q || !sr || !loc || !causes) {
        json_decref(o);
        json_decref(q);
        json_decref(sr);
        json_decref(loc);
        json_decref(causes);
        return NULL;
    }
    json_object_set_new(o, "verdict", json_string(cv->detected ? "detected" : "not detected"));
    json_object_set_new(o, "tested", json_boolean(cv->tested));
    json_object_set_new(o, "direction", json_string(arrank_bend_name(cv->direction)));
    json_object_set_new(o, "level", jnum(cv->level));
    json_object_set_new(o, "n_points", json_integer((json_int_t)cv->n));
    json_object_set_new(q, "c_K2", jnum(cv->quad_c_K2));
    json_object_set_new(q, "c_se_K2", jnum(cv->quad_c_se_K2));
    json_object_set_new(q, "t", jnum(cv->quad_t));
    json_object_set_new(q, "p", jnum(cv->quad_p));
    json_object_set_new(q, "dof", jnum(cv->quad_dof));
    json_object_set_new(q, "ea_cold_kJ_mol", jkj(cv->ea_cold_J_mol));
    json_object_set_new(q, "ea_hot_kJ_mol", jkj(cv->ea_hot_J_mol));
    json_object_set_new(o, "quadratic", q);
    json_object_set_new(sr, "fitted", json_boolean(cv->series_fitted));
    json_object_set_new(sr, "m", jnum(cv->series_m));
    json_object_set_new(sr, "T_ref_K", jnum(cv->series_T_ref_K));
    json_object_set_new(sr, "ea_kJ_mol", jkj(cv->series_ea_J_mol));
    json_object_set_new(sr, "ea_kJ_mol_se", jkj(cv->series_ea_se_J_mol));
    json_object_set_new(sr, "ln_k_t", jnum(cv->series_ln_kt));
    json_object_set_new(sr, "rss_line", jnum(cv->rss_line));
    json_object_set_new(sr, "rss_series", jnum(cv->rss_series));
    json_object_set_new(sr, "F", jnum(cv->series_F));
    json_object_set_new(sr, "p", jnum(cv->series_p));
    json_object_set_new(sr, "aicc_line", jnum(cv->aicc_line));
    json_object_set_new(sr, "aicc_series", jnum(cv->aicc_series));
    json_object_set_new(o, "series_resistance", sr);
    for (size_t k = 0; k < cv->n_local; k++) {
        const arrank_local_ea *le = &cv->local[k];
        json_array_append_new(
            loc, json_pack("{s:o, s:o, s:o, s:I, s:o, s:o, s:[o, o]}", "temp_lo_K",
                           jnum(le->temp_lo_K), "temp_hi_K", jnum(le->temp_hi_K), "temp_mid_K",
                           jnum(le->temp_mid_K), "n_points", (json_int_t)le->n_points,
                           "ea_kJ_mol", jkj(le->ea_J_mol), "ea_kJ_mol_se",
                           jkj(le->ea_se_J_mol), "ea_kJ_mol_ci", jkj(le->ea_lo_J_mol),
                           jkj(le->ea_hi_J_mol)));
    }
    json_object_set_new(o, "local_ea", loc);
    for (size_t k = 0; k < cv->n_causes; k++)
        json_array_append_new(causes, json_pack("{s:s, s:s, s:b}", "cause", cv->causes[k].cause,
                                                "evidence", cv->causes[k].evidence, "supported",
                                                cv->causes[k].supported));
    json_object_set_new(o, "causes", causes);
    return o;
}

static json_t *strings_json(char **v, size_t n)
{
    json_t *a = json_array();
    for (size_t k = 0; a && k < n; k++)
        json_array_append_new(a, json_string(v[k]));
    return a;
}

static const char *verdict_name(int v)
{
    return v < 0 ? "deactivation" : v > 0 ? "activation" : "none";
}

json_t *arrank_diagnosis_json(const arrank_result *res)
{
    const arrank_diagnosis *d = res->diagnosis;
    if (!d)
        return json_null();
    const arrank_sample *s = res->sample;
    json_t *o = json_object(), *regime = json_array(), *local = json_array(),
           *excluded = json_array(), *crit = json_object(), *qual = json_object(),
           *hc = json_array(), *runs = json_array(), *outl = json_array(), *win = json_object(),
           *drift = json_object();
    json_t *all[] = {o, regime, local, excluded, crit, qual, hc, runs, outl, win, drift};
    for (size_t k = 0; k < sizeof all / sizeof *all; k++)
        if (!all[k]) {
            for (size_t j = 0; j < sizeof all / sizeof *all; j++)
                json_decref(all[j]);
            return NULL;
        }
    for (size_t i = 0; i < d->n_points; i++) {
        const arrank_point_diag *pd = &d->points[i];
        const arrank_point *p = &s->points[i];
        json_array_append_new(regime, json_string(arrank_regime_name(pd->regime)));
        json_array_append_new(local, jkj(pd->local_ea_J_mol));
        if (!res->used[i])
            json_array_append_new(excluded,
                                  json_pack("{s:o, s:I, s:o, s:o}", "file",
                                            jstr_or_null(arrank_point_file(s, p)), "line",
                                            (json_int_t)p->line, "temp_K", jnum(p->temp_K),
                                            "reason",
                                            jstr(pd->reason ? pd->reason
                                                            : "left out before the diagnostics")));
        if (pd->high_conversion)
            json_array_append_new(hc, json_pack("{s:I, s:o, s:o}", "line", (json_int_t)p->line,
                                                "temp_K", jnum(p->temp_K), "conversion",
                                                jnum(p->conversion)));
        if (pd->outlier)
            json_array_append_new(
                outl, json_pack("{s:I, s:o, s:o, s:o, s:b}", "line", (json_int_t)p->line,
                                "temp_K", jnum(p->temp_K), "studentized_residual",
                                jnum(pd->student_resid), "cooks_distance", jnum(pd->cooks_d),
                                "dropped", !res->used[i]));
    }
    json_object_set_new(o, "regime", regime);
    json_object_set_new(o, "local_ea_kJ_mol", local);
    json_object_set_new(o, "excluded", excluded);
    json_object_set_new(win, "applied", json_boolean(d->window_applied));
    json_object_set_new(win, "temp_lo_K", jnum(d->window_lo_K));
    json_object_set_new(win, "temp_hi_K", jnum(d->window_hi_K));
    json_object_set_new(win, "n_points", json_integer((json_int_t)d->window_n));
    json_object_set_new(win, "ea_all_points_kJ_mol", jkj(d->ea_all_J_mol));
    json_object_set_new(win, "ea_all_points_kJ_mol_se", jkj(d->ea_all_se_J_mol));
    json_object_set_new(o, "kinetic_window", win);
    json_object_set_new(o, "curvature", curvature_json(&d->curvature));
    json_object_set_new(crit, "weisz_prater", criterion_json(&d->weisz_prater));
    json_object_set_new(crit, "mears", criterion_json(&d->mears));
    json_object_set_new(crit, "interphase_heat", criterion_json(&d->heat.interphase));
    json_object_set_new(crit, "intraparticle_heat", criterion_json(&d->heat.intraparticle));
    json_object_set_new(crit, "prater_rise", prater_json(&d->heat.prater));
    json_object_set_new(crit, "hot_spot", hot_spot_json(&d->heat.hot_spot));
    json_object_set_new(o, "criteria", crit);
    json_object_set_new(qual, "conversion_limit", jnum(d->conversion_limit));
    json_object_set_new(qual, "high_conversion", hc);
    for (size_t j = 0; j < d->n_runs; j++) {
        const arrank_run_shift *r = &d->runs[j];
        json_array_append_new(
            runs, json_pack("{s:o, s:o, s:o, s:I, s:o, s:o, s:o, s:o, s:o, s:s}", "reference",
                            jstr(r->label_ref), "run", jstr(r->label), "method", jstr(r->method),
                            "n", (json_int_t)r->n_pairs, "shift_ln_rate", jnum(r->shift_ln),
                            "shift_ln_rate_se", jnum(r->shift_ln_se), "change", jnum(r->change),
                            "t", jnum(r->t), "p", jnum(r->p), "verdict",
                            verdict_name(r->verdict)));
    }
    json_object_set_new(qual, "runs", runs);
    const arrank_drift *dr = &d->drift;
    json_object_set_new(drift, "tested", json_boolean(dr->tested));
    json_object_set_new(drift, "slope_ln_rate_per_h", jnum(dr->slope_ln_per_h));
    json_object_set_new(drift, "slope_se", jnum(dr->slope_se));
    json_object_set_new(drift, "t", jnum(dr->t));
    json_object_set_new(drift, "p", jnum(dr->p));
    json_object_set_new(drift, "span_h", jnum(dr->span_h));
    json_object_set_new(drift, "change", jnum(dr->change));
    json_object_set_new(drift, "verdict", json_string(verdict_name(dr->verdict)));
    json_object_set_new(drift, "note", jstr(dr->note));
    json_object_set_new(qual, "time_on_stream_drift", drift);
    json_object_set_new(qual, "outliers", outl);
    json_object_set_new(qual, "outlier_t_limit", jnum(d->outlier_t_limit));
    json_object_set_new(qual, "cooks_distance_limit", jnum(ARRANK_COOK_LIMIT));
    json_object_set_new(qual, "mixed_basis", json_boolean(d->mixed_basis));
    json_object_set_new(o, "quality", qual);
    json_object_set_new(o, "findings", strings_json(d->findings, d->n_findings));
    json_object_set_new(o, "diagnosis_notes", strings_json(d->notes, d->n_notes));
    return o;
}

/* ---- plain words ------------------------------------------------------------ */

/* Problems flagged by the analysis outside the diagnostics, in plain words
   with their evidence; returns how many, writing them when f is not NULL. */
static size_t basic_problems(FILE *f, const arrank_result *res, int *bad)
{
    const arrank_arrhenius *fit = &res->fit;
    size_t k = 0;
    char at[120], span[160]; /* temperatures in the file's unit too (sample.h) */
    if (res->flags & ARRANK_FLAG_FEW_POINTS) {
        k++;
        if (f)
            *bad |= fprintf(f, "  problem: %s: only %zu points in the fit\n",
                            arrank_flag_words(ARRANK_FLAG_FEW_POINTS), fit->n) < 0;
    }
    if (res->flags & ARRANK_FLAG_NARROW_RANGE) {
        k++;
        if (f)
            *bad |= fprintf(f, "  problem: %s: %s\n", arrank_flag_words(ARRANK_FLAG_NARROW_RANGE),
                            arrank_sample_temp_text(res->sample, fit->T_min_K, fit->T_max_K, 2,
                                                    span, sizeof span)) < 0;
    }
    if (res->flags & ARRANK_FLAG_LOW_EA) {
        k++;
        if (f)
            *bad |= fprintf(f, "  problem: %s: Ea %.1f kJ/mol\n",
                            arrank_flag_words(ARRANK_FLAG_LOW_EA), fit->ea_J_mol / 1000.0) < 0;
    }
    if (res->flags & ARRANK_FLAG_POOR_FIT) {
        k++;
        if (f)
            *bad |= fprintf(f, "  problem: %s: chi2/dof = %.3g\n",
                            arrank_flag_words(ARRANK_FLAG_POOR_FIT), fit->chi2_dof) < 0;
    }
    if ((res->flags & ARRANK_FLAG_EXTRAPOLATED) && res->has_prediction) {
        k++;
        if (f)
            *bad |= fprintf(f,
                            "  problem: %s: %s against %s measured (%.2f K outside, "
                            "%.0f %% of the span); fitted kinetics are not valid outside the "
                            "tested window\n",
                            arrank_flag_words(ARRANK_FLAG_EXTRAPOLATED),
                            arrank_sample_temp_text(res->sample, res->at_T.temp_K, NAN, 2, at,
                                                    sizeof at),
                            arrank_sample_temp_text(res->sample, fit->T_min_K, fit->T_max_K, 2,
                                                    span, sizeof span),
                            res->at_T.extrapolation_K,
                            100.0 * res->at_T.extrapolation_rel) < 0;
    }
    return k;
}

/* Text from a file as a terminal may show it (arrank/text.h: control
   characters and bytes that are not UTF-8 escaped, "a\\nb" for a name with a
   line break): s itself when it is clean, else an escaped copy in *own, which
   the caller frees; "" for NULL or when out of memory. */
static const char *shown(const char *s, char **own)
{
    *own = NULL;
    if (!s)
        return "";
    if (arrank_text_is_clean(s))
        return s;
    size_t n = arrank_text_escape(s, NULL, 0) + 1;
    if (!(*own = malloc(n)))
        return "";
    arrank_text_escape(s, *own, n);
    return *own;
}

/* A line: lead, shown(text), a line break; 1 on a write error. */
static int put_shown(FILE *f, const char *lead, const char *text)
{
    char *own;
    int bad = fprintf(f, "%s%s\n", lead, shown(text, &own)) < 0;
    free(own);
    return bad;
}

/* One point left out of the fit: its line, its temperature ("\u2014" when the
   reader could not read one) as the file wrote it with kelvin beside it, so
   the row can be found in the file, and why: the reader's reason when it
   left the point out (arrank_point.omitted), else the diagnosis's.  1 on a
   write error. */
static int left_out_line(FILE *f, const arrank_sample *s, const arrank_point *p,
                         const arrank_point_diag *pd)
{
    const char *why = p->omitted      ? p->omitted
                      : pd->reason    ? pd->reason
                                      : "left out before the diagnostics";
    char *own;
    const char *text = shown(why, &own);
    int bad;
    const char *u = arrank_point_temp_unit(s, p);
    char where[300]; /* "line 5", or "line 5 of kite-b.csv" in a sample of several files */
    char *file_own;
    const char *file = s->n_sources > 1 ? shown(arrank_point_file(s, p), &file_own) : NULL;
    snprintf(where, sizeof where, "line %ld%s%.250s", p->line, file ? " of " : "",
             file ? file : "");
    if (file)
        free(file_own);
    if (isfinite(p->temp_K) && isfinite(p->temp_file) && u && strcmp(u, "K") != 0 &&
        arrank_text_is_clean(u))
        bad = fprintf(f, "  left out: %s, %.15g %s (%.1f K): %s\n", where, p->temp_file, u,
                      p->temp_K, text) < 0;
    else if (isfinite(p->temp_K))
        bad = fprintf(f, "  left out: %s, %.1f K: %s\n", where, p->temp_K, text) < 0;
    else
        bad = fprintf(f, "  left out: %s, \xE2\x80\x94: %s\n", where, text) < 0;
    free(own);
    return bad;
}

static arrank_status diagnosis_write_text_in_c(FILE *f, const arrank_result *res, arrank_error *err)
{
    const arrank_sample *s = res->sample;
    const arrank_diagnosis *d = res->diagnosis;
    int bad = 0;
    /* the id and the file name as they may be shown on a terminal */
    char *own_id, *own_file;
    const char *id = shown(s->id, &own_id), *file = shown(s->file, &own_file);
    if (res->error) {
        bad |= fprintf(f, "%s (%s): %s: ", id, file,
                       s->skipped ? "file not used" : "not fitted") < 0;
        bad |= put_shown(f, "", res->error);
        if (res->hold) /* a stability hold: its drift with time */
            bad |= put_shown(f, res->hold->problem ? "  problem: " : "  note: ",
                             res->hold->words);
    } else if (!d)
        bad |= fprintf(f, "%s (%s): diagnostics not run\n", id, file) < 0;
    else {
        size_t n_out = 0;
        for (size_t i = 0; i < s->n_points; i++)
            n_out += !res->used[i];
        size_t n_problems = d->n_findings + basic_problems(NULL, res, &bad);
        /* Ea with its interval at the run's level (the pipeline's t), the
           standard error named beside it */
        const double ea = res->fit.ea_J_mol / 1000.0, se = res->fit.ea_se_J_mol / 1000.0,
                     t = res->t_quantile;
        if (n_problems == 0)
            bad |= fprintf(f,
                           "%s (%s): no problem found; Ea %.1f kJ/mol (%.4g %% interval "
                           "%.1f-%.1f, standard error %.1f) on %zu points\n",
                           id, file, ea, 100.0 * res->confidence, ea - t * se, ea + t * se, se,
                           res->fit.n) < 0;
        else
            bad |= fprintf(f, "%s (%s): %zu problem%s found\n", id, file, n_problems,
                           n_problems == 1 ? "" : "s") < 0;
        for (size_t k = 0; k < d->n_findings; k++)
            bad |= put_shown(f, "  problem: ", d->findings[k]);
        basic_problems(f, res, &bad);
        for (size_t i = 0; i < s->n_points; i++)
            if (!res->used[i])
                bad |= left_out_line(f, s, &s->points[i], &d->points[i]);
        if (n_out == 0 && n_problems > 0)
            bad |= fprintf(f, "  every point is in the fit\n") < 0;
        for (size_t k = 0; k < d->n_notes; k++)
            bad |= put_shown(f, "  note: ", d->notes[k]);
    }
    free(own_id);
    free(own_file);
    if (bad || ferror(f))
        return arrank_errorf(err, ARRANK_EIO, "cannot write the diagnostics of '%s'", s->id);
    return ARRANK_OK;
}

/* The public entry: the work in the C locale, rounding to nearest, whatever the
   host program set (number.h), and then the host's settings back. */
arrank_status arrank_diagnosis_write_text(FILE *f, const arrank_result *res, arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = diagnosis_write_text_in_c(f, res, err);
    arrank_numbers_c_leave(&env);
    return st;
}
