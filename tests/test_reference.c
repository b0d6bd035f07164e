/*
 * test_reference.c - the reference catalyst, several campaigns and
 * `compare` (issue 16): the Welch contrast on a worked example computed by
 * hand, Welch's test of equal means against SciPy's F distribution, the
 * merge of campaigns read from files, and by seeded simulation the stated
 * truths: with a rig that drifts by a known factor the correction recovers
 * the true pooled order in at least 95 % of campaigns and the drift interval
 * covers the true factor at the nominal rate; the test of equal reference
 * rates holds its level; and in paired comparisons of identical catalysts
 * the share of campaigns with any false "changed" verdict holds the level
 * under Holm's correction.
 *
 * Simulations: fixed seeds (splitmix64, helpers.h); each prints its
 * replicates and the Monte Carlo standard error sqrt(p (1 - p) / N) of a
 * proportion; bounds are the nominal levels (their definitions) widened by
 * three such standard errors.  Data from the Arrhenius law with normal
 * errors in ln r (the error model of fit.h).
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include <cmocka.h>

#include "arrank/analysis.h"
#include "arrank/analysis_compare.h"
#include "arrank/analysis_stats.h"
#include "arrank/batches.h"
#include "arrank/compare.h"
#include "arrank/compare_out.h"
#include "arrank/contrast.h"
#include "helpers.h"

#define R_GAS ARRANK_R_J_MOL_K

static double mc_se(double p, size_t n)
{
    return sqrt(p * (1.0 - p) / (double)n);
}

/* ---- the worked example ----------------------------------------------------- */

/*
 * A sample and the reference, fitted apart: ln r_i(T) = 1.20 with se 0.05 on
 * 6 degrees of freedom (8 points), ln r_ref(T) = 1.00 with se 0.04 on 8 (10
 * points).  By hand:
 *   d      = 1.20 - 1.00                                   = 0.20
 *   se^2   = 0.05^2 + 0.04^2 = 0.0025 + 0.0016             = 0.0041
 *   se     = sqrt(0.0041)                                  = 0.0640312
 *   dof    = 0.0041^2 / (0.0025^2/6 + 0.0016^2/8)
 *          = 1.681e-5 / (1.0416667e-6 + 3.2e-7)
 *          = 1.681e-5 / 1.3616667e-6                       = 12.34517
 *   t      = t_{0.975}(12.34517)                           = 2.172076 (SciPy 1.10
 *            scipy.stats.t.ppf(0.975, 12.34516523867809) = 2.172075527937735)
 *   d -/+ t se = 0.20 -/+ 2.172076 * 0.0640312 = 0.20 -/+ 0.139081
 *          = [0.0609193, 0.3390807]
 *   ratio  = exp(0.20) = 1.221403, interval [exp(0.0609193), exp(0.3390807)]
 *          = [1.062813, 1.403657]
 *   p      = 2 P(T > 0.20/0.0640312 = 3.123478) = 0.008531 (SciPy
 *            2*t.sf(3.123478, 12.34517) = 0.008531314562369885)
 *   P(better) = P(T < 3.123478) = 0.995734 (SciPy t.cdf = 0.995734342718815)
 */
static void test_ratio_worked_example(void **state)
{
    (void)state;
    arrank_contrast c = arrank_contrast_diff(1.20, 0.05, 6.0, 1.00, 0.04, 8.0, 0.95);
    check_close(c.est, 0.20, 1e-12, "d (by hand)", "by hand");
    check_close(c.se, 0.06403124237432849, 1e-12, "se (by hand)", "by hand");
    check_close(c.dof, 12.34516523867809, 1e-10, "Welch dof (by hand)", "by hand");
    check_close(c.t, 2.172075527937735, 1e-7, "t quantile", "SciPy t.ppf");
    check_close(exp(c.est), 1.2214027581601699, 1e-12, "ratio", "by hand");
    check_close(exp(c.lo), 1.0628131474612081, 1e-7, "ratio low", "by hand, SciPy t");
    check_close(exp(c.hi), 1.4036566081299071, 1e-7, "ratio high", "by hand, SciPy t");
    check_close(c.p, 0.008531314562369885, 1e-6, "p", "SciPy t.sf");
    check_close(c.p_greater, 0.995734342718815, 1e-9, "P(better)", "SciPy t.cdf");
    /* the reference known exactly on one side: all the dof from the other */
    check_close(arrank_contrast_welch_dof(0.05, 6.0, 0.0, 8.0), 6.0, 1e-12, "dof, one se 0",
                "Welch's formula");
    assert_true(isinf(arrank_contrast_welch_dof(0.05, INFINITY, 0.04, INFINITY)));
    assert_true(isnan(arrank_contrast_diff(NAN, 0.05, 6, 1.0, 0.04, 8, 0.95).est));
}

