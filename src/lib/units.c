/*
 * units.c - units of measure for campaign data, on top of udunits2.
 *
 * udunits2 knows the units; this file adds what a campaign needs around it:
 * spellings people type in lab files (UTF-8 micro sign, middle dot, degree
 * sign, the one-character Celsius sign), the rule that in temperature text a
 * bare "C" or "F" means degrees (udunits reads them as coulomb and farad), the
 * classification of a rate by its dimension, and a small cache so that a
 * campaign of thousands of files sharing two or three unit strings asks
 * udunits to parse each string only once.
 *
 * Every conversion used here is affine (value_to = scale * value_from +
 * offset); logarithmic units are refused.
 */
#include "arrank/units.h"
#include "number.h"
#include "units_internal.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <pthread.h>
#include <stdatomic.h>
#include <stdlib.h>
#include <string.h>

#include <udunits2.h>

/* Longest unit string accepted; longer text is not a unit anybody writes. */
#define UNIT_TEXT_MAX 256
/* Cache size: a campaign uses a handful of units; entries are replaced in turn when full. */
#define CACHE_SIZE 64

/* What a cache entry answers. */
typedef enum { KIND_CONVERSION, KIND_TEMPERATURE, KIND_RATE } entry_kind;

typedef struct {
    entry_kind kind;
    char *from;   /* unit text as the caller gave it: a hit costs no normalisation */
    char *to;     /* target unit text as given ("" for temperature and rate) */
    arrank_conversion conv;
    arrank_basis basis;
} cache_entry;

struct arrank_units {
    ut_system *system;
    ut_unit *kelvin;
    ut_unit *rate_mass; /* mol/(kg*s) */
    ut_unit *rate_area; /* mol/(m2*s) */
    ut_unit *rate_site; /* 1/s */
    cache_entry cache[CACHE_SIZE];
    size_t n_cache;
    size_t next_evict;
    /* arrank_units_create_background: the thread reading the database */
    pthread_t loader;
    atomic_int pending;        /* 1 until the loader has been joined */
    pthread_mutex_t join_lock; /* one joiner */
    arrank_status load_status; /* the loader's outcome, valid once joined */
    arrank_error load_err;
};

/*
 * Words rigs and spreadsheets write for units that udunits2 spells otherwise
 * (README "Units"): a whole word (letters and '_', between other characters)
 * is replaced, and only these.  "gcat" is grams of catalyst: the rate is per
 * mass of catalyst either way.
 */
static const struct {
    const char *from;
    const char *to;
} aliases[] = {
    {"gcat", "g"},   {"g_cat", "g"}, {"kgcat", "kg"}, {"kg_cat", "kg"}, {"mgcat", "mg"},
    {"mg_cat", "mg"}, {"hr", "h"},   {"hrs", "h"},    {"sec", "s"},     {"secs", "s"},
    {"mins", "min"},
};

static int is_word_char(char c)
{
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || c == '_';
}

/* The alias of the word of n bytes at w, or NULL. */
static const char *alias_of(const char *w, size_t n)
{
    for (size_t k = 0; k < sizeof aliases / sizeof aliases[0]; k++)
        if (strlen(aliases[k].from) == n && memcmp(aliases[k].from, w, n) == 0)
            return aliases[k].to;
    return NULL;
}

/* UTF-8 spellings replaced before udunits sees the text. */
static const struct {
    const char *from;
    const char *to;
} spellings[] = {
    {"\xe2\x84\x83", "degC"}, /* U+2103 DEGREE CELSIUS */
    {"\xe2\x84\x89", "degF"}, /* U+2109 DEGREE FAHRENHEIT */
    {"\xc2\xb0" "C", "degC"}, /* degree sign + C */
    {"\xc2\xb0" "F", "degF"},
    {"\xc2\xba" "C", "degC"}, /* masculine ordinal, often typed for a degree sign */
    {"\xc2\xb5", "u"},        /* U+00B5 MICRO SIGN */
    {"\xce\xbc", "u"},        /* U+03BC GREEK SMALL LETTER MU */
    {"\xc2\xb7", "*"},        /* U+00B7 MIDDLE DOT */
    {"\xe2\x8b\x85", "*"},    /* U+22C5 DOT OPERATOR */
    {"\xc2\xb2", "2"},        /* superscript two */
    {"\xc2\xb3", "3"},        /* superscript three */
};

