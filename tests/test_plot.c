/*
 * test_plot.c - the figure script (plot.c) without running gnuplot: the
 * quoting of user text, the palette, one colour per sample across figures,
 * and data blocks that hold numbers only.  Running gnuplot on hostile names
 * is tests/check_plot.sh.
 *
 * Expected quoted strings follow the rule in plot.c (double-quoted, \ and "
 * escaped, each backquote written as \140, control characters removed);
 * they were written by hand from that rule, not produced by the code under
 * test.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_multifit.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/analysis.h"
#include "arrank/diagnose.h"
#include "arrank/plot.h"
#include "arrank/analysis_stats.h"
#include "helpers.h"

/* ---- quoting ------------------------------------------------------------ */

static const struct {
    const char *id;
    const char *in;
    const char *want;
} quote_cases[] = {
    {"plain with underscore", "Pt_1", "(\"Pt_1\")"},
    {"apostrophe needs nothing in double quotes", "it's", "(\"it's\")"},
    {"only a quote", "'", "(\"'\")"},
    {"leading doubled quote", "''x", "(\"''x\")"},
    {"backquotes written as the escape \\140, never bare", "a`touch x`b",
     "(\"a\\140touch x\\140b\")"},
    {"double quotes escaped", "s system(\"touch M\")", "(\"s system(\\\"touch M\\\")\")"},
    {"bang command", "'; !touch x; '", "(\"'; !touch x; '\")"},
    {"C0 controls and DEL removed", "a\nb\tc\rd\x7f" "e", "(\"abcde\")"},
    {"C1 control (U+0085) removed", "x\xC2\x85y", "(\"xy\")"},
    {"valid UTF-8 kept", "250 \xC2\xB0" "C \xC2\xB5mol", "(\"250 \xC2\xB0" "C \xC2\xB5mol\")"},
    {"stray byte becomes U+FFFD", "a\xFF" "b", "(\"a\xEF\xBF\xBD" "b\")"},
    {"overlong encoding rejected byte by byte", "\xE0\x80\x80",
     "(\"\xEF\xBF\xBD\xEF\xBF\xBD\xEF\xBF\xBD\")"},
    {"surrogate rejected", "\xED\xA0\x80", "(\"\xEF\xBF\xBD\xEF\xBF\xBD\xEF\xBF\xBD\")"},
    {"backslash escaped", "back\\slash\\", "(\"back\\\\slash\\\\\")"},
    {"empty", "", "(\"\")"},
    {"data block terminator as a name", "EOD", "(\"EOD\")"},
    {"macro and variable signs stay (no expansion inside a string)", "@foo $x", "(\"@foo $x\")"},
    {"percent kept outside tic labels", "5% %s%n", "(\"5% %s%n\")"},
    {"enhanced-text signs kept (terminals are noenhanced)", "a^2_b &{c}", "(\"a^2_b &{c}\")"},
};

static void test_quote_table(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof quote_cases / sizeof *quote_cases; k++) {
        char *q = arrank_plot_quote(quote_cases[k].in);
        assert_non_null(q);
        if (strcmp(q, quote_cases[k].want) != 0) {
            print_error("case '%s': got %s want %s\n", quote_cases[k].id, q, quote_cases[k].want);
            free(q);
            fail();
        }
        free(q);
    }
    char *q = arrank_plot_quote(NULL);
    assert_string_equal(q, "(\"\")");
    free(q);
}

/*
 * Read a quoted expression the way gnuplot's scanner does for this grammar:
 * '("' { character other than " \ ` | \\ | \" | \140 } '")'.  Returns the
 * text it stands for (caller frees), or NULL if anything lies outside that
 * grammar: above all a bare backquote, which gnuplot would run as a command
 * even inside double quotes.
 */