/*
 * Welch's test of equal means (Welch 1951): three campaigns' reference
 * ln r 0, -0.20, -0.05 with se 0.03, 0.04, 0.05 on 7, 6, 9 dof.  By the
 * formula in contrast.h, computed in Python with SciPy 1.10
 * (scipy.stats.f.sf): F = 7.712902771478356 on 2 and 14.05780546392663 dof,
 * p = 0.0054835404503273885.  For two estimates it is Welch's t squared,
 * with the same p (the worked example above).
 */
static void test_equal_means(void **state)
{
    (void)state;
    const double y[] = {0.0, -0.20, -0.05}, se[] = {0.03, 0.04, 0.05}, dof[] = {7, 6, 9};
    arrank_contrast_equal eq;
    assert_int_equal(arrank_contrast_equal_test(y, se, dof, 3, &eq, NULL), ARRANK_OK);
    check_close(eq.F, 7.712902771478356, 1e-12, "Welch F", "SciPy-side arithmetic");
    check_close(eq.df1, 2.0, 0, "df1", "k - 1");
    check_close(eq.df2, 14.05780546392663, 1e-12, "df2", "SciPy-side arithmetic");
    check_close(eq.p, 0.0054835404503273885, 1e-6, "p", "SciPy f.sf");
    const double y2[] = {1.20, 1.00}, se2[] = {0.05, 0.04}, dof2[] = {6, 8};
    assert_int_equal(arrank_contrast_equal_test(y2, se2, dof2, 2, &eq, NULL), ARRANK_OK);
    /* F = t^2 = d^2 / se^2 = 0.04 / 0.0041 = 9.7560976 (by hand) */
    check_close(eq.F, 0.04 / 0.0041, 1e-12, "k = 2: F = t^2", "Welch 1951, by hand");
    check_close(eq.df2, 12.34516523867809, 1e-10, "k = 2: df2 = Welch dof", "Welch 1951");
    check_close(eq.p, 0.008531314562369885, 1e-6, "k = 2: p = Welch t's", "SciPy t.sf");
    assert_int_equal(arrank_contrast_equal_test(y, se, dof, 1, &eq, NULL), ARRANK_EINVAL);
}

/* ---- several campaigns read from files -------------------------------------- */

static void write_sample(const char *dir, const char *file, const char *id, const char *unit,
                         double scale)
{
    char text[1024];
    int n = snprintf(text, sizeof text, "# sample = %s\nT [K], rate [%s]\n", id, unit);
    const double T[] = {480, 495, 510, 525, 540};
    for (size_t i = 0; i < 5; i++)
        n += snprintf(text + n, sizeof text - (size_t)n, "%g, %.6g\n", T[i],
                      scale * exp(20.0 - 80e3 / (R_GAS * T[i]) + 0.01 * (double)(i % 2)));
    file_write(dir, file, text);
}