const char *arrank_basis_name(arrank_basis basis)
{
    switch (basis) {
    case ARRANK_BASIS_MASS: return "mass";
    case ARRANK_BASIS_AREA: return "area";
    case ARRANK_BASIS_SITE: return "site";
    case ARRANK_BASIS_UNKNOWN: break;
    }
    return "unknown";
}

static int is_space(char c)
{
    return c == ' ' || c == '\t' || c == '\r' || c == '\n' || c == '\f' || c == '\v';
}

/*
 * Copy text into out (size UNIT_TEXT_MAX) trimmed and with the UTF-8 spellings
 * replaced.  In temperature context a lone "C"/"F" becomes degC/degF.
 * Returns 0, or -1 when the text does not fit.
 */
static int normalise(const char *text, int temperature, char *out)
{
    while (is_space(*text))
        text++;
    size_t len = strlen(text);
    while (len > 0 && is_space(text[len - 1]))
        len--;
    size_t o = 0;
    for (size_t i = 0; i < len;) {
        if (is_word_char(text[i]) && (i == 0 || !is_word_char(text[i - 1]))) {
            size_t n = 1;
            while (i + n < len && is_word_char(text[i + n]))
                n++;
            const char *rep = alias_of(text + i, n);
            if (rep) {
                size_t add = strlen(rep);
                if (o + add >= UNIT_TEXT_MAX)
                    return -1;
                memcpy(out + o, rep, add);
                o += add;
                i += n;
                continue;
            }
        }
        /* Every spelling replaced starts with a non-ASCII byte: plain ASCII is copied. */
        if ((unsigned char)text[i] < 0x80) {
            if (o + 1 >= UNIT_TEXT_MAX)
                return -1;
            out[o++] = text[i++];
            continue;
        }
        const char *rep = NULL;
        size_t used = 1;
        for (size_t k = 0; k < sizeof spellings / sizeof spellings[0]; k++) {
            size_t n = strlen(spellings[k].from);
            if (n <= len - i && memcmp(text + i, spellings[k].from, n) == 0) {
                rep = spellings[k].to;
                used = n;
                break;
            }
        }
        size_t add = rep ? strlen(rep) : 1;
        if (o + add >= UNIT_TEXT_MAX)
            return -1;
        if (rep)
            memcpy(out + o, rep, add);
        else
            out[o] = text[i];
        o += add;
        i += used;
    }
    out[o] = '\0';
    if (temperature) {
        if (strcmp(out, "C") == 0)
            strcpy(out, "degC");
        else if (strcmp(out, "F") == 0)
            strcpy(out, "degF");
    }
    return 0;
}

int arrank_units_spelling(const char *unit, char *out, size_t n)
{
    char norm[UNIT_TEXT_MAX];
    if (!unit || !out || n == 0 || normalise(unit, 0, norm) != 0 || strlen(norm) >= n)
        return -1;
    memcpy(out, norm, strlen(norm) + 1);
    return 0;
}

static cache_entry *cache_find(arrank_units *units, entry_kind kind, const char *from,
                               const char *to)
{
    for (size_t i = 0; i < units->n_cache; i++) {
        cache_entry *e = &units->cache[i];
        if (e->kind == kind && strcmp(e->from, from) == 0 && strcmp(e->to, to) == 0)
            return e;
    }
    return NULL;
}

/* Remember an answer; running out of memory only costs the cache. */
static void cache_put(arrank_units *units, entry_kind kind, const char *from, const char *to,
                      arrank_conversion conv, arrank_basis basis)
{
    char *f = strdup(from);
    char *t = strdup(to);
    if (!f || !t) {
        free(f);
        free(t);
        return;
    }
    cache_entry *e;
    if (units->n_cache < CACHE_SIZE) {
        e = &units->cache[units->n_cache++];
    } else {
        e = &units->cache[units->next_evict];
        units->next_evict = (units->next_evict + 1) % CACHE_SIZE;
        free(e->from);
        free(e->to);
    }
    e->kind = kind;
    e->from = f;
    e->to = t;
    e->conv = conv;
    e->basis = basis;
}

