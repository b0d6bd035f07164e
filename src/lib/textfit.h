/*
 * textfit.h - text and tables fitted to a terminal's width (textfit.c),
 * inside libarrank: widths counted in terminal columns, lines broken at spaces,
 * prose reflowed, and a grid of columns that leaves columns out in a stated
 * order of priority, narrows them and wraps their cells.  Shared by every
 * writer for people on a terminal (table_term.c, reference_out.c,
 * compare_out.c, plan_out.c).
 */
#ifndef ARRANK_TEXTFIT_INTERNAL_H
#define ARRANK_TEXTFIT_INTERNAL_H

#include <stddef.h>
#include <stdio.h>

#include "arrank/textfit.h"

#define ARRANK_TEXTFIT_COLS 16

#define ARRANK_SGR_FLAGS "\033[33m" /* yellow: flags, verdicts of a change */
#define ARRANK_SGR_ERROR "\033[31m" /* red: why a sample was not fitted or compared */

/* Display width of len bytes of UTF-8 text: terminal columns
   (arrank_text_columns: a CJK character takes two), not bytes. */
size_t arrank_textfit_width(const char *s, size_t len);

/* The next line of *rest at most width columns wide (width 0: all of
   it): its length in bytes, broken after the last space that fits (with
   at_commas, only a space after a comma: "a x1, b x2" breaks between items),
   else at width columns (a wide character that would straddle it goes to
   the next line); *rest moves past it and the spaces after it. */
size_t arrank_textfit_chunk(const char **rest, size_t width, int at_commas);

/* Text of several lines, each line longer than width wrapped at spaces, its
   continuation lines indented as the line is (at most half the width). */
void arrank_textfit_reflow(FILE *f, const char *text, size_t width);
/* The same for lists ("only in A: x 1, y 2"): lines broken after commas only,
   unless an item is wider than the line. */
void arrank_textfit_reflow_list(FILE *f, const char *text, size_t width);

/* A grid of columns, in display order. */
typedef struct {
    int n;                                  /* columns */
    const char *head[ARRANK_TEXTFIT_COLS];  /* heads, wrapped at spaces */
    const char *words[ARRANK_TEXTFIT_COLS]; /* the column's name where it is said left out */
    int right[ARRANK_TEXTFIT_COLS];         /* cells right-aligned */
    int at_commas[ARRANK_TEXTFIT_COLS];     /* cells are lists: break after commas */
    int present[ARRANK_TEXTFIT_COLS];       /* the column belongs to this table */
    int shown[ARRANK_TEXTFIT_COLS];         /* and is not left out for the width */
    size_t w[ARRANK_TEXTFIT_COLS];          /* width in columns */
    int fill;             /* the column that takes the rest of the line (-1: none) */
    size_t fill_need;     /* its widest cell */
    size_t fill_min;      /* it wraps at no less than this */
    size_t width;         /* the terminal's columns; 0: no limit */
    size_t indent;        /* spaces before every line */
    int colour;
} arrank_textfit_grid;

/* Width of a line of the grid with the fill column at its least. */
size_t arrank_textfit_line(const arrank_textfit_grid *g);
/* 1 when the shown columns fit the width. */
int arrank_textfit_fits(const arrank_textfit_grid *g);

/* The compact layout: each column as wide as its widest cell (cell_w) or the
   longest word of its head; the columns of list[n_keep..n-1] left out from
   the last until the grid fits; then column narrow (-1: none) narrows down
   to narrow_min; then the widest columns give, down to cell_min, their
   cells wrapping.  narrow_max (0: none) caps that column first. */
void arrank_textfit_compact(arrank_textfit_grid *g, const size_t *cell_w, const int *list, int n,
                            int n_keep, int narrow, size_t narrow_max, size_t narrow_min,
                            size_t cell_min);
/* Natural widths (each column its widest cell or its whole head) when they
   fit, else the compact layout above (column narrow capped at
   ARRANK_TEXTFIT_ID_MAX, as rank's id column); then the fill column's width. */
#define ARRANK_TEXTFIT_ID_MAX 28
void arrank_textfit_layout(arrank_textfit_grid *g, const size_t *cell_w, const int *list, int n,
                           int n_keep, int narrow, size_t narrow_min, size_t cell_min);
/* The fill column takes the rest of the line (at least fill_min). */
void arrank_textfit_settle(arrank_textfit_grid *g);

/* The head lines: each head wrapped in its column, the last lines of all
   heads on the last line. */
void arrank_textfit_heads(FILE *f, const arrank_textfit_grid *g);

/* A row on as many lines as its cells need (cells[c] NULL: empty; sgr[c]
   the colour of a cell or NULL; sgr NULL: none).  With span (not NULL), the
   span's text takes the line from the first shown column at or after
   span_from to the end, in span_sgr. */
void arrank_textfit_row(FILE *f, const arrank_textfit_grid *g, const char *const *cells,
                        const char *const *sgr, const char *span, int span_from,
                        const char *span_sgr);

/* "(left out to fit N columns: a, b; --wide shows every column)", reflowed;
   nothing when no column was left out. */
void arrank_textfit_left_out(FILE *f, const arrank_textfit_grid *g);

#endif