static char *unquote(const char *q)
{
    size_t n = strlen(q);
    char *out = malloc(n + 1), *o = out;
    const char *p = q;
    if (strncmp(p, "(\"", 2) != 0)
        goto bad;
    p += 2;
    for (;;) {
        if (*p == '\0' || *p == '`')
            goto bad;
        if (*p == '"')
            break;
        if (*p == '\\') {
            if (p[1] == '\\' || p[1] == '"') {
                *o++ = p[1];
                p += 2;
            } else if (strncmp(p + 1, "140", 3) == 0) {
                *o++ = '`';
                p += 4;
            } else
                goto bad;
            continue;
        }
        *o++ = *p++;
    }
    if (strcmp(p, "\")") != 0)
        goto bad;
    *o = '\0';
    return out;
bad:
    free(out);
    return NULL;
}

/* Linear: a name of 200,000 apostrophes and backquotes quotes to one string
   of bounded size (the old form made a concatenation per quote, which
   gnuplot joined in quadratic time). */
static void test_quote_long(void **state)
{
    (void)state;
    size_t n = 200000;
    char *in = malloc(n + 1);
    assert_non_null(in);
    for (size_t k = 0; k < n; k++)
        in[k] = k % 3 == 0 ? '`' : '\'';
    in[n] = '\0';
    char *q = arrank_plot_quote(in);
    assert_non_null(q);
    assert_true(strlen(q) <= 4 * n + 4);
    assert_null(strstr(q, "\" . "));
    char *back = unquote(q);
    assert_non_null(back);
    assert_string_equal(back, in);
    free(back);
    free(q);
    free(in);
}

/* Random strings over a hostile alphabet: every result must scan as string
   constants only and stand for the input minus its control characters. */
static void test_quote_random(void **state)
{
    (void)state;
    static const char alphabet[] = "ab'\"`$@!;\\#\n\t\x7f()., EOD%^_&{}";
    unsigned long seed = 20240611UL;
    for (int round = 0; round < 5000; round++) {
        char in[40], want[40];
        size_t len = (size_t)(round % 37), w = 0;
        for (size_t k = 0; k < len; k++) {
            seed = seed * 6364136223846793005ULL + 1442695040888963407ULL;
            char c = alphabet[(seed >> 33) % (sizeof alphabet - 1)];
            in[k] = c;
            if ((unsigned char)c >= 0x20 && c != 0x7f)
                want[w++] = c;
        }
        in[len] = '\0';
        want[w] = '\0';
        char *q = arrank_plot_quote(in);
        assert_non_null(q);
        char *back = unquote(q);
        if (!back || strcmp(back, want) != 0) {
            print_error("round %d: quoted %s read back %s\n", round, q, back ? back : "(bad)");
            free(q);
            free(back);
            fail();
        }
        free(q);
        free(back);
    }
}

/* ---- palette ------------------------------------------------------------ */

static void test_palette(void **state)
{
    (void)state;
    /* Okabe-Ito (Wong, Nature Methods 8:441, 2011) without its yellow and
       black: six colours, cycling; black is the reference's. */
    const char *want[] = {"#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9"};
    for (size_t i = 0; i < 6; i++) {
        assert_string_equal(arrank_plot_color(i), want[i]);
        assert_string_equal(arrank_plot_color(i + 6), want[i]);
    }
    /* 40 samples: (colour, marker) distinct pairs, and (colour, dash) too;
       hollow differs from filled except where no open form exists. */
    for (size_t i = 0; i < 42; i++) {
        arrank_plot_look a = arrank_plot_sample_look(i, 0);
        assert_string_not_equal(a.color, "#000000");
        assert_int_not_equal(a.point_filled, 3); /* the reference's star */
        for (size_t j = 0; j < i; j++) {
            arrank_plot_look b = arrank_plot_sample_look(j, 0);
            assert_false(strcmp(a.color, b.color) == 0 && a.point_filled == b.point_filled);
            assert_false(strcmp(a.color, b.color) == 0 && a.dash == b.dash);
        }
    }
    arrank_plot_look ref = arrank_plot_sample_look(5, 1);
    assert_string_equal(ref.color, "#000000");
    assert_int_equal(ref.point_filled, 3);
    assert_true(ref.line_width > 1.0);
}


