/*
 * analysis_compare.c - two analysed campaigns sample by sample
 * (arrank/compare.h): matching by id, the Welch contrasts of contrast.c on
 * ln r(T) and Ea, Holm's correction of groups.c across the samples.
 */
#include "arrank/analysis_compare.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/groups.h"
#include "util.h"

void arrank_compare_free(arrank_comparison *c)
{
    if (!c)
        return;
    for (size_t i = 0; i < c->n_rows; i++)
        free(c->rows[i].why_not);
    free(c->rows);
    free(c->only_a);
    free(c->only_b);
    free(c);
}

typedef struct {
    const char *id;
    size_t index;
} id_index;

static int by_id(const void *x, const void *y)
{
    return strcmp(((const id_index *)x)->id, ((const id_index *)y)->id);
}

/* The results of an analysis sorted by id; EDATA for an id twice. */
static arrank_status sorted_ids(const arrank_analysis *a, id_index **out, arrank_error *err)
{
    id_index *v = malloc((a->n_results ? a->n_results : 1) * sizeof *v);
    if (!v)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    for (size_t i = 0; i < a->n_results; i++)
        v[i] = (id_index){a->results[i].sample->id, i};
    qsort(v, a->n_results, sizeof *v, by_id);
    for (size_t i = 1; i < a->n_results; i++)
        if (strcmp(v[i].id, v[i - 1].id) == 0) {
            arrank_status st = arrank_errorf(err, ARRANK_EDATA,
                                             "campaign '%s' has two samples '%s': samples are "
                                             "matched by id",
                                             a->campaign->name, v[i].id);
            free(v); /* after the message: it names an id the array points to */
            return st;
        }
    *out = v;
    return ARRANK_OK;
}

static size_t find(const id_index *v, size_t n, const char *id)
{
    id_index key = {id, 0};
    const id_index *hit = bsearch(&key, v, n, sizeof *v, by_id);
    return hit ? hit->index : SIZE_MAX;
}

/* Step 2: one matched sample. */
static arrank_status compare_one(arrank_comparison *c, arrank_compare_row *row,
                                 arrank_error *err)
{
    const arrank_result *ra = &c->a->results[row->result_a], *rb = &c->b->results[row->result_b];
    const arrank_contrast none = {NAN, NAN, NAN, NAN, NAN, NAN, NAN, NAN};
    row->ln_ratio = row->ea = none;
    row->rate_a = row->rate_b = row->ratio = row->ratio_lo = row->ratio_hi = NAN;
    row->ratio_measured = NAN;
    row->p_holm = row->ea_p_holm = NAN;
    const int is_ref = c->reference && ra->stats && ra->stats->is_reference;
    const int no_ratio = c->reference && !(ra->stats && ra->stats->has_ratio && rb->stats &&
                                           rb->stats->has_ratio);
    const char *why = ra->error ? "not fitted in the first campaign"
                      : rb->error ? "not fitted in the second campaign"
                      : !ra->has_prediction || !rb->has_prediction ? "no rate at T"
                      : is_ref ? "the reference: each rate is taken relative to it"
                      : no_ratio ? "no ratio to the reference"
                                 : NULL;
    if (!ra->error && !rb->error && ra->has_prediction && rb->has_prediction) {
        row->rate_a = ra->at_T.rate;
        row->rate_b = rb->at_T.rate * c->b_to_a;
        row->ratio_measured = row->rate_b / row->rate_a;
    }
    if (why) {
        if (!(row->why_not = arrank_strdup(why)))
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        return ARRANK_OK;
    }
    row->compared = 1;
    const double shift = log(c->b_to_a); /* B's rates in A's unit */
    if (c->reference) {
        /* each against its own campaign's reference (analysis_reference.c),
           then B's ratio against A's: Welch-Satterthwaite over the four
           variances, as the sum of each side's (contrast.h) */
        const arrank_contrast *xa = &ra->stats->ratio, *xb = &rb->stats->ratio;
        row->ln_ratio = arrank_contrast_diff(xb->est, xb->se, xb->dof, xa->est, xa->se,
                                             xa->dof, c->confidence);
    } else {
        row->ln_ratio = arrank_contrast_diff(rb->at_T.ln_rate + shift, rb->at_T.ln_rate_se,
                                             rb->interval_dof, ra->at_T.ln_rate,
                                             ra->at_T.ln_rate_se, ra->interval_dof,
                                             c->confidence);
    }
    row->ratio = exp(row->ln_ratio.est);
    row->ratio_lo = exp(row->ln_ratio.lo);
    row->ratio_hi = exp(row->ln_ratio.hi);
    row->ea = arrank_contrast_diff(rb->fit.ea_J_mol, rb->fit.ea_se_J_mol, rb->fit.dof,
                                   ra->fit.ea_J_mol, ra->fit.ea_se_J_mol, ra->fit.dof,
                                   c->confidence);
    return ARRANK_OK;
}

