/*
 * rank.c - how sure is the ranking: P(best), groups, compensation, bootstrap
 * (arrank/rank.h).
 *
 * Every key the ranking uses (ln r at the operating temperature, -Ea, ln A)
 * is linear in a sample's fitted parameters, key = g'p.  Under the normal
 * model p ~ N(p_hat, C) the key is N(g'p_hat, g'Cg) (a linear form of a
 * multivariate normal is normal: Anderson, An Introduction to Multivariate
 * Statistical Analysis, 3rd ed., 2003, ch. 2); under the multivariate t with
 * nu dof, location p_hat and scale C, it is g'p_hat + sqrt(g'Cg) T with
 * T ~ t_nu (a linear form of a multivariate t is a univariate t with the
 * same dof: Kotz & Nadarajah, Multivariate t Distributions, 2004, sec.
 * 1.10, as tests/test_rank.c cites it; chapter and verse from memory).  So
 * the Monte Carlo draws one scalar per sample and draw, exactly, whatever
 * the number of parameters: each sample keeps only its key, the key's scale
 * sqrt(g'Cg) and its dof.  One pass over the draws, no allocation inside it,
 * on two threads (below).
 */
/* GSL's inline gsl_rng_uniform (GSL manual, "Inline functions"): the Monte
   Carlo's inner loop calls it most, and this saves a call per uniform. */
#define HAVE_INLINE 1

#include "arrank/rank.h"

#include <math.h>
#include <pthread.h>
#include <stdatomic.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_fit.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>
#include <gsl/gsl_sort.h>
#include <gsl/gsl_statistics_double.h>

#include "arrank/units.h"
#include "internal.h"

/* One sample in the Monte Carlo: key = mean + se T, T ~ t_dof or N(0, 1). */
typedef struct {
    double mean;
    double se;  /* sqrt(g'Cg) */
    double dof; /* INFINITY: normal */
} key_draw;

/*
 * Cholesky factor of a symmetric positive semi-definite p x p matrix (p <= 3),
 * lower triangular (Golub & Van Loan, Matrix Computations, 4th ed., Alg. 4.2.1);
 * a zero or negative pivot (a fixed or exactly known parameter) gives a zero
 * column instead of a failure.
 */
static void cholesky_small(const double C[3][3], size_t p, double L[3][3])
{
    memset(L, 0, 9 * sizeof L[0][0]);
    for (size_t j = 0; j < p; j++) {
        double s = C[j][j];
        for (size_t k = 0; k < j; k++)
            s -= L[j][k] * L[j][k];
        L[j][j] = s > 0 ? sqrt(s) : 0.0;
        for (size_t i = j + 1; i < p; i++) {
            double t = C[i][j];
            for (size_t k = 0; k < j; k++)
                t -= L[i][k] * L[j][k];
            L[i][j] = L[j][j] > 0 ? t / L[j][j] : 0.0;
        }
    }
}

/* key_draw from parameters p[np], covariance C and key gradient g.  The scale
   is |L'g| = sqrt(g'Cg) through the Cholesky factor, which stays real (and
   exactly 0 for fixed parameters) where rounding makes C slightly indefinite. */
static key_draw make_draw(const double *p, const double C[3][3], const double *g, size_t np,
                          double dof, int normal)
{
    key_draw kd;
    double L[3][3];
    cholesky_small(C, np, L);
    kd.mean = 0;
    for (size_t k = 0; k < np; k++)
        kd.mean += g[k] * p[k];
    double s = 0;
    for (size_t k = 0; k < np; k++) {
        double a = 0;
        for (size_t i = k; i < np; i++)
            a += L[i][k] * g[i];
        s += a * a;
    }
    kd.se = sqrt(s);
    kd.dof = normal ? INFINITY : dof;
    return kd;
}

/* Key gradient of a plain Arrhenius fit over (b0, b1). */
static void arrhenius_gradient(const arrank_arrhenius *f, arrank_rank_by by, double temp_K,
                               double g[2])
{
    switch (by) {
    case ARRANK_BY_EA: /* key -Ea = R b1: lower Ea ranks higher */
        g[0] = 0.0;
        g[1] = ARRANK_R_J_MOL_K;
        return;
    case ARRANK_BY_PREFACTOR: /* ln A = b0 - b1/T_ref */
        g[0] = 1.0;
        g[1] = -1.0 / f->T_ref_K;
        return;
    case ARRANK_BY_RATE: break;
    }
    g[0] = 1.0;
    g[1] = 1.0 / temp_K - 1.0 / f->T_ref_K;
}

static key_draw arrhenius_draw(const arrank_arrhenius *f, arrank_rank_by by, double temp_K,
                               int normal)
{
    const double p[2] = {f->b0, f->b1};
    const double C[3][3] = {{f->cov[0][0], f->cov[0][1], 0}, {f->cov[1][0], f->cov[1][1], 0},
                            {0, 0, 0}};
    double g[2];
    arrhenius_gradient(f, by, temp_K, g);
    return make_draw(p, C, g, 2, f->dof, normal);
}

/*
 * The variates.  A sample whose key the draw needs is drawn directly: a
 * Student t by Bailey's polar method (Bailey, Math. Comp. 62:779, 1994),
 * exact for every nu > 0: (U, V) uniform in the unit disc, W = U^2 + V^2,
 * then T = U sqrt(nu (W^(-2/nu) - 1) / W) ~ t_nu; it costs about 2.5
 * uniforms, a log and an expm1, against a normal and a chi-square (a gamma
 * variate) for N / sqrt(chi2/nu), and expm1(-(2/nu) log W) keeps
 * W^(-2/nu) - 1 accurate for large nu.  A normal key takes one ziggurat
 * variate (Marsaglia & Tsang, J. Stat. Softw. 5(8), 2000; GSL's code).
 *
 * Bailey's method rests on the t's radial parent: with W uniform on (0, 1)
 * and an independent uniform angle theta, R(W) cos(theta) ~ t_nu for
 * R(W)^2 = nu (W^(-2/nu) - 1) (ibid.; for nu = inf, R^2 = -2 ln W, the
 * normal's, Box & Muller, Ann. Math. Statist. 29:610, 1958).  So |T| <= R(W),
 * and R falls as W grows: once a draw's best key has reached a level m, a
 * sample with mean below m can beat it only when W < w = R^-1(u), u = (m -
 * mean)/se, i.e. w = (1 + u^2/nu)^(-nu/2) (exp(-u^2/2) for the normal).
 *
 * So the samples outside the pairwise matrix with w < 1/4 (the tail) are
 * not drawn one by one.  The events W_j < w_j are independent Bernoulli(w_j);
 * the next tail sample (in rank order) with its event is found by inverting
 * the waiting time, P(no event among the first k) = exp(-H_k) with H the
 * running sum of -ln(1 - w_j): an exponential E = -ln U and a binary search
 * for the first H_j >= H_last + E (the inversion method: Devroye,
 * Non-Uniform Random Variate Generation, 1986, ch. II; the sequence starts
 * afresh after each event).  Then W = w_j A, A uniform, is W given W < w_j,
 * and only then are the angle and the key drawn.  Each tail sample's W is
 * still uniform and independent of the rest, so the draw's winner has the
 * distribution it has when every key is drawn, for one exponential a draw
 * and one per event (sum(w) of them on average) instead of 2.5 uniforms per
 * sample.  The other candidates (the head) are drawn first, directly; in a
 * draw where they leave the best key below m, the tail is drawn directly
 * too.  Ties (exactly known keys) go to the earlier sample in rank order,
 * as when every key is drawn in order.
 */
#define TWO_PI 6.283185307179586477 /* 2 pi */

/* R(W)^2 of the radial parent (above). */
static double radius2(double w, double dof, double two_over_dof)
{
    return isfinite(dof) ? dof * expm1(-two_over_dof * log(w)) : -2.0 * log(w);
}

/* A candidate as the draws use it. */
typedef struct {
    double mean, se, dof, two_over_dof;
    double w;     /* tail: the W below which the key can reach the skip level */
    size_t index; /* place in rank order */
} cand_draw;