/* Units as a reader reads them (ISO 80000-1 style: symbols with superscript
   powers; common practice in the catalysis literature). */
static void test_unit_text(void **state)
{
    (void)state;
    static const struct {
        const char *in, *out;
    } cases[] = {
        {"umol/(g*s)", "µmol g⁻¹ s⁻¹"},
        {"mol/(kg*h)", "mol kg⁻¹ h⁻¹"},
        {"mmol/g/h", "mmol g⁻¹ h⁻¹"},
        {"1/s", "s⁻¹"},
        {"mmol g-1 h-1", "mmol g⁻¹ h⁻¹"},
        {"umol/(m^2*s)", "µmol m⁻² s⁻¹"},
        {"mol.kg-1.s-12", "mol.kg-1.s-12"}, /* a power over 9: copied as written */
        {"report unit", "report unit"},
        {"a(b", "a(b"},
        {"", ""},
    };
    for (size_t k = 0; k < sizeof cases / sizeof *cases; k++) {
        char buf[128];
        arrank_plot_unit_text(cases[k].in, buf, sizeof buf);
        assert_string_equal(buf, cases[k].out);
    }
    /* cut short, never inside a character: "µmol" is 5 bytes */
    char small[7];
    arrank_plot_unit_text("umol/(g*s)", small, sizeof small);
    assert_string_equal(small, "µmol ");
    char tiny[2]; /* "µ" is 2 bytes: it does not fit */
    arrank_plot_unit_text("umol/(g*s)", tiny, sizeof tiny);
    assert_string_equal(tiny, "");
}

/* Every flag has short words, none of them the program's spelling. */
static void test_flag_words(void **state)
{
    (void)state;
    for (unsigned b = 0; b < ARRANK_FLAG_COUNT; b++) {
        const char *w = arrank_plot_flag_short(1u << b);
        assert_non_null(w);
        assert_null(strchr(w, '_'));
        assert_true(strlen(w) <= 24);
    }
    assert_null(arrank_plot_flag_short(1u << ARRANK_FLAG_COUNT));
}

/* ---- the script --------------------------------------------------------- */

#define N_SAMPLES 9
static const char *const names[N_SAMPLES] = {
    "ZQ-1 fresh", "it's `x`", "EOD", "Pt_1", "a\nb", "set output 'x'", "s7 5% %s%n", "s8", "s9"};

typedef struct {
    arrank_campaign c;
    arrank_analysis *a;
} fixture;

/* An invented campaign in memory: ln r = b - Ea/(R T) with a small
   deterministic wobble; sample 3 has rate_sd, sample 8 cannot be fitted, and
   samples 6 and 7 share one law (so the ranking cannot tell them apart). */
static int setup(void **state)
{
    fixture *fx = calloc(1, sizeof *fx);
    fx->c.name = "zq";
    fx->c.title = "ZQ 'screen'";
    fx->c.rate_unit = "umol/(g*s)";
    fx->c.n_samples = N_SAMPLES;
    fx->c.samples = calloc(N_SAMPLES, sizeof *fx->c.samples);
    for (size_t i = 0; i < N_SAMPLES; i++) {
        arrank_sample *s = &fx->c.samples[i];
        s->id = (char *)names[i];
        s->path = s->file = "none.csv";
        s->n_points = i == 8 ? 2 : 7;
        s->points = calloc(s->n_points, sizeof *s->points);
        double law = i == 7 ? 6.0 : (double)i;
        for (size_t k = 0; k < s->n_points; k++) {
            double T = 478.3 + 11.7 * (double)k;
            double lr = 0.37 * law - (58.1e3 + 6.3e3 * law) / (8.314462618 * T) + 16.2 +
                        0.043 * sin(3.1 * ((double)k + law)) + (i == 7 ? 0.004 : 0.0);
            s->points[k].temp_K = T;
            s->points[k].rate = exp(lr);
            s->points[k].rate_sd = i == 3 ? 0.05 * exp(lr) : NAN;
            s->points[k].run = -1;
            s->points[k].line = (long)k + 3;
            s->points[k].time_on_stream_s = NAN; /* no time_on_stream column */
            s->points[k].conversion = NAN;
        }
        if (i == 8)
            s->problem = "only 2 data points";
    }
    arrank_options o = arrank_options_defaults();
    o.operating_temp_K = 531.4;
    arrank_error err;
    arrank_error_clear(&err);
    if (arrank_analysis_run(&fx->c, &o, &fx->a, &err) != ARRANK_OK) {
        print_error("analysis: %s\n", err.message);
        return -1;
    }
    *state = fx;
    return 0;
}