static void test_merge_campaigns(void **state)
{
    (void)state;
    char *root = temp_dir_make();
    char a[1024], b[1024], c[1024];
    snprintf(a, sizeof a, "%s/batch-a", root);
    snprintf(b, sizeof b, "%s/batch-b", root);
    snprintf(c, sizeof c, "%s/tof", root);
    assert_int_equal(mkdir(a, 0777) | mkdir(b, 0777) | mkdir(c, 0777), 0);
    file_write(a, "campaign.ini", "[campaign]\nreference = REF\n");
    write_sample(a, "REF.csv", "REF", "umol/(g*s)", 1.0);
    write_sample(a, "X1.csv", "X1", "umol/(g*s)", 2.0);
    write_sample(b, "REF.csv", "REF", "mol/(kg*h)", 3.6 * 0.8); /* the same unit x 3.6 */
    write_sample(b, "X2.csv", "X2", "mol/(kg*h)", 3.6 * 1.5);
    write_sample(c, "T1.csv", "T1", "1/s", 1.0);
    arrank_campaign *parts[2] = {NULL, NULL}, *m = NULL;
    arrank_error e;
    arrank_error_clear(&e);
    assert_int_equal(arrank_campaign_load_with(a, units, NULL, NULL, NULL, &parts[0], &e), 0);
    assert_int_equal(arrank_campaign_load_with(b, units, NULL, NULL, NULL, &parts[1], &e), 0);
    assert_int_equal(arrank_batches_merge(parts, 2, units, &m, &e), ARRANK_OK);
    assert_null(parts[0]);
    assert_int_equal(m->n_samples, 4);
    assert_int_equal(m->n_parts, 2);
    assert_string_equal(m->name, "batch-a+batch-b");
    assert_string_equal(m->reference, "REF");
    /* ids that collide get their campaign's name; the others keep theirs */
    assert_string_equal(m->samples[0].id, "batch-a/REF");
    assert_string_equal(m->samples[1].id, "X1");
    assert_string_equal(m->samples[2].id, "batch-b/REF");
    assert_string_equal(arrank_campaign_own_id(m, 2), "REF");
    assert_int_equal(arrank_campaign_part(m, 3), 1);
    /* B's rates converted into A's unit: 3.6 * 0.8 mol/(kg*h) per ... is 0.8 umol/(g*s) per ... */
    check_close(m->samples[2].points[0].rate / m->samples[0].points[0].rate, 0.8, 1e-5,
                "B's rate in A's unit", "1 mol/(kg*h) = 1/3.6 umol/(g*s)");
    arrank_options o = arrank_options_defaults();
    o.operating_temp_K = 510.0;
    o.diagnose = 0;
    arrank_analysis *an = NULL;
    assert_int_equal(arrank_analysis_run(m, &o, &an, &e), ARRANK_OK);
    assert_non_null(an->reference);
    assert_true(an->reference->pooled);
    check_close(exp(an->reference->campaigns[1].to_first.est), 0.8, 1e-3, "drift factor",
                "the files' stated 0.8");
    /* pooled: X2 (1.5 x its reference) above X1 (2.0 x its reference)? no: X1 first */
    assert_string_equal(an->results[an->order[0]].sample->id, "X1");
    assert_int_equal(an->n_ranked, 2); /* the references leave the pooled ranking */
    arrank_analysis_free(an);
    /* a reference that is no sample */
    o.reference = "NONE";
    assert_int_equal(arrank_analysis_run(m, &o, &an, &e), ARRANK_EINVAL);
    assert_non_null(strstr(e.message, "'NONE' is no sample of campaign 'batch-a'"));
    arrank_campaign_free(m);
    /* another dimension (turnover frequency against per mass) is an error */
    assert_int_equal(arrank_campaign_load_with(a, units, NULL, NULL, NULL, &parts[0], &e), 0);
    assert_int_equal(arrank_campaign_load_with(c, units, NULL, NULL, NULL, &parts[1], &e), 0);
    assert_int_equal(arrank_batches_merge(parts, 2, units, &m, &e), ARRANK_EDATA);
    assert_non_null(strstr(e.message, "different dimensions"));
    assert_null(m);
    temp_dir_remove(root);
}

/* ---- simulated campaigns ---------------------------------------------------- */

#define SIM_PER 5 /* samples per campaign: the reference and four others */
#define SIM_POINTS 6
#define SIM_T_OP 520.0

/* Two campaigns as one (what arrank_batches_merge makes), in place. */
typedef struct {
    arrank_campaign c;
    arrank_sample s[2 * SIM_PER];
    arrank_point p[2 * SIM_PER][SIM_POINTS];
    char id[2 * SIM_PER][24];
    char *own[2 * SIM_PER];
    size_t part_of[2 * SIM_PER];
    char *names[2];
} sim_pair;

/* True rates at SIM_T_OP relative to the reference: A's and B's samples
   interleave in the pooled order, neighbours 18-37 % apart. */
static const double true_ratio[2][SIM_PER] = {{1.0, 0.55, 1.35, 2.2, 3.4},
                                              {1.0, 0.70, 1.60, 2.6, 4.0}};
static char own_ids[SIM_PER][8] = {"REF", "S1", "S2", "S3", "S4"};

