/*
 * sample_text.c - the text rules of a sample file that need no parser state,
 * part of the sample module (sample.c reads the file): run labels, header
 * fields in their three forms, cells that hold no number, decimal commas in
 * metadata (README "Headers", "Cells"); a sample's temperatures in words, in
 * its file's unit beside the kelvin (arrank_sample_temp_text).
 */
#include "number.h"
#include "sample_internal.h"
#include "util.h"

#include <math.h>

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>




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
long arrank_sample_run_index(arrank_run_table *t, arrank_sample *s, size_t *runs_cap, const char *label)
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
    if (arrank_list_add(&s->runs, &s->n_runs, runs_cap, label) != 0)
        return -1;
    t->slots[h] = s->n_runs;
    return (long)(s->n_runs - 1);
}

/* Whether the round brackets of text pair up. */
static int brackets_balanced(const char *text)
{
    long depth = 0;
    for (; *text; text++) {
        if (*text == '(')
            depth++;
        else if (*text == ')' && --depth < 0)
            return 0;
    }
    return depth == 0;
}

/*
 * Split a header field into name and unit.  Three forms (README "Headers"):
 * 'name [unit]', 'name (unit)' (the unit in the last bracket pair, which may
 * hold brackets of its own: 'rate (mol/(kg*h))') and the quantity / unit form
 * 'name / unit' (a slash with blanks on both sides).  A field without any is
 * a name alone (*unit NULL).  Brackets that do not pair up are an error with
 * the column.  0, or -1 with *st and the message in msg.
 */
int arrank_sample_split_header(char *s, char **name, char **unit, arrank_status *st, char *msg,
                                size_t msg_n)
{
    *name = s;
    *unit = NULL;
    char *open = strchr(s, '[');
    char *u = NULL;
    char *slash = strstr(s, " / ");
    if (!slash)
        slash = strstr(s, "\t/ ");
    if (slash && !memchr(s, '(', (size_t)(slash - s)) && !memchr(s, '[', (size_t)(slash - s))) {
        *slash = '\0';
        u = slash + 3;
    } else if (open) {
        char *close = strchr(open + 1, ']');
        if (!close) {
            *st = ARRANK_EPARSE;
            snprintf(msg, msg_n, "unclosed '[' in header field '%s'", s);
            return -1;
        }
        char *after = close + 1;
        while (arrank_is_blank(*after))
            after++;
        if (*after) {
            *st = ARRANK_EPARSE;
            snprintf(msg, msg_n, "text after ']' in header field '%s'; write it as 'name [unit]'", s);
            return -1;
        }
        *open = '\0';
        *close = '\0';
        u = open + 1;
    } else if (strchr(s, '(') || strchr(s, ')')) {
        size_t n = strlen(s);
        long depth = 0;
        char *match = NULL;
        if (n > 0 && s[n - 1] == ')')
            for (size_t i = n; i-- > 0;) {
                if (s[i] == ')')
                    depth++;
                else if (s[i] == '(' && --depth == 0) {
                    match = s + i;
                    break;
                }
            }
        if (!match || memchr(s, '(', (size_t)(match - s)) || memchr(s, ')', (size_t)(match - s))) {
            *st = ARRANK_EPARSE;
            snprintf(msg, msg_n,
                     "brackets do not pair up in header field '%s'; write it as 'name (unit)' "
                     "or 'name [unit]'", s);
            return -1;
        }
        s[n - 1] = '\0';
        *match = '\0';
        u = match + 1;
    }
    if (u) {
        u = arrank_trim(u);
        if (!brackets_balanced(u)) {
            *st = ARRANK_EUNIT;
            snprintf(msg, msg_n, "brackets do not pair up in unit '%s' of column '%s'", u, arrank_trim(s));
            return -1;
        }
        /* 'T / (K)' and 'rate [(mol/(kg*h))]': one pair around the whole unit is dropped */
        size_t n = strlen(u);
        if (n >= 2 && u[0] == '(' && u[n - 1] == ')') {
            u[n - 1] = '\0';
            if (brackets_balanced(u + 1))
                u = arrank_trim(u + 1);
            else
                u[n - 1] = ')';
        }
        if (*u)
            *unit = u;
    }
    *name = arrank_trim(s);
    return 0;
}

/*
 * What a cell that is not a number says, in lenient reading: 1 no value
 * ('n.d.', 'nd', 'n/a', 'NA', '-', '--', '?'), 2 below a detection limit
 * ('< 0.01', '<LOD', 'LOD', 'LOQ', 'bdl', 'b.d.l.'), 0 neither.
 */
