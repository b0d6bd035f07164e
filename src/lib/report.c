/*
 * report.c - the self-contained review report (report.html).
 *
 * The page is written in one pass to a temporary file beside the target and
 * renamed into place.  Figures come from arrank_plot_write (SVG) in a private
 * temporary folder; each is read back, stripped of its XML prologue and
 * namespace declarations (HTML puts inline <svg> in the SVG namespace itself),
 * and its element ids are prefixed per figure so that several gnuplot figures
 * can share one page without their ids colliding.  User strings are written
 * only through arrank_text_html (text.c), which escapes them and drops
 * control characters.
 *
 * Each sample's section carries the diagnostics in plain words (the text of
 * arrank_diagnosis_write_text, one list item per line), the points left out
 * of the fit with the reason for each, and the Weisz-Prater, Mears and heat
 * criteria (Mears' interphase, Anderson's intraparticle, Prater's rise) when
 * they could be computed.
 *
 * Reproducible output: the generation date is the current time unless the
 * environment variable SOURCE_DATE_EPOCH holds a whole number of seconds
 * since 1970-01-01 UTC (reproducible-builds.org, "SOURCE_DATE_EPOCH"
 * specification); then that date is printed, and the same inputs, options
 * and program give a byte-identical page.  A malformed value is an error
 * (the specification asks tools to fail rather than fall back silently).
 */
/* mkdtemp and fsync are POSIX 2008 / XSI. */
#define _XOPEN_SOURCE 700

#include "arrank/text.h"
#include "arrank/report.h"
#include "reference_out.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include <nettle/sha2.h>

#include "arrank/cautions.h"
#include "arrank/diagnose.h"
#include "arrank/diagnosis_out.h"
#include "arrank/fit.h"
#include "arrank/analysis_stats.h"
#include "arrank/version.h"
#include "plot_style.h"
#include "report_internal.h"
#include "util.h"
#include "number.h"



arrank_report_options arrank_report_defaults(void)
{
    arrank_report_options o;
    o.command_line = NULL;
    o.plot = arrank_plot_defaults();
    return o;
}

/* ---- checksums ---------------------------------------------------------- */

arrank_status arrank_report_sha256_file(const char *path, char hex[65], arrank_error *err)
{
    FILE *f = fopen(path, "rb");
    if (!f)
        return arrank_error_at(err, ARRANK_EIO, path, 0, 0, "cannot read '%s': %s", path,
                               strerror(errno));
    struct sha256_ctx ctx;
    sha256_init(&ctx);
    unsigned char buf[65536];
    size_t n;
    while ((n = fread(buf, 1, sizeof buf, f)) > 0)
        sha256_update(&ctx, n, buf);
    int bad = ferror(f);
    fclose(f);
    if (bad)
        return arrank_error_at(err, ARRANK_EIO, path, 0, 0, "cannot read '%s'", path);
    unsigned char digest[SHA256_DIGEST_SIZE];
    sha256_digest(&ctx, SHA256_DIGEST_SIZE, digest);
    for (size_t i = 0; i < SHA256_DIGEST_SIZE; i++)
        snprintf(hex + 2 * i, 3, "%02x", digest[i]);
    return ARRANK_OK;
}

/* ---- text --------------------------------------------------------------- */

/* A number with `digits` decimals (fixed) or, with digits < 0, -digits
   significant digits. */
void arrank_report_html_num(FILE *f, double v, int digits)
{
    if (!isfinite(v))
        fputs("&ndash;", f);
    else if (digits >= 0)
        fprintf(f, "%.*f", digits, v);
    else
        fprintf(f, "%.*g", -digits, v);
}

/* ---- figures ------------------------------------------------------------ */

static char *read_all(const char *path, size_t *len)
{
    FILE *f = fopen(path, "rb");
    if (!f)
        return NULL;
    char *buf = NULL;
    size_t cap = 0, n = 0;
    while (1) {
        if (n + 65536 + 1 > cap) {
            cap = (n + 65536 + 1) * 2;
            char *nb = realloc(buf, cap);
            if (!nb) {
                free(buf);
                fclose(f);
                return NULL;
            }
            buf = nb;
        }
        size_t got = fread(buf + n, 1, 65536, f);
        n += got;
        if (got == 0)
            break;
    }
    int bad = ferror(f);
    fclose(f);
    if (bad) {
        free(buf);
        return NULL;
    }
    buf[n] = '\0';
    *len = n;
    return buf;
}

static int starts(const char *s, const char *prefix)
{
    return strncmp(s, prefix, strlen(prefix)) == 0;
}

/* Copy a gnuplot SVG into the page.  Inside markup (between < and >) ids and
   references to them get the prefix "f<no>-"; the namespace declarations of
   the root element are dropped.  Text content is copied as gnuplot escaped
   it. */
