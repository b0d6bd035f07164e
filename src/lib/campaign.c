/*
 * campaign.c - reading a campaign folder: campaign.ini and one CSV per sample.
 *
 * A sample file is: optional "# key = value" metadata lines, a header of
 * "name [unit]" fields, then data rows (format: README.md, "The campaign
 * format").  The metadata block is read here line by line; from the header on,
 * the text goes to libcsv one physical line at a time, so every message can
 * name the line (and the field) it is about even when a quoted field spans
 * lines or the file mixes CR, LF and CRLF line ends.  Temperatures become
 * kelvin and rates the campaign's report unit as they are read; udunits is
 * asked about each distinct unit string once (see units.c), which keeps a
 * campaign of thousands of files fast.
 *
 * A malformed file stops the load with an error that names path, line and
 * column.  A sample that is well formed but cannot be fitted keeps its points
 * and gets a `problem`, so that the analysis can report it instead of losing
 * it.  Input files are only ever opened for reading.
 *
 * Column rules: T/temperature and rate/r need a unit; rate_sd needs a unit
 * convertible to the rate's (it is converted with it); time_on_stream needs a
 * time unit (stored in s); conversion is a fraction, or a percentage when
 * written 'conversion [%]', and must lie in 0..1; run is a text label (empty:
 * no run).  Other columns are kept as a note.  Empty cells in optional columns
 * are NAN; a data row whose first field starts with '#' is a comment.
 */
#include "arrank/campaign.h"
#include "arrank/rates.h"
#include "arrank/fit.h"
#include "internal.h"
#include "number.h"
#include "units_internal.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <csv.h>
#include <ini.h>

#define UNIT_MAX 256
#define DERIVED_RATE_UNIT "mol/(kg*s)" /* rates derived from conversion, before conversion */

/* ---------------------------------------------------------------- helpers */

static int ascii_lower(int c)
{
    return (c >= 'A' && c <= 'Z') ? c - 'A' + 'a' : c;
}

/* Case-insensitive ASCII comparison, independent of the locale. */
static int ascii_casecmp(const char *a, const char *b)
{
    for (;; a++, b++) {
        int ca = ascii_lower((unsigned char)*a), cb = ascii_lower((unsigned char)*b);
        if (ca != cb || ca == 0)
            return ca - cb;
    }
}

static int ascii_casecmp_n(const char *a, const char *b, size_t n)
{
    for (size_t i = 0; i < n; i++) {
        int ca = ascii_lower((unsigned char)a[i]), cb = ascii_lower((unsigned char)b[i]);
        if (ca != cb || ca == 0)
            return ca - cb;
    }
    return 0;
}

static int is_blank(char c)
{
    return c == ' ' || c == '\t';
}

static char *dup_range(const char *s, size_t n)
{
    char *d = malloc(n + 1);
    if (!d)
        return NULL;
    memcpy(d, s, n);
    d[n] = '\0';
    return d;
}

/* Copy text into out (size n), cut if it does not fit; snprintf costs more per cell. */
static void copy_cut(char *out, size_t n, const char *text)
{
    size_t len = strlen(text);
    if (len >= n)
        len = n - 1;
    memcpy(out, text, len);
    out[len] = '\0';
}

/* Trim blanks and line-end characters in place; returns the start. */
static char *trim(char *s)
{
    while (is_blank(*s) || *s == '\r' || *s == '\n')
        s++;
    size_t n = strlen(s);
    while (n > 0 && (is_blank(s[n - 1]) || s[n - 1] == '\r' || s[n - 1] == '\n'))
        s[--n] = '\0';
    return s;
}

static const char *base_name(const char *path)
{
    const char *slash = strrchr(path, '/');
    return slash ? slash + 1 : path;
}

static int has_csv_extension(const char *name)
{
    size_t n = strlen(name);
    return n > 4 && ascii_casecmp(name + n - 4, ".csv") == 0;
}

/* Grow *array (element size elem) so that it holds at least need elements. */
/* Points reserved from the line count before parsing (parse_sample). */
#define POINTS_RESERVE_MAX 4096

static int grow(void **array, size_t *cap, size_t need, size_t elem)
{
    if (need <= *cap)
        return 0;
    size_t n = *cap ? *cap : 8;
    while (n < need) {
        if (n > SIZE_MAX / 2 / elem)
            return -1;
        n *= 2;
    }
    void *p = realloc(*array, n * elem);
    if (!p)
        return -1;
    *array = p;
    *cap = n;
    return 0;
}

/* Append a copy of text to a string list. */
static int list_add(char ***list, size_t *n, size_t *cap, const char *text)
{
    if (grow((void **)list, cap, *n + 1, sizeof **list) != 0)
        return -1;
    char *copy = strdup(text);
    if (!copy)
        return -1;
    (*list)[(*n)++] = copy;
    return 0;
}

static void list_free(char **list, size_t n)
{
    for (size_t i = 0; i < n; i++)
        free(list[i]);
    free(list);
}

/* strerror text with a lowercase first letter, to match our message style. */
static void os_message(int errnum, char *buf, size_t n)
{
    snprintf(buf, n, "%s", strerror(errnum));
    if (buf[0] >= 'A' && buf[0] <= 'Z' && !(buf[1] >= 'A' && buf[1] <= 'Z'))
        buf[0] = (char)ascii_lower((unsigned char)buf[0]);
}

/*
 * Parse a numeric cell: blanks around it allowed, a decimal comma when the
 * delimiter is not a comma.  Returns 0, or 1 (not a number), 2 (not finite),
 * 3 (out of the range of double).
 */
static int parse_number(char *text, char delim, double *value)
{
    char *s = trim(text);
    if (*s == '\0')
        return 1;
    for (char *p = s; *p; p++) {
        if (*p == ',' && delim != ',')
            *p = '.';
        else if (*p == 'x' || *p == 'X') /* strtod reads hexadecimal; a lab file does not */
            return 1;
    }
    double v;
    if (arrank_decimal_fast(s, &v)) { /* exact; see number.c */
        *value = v;
        return 0;
    }
    char *end;
    errno = 0;
    v = strtod(s, &end);
    if (end == s || *end != '\0')
        return 1;
    if (isnan(v) || (isinf(v) && errno != ERANGE))
        return 2;
    if (errno == ERANGE)
        return 3;
    *value = v;
    return 0;
}

/* ------------------------------------------------------- run label lookup */

/* Open-addressing table of run labels -> index in sample->runs, so a file
   with many distinct labels is not searched quadratically. */
typedef struct {
    size_t *slots; /* index + 1; 0 = empty */
    size_t cap;    /* power of two */
} run_table;

static size_t hash_text(const char *s)
{
    /* FNV-1a, 64-bit offset basis and prime (Fowler, Noll, Vo; public domain). */
    uint64_t h = 1469598103934665603ULL;
    for (; *s; s++) {
        h ^= (unsigned char)*s;
        h *= 1099511628211ULL;
    }
    return (size_t)h;
}

/* Index of label in sample->runs, adding it if new; -1 when out of memory. */
static long run_index(run_table *t, arrank_sample *s, size_t *runs_cap, const char *label)
{
    if ((s->n_runs + 1) * 2 > t->cap) {
        size_t ncap = t->cap ? t->cap * 2 : 16;
        size_t *slots = calloc(ncap, sizeof *slots);
        if (!slots)
            return -1;
        for (size_t i = 0; i < s->n_runs; i++) {
            size_t h = hash_text(s->runs[i]) & (ncap - 1);
            while (slots[h])
                h = (h + 1) & (ncap - 1);
            slots[h] = i + 1;
        }
        free(t->slots);
        t->slots = slots;
        t->cap = ncap;
    }
    size_t h = hash_text(label) & (t->cap - 1);
    while (t->slots[h]) {
        if (strcmp(s->runs[t->slots[h] - 1], label) == 0)
            return (long)(t->slots[h] - 1);
        h = (h + 1) & (t->cap - 1);
    }
    if (list_add(&s->runs, &s->n_runs, runs_cap, label) != 0)
        return -1;
    t->slots[h] = s->n_runs;
    return (long)(s->n_runs - 1);
}

/* ------------------------------------------------------------ sample file */

typedef enum {
    COL_IGNORED,
    COL_TEMP,
    COL_RATE,
    COL_RATE_SD,
    COL_RUN,
    COL_TIME,
    COL_CONVERSION
} column_kind;

static const struct {
    const char *name;
    column_kind kind;
} column_names[] = {
    {"t", COL_TEMP},          {"temperature", COL_TEMP}, {"rate", COL_RATE},
    {"r", COL_RATE},          {"rate_sd", COL_RATE_SD},  {"run", COL_RUN},
    {"time_on_stream", COL_TIME}, {"conversion", COL_CONVERSION},
};

typedef struct {
    column_kind kind;
    char *name; /* as written */
    char *unit; /* as written, NULL if none */
    arrank_conversion conv;
} data_column;

typedef struct {
    const char *path;
    arrank_units *units;
    const char *report_unit;
    arrank_sample *sample;
    arrank_error *err;
    arrank_status status;
    char delim;
    long line;        /* physical line being fed to libcsv */
    long header_line;
    int in_header;
    data_column *cols;
    size_t n_cols, cols_cap;
    size_t col_of[COL_CONVERSION + 1]; /* column index + 1 of each kind; 0 = absent */
    /* current row */
    size_t field;
    int row_is_comment;
    arrank_point point;
    char rate_text[64];
    arrank_conversion derived_conv; /* mol/(kg*s) to the report unit, derived rates only */
    /* storage */
    char *cell;
    size_t cell_cap;
    size_t points_cap, meta_cap, notes_cap, runs_cap;
    run_table runs;
} parser;

