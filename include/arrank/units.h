/*
 * arrank/units.h - units of measure through udunits2.
 *
 * Every number read from a campaign passes through here on its way to SI or
 * to the campaign's report unit.  Temperatures never have a default unit: a
 * bare number is an error.  In temperature text, "C" and "F" mean degrees
 * Celsius and Fahrenheit (udunits would read them as coulomb and farad).
 * Conversions are cached by unit string, so a campaign of many files that share
 * a few units parses each unit once.
 */
#ifndef ARRANK_UNITS_H
#define ARRANK_UNITS_H

#include "arrank/error.h"

typedef struct arrank_units arrank_units;

/* Normalisation basis of a rate, from its dimension. */
typedef enum {
    ARRANK_BASIS_UNKNOWN = 0,
    ARRANK_BASIS_MASS = 1,  /* amount / (mass * time), e.g. umol/(g*s) */
    ARRANK_BASIS_AREA = 2,  /* amount / (area * time), e.g. umol/(m2*s) */
    ARRANK_BASIS_SITE = 3   /* 1 / time: turnover frequency, e.g. 1/s */
} arrank_basis;

/* value_to = scale * value_from + offset */
typedef struct {
    double scale;
    double offset;
} arrank_conversion;

/*
 * Load the unit database (udunits2's XML; UDUNITS2_XML_PATH is honoured).
 * Returns NULL and fills err on failure.  Free with arrank_units_free.
 */
arrank_units *arrank_units_create(arrank_error *err);

/*
 * Like arrank_units_create, but the database is read on a thread of its own
 * (about 8 ms) while the caller goes on, e.g. to list a campaign folder.
 * Every function below waits for it where it needs it; when it could not be
 * read, each fails with the reason arrank_units_create would have given
 * (EIO).  arrank_units_ready waits and reports that reason.  NULL only when
 * out of memory (or, with no thread to spare, when the database, read at
 * once, fails).  Free with arrank_units_free, which waits first.
 */
arrank_units *arrank_units_create_background(arrank_error *err);
arrank_status arrank_units_ready(arrank_units *units, arrank_error *err);

void arrank_units_free(arrank_units *units);

/*
 * Conversion from a temperature unit ("degC", "C", "K", "degF", "F", "°C",
 * "kelvin", ...) to kelvin.  EUNIT if unknown or not a temperature.
 */
arrank_status arrank_units_temperature(arrank_units *units, const char *unit,
                                       arrank_conversion *to_K, arrank_error *err);

/*
 * Classify a rate unit and give the conversion to its SI form
 * (mol/(kg*s), mol/(m2*s) or 1/s).  EUNIT when the unit is unknown or is not
 * amount/(mass*time), amount/(area*time) or 1/time.
 */
arrank_status arrank_units_rate(arrank_units *units, const char *unit, arrank_basis *basis,
                                arrank_conversion *to_si, arrank_error *err);

/*
 * Conversion between any two convertible units (e.g. "mol/(kg*h)" to
 * "umol/(g*s)", "um" to "m").  EUNIT when unknown or not convertible.
 */
arrank_status arrank_units_conversion(arrank_units *units, const char *from, const char *to,
                                      arrank_conversion *conv, arrank_error *err);

/*
 * Parse a temperature with its unit: "250C", "250 degC", "523.15K", "482F",
 * "1,5 °C" is not accepted (decimal point only).  A bare number is EINVAL
 * with a message asking for a unit.  Results at or below 0 K are EINVAL.
 */
arrank_status arrank_units_parse_temperature(arrank_units *units, const char *text,
                                             double *temp_K, arrank_error *err);

/*
 * Parse "VALUE UNIT" (e.g. "150 um", "0.8 g/cm3") and convert to si_unit
 * (e.g. "m", "kg/m3").  A missing unit is EUNIT unless si_unit is "1".
 */
arrank_status arrank_units_parse_quantity(arrank_units *units, const char *text,
                                          const char *si_unit, double *value_si,
                                          arrank_error *err);

/* Name of a basis: "mass", "area", "site", "unknown". */
const char *arrank_basis_name(arrank_basis basis);

#endif