static void inline_svg(FILE *out, const char *svg, int no)
{
    const char *p = strstr(svg, "<svg");
    if (!p)
        return;
    int in_tag = 0, root = 1;
    char pre[16];
    snprintf(pre, sizeof pre, "f%d-", no);
    while (*p) {
        if (!in_tag) {
            if (*p == '<')
                in_tag = 1;
            fputc(*p++, out);
            continue;
        }
        if (*p == '>') {
            in_tag = 0;
            if (root)
                fputs(" class=\"figure\" role=\"img\"", out);
            root = 0;
            fputc(*p++, out);
            continue;
        }
        if (root && (starts(p, "xmlns=\"") || starts(p, "xmlns:xlink=\""))) {
            const char *q = strchr(strchr(p, '"') + 1, '"');
            if (!q)
                return;
            p = q + 1;
            continue;
        }
        static const char *const refs[] = {"id='", "id=\"", "href='#", "href=\"#", "url(#"};
        int done = 0;
        for (size_t k = 0; k < sizeof refs / sizeof *refs; k++) {
            size_t m = strlen(refs[k]);
            /* "id=" must start an attribute, not end another name. */
            if (strncmp(p, refs[k], m) == 0 && (k > 1 || p[-1] == ' ' || p[-1] == '\t')) {
                fwrite(p, 1, m, out);
                fputs(pre, out);
                p += m;
                done = 1;
                break;
            }
        }
        if (!done)
            fputc(*p++, out);
    }
}

static const char *figure_caption(arrank_figure_kind kind)
{
    switch (kind) {
    case ARRANK_FIGURE_ARRHENIUS:
        return "Arrhenius plot: ln r against 1000 K/T with each fitted line and its confidence "
               "band, the sample named at the end of its line; open markers are points left "
               "out of the fit; the top axis gives the temperature in °C.";
    case ARRANK_FIGURE_RATE_AT_T:
        return "Rate at the operating temperature, best at the top (log axis): the box is the "
               "confidence interval, an open marker a flagged sample, the flags in words at "
               "the right.";
    case ARRANK_FIGURE_EA_LNA:
        return "Apparent activation energy against ln r at the harmonic-mean temperature, "
               "where the two estimates are nearly uncorrelated, so each joint region is a "
               "true ellipse; the dashed line is the ln A–Ea line of the compensation analysis.";
    case ARRANK_FIGURE_DIAGNOSTICS:
        return "The sample's Arrhenius plot, its residuals and the local apparent Ea over "
               "three neighbouring temperatures, on one 1000 K/T axis; marker shape: the "
               "point's regime; grey: the kinetic window.  A local Ea that falls with "
               "temperature suggests transport limitation.";
    case ARRANK_FIGURE_TIME_ON_STREAM:
        return "Rate against time on stream with the drift line and its confidence band "
               "where a drift was fitted: the diagnosis's, each point brought to one "
               "temperature by that fit, or a hold's at its one temperature; the line under "
               "the title says which, or why there is none.";
    }
    return "";
}


