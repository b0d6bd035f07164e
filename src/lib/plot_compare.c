/*
 * plot_compare.c - the paired figure of `compare` (arrank/compare.h): one
 * line per compared sample from its rate at T in campaign A to its rate in
 * campaign B, on a log rate axis, both intervals drawn, in the house style
 * (plot_style.c): each sample's own look, those whose rate changed (after
 * Holm) heavy with filled marks, the others thin and open.  Kept apart from the
 * campaign figures (plot.c and the files beside it) on purpose.
 */
#include "arrank/plot_compare.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "arrank/analysis_stats.h"
#include "arrank/plot.h"
#include "number.h"
#include "plot_internal.h"

static const struct {
    unsigned bit;
    const char *ext;
} formats_known[] = {{ARRANK_PLOT_SVG, "svg"}, {ARRANK_PLOT_PNG, "png"}, {ARRANK_PLOT_PDF, "pdf"}};

/* One end of a row's line: its rate at T in campaign b (0: A, 1: B), in A's
   unit, with its interval; with a reference, its ratio to its campaign's
   reference instead (analysis_stats.h), the quantity the verdict is on. */
static void row_end(const arrank_comparison *c, const arrank_compare_row *r, int b, double *y,
                    double *lo, double *hi)
{
    const arrank_result *res = b ? &c->b->results[r->result_b] : &c->a->results[r->result_a];
    if (c->reference && res->stats) {
        const arrank_contrast *x = &res->stats->ratio;
        *y = exp(x->est);
        *lo = exp(x->lo);
        *hi = exp(x->hi);
        return;
    }
    const double s = b ? c->b_to_a : 1.0;
    *y = s * res->at_T.rate;
    *lo = s * res->at_T.rate_lo;
    *hi = s * res->at_T.rate_hi;
}

/* The rows drawn (compared), their count; the rates' range into lo/hi. */
static size_t rows_drawn(const arrank_comparison *c, size_t *rows, double *lo, double *hi)
{
    size_t n = 0;
    *lo = INFINITY;
    *hi = -INFINITY;
    for (size_t i = 0; i < c->n_rows; i++) {
        if (!c->rows[i].compared)
            continue;
        double v[6];
        row_end(c, &c->rows[i], 0, &v[0], &v[1], &v[2]);
        row_end(c, &c->rows[i], 1, &v[3], &v[4], &v[5]);
        for (size_t k = 0; k < 6; k++)
            if (isfinite(v[k]) && v[k] > 0) {
                *lo = fmin(*lo, v[k]);
                *hi = fmax(*hi, v[k]);
            }
        rows[n++] = i;
    }
    return n;
}

/* The layout of the paired figure: plot area, names at the right or a
   legend below (then the canvas grows by its rows). */
typedef struct {
    size_t *rows, n;  /* rows of c drawn */
    size_t *idx;      /* their results in A (each sample's look) */
    double lo, hi;    /* the log axis */
    int below;
    size_t legend_rows;
    double l, t, r, b;
} cmp_layout;

#define CMP_LABEL_FRAC 0.78
#define CMP_CAPTIONS 3

static void cmp_layout_make(script *s, cmp_layout *L)
{
    double f = s->fpx, pad = 0.8 * f, widest = 0;
    for (size_t k = 0; k < L->n; k++)
        widest = fmax(widest, arrank_plot_text_px(arrank_plot_sample_name(
                                                      &s->a->results[L->idx[k]]),
                                                  CMP_LABEL_FRAC * f));
    L->t = 0.8 * f + 1.38 * f + (s->title && *s->title ? 0.35 * f + 0.96 * f : 0) + 0.4 * f +
           1.0 * f;
    L->l = pad + 1.6 * f + 6.0 * ARRANK_CHAR_EM * f + 0.9 * f;
    double b_asked = s->base_h - arrank_plot_caption_px(s, CMP_CAPTIONS) - 4.6 * f;
    L->below = (double)L->n * 1.3 * CMP_LABEL_FRAC * f > b_asked - L->t || widest > 0.3 * s->W;
    L->r = s->W - pad - widest - 1.6 * f;
    L->b = s->H - arrank_plot_caption_px(s, CMP_CAPTIONS) - 4.6 * f;
    if (L->below) {
        size_t cols;
        L->legend_rows = arrank_plot_legend_rows(s, L->idx, L->n, s->W - 2 * pad, &cols);
        L->r = s->W - pad - 1.0 * f;
        L->b -= (double)L->legend_rows * 1.45 * CMP_LABEL_FRAC * f + 0.6 * f;
    }
}