static int teardown(void **state)
{
    fixture *fx = *state;
    arrank_analysis_free(fx->a);
    for (size_t i = 0; i < N_SAMPLES; i++)
        free(fx->c.samples[i].points);
    free(fx->c.samples);
    free(fx);
    return 0;
}

static char *script_of(const arrank_analysis *a, unsigned formats)
{
    char *buf = NULL;
    size_t len = 0;
    FILE *f = open_memstream(&buf, &len);
    assert_non_null(f);
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_plot_script(a, formats, f, &err), ARRANK_OK);
    assert_int_equal(fclose(f), 0);
    return buf;
}

/* Every line of every data block is numbers only, so no block can end early
   or carry a command; and every block is closed. */
static void test_blocks_numeric(void **state)
{
    fixture *fx = *state;
    char *text = script_of(fx->a, ARRANK_PLOT_SVG | ARRANK_PLOT_PNG);
    int in_block = 0;
    size_t blocks = 0, rows = 0;
    for (char *line = strtok(text, "\n"); line; line = strtok(NULL, "\n")) {
        if (!in_block) {
            if (line[0] == '$' && strstr(line, " << EOD")) {
                in_block = 1;
                blocks++;
            }
            continue;
        }
        if (strcmp(line, "EOD") == 0) {
            in_block = 0;
            continue;
        }
        char *p = line, *end;
        int fields = 0;
        while (*p) {
            double v = strtod(p, &end);
            if (end == p || !isfinite(v)) {
                print_error("non-numeric block line: %s\n", line);
                fail();
            }
            fields++;
            p = end;
            while (*p == ' ')
                p++;
        }
        assert_true(fields >= 2);
        rows++;
    }
    assert_false(in_block);
    assert_true(blocks > 20);
    assert_true(rows > 200);
    free(text);
}

/* The colour on each plotted element of sample i is arrank_plot_color(i), in
   every figure: elements are found by their data block name. */
static void test_colour_per_sample(void **state)
{
    fixture *fx = *state;
    char *text = script_of(fx->a, ARRANK_PLOT_SVG);
    static const char *const tags[] = {"$pue", "$pun", "$pxe", "$pxn", "$fit", "$ext", "$ell",
                                       "$ctr", "$resu", "$resx", "$loc", "$eab"};
    size_t checked = 0, rate_rows = 0;
    for (char *line = strtok(text, "\n"); line; line = strtok(NULL, "\n")) {
        const char *lc = strstr(line, "lc rgb '");
        if (!lc || line[0] == '$')
            continue;
        char colour[8];
        memcpy(colour, lc + 8, 7);
        colour[7] = '\0';
        for (size_t t = 0; t < sizeof tags / sizeof *tags; t++) {
            const char *p = strstr(line, tags[t]);
            if (!p)
                continue;
            p += strlen(tags[t]);
            if (*p < '0' || *p > '9')
                continue;
            size_t i = strtoul(p, NULL, 10);
            assert_true(i < N_SAMPLES);
            assert_string_equal(colour, arrank_plot_color(i));
            checked++;
            break;
        }
        const char *r = strstr(line, "$pt");
        if (r) {
            /* Row k of the rate figure is the k-th ranked sample. */
            size_t k = strtoul(r + 3, NULL, 10);
            assert_true(k < fx->a->n_ranked);
            assert_string_equal(colour, arrank_plot_color(fx->a->order[k]));
            rate_rows++;
        }
    }
    /* 8 fitted samples in several figures each; one unfitted one. */
    assert_true(checked >= 8 * 6);
    assert_int_equal(rate_rows, 8);
    free(text);
}

