/*
 * test_units.c - units module: conversions against exact factors, the
 * temperature parser, rate basis classification, quantities, the cache, and
 * the error paths.
 *
 * Every expected factor here is exact by definition of the units involved:
 * SI prefixes (u = 1e-6, m = 1e-3, k = 1e3, c = 1e-2), 1 h = 3600 s,
 * 1 min = 60 s (SI Brochure, 9th ed. 2019, Tables 7 and 8), T/K = t/degC +
 * 273.15 (definition of the Celsius scale, SI Brochure 2.3.1) and
 * T/K = (t/degF + 459.67) * 5/9 (definition of the Fahrenheit and Rankine
 * scales, NIST SP 811 (2008), B.9).  The tolerance 1e-12 relative only
 * allows for double rounding in udunits' arithmetic.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>
#include <gsl/gsl_errno.h>
#include <math.h>
#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/units.h"
#include "helpers.h"

#define REL_TOL 1e-12

/* ------------------------------------------------------------------ cases */

static const struct {
    const char *from, *to;
    double value, want;
    const char *source;
} conversions[] = {
    {"mol/(kg*h)", "umol/(g*s)", 2.917, 2.917 / 3.6, "exact by definition: 1e6/(1e3*3600)"},
    {"umol/(g*s)", "mol/(kg*h)", 0.4173, 0.4173 * 3.6, "exact by definition: 3.6"},
    {"mmol/(g*h)", "mol/(kg*s)", 13.71, 13.71 / 3600.0, "exact by definition: 1e-3/(1e-3*3600)"},
    {"umol/(m2*s)", "mol/(m^2*h)", 7.318, 7.318 * 3.6e-3, "exact by definition: 1e-6*3600"},
    {"\xc2\xb5mol/(g\xc2\xb7s)", "umol/(g*s)", 0.8626, 0.8626, "same unit, UTF-8 spelling"},
    {"\xce\xbcmol/(g*min)", "umol/(g*s)", 5.129, 5.129 / 60.0, "exact by definition: 1/60"},
    {"h^-1", "1/s", 0.0713, 0.0713 / 3600.0, "exact by definition: 1/3600"},
    {"s-1", "1/s", 0.01937, 0.01937, "same unit, other spelling"},
    {"um", "m", 150.3, 150.3e-6, "exact by definition of the prefix u"},
    {"g/cm3", "kg/m3", 0.8123, 812.3, "exact by definition: 1e-3/1e-6"},
    {"%", "1", 37.2, 0.372, "exact by definition of percent"},
    {"min", "s", 47.5, 2850.0, "exact by definition: 60 s"},
    {"m\xc2\xb2", "cm2", 0.0317, 317.0, "exact by definition: 1e4"},
    {"degC", "K", 231.4, 504.55, "Celsius scale definition"},
    {"degF", "K", 482.0, 523.15, "Fahrenheit scale definition"},
    /* the alias table (units.c): words rigs write, as whole words only */
    {"mmol/(gcat*hr)", "mol/(kg*h)", 0.0412, 0.0412, "alias: gcat = g, hr = h"},
    {"umol/(g_cat*sec)", "umol/(g*s)", 0.8626, 0.8626, "alias: g_cat = g, sec = s"},
    {"mol/(kgcat*hrs)", "mol/(kg*s)", 36.0, 0.01, "alias: kgcat = kg, hrs = h; exact: 1/3600"},
    {"mins", "s", 2.0, 120.0, "alias: mins = min; exact by definition: 60 s"},
};

