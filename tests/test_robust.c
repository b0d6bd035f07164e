/*
 * test_robust.c - robustness of the readers: every input of the fuzzers'
 * committed corpora (tests/fuzz/corpus/<harness>/: seeds and each input a
 * fuzzer once broke) replayed through the same target code the fuzzers run
 * (tests/fuzz/fuzz_targets.h), resource limits met in memory, and
 * campaign.ini read from memory.  Under `make test-asan` the replay also
 * checks for leaks and undefined behaviour.
 *
 * Run from the top of the source tree (tests/run.sh does); ARRANK_FUZZ_CORPUS
 * may point elsewhere.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <dirent.h>
#include <fenv.h>
#include <locale.h>
#include <gsl/gsl_errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/analysis.h"
#include "arrank/campaign.h"
#include "arrank/diagnosis_out.h"
#include "arrank/output.h"
#include "arrank/units.h"
#include "fuzz/fuzz_targets.h"
#include "../src/lib/number.h"
#include "helpers.h"

typedef const char *(*target_fn)(arrank_units *, const uint8_t *, size_t);

static int compare_names(const void *a, const void *b)
{
    return strcmp(*(char *const *)a, *(char *const *)b);
}

/* Replay every file of one harness's corpus; returns how many were replayed. */
static size_t replay(const char *harness, target_fn target)
{
    const char *root = getenv("ARRANK_FUZZ_CORPUS");
    char dir[512];
    snprintf(dir, sizeof dir, "%s/%s", root ? root : "tests/fuzz/corpus", harness);
    DIR *d = opendir(dir);
    assert_non_null(d);
    char **names = NULL;
    size_t n = 0;
    struct dirent *e;
    while ((e = readdir(d)) != NULL) {
        if (e->d_name[0] == '.')
            continue;
        names = realloc(names, (n + 1) * sizeof *names);
        assert_non_null(names);
        names[n] = strdup(e->d_name);
        assert_non_null(names[n]);
        n++;
    }
    closedir(d);
    qsort(names, n, sizeof *names, compare_names);
    for (size_t i = 0; i < n; i++) {
        char path[1024];
        snprintf(path, sizeof path, "%s/%s", dir, names[i]);
        size_t len;
        unsigned char *data = (unsigned char *)file_slurp(path, &len);
        const char *why = target(units, data, len);
        if (why)
            fail_msg("%s: %s", path, why);
        free(data);
        free(names[i]);
    }
    free(names);
    return n;
}

static void corpus_sample(void **state)
{
    (void)state;
    assert_true(replay("fuzz_sample", fuzz_sample_one) >= 10);
}

static void corpus_header(void **state)
{
    (void)state;
    assert_true(replay("fuzz_header", fuzz_header_one) >= 10);
}

static void corpus_ini(void **state)
{
    (void)state;
    assert_true(replay("fuzz_ini", fuzz_ini_one) >= 3);
}

static void corpus_temperature(void **state)
{
    (void)state;
    assert_true(replay("fuzz_temperature", fuzz_temperature_one) >= 10);
}

/* ---- inputs a fuzzer broke, with the answer now expected ---------------- */

typedef struct {
    const char *id;
    const char *text;
    arrank_status status;
    const char *message; /* expected substring of the message */
} unit_case;

static void fixed_units(void **state)
{
    (void)state;
    /* udunits leaks the look-ahead name when an action rejects the unit
       ("m 0m": a zero factor); the answer must still be a clean refusal. */
    static const unit_case cases[] = {
        {"zero factor, name look-ahead", "m 0m", ARRANK_EUNIT, "unknown unit 'm 0m'"},
        {"micro sign, CR, zero factor", "\xc2\xb5\r0m\xffo", ARRANK_EUNIT, "unknown unit"},
        {"degree sign, zero factor", "\xc2\xb0" "2 0\xc2\xb0" "2", ARRANK_EUNIT,
         "unknown unit"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        arrank_error err;
        arrank_error_clear(&err);
        arrank_basis basis;
        arrank_conversion c;
        arrank_status st = arrank_units_rate(units, cases[i].text, &basis, &c, &err);
        if (st != cases[i].status || !strstr(err.message, cases[i].message))
            fail_msg("%s: got %d '%s', want %d '%s'", cases[i].id, (int)st, err.message,
                     (int)cases[i].status, cases[i].message);
    }
}

/* A rate that fits a double as written but not once converted to the report unit. */
static void fixed_conversion_overflow(void **state)
{
    (void)state;
    static const char text[] = "T [K],rate [mol/(kg*s)]\n500,1\n510,1e306\n520,3\n";
    arrank_sample s;
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_sample_parse("x.csv", text, sizeof text - 1, units, "mol/(kg*s)", &s,
                                         &err),
                     ARRANK_OK);
    arrank_sample_clear(&s);
    /* 1e306 mol/(kg*s) = 1e309 umol/(g*s) (factor 1000, exact unit definitions) */
    assert_int_equal(arrank_sample_parse("x.csv", text, sizeof text - 1, units, "umol/(g*s)", &s,
                                         &err),
                     ARRANK_EPARSE);
    assert_int_equal(err.line, 3);
    assert_int_equal(err.column, 2);
    assert_string_equal(err.message, "'1e306' is out of range in column 'rate' once converted");
}

