/*
 * test_campaign.c - the campaign reader: sample files in every accepted
 * dialect (comma, semicolon, tab, decimal comma, CRLF, CR, BOM, RFC 4180
 * quoting), metadata, optional columns and their units, the position
 * (line:column) of every load-stopping error, the problems that keep a sample
 * but keep it out of the fit, resource limits, campaign.ini, whole folders,
 * the bad-input corpus in tests/bad/ and the speed of a large campaign.
 *
 * Unit factors used in expectations are exact by definition of the units
 * (SI prefixes, 1 h = 3600 s, 1 min = 60 s, T/K = t/degC + 273.15,
 * T/K = (t/degF + 459.67) * 5/9; SI Brochure 9th ed., NIST SP 811).  The
 * numbers in the sample files are invented.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>
#include <dirent.h>
#include <gsl/gsl_errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include "arrank/campaign.h"
#include "helpers.h"

#define REL_TOL 1e-12
/* The source of every expected value compared with check_close here. */
#define UNITS_EXACT "exact by definition of the units"

static arrank_status parse(const char *name, const char *text, const char *report,
                           arrank_sample *s, arrank_error *err)
{
    arrank_error_clear(err);
    return arrank_sample_parse(name, text, strlen(text), units, report, s, err);
}

/* Parse text that must be accepted. */
static void parse_ok(const char *name, const char *text, const char *report, arrank_sample *s)
{
    arrank_error err;
    if (parse(name, text, report, s, &err) != ARRANK_OK) {
        char buf[2048];
        arrank_error_format(&err, buf, sizeof buf);
        print_error("unexpected error: %s\n", buf);
        fail();
    }
}

/* ------------------------------------------------------- dialects of CSV */

/* The same three points in every dialect: 231.4, 244.9, 258.2 degC. */
static const double dialect_T_K[] = {504.55, 518.05, 531.35};
static const double dialect_rate[] = {0.417, 0.862, 1.694};

static void test_dialects(void **state)
{
    (void)state;
    const struct {
        const char *what;
        const char *text;
        long first_line;
    } cases[] = {
        {"comma, LF", "T [degC],rate [umol/(g*s)],run\n231.4,0.417,up\n244.9,0.862,up\n"
                      "258.2,1.694,down\n",
         2},
        {"semicolon, decimal comma",
         "T [degC];rate [umol/(g*s)];run\n231,4;0,417;up\n244,9;0,862;up\n258,2;1,694;down\n", 2},
        {"semicolon, decimal point",
         "T [degC];rate [umol/(g*s)];run\n231.4;0.417;up\n244.9;0.862;up\n258.2;1.694;down\n", 2},
        {"tab, decimal comma",
         "T [degC]\trate [umol/(g*s)]\trun\n231,4\t0,417\tup\n244,9\t0,862\tup\n"
         "258,2\t1,694\tdown\n",
         2},
        {"CRLF and BOM",
         "\xef\xbb\xbfT [degC],rate [umol/(g*s)],run\r\n231.4,0.417,up\r\n244.9,0.862,up\r\n"
         "258.2,1.694,down\r\n",
         2},
        {"CR only", "T [degC],rate [umol/(g*s)],run\r231.4,0.417,up\r244.9,0.862,up\r"
                    "258.2,1.694,down",
         2},
        {"quoted fields",
         "\"T [degC]\",\"rate [umol/(g*s)]\",\"run\"\n\"231.4\",\" 0.417 \",\"up\"\n"
         "244.9,\"0.862\",up\n258.2,1.694,\"down\"\n",
         2},
        {"spaces and blank lines", "\n\nT [degC] , rate [ umol/(g*s) ] , run\n\n 231.4 , 0.417 ,"
                                   " up\n244.9,0.862,up\n   \n258.2,1.694,down\n\n",
         5},
        {"no final line end", "T [degC],rate [umol/(g*s)],run\n231.4,0.417,up\n244.9,0.862,up\n"
                              "258.2,1.694,down",
         2},
        {"comment row among data", "T [degC],rate [umol/(g*s)],run\n231.4,0.417,up\n"
                                   "# valve check, flow 40 mL/min\n244.9,0.862,up\n"
                                   "258.2,1.694,down\n",
         2},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        arrank_sample s;
        parse_ok("S17.csv", cases[i].text, NULL, &s);
        if (s.n_points != 3) {
            print_error("%s: %zu points\n", cases[i].what, s.n_points);
            fail();
        }
        for (size_t k = 0; k < 3; k++) {
            check_close(s.points[k].temp_K, dialect_T_K[k], REL_TOL, cases[i].what, UNITS_EXACT);
            check_close(s.points[k].rate, dialect_rate[k], REL_TOL, cases[i].what, UNITS_EXACT);
            assert_true(isnan(s.points[k].rate_sd));
            assert_true(isnan(s.points[k].conversion));
            assert_true(isnan(s.points[k].time_on_stream_s));
        }
        assert_int_equal(s.points[0].line, cases[i].first_line);
        assert_int_equal(s.n_runs, 2);
        assert_string_equal(s.runs[0], "up");
        assert_string_equal(s.runs[1], "down");
        assert_int_equal(s.points[2].run, 1);
        assert_int_equal(s.basis, ARRANK_BASIS_MASS);
        assert_null(s.problem);
        assert_string_equal(s.id, "S17");
        arrank_sample_clear(&s);
    }
}

/* Quotes inside fields and a quoted field over two lines keep later line numbers right. */
static void test_quoting_and_lines(void **state)
{
    (void)state;
    const char *text = "T [K],rate [1/s],run\n"
                       "561.3,0.0213,\"ramp \"\"A\"\", 2 K/min\"\n"
                       "573.8,0.0391,\"hold\nafter restart\"\n"
                       "586.1,0.0702,x\n"
                       "598.4,0.1189,\"\"\n";
    arrank_sample s;
    parse_ok("tof.csv", text, NULL, &s);
    assert_int_equal(s.n_points, 4);
    assert_string_equal(s.runs[0], "ramp \"A\", 2 K/min");
    assert_string_equal(s.runs[1], "hold\nafter restart");
    assert_int_equal(s.points[0].line, 2);
    assert_int_equal(s.points[1].line, 3);
    assert_int_equal(s.points[2].line, 5);
    assert_int_equal(s.points[3].line, 6);
    assert_int_equal(s.points[3].run, -1); /* empty label: no run */
    assert_int_equal(s.basis, ARRANK_BASIS_SITE);
    arrank_sample_clear(&s);

    /* An error after the two-line field names the right line. */
    arrank_error err;
    const char *bad = "T [K],rate [1/s],run\n561.3,0.0213,\"a\nb\"\n573.8,fast,c\n";
    assert_int_equal(parse("tof.csv", bad, NULL, &s, &err), ARRANK_EPARSE);
    assert_int_equal(err.line, 4);
    assert_int_equal(err.column, 2);
}

/* --------------------------------------------------------------- metadata */

static void test_metadata(void **state)
{
    (void)state;
    const char *text = "# sample = Ni-Al2O3-11\n"
                       "# mass = 50.2 mg\n"
                       "#\n"
                       "# a plain comment without an equals sign\n"
                       "   \n"
                       "# note = reduced 2 h at 400 C; flow = 40 mL/min\n"
                       "#Pretreatment=none\n"
                       "# = no key here\n"
                       "# mass = 50.4 mg\n"
                       "T [K], rate [umol/(g*s)]\n"
                       "504.55, 0.417\n518.05, 0.862\n531.35, 1.694\n";
    arrank_sample s;
    parse_ok("data/S09.csv", text, NULL, &s);
    assert_string_equal(s.id, "Ni-Al2O3-11");
    assert_string_equal(s.path, "data/S09.csv");
    assert_string_equal(s.file, "S09.csv");
    assert_int_equal(s.n_meta, 5);
    assert_string_equal(s.meta[0].key, "sample");
    assert_int_equal(s.meta[0].line, 1);
    assert_string_equal(s.meta[2].key, "note");
    assert_string_equal(s.meta[2].value, "reduced 2 h at 400 C; flow = 40 mL/min");
    assert_int_equal(s.meta[2].line, 6);
    assert_string_equal(s.meta[3].key, "Pretreatment");
    assert_string_equal(s.meta[3].value, "none");
    assert_string_equal(s.meta[4].source, "data/S09.csv");
    assert_string_equal(arrank_sample_meta(&s, "MASS"), "50.4 mg"); /* last one wins */
    assert_string_equal(arrank_sample_meta(&s, "pretreatment"), "none");
    assert_null(arrank_sample_meta(&s, "operator"));
    assert_int_equal(s.points[0].line, 11);
    assert_int_equal(s.n_notes, 0);
    arrank_sample_clear(&s);

    /* Without "# sample", the id is the file stem (extension in any case). */
    parse_ok("campaigns/x/Co-Zr-02.CSV", "T [K],rate [1/s]\n600.2,0.11\n612.9,0.19\n625.3,0.33\n",
             NULL, &s);
    assert_string_equal(s.id, "Co-Zr-02");
    assert_string_equal(s.file, "Co-Zr-02.CSV");
    arrank_sample_clear(&s);
}

