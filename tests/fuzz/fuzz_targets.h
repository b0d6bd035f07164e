/*
 * fuzz_targets.h - what each fuzzer does with one input, shared by the
 * libFuzzer harnesses (tests/fuzz/fuzz_*.c) and the regression test
 * (tests/test_robust.c), so that every input the fuzzers ever found is
 * replayed by `make check` through exactly the code that found it.
 *
 * Each target takes the raw bytes, calls the library and checks what must
 * hold whatever the input: a status from the documented set, a non-empty
 * message on failure, and sane values on success (temperatures above 0 K and
 * finite, rates finite, run indices in range, ...).  It returns NULL when all
 * holds, else a short description of the broken rule.  Sanitizers catch the
 * rest (out-of-bounds, use after free, leaks, undefined behaviour).
 */
#ifndef ARRANK_FUZZ_TARGETS_H
#define ARRANK_FUZZ_TARGETS_H

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/campaign.h"
#include "arrank/fit.h"
#include "arrank/units.h"

/* Size of one input beyond which the targets only check the refusal path quickly. */
#define FUZZ_TEXT_MAX 4096

/* NUL-terminated copy of the first n bytes (the text stops at an embedded NUL). */
static inline char *fuzz_text(const uint8_t *data, size_t n)
{
    char *s = malloc(n + 1);
    if (!s)
        return NULL;
    memcpy(s, data, n);
    s[n] = '\0';
    return s;
}

/* A failing call must say why: known status, non-empty message. */
static inline const char *fuzz_check_error(arrank_status st, const arrank_error *err)
{
    if (st < ARRANK_EINVAL || st > ARRANK_EDATA)
        return "status outside the documented set";
    if (err->status != st)
        return "error record status differs from the returned status";
    if (err->message[0] == '\0')
        return "error without a message";
    if (strlen(err->message) >= ARRANK_ERROR_MSG_MAX)
        return "message not terminated";
    return NULL;
}

static inline const char *fuzz_check_sample(const arrank_sample *s)
{
    if (!s->id || !s->path || !s->file || !s->rate_unit_file)
        return "sample without id, path, file or rate unit";
    if (s->n_points == 0 || !s->points)
        return "sample loaded with no points";
    size_t n_omitted = 0;
    for (size_t i = 0; i < s->n_points; i++) {
        const arrank_point *p = &s->points[i];
        if (p->omitted) { /* left out by the lenient reader: a reason and a line */
            n_omitted++;
            if (!p->omitted[0] || p->line < 1 || p->omitted_column < 0)
                return "point left out without a reason, line or column";
            continue;
        }
        if (!(p->temp_K > 0.0) || !isfinite(p->temp_K))
            return "point with a temperature at or below 0 K or not finite";
        if (!isfinite(p->rate))
            return "point with a rate that is not finite";
        if (!isnan(p->rate_sd) && !(p->rate_sd >= 0.0))
            return "point with a negative rate_sd";
        if (!isnan(p->conversion) && !(p->conversion >= 0.0 && p->conversion <= 1.0))
            return "point with a conversion outside 0..1";
        if (p->run < -1 || (p->run >= 0 && (size_t)p->run >= s->n_runs))
            return "point with a run index out of range";
        if (p->line < 1)
            return "point without a line number";
    }
    if (n_omitted != s->n_omitted)
        return "n_omitted differs from the points left out";
    for (size_t i = 0; i < s->n_meta; i++)
        if (!s->meta[i].key || !s->meta[i].value || !s->meta[i].source)
            return "metadata entry with a missing part";
    return NULL;
}