/* B's rig reads `drift` times the truth; scatter 5 % in ln r; Ea 60-110
   kJ/mol; 6 points over 490-550 K. */
static void sim_fill(sim_pair *t, uint64_t *seed, double drift)
{
    memset(&t->c, 0, sizeof t->c);
    t->names[0] = "A";
    t->names[1] = "B";
    t->c.name = t->c.path = t->c.title = "A+B";
    t->c.rate_unit = "umol/(g*s)";
    t->c.basis = ARRANK_BASIS_MASS;
    t->c.operating_temp_K = t->c.confidence = NAN;
    t->c.samples = t->s;
    t->c.n_samples = 2 * SIM_PER;
    t->c.n_parts = 2;
    t->c.part_names = t->names;
    t->c.part_of = t->part_of;
    t->c.part_ids = t->own;
    t->c.reference = "REF";
    const double ln_ref = log(2.0);
    for (size_t k = 0; k < 2 * SIM_PER; k++) {
        const size_t part = k / SIM_PER, j = k % SIM_PER;
        arrank_sample *sm = &t->s[k];
        memset(sm, 0, sizeof *sm);
        snprintf(t->id[k], sizeof t->id[k], "%s/%s", t->names[part], own_ids[j]);
        t->own[k] = own_ids[j];
        t->part_of[k] = part;
        sm->id = sm->path = sm->file = t->id[k];
        sm->basis = ARRANK_BASIS_MASS;
        sm->points = t->p[k];
        sm->n_points = SIM_POINTS;
        const double ea = 60e3 + 50e3 * uniform01(seed);
        const double ln_at_op = ln_ref + log(true_ratio[part][j]) + (part ? log(drift) : 0.0);
        for (size_t i = 0; i < SIM_POINTS; i++) {
            arrank_point *q = &t->p[k][i];
            memset(q, 0, sizeof *q);
            q->temp_K = 490.0 + 12.0 * (double)i;
            q->rate = exp(ln_at_op - ea / R_GAS * (1.0 / q->temp_K - 1.0 / SIM_T_OP) +
                          0.05 * gauss(seed));
            q->rate_sd = q->conversion = q->time_on_stream_s = NAN;
            q->run = -1;
            q->line = (long)i + 2;
        }
    }
}

/* The pooled order is right when the ranked samples come in the order of
   their true ratios. */
static int order_right(const arrank_analysis *a)
{
    for (size_t k = 1; k < a->n_ranked; k++) {
        const size_t i = a->order[k - 1], j = a->order[k];
        const double ti = true_ratio[i / SIM_PER][i % SIM_PER],
                     tj = true_ratio[j / SIM_PER][j % SIM_PER];
        if (!(ti > tj))
            return 0;
    }
    return a->n_ranked == 2 * (SIM_PER - 1);
}

#define SIM_CAMPAIGNS 800

static void sim_run(double drift, uint64_t seed, const char *reference, size_t *right,
                    size_t *covered, size_t *equal_rejected)
{
    sim_pair *t = malloc(sizeof *t);
    assert_non_null(t);
    arrank_options o = arrank_options_defaults();
    o.operating_temp_K = SIM_T_OP;
    o.diagnose = 0;
    o.draws = 200;
    o.pairs = 0;
    o.reference = reference;
    *right = *covered = *equal_rejected = 0;
    for (size_t r = 0; r < SIM_CAMPAIGNS; r++) {
        sim_fill(t, &seed, drift);
        if (!reference)
            t->c.reference = NULL;
        arrank_analysis *a = NULL;
        arrank_error e;
        arrank_error_clear(&e);
        assert_int_equal(arrank_analysis_run(&t->c, &o, &a, &e), ARRANK_OK);
        if (reference) {
            const arrank_reference_campaign *rb = &a->reference->campaigns[1];
            *covered += exp(rb->to_first.lo) <= drift && drift <= exp(rb->to_first.hi);
            *equal_rejected += a->reference->has_equal && a->reference->equal.p < 0.05;
            *right += order_right(a);
        } else {
            /* as measured: the references are ranked too; the others' order */
            size_t kept[2 * SIM_PER], n = 0;
            for (size_t k = 0; k < a->n_ranked; k++)
                if (a->order[k] % SIM_PER != 0)
                    kept[n++] = a->order[k];
            int ok = n == 2 * (SIM_PER - 1);
            for (size_t k = 1; ok && k < n; k++)
                ok = true_ratio[kept[k - 1] / SIM_PER][kept[k - 1] % SIM_PER] >
                     true_ratio[kept[k] / SIM_PER][kept[k] % SIM_PER];
            *right += (size_t)ok;
        }
        arrank_analysis_free(a);
    }
    free(t);
}