/* ---- resource limits, in memory ------------------------------------------ */

typedef struct {
    const char *id;
    char *text;
    size_t len;
    arrank_status status;
    long line, column;
    const char *message;
} limit_case;

static char *repeat(const char *head, const char *unit, size_t times, const char *tail,
                    size_t *len)
{
    size_t nh = strlen(head), nu = strlen(unit), nt = strlen(tail);
    char *s = malloc(nh + nu * times + nt + 1);
    assert_non_null(s);
    memcpy(s, head, nh);
    for (size_t i = 0; i < times; i++)
        memcpy(s + nh + i * nu, unit, nu);
    memcpy(s + nh + nu * times, tail, nt + 1);
    *len = nh + nu * times + nt;
    return s;
}

static void limits_in_memory(void **state)
{
    (void)state;
    limit_case cases[4];
    size_t n = 0;
    /* A 2 MiB line (limit 1 MiB), a million data columns, 1001 header columns. */
    cases[n].id = "huge data line";
    cases[n].text = repeat("T [K],rate [1/s]\n500,", "9", 2u << 20, "\n", &cases[n].len);
    cases[n].status = ARRANK_ELIMIT;
    cases[n].line = 2, cases[n].column = 0;
    cases[n].message = "line longer than 1048576 bytes";
    n++;
    cases[n].id = "a million columns in a row";
    cases[n].text = repeat("T [K],rate [1/s]\n500", ",1", 1000000, "\n", &cases[n].len);
    cases[n].status = ARRANK_ELIMIT;
    cases[n].line = 2, cases[n].column = 0;
    cases[n].message = "line longer than";
    n++;
    cases[n].id = "1001 header columns";
    /* "y": an ignored column ("x" names the conversion since issue 13) */
    cases[n].text = repeat("T [K],rate [1/s]", ",y", 999, "\n500,1\n", &cases[n].len);
    cases[n].status = ARRANK_ELIMIT;
    cases[n].line = 1, cases[n].column = 1001;
    cases[n].message = "more than 1000 columns";
    n++;
    cases[n].id = "binary with a NUL on line 3";
    cases[n].text = repeat("T [K],rate [1/s]\n500,1\n\x01\x02", "\x7f", 10, "\0\n", &cases[n].len);
    cases[n].len += 2; /* the NUL and newline after it */
    cases[n].status = ARRANK_EPARSE;
    cases[n].line = 3, cases[n].column = 0;
    cases[n].message = "not text";
    n++;
    for (size_t i = 0; i < n; i++) {
        arrank_sample s;
        arrank_error err;
        arrank_error_clear(&err);
        arrank_status st =
            arrank_sample_parse("big.csv", cases[i].text, cases[i].len, units, NULL, &s, &err);
        if (st != cases[i].status || err.line != cases[i].line ||
            err.column != cases[i].column || !strstr(err.message, cases[i].message))
            fail_msg("%s: got %d %ld:%ld '%s', want %d %ld:%ld '%s'", cases[i].id, (int)st,
                     err.line, err.column, err.message, (int)cases[i].status, cases[i].line,
                     cases[i].column, cases[i].message);
        free(cases[i].text);
    }
}

/* ---- the fast decimal reader against strtod -------------------------------- */

/* A fixed, seeded sequence: helpers.h's splitmix64. */
static uint64_t rng_state = 0x9e3779b97f4a7c15ULL;
static uint64_t rng_next(void)
{
    return splitmix(&rng_state);
}

