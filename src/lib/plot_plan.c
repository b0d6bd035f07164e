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
#include "util.h"

static const struct {
    unsigned bit;
    const char *ext;
} plan_formats[] = {{ARRANK_PLOT_SVG, "svg"}, {ARRANK_PLOT_PNG, "png"}, {ARRANK_PLOT_PDF, "pdf"}};

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

#define PLAN_LABEL_FRAC 0.78
#define PLAN_RUN_FRAC 0.72
#define PLAN_CAPTIONS 2

/* The layout of a plan's figure (px) and its axes. */
typedef struct {
    size_t *idx, n;      /* results drawn: the plan's entries */
    double x_lo, x_hi, y_lo, y_hi;
    int below;
    size_t legend_rows;
    double l, t, r, b;
} plan_layout;

/* Data blocks of entry j: points in the fit and out of it (with and without
   an sd), the fitted line with its band, the planned runs on the line.
   cnt: {in, in with sd, out, out with sd, runs}. */
static void put_blocks(FILE *f, const arrank_analysis *a, const arrank_plan *p, size_t j,
                       size_t cnt[5])
{
    static const char *const tags[4] = {"pun", "pue", "pxn", "pxe"};
    const arrank_result *r = &a->results[p->entries[j].result];
    double lo, hi;
    span_of(a, p, r, &lo, &hi);
    for (int b = 0; b < 4; b++)
        cnt[b] = arrank_plot_block_points(f, r, j, tags[b], b < 2, b % 2);
    arrank_plot_block_line(f, r, "fit", j, X_SCALE / hi, X_SCALE / lo, 60);
    /* the planned runs on the line (no block without runs: gnuplot fails on
       an empty block) */
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
        fprintf(f, "%.9g %.9g\n", X_SCALE / p->runs[k].temp_K, y);
    }
    if (n)
        fputs("EOD\n", f);
    cnt[4] = n;
}

/* The axes' ranges: every point, band and run of the entries, the maximum
   and the operating temperature; room above for the runs' repeats. */
static void plan_ranges(const arrank_analysis *a, const arrank_plan *p, plan_layout *L)
{
    double t_lo = INFINITY, t_hi = -INFINITY, y_lo = INFINITY, y_hi = -INFINITY;
    for (size_t j = 0; j < p->n_entries; j++) {
        const arrank_result *r = &a->results[p->entries[j].result];
        double lo, hi;
        span_of(a, p, r, &lo, &hi);
        t_lo = fmin(t_lo, lo);
        t_hi = fmax(t_hi, hi);
        const double tq = isfinite(r->t_quantile) ? r->t_quantile : 0.0, ts[2] = {lo, hi};
        for (int e = 0; e < 2; e++) {
            double y, se;
            arrank_plot_line_at(&r->fit, ts[e], &y, &se);
            if (isfinite(y) && isfinite(se)) {
                y_lo = fmin(y_lo, y - tq * se);
                y_hi = fmax(y_hi, y + tq * se);
            }
        }
        for (size_t k = 0; k < r->sample->n_points; k++)
            if (arrank_plot_usable_point(&r->sample->points[k])) {
                y_lo = fmin(y_lo, log(r->sample->points[k].rate));
                y_hi = fmax(y_hi, log(r->sample->points[k].rate));
            }
    }
    if (!(y_hi >= y_lo) || !(t_hi >= t_lo)) {
        t_lo = 500;
        t_hi = 600;
        y_lo = 0;
        y_hi = 1;
    }
    double x_lo = X_SCALE / fmax(t_hi, p->max_temp_K), x_hi = X_SCALE / fmin(t_lo, p->temp_K);
    double pad = arrank_plot_min_pad(x_lo, x_hi, 0.04 * (x_hi - x_lo), x_hi);
    /* 1000/T stays above 0: the degC axis is 1000/x */
    L->x_lo = x_lo - fmin(pad, 0.5 * x_lo);
    L->x_hi = x_hi + pad;
    double py = arrank_plot_min_pad(y_lo, y_hi, 0.06 * (y_hi - y_lo), fmax(1.0, fabs(y_hi)));
    L->y_lo = y_lo - py;
    L->y_hi = y_hi + 4.0 * py;
}

