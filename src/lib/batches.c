/*
 * batches.c - several campaigns read as one (arrank/batches.h): samples moved
 * into one campaign, rates in one unit, ids that collide prefixed with their
 * campaign's name, and where each sample came from.
 */
#include "arrank/batches.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "util.h"

/* A sample's id, its part and its place in the merged order, for the sort
   that finds the ids that collide (n log n, not every pair). */
typedef struct {
    const char *id;
    size_t part, at;
} id_entry;

static int by_id(const void *x, const void *y)
{
    const id_entry *a = x, *b = y;
    int c = strcmp(a->id, b->id);
    return c ? c : a->part < b->part ? -1 : a->part > b->part;
}

/* collides[at] = 1 for each sample whose id another part also has. */
static int find_collisions(arrank_campaign **parts, size_t n, size_t total,
                           unsigned char *collides)
{
    id_entry *v = malloc((total ? total : 1) * sizeof *v);
    if (!v)
        return -1;
    size_t at = 0;
    for (size_t k = 0; k < n; k++)
        for (size_t i = 0; i < parts[k]->n_samples; i++, at++)
            v[at] = (id_entry){parts[k]->samples[i].id, k, at};
    qsort(v, total, sizeof *v, by_id);
    for (size_t lo = 0, hi; lo < total; lo = hi) {
        for (hi = lo + 1; hi < total && strcmp(v[hi].id, v[lo].id) == 0;)
            hi++;
        if (v[hi - 1].part != v[lo].part) /* sorted by part within an id */
            for (size_t j = lo; j < hi; j++)
                collides[v[j].at] = 1;
    }
    free(v);
    return 0;
}

/* Step 1: every part's rates in the first one's unit; EDATA for another dimension. */
static arrank_status same_unit(arrank_campaign **parts, size_t n, arrank_units *units,
                               arrank_error *err)
{
    const arrank_campaign *first = parts[0];
    for (size_t k = 1; k < n; k++) {
        arrank_campaign *c = parts[k];
        if (strcmp(c->rate_unit, first->rate_unit) == 0)
            continue;
        arrank_conversion conv;
        arrank_error ue;
        arrank_error_clear(&ue);
        if (c->basis != first->basis ||
            arrank_units_conversion(units, c->rate_unit, first->rate_unit, &conv, &ue) !=
                ARRANK_OK)
            return arrank_errorf(err, ARRANK_EDATA,
                                 "campaign '%s' reports rates in %s (%s), campaign '%s' in %s "
                                 "(%s): rates of different dimensions cannot be ranked together",
                                 c->name, c->rate_unit, arrank_basis_name(c->basis), first->name,
                                 first->rate_unit, arrank_basis_name(first->basis));
        for (size_t i = 0; i < c->n_samples; i++)
            for (size_t j = 0; j < c->samples[i].n_points; j++) {
                arrank_point *p = &c->samples[i].points[j];
                p->rate = conv.scale * p->rate + conv.offset;
                p->rate_sd = conv.scale * p->rate_sd;
            }
    }
    return ARRANK_OK;
}

/* Step 2: the settings of the whole: the first part's that sets each. */
static arrank_status settings(arrank_campaign **parts, size_t n, arrank_campaign *m,
                              size_t *notes_cap, arrank_error *err)
{
    m->operating_temp_K = m->confidence = NAN;
    for (size_t k = 0; k < n; k++) {
        const arrank_campaign *c = parts[k];
        char note[512];
        if (isfinite(c->operating_temp_K)) {
            if (!isfinite(m->operating_temp_K))
                m->operating_temp_K = c->operating_temp_K;
            else if (c->operating_temp_K != m->operating_temp_K) {
                snprintf(note, sizeof note, "%s: operating_temperature %.2f K not used; the "
                         "first campaign's %.2f K applies to all", c->name,
                         c->operating_temp_K, m->operating_temp_K);
                if (arrank_list_add(&m->notes, &m->n_notes, notes_cap, note) != 0)
                    return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            }
        }
        if (isfinite(c->confidence) && !isfinite(m->confidence))
            m->confidence = c->confidence;
        if (c->reference) {
            if (!m->reference && !(m->reference = arrank_strdup(c->reference)))
                return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            if (strcmp(m->reference, c->reference) != 0)
                return arrank_errorf(err, ARRANK_EDATA,
                                     "campaign '%s' names the reference '%s', another "
                                     "campaign '%s': give one with --reference",
                                     c->name, c->reference, m->reference);
        }
    }
    return ARRANK_OK;
}

static arrank_status move_each(arrank_campaign **parts, size_t n, arrank_campaign *m,
                               const unsigned char *collides, size_t total, size_t *notes_cap,
                               size_t *unused_cap, arrank_error *err);

/* Step 3: the samples moved over, ids that collide prefixed; notes and unused
   files carried with their campaign's name. */