/* A random decimal (64 bytes of room): 1-20 digits, a point anywhere or none,
   a sign or none, an exponent -30..30 or none. */
static void random_decimal(char *text, size_t room)
{
    size_t n = 0;
    uint64_t r = rng_next();
    if (r & 1)
        text[n++] = (r & 2) ? '-' : '+';
    int ndig = 1 + (int)((r >> 2) % 20);
    int point = (int)((r >> 8) % (uint64_t)(ndig + 2)) - 1; /* -1: none */
    for (int d = 0; d < ndig; d++) {
        if (d == point)
            text[n++] = '.';
        text[n++] = (char)('0' + rng_next() % 10);
    }
    if ((r >> 16) & 1)
        n += (size_t)snprintf(text + n, room - n, "e%d", (int)((r >> 20) % 61) - 30);
    text[n] = '\0';
}

/* Bit-for-bit agreement with strtod where the fast path answers; count answers. */
static void check_decimal(const char *text, size_t *answered)
{
    double fast = 0.0;
    if (!arrank_decimal_fast(text, &fast))
        return;
    (*answered)++;
    char *end;
    double slow = strtod(text, &end);
    if (*end != '\0' || memcmp(&fast, &slow, sizeof fast) != 0)
        fail_msg("'%s': fast %.17g, strtod %.17g (end '%s')", text, fast, slow, end);
}

static void decimal_fast_path(void **state)
{
    (void)state;
    /* Cases at the edges of the fast path; values from strtod itself. */
    static const char *const edges[] = {
        "0", "-0", "+0.000", "0e5", "9007199254740992", "9007199254740993", "1e22", "1e-22",
        "1e23", "123456789012345678", "1234567890123456789", "12345678901234567890",
        "0.1", "-273.15", "5.", ".5", ".", "-", "e5", "1e", "1e+", "1.5e-7", "2,5", "0x10",
        "1e0000000000000000000001", "00000000000000000000000000001.5", "inf", "nan", "1 ",
        "4.35e-3", "3.6", "0.000001234", "9999999999999999999e-22",
    };
    size_t answered = 0;
    for (size_t i = 0; i < sizeof edges / sizeof edges[0]; i++)
        check_decimal(edges[i], &answered);
    /* Refusals that must fall through to strtod's own verdict. */
    double v = 42.0;
    assert_int_equal(arrank_decimal_fast("1e", &v), 0);
    assert_int_equal(arrank_decimal_fast(".", &v), 0);
    assert_int_equal(arrank_decimal_fast("9007199254740993", &v), 0);
    assert_int_equal(arrank_decimal_fast("1e23", &v), 0);
    assert_true(v == 42.0);
    /* 300,000 random decimals: 1-20 digits, a point anywhere or none, exponents -30..30. */
    for (int k = 0; k < 300000; k++) {
        char text[64];
        random_decimal(text, sizeof text);
        check_decimal(text, &answered);
    }
    /* Most short decimals take the fast path; if none did, it would test nothing. */
    assert_true(answered > 100000);
}

/* A random value to print and its precision (0-6, now and then up to 15). */
static double random_printed(int *prec)
{
    uint64_t r = rng_next();
    *prec = (int)(r % 7);
    if ((r >> 40) % 4 == 0)
        *prec = 7 + (int)((r >> 42) % 9); /* now and then up to 15 digits */
    double v;
    switch ((r >> 3) % 4) {
    case 0: /* any bit pattern of a double */
        r = rng_next();
        memcpy(&v, &r, sizeof v);
        break;
    case 1: /* a decimal tie at the printed precision, as near as a double gets */
        v = ((double)(rng_next() % 2000000) + 0.5) / pow(10.0, (int)(r >> 8) % 8);
        break;
    case 2: /* log-uniform over 1e-12 .. 1e12, either sign */
        v = pow(10.0, -12.0 + 24.0 * (double)(rng_next() >> 11) / 9007199254740992.0);
        break;
    default: /* a short decimal written and read back, as in a table */
        v = (double)(rng_next() % 100000) / pow(10.0, (int)(r >> 8) % 6);
        break;
    }
    return ((r >> 20) & 1) ? -v : v;
}