static void plan_layout_make(script *s, plan_layout *L)
{
    double f = s->fpx, pad = 0.8 * f, widest = 0;
    for (size_t k = 0; k < L->n; k++)
        widest = fmax(widest, arrank_plot_text_px(arrank_plot_sample_name(
                                                      &s->a->results[L->idx[k]]),
                                                  PLAN_LABEL_FRAC * f));
    double head = 0.8 * f + 1.38 * f + (s->title && *s->title ? 0.35 * f + 0.96 * f : 0) +
                  0.4 * f;
    L->t = head + 4.0 * f;
    L->b = s->H - arrank_plot_caption_px(s, PLAN_CAPTIONS) - 4.6 * f;
    size_t ych = arrank_plot_tic_chars(L->y_lo, L->y_hi, fmax(3, (L->b - L->t) / (2.4 * f)));
    L->l = pad + 1.6 * f + (double)ych * ARRANK_CHAR_EM * f + 0.9 * f;
    L->r = s->W - pad - widest - 1.6 * f;
    double b_asked = s->base_h - arrank_plot_caption_px(s, PLAN_CAPTIONS) - 4.6 * f;
    L->below = (double)L->n * 1.3 * PLAN_LABEL_FRAC * f > b_asked - L->t || widest > 0.3 * s->W;
    if (L->below) {
        size_t cols;
        L->legend_rows = arrank_plot_legend_rows(s, L->idx, L->n, s->W - 2 * pad, &cols);
        L->r = s->W - pad - 1.0 * f;
        L->b -= (double)L->legend_rows * 1.45 * PLAN_LABEL_FRAC * f + 0.6 * f;
    }
}

static double px_x(const plan_layout *L, double x)
{
    return L->l + (x - L->x_lo) / (L->x_hi - L->x_lo) * (L->r - L->l);
}

static double px_y(const plan_layout *L, double y)
{
    return L->t + (L->y_hi - y) / (L->y_hi - L->y_lo) * (L->b - L->t);
}

/* A text's box in px: left, top, right, bottom. */
typedef struct {
    double l, t, r, b;
} box;

static int hits(const box *bx, size_t n, box c)
{
    for (size_t k = 0; k < n; k++)
        if (c.l < bx[k].r && bx[k].l < c.r && c.t < bx[k].b && bx[k].t < c.b)
            return 1;
    return 0;
}

/* A vertical line at 1000/T of temp_K with its name, rotated, at the bottom
   of the plot area on the side given (+1 right, -1 left); its box into bx. */
static box plan_line(script *s, const plan_layout *L, double temp_K, const char *words,
                     const char *color, const char *dash, double lw, int side)
{
    double x = X_SCALE / temp_K, xp = px_x(L, x), fs = PLAN_RUN_FRAC * s->fpx;
    fprintf(s->f, "set arrow from first %.9g, graph 0 to first %.9g, graph 1 nohead lw %.3g "
                  "dt %s lc rgb '%s' back\n",
            x, x, lw, dash, color);
    char buf[128];
    snprintf(buf, sizeof buf, "%s %.4g °C", words, temp_K - ZERO_C_K);
    double len = arrank_plot_text_px(buf, fs), cx = xp + side * 0.75 * s->fpx;
    double cy = L->b - 0.5 * s->fpx - 0.5 * len;
    arrank_plot_text(s, cx, cy, "center", PLAN_RUN_FRAC, color, 1, buf);
    box bx = {cx - 0.7 * fs, cy - 0.5 * len, cx + 0.7 * fs, cy + 0.5 * len};
    return bx;
}

/* The repeats of each planned run above its marker ("×4"), each moved up
   (or below the marker) until it overlaps no text placed before. */
static void plan_repeats(script *s, const arrank_analysis *a, const arrank_plan *p,
                         const plan_layout *L, box *bx, size_t nb)
{
    double fs = PLAN_RUN_FRAC * s->fpx, row = 1.25 * fs, m = 1.3 * s->fpx;
    /* the runs' own markers first: no repeat is written over a marker */
    for (size_t k = 0; k < p->n_runs; k++) {
        double y, se;
        arrank_plot_line_at(&a->results[p->runs[k].sample].fit, p->runs[k].temp_K, &y, &se);
        double xp = px_x(L, X_SCALE / p->runs[k].temp_K), yp = px_y(L, y);
        if (isfinite(yp))
            bx[nb++] = (box){xp - m, yp - m, xp + m, yp + m};
    }
    for (size_t j = 0; j < p->n_entries; j++) {
        const arrank_result *r = &a->results[p->entries[j].result];
        arrank_plot_look lk = arrank_plot_look_of(a, p->entries[j].result);
        for (size_t k = 0; k < p->n_runs; k++) {
            if (p->runs[k].sample != p->entries[j].result)
                continue;
            double y, se;
            arrank_plot_line_at(&r->fit, p->runs[k].temp_K, &y, &se);
            if (!isfinite(y))
                continue;
            char buf[32];
            snprintf(buf, sizeof buf, "×%zu", p->runs[k].repeats);
            double w = arrank_plot_text_px(buf, fs) + 0.3 * fs;
            double xp = px_x(L, X_SCALE / p->runs[k].temp_K), yp = px_y(L, y);
            box c = {0, 0, 0, 0};
            int found = 0;
            for (int dir = -1; dir <= 1 && !found; dir += 2)
                for (double cy = yp + dir * (m + 0.6 * row);
                     cy > L->t + 0.6 * row && cy < L->b - 0.6 * row && !found; cy += dir * row) {
                    c = (box){xp - 0.5 * w, cy - 0.5 * row, xp + 0.5 * w, cy + 0.5 * row};
                    found = !hits(bx, nb, c);
                }
            if (!found)
                continue; /* no room: the caption and the run sheet still say it */
            bx[nb++] = c;
            arrank_plot_text(s, xp, 0.5 * (c.t + c.b), "center", PLAN_RUN_FRAC, lk.color, 0,
                             buf);
        }
    }
}