/* px from the top of a rate v on the log axis of L. */
static double cmp_y_px(const cmp_layout *L, double v)
{
    return L->t + (log(L->hi) - log(v)) / (log(L->hi) - log(L->lo)) * (L->b - L->t);
}

/* The figure's name (heading and SVG title). */
static void cmp_name(const arrank_comparison *c, char *buf, size_t n)
{
    if (c->reference)
        snprintf(buf, n, "Rate at %.4g °C over the reference %.120s in each campaign, "
                         "%.4g %% intervals",
                 c->temp_K - ZERO_C_K, c->reference, 100.0 * c->confidence);
    else
        snprintf(buf, n, "Rate at %.4g °C in each campaign, %.4g %% intervals",
                 c->temp_K - ZERO_C_K, 100.0 * c->confidence);
}

static const char *campaign_words(const arrank_analysis *a)
{
    return a->campaign && a->campaign->title  ? a->campaign->title
           : a->campaign && a->campaign->name ? a->campaign->name
                                              : "";
}

/* Axes, heading, axis names, captions and names of the paired figure. */
static void cmp_frame(script *s, const arrank_comparison *c, const cmp_layout *L)
{
    FILE *f = s->f;
    double fp = s->fpx, pad = 0.8 * fp;
    char name[400], buf[600], line2[600], line3[300];
    arrank_plot_style_axes(f, 0);
    cmp_name(c, name, sizeof name);
    arrank_plot_head(s, name);
    arrank_plot_area(s, L->l, L->t, L->r, L->b);
    fprintf(f, "set xrange [-0.3:1.3]\nset yrange [%.10g:%.10g]\nset logscale y\n", L->lo,
            L->hi);
    fputs("set xtics out ('' 0, '' 1)\n", f);
    arrank_plot_put_log_tics(f, "y", L->lo, L->hi);
    /* the campaigns under their ticks, each cut to half the plot's width */
    const double xs[2] = {0.0, 1.0};
    const arrank_analysis *ab[2] = {c->a, c->b};
    for (int k = 0; k < 2; k++) {
        double x = L->l + (xs[k] + 0.3) / 1.6 * (L->r - L->l);
        arrank_plot_fit_text(ab[k]->campaign ? ab[k]->campaign->name : "",
                             0.45 * (L->r - L->l), 0.9 * fp, buf, sizeof buf);
        arrank_plot_text(s, x, L->b + 1.5 * fp, "center", 0.9, ARRANK_INK, 0, buf);
    }
    arrank_plot_text(s, 0.5 * (L->l + L->r), L->b + 3.5 * fp, "center", 0.9, ARRANK_INK, 0,
                     "campaign");
    if (c->reference)
        snprintf(buf, sizeof buf, "rate at %.4g °C / the reference's", c->temp_K - ZERO_C_K);
    else
        snprintf(buf, sizeof buf, "rate at %.4g °C / %s", c->temp_K - ZERO_C_K, s->unit);
    arrank_plot_text(s, 1.4 * fp, 0.5 * (L->t + L->b), "center", 0.9, ARRANK_INK, 1, buf);
    snprintf(buf, sizeof buf, "bars: %.4g %% intervals; heavy line, filled marks: rate "
                              "changed (Holm, %.4g %%); thin, open: no change shown",
             100.0 * c->confidence, 100.0 * (1.0 - c->confidence));
    if (c->reference)
        snprintf(line2, sizeof line2, "each rate over its own campaign's %s (measured in both; "
                                      "not drawn itself)", c->reference);
    else
        snprintf(line2, sizeof line2, "rates as measured, the second campaign's in the first's "
                                      "unit");
    size_t not_fitted = c->n_rows - L->n - (c->reference ? 1 : 0);
    size_t one_only = c->n_only_a + c->n_only_b;
    line3[0] = '\0';
    if (not_fitted && one_only)
        snprintf(line3, sizeof line3, "not drawn: %zu not fitted in one campaign, %zu ids in "
                                      "one campaign only (see the table)", not_fitted, one_only);
    else if (not_fitted || one_only)
        snprintf(line3, sizeof line3, "not drawn: %zu %s (see the table)",
                 not_fitted ? not_fitted : one_only,
                 not_fitted ? "not fitted in one campaign" : "ids in one campaign only");
    const char *lines[CMP_CAPTIONS] = {buf, line2, line3};
    arrank_plot_captions(s, lines, CMP_CAPTIONS);
    if (L->below) {
        arrank_plot_legend(s, L->idx, L->n, pad, L->b + 4.6 * fp - 0.2 * fp, s->W - pad,
                           s->H - arrank_plot_caption_px(s, CMP_CAPTIONS), 1);
        return;
    }
    double *xd = malloc((L->n ? L->n : 1) * sizeof *xd), *yd = malloc((L->n ? L->n : 1) * sizeof *yd);
    double *yp = malloc((L->n ? L->n : 1) * sizeof *yp);
    for (size_t k = 0; xd && yd && yp && k < L->n; k++) {
        double lo, hi;
        row_end(c, &c->rows[L->rows[k]], 1, &yd[k], &lo, &hi);
        xd[k] = 1.0;
        yp[k] = cmp_y_px(L, yd[k]);
    }
    if (xd && yd && yp)
        arrank_plot_end_labels(s, L->idx, xd, yd, yp, L->n, L->r + 1.1 * fp);
    free(xd);
    free(yd);
    free(yp);
}