static void test_drift_corrected(void **state)
{
    (void)state;
    size_t right, covered, rejected, raw_right, dummy1, dummy2;
    const double drift = 0.75; /* B's rig reads 25 % low */
    sim_run(drift, 0x16D1F7001ull, "REF", &right, &covered, &rejected);
    sim_run(drift, 0x16D1F7001ull, NULL, &raw_right, &dummy1, &dummy2);
    const double pr = (double)right / SIM_CAMPAIGNS, pc = (double)covered / SIM_CAMPAIGNS,
                 pw = (double)raw_right / SIM_CAMPAIGNS, pj = (double)rejected / SIM_CAMPAIGNS;
    printf("# rig drift 0.75, %d simulated pairs of campaigns: true pooled order recovered "
           "%.2f %% with the reference (MC se %.2f %%), %.2f %% as measured; drift interval "
           "covers 0.75 in %.2f %% (MC se %.2f %%); equal reference rates rejected in %.2f %%\n",
           SIM_CAMPAIGNS, 100 * pr, 100 * mc_se(pr, SIM_CAMPAIGNS), 100 * pw, 100 * pc,
           100 * mc_se(0.95, SIM_CAMPAIGNS), 100 * pj);
    assert_true(pr >= 0.95);                                   /* the bound */
    assert_true(pw < 0.5);                                     /* the drift matters */
    assert_true(fabs(pc - 0.95) <= 3.0 * mc_se(0.95, SIM_CAMPAIGNS)); /* nominal coverage */
    assert_true(pj >= 0.9);                                    /* the drift is seen */
}

static void test_no_drift_level(void **state)
{
    (void)state;
    size_t right, covered, rejected;
    sim_run(1.0, 0x16D1F7002ull, "REF", &right, &covered, &rejected);
    const double pj = (double)rejected / SIM_CAMPAIGNS, pc = (double)covered / SIM_CAMPAIGNS;
    printf("# no drift, %d pairs: equal reference rates rejected at 5 %% in %.2f %% (MC se "
           "%.2f %%); the interval covers 1 in %.2f %%\n",
           SIM_CAMPAIGNS, 100 * pj, 100 * mc_se(0.05, SIM_CAMPAIGNS), 100 * pc);
    assert_true(pj <= 0.05 + 3.0 * mc_se(0.05, SIM_CAMPAIGNS));
    assert_true(fabs(pc - 0.95) <= 3.0 * mc_se(0.95, SIM_CAMPAIGNS));
}

/* ---- compare: the level under Holm ------------------------------------------ */

#define CMP_SAMPLES 8
#define CMP_PAIRS 600

typedef struct {
    arrank_campaign c;
    arrank_sample s[CMP_SAMPLES];
    arrank_point p[CMP_SAMPLES][SIM_POINTS];
    char id[CMP_SAMPLES][96];
} cmp_campaign;

/* Eight catalysts, each with its own true Ea (60-110 kJ/mol) and rate; the
   same truth measured twice (fresh seeds). */
static void cmp_fill(cmp_campaign *t, const double *ea, const double *ln_op, uint64_t *seed,
                     const char *name)
{
    memset(&t->c, 0, sizeof t->c);
    t->c.name = t->c.path = t->c.title = (char *)name;
    t->c.rate_unit = "umol/(g*s)";
    t->c.basis = ARRANK_BASIS_MASS;
    t->c.operating_temp_K = t->c.confidence = NAN;
    t->c.samples = t->s;
    t->c.n_samples = CMP_SAMPLES;
    for (size_t k = 0; k < CMP_SAMPLES; k++) {
        arrank_sample *sm = &t->s[k];
        memset(sm, 0, sizeof *sm);
        snprintf(t->id[k], sizeof t->id[k], "C%zu", k + 1);
        sm->id = sm->path = sm->file = t->id[k];
        sm->basis = ARRANK_BASIS_MASS;
        sm->points = t->p[k];
        sm->n_points = SIM_POINTS;
        for (size_t i = 0; i < SIM_POINTS; i++) {
            arrank_point *q = &t->p[k][i];
            memset(q, 0, sizeof *q);
            q->temp_K = 490.0 + 12.0 * (double)i;
            q->rate = exp(ln_op[k] - ea[k] / R_GAS * (1.0 / q->temp_K - 1.0 / SIM_T_OP) +
                          0.05 * gauss(seed));
            q->rate_sd = q->conversion = q->time_on_stream_s = NAN;
            q->run = -1;
            q->line = (long)i + 2;
        }
    }
}

