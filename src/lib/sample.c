/*
 * sample.c - reading one sample file (format: README.md, "The campaign
 * format").
 *
 * A sample file is: optional "# key = value" metadata lines, a header of
 * "name [unit]" fields, then data rows.  The metadata block is read here line
 * by line; from the header on, the text goes to libcsv one physical line at a
 * time, so every message can name the line (and the field) it is about even
 * when a quoted field spans lines or the file mixes CR, LF and CRLF line
 * ends.  Lines without a quote skip libcsv (split_plain_line).  Temperatures
 * become kelvin and rates the campaign's report unit as they are read;
 * udunits is asked about each distinct unit string once (see units.c), which
 * keeps a campaign of thousands of files fast.
 *
 * A malformed file stops the read with an error that names path, line and
 * column.  A sample that is well formed but cannot be fitted keeps its points
 * and gets a `problem`, so that the analysis can report it instead of losing
 * it.
 *
 * Column rules: T/temperature and rate/r need a unit; rate_sd needs a unit
 * convertible to the rate's (it is converted with it); time_on_stream needs a
 * time unit (stored in s); conversion is a fraction, or a percentage when
 * written 'conversion [%]', and must lie in 0..1; run is a text label (empty:
 * no run).  Other columns are kept as a note.  Empty cells in optional columns
 * are NAN; a data row whose first field starts with '#' is a comment.  A file
 * without a rate column has its rates derived from conversion
 * (sample_derive.c).
 */
#include "arrank/sample.h"
#include "arrank/text.h"
#include "number.h"
#include "sample_internal.h"
#include "sample_testing.h"
#include "util.h"

#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <csv.h>

/* ---------------------------------------------------------------- helpers */


/* Copy text into out (size n), cut if it does not fit; snprintf costs more per cell. */
static void copy_cut(char *out, size_t n, const char *text)
{
    size_t len = strlen(text);
    if (len >= n)
        len = n - 1;
    memcpy(out, text, len);
    out[len] = '\0';
}


static int has_csv_extension(const char *name)
{
    size_t n = strlen(name);
    return n > 4 && arrank_ascii_casecmp(name + n - 4, ".csv") == 0;
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
    {"t", COL_TEMP},          {"temp", COL_TEMP},         {"temperature", COL_TEMP},
    {"t_bed", COL_TEMP},      {"rate", COL_RATE},         {"r", COL_RATE},
    {"tof", COL_RATE},        {"rate_sd", COL_RATE_SD},   {"sd", COL_RATE_SD},
    {"run", COL_RUN},         {"time_on_stream", COL_TIME}, {"conversion", COL_CONVERSION},
    {"x", COL_CONVERSION},
};

/* The accepted header forms, for messages. */
#define HEADER_FORMS "'T [degC]', 'Temperature (°C)' or 'T / K'"
#define TEMP_NAMES "T, Temp, temperature, T_bed"
#define RATE_NAMES "rate, r, TOF"


typedef struct {
    column_kind kind;
    char *name; /* as written */
    char *unit; /* as written, NULL if none */
    arrank_conversion conv;
    int relative; /* rate_sd [%]: a percentage of the rate */
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
    int lenient;          /* arrank_read_options.strict == 0 */
    int row_has_text;     /* a cell of the row holds more than blanks */
    double sd_rel;        /* rate_sd [%] of the row as a fraction; NAN if none */
    char omit_reason[256]; /* why the row's point is left out; "" if usable */
    long omit_column;
    /* storage */
    char *cell;
    size_t cell_cap;
    size_t points_cap, meta_cap, notes_cap, runs_cap;
    arrank_run_table runs;
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

static void omit(parser *p, long colno, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 3, 4)))
#endif
    ;

/* A cell that leaves its point out (lenient reading): the row's first reason
   is kept; the point is stored with it at the end of the row (on_row). */