/* Each row's block $cmp<k> (A at 0, B at 1, with the intervals) and its
   elements: intervals and markers, the line in the sample's look. */
static void cmp_plot(script *s, const arrank_comparison *c, const cmp_layout *L)
{
    FILE *f = s->f;
    for (size_t k = 0; k < L->n; k++) {
        const arrank_compare_row *r = &c->rows[L->rows[k]];
        double ya, la, ha, yb, lb, hb;
        row_end(c, r, 0, &ya, &la, &ha);
        row_end(c, r, 1, &yb, &lb, &hb);
        fprintf(f, "$cmp%zu << EOD\n0 %.10g %.10g %.10g\n1 %.10g %.10g %.10g\nEOD\n", k, ya, la,
                ha, yb, lb, hb);
    }
    int first = 1;
    for (size_t k = 0; k < L->n; k++) {
        const arrank_compare_row *r = &c->rows[L->rows[k]];
        arrank_plot_look lk = arrank_plot_look_of(c->a, L->idx[k]);
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$cmp%zu using 1:2 with lines ", k);
        arrank_plot_put_line_look(f, c->a, L->idx[k], r->changed ? 2.4 : 1.0);
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$cmp%zu using 1:2:3:4 with yerrorbars pt %d ps 1.2*PS lw %.3g lc rgb '%s'",
                k, r->changed ? lk.point_filled : lk.point_hollow, r->changed ? 1.6 : 1.0,
                lk.color);
    }
    if (first)
        fputs("plot NaN notitle", f);
    fputs("\n", f);
}

/* The script of one format. */
static void put_figure(script *s, const arrank_comparison *c, cmp_layout *L, unsigned format)
{
    fputs("reset\n", s->f);
    s->fpx = arrank_plot_base_font_px(s->base_w);
    double w = s->base_w, h = s->base_h;
    s->W = w;
    s->H = h;
    cmp_layout_make(s, L);
    if (L->below)
        h += (double)L->legend_rows * 1.45 * CMP_LABEL_FRAC * s->fpx + 1.0 * s->fpx;
    arrank_plot_terminal(s, format, w, h);
    cmp_layout_make(s, L);
    for (size_t k = 0; k < sizeof formats_known / sizeof *formats_known; k++)
        if (formats_known[k].bit == format)
            fprintf(s->f, "set output 'compare.%s'\n", formats_known[k].ext);
    cmp_frame(s, c, L);
    cmp_plot(s, c, L);
    fputs("unset output\n", s->f);
}