/* Parse normalised text; an empty string is refused (udunits would read it as "1"). */
static ut_unit *parse_unit(arrank_units *units, const char *norm, const char *shown,
                           arrank_error *err, arrank_status *st)
{
    if (norm[0] == '\0') {
        *st = arrank_errorf(err, ARRANK_EUNIT, "empty unit");
        return NULL;
    }
    arrank_numbers_env env; /* numbers in a unit ("0.001 mol/s") read as in C */
    arrank_numbers_c_enter(&env);
    ut_unit *u = ut_parse(units->system, norm, UT_UTF8);
    arrank_numbers_c_leave(&env);
    if (!u) {
        *st = arrank_errorf(err, ARRANK_EUNIT, "unknown unit '%s'", shown);
        return NULL;
    }
    *st = ARRANK_OK;
    return u;
}

/*
 * Affine conversion between two convertible units.  The scale is measured
 * away from the offset (at 1e6) so that for degF -> K it is not the
 * difference of two numbers near 255.  Only temperatures may have an offset
 * (allow_offset): udunits2 also reads a shifted unit such as
 * 'umol/(g*s) @ 5', which for a rate, its SD or a metadata quantity would
 * silently move every value, so those must be plain multiples.  Logarithmic
 * units fail the linearity check.
 */
static arrank_status affine(const ut_unit *from, const ut_unit *to, const char *shown_from,
                            const char *shown_to, int allow_offset, arrank_conversion *conv,
                            arrank_error *err)
{
    cv_converter *cv = ut_get_converter((ut_unit *)from, (ut_unit *)to);
    if (!cv)
        return arrank_errorf(err, ARRANK_EUNIT, "unit '%s' is not convertible to '%s'",
                             shown_from, shown_to);
    double offset = cv_convert_double(cv, 0.0);
    double scale = offset == 0.0 ? cv_convert_double(cv, 1.0)
                                 : (cv_convert_double(cv, 1e6) - offset) / 1e6;
    double at2 = cv_convert_double(cv, 2.0);
    cv_free(cv);
    double want2 = 2.0 * scale + offset;
    if (!isfinite(scale) || !isfinite(offset) || scale == 0.0 ||
        fabs(at2 - want2) > 1e-9 * (fabs(want2) + fabs(offset) + 1e-300))
        return arrank_errorf(err, ARRANK_EUNIT, "unit '%s' is not a linear unit", shown_from);
    if (offset != 0.0 && !allow_offset)
        return arrank_errorf(err, ARRANK_EUNIT,
                             "unit '%s' has an offset from '%s' (such as '@'): only a "
                             "temperature may; this must be a plain multiple of its unit",
                             shown_from, shown_to);
    conv->scale = scale;
    conv->offset = offset;
    return ARRANK_OK;
}

static void units_free(arrank_units *units);

/* A handle with no database yet; NULL when out of memory. */
static arrank_units *units_alloc(arrank_error *err)
{
    arrank_units *units = calloc(1, sizeof *units);
    if (!units || pthread_mutex_init(&units->join_lock, NULL) != 0) {
        free(units);
        arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the unit database");
        return NULL;
    }
    atomic_init(&units->pending, 0);
    units->load_status = ARRANK_OK;
    return units;
}

