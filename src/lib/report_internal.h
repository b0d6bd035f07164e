/*
 * report_internal.h - what the files of the report family share (report.c:
 * the page, its figures and the ranking; report_sample.c: one sample's
 * section).  Inside libarrank only.
 */
#ifndef ARRANK_REPORT_INTERNAL_H
#define ARRANK_REPORT_INTERNAL_H

#include <stddef.h>
#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/plot.h"

#define ZERO_C_K 273.15 /* 0 degC in K, exact by definition */

/* The figures drawn for the page, read back as text. */
typedef struct {
    arrank_plot_files files;
    char **svg; /* [files.n] contents, NULL where unreadable */
    arrank_status status;
    char message[ARRANK_ERROR_MSG_MAX];
} figure_set;

/* A number with `digits` decimals (fixed) or, with digits < 0, -digits
   significant digits; a dash when not finite. */
void arrank_report_html_num(FILE *f, double v, int digits);
/* The figure of that kind (and sample) inline, with its caption. */
void arrank_report_put_figure(FILE *f, const figure_set *fs, arrank_figure_kind kind,
                              size_t sample);
/* The rate unit as the reader reads it (µmol g⁻¹ s⁻¹). */
const char *arrank_report_unit(const arrank_analysis *a);
/* The sample's look (colour and marker shape, plot_style.c) as a small
   inline mark. */
void arrank_report_put_swatch(FILE *f, const arrank_analysis *a, size_t i);
/* One sample's section: parameters, flags, diagnosis, points left out,
   criteria, diagnostics figure (report_sample.c). */
void arrank_report_put_sample(FILE *f, const arrank_analysis *a, size_t i,
                              const figure_set *fs);

#endif
