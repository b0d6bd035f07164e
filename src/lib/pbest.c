/*
 * pbest.c - P(best) and P(i beats j) by Monte Carlo (arrank/pbest.h).
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
   Carlo's inner loop calls it most. */
#define HAVE_INLINE 1

#include "arrank/pbest.h"

#include <math.h>
#include <pthread.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>

#include "stats.h"

/* One sample in the Monte Carlo: key = mean + se T, T ~ t_dof or N(0, 1). */
typedef arrank_pbest_key key_draw;

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
    case ARRANK_BY_RATE:
    case ARRANK_BY_RATIO: break;
    }
    g[0] = 1.0;
    g[1] = 1.0 / temp_K - 1.0 / f->T_ref_K;
}

arrank_pbest_key arrank_pbest_key_arrhenius(const arrank_arrhenius *f, arrank_rank_by by,
                                            double temp_K, int normal)
{
    const double p[2] = {f->b0, f->b1};
    const double C[3][3] = {{f->cov[0][0], f->cov[0][1], 0}, {f->cov[1][0], f->cov[1][1], 0},
                            {0, 0, 0}};
    double g[2];
    arrhenius_gradient(f, by, temp_K, g);
    return make_draw(p, C, g, 2, f->dof, normal);
}

arrank_pbest_key arrank_pbest_key_model(const arrank_model_fit *m, double temp_K, int normal)
{
    const double p[3] = {m->b0, m->n_T, m->b1};
    const double g[3] = {1.0, log(temp_K / m->T_ref_K), 1.0 / temp_K - 1.0 / m->T_ref_K};
    return make_draw(p, m->cov, g, 3, m->dof, normal);
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

/* The key drawn directly: Bailey's polar method, or a ziggurat normal.  In
   line in the draw loop. */
static inline double direct_key(gsl_rng *g, const cand_draw *k)
{
    if (!isfinite(k->dof))
        return k->mean + k->se * gsl_ran_gaussian_ziggurat(g, 1.0);
    double u, w;
    do {
        u = 2.0 * gsl_rng_uniform(g) - 1.0;
        const double v = 2.0 * gsl_rng_uniform(g) - 1.0;
        w = u * u + v * v;
    } while (!(w <= 1.0 && w > 0.0));
    return k->mean + k->se * u * sqrt(radius2(w, k->dof, k->two_over_dof) / w);
}

/*
 * The Monte Carlo runs as ARRANK_RANK_STREAMS independent streams, each with
 * its own generator (GSL taus2: L'Ecuyer's maximally equidistributed
 * three-component Tausworthe generator, Math. Comp. 65:203, 1996; fast,
 * period 2^88) seeded with seed + stream * STREAM_SEED_STEP, and an equal
 * share of the draws.  The streams run on threads when the system gives
 * them, one after the other otherwise; the numbers are the same either way.
 */
#define ARRANK_RANK_STREAMS 2
#define STREAM_SEED_STEP 0x9E3779B97F4A7C15ull

typedef struct {
    const cand_draw *head; /* [n_head] in rank order: the top and every sample drawn directly */
    const cand_draw *tail; /* [n_tail] in rank order: drawn by thinning */
    const double *hazard;  /* [n_tail] running sums of -ln(1 - w) */
    size_t n_head, n_tail, n_top, draws;
    double skip_level;
    unsigned long seed;
    size_t *best;      /* [n] */
    size_t *wins;      /* [n_top * n_top]: row i, column j counts draws with key i > key j */
    double *top_key;   /* [n_top] */
    int failed;
} mc_stream;

/* The pairwise counts of one draw; ties (two exactly known keys) count for
   neither side. */
static void count_wins(const double *top_key, size_t n_top, size_t *wins)
{
    for (size_t i = 0; i < n_top; i++)
        for (size_t j = i + 1; j < n_top; j++) {
            const double a = top_key[i], b = top_key[j];
            wins[i * n_top + j] += a > b;
            wins[j * n_top + i] += b > a;
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
    const size_t n_top = m->n_top;
    for (size_t d = 0; d < m->draws; d++) {
        double best_key = -INFINITY;
        size_t arg_best = SIZE_MAX;
        for (size_t c = 0; c < m->n_head; c++) {
            const cand_draw *k = &m->head[c];
            const double key = direct_key(rng, k);
            if (k->index < n_top)
                m->top_key[k->index] = key;
            offer(key, k->index, &best_key, &arg_best);
        }
        if (best_key >= m->skip_level) {
            const double *h = m->hazard;
            double target = 0;
            for (size_t lo = 0; lo < m->n_tail;) {
                /* the next tail sample whose W falls below its w: first h[j] >= target */
                target += -log(gsl_rng_uniform_pos(rng));
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
                const double w = k->w * gsl_rng_uniform_pos(rng);
                const double t = sqrt(radius2(w, k->dof, k->two_over_dof)) *
                                 cos(TWO_PI * gsl_rng_uniform(rng));
                offer(k->mean + k->se * t, k->index, &best_key, &arg_best);
                target = h[lo];
                lo++;
            }
        } else {
            for (size_t c = 0; c < m->n_tail; c++)
                offer(direct_key(rng, &m->tail[c]), m->tail[c].index, &best_key, &arg_best);
        }
        m->best[arg_best == SIZE_MAX ? 0 : arg_best]++;
        count_wins(m->top_key, n_top, m->wins);
    }
    gsl_rng_free(rng);
    return NULL;
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
    /* one tail per pass, so that stats.c's per-thread memo holds a campaign's
       few distinct dof */
    const double cull = CULL_TAIL / (double)n;
    double level = -INFINITY;
    for (size_t i = 0; i < n; i++) {
        const double lo = kd[i].mean - arrank_stats_t_upper(cull, kd[i].dof) * kd[i].se;
        if (lo > level)
            level = lo;
    }
    size_t k = 0;
    for (size_t i = 0; i < n; i++)
        if (i < n_top || !(kd[i].mean + arrank_stats_t_upper(cull, kd[i].dof) * kd[i].se < level))
            cand[k++] = i;
    *skip_level = -INFINITY;
    for (size_t c = 0; c < k; c++) {
        const key_draw *x = &kd[cand[c]];
        const double lo = x->mean - arrank_stats_t_upper(SKIP_TAIL, x->dof) * x->se;
        if (lo > *skip_level)
            *skip_level = lo;
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

/* The candidates cand[n_cand] split into the head, drawn directly, and the
   tail, drawn by thinning, each in rank order (the variates, above);
   hazard[n_tail] gets the running sums of -ln(1 - w). */
static void head_and_tail(const key_draw *kd, const size_t *cand, size_t n_cand, size_t n_top,
                          double skip_level, cand_draw *head, size_t *n_head, cand_draw *tail,
                          size_t *n_tail, double *hazard)
{
    double h = 0;
    *n_head = *n_tail = 0;
    for (size_t c = 0; c < n_cand; c++) {
        const key_draw *k = &kd[cand[c]];
        const double w = cand[c] < n_top ? 2.0 : skip_w(k, skip_level);
        const cand_draw x = {k->mean, k->se, k->dof, 2.0 / k->dof, w, cand[c]};
        if (w < 0.25) {
            h += -log1p(-w);
            hazard[*n_tail] = h;
            tail[(*n_tail)++] = x;
        } else {
            head[(*n_head)++] = x;
        }
    }
}

/* The streams, on threads when the system gives them (above). */
static arrank_status run_streams(mc_stream *m, arrank_error *err)
{
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
            return arrank_errorf(err, ARRANK_ENOMEM, "no memory for a random generator");
    return ARRANK_OK;
}

/* The streams' counts as probabilities. */
static void sum_counts(const mc_stream *m, size_t n, size_t n_top, size_t draws, double *p_best,
                       double *p_beats)
{
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
                    b += m[c].wins[i * n_top + j];
                p_beats[i * n_top + j] = i == j ? NAN : (double)b / (double)draws;
            }
}

/* The Monte Carlo: see the top of this file and arrank_pbest_run in pbest.h. */
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
    mc_stream m[ARRANK_RANK_STREAMS];
    memset(m, 0, sizeof m);
    arrank_status st = ARRANK_OK;
    if (!cand || !cd || !hazard)
        st = arrank_errorf(err, ARRANK_ENOMEM, "no memory for %zu samples of draws", n);
    for (size_t c = 0; st == ARRANK_OK && c < ARRANK_RANK_STREAMS; c++) {
        m[c].best = calloc(n, sizeof *m[c].best);
        m[c].wins = calloc(n_top * n_top + 1, sizeof *m[c].wins);
        m[c].top_key = malloc((n_top + 1) * sizeof *m[c].top_key);
        if (!m[c].best || !m[c].wins || !m[c].top_key)
            st = arrank_errorf(err, ARRANK_ENOMEM, "no memory for %zu samples of draws", n);
    }
    if (st == ARRANK_OK) {
        double skip_level;
        const size_t n_cand = candidates(kd, n, n_top, cand, &skip_level);
        size_t n_head, n_tail;
        head_and_tail(kd, cand, n_cand, n_top, skip_level, cd, &n_head, cd + n, &n_tail, hazard);
        for (size_t c = 0; c < ARRANK_RANK_STREAMS; c++) {
            m[c].head = cd;
            m[c].tail = cd + n;
            m[c].hazard = hazard;
            m[c].n_head = n_head;
            m[c].n_tail = n_tail;
            m[c].n_top = n_top;
            m[c].skip_level = skip_level;
            m[c].draws = draws / ARRANK_RANK_STREAMS + (c < draws % ARRANK_RANK_STREAMS);
            m[c].seed = (unsigned long)(seed + c * STREAM_SEED_STEP);
        }
        st = run_streams(m, err);
    }
    if (st == ARRANK_OK)
        sum_counts(m, n, n_top, draws, p_best, p_beats);
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

arrank_status arrank_pbest_run(const double *key, const double *key_se, const double *key_dof,
                               size_t n, size_t draws, unsigned long seed, size_t n_top,
                               double *p_best, double *p_beats, arrank_error *err)
{
    key_draw *kd = malloc((n ? n : 1) * sizeof *kd);
    if (!kd)
        return arrank_errorf(err, ARRANK_ENOMEM, "no memory for %zu samples of draws", n);
    for (size_t i = 0; i < n; i++)
        kd[i] = (key_draw){key[i], key_se[i], key_dof[i]};
    arrank_status st = pbest_engine(kd, n, draws, seed, n_top, p_best, p_beats, err);
    free(kd);
    return st;
}

arrank_status arrank_pbest_fits(const arrank_arrhenius *const *fits, size_t n, arrank_rank_by by,
                                double temp_K, size_t draws, unsigned long seed,
                                int normal_draws, size_t n_top, double *p_best, double *p_beats,
                                arrank_error *err)
{
    if ((by == ARRANK_BY_RATE || by == ARRANK_BY_RATIO) && !(isfinite(temp_K) && temp_K > 0))
        return arrank_errorf(err, ARRANK_EINVAL,
                             "ranking by rate needs a positive operating temperature, got '%g K'",
                             temp_K);
    key_draw *kd = malloc((n ? n : 1) * sizeof *kd);
    if (!kd)
        return arrank_errorf(err, ARRANK_ENOMEM, "no memory for %zu samples of draws", n);
    for (size_t i = 0; i < n; i++)
        kd[i] = arrank_pbest_key_arrhenius(fits[i], by, temp_K, normal_draws);
    arrank_status st = pbest_engine(kd, n, draws, seed, n_top, p_best, p_beats, err);
    free(kd);
    return st;
}