/* Byte-for-byte agreement of the fast formatters with snprintf. */
static void check_format(double v, int prec, size_t *fast)
{
    char mine[64], libc[64];
    int a = arrank_format_fixed(mine, sizeof mine, prec, v);
    int b = snprintf(libc, sizeof libc, "%.*f", prec, v);
    if (a != b || strcmp(mine, libc) != 0)
        fail_msg("%%.%df of %a: '%s', snprintf '%s'", prec, v, mine, libc);
    if (prec >= 1 && prec <= 15) {
        a = arrank_format_general(mine, sizeof mine, prec, v);
        b = snprintf(libc, sizeof libc, "%.*g", prec, v);
        if (a != b || strcmp(mine, libc) != 0)
            fail_msg("%%.%dg of %a: '%s', snprintf '%s'", prec, v, mine, libc);
    }
    (*fast)++;
}

static void format_fast_path(void **state)
{
    (void)state;
    size_t n = 0;
    /* Exact binary ties (x.5, x.25, x.125 ...), zeros of both signs, edges of the
       range, values that round up across a power of ten, and non-finite ones. */
    static const double edges[] = {
        0.0, -0.0, 0.5, 1.5, 2.5, -2.5, 0.125, 0.375, 2.675, 1.005, 0.05, -0.05, 0.04,
        -0.04, 999.5, 9.995, 99.95, 0.0009995, 1e-5, 9.9999e-5, 1e-4, 123456.5, 1e15,
        4503599627370495.5, 4503599627370496.0, 1e22, 1e23, 1e300, -1e-300, 5e-324,
        1.7976931348623157e308, NAN, -NAN, INFINITY, -INFINITY, 273.15, 523.15, 0.9995,
    };
    for (size_t i = 0; i < sizeof edges / sizeof edges[0]; i++)
        for (int prec = 0; prec <= 17; prec++)
            check_format(edges[i], prec, &n);
    /* Around every power of ten the fast %g path can take (its decimal exponent
       comes from the binary one and one comparison): a few ulps either side. */
    for (int e = -40; e <= 40; e++) {
        double p10 = pow(10.0, e);
        for (int sign = 0; sign < 2; sign++) {
            double lo = sign ? -p10 : p10, hi = lo;
            for (int step = 0; step < 4; step++) {
                for (int prec = 1; prec <= 15; prec++) {
                    check_format(lo, prec, &n);
                    check_format(hi, prec, &n);
                }
                lo = nextafter(lo, 0.0);
                hi = nextafter(hi, sign ? -INFINITY : INFINITY);
            }
        }
    }
    /* Every binary exponent of the fast %g range (1e-250 .. 1e250 is 2^-831 ..
       2^830), at its power of two, just below it and half-way to the next. */
    for (int b = -835; b <= 835; b++) {
        const double at[] = {ldexp(1.0, b), nextafter(ldexp(1.0, b), 0.0), ldexp(1.5, b)};
        for (size_t i = 0; i < sizeof at / sizeof at[0]; i++) {
            check_format(at[i], 3, &n);
            check_format(at[i], 1 + (b + 835) % 15, &n);
        }
    }
    for (int k = 0; k < 200000; k++) {
        int prec;
        double v = random_printed(&prec);
        check_format(v, prec, &n);
        /* the neighbours of a value sit on either side of a rounding boundary */
        check_format(nextafter(v, INFINITY), prec, &n);
        check_format(nextafter(v, -INFINITY), prec, &n);
    }
    assert_true(n > 600000);
}

/* ---- campaign.ini from memory -------------------------------------------- */