/* Fit a readable sample as the analysis would, so odd numbers reach GSL too. */
static inline const char *fuzz_fit_sample(const arrank_sample *s)
{
    if (s->problem)
        return NULL;
    double *T = malloc(s->n_points * sizeof *T);
    double *r = malloc(s->n_points * sizeof *r);
    double *sd = malloc(s->n_points * sizeof *sd);
    const char *why = NULL;
    if (!T || !r || !sd)
        goto done;
    int all_sd = 1;
    size_t n = 0;
    for (size_t i = 0; i < s->n_points; i++) {
        if (s->points[i].omitted)
            continue;
        T[n] = s->points[i].temp_K;
        r[n] = s->points[i].rate;
        sd[n] = s->points[i].rate_sd;
        if (isnan(sd[n++]))
            all_sd = 0;
    }
    arrank_arrhenius fit;
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st = arrank_fit_arrhenius(T, r, all_sd ? sd : NULL, n, &fit, &err);
    if (st != ARRANK_OK) {
        why = fuzz_check_error(st, &err);
        goto done;
    }
    arrank_prediction pred;
    st = arrank_fit_predict(&fit, 0.5 * (fit.T_min_K + fit.T_max_K), 0.95, &pred, &err);
    if (st != ARRANK_OK)
        why = fuzz_check_error(st, &err);
    else if (isfinite(pred.rate_lo) && isfinite(pred.rate_hi) &&
             !(pred.rate_lo <= pred.rate && pred.rate <= pred.rate_hi))
        why = "prediction outside its own interval";
done:
    free(T);
    free(r);
    free(sd);
    return why;
}

static inline const char *fuzz_sample_lenient(arrank_units *units, const uint8_t *data,
                                              size_t size);

/* A sample file, whole: read it, then read it again into another report unit, then fit it. */
static inline const char *fuzz_sample_one(arrank_units *units,
                                       const uint8_t *data, size_t size)
{
    const char *lenient_why = fuzz_sample_lenient(units, data, size);
    if (lenient_why)
        return lenient_why;
    arrank_sample s;
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st = arrank_sample_parse("fuzz.csv", (const char *)data, size, units, NULL, &s,
                                           &err);
    if (st != ARRANK_OK)
        return fuzz_check_error(st, &err);
    const char *why = fuzz_check_sample(&s);
    if (!why)
        why = fuzz_fit_sample(&s);
    static const char *const report_units[] = {"umol/(g*s)", "mol/(m2*s)", "1/h"};
    const char *report = report_units[s.basis >= 1 && s.basis <= 3 ? s.basis - 1 : 0];
    arrank_sample_clear(&s);
    if (why)
        return why;
    arrank_error_clear(&err);
    st = arrank_sample_parse("fuzz.csv", (const char *)data, size, units, report, &s, &err);
    if (st != ARRANK_OK)
        return fuzz_check_error(st, &err);
    why = fuzz_check_sample(&s);
    arrank_sample_clear(&s);
    return why;
}

/* The lenient reader (what the program does by default): its own rules, and a
   file the strict reader reads is read with the same points. */
static inline const char *fuzz_sample_lenient(arrank_units *units, const uint8_t *data,
                                              size_t size)
{
    arrank_read_options lenient = {0};
    arrank_sample s, strict;
    arrank_error err, serr;
    arrank_error_clear(&err);
    arrank_error_clear(&serr);
    arrank_status st = arrank_sample_parse_with("fuzz.csv", (const char *)data, size, units, NULL,
                                                &lenient, &s, &err);
    arrank_status sst = arrank_sample_parse("fuzz.csv", (const char *)data, size, units, NULL,
                                            &strict, &serr);
    const char *why = NULL;
    if (st != ARRANK_OK)
        why = sst == ARRANK_OK ? "read strictly but refused by the lenient reader"
                               : fuzz_check_error(st, &err);
    else {
        why = fuzz_check_sample(&s);
        if (!why)
            why = fuzz_fit_sample(&s);
        if (!why && sst == ARRANK_OK && strict.n_points != s.n_points)
            why = "the lenient reader found other points than the strict one";
    }
    if (st == ARRANK_OK)
        arrank_sample_clear(&s);
    if (sst == ARRANK_OK)
        arrank_sample_clear(&strict);
    return why;
}