static arrank_status fail(parser *p, arrank_status st, long colno, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 4, 5)))
#endif
    ;

static arrank_status fail(parser *p, arrank_status st, long colno, const char *fmt, ...)
{
    if (p->status != ARRANK_OK)
        return p->status;
    p->status = st;
    char msg[ARRANK_ERROR_MSG_MAX];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(msg, sizeof msg, fmt, ap);
    va_end(ap);
    arrank_error_at(p->err, st, p->path, p->line, colno, "%s", msg);
    return st;
}

static arrank_status nomem(parser *p)
{
    return fail(p, ARRANK_ENOMEM, 0, "out of memory");
}

/* Split a header field "name [unit]" and record the column. */
static void header_field(parser *p, char *text)
{
    long colno = (long)p->n_cols + 1;
    if (p->n_cols >= (size_t)ARRANK_CAMPAIGN_MAX_COLUMNS) {
        fail(p, ARRANK_ELIMIT, colno, "the header has more than %ld columns",
             ARRANK_CAMPAIGN_MAX_COLUMNS);
        return;
    }
    char *s = trim(text);
    char *unit = NULL;
    char *open = strchr(s, '[');
    if (open) {
        char *close = strchr(open + 1, ']');
        if (!close) {
            fail(p, ARRANK_EPARSE, colno, "unclosed '[' in header field '%s'", s);
            return;
        }
        char *after = close + 1;
        while (is_blank(*after))
            after++;
        if (*after) {
            fail(p, ARRANK_EPARSE, colno,
                 "text after ']' in header field '%s'; write it as 'name [unit]'", s);
            return;
        }
        *open = '\0';
        *close = '\0';
        unit = trim(open + 1);
        if (*unit == '\0')
            unit = NULL;
        s = trim(s);
    }
    data_column c = {COL_IGNORED, NULL, NULL, {1.0, 0.0}};
    for (size_t k = 0; k < sizeof column_names / sizeof column_names[0]; k++)
        if (ascii_casecmp(s, column_names[k].name) == 0)
            c.kind = column_names[k].kind;
    if (c.kind != COL_IGNORED && p->col_of[c.kind]) {
        fail(p, ARRANK_EPARSE, colno, "column '%s' repeats column %zu '%s'", s,
             p->col_of[c.kind], p->cols[p->col_of[c.kind] - 1].name);
        return;
    }
    if (grow((void **)&p->cols, &p->cols_cap, p->n_cols + 1, sizeof *p->cols) != 0) {
        nomem(p);
        return;
    }
    c.name = strdup(s);
    c.unit = unit ? strdup(unit) : NULL;
    if (!c.name || (unit && !c.unit)) {
        free(c.name);
        free(c.unit);
        nomem(p);
        return;
    }
    p->cols[p->n_cols++] = c;
    if (c.kind != COL_IGNORED)
        p->col_of[c.kind] = p->n_cols;
}

/* Unit of a column that needs one; NULL (after failing) when it has none. */
static const char *required_unit(parser *p, size_t idx, const char *rate_unit)
{
    data_column *c = &p->cols[idx];
    if (c->unit)
        return c->unit;
    const char *n = c->name;
    switch (c->kind) {
    case COL_TEMP:
        fail(p, ARRANK_EUNIT, (long)idx + 1,
             "column '%s' has no unit; write it as '%s [degC]' or '%s [K]'", n, n, n);
        break;
    case COL_TIME:
        fail(p, ARRANK_EUNIT, (long)idx + 1,
             "column '%s' has no unit; write it as '%s [h]' or '%s [min]'", n, n, n);
        break;
    default:
        fail(p, ARRANK_EUNIT, (long)idx + 1, "column '%s' has no unit; write it as '%s [%s]'", n,
             n, rate_unit ? rate_unit : "umol/(g*s)");
        break;
    }
    return NULL;
}

/*
 * Re-point a units error at a header column: the column name goes right after
 * the quoted unit ("unknown unit 'x' in column 'T'", "'s' in column 'T' is
 * not a temperature unit").
 */
static void unit_fail(parser *p, size_t idx, const arrank_error *uerr)
{
    const char *msg = uerr->message;
    const char *q1 = strchr(msg, '\'');
    const char *q2 = q1 ? strchr(q1 + 1, '\'') : NULL;
    size_t head = q2 ? (size_t)(q2 + 1 - msg) : strlen(msg);
    fail(p, uerr->status, (long)idx + 1, "%.*s in column '%s'%s", (int)head, msg,
         p->cols[idx].name, msg + head);
}

/* Everything the header row decides: units, conversions, required columns. */
static void header_done(parser *p)
{
    arrank_sample *s = p->sample;
    arrank_error uerr;
    arrank_error_clear(&uerr);
    if (!p->col_of[COL_TEMP]) {
        fail(p, ARRANK_EPARSE, 0, "no temperature column; the header needs e.g. 'T [degC]'");
        return;
    }
    if (!p->col_of[COL_RATE] && !p->col_of[COL_CONVERSION]) {
        fail(p, ARRANK_EPARSE, 0,
             "no rate column; the header needs e.g. 'rate [umol/(g*s)]' (or a 'conversion' "
             "column with feed metadata, to derive the rates)");
        return;
    }
    if (!p->col_of[COL_RATE]) {
        /* Rates will come from conversion and the feed metadata, in SI per mass;
           derive_rates() fills them once all metadata (file and campaign.ini) are known. */
        s->rates_derived = 1;
        s->basis = ARRANK_BASIS_MASS;
        s->rate_unit_file = strdup(DERIVED_RATE_UNIT);
        if (!s->rate_unit_file) {
            nomem(p);
            return;
        }
        if (p->report_unit &&
            arrank_units_conversion(p->units, DERIVED_RATE_UNIT, p->report_unit,
                                    &p->derived_conv, &uerr) != ARRANK_OK) {
            fail(p, ARRANK_EUNIT, 0,
                 "rates derived from conversion are per mass (%s) and not convertible to the "
                 "campaign's '%s'", DERIVED_RATE_UNIT, p->report_unit);
            return;
        }
    }
    for (size_t i = 0; i < p->n_cols && p->status == ARRANK_OK; i++) {
        data_column *c = &p->cols[i];
        char note[ARRANK_ERROR_MSG_MAX];
        switch (c->kind) {
        case COL_IGNORED:
            if (c->name[0])
                snprintf(note, sizeof note, "column '%s' ignored", c->name);
            else
                snprintf(note, sizeof note, "column %zu has no name; ignored", i + 1);
            if (list_add(&s->notes, &s->n_notes, &p->notes_cap, note) != 0)
                nomem(p);
            break;
        case COL_TEMP: {
            const char *u = required_unit(p, i, NULL);
            if (u && arrank_units_temperature(p->units, u, &c->conv, &uerr) != ARRANK_OK)
                unit_fail(p, i, &uerr);
            break;
        }
        case COL_RATE: {
            const char *u = required_unit(p, i, NULL);
            if (!u)
                break;
            arrank_conversion to_si;
            if (arrank_units_rate(p->units, u, &s->basis, &to_si, &uerr) != ARRANK_OK) {
                unit_fail(p, i, &uerr);
                break;
            }
            s->rate_unit_file = strdup(u);
            if (!s->rate_unit_file) {
                nomem(p);
                break;
            }
            if (p->report_unit &&
                arrank_units_conversion(p->units, u, p->report_unit, &c->conv, &uerr) !=
                    ARRANK_OK) {
                fail(p, ARRANK_EUNIT, (long)i + 1,
                     "rate unit '%s' of %s is not convertible to the campaign's '%s'", u,
                     base_name(p->path), p->report_unit);
            }
            break;
        }
        default:
            break;
        }
    }
    /* The optional columns convert into what the rate column fixed. */
    const char *rate_unit = p->report_unit ? p->report_unit : s->rate_unit_file;
    for (size_t i = 0; i < p->n_cols && p->status == ARRANK_OK; i++) {
        data_column *c = &p->cols[i];
        if (c->kind == COL_RATE_SD) {
            const char *u = required_unit(p, i, rate_unit);
            if (u && arrank_units_conversion(p->units, u, rate_unit, &c->conv, &uerr) !=
                         ARRANK_OK)
                fail(p, ARRANK_EUNIT, (long)i + 1,
                     "unit '%s' of column '%s' is not convertible to the rate unit '%s'", u,
                     c->name, rate_unit);
        } else if (c->kind == COL_TIME) {
            const char *u = required_unit(p, i, NULL);
            if (u && arrank_units_conversion(p->units, u, "s", &c->conv, &uerr) != ARRANK_OK)
                unit_fail(p, i, &uerr);
        } else if (c->kind == COL_CONVERSION) {
            /* No unit means a fraction: conversion is dimensionless by nature. */
            if (c->unit &&
                arrank_units_conversion(p->units, c->unit, "1", &c->conv, &uerr) != ARRANK_OK)
                fail(p, ARRANK_EUNIT, (long)i + 1,
                     "unit '%s' of column '%s' is not a fraction; use '%%' or none", c->unit,
                     c->name);
        }
    }
}

