/*
 * plot_compare.c - the paired figure of `compare` (arrank/compare.h): one
 * line per compared sample from its rate at T in campaign A to its rate in
 * campaign B, on a log rate axis, both intervals drawn; samples whose rate
 * changed (after Holm) solid, the others dashed.  Kept apart from the
 * campaign figures (plot.c and the files beside it) on purpose.
 */
#include "arrank/plot_compare.h"

#include <dirent.h>
#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "arrank/analysis_stats.h"
#include "arrank/cautions.h"
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

/* The rows' data: $changed and $same (segments A -> B, one blank line apart,
   with the intervals), $labels (the id at B).  Returns the rows drawn; the
   rates' range into lo/hi. */
static size_t put_blocks(FILE *f, const arrank_comparison *c, double *lo, double *hi)
{
    size_t n = 0;
    *lo = INFINITY;
    *hi = -INFINITY;
    for (int changed = 1; changed >= 0; changed--) {
        fprintf(f, "$%s << EOD\n", changed ? "changed" : "same");
        for (size_t i = 0; i < c->n_rows; i++) {
            const arrank_compare_row *r = &c->rows[i];
            if (!r->compared || r->changed != changed)
                continue;
            double ya, la, ha, yb, lb, hb;
            row_end(c, r, 0, &ya, &la, &ha);
            row_end(c, r, 1, &yb, &lb, &hb);
            fprintf(f, "0 %.10g %.10g %.10g\n1 %.10g %.10g %.10g\n\n", ya, la, ha, yb, lb, hb);
            const double v[] = {la, ha, lb, hb};
            for (size_t k = 0; k < 4; k++)
                if (isfinite(v[k]) && v[k] > 0) {
                    *lo = fmin(*lo, v[k]);
                    *hi = fmax(*hi, v[k]);
                }
            n++;
        }
        fputs("EOD\n", f);
    }
    return n;
}

static void put_plot(FILE *f, const arrank_comparison *c, double lo, double hi, int font_pt)
{
    fputs("set encoding utf8\nset termoption noenhanced\nset border lw 1.2\nset tics out\n"
          "set grid back lc rgb '#e3e3e3' lw 1 dt 1\nset key noautotitle\n"
          "set logscale y\nset xrange [-0.25:1.6]\nunset label\n",
          f);
    fprintf(f, "set yrange [%.10g:%.10g]\n", lo / 1.25, hi * 1.25);
    /* tics at 1, 2 and 5 times each power of ten in the range, more within
       less than a decade (common practice) */
    static const double wide[] = {1, 2, 5}, narrow[] = {1, 1.2, 1.5, 2, 2.5, 3, 4, 5, 6, 8};
    const int few = hi / lo > 8.0;
    const double *m = few ? wide : narrow;
    const size_t n_m = few ? 3 : sizeof narrow / sizeof *narrow;
    fputs("set ytics (", f);
    int first = 1;
    for (double d = pow(10.0, floor(log10(lo / 1.25))); d <= hi * 1.25 * 10; d *= 10.0)
        for (size_t k = 0; k < n_m; k++) {
            const double v = d * m[k];
            if (v < lo / 1.25 || v > hi * 1.25)
                continue;
            fprintf(f, "%s\"%g\" %.10g", first ? "" : ", ", v, v);
            first = 0;
        }
    fputs(")\n", f);
    /* each id beside its rate in B, as a quoted string (never a command) */
    int tag = 2;
    for (size_t i = 0; i < c->n_rows; i++) {
        const arrank_compare_row *r = &c->rows[i];
        if (!r->compared)
            continue;
        double yb, lb, hb;
        row_end(c, r, 1, &yb, &lb, &hb);
        fprintf(f, "set label %d ", tag++);
        arrank_plot_put_q(f, r->id);
        fprintf(f, " at first 1.04, first %.10g left\n", yb);
    }
    fputs("set xtics (", f);
    arrank_plot_put_q_tic(f, c->a->campaign->name);
    fputs(" 0, ", f);
    arrank_plot_put_q_tic(f, c->b->campaign->name);
    fputs(" 1)\n", f);
    fputs("set ylabel ", f);
    if (c->reference)
        arrank_plot_put_qf(f, "rate at %.1f K / the reference's in its campaign (log scale)",
                           c->temp_K);
    else
        arrank_plot_put_qf(f, "rate at %.1f K [%s] (log scale)", c->temp_K,
                           c->a->campaign->rate_unit);
    fputs("\nset title ", f);
    arrank_plot_put_qf(f, "%s -> %s", c->a->campaign->name, c->b->campaign->name);
    fputs(" . \"\\n\" . ", f); /* two lines: gnuplot's own string concatenation */
    arrank_plot_put_qf(f, "%s per sample; solid: changed (Holm, %g %%)",
                       c->reference ? "rate at T over the reference's" : "rate at T",
                       100.0 * (1.0 - c->confidence));
    fputs("\nset label 1 ", f);
    arrank_plot_put_q(f, ARRANK_CAUTION_APPARENT);
    fprintf(f, " at graph 1, graph 1.0 right offset 0,-0.6 font ',%d' tc rgb '#555555'\n",
            font_pt * 3 / 5);
    fputs("plot $changed using 1:2:3:4 with yerrorbars lc rgb '#D55E00' pt 7 ps 0.8, "
          "$changed using 1:2 with lines lc rgb '#D55E00' lw 2 dt 1, "
          "$same using 1:2:3:4 with yerrorbars lc rgb '#0072B2' pt 6 ps 0.8, "
          "$same using 1:2 with lines lc rgb '#0072B2' lw 1.5 dt 2\n",
          f);
}