/* Read the database into units (udunits lock held); on failure nothing stays loaded. */
static arrank_status units_load(arrank_units *units, arrank_error *err)
{
    /* udunits prints its own diagnostics by default; the library never prints. */
    ut_set_error_message_handler(ut_ignore);
    arrank_numbers_env nums; /* the database's numbers read as in C, in any locale */
    arrank_numbers_c_enter(&nums);
    units->system = ut_read_xml(NULL);
    arrank_numbers_c_leave(&nums);
    if (!units->system) {
        const char *env = getenv("UDUNITS2_XML_PATH");
        return arrank_errorf(err, ARRANK_EIO, "cannot load the udunits2 unit database%s%s%s",
                             env ? " from '" : "", env ? env : "", env ? "'" : "");
    }
    units->kelvin = ut_parse(units->system, "K", UT_ASCII);
    units->rate_mass = ut_parse(units->system, "mol/(kg*s)", UT_ASCII);
    units->rate_area = ut_parse(units->system, "mol/(m2*s)", UT_ASCII);
    units->rate_site = ut_parse(units->system, "1/s", UT_ASCII);
    if (!units->kelvin || !units->rate_mass || !units->rate_area || !units->rate_site) {
        ut_free(units->kelvin);
        ut_free(units->rate_mass);
        ut_free(units->rate_area);
        ut_free(units->rate_site);
        ut_free_system(units->system);
        units->kelvin = units->rate_mass = units->rate_area = units->rate_site = NULL;
        units->system = NULL;
        return arrank_errorf(err, ARRANK_EIO,
                             "the udunits2 unit database lacks K, mol, kg, m or s");
    }
    return ARRANK_OK;
}

static void units_free(arrank_units *units)
{
    if (!units)
        return;
    for (size_t i = 0; i < units->n_cache; i++) {
        free(units->cache[i].from);
        free(units->cache[i].to);
    }
    ut_free(units->kelvin);
    ut_free(units->rate_mass);
    ut_free(units->rate_area);
    ut_free(units->rate_site);
    ut_free_system(units->system);
    pthread_mutex_destroy(&units->join_lock);
    free(units);
}

/* A temperature unit: its conversion to kelvin. */
static arrank_status classify_temperature(const arrank_units *units, const ut_unit *u,
                                          const char *shown, arrank_conversion *conv,
                                          arrank_error *err)
{
    if (!ut_are_convertible(u, units->kelvin))
        return arrank_errorf(err, ARRANK_EUNIT, "'%s' is not a temperature unit", shown);
    return affine(u, units->kelvin, shown, "K", 1, conv, err);
}

/* A rate unit: its basis, which follows from the dimension alone (SI: amount,
   mass, area, time), and its conversion to that basis's SI unit. */
static arrank_status classify_rate(const arrank_units *units, const ut_unit *u,
                                   const char *shown, arrank_conversion *conv,
                                   arrank_basis *basis, arrank_error *err)
{
    const struct {
        const ut_unit *si;
        const char *si_name;
        arrank_basis basis;
    } bases[] = {
        {units->rate_mass, "mol/(kg*s)", ARRANK_BASIS_MASS},
        {units->rate_area, "mol/(m2*s)", ARRANK_BASIS_AREA},
        {units->rate_site, "1/s", ARRANK_BASIS_SITE},
    };
    for (size_t i = 0; i < sizeof bases / sizeof bases[0]; i++) {
        if (!ut_are_convertible(u, bases[i].si))
            continue;
        *basis = bases[i].basis;
        return affine(u, bases[i].si, shown, bases[i].si_name, 0, conv, err);
    }
    return arrank_errorf(err, ARRANK_EUNIT,
                         "'%s' is not a rate per mass, area or site "
                         "(such as umol/(g*s), umol/(m2*s) or 1/s)",
                         shown);
}

/*
 * The lookup of one unit string, temperature or rate: the cache by the text
 * as given, else normalise, parse, classify by kind and remember the answer
 * (only a success is remembered).  Called with udunits_lock held, as every
 * function below the public calls.
 */
static arrank_status lookup_unit(arrank_units *units, entry_kind kind, const char *unit,
                                 arrank_conversion *conv, arrank_basis *basis,
                                 arrank_error *err)
{
    const cache_entry *e = cache_find(units, kind, unit, "");
    if (e) {
        *conv = e->conv;
        *basis = e->basis;
        return ARRANK_OK;
    }
    char norm[UNIT_TEXT_MAX];
    if (normalise(unit, kind == KIND_TEMPERATURE, norm) != 0)
        return arrank_errorf(err, ARRANK_EUNIT, "unit text is longer than %d bytes",
                             UNIT_TEXT_MAX - 1);
    arrank_status st;
    ut_unit *u = parse_unit(units, norm, unit, err, &st);
    if (!u)
        return st;
    arrank_conversion c;
    arrank_basis b = ARRANK_BASIS_UNKNOWN; /* a temperature has no basis */
    st = kind == KIND_TEMPERATURE ? classify_temperature(units, u, unit, &c, err)
                                  : classify_rate(units, u, unit, &c, &b, err);
    ut_free(u);
    if (st != ARRANK_OK)
        return st;
    cache_put(units, kind, unit, "", c, b);
    *conv = c;
    *basis = b;
    return ARRANK_OK;
}