static void start_point(parser *p)
{
    p->point.temp_K = NAN;
    p->point.rate = NAN;
    p->point.rate_sd = NAN;
    p->point.conversion = NAN;
    p->point.time_on_stream_s = NAN;
    p->point.run = -1;
    p->point.line = p->line;
    p->rate_text[0] = '\0';
}

/* One data cell: parse, convert, validate. */
static void data_field(parser *p, char *text)
{
    size_t idx = p->field;
    if (idx == 0) {
        char *t = text;
        while (is_blank(*t))
            t++;
        p->row_is_comment = *t == '#';
        start_point(p);
    }
    if (p->row_is_comment || idx >= p->n_cols)
        return; /* extra fields: counted, reported at the end of the row */
    data_column *c = &p->cols[idx];
    long colno = (long)idx + 1;
    if (c->kind == COL_IGNORED)
        return;
    if (c->kind == COL_RUN) {
        char *label = trim(text);
        if (*label) {
            long r = run_index(&p->runs, p->sample, &p->runs_cap, label);
            if (r < 0) {
                nomem(p);
                return;
            }
            p->point.run = (int)r;
        }
        return;
    }
    /* A plain decimal - nearly every cell - is read in place (number.c) and
       its text copied only for a message.  Anything else goes the long way,
       and its text is kept first, as written: parse_number rewrites a decimal
       comma.  parse_number would read a plain decimal the same way, since its
       rewrite finds no comma and no 'x' in one. */
    char shown[64]; /* the cell as written, cut to fit, for messages */
    char *cell = trim(text);
    double v = NAN;
    if (arrank_decimal_fast(cell, &v)) {
        shown[0] = '\0';
    } else {
        copy_cut(shown, sizeof shown, cell);
        int bad = parse_number(cell, p->delim, &v);
        if (bad == 1 && shown[0] == '\0') {
            if (c->kind == COL_TEMP || c->kind == COL_RATE ||
                (c->kind == COL_CONVERSION && p->sample->rates_derived))
                fail(p, ARRANK_EPARSE, colno, "empty cell in column '%s'", c->name);
            return; /* optional quantity not given */
        }
        if (bad == 1) {
            fail(p, ARRANK_EPARSE, colno, "'%s' is not a number in column '%s'", shown,
                 c->name);
            return;
        }
        if (bad == 2) {
            fail(p, ARRANK_EPARSE, colno, "'%s' is not a finite number in column '%s'", shown,
                 c->name);
            return;
        }
        if (bad == 3) {
            fail(p, ARRANK_EPARSE, colno, "'%s' is out of range in column '%s'", shown,
                 c->name);
            return;
        }
    }
    double conv = c->conv.scale * v + c->conv.offset;
    int ok = isfinite(conv);
    switch (c->kind) {
    case COL_TEMP:
        ok = ok && conv > 0.0;
        break;
    case COL_RATE:
        ok = ok && conv > 0.0; /* else the row may need the text for a problem */
        break;
    case COL_RATE_SD:
        ok = ok && !(conv < 0.0);
        break;
    case COL_CONVERSION:
        ok = ok && !(conv < 0.0 || conv > 1.0);
        break;
    default:
        break;
    }
    if (!ok && shown[0] == '\0')
        copy_cut(shown, sizeof shown, cell); /* the fast read left the cell as written */
    if (!isfinite(conv)) { /* e.g. 1e306 mol/(kg*s) is 1e309 umol/(g*s): past double */
        fail(p, ARRANK_EPARSE, colno, "'%s' is out of range in column '%s' once converted",
             shown, c->name);
        return;
    }
    switch (c->kind) {
    case COL_TEMP:
        if (!(conv > 0.0))
            fail(p, ARRANK_EPARSE, colno,
                 "temperature '%s %s' is at or below absolute zero (0 K)", shown, c->unit);
        p->point.temp_K = conv;
        break;
    case COL_RATE:
        p->point.rate = conv;
        if (!(conv > 0.0)) /* on_row's problem message quotes it */
            copy_cut(p->rate_text, sizeof p->rate_text, shown);
        break;
    case COL_RATE_SD:
        if (conv < 0.0)
            fail(p, ARRANK_EPARSE, colno, "'%s' in column '%s' is negative", shown, c->name);
        p->point.rate_sd = conv;
        break;
    case COL_TIME:
        p->point.time_on_stream_s = conv;
        break;
    case COL_CONVERSION:
        if (conv < 0.0 || conv > 1.0)
            fail(p, ARRANK_EPARSE, colno,
                 "conversion '%s' is outside 0..1; a percentage needs '%s [%%]'", shown,
                 c->name);
        p->point.conversion = conv;
        break;
    default:
        break;
    }
}

/* One field of len bytes at data, from libcsv or from split_plain_line. */
static void field_text(parser *p, const char *data, size_t len)
{
    if (p->status != ARRANK_OK)
        return;
    /* libcsv's bytes are neither NUL-terminated nor valid after the callback. */
    if (grow((void **)&p->cell, &p->cell_cap, len + 1, 1) != 0) {
        nomem(p);
        return;
    }
    memcpy(p->cell, data, len);
    p->cell[len] = '\0';
    if (p->in_header)
        header_field(p, p->cell);
    else
        data_field(p, p->cell);
    p->field++;
}

static void on_field(void *data, size_t len, void *user)
{
    field_text(user, data, len);
}

static void on_row(int c, void *user)
{
    (void)c;
    parser *p = user;
    size_t n = p->field;
    p->field = 0;
    if (p->status != ARRANK_OK || n == 0)
        return;
    if (p->in_header) {
        p->in_header = 0;
        header_done(p);
        return;
    }
    if (p->row_is_comment)
        return;
    if (n != p->n_cols) {
        long colno = (long)(n < p->n_cols ? n : p->n_cols) + 1;
        fail(p, ARRANK_EPARSE, colno, "row has %zu fields but the header has %zu%s", n, p->n_cols,
             n > p->n_cols && p->delim == ','
                 ? " (a decimal comma needs ';' or tab as the delimiter)"
                 : "");
        return;
    }
    arrank_sample *s = p->sample;
    if (s->n_points >= (size_t)ARRANK_CAMPAIGN_MAX_ROWS) {
        fail(p, ARRANK_ELIMIT, 0, "more than %ld data rows", ARRANK_CAMPAIGN_MAX_ROWS);
        return;
    }
    if (grow((void **)&s->points, &p->points_cap, s->n_points + 1, sizeof *s->points) != 0) {
        nomem(p);
        return;
    }
    s->points[s->n_points++] = p->point;
    if (!s->rates_derived && !(p->point.rate > 0.0) && !s->problem) {
        char msg[256];
        snprintf(msg, sizeof msg,
                 "rate %s at line %ld is not positive; a logarithm needs a positive rate",
                 p->rate_text, p->point.line);
        s->problem = strdup(msg);
        if (!s->problem) {
            nomem(p);
            return;
        }
        s->problem_line = p->point.line;
    }
}

/*
 * Lines without a quote character, the header included, skip libcsv (its
 * per-character state
 * machine and callbacks were a third of the time spent reading a large
 * campaign) and are split here with libcsv's own rules for unquoted text, so
 * that the fields, rows, messages and columns are the same either way
 * (tests/test_reader_paths.c reads every corpus and bad file both ways and
 * compares): blanks (space, and tab unless tab is the delimiter) before a
 * field are skipped and after its text dropped; a delimiter ends a field; a
 * line of blanks only is no row; a row's end after a delimiter gives one more
 * empty field.  Only called with libcsv between rows (no quoted
 * field open), so its state is untouched.
 */
static int plain_lines = 1; /* 0: every line to libcsv (arrank_campaign_plain_lines) */

void arrank_campaign_plain_lines(int on)
{
    plain_lines = on;
}

/* libcsv 3.0.3's blanks: CSV_SPACE and CSV_TAB, except the delimiter. */
static int is_csv_blank(char c, char delim)
{
    return (c == ' ' || c == '\t') && c != delim;
}

/* Fields and row end of the n bytes at s (no quote, no line end in them). */
static void split_plain_line(parser *p, const char *s, size_t n)
{
    const char *end = s + n;
    const char delim = p->delim;
    int in_row = 0; /* a field was seen: a line end now ends one more (empty) field */
    for (;;) {
        while (s < end && is_csv_blank(*s, delim))
            s++;
        if (s == end) {
            if (in_row) {
                field_text(p, s, 0);
                on_row(0, p);
            }
            return;
        }
        in_row = 1;
        if (*s == delim) {
            field_text(p, s, 0);
            s++;
            continue;
        }
        const char *f0 = s, *f1 = s; /* f1: just past the last non-blank byte */
        for (; s < end && *s != delim; s++)
            if (!is_csv_blank(*s, delim))
                f1 = s + 1;
        field_text(p, f0, (size_t)(f1 - f0));
        if (s == end) {
            on_row(0, p);
            return;
        }
        s++; /* the delimiter */
    }
}

/* line_length, also telling whether the line holds a quote character. */
static size_t line_length(const char *s, const char *end, size_t *term);

static size_t line_length_quote(const char *s, const char *end, size_t *term, int *quote)
{
    size_t n = line_length(s, end, term);
    *quote = n > 0 && memchr(s, '"', n) != NULL;
    return n;
}

