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
#include <stdio.h>

/* width 0 is no limit; colour 1 marks flags, verdicts and reasons with ANSI
   colours.  With width 0 and colour 0 (or options NULL) every writer writes
   what it writes piped, byte for byte. */
typedef struct {
    size_t width; /* columns of the terminal; 0: no limit */
    int colour;   /* 1: ANSI colours (the caller checks NO_COLOR and the terminal) */
} arrank_table_options;

/*
 * Prose for a terminal: text (lines ending in '\n') onto stream, each line
 * wider than width columns (code points) broken at spaces, its continuation
 * lines indented as the line is plus hang columns (at most half the width).
 * width 0 writes text as it stands.  0, or -1 on a write error.  `check`
 * writes its report through it.
 */
int arrank_textfit_write(FILE *stream, const char *text, size_t width, size_t hang);

#endif