static void test_conversions(void **state)
{
    (void)state;
    /* an alias is a whole word: 'gcats' and 'xhr' are not rewritten (unknown units) */
    static const char *const not_aliases[] = {"mol/(gcats*h)", "mol/(g*xhr)"};
    for (size_t i = 0; i < sizeof not_aliases / sizeof not_aliases[0]; i++) {
        arrank_error err;
        arrank_error_clear(&err);
        arrank_conversion c;
        assert_int_equal(arrank_units_conversion(units, not_aliases[i], "mol/(kg*s)", &c, &err),
                         ARRANK_EUNIT);
    }
    for (size_t i = 0; i < sizeof conversions / sizeof conversions[0]; i++) {
        arrank_error err;
        arrank_error_clear(&err);
        arrank_conversion c;
        arrank_status st =
            arrank_units_conversion(units, conversions[i].from, conversions[i].to, &c, &err);
        if (st != ARRANK_OK) {
            print_error("%s -> %s: %s\n", conversions[i].from, conversions[i].to, err.message);
            fail();
        }
        char what[128];
        snprintf(what, sizeof what, "%s -> %s", conversions[i].from, conversions[i].to);
        check_close(c.scale * conversions[i].value + c.offset, conversions[i].want, REL_TOL, what,
                    conversions[i].source);
    }
}

static const struct {
    const char *unit;
    double value, want_K;
} temperatures[] = {
    {"degC", 231.4, 504.55},       {"C", 258.2, 531.35},
    {"\xc2\xb0" "C", 244.9, 518.05}, {"\xe2\x84\x83", 271.6, 544.75},
    {"celsius", -17.3, 255.85},    {"K", 523.15, 523.15},
    {"kelvin", 611.7, 611.7},      {"degF", 482.0, 523.15},
    {"F", -40.0, 233.15},          {"\xc2\xb0" "F", 98.6, 310.15},
    {" degC ", 12.5, 285.65},
};

static void test_temperature_units(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof temperatures / sizeof temperatures[0]; i++) {
        arrank_error err;
        arrank_error_clear(&err);
        arrank_conversion c;
        if (arrank_units_temperature(units, temperatures[i].unit, &c, &err) != ARRANK_OK) {
            print_error("'%s': %s\n", temperatures[i].unit, err.message);
            fail();
        }
        check_close(c.scale * temperatures[i].value + c.offset, temperatures[i].want_K, REL_TOL,
                    temperatures[i].unit, "Celsius/Fahrenheit scale definitions (SI, NIST SP 811)");
    }
}