/* Figure list: four kinds, one diagnostics figure per fitted sample, file
   names from the position and a cleaned id. */
static void test_figure_names(void **state)
{
    fixture *fx = *state;
    char *text = script_of(fx->a, ARRANK_PLOT_SVG | ARRANK_PLOT_PDF);
    const char *want[] = {"arrank-figure: arrhenius.svg'", "arrank-figure: arrhenius.pdf'",
                          "arrank-figure: rate-at-T.svg'", "arrank-figure: ea-lnA.pdf'",
                          "arrank-figure: diagnostics-01-ZQ-1_fresh.svg'",
                          "arrank-figure: diagnostics-02-it_s_x.svg'",
                          "arrank-figure: diagnostics-05-a_b.svg'",
                          "arrank-figure: diagnostics-06-set_output_x.svg'"};
    for (size_t k = 0; k < sizeof want / sizeof *want; k++)
        if (!strstr(text, want[k])) {
            print_error("missing %s\n", want[k]);
            fail();
        }
    assert_null(strstr(text, "diagnostics-09")); /* sample 9 was not fitted */
    size_t n = 0;
    for (const char *p = text; (p = strstr(p, "arrank-figure: ")) != NULL; p++)
        n++;
    assert_int_equal(n, 2 * (3 + 8));
    free(text);
}

/* No user string reaches the script outside a quoted expression: the
   newline name never splits a line, and a name like EOD never stands alone. */
static void test_names_only_quoted(void **state)
{
    fixture *fx = *state;
    char *text = script_of(fx->a, ARRANK_PLOT_SVG);
    assert_null(strstr(text, "\nb\""));      /* "a\nb" was not split */
    assert_non_null(strstr(text, "(\"ab\")")); /* ...but drawn without its newline */
    assert_non_null(strstr(text, "(\"set output 'x'\")"));
    assert_non_null(strstr(text, "(\"it's \\140x\\140\")"));
    assert_null(strstr(text, "`x`"));
    /* A tic label is a format to gnuplot: its '%' doubled; a title is not. */
    assert_non_null(strstr(text, "set ytics ("));
    assert_non_null(strstr(text, "(\"s7 5%% %%s%%n\") "));
    assert_non_null(strstr(text, "set label (\"s7 5% %s%n\")"));
    free(text);
}

/* With ranking statistics (analysis_stats.h) the rate figure brackets groups of two or
   more and names P(best); the Ea-ln A figure draws the compensation line. */
static void test_rank_stats_drawn(void **state)
{
    fixture *fx = *state;
    assert_non_null(fx->a->rank_stats);
    const arrank_result *r6 = &fx->a->results[6], *r7 = &fx->a->results[7];
    assert_non_null(r6->stats);
    assert_non_null(r7->stats);
    assert_int_equal(r6->stats->group, r7->stats->group); /* same law, 0.4 % apart */
    char *text = script_of(fx->a, ARRANK_PLOT_SVG);
    assert_non_null(strstr(text, "set arrow from graph 1.015, first "));
    assert_non_null(strstr(text, "bracket: not told apart"));
    assert_non_null(strstr(text, "(\"P(best) "));
    assert_non_null(strstr(text, "*x with lines dt (8,5) lw 1.2 lc rgb '#666666'"));
    free(text);
    /* Without them, none of it (the figures must not depend on them). */
    struct arrank_rank_stats *saved = fx->a->rank_stats;
    fx->a->rank_stats = NULL;
    text = script_of(fx->a, ARRANK_PLOT_SVG);
    assert_null(strstr(text, "set arrow from graph 1.015"));
    assert_null(strstr(text, "*x with lines dt (8,5)"));
    free(text);
    fx->a->rank_stats = saved;
}