static const char *goal_words(const arrank_plan *p)
{
    return p->goal == ARRANK_GOAL_PRECISION   ? "to narrow the rate intervals"
           : p->goal == ARRANK_GOAL_CURVATURE ? "to test for a bend"
                                              : "to tell the leader apart";
}

static void plan_name(const arrank_plan *p, char *buf, size_t n)
{
    snprintf(buf, n, "Planned runs on the Arrhenius plot: %zu runs %s", p->budget,
             goal_words(p));
}

/* The SVG's title: the figure's name and the campaign. */
static void plan_title(const arrank_analysis *a, const arrank_plan *p, char *buf, size_t n)
{
    char name[300];
    plan_name(p, name, sizeof name);
    const char *t = a->campaign && a->campaign->title ? a->campaign->title
                    : a->campaign && a->campaign->name ? a->campaign->name
                                                       : "";
    snprintf(buf, n, "%s%s%.200s", name, *t ? " – " : "", t);
}

/* Heading, axes, axis names, the two temperatures, captions, names. */
static void plan_frame(script *s, const arrank_plan *p, const plan_layout *L)
{
    FILE *f = s->f;
    char name[300], buf[300];
    arrank_plot_style_axes(f, 1);
    plan_name(p, name, sizeof name);
    arrank_plot_head(s, name);
    arrank_plot_area(s, L->l, L->t, L->r, L->b);
    arrank_plot_arrhenius_axes(s, L->x_lo, L->x_hi, L->y_lo, L->y_hi);
    snprintf(buf, sizeof buf, "large diamonds round a sample's marker: its planned runs, ×N "
                              "their repeats; shaded: %.4g %% bands; open marks: points left out",
             100.0 * s->a->options.confidence);
    const char *lines[PLAN_CAPTIONS] = {
        buf, "runs near the maximum temperature: check each against the rig's rules (hot "
             "spots, flammable or toxic feeds)"};
    arrank_plot_captions(s, lines, PLAN_CAPTIONS);
}

/* Names at the lines' cold ends, or a legend below. */
static void plan_names(script *s, const arrank_plan *p, const plan_layout *L)
{
    double fp = s->fpx;
    if (L->below) {
        arrank_plot_legend(s, L->idx, L->n, 0.8 * fp, L->b + 4.4 * fp, s->W - 0.8 * fp,
                           s->H - arrank_plot_caption_px(s, PLAN_CAPTIONS), 1);
        return;
    }
    double *xd = malloc((L->n ? L->n : 1) * 3 * sizeof *xd);
    if (!xd)
        return;
    double *yd = xd + L->n, *yp = yd + L->n;
    for (size_t k = 0; k < L->n; k++) {
        const arrank_result *r = &s->a->results[L->idx[k]];
        double lo, hi, se;
        span_of(s->a, p, r, &lo, &hi);
        xd[k] = X_SCALE / lo;
        arrank_plot_line_at(&r->fit, lo, &yd[k], &se);
        yp[k] = isfinite(yd[k]) ? px_y(L, yd[k]) : L->b;
    }
    arrank_plot_end_labels(s, L->idx, xd, yd, yp, L->n, L->r + 1.1 * fp);
    free(xd);
}