/* Draw the figures into a temporary folder in dir and read them back. */
static arrank_status draw_figures(const arrank_analysis *a, const char *dir,
                                  const arrank_report_options *o, figure_set *fs,
                                  arrank_error *err)
{
    memset(fs, 0, sizeof *fs);
    size_t n = strlen(dir) + 32;
    char *tmpdir = malloc(n);
    if (!tmpdir)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    snprintf(tmpdir, n, "%s/.arrank-report-XXXXXX", dir);
    if (!mkdtemp(tmpdir)) {
        arrank_status st = arrank_error_at(err, ARRANK_EIO, dir, 0, 0,
                                           "cannot make a temporary folder in '%s': %s", dir,
                                           strerror(errno));
        free(tmpdir);
        return st;
    }
    arrank_plot_options po = o->plot;
    po.formats = ARRANK_PLOT_SVG;
    arrank_error perr;
    arrank_error_clear(&perr);
    fs->status = arrank_plot_write(a, tmpdir, &po, &fs->files, &perr);
    if (fs->status != ARRANK_OK) {
        snprintf(fs->message, sizeof fs->message, "%s", perr.message);
        arrank_plot_remove_private(tmpdir);
        free(tmpdir);
        if (fs->status == ARRANK_ENOMEM)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        return ARRANK_OK; /* the report notes the missing figures */
    }
    fs->svg = calloc(fs->files.n ? fs->files.n : 1, sizeof *fs->svg);
    if (!fs->svg) {
        arrank_plot_remove_private(tmpdir);
        free(tmpdir);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    for (size_t k = 0; k < fs->files.n; k++) {
        size_t len;
        fs->svg[k] = read_all(fs->files.files[k].path, &len);
    }
    arrank_plot_remove_private(tmpdir);
    free(tmpdir);
    return ARRANK_OK;
}

static void free_figures(figure_set *fs)
{
    for (size_t k = 0; fs->svg && k < fs->files.n; k++)
        free(fs->svg[k]);
    free(fs->svg);
    arrank_plot_files_clear(&fs->files);
}

static int fig_counter;

void arrank_report_put_figure(FILE *f, const figure_set *fs, arrank_figure_kind kind,
                              size_t sample)
{
    for (size_t k = 0; fs->svg && k < fs->files.n; k++) {
        const arrank_plot_file *pf = &fs->files.files[k];
        if (pf->kind != kind || (pf->sample != (size_t)-1 && pf->sample != sample) ||
            !fs->svg[k])
            continue;
        fputs("<figure>\n", f);
        inline_svg(f, fs->svg[k], ++fig_counter);
        fputs("\n<figcaption>", f);
        arrank_text_html(f, figure_caption(kind));
        fputs(" <span class=\"file\">(", f);
        arrank_text_html(f, pf->name);
        fputs(" in <code>arrank plot</code>)</span></figcaption>\n</figure>\n", f);
    }
}

/* ---- page --------------------------------------------------------------- */

static const char css[] =
    "body{font-family:system-ui,-apple-system,'Segoe UI',Roboto,'DejaVu Sans',sans-serif;"
    "max-width:72rem;margin:0 auto;padding:1.5rem;color:#1a1a1a;line-height:1.45}"
    "h1{font-size:1.7rem;margin-bottom:.2rem}h2{margin-top:2.2rem;border-bottom:2px solid #ccc}"
    "h3{margin-top:1.6rem}"
    "table{border-collapse:collapse;margin:.6rem 0;font-size:.88rem}"
    "th,td{border:1px solid #ccc;padding:.2rem .35rem;text-align:left;vertical-align:top}"
    "th{background:#f0f0f0}td.n{text-align:right;font-variant-numeric:tabular-nums}"
    "figure{margin:1rem 0}svg.figure{max-width:100%;height:auto;display:block}"
    ".wide{overflow-x:auto;max-width:100%}td.n{white-space:nowrap}"
    ".ci{display:block;color:#555;font-size:.85em}"
    "@media (max-width:60rem){body{padding:.75rem}table{font-size:.82rem}}"
    "figcaption{font-size:.9rem;color:#333}.file{color:#666}"
    ".caution{border-left:6px solid #D55E00;background:#fff4ec;padding:.6rem 1rem}"
    ".note{border-left:6px solid #0072B2;background:#eef6fb;padding:.6rem 1rem}"
    ".diagnosis{border-left:6px solid #888;padding:.1rem 1rem;margin:.8rem 0}"
    ".diagnosis ul{margin:.2rem 0;padding-left:1.2rem}.diagnosis li{margin:.15rem 0}"
    ".diagnosis li.problem b{color:#a33f00}"
    "caption{text-align:left;font-weight:bold;padding:.2rem 0}"
    "table.left-out td:nth-child(4){white-space:nowrap}"
    ".flags li{margin:.1rem 0}code,.hash{font-family:'DejaVu Sans Mono',monospace;"
    "font-size:.85rem;word-break:break-all}"
    ".swatch{display:inline-block;width:.85em;height:.85em;"
    "margin-right:.35em;vertical-align:-0.1em}"
    "section.sample{display:flow-root}"
    "@media (min-width:60rem){section.sample figure{float:right;width:48%;"
    "margin:0 0 .6rem 1.2rem}}"
    "@media print{body{max-width:none;padding:0;font-size:8.5pt;line-height:1.3}"
    "svg.figure{max-height:7.2cm;width:auto;max-width:100%;margin:0 auto}"
    "section.sample figure{float:right;width:46%;margin:0 0 .4rem 1rem}"
    "section.sample svg.figure{max-height:none;width:100%}"
    "section.sample{break-inside:avoid-page}"
    "h2{margin-top:1rem}h3{margin:.6rem 0 .2rem}p,ul{margin:.3rem 0}"
    "figcaption{font-size:7.5pt}table{font-size:7.5pt}"
    "h2{break-before:auto;break-after:avoid}h3{break-after:avoid}"
    "figure,table,.caution{break-inside:avoid}"
    "section.sample{break-inside:avoid-page}"
    ".swatch{print-color-adjust:exact;-webkit-print-color-adjust:exact}"
    "a{color:inherit;text-decoration:none}}";

/* The rate unit as the reader reads it (plot_style.c: umol/(g*s) is
   µmol g⁻¹ s⁻¹); one buffer per thread, like every cache here. */
const char *arrank_report_unit(const arrank_analysis *a)
{
    static _Thread_local char buf[160];
    arrank_plot_unit_text(a->campaign && a->campaign->rate_unit ? a->campaign->rate_unit
                                                                : "report unit",
                          buf, sizeof buf);
    return buf;
}

void arrank_report_put_swatch(FILE *f, const arrank_analysis *a, size_t i)
{
    /* the sample's marker in its colour, as the figures draw it */
    static const struct {
        const char *shape, *svg;
    } marks[] = {
        {"circle", "<circle cx='6' cy='6' r='4.6'/>"},
        {"square", "<rect x='1.6' y='1.6' width='8.8' height='8.8'/>"},
        {"triangle", "<polygon points='6,0.8 11.4,10.6 0.6,10.6'/>"},
        {"triangle-down", "<polygon points='0.6,1.4 11.4,1.4 6,11.2'/>"},
        {"diamond", "<polygon points='6,0.4 11.6,6 6,11.6 0.4,6'/>"},
        {"pentagon", "<polygon points='6,0.6 11.5,4.6 9.4,11.2 2.6,11.2 0.5,4.6'/>"},
        {"cross", "<path d='M1.5,1.5 L10.5,10.5 M10.5,1.5 L1.5,10.5' stroke-width='2.2' "
                  "fill='none'/>"},
        {"star", "<path d='M6,0.5 V11.5 M1,3.2 L11,8.8 M11,3.2 L1,8.8' stroke-width='1.8' "
                 "fill='none'/>"},
    };
    arrank_plot_look k = arrank_plot_look_of(a, i);
    const char *mark = marks[0].svg;
    for (size_t m = 0; m < sizeof marks / sizeof *marks; m++)
        if (strcmp(marks[m].shape, k.shape) == 0)
            mark = marks[m].svg;
    fprintf(f, "<svg class=\"swatch\" viewBox=\"0 0 12 12\" width=\"12\" height=\"12\" "
               "fill=\"%s\" stroke=\"%s\" aria-hidden=\"true\">%s</svg>",
            k.color, k.color, mark);
}

static void put_flag_names(FILE *f, unsigned flags)
{
    int any = 0;
    for (unsigned b = 0; b < ARRANK_FLAG_COUNT; b++)
        if (flags & (1u << b)) {
            const char *name = arrank_plot_flag_short(1u << b);
            if (!name)
                continue;
            if (any)
                fputs(", ", f);
            arrank_text_html(f, name);
            any = 1;
        }
    if (!any)
        fputs("&ndash;", f);
}

/* P(best) and group cells from the ranking statistics (analysis_stats.h). */
static void put_stats_cells(FILE *f, const arrank_result *r)
{
    const struct arrank_sample_stats *st = r->stats;
    fputs("<td class=\"n\">", f);
    if (st && isfinite(st->p_best) && st->p_best < 0.005)
        fputs("&lt; 0.01", f);
    else
        arrank_report_html_num(f, st ? st->p_best : NAN, 2);
    fputs("</td><td class=\"n\">", f);
    if (st && st->group > 0)
        fprintf(f, "%d", st->group);
    else
        fputs("&ndash;", f);
    fputs("</td>", f);
}

/* An estimate with its interval v -/+ t se under it (one cell, two short
   lines, so that a table of them fits a narrow window). */
static void put_estimate(FILE *f, double v, double se, double t, int digits)
{
    arrank_report_html_num(f, v, digits);
    fputs("<span class=\"ci\">", f);
    arrank_report_html_num(f, v - t * se, digits);
    fputs("&ndash;", f);
    arrank_report_html_num(f, v + t * se, digits);
    fputs("</span>", f);
}

static void put_ranking(FILE *f, const arrank_analysis *a)
{
    double T_op = a->options.operating_temp_K;
    fputs("<div class=\"wide\"><table>\n<thead><tr><th>rank</th><th>sample</th>", f);
    if (isfinite(T_op)) {
        fprintf(f, "<th>rate at %.4g &deg;C [", T_op - ZERO_C_K);
        arrank_text_html(f, arrank_report_unit(a));
        fprintf(f, "] (%.4g %% interval)</th>", 100 * a->options.confidence);
    }
    int stats = a->rank_stats != NULL;
    if (stats)
        fputs("<th>P(best)</th><th>group</th>", f);
    fprintf(f, "<th>Ea [kJ mol<sup>&minus;1</sup>] (%.4g %% interval)</th>"
               "<th>ln A (%.4g %% interval)</th>"
               "<th>points</th>",
            100 * a->options.confidence, 100 * a->options.confidence);
    fputs("<th>T range [&deg;C]</th>"
          "<th>flags</th></tr></thead>\n<tbody>\n",
          f);
    /* Ranked first, in order, then the rest in campaign order. */
    for (size_t pass = 0; pass < 2; pass++) {
        size_t n = pass == 0 ? a->n_ranked : a->n_results;
        for (size_t k = 0; k < n; k++) {
            size_t i = pass == 0 ? a->order[k] : k;
            const arrank_result *r = &a->results[i];
            if ((pass == 0) != (r->rank > 0))
                continue;
            fputs("<tr><td class=\"n\">", f);
            if (r->rank > 0)
                fprintf(f, "%d", r->rank);
            else
                fputs("&ndash;", f);
            fputs("</td><td>", f);
            arrank_report_put_swatch(f, a, i);
            arrank_text_html(f, r->sample->id);
            fputs("</td>", f);
            if (r->error) {
                fprintf(f, "<td colspan=\"%d\">%s: ", (isfinite(T_op) ? 6 : 5) + (stats ? 2 : 0),
                        r->sample->skipped ? "file not used" : "not fitted");
                arrank_text_html(f, r->error);
                fputs("</td></tr>\n", f);
                continue;
            }
            if (isfinite(T_op)) {
                if (r->has_prediction) {
                    fputs("<td class=\"n\">", f);
                    arrank_report_html_num(f, r->at_T.rate, -3);
                    fputs("<span class=\"ci\">", f);
                    arrank_report_html_num(f, r->at_T.rate_lo, -3);
                    fputs("&ndash;", f);
                    arrank_report_html_num(f, r->at_T.rate_hi, -3);
                    fputs("</span></td>", f);
                } else
                    fputs("<td>&ndash;</td>", f);
            }
            if (stats)
                put_stats_cells(f, r);
            /* the estimate and its interval at the run's level (the
               pipeline's t, analysis.c), never a bare standard error */
            const double t = r->t_quantile;
            fputs("<td class=\"n\">", f);
            put_estimate(f, r->fit.ea_J_mol / 1000, r->fit.ea_se_J_mol / 1000, t, 1);
            fputs("</td><td class=\"n\">", f);
            put_estimate(f, r->fit.ln_A, r->fit.ln_A_se, t, 2);
            fprintf(f, "</td><td class=\"n\">%zu of %zu</td><td class=\"n\">", r->n_used,
                    r->sample->n_points);
            arrank_report_html_num(f, r->fit.T_min_K - ZERO_C_K, 0);
            fputs("&ndash;", f);
            arrank_report_html_num(f, r->fit.T_max_K - ZERO_C_K, 0);
            fputs("</td><td>", f);
            put_flag_names(f, r->flags);
            fputs("</td></tr>\n", f);
        }
    }
    fputs("</tbody></table></div>\n", f);
    fprintf(f, "<p>Ea and ln A are given with their %.4g %% intervals (Student t on the "
               "line's degrees of freedom); ln A is the natural logarithm of A in the report "
               "unit.",
            100 * a->options.confidence);
    if (stats) {
        const struct arrank_rank_stats *rs = a->rank_stats;
        fprintf(f, " P(best) is the share of %zu random draws from each sample's fitted "
                   "uncertainty in which the sample comes first; samples in one group are not "
                   "significantly different from the group's first sample (Holm's method).",
                rs->draws);
        if (rs->compensation.verdict != ARRANK_COMP_TOO_FEW && rs->compensation.sentence[0]) {
            const char *sentence = rs->compensation.sentence;
            if (strncmp(sentence, "compensation: ", 14) == 0)
                sentence += 14;
            fputs("</p>\n<p><b>Compensation.</b> ", f);
            arrank_text_html(f, sentence);
            fputs(".", f);
        }
    }
    fputs("</p>\n", f);
}

static void put_methods(FILE *f, const arrank_analysis *a)
{
    fprintf(f,
            "<h2>Methods in brief</h2>\n<ul>\n"
            "<li><b>Model.</b> Each sample is fitted to the Arrhenius form r = A exp(&minus;Ea/RT) "
            "as a straight line ln r = b<sub>0</sub> + b<sub>1</sub>(1/T &minus; 1/T<sub>ref</sub>)"
            ", centred at the weighted mean of 1/T so that b<sub>0</sub> and b<sub>1</sub> are "
            "uncorrelated; Ea = &minus;R b<sub>1</sub> with R = 8.314462618 J/(mol K).</li>\n"
            "<li><b>Weighting.</b> Without rate_sd the errors are taken as constant relative "
            "errors (ordinary least squares on ln r); with rate_sd each point is weighted by "
            "(r/sd)&sup2;.</li>\n"
            "<li><b>Intervals.</b> Two-sided %.4g %% intervals from Student's t with n &minus; 2 "
            "degrees of freedom (n &minus; 3 for the rate at a temperature with the modified "
            "form) and the covariance scaled by the residual variance.  The rate "
            "at a temperature has its interval from the full covariance (delta method) and is "
            "asymmetric in r.  The ellipses in the Ea&ndash;ln A figure are joint regions with "
            "the 2&middot;F(2, n &minus; 2) quantile.</li>\n"
            "<li><b>Kinetic window.</b> %s Points left out of a fit are shown open in the "
            "figures and listed with their reasons for each sample; all other points are "
            "used.  Operating temperatures outside a sample's measured range are flagged as "
            "extrapolated.</li>\n"
            "</ul>\n",
            100 * a->options.confidence,
            !a->options.diagnose
                ? "The diagnostics were turned off: every usable point is fitted."
            : a->options.use_all
                ? "The diagnostics ran but every point was kept in the fit (use-all)."
                : "When the Arrhenius plot bends, the local apparent Ea over three neighbouring "
                  "temperatures classes each point as kinetic, pore-diffusion-like or "
                  "film-diffusion-like; points hotter than the kinetic window and points above "
                  "the differential conversion limit are left out and the fit is repeated on "
                  "what remains.");
}

/* The caution box: the cautions every output carries (cautions.c: apparent
   kinetics, the samples extrapolated far, the ranking beyond the isokinetic
   temperature), then the page's own on scale-up, heat and gases. */
static void put_cautions(FILE *f, const arrank_analysis *a)
{
    char **lines = NULL;
    size_t n = 0;
    if (arrank_cautions_list(a, &lines, &n, NULL) != ARRANK_OK)
        n = 0;
    fputs("<div class=\"caution\">\n<p><b>Cautions.</b></p>\n<ul>\n", f);
    for (size_t k = 0; k < n; k++) {
        fputs("<li><b>", f);
        if (lines[k][0] >= 'a' && lines[k][0] <= 'z') /* a sentence here */
            fputc(lines[k][0] - 'a' + 'A', f);
        arrank_text_html(f, lines[k] + (lines[k][0] >= 'a' && lines[k][0] <= 'z'));
        fputs(".</b>", f);
        if (k == 0)
            fputs(" The fitted parameters are apparent values, valid only for the conditions "
                  "and the temperature range tested.  Do not extrapolate them to reactor design "
                  "or to safety limits.",
                  f);
        fputs("</li>\n", f);
    }
    arrank_cautions_free(lines, n);
    fputs(
          "<li>Scale-up needs its own transport and hazard studies (calorimetry, runaway and "
          "parametric-sensitivity criteria); a screening ranking is not one.</li>\n"
          "<li>Exothermic reactions cause hot spots and can run away; a thermocouple outside "
          "the bed may read low, and the fitted Ea is then wrong.</li>\n"
          "<li>Hydrogen, carbon monoxide, syngas, fuel&ndash;oxygen mixtures, ammonia and "
          "hydrogen sulfide are flammable or toxic: use gas detection, ventilation and leak "
          "checks.  Reduced catalysts can be pyrophoric.</li>\n"
          "<li>This tool supports and does not replace the judgement of qualified people, "
          "your institution's safety review, and local codes and regulations.</li>\n"
          "</ul>\n</div>\n",
          f);
}

static void put_inputs(FILE *f, const arrank_analysis *a)
{
    const arrank_campaign *c = a->campaign;
    fputs("<div class=\"wide\"><table><thead><tr><th>input file</th><th>SHA-256</th></tr></thead><tbody>\n", f);
    if (c && c->path) {
        size_t n = strlen(c->path) + 16;
        char *ini = malloc(n);
        if (ini) {
            snprintf(ini, n, "%s/campaign.ini", c->path);
            char hex[65];
            if (access(ini, F_OK) == 0 && arrank_report_sha256_file(ini, hex, NULL) == ARRANK_OK)
                fprintf(f, "<tr><td><code>campaign.ini</code></td><td class=\"hash\">%s</td>"
                           "</tr>\n",
                        hex);
            free(ini);
        }
    }
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_sample *s = a->results[i].sample;
        char hex[65];
        fputs("<tr><td><code>", f);
        arrank_text_html(f, s->file ? s->file : s->path);
        fputs("</code></td><td class=\"hash\">", f);
        if (s->path && arrank_report_sha256_file(s->path, hex, NULL) == ARRANK_OK)
            fputs(hex, f);
        else
            fputs("could not be read", f);
        fputs("</td></tr>\n", f);
    }
    fputs("</tbody></table></div>\n", f);
}

