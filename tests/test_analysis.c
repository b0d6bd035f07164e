/*
 * test_analysis.c - the pipeline (analysis.c) and the writers (output.c):
 * flags, ranking orders, unfittable samples, JSON/CSV/table content, atomic
 * saving.  Campaigns are written to a temporary folder and read back, so the
 * tests go through the same reader as the program.
 *
 * The data are generated here from exact Arrhenius laws (no noise unless
 * stated), so expected values follow from the formulas in fit.h.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <gsl/gsl_errno.h>
#include <jansson.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "arrank/analysis.h"
#include "arrank/campaign.h"
#include "arrank/output.h"
#include "helpers.h"

/* A sample file with an exact Arrhenius law: r = exp(lnA - Ea/(R T)), rate in 1/s. */
static void put_arrhenius(const char *dir, const char *name, double ea_J_mol, double ln_A,
                          double t_lo_K, double t_hi_K, int n, double wobble)
{
    char text[4096];
    size_t len = (size_t)snprintf(text, sizeof text, "# sample = %s\nT [K],rate [1/s]\n", name);
    for (int i = 0; i < n; i++) {
        double T = t_lo_K + (t_hi_K - t_lo_K) * i / (n - 1);
        /* alternating +-wobble in ln r: a deterministic scatter with zero mean */
        double lr = ln_A - ea_J_mol / (ARRANK_R_J_MOL_K * T) + ((i % 2) ? wobble : -wobble);
        len += (size_t)snprintf(text + len, sizeof text - len, "%.10g,%.17g\n", T, exp(lr));
    }
    char file[128];
    snprintf(file, sizeof file, "%s.csv", name);
    file_write(dir, file, text);
}

static arrank_analysis *analyse(const char *dir, double T_K, arrank_rank_by by,
                                arrank_campaign **campaign)
{
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load(dir, units, campaign, &err), ARRANK_OK);
    arrank_options o = arrank_options_defaults();
    o.operating_temp_K = T_K;
    o.by = by;
    arrank_analysis *a = NULL;
    arrank_status st = arrank_analysis_run(*campaign, &o, &a, &err);
    if (st != ARRANK_OK)
        print_error("analysis failed: %s\n", err.message);
    assert_int_equal(st, ARRANK_OK);
    return a;
}

static const arrank_result *find(const arrank_analysis *a, const char *id)
{
    for (size_t i = 0; i < a->n_results; i++)
        if (strcmp(a->results[i].sample->id, id) == 0)
            return &a->results[i];
    fail_msg("sample '%s' not found", id);
    return NULL;
}

static void test_flag_table(void **state)
{
    (void)state;
    /* every bit has a distinct name and words */
    for (unsigned i = 0; i < ARRANK_FLAG_COUNT; i++) {
        const char *n = arrank_flag_name(1u << i);
        assert_non_null(n);
        assert_non_null(arrank_flag_words(1u << i));
        for (unsigned j = 0; j < i; j++)
            assert_string_not_equal(n, arrank_flag_name(1u << j));
    }
    assert_null(arrank_flag_name(1u << ARRANK_FLAG_COUNT));
}

/* Ranking orders by rate at T, by lowest Ea and by highest A. */
static void test_rank_orders(void **state)
{
    (void)state;
    char *dir = temp_dir_make();
    /* Lines that cross inside the range: the order depends on T. */
    put_arrhenius(dir, "A", 60000.0, 8.0, 480, 620, 8, 0.0);
    put_arrhenius(dir, "B", 110000.0, 19.5, 480, 620, 8, 0.0);
    put_arrhenius(dir, "C", 45000.0, 5.1, 480, 620, 8, 0.0);
    arrank_campaign *c;
    arrank_analysis *a = analyse(dir, 600.0, ARRANK_BY_RATE, &c);
    assert_int_equal(a->n_ranked, 3);
    /* ln r(600) = lnA - Ea/(R 600): A -4.03, B -2.55, C -3.92 -> B, C, A */
    assert_string_equal(a->results[a->order[0]].sample->id, "B");
    assert_string_equal(a->results[a->order[1]].sample->id, "C");
    assert_string_equal(a->results[a->order[2]].sample->id, "A");
    assert_int_equal(find(a, "A")->rank, 3);
    const arrank_result *rb = find(a, "B");
    double want = 19.5 - 110000.0 / (ARRANK_R_J_MOL_K * 600.0);
    assert_true(fabs(rb->at_T.ln_rate - want) < 1e-9);
    assert_true(fabs(rb->fit.ea_J_mol - 110000.0) < 1e-6 * 110000.0);
    arrank_analysis_free(a);
    arrank_campaign_free(c);

    /* at 500 K: A -6.43, B -6.96, C -5.73 -> C, A, B */
    a = analyse(dir, 500.0, ARRANK_BY_RATE, &c);
    assert_string_equal(a->results[a->order[0]].sample->id, "C");
    assert_string_equal(a->results[a->order[2]].sample->id, "B");
    arrank_analysis_free(a);
    arrank_campaign_free(c);

    a = analyse(dir, NAN, ARRANK_BY_EA, &c);
    assert_string_equal(a->results[a->order[0]].sample->id, "C"); /* lowest Ea first */
    assert_string_equal(a->results[a->order[2]].sample->id, "B");
    assert_int_equal(find(a, "C")->has_prediction, 0);
    arrank_analysis_free(a);
    arrank_campaign_free(c);

    a = analyse(dir, NAN, ARRANK_BY_PREFACTOR, &c);
    assert_string_equal(a->results[a->order[0]].sample->id, "B"); /* highest ln A first */
    arrank_analysis_free(a);
    arrank_campaign_free(c);
    temp_dir_remove(dir);
}

