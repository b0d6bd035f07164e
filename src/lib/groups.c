/*
 * groups.c - groups of samples that cannot be told apart: Holm's procedure
 * and the leader rule (arrank/groups.h).
 */
#include "arrank/groups.h"

#include <math.h>
#include <stdatomic.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_sort.h>

#include "stats.h"
#include "util.h"

arrank_status arrank_groups_holm(const double *p, size_t m, double *adj, arrank_error *err)
{
    for (size_t i = 0; i < m; i++)
        if (!(p[i] >= 0 && p[i] <= 1))
            return arrank_errorf(err, ARRANK_EINVAL, "p-value %zu is '%g', not in [0, 1]", i + 1,
                                 p[i]);
    if (m == 0)
        return ARRANK_OK;
    size_t *idx = malloc(m * sizeof *idx);
    double *tmp = malloc(m * sizeof *tmp);
    if (!idx || !tmp) {
        free(idx);
        free(tmp);
        return arrank_errorf(err, ARRANK_ENOMEM, "no memory for %zu p-values", m);
    }
    gsl_sort_index(idx, p, 1, m);
    /* Holm (1979): the k-th smallest is compared with alpha/(m - k + 1); the
       running maximum makes the adjusted values monotone, so "reject while
       adj <= alpha" is the step-down procedure. */
    double run = 0;
    for (size_t k = 0; k < m; k++) {
        double v = (double)(m - k) * p[idx[k]];
        if (v > 1)
            v = 1;
        if (v > run)
            run = v;
        tmp[idx[k]] = run;
    }
    memcpy(adj, tmp, m * sizeof *adj);
    free(idx);
    free(tmp);
    return ARRANK_OK;
}

/* Welch-Satterthwaite dof of key_i - key_j (Welch, Biometrika 34:28, 1947):
   nu = v^2 / (si^4/nu_i + sj^4/nu_j), v = si^2 + sj^2, an infinite nu adding
   nothing; INFINITY when both are infinite (then the test is a z test). */
static inline double welch_dof(double si, double di, double sj, double dj)
{
    const double v = si * si + sj * sj;
    double den = 0;
    if (isfinite(di))
        den += si * si * si * si / di;
    if (isfinite(dj))
        den += sj * sj * sj * sj / dj;
    return den > 0 ? v * v / den : INFINITY;
}

/* Two-sided p of key_i - key_j with Welch-Satterthwaite dof (groups.h). */
static double pair_p(double ki, double si, double di, double kj, double sj, double dj)
{
    const double v = si * si + sj * sj;
    const double d = fabs(ki - kj);
    if (!(v > 0))
        return d > 0 ? 0.0 : 1.0;
    const double z = d / sqrt(v);
    return arrank_stats_t_p(z, welch_dof(si, di, sj, dj));
}

/*
 * The group rule needs Holm's decision for the pairs (leader, k) only, but
 * every decision depends on the whole family: Holm rejects the sorted
 * p_(1) <= p_(2) <= ... up to the first with (m - j + 1) p_(j) > alpha.  So
 * the family is kept whole (m = G (G - 1)/2 tests), and what is saved is the
 * t CDF of the pairs whose decision does not hang on their exact p.
 *
 * A pair's p is bounded from its z and a bracket of its dof: the two-sided
 * t tail P(|T_nu| > z) falls as nu grows (Student's t is more peaked for more
 * degrees of freedom: Birnbaum, Ann. Math. Statist. 19:76, 1948, from memory;
 * tests/test_rank.c checks the decisions against the full computation), so
 * with nu in [lo, hi], p <= a when z >= t_crit(a, lo) and p > a when
 * z < t_crit(a, hi).  The bracket is the cell of a fixed grid,
 * 2^(k/CELLS_PER_OCTAVE), that holds the pair's own Welch dof (a few flops),
 * so a sweep needs one quantile per cell in use and level instead of one
 * CDF per pair.  With K_lo hypotheses known to be rejected and K_hi an upper
 * bound on the rejections, a pair with p <= alpha/(m - K_lo) is rejected
 * (every p below it in the order passes its own threshold) and a pair with
 * p > alpha/(m - K_hi + 1) is not (its threshold cannot be that high).
 * Sweeping until K_lo and K_hi settle leaves the pairs near Holm's boundary:
 * their exact p (GSL's t CDF at the Welch dof) go through the same two tests
 * and then the step-down itself, whose positions are known because every
 * settled rejection lies below them and every settled acceptance above.  The
 * decisions are Holm's exactly; a margin of Z_MARGIN in z keeps rounding in
 * GSL's quantiles off the bounds.
 */