static arrank_status units_temperature(arrank_units *units, const char *unit,
                                       arrank_conversion *to_K, arrank_error *err)
{
    if (!units || !unit || !to_K)
        return arrank_errorf(err, ARRANK_EINVAL, "missing argument to arrank_units_temperature");
    arrank_basis unused;
    return lookup_unit(units, KIND_TEMPERATURE, unit, to_K, &unused, err);
}

static arrank_status units_rate(arrank_units *units, const char *unit, arrank_basis *basis,
                                arrank_conversion *to_si, arrank_error *err)
{
    if (!units || !unit || !basis || !to_si)
        return arrank_errorf(err, ARRANK_EINVAL, "missing argument to arrank_units_rate");
    return lookup_unit(units, KIND_RATE, unit, to_si, basis, err);
}

static arrank_status units_conversion(arrank_units *units, const char *from, const char *to,
                                      arrank_conversion *conv, arrank_error *err)
{
    if (!units || !from || !to || !conv)
        return arrank_errorf(err, ARRANK_EINVAL, "missing argument to arrank_units_conversion");
    cache_entry *e = cache_find(units, KIND_CONVERSION, from, to);
    if (e) {
        *conv = e->conv;
        return ARRANK_OK;
    }
    char nfrom[UNIT_TEXT_MAX], nto[UNIT_TEXT_MAX];
    if (normalise(from, 0, nfrom) != 0 || normalise(to, 0, nto) != 0)
        return arrank_errorf(err, ARRANK_EUNIT, "unit text is longer than %d bytes",
                             UNIT_TEXT_MAX - 1);
    arrank_status st;
    ut_unit *uf = parse_unit(units, nfrom, from, err, &st);
    if (!uf)
        return st;
    ut_unit *ut = parse_unit(units, nto, to, err, &st);
    if (!ut) {
        ut_free(uf);
        return st;
    }
    arrank_conversion c;
    if (!ut_are_convertible(uf, ut))
        st = arrank_errorf(err, ARRANK_EUNIT, "unit '%s' is not convertible to '%s'", from, to);
    else
        st = affine(uf, ut, from, to, ut_are_convertible(uf, units->kelvin), &c, err);
    ut_free(uf);
    ut_free(ut);
    if (st != ARRANK_OK)
        return st;
    cache_put(units, KIND_CONVERSION, from, to, c, ARRANK_BASIS_UNKNOWN);
    *conv = c;
    return ARRANK_OK;
}

/* Trimmed copy of text for messages, cut at UNIT_TEXT_MAX - 1 bytes. */
static void trimmed_copy(const char *text, char *out)
{
    while (is_space(*text))
        text++;
    size_t len = strlen(text);
    while (len > 0 && is_space(text[len - 1]))
        len--;
    if (len >= UNIT_TEXT_MAX)
        len = UNIT_TEXT_MAX - 1;
    memcpy(out, text, len);
    out[len] = '\0';
}

/*
 * Split "VALUE UNIT" into the number and the trimmed unit text.  The number
 * uses a decimal point only (strtod as in the C locale, number.c), whatever
 * the caller's locale.  Returns 0, or -1 when
 * the text does not start with a finite number.
 */
static int split_value(const char *text, double *value, const char **unit)
{
    while (is_space(*text))
        text++;
    if (*text == '\0')
        return -1;
    /* strtod would also read hexadecimal, "inf" and "nan": none is a measured value. */
    if (!(isdigit((unsigned char)*text) || *text == '.' || *text == '-' || *text == '+'))
        return -1;
    if ((text[0] == '0' && (text[1] == 'x' || text[1] == 'X')) ||
        ((text[0] == '-' || text[0] == '+') && text[1] == '0' &&
         (text[2] == 'x' || text[2] == 'X')))
        return -1;
    char *end;
    errno = 0;
    double v = arrank_decimal_prefix(text, &end);
    if (end == text || errno == ERANGE || !isfinite(v))
        return -1;
    while (is_space(*end))
        end++;
    *value = v;
    *unit = end;
    return 0;
}

