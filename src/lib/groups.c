/*
 * groups.c - groups of samples that cannot be told apart: Holm's procedure
 * and the leader rule (arrank/groups.h).
 */
#include "arrank/groups.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_sort.h>

#include "stats.h"

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

/* A pair whose decision is still open: (i, j), i < j, its z (later its p) and
   dof cell. */
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

/* Holm's family among the first G samples, as the steps below settle it. */
typedef struct {
    const double *key, *key_se, *dof;
    size_t G, m;
    double alpha;
    unsigned char *state; /* [m] at pair_at: PAIR_OPEN, _REJECTED or _KEPT */
    open_pair *opened;    /* [n_open] the pairs still open, in row order */
    size_t n_open;
    size_t k_lo, k_hi;    /* rejections known; an upper bound on them */
    dof_cells dc;
} holm_family;

/* Step 1: every pair's z and dof cell.  A pair with no variance at all (both
   se 0) is settled here, with pair_p's exact answer and without a CDF. */
static void pairs_set_up(holm_family *h)
{
    const size_t G = h->G;
    for (size_t i = 0; i < G; i++) {
        const double si = h->key_se[i];
        const double s2i = si * si;
        const double q4i = isfinite(h->dof[i]) ? si * si * si * si / h->dof[i] : 0.0;
        for (size_t j = i + 1; j < G; j++) {
            const double sj = h->key_se[j];
            const double v = s2i + sj * sj;
            const double d = fabs(h->key[i] - h->key[j]);
            unsigned char *st = &h->state[pair_at(G, i, j)];
            if (!(v > 0)) {
                *st = d > 0 ? PAIR_REJECTED : PAIR_KEPT;
                if (d > 0)
                    h->k_lo++;
                else
                    h->k_hi--;
                continue;
            }
            /* welch_dof's denominator, rounded as welch_dof rounds it */
            const double den = q4i + (isfinite(h->dof[j]) ? sj * sj * sj * sj / h->dof[j] : 0.0);
            *st = PAIR_OPEN;
            h->opened[h->n_open++] =
                (open_pair){d / sqrt(v), (uint16_t)i, (uint16_t)j,
                            (unsigned char)cell_of(den > 0 ? v * v / den : INFINITY)};
        }
    }
}

/* Step 2: sweep with bounds on p until nothing more settles (see above);
   crit < 0: not yet computed for this sweep. */
static void sweep_bounds(holm_family *h)
{
    double crit_rej[N_CELLS], crit_keep[N_CELLS];
    const size_t m = h->m;
    for (int changed = 1; changed && h->n_open > 0;) {
        changed = 0;
        const double a_lo = h->alpha / (double)(m - h->k_lo);
        const double a_hi = h->alpha / (double)(m - h->k_hi + 1);
        for (size_t c = 0; c < N_CELLS; c++)
            crit_rej[c] = crit_keep[c] = -1.0;
        size_t still = 0;
        for (size_t q = 0; q < h->n_open; q++) {
            const open_pair *o = &h->opened[q];
            const unsigned c = o->cell;
            unsigned char *st = &h->state[pair_at(h->G, o->i, o->j)];
            if (h->k_lo < m) {
                if (crit_rej[c] < 0)
                    crit_rej[c] = two_sided_crit(a_lo, h->dc.lo[c]) * (1.0 + Z_MARGIN);
                if (o->z >= crit_rej[c]) {
                    *st = PAIR_REJECTED;
                    h->k_lo++;
                    changed = 1;
                    continue;
                }
            }
            if (a_hi < 1) {
                if (crit_keep[c] < 0)
                    crit_keep[c] = two_sided_crit(a_hi, h->dc.hi[c]) * (1.0 - Z_MARGIN);
                if (o->z < crit_keep[c]) {
                    *st = PAIR_KEPT;
                    h->k_hi--;
                    changed = 1;
                    continue;
                }
            }
            h->opened[still++] = *o;
        }
        h->n_open = still;
    }
}

/* Step 3: the pairs near the boundary get their exact p (GSL's t CDF at the
   Welch dof), then the same two tests on it; z holds p from here on. */
static void settle_exact(holm_family *h)
{
    for (size_t q = 0; q < h->n_open; q++) {
        open_pair *o = &h->opened[q];
        o->z = pair_p(h->key[o->i], h->key_se[o->i], h->dof[o->i], h->key[o->j],
                      h->key_se[o->j], h->dof[o->j]);
    }
    const size_t m = h->m;
    for (int changed = h->n_open > 0; changed;) {
        changed = 0;
        size_t still = 0;
        for (size_t q = 0; q < h->n_open; q++) {
            const open_pair *o = &h->opened[q];
            const double p = o->z;
            unsigned char *st = &h->state[pair_at(h->G, o->i, o->j)];
            /* (m - k) p at any position k >= k_lo is at most (m - k_lo) p */
            if ((double)(m - h->k_lo) * p <= h->alpha) {
                *st = PAIR_REJECTED;
                h->k_lo++;
                changed = 1;
            } else if ((double)(m - h->k_hi + 1) * p > h->alpha) {
                *st = PAIR_KEPT;
                h->k_hi--;
                changed = 1;
            } else {
                h->opened[still++] = *o;
            }
        }
        h->n_open = still;
    }
}

/* Step 4: the step-down over what is left; settled rejections come first, in
   order.  ENOMEM only. */
static arrank_status step_down(holm_family *h, arrank_error *err)
{
    double p_stop = INFINITY; /* open pairs with p below this are rejected */
    double *sorted = malloc((h->n_open ? h->n_open : 1) * sizeof *sorted);
    if (!sorted)
        return arrank_errorf(err, ARRANK_ENOMEM, "no memory for %zu pairwise tests", h->m);
    for (size_t q = 0; q < h->n_open; q++)
        sorted[q] = h->opened[q].z;
    qsort(sorted, h->n_open, sizeof *sorted, compare_double);
    for (size_t t = 0; t < h->n_open; t++) {
        double v = (double)(h->m - (h->k_lo + t)) * sorted[t];
        if (v > h->alpha) {
            p_stop = sorted[t];
            break;
        }
    }
    for (size_t q = 0; q < h->n_open; q++)
        h->state[pair_at(h->G, h->opened[q].i, h->opened[q].j)] =
            h->opened[q].z < p_stop ? PAIR_REJECTED : PAIR_KEPT;
    free(sorted);
    return ARRANK_OK;
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
    holm_family h = {.key = key, .key_se = key_se, .dof = dof, .G = G, .m = m, .alpha = alpha,
                     .state = malloc(m ? m : 1),
                     .opened = malloc((m ? m : 1) * sizeof *h.opened), .k_hi = m};
    arrank_status st = ARRANK_OK;
    if (!h.state || !h.opened)
        st = arrank_errorf(err, ARRANK_ENOMEM, "no memory for %zu pairwise tests", m);
    if (st == ARRANK_OK) {
        cells_init(&h.dc);
        pairs_set_up(&h);
        sweep_bounds(&h);
        settle_exact(&h);
        st = step_down(&h, err);
    }
    if (st == ARRANK_OK) { /* step 5: the leader rule (groups.h) */
        int g = 1;
        size_t leader = 0;
        group[0] = 1;
        for (size_t k = 1; k < G; k++) {
            if (h.state[pair_at(G, leader, k)] == PAIR_REJECTED) {
                g++;
                leader = k;
            }
            group[k] = g;
        }
    }
    free(h.state);
    free(h.opened);
    return st;
}