/* ---------------------------------------------------------- run labels */

static void test_runs(void **state)
{
    (void)state;
    const char *text = "T [degC],rate [umol/(g*s)],run\n"
                       "231.4,0.417,up\n244.9,0.862,up\n258.2,1.694,down\n"
                       "244.9,0.871,up\n231.4,0.409,\n271.6,3.108,hold\n";
    arrank_sample s;
    parse_ok("S03.csv", text, NULL, &s);
    assert_int_equal(s.n_runs, 3);
    const int want[] = {0, 0, 1, 0, -1, 2};
    for (size_t i = 0; i < 6; i++)
        assert_int_equal(s.points[i].run, want[i]);
    assert_string_equal(s.runs[2], "hold");
    arrank_sample_clear(&s);

    /* Many distinct labels: each point keeps its own. */
    size_t n = 5000;
    char *big = malloc(n * 40 + 64);
    assert_non_null(big);
    size_t used = (size_t)sprintf(big, "T [K],rate [1/s],run\n");
    for (size_t i = 0; i < n; i++)
        used += (size_t)sprintf(big + used, "%.2f,0.0%zu3,lot-%zu\n", 500.0 + (double)i * 0.01,
                                i % 9 + 1, (i * 7919) % n);
    parse_ok("many.csv", big, NULL, &s);
    free(big);
    assert_int_equal(s.n_runs, n);
    for (size_t i = 0; i < n; i++) {
        char label[32];
        snprintf(label, sizeof label, "lot-%zu", (i * 7919) % n);
        assert_string_equal(s.runs[s.points[i].run], label);
    }
    arrank_sample_clear(&s);
}

/* ------------------------------------------------------ optional columns */

static void test_optional_columns(void **state)
{
    (void)state;
    const char *text = "T [degC],rate [umol/(g*s)],rate_sd [mol/(kg*h)],conversion [%],"
                       "time_on_stream [min],pressure [bar],operator,\n"
                       "231.4,0.417,0.0873,3.7,12.5,1.013,lk,\n"
                       "244.9,0.862,,8.15,47,1.013,lk,\n"
                       "258.2,1.694,0.2412,,,1.02,,\n";
    arrank_sample s;
    parse_ok("S05.csv", text, NULL, &s);
    assert_int_equal(s.n_points, 3);
    check_close(s.points[0].rate_sd, 0.0873 / 3.6, REL_TOL,
                "rate_sd mol/(kg*h) -> umol/(g*s)", UNITS_EXACT);
    assert_true(isnan(s.points[1].rate_sd));
    check_close(s.points[2].rate_sd, 0.2412 / 3.6, REL_TOL,
                "rate_sd mol/(kg*h) -> umol/(g*s)", UNITS_EXACT);
    check_close(s.points[0].conversion, 0.037, REL_TOL, "conversion %", UNITS_EXACT);
    check_close(s.points[1].conversion, 0.0815, REL_TOL, "conversion %", UNITS_EXACT);
    assert_true(isnan(s.points[2].conversion));
    check_close(s.points[0].time_on_stream_s, 750.0, REL_TOL,
                "time_on_stream min -> s", UNITS_EXACT);
    check_close(s.points[1].time_on_stream_s, 2820.0, REL_TOL,
                "time_on_stream min -> s", UNITS_EXACT);
    assert_true(isnan(s.points[2].time_on_stream_s));
    assert_int_equal(s.n_notes, 3);
    assert_string_equal(s.notes[0], "column 'pressure' ignored");
    assert_string_equal(s.notes[1], "column 'operator' ignored");
    assert_string_equal(s.notes[2], "column 8 has no name; ignored");
    assert_string_equal(s.rate_unit_file, "umol/(g*s)");
    arrank_sample_clear(&s);

    /* Conversion without a unit is a fraction; names are case-insensitive; "r" is the rate. */
    parse_ok("S06.csv", "Temperature [K];R [1/h];Conversion;RATE_SD [1/h]\n"
                        "600,2;7,31;0,042;0,35\n612,7;12,9;0,071;0,52\n",
             "1/s", &s);
    check_close(s.points[0].conversion, 0.042, REL_TOL, "conversion fraction", UNITS_EXACT);
    check_close(s.points[1].rate, 12.9 / 3600.0, REL_TOL, "1/h -> 1/s", UNITS_EXACT);
    check_close(s.points[1].rate_sd, 0.52 / 3600.0, REL_TOL, "1/h -> 1/s", UNITS_EXACT);
    check_close(s.points[1].temp_K, 612.7, REL_TOL, "K", UNITS_EXACT);
    assert_string_equal(s.rate_unit_file, "1/h");
    assert_int_equal(s.basis, ARRANK_BASIS_SITE);
    arrank_sample_clear(&s);
}

/* The same measurements in three unit systems give the same SI values. */
static void test_same_data_other_units(void **state)
{
    (void)state;
    const char *texts[] = {
        "T [degC],rate [umol/(g*s)],rate_sd [umol/(g*s)]\n"
        "231.4,0.417,0.021\n244.9,0.862,0.037\n258.2,1.694,0.058\n271.6,3.108,0.113\n",
        "T [K],rate [mol/(kg*h)],rate_sd [mol/(kg*h)]\n"
        "504.55,1.5012,0.0756\n518.05,3.1032,0.1332\n531.35,6.0984,0.2088\n"
        "544.75,11.1888,0.4068\n",
        "T [degF];rate [mmol/(g*h)];rate_sd [mmol/(g*h)]\n"
        "448,52;1,5012;0,0756\n472,82;3,1032;0,1332\n496,76;6,0984;0,2088\n"
        "520,88;11,1888;0,4068\n",
    };
    arrank_sample s[3];
    for (size_t i = 0; i < 3; i++)
        parse_ok("S11.csv", texts[i], "mol/(kg*s)", &s[i]);
    for (size_t i = 1; i < 3; i++) {
        assert_int_equal(s[i].n_points, s[0].n_points);
        for (size_t k = 0; k < s[0].n_points; k++) {
            check_close(s[i].points[k].temp_K, s[0].points[k].temp_K, REL_TOL,
                        "T in K", UNITS_EXACT);
            check_close(s[i].points[k].rate, s[0].points[k].rate, REL_TOL,
                        "rate in mol/(kg*s)", UNITS_EXACT);
            check_close(s[i].points[k].rate_sd, s[0].points[k].rate_sd, REL_TOL,
                        "rate_sd in mol/(kg*s)", UNITS_EXACT);
        }
    }
    /* And the values themselves: 0.417 umol/(g*s) = 4.17e-4 mol/(kg*s). */
    check_close(s[0].points[0].rate, 4.17e-4, REL_TOL, "umol/(g*s) -> mol/(kg*s)", UNITS_EXACT);
    check_close(s[0].points[3].temp_K, 544.75, REL_TOL, "degC -> K", UNITS_EXACT);
    /* The temperature as each file wrote it, and its header's unit as written
       (points.csv T_file, T_file_unit; check's left-out lines). */
    static const char *const unit_written[] = {"degC", "K", "degF"};
    static const double first_written[] = {231.4, 504.55, 448.52}, last_written[] = {
        271.6, 544.75, 520.88};
    /* The diagnosis's words give a temperature in the file's unit beside
       the kelvin (arrank_sample_temp_text): 544.75 K is 271.6 degC and
       520.88 degF (exact by the units' definitions), at the stated digits. */
    static const char *const at_text[] = {"271.6 degC (544.8 K)", "544.8 K",
                                          "520.9 degF (544.8 K)"};
    static const char *const span_text[] = {"231-272 degC (505-545 K)", "505-545 K",
                                            "449-521 degF (505-545 K)"};
    char buf[128];
    for (size_t i = 0; i < 3; i++) {
        assert_non_null(s[i].temp_unit_file);
        assert_string_equal(s[i].temp_unit_file, unit_written[i]);
        assert_true(s[i].points[0].temp_file == first_written[i]);
        assert_true(s[i].points[3].temp_file == last_written[i]);
        assert_string_equal(arrank_sample_temp_text(&s[i], 544.75, NAN, 1, buf, sizeof buf),
                            at_text[i]);
        assert_string_equal(arrank_sample_temp_text(&s[i], 504.55, 544.75, 0, buf, sizeof buf),
                            span_text[i]);
    }
    /* cut to fit, never past the buffer; a non-finite temperature in K only */
    char small[9];
    memset(small, 'x', sizeof small);
    assert_string_equal(arrank_sample_temp_text(&s[0], 544.75, NAN, 1, small, 8), "271.6 d");
    assert_int_equal(small[8], 'x');
    assert_string_equal(arrank_sample_temp_text(&s[0], NAN, NAN, 1, buf, sizeof buf), "nan K");
    for (size_t i = 0; i < 3; i++)
        arrank_sample_clear(&s[i]);
    /* the unit as the header spells it, and a cell the lenient reader leaves
       out: no number, so no temperature as written either */
    arrank_sample t;
    arrank_error err;
    arrank_read_options lenient = {0};
    memset(&t, 0, sizeof t);
    const char *spelled = "Temperature (\xC2\xB0" "C),rate [umol/(g*s)]\n"
                          "231.4,0.417\nn.d.,0.862\n258.2,1.694\n271.6,3.108\n";
    assert_int_equal(arrank_sample_parse_with("S12.csv", spelled, strlen(spelled), units, NULL,
                                              &lenient, &t, &err),
                     ARRANK_OK);
    assert_string_equal(t.temp_unit_file, "\xC2\xB0" "C");
    char words[64];
    assert_string_equal(arrank_sample_temp_text(&t, 544.75, NAN, 1, words, sizeof words),
                        "271.6 \xC2\xB0" "C (544.8 K)");
    assert_int_equal(t.n_points, 4);
    assert_true(t.points[0].temp_file == 231.4);
    assert_non_null(t.points[1].omitted);
    assert_true(isnan(t.points[1].temp_file) && isnan(t.points[1].temp_K));
    arrank_sample_clear(&t);
}