static void test_compare_holm_level(void **state)
{
    (void)state;
    cmp_campaign *A = malloc(sizeof *A), *B = malloc(sizeof *B);
    assert_non_null(A);
    assert_non_null(B);
    uint64_t seed = 0x16C0A7E01ull;
    arrank_options o = arrank_options_defaults();
    o.operating_temp_K = SIM_T_OP;
    o.diagnose = 0;
    o.rank = 0;
    size_t any_rate = 0, any_ea = 0, tests = 0, rate_hits = 0;
    for (size_t r = 0; r < CMP_PAIRS; r++) {
        double ea[CMP_SAMPLES], ln_op[CMP_SAMPLES];
        for (size_t k = 0; k < CMP_SAMPLES; k++) {
            ea[k] = 60e3 + 50e3 * uniform01(&seed);
            ln_op[k] = log(0.5 + 4.0 * uniform01(&seed));
        }
        cmp_fill(A, ea, ln_op, &seed, "fresh");
        cmp_fill(B, ea, ln_op, &seed, "again");
        arrank_analysis *a = NULL, *b = NULL;
        arrank_comparison *c = NULL;
        arrank_error e;
        arrank_error_clear(&e);
        assert_int_equal(arrank_analysis_run(&A->c, &o, &a, &e), ARRANK_OK);
        assert_int_equal(arrank_analysis_run(&B->c, &o, &b, &e), ARRANK_OK);
        assert_int_equal(arrank_compare_run(a, b, NULL, &c, &e), ARRANK_OK);
        assert_int_equal(c->n_rows, CMP_SAMPLES);
        assert_int_equal(c->n_tests, CMP_SAMPLES);
        any_rate += c->n_changed > 0;
        any_ea += c->n_ea_changed > 0;
        for (size_t k = 0; k < c->n_rows; k++)
            rate_hits += c->rows[k].ln_ratio.p < 0.05;
        tests += c->n_tests;
        arrank_compare_free(c);
        arrank_analysis_free(a);
        arrank_analysis_free(b);
    }
    free(A);
    free(B);
    const double fr = (double)any_rate / CMP_PAIRS, fe = (double)any_ea / CMP_PAIRS,
                 pt = (double)rate_hits / (double)tests;
    printf("# identical catalysts measured twice, %d pairs of %d samples: any rate 'changed' "
           "after Holm %.2f %%, any Ea 'changed' %.2f %% (MC se %.2f %%); each test alone at "
           "5 %%: %.2f %% of %zu (MC se %.2f %%)\n",
           CMP_PAIRS, CMP_SAMPLES, 100 * fr, 100 * fe, 100 * mc_se(0.05, CMP_PAIRS), 100 * pt,
           tests, 100 * mc_se(0.05, tests));
    /* Holm holds the familywise level 5 % (Holm 1979) */
    assert_true(fr <= 0.05 + 3.0 * mc_se(0.05, CMP_PAIRS));
    assert_true(fe <= 0.05 + 3.0 * mc_se(0.05, CMP_PAIRS));
    /* each Welch test alone is at its level */
    assert_true(fabs(pt - 0.05) <= 3.0 * mc_se(0.05, tests));
}

/* A drifted rig: the same catalysts measured again on a rig reading 0.8 of
   the truth.  Against the reference tested in both, the familywise level
   holds; as measured, the drift is called a change nearly always. */
