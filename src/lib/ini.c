/*
 * ini.c - reading campaign.ini through inih (format: README.md, "The
 * campaign format").
 *
 * [campaign] sets the title, the operating temperature, the report unit, the
 * reference catalyst and the confidence; a [sample ID] section gives metadata keys to the sample of
 * that id, kept here as entries for the campaign reader (campaign.c) to
 * apply once the samples are read.  Keys not known are kept as notes
 * "campaign.ini:LINE: ..."; a malformed line or value stops the read with
 * its line.
 */
#include "ini_internal.h"
#include "number.h"
#include "units_internal.h"
#include "util.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <ini.h>

#define UNIT_MAX 256

typedef struct {
    const char *path;
    const char *text, *end, *pos; /* the file in memory */
    long line;
    arrank_units *units;
    arrank_ini *ini;
    arrank_error *err;
    arrank_status status;
} ini_state;

/* inih line reader over a memory buffer; counts physical lines for messages. */
static char *ini_read_line(char *buf, int size, void *stream)
{
    ini_state *st = stream;
    if (st->pos >= st->end || st->status != ARRANK_OK)
        return NULL;
    size_t term;
    size_t n = arrank_line_length(st->pos, st->end, &term);
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
    snprintf(note, sizeof note, "%s:%ld: ", arrank_base_name(st->path), st->line);
    size_t used = strlen(note);
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(note + used, sizeof note - used, fmt, ap);
    va_end(ap);
    arrank_ini *c = st->ini;
    return arrank_list_add(&c->notes, &c->n_notes, &c->notes_cap, note);
}

#define NOMEM (-1) /* a key handler's answer when out of memory */

/* A key of [campaign]: 1 done, 0 failed (st->status set), NOMEM. */
static int campaign_key(ini_state *st, const char *section, const char *name, const char *value)
{
    arrank_ini *c = st->ini;
    arrank_error uerr;
    arrank_error_clear(&uerr);
    if (arrank_ascii_casecmp(name, "title") == 0) {
        free(c->title);
        c->title = strdup(value);
        return c->title ? 1 : NOMEM;
    }
    if (arrank_ascii_casecmp(name, "operating_temperature") == 0 ||
        arrank_ascii_casecmp(name, "max_temperature") == 0) {
        double *to = arrank_ascii_casecmp(name, "max_temperature") == 0 ? &c->max_temp_K
                                                                        : &c->operating_temp_K;
        arrank_status s = arrank_units_parse_temperature(st->units, value, to, &uerr);
        if (s != ARRANK_OK) {
            st->status = arrank_error_at(st->err, s == ARRANK_EINVAL ? ARRANK_EPARSE : s,
                                         st->path, st->line, 0, "%s", uerr.message);
            return 0;
        }
        return 1;
    }
    if (arrank_ascii_casecmp(name, "rate_unit") == 0) {
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
            return NOMEM;
        c->basis = basis;
        return 1;
    }
    if (arrank_ascii_casecmp(name, "reference") == 0) {
        if (!value[0]) {
            st->status = arrank_error_at(st->err, ARRANK_EPARSE, st->path, st->line, 0,
                                         "reference needs a sample id (reference = ID)");
            return 0;
        }
        free(c->reference);
        c->reference = strdup(value);
        return c->reference ? 1 : NOMEM;
    }
    if (arrank_ascii_casecmp(name, "confidence") == 0) {
        char buf[128];
        snprintf(buf, sizeof buf, "%s", value);
        double v = NAN;
        if (arrank_decimal_cell(buf, '.', &v) != 0 || !(v > 0.0 && v < 1.0)) {
            st->status = arrank_error_at(st->err, ARRANK_EPARSE, st->path, st->line, 0,
                                         "confidence '%s' is not a number between 0 and 1 "
                                         "(e.g. 0.95)",
                                         value);
            return 0;
        }
        c->confidence = v;
        return 1;
    }
    return ini_note(st, "key '%s' in [%s] ignored", name, section) != 0 ? NOMEM : 1;
}