/* --------------------------------------------------------------- errors */

static const char H[] = "# sample = Rh-TiO2-02\n# mass = 31.9 mg\n"; /* two metadata lines */

static const struct {
    const char *what;
    const char *body; /* after the two metadata lines in H */
    const char *report;
    arrank_status status;
    long line, column;
    const char *message;
} errors[] = {
    {"missing temperature unit", "T,rate [umol/(g*s)]\n231.4,0.417\n", NULL, ARRANK_EUNIT, 3, 1,
     "column 'T' has no unit; write it as 'T [degC]' or 'T [K]'"},
    {"empty temperature unit", "rate [umol/(g*s)],temperature []\n0.417,231.4\n", NULL,
     ARRANK_EUNIT, 3, 2,
     "column 'temperature' has no unit; write it as 'temperature [degC]' or 'temperature [K]'"},
    {"unknown temperature unit", "T [degQ],rate [umol/(g*s)]\n231.4,0.417\n", NULL, ARRANK_EUNIT,
     3, 1, "unknown unit 'degQ' in column 'T'"},
    {"temperature unit not a temperature", "T [s],rate [umol/(g*s)]\n231.4,0.417\n", NULL,
     ARRANK_EUNIT, 3, 1, "'s' in column 'T' is not a temperature unit"},
    {"rate without unit", "T [K],rate\n504.55,0.417\n", NULL, ARRANK_EUNIT, 3, 2,
     "column 'rate' has no unit; write it as 'rate [umol/(g*s)]'"},
    {"unknown rate unit", "T [K],rate [umol/(g*blorp)]\n504.55,0.417\n", NULL, ARRANK_EUNIT, 3, 2,
     "unknown unit 'umol/(g*blorp)' in column 'rate'"},
    {"rate unit not a rate", "T [K],run,rate [mol/s]\n504.55,a,0.417\n", NULL, ARRANK_EUNIT, 3, 3,
     "'mol/s' in column 'rate' is not a rate per mass, area or site "
     "(such as umol/(g*s), umol/(m2*s) or 1/s)"},
    {"rate unit of another dimension", "T [K],rate [1/s]\n504.55,0.417\n", "umol/(g*s)",
     ARRANK_EUNIT, 3, 2,
     "rate unit '1/s' of S03.csv is not convertible to the campaign's 'umol/(g*s)'"},
    {"non-numeric temperature", "T [degC],rate [umol/(g*s)]\n231.4,0.417\nl.5,0.862\n", NULL,
     ARRANK_EPARSE, 5, 1, "'l.5' is not a number in column 'T'"},
    {"non-numeric rate", "T [degC],rate [umol/(g*s)]\n231.4,0.417\n244.9,0.8.62\n", NULL,
     ARRANK_EPARSE, 5, 2, "'0.8.62' is not a number in column 'rate'"},
    {"hexadecimal", "T [degC],rate [umol/(g*s)]\n231.4,0x1A\n", NULL, ARRANK_EPARSE, 4, 2,
     "'0x1A' is not a number in column 'rate'"},
    {"number with unit in cell", "T [degC],rate [umol/(g*s)]\n231.4 C,0.417\n", NULL,
     ARRANK_EPARSE, 4, 1, "'231.4 C' is not a number in column 'T'"},
    {"empty temperature cell", "T [degC],rate [umol/(g*s)]\n231.4,0.417\n,0.862\n", NULL,
     ARRANK_EPARSE, 5, 1, "empty cell in column 'T'"},
    {"empty rate cell", "T [degC],rate [umol/(g*s)],run\n231.4,0.417,a\n244.9, ,a\n", NULL,
     ARRANK_EPARSE, 5, 2, "empty cell in column 'rate'"},
    {"short row", "T [degC],rate [umol/(g*s)],run\n231.4,0.417,up\n244.9,0.862\n", NULL,
     ARRANK_EPARSE, 5, 3, "row has 2 fields but the header has 3"},
    {"long row", "T [degC],rate [umol/(g*s)]\n231.4,0.417\n244.9,0.862,up\n", NULL,
     ARRANK_EPARSE, 5, 3,
     "row has 3 fields but the header has 2 (a decimal comma needs ';' or tab as the delimiter)"},
    {"long row, semicolon", "T [degC];rate [umol/(g*s)]\n231,4;0,417;x\n", NULL, ARRANK_EPARSE, 4,
     3, "row has 3 fields but the header has 2"},
    {"NaN", "T [degC],rate [umol/(g*s)]\n231.4,nan\n", NULL, ARRANK_EPARSE, 4, 2,
     "'nan' is not a finite number in column 'rate'"},
    {"inf", "T [degC],rate [umol/(g*s)]\n231.4,0.417\nInf,0.862\n", NULL, ARRANK_EPARSE, 5, 1,
     "'Inf' is not a finite number in column 'T'"},
    {"-infinity", "T [degC],rate [umol/(g*s)]\n231.4,-infinity\n", NULL, ARRANK_EPARSE, 4, 2,
     "'-infinity' is not a finite number in column 'rate'"},
    {"overflow", "T [degC],rate [umol/(g*s)]\n231.4,1e999\n", NULL, ARRANK_EPARSE, 4, 2,
     "'1e999' is out of range in column 'rate'"},
    {"below absolute zero", "T [degC],rate [umol/(g*s)]\n231.4,0.417\n-273.15,0.862\n", NULL,
     ARRANK_EPARSE, 5, 1, "temperature '-273.15 degC' is at or below absolute zero (0 K)"},
    {"zero kelvin", "rate [umol/(g*s)],T [K]\n0.417,0\n", NULL, ARRANK_EPARSE, 4, 2,
     "temperature '0 K' is at or below absolute zero (0 K)"},
    {"metadata only", "", NULL, ARRANK_EPARSE, 0, 0,
     "no header line; a sample file needs a header such as 'T [degC], rate [umol/(g*s)]' "
     "and data rows"},
    {"header only", "T [degC],rate [umol/(g*s)]\n", NULL, ARRANK_EPARSE, 3, 0,
     "the header is not followed by any data row"},
    {"header only, no line end", "T [degC],rate [umol/(g*s)]", NULL, ARRANK_EPARSE, 3, 0,
     "the header is not followed by any data row"},
    {"header and blank lines", "T [degC],rate [umol/(g*s)]\n\n  \n", NULL, ARRANK_EPARSE, 3, 0,
     "the header is not followed by any data row"},
    {"duplicate column", "T [degC],rate [umol/(g*s)],temperature [K]\n231.4,0.417,504.55\n", NULL,
     ARRANK_EPARSE, 3, 3, "column 'temperature' repeats column 1 'T'"},
    {"duplicate rate", "r [1/s],T [K],RATE [1/s]\n0.417,504.55,0.417\n", NULL, ARRANK_EPARSE, 3, 3,
     "column 'RATE' repeats column 1 'r'"},
    {"missing rate column", "T [degC],rate_sd [umol/(g*s)]\n231.4,0.417\n", NULL, ARRANK_EPARSE, 3,
     0, "no rate column (found 'T', 'rate_sd'); the header needs one named rate, r, TOF with "
        "its unit, as 'rate [umol/(g*s)]' (or a 'conversion' column with feed metadata, to "
        "derive the rates)"},
    {"missing temperature column", "rate [umol/(g*s)],run\n0.417,a\n", NULL, ARRANK_EPARSE, 3, 0,
     "no temperature column (found 'rate', 'run'); the header needs one named T, Temp, "
     "temperature, T_bed with its unit, as 'T [degC]', 'Temperature (°C)' or 'T / K'"},
    {"data without header", "231.4,0.417\n244.9,0.862\n", NULL, ARRANK_EPARSE, 3, 0,
     "no temperature column (found '231.4', '0.417'); the header needs one named T, Temp, "
     "temperature, T_bed with its unit, as 'T [degC]', 'Temperature (°C)' or 'T / K'"},
    {"stray quote", "T [degC],rate [umol/(g*s)],run\n231.4,0.417,u\"p\n", NULL, ARRANK_EPARSE, 4,
     3, "malformed quoting: a '\"' inside an unquoted field or text after a closing quote"},
    {"text after closing quote", "T [degC],rate [umol/(g*s)],run\n231.4,\"0.417\"x,up\n", NULL,
     ARRANK_EPARSE, 4, 2,
     "malformed quoting: a '\"' inside an unquoted field or text after a closing quote"},
    {"unclosed quote", "T [degC],rate [umol/(g*s)],run\n231.4,0.417,up\n244.9,0.862,\"up\n"
                       "258.2,1.694,up\n",
     NULL, ARRANK_EPARSE, 5, 3, "quoted field is not closed"},
    {"unclosed bracket", "T [degC,rate [umol/(g*s)]\n231.4,0.417\n", NULL, ARRANK_EPARSE, 3, 1,
     "unclosed '[' in header field 'T [degC'"},
    {"text after bracket", "T [degC] at bed,rate [umol/(g*s)]\n231.4,0.417\n", NULL,
     ARRANK_EPARSE, 3, 1,
     "text after ']' in header field 'T [degC] at bed'; write it as 'name [unit]'"},
    {"rate_sd without unit", "T [degC],rate [umol/(g*s)],rate_sd\n231.4,0.417,0.02\n", NULL,
     ARRANK_EUNIT, 3, 3, "column 'rate_sd' has no unit; write it as 'rate_sd [umol/(g*s)]'"},
    {"rate_sd unit of another dimension",
     "T [degC],rate [umol/(g*s)],rate_sd [1/s]\n231.4,0.417,0.02\n", NULL, ARRANK_EUNIT, 3, 3,
     "unit '1/s' of column 'rate_sd' is not convertible to the rate unit 'umol/(g*s)'"},
    {"negative rate_sd", "T [degC],rate [umol/(g*s)],rate_sd [umol/(g*s)]\n231.4,0.417,-0.02\n",
     NULL, ARRANK_EPARSE, 4, 3, "'-0.02' in column 'rate_sd' is negative"},
    {"time_on_stream without unit", "T [degC],rate [umol/(g*s)],time_on_stream\n231.4,0.417,1\n",
     NULL, ARRANK_EUNIT, 3, 3,
     "column 'time_on_stream' has no unit; write it as 'time_on_stream [h]' or "
     "'time_on_stream [min]'"},
    {"time_on_stream not a time", "T [degC],rate [umol/(g*s)],time_on_stream [m]\n231.4,0.417,1\n",
     NULL, ARRANK_EUNIT, 3, 3, "unit 'm' in column 'time_on_stream' is not convertible to 's'"},
    {"conversion over 1", "T [degC],rate [umol/(g*s)],conversion\n231.4,0.417,37\n", NULL,
     ARRANK_EPARSE, 4, 3, "conversion '37' is outside 0..1; a percentage needs 'conversion [%]'"},
    {"conversion unit not a fraction",
     "T [degC],rate [umol/(g*s)],conversion [K]\n231.4,0.417,0.3\n", NULL, ARRANK_EUNIT, 3, 3,
     "unit 'K' of column 'conversion' is not a fraction; use '%' or none"},
    {"non-numeric optional cell", "T [degC],rate [umol/(g*s)],conversion [%]\n231.4,0.417,n/a\n",
     NULL, ARRANK_EPARSE, 4, 3, "'n/a' is not a number in column 'conversion'"},
};