/* Flags: few points, narrow range, low Ea, extrapolated. */
static void test_basic_flags(void **state)
{
    (void)state;
    char *dir = temp_dir_make();
    put_arrhenius(dir, "narrow", 80000.0, 15.0, 500, 520, 3, 0.01);
    put_arrhenius(dir, "lowEa", 12000.0, 1.0, 450, 600, 8, 0.01);
    put_arrhenius(dir, "clean", 90000.0, 18.0, 450, 600, 8, 0.01);
    arrank_campaign *c;
    arrank_analysis *a = analyse(dir, 610.0, ARRANK_BY_RATE, &c);
    const arrank_result *n = find(a, "narrow"), *l = find(a, "lowEa"), *k = find(a, "clean");
    assert_true(n->flags & ARRANK_FLAG_FEW_POINTS);
    assert_true(n->flags & ARRANK_FLAG_NARROW_RANGE);
    assert_true(n->flags & ARRANK_FLAG_EXTRAPOLATED);
    assert_true(l->flags & ARRANK_FLAG_LOW_EA);
    assert_false(l->flags & ARRANK_FLAG_NARROW_RANGE);
    /* 610 K is outside 450-600 K: extrapolated for every sample */
    assert_true(k->flags & ARRANK_FLAG_EXTRAPOLATED);
    assert_false(k->flags &
                 (ARRANK_FLAG_FEW_POINTS | ARRANK_FLAG_LOW_EA | ARRANK_FLAG_NARROW_RANGE));
    arrank_analysis_free(a);
    arrank_campaign_free(c);
    a = analyse(dir, 560.0, ARRANK_BY_RATE, &c);
    assert_false(find(a, "clean")->flags & ARRANK_FLAG_EXTRAPOLATED);
    arrank_analysis_free(a);
    arrank_campaign_free(c);
    temp_dir_remove(dir);
}

/* A sample that cannot be fitted is listed, unranked, with its reason; with
   no fittable sample the run fails with the first reason and its position. */
static void test_unfittable(void **state)
{
    (void)state;
    char *dir = temp_dir_make();
    put_arrhenius(dir, "good", 70000.0, 14.0, 480, 560, 6, 0.02);
    file_write(dir, "bad.csv", "T [K],rate [1/s]\n500,0.1\n510,0.2\n");
    arrank_campaign *c;
    arrank_analysis *a = analyse(dir, 520.0, ARRANK_BY_RATE, &c);
    const arrank_result *b = find(a, "bad");
    assert_non_null(b->error);
    assert_int_equal(b->rank, 0);
    assert_int_equal(find(a, "good")->rank, 1);
    assert_int_equal(a->n_ranked, 1);

    /* JSON: the unfitted sample has nulls, the fitted one numbers */
    char *buf = NULL;
    size_t len = 0;
    FILE *mem = open_memstream(&buf, &len);
    arrank_error err;
    assert_int_equal(arrank_output_write(a, ARRANK_OUTPUT_JSON, mem, &err), ARRANK_OK);
    fclose(mem);
    json_error_t jerr;
    json_t *root = json_loads(buf, 0, &jerr);
    assert_non_null(root);
    json_t *samples = json_object_get(root, "samples");
    assert_int_equal(json_array_size(samples), 2);
    for (size_t i = 0; i < 2; i++) {
        json_t *s = json_array_get(samples, i);
        const char *id = json_string_value(json_object_get(s, "id"));
        if (strcmp(id, "bad") == 0) {
            assert_true(json_is_null(json_object_get(s, "ea_kJ_mol")));
            assert_true(json_is_null(json_object_get(s, "rank")));
            assert_true(json_is_string(json_object_get(s, "error")));
        } else {
            assert_true(fabs(json_real_value(json_object_get(s, "ea_kJ_mol")) - 70.0) < 3.0);
            assert_int_equal(json_integer_value(json_object_get(s, "rank")), 1);
            assert_true(json_is_null(json_object_get(s, "error")));
        }
    }
    json_decref(root);
    free(buf);

    /* CSV: the caution as a comment line, header + one row per sample */
    buf = NULL;
    mem = open_memstream(&buf, &len);
    assert_int_equal(arrank_output_write(a, ARRANK_OUTPUT_CSV, mem, &err), ARRANK_OK);
    fclose(mem);
    size_t lines = 0, comments = 0;
    for (char *p = buf; *p; p++)
        if (*p == '\n') {
            lines++;
            comments += p[1] == '#';
        }
    assert_true(buf[0] == '#');
    assert_int_equal(lines, 4);
    assert_int_equal(comments + 1, 1); /* the first line only */
    free(buf);
    arrank_analysis_free(a);
    arrank_campaign_free(c);

    /* nothing fittable: EDATA with the file and the reason */
    char path[600];
    snprintf(path, sizeof path, "%s/good.csv", dir);
    assert_int_equal(unlink(path), 0);
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load(dir, units, &c, &err), ARRANK_OK);
    arrank_options o = arrank_options_defaults();
    assert_int_equal(arrank_analysis_run(c, &o, &a, &err), ARRANK_EDATA);
    assert_null(a);
    assert_non_null(strstr(err.path, "bad.csv"));
    assert_non_null(strstr(err.message, "2"));
    arrank_campaign_free(c);
    temp_dir_remove(dir);
}