static arrank_status move_samples(arrank_campaign **parts, size_t n, arrank_campaign *m,
                                  size_t *notes_cap, arrank_error *err)
{
    size_t total = 0, unused_cap = 0;
    for (size_t k = 0; k < n; k++)
        total += parts[k]->n_samples;
    /* which ids collide, before any sample moves */
    unsigned char *collides = calloc(total ? total : 1, 1);
    if (!collides || find_collisions(parts, n, total, collides) != 0) {
        free(collides);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    arrank_status st = move_each(parts, n, m, collides, total, notes_cap, &unused_cap, err);
    free(collides);
    return st;
}

/* Step 3's moves, with `collides` per sample in order. */
static arrank_status move_each(arrank_campaign **parts, size_t n, arrank_campaign *m,
                               const unsigned char *collides, size_t total, size_t *notes_cap,
                               size_t *unused_cap, arrank_error *err)
{
    m->samples = calloc(total ? total : 1, sizeof *m->samples);
    m->part_of = calloc(total ? total : 1, sizeof *m->part_of);
    m->part_ids = calloc(total ? total : 1, sizeof *m->part_ids);
    if (!m->samples || !m->part_of || !m->part_ids)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    for (size_t k = 0; k < n; k++) {
        arrank_campaign *c = parts[k];
        const size_t cn = c->n_samples;
        c->n_samples = 0; /* the samples belong to m now (or are cleared here) */
        for (size_t i = 0; i < cn; i++) {
            arrank_sample *s = &c->samples[i];
            char *own = arrank_strdup(s->id);
            size_t len = strlen(c->name) + strlen(s->id) + 2;
            int rename = collides[m->n_samples];
            char *id = rename && own ? malloc(len) : NULL;
            if (!own || (rename && !id)) {
                free(own);
                for (size_t j = i; j < cn; j++)
                    arrank_sample_clear(&c->samples[j]);
                return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            }
            if (rename) {
                snprintf(id, len, "%s/%s", c->name, s->id);
                m->part_ids[m->n_samples] = own;
                m->part_of[m->n_samples] = k;
                m->samples[m->n_samples] = *s;
                m->samples[m->n_samples++].id = id;
                free(s->id);
            } else {
                m->part_ids[m->n_samples] = own;
                m->part_of[m->n_samples] = k;
                m->samples[m->n_samples++] = *s;
            }
        }
        m->n_files += c->n_files;
        for (size_t i = 0; i < c->n_notes; i++) {
            char note[ARRANK_ERROR_MSG_MAX + 256];
            snprintf(note, sizeof note, "%s: %s", c->name, c->notes[i]);
            if (arrank_list_add(&m->notes, &m->n_notes, notes_cap, note) != 0)
                return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        }
        for (size_t i = 0; i < c->n_unused; i++)
            if (arrank_list_add(&m->unused, &m->n_unused, unused_cap, c->unused[i]) != 0)
                return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    return ARRANK_OK;
}

/* Step 4: names: "A+B" and "A + B", each part's name. */
static arrank_status names(arrank_campaign **parts, size_t n, arrank_campaign *m,
                           arrank_error *err)
{
    size_t len = 1;
    for (size_t k = 0; k < n; k++)
        len += strlen(parts[k]->name) + 3;
    m->name = calloc(1, len);
    m->title = calloc(1, len);
    m->part_names = calloc(n, sizeof *m->part_names);
    m->path = arrank_strdup(parts[0]->path);
    m->rate_unit = arrank_strdup(parts[0]->rate_unit);
    if (!m->name || !m->title || !m->part_names || !m->path || !m->rate_unit)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    m->n_parts = n;
    m->basis = parts[0]->basis;
    for (size_t k = 0; k < n; k++) {
        if (k) {
            strcat(m->name, "+");
            strcat(m->title, " + ");
        }
        strcat(m->name, parts[k]->name);
        strcat(m->title, parts[k]->name);
        if (!(m->part_names[k] = arrank_strdup(parts[k]->name)))
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        for (size_t j = 0; j < k; j++)
            if (strcmp(parts[j]->name, parts[k]->name) == 0)
                return arrank_errorf(err, ARRANK_EINVAL,
                                     "two campaigns are named '%s' ('%s' and '%s'): each "
                                     "campaign of a run needs a folder name of its own",
                                     parts[k]->name, parts[j]->path, parts[k]->path);
    }
    return ARRANK_OK;
}

arrank_status arrank_batches_merge(arrank_campaign **parts, size_t n, arrank_units *units,
                                   arrank_campaign **out, arrank_error *err)
{
    *out = NULL;
    arrank_status st = ARRANK_OK;
    arrank_campaign *m = NULL;
    size_t notes_cap = 0;
    if (n < 2 || n > ARRANK_BATCHES_MAX)
        st = arrank_errorf(err, ARRANK_EINVAL, "%zu campaigns: give 2 to %d", n,
                           ARRANK_BATCHES_MAX);
    if (st == ARRANK_OK && !(m = calloc(1, sizeof *m)))
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    if (st == ARRANK_OK)
        st = names(parts, n, m, err);
    if (st == ARRANK_OK)
        st = same_unit(parts, n, units, err);
    if (st == ARRANK_OK)
        st = settings(parts, n, m, &notes_cap, err);
    if (st == ARRANK_OK)
        st = move_samples(parts, n, m, &notes_cap, err);
    for (size_t k = 0; k < n; k++) {
        arrank_campaign_free(parts[k]);
        parts[k] = NULL;
    }
    if (st != ARRANK_OK) {
        arrank_campaign_free(m);
        return st;
    }
    *out = m;
    return ARRANK_OK;
}