/* Delimiter of a header line: the most frequent of ',', ';', tab outside quotes. */
static char detect_delimiter(const char *line, size_t n)
{
    size_t comma = 0, semi = 0, tab = 0;
    int quoted = 0;
    for (size_t i = 0; i < n; i++) {
        if (line[i] == '"')
            quoted = !quoted;
        else if (!quoted && line[i] == ',')
            comma++;
        else if (!quoted && line[i] == ';')
            semi++;
        else if (!quoted && line[i] == '\t')
            tab++;
    }
    if (semi > comma && semi >= tab)
        return ';';
    if (tab > comma && tab > semi)
        return '\t';
    return ',';
}

/* Length of the line at s (up to end), and of its terminator (0, 1 or 2). */
static size_t line_length(const char *s, const char *end, size_t *term)
{
    /* memchr scans many bytes a step: a line ends at the first LF or CR */
    const char *nl = memchr(s, '\n', (size_t)(end - s));
    const char *stop = nl ? nl : end;
    const char *cr = stop > s ? memchr(s, '\r', (size_t)(stop - s)) : NULL;
    const char *q = cr ? cr : stop;
    *term = 0;
    if (q < end)
        *term = (*q == '\r' && q + 1 < end && q[1] == '\n') ? 2 : 1;
    return (size_t)(q - s);
}

static int add_meta(parser *p, const char *key, size_t nk, const char *value, size_t nv,
                    const char *source, long line)
{
    arrank_sample *s = p->sample;
    if (grow((void **)&s->meta, &p->meta_cap, s->n_meta + 1, sizeof *s->meta) != 0)
        return -1;
    arrank_meta m = {dup_range(key, nk), dup_range(value, nv), strdup(source), line};
    if (!m.key || !m.value || !m.source) {
        free(m.key);
        free(m.value);
        free(m.source);
        return -1;
    }
    s->meta[s->n_meta++] = m;
    return 0;
}

/* "# key = value" (blank-trimmed); a line without '=' or without a key is a comment. */
static int metadata_line(parser *p, const char *s, size_t n)
{
    const char *end = s + n;
    s++; /* the '#' */
    const char *eq = memchr(s, '=', (size_t)(end - s));
    if (!eq)
        return 0;
    const char *k0 = s, *k1 = eq, *v0 = eq + 1, *v1 = end;
    while (k0 < k1 && is_blank(*k0))
        k0++;
    while (k1 > k0 && is_blank(k1[-1]))
        k1--;
    while (v0 < v1 && is_blank(*v0))
        v0++;
    while (v1 > v0 && is_blank(v1[-1]))
        v1--;
    if (k0 == k1)
        return 0;
    return add_meta(p, k0, (size_t)(k1 - k0), v0, (size_t)(v1 - v0), p->path, p->line);
}

const char *arrank_sample_meta(const arrank_sample *sample, const char *key)
{
    if (!sample || !key)
        return NULL;
    for (size_t i = sample->n_meta; i-- > 0;)
        if (ascii_casecmp(sample->meta[i].key, key) == 0)
            return sample->meta[i].value;
    return NULL;
}

void arrank_sample_clear(arrank_sample *sample)
{
    if (!sample)
        return;
    free(sample->id);
    free(sample->path);
    free(sample->file);
    free(sample->rate_unit_file);
    free(sample->points);
    list_free(sample->runs, sample->n_runs);
    for (size_t i = 0; i < sample->n_meta; i++) {
        free(sample->meta[i].key);
        free(sample->meta[i].value);
        free(sample->meta[i].source);
    }
    free(sample->meta);
    list_free(sample->notes, sample->n_notes);
    free(sample->problem);
    memset(sample, 0, sizeof *sample);
}

/* Problems that keep the sample but keep it out of the fit (rate <= 0 is set while reading). */
static int set_fit_problem(arrank_sample *s)
{
    if (s->problem)
        return 0;
    char msg[256];
    if (s->n_points < 3) {
        snprintf(msg, sizeof msg,
                 "only %zu data point%s; a fit with uncertainties needs at least 3",
                 s->n_points, s->n_points == 1 ? "" : "s");
    } else {
        for (size_t i = 1; i < s->n_points; i++)
            if (s->points[i].temp_K != s->points[0].temp_K)
                return 0;
        snprintf(msg, sizeof msg,
                 "all %zu points are at one temperature (%.2f K); an activation energy "
                 "needs at least two",
                 s->n_points, s->points[0].temp_K);
    }
    s->problem = strdup(msg);
    s->problem_line = 0;
    return s->problem ? 0 : -1;
}

static arrank_status sample_ids(parser *p)
{
    arrank_sample *s = p->sample;
    s->path = strdup(p->path);
    const char *base = base_name(p->path);
    s->file = strdup(base);
    const char *meta_id = arrank_sample_meta(s, "sample");
    if (meta_id && !*meta_id) {
        for (size_t i = s->n_meta; i-- > 0;)
            if (ascii_casecmp(s->meta[i].key, "sample") == 0) {
                p->line = s->meta[i].line;
                break;
            }
        return fail(p, ARRANK_EPARSE, 0, "empty sample id; write '# sample = NAME' or leave "
                                         "the line out to use the file name");
    }
    if (meta_id) {
        s->id = strdup(meta_id);
    } else {
        size_t n = strlen(base);
        if (has_csv_extension(base))
            n -= 4;
        s->id = dup_range(base, n);
    }
    if (!s->path || !s->file || !s->id)
        return nomem(p);
    return ARRANK_OK;
}

static void parser_free(parser *p)
{
    for (size_t i = 0; i < p->n_cols; i++) {
        free(p->cols[i].name);
        free(p->cols[i].unit);
    }
    free(p->cols);
    free(p->cell);
    free(p->runs.slots);
}

/* Position of the first NUL byte: line (1-based); 0 if none. */
static long nul_line(const char *data, size_t len)
{
    const char *nul = memchr(data, '\0', len);
    if (!nul)
        return 0;
    long line = 1;
    for (const char *q = data; q < nul; q++)
        if (*q == '\n' || (*q == '\r' && !(q + 1 < nul && q[1] == '\n')))
            line++;
    return line;
}

static arrank_status parse_sample(parser *p, const char *data, size_t len)
{
    const char *s = data, *end = data + len;
    long nul = nul_line(data, len);
    if (nul) {
        p->line = nul;
        return fail(p, ARRANK_EPARSE, 0, "the file is not text (it has a NUL byte); "
                                         "a sample file is CSV");
    }
    if (len >= 3 && memcmp(s, "\xef\xbb\xbf", 3) == 0)
        s += 3; /* UTF-8 byte order mark */
    /* Metadata and comment lines up to the header. */
    p->line = 0;
    const char *header = NULL;
    size_t header_len = 0;
    while (s < end) {
        size_t term;
        size_t n = line_length(s, end, &term);
        p->line++;
        if (n > (size_t)ARRANK_CAMPAIGN_MAX_LINE_BYTES)
            return fail(p, ARRANK_ELIMIT, 0, "line longer than %ld bytes",
                        ARRANK_CAMPAIGN_MAX_LINE_BYTES);
        const char *t = s;
        while (t < s + n && is_blank(*t))
            t++;
        if (t < s + n && *t != '#') {
            header = s;
            header_len = n;
            break;
        }
        if (t < s + n && metadata_line(p, t, (size_t)(s + n - t)) != 0)
            return nomem(p);
        s += n + term;
    }
    if (!header) {
        p->line = 0;
        return fail(p, ARRANK_EPARSE, 0,
                    "%s; a sample file needs a header such as 'T [degC], rate [umol/(g*s)]' "
                    "and data rows",
                    s == data || p->sample->n_meta == 0 ? "the file is empty"
                                                        : "no header line");
    }
    p->header_line = p->line;
    p->delim = detect_delimiter(header, header_len);
    /* One point per line after the header, at most: reserve that many up
       front (capped; a longer file grows as it goes), one block instead of
       a few doublings. */
    {
        size_t lines = 0;
        for (const char *q = header; q < end && lines <= POINTS_RESERVE_MAX; lines++) {
            q = memchr(q, '\n', (size_t)(end - q));
            if (!q)
                break;
            q++;
        }
        if (lines > 0 && lines <= POINTS_RESERVE_MAX && p->points_cap == 0) {
            arrank_point *pts = malloc(lines * sizeof *pts);
            if (!pts)
                return nomem(p);
            p->sample->points = pts;
            p->points_cap = lines;
        }
    }
    struct csv_parser csv;
    if (csv_init(&csv, CSV_STRICT | CSV_STRICT_FINI) != 0)
        return nomem(p);
    csv_set_delim(&csv, (unsigned char)p->delim);
    p->in_header = 1;
    p->line--;
    long quote_line = 0; /* line where a quoted field still open began */
    int csv_between_rows = 1; /* libcsv has no row open: a plain line may skip it */
    while (s < end && p->status == ARRANK_OK) {
        size_t term;
        int quote;
        size_t n = line_length_quote(s, end, &term, &quote);
        p->line++;
        if (n > (size_t)ARRANK_CAMPAIGN_MAX_LINE_BYTES) {
            fail(p, ARRANK_ELIMIT, 0, "line longer than %ld bytes",
                 ARRANK_CAMPAIGN_MAX_LINE_BYTES);
            break;
        }
        if (plain_lines && csv_between_rows && !quote) {
            split_plain_line(p, s, n);
            s += n + term;
            continue;
        }
        size_t fed = csv_parse(&csv, s, n + term, on_field, on_row, p);
        if (p->status != ARRANK_OK)
            break;
        if (fed != n + term) {
            if (csv_error(&csv) == CSV_ENOMEM || csv_error(&csv) == CSV_ETOOBIG)
                nomem(p);
            else
                fail(p, ARRANK_EPARSE, (long)p->field + 1,
                     "malformed quoting: a '\"' inside an unquoted field or text after a "
                     "closing quote");
            break;
        }
        /* libcsv's struct is public; `quoted` tells a field that goes on to the next line. */
        if (csv.quoted && quote_line == 0)
            quote_line = p->line;
        else if (!csv.quoted)
            quote_line = 0;
        /* A line end outside quotes ends libcsv's row (or is skipped between rows). */
        csv_between_rows = term > 0 && !csv.quoted;
        s += n + term;
    }
    if (p->status == ARRANK_OK) {
        if (csv_fini(&csv, on_field, on_row, p) != 0 && p->status == ARRANK_OK) {
            if (quote_line)
                p->line = quote_line;
            fail(p, ARRANK_EPARSE, (long)p->field + 1, "quoted field is not closed");
        }
    }
    csv_free(&csv);
    if (p->status != ARRANK_OK)
        return p->status;
    if (p->in_header) { /* header line without a line end and nothing after it */
        p->in_header = 0;
        header_done(p);
        if (p->status != ARRANK_OK)
            return p->status;
    }
    if (p->sample->n_points == 0) {
        p->line = p->header_line;
        return fail(p, ARRANK_EPARSE, 0, "the header is not followed by any data row");
    }
    if (p->sample->rates_derived) {
        p->sample->problem_line = 0; /* set by derive_rates() */
        return ARRANK_OK;
    }
    if (set_fit_problem(p->sample) != 0)
        return nomem(p);
    return ARRANK_OK;
}