/* Campaigns of more samples than this get a section for the first this many
   by rank and for every flagged one; the rest share a compact table (our
   choice: about 50 printed pages). */
#define REPORT_DETAIL_MAX 50

static int in_detail(const arrank_analysis *a, const arrank_result *r)
{
    return a->n_results <= REPORT_DETAIL_MAX ||
           (r->rank > 0 && r->rank <= REPORT_DETAIL_MAX) || r->flags != 0;
}

/* The samples without a section of their own, one row each. */
static void put_brief(FILE *f, const arrank_analysis *a, size_t n_brief)
{
    double T_op = a->options.operating_temp_K;
    fprintf(f, "<h2>The other %zu samples, in brief</h2>\n<p>Unflagged and ranked below "
               "%d: one row each, in ranking order.</p>\n",
            n_brief, REPORT_DETAIL_MAX);
    fputs("<div class=\"wide\"><table class=\"brief\"><thead><tr><th>rank</th><th>sample</th>",
          f);
    if (isfinite(T_op)) {
        fprintf(f, "<th>rate at %.4g &deg;C [", T_op - ZERO_C_K);
        arrank_text_html(f, arrank_report_unit(a));
        fprintf(f, "] (%.4g %% interval)</th>", 100 * a->options.confidence);
    }
    fprintf(f, "<th>Ea [kJ mol<sup>&minus;1</sup>] (%.4g %% interval)</th><th>points</th>"
               "<th>note</th></tr></thead><tbody>\n",
            100 * a->options.confidence);
    for (size_t pass = 0; pass < 2; pass++)
        for (size_t k = 0; k < (pass == 0 ? a->n_ranked : a->n_results); k++) {
            size_t i = pass == 0 ? a->order[k] : k;
            const arrank_result *r = &a->results[i];
            if (in_detail(a, r) || (pass == 0) != (r->rank > 0))
                continue;
            fputs("<tr><td class=\"n\">", f);
            if (r->rank > 0)
                fprintf(f, "%d", r->rank);
            else
                fputs("&ndash;", f);
            fputs("</td><td>", f);
            arrank_report_put_swatch(f, a, i);
            arrank_text_html(f, r->sample->id);
            fputs("</td>", f);
            if (isfinite(T_op)) {
                fputs("<td class=\"n\">", f);
                if (r->has_prediction) {
                    arrank_report_html_num(f, r->at_T.rate, -3);
                    fputs("<span class=\"ci\">", f);
                    arrank_report_html_num(f, r->at_T.rate_lo, -3);
                    fputs("&ndash;", f);
                    arrank_report_html_num(f, r->at_T.rate_hi, -3);
                    fputs("</span>", f);
                } else
                    fputs("&ndash;", f);
                fputs("</td>", f);
            }
            fputs("<td class=\"n\">", f);
            if (!r->error)
                put_estimate(f, r->fit.ea_J_mol / 1000, r->fit.ea_se_J_mol / 1000,
                             r->t_quantile, 1);
            else
                fputs("&ndash;", f);
            fprintf(f, "</td><td class=\"n\">%zu of %zu</td><td>", r->n_used,
                    r->sample->n_points);
            arrank_text_html(f, r->error ? r->error : "");
            fputs("</td></tr>\n", f);
        }
    fputs("</tbody></table></div>\n", f);
}

