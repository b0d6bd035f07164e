/*
 * table_internal.h - what the files of the table family share (table.c: the
 * table as piped, rows written in place on the workers; table_term.c: the
 * table fitted to a terminal's width).  Inside libarrank only.
 */
#ifndef ARRANK_TABLE_INTERNAL_H
#define ARRANK_TABLE_INTERNAL_H

#include <stddef.h>
#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/error.h"

/* What every row of the table needs: the layout and the analysis.  The
   widths are the piped table's, in columns. */
typedef struct {
    const arrank_analysis *a;
    const size_t *order;
    size_t name_w, w_rank, w_pb, w_grp, w_n, w_dof, w_T, w_ea, w_lna, w_scat, w_rate, w_boot;
    int have_T, have_stats;
    int fit_stats; /* fit's table (options.rank 0): dof and scatter columns */
    char rate_head[160], lnA_head[160]; /* the heads of the rate and ln A columns */
} arrank_table_ctx;

/* Ranked samples first, in rank order, then the others in file order: a new
   array of n_results indices (free), NULL when out of memory. */
size_t *arrank_table_order(const arrank_analysis *a);
/* The piped table's layout. */
arrank_table_ctx arrank_table_layout(const arrank_analysis *a, const size_t *order);
/* Display width of UTF-8 text: code points, not bytes. */
size_t arrank_table_text_width(const char *s);

/* Cells, written at p without a NUL; each returns the end. */
/* "%.<prec>f [%.<prec>f, %.<prec>f]" of v, lo and hi (at most 127 bytes). */
char *arrank_table_put_interval(char *p, int prec, double v, double lo, double hi);
/* A rate as the table shows it ("%.3g", or "-"; a few bytes). */
char *arrank_table_put_rate(char *p, double v);
/* The flags in words, or "-" (under 512 bytes). */
char *arrank_table_put_flags(const arrank_result *res, char *p);
/* fit's statistics cells: the degrees of freedom of the line, and the
   scatter about it ("2.1%" of ln r unweighted, "1.30 sd" weighted). */
char *arrank_table_put_dof(char *p, const arrank_result *res);
char *arrank_table_put_scatter(char *p, const arrank_result *res);

/* The lines above the column heads: the campaign and the operating
   temperature, then an empty line. */
void arrank_table_intro(const arrank_table_ctx *tc, FILE *f);
/* The lines below the rows: the flags seen in words, what the scatter means
   (fit), P(best) and groups, the compensation sentence wrapped at wrap
   columns, the model table, the cautions. */
arrank_status arrank_table_footer(const arrank_table_ctx *tc, FILE *f, unsigned seen_flags,
                                  int any_error, size_t wrap, arrank_error *err);

#endif