/* No entry of dir whose name starts with prefix. */
static int none_named(const char *dir, const char *prefix)
{
    DIR *d = opendir(dir);
    assert_non_null(d);
    struct dirent *e;
    int none = 1;
    while ((e = readdir(d)) != NULL)
        none &= strncmp(e->d_name, prefix, strlen(prefix)) != 0;
    closedir(d);
    return none;
}

/* The library makes no file at a predictable name: links planted at the
   names it once used for gnuplot's outputs (".NAME.PID.tmp" in the output
   folder, PID this process) are neither followed nor removed, the figures
   arrive, and the private folder gnuplot wrote into is gone. */
static void test_write_no_predictable_names(void **state)
{
    fixture *fx = *state;
    char *dir = temp_dir_make();
    file_write(dir, "victim", "keep\n");
    char link1[4200], link2[4200], target2[4200], victim[4200];
    snprintf(victim, sizeof victim, "%s/victim", dir);
    snprintf(target2, sizeof target2, "%s/made-through-a-link", dir);
    snprintf(link1, sizeof link1, "%s/.arrhenius.svg.%ld.tmp", dir, (long)getpid());
    snprintf(link2, sizeof link2, "%s/.ea-lnA.svg.%ld.tmp", dir, (long)getpid());
    assert_int_equal(symlink(victim, link1), 0);
    assert_int_equal(symlink(target2, link2), 0); /* dangling: would create target2 */
    arrank_plot_files written;
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st = arrank_plot_write(fx->a, dir, NULL, &written, &err);
    if (st != ARRANK_OK)
        print_error("plot: %s\n", err.message);
    assert_int_equal(st, ARRANK_OK);
    assert_int_equal(written.n, 3 + 8); /* three campaign figures, 8 fitted samples */
    for (size_t k = 0; k < written.n; k++) {
        struct stat sb;
        assert_int_equal(lstat(written.files[k].path, &sb), 0);
        assert_true(S_ISREG(sb.st_mode) && sb.st_size > 0);
    }
    arrank_plot_files_clear(&written);
    size_t len = 0;
    char *kept = file_slurp(victim, &len);
    assert_int_equal(len, 5);
    assert_memory_equal(kept, "keep\n", 5);
    free(kept);
    struct stat sb;
    assert_int_equal(lstat(link1, &sb), 0);
    assert_true(S_ISLNK(sb.st_mode));
    assert_int_equal(lstat(link2, &sb), 0);
    assert_true(S_ISLNK(sb.st_mode));
    assert_int_not_equal(lstat(target2, &sb), 0);
    assert_true(none_named(dir, ".arrank-figures."));
    temp_dir_remove(dir);
}

/* All or none: a folder where one figure should go is found before any
   figure moves; nothing is written and the private folder is gone. */
static void test_write_all_or_none(void **state)
{
    fixture *fx = *state;
    char *dir = temp_dir_make();
    char blocker[4200];
    snprintf(blocker, sizeof blocker, "%s/rate-at-T.svg", dir);
    assert_int_equal(mkdir(blocker, 0700), 0);
    arrank_plot_files written;
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_plot_write(fx->a, dir, NULL, &written, &err), ARRANK_EIO);
    assert_non_null(strstr(err.message, "rate-at-T.svg"));
    assert_int_equal(written.n, 0);
    assert_true(none_named(dir, "arrhenius"));
    assert_true(none_named(dir, "diagnostics-"));
    assert_true(none_named(dir, ".arrank-figures."));
    assert_int_equal(rmdir(blocker), 0);
    temp_dir_remove(dir);
}

static void test_find_gnuplot_missing(void **state)
{
    (void)state;
    char *path = (char *)1;
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_plot_find_gnuplot("/nonexistent/gnuplot", &path, &err),
                     ARRANK_ENOGNUPLOT);
    assert_null(path);
    assert_non_null(strstr(err.message, "'/nonexistent/gnuplot' not found"));
    assert_non_null(strstr(err.message, "apt-get install gnuplot-nox"));
}

/* ---- rate against time on stream ------------------------------------------ */

#define TOS_N 14