/* Metadata value, as a quantity converted to si_unit; 1 when present and valid,
   0 when absent, -1 (err filled) when present but not a quantity of that kind. */
static int meta_quantity(arrank_sample *s, arrank_units *units, const char *key,
                         const char *si_unit, double *value, arrank_error *err)
{
    const char *text = arrank_sample_meta(s, key);
    if (!text)
        return 0;
    arrank_error qe;
    arrank_error_clear(&qe);
    if (arrank_units_parse_quantity(units, text, si_unit, value, &qe) != ARRANK_OK ||
        !isfinite(*value)) {
        const arrank_meta *m = NULL;
        for (size_t i = s->n_meta; i-- > 0;)
            if (ascii_casecmp(s->meta[i].key, key) == 0) {
                m = &s->meta[i];
                break;
            }
        arrank_error_at(err, ARRANK_EPARSE, m ? m->source : s->path, m ? m->line : 0, 0,
                        "%s '%s' is not a quantity in %s: %s", key, text, si_unit, qe.message);
        return -1;
    }
    return 1;
}

/*
 * Rates of a sample without a rate column, from its conversion column and its
 * metadata (README "Rates from conversion"):
 *   feed_flow       total molar flow (amount/time), or volumetric flow
 *                   (volume/time) at flow_reference_temperature and
 *                   flow_reference_pressure, default 273.15 K and 101.325 kPa
 *                   (the usual "standard" volume; common practice);
 *   feed_fraction   mole fraction of the reactant in the feed (0.05 or 5 %);
 *   mass            catalyst mass;
 *   rate_form       differential (default): r = F y X / W, or integral
 *                   (first-order plug flow): r = F y ln(1/(1 - X)) / W.
 * The formulas are arrank_rates_derive's (rates.h).
 */
static arrank_status derive_rates(arrank_sample *s, arrank_units *units,
                                  const arrank_conversion *to_report, arrank_error *err)
{
    double flow = NAN, frac = NAN, mass = NAN;
    const char *missing = NULL;
    int got = meta_quantity(s, units, "feed_flow", "mol/s", &flow, err);
    if (got < 0) {
        /* not an amount per time: a volume per time at reference conditions */
        double vol = NAN, T_ref = 273.15, P_ref = 101325.0;
        arrank_error ignored;
        arrank_error_clear(&ignored);
        if (meta_quantity(s, units, "feed_flow", "m3/s", &vol, &ignored) != 1) {
            const char *text = arrank_sample_meta(s, "feed_flow");
            return arrank_error_at(err, ARRANK_EUNIT, s->path, 0, 0,
                                   "feed_flow '%s' is neither an amount nor a volume per time "
                                   "(e.g. 2.5 umol/s or 50 mL/min)", text);
        }
        if (meta_quantity(s, units, "flow_reference_pressure", "Pa", &P_ref, err) < 0)
            return ARRANK_EPARSE;
        const char *tr = arrank_sample_meta(s, "flow_reference_temperature");
        if (tr && arrank_units_parse_temperature(units, tr, &T_ref, err) != ARRANK_OK)
            return arrank_error_at(err, ARRANK_EPARSE, s->path, 0, 0,
                                   "flow_reference_temperature '%s': %s", tr, err->message);
        flow = P_ref * vol / (ARRANK_R_J_MOL_K * T_ref); /* ideal gas */
        got = 1;
    }
    if (got == 0)
        missing = "feed_flow";
    int gf = meta_quantity(s, units, "feed_fraction", "1", &frac, err);
    if (gf < 0)
        return ARRANK_EPARSE;
    if (gf == 0 && !missing)
        missing = "feed_fraction";
    int gm = meta_quantity(s, units, "mass", "kg", &mass, err);
    if (gm == 0)
        gm = meta_quantity(s, units, "catalyst_mass", "kg", &mass, err);
    if (gm < 0)
        return ARRANK_EPARSE;
    if (gm == 0 && !missing)
        missing = "mass";
    if (missing)
        return arrank_error_at(err, ARRANK_EPARSE, s->path, 0, 0,
                               "no rate column, so the rates are derived from 'conversion', "
                               "but metadata '%s' is missing; add e.g. '# feed_flow = 50 "
                               "mL/min', '# feed_fraction = 5 %%' and '# mass = 50 mg'",
                               missing);
    const char *form = arrank_sample_meta(s, "rate_form");
    int integral = 0;
    if (form && ascii_casecmp(form, "integral") == 0)
        integral = 1;
    else if (form && ascii_casecmp(form, "differential") != 0)
        return arrank_error_at(err, ARRANK_EPARSE, s->path, 0, 0,
                               "rate_form '%s' is not known; use differential or integral",
                               form);
    size_t n = s->n_points;
    double *buf = malloc(4 * (n ? n : 1) * sizeof *buf);
    if (!buf)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    double *X = buf, *F = buf + n, *y = buf + 2 * n, *W = buf + 3 * n;
    for (size_t i = 0; i < n; i++) {
        X[i] = s->points[i].conversion;
        F[i] = flow;
        y[i] = frac;
        W[i] = mass;
        if (X[i] >= 1.0) {
            long line = s->points[i].line;
            free(buf);
            return arrank_error_at(err, ARRANK_EPARSE, s->path, line, 0,
                                   "conversion 1 leaves no rate to derive; complete conversion "
                                   "is outside the differential and first-order forms");
        }
    }
    double *rate = malloc((n ? n : 1) * sizeof *rate);
    arrank_error de;
    arrank_error_clear(&de);
    arrank_status st = rate ? arrank_rates_derive(X, F, y, W, n, integral, rate, &de)
                            : ARRANK_ENOMEM;
    free(buf);
    if (st != ARRANK_OK) {
        free(rate);
        if (st == ARRANK_ENOMEM)
            return arrank_errorf(err, st, "out of memory");
        return arrank_error_at(err, ARRANK_EPARSE, s->path, 0, 0, "%s", de.message);
    }
    for (size_t i = 0; i < n; i++) {
        arrank_point *pt = &s->points[i];
        pt->rate = to_report->scale * rate[i] + to_report->offset;
        if (!(pt->rate > 0.0) && !s->problem) {
            char msg[256];
            snprintf(msg, sizeof msg,
                     "conversion %g at line %ld gives a rate of 0; a logarithm needs a "
                     "positive rate",
                     pt->conversion, pt->line);
            if (!(s->problem = strdup(msg))) {
                free(rate);
                return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            }
            s->problem_line = pt->line;
        }
    }
    free(rate);
    char note[160];
    snprintf(note, sizeof note, "rates derived from conversion (%s form: r = F y %s / W)",
             integral ? "integral first-order" : "differential", integral ? "ln(1/(1-X))" : "X");
    size_t cap = s->n_notes;
    if (list_add(&s->notes, &s->n_notes, &cap, note) != 0 || set_fit_problem(s) != 0)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    return ARRANK_OK;
}