/* A key of [sample ID] (id at id): kept as an entry.  1 done, NOMEM. */
static int sample_key(ini_state *st, const char *section, const char *id, const char *name,
                      const char *value)
{
    arrank_ini *c = st->ini;
    if (arrank_ascii_casecmp(name, "sample") == 0 || arrank_ascii_casecmp(name, "id") == 0)
        return ini_note(st, "key '%s' in [%s] ignored: a section cannot rename its sample", name,
                        section) != 0
                   ? NOMEM
                   : 1;
    if (arrank_grow((void **)&c->entries, &c->entries_cap, c->n_entries + 1,
                    sizeof *c->entries) != 0)
        return NOMEM;
    arrank_ini_entry e = {strdup(id), strdup(name), strdup(value), st->line};
    if (!e.section_id || !e.key || !e.value) {
        free(e.section_id);
        free(e.key);
        free(e.value);
        return NOMEM;
    }
    c->entries[c->n_entries++] = e;
    return 1;
}

/* inih's handler: 1 to go on, 0 to stop (st->status says why). */
static int on_ini_key(void *user, const char *section, const char *name, const char *value)
{
    ini_state *st = user;
    if (st->status != ARRANK_OK)
        return 0;
    int r;
    if (arrank_ascii_casecmp(section, "campaign") == 0) {
        r = campaign_key(st, section, name, value);
    } else if (strlen(section) > 7 && arrank_ascii_casecmp_n(section, "sample ", 7) == 0) {
        const char *id = section + 7;
        while (*id == ' ' || *id == '\t')
            id++;
        r = sample_key(st, section, id, name, value);
    } else if (arrank_ascii_casecmp(name, "operating_temperature") == 0 ||
               arrank_ascii_casecmp(name, "max_temperature") == 0 ||
               arrank_ascii_casecmp(name, "rate_unit") == 0 ||
               arrank_ascii_casecmp(name, "confidence") == 0 ||
               arrank_ascii_casecmp(name, "title") == 0) {
        /* a campaign setting that would silently not apply: its line says where it goes */
        st->status = arrank_error_at(st->err, ARRANK_EPARSE, st->path, st->line, 0,
                                     "key '%s' %s%s%s applies only under [campaign]; put a "
                                     "'[campaign]' line above it",
                                     name, section[0] ? "in [" : "outside a section",
                                     section[0] ? section : "", section[0] ? "]" : "");
        return 0;
    } else {
        r = (section[0] ? ini_note(st, "key '%s' in unknown section [%s] ignored", name, section)
                        : ini_note(st, "key '%s' outside a section ignored", name)) != 0
                ? NOMEM
                : 1;
    }
    if (r == NOMEM) {
        st->status = arrank_errorf(st->err, ARRANK_ENOMEM, "out of memory reading campaign.ini");
        return 0;
    }
    return r;
}

arrank_status arrank_ini_parse(const char *path, const char *text, size_t len,
                               arrank_units *units, arrank_ini *ini, arrank_error *err)
{
    memset(ini, 0, sizeof *ini);
    ini->operating_temp_K = NAN;
    ini->confidence = NAN;
    ini->max_temp_K = NAN;
    ini_state state = {path, text, text + len, text, 0, units, ini, err, ARRANK_OK};
    ini_state *st = &state;
    if (memchr(text, '\0', len))
        st->status = arrank_error_at(err, ARRANK_EPARSE, path, arrank_nul_line(text, len), 0,
                                     "campaign.ini is not text (it has a NUL byte)");
    int r = st->status == ARRANK_OK ? ini_parse_stream(ini_read_line, st, on_ini_key, st) : 0;
    if (st->status == ARRANK_OK && r == -2)
        st->status = arrank_errorf(err, ARRANK_ENOMEM, "out of memory reading campaign.ini");
    else if (st->status == ARRANK_OK && r != 0)
        st->status = arrank_error_at(err, ARRANK_EPARSE, path, r, 0,
                                     "malformed line; expected '[section]', 'key = value' "
                                     "or a comment");
    return st->status;
}

void arrank_ini_free(arrank_ini *ini)
{
    if (!ini)
        return;
    free(ini->title);
    free(ini->rate_unit);
    free(ini->reference);
    arrank_list_free(ini->notes, ini->n_notes);
    for (size_t i = 0; i < ini->n_entries; i++) {
        free(ini->entries[i].section_id);
        free(ini->entries[i].key);
        free(ini->entries[i].value);
    }
    free(ini->entries);
    memset(ini, 0, sizeof *ini);
    ini->operating_temp_K = NAN;
    ini->confidence = NAN;
    ini->max_temp_K = NAN;
}