/* Rows of data block $name in script: up to max rows of cols numbers. */
static size_t block_rows(const char *script, const char *name, size_t cols, double *v,
                         size_t max)
{
    char head[64];
    snprintf(head, sizeof head, "$%s << EOD\n", name);
    const char *p = strstr(script, head);
    if (!p)
        return 0;
    p += strlen(head);
    size_t n = 0;
    while (n < max && strncmp(p, "EOD", 3) != 0) {
        for (size_t c = 0; c < cols; c++) {
            char *end;
            v[n * cols + c] = strtod(p, &end);
            assert_true(end != p);
            p = end;
        }
        p = strchr(p, '\n') + 1;
        n++;
    }
    return n;
}

/* A sample measured over 27 h on stream, temperatures going up and back so
   that time does not follow temperature, losing 1.2 %/h; a second one
   without a time_on_stream column.  The figure of the first draws the
   diagnosis's drift fit: its line and band are those of ordinary least
   squares of ln r on [1, 1/T, t] (GSL gsl_multifit_linear, an independent
   path from the diagnosis's QR in regress.c; the prediction's variance
   x0' cov x0 and its t quantile on n - 3 dof: Draper & Smith, Applied
   Regression Analysis, 3rd ed., sec. 5.4); the second has no such figure. */
static void test_time_on_stream(void **state)
{
    (void)state;
    static const double temps_K[TOS_N] = {500, 510, 520, 530, 540, 550, 560,
                                          500, 520, 540, 560, 510, 530, 550};
    arrank_campaign c = {0};
    arrank_sample smp[2] = {{0}};
    arrank_point pts[2][TOS_N];
    c.name = c.title = "tos";
    c.rate_unit = "umol/(g*s)";
    c.samples = smp;
    c.n_samples = 2;
    gsl_matrix *X = gsl_matrix_alloc(TOS_N, 3), *cov = gsl_matrix_alloc(3, 3);
    gsl_vector *y = gsl_vector_alloc(TOS_N), *b = gsl_vector_alloc(3);
    for (size_t i = 0; i < 2; i++) {
        smp[i].id = i == 0 ? "A drifting" : "B no time";
        smp[i].path = smp[i].file = "none.csv";
        smp[i].points = pts[i];
        smp[i].n_points = TOS_N;
        for (size_t k = 0; k < TOS_N; k++) {
            const double t_h = 2.0 * (double)k + 1.0, T = temps_K[k];
            const double lr = 30.0 - 90e3 / (8.314462618 * T) - 0.012 * t_h +
                              0.01 * sin(2.3 * (double)k);
            pts[i][k] = (arrank_point){.temp_K = T, .rate = exp(lr), .rate_sd = NAN,
                                       .conversion = NAN, .run = -1, .line = (long)k + 3,
                                       .time_on_stream_s = i == 0 ? 3600.0 * t_h : NAN};
            gsl_matrix_set(X, k, 0, 1.0);
            gsl_matrix_set(X, k, 1, 1.0 / T);
            gsl_matrix_set(X, k, 2, t_h);
            gsl_vector_set(y, k, lr);
        }
    }
    double chisq;
    gsl_multifit_linear_workspace *ws = gsl_multifit_linear_alloc(TOS_N, 3);
    assert_int_equal(gsl_multifit_linear(X, y, b, cov, &chisq, ws), 0);
    gsl_multifit_linear_free(ws);
    arrank_options o = arrank_options_defaults();
    o.operating_temp_K = 530.0;
    arrank_analysis *a = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_analysis_run(&c, &o, &a, &err), ARRANK_OK);
    const arrank_drift *dr = &a->results[0].diagnosis->drift;
    assert_true(dr->tested);
    assert_int_equal(dr->n_points, TOS_N);
    char *script = script_of(a, ARRANK_PLOT_SVG);
    /* the figure for the sample with the column, none for the other */
    assert_non_null(strstr(script, "set output (\"time-on-stream-01-A_drifting.svg\")"));
    assert_null(strstr(script, "time-on-stream-02"));
    assert_null(strstr(script, "$drift1"));
    /* the drawn line and band against least squares done independently */
    const double src_T_ref = 1.0 / ((1.0 / 500 + 1.0 / 510 + 1.0 / 520 + 1.0 / 530 + 1.0 / 540 +
                                     1.0 / 550 + 1.0 / 560) * 2.0 / 14.0);
    check_close(dr->temp_ref_K, src_T_ref, 1e-12, "drift T_ref", "1 / mean of 1/T");
    check_close(dr->slope_ln_per_h, gsl_vector_get(b, 2), 1e-8, "drift slope",
                "GSL gsl_multifit_linear");
    const double tq = gsl_cdf_tdist_Pinv(0.975, TOS_N - 3.0);
    double line[61 * 4];
    size_t n_line = block_rows(script, "drift0", 4, line, 61);
    assert_int_equal(n_line, 61);
    assert_true(fabs(line[0] - 1.0) < 1e-9 && fabs(line[60 * 4] - 27.0) < 1e-9);
    for (size_t k = 0; k < n_line; k += 10) {
        const double t_h = line[k * 4], x0[3] = {1.0, 1.0 / src_T_ref, t_h};
        double pred = 0, var = 0;
        for (int u = 0; u < 3; u++) {
            pred += x0[u] * gsl_vector_get(b, u);
            for (int w = 0; w < 3; w++)
                var += x0[u] * gsl_matrix_get(cov, u, w) * x0[w];
        }
        check_close(line[k * 4 + 1], exp(pred), 1e-7, "drift line", "GSL least squares");
        check_close(line[k * 4 + 2], exp(pred - tq * sqrt(var)), 1e-7, "band, lower",
                    "GSL least squares, t on n - 3 (GSL gsl_cdf_tdist_Pinv)");
        check_close(line[k * 4 + 3], exp(pred + tq * sqrt(var)), 1e-7, "band, upper",
                    "GSL least squares, t on n - 3 (GSL gsl_cdf_tdist_Pinv)");
    }
    /* the points brought to T_ref with the fit's own temperature slope */
    double tos[TOS_N * 2];
    assert_int_equal(block_rows(script, "tos0", 2, tos, TOS_N), TOS_N);
    for (size_t k = 0; k < TOS_N; k++) {
        const double want = pts[0][k].rate * exp(-gsl_vector_get(b, 1) *
                                                 (1.0 / temps_K[k] - 1.0 / src_T_ref));
        check_close(tos[2 * k + 1], want, 1e-7, "point at T_ref", "GSL least squares");
    }
    free(script);
    /* only the kinds asked for: none of them for a campaign without the column */
    arrank_analysis_free(a);
    for (size_t k = 0; k < TOS_N; k++)
        pts[0][k].time_on_stream_s = NAN;
    assert_int_equal(arrank_analysis_run(&c, &o, &a, &err), ARRANK_OK);
    script = script_of(a, ARRANK_PLOT_SVG);
    assert_null(strstr(script, "time-on-stream"));
    free(script);
    arrank_analysis_free(a);
    gsl_matrix_free(X);
    gsl_matrix_free(cov);
    gsl_vector_free(y);
    gsl_vector_free(b);
}

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_quote_table),
        cmocka_unit_test(test_quote_random),
        cmocka_unit_test(test_quote_long),
        cmocka_unit_test(test_palette),
        cmocka_unit_test(test_unit_text),
        cmocka_unit_test(test_flag_words),
        cmocka_unit_test(test_blocks_numeric),
        cmocka_unit_test(test_colour_per_sample),
        cmocka_unit_test(test_figure_names),
        cmocka_unit_test(test_names_only_quoted),
        cmocka_unit_test(test_rank_stats_drawn),
        cmocka_unit_test(test_write_no_predictable_names),
        cmocka_unit_test(test_write_all_or_none),
        cmocka_unit_test(test_find_gnuplot_missing),
        cmocka_unit_test(test_time_on_stream),
    };
    return cmocka_run_group_tests(tests, setup, teardown);
}