static arrank_status sample_parse(const char *name, const char *data, size_t len,
                                  arrank_units *units, const char *report_unit,
                                  arrank_sample *sample, int defer_derived, arrank_error *err)
{
    if (!name || (!data && len) || !units || !sample)
        return arrank_errorf(err, ARRANK_EINVAL, "missing argument to arrank_sample_parse");
    memset(sample, 0, sizeof *sample);
    parser p;
    memset(&p, 0, sizeof p);
    p.path = name;
    p.units = units;
    p.report_unit = report_unit;
    p.sample = sample;
    p.err = err;
    arrank_status st = parse_sample(&p, data ? data : "", len);
    if (st == ARRANK_OK)
        st = sample_ids(&p);
    if (st == ARRANK_OK && sample->rates_derived && !defer_derived) {
        arrank_conversion identity = {1.0, 0.0};
        st = derive_rates(sample, units, report_unit ? &p.derived_conv : &identity, err);
    }
    parser_free(&p);
    if (st != ARRANK_OK)
        arrank_sample_clear(sample);
    return st;
}

arrank_status arrank_sample_parse(const char *name, const char *data, size_t len,
                                  arrank_units *units, const char *report_unit,
                                  arrank_sample *sample, arrank_error *err)
{
    return sample_parse(name, data, len, units, report_unit, sample, 0, err);
}

/* ---------------------------------------------------------- campaign.ini */

typedef struct {
    char *section_id; /* sample id of a [sample ID] section */
    char *key;
    char *value;
    long line;
} ini_entry;

typedef struct {
    const char *path;
    const char *text, *end, *pos; /* the file in memory */
    long line;
    arrank_units *units;
    arrank_campaign *campaign;
    arrank_error *err;
    arrank_status status;
    ini_entry *entries;
    size_t n_entries, entries_cap, notes_cap;
    char *rate_unit_written;
    long rate_unit_line;
} ini_state;

/* inih line reader over a memory buffer; counts physical lines for messages. */
static char *ini_read_line(char *buf, int size, void *stream)
{
    ini_state *st = stream;
    if (st->pos >= st->end || st->status != ARRANK_OK)
        return NULL;
    size_t term;
    size_t n = line_length(st->pos, st->end, &term);
    st->line++;
    if (n + 2 > (size_t)size) {
        st->status = arrank_error_at(st->err, ARRANK_ELIMIT, st->path, st->line, 0,
                                     "line longer than %d characters", size - 2);
        return NULL;
    }
    memcpy(buf, st->pos, n);
    buf[n] = '\n';
    buf[n + 1] = '\0';
    st->pos += n + term;
    return buf;
}