/*
 * The uniforms.  GSL's taus2 is L'Ecuyer's maximally equidistributed
 * three-component Tausworthe generator (L'Ecuyer, Math. Comp. 65:203, 1996;
 * GSL reference manual, "Random number generator algorithms"), returning
 * s1 ^ s2 ^ s3 scaled by 2^-32; the shifts and masks below are GSL's (its
 * rng/taus.c, from memory, and proved against GSL's own output by
 * tests/test_rank.c, test_pbest_uniforms).  GSL draws each uniform through two
 * pointers and a call; the draws here need 2.5 of them per key, so a stream
 * seeds its generator with GSL (gsl_rng_set, whose seeding is GSL's own), copies
 * the three words of its state (gsl_rng_state) and steps them in line.  The
 * copy is used only when GSL's state is three unsigned longs and a clone of
 * the generator gives the same first numbers through GSL as the copy does
 * here; otherwise, for normal draws (GSL's ziggurat takes the generator) and
 * for the test that compares the two (arrank_rank_rng_reference), every
 * uniform goes through GSL.  The numbers are the same either way.
 */
typedef struct {
    unsigned long s1, s2, s3; /* the state, when gsl is NULL */
    gsl_rng *gsl;             /* non-NULL: every uniform from GSL */
} uniforms;

#define TAUS_MASK 0xffffffffUL
/* One step of a component of the combined generator (L'Ecuyer 1996): x's
   bits shifted by a, folded in and shifted by b, and x masked by c shifted by d,
   all in 32 bits. */
#define TAUS_STEP(x, a, b, c, d) \
    ((((x) & (c)) << (d)) & TAUS_MASK) ^ (((((x) << (a)) & TAUS_MASK) ^ (x)) >> (b))

static inline unsigned long taus_next(uniforms *g)
{
    g->s1 = TAUS_STEP(g->s1, 13, 19, 4294967294UL, 12);
    g->s2 = TAUS_STEP(g->s2, 2, 25, 4294967288UL, 4);
    g->s3 = TAUS_STEP(g->s3, 3, 11, 4294967280UL, 17);
    return g->s1 ^ g->s2 ^ g->s3;
}

/* gsl_rng_uniform: [0, 1) */
static inline double uniform(uniforms *g)
{
    if (g->gsl)
        return gsl_rng_uniform(g->gsl);
    return (double)taus_next(g) / 4294967296.0;
}

/* gsl_rng_uniform_pos: (0, 1), by skipping 0 as GSL does */
static inline double uniform_pos(uniforms *g)
{
    double x;
    do
        x = uniform(g);
    while (x == 0);
    return x;
}

/* Take rng's taus2 state into g when it is the layout stepped here (above);
   g->gsl = rng otherwise.  rng itself is left where it was. */
static void uniforms_take(uniforms *g, gsl_rng *rng, int in_line)
{
    enum { PROBE = 8 };
    memset(g, 0, sizeof *g);
    g->gsl = rng;
    if (!in_line || gsl_rng_size(rng) != 3 * sizeof(unsigned long))
        return;
    uniforms copy = {0, 0, 0, NULL};
    memcpy(&copy.s1, (const unsigned char *)gsl_rng_state(rng), sizeof copy.s1);
    memcpy(&copy.s2, (const unsigned char *)gsl_rng_state(rng) + sizeof copy.s1, sizeof copy.s2);
    memcpy(&copy.s3, (const unsigned char *)gsl_rng_state(rng) + 2 * sizeof copy.s1,
           sizeof copy.s3);
    gsl_rng *probe = gsl_rng_clone(rng);
    if (!probe)
        return;
    uniforms trial = copy;
    int same = gsl_rng_max(probe) == TAUS_MASK && gsl_rng_min(probe) == 0;
    for (int i = 0; same && i < PROBE; i++)
        same = gsl_rng_get(probe) == taus_next(&trial);
    gsl_rng_free(probe);
    if (same)
        *g = copy;
}

static int rng_reference = 0; /* 1: every uniform through GSL (arrank_rank_rng_reference) */

void arrank_rank_rng_reference(int on)
{
    rng_reference = on;
}

int arrank_rank_uniforms(unsigned long seed, int in_line, double *out, size_t n)
{
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_taus2);
    if (!rng)
        return -1;
    gsl_rng_set(rng, seed);
    uniforms g;
    uniforms_take(&g, rng, in_line);
    for (size_t i = 0; i < n; i++)
        out[i] = uniform(&g);
    const int stepped = g.gsl == NULL;
    gsl_rng_free(rng);
    return stepped;
}

/* The key drawn directly: Bailey's polar method, or a ziggurat normal (GSL's
   generator: normal draws never take the copy, above).  In line in the draw
   loop, so that the generator's state stays in registers. */
#if defined(__GNUC__)
#define ALWAYS_INLINE inline __attribute__((always_inline))
#else
#define ALWAYS_INLINE inline
#endif
static ALWAYS_INLINE double direct_key(uniforms *g, const cand_draw *k)
{
    if (!isfinite(k->dof))
        return k->mean + k->se * gsl_ran_gaussian_ziggurat(g->gsl, 1.0);
    double u, w;
    do {
        u = 2.0 * uniform(g) - 1.0;
        const double v = 2.0 * uniform(g) - 1.0;
        w = u * u + v * v;
    } while (!(w <= 1.0 && w > 0.0));
    return k->mean + k->se * u * sqrt(radius2(w, k->dof, k->two_over_dof) / w);
}

/*
 * The Monte Carlo runs as ARRANK_RANK_STREAMS independent streams, each with
 * its own generator (GSL taus2, L'Ecuyer 1996: fast, period 2^88) seeded with
 * seed + stream * STREAM_SEED_STEP, and an equal share of the draws.  The
 * streams run on threads when the system gives them, one after the other
 * otherwise; the numbers are the same either way.
 */
#define ARRANK_RANK_STREAMS 2
#define STREAM_SEED_STEP 0x9E3779B97F4A7C15ull

typedef struct {
    const cand_draw *head; /* [n_head] in rank order: the top and every sample drawn directly */
    const cand_draw *tail; /* [n_tail] in rank order: drawn by thinning */
    const double *hazard;  /* [n_tail] running sums of -ln(1 - w) */
    size_t n_head, n_tail, n_top, draws;
    size_t n_pad;      /* n_top rounded up to WIN_BLOCK: the row length of wins */
    double skip_level;
    unsigned long seed;
    size_t *best;      /* [n] */
    int64_t *wins;     /* [n_top * n_pad]: row i, column j counts draws with key i > key j */
    double *top_key;   /* [n_pad], NAN beyond n_top (never greater, never less) */
    int pairs_by_pair; /* arrank_rank_pairs_reference */
    int in_line;       /* 1: uniforms stepped in line (every key a t, no reference switch) */
    int failed;
} mc_stream;

/*
 * The pairwise counts of one draw.  Every ordered pair (i, j) of the top
 * gets one compare, whole rows at a time, which the compiler's vector
 * extension (GCC, Clang) does two doubles per instruction: a true compare is
 * an all-ones lane, -1, so subtracting it counts the win.  Padding keys are
 * NAN and the diagonal compares a key with itself: both add 0.  The plain
 * loop (pair by pair, both directions, as the counts were first kept) stays
 * for other compilers and for the test that compares the two
 * (arrank_rank_pairs_reference); the counts are integers and equal.
 */
#define WIN_BLOCK 4
static int pairs_reference = 0; /* 1: count pair by pair (arrank_rank_pairs_reference) */

void arrank_rank_pairs_reference(int on)
{
    pairs_reference = on;
}