static void omit(parser *p, long colno, const char *fmt, ...)
{
    if (p->omit_reason[0])
        return;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(p->omit_reason, sizeof p->omit_reason, fmt, ap);
    va_end(ap);
    if (!p->omit_reason[0])
        snprintf(p->omit_reason, sizeof p->omit_reason, "left out");
    p->omit_column = colno;
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
    char *s = arrank_trim(text);
    char *unit = NULL;
    arrank_status st = ARRANK_OK;
    char msg[ARRANK_ERROR_MSG_MAX];
    if (arrank_sample_split_header(s, &s, &unit, &st, msg, sizeof msg) != 0) {
        fail(p, st, colno, "%s", msg);
        return;
    }
    data_column c = {COL_IGNORED, NULL, NULL, {1.0, 0.0}, 0};
    for (size_t k = 0; k < sizeof column_names / sizeof column_names[0]; k++)
        if (arrank_ascii_casecmp(s, column_names[k].name) == 0)
            c.kind = column_names[k].kind;
    if (c.kind != COL_IGNORED && p->col_of[c.kind]) {
        fail(p, ARRANK_EPARSE, colno, "column '%s' repeats column %zu '%s'", s,
             p->col_of[c.kind], p->cols[p->col_of[c.kind] - 1].name);
        return;
    }
    if (arrank_grow((void **)&p->cols, &p->cols_cap, p->n_cols + 1, sizeof *p->cols) != 0) {
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

/* "'a', 'b', 'c'" for the column names of the header, cut to n bytes. */
static void found_columns(const parser *p, char *out, size_t n)
{
    size_t o = 0;
    out[0] = '\0';
    for (size_t i = 0; i < p->n_cols && o + 8 < n; i++) {
        int w = snprintf(out + o, n - o, "%s'%.40s'", i ? ", " : "", p->cols[i].name);
        if (w < 0 || (size_t)w >= n - o) {
            snprintf(out + o, n - o, ", ...");
            break;
        }
        o += (size_t)w;
    }
    if (p->n_cols == 0)
        snprintf(out, n, "no column names");
}

/* Header step 1: the required columns; without a rate column the rates will
   be derived from conversion. */
static void header_required(parser *p)
{
    arrank_sample *s = p->sample;
    if (!p->col_of[COL_TEMP]) {
        char found[160];
        found_columns(p, found, sizeof found);
        fail(p, ARRANK_EPARSE, 0,
             "no temperature column (found %s); the header needs one named " TEMP_NAMES
             " with its unit, as " HEADER_FORMS, found);
        return;
    }
    if (!p->col_of[COL_RATE] && !p->col_of[COL_CONVERSION]) {
        char found[160];
        found_columns(p, found, sizeof found);
        fail(p, ARRANK_EPARSE, 0,
             "no rate column (found %s); the header needs one named " RATE_NAMES
             " with its unit, as 'rate [umol/(g*s)]' (or a 'conversion' column with feed "
             "metadata, to derive the rates)", found);
        return;
    }
    if (p->col_of[COL_RATE])
        return;
    /* Rates will come from conversion and the feed metadata, in SI per mass;
       arrank_sample_derive_rates fills them once all metadata (file and campaign.ini) are known. */
    s->rates_derived = 1;
    s->basis = ARRANK_BASIS_MASS;
    s->rate_unit_file = strdup(ARRANK_SAMPLE_DERIVED_RATE_UNIT);
    if (!s->rate_unit_file) {
        nomem(p);
        return;
    }
    arrank_error uerr;
    arrank_error_clear(&uerr);
    if (p->report_unit &&
        arrank_units_conversion(p->units, ARRANK_SAMPLE_DERIVED_RATE_UNIT, p->report_unit,
                                &p->derived_conv, &uerr) != ARRANK_OK)
        fail(p, ARRANK_EUNIT, 0,
             "rates derived from conversion are per mass (%s) and not convertible to the "
             "campaign's '%s'", ARRANK_SAMPLE_DERIVED_RATE_UNIT, p->report_unit);
}

/* The rate column i: its unit fixes the basis and converts to the report unit. */
static void rate_column(parser *p, size_t i)
{
    arrank_sample *s = p->sample;
    data_column *c = &p->cols[i];
    arrank_error uerr;
    arrank_error_clear(&uerr);
    const char *u = required_unit(p, i, NULL);
    if (!u)
        return;
    arrank_conversion to_si;
    if (arrank_units_rate(p->units, u, &s->basis, &to_si, &uerr) != ARRANK_OK) {
        unit_fail(p, i, &uerr);
        return;
    }
    s->rate_unit_file = strdup(u);
    if (!s->rate_unit_file) {
        nomem(p);
        return;
    }
    if (p->report_unit &&
        arrank_units_conversion(p->units, u, p->report_unit, &c->conv, &uerr) != ARRANK_OK)
        fail(p, ARRANK_EUNIT, (long)i + 1,
             "rate unit '%s' of %s is not convertible to the campaign's '%s'", u,
             arrank_base_name(p->path), p->report_unit);
}

/* Header step 2: the columns in order - a note for each ignored one, the
   temperature's and the rate's units. */
static void header_main_columns(parser *p)
{
    arrank_sample *s = p->sample;
    arrank_error uerr;
    arrank_error_clear(&uerr);
    for (size_t i = 0; i < p->n_cols && p->status == ARRANK_OK; i++) {
        data_column *c = &p->cols[i];
        char note[ARRANK_ERROR_MSG_MAX];
        switch (c->kind) {
        case COL_IGNORED:
            if (c->name[0])
                snprintf(note, sizeof note, "column '%s' ignored", c->name);
            else
                snprintf(note, sizeof note, "column %zu has no name; ignored", i + 1);
            if (arrank_list_add(&s->notes, &s->n_notes, &p->notes_cap, note) != 0)
                nomem(p);
            break;
        case COL_TEMP: {
            const char *u = required_unit(p, i, NULL);
            if (u && arrank_units_temperature(p->units, u, &c->conv, &uerr) != ARRANK_OK)
                unit_fail(p, i, &uerr);
            else if (u && !(s->temp_unit_file = strdup(u)))
                nomem(p);
            else if (u)
                s->temp_to_K = c->conv;
            break;
        }
        case COL_RATE:
            rate_column(p, i);
            break;
        default:
            break;
        }
    }
}

/* Header step 3: the optional columns convert into what the rate column fixed. */
static void header_optional_columns(parser *p)
{
    arrank_error uerr;
    arrank_error_clear(&uerr);
    const char *rate_unit = p->report_unit ? p->report_unit : p->sample->rate_unit_file;
    for (size_t i = 0; i < p->n_cols && p->status == ARRANK_OK; i++) {
        data_column *c = &p->cols[i];
        if (c->kind == COL_RATE_SD && c->unit && strcmp(c->unit, "%") == 0) {
            /* a relative standard deviation, percent of the rate (common on GC data) */
            if (p->sample->rates_derived)
                fail(p, ARRANK_EUNIT, (long)i + 1,
                     "a relative '%s [%%]' needs a rate column; rates derived from conversion "
                     "take an sd in a rate unit", c->name);
            c->relative = 1;
            c->conv.scale = 0.01;
            c->conv.offset = 0.0;
        } else if (c->kind == COL_RATE_SD) {
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

/* Everything the header row decides: units, conversions, required columns. */
static void header_done(parser *p)
{
    header_required(p);
    if (p->status == ARRANK_OK)
        header_main_columns(p);
    if (p->status == ARRANK_OK)
        header_optional_columns(p);
}

static void start_point(parser *p)
{
    p->point.temp_K = NAN;
    p->point.temp_file = NAN;
    p->point.source = 0;
    p->point.rate = NAN;
    p->point.rate_sd = NAN;
    p->point.conversion = NAN;
    p->point.time_on_stream_s = NAN;
    p->point.run = -1;
    p->point.line = p->line;
    p->point.omitted = NULL;
    p->point.omitted_column = 0;
    p->rate_text[0] = '\0';
    p->row_has_text = 0;
    p->sd_rel = NAN;
    p->omit_reason[0] = '\0';
    p->omit_column = 0;
}

/* Cell step 1: the run label of a run column. */
static void run_cell(parser *p, char *text)
{
    char *label = arrank_trim(text);
    if (!*label)
        return;
    long r = arrank_sample_run_index(&p->runs, p->sample, &p->runs_cap, label);
    if (r < 0) {
        nomem(p);
        return;
    }
    p->point.run = (int)r;
}

#define SHOWN_MAX 64 /* bytes of a cell quoted in a message */

/*
 * Cell step 2: the number in a cell (trimmed).  A plain decimal - nearly
 * every cell - is read in place (number.c) and its text copied only for a
 * message.  Anything else goes the long way, and its text is kept first, as
 * written: arrank_decimal_cell rewrites a decimal comma.  It would read a
 * plain decimal the same way, since its rewrite finds no comma in one.
 * Returns 1 with *v set; 0 when the cell is done (an empty optional cell, or
 * failed).  shown (SHOWN_MAX bytes) gets the cell as written, or "" when the
 * fast read took it.
 */
static int cell_number(parser *p, const data_column *c, long colno, char *cell, char *shown,
                       double *v)
{
    if (arrank_decimal_fast(cell, v)) {
        shown[0] = '\0';
        return 1;
    }
    copy_cut(shown, SHOWN_MAX, cell);
    int bad = arrank_decimal_cell(cell, p->delim, v);
    int needed = c->kind == COL_TEMP || c->kind == COL_RATE ||
                 (c->kind == COL_CONVERSION && p->sample->rates_derived);
    if (bad == 1 && shown[0] == '\0') {
        if (needed && p->lenient)
            omit(p, colno, "no value in column '%s'", c->name);
        else if (needed)
            fail(p, ARRANK_EPARSE, colno, "empty cell in column '%s'", c->name);
        return 0; /* optional quantity not given */
    }
    if (bad && p->lenient) {
        int kind = arrank_sample_missing_kind(shown);
        if (kind && !needed)
            return 0; /* an optional quantity not given */
        if (kind == 1)
            omit(p, colno, "no value ('%s') in column '%s'", shown, c->name);
        else if (kind == 2)
            omit(p, colno, "below detection limit: %s in column '%s'", shown, c->name);
        else if (bad == 2)
            omit(p, colno, "'%s' is not a finite number in column '%s'", shown, c->name);
        else if (bad == 3)
            omit(p, colno, "'%s' is out of range in column '%s'", shown, c->name);
        else
            omit(p, colno, "'%s' is not a number in column '%s'", shown, c->name);
        return 0;
    }
    if (bad == 1)
        fail(p, ARRANK_EPARSE, colno, "'%s' is not a number in column '%s'", shown, c->name);
    else if (bad == 2)
        fail(p, ARRANK_EPARSE, colno, "'%s' is not a finite number in column '%s'", shown,
             c->name);
    else if (bad == 3)
        fail(p, ARRANK_EPARSE, colno, "'%s' is out of range in column '%s'", shown, c->name);
    return bad == 0;
}

/* Whether a converted value is one the column accepts (else a message needs its text). */
static int value_ok(column_kind kind, double conv)
{
    if (!isfinite(conv))
        return 0;
    switch (kind) {
    case COL_TEMP:
    case COL_RATE: /* else the row may need the text for a problem */
        return conv > 0.0;
    case COL_RATE_SD:
        return !(conv < 0.0);
    case COL_CONVERSION:
        return !(conv < 0.0 || conv > 1.0);
    default:
        return 1;
    }
}

/* Cell step 3: the converted value checked and stored in the point. */
static void store_value(parser *p, const data_column *c, long colno, double conv,
                        const char *shown)
{
    if (!isfinite(conv)) { /* e.g. 1e306 mol/(kg*s) is 1e309 umol/(g*s): past double */
        if (p->lenient)
            omit(p, colno, "'%s' is out of range in column '%s' once converted", shown, c->name);
        else
            fail(p, ARRANK_EPARSE, colno, "'%s' is out of range in column '%s' once converted",
                 shown, c->name);
        return;
    }
    if (p->lenient && !value_ok(c->kind, conv) && c->kind != COL_RATE) {
        if (c->kind == COL_TEMP)
            omit(p, colno, "temperature '%s %s' is at or below absolute zero (0 K)", shown,
                 c->unit);
        else if (c->kind == COL_RATE_SD)
            omit(p, colno, "'%s' in column '%s' is negative", shown, c->name);
        else if (c->kind == COL_CONVERSION)
            omit(p, colno, "conversion '%s' is outside 0..1; a percentage needs '%s [%%]'", shown,
                 c->name);
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
        if (c->relative)
            p->sd_rel = conv; /* times the rate at the end of the row */
        else
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

/* One data cell: parse, convert, validate. */
static void data_field(parser *p, char *text)
{
    size_t idx = p->field;
    if (idx == 0) {
        char *t = text;
        while (arrank_is_blank(*t))
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
    char *cell = arrank_trim(text);
    if (*cell)
        p->row_has_text = 1;
    if (c->kind == COL_RUN) {
        run_cell(p, cell);
        return;
    }
    char shown[SHOWN_MAX]; /* the cell as written, cut to fit, for messages */
    double v = NAN;
    if (!cell_number(p, c, colno, cell, shown, &v))
        return;
    double conv = c->conv.scale * v + c->conv.offset;
    if (c->kind == COL_TEMP)
        p->point.temp_file = v; /* as written, whether or not it is usable */
    if (!value_ok(c->kind, conv) && shown[0] == '\0')
        copy_cut(shown, SHOWN_MAX, cell); /* the fast read left the cell as written */
    store_value(p, c, colno, conv, shown);
}

/* One field of len bytes at data, from libcsv or from split_plain_line. */
static void field_text(parser *p, const char *data, size_t len)
{
    if (p->status != ARRANK_OK)
        return;
    /* libcsv's bytes are neither NUL-terminated nor valid after the callback. */
    if (arrank_grow((void **)&p->cell, &p->cell_cap, len + 1, 1) != 0) {
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
    if (p->lenient && !p->row_has_text)
        return; /* delimiters and blanks only: what spreadsheets leave at the end */
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
    if (arrank_grow((void **)&s->points, &p->points_cap, s->n_points + 1, sizeof *s->points) != 0) {
        nomem(p);
        return;
    }
    if (isfinite(p->sd_rel))
        p->point.rate_sd = p->sd_rel * p->point.rate;
    if (p->lenient && !p->omit_reason[0] && !s->rates_derived && !(p->point.rate > 0.0))
        omit(p, (long)p->col_of[COL_RATE],
             "rate %s is not positive; a logarithm needs a positive rate", p->rate_text);
    if (p->omit_reason[0]) {
        if (!(p->point.omitted = strdup(p->omit_reason))) {
            nomem(p);
            return;
        }
        p->point.omitted_column = (int)p->omit_column;
        s->n_omitted++;
    }
    s->points[s->n_points++] = p->point;
    if (!s->rates_derived && !(p->point.rate > 0.0) && !s->problem && !p->point.omitted) {
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
static int plain_lines = 1; /* 0: every line to libcsv (arrank_sample_plain_lines) */

void arrank_sample_plain_lines(int on)
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

/* arrank_line_length, also telling whether the line holds a quote character. */
static size_t line_length_quote(const char *s, const char *end, size_t *term, int *quote)
{
    size_t n = arrank_line_length(s, end, term);
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

static int add_meta(parser *p, const char *key, size_t nk, const char *value, size_t nv,
                    const char *source, long line)
{
    arrank_sample *s = p->sample;
    if (arrank_grow((void **)&s->meta, &p->meta_cap, s->n_meta + 1, sizeof *s->meta) != 0)
        return -1;
    arrank_meta m = {arrank_dup_range(key, nk), arrank_dup_range(value, nv), strdup(source),
                     line};
    if (!m.key || !m.value || !m.source) {
        free(m.key);
        free(m.value);
        free(m.source);
        return -1;
    }
    s->meta[s->n_meta++] = m;
    return 0;
}

int arrank_sample_add_meta(arrank_sample *sample, const char *key, const char *value,
                           const char *source, long line)
{
    parser p;
    memset(&p, 0, sizeof p);
    p.sample = sample;
    p.meta_cap = sample->n_meta; /* exact size; arrank_grow doubles from here */
    return add_meta(&p, key, strlen(key), value, strlen(value), source, line);
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
    while (k0 < k1 && arrank_is_blank(*k0))
        k0++;
    while (k1 > k0 && arrank_is_blank(k1[-1]))
        k1--;
    while (v0 < v1 && arrank_is_blank(*v0))
        v0++;
    while (v1 > v0 && arrank_is_blank(v1[-1]))
        v1--;
    if (k0 == k1)
        return 0;
    return add_meta(p, k0, (size_t)(k1 - k0), v0, (size_t)(v1 - v0), p->path, p->line);
}

const char *arrank_point_file(const arrank_sample *s, const arrank_point *p)
{
    if (s->n_sources && p->source >= 0 && (size_t)p->source < s->n_sources)
        return s->source_files[p->source];
    return s->file;
}

const char *arrank_point_temp_unit(const arrank_sample *s, const arrank_point *p)
{
    if (s->n_sources && p->source >= 0 && (size_t)p->source < s->n_sources)
        return s->source_temp_units[p->source];
    return s->temp_unit_file;
}

const char *arrank_sample_meta(const arrank_sample *sample, const char *key)
{
    if (!sample || !key)
        return NULL;
    for (size_t i = sample->n_meta; i-- > 0;)
        if (arrank_ascii_casecmp(sample->meta[i].key, key) == 0)
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
    free(sample->temp_unit_file);
    arrank_list_free(sample->source_files, sample->n_sources);
    arrank_list_free(sample->source_temp_units, sample->n_sources);
    for (size_t i = 0; i < sample->n_points; i++)
        free(sample->points[i].omitted);
    free(sample->points);
    arrank_list_free(sample->runs, sample->n_runs);
    for (size_t i = 0; i < sample->n_meta; i++) {
        free(sample->meta[i].key);
        free(sample->meta[i].value);
        free(sample->meta[i].source);
    }
    free(sample->meta);
    arrank_list_free(sample->notes, sample->n_notes);
    free(sample->problem);
    memset(sample, 0, sizeof *sample);
}

int arrank_sample_fit_problem(arrank_sample *s)
{
    if (s->problem)
        return 0;
    char msg[256];
    size_t n = 0, first = 0; /* usable points; the first of them */
    for (size_t i = s->n_points; i-- > 0;)
        if (!s->points[i].omitted) {
            n++;
            first = i;
        }
    char left[64] = "";
    if (n < s->n_points)
        snprintf(left, sizeof left, " (%zu left out)", s->n_points - n);
    if (n < 3) {
        snprintf(msg, sizeof msg,
                 "only %zu %sdata point%s%s; a fit with uncertainties needs at least 3", n,
                 n < s->n_points ? "usable " : "", n == 1 ? "" : "s", left);
    } else {
        for (size_t i = first + 1; i < s->n_points; i++)
            if (!s->points[i].omitted && s->points[i].temp_K != s->points[first].temp_K)
                return 0;
        char temp[48];
        arrank_format_fixed(temp, sizeof temp, 2, s->points[first].temp_K); /* %.2f, any locale */
        snprintf(msg, sizeof msg,
                 "all %zu %spoints are at one temperature (%s K)%s; an activation energy "
                 "needs at least two",
                 n, n < s->n_points ? "usable " : "", temp, left);
    }
    s->problem = strdup(msg);
    s->problem_line = s->header_line; /* the columns that do not give enough */
    return s->problem ? 0 : -1;
}

static arrank_status sample_ids(parser *p)
{
    arrank_sample *s = p->sample;
    s->path = strdup(p->path);
    const char *base = arrank_base_name(p->path);
    s->file = strdup(base);
    const char *meta_id = arrank_sample_meta(s, "sample");
    if (meta_id && !*meta_id) {
        for (size_t i = s->n_meta; i-- > 0;)
            if (arrank_ascii_casecmp(s->meta[i].key, "sample") == 0) {
                p->line = s->meta[i].line;
                break;
            }
        return fail(p, ARRANK_EPARSE, 0, "empty sample id; write '# sample = NAME' or leave "
                                         "the line out to use the file name");
    }
    if (meta_id && !arrank_text_is_clean(meta_id)) {
        for (size_t i = s->n_meta; i-- > 0;)
            if (arrank_ascii_casecmp(s->meta[i].key, "sample") == 0) {
                p->line = s->meta[i].line;
                break;
            }
        return fail(p, ARRANK_EPARSE, 0, "the sample id is not valid UTF-8 text (or holds a "
                                         "control character); save the file as UTF-8");
    }
    if (meta_id) {
        s->id = strdup(meta_id);
    } else {
        size_t n = strlen(base);
        if (has_csv_extension(base))
            n -= 4;
        s->id = arrank_dup_range(base, n);
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

/* Read step 1: the text check, the byte order mark, the metadata and comment
   lines up to the header.  *header gets the header line (at p->line), *hlen
   its length; p->delim its delimiter. */
static arrank_status read_preamble(parser *p, const char *data, size_t len, const char **header,
                                   size_t *hlen)
{
    const char *s = data, *end = data + len;
    long nul = arrank_nul_line(data, len);
    if (nul) {
        p->line = nul;
        return fail(p, ARRANK_EPARSE, 0, "the file is not text (it has a NUL byte); "
                                         "a sample file is CSV");
    }
    if (len >= 3 && memcmp(s, "\xef\xbb\xbf", 3) == 0)
        s += 3; /* UTF-8 byte order mark */
    p->line = 0;
    *header = NULL;
    while (s < end) {
        size_t term;
        size_t n = arrank_line_length(s, end, &term);
        p->line++;
        if (n > (size_t)ARRANK_CAMPAIGN_MAX_LINE_BYTES)
            return fail(p, ARRANK_ELIMIT, 0, "line longer than %ld bytes",
                        ARRANK_CAMPAIGN_MAX_LINE_BYTES);
        const char *t = s;
        while (t < s + n && arrank_is_blank(*t))
            t++;
        if (t < s + n && *t != '#') {
            *header = s;
            *hlen = n;
            break;
        }
        if (t < s + n && metadata_line(p, t, (size_t)(s + n - t)) != 0)
            return nomem(p);
        s += n + term;
    }
    if (!*header) {
        p->line = s == data || p->sample->n_meta == 0 ? 1 : 0;
        return fail(p, ARRANK_EPARSE, 0,
                    "%s; a sample file needs a header such as 'T [degC], rate [umol/(g*s)]' "
                    "and data rows",
                    s == data || p->sample->n_meta == 0 ? "the file is empty"
                                                        : "no header line");
    }
    p->header_line = p->sample->header_line = p->line;
    p->delim = detect_delimiter(*header, *hlen);
    if (p->delim != ',')
        arrank_sample_decimal_commas(p->sample);
    return ARRANK_OK;
}

/* Read step 2: the header and the data rows, from s (the header line) to end,
   each line split directly or fed to libcsv. */
static void read_rows(parser *p, const char *s, const char *end)
{
    struct csv_parser csv;
    if (csv_init(&csv, CSV_STRICT | CSV_STRICT_FINI) != 0) {
        nomem(p);
        return;
    }
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
}

static arrank_status parse_sample(parser *p, const char *data, size_t len)
{
    const char *header = NULL;
    size_t hlen = 0;
    if (read_preamble(p, data, len, &header, &hlen) != ARRANK_OK)
        return p->status;
    read_rows(p, header, data + len);
    if (p->status != ARRANK_OK)
        return p->status;
    /* Read step 3: what the whole file decides. */
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
        p->sample->problem_line = 0; /* set when the rates are derived */
        return ARRANK_OK;
    }
    if (arrank_sample_fit_problem(p->sample) != 0)
        return nomem(p);
    return ARRANK_OK;
}

static arrank_status sample_parse(const char *name, const char *data, size_t len,
                                  arrank_units *units, const char *report_unit,
                                  const arrank_read_options *opt, arrank_sample *sample,
                                  int defer_derived, arrank_error *err)
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
    p.lenient = opt && !opt->strict;
    arrank_status st = parse_sample(&p, data ? data : "", len);
    if (st == ARRANK_OK) {
        sample->header_line = p.header_line;
        st = sample_ids(&p);
    }
    if (st == ARRANK_OK && sample->rates_derived && !defer_derived) {
        arrank_conversion identity = {1.0, 0.0};
        st = arrank_sample_derive_with(sample, units, report_unit ? &p.derived_conv : &identity,
                                       !p.lenient, err);
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
    return sample_parse(name, data, len, units, report_unit, NULL, sample, 0, err);
}

arrank_status arrank_sample_parse_with(const char *name, const char *data, size_t len,
                                       arrank_units *units, const char *report_unit,
                                       const arrank_read_options *opt, arrank_sample *sample,
                                       arrank_error *err)
{
    return sample_parse(name, data, len, units, report_unit, opt, sample, 0, err);
}

arrank_status arrank_sample_parse_deferred(const char *name, const char *data, size_t len,
                                           arrank_units *units, const char *report_unit,
                                           const arrank_read_options *opt,
                                           arrank_sample *sample, arrank_error *err)
{
    return sample_parse(name, data, len, units, report_unit, opt, sample, 1, err);
}
