/*
 * plot_plan.c - the figure of a plan (arrank/plot_plan.h): each involved
 * sample's points and fitted line with its band, the planned runs on the
 * line at their temperatures (marked with their repeats), the operating
 * temperature and the stated maximum temperature.  Uses the plot family's
 * helpers (plot_internal.h).
 */
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "arrank/plot_plan.h"
#include "number.h"
#include "plot_internal.h"

static const struct {
    unsigned bit;
    const char *ext;
} plan_formats[] = {{ARRANK_PLOT_SVG, "svg"}, {ARRANK_PLOT_PNG, "png"}, {ARRANK_PLOT_PDF, "pdf"}};

static void put_term(FILE *f, unsigned format)
{
    switch (format) {
    case ARRANK_PLOT_PNG:
        fputs("set terminal pngcairo size 2700,1800 font 'Sans,40' noenhanced linewidth 3.0 "
              "background rgb '#ffffff'\nPS = 3.0\n", f);
        break;
    case ARRANK_PLOT_PDF:
        fputs("set terminal pdfcairo size 9.00in,6.00in font 'Sans,12' noenhanced linewidth 1.5 "
              "background rgb '#ffffff'\nPS = 0.8\n", f);
        break;
    default:
        fputs("set terminal svg size 1080,720 fixed font 'sans-serif,22' noenhanced "
              "linewidth 1.5 background rgb '#ffffff'\nPS = 0.7\n", f);
        break;
    }
}

/* The temperature span to draw for r: its fitted range and its runs. */
static void span_of(const arrank_analysis *a, const arrank_plan *p, const arrank_result *r, double *lo, double *hi)
{
    *lo = r->fit.T_min_K;
    *hi = r->fit.T_max_K;
    for (size_t k = 0; k < p->n_runs; k++)
        if (r == &a->results[p->runs[k].sample]) {
            *lo = fmin(*lo, p->runs[k].temp_K);
            *hi = fmax(*hi, p->runs[k].temp_K);
        }
}

static void put_blocks(FILE *f, const arrank_analysis *a, const arrank_plan *p, double *t_lo,
                       double *t_hi, size_t (*cnt)[3])
{
    *t_lo = INFINITY;
    *t_hi = -INFINITY;
    for (size_t j = 0; j < p->n_entries; j++) {
        const arrank_result *r = &a->results[p->entries[j].result];
        double lo, hi;
        span_of(a, p, r, &lo, &hi);
        cnt[j][0] = arrank_plot_block_points(f, r, j, "pts", 1, 0);
        cnt[j][1] = arrank_plot_block_points(f, r, j, "pte", 1, 1);
        arrank_plot_block_line(f, r, "fit", j, X_SCALE / hi, X_SCALE / lo, 60);
        /* the planned runs on the line (no block without runs: gnuplot
           fails on labels of an empty or all-NaN block) */
        size_t n = 0;
        for (size_t k = 0; k < p->n_runs; k++) {
            if (p->runs[k].sample != p->entries[j].result)
                continue;
            double y, se;
            arrank_plot_line_at(&r->fit, p->runs[k].temp_K, &y, &se);
            if (!isfinite(y))
                continue;
            if (n++ == 0)
                fprintf(f, "$run%zu << EOD\n", j);
            fprintf(f, "%.9g %.9g %zu\n", X_SCALE / p->runs[k].temp_K, y, p->runs[k].repeats);
        }
        if (n)
            fputs("EOD\n", f);
        cnt[j][2] = n;
        *t_lo = fmin(*t_lo, lo);
        *t_hi = fmax(*t_hi, hi);
    }
}

static void put_marks(FILE *f, const arrank_plan *p, double t_lo, double t_hi, int pt)
{
    double x_lo = X_SCALE / fmax(t_hi, p->max_temp_K), x_hi = X_SCALE / t_lo;
    double pad = arrank_plot_min_pad(x_lo, x_hi, 0.04 * (x_hi - x_lo), X_SCALE / t_hi);
    /* 1000/T stays above 0: the degC axis is 1000/x, and gnuplot fails on a
       linked axis through x = 0 */
    double pad_lo = fmin(pad, 0.5 * x_lo);
    fprintf(f, "set xrange [%.9g:%.9g]\n", x_lo - pad_lo, x_hi + pad);
    fputs("set xtics nomirror\nset offsets 0, 0, graph 0.12, graph 0.05\n", f);
    if (x_lo - pad_lo > 0 && isfinite(x_hi + pad)) {
        /* the top axis in degC, as the Arrhenius figure has it */
        fputs("set x2label 'T  [°C]'\n"
              "set link x2 via 1000./x - 273.15 inverse 1000./(x + 273.15)\n", f);
        arrank_plot_put_celsius_tics(f, X_SCALE / (x_hi + pad) - ZERO_C_K,
                                     X_SCALE / (x_lo - pad_lo) - ZERO_C_K, 8.0);
    }
    /* the limit: nothing is planned to the left of this line */
    fprintf(f, "set arrow 1 from %.9g, graph 0 to %.9g, graph 1 nohead lw 2 dt 2 "
               "lc rgb '#b2182b' front\n",
            X_SCALE / p->max_temp_K, X_SCALE / p->max_temp_K);
    fprintf(f, "set label 1 ");
    arrank_plot_put_qf(f, "maximum temperature %.1f degC", p->max_temp_K - ZERO_C_K);
    fprintf(f, " at %.9g, graph 0.04 rotate by 90 offset -0.8,0 textcolor rgb '#b2182b' "
               "font ',%d' front\n",
            X_SCALE / p->max_temp_K, pt);
    fprintf(f, "set arrow 2 from %.9g, graph 0 to %.9g, graph 1 nohead lw 1.2 dt 3 "
               "lc rgb '#555555' back\n",
            X_SCALE / p->temp_K, X_SCALE / p->temp_K);
    fprintf(f, "set label 2 ");
    arrank_plot_put_qf(f, "T_op %.1f degC", p->temp_K - ZERO_C_K);
    fprintf(f, " at %.9g, graph 0.96 right offset -0.6,0 textcolor rgb '#555555' font ',%d'\n",
            X_SCALE / p->temp_K, pt);
}

