/*
 * arrank/textfit.h - how a terminal writer is told the terminal's width
 * (README "The table on a terminal").  The library never looks at the
 * terminal: the caller says how wide it is and whether to colour.  The same
 * options serve every writer for people: rank's and fit's table with the
 * reference's block (arrank/output.h), compare's table
 * (arrank/compare_out.h) and a plan's (arrank/plan_out.h).
 */
#ifndef ARRANK_TEXTFIT_H
#define ARRANK_TEXTFIT_H

#include <stddef.h>

/* width 0 is no limit; colour 1 marks flags, verdicts and reasons with ANSI
   colours.  With width 0 and colour 0 (or options NULL) every writer writes
   what it writes piped, byte for byte. */
typedef struct {
    size_t width; /* columns of the terminal; 0: no limit */
    int colour;   /* 1: ANSI colours (the caller checks NO_COLOR and the terminal) */
} arrank_table_options;

#endif