static void test_temperature_unit_errors(void **state)
{
    (void)state;
    const struct {
        const char *unit;
        const char *message;
    } cases[] = {
        {"s", "'s' is not a temperature unit"},
        {"umol/(g*s)", "'umol/(g*s)' is not a temperature unit"},
        {"degQ", "unknown unit 'degQ'"},
        {"", "empty unit"},
        {"   ", "empty unit"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        arrank_error err;
        arrank_error_clear(&err);
        arrank_conversion c;
        assert_int_equal(arrank_units_temperature(units, cases[i].unit, &c, &err), ARRANK_EUNIT);
        assert_int_equal(err.status, ARRANK_EUNIT);
        assert_string_equal(err.message, cases[i].message);
    }
}

static void test_parse_temperature(void **state)
{
    (void)state;
    const struct {
        const char *text;
        double want_K;
    } cases[] = {
        {"250C", 523.15},     {"250 C", 523.15},     {"250degC", 523.15},
        {"523.15K", 523.15},  {"482 degF", 523.15},  {" -40 F ", 233.15},
        {"1.5e2 degC", 423.15}, {"231.4 \xc2\xb0" "C", 504.55}, {"+12.5C", 285.65},
        {"611.7 kelvin", 611.7},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        arrank_error err;
        arrank_error_clear(&err);
        double t = NAN;
        if (arrank_units_parse_temperature(units, cases[i].text, &t, &err) != ARRANK_OK) {
            print_error("'%s': %s\n", cases[i].text, err.message);
            fail();
        }
        check_close(t, cases[i].want_K, REL_TOL, cases[i].text,
                    "Celsius/Fahrenheit scale definitions (SI, NIST SP 811)");
    }
}

static void test_parse_temperature_errors(void **state)
{
    (void)state;
    const struct {
        const char *text;
        arrank_status status;
        const char *message;
    } cases[] = {
        {"250", ARRANK_EINVAL,
         "temperature '250' has no unit; write it as 250C (Celsius), "
         "250K (kelvin) or 250F (Fahrenheit)"},
        {" 231.4 ", ARRANK_EINVAL,
         "temperature '231.4' has no unit; write it as 231.4C (Celsius), "
         "231.4K (kelvin) or 231.4F (Fahrenheit)"},
        {"", ARRANK_EINVAL, "'' is not a temperature; write it as 250C, 250degC or 523.15K"},
        {"warm", ARRANK_EINVAL,
         "'warm' is not a temperature; write it as 250C, 250degC or 523.15K"},
        {"nan K", ARRANK_EINVAL,
         "'nan K' is not a temperature; write it as 250C, 250degC or 523.15K"},
        {"0x1p8 K", ARRANK_EINVAL,
         "'0x1p8 K' is not a temperature; write it as 250C, 250degC or 523.15K"},
        {"1e999 K", ARRANK_EINVAL,
         "'1e999 K' is not a temperature; write it as 250C, 250degC or 523.15K"},
        {"-300C", ARRANK_EINVAL, "temperature '-300C' is at or below absolute zero"},
        {"0K", ARRANK_EINVAL, "temperature '0K' is at or below absolute zero"},
        {"-273.15 degC", ARRANK_EINVAL, "temperature '-273.15 degC' is at or below absolute zero"},
        {"250 X", ARRANK_EUNIT, "unknown unit 'X'"},
        {"250 s", ARRANK_EUNIT, "'s' is not a temperature unit"},
        {"1,5 degC", ARRANK_EUNIT, "unknown unit ',5 degC'"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        arrank_error err;
        arrank_error_clear(&err);
        double t = 123.0;
        arrank_status st = arrank_units_parse_temperature(units, cases[i].text, &t, &err);
        if (st != cases[i].status || strcmp(err.message, cases[i].message) != 0) {
            print_error("'%s': got %d '%s', want %d '%s'\n", cases[i].text, st, err.message,
                        cases[i].status, cases[i].message);
            fail();
        }
        assert_true(t == 123.0); /* untouched on failure */
    }
}

static void test_rate_basis(void **state)
{
    (void)state;
    const struct {
        const char *unit;
        arrank_basis basis;
        double to_si; /* factor to mol/(kg*s), mol/(m2*s) or 1/s; exact by definition */
    } cases[] = {
        {"umol/(g*s)", ARRANK_BASIS_MASS, 1e-3},
        {"mol/(kg*s)", ARRANK_BASIS_MASS, 1.0},
        {"mol/(kg*h)", ARRANK_BASIS_MASS, 1.0 / 3600.0},
        {"mmol/(g*h)", ARRANK_BASIS_MASS, 1.0 / 3600.0},
        {"\xc2\xb5mol/(g\xc2\xb7s)", ARRANK_BASIS_MASS, 1e-3},
        {"umol g-1 s-1", ARRANK_BASIS_MASS, 1e-3},
        {"umol/(m2*s)", ARRANK_BASIS_AREA, 1e-6},
        {"mol/(m^2*h)", ARRANK_BASIS_AREA, 1.0 / 3600.0},
        {"nmol/(cm2*min)", ARRANK_BASIS_AREA, 1e-9 / (1e-4 * 60.0)},
        {"1/s", ARRANK_BASIS_SITE, 1.0},
        {"s-1", ARRANK_BASIS_SITE, 1.0},
        {"h^-1", ARRANK_BASIS_SITE, 1.0 / 3600.0},
        {"1/min", ARRANK_BASIS_SITE, 1.0 / 60.0},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        arrank_error err;
        arrank_error_clear(&err);
        arrank_basis basis = ARRANK_BASIS_UNKNOWN;
        arrank_conversion c;
        if (arrank_units_rate(units, cases[i].unit, &basis, &c, &err) != ARRANK_OK) {
            print_error("'%s': %s\n", cases[i].unit, err.message);
            fail();
        }
        if (basis != cases[i].basis) {
            print_error("'%s': basis %s, want %s\n", cases[i].unit, arrank_basis_name(basis),
                        arrank_basis_name(cases[i].basis));
            fail();
        }
        check_close(c.scale, cases[i].to_si, REL_TOL, cases[i].unit,
                    "exact by definition of the units");
        assert_true(c.offset == 0.0);
    }
    const char *bad[] = {"mol/s", "degC", "umol/g", "1", "m/s"};
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        arrank_error err;
        arrank_error_clear(&err);
        arrank_basis basis;
        arrank_conversion c;
        assert_int_equal(arrank_units_rate(units, bad[i], &basis, &c, &err), ARRANK_EUNIT);
        char want[256];
        snprintf(want, sizeof want,
                 "'%s' is not a rate per mass, area or site "
                 "(such as umol/(g*s), umol/(m2*s) or 1/s)",
                 bad[i]);
        assert_string_equal(err.message, want);
    }
    arrank_error err;
    arrank_error_clear(&err);
    arrank_basis basis;
    arrank_conversion c;
    assert_int_equal(arrank_units_rate(units, "umol/(g*blorp)", &basis, &c, &err), ARRANK_EUNIT);
    assert_string_equal(err.message, "unknown unit 'umol/(g*blorp)'");
    assert_string_equal(arrank_basis_name(ARRANK_BASIS_MASS), "mass");
    assert_string_equal(arrank_basis_name(ARRANK_BASIS_AREA), "area");
    assert_string_equal(arrank_basis_name(ARRANK_BASIS_SITE), "site");
    assert_string_equal(arrank_basis_name(ARRANK_BASIS_UNKNOWN), "unknown");
}

static void test_conversion_errors(void **state)
{
    (void)state;
    const struct {
        const char *from, *to, *message;
    } cases[] = {
        {"umol/(g*s)", "1/s", "unit 'umol/(g*s)' is not convertible to '1/s'"},
        {"1/s", "umol/(g*s)", "unit '1/s' is not convertible to 'umol/(g*s)'"},
        {"blorp", "m", "unknown unit 'blorp'"},
        {"m", "blorp", "unknown unit 'blorp'"},
        {"", "m", "empty unit"},
        {"lg(re 1 mW)", "W", "unit 'lg(re 1 mW)' is not a linear unit"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        arrank_error err;
        arrank_error_clear(&err);
        arrank_conversion c;
        assert_int_equal(arrank_units_conversion(units, cases[i].from, cases[i].to, &c, &err),
                         ARRANK_EUNIT);
        assert_string_equal(err.message, cases[i].message);
    }
}

static void test_parse_quantity(void **state)
{
    (void)state;
    const struct {
        const char *text, *si;
        double want;
    } cases[] = {
        {"150 um", "m", 150e-6},      {"0.8123 g/cm3", "kg/m3", 812.3},
        {"42.7 mg", "kg", 42.7e-6},   {"3.7", "1", 3.7},
        {"12.5 %", "1", 0.125},       {"2.25 h", "s", 8100.0},
        {"  7.31 \xc2\xb5m ", "m", 7.31e-6},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        arrank_error err;
        arrank_error_clear(&err);
        double v = NAN;
        if (arrank_units_parse_quantity(units, cases[i].text, cases[i].si, &v, &err) !=
            ARRANK_OK) {
            print_error("'%s': %s\n", cases[i].text, err.message);
            fail();
        }
        check_close(v, cases[i].want, REL_TOL, cases[i].text, "exact by definition of the units");
    }
    const struct {
        const char *text, *si;
        arrank_status status;
        const char *message;
    } bad[] = {
        {"3.7", "m", ARRANK_EUNIT, "'3.7' has no unit; write it with a unit of 'm'"},
        {"12 s", "m", ARRANK_EUNIT, "unit 's' is not convertible to 'm'"},
        {"heavy kg", "kg", ARRANK_EINVAL, "'heavy kg' is not a number with a unit"},
        {"", "kg", ARRANK_EINVAL, "'' is not a number with a unit"},
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        arrank_error err;
        arrank_error_clear(&err);
        double v = NAN;
        assert_int_equal(arrank_units_parse_quantity(units, bad[i].text, bad[i].si, &v, &err),
                         bad[i].status);
        assert_string_equal(err.message, bad[i].message);
    }
}

/* More distinct units than the cache holds, asked twice: answers must not change. */
static void test_cache_replacement(void **state)
{
    (void)state;
    for (int pass = 0; pass < 2; pass++) {
        for (int k = 1; k <= 150; k++) {
            char unit[32];
            snprintf(unit, sizeof unit, "%d.25 s", k);
            arrank_error err;
            arrank_error_clear(&err);
            arrank_conversion c;
            assert_int_equal(arrank_units_conversion(units, unit, "s", &c, &err), ARRANK_OK);
            check_close(c.scale, k + 0.25, REL_TOL, unit, "exact: a scaled second");
            assert_true(c.offset == 0.0);
            /* The same text in the other roles gets its own answer. */
            arrank_basis b;
            assert_int_equal(arrank_units_rate(units, unit, &b, &c, &err), ARRANK_EUNIT);
        }
    }
}

/* udunits2 reads a shifted unit ('umol/(g*s) @ 5'); for a rate, its SD or a
   metadata quantity that would move every value by the offset, so only
   temperatures may carry one.  Logarithmic units are not linear at all. */
static void test_offset_units(void **state)
{
    (void)state;
    arrank_error err;
    arrank_basis basis;
    arrank_conversion c;
    const char *rates[] = {"umol/(g*s) @ 5", "umol/(g*s)@1", "1/s @ 0.5", "mol/(m2*s) @ -2"};
    for (size_t i = 0; i < sizeof rates / sizeof rates[0]; i++) {
        arrank_error_clear(&err);
        assert_int_equal(arrank_units_rate(units, rates[i], &basis, &c, &err), ARRANK_EUNIT);
        assert_non_null(strstr(err.message, "has an offset"));
    }
    arrank_error_clear(&err);
    assert_int_equal(arrank_units_conversion(units, "umol/(g*s) @ 1", "umol/(g*s)", &c, &err),
                     ARRANK_EUNIT);
    assert_non_null(strstr(err.message, "has an offset"));
    arrank_error_clear(&err);
    double v;
    assert_int_equal(arrank_units_parse_quantity(units, "0.25 mm @ 1", "m", &v, &err),
                     ARRANK_EUNIT);
    arrank_error_clear(&err);
    assert_int_equal(arrank_units_rate(units, "lg(re umol/(g*s))", &basis, &c, &err),
                     ARRANK_EUNIT);
    /* Temperatures keep their offsets: 25 degC is 298.15 K (exact by definition). */
    arrank_error_clear(&err);
    assert_int_equal(arrank_units_conversion(units, "degC", "K", &c, &err), ARRANK_OK);
    check_close(c.scale * 25.0 + c.offset, 298.15, REL_TOL, "25 degC", "exact by definition");
    /* A plain multiple still converts. */
    arrank_error_clear(&err);
    assert_int_equal(arrank_units_conversion(units, "umol/(g*s)", "mol/(kg*s)", &c, &err),
                     ARRANK_OK);
    assert_true(c.offset == 0.0);
}

static void test_arguments(void **state)
{
    (void)state;
    arrank_error err;
    arrank_error_clear(&err);
    arrank_conversion c;
    double v;
    assert_int_equal(arrank_units_temperature(NULL, "K", &c, &err), ARRANK_EINVAL);
    assert_int_equal(arrank_units_conversion(units, NULL, "m", &c, &err), ARRANK_EINVAL);
    assert_int_equal(arrank_units_parse_temperature(units, NULL, &v, NULL), ARRANK_EINVAL);
    char longunit[600];
    memset(longunit, 'm', sizeof longunit - 1);
    longunit[sizeof longunit - 1] = '\0';
    assert_int_equal(arrank_units_conversion(units, longunit, "m", &c, &err), ARRANK_EUNIT);
    assert_string_equal(err.message, "unit text is longer than 255 bytes");
    arrank_units_free(NULL);
}

/*
 * A database read in the background (arrank_units_create_background): every
 * function waits for it and answers as with arrank_units_create, also when
 * four threads make the first call at once; a database that cannot be read
 * is each call's error; a handle freed unused is joined cleanly.
 */
typedef struct {
    arrank_units *u;
    arrank_status st;
    arrank_conversion conv;
    arrank_basis basis;
} first_call;

static void *call_rate(void *arg)
{
    first_call *fc = arg;
    arrank_error err;
    arrank_error_clear(&err);
    fc->st = arrank_units_rate(fc->u, "mmol/(g*h)", &fc->basis, &fc->conv, &err);
    return NULL;
}

static void test_background(void **state)
{
    (void)state;
    arrank_error err;
    arrank_error_clear(&err);
    /* the answers equal the loaded database's, bit for bit */
    arrank_units *bg = arrank_units_create_background(&err);
    assert_non_null(bg);
    for (size_t i = 0; i < sizeof conversions / sizeof *conversions; i++) {
        arrank_conversion a, b;
        assert_int_equal(arrank_units_conversion(bg, conversions[i].from, conversions[i].to, &a,
                                                 &err),
                         ARRANK_OK);
        assert_int_equal(arrank_units_conversion(units, conversions[i].from, conversions[i].to,
                                                 &b, &err),
                         ARRANK_OK);
        assert_true(a.scale == b.scale && a.offset == b.offset);
    }
    assert_int_equal(arrank_units_ready(bg, &err), ARRANK_OK);
    arrank_units_free(bg);

    /* four first calls at once */
    bg = arrank_units_create_background(&err);
    assert_non_null(bg);
    pthread_t th[4];
    first_call fc[4];
    for (size_t i = 0; i < 4; i++) {
        fc[i] = (first_call){.u = bg, .st = ARRANK_EINVAL};
        assert_int_equal(pthread_create(&th[i], NULL, call_rate, &fc[i]), 0);
    }
    for (size_t i = 0; i < 4; i++) {
        assert_int_equal(pthread_join(th[i], NULL), 0);
        assert_int_equal(fc[i].st, ARRANK_OK);
        assert_int_equal(fc[i].basis, ARRANK_BASIS_MASS);
        /* exact by definition: 1e-3 mol / (1e-3 kg * 3600 s) */
        check_close(fc[i].conv.scale, 1.0 / 3600.0, REL_TOL, "mmol/(g*h) to SI", "definition");
    }
    arrank_units_free(bg);

    /* freed without a single call */
    bg = arrank_units_create_background(&err);
    assert_non_null(bg);
    arrank_units_free(bg);

    /* a database that cannot be read: every call says so, as creating it would */
    char *saved = env_set("UDUNITS2_XML_PATH", "/nonexistent/udunits2.xml");
    arrank_error want;
    arrank_error_clear(&want);
    assert_null(arrank_units_create(&want));
    assert_int_equal(want.status, ARRANK_EIO);
    bg = arrank_units_create_background(&err);
    assert_non_null(bg);
    arrank_conversion c;
    double v;
    arrank_error_clear(&err);
    assert_int_equal(arrank_units_temperature(bg, "degC", &c, &err), ARRANK_EIO);
    assert_string_equal(err.message, want.message);
    arrank_error_clear(&err);
    assert_int_equal(arrank_units_parse_quantity(bg, "150 um", "m", &v, &err), ARRANK_EIO);
    assert_string_equal(err.message, want.message);
    arrank_error_clear(&err);
    assert_int_equal(arrank_units_ready(bg, &err), ARRANK_EIO);
    assert_string_equal(err.message, "cannot load the udunits2 unit database from "
                                     "'/nonexistent/udunits2.xml'");
    arrank_units_free(bg);
    env_restore("UDUNITS2_XML_PATH", saved);
}

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_conversions),
        cmocka_unit_test(test_temperature_units),
        cmocka_unit_test(test_temperature_unit_errors),
        cmocka_unit_test(test_parse_temperature),
        cmocka_unit_test(test_parse_temperature_errors),
        cmocka_unit_test(test_rate_basis),
        cmocka_unit_test(test_conversion_errors),
        cmocka_unit_test(test_parse_quantity),
        cmocka_unit_test(test_cache_replacement),
        cmocka_unit_test(test_offset_units),
        cmocka_unit_test(test_arguments),
        cmocka_unit_test(test_background),
    };
    return cmocka_run_group_tests(tests, units_setup, units_teardown);
}