static void put_plot(FILE *f, const arrank_analysis *a, const arrank_plan *p,
                     size_t (*cnt)[3], int pt)
{
    int first = 1;
    for (size_t j = 0; j < p->n_entries; j++) {
        const arrank_result *r = &a->results[p->entries[j].result];
        const char *c = arrank_plot_sample_color(a, j);
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$fit%zu using 1:3:4 with filledcurves lc rgb '%s' fs transparent solid 0.15 "
                   "noborder",
                j, c);
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$fit%zu using 1:2 with lines lw 2.2 lc rgb '%s' title ", j, c);
        arrank_plot_put_q(f, arrank_plot_sample_name(r));
        for (int b = 0; b < 2; b++) {
            if (!cnt[j][b])
                continue;
            arrank_plot_next_elem(f, &first);
            fprintf(f, "$%s%zu using 1:2 with points pt %d ps 1.6*PS lc rgb '%s'",
                    b ? "pte" : "pts", j, arrank_plot_sample_point_type(a, j, 0), c);
        }
        if (!cnt[j][2])
            continue;
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$run%zu using 1:2 with points pt 12 ps 3.2*PS lw 2.5 lc rgb '%s'", j, c);
        arrank_plot_next_elem(f, &first);
        /* each sample's labels a line higher than the one before: runs of
           several samples at one temperature stay readable */
        fprintf(f, "$run%zu using 1:2:(sprintf('x%%d', int($3))) with labels offset 0,%.1f "
                   "font ',%d' textcolor rgb '%s'",
                j, 1.6 + 1.1 * (double)(j % 4), pt, c);
    }
    arrank_plot_next_elem(f, &first);
    fputs("keyentry with points pt 12 ps 3.2*PS lw 2.5 lc rgb '#333333' "
          "title 'planned runs (xN repeats)'\n", f);
}

static arrank_status script_in_c(const arrank_analysis *a, const arrank_plan *p,
                                 unsigned format, const char *name, FILE *f, arrank_error *err)
{
    put_term(f, format);
    fputs("set output ", f);
    arrank_plot_put_q(f, name);
    fputs("\nset encoding utf8\nset termoption noenhanced\nset border lw 1.2\nset tics out\n"
          "set grid back lc rgb '#e3e3e3' lw 1 dt 1\nset key noautotitle\n"
          "set key inside right top reverse Left box opaque\n", f);
    const char *title = a->campaign && a->campaign->title ? a->campaign->title : "";
    fputs("set title ", f);
    arrank_plot_put_qf(f, "Planned runs (goal %s, %zu runs)",
                       p->goal == ARRANK_GOAL_PRECISION   ? "precision"
                       : p->goal == ARRANK_GOAL_CURVATURE ? "curvature"
                                                          : "separate",
                       p->budget);
    fputs(" . \"\\n\" . ", f);
    arrank_plot_put_q(f, title);
    fputs("\nset xlabel '1000 / T  [K⁻¹]'\nset ylabel ", f);
    arrank_plot_put_qf(f, "ln(rate / (%s))",
                       a->campaign && a->campaign->rate_unit ? a->campaign->rate_unit : "");
    fputc('\n', f);
    /* secondary text at about 0.8 of the terminal's base font (put_term),
       the caution at 0.55 of it as on the other figures */
    int pt = format == ARRANK_PLOT_PNG ? 32 : format == ARRANK_PLOT_PDF ? 10 : 18;
    fprintf(f, "set label 99 \"apparent kinetics of these samples in this window; not for "
               "reactor design, scale-up or safety limits\" at screen 0.995, screen 0.982 right "
               "font ',%d' textcolor rgb '#666666' front\n",
            format == ARRANK_PLOT_PNG ? 22 : format == ARRANK_PLOT_PDF ? 7 : 12);
    double t_lo, t_hi;
    size_t(*cnt)[3] = calloc(p->n_entries ? p->n_entries : 1, sizeof *cnt);
    if (!cnt)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    put_blocks(f, a, p, &t_lo, &t_hi, cnt);
    put_marks(f, p, t_lo, t_hi, pt);
    put_plot(f, a, p, cnt, pt);
    free(cnt);
    fputs("unset output\n", f);
    if (fflush(f) != 0 || ferror(f))
        return arrank_errorf(err, ARRANK_EIO, "cannot write the gnuplot script: %s",
                             strerror(errno));
    return ARRANK_OK;
}