static void ini_from_memory(void **state)
{
    (void)state;
    static const char text[] = "; comment\n"
                               "[campaign]\n"
                               "title = Co on ceria, 2nd batch\n"
                               "operating_temperature = 287.5 degC\n"
                               "rate_unit = mmol/(kg*h)\n"
                               "confidence = 0.9\n"
                               "colour = teal\n"
                               "[sample CE-7]\n"
                               "mass = 38 mg\n";
    arrank_campaign *c = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_parse_ini("x/campaign.ini", text, sizeof text - 1, units, &c,
                                               &err),
                     ARRANK_OK);
    assert_string_equal(c->title, "Co on ceria, 2nd batch");
    /* 287.5 degC = 560.65 K exactly (degC offset 273.15, ITS-90 convention) */
    assert_true(fabs(c->operating_temp_K - 560.65) < 1e-9 * 560.65);
    assert_string_equal(c->rate_unit, "mmol/(kg*h)");
    assert_int_equal(c->basis, ARRANK_BASIS_MASS);
    assert_true(fabs(c->confidence - 0.9) < 1e-15);
    assert_int_equal(c->n_samples, 0);
    assert_int_equal(c->n_notes, 2);
    assert_string_equal(c->notes[0], "campaign.ini:7: key 'colour' in [campaign] ignored");
    assert_string_equal(c->notes[1], "campaign.ini:9: section [sample CE-7] matches no sample");
    arrank_campaign_free(c);

    static const struct {
        const char *id, *text;
        arrank_status status;
        long line;
        const char *message;
    } bad[] = {
        {"no unit", "[campaign]\noperating_temperature = 250\n", ARRANK_EPARSE, 2, "no unit"},
        {"confidence 1.5", "[campaign]\n\nconfidence = 1.5\n", ARRANK_EPARSE, 3,
         "confidence '1.5' is not a number between 0 and 1"},
        {"not a rate", "[campaign]\nrate_unit = K\n", ARRANK_EUNIT, 2, "not a rate"},
        {"stray line", "[campaign]\ntitle = a\nno equals sign\n", ARRANK_EPARSE, 3,
         "malformed line"},
        {"NUL byte", "[campaign]\n\0\n", ARRANK_EPARSE, 2, "not text"},
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        size_t len = strlen(bad[i].text);
        if (strcmp(bad[i].id, "NUL byte") == 0)
            len = 13;
        arrank_error_clear(&err);
        c = (arrank_campaign *)&err; /* must be reset to NULL on failure */
        arrank_status st =
            arrank_campaign_parse_ini("campaign.ini", bad[i].text, len, units, &c, &err);
        if (st != bad[i].status || err.line != bad[i].line || c != NULL ||
            !strstr(err.message, bad[i].message))
            fail_msg("%s: got %d line %ld '%s', want %d line %ld '%s'", bad[i].id, (int)st,
                     err.line, err.message, (int)bad[i].status, bad[i].line, bad[i].message);
    }
}

/* ---- progress callbacks --------------------------------------------------- */

typedef struct {
    size_t calls, last_done, last_total, out_of_order;
    const char *stage;
} progress_log;

static void record_progress(void *ctx, const char *stage, size_t done, size_t total)
{
    progress_log *log = ctx;
    if (log->calls && strcmp(stage, log->stage) == 0 && done < log->last_done)
        log->out_of_order++;
    log->calls++;
    log->stage = stage;
    log->last_done = done;
    log->last_total = total;
}

static void progress_reported(void **state)
{
    (void)state;
    /* The demo campaign (campaigns/zeolite-ni-screen): the first file, then at
       least once more, in order, ending at the number of files. */
    progress_log log = {0, 0, 0, 0, NULL};
    arrank_campaign *c = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    assert_int_equal(arrank_campaign_load_progress("campaigns/zeolite-ni-screen", units,
                                                   record_progress, &log, &c, &err),
                     ARRANK_OK);
    assert_true(log.calls >= 2 && log.calls <= c->n_samples);
    assert_int_equal(log.last_done, c->n_samples);
    assert_int_equal(log.last_total, c->n_samples);
    assert_true(c->n_samples >= 10);
    assert_string_equal(log.stage, "reading samples");
    assert_int_equal(log.out_of_order, 0);

    progress_log fits = {0, 0, 0, 0, NULL};
    arrank_options o = arrank_options_defaults();
    o.operating_temp_K = 543.15;
    o.draws = 200;
    o.progress = record_progress;
    o.progress_ctx = &fits;
    arrank_analysis *a = NULL;
    assert_int_equal(arrank_analysis_run(c, &o, &a, &err), ARRANK_OK);
    /* at least one call while fitting (a few samples at a time), at most one
       per sample, and one when ranking starts */
    assert_true(fits.calls >= 2 && fits.calls <= c->n_samples + 1);
    assert_string_equal(fits.stage, "ranking samples");
    assert_int_equal(fits.out_of_order, 0);
    assert_null(a->options.progress);
    arrank_analysis_free(a);
    arrank_campaign_free(c);
}

/* ---- the host program's locale and rounding mode ---------------------------- */

/*
 * The library is embedded in programs that may set a locale with a decimal
 * comma or another rounding mode; strtod and printf follow both, number.c
 * must not.  Everything below is computed once as the C locale and rounding
 * to nearest give it, then again in the other setting, and must be the same
 * bytes.
 */