static void count_wins(const double *top_key, size_t n_top, size_t n_pad, int64_t *wins,
                       int by_pair)
{
#if defined(__GNUC__)
    typedef double v2d __attribute__((vector_size(16)));
    typedef int64_t v2i __attribute__((vector_size(16)));
    if (!by_pair) {
        for (size_t i = 0; i < n_top; i++) {
            const v2d a = {top_key[i], top_key[i]};
            int64_t *row = wins + i * n_pad;
            for (size_t j = 0; j < n_pad; j += WIN_BLOCK) {
                v2d b0, b1;
                v2i c0, c1;
                /* memcpy: the loads and stores need no alignment */
                memcpy(&b0, top_key + j, sizeof b0);
                memcpy(&b1, top_key + j + 2, sizeof b1);
                memcpy(&c0, row + j, sizeof c0);
                memcpy(&c1, row + j + 2, sizeof c1);
                c0 -= a > b0;
                c1 -= a > b1;
                memcpy(row + j, &c0, sizeof c0);
                memcpy(row + j + 2, &c1, sizeof c1);
            }
        }
        return;
    }
#endif
    (void)by_pair;
    for (size_t i = 0; i < n_top; i++)
        for (size_t j = i + 1; j < n_top; j++) {
            const double a = top_key[i], b = top_key[j];
            wins[i * n_pad + j] += a > b;
            wins[j * n_pad + i] += b > a;
        }
}

/* The draw's best so far, ties to the earlier sample in rank order. */
static void offer(double key, size_t index, double *best_key, size_t *arg_best)
{
    if (key > *best_key || (key == *best_key && index < *arg_best)) {
        *best_key = key;
        *arg_best = index;
    }
}

static void *mc_run(void *arg)
{
    mc_stream *m = arg;
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_taus2);
    if (!rng) {
        m->failed = 1;
        return NULL;
    }
    gsl_rng_set(rng, m->seed);
    uniforms g;
    uniforms_take(&g, rng, m->in_line);
    const size_t n_top = m->n_top;
    for (size_t d = 0; d < m->draws; d++) {
        double best_key = -INFINITY;
        size_t arg_best = SIZE_MAX;
        for (size_t c = 0; c < m->n_head; c++) {
            const cand_draw *k = &m->head[c];
            const double key = direct_key(&g, k);
            if (k->index < n_top)
                m->top_key[k->index] = key;
            offer(key, k->index, &best_key, &arg_best);
        }
        if (best_key >= m->skip_level) {
            const double *h = m->hazard;
            double target = 0;
            for (size_t lo = 0; lo < m->n_tail;) {
                /* the next tail sample whose W falls below its w: first h[j] >= target */
                target += -log(uniform_pos(&g));
                size_t hi = m->n_tail;
                while (lo < hi) {
                    const size_t mid = lo + (hi - lo) / 2;
                    if (h[mid] >= target)
                        hi = mid;
                    else
                        lo = mid + 1;
                }
                if (lo == m->n_tail)
                    break;
                const cand_draw *k = &m->tail[lo];
                const double w = k->w * uniform_pos(&g);
                const double t = sqrt(radius2(w, k->dof, k->two_over_dof)) *
                                 cos(TWO_PI * uniform(&g));
                offer(k->mean + k->se * t, k->index, &best_key, &arg_best);
                target = h[lo];
                lo++;
            }
        } else {
            for (size_t c = 0; c < m->n_tail; c++)
                offer(direct_key(&g, &m->tail[c]), m->tail[c].index, &best_key, &arg_best);
        }
        m->best[arg_best == SIZE_MAX ? 0 : arg_best]++;
        /* ties (two exactly known keys) count for neither side */
        count_wins(m->top_key, n_top, m->n_pad, m->wins, m->pairs_by_pair);
    }
    gsl_rng_free(rng);
    return NULL;
}

/* Upper tail quantile of the key's distribution: t with dof, or normal. */
static double upper_quantile(double tail, double dof)
{
    return isfinite(dof) ? gsl_cdf_tdist_Qinv(tail, dof) : gsl_cdf_ugaussian_Qinv(tail);
}

/* upper_quantile for one tail, remembered per dof (a campaign has few distinct dof). */
typedef struct {
    double tail;
    size_t n, next;
    double dof[16], q[16];
} quantile_memo;

static double memo_quantile(quantile_memo *qm, double dof)
{
    for (size_t i = 0; i < qm->n; i++)
        if (qm->dof[i] == dof)
            return qm->q[i];
    const double q = upper_quantile(qm->tail, dof);
    qm->dof[qm->next] = dof;
    qm->q[qm->next] = q;
    qm->next = (qm->next + 1) % 16;
    if (qm->n < 16)
        qm->n++;
    return q;
}

/*
 * The samples that can be best, ascending; the first n_top are always in.
 * For any level m and the sample L with the highest lower quantile
 * m = mean_L - q_L se_L, P(j best) <= P(x_j >= x_L) <= P(x_j >= m) + P(x_L < m).
 * With both tails at CULL_TAIL / n, a sample whose upper quantile lies below m
 * is best with probability at most 2 CULL_TAIL / n, all of them together at
 * most 2 CULL_TAIL: far below the Monte Carlo's resolution of 1/draws.  Those
 * samples get P(best) = 0 and are not drawn, which makes a campaign of
 * thousands of samples cost what its few contenders cost.
 *
 * Samples with few points (a refit on a short kinetic window leaves 2 to 5
 * dof) pass this test far below the leader: t_2's quantile at 1e-11 is
 * 2.2e5.  That is their true tail, not a loose bound: P(T_2 > x) is about
 * 1/(2 x^2), so a key 100 standard errors below the leader is best with
 * probability near 5e-5, which no cull at 1e-7 may drop (on the bench
 * campaign the 88 such candidates win 0.4 % of the draws together).  The
 * Monte Carlo draws most of them by thinning (above).
 *
 * *skip_level gets the level m of the thinning: the highest lower quantile
 * at SKIP_TAIL among the candidates, which a draw's best key reaches with
 * probability at least 1 - SKIP_TAIL (the sample that sets it has its mean
 * above m, so it is in the head, drawn before the tail).  Any level gives
 * the same distribution of counts; this one makes the thinning the rule.
 */
#define CULL_TAIL 1e-7
#define SKIP_TAIL 0.01
static size_t candidates(const key_draw *kd, size_t n, size_t n_top, size_t *cand,
                         double *skip_level)
{
    quantile_memo cull = {.tail = CULL_TAIL / (double)n}, skip = {.tail = SKIP_TAIL};
    double level = -INFINITY;
    for (size_t i = 0; i < n; i++) {
        const double lo = kd[i].mean - memo_quantile(&cull, kd[i].dof) * kd[i].se;
        if (lo > level)
            level = lo;
    }
    size_t k = 0;
    *skip_level = -INFINITY;
    for (size_t i = 0; i < n; i++) {
        if (i < n_top || !(kd[i].mean + memo_quantile(&cull, kd[i].dof) * kd[i].se < level)) {
            cand[k++] = i;
            const double lo = kd[i].mean - memo_quantile(&skip, kd[i].dof) * kd[i].se;
            if (lo > *skip_level)
                *skip_level = lo;
        }
    }
    return k;
}

/*
 * The w of a sample against the skip level m (see the variates above); 2,
 * never thinned, for a mean at or above m.  0 for se = 0 below m: never
 * above it.  u is shrunk by SKIP_MARGIN so that rounding in w (log1p and exp,
 * a few ulp) cannot carry the bound R(w) <= u past m: a relative error e in
 * w moves R(w)^2 by 2 (1/u^2 + 1/nu) e, and the tail's w < 1/4 means u > 1.6.
 */
#define SKIP_MARGIN 1e-6
static double skip_w(const key_draw *k, double m)
{
    const double u = (m - k->mean) / k->se * (1.0 - SKIP_MARGIN);
    if (!(u > 0))
        return 2.0;
    return isfinite(k->dof) ? exp(-0.5 * k->dof * log1p(u * u / k->dof)) : exp(-0.5 * u * u);
}