static arrank_status units_parse_temperature(arrank_units *units, const char *text, double *temp_K,
                                             arrank_error *err)
{
    if (!units || !text || !temp_K)
        return arrank_errorf(err, ARRANK_EINVAL,
                             "missing argument to arrank_units_parse_temperature");
    double v;
    const char *unit;
    char shown[UNIT_TEXT_MAX];
    trimmed_copy(text, shown);
    if (split_value(text, &v, &unit) != 0)
        return arrank_errorf(err, ARRANK_EINVAL,
                             "'%s' is not a temperature; write it as 250C, 250degC or 523.15K",
                             shown);
    if (*unit == '\0')
        return arrank_errorf(err, ARRANK_EINVAL,
                             "temperature '%s' has no unit; write it as %sC (Celsius), "
                             "%sK (kelvin) or %sF (Fahrenheit)",
                             shown, shown, shown, shown);
    arrank_conversion c;
    arrank_status st = units_temperature(units, unit, &c, err);
    if (st != ARRANK_OK)
        return st;
    double t = c.scale * v + c.offset;
    if (!(t > 0.0) || !isfinite(t))
        return arrank_errorf(err, ARRANK_EINVAL,
                             "temperature '%s' is at or below absolute zero", shown);
    *temp_K = t;
    return ARRANK_OK;
}

static arrank_status units_parse_quantity(arrank_units *units, const char *text,
                                          const char *si_unit, double *value_si, arrank_error *err)
{
    if (!units || !text || !si_unit || !value_si)
        return arrank_errorf(err, ARRANK_EINVAL,
                             "missing argument to arrank_units_parse_quantity");
    double v;
    const char *unit;
    if (split_value(text, &v, &unit) != 0)
        return arrank_errorf(err, ARRANK_EINVAL, "'%s' is not a number with a unit", text);
    if (*unit == '\0') {
        if (strcmp(si_unit, "1") == 0) {
            *value_si = v;
            return ARRANK_OK;
        }
        return arrank_errorf(err, ARRANK_EUNIT, "'%s' has no unit; write it with a unit of '%s'",
                             text, si_unit);
    }
    arrank_conversion c;
    arrank_status st = units_conversion(units, unit, si_unit, &c, err);
    if (st != ARRANK_OK)
        return st;
    double out = c.scale * v + c.offset;
    if (!isfinite(out))
        return arrank_errorf(err, ARRANK_EINVAL, "'%s' is out of range in '%s'", text, si_unit);
    *value_si = out;
    return ARRANK_OK;
}

/*
 * The public calls: each holds one lock for the whole process.  udunits2's
 * parser and XML reader keep global state, so two threads must never be
 * inside it at once, even with separate unit systems.  Uncontended, the lock
 * costs little beside a cache lookup.
 */
static pthread_mutex_t udunits_lock = PTHREAD_MUTEX_INITIALIZER;

arrank_units *arrank_units_create(arrank_error *err)
{
    arrank_units *units = units_alloc(err);
    if (!units)
        return NULL;
    pthread_mutex_lock(&udunits_lock);
    arrank_status st = units_load(units, err);
    if (st != ARRANK_OK) {
        units_free(units);
        units = NULL;
    }
    pthread_mutex_unlock(&udunits_lock);
    return units;
}

static void *loader_main(void *arg)
{
    arrank_units *units = arg;
    arrank_error_clear(&units->load_err);
    pthread_mutex_lock(&udunits_lock);
    units->load_status = units_load(units, &units->load_err);
    pthread_mutex_unlock(&udunits_lock);
    return NULL;
}