#define DEMO "campaigns/zeolite-ni-screen"
#define COMMA_LOCALE "de_DE.UTF-8"
#define N_LOCALE_VALUES 20000

/* Every way a number goes through number.c, and through the readers, as text. */
typedef struct {
    char *numbers; /* one line per value: decimal read, then each format */
    char *sample;  /* the points of a small CSV (decimal commas, quotes, long digits) */
    char *json;    /* the demo campaign analysed, as JSON */
} number_bytes;

static void append(char **buf, size_t *len, const char *text)
{
    size_t n = strlen(text);
    char *p = realloc(*buf, *len + n + 1);
    assert_non_null(p);
    memcpy(p + *len, text, n + 1);
    *buf = p;
    *len += n;
}

static char *numbers_text(void)
{
    rng_state = 0x243f6a8885a308d3ULL; /* the same values every time */
    char *out = NULL;
    size_t len = 0;
    static const char *const texts[] = {"1.25", "-0.5e-3", "12345678901234567890.5",
                                        "1e-300", "2.2250738585072014e-308", "1e400"};
    for (size_t i = 0; i < N_LOCALE_VALUES + sizeof texts / sizeof texts[0]; i++) {
        char text[64], line[512];
        if (i < sizeof texts / sizeof texts[0])
            snprintf(text, sizeof text, "%s", texts[i]);
        else
            random_decimal(text, sizeof text);
        double v = NAN;
        int r = arrank_decimal_read(text, &v);
        uint64_t bits;
        memcpy(&bits, &v, sizeof bits);
        int prec;
        double w = random_printed(&prec);
        char f1[64], f2[64], f3[64], f4[64];
        arrank_format_fixed(f1, sizeof f1, prec, w);
        arrank_format_general(f2, sizeof f2, prec ? prec : 1, w);
        arrank_format_fixed(f3, sizeof f3, 2, v);     /* read values printed back */
        arrank_format_general(f4, sizeof f4, 17, v);  /* beyond the fast range: snprintf */
        snprintf(line, sizeof line, "%s %d %016llx | %s | %s | %s | %s\n", text, r,
                 (unsigned long long)bits, f1, f2, f3, f4);
        append(&out, &len, line);
    }
    return out;
}

static char *sample_text(void)
{
    static const char csv[] = "# sample = comma-1\n"
                              "T [degC];rate [umol/(g*s)];rate_sd [umol/(g*s)]\n"
                              "250;1,25;0.5\n"
                              "260,5;2.5e-1;12345678901234567890123e-22\n"
                              "270;\"3,75\";1e-3\n"
                              "280.25;4,125E+00;0,000000000000000000001234\n";
    static const char one_T[] = "T [K];rate [umol/(g*s)]\n523.156;1\n523.156;2\n523.156;3\n";
    arrank_sample s;
    arrank_error err;
    arrank_error_clear(&err);
    char *out = NULL;
    size_t len = 0;
    const char *const files[] = {csv, one_T};
    for (size_t f = 0; f < 2; f++) {
        if (arrank_sample_parse("comma.csv", files[f], strlen(files[f]), units, NULL, &s, &err) !=
            ARRANK_OK)
            fail_msg("%s", err.message);
        for (size_t i = 0; i < s.n_points; i++) {
            const double x[] = {s.points[i].temp_K, s.points[i].rate, s.points[i].rate_sd};
            uint64_t bits[3];
            memcpy(bits, x, sizeof bits); /* the bits: printf's own text follows the locale */
            char line[256];
            snprintf(line, sizeof line, "%016llx %016llx %016llx\n", (unsigned long long)bits[0],
                     (unsigned long long)bits[1], (unsigned long long)bits[2]);
            append(&out, &len, line);
        }
        append(&out, &len, s.problem ? s.problem : "no problem");
        append(&out, &len, "\n");
        arrank_sample_clear(&s);
    }
    return out;
}

/* The demo through the whole library: load, analyse, and every output format
   (the table, the lean JSON, the JSON with every point, CSV and points.csv),
   byte for byte, strings and messages included. */