static void test_errors(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof errors / sizeof errors[0]; i++) {
        char text[1024];
        snprintf(text, sizeof text, "%s%s", H, errors[i].body);
        arrank_sample s;
        arrank_error err;
        arrank_status st = parse("runs/S03.csv", text, errors[i].report, &s, &err);
        int ok = st == errors[i].status && err.status == errors[i].status &&
                 err.line == errors[i].line && err.column == errors[i].column &&
                 strcmp(err.path, "runs/S03.csv") == 0 &&
                 strcmp(err.message, errors[i].message) == 0;
        if (!ok) {
            print_error("%s: got %d %s:%ld:%ld '%s'\n   want %d %ld:%ld '%s'\n", errors[i].what,
                        st, err.path, err.line, err.column, err.message, errors[i].status,
                        errors[i].line, errors[i].column, errors[i].message);
            fail();
        }
        /* A failed parse leaves nothing to free. */
        assert_null(s.points);
        assert_null(s.id);
    }
    /* NUL byte on line 4, and an empty buffer. */
    const char bin[] = "T [K],rate [1/s]\n504.55,0.417\r\n518.05,0.8\n5\0\0\x03\n";
    arrank_sample s;
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_sample_parse("b.csv", bin, sizeof bin - 1, units, NULL, &s, &err),
                     ARRANK_EPARSE);
    assert_int_equal(err.line, 4);
    assert_int_equal(err.column, 0);
    assert_string_equal(err.message,
                        "the file is not text (it has a NUL byte); a sample file is CSV");
    /* an empty file is refused at its line 1 (issue 18: every such error has a line) */
    assert_int_equal(parse("e.csv", "", NULL, &s, &err), ARRANK_EPARSE);
    assert_int_equal(err.line, 1);
    assert_string_equal(err.message, "the file is empty; a sample file needs a header such as "
                                     "'T [degC], rate [umol/(g*s)]' and data rows");
    assert_int_equal(parse("e.csv", "\n\r\n  \n", NULL, &s, &err), ARRANK_EPARSE);
    assert_int_equal(err.line, 1);
    /* An empty sample id. */
    assert_int_equal(parse("e.csv", "# mass = 3 mg\n# sample =\nT [K],rate [1/s]\n600,0.1\n", NULL,
                           &s, &err),
                     ARRANK_EPARSE);
    assert_int_equal(err.line, 2);
    assert_string_equal(err.message, "empty sample id; write '# sample = NAME' or leave the line "
                                     "out to use the file name");
    assert_int_equal(arrank_sample_parse(NULL, "x", 1, units, NULL, &s, &err), ARRANK_EINVAL);
}

/* ------------------------------------------------- samples with a problem */

static void test_problems(void **state)
{
    (void)state;
    const struct {
        const char *text;
        const char *problem;
        long line;
    } cases[] = {
        {"T [degC],rate [umol/(g*s)]\n231.4,0.417\n244.9,0.862\n",
         "only 2 data points; a fit with uncertainties needs at least 3", 1}, /* the header */
        {"T [degC],rate [umol/(g*s)]\n231.4,0.417\n",
         "only 1 data point; a fit with uncertainties needs at least 3", 1},
        {"T [degC],rate [umol/(g*s)]\n250,0.417\n250,0.431\n250,0.409\n250,0.422\n",
         "all 4 points are at one temperature (523.15 K); an activation energy needs at least "
         "two",
         1},
        {"# sample = Fe-02\n\nT [degC],rate [umol/(g*s)]\n231.4,0.417\n244.9,0.862\n258.2,0\n"
         "271.6,3.108\n",
         "rate 0 at line 6 is not positive; a logarithm needs a positive rate", 6},
        {"T [degC];rate [umol/(g*s)]\n231,4;0,417\n244,9;-0,003\n258,2;0,0\n",
         "rate -0,003 at line 3 is not positive; a logarithm needs a positive rate", 3},
        {"T [degC],rate [umol/(g*s)]\n231.4,-0.0\n",
         "rate -0.0 at line 2 is not positive; a logarithm needs a positive rate", 2},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        arrank_sample s;
        parse_ok("S21.csv", cases[i].text, NULL, &s);
        assert_non_null(s.problem);
        assert_string_equal(s.problem, cases[i].problem);
        assert_int_equal(s.problem_line, cases[i].line);
        assert_true(s.n_points > 0); /* the points stay for the report */
        arrank_sample_clear(&s);
    }
}

/* --------------------------------------------------------------- limits */