arrank_units *arrank_units_create_background(arrank_error *err)
{
    arrank_units *units = units_alloc(err);
    if (!units)
        return NULL;
    atomic_store(&units->pending, 1);
    if (pthread_create(&units->loader, NULL, loader_main, units) != 0) {
        /* no thread to spare: read it now, as arrank_units_create does */
        atomic_store(&units->pending, 0);
        pthread_mutex_lock(&udunits_lock);
        arrank_status st = units_load(units, err);
        if (st != ARRANK_OK) {
            units_free(units);
            units = NULL;
        }
        pthread_mutex_unlock(&udunits_lock);
    }
    return units;
}

/*
 * Wait for a database read in the background; its failure, if any, as every
 * call's.  Called before taking udunits_lock, which the loader holds while it
 * reads.  The join happens once (join_lock); the acquire load pairs with the
 * release store after it, so a thread that sees pending == 0 sees the
 * loader's writes.
 */
static arrank_status units_ready(arrank_units *units, arrank_error *err)
{
    if (!units)
        return ARRANK_OK; /* the functions below report a missing handle as before */
    if (atomic_load_explicit(&units->pending, memory_order_acquire)) {
        pthread_mutex_lock(&units->join_lock);
        if (atomic_load_explicit(&units->pending, memory_order_relaxed)) {
            pthread_join(units->loader, NULL);
            atomic_store_explicit(&units->pending, 0, memory_order_release);
        }
        pthread_mutex_unlock(&units->join_lock);
    }
    if (units->load_status != ARRANK_OK) {
        if (err)
            *err = units->load_err;
        return units->load_status;
    }
    return ARRANK_OK;
}

arrank_status arrank_units_ready(arrank_units *units, arrank_error *err)
{
    return units_ready(units, err);
}

/* The way into udunits for every public function: the database ready, then
   the lock (not taken when the database failed: that failure is returned). */
static arrank_status units_enter(arrank_units *units, arrank_error *err)
{
    arrank_status ready = units_ready(units, err);
    if (ready == ARRANK_OK)
        pthread_mutex_lock(&udunits_lock);
    return ready;
}

void arrank_units_free(arrank_units *units)
{
    arrank_error ignored;
    units_ready(units, &ignored);
    pthread_mutex_lock(&udunits_lock);
    units_free(units);
    pthread_mutex_unlock(&udunits_lock);
}

arrank_status arrank_units_temperature(arrank_units *units, const char *unit,
                                       arrank_conversion *to_K, arrank_error *err)
{
    arrank_status r = units_enter(units, err);
    if (r != ARRANK_OK)
        return r;
    r = units_temperature(units, unit, to_K, err);
    pthread_mutex_unlock(&udunits_lock);
    return r;
}

arrank_status arrank_units_rate(arrank_units *units, const char *unit, arrank_basis *basis,
                                arrank_conversion *to_si, arrank_error *err)
{
    arrank_status r = units_enter(units, err);
    if (r != ARRANK_OK)
        return r;
    r = units_rate(units, unit, basis, to_si, err);
    pthread_mutex_unlock(&udunits_lock);
    return r;
}

arrank_status arrank_units_conversion(arrank_units *units, const char *from, const char *to,
                                      arrank_conversion *conv, arrank_error *err)
{
    arrank_status r = units_enter(units, err);
    if (r != ARRANK_OK)
        return r;
    r = units_conversion(units, from, to, conv, err);
    pthread_mutex_unlock(&udunits_lock);
    return r;
}

arrank_status arrank_units_parse_temperature(arrank_units *units, const char *text,
                                             double *temp_K, arrank_error *err)
{
    arrank_status r = units_enter(units, err);
    if (r != ARRANK_OK)
        return r;
    r = units_parse_temperature(units, text, temp_K, err);
    pthread_mutex_unlock(&udunits_lock);
    return r;
}

arrank_status arrank_units_parse_quantity(arrank_units *units, const char *text,
                                          const char *si_unit, double *value_si,
                                          arrank_error *err)
{
    arrank_status r = units_enter(units, err);
    if (r != ARRANK_OK)
        return r;
    r = units_parse_quantity(units, text, si_unit, value_si, err);
    pthread_mutex_unlock(&udunits_lock);
    return r;
}