static int ini_note(ini_state *st, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

/* A campaign note "campaign.ini:LINE: ..." about the line being read. */
static int ini_note(ini_state *st, const char *fmt, ...)
{
    char note[ARRANK_ERROR_MSG_MAX];
    snprintf(note, sizeof note, "%s:%ld: ", base_name(st->path), st->line);
    size_t used = strlen(note);
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(note + used, sizeof note - used, fmt, ap);
    va_end(ap);
    arrank_campaign *c = st->campaign;
    return list_add(&c->notes, &c->n_notes, &st->notes_cap, note);
}

static int on_ini_key(void *user, const char *section, const char *name, const char *value)
{
    ini_state *st = user;
    if (st->status != ARRANK_OK)
        return 0;
    arrank_campaign *c = st->campaign;
    arrank_error uerr;
    arrank_error_clear(&uerr);
    if (ascii_casecmp(section, "campaign") == 0) {
        if (ascii_casecmp(name, "title") == 0) {
            free(c->title);
            c->title = strdup(value);
            if (!c->title)
                goto nomem;
        } else if (ascii_casecmp(name, "operating_temperature") == 0) {
            arrank_status s =
                arrank_units_parse_temperature(st->units, value, &c->operating_temp_K, &uerr);
            if (s != ARRANK_OK) {
                st->status = arrank_error_at(st->err, s == ARRANK_EINVAL ? ARRANK_EPARSE : s,
                                             st->path, st->line, 0, "%s", uerr.message);
                return 0;
            }
        } else if (ascii_casecmp(name, "rate_unit") == 0) {
            arrank_basis basis;
            arrank_conversion conv;
            if (arrank_units_rate(st->units, value, &basis, &conv, &uerr) != ARRANK_OK) {
                st->status = arrank_error_at(st->err, uerr.status, st->path, st->line, 0,
                                             "%s in '%s'", uerr.message, name);
                return 0;
            }
            char spelled[UNIT_MAX];
            if (arrank_units_spelling(value, spelled, sizeof spelled) != 0)
                snprintf(spelled, sizeof spelled, "%s", value);
            free(c->rate_unit);
            c->rate_unit = strdup(spelled);
            if (!c->rate_unit)
                goto nomem;
            c->basis = basis;
        } else if (ascii_casecmp(name, "confidence") == 0) {
            char buf[128];
            snprintf(buf, sizeof buf, "%s", value);
            double v = NAN;
            if (parse_number(buf, '.', &v) != 0 || !(v > 0.0 && v < 1.0)) {
                st->status = arrank_error_at(st->err, ARRANK_EPARSE, st->path, st->line, 0,
                                             "confidence '%s' is not a number between 0 and 1 "
                                             "(e.g. 0.95)",
                                             value);
                return 0;
            }
            c->confidence = v;
        } else if (ini_note(st, "key '%s' in [%s] ignored", name, section) != 0) {
            goto nomem;
        }
        return 1;
    }
    if (strlen(section) > 7 && ascii_lower((unsigned char)section[0]) == 's' &&
        ascii_casecmp_n(section, "sample ", 7) == 0) {
        const char *id = section + 7;
        while (is_blank(*id))
            id++;
        if (ascii_casecmp(name, "sample") == 0 || ascii_casecmp(name, "id") == 0) {
            if (ini_note(st, "key '%s' in [%s] ignored: a section cannot rename its sample",
                         name, section) != 0)
                goto nomem;
            return 1;
        }
        if (grow((void **)&st->entries, &st->entries_cap, st->n_entries + 1,
                 sizeof *st->entries) != 0)
            goto nomem;
        ini_entry e = {strdup(id), strdup(name), strdup(value), st->line};
        if (!e.section_id || !e.key || !e.value) {
            free(e.section_id);
            free(e.key);
            free(e.value);
            goto nomem;
        }
        st->entries[st->n_entries++] = e;
        return 1;
    }
    if ((section[0] ? ini_note(st, "key '%s' in unknown section [%s] ignored", name, section)
                    : ini_note(st, "key '%s' outside a section ignored", name)) != 0)
        goto nomem;
    return 1;
nomem:
    st->status = arrank_errorf(st->err, ARRANK_ENOMEM, "out of memory reading campaign.ini");
    return 0;
}

static void ini_entries_free(ini_state *st)
{
    for (size_t i = 0; i < st->n_entries; i++) {
        free(st->entries[i].section_id);
        free(st->entries[i].key);
        free(st->entries[i].value);
    }
    free(st->entries);
}

/* ---------------------------------------------------------------- folder */

/*
 * Read the whole file name (in the folder open as dirfd; path is for
 * messages) with one read into *buf (grown as needed, reused between files).
 * O_NONBLOCK keeps a FIFO from hanging the open; it is refused just after.
 */
/* The first read's size: more than any sample file a rig writes. */
#define READ_FIRST_BYTES (64 * 1024)

static arrank_status read_file(int dirfd, const char *name, const char *path, char **buf,
                               size_t *cap, size_t *len, arrank_error *err)
{
    char os[256];
    int fd = openat(dirfd, name, O_RDONLY | O_NONBLOCK | O_CLOEXEC);
    if (fd < 0) {
        os_message(errno, os, sizeof os);
        return arrank_error_at(err, ARRANK_EIO, path, 0, 0, "cannot open the file: %s", os);
    }
    /* A sample file is small: one read gets it all and a second finds the end,
       with no fstat.  Anything else - an empty read, a full buffer (a large
       file or a device), an error (a FIFO with a writer says EAGAIN), more
       data after a short read - takes the checked way below, which knows the
       size and the kind of file from fstat. */
    size_t got = 0;
    if (grow((void **)buf, cap, READ_FIRST_BYTES, 1) != 0) {
        close(fd);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory reading a file");
    }
    ssize_t r1 = read(fd, *buf, *cap);
    if (r1 > 0 && (size_t)r1 < *cap) {
        got = (size_t)r1;
        ssize_t r2 = read(fd, *buf + got, *cap - got);
        if (r2 == 0) {
            close(fd);
            *len = got;
            return ARRANK_OK;
        }
        if (r2 > 0)
            got += (size_t)r2;
    } else if (r1 > 0) {
        got = (size_t)r1;
    }
    struct stat sb;
    if (fstat(fd, &sb) != 0) {
        os_message(errno, os, sizeof os);
        close(fd);
        return arrank_error_at(err, ARRANK_EIO, path, 0, 0, "cannot read the file: %s", os);
    }
    if (!S_ISREG(sb.st_mode)) {
        close(fd);
        return arrank_error_at(err, ARRANK_EIO, path, 0, 0, "not a regular file");
    }
    if (sb.st_size > ARRANK_CAMPAIGN_MAX_FILE_BYTES) {
        close(fd);
        return arrank_error_at(err, ARRANK_ELIMIT, path, 0, 0, "the file is larger than %ld bytes",
                               ARRANK_CAMPAIGN_MAX_FILE_BYTES);
    }
    size_t want = (size_t)sb.st_size + 1; /* +1 notices a file that grew meanwhile */
    if (want <= got)
        want = got + 1;
    for (;;) {
        if (grow((void **)buf, cap, want, 1) != 0) {
            close(fd);
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory reading a file");
        }
        ssize_t r = read(fd, *buf + got, want - got);
        if (r < 0 && errno == EINTR)
            continue;
        if (r < 0) {
            os_message(errno, os, sizeof os);
            close(fd);
            return arrank_error_at(err, ARRANK_EIO, path, 0, 0, "cannot read the file: %s", os);
        }
        if (r == 0)
            break;
        got += (size_t)r;
        if (got == want) {
            if (want > (size_t)ARRANK_CAMPAIGN_MAX_FILE_BYTES) {
                close(fd);
                return arrank_error_at(err, ARRANK_ELIMIT, path, 0, 0,
                                       "the file is larger than %ld bytes",
                                       ARRANK_CAMPAIGN_MAX_FILE_BYTES);
            }
            want *= 2;
        }
    }
    close(fd);
    *len = got;
    return ARRANK_OK;
}

/* A name with its first 8 bytes as a big-endian number (NUL-padded): two
   prefixes compare as strcmp compares those bytes, so only equal prefixes
   need strcmp, and the sort does not chase a pointer per comparison. */
typedef struct {
    uint64_t prefix;
    char *name;
} name_key;

static int compare_name_keys(const void *a, const void *b)
{
    const name_key *x = a, *y = b;
    if (x->prefix != y->prefix)
        return x->prefix < y->prefix ? -1 : 1;
    return strcmp(x->name, y->name);
}

/* Sort names in strcmp order; -1: no memory. */
static int sort_names(char **names, size_t n)
{
    name_key *k = malloc(n * sizeof *k);
    if (!k)
        return -1;
    for (size_t i = 0; i < n; i++) {
        uint64_t v = 0;
        const unsigned char *c = (const unsigned char *)names[i];
        int ended = 0;
        for (size_t j = 0; j < 8; j++) {
            ended = ended || c[j] == '\0';
            v = v << 8 | (ended ? 0u : c[j]);
        }
        k[i] = (name_key){v, names[i]};
    }
    qsort(k, n, sizeof *k, compare_name_keys);
    for (size_t i = 0; i < n; i++)
        names[i] = k[i].name;
    free(k);
    return 0;
}

static int compare_sample_ids(const void *a, const void *b)
{
    const arrank_sample *x = *(const arrank_sample *const *)a;
    const arrank_sample *y = *(const arrank_sample *const *)b;
    int c = strcmp(x->id, y->id);
    return c ? c : strcmp(x->file, y->file);
}

void arrank_campaign_free(arrank_campaign *campaign)
{
    if (!campaign)
        return;
    for (size_t i = 0; i < campaign->n_samples; i++)
        arrank_sample_clear(&campaign->samples[i]);
    free(campaign->samples);
    free(campaign->path);
    free(campaign->name);
    free(campaign->title);
    free(campaign->rate_unit);
    list_free(campaign->notes, campaign->n_notes);
    free(campaign);
}

/* Sorted list of the *.csv names in dir (hidden files skipped). */
static arrank_status list_folder(const char *dir, char ***names, size_t *n, int *has_ini,
                                 arrank_error *err)
{
    char os[256];
    DIR *d = opendir(dir);
    if (!d) {
        os_message(errno, os, sizeof os);
        return arrank_error_at(err, ARRANK_EIO, dir, 0, 0, "cannot read the folder: %s", os);
    }
    size_t cap = 0;
    *names = NULL;
    *n = 0;
    *has_ini = 0;
    struct dirent *e;
    errno = 0;
    while ((e = readdir(d)) != NULL) {
        if (e->d_name[0] == '.')
            continue;
        if (strcmp(e->d_name, "campaign.ini") == 0)
            *has_ini = 1;
        if (!has_csv_extension(e->d_name))
            continue;
        if (*n >= (size_t)ARRANK_CAMPAIGN_MAX_FILES) {
            closedir(d);
            list_free(*names, *n);
            *names = NULL;
            return arrank_error_at(err, ARRANK_ELIMIT, dir, 0, 0,
                                   "more than %ld sample files in the folder",
                                   ARRANK_CAMPAIGN_MAX_FILES);
        }
        if (list_add(names, n, &cap, e->d_name) != 0) {
            closedir(d);
            list_free(*names, *n);
            *names = NULL;
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory listing the folder");
        }
        errno = 0;
    }
    int saved = errno;
    closedir(d);
    if (saved) {
        list_free(*names, *n);
        *names = NULL;
        os_message(saved, os, sizeof os);
        return arrank_error_at(err, ARRANK_EIO, dir, 0, 0, "cannot read the folder: %s", os);
    }
    if (*n > 1 && sort_names(*names, *n) != 0) {
        list_free(*names, *n);
        *names = NULL;
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory listing the folder");
    }
    return ARRANK_OK;
}

static char *join_path(const char *dir, const char *name)
{
    size_t nd = strlen(dir), nn = strlen(name);
    int slash = nd > 0 && dir[nd - 1] != '/';
    char *p = malloc(nd + (size_t)slash + nn + 1);
    if (!p)
        return NULL;
    memcpy(p, dir, nd);
    if (slash)
        p[nd] = '/';
    memcpy(p + nd + (size_t)slash, name, nn + 1);
    return p;
}

/* Parse campaign.ini text (len bytes at text, not NUL-terminated) named path in messages. */
static arrank_status parse_ini_text(const char *path, const char *text, size_t len,
                                    ini_state *st)
{
    st->path = path;
    st->text = text;
    st->pos = text;
    st->end = text + len;
    st->line = 0;
    if (memchr(text, '\0', len))
        st->status = arrank_error_at(st->err, ARRANK_EPARSE, path, nul_line(text, len), 0,
                                     "campaign.ini is not text (it has a NUL byte)");
    int r = st->status == ARRANK_OK ? ini_parse_stream(ini_read_line, st, on_ini_key, st) : 0;
    if (st->status == ARRANK_OK && r == -2)
        st->status = arrank_errorf(st->err, ARRANK_ENOMEM, "out of memory reading campaign.ini");
    else if (st->status == ARRANK_OK && r != 0)
        st->status = arrank_error_at(st->err, ARRANK_EPARSE, path, r, 0,
                                     "malformed line; expected '[section]', 'key = value' "
                                     "or a comment");
    st->path = NULL;
    st->text = st->pos = st->end = NULL;
    return st->status;
}

static arrank_status read_ini(const char *dir, int dirfd, ini_state *st, char **buf, size_t *cap)
{
    char *path = join_path(dir, "campaign.ini");
    if (!path)
        return arrank_errorf(st->err, ARRANK_ENOMEM, "out of memory");
    size_t len = 0;
    arrank_status s = read_file(dirfd, "campaign.ini", path, buf, cap, &len, st->err);
    if (s == ARRANK_OK)
        s = parse_ini_text(path, *buf, len, st);
    free(path);
    return s;
}

/* Apply [sample ID] sections of campaign.ini to the samples (sorted by id in index). */
static arrank_status apply_ini_entries(ini_state *st, arrank_sample **index, size_t n,
                                       const char *ini_path)
{
    arrank_campaign *c = st->campaign;
    for (size_t i = 0; i < st->n_entries; i++) {
        ini_entry *e = &st->entries[i];
        size_t lo = 0, hi = n;
        while (lo < hi) {
            size_t mid = lo + (hi - lo) / 2;
            if (strcmp(index[mid]->id, e->section_id) < 0)
                lo = mid + 1;
            else
                hi = mid;
        }
        if (lo == n || strcmp(index[lo]->id, e->section_id) != 0) {
            /* One note per section, not per key. */
            if (i > 0 && strcmp(st->entries[i - 1].section_id, e->section_id) == 0)
                continue;
            char note[ARRANK_ERROR_MSG_MAX];
            snprintf(note, sizeof note, "campaign.ini:%ld: section [sample %s] matches no sample",
                     e->line, e->section_id);
            if (list_add(&c->notes, &c->n_notes, &st->notes_cap, note) != 0)
                return arrank_errorf(st->err, ARRANK_ENOMEM, "out of memory");
            continue;
        }
        arrank_sample *s = index[lo];
        size_t meta_cap = s->n_meta; /* exact size; grow doubles from here */
        parser p;
        memset(&p, 0, sizeof p);
        p.sample = s;
        p.meta_cap = meta_cap;
        if (add_meta(&p, e->key, strlen(e->key), e->value, strlen(e->value), ini_path, e->line) !=
            0)
            return arrank_errorf(st->err, ARRANK_ENOMEM, "out of memory");
    }
    return ARRANK_OK;
}

/* Read and parse one file of the folder into *sample. */
static arrank_status load_one(const char *dir, int dirfd, const char *name, arrank_units *units,
                              const char *report_unit, arrank_sample *sample, char **buf,
                              size_t *cap, arrank_error *err)
{
    char *path = join_path(dir, name);
    if (!path)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    size_t len = 0;
    arrank_status st = read_file(dirfd, name, path, buf, cap, &len, err);
    if (st == ARRANK_OK)
        st = sample_parse(path, *buf, len, units, report_unit, sample, 1, err);
    free(path);
    return st;
}

/*
 * Files 1..n-1 on the workers (arrank_workers_each, util.c), each worker with
 * its own read buffer.  A sample depends only on its file and the report
 * unit, so the result is the same for any number of workers, and the error
 * is the first failing file's in name order.
 */
#define LOAD_CHUNK 16
#define LOAD_MIN_PER_WORKER 64
#define LOAD_MAX_WORKERS 8

typedef struct {
    const char *dir;
    int dirfd;
    char **names;
    arrank_units *units;
    arrank_campaign *c;
    char *buf[LOAD_MAX_WORKERS];
    size_t cap[LOAD_MAX_WORKERS];
} load_job;

static arrank_status load_item(void *ctx, size_t i, size_t w, arrank_error *err)
{
    load_job *j = ctx;
    return load_one(j->dir, j->dirfd, j->names[i], j->units, j->c->rate_unit, &j->c->samples[i],
                    &j->buf[w], &j->cap[w], err);
}

static arrank_status load_rest(const char *dir, int dirfd, char **names, size_t n,
                               arrank_units *units, arrank_campaign *c,
                               arrank_progress_fn progress, void *progress_ctx,
                               arrank_error *err)
{
    load_job j;
    memset(&j, 0, sizeof j);
    j.dir = dir;
    j.dirfd = dirfd;
    j.names = names;
    j.units = units;
    j.c = c;
    size_t workers = n > 1 ? arrank_workers_for(n - 1, LOAD_MIN_PER_WORKER) : 1;
    if (workers > LOAD_MAX_WORKERS)
        workers = LOAD_MAX_WORKERS;
    arrank_status st = arrank_workers_each(1, n, LOAD_CHUNK, workers, load_item, &j, progress,
                                           progress_ctx, "reading samples", err);
    for (size_t w = 0; w < LOAD_MAX_WORKERS; w++)
        free(j.buf[w]);
    return st;
}

arrank_status arrank_campaign_load(const char *dir, arrank_units *units, arrank_campaign **out,
                                   arrank_error *err)
{
    return arrank_campaign_load_progress(dir, units, NULL, NULL, out, err);
}

arrank_status arrank_campaign_load_progress(const char *dir, arrank_units *units,
                                            arrank_progress_fn progress, void *progress_ctx,
                                            arrank_campaign **out, arrank_error *err)
{
    if (out)
        *out = NULL;
    if (!dir || !units || !out)
        return arrank_errorf(err, ARRANK_EINVAL, "missing argument to arrank_campaign_load");
    char **names = NULL;
    size_t n_names = 0;
    int has_ini = 0;
    arrank_status st = list_folder(dir, &names, &n_names, &has_ini, err);
    if (st != ARRANK_OK)
        return st;
    if (n_names == 0) {
        free(names);
        return arrank_error_at(err, ARRANK_EDATA, dir, 0, 0,
                               "no sample files (*.csv) in the folder");
    }
    /* A database read in the background (arrank_units_create_background) has
       had the listing's time; from here on it is needed. */
    st = arrank_units_ready(units, err);
    if (st != ARRANK_OK) {
        list_free(names, n_names);
        return st;
    }
    /* Files are opened relative to the folder: no path walk per file. */
    int dirfd = open(dir, O_RDONLY | O_DIRECTORY | O_CLOEXEC);
    if (dirfd < 0) {
        char os[256];
        os_message(errno, os, sizeof os);
        list_free(names, n_names);
        return arrank_error_at(err, ARRANK_EIO, dir, 0, 0, "cannot read the folder: %s", os);
    }
    arrank_campaign *c = calloc(1, sizeof *c);
    ini_state ini;
    memset(&ini, 0, sizeof ini);
    char *buf = NULL, *ini_path = NULL;
    size_t cap = 0;
    arrank_sample **index = NULL;
    if (!c)
        goto nomem;
    c->operating_temp_K = NAN;
    c->confidence = NAN;
    c->path = strdup(dir);
    {
        /* Folder name without trailing slashes. */
        size_t n = strlen(dir);
        while (n > 1 && dir[n - 1] == '/')
            n--;
        size_t b = n;
        while (b > 0 && dir[b - 1] != '/')
            b--;
        c->name = dup_range(dir + b, n - b);
    }
    if (!c->path || !c->name)
        goto nomem;
    ini.units = units;
    ini.campaign = c;
    ini.err = err;
    if (has_ini) {
        st = read_ini(dir, dirfd, &ini, &buf, &cap);
        if (st != ARRANK_OK)
            goto fail;
    }
    if (!c->title && !(c->title = strdup(c->name)))
        goto nomem;
    c->samples = calloc(n_names, sizeof *c->samples);
    if (!c->samples)
        goto nomem;
    /* The first sample (in name order) sets the report unit the others are
       converted to; then the rest are read by the workers. */
    st = load_one(dir, dirfd, names[0], units, c->rate_unit, &c->samples[0], &buf, &cap, err);
    if (st != ARRANK_OK)
        goto fail;
    c->n_samples = 1;
    if (!c->rate_unit) { /* campaign.ini may have set it */
        char spelled[UNIT_MAX];
        const char *u = c->samples[0].rate_unit_file;
        if (arrank_units_spelling(u, spelled, sizeof spelled) != 0)
            snprintf(spelled, sizeof spelled, "%s", u);
        if (!(c->rate_unit = strdup(spelled)))
            goto nomem;
        c->basis = c->samples[0].basis;
    }
    if (progress)
        progress(progress_ctx, "reading samples", 1, n_names);
    st = load_rest(dir, dirfd, names, n_names, units, c, progress, progress_ctx, err);
    c->n_samples = n_names; /* the rest are parsed or zeroed: both free cleanly */
    if (st != ARRANK_OK)
        goto fail;
    /* Sample ids must be unique: sort an index rather than compare all pairs. */
    index = malloc(c->n_samples * sizeof *index);
    if (!index)
        goto nomem;
    /* Ids usually follow the file names, which are in order already: then
       one pass shows it and the sort is not needed. */
    int in_order = 1;
    for (size_t i = 0; i < c->n_samples; i++) {
        index[i] = &c->samples[i];
        if (in_order && i > 0 && compare_sample_ids(&index[i - 1], &index[i]) > 0)
            in_order = 0;
    }
    if (!in_order)
        qsort(index, c->n_samples, sizeof *index, compare_sample_ids);
    for (size_t i = 1; i < c->n_samples; i++) {
        if (strcmp(index[i]->id, index[i - 1]->id) == 0) {
            const arrank_sample *s = index[i];
            long line = 0;
            for (size_t k = s->n_meta; k-- > 0;)
                if (ascii_casecmp(s->meta[k].key, "sample") == 0) {
                    line = s->meta[k].line;
                    break;
                }
            st = arrank_error_at(err, ARRANK_EPARSE, s->path, line, 0,
                                 "sample id '%s' is also the id of %s", s->id,
                                 index[i - 1]->file);
            goto fail;
        }
    }
    if (ini.n_entries) {
        ini_path = join_path(dir, "campaign.ini");
        if (!ini_path)
            goto nomem;
        st = apply_ini_entries(&ini, index, c->n_samples, ini_path);
        if (st != ARRANK_OK)
            goto fail;
    }
    /* Derived rates need every metadata entry, campaign.ini's included. */
    for (size_t i = 0; i < c->n_samples; i++) {
        if (!c->samples[i].rates_derived)
            continue;
        arrank_conversion conv;
        st = arrank_units_conversion(units, DERIVED_RATE_UNIT, c->rate_unit, &conv, err);
        if (st == ARRANK_OK)
            st = derive_rates(&c->samples[i], units, &conv, err);
        if (st != ARRANK_OK)
            goto fail;
    }
    free(index);
    free(ini_path);
    free(buf);
    ini_entries_free(&ini);
    list_free(names, n_names);
    close(dirfd);
    *out = c;
    return ARRANK_OK;
nomem:
    st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
fail:
    free(index);
    free(ini_path);
    free(buf);
    ini_entries_free(&ini);
    list_free(names, n_names);
    close(dirfd);
    arrank_campaign_free(c);
    return st;
}

arrank_status arrank_campaign_parse_ini(const char *name, const char *data, size_t len,
                                        arrank_units *units, arrank_campaign **out,
                                        arrank_error *err)
{
    if (out)
        *out = NULL;
    if (!name || (!data && len) || !units || !out)
        return arrank_errorf(err, ARRANK_EINVAL, "missing argument to arrank_campaign_parse_ini");
    arrank_campaign *c = calloc(1, sizeof *c);
    if (!c)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    c->operating_temp_K = NAN;
    c->confidence = NAN;
    ini_state ini;
    memset(&ini, 0, sizeof ini);
    ini.units = units;
    ini.campaign = c;
    ini.err = err;
    arrank_status st = parse_ini_text(name, data ? data : "", len, &ini);
    /* With no samples, every [sample ID] section becomes a "matches no sample" note. */
    if (st == ARRANK_OK && ini.n_entries)
        st = apply_ini_entries(&ini, NULL, 0, name);
    if (st == ARRANK_OK) {
        c->path = strdup(name);
        c->name = strdup(base_name(name));
        if (!c->title)
            c->title = strdup(c->name ? c->name : "");
        if (!c->path || !c->name || !c->title)
            st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    ini_entries_free(&ini);
    if (st != ARRANK_OK) {
        arrank_campaign_free(c);
        return st;
    }
    *out = c;
    return ARRANK_OK;
}