static inline const char *fuzz_check_conversion(const arrank_conversion *c)
{
    if (!isfinite(c->scale) || c->scale == 0.0 || !isfinite(c->offset))
        return "conversion with a zero or non-finite scale or offset";
    return NULL;
}

/* Unit text: the first line as a temperature unit and a rate unit; line two as a target. */
static inline const char *fuzz_header_one(arrank_units *units,
                                       const uint8_t *data, size_t size)
{
    char *text = fuzz_text(data, size);
    if (!text)
        return NULL;
    char *to = strchr(text, '\n');
    if (to)
        *to++ = '\0';
    const char *why = NULL;
    arrank_error err;
    arrank_conversion c;
    arrank_basis basis;
    arrank_error_clear(&err);
    arrank_status st = arrank_units_temperature(units, text, &c, &err);
    why = st == ARRANK_OK ? fuzz_check_conversion(&c) : fuzz_check_error(st, &err);
    if (!why) {
        arrank_error_clear(&err);
        st = arrank_units_rate(units, text, &basis, &c, &err);
        if (st != ARRANK_OK)
            why = fuzz_check_error(st, &err);
        else if (basis < ARRANK_BASIS_MASS || basis > ARRANK_BASIS_SITE)
            why = "rate unit accepted without a basis";
        else
            why = fuzz_check_conversion(&c);
    }
    if (!why && to) {
        arrank_error_clear(&err);
        st = arrank_units_conversion(units, text, to, &c, &err);
        why = st == ARRANK_OK ? fuzz_check_conversion(&c) : fuzz_check_error(st, &err);
    }
    /* The first line as a header field (forms 'T [u]', 'T (u)', 'T / u' and the
       names): beside a rate column, then as the rate column beside a temperature. */
    static const char *const rows[][2] = {{"", ",rate [1/s]\n500,1\n510,2\n520,4\n"},
                                          {"T [K],", "\n500,1\n510,2\n520,4\n"}};
    size_t line = strlen(text);
    for (size_t k = 0; !why && line < FUZZ_TEXT_MAX && k < 2; k++) {
        size_t n = strlen(rows[k][0]) + line + strlen(rows[k][1]);
        char *file = malloc(n + 1);
        if (!file)
            break;
        snprintf(file, n + 1, "%s%s%s", rows[k][0], text, rows[k][1]);
        why = fuzz_sample_lenient(units, (const uint8_t *)file, n);
        free(file);
    }
    free(text);
    return why;
}

/* A temperature as typed after --at or in operating_temperature. */
static inline const char *fuzz_temperature_one(arrank_units *units,
                                       const uint8_t *data, size_t size)
{
    char *text = fuzz_text(data, size);
    if (!text)
        return NULL;
    double T = NAN;
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st = arrank_units_parse_temperature(units, text, &T, &err);
    free(text);
    if (st != ARRANK_OK)
        return fuzz_check_error(st, &err);
    if (!(T > 0.0) || !isfinite(T))
        return "temperature accepted at or below 0 K or not finite";
    return NULL;
}

/* campaign.ini, whole. */
static inline const char *fuzz_ini_one(arrank_units *units,
                                       const uint8_t *data, size_t size)
{
    arrank_campaign *c = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st =
        arrank_campaign_parse_ini("campaign.ini", (const char *)data, size, units, &c, &err);
    if (st != ARRANK_OK)
        return c ? "campaign returned with an error" : fuzz_check_error(st, &err);
    const char *why = NULL;
    if (!c || !c->title || !c->path || !c->name)
        why = "campaign without title, path or name";
    else if (!isnan(c->operating_temp_K) &&
             !(c->operating_temp_K > 0.0 && isfinite(c->operating_temp_K)))
        why = "operating temperature at or below 0 K";
    else if (!isnan(c->confidence) && !(c->confidence > 0.0 && c->confidence < 1.0))
        why = "confidence outside (0, 1)";
    else if (c->rate_unit && c->rate_unit[0] == '\0')
        why = "empty rate unit";
    arrank_campaign_free(c);
    return why;
}

#endif
