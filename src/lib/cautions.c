/*
 * cautions.c - the cautions of an analysis in one wording, for every writer
 * (arrank/cautions.h).  Reads the analysis only: the extrapolation distances
 * are the predictions' (fit.c), the isokinetic temperature and its verdict
 * the compensation analysis's (compensation.c).
 */
#include "arrank/cautions.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/analysis_stats.h"
#include "number.h"

/* Samples named in the line on far extrapolation; the rest are counted. */
#define FAR_NAMED 8

int arrank_cautions_far(const arrank_result *res)
{
    if (res->error || !res->has_prediction || !(res->at_T.extrapolation_K > 0))
        return 0;
    const double span_K = res->fit.T_max_K - res->fit.T_min_K;
    double limit_K = ARRANK_FAR_EXTRAPOLATION_REL * span_K;
    if (!(limit_K > ARRANK_FAR_EXTRAPOLATION_K))
        limit_K = ARRANK_FAR_EXTRAPOLATION_K;
    return res->at_T.extrapolation_K > limit_K;
}

int arrank_cautions_beyond_iso(const arrank_analysis *a)
{
    const struct arrank_rank_stats *rs = a->rank_stats;
    const double T_op = a->options.operating_temp_K;
    if (!rs || !isfinite(T_op) || !arrank_by_needs_T(a->options.by))
        return 0;
    const arrank_compensation *c = &rs->compensation;
    if (c->verdict != ARRANK_COMP_REAL || !isfinite(c->T_iso_K) || !(c->T_iso_K > 0) ||
        !isfinite(c->T_hm_K))
        return 0;
    return (T_op - c->T_iso_K) * (c->T_hm_K - c->T_iso_K) < 0;
}

/* A growing line of text; -1 when out of memory. */
typedef struct {
    char *s;
    size_t n, cap;
} line_buf;

#if defined(__GNUC__)
__attribute__((format(printf, 2, 3)))
#endif
static int add(line_buf *b, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    int len = vsnprintf(NULL, 0, fmt, ap);
    va_end(ap);
    if (len < 0)
        return -1;
    if (b->n + (size_t)len + 1 > b->cap) {
        size_t cap = (b->n + (size_t)len + 1) * 2;
        char *m = realloc(b->s, cap);
        if (!m)
            return -1;
        b->s = m;
        b->cap = cap;
    }
    va_start(ap, fmt);
    vsnprintf(b->s + b->n, b->cap - b->n, fmt, ap);
    va_end(ap);
    b->n += (size_t)len;
    return 0;
}

/* The line naming the samples extrapolated far, or NULL (*nomem on ENOMEM). */
static char *far_line(const arrank_analysis *a, int *nomem)
{
    size_t n_far = 0;
    for (size_t i = 0; i < a->n_results; i++)
        n_far += arrank_cautions_far(&a->results[i]) != 0;
    if (!n_far)
        return NULL;
    line_buf b = {0};
    int bad = add(&b,
                  "the operating temperature %.2f K lies far outside the measured range of %zu "
                  "sample%s (more than %.0f K or %.0f %% of the span): ",
                  a->options.operating_temp_K, n_far, n_far == 1 ? "" : "s",
                  ARRANK_FAR_EXTRAPOLATION_K, 100.0 * ARRANK_FAR_EXTRAPOLATION_REL);
    size_t named = 0;
    for (size_t i = 0; i < a->n_results && !bad && named < FAR_NAMED; i++) {
        const arrank_result *r = &a->results[i];
        if (!arrank_cautions_far(r))
            continue;
        bad |= add(&b, "%s%s (%.1f K, %.0f %% of its span)", named ? ", " : "", r->sample->id,
                   r->at_T.extrapolation_K, 100.0 * r->at_T.extrapolation_rel);
        named++;
    }
    if (!bad && n_far > named)
        bad |= add(&b, " and %zu more", n_far - named);
    if (!bad)
        bad |= add(&b, "; their rates are extrapolations and may be wrong in kind");
    if (bad) {
        free(b.s);
        *nomem = 1;
        return NULL;
    }
    return b.s;
}

static char *iso_line(const arrank_analysis *a, int *nomem)
{
    const arrank_compensation *c = &a->rank_stats->compensation;
    line_buf b = {0};
    int bad = add(&b,
                  "the operating temperature %.2f K lies beyond the isokinetic temperature "
                  "T_iso = %.1f K",
                  a->options.operating_temp_K, c->T_iso_K);
    if (!bad && c->T_iso_bounded && c->T_iso_lo_K <= c->T_iso_hi_K)
        bad |= add(&b, " (%.4g %% interval %.1f-%.1f K)", 100.0 * c->confidence, c->T_iso_lo_K,
                   c->T_iso_hi_K);
    if (!bad)
        bad |= add(&b, " of a compensation judged real: the ranking by rate may reverse "
                       "beyond T_iso");
    if (bad) {
        free(b.s);
        *nomem = 1;
        return NULL;
    }
    return b.s;
}

static arrank_status cautions_list_in_c(const arrank_analysis *a, char ***lines, size_t *n,
                                        arrank_error *err)
{
    *lines = NULL;
    *n = 0;
    char **v = calloc(3, sizeof *v);
    int nomem = !v;
    size_t k = 0;
    if (v) {
        v[k] = malloc(sizeof ARRANK_CAUTION_APPARENT);
        if (v[k])
            memcpy(v[k++], ARRANK_CAUTION_APPARENT, sizeof ARRANK_CAUTION_APPARENT);
        else
            nomem = 1;
    }
    if (!nomem && (v[k] = far_line(a, &nomem)) != NULL)
        k++;
    if (!nomem && arrank_cautions_beyond_iso(a) && (v[k] = iso_line(a, &nomem)) != NULL)
        k++;
    if (nomem) {
        arrank_cautions_free(v, k);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    *lines = v;
    *n = k;
    return ARRANK_OK;
}

/* The public entry: numbers in the C locale, rounding to nearest (number.h). */
arrank_status arrank_cautions_list(const arrank_analysis *a, char ***lines, size_t *n,
                                   arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = cautions_list_in_c(a, lines, n, err);
    arrank_numbers_c_leave(&env);
    return st;
}

void arrank_cautions_free(char **lines, size_t n)
{
    for (size_t k = 0; lines && k < n; k++)
        free(lines[k]);
    free(lines);
}