static void put_page(FILE *f, const arrank_analysis *a, const arrank_report_options *o,
                     const figure_set *fs, time_t made)
{
    const arrank_campaign *c = a->campaign;
    const char *title = c && c->title ? c->title : c && c->name ? c->name : "campaign";
    size_t n_fit = 0;
    for (size_t i = 0; i < a->n_results; i++)
        n_fit += a->results[i].error == NULL;
    fig_counter = 0;

    fputs("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
          "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n<title>",
          f);
    arrank_text_html(f, title);
    fputs(" &ndash; arrank review report</title>\n<style>", f);
    fputs(css, f);
    fputs("</style>\n</head>\n<body>\n<header>\n<h1>", f);
    arrank_text_html(f, title);
    fputs("</h1>\n<p>Review report of the campaign <code>", f);
    arrank_text_html(f, c && c->name ? c->name : "");
    fprintf(f, "</code>: %zu sample%s, %zu fitted, %zu ranked; rates in ", a->n_results,
            a->n_results == 1 ? "" : "s", n_fit, a->n_ranked);
    arrank_text_html(f, arrank_report_unit(a));
    if (isfinite(a->options.operating_temp_K))
        fprintf(f, "; operating temperature %.2f &deg;C (%.2f K)",
                a->options.operating_temp_K - ZERO_C_K, a->options.operating_temp_K);
    fprintf(f, "; %.4g %% intervals.</p>\n</header>\n", 100 * a->options.confidence);

    put_cautions(f, a);
    if (fs->status != ARRANK_OK) {
        fputs("<p class=\"note\">The figures could not be drawn: ", f);
        arrank_text_html(f, fs->message);
        fputs(".</p>\n", f);
    }
    arrank_reference_html_write(a, f); /* the reference leads (reference_out.c) */
    fputs("<h2>Ranking</h2>\n", f);
    put_ranking(f, a);
    arrank_report_put_figure(f, fs, ARRANK_FIGURE_RATE_AT_T, (size_t)-1);
    fputs("<h2>All samples</h2>\n", f);
    arrank_report_put_figure(f, fs, ARRANK_FIGURE_ARRHENIUS, (size_t)-1);
    arrank_report_put_figure(f, fs, ARRANK_FIGURE_EA_LNA, (size_t)-1);
    fputs("<h2>Samples one by one</h2>\n", f);
    size_t n_brief = 0;
    for (size_t i = 0; i < a->n_results; i++) {
        if (in_detail(a, &a->results[i]))
            arrank_report_put_sample(f, a, i, fs);
        else
            n_brief++;
    }
    if (n_brief)
        put_brief(f, a, n_brief);
    put_methods(f, a);

    fputs("<h2>Record</h2>\n<p>Made by arrank " ARRANK_VERSION, f);
    struct tm tm;
    char date[64];
    if (gmtime_r(&made, &tm) && strftime(date, sizeof date, "%Y-%m-%d %H:%M UTC", &tm))
        fprintf(f, " on %s", date);
    fputs(".</p>\n", f);
    if (o->command_line) {
        fputs("<p>Command line: <code>", f);
        arrank_text_html(f, o->command_line);
        fputs("</code></p>\n", f);
    }
    put_inputs(f, a);
    fputs("</body>\n</html>\n", f);
}