static arrank_status script_in_c(const arrank_comparison *c, unsigned formats, FILE *f,
                                 arrank_error *err)
{
    double lo, hi;
    if (put_blocks(f, c, &lo, &hi) == 0 || !(lo > 0) || !isfinite(hi))
        return arrank_errorf(err, ARRANK_EDATA, "nothing to draw: no sample compared");
    if (!formats)
        formats = ARRANK_PLOT_SVG;
    for (size_t k = 0; k < sizeof formats_known / sizeof *formats_known; k++) {
        if (!(formats & formats_known[k].bit))
            continue;
        switch (formats_known[k].bit) {
        case ARRANK_PLOT_PNG:
            fputs("set terminal pngcairo size 2400,1700 font 'Sans,36' noenhanced linewidth 3.0 "
                  "background rgb '#ffffff'\n", f);
            break;
        case ARRANK_PLOT_PDF:
            fputs("set terminal pdfcairo size 8in,5.6in font 'Sans,12' noenhanced "
                  "linewidth 1.5 background rgb '#ffffff'\n", f);
            break;
        default:
            fputs("set terminal svg size 960,680 fixed font 'sans-serif,18' noenhanced "
                  "linewidth 1.5 background rgb '#ffffff'\n", f);
        }
        fprintf(f, "set output 'compare.%s'\n", formats_known[k].ext);
        put_plot(f, c, lo, hi,
                 formats_known[k].bit == ARRANK_PLOT_PNG   ? 36
                 : formats_known[k].bit == ARRANK_PLOT_PDF ? 12
                                                           : 18);
        fputs("unset output\n", f);
    }
    return ferror(f) ? arrank_errorf(err, ARRANK_EIO, "write failed") : ARRANK_OK;
}

arrank_status arrank_compare_plot_script(const arrank_comparison *c, unsigned formats, FILE *f,
                                         arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = script_in_c(c, formats, f, err);
    arrank_numbers_c_leave(&env);
    return st;
}

/* Empty and remove the private folder. */
static void remove_private(const char *priv)
{
    DIR *d = opendir(priv);
    struct dirent *e;
    char p[4096 + 260];
    while (d && (e = readdir(d)) != NULL)
        if (strcmp(e->d_name, ".") && strcmp(e->d_name, "..")) {
            snprintf(p, sizeof p, "%s/%.255s", priv, e->d_name);
            unlink(p);
        }
    if (d)
        closedir(d);
    rmdir(priv);
}

/* gnuplot writes into a private folder made by mkdtemp inside dir; the
   figures are renamed into dir when it has finished without error. */
static arrank_status plot_in_c(const arrank_comparison *c, const char *dir, unsigned formats,
                               const char *program, arrank_error *err)
{
    char *gp = NULL, *text = NULL, priv[4096], from[4200], to[4200];
    size_t len = 0;
    if (snprintf(priv, sizeof priv, "%s/.arrank-compare.XXXXXX", dir) >= (int)sizeof priv)
        return arrank_errorf(err, ARRANK_EINVAL, "output folder path too long");
    arrank_status st = arrank_plot_find_gnuplot(program, &gp, err);
    FILE *mem = st == ARRANK_OK ? open_memstream(&text, &len) : NULL;
    if (st == ARRANK_OK && !mem)
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    if (mem) {
        st = script_in_c(c, formats, mem, err);
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
    for (size_t k = 0; st == ARRANK_OK && k < sizeof formats_known / sizeof *formats_known;
         k++) {
        if (!((formats ? formats : ARRANK_PLOT_SVG) & formats_known[k].bit))
            continue;
        snprintf(from, sizeof from, "%s/compare.%s", priv, formats_known[k].ext);
        snprintf(to, sizeof to, "%s/compare.%s", dir, formats_known[k].ext);
        if (rename(from, to) != 0)
            st = arrank_error_at(err, ARRANK_EIO, to, 0, 0, "cannot write '%s': %s", to,
                                 strerror(errno));
    }
    if (have_priv)
        remove_private(priv);
    free(text);
    free(gp);
    return st;
}

arrank_status arrank_compare_plot(const arrank_comparison *c, const char *dir, unsigned formats,
                                  const char *program, arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = plot_in_c(c, dir, formats, program, err);
    arrank_numbers_c_leave(&env);
    return st;
}