static void test_limits(void **state)
{
    (void)state;
    arrank_sample s;
    arrank_error err;
    size_t cap = (size_t)ARRANK_CAMPAIGN_MAX_LINE_BYTES + 4096;
    char *buf = malloc(cap);
    assert_non_null(buf);

    /* A line one byte over the limit, on line 3. */
    size_t n = (size_t)sprintf(buf, "T [K],rate [1/s],run\n600.1,0.1,a\n600.2,0.1,");
    size_t line_start = n - strlen("600.2,0.1,");
    size_t fill = (size_t)ARRANK_CAMPAIGN_MAX_LINE_BYTES + 1 - (n - line_start);
    memset(buf + n, 'x', fill);
    n += fill;
    buf[n++] = '\n';
    arrank_error_clear(&err);
    assert_int_equal(arrank_sample_parse("long.csv", buf, n, units, NULL, &s, &err), ARRANK_ELIMIT);
    assert_int_equal(err.line, 3);
    assert_string_equal(err.message, "line longer than 1048576 bytes");
    /* Exactly at the limit is accepted. */
    buf[n - 2] = '\n';
    memcpy(buf + n - 1, "600.3,0.2,b\n", 12);
    n += 11;
    arrank_error_clear(&err);
    assert_int_equal(arrank_sample_parse("long.csv", buf, n, units, NULL, &s, &err), ARRANK_OK);
    assert_int_equal(s.n_points, 3);
    arrank_sample_clear(&s);

    /* One column more than allowed in the header. */
    n = (size_t)sprintf(buf, "T [K],rate [1/s]");
    for (long k = 3; k <= ARRANK_CAMPAIGN_MAX_COLUMNS + 1; k++)
        n += (size_t)sprintf(buf + n, ",c%ld", k);
    n += (size_t)sprintf(buf + n, "\n600,0.1\n");
    arrank_error_clear(&err);
    assert_int_equal(arrank_sample_parse("wide.csv", buf, n, units, NULL, &s, &err),
                     ARRANK_ELIMIT);
    assert_int_equal(err.line, 1);
    assert_int_equal(err.column, ARRANK_CAMPAIGN_MAX_COLUMNS + 1);
    assert_string_equal(err.message, "the header has more than 1000 columns");
    free(buf);

    /* One data row more than allowed. */
    size_t rows = (size_t)ARRANK_CAMPAIGN_MAX_ROWS + 1;
    const char *row = "612.5,0.37\n";
    size_t rl = strlen(row);
    buf = malloc(64 + rows * rl);
    assert_non_null(buf);
    n = (size_t)sprintf(buf, "T [K],rate [1/s]\n");
    for (size_t r = 0; r < rows; r++, n += rl)
        memcpy(buf + n, row, rl);
    arrank_error_clear(&err);
    assert_int_equal(arrank_sample_parse("tall.csv", buf, n, units, NULL, &s, &err),
                     ARRANK_ELIMIT);
    assert_int_equal(err.line, ARRANK_CAMPAIGN_MAX_ROWS + 2);
    assert_string_equal(err.message, "more than 1000000 data rows");
    /* At the limit it loads. */
    arrank_error_clear(&err);
    assert_int_equal(arrank_sample_parse("tall.csv", buf, n - rl, units, NULL, &s, &err),
                     ARRANK_OK);
    assert_int_equal(s.n_points, ARRANK_CAMPAIGN_MAX_ROWS);
    arrank_sample_clear(&s);
    free(buf);
}

static void test_folder(void **state)
{
    (void)state;
    char *dir = temp_dir_make();
    file_write(dir, "b-Co.csv", "T [degC],rate [mol/(kg*h)]\n231.4,1.5012\n244.9,3.1032\n"
                                "258.2,6.0984\n");
    file_write(dir, "A-Ni.CSV", "# sample = Ni-05\nT [K],rate [\xc2\xb5mol/(g\xc2\xb7s)]\n"
                                "504.55,0.417\n518.05,0.862\n531.35,1.694\n");
    file_write(dir, "c-Fe.csv", "T [K],rate [umol/(g*s)]\n504.55,0.11\n518.05,0.23\n");
    file_write(dir, ".hidden.csv", "not even CSV\0");
    file_write(dir, "notes.txt", "bench log\n");
    char sub[4096];
    snprintf(sub, sizeof sub, "%s/older", dir);
    assert_int_equal(mkdir(sub, 0700), 0);
    file_write(sub, "S99.csv", "broken");

    arrank_campaign *c = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    if (arrank_campaign_load(dir, units, &c, &err) != ARRANK_OK) {
        print_error("%s:%ld: %s\n", err.path, err.line, err.message);
        fail();
    }
    assert_int_equal(c->n_samples, 3);
    assert_string_equal(c->samples[0].file, "A-Ni.CSV");
    assert_string_equal(c->samples[0].id, "Ni-05");
    assert_string_equal(c->samples[1].id, "b-Co");
    assert_string_equal(c->samples[2].id, "c-Fe");
    char want_path[4200];
    snprintf(want_path, sizeof want_path, "%s/b-Co.csv", dir);
    assert_string_equal(c->samples[1].path, want_path);
    /* The first file (by name) sets the report unit, in udunits spelling. */
    assert_string_equal(c->rate_unit, "umol/(g*s)");
    assert_string_equal(c->samples[1].rate_unit_file, "mol/(kg*h)");
    assert_int_equal(c->basis, ARRANK_BASIS_MASS);
    for (size_t k = 0; k < 3; k++)
        check_close(c->samples[1].points[k].rate, c->samples[0].points[k].rate, REL_TOL,
                    "mol/(kg*h) -> umol/(g*s)", UNITS_EXACT);
    assert_non_null(c->samples[2].problem); /* 2 points: kept with a problem */
    assert_null(c->samples[0].problem);
    assert_true(isnan(c->operating_temp_K));
    assert_true(isnan(c->confidence));
    const char *base = strrchr(dir, '/') + 1;
    assert_string_equal(c->name, base);
    assert_string_equal(c->title, base);
    assert_int_equal(c->n_notes, 0);
    arrank_campaign_free(c);

    /* campaign.ini: settings, sample sections, notes; a trailing slash on the folder. */
    file_write(dir, "campaign.ini",
               "; bench 2 screening\n"
               "[campaign]\n"
               "title = Ni, Co and Fe on alumina\n"
               "operating_temperature = 230 C\n"
               "rate_unit = mol/(kg*s)\n"
               "confidence = 0.9\n"
               "colour = teal\n"
               "\n"
               "[sample Ni-05]\n"
               "mass = 12.5 mg\n"
               "sample = Ni-06\n"
               "[sample Zn-01]\n"
               "mass = 3 mg\n"
               "[bench]\n"
               "id = 2\n");
    char slashed[4200];
    snprintf(slashed, sizeof slashed, "%s/", dir);
    arrank_error_clear(&err);
    if (arrank_campaign_load(slashed, units, &c, &err) != ARRANK_OK) {
        print_error("%s:%ld: %s\n", err.path, err.line, err.message);
        fail();
    }
    assert_string_equal(c->name, base);
    assert_string_equal(c->title, "Ni, Co and Fe on alumina");
    check_close(c->operating_temp_K, 503.15, REL_TOL, "230 C", UNITS_EXACT);
    check_close(c->confidence, 0.9, REL_TOL, "confidence", UNITS_EXACT);
    assert_string_equal(c->rate_unit, "mol/(kg*s)");
    check_close(c->samples[0].points[0].rate, 4.17e-4, REL_TOL,
                "umol/(g*s) -> mol/(kg*s)", UNITS_EXACT);
    check_close(c->samples[1].points[0].rate, 4.17e-4, REL_TOL,
                "mol/(kg*h) -> mol/(kg*s)", UNITS_EXACT);
    assert_string_equal(arrank_sample_meta(&c->samples[0], "mass"), "12.5 mg");
    assert_string_equal(c->samples[0].id, "Ni-05");
    const arrank_meta *m = &c->samples[0].meta[c->samples[0].n_meta - 1];
    assert_int_equal(m->line, 10);
    assert_non_null(strstr(m->source, "campaign.ini"));
    assert_int_equal(c->n_notes, 4);
    assert_string_equal(c->notes[0], "campaign.ini:7: key 'colour' in [campaign] ignored");
    assert_string_equal(c->notes[1], "campaign.ini:11: key 'sample' in [sample Ni-05] ignored: "
                                     "a section cannot rename its sample");
    assert_string_equal(c->notes[2],
                        "campaign.ini:15: key 'id' in unknown section [bench] ignored");
    assert_string_equal(c->notes[3], "campaign.ini:13: section [sample Zn-01] matches no sample");
    arrank_campaign_free(c);

    /* Errors in campaign.ini carry its line. */
    const struct {
        const char *ini;
        arrank_status status;
        long line;
        const char *message;
    } bad_ini[] = {
        {"[campaign]\noperating_temperature = 250\n", ARRANK_EPARSE, 2,
         "temperature '250' has no unit; write it as 250C (Celsius), "
         "250K (kelvin) or 250F (Fahrenheit)"},
        {"[campaign]\n\noperating_temperature = 250 Q\n", ARRANK_EUNIT, 3, "unknown unit 'Q'"},
        {"[campaign]\ntitle = x\nrate_unit = mol/s\n", ARRANK_EUNIT, 3,
         "'mol/s' is not a rate per mass, area or site (such as umol/(g*s), umol/(m2*s) or 1/s) "
         "in 'rate_unit'"},
        {"[campaign]\nrate_unit = 1/s\n", ARRANK_EUNIT, 0, NULL}, /* the files are per mass */
        {"[campaign]\nconfidence = 1.5\n", ARRANK_EPARSE, 2,
         "confidence '1.5' is not a number between 0 and 1 (e.g. 0.95)"},
        {"[campaign]\ntitle = x\nthis line is not ini\n", ARRANK_EPARSE, 3,
         "malformed line; expected '[section]', 'key = value' or a comment"},
        {"[campaign\n", ARRANK_EPARSE, 1,
         "malformed line; expected '[section]', 'key = value' or a comment"},
    };
    for (size_t i = 0; i < sizeof bad_ini / sizeof bad_ini[0]; i++) {
        file_write(dir, "campaign.ini", bad_ini[i].ini);
        arrank_error_clear(&err);
        c = (arrank_campaign *)&err; /* must be reset to NULL */
        assert_int_equal(arrank_campaign_load(dir, units, &c, &err), bad_ini[i].status);
        assert_null(c);
        if (!bad_ini[i].message) {
            assert_string_equal(err.message, "rate unit '\xc2\xb5mol/(g\xc2\xb7s)' of A-Ni.CSV "
                                             "is not convertible to the campaign's '1/s'");
            continue;
        }
        assert_int_equal(err.line, bad_ini[i].line);
        assert_non_null(strstr(err.path, "/campaign.ini"));
        assert_string_equal(err.message, bad_ini[i].message);
    }
    /* A line longer than inih's line buffer is refused, not cut. */
    char longini[600];
    int k = snprintf(longini, sizeof longini, "[campaign]\ntitle = ");
    memset(longini + k, 'z', 500);
    strcpy(longini + k + 500, "\n");
    file_write(dir, "campaign.ini", longini);
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load(dir, units, &c, &err), ARRANK_ELIMIT);
    assert_int_equal(err.line, 2);
    snprintf(sub, sizeof sub, "%s/campaign.ini", dir);
    unlink(sub);

    /* Two files with one sample id. */
    file_write(dir, "d-Ni.csv", "# mass = 2 mg\n# sample = Ni-05\nT [K],rate [umol/(g*s)]\n"
                                "504.55,0.417\n518.05,0.862\n531.35,1.694\n");
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load(dir, units, &c, &err), ARRANK_EPARSE);
    assert_int_equal(err.line, 2);
    assert_non_null(strstr(err.path, "/d-Ni.csv"));
    assert_string_equal(err.message, "sample id 'Ni-05' is also the id of A-Ni.CSV");
    snprintf(sub, sizeof sub, "%s/d-Ni.csv", dir);
    unlink(sub);

    /* An unreadable file (not testable as root, who reads everything). */
    snprintf(sub, sizeof sub, "%s/c-Fe.csv", dir);
    assert_int_equal(chmod(sub, 0), 0);
    if (geteuid() != 0) {
        arrank_error_clear(&err);
        assert_int_equal(arrank_campaign_load(dir, units, &c, &err), ARRANK_EIO);
        assert_string_equal(err.path, sub);
        assert_string_equal(err.message, "cannot open the file: permission denied");
    }
    chmod(sub, 0600);

    /* A folder that does not exist, and one without CSV files. */
    snprintf(sub, sizeof sub, "%s/missing", dir);
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load(sub, units, &c, &err), ARRANK_EIO);
    assert_string_equal(err.path, sub);
    assert_string_equal(err.message, "cannot read the folder: no such file or directory");
    snprintf(sub, sizeof sub, "%s/older", dir);
    unlink(strcat(strcpy(want_path, sub), "/S99.csv"));
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load(sub, units, &c, &err), ARRANK_EDATA);
    assert_string_equal(err.message, "no sample files (*.csv) in the folder");
    assert_int_equal(arrank_campaign_load(NULL, units, &c, &err), ARRANK_EINVAL);
    arrank_campaign_free(NULL);
    temp_dir_remove(dir);
}