static void test_compare_reference_drift(void **state)
{
    (void)state;
    cmp_campaign *A = malloc(sizeof *A), *B = malloc(sizeof *B);
    assert_non_null(A);
    assert_non_null(B);
    uint64_t seed = 0x16C0A7E03ull;
    arrank_options o = arrank_options_defaults();
    o.operating_temp_K = SIM_T_OP;
    o.diagnose = 0;
    o.rank = 0;
    enum { PAIRS = 400 };
    size_t any_corrected = 0, any_measured = 0;
    for (size_t r = 0; r < PAIRS; r++) {
        double ea[CMP_SAMPLES], ln_op[CMP_SAMPLES], ln_b[CMP_SAMPLES];
        for (size_t k = 0; k < CMP_SAMPLES; k++) {
            ea[k] = 60e3 + 50e3 * uniform01(&seed);
            ln_op[k] = log(0.5 + 4.0 * uniform01(&seed));
            ln_b[k] = ln_op[k] + log(0.8);
        }
        cmp_fill(A, ea, ln_op, &seed, "rig-a");
        cmp_fill(B, ea, ln_b, &seed, "rig-b");
        snprintf(A->id[0], sizeof A->id[0], "REF");
        snprintf(B->id[0], sizeof B->id[0], "REF");
        for (int with_ref = 0; with_ref < 2; with_ref++) {
            o.reference = with_ref ? "REF" : NULL;
            arrank_analysis *a = NULL, *b = NULL;
            arrank_comparison *c = NULL;
            arrank_error e;
            arrank_error_clear(&e);
            assert_int_equal(arrank_analysis_run(&A->c, &o, &a, &e), ARRANK_OK);
            assert_int_equal(arrank_analysis_run(&B->c, &o, &b, &e), ARRANK_OK);
            assert_int_equal(arrank_compare_run(a, b, NULL, &c, &e), ARRANK_OK);
            assert_int_equal(c->n_tests, with_ref ? CMP_SAMPLES - 1 : CMP_SAMPLES);
            if (with_ref)
                any_corrected += c->n_changed > 0;
            else
                any_measured += c->n_changed > 0;
            arrank_compare_free(c);
            arrank_analysis_free(a);
            arrank_analysis_free(b);
        }
    }
    free(A);
    free(B);
    const double fc = (double)any_corrected / PAIRS, fm = (double)any_measured / PAIRS;
    printf("# identical catalysts, second rig reading 0.8, %d pairs: any 'changed' after Holm "
           "%.2f %% against the reference (MC se %.2f %%), %.2f %% as measured\n",
           PAIRS, 100 * fc, 100 * mc_se(0.05, PAIRS), 100 * fm);
    assert_true(fc <= 0.05 + 3.0 * mc_se(0.05, PAIRS));
    assert_true(fm >= 0.9);
}

/* compare's table on a terminal (README "The table on a terminal"): width 0
   is the piped table byte for byte; from 50 to 200 columns no line is wider
   than the terminal, the long id is never cut with "...", and whatever is
   left out is said. */
static void compare_on_terminals(const arrank_comparison *c)
{
    arrank_error e;
    char *piped = NULL, *text = NULL;
    size_t len = 0;
    FILE *f = open_memstream(&piped, &len);
    assert_int_equal(arrank_compare_write(c, ARRANK_COMPARE_TABLE, f, &e), ARRANK_OK);
    fclose(f);
    assert_true(term_widest_line(piped) > 120);
    f = open_memstream(&text, &len);
    const arrank_table_options none = {0, 0};
    assert_int_equal(arrank_compare_write_term(c, &none, f, &e), ARRANK_OK);
    fclose(f);
    assert_string_equal(text, piped);
    free(text);
    static const size_t widths[] = {50, 60, 72, 80, 100, 120, 200};
    for (size_t k = 0; k < sizeof widths / sizeof *widths; k++)
        for (int colour = 0; colour < 2; colour++) {
            const arrank_table_options t = {widths[k], colour};
            f = open_memstream(&text, &len);
            assert_int_equal(arrank_compare_write_term(c, &t, f, &e), ARRANK_OK);
            fclose(f);
            if (term_widest_line(text) > widths[k])
                fail_msg("%zu columns: a line of %zu", widths[k], term_widest_line(text));
            assert_null(strstr(text, "..."));
            assert_non_null(strstr(text, "Ni\xe2\x80\x93Mo/\xce\xb3-alumina"));
            assert_true((strstr(text, "(left out to fit") != NULL) == (widths[k] < 120));
            assert_true((strstr(text, "\033[") != NULL) == colour);
            free(text);
        }
    free(piped);
}