#define Z_MARGIN 1e-7
enum { PAIR_OPEN = 0, PAIR_REJECTED = 1, PAIR_KEPT = 2 };

/* The dof grid: eighths of an octave, [2^e (1 + s/8), 2^e (1 + (s + 1)/8)],
   for 2^CELL_OCT_MIN <= nu < 2^CELL_OCT_MAX (neighbouring edges at most 12.5 %
   apart), read off the exponent and the top three fraction bits of nu (IEEE
   754 binary64); cell 0 is (0, 2^CELL_OCT_MIN), then [2^CELL_OCT_MAX, inf)
   and the z test (both dof infinite). */
#define CELL_BITS 3
#define CELLS_PER_OCTAVE (1 << CELL_BITS)
#define CELL_OCT_MIN (-4)
#define CELL_OCT_MAX 20
enum {
    CELL_STEPS = (CELL_OCT_MAX - CELL_OCT_MIN) * CELLS_PER_OCTAVE,
    CELL_ABOVE = CELL_STEPS + 1,
    CELL_Z = CELL_STEPS + 2,
    N_CELLS = CELL_STEPS + 3
};

typedef struct {
    double lo[N_CELLS], hi[N_CELLS]; /* dof bracket of each cell */
} dof_cells;

static void cells_init(dof_cells *dc)
{
    dc->lo[0] = 0.0;
    dc->hi[0] = ldexp(1.0, CELL_OCT_MIN);
    for (int e = CELL_OCT_MIN; e < CELL_OCT_MAX; e++)
        for (int s = 0; s < CELLS_PER_OCTAVE; s++) {
            const int c = 1 + (e - CELL_OCT_MIN) * CELLS_PER_OCTAVE + s;
            dc->lo[c] = ldexp(1.0 + (double)s / CELLS_PER_OCTAVE, e);
            dc->hi[c] = ldexp(1.0 + (double)(s + 1) / CELLS_PER_OCTAVE, e);
        }
    dc->lo[CELL_ABOVE] = ldexp(1.0, CELL_OCT_MAX);
    dc->hi[CELL_ABOVE] = INFINITY;
    dc->lo[CELL_Z] = dc->hi[CELL_Z] = INFINITY;
}

/* The cell whose bracket holds nu > 0. */
static unsigned char cell_of(double nu)
{
    if (isinf(nu))
        return CELL_Z;
    uint64_t bits;
    memcpy(&bits, &nu, sizeof bits);
    const int e = (int)((bits >> 52) & 0x7ff) - 1023;
    if (e < CELL_OCT_MIN)
        return 0;
    if (e >= CELL_OCT_MAX)
        return CELL_ABOVE;
    const int s = (int)((bits >> (52 - CELL_BITS)) & (CELLS_PER_OCTAVE - 1));
    return (unsigned char)(1 + (e - CELL_OCT_MIN) * CELLS_PER_OCTAVE + s);
}

/* Two-sided critical |t| for level a at dof nu: infinite for nu = 0. */
static double two_sided_crit(double a, double nu)
{
    return nu > 0 ? arrank_stats_t_upper(0.5 * a, nu) : INFINITY;
}