arrank_status arrank_plot_plan_script(const arrank_analysis *a, const arrank_plan *p,
                                      unsigned format, const char *name, FILE *f,
                                      arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = script_in_c(a, p, format, name, f, err);
    arrank_numbers_c_leave(&env);
    return st;
}

static char *join(const char *dir, const char *name)
{
    size_t n = strlen(dir) + strlen(name) + 2;
    char *p = malloc(n);
    if (p)
        snprintf(p, n, "%s/%s", dir, name);
    return p;
}

/* Step 2 of arrank_plot_plan: the figures out of the private folder priv
   into out_dir, listed in written. */
static arrank_status move_out(const char *priv, const char *out_dir, char names[][16],
                              const unsigned *fmt, size_t n, arrank_plot_files *written,
                              arrank_error *err)
{
    for (size_t k = 0; k < n; k++) {
        char *from = join(priv, names[k]), *to = join(out_dir, names[k]);
        if (!from || !to || rename(from, to) != 0) {
            arrank_status e = from && to ? arrank_error_at(err, ARRANK_EIO, to, 0, 0,
                                                           "cannot write '%s': %s", to,
                                                           strerror(errno))
                                         : arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            if (from)
                unlink(from);
            free(from);
            free(to);
            return e;
        }
        free(from);
        if (!written) {
            free(to);
            continue;
        }
        arrank_plot_file *pf = &written->files[written->n++];
        pf->kind = ARRANK_FIGURE_ARRHENIUS;
        pf->sample = (size_t)-1;
        pf->format = fmt[k];
        pf->name = strdup(names[k]);
        pf->path = to;
        if (!pf->name)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    return ARRANK_OK;
}

static arrank_status plot_plan_in_c(const arrank_analysis *a, const arrank_plan *p,
                                    const char *out_dir, const arrank_plot_options *options,
                                    arrank_plot_files *written, arrank_error *err)
{
    arrank_plot_options opt = options ? *options : arrank_plot_defaults();
    unsigned formats = opt.formats ? opt.formats : ARRANK_PLOT_SVG;
    char names[3][16];
    unsigned fmt[3];
    size_t n = 0;
    /* Step 1: the script for every format. */
    char *text = NULL, *program = NULL;
    size_t len = 0;
    FILE *mem = open_memstream(&text, &len);
    if (!mem)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    arrank_status st = ARRANK_OK;
    for (size_t k = 0; k < 3 && st == ARRANK_OK; k++)
        if (formats & plan_formats[k].bit) {
            snprintf(names[n], sizeof names[n], "plan.%s", plan_formats[k].ext);
            fmt[n] = plan_formats[k].bit;
            st = script_in_c(a, p, fmt[n], names[n], mem, err);
            n++;
        }
    fputs("exit\n", mem);
    if (fclose(mem) != 0 && st == ARRANK_OK)
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    if (st == ARRANK_OK)
        st = arrank_plot_find_gnuplot(opt.gnuplot, &program, err);
    char *priv = st == ARRANK_OK ? join(out_dir, ".arrank-plan.XXXXXX") : NULL;
    if (st == ARRANK_OK && (!priv || !mkdtemp(priv)))
        st = priv ? arrank_error_at(err, ARRANK_EIO, out_dir, 0, 0,
                                    "cannot make a private folder in '%s': %s", out_dir,
                                    strerror(errno))
                  : arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    else if (st == ARRANK_OK) {
        st = arrank_plot_run_gnuplot(program, priv, text, len, err);
        if (st == ARRANK_OK && written &&
            !(written->files = calloc(n, sizeof *written->files)))
            st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        if (st == ARRANK_OK)
            st = move_out(priv, out_dir, names, fmt, n, written, err);
        for (size_t k = 0; k < n; k++) { /* what a failed run left */
            char *q = join(priv, names[k]);
            if (q)
                unlink(q);
            free(q);
        }
        rmdir(priv);
    }
    if (st != ARRANK_OK && written)
        arrank_plot_files_clear(written);
    free(priv);
    free(program);
    free(text);
    return st;
}

arrank_status arrank_plot_plan(const arrank_analysis *a, const arrank_plan *p,
                               const char *out_dir, const arrank_plot_options *options,
                               arrank_plot_files *written, arrank_error *err)
{
    if (written) {
        written->files = NULL;
        written->n = 0;
    }
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = plot_plan_in_c(a, p, out_dir, options, written, err);
    arrank_numbers_c_leave(&env);
    return st;
}