/* ---------------------------------------------------- the bad corpus */

static const struct {
    const char *name;
    arrank_status status; /* ARRANK_OK: loads, with a sample problem */
    long line, column;
} corpus[] = {
    {"below-absolute-zero", ARRANK_EPARSE, 5, 1},
    {"binary-file", ARRANK_EPARSE, 1, 0},
    {"conversion-not-fraction", ARRANK_EPARSE, 2, 3},
    {"decimal-comma-with-comma", ARRANK_EPARSE, 3, 3},
    {"duplicate-column", ARRANK_EPARSE, 1, 3},
    {"duplicate-sample-id", ARRANK_EPARSE, 2, 0},
    {"empty-cell", ARRANK_EPARSE, 5, 2},
    {"empty-file", ARRANK_EPARSE, 1, 0},
    {"header-only", ARRANK_EPARSE, 3, 0},
    {"id-not-utf8", ARRANK_EPARSE, 1, 0},
    {"inf", ARRANK_EPARSE, 6, 1},
    {"ini-bad-confidence", ARRANK_EPARSE, 3, 0},
    {"ini-bare-temperature", ARRANK_EPARSE, 4, 0},
    {"ini-key-outside-section", ARRANK_EPARSE, 2, 0},
    {"ini-syntax-error", ARRANK_EPARSE, 3, 0},
    {"metadata-only", ARRANK_EPARSE, 0, 0},
    {"missing-rate-column", ARRANK_EPARSE, 3, 0},
    {"missing-temp-unit", ARRANK_EUNIT, 3, 1},
    {"missing-temperature-column", ARRANK_EPARSE, 1, 0},
    {"mixed-dimension", ARRANK_EUNIT, 3, 2},
    {"nan", ARRANK_EPARSE, 5, 2},
    {"offset-ini-rate-unit", ARRANK_EUNIT, 2, 0},
    {"offset-rate-unit", ARRANK_EUNIT, 3, 2},
    {"negative-rate", ARRANK_OK, 5, 0},
    {"no-csv", ARRANK_EDATA, 0, 0},
    {"non-numeric", ARRANK_EPARSE, 5, 1},
    {"not-a-rate-unit", ARRANK_EUNIT, 1, 2},
    {"overflow", ARRANK_EPARSE, 3, 2},
    {"ragged-row", ARRANK_EPARSE, 5, 3},
    {"rate-sd-without-unit", ARRANK_EUNIT, 1, 3},
    {"stray-quote", ARRANK_EPARSE, 3, 3},
    {"time-without-unit", ARRANK_EUNIT, 1, 3},
    {"unclosed-quote", ARRANK_EPARSE, 3, 3},
    {"unknown-rate-unit", ARRANK_EUNIT, 1, 2},
    {"unknown-unit", ARRANK_EUNIT, 3, 1},
    {"zero-kelvin", ARRANK_EPARSE, 3, 1},
    {"zero-rate", ARRANK_OK, 7, 0},
};

/* Line n (1-based) of a small file, without its line end. */
static int read_line(const char *path, int n, char *out, size_t size)
{
    FILE *f = fopen(path, "r");
    if (!f)
        return -1;
    int ok = -1;
    for (int i = 1; fgets(out, (int)size, f); i++) {
        if (i == n) {
            out[strcspn(out, "\n")] = '\0';
            ok = 0;
            break;
        }
    }
    fclose(f);
    return ok;
}

static void test_bad_corpus(void **state)
{
    (void)state;
    size_t n_cases = sizeof corpus / sizeof corpus[0];
    /* Every folder in tests/bad has a row here, so a new case cannot go unchecked. */
    DIR *d = opendir("tests/bad");
    assert_non_null(d);
    size_t n_dirs = 0;
    struct dirent *e;
    while ((e = readdir(d)) != NULL) {
        if (e->d_name[0] == '.')
            continue;
        int known = 0;
        for (size_t i = 0; i < n_cases; i++)
            known |= strcmp(corpus[i].name, e->d_name) == 0;
        if (!known) {
            print_error("tests/bad/%s has no row in the corpus table\n", e->d_name);
            fail();
        }
        n_dirs++;
    }
    closedir(d);
    assert_int_equal(n_dirs, n_cases);

    for (size_t i = 0; i < n_cases; i++) {
        char dir[256], expect_path[300], status_line[64], want[2048], got[2048];
        snprintf(dir, sizeof dir, "tests/bad/%s", corpus[i].name);
        /* arrank_campaign_load reads strictly: expect-strict (the CLI's --strict) */
        snprintf(expect_path, sizeof expect_path, "%s/expect-strict", dir);
        assert_int_equal(read_line(expect_path, 1, status_line, sizeof status_line), 0);
        assert_int_equal(read_line(expect_path, 2, want, sizeof want), 0);
        assert_string_equal(status_line, "1"); /* all are data errors (exit status 1) */
        arrank_campaign *c = NULL;
        arrank_error err;
        arrank_error_clear(&err);
        arrank_status st = arrank_campaign_load(dir, units, &c, &err);
        if (corpus[i].status == ARRANK_OK) {
            /* Loads; the only sample cannot be fitted, and the CLI prints path:line: problem. */
            assert_int_equal(st, ARRANK_OK);
            assert_int_equal(c->n_samples, 1);
            const arrank_sample *s = &c->samples[0];
            assert_non_null(s->problem);
            assert_int_equal(s->problem_line, corpus[i].line);
            snprintf(got, sizeof got, "arrank: %s:%ld: %s", s->path, s->problem_line,
                     s->problem);
            arrank_campaign_free(c);
        } else {
            assert_null(c);
            if (st != corpus[i].status || err.line != corpus[i].line ||
                err.column != corpus[i].column) {
                print_error("%s: got %d %ld:%ld '%s', want %d %ld:%ld\n", corpus[i].name, st,
                            err.line, err.column, err.message, corpus[i].status, corpus[i].line,
                            corpus[i].column);
                fail();
            }
            char msg[1900];
            arrank_error_format(&err, msg, sizeof msg);
            snprintf(got, sizeof got, "arrank: %s", msg);
        }
        if (strcmp(got, want) != 0) {
            print_error("%s:\n   got  %s\n   want %s\n", corpus[i].name, got, want);
            fail();
        }
    }
}