int arrank_sample_missing_kind(const char *cell)
{
    static const char *const none[] = {"n.d.", "n.d", "nd", "n/a", "na", "-", "--", "---",
                                       "?", "none", "null", "n.a.", "\xe2\x80\x93",
                                       "\xe2\x80\x94"};
    static const char *const limit[] = {"lod", "loq", "bdl", "b.d.l.", "<lod", "<loq",
                                        "< lod", "< loq", "<dl", "< dl"};
    for (size_t i = 0; i < sizeof none / sizeof none[0]; i++)
        if (arrank_ascii_casecmp(cell, none[i]) == 0)
            return 1;
    for (size_t i = 0; i < sizeof limit / sizeof limit[0]; i++)
        if (arrank_ascii_casecmp(cell, limit[i]) == 0)
            return 2;
    return cell[0] == '<' ? 2 : 0;
}

/*
 * A file whose delimiter is ';' or tab may write its numbers with a decimal
 * comma, and its metadata follow it: '# mass = 48,5 mg' is 48.5 mg.  A value
 * that starts with digits, one comma and digits (then an exponent, a blank
 * and a unit, or nothing) gets a point for the comma; ids and notes are text
 * and kept as written.
 */
void arrank_sample_decimal_commas(arrank_sample *s)
{
    for (size_t i = 0; i < s->n_meta; i++) {
        const char *key = s->meta[i].key;
        if (arrank_ascii_casecmp(key, "sample") == 0 || arrank_ascii_casecmp(key, "note") == 0 ||
            arrank_ascii_casecmp(key, "title") == 0)
            continue;
        char *v = s->meta[i].value, *t = v;
        if (*t == '+' || *t == '-')
            t++;
        if (!(*t >= '0' && *t <= '9'))
            continue;
        while (*t >= '0' && *t <= '9')
            t++;
        if (*t != ',' || !(t[1] >= '0' && t[1] <= '9'))
            continue;
        char *comma = t++;
        while (*t >= '0' && *t <= '9')
            t++;
        if (*t == 'e' || *t == 'E') {
            char *e = t + 1;
            if (*e == '+' || *e == '-')
                e++;
            if (*e >= '0' && *e <= '9') {
                while (*e >= '0' && *e <= '9')
                    e++;
                t = e;
            }
        }
        if (*t == '\0' || arrank_is_blank(*t))
            *comma = '.';
    }
}

/* The unit s's file wrote its temperatures in, when it is not kelvin and
   every file of s wrote the same; NULL otherwise. */
static const char *shown_temp_unit(const arrank_sample *s)
{
    const arrank_conversion c = s->temp_to_K;
    if (!s->temp_unit_file || !(c.scale > 0) || (c.scale == 1.0 && c.offset == 0.0))
        return NULL;
    for (size_t k = 0; k < s->n_sources; k++)
        if (!s->source_temp_units[k] || strcmp(s->source_temp_units[k], s->temp_unit_file) != 0)
            return NULL;
    return s->temp_unit_file;
}

/* v with prec digits after the point (number.c: any locale), at buf[at]. */
static size_t put_fixed(char *buf, size_t n, size_t at, int prec, double v)
{
    char num[64];
    int len = arrank_format_fixed(num, sizeof num, prec, v);
    if (len <= 0 || (size_t)len >= sizeof num)
        len = snprintf(num, sizeof num, "nan");
    if (at < n)
        snprintf(buf + at, n - at, "%s", num);
    return at + (size_t)len;
}

static size_t put_text(char *buf, size_t n, size_t at, const char *s)
{
    if (at < n)
        snprintf(buf + at, n - at, "%s", s);
    return at + strlen(s);
}

const char *arrank_sample_temp_text(const arrank_sample *s, double lo_K, double hi_K, int prec,
                                    char *buf, size_t n)
{
    if (!n)
        return buf;
    buf[0] = '\0';
    const char *u = shown_temp_unit(s);
    const arrank_conversion c = s->temp_to_K;
    const int span = !isnan(hi_K);
    size_t at = 0;
    if (u && isfinite(lo_K) && (!span || isfinite(hi_K))) {
        at = put_fixed(buf, n, at, prec, (lo_K - c.offset) / c.scale);
        if (span) {
            at = put_text(buf, n, at, "-");
            at = put_fixed(buf, n, at, prec, (hi_K - c.offset) / c.scale);
        }
        at = put_text(buf, n, at, " ");
        at = put_text(buf, n, at, u);
        at = put_text(buf, n, at, " (");
    }
    at = put_fixed(buf, n, at, prec, lo_K);
    if (span) {
        at = put_text(buf, n, at, "-");
        at = put_fixed(buf, n, at, prec, hi_K);
    }
    at = put_text(buf, n, at, " K");
    if (u && isfinite(lo_K) && (!span || isfinite(hi_K)))
        put_text(buf, n, at, ")");
    return buf;
}