/* The table shortens long names, keeps control characters out, shows units. */
static void test_table(void **state)
{
    (void)state;
    char *dir = temp_dir_make();
    file_write(dir, "x.csv", "# sample = Pt_1 on a very long support name that goes on and on\n"
                           "T [K],rate [umol/(g*s)]\n500,0.1\n520,0.22\n540,0.41\n560,0.8\n");
    arrank_campaign *c;
    arrank_analysis *a = analyse(dir, 530.0, ARRANK_BY_RATE, &c);
    char *buf = NULL;
    size_t len = 0;
    FILE *mem = open_memstream(&buf, &len);
    arrank_error err;
    assert_int_equal(arrank_output_write(a, ARRANK_OUTPUT_TABLE, mem, &err), ARRANK_OK);
    fclose(mem);
    assert_non_null(strstr(buf, "Pt_1 on a very long suppo..."));
    assert_non_null(strstr(buf, "Ea [kJ/mol]"));
    assert_non_null(strstr(buf, "[umol/(g*s)]"));
    free(buf);
    arrank_analysis_free(a);
    arrank_campaign_free(c);
    temp_dir_remove(dir);
}

/* Saving: parent folders created, no temp file left; a full device fails with
   EIO and leaves nothing. */
static arrank_status write_hello(FILE *f, void *ctx, arrank_error *err)
{
    (void)ctx;
    if (fputs("hello\n", f) == EOF)
        return arrank_errorf(err, ARRANK_EIO, "write failed");
    return ARRANK_OK;
}

static arrank_status write_fails(FILE *f, void *ctx, arrank_error *err)
{
    (void)ctx;
    fputs("half", f);
    return arrank_errorf(err, ARRANK_EPLOT, "gnuplot said no");
}

static void test_atomic_save(void **state)
{
    (void)state;
    char *dir = temp_dir_make();
    char path[600];
    snprintf(path, sizeof path, "%s/a/b/out.txt", dir);
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_output_save_with(path, write_hello, NULL, &err), ARRANK_OK);
    struct stat sb;
    assert_int_equal(stat(path, &sb), 0);
    assert_int_equal(sb.st_size, 6);
    /* a writer that fails leaves the old file as it was and no temp file */
    assert_int_equal(arrank_output_save_with(path, write_fails, NULL, &err), ARRANK_EPLOT);
    assert_string_equal(err.message, "gnuplot said no");
    assert_int_equal(stat(path, &sb), 0);
    assert_int_equal(sb.st_size, 6);
    char cmd[700];
    snprintf(cmd, sizeof cmd, "test $(ls '%s/a/b' | wc -l) -eq 1", dir);
    assert_int_equal(system(cmd), 0);
    if (access("/dev/full", W_OK) == 0) {
        assert_int_equal(arrank_output_save_with("/dev/full", write_hello, NULL, &err),
                         ARRANK_EIO);
        assert_non_null(strstr(err.message, "/dev/full"));
    }
    temp_dir_remove(dir);
}

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_flag_table),   cmocka_unit_test(test_rank_orders),
        cmocka_unit_test(test_basic_flags),  cmocka_unit_test(test_unfittable),
        cmocka_unit_test(test_table),        cmocka_unit_test(test_atomic_save),
    };
    return cmocka_run_group_tests_name("analysis", tests, units_setup, units_teardown);
}