/* ----------------------------------------------------------- scale */

/* 10,000 files of 12 rows load completely and in order.  How fast is measured
   by `make bench`, never here: timings in unit tests are noise. */
static void test_large_campaign(void **state)
{
    (void)state;
    char *dir = temp_dir_make();
    const size_t n_files = 10000;
    char text[1024];
    for (size_t f = 0; f < n_files; f++) {
        size_t n = (size_t)sprintf(text, "# sample = P%05zu\n# mass = %zu.3 mg\n"
                                         "T [degC],rate [umol/(g*s)],run\n",
                                   f, 20 + f % 37);
        for (int r = 0; r < 12; r++)
            n += (size_t)sprintf(text + n, "%.1f,%.4f,%s\n", 220.0 + 7.3 * r,
                                 0.113 * exp(0.061 * r) * (1.0 + (double)(f % 13) / 50.0),
                                 r < 6 ? "up" : "down");
        char name[32];
        snprintf(name, sizeof name, "P%05zu.csv", f);
        file_write(dir, name, text);
    }
    arrank_campaign *c = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    arrank_status st = arrank_campaign_load(dir, units, &c, &err);
    assert_int_equal(st, ARRANK_OK);
    assert_int_equal(c->n_samples, n_files);
    assert_int_equal(c->samples[n_files - 1].n_points, 12);
    assert_string_equal(c->samples[4321].id, "P04321");
    arrank_campaign_free(c);
    temp_dir_remove(dir);
}

/* ------------------------------------------------ rates from conversion */

/*
 * A file without a rate column: rates from conversion and feed metadata.
 * Hand values: at 0 degC and 101.325 kPa an ideal gas occupies
 * R T / P = 22.413 969 54 L/mol (CODATA 2018 molar volume, from memory; it
 * follows from the exact R), so 50 mL/min is 3.7180e-5 mol/s.
 */
/* Files around 64 KiB (the first read of an earlier reader) and far past it,
   empty, and of one line: read from a folder (campaign.c reads to the end,
   past the size fstat gave), each gives the sample arrank_sample_parse gives
   from the same bytes in memory. */
static void test_read_sizes(void **state)
{
    (void)state;
    static const size_t sizes[] = {0, 40, 65535, 65536, 65537, 131072, 200001, 1000003};
    for (size_t k = 0; k < sizeof sizes / sizeof sizes[0]; k++) {
        const size_t want = sizes[k];
        char *text = malloc(want + 64);
        assert_non_null(text);
        size_t n = 0;
        if (want > 0) {
            n = (size_t)snprintf(text, want + 64, "T [K],rate [umol/(g*s)]\n");
            /* rows of 24 bytes; the last one padded with blanks to the size wanted */
            for (unsigned row = 0; n + 24 <= want; row++)
                n += (size_t)snprintf(text + n, want + 64 - n, "%9.3f,%12.6g\n",
                                      480.0 + 1e-3 * (double)(row % 90001),
                                      1.0 + 1e-6 * (double)row);
            while (n < want)
                text[n++] = ' ';
        }
        text[n] = '\0';
        assert_int_equal(n, want);
        char *dir = temp_dir_make();
        file_write(dir, "S-01.csv", text);
        arrank_campaign *c = NULL;
        arrank_error e1, e2;
        arrank_error_clear(&e1);
        arrank_error_clear(&e2);
        arrank_status st1 = arrank_campaign_load(dir, units, &c, &e1);
        arrank_sample s;
        arrank_status st2 = arrank_sample_parse("S-01.csv", text, n, units, NULL, &s, &e2);
        assert_int_equal(st1, st2);
        if (st1 == ARRANK_OK) {
            assert_int_equal(c->samples[0].n_points, s.n_points);
            assert_true(s.n_points > 0);
            for (size_t i = 0; i < s.n_points; i++) { /* field by field: the struct has padding */
                const arrank_point *a = &c->samples[0].points[i], *b = &s.points[i];
                assert_memory_equal(&a->temp_K, &b->temp_K, sizeof a->temp_K);
                assert_memory_equal(&a->rate, &b->rate, sizeof a->rate);
                assert_memory_equal(&a->rate_sd, &b->rate_sd, sizeof a->rate_sd);
                assert_int_equal(a->line, b->line);
                assert_int_equal(a->run, b->run);
            }
            arrank_sample_clear(&s);
            arrank_campaign_free(c);
        } else {
            assert_null(c);
            assert_string_equal(strrchr(e1.message, ':') ? strrchr(e1.message, ':')
                                                         : e1.message,
                                strrchr(e2.message, ':') ? strrchr(e2.message, ':')
                                                         : e2.message);
        }
        temp_dir_remove(dir);
        free(text);
    }
}

/* The default reader (arrank_campaign_load_with, opt NULL): a file that
   cannot be read becomes a skipped sample with its error, a bad cell leaves
   its point out, files of one id are one sample, a copy is not used; the
   strict load stops at the first bad file as before (issue 13). */
static void test_lenient_folder(void **state)
{
    (void)state;
    char *dir = temp_dir_make();
    const char *good = "# sample = MT-K1\nT [degC],rate [umol/(g*s)]\n220,0.41\n240,0.86\n"
                       "260,1.69\n";
    file_write(dir, "MT-K1.csv", good);
    file_write(dir, "MT-K1 - Copy.csv", good);
    file_write(dir, "MT-K2.csv", "T [degC],rate [umol/(g*sx)]\n220,0.41\n240,0.86\n260,1.7\n");
    file_write(dir, "MT-K3.csv", "# particle_diameter = 0,25 mm\n# sample = K3,5\n"
                                 "Temp (degC);rate (umol/(gcat*sec));sd [%]\n220,0;0,31;5\n"
                                 "230,0;n.d.;5\n240,0;0,72;4\n250,0;< 0,01;4\n260,0;1,43;4\n;;\n");
    file_write(dir, "MT-K4a.csv", "# sample = MT-K4\nT / K,r / (umol/(g*s))\n500,0.5\n520,1.1\n");
    file_write(dir, "MT-K4b.csv", "# sample = MT-K4\nT / K,r / (umol/(g*s)),run\n510,0.8,b\n"
                                  "530,1.6,b\n");
    arrank_campaign *c = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load_with(dir, units, NULL, NULL, NULL, &c, &err), ARRANK_OK);
    assert_int_equal(c->n_files, 6);
    assert_int_equal(c->n_samples, 4); /* K1, K2 (skipped), K3, K4 (two files) */
    assert_int_equal(c->n_unused, 1);
    assert_non_null(strstr(c->unused[0], "MT-K1 - Copy.csv: byte-identical to MT-K1.csv"));
    const arrank_sample *k2 = &c->samples[1], *k3 = &c->samples[2], *k4 = &c->samples[3];
    assert_string_equal(k2->file, "MT-K2.csv");
    assert_true(k2->skipped);
    assert_int_equal(k2->n_points, 0);
    assert_int_equal(k2->problem_line, 1);
    assert_int_equal(k2->problem_column, 2);
    assert_string_equal(k2->problem, "unknown unit 'umol/(g*sx)' in column 'rate'");
    /* K3: two points left out with their reasons, the ';;' row skipped, sd 5 % of the rate */
    assert_false(k3->skipped);
    /* metadata numbers follow the file's decimal comma; the id is text, kept as written */
    assert_string_equal(arrank_sample_meta(k3, "particle_diameter"), "0.25 mm");
    assert_string_equal(k3->id, "K3,5");
    assert_null(k3->problem);
    assert_int_equal(k3->n_points, 5);
    assert_int_equal(k3->n_omitted, 2);
    assert_string_equal(k3->points[1].omitted, "no value ('n.d.') in column 'rate'");
    assert_int_equal(k3->points[1].omitted_column, 2);
    assert_string_equal(k3->points[3].omitted, "below detection limit: < 0,01 in column 'rate'");
    assert_null(k3->points[0].omitted);
    assert_true(fabs(k3->points[0].rate_sd - 0.05 * k3->points[0].rate) <= 1e-15);
    assert_true(fabs(k3->points[0].rate - 0.31) <= 1e-15); /* gcat = g, sec = s */
    /* K4: one sample, two runs (a file name, then that file's run label) */
    assert_string_equal(k4->id, "MT-K4");
    assert_int_equal(k4->n_points, 4);
    assert_int_equal(k4->n_runs, 2);
    assert_string_equal(k4->runs[k4->points[0].run], "MT-K4a.csv");
    assert_string_equal(k4->runs[k4->points[2].run], "b");
    assert_null(k4->problem);
    arrank_campaign_free(c);

    /* strict: the copy's id is a repeated id, and with it gone the bad unit stops the load */
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load(dir, units, &c, &err), ARRANK_EUNIT);
    assert_null(c);
    assert_non_null(strstr(err.path, "MT-K2.csv"));
    arrank_load_options no_merge = {0, 1};
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load_with(dir, units, &no_merge, NULL, NULL, &c, &err),
                     ARRANK_EPARSE);
    assert_non_null(strstr(err.message, "sample id 'MT-K1' is also the id of"));
    temp_dir_remove(dir);
}