/* The Monte Carlo: see the top of this file and arrank_rank_pbest in rank.h. */
static arrank_status pbest_engine(const key_draw *kd, size_t n, size_t draws, unsigned long seed,
                                  size_t n_top, double *p_best, double *p_beats,
                                  arrank_error *err)
{
    if (draws == 0)
        return arrank_errorf(err, ARRANK_EINVAL, "'draws' must be at least 1");
    if (n_top > n)
        return arrank_errorf(err, ARRANK_EINVAL, "%zu samples asked for the pairwise matrix, "
                                                 "only %zu ranked", n_top, n);
    if (n == 0)
        return ARRANK_OK;
    size_t *cand = malloc(n * sizeof *cand);
    cand_draw *cd = malloc(2 * n * sizeof *cd);
    double *hazard = malloc(n * sizeof *hazard);
    if (!cand || !cd || !hazard) {
        free(cand);
        free(cd);
        free(hazard);
        return arrank_errorf(err, ARRANK_ENOMEM, "no memory for %zu samples of draws", n);
    }
    double skip_level;
    const size_t n_cand = candidates(kd, n, n_top, cand, &skip_level);
    /* head and tail (the variates, above) */
    cand_draw *head = cd, *tail = cd + n;
    size_t n_head = 0, n_tail = 0;
    double h = 0;
    for (size_t c = 0; c < n_cand; c++) {
        const key_draw *k = &kd[cand[c]];
        const double w = cand[c] < n_top ? 2.0 : skip_w(k, skip_level);
        const cand_draw x = {k->mean, k->se, k->dof, 2.0 / k->dof, w, cand[c]};
        if (w < 0.25) {
            h += -log1p(-w);
            hazard[n_tail] = h;
            tail[n_tail++] = x;
        } else {
            head[n_head++] = x;
        }
    }
    /* GSL's ziggurat draws the normal keys from GSL's generator (the uniforms, above) */
    int all_t = 1;
    for (size_t c = 0; c < n_head; c++)
        all_t &= isfinite(head[c].dof) != 0;
    for (size_t c = 0; c < n_tail; c++)
        all_t &= isfinite(tail[c].dof) != 0;
    mc_stream m[ARRANK_RANK_STREAMS];
    memset(m, 0, sizeof m);
    arrank_status st = ARRANK_OK;
    for (size_t c = 0; c < ARRANK_RANK_STREAMS; c++) {
        m[c].head = head;
        m[c].tail = tail;
        m[c].hazard = hazard;
        m[c].n_head = n_head;
        m[c].n_tail = n_tail;
        m[c].n_top = n_top;
        m[c].skip_level = skip_level;
        m[c].draws = draws / ARRANK_RANK_STREAMS + (c < draws % ARRANK_RANK_STREAMS);
        m[c].seed = (unsigned long)(seed + c * STREAM_SEED_STEP);
        m[c].n_pad = (n_top + WIN_BLOCK - 1) / WIN_BLOCK * WIN_BLOCK;
        m[c].pairs_by_pair = pairs_reference;
        m[c].in_line = !rng_reference && all_t;
        m[c].best = calloc(n, sizeof *m[c].best);
        m[c].wins = calloc(n_top * m[c].n_pad + 1, sizeof *m[c].wins);
        m[c].top_key = malloc((m[c].n_pad + 1) * sizeof *m[c].top_key);
        if (!m[c].best || !m[c].wins || !m[c].top_key) {
            st = arrank_errorf(err, ARRANK_ENOMEM, "no memory for %zu samples of draws", n);
            continue;
        }
        for (size_t j = n_top; j < m[c].n_pad; j++)
            m[c].top_key[j] = NAN;
    }
    if (st == ARRANK_OK) {
        pthread_t th[ARRANK_RANK_STREAMS];
        int started[ARRANK_RANK_STREAMS] = {0};
        for (size_t c = 1; c < ARRANK_RANK_STREAMS; c++)
            started[c] = pthread_create(&th[c], NULL, mc_run, &m[c]) == 0;
        mc_run(&m[0]);
        for (size_t c = 1; c < ARRANK_RANK_STREAMS; c++) {
            if (started[c])
                pthread_join(th[c], NULL);
            else
                mc_run(&m[c]);
        }
        for (size_t c = 0; c < ARRANK_RANK_STREAMS; c++)
            if (m[c].failed)
                st = arrank_errorf(err, ARRANK_ENOMEM, "no memory for a random generator");
    }
    if (st == ARRANK_OK) {
        for (size_t i = 0; i < n; i++) {
            size_t b = 0;
            for (size_t c = 0; c < ARRANK_RANK_STREAMS; c++)
                b += m[c].best[i];
            p_best[i] = (double)b / (double)draws;
        }
        if (p_beats)
            for (size_t i = 0; i < n_top; i++)
                for (size_t j = 0; j < n_top; j++) {
                    size_t b = 0;
                    for (size_t c = 0; c < ARRANK_RANK_STREAMS; c++)
                        b += (size_t)m[c].wins[i * m[c].n_pad + j];
                    p_beats[i * n_top + j] = i == j ? NAN : (double)b / (double)draws;
                }
    }
    for (size_t c = 0; c < ARRANK_RANK_STREAMS; c++) {
        free(m[c].best);
        free(m[c].wins);
        free(m[c].top_key);
    }
    free(cand);
    free(cd);
    free(hazard);
    return st;
}

arrank_status arrank_rank_pbest(const arrank_arrhenius *const *fits, size_t n, arrank_rank_by by,
                                double temp_K, size_t draws, unsigned long seed,
                                int normal_draws, size_t n_top, double *p_best, double *p_beats,
                                arrank_error *err)
{
    if (by == ARRANK_BY_RATE && !(isfinite(temp_K) && temp_K > 0))
        return arrank_errorf(err, ARRANK_EINVAL,
                             "ranking by rate needs a positive operating temperature, got '%g K'",
                             temp_K);
    key_draw *kd = malloc((n ? n : 1) * sizeof *kd);
    if (!kd)
        return arrank_errorf(err, ARRANK_ENOMEM, "no memory for %zu samples of draws", n);
    for (size_t i = 0; i < n; i++)
        kd[i] = arrhenius_draw(fits[i], by, temp_K, normal_draws);
    arrank_status st = pbest_engine(kd, n, draws, seed, n_top, p_best, p_beats, err);
    free(kd);
    return st;
}

/* ---- Holm and groups ---------------------------------------------------- */

arrank_status arrank_rank_holm(const double *p, size_t m, double *adj, arrank_error *err)
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