/* A comparison's matching, unmatched ids and writers, on a small case. */
static void test_compare_matching(void **state)
{
    (void)state;
    cmp_campaign *A = malloc(sizeof *A), *B = malloc(sizeof *B);
    assert_non_null(A);
    assert_non_null(B);
    uint64_t seed = 0x16C0A7E02ull;
    double ea[CMP_SAMPLES], ln_op[CMP_SAMPLES], ln_b[CMP_SAMPLES];
    for (size_t k = 0; k < CMP_SAMPLES; k++) {
        ea[k] = 80e3;
        ln_op[k] = 0.0;
        ln_b[k] = k == 0 ? log(0.5) : 0.0; /* C1 lost half its activity */
    }
    cmp_fill(A, ea, ln_op, &seed, "fresh");
    cmp_fill(B, ea, ln_b, &seed, "aged");
    snprintf(B->id[7], sizeof B->id[7], "D8"); /* C8 only in A, D8 only in B */
    /* an id of 60 code points, in both: the terminal's table wraps it whole */
    static const char long_id[] = "Ni\xe2\x80\x93Mo/\xce\xb3-alumina extrudate, calcined "
                                  "500 \xc2\xb0" "C, sulfided, lot 7";
    snprintf(A->id[2], sizeof A->id[2], "%s", long_id);
    snprintf(B->id[2], sizeof B->id[2], "%s", long_id);
    arrank_options o = arrank_options_defaults();
    o.operating_temp_K = SIM_T_OP;
    o.diagnose = 0;
    o.rank = 0;
    arrank_analysis *a = NULL, *b = NULL;
    arrank_comparison *c = NULL;
    arrank_error e;
    arrank_error_clear(&e);
    assert_int_equal(arrank_analysis_run(&A->c, &o, &a, &e), ARRANK_OK);
    assert_int_equal(arrank_analysis_run(&B->c, &o, &b, &e), ARRANK_OK);
    assert_int_equal(arrank_compare_run(a, b, NULL, &c, &e), ARRANK_OK);
    assert_int_equal(c->n_rows, 7);
    assert_int_equal(c->n_only_a, 1);
    assert_string_equal(c->only_a[0], "C8");
    assert_int_equal(c->n_only_b, 1);
    assert_string_equal(c->only_b[0], "D8");
    assert_string_equal(c->rows[0].id, "C1");
    assert_true(c->rows[0].changed);
    assert_true(c->rows[0].ratio_lo < 0.5 && 0.5 < c->rows[0].ratio_hi);
    char *text = NULL;
    size_t len = 0;
    FILE *f = open_memstream(&text, &len);
    assert_int_equal(arrank_compare_write(c, ARRANK_COMPARE_JSON, f, &e), ARRANK_OK);
    fclose(f);
    /* the names */
    const char *keys[] = {"\"id\"", "\"ratio\"", "\"ratio_ci\"", "\"ea_change_kJ_mol\"",
                          "\"ea_change_kJ_mol_ci\"", "\"changed\": true", "\"unmatched\"",
                          "\"D8\""};
    for (size_t k = 0; k < sizeof keys / sizeof *keys; k++)
        assert_non_null(strstr(text, keys[k]));
    free(text);
    compare_on_terminals(c);
    /* different temperatures are refused */
    arrank_analysis_free(b);
    o.operating_temp_K = SIM_T_OP + 10.0;
    assert_int_equal(arrank_analysis_run(&B->c, &o, &b, &e), ARRANK_OK);
    arrank_comparison *c2 = NULL;
    assert_int_equal(arrank_compare_run(a, b, NULL, &c2, &e), ARRANK_EINVAL);
    arrank_compare_free(c);
    arrank_analysis_free(a);
    arrank_analysis_free(b);
    free(A);
    free(B);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_ratio_worked_example),
        cmocka_unit_test(test_equal_means),
        cmocka_unit_test(test_merge_campaigns),
        cmocka_unit_test(test_drift_corrected),
        cmocka_unit_test(test_no_drift_level),
        cmocka_unit_test(test_compare_holm_level),
        cmocka_unit_test(test_compare_reference_drift),
        cmocka_unit_test(test_compare_matching),
    };
    return cmocka_run_group_tests(tests, units_setup, units_teardown);
}
