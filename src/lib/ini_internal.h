/*
 * ini_internal.h - campaign.ini read into memory (ini.c, through inih); the
 * campaign reader applies it.  Inside libarrank only.
 */
#ifndef ARRANK_INI_INTERNAL_H
#define ARRANK_INI_INTERNAL_H

#include <stddef.h>

#include "arrank/error.h"
#include "arrank/units.h"

/* A key of a [sample ID] section, for the sample of that id. */
typedef struct {
    char *section_id; /* the sample id */
    char *key;
    char *value;
    long line;
} arrank_ini_entry;

/* What campaign.ini says.  Unset fields stay NULL or NAN. */
typedef struct {
    char *title;
    double operating_temp_K;
    double confidence;
    double max_temp_K;  /* [campaign] max_temperature: the reactor's or safety limit */
    char *rate_unit;    /* udunits spelling of [campaign] rate_unit */
    char *reference;    /* [campaign] reference: the reference catalyst's sample id */
    arrank_basis basis; /* basis of rate_unit */
    char **notes;       /* "campaign.ini:LINE: ..." for keys ignored */
    size_t n_notes, notes_cap;
    arrank_ini_entry *entries; /* [sample ID] keys in file order */
    size_t n_entries, entries_cap;
} arrank_ini;

/* Read campaign.ini text (len bytes at text, not NUL-terminated; path names
   it in messages) into *ini, which this sets up first.  On failure err says
   the line; *ini holds what was read before it (free it either way). */
arrank_status arrank_ini_parse(const char *path, const char *text, size_t len,
                               arrank_units *units, arrank_ini *ini, arrank_error *err);

/* Free what *ini holds and clear it. */
void arrank_ini_free(arrank_ini *ini);

#endif