static arrank_status script_in_c(const arrank_comparison *c, const arrank_plot_options *o,
                                 FILE *f, arrank_error *err)
{
    unsigned formats = o->formats;
    cmp_layout L;
    memset(&L, 0, sizeof L);
    L.rows = malloc((c->n_rows ? c->n_rows : 1) * sizeof *L.rows);
    L.idx = malloc((c->n_rows ? c->n_rows : 1) * sizeof *L.idx);
    if (!L.rows || !L.idx) {
        free(L.rows);
        free(L.idx);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    double lo, hi;
    L.n = rows_drawn(c, L.rows, &lo, &hi);
    if (L.n == 0 || !(lo > 0) || !isfinite(hi)) {
        free(L.rows);
        free(L.idx);
        return arrank_errorf(err, ARRANK_EDATA, "nothing to draw: no sample compared");
    }
    for (size_t k = 0; k < L.n; k++)
        L.idx[k] = c->rows[L.rows[k]].result_a;
    /* a tenth of the span to spare at each end, at least 10 % of the value */
    double spare = fmax(log(1.1), 0.1 * log(hi / lo));
    L.lo = lo * exp(-spare);
    L.hi = hi * exp(spare);
    script s;
    arrank_plot_script_init(&s, c->a, f, o->width_px, o->height_px);
    char sub[600];
    snprintf(sub, sizeof sub, "%.280s → %.280s", campaign_words(c->a), campaign_words(c->b));
    s.title = sub;
    fputs("# arrank paired figure.  Text from the data appears only in quoted strings;\n"
          "# data blocks hold numbers only.\n", f);
    if (!formats)
        formats = ARRANK_PLOT_SVG;
    for (size_t k = 0; k < sizeof formats_known / sizeof *formats_known; k++)
        if (formats & formats_known[k].bit)
            put_figure(&s, c, &L, formats_known[k].bit);
    free(L.rows);
    free(L.idx);
    return ferror(f) ? arrank_errorf(err, ARRANK_EIO, "write failed") : ARRANK_OK;
}

arrank_status arrank_compare_plot_script(const arrank_comparison *c,
                                         const arrank_plot_options *opt, FILE *f,
                                         arrank_error *err)
{
    arrank_plot_options o = opt ? *opt : arrank_plot_defaults();
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = script_in_c(c, &o, f, err);
    arrank_numbers_c_leave(&env);
    return st;
}

/* gnuplot writes into a private folder made by mkdtemp inside dir; the
   figures are renamed into dir when it has finished without error. */
static arrank_status plot_in_c(const arrank_comparison *c, const char *dir,
                               const arrank_plot_options *o, arrank_error *err)
{
    unsigned formats = o->formats;
    char *gp = NULL, *text = NULL, priv[4096];
    size_t len = 0;
    if (snprintf(priv, sizeof priv, "%s/.arrank-compare.XXXXXX", dir) >= (int)sizeof priv)
        return arrank_errorf(err, ARRANK_EINVAL, "output folder path too long");
    arrank_status st = arrank_plot_find_gnuplot(o->gnuplot, &gp, err);
    FILE *mem = st == ARRANK_OK ? open_memstream(&text, &len) : NULL;
    if (st == ARRANK_OK && !mem)
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    if (mem) {
        st = script_in_c(c, o, mem, err);
        fputs("exit\n", mem);
        if (fclose(mem) != 0 && st == ARRANK_OK)
            st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    int have_priv = 0;
    if (st == ARRANK_OK && !(have_priv = mkdtemp(priv) != NULL))
        st = arrank_error_at(err, ARRANK_EIO, dir, 0, 0, "cannot make a private folder in "
                             "'%s': %s", dir, strerror(errno));
    if (st == ARRANK_OK)
        st = arrank_plot_run_gnuplot(gp, priv, text, len, err);
    /* the SVG's <title>: the figure's name and the two campaigns */
    char name[400], title[1000];
    cmp_name(c, name, sizeof name);
    snprintf(title, sizeof title, "%s – %.280s → %.280s", name, campaign_words(c->a),
             campaign_words(c->b));
    for (size_t k = 0; st == ARRANK_OK && k < sizeof formats_known / sizeof *formats_known;
         k++) {
        if (!((formats ? formats : ARRANK_PLOT_SVG) & formats_known[k].bit))
            continue;
        char file[32];
        snprintf(file, sizeof file, "compare.%s", formats_known[k].ext);
        st = arrank_plot_move_into(priv, dir, file, formats_known[k].bit, title,
                                   ARRANK_FIGURE_ARRHENIUS, (size_t)-1, NULL, err);
    }
    if (have_priv)
        arrank_plot_remove_private(priv);
    free(text);
    free(gp);
    return st;
}

arrank_status arrank_compare_plot(const arrank_comparison *c, const char *dir,
                                  const arrank_plot_options *opt, arrank_error *err)
{
    arrank_plot_options o = opt ? *opt : arrank_plot_defaults();
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = plot_in_c(c, dir, &o, err);
    arrank_numbers_c_leave(&env);
    return st;
}