/* Step 3: Holm's correction across the compared rows, each quantity its own family. */
static arrank_status holm(arrank_comparison *c, arrank_error *err)
{
    double *p = malloc(2 * (c->n_rows ? c->n_rows : 1) * sizeof *p), *q = p + c->n_rows;
    if (!p)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    size_t m = 0;
    for (size_t i = 0; i < c->n_rows; i++)
        if (c->rows[i].compared) {
            /* a change known exactly (se 0) has p 0 or 1 */
            p[m] = isfinite(c->rows[i].ln_ratio.p) ? c->rows[i].ln_ratio.p : 1.0;
            q[m++] = isfinite(c->rows[i].ea.p) ? c->rows[i].ea.p : 1.0;
        }
    c->n_tests = m;
    arrank_status st = arrank_groups_holm(p, m, p, err);
    if (st == ARRANK_OK)
        st = arrank_groups_holm(q, m, q, err);
    const double alpha = 1.0 - c->confidence;
    for (size_t i = 0, k = 0; st == ARRANK_OK && i < c->n_rows; i++) {
        arrank_compare_row *row = &c->rows[i];
        if (!row->compared)
            continue;
        row->p_holm = p[k];
        row->ea_p_holm = q[k++];
        row->changed = row->p_holm <= alpha;
        row->ea_changed = row->ea_p_holm <= alpha;
        c->n_changed += (size_t)row->changed;
        c->n_ea_changed += (size_t)row->ea_changed;
    }
    free(p);
    return st;
}

/* Step 1: the rows and the unmatched ids. */
static arrank_status match(arrank_comparison *c, const id_index *va, const id_index *vb,
                           arrank_error *err)
{
    const arrank_analysis *a = c->a, *b = c->b;
    c->rows = calloc(a->n_results ? a->n_results : 1, sizeof *c->rows);
    c->only_a = calloc(a->n_results ? a->n_results : 1, sizeof *c->only_a);
    c->only_b = calloc(b->n_results ? b->n_results : 1, sizeof *c->only_b);
    if (!c->rows || !c->only_a || !c->only_b)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    for (size_t i = 0; i < a->n_results; i++) {
        const char *id = a->results[i].sample->id;
        size_t j = find(vb, b->n_results, id);
        if (j == SIZE_MAX) {
            c->only_a[c->n_only_a++] = id;
            continue;
        }
        arrank_compare_row *row = &c->rows[c->n_rows++];
        row->id = id;
        row->result_a = i;
        row->result_b = j;
        arrank_status st = compare_one(c, row, err);
        if (st != ARRANK_OK)
            return st;
    }
    for (size_t j = 0; j < b->n_results; j++)
        if (find(va, a->n_results, b->results[j].sample->id) == SIZE_MAX)
            c->only_b[c->n_only_b++] = b->results[j].sample->id;
    return ARRANK_OK;
}

arrank_status arrank_compare_run(const arrank_analysis *a, const arrank_analysis *b,
                                 arrank_units *units, arrank_comparison **out, arrank_error *err)
{
    *out = NULL;
    const double Ta = a->options.operating_temp_K, Tb = b->options.operating_temp_K;
    if (!isfinite(Ta) || !isfinite(Tb) || Ta != Tb)
        return arrank_errorf(err, ARRANK_EINVAL, "a comparison needs one operating temperature "
                                                 "for both campaigns (give --at)");
    if (a->options.confidence != b->options.confidence)
        return arrank_errorf(err, ARRANK_EINVAL, "the two campaigns use different confidence "
                                                 "levels (give --confidence)");
    double b_to_a = 1.0;
    if (strcmp(a->campaign->rate_unit, b->campaign->rate_unit) != 0) {
        arrank_conversion conv;
        arrank_error ue;
        arrank_error_clear(&ue);
        if (a->campaign->basis != b->campaign->basis ||
            arrank_units_conversion(units, b->campaign->rate_unit, a->campaign->rate_unit, &conv,
                                    &ue) != ARRANK_OK)
            return arrank_errorf(err, ARRANK_EDATA,
                                 "campaign '%s' reports rates in %s, campaign '%s' in %s: rates "
                                 "of different dimensions cannot be compared",
                                 b->campaign->name, b->campaign->rate_unit, a->campaign->name,
                                 a->campaign->rate_unit);
        b_to_a = conv.scale;
    }
    arrank_comparison *c = calloc(1, sizeof *c);
    if (!c)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    c->a = a;
    c->b = b;
    c->temp_K = Ta;
    c->confidence = a->options.confidence;
    c->b_to_a = b_to_a;
    if (a->reference && b->reference && strcmp(a->reference->id, b->reference->id) == 0)
        c->reference = a->reference->id;
    id_index *va = NULL, *vb = NULL;
    arrank_status st = sorted_ids(a, &va, err);
    if (st == ARRANK_OK)
        st = sorted_ids(b, &vb, err);
    if (st == ARRANK_OK)
        st = match(c, va, vb, err);
    if (st == ARRANK_OK)
        st = holm(c, err);
    free(va);
    free(vb);
    if (st != ARRANK_OK) {
        arrank_compare_free(c);
        return st;
    }
    *out = c;
    return ARRANK_OK;
}