/* Two-sided p of key_i - key_j with Welch-Satterthwaite dof (rank.h). */
static double pair_p(double ki, double si, double di, double kj, double sj, double dj)
{
    const double v = si * si + sj * sj;
    const double d = fabs(ki - kj);
    if (!(v > 0))
        return d > 0 ? 0.0 : 1.0;
    const double z = d / sqrt(v);
    const double nu = welch_dof(si, di, sj, dj);
    if (isinf(nu))
        return 2.0 * gsl_cdf_ugaussian_Q(z);
    return 2.0 * gsl_cdf_tdist_Q(z, nu);
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
    return nu > 0 ? upper_quantile(0.5 * a, nu) : INFINITY;
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

arrank_status arrank_rank_groups(const double *key, const double *key_se, const double *dof,
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

/* ---- compensation -------------------------------------------------------- */

const char *arrank_comp_verdict_words(arrank_comp_verdict verdict)
{
    switch (verdict) {
    case ARRANK_COMP_TOO_FEW: return "too few samples";
    case ARRANK_COMP_NONE: return "no compensation";
    case ARRANK_COMP_ARTIFACT: return "consistent with a statistical artifact";
    case ARRANK_COMP_REAL: return "not explained by error correlation";
    }
    return "unknown";
}

/* Least-squares line y = c0 + c1 x with the two-sided p of c1 = 0 (t, n - 2 dof). */
static int line_fit(const double *x, const double *y, size_t n, double *c0, double *c1,
                    double *se0, double *se1, double *p1)
{
    double cov00, cov01, cov11, ss;
    int gs = gsl_fit_linear(x, 1, y, 1, n, c0, c1, &cov00, &cov01, &cov11, &ss);
    if (gs != GSL_SUCCESS || !isfinite(*c1))
        return -1;
    /* GSL scales the covariance by the scatter about the line, ss/(n - 2). */
    *se0 = sqrt(cov00 > 0 ? cov00 : 0);
    *se1 = sqrt(cov11 > 0 ? cov11 : 0);
    if (*se1 > 0)
        *p1 = 2.0 * gsl_cdf_tdist_Q(fabs(*c1) / *se1, (double)n - 2.0);
    else
        *p1 = *c1 != 0 ? 0.0 : 1.0;
    return 0;
}

static double ln_rate_at(const arrank_arrhenius *f, double temp_K)
{
    return f->b0 + f->b1 * (1.0 / temp_K - 1.0 / f->T_ref_K);
}

static void compensation_sentence(arrank_compensation *c)
{
    const int pct = (int)lround(100.0 * c->confidence);
    char iso[160];
    if (c->T_iso_bounded)
        snprintf(iso, sizeof iso, "%.0f K (%d %% interval %.0f to %.0f K)", c->T_iso_K, pct,
                 c->T_iso_lo_K, c->T_iso_hi_K);
    else
        snprintf(iso, sizeof iso, "%.0f K (%d %% interval unbounded)", c->T_iso_K, pct);
    switch (c->verdict) {
    case ARRANK_COMP_TOO_FEW:
        snprintf(c->sentence, sizeof c->sentence,
                 "compensation: %zu ranked samples are too few to test a line of ln A on Ea "
                 "(at least %d are needed)", c->n, ARRANK_COMP_MIN);
        break;
    case ARRANK_COMP_NONE:
        snprintf(c->sentence, sizeof c->sentence,
                 "compensation: ln A does not rise significantly with Ea across the %zu samples "
                 "(p = %.2g), so there is no compensation line to explain", c->n, c->slope_p);
        break;
    case ARRANK_COMP_ARTIFACT: {
        char why[384];
        if (c->T_hm_inside)
            snprintf(why, sizeof why, "the lines would cross at %s, which holds the harmonic "
                     "mean of the measured temperatures, %.0f K", iso, c->T_hm_K);
        else
            snprintf(why, sizeof why, "Ea does not track ln r at the harmonic mean of the "
                     "measured temperatures, %.0f K (p = %.2g)", c->T_hm_K, c->hm_p);
        snprintf(c->sentence, sizeof c->sentence,
                 "compensation: ln A rises with Ea (r = %.3f), but %s: consistent with a "
                 "statistical artifact; correlated errors of Ea and ln A make such a line on "
                 "their own, and it says nothing about the catalysts", c->corr, why);
        break;
    }
    case ARRANK_COMP_REAL:
        snprintf(c->sentence, sizeof c->sentence,
                 "compensation: ln A rises with Ea (r = %.3f) and the lines cross near %s, away "
                 "from the harmonic mean of the measured temperatures, %.0f K, and Ea tracks "
                 "ln r there (p = %.2g): not explained by error correlation; the ranking "
                 "reverses across "
                 "the isokinetic temperature, so do not extrapolate it past that point",
                 c->corr, iso, c->T_hm_K, c->hm_p);
        break;
    }
}

arrank_status arrank_rank_compensation(const arrank_arrhenius *const *fits, size_t n,
                                       double T_hm_K, double confidence,
                                       arrank_compensation *out, arrank_error *err)
{
    if (!(confidence > 0 && confidence < 1))
        return arrank_errorf(err, ARRANK_EINVAL, "confidence '%g' is not in (0, 1)", confidence);
    memset(out, 0, sizeof *out);
    out->n = n;
    out->confidence = confidence;
    out->T_hm_K = T_hm_K;
    const double nan = NAN;
    out->slope_mol_J = out->slope_se_mol_J = out->intercept = out->intercept_se = nan;
    out->corr = out->slope_p = out->T_iso_K = out->T_iso_lo_K = out->T_iso_hi_K = nan;
    out->hm_slope_mol_J = out->hm_slope_se_mol_J = out->hm_p = nan;
    out->exner_T1_K = out->exner_T2_K = out->exner_slope = out->exner_slope_se = nan;
    out->exner_T_iso_K = nan;
    if (n < ARRANK_COMP_MIN) {
        out->verdict = ARRANK_COMP_TOO_FEW;
        compensation_sentence(out);
        return ARRANK_OK;
    }
    double *buf = malloc(4 * n * sizeof *buf);
    if (!buf)
        return arrank_errorf(err, ARRANK_ENOMEM, "no memory for %zu samples", n);
    double *ea = buf, *lnA = buf + n, *l1 = buf + 2 * n, *l2 = buf + 3 * n;
    double t1 = 0, t2 = INFINITY, tmin = INFINITY, tmax = 0;
    for (size_t i = 0; i < n; i++) {
        ea[i] = fits[i]->ea_J_mol;
        lnA[i] = fits[i]->ln_A;
        t1 = fmax(t1, fits[i]->T_min_K);
        t2 = fmin(t2, fits[i]->T_max_K);
        tmin = fmin(tmin, fits[i]->T_min_K);
        tmax = fmax(tmax, fits[i]->T_max_K);
    }
    const double alpha = 1.0 - confidence, R = ARRANK_R_J_MOL_K;
    double c0, c1, se0, se1, p1;
    if (line_fit(ea, lnA, n, &c0, &c1, &se0, &se1, &p1) != 0) {
        /* every Ea equal: no line at all */
        out->verdict = ARRANK_COMP_NONE;
        out->slope_p = 1.0;
        compensation_sentence(out);
        free(buf);
        return ARRANK_OK;
    }
    out->intercept = c0;
    out->intercept_se = se0;
    out->slope_mol_J = c1;
    out->slope_se_mol_J = se1;
    out->slope_p = p1;
    out->corr = gsl_stats_correlation(ea, 1, lnA, 1, n);
    /* ln A = alpha + Ea/(R T_iso) (Constable 1925): T_iso = 1/(R slope). */
    out->T_iso_K = 1.0 / (R * c1);
    /* Fieller for a reciprocal: T_iso is in the set {1/(R b)} over b in the
       slope's t interval, bounded when that interval excludes 0. */
    const double t = arrank_t_quantile(confidence, (double)n - 2.0);
    const double lo = c1 - t * se1, hi = c1 + t * se1;
    if (lo > 0 || hi < 0) {
        out->T_iso_bounded = 1;
        out->T_iso_lo_K = 1.0 / (R * hi);
        out->T_iso_hi_K = 1.0 / (R * lo);
        out->T_hm_inside = T_hm_K >= out->T_iso_lo_K && T_hm_K <= out->T_iso_hi_K;
    } else {
        /* the outside of (1/(R lo), 1/(R hi)): lo_K > hi_K marks it (rank.h) */
        out->T_iso_bounded = 0;
        out->T_iso_lo_K = hi > 0 ? 1.0 / (R * hi) : INFINITY;
        out->T_iso_hi_K = lo < 0 ? 1.0 / (R * lo) : -INFINITY;
        out->T_hm_inside = T_hm_K >= out->T_iso_lo_K || T_hm_K <= out->T_iso_hi_K;
    }

    /* Krug, Hunter & Grieger (1976): ln r(T_hm) and Ea have uncorrelated errors. */
    for (size_t i = 0; i < n; i++)
        l1[i] = ln_rate_at(fits[i], T_hm_K);
    double h0, h1, hse0, hse1, hp;
    if (line_fit(ea, l1, n, &h0, &h1, &hse0, &hse1, &hp) == 0) {
        out->hm_slope_mol_J = h1;
        out->hm_slope_se_mol_J = hse1;
        out->hm_p = hp;
    } else {
        out->hm_p = 1.0;
    }

    /* Exner (1964): ln r(T2) on ln r(T1) over the common range (else the whole range). */
    if (!(t2 > t1)) {
        t1 = tmin;
        t2 = tmax;
    }
    out->exner_T1_K = t1;
    out->exner_T2_K = t2;
    for (size_t i = 0; i < n; i++) {
        l1[i] = ln_rate_at(fits[i], t1);
        l2[i] = ln_rate_at(fits[i], t2);
    }
    double e0, e1, ese0, ese1, ep;
    if (t2 > t1 && line_fit(l1, l2, n, &e0, &e1, &ese0, &ese1, &ep) == 0) {
        out->exner_slope = e1;
        out->exner_slope_se = ese1;
        /* slope b = (1/T_iso - 1/T2)/(1/T_iso - 1/T1) solved for T_iso */
        const double den = e1 * t2 - t1;
        out->exner_T_iso_K = (e1 != 1.0 && den != 0) ? t1 * t2 * (e1 - 1.0) / den : NAN;
    }
    free(buf);

    if (!(c1 > 0) || !(p1 < alpha))
        out->verdict = ARRANK_COMP_NONE;
    else if (out->T_hm_inside || !(out->hm_p < alpha))
        out->verdict = ARRANK_COMP_ARTIFACT;
    else
        out->verdict = ARRANK_COMP_REAL;
    compensation_sentence(out);
    return ARRANK_OK;
}

/* ---- bootstrap ----------------------------------------------------------- */

arrank_status arrank_rank_bootstrap(const double *temp_K, const double *rate, const double *w,
                                    size_t n, const arrank_arrhenius *fit, double temp_op_K,
                                    double confidence, size_t resamples, unsigned long seed,
                                    double *rate_lo, double *rate_hi, size_t *n_ok,
                                    arrank_error *err)
{
    if (resamples < 2 || n < 3)
        return arrank_errorf(err, ARRANK_EINVAL,
                             "a bootstrap needs at least 2 resamples and 3 points, got %zu and %zu",
                             resamples, n);
    if (!(confidence > 0 && confidence < 1) || !(temp_op_K > 0))
        return arrank_errorf(err, ARRANK_EINVAL, "bootstrap confidence or temperature out of "
                                                 "range");
    double *buf = malloc((5 * n + resamples) * sizeof *buf);
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_taus2);
    if (!buf || !rng) {
        free(buf);
        gsl_rng_free(rng);
        return arrank_errorf(err, ARRANK_ENOMEM, "no memory for a bootstrap of %zu resamples",
                             resamples);
    }
    double *x = buf, *wt = buf + n, *yhat = buf + 2 * n, *res = buf + 3 * n, *ys = buf + 4 * n;
    double *out = buf + 5 * n;
    double sw = 0, swx = 0;
    for (size_t i = 0; i < n; i++) {
        x[i] = 1.0 / temp_K[i] - 1.0 / fit->T_ref_K;
        wt[i] = w ? w[i] : 1.0;
        sw += wt[i];
        swx += wt[i] * x[i];
    }
    const double xbar = swx / sw;
    double sxx = 0;
    for (size_t i = 0; i < n; i++)
        sxx += wt[i] * (x[i] - xbar) * (x[i] - xbar);
    /* Standardised residuals sqrt(w) e / sqrt(1 - h), centred (Davison & Hinkley 1997,
       eq. 6.9 and Alg. 6.1); h = w (1/sum w + (x - xbar)^2 / Sxx) for a weighted line. */
    double rmean = 0;
    for (size_t i = 0; i < n; i++) {
        yhat[i] = fit->b0 + fit->b1 * x[i];
        const double e = log(rate[i]) - yhat[i];
        const double h = wt[i] * (1.0 / sw + (x[i] - xbar) * (x[i] - xbar) / sxx);
        res[i] = sqrt(wt[i]) * e / sqrt(h < 1 ? 1.0 - h : 1.0);
        rmean += res[i] / (double)n;
    }
    for (size_t i = 0; i < n; i++)
        res[i] -= rmean;
    gsl_rng_set(rng, seed);
    const double x_op = 1.0 / temp_op_K - 1.0 / fit->T_ref_K;
    for (size_t b = 0; b < resamples; b++) {
        double swy = 0;
        for (size_t i = 0; i < n; i++) {
            const size_t j = (size_t)gsl_rng_uniform_int(rng, n);
            ys[i] = yhat[i] + res[j] / sqrt(wt[i]);
            swy += wt[i] * ys[i];
        }
        const double ybar = swy / sw;
        double sxy = 0;
        for (size_t i = 0; i < n; i++)
            sxy += wt[i] * (x[i] - xbar) * (ys[i] - ybar);
        out[b] = ybar + (sxy / sxx) * (x_op - xbar);
    }
    gsl_sort(out, 1, resamples);
    *rate_lo = exp(gsl_stats_quantile_from_sorted_data(out, 1, resamples, 0.5 * (1 - confidence)));
    *rate_hi = exp(gsl_stats_quantile_from_sorted_data(out, 1, resamples, 0.5 * (1 + confidence)));
    if (n_ok)
        *n_ok = resamples;
    free(buf);
    gsl_rng_free(rng);
    return ARRANK_OK;
}

/* ---- the analysis hooks (internal.h) ------------------------------------ */

/* res->stats, allocated on first use; NULL when out of memory. */
static struct arrank_sample_stats *stats_of(arrank_result *res)
{
    if (!res->stats) {
        res->stats = calloc(1, sizeof *res->stats);
        if (res->stats) {
            res->stats->p_best = NAN;
            res->stats->top_index = SIZE_MAX;
            res->stats->rate_lo_boot = res->stats->rate_hi_boot = NAN;
        }
    }
    return res->stats;
}

void arrank_sample_stats_free(struct arrank_sample_stats *stats)
{
    free(stats);
}

void arrank_rank_stats_free(struct arrank_rank_stats *stats)
{
    if (!stats)
        return;
    free(stats->top);
    free(stats->p_beats);
    free(stats);
}

arrank_status arrank_models_prepare(const arrank_campaign *campaign, const arrank_options *opt,
                                    double *rate_to_per_s, arrank_error *err)
{
    *rate_to_per_s = 1.0;
    if (opt->model != ARRANK_MODEL_EYRING)
        return ARRANK_OK;
    if (campaign->basis != ARRANK_BASIS_SITE)
        return arrank_errorf(err, ARRANK_EINVAL,
                             "model 'eyring' needs turnover frequencies (a rate unit of 1/time); "
                             "'%s' is a rate per %s",
                             campaign->rate_unit ? campaign->rate_unit : "",
                             arrank_basis_name(campaign->basis));
    arrank_units *units = arrank_units_create(err);
    if (!units)
        return err ? err->status : ARRANK_EUNIT;
    arrank_basis basis;
    arrank_conversion conv;
    arrank_status st = arrank_units_rate(units, campaign->rate_unit, &basis, &conv, err);
    arrank_units_free(units);
    if (st != ARRANK_OK)
        return st;
    *rate_to_per_s = conv.scale;
    return ARRANK_OK;
}

arrank_status arrank_models_apply(arrank_result *res, const arrank_options *opt,
                                  double rate_to_per_s, arrank_error *err)
{
    const int absolute = opt->errors == ARRANK_ERRORS_ABSOLUTE;
    if (!absolute && opt->model == ARRANK_MODEL_ARRHENIUS)
        return ARRANK_OK;
    const arrank_sample *s = res->sample;
    double *buf = malloc(3 * (s->n_points ? s->n_points : 1) * sizeof *buf);
    if (!buf)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    double *t = buf, *r = buf + s->n_points, *sd = buf + 2 * s->n_points;
    int have_sd;
    size_t n = arrank_result_used_points(res, t, r, sd, &have_sd);
    arrank_error fe;
    arrank_error_clear(&fe);
    arrank_status st;
    const char *what;
    if (opt->model == ARRANK_MODEL_ARRHENIUS) {
        what = "absolute-error fit";
        st = arrank_fit_arrhenius_absolute(t, r, have_sd ? sd : NULL, n, &res->fit, &fe);
    } else {
        struct arrank_sample_stats *ss = stats_of(res);
        if (!ss) {
            free(buf);
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        }
        const int eyring = opt->model == ARRANK_MODEL_EYRING;
        what = eyring ? "transition-state fit" : "modified fit";
        st = arrank_model_fit_run(eyring, absolute, t, r, have_sd ? sd : NULL, n, rate_to_per_s,
                                  &ss->model, &fe);
        ss->has_model = st == ARRANK_OK;
    }
    free(buf);
    if (st == ARRANK_ENOMEM)
        return arrank_errorf(err, st, "out of memory");
    if (st != ARRANK_OK) {
        char msg[ARRANK_ERROR_MSG_MAX + 64];
        snprintf(msg, sizeof msg, "%s: %s", what, fe.message);
        free(res->error);
        res->error = arrank_strdup(msg);
        res->error_line = 0;
        if (!res->error)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    return ARRANK_OK;
}

arrank_status arrank_models_predict(arrank_result *res, const arrank_options *opt,
                                    arrank_error *err)
{
    if (!res->stats || !res->stats->has_model || !isfinite(opt->operating_temp_K))
        return ARRANK_OK;
    return arrank_model_fit_predict(&res->stats->model, opt->operating_temp_K, opt->confidence,
                                    &res->at_T, err);
}

/* The key of a ranked result as a draw spec: the model's prediction when one was fitted. */
static key_draw result_draw(const arrank_result *res, const arrank_options *opt)
{
    const int normal = opt->normal_draws;
    if (opt->by == ARRANK_BY_RATE && res->stats && res->stats->has_model) {
        const arrank_model_fit *m = &res->stats->model;
        const double T = opt->operating_temp_K;
        const double p[3] = {m->b0, m->n_T, m->b1};
        const double g[3] = {1.0, log(T / m->T_ref_K), 1.0 / T - 1.0 / m->T_ref_K};
        return make_draw(p, m->cov, g, 3, m->dof, normal);
    }
    return arrhenius_draw(&res->fit, opt->by, opt->operating_temp_K, normal);
}

arrank_status arrank_rank_prepare(arrank_result *res, const arrank_options *opt,
                                  arrank_error *err)
{
    struct arrank_sample_stats *ss = stats_of(res);
    if (!ss)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    const key_draw kd = result_draw(res, opt);
    ss->key = kd.mean;
    ss->key_se = kd.se;
    ss->key_dof = kd.dof;
    double sum = 0;
    size_t n_T = 0;
    for (size_t i = 0; i < res->sample->n_points; i++)
        if (res->used[i]) {
            sum += 1.0 / res->sample->points[i].temp_K;
            n_T++;
        }
    ss->inv_T_sum_per_K = sum;
    ss->n_T = n_T;
    ss->has_key = 1;
    return ARRANK_OK;
}

static arrank_status bootstrap_result(arrank_result *res, const arrank_options *opt,
                                      unsigned long seed, arrank_error *err)
{
    const arrank_sample *s = res->sample;
    double *buf = malloc(3 * (s->n_points ? s->n_points : 1) * sizeof *buf);
    if (!buf)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    double *t = buf, *r = buf + s->n_points, *w = buf + 2 * s->n_points;
    int have_sd;
    size_t n = arrank_result_used_points(res, t, r, w, &have_sd);
    /* the fit's own ln r weights (fit.h): (r/sd)^2 */
    for (size_t k = 0; k < n; k++)
        w[k] = res->fit.weighted ? pow(r[k] / w[k], 2) : 1.0;
    struct arrank_sample_stats *ss = res->stats;
    arrank_status st = arrank_rank_bootstrap(t, r, w, n, &res->fit, opt->operating_temp_K,
                                             opt->confidence, opt->bootstrap, seed,
                                             &ss->rate_lo_boot, &ss->rate_hi_boot, &ss->boot_ok,
                                             err);
    ss->has_bootstrap = st == ARRANK_OK;
    free(buf);
    return st;
}

arrank_status arrank_rank_compute(arrank_analysis *a, arrank_error *err)
{
    const arrank_options *opt = &a->options;
    const size_t n = a->n_ranked;
    if (opt->draws == 0)
        return arrank_errorf(err, ARRANK_EINVAL, "'draws' must be at least 1");
    if (n == 0)
        return ARRANK_OK;
    struct arrank_rank_stats *rs = calloc(1, sizeof *rs);
    if (!rs)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    a->rank_stats = rs;
    rs->by = opt->by;
    rs->temp_K = opt->operating_temp_K;
    rs->draws = opt->draws;
    rs->seed = opt->seed;
    rs->normal_draws = opt->normal_draws;
    rs->bootstrap = opt->bootstrap;
    rs->n_top = opt->pairs < n ? opt->pairs : n;
    rs->top = malloc((rs->n_top ? rs->n_top : 1) * sizeof *rs->top);
    rs->p_beats = malloc((rs->n_top ? rs->n_top * rs->n_top : 1) * sizeof *rs->p_beats);
    key_draw *kd = malloc(n * sizeof *kd);
    double *buf = malloc(4 * n * sizeof *buf);
    const arrank_arrhenius **fits = malloc(n * sizeof *fits);
    int *group = malloc(n * sizeof *group);
    arrank_status st = ARRANK_OK;
    if (!rs->top || !rs->p_beats || !kd || !buf || !fits || !group) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        goto done;
    }
    double *p_best = buf, *key = buf + n, *se = buf + 2 * n, *dof = buf + 3 * n;
    double inv_T_sum = 0, inv_T_comp = 0;
    size_t n_T = 0;
    for (size_t k = 0; k < n; k++) {
        arrank_result *res = &a->results[a->order[k]];
        if (!(res->stats && res->stats->has_key)) {
            st = arrank_rank_prepare(res, opt, err);
            if (st != ARRANK_OK)
                goto done;
        }
        const struct arrank_sample_stats *ss = res->stats;
        kd[k] = (key_draw){ss->key, ss->key_se, ss->key_dof};
        key[k] = ss->key;
        se[k] = ss->key_se;
        dof[k] = ss->key_dof;
        fits[k] = &res->fit;
        if (k < rs->n_top) {
            rs->top[k] = a->order[k];
            res->stats->top_index = k;
        }
        /* Neumaier's compensated sum (Z. angew. Math. Mech. 54:39, 1974): a
           campaign has 1e5 and more terms */
        const double t = inv_T_sum + ss->inv_T_sum_per_K;
        inv_T_comp += fabs(inv_T_sum) >= fabs(ss->inv_T_sum_per_K)
                          ? (inv_T_sum - t) + ss->inv_T_sum_per_K
                          : (ss->inv_T_sum_per_K - t) + inv_T_sum;
        inv_T_sum = t;
        n_T += ss->n_T;
    }
    st = pbest_engine(kd, n, opt->draws, opt->seed, rs->n_top, p_best, rs->p_beats, err);
    if (st != ARRANK_OK)
        goto done;
    st = arrank_rank_groups(key, se, dof, n, 1.0 - opt->confidence, group, &rs->n_tests, err);
    if (st != ARRANK_OK)
        goto done;
    for (size_t k = 0; k < n; k++) {
        arrank_result *res = &a->results[a->order[k]];
        res->stats->p_best = p_best[k];
        res->stats->group = group[k];
        if (group[k] > 0)
            rs->n_grouped++;
        if (group[k] > rs->n_groups)
            rs->n_groups = group[k];
    }
    /* Krug et al. (1976): T_hm = harmonic mean of every temperature in the fits. */
    const double T_hm = n_T ? (double)n_T / (inv_T_sum + inv_T_comp) : NAN;
    st = arrank_rank_compensation(fits, n, T_hm, opt->confidence, &rs->compensation, err);
    if (st != ARRANK_OK)
        goto done;
    /* The bootstrap refits the straight ln r line, so only that model gets one. */
    if (opt->bootstrap > 0 && opt->model == ARRANK_MODEL_ARRHENIUS &&
        opt->errors == ARRANK_ERRORS_RELATIVE && isfinite(opt->operating_temp_K)) {
        if (opt->bootstrap < 2) {
            st = arrank_errorf(err, ARRANK_EINVAL, "'bootstrap' needs at least 2 resamples, "
                                                   "got %zu", opt->bootstrap);
            goto done;
        }
        for (size_t k = 0; k < n; k++) {
            /* one stream per sample, seed + its place in the campaign: reproducible per sample */
            st = bootstrap_result(&a->results[a->order[k]], opt, opt->seed + a->order[k], err);
            if (st != ARRANK_OK)
                goto done;
        }
    }
done:
    free(kd);
    free(buf);
    free(fits);
    free(group);
    return st;
}

/* ---- JSON parts (internal.h) ------------------------------------------- */

/* A number, or null for NAN and infinities (JSON has neither). */
static json_t *num(double x)
{
    return isfinite(x) ? json_real(x) : json_null();
}

static const char *by_name(arrank_rank_by by)
{
    switch (by) {
    case ARRANK_BY_EA: return "ea";
    case ARRANK_BY_PREFACTOR: return "prefactor";
    case ARRANK_BY_RATE: break;
    }
    return "rate";
}

static json_t *model_json(const arrank_model_fit *m)
{
    json_t *o = json_object();
    if (!o)
        return NULL;
    json_object_set_new(o, "form", json_string(m->eyring ? "eyring" : "modified"));
    json_object_set_new(o, "errors", json_string(m->absolute ? "absolute" : "relative"));
    json_object_set_new(o, "T_ref_K", num(m->T_ref_K));
    json_object_set_new(o, "E_J_mol", num(m->E_J_mol));
    json_object_set_new(o, "E_se_J_mol", num(m->E_se_J_mol));
    json_object_set_new(o, "ln_A", num(m->ln_A));
    json_object_set_new(o, "ln_A_se", num(m->ln_A_se));
    json_object_set_new(o, "dof", num(m->dof));
    if (m->eyring) {
        json_object_set_new(o, "dH_J_mol", num(m->dH_J_mol));
        json_object_set_new(o, "dH_se_J_mol", num(m->dH_se_J_mol));
        json_object_set_new(o, "dS_J_mol_K", num(m->dS_J_mol_K));
        json_object_set_new(o, "dS_se_J_mol_K", num(m->dS_se_J_mol_K));
    } else {
        json_object_set_new(o, "n", num(m->n_T));
        json_object_set_new(o, "n_se", num(m->n_T_se));
        json_object_set_new(o, "corr_E_n", num(m->corr_E_n));
        json_object_set_new(o, "E_n_collinear", json_boolean(m->collinear));
        json_object_set_new(o, "ea_apparent_at_T_ref_J_mol", num(m->ea_app_J_mol));
    }
    return o;
}

json_t *arrank_sample_stats_json(const arrank_analysis *a, size_t index)
{
    const arrank_result *res = &a->results[index];
    const struct arrank_sample_stats *ss = res->stats;
    const struct arrank_rank_stats *rs = a->rank_stats;
    json_t *o = json_object();
    if (!o)
        return NULL;
    if (!ss)
        return o;
    if (rs && res->rank > 0) {
        json_object_set_new(o, "p_best", num(ss->p_best));
        json_object_set_new(o, "group", ss->group > 0 ? json_integer(ss->group) : json_null());
    }
    if (rs && ss->top_index != SIZE_MAX && ss->top_index < rs->n_top) {
        json_t *pb = json_object();
        for (size_t j = 0; pb && j < rs->n_top; j++) {
            if (j == ss->top_index)
                continue;
            const char *id = a->results[rs->top[j]].sample->id;
            json_object_set_new(pb, id, num(rs->p_beats[ss->top_index * rs->n_top + j]));
        }
        json_object_set_new(o, "p_beats", pb);
    }
    if (ss->has_bootstrap) {
        json_t *ci = json_array();
        json_array_append_new(ci, num(ss->rate_lo_boot));
        json_array_append_new(ci, num(ss->rate_hi_boot));
        json_object_set_new(o, "rate_at_T_ci_bootstrap", ci);
        json_object_set_new(o, "bootstrap_resamples", json_integer((json_int_t)ss->boot_ok));
    }
    if (ss->has_model)
        json_object_set_new(o, "model", model_json(&ss->model));
    return o;
}

json_t *arrank_rank_stats_json(const arrank_analysis *a)
{
    const struct arrank_rank_stats *rs = a->rank_stats;
    json_t *o = json_object();
    if (!o || !rs)
        return o;
    json_t *u = json_object();
    json_object_set_new(u, "by", json_string(by_name(rs->by)));
    json_object_set_new(u, "draws", json_integer((json_int_t)rs->draws));
    json_object_set_new(u, "seed", json_integer((json_int_t)rs->seed));
    json_object_set_new(u, "distribution", json_string(rs->normal_draws ? "normal" : "t"));
    json_object_set_new(u, "pairs", json_integer((json_int_t)rs->n_top));
    json_object_set_new(u, "groups", json_integer(rs->n_groups));
    json_object_set_new(u, "grouped_samples", json_integer((json_int_t)rs->n_grouped));
    json_object_set_new(u, "holm_tests", json_integer((json_int_t)rs->n_tests));
    json_object_set_new(u, "group_rule",
                        json_string("a sample joins the group of the best sample above it "
                                    "(the leader) unless it differs from the leader after Holm's "
                                    "correction over all pairs among the top ranks"));
    json_object_set_new(u, "bootstrap", json_integer((json_int_t)rs->bootstrap));
    json_object_set_new(o, "ranking_uncertainty", u);

    const arrank_compensation *c = &rs->compensation;
    json_t *k = json_object();
    json_object_set_new(k, "verdict", json_string(arrank_comp_verdict_words(c->verdict)));
    json_object_set_new(k, "sentence", json_string(c->sentence));
    json_object_set_new(k, "samples", json_integer((json_int_t)c->n));
    json_object_set_new(k, "regression", json_string("unweighted least squares of ln A on Ea"));
    json_object_set_new(k, "slope_mol_J", num(c->slope_mol_J));
    json_object_set_new(k, "slope_se_mol_J", num(c->slope_se_mol_J));
    json_object_set_new(k, "intercept", num(c->intercept));
    json_object_set_new(k, "intercept_se", num(c->intercept_se));
    json_object_set_new(k, "r", num(c->corr));
    json_object_set_new(k, "slope_p", num(c->slope_p));
    json_object_set_new(k, "T_iso_K", num(c->T_iso_K));
    json_object_set_new(k, "T_iso_interval", json_string("Fieller (inverted t interval of the "
                                                        "slope)"));
    json_object_set_new(k, "T_iso_bounded", json_boolean(c->T_iso_bounded));
    json_object_set_new(k, "T_iso_lo_K", c->T_iso_bounded ? num(c->T_iso_lo_K) : json_null());
    json_object_set_new(k, "T_iso_hi_K", c->T_iso_bounded ? num(c->T_iso_hi_K) : json_null());
    json_object_set_new(k, "T_hm_K", num(c->T_hm_K));
    json_object_set_new(k, "T_hm_inside_T_iso_interval", json_boolean(c->T_hm_inside));
    json_object_set_new(k, "ea_vs_ln_rate_at_T_hm_slope_mol_J", num(c->hm_slope_mol_J));
    json_object_set_new(k, "ea_vs_ln_rate_at_T_hm_p", num(c->hm_p));
    json_object_set_new(k, "exner_T1_K", num(c->exner_T1_K));
    json_object_set_new(k, "exner_T2_K", num(c->exner_T2_K));
    json_object_set_new(k, "exner_slope", num(c->exner_slope));
    json_object_set_new(k, "exner_slope_se", num(c->exner_slope_se));
    json_object_set_new(k, "exner_T_iso_K", num(c->exner_T_iso_K));
    json_object_set_new(k, "confidence", num(c->confidence));
    json_object_set_new(o, "compensation", k);
    return o;
}