static void plan_plot(script *s, const arrank_plan *p, size_t (*cnt)[5])
{
    FILE *f = s->f;
    static const char *const tags[4] = {"pun", "pue", "pxn", "pxe"};
    int first = 1;
    for (size_t j = 0; j < p->n_entries; j++) {
        size_t i = p->entries[j].result;
        arrank_plot_look lk = arrank_plot_look_of(s->a, i);
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$fit%zu using 1:3:4 with filledcurves fc rgb '%s'", j, lk.color);
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$fit%zu using 1:2 with lines ", j);
        arrank_plot_put_line_look(f, s->a, i, 2.0);
        for (int b = 0; b < 4; b++) {
            if (!cnt[j][b])
                continue;
            arrank_plot_next_elem(f, &first);
            fprintf(f, "$%s%zu using 1:2 with points pt %d ps 1.2*PS lc rgb '%s'", tags[b], j,
                    b < 2 ? lk.point_filled : lk.point_hollow, lk.color);
        }
        if (!cnt[j][4])
            continue;
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$run%zu using 1:2 with points pt 12 ps 3.0*PS lw 2 lc rgb '%s'", j,
                lk.color);
        /* the sample's own marker inside its diamonds: two samples of one
           colour (the house style tells them apart by marker) stay apart */
        arrank_plot_next_elem(f, &first);
        fprintf(f, "$run%zu using 1:2 with points pt %d ps 0.75*PS lc rgb '%s'", j,
                lk.point_filled, lk.color);
    }
    if (first)
        fputs("plot NaN notitle", f);
    fputs("\n", f);
}

static arrank_status script_in_c(const arrank_analysis *a, const arrank_plan *p,
                                 unsigned format, const char *name, int base_w, int base_h,
                                 FILE *f, arrank_error *err)
{
    size_t n = p->n_entries;
    size_t(*cnt)[5] = calloc(n ? n : 1, sizeof *cnt);
    size_t *idx = malloc((n ? n : 1) * sizeof *idx);
    box *bx = malloc((2 * p->n_runs + 2) * sizeof *bx);
    if (!cnt || !idx || !bx) {
        free(cnt);
        free(idx);
        free(bx);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    plan_layout L = {.idx = idx, .n = n};
    for (size_t j = 0; j < n; j++)
        idx[j] = p->entries[j].result;
    script s;
    arrank_plot_script_init(&s, a, f, base_w, base_h);
    s.fpx = arrank_plot_base_font_px(s.base_w);
    s.W = s.base_w;
    s.H = s.base_h;
    plan_ranges(a, p, &L);
    plan_layout_make(&s, &L);
    double h = s.base_h;
    if (L.below)
        h += (double)L.legend_rows * 1.45 * PLAN_LABEL_FRAC * s.fpx + 1.0 * s.fpx;
    fputs("reset\n# a plan's figure.  Text from the data appears only in quoted strings;\n"
          "# data blocks hold numbers only.\n", f);
    arrank_plot_terminal(&s, format, s.base_w, h);
    plan_layout_make(&s, &L);
    fputs("set output ", f);
    arrank_plot_put_q(f, name);
    fputc('\n', f);
    for (size_t j = 0; j < n; j++)
        put_blocks(f, a, p, j, cnt[j]);
    plan_frame(&s, p, &L);
    plan_names(&s, p, &L);
    size_t nb = 0;
    bx[nb++] = plan_line(&s, &L, p->max_temp_K, "maximum", "#b2182b", "(8,4)", 1.6, 1);
    if (isfinite(p->temp_K) && p->temp_K > 0)
        bx[nb++] = plan_line(&s, &L, p->temp_K, "operating", ARRANK_INK_SOFT, "(2,4)",
                             1.0, -1);
    plan_repeats(&s, a, p, &L, bx, nb);
    plan_plot(&s, p, cnt);
    free(cnt);
    free(idx);
    free(bx);
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
    arrank_status st = script_in_c(a, p, format, name, 960, 720, f, err);
    arrank_numbers_c_leave(&env);
    return st;
}

/* Step 2 of arrank_plot_plan: the figures out of the private folder priv
   into out_dir, listed in written. */
static arrank_status move_out(const char *priv, const char *out_dir, char names[][16],
                              const unsigned *fmt, size_t n, const char *title,
                              arrank_plot_files *written, arrank_error *err)
{
    for (size_t k = 0; k < n; k++) {
        arrank_status st = arrank_plot_move_into(priv, out_dir, names[k], fmt[k], title,
                                                 ARRANK_FIGURE_ARRHENIUS, (size_t)-1, written, err);
        if (st != ARRANK_OK)
            return st;
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
            st = script_in_c(a, p, fmt[n], names[n], opt.width_px, opt.height_px, mem, err);
            n++;
        }
    fputs("exit\n", mem);
    if (fclose(mem) != 0 && st == ARRANK_OK)
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    if (st == ARRANK_OK)
        st = arrank_plot_find_gnuplot(opt.gnuplot, &program, err);
    char *priv = st == ARRANK_OK ? arrank_join_path(out_dir, ".arrank-plan.XXXXXX") : NULL;
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
        if (st == ARRANK_OK) {
            /* the SVG's <title>: the figure's name and the campaign */
            char title[600];
            plan_title(a, p, title, sizeof title);
            st = move_out(priv, out_dir, names, fmt, n, title, written, err);
        }
        arrank_plot_remove_private(priv); /* and what a failed run left */
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