static int compare_double(const void *a, const void *b)
{
    const double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/*
 * The pair set-up and the first sweep, which settles most pairs, are one pass
 * over the triangle, split into bands of rows that worker threads take from a
 * shared counter (util.c).  The first sweep's levels depend only on the pairs
 * with no variance at all (both se 0), which are counted before it; within a
 * sweep every decision depends only on the pair and the sweep's two levels,
 * so each worker decides its pairs alone, with its own copy of the cell
 * quantiles (the same function of the same numbers), and the open pairs of
 * each band are kept in row order.  The answer is the same on any number of
 * workers; tests/test_rank.c runs 1, 2 and 5.  The later sweeps touch only
 * the pairs the first left open (a fifth on the bench campaign), on one
 * thread; the exact p-values of the few still open after them (about 1 %)
 * go to the workers again, each p to its own pair.
 */

/* A pair whose decision is still open: (i, j), i < j, its z and dof cell. */
typedef struct {
    double z;
    uint16_t i, j;
    unsigned char cell;
} open_pair;

_Static_assert(ARRANK_GROUP_MAX <= UINT16_MAX, "open_pair holds sample indices in 16 bits");

/* pair (i, j), i < j, at its row-major upper-triangle position among G */
static size_t pair_at(size_t G, size_t i, size_t j)
{
    return i * (2 * G - i - 1) / 2 + (j - i - 1);
}

/* Pairs per band of rows: enough work to be worth a trip to the shared counter. */
#define BAND_PAIRS 2048
/* Pairs below which the set-up stays on the calling thread (thread start costs
   about as much as a few thousand pairs). */
#define PAIRS_PER_WORKER 16384

typedef struct {
    size_t row0, row1;    /* rows [row0, row1) */
    size_t n_open;        /* open pairs, written at opened[pair_at(G, row0, row0 + 1)] on */
    size_t n_rej, n_keep; /* settled by the first sweep (pairs with variance only) */
} pair_band;

typedef struct {
    const double *key, *s2, *q4; /* key, se^2 and se^4/dof (0 for infinite dof) of each sample */
    size_t G, m, n_bands;
    double a_lo, a_hi;           /* the first sweep's levels */
    const dof_cells *dc;
    pair_band *band;
    unsigned char *state;        /* [m] */
    open_pair *opened;           /* [m]: each band writes its open pairs at its own place */
    atomic_size_t next;
} pair_job;

/* One band: every pair's z and cell, and the first sweep's bounds on it (above). */
static void pair_band_run(pair_job *pj, pair_band *b, double *crit_rej, double *crit_keep)
{
    const size_t G = pj->G;
    const double *key = pj->key, *s2 = pj->s2, *q4 = pj->q4;
    open_pair *out = pj->opened + pair_at(G, b->row0, b->row0 + 1);
    size_t n_open = 0, n_rej = 0, n_keep = 0;
    for (size_t i = b->row0; i < b->row1; i++) {
        unsigned char *st = pj->state + pair_at(G, i, i + 1); /* st[j - i - 1]: pair (i, j) */
        for (size_t j = i + 1; j < G; j++) {
            const double v = s2[i] + s2[j];
            const double d = fabs(key[i] - key[j]);
            if (!(v > 0)) { /* pair_p's exact answers without a CDF, counted beforehand */
                st[j - i - 1] = d > 0 ? PAIR_REJECTED : PAIR_KEPT;
                continue;
            }
            const double z = d / sqrt(v);
            /* welch_dof: den is (0 + q_i) + q_j there, 0 + q = q exactly */
            const double den = q4[i] + q4[j];
            const unsigned c = cell_of(den > 0 ? v * v / den : INFINITY);
            /* k_lo < m holds for any pair still open, so the bound applies */
            if (crit_rej[c] < 0)
                crit_rej[c] = two_sided_crit(pj->a_lo, pj->dc->lo[c]) * (1.0 + Z_MARGIN);
            if (z >= crit_rej[c]) {
                st[j - i - 1] = PAIR_REJECTED;
                n_rej++;
                continue;
            }
            if (pj->a_hi < 1) {
                if (crit_keep[c] < 0)
                    crit_keep[c] = two_sided_crit(pj->a_hi, pj->dc->hi[c]) * (1.0 - Z_MARGIN);
                if (z < crit_keep[c]) {
                    st[j - i - 1] = PAIR_KEPT;
                    n_keep++;
                    continue;
                }
            }
            st[j - i - 1] = PAIR_OPEN;
            out[n_open++] = (open_pair){z, (uint16_t)i, (uint16_t)j, (unsigned char)c};
        }
    }
    b->n_open = n_open;
    b->n_rej = n_rej;
    b->n_keep = n_keep;
}

static void pair_worker(void *ctx, size_t worker)
{
    (void)worker;
    pair_job *pj = ctx;
    double crit_rej[N_CELLS], crit_keep[N_CELLS];
    for (size_t c = 0; c < N_CELLS; c++)
        crit_rej[c] = crit_keep[c] = -1.0;
    for (;;) {
        const size_t k = atomic_fetch_add(&pj->next, 1);
        if (k >= pj->n_bands)
            break;
        pair_band_run(pj, &pj->band[k], crit_rej, crit_keep);
    }
}

/* The exact p of the pairs left open (a t CDF each, about 3,000 instructions):
   on workers when there are enough of them; each p goes to its own pair. */
#define EXACT_PER_WORKER 128
#define EXACT_CHUNK 32

typedef struct {
    const double *key, *key_se, *dof;
    open_pair *opened;
    size_t n;
    atomic_size_t next;
} exact_job;

static void exact_worker(void *ctx, size_t worker)
{
    (void)worker;
    exact_job *ej = ctx;
    for (;;) {
        const size_t start = atomic_fetch_add(&ej->next, EXACT_CHUNK);
        if (start >= ej->n)
            break;
        const size_t end = start + EXACT_CHUNK < ej->n ? start + EXACT_CHUNK : ej->n;
        for (size_t q = start; q < end; q++) {
            open_pair *o = &ej->opened[q];
            o->z = pair_p(ej->key[o->i], ej->key_se[o->i], ej->dof[o->i], ej->key[o->j],
                          ej->key_se[o->j], ej->dof[o->j]);
        }
    }
}

arrank_status arrank_groups_run(const double *key, const double *key_se, const double *dof,
                                size_t n, double alpha, int *group, size_t *n_tests,
                                arrank_error *err)
{
    if (!(alpha > 0 && alpha < 1))
        return arrank_errorf(err, ARRANK_EINVAL, "significance level '%g' is not in (0, 1)",
                             alpha);
    const size_t G = n < ARRANK_GROUP_MAX ? n : ARRANK_GROUP_MAX;
    const size_t m = G * (G > 0 ? G - 1 : 0) / 2;
    if (n_tests)
        *n_tests = m;
    for (size_t i = 0; i < n; i++)
        group[i] = 0;
    if (G == 0)
        return ARRANK_OK;
    for (size_t i = 0; i < G; i++)
        if (isnan(key[i]) || isnan(key_se[i]) || isnan(dof[i]) || !(dof[i] > 0))
            return arrank_errorf(err, ARRANK_EINVAL, "sample %zu has no usable key, standard "
                                                     "error or dof for the group tests", i + 1);
    double *sample = malloc(2 * G * sizeof *sample);
    pair_band *band = malloc(G * sizeof *band);
    unsigned char *state = malloc(m ? m : 1);
    /* untouched pages cost nothing: only the open pairs' share of this is written */
    open_pair *opened = malloc((m ? m : 1) * sizeof *opened);
    if (!sample || !band || !state || !opened) {
        free(sample);
        free(band);
        free(state);
        free(opened);
        return arrank_errorf(err, ARRANK_ENOMEM, "no memory for %zu pairwise tests", m);
    }
    /* per sample, the terms of v = se_i^2 + se_j^2 and of welch_dof's denominator,
       each rounded as welch_dof rounds it */
    double *s2 = sample, *q4 = sample + G;
    size_t k_lo = 0, k_hi = m;
    for (size_t i = 0; i < G; i++) {
        const double si = key_se[i];
        s2[i] = si * si;
        q4[i] = isfinite(dof[i]) ? si * si * si * si / dof[i] : 0.0;
    }
    /* the pairs with no variance (both se^2 0) are settled before the first sweep */
    for (size_t i = 0; i < G; i++)
        if (!(s2[i] > 0))
            for (size_t j = i + 1; j < G; j++)
                if (!(s2[i] + s2[j] > 0)) {
                    if (fabs(key[i] - key[j]) > 0)
                        k_lo++;
                    else
                        k_hi--;
                }
    dof_cells dc;
    cells_init(&dc);
    pair_job pj = {.key = key, .s2 = s2, .q4 = q4, .G = G, .m = m, .dc = &dc, .band = band,
                   .state = state, .opened = opened,
                   .a_lo = alpha / (double)(m - k_lo), .a_hi = alpha / (double)(m - k_hi + 1)};
    for (size_t i = 0; i + 1 < G;) {
        pair_band *b = &band[pj.n_bands++];
        b->row0 = i;
        for (size_t pairs = 0; i + 1 < G && pairs < BAND_PAIRS; i++)
            pairs += G - 1 - i;
        b->row1 = i;
    }
    atomic_init(&pj.next, 0);
    arrank_workers_run(arrank_workers_for(m, PAIRS_PER_WORKER), pair_worker, &pj);
    /* the open pairs together, in row order; the first sweep's decisions counted */
    size_t n_open = 0;
    int changed = 0;
    for (size_t k = 0; k < pj.n_bands; k++) {
        const pair_band *b = &band[k];
        memmove(opened + n_open, opened + pair_at(G, b->row0, b->row0 + 1),
                b->n_open * sizeof *opened);
        n_open += b->n_open;
        k_lo += b->n_rej;
        k_hi -= b->n_keep;
        changed |= b->n_rej + b->n_keep > 0;
    }
    /* sweep with bounds on p until nothing more settles; crit < 0: not yet computed */
    double crit_rej[N_CELLS], crit_keep[N_CELLS];
    while (changed && n_open > 0) {
        changed = 0;
        const double a_lo = alpha / (double)(m - k_lo);
        const double a_hi = alpha / (double)(m - k_hi + 1);
        for (size_t c = 0; c < N_CELLS; c++)
            crit_rej[c] = crit_keep[c] = -1.0;
        size_t still = 0;
        for (size_t q = 0; q < n_open; q++) {
            const open_pair *o = &opened[q];
            const unsigned c = o->cell;
            unsigned char *st = &state[pair_at(G, o->i, o->j)];
            if (k_lo < m) {
                if (crit_rej[c] < 0)
                    crit_rej[c] = two_sided_crit(a_lo, dc.lo[c]) * (1.0 + Z_MARGIN);
                if (o->z >= crit_rej[c]) {
                    *st = PAIR_REJECTED;
                    k_lo++;
                    changed = 1;
                    continue;
                }
            }
            if (a_hi < 1) {
                if (crit_keep[c] < 0)
                    crit_keep[c] = two_sided_crit(a_hi, dc.hi[c]) * (1.0 - Z_MARGIN);
                if (o->z < crit_keep[c]) {
                    *st = PAIR_KEPT;
                    k_hi--;
                    changed = 1;
                    continue;
                }
            }
            opened[still++] = *o;
        }
        n_open = still;
    }
    /* the pairs near the boundary: exact p, then the same two tests on it; z is
       not needed any more and holds p from here on */
    exact_job ej = {.key = key, .key_se = key_se, .dof = dof, .opened = opened, .n = n_open};
    atomic_init(&ej.next, 0);
    arrank_workers_run(arrank_workers_for(n_open, EXACT_PER_WORKER), exact_worker, &ej);
    for (changed = n_open > 0; changed;) {
        changed = 0;
        size_t still = 0;
        for (size_t q = 0; q < n_open; q++) {
            const open_pair *o = &opened[q];
            const double p = o->z;
            unsigned char *st = &state[pair_at(G, o->i, o->j)];
            /* (m - k) p at any position k >= k_lo is at most (m - k_lo) p */
            if ((double)(m - k_lo) * p <= alpha) {
                *st = PAIR_REJECTED;
                k_lo++;
                changed = 1;
            } else if ((double)(m - k_hi + 1) * p > alpha) {
                *st = PAIR_KEPT;
                k_hi--;
                changed = 1;
            } else {
                opened[still++] = *o;
            }
        }
        n_open = still;
    }
    /* step-down over what is left: settled rejections come first, in order */
    double p_stop = INFINITY; /* open pairs with p below this are rejected */
    double *sorted = malloc((n_open ? n_open : 1) * sizeof *sorted);
    if (!sorted) {
        free(sample);
        free(band);
        free(state);
        free(opened);
        return arrank_errorf(err, ARRANK_ENOMEM, "no memory for %zu pairwise tests", m);
    }
    for (size_t q = 0; q < n_open; q++)
        sorted[q] = opened[q].z;
    qsort(sorted, n_open, sizeof *sorted, compare_double);
    for (size_t t = 0; t < n_open; t++) {
        double v = (double)(m - (k_lo + t)) * sorted[t];
        if (v > alpha) {
            p_stop = sorted[t];
            break;
        }
    }
    for (size_t q = 0; q < n_open; q++)
        state[pair_at(G, opened[q].i, opened[q].j)] =
            opened[q].z < p_stop ? PAIR_REJECTED : PAIR_KEPT;
    int g = 1;
    size_t leader = 0;
    group[0] = 1;
    for (size_t k = 1; k < G; k++) {
        if (state[pair_at(G, leader, k)] == PAIR_REJECTED) {
            g++;
            leader = k;
        }
        group[k] = g;
    }
    free(sorted);
    free(sample);
    free(band);
    free(state);
    free(opened);
    return ARRANK_OK;
}