/* Latest year strftime's %Y gives as four digits: the date stays one word. */
#define LAST_EPOCH_S 253402300799LL /* 9999-12-31 23:59:59 UTC */

/* The date the report says it was made: now, or SOURCE_DATE_EPOCH when set
   and not empty (reproducible-builds.org, SOURCE_DATE_EPOCH specification:
   decimal seconds since 1970-01-01 00:00:00 UTC; a malformed value must make
   the tool fail, not fall back).  EINVAL for a malformed value. */
static arrank_status report_date(time_t *made, arrank_error *err)
{
    *made = time(NULL);
    const char *sde = getenv("SOURCE_DATE_EPOCH");
    if (!sde || !*sde)
        return ARRANK_OK;
    int digits = 1;
    for (const char *c = sde; *c; c++)
        digits &= *c >= '0' && *c <= '9';
    char *end = NULL;
    errno = 0;
    long long v = digits ? strtoll(sde, &end, 10) : -1;
    if (!digits || errno || !end || *end || v > LAST_EPOCH_S ||
        (long long)(time_t)v != v)
        return arrank_errorf(err, ARRANK_EINVAL,
                             "'SOURCE_DATE_EPOCH' is not a number of seconds since 1970 up to "
                             "the year 9999: '%.40s'",
                             sde);
    *made = (time_t)v;
    return ARRANK_OK;
}