static void test_derived_rates(void **state)
{
    (void)state;
    char *dir = temp_dir_make();
    file_write(dir, "D1.csv", "# feed_flow = 50 mL/min\n# feed_fraction = 5 %\n# mass = 40 mg\n"
                              "T [degC],conversion [%]\n220,1.2\n250,3.6\n280,9.4\n");
    /* integral form; feed data from campaign.ini */
    file_write(dir, "D2.csv", "# rate_form = integral\nT [K],conversion\n500,0.02\n520,0.05\n"
                              "540,0.11\n");
    file_write(dir, "campaign.ini", "[campaign]\nrate_unit = umol/(g*s)\n"
                                    "[sample D2]\nfeed_flow = 2.5 umol/s\nfeed_fraction = 0.1\n"
                                    "catalyst_mass = 25 mg\n");
    arrank_campaign *c = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load(dir, units, &c, &err), ARRANK_OK);
    const double vm_L_mol = 22.41396954;
    const double F = 50e-3 / 60.0 / vm_L_mol; /* mol/s */
    /* D1: r = F y X / W in mol/(kg s), reported in umol/(g*s) = 1e-3 mol/(kg s) */
    const double want1 = F * 0.05 * 0.036 / 40e-6 / 1e-3;
    assert_true(c->samples[0].rates_derived);
    assert_true(fabs(c->samples[0].points[1].rate - want1) < 1e-8 * want1);
    /* D2: r = F y ln(1/(1 - X)) / W */
    const double want2 = 2.5e-6 * 0.1 * log(1.0 / (1.0 - 0.11)) / 25e-6 / 1e-3;
    assert_true(fabs(c->samples[1].points[2].rate - want2) < 1e-12 * want2);
    assert_null(c->samples[1].problem);
    arrank_campaign_free(c);

    /* without the feed data: a clear error naming what is missing */
    file_write(dir, "campaign.ini", "[campaign]\nrate_unit = umol/(g*s)\n");
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load(dir, units, &c, &err), ARRANK_EPARSE);
    assert_non_null(strstr(err.path, "D2.csv"));
    assert_non_null(strstr(err.message, "metadata 'feed_flow' is missing"));
    assert_true(err.line > 0); /* the header's line (issue 18: every metadata error has one) */
    assert_null(c);
    temp_dir_remove(dir);
}

/*
 * A repeated sample id, in and out of file-name order: the check sorts the
 * ids (campaign.c) and must report the same file, line and message in
 * either order.
 */
static void test_duplicate_ids(void **state)
{
    (void)state;
    static const struct {
        const char *ids[3]; /* of a.csv, b.csv, c.csv; NULL: no such file */
        const char *bad;    /* file reported, NULL: no error */
        const char *message;
    } cases[] = {
        {{"Cu-1", "Cu-1", NULL}, "b.csv", "sample id 'Cu-1' is also the id of a.csv"},
        {{"Cu-1", "Cu-2", "Cu-2"}, "c.csv", "sample id 'Cu-2' is also the id of b.csv"},
        {{"Zn-9", "Cu-1", "Zn-9"}, "c.csv", "sample id 'Zn-9' is also the id of a.csv"},
        {{"Zn-9", "Zn-9", "Cu-1"}, "b.csv", "sample id 'Zn-9' is also the id of a.csv"},
        {{"Cu-1", "Cu-2", "Cu-3"}, NULL, NULL},
        {{"Cu-3", "Cu-2", "Cu-1"}, NULL, NULL},
    };
    static const char *const files[] = {"a.csv", "b.csv", "c.csv"};
    for (size_t k = 0; k < sizeof cases / sizeof *cases; k++) {
        char *dir = temp_dir_make();
        for (size_t f = 0; f < 3 && cases[k].ids[f]; f++) {
            char text[256];
            snprintf(text, sizeof text, "# mass = 5 mg\n# sample = %s\nT [K],rate [umol/(g*s)]\n"
                                        "504.55,0.417\n518.05,0.862\n531.35,1.694\n",
                     cases[k].ids[f]);
            file_write(dir, files[f], text);
        }
        arrank_campaign *c = NULL;
        arrank_error err;
        arrank_error_clear(&err);
        arrank_status st = arrank_campaign_load(dir, units, &c, &err);
        if (!cases[k].bad) {
            assert_int_equal(st, ARRANK_OK);
            arrank_campaign_free(c);
        } else {
            assert_int_equal(st, ARRANK_EPARSE);
            assert_null(c);
            const char *slash = strrchr(err.path, '/');
            assert_non_null(slash);
            assert_string_equal(slash + 1, cases[k].bad);
            assert_int_equal(err.line, 2);
            assert_string_equal(err.message, cases[k].message);
        }
        temp_dir_remove(dir);
    }
}

/* A unit database still being read when the load starts (units.h:
   arrank_units_create_background): the same campaign, or its failure. */
static void test_background_units(void **state)
{
    (void)state;
    char *dir = temp_dir_make();
    file_write(dir, "a.csv", "# sample = Cu-1\nT [degC],rate [umol/(g*s)]\n"
                             "231.4,0.417\n244.9,0.862\n258.2,1.694\n");
    arrank_error err;
    arrank_error_clear(&err);
    arrank_units *bg = arrank_units_create_background(&err);
    assert_non_null(bg);
    arrank_campaign *c = NULL;
    assert_int_equal(arrank_campaign_load(dir, bg, &c, &err), ARRANK_OK);
    assert_int_equal(c->n_samples, 1);
    check_close(c->samples[0].points[0].temp_K, 504.55, REL_TOL, "231.4 degC in K", UNITS_EXACT);
    arrank_campaign_free(c);
    arrank_units_free(bg);

    char *saved = env_set("UDUNITS2_XML_PATH", "/nonexistent/udunits2.xml");
    bg = arrank_units_create_background(&err);
    assert_non_null(bg);
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load(dir, bg, &c, &err), ARRANK_EIO);
    assert_null(c);
    assert_string_equal(err.message, "cannot load the udunits2 unit database from "
                                     "'/nonexistent/udunits2.xml'");
    arrank_units_free(bg);
    env_restore("UDUNITS2_XML_PATH", saved);
    temp_dir_remove(dir);
}

/* Samples come in strcmp order of their file names: names that share their
   first 8 bytes or more, names shorter than 8 bytes, bytes above 0x7f. */
static int compare_strings(const void *a, const void *b)
{
    return strcmp(*(char *const *)a, *(char *const *)b);
}

static void test_name_order(void **state)
{
    (void)state;
    const char *names[] = {"Ni-2024-03-b.csv", "Ni-2024-03-a.csv", "Ni.csv", "N.csv",
                           "Ni-2024-03.csv", "\xc3\xa9t\xc3\xa9.csv", "Z.csv", "a.csv",
                           "Ni-2024-03-a.CSV.csv", "Ni-2024-0.csv", "Ni-2024-03-a-.csv",
                           "0.csv", "Ni-2024-\x7f.csv", "Ni-2024-\x80.csv", "N.csv.csv",
                           "N.csv-.csv"};
    const size_t n = sizeof names / sizeof *names;
    char *dir = temp_dir_make();
    for (size_t i = 0; i < n; i++) {
        char text[200];
        snprintf(text, sizeof text, "# sample = S%02zu\nT [K],rate [umol/(g*s)]\n"
                                    "504.55,0.417\n518.05,0.862\n531.35,1.694\n", i);
        file_write(dir, names[i], text);
    }
    const char *want[sizeof names / sizeof *names];
    memcpy(want, names, sizeof names);
    qsort(want, n, sizeof *want, compare_strings);
    arrank_campaign *c = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load(dir, units, &c, &err), ARRANK_OK);
    assert_int_equal(c->n_samples, n);
    for (size_t i = 0; i < n; i++)
        assert_string_equal(c->samples[i].file, want[i]);
    arrank_campaign_free(c);
    temp_dir_remove(dir);
}

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_dialects),
        cmocka_unit_test(test_quoting_and_lines),
        cmocka_unit_test(test_metadata),
        cmocka_unit_test(test_runs),
        cmocka_unit_test(test_optional_columns),
        cmocka_unit_test(test_same_data_other_units),
        cmocka_unit_test(test_errors),
        cmocka_unit_test(test_problems),
        cmocka_unit_test(test_limits),
        cmocka_unit_test(test_folder),
        cmocka_unit_test(test_bad_corpus),
        cmocka_unit_test(test_large_campaign),
        cmocka_unit_test(test_read_sizes),
        cmocka_unit_test(test_derived_rates),
        cmocka_unit_test(test_lenient_folder),
        cmocka_unit_test(test_duplicate_ids),
        cmocka_unit_test(test_background_units),
        cmocka_unit_test(test_name_order),
    };
    return cmocka_run_group_tests(tests, units_setup, units_teardown);
}