static char *json_text(void)
{
    arrank_campaign *c = NULL;
    arrank_error err;
    arrank_error_clear(&err);
    if (arrank_campaign_load(DEMO, units, &c, &err) != ARRANK_OK)
        fail_msg("%s: %s", DEMO, err.message);
    arrank_options o = arrank_options_defaults();
    o.operating_temp_K = 530.0;
    o.draws = 2000;
    o.bootstrap = 50;
    o.units = units;
    arrank_analysis *a = NULL;
    if (arrank_analysis_run(c, &o, &a, &err) != ARRANK_OK)
        fail_msg("analysis: %s", err.message);
    char *text = NULL;
    size_t len = 0;
    FILE *f = open_memstream(&text, &len);
    assert_non_null(f);
    const arrank_output_format formats[] = {ARRANK_OUTPUT_TABLE, ARRANK_OUTPUT_JSON,
                                            ARRANK_OUTPUT_JSON_POINTS, ARRANK_OUTPUT_CSV,
                                            ARRANK_OUTPUT_POINTS};
    for (size_t k = 0; k < sizeof formats / sizeof formats[0]; k++)
        assert_int_equal(arrank_output_write(a, formats[k], f, &err), ARRANK_OK);
    for (size_t i = 0; i < a->n_results; i++)
        if (a->results[i].diagnosis)
            assert_int_equal(arrank_diagnosis_write_text(f, &a->results[i], &err), ARRANK_OK);
    assert_int_equal(fclose(f), 0);
    arrank_analysis_free(a);
    arrank_campaign_free(c);
    return text;
}

static number_bytes all_bytes(void)
{
    number_bytes b = {numbers_text(), sample_text(), json_text()};
    return b;
}

static void same_bytes(const number_bytes *want, const number_bytes *got, const char *where)
{
    const char *const w[] = {want->numbers, want->sample, want->json};
    const char *const g[] = {got->numbers, got->sample, got->json};
    const char *const what[] = {"numbers", "sample", "outputs"};
    for (int i = 0; i < 3; i++) {
        if (strcmp(w[i], g[i]) == 0)
            continue;
        size_t k = 0;
        while (w[i][k] == g[i][k])
            k++;
        size_t from = k > 40 ? k - 40 : 0;
        fail_msg("%s: %s differ from the C locale's at byte %zu: '%.80s' against '%.80s'", where,
                 what[i], k, g[i] + from, w[i] + from);
    }
}

static void free_bytes(number_bytes *b)
{
    free(b->numbers);
    free(b->sample);
    free(b->json);
}

/* The host program's locale and rounding mode back to C and to nearest. */
static int host_restore(void **state)
{
    (void)state;
    uselocale(LC_GLOBAL_LOCALE);
    setlocale(LC_NUMERIC, "C");
    fesetround(FE_TONEAREST);
    return 0;
}

static void decimal_comma_locale(void **state)
{
    (void)state;
    number_bytes c = all_bytes();
    /* The host sets a decimal-comma locale for the whole process (source of
       the comma: the locale's own LC_NUMERIC, checked here). */
    if (!setlocale(LC_NUMERIC, COMMA_LOCALE))
        fail_msg("no locale %s with a decimal comma on this machine: run "
                 "'sh src/tools/deps.sh --test' (Debian: the locales package, then "
                 "'localedef -i de_DE -f UTF-8 de_DE.UTF-8')", COMMA_LOCALE);
    char probe[32];
    snprintf(probe, sizeof probe, "%.2f", 1.25);
    assert_string_equal(probe, "1,25"); /* the locale is in force: the test can fail */
    number_bytes de = all_bytes();
    same_bytes(&c, &de, "setlocale(LC_NUMERIC, \"" COMMA_LOCALE "\")");
    snprintf(probe, sizeof probe, "%.2f", 1.25);
    assert_string_equal(probe, "1,25"); /* and the library left it as it was */
    free_bytes(&de);
    setlocale(LC_NUMERIC, "C");
    /* The same locale for this thread only (uselocale). */
    locale_t comma = newlocale(LC_NUMERIC_MASK, COMMA_LOCALE, (locale_t)0);
    assert_non_null(comma);
    uselocale(comma);
    snprintf(probe, sizeof probe, "%.2f", 1.25);
    assert_string_equal(probe, "1,25");
    number_bytes th = all_bytes();
    same_bytes(&c, &th, "uselocale(" COMMA_LOCALE ")");
    assert_true(uselocale((locale_t)0) == comma);
    uselocale(LC_GLOBAL_LOCALE);
    freelocale(comma);
    free_bytes(&th);
    /* The host rounding upward: the whole analysis and every output the same
       bytes (only the library's part: the test's own generators compute in
       the caller's mode, so they are left out here). */
    assert_int_equal(fesetround(FE_UPWARD), 0);
    char *up = json_text();
    assert_int_equal(fegetround(), FE_UPWARD); /* and the library left it as it was */
    fesetround(FE_TONEAREST);
    if (strcmp(up, c.json) != 0) {
        size_t k = 0;
        while (up[k] == c.json[k])
            k++;
        fail_msg("fesetround(FE_UPWARD): outputs differ at byte %zu: '%.80s' against '%.80s'", k,
                 up + (k > 40 ? k - 40 : 0), c.json + (k > 40 ? k - 40 : 0));
    }
    free(up);
    free_bytes(&c);
}