static char *dir_of(const char *path)
{
    const char *slash = strrchr(path, '/');
    if (!slash)
        return arrank_strdup(".");
    if (slash == path)
        return arrank_strdup("/");
    size_t n = (size_t)(slash - path);
    char *d = malloc(n + 1);
    if (d) {
        memcpy(d, path, n);
        d[n] = '\0';
    }
    return d;
}

static arrank_status report_write_in_c(const arrank_analysis *a, const char *path,
                                       const arrank_report_options *options, arrank_error *err)
{
    arrank_report_options o = options ? *options : arrank_report_defaults();
    time_t made;
    arrank_status date_st = report_date(&made, err);
    if (date_st != ARRANK_OK)
        return date_st;
    char *dir = dir_of(path);
    if (!dir)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    figure_set fs;
    arrank_status st = draw_figures(a, dir, &o, &fs, err);
    if (st != ARRANK_OK) {
        free(dir);
        return st;
    }
    size_t n = strlen(dir) + 32;
    char *tmp = malloc(n);
    if (!tmp) {
        free_figures(&fs);
        free(dir);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    snprintf(tmp, n, "%s/.report.html.XXXXXX", dir);
    int fd = mkstemp(tmp);
    FILE *f = fd >= 0 ? fdopen(fd, "w") : NULL;
    if (!f) {
        st = arrank_error_at(err, ARRANK_EIO, path, 0, 0, "cannot write '%s': %s", path,
                             strerror(errno));
        if (fd >= 0) {
            close(fd);
            unlink(tmp);
        }
        goto done;
    }
    fchmod(fd, 0644);
    put_page(f, a, &o, &fs, made);
    int bad = fflush(f) != 0 || ferror(f) || fsync(fileno(f)) != 0;
    int e = errno;
    if (fclose(f) != 0 && !bad) {
        bad = 1;
        e = errno;
    }
    if (bad || rename(tmp, path) != 0) {
        if (!bad)
            e = errno;
        unlink(tmp);
        st = arrank_error_at(err, ARRANK_EIO, path, 0, 0, "cannot write '%s': %s", path,
                             strerror(e));
        goto done;
    }
    if (fs.status != ARRANK_OK)
        st = arrank_errorf(err, fs.status, "%s", fs.message);

done:
    free(tmp);
    free_figures(&fs);
    free(dir);
    return st;
}

/* The public entry: the work in the C locale, rounding to nearest, whatever the
   host program set (number.h), and then the host's settings back. */
arrank_status arrank_report_write(const arrank_analysis *a, const char *path,
                                  const arrank_report_options *options, arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = report_write_in_c(a, path, options, err);
    arrank_numbers_c_leave(&env);
    return st;
}