/* Under each directed rounding mode, number.c's fast paths and its library
   paths give the bits and bytes that strtod and snprintf give in the C
   locale rounding to nearest, on the generators of the fast-path tests. */
static void rounding_modes(void **state)
{
    (void)state;
    static const int modes[] = {FE_UPWARD, FE_DOWNWARD, FE_TOWARDZERO};
    static const char *const names[] = {"FE_UPWARD", "FE_DOWNWARD", "FE_TOWARDZERO"};
    volatile double one = 1.0, three = 3.0;
    double third = one / three;
    size_t fast_reads = 0, fast_prints = 0;
    for (int m = 0; m < 3; m++) {
        assert_int_equal(fesetround(modes[m]), 0);
        double third_m = one / three;
        if (modes[m] == FE_UPWARD)
            assert_true(third_m > third); /* the mode is in force: the test can fail */
        fesetround(FE_TONEAREST);
        rng_state = 0x13198a2e03707344ULL + (uint64_t)m;
        for (int k = 0; k < 100000; k++) {
            char text[64];
            random_decimal(text, sizeof text);
            char *end;
            double want = strtod(text, &end), got = NAN, fast = NAN;
            int fast_ok = arrank_decimal_fast(text, &fast); /* to nearest: may answer */
            fesetround(modes[m]);
            int r = arrank_decimal_read(text, &got);
            int fast_m = arrank_decimal_fast(text, &fast);
            fesetround(FE_TONEAREST);
            if (fast_m)
                fail_msg("%s: the fast reader answered for '%s'", names[m], text);
            fast_reads += (size_t)fast_ok;
            if (*end == '\0' && r == 0 && memcmp(&want, &got, sizeof want) != 0)
                fail_msg("%s: '%s' read %a, to nearest %a", names[m], text, got, want);
            int prec;
            double v = random_printed(&prec);
            char lib[64], mine[64];
            for (int general = 0; general < 2; general++) {
                int p = general && prec == 0 ? 1 : prec;
                int b = general ? snprintf(lib, sizeof lib, "%.*g", p, v)
                                : snprintf(lib, sizeof lib, "%.*f", p, v);
                fesetround(modes[m]);
                int a = general ? arrank_format_general(mine, sizeof mine, p, v)
                                : arrank_format_fixed(mine, sizeof mine, p, v);
                int mode_after = fegetround();
                fesetround(FE_TONEAREST);
                assert_int_equal(mode_after, modes[m]); /* the caller's mode is kept */
                if (a != b || strcmp(mine, lib) != 0)
                    fail_msg("%s: %%.%d%c of %a: '%s', to nearest '%s'", names[m], p,
                             general ? 'g' : 'f', v, mine, lib);
                fast_prints++;
            }
        }
    }
    assert_true(fast_reads > 100000); /* most values took the fast path to nearest */
    assert_true(fast_prints == 600000);
}

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(corpus_sample),   cmocka_unit_test(corpus_header),
        cmocka_unit_test(corpus_ini),      cmocka_unit_test(corpus_temperature),
        cmocka_unit_test(fixed_units),     cmocka_unit_test(limits_in_memory),
        cmocka_unit_test(ini_from_memory), cmocka_unit_test(decimal_fast_path),
        cmocka_unit_test(format_fast_path),
        cmocka_unit_test(progress_reported), cmocka_unit_test(fixed_conversion_overflow),
        cmocka_unit_test_teardown(decimal_comma_locale, host_restore),
        cmocka_unit_test_teardown(rounding_modes, host_restore),
    };
    return cmocka_run_group_tests(tests, units_setup, units_teardown);
}
