/*
 * report.c - the self-contained review report (report.html).
 *
 * The page is written in one pass to a temporary file beside the target and
 * renamed into place.  Figures come from arrank_plot_write (SVG) in a private
 * temporary folder; each is read back, stripped of its XML prologue and
 * namespace declarations (HTML puts inline <svg> in the SVG namespace itself),
 * and its element ids are prefixed per figure so that several gnuplot figures
 * can share one page without their ids colliding.  User strings are written
 * only through html_text, which escapes them and drops control characters.
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

#include "arrank/report.h"

#include <dirent.h>
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
#include "util.h"
#include "number.h"

#define ZERO_C_K 273.15 /* 0 degC in K, exact by definition */

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

/* Length of the valid UTF-8 sequence at s, 0 if none (RFC 3629). */
static size_t utf8_len(const unsigned char *s)
{
    unsigned c = s[0];
    size_t n;
    unsigned lo = 0x80, hi = 0xBF;
    if (c < 0x80)
        return 1;
    if (c >= 0xC2 && c <= 0xDF)
        n = 2;
    else if (c >= 0xE0 && c <= 0xEF) {
        n = 3;
        lo = c == 0xE0 ? 0xA0 : 0x80;
        hi = c == 0xED ? 0x9F : 0xBF;
    } else if (c >= 0xF0 && c <= 0xF4) {
        n = 4;
        lo = c == 0xF0 ? 0x90 : 0x80;
        hi = c == 0xF4 ? 0x8F : 0xBF;
    } else
        return 0;
    for (size_t k = 1; k < n; k++) {
        if (s[k] < lo || s[k] > hi)
            return 0;
        lo = 0x80;
        hi = 0xBF;
    }
    return n;
}

/* User text as HTML: & < > " ' escaped, control characters dropped, bytes
   that are not UTF-8 shown as U+FFFD. */
static void html_text(FILE *f, const char *text)
{
    const unsigned char *s = (const unsigned char *)(text ? text : "");
    while (*s) {
        size_t n = utf8_len(s);
        if (n == 0) {
            fputs("\xEF\xBF\xBD", f);
            s++;
            continue;
        }
        if (n == 1) {
            unsigned c = *s;
            if (c == '&')
                fputs("&amp;", f);
            else if (c == '<')
                fputs("&lt;", f);
            else if (c == '>')
                fputs("&gt;", f);
            else if (c == '"')
                fputs("&quot;", f);
            else if (c == '\'')
                fputs("&#39;", f);
            else if (c >= 0x20 && c != 0x7F)
                fputc((int)c, f);
        } else if (!(n == 2 && s[0] == 0xC2 && s[1] <= 0x9F)) /* C1 controls */
            fwrite(s, 1, n, f);
        s += n;
    }
}

/* A number with `digits` decimals (fixed) or, with digits < 0, -digits
   significant digits. */
static void html_num(FILE *f, double v, int digits)
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
        return "Arrhenius plot of every sample: ln r against 1000/T with the fitted lines and "
               "their confidence bands; open symbols are points left out of the fit; the top "
               "axis gives the temperature in degC.";
    case ARRANK_FIGURE_RATE_AT_T:
        return "Rate at the operating temperature with its confidence interval, best at the top "
               "(log axis).  Open markers are flagged samples; the flags are named at the right.";
    case ARRANK_FIGURE_EA_LNA:
        return "Apparent activation energy against ln A with each sample's joint confidence "
               "region.  Long thin ellipses along one direction show how strongly the two "
               "estimates are correlated: a line through such points is not by itself evidence "
               "of a compensation effect.";
    case ARRANK_FIGURE_DIAGNOSTICS:
        return "Residuals of the fit against 1000/T (left; marker shape: the point's regime, "
               "open: left out of the fit, lines: runs) and the local apparent activation "
               "energy over three neighbouring temperatures with its interval at the run's "
               "level (right; three temperatures leave one degree of freedom, so the "
               "intervals are wide and may run off the panel), against the fitted value and "
               "its interval.  The grey band is the kinetic "
               "window the fit uses.  A local Ea that falls with temperature suggests transport "
               "limitation or another bend in the Arrhenius plot.";
    }
    return "";
}

typedef struct {
    arrank_plot_files files;
    char **svg; /* [files.n] contents, NULL where unreadable */
    arrank_status status;
    char message[ARRANK_ERROR_MSG_MAX];
} figure_set;

static void remove_tree(const char *dir)
{
    DIR *d = opendir(dir);
    if (d) {
        struct dirent *e;
        while ((e = readdir(d)) != NULL) {
            if (strcmp(e->d_name, ".") == 0 || strcmp(e->d_name, "..") == 0)
                continue;
            size_t n = strlen(dir) + strlen(e->d_name) + 2;
            char *p = malloc(n);
            if (p) {
                snprintf(p, n, "%s/%s", dir, e->d_name);
                unlink(p);
                free(p);
            }
        }
        closedir(d);
    }
    rmdir(dir);
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
        remove_tree(tmpdir);
        free(tmpdir);
        if (fs->status == ARRANK_ENOMEM)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        return ARRANK_OK; /* the report notes the missing figures */
    }
    fs->svg = calloc(fs->files.n ? fs->files.n : 1, sizeof *fs->svg);
    if (!fs->svg) {
        remove_tree(tmpdir);
        free(tmpdir);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    for (size_t k = 0; k < fs->files.n; k++) {
        size_t len;
        fs->svg[k] = read_all(fs->files.files[k].path, &len);
    }
    remove_tree(tmpdir);
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

static void put_figure(FILE *f, const figure_set *fs, arrank_figure_kind kind, size_t sample)
{
    for (size_t k = 0; fs->svg && k < fs->files.n; k++) {
        const arrank_plot_file *pf = &fs->files.files[k];
        if (pf->kind != kind || (kind == ARRANK_FIGURE_DIAGNOSTICS && pf->sample != sample) ||
            !fs->svg[k])
            continue;
        fputs("<figure>\n", f);
        inline_svg(f, fs->svg[k], ++fig_counter);
        fputs("\n<figcaption>", f);
        html_text(f, figure_caption(kind));
        fputs(" <span class=\"file\">(", f);
        html_text(f, pf->name);
        fputs(" in <code>arrank plot</code>)</span></figcaption>\n</figure>\n", f);
    }
}

/* ---- page --------------------------------------------------------------- */

static const char css[] =
    "body{font-family:system-ui,-apple-system,'Segoe UI',Roboto,'DejaVu Sans',sans-serif;"
    "max-width:72rem;margin:0 auto;padding:1.5rem;color:#1a1a1a;line-height:1.45}"
    "h1{font-size:1.7rem;margin-bottom:.2rem}h2{margin-top:2.2rem;border-bottom:2px solid #ccc}"
    "h3{margin-top:1.6rem}"
    "table{border-collapse:collapse;margin:.6rem 0;font-size:.92rem}"
    "th,td{border:1px solid #ccc;padding:.25rem .5rem;text-align:left;vertical-align:top}"
    "th{background:#f0f0f0}td.n{text-align:right;font-variant-numeric:tabular-nums}"
    "figure{margin:1rem 0}svg.figure{max-width:100%;height:auto;display:block}"
    ".wide{overflow-x:auto;max-width:100%}td.n{white-space:nowrap}"
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
    ".swatch{display:inline-block;width:.9em;height:.9em;border-radius:50%;"
    "margin-right:.35em;vertical-align:-0.1em}"
    "@media print{body{max-width:none;padding:0;font-size:8.5pt;line-height:1.3}"
    "svg.figure{max-height:8cm;width:auto;max-width:100%;margin:0 auto}"
    "section.sample svg.figure{max-height:7.5cm}section.sample{break-inside:auto}"
    "h2{margin-top:1rem}h3{margin:.6rem 0 .2rem}p,ul{margin:.3rem 0}"
    "figcaption{font-size:7.5pt}table{font-size:7.5pt}"
    "h2{break-before:auto;break-after:avoid}h3{break-after:avoid}"
    "figure,table,.caution{break-inside:avoid}"
    "section.sample{break-inside:avoid-page}"
    ".swatch{print-color-adjust:exact;-webkit-print-color-adjust:exact}"
    "a{color:inherit;text-decoration:none}}";

/* The rate unit as the reader reads it (plot_style.c: umol/(g*s) is
   µmol g⁻¹ s⁻¹); one buffer per thread, like every cache here. */
static const char *unit_of(const arrank_analysis *a)
{
    static _Thread_local char buf[160];
    arrank_plot_unit_text(a->campaign && a->campaign->rate_unit ? a->campaign->rate_unit
                                                                : "report unit",
                          buf, sizeof buf);
    return buf;
}

static void put_swatch(FILE *f, size_t i)
{
    fprintf(f, "<span class=\"swatch\" style=\"background:%s\"></span>", arrank_plot_color(i));
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
            html_text(f, name);
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
        html_num(f, st ? st->p_best : NAN, 2);
    fputs("</td><td class=\"n\">", f);
    if (st && st->group > 0)
        fprintf(f, "%d", st->group);
    else
        fputs("&ndash;", f);
    fputs("</td>", f);
}

/* "v (lo&ndash;hi)": an estimate with its interval v -/+ t se. */
static void put_estimate(FILE *f, double v, double se, double t, int digits)
{
    html_num(f, v, digits);
    fputs(" (", f);
    html_num(f, v - t * se, digits);
    fputs("&ndash;", f);
    html_num(f, v + t * se, digits);
    fputs(")", f);
}

static void put_ranking(FILE *f, const arrank_analysis *a)
{
    double T_op = a->options.operating_temp_K;
    fputs("<div class=\"wide\"><table>\n<thead><tr><th>rank</th><th>sample</th>", f);
    if (isfinite(T_op)) {
        fprintf(f, "<th>rate at %.4g &deg;C [", T_op - ZERO_C_K);
        html_text(f, unit_of(a));
        fprintf(f, "]</th><th>%.4g %% interval</th>", 100 * a->options.confidence);
    }
    int stats = a->rank_stats != NULL;
    if (stats)
        fputs("<th>P(best)</th><th>group</th>", f);
    fprintf(f, "<th>Ea [kJ/mol] (%.4g %% interval)</th><th>ln A (%.4g %% interval)</th>"
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
            put_swatch(f, i);
            html_text(f, r->sample->id);
            fputs("</td>", f);
            if (r->error) {
                fprintf(f, "<td colspan=\"%d\">%s: ", (isfinite(T_op) ? 7 : 5) + (stats ? 2 : 0),
                        r->sample->skipped ? "file not used" : "not fitted");
                html_text(f, r->error);
                fputs("</td></tr>\n", f);
                continue;
            }
            if (isfinite(T_op)) {
                if (r->has_prediction) {
                    fputs("<td class=\"n\">", f);
                    html_num(f, r->at_T.rate, -3);
                    fputs("</td><td class=\"n\">", f);
                    html_num(f, r->at_T.rate_lo, -3);
                    fputs(" &ndash; ", f);
                    html_num(f, r->at_T.rate_hi, -3);
                    fputs("</td>", f);
                } else
                    fputs("<td>&ndash;</td><td>&ndash;</td>", f);
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
            html_num(f, r->fit.T_min_K - ZERO_C_K, 0);
            fputs("&ndash;", f);
            html_num(f, r->fit.T_max_K - ZERO_C_K, 0);
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
            html_text(f, sentence);
            fputs(".", f);
        }
    }
    fputs("</p>\n", f);
}

static void put_param_row(FILE *f, const char *name, double v, double lo, double hi,
                          int digits)
{
    fprintf(f, "<tr><th>%s</th><td class=\"n\">", name);
    html_num(f, v, digits);
    fputs("</td><td class=\"n\">", f);
    if (isfinite(lo) && isfinite(hi)) {
        html_num(f, lo, digits);
        fputs(" &ndash; ", f);
        html_num(f, hi, digits);
    } else
        fputs("&ndash;", f);
    fputs("</td></tr>\n", f);
}

/* The plain-words diagnosis of diagnose.h as a list: the text of
   arrank_diagnosis_write_text, its first line (without the sample's id and
   file, which the heading gives) as a lead and every further line as an
   item with its label ("problem", "note") in bold.  The "left out" lines are
   skipped here: put_left_out shows them as a table. */
static void put_diagnosis(FILE *f, const arrank_result *r)
{
    const arrank_sample *s = r->sample;
    if (!r->diagnosis) {
        fputs("<p class=\"file\">Diagnostics not run.</p>\n", f);
        return;
    }
    char *text = NULL;
    size_t len = 0;
    FILE *m = open_memstream(&text, &len);
    if (!m) {
        fputs("<p class=\"note\">The diagnostics could not be written out.</p>\n", f);
        return;
    }
    arrank_status st = arrank_diagnosis_write_text(m, r, NULL);
    if (fclose(m) != 0 || st != ARRANK_OK || !text) {
        free(text);
        fputs("<p class=\"note\">The diagnostics could not be written out.</p>\n", f);
        return;
    }
    /* "ID (FILE): " starts the first line. */
    const char *id = s->id ? s->id : "", *file = s->file ? s->file : "";
    size_t plen = strlen(id) + strlen(file) + 6;
    char *prefix = malloc(plen);
    if (prefix)
        snprintf(prefix, plen, "%s (%s): ", id, file);
    fputs("<div class=\"diagnosis\">\n", f);
    int items = 0;
    for (char *line = text, *next; line && *line; line = next) {
        char *nl = strchr(line, '\n');
        next = nl ? nl + 1 : NULL;
        if (nl)
            *nl = '\0';
        if (line == text) {
            const char *lead = line;
            if (prefix && strncmp(lead, prefix, strlen(prefix)) == 0)
                lead += strlen(prefix);
            fputs("<p><b>Diagnostics:</b> ", f);
            html_text(f, lead);
            fputs(".</p>\n", f);
            continue;
        }
        while (*line == ' ')
            line++;
        if (!*line || strncmp(line, "left out: ", 10) == 0)
            continue;
        if (!items++)
            fputs("<ul>\n", f);
        /* A label is a short run of lowercase words before the first ": ". */
        const char *colon = strstr(line, ": ");
        size_t lab = colon ? (size_t)(colon - line) : 0;
        for (size_t k = 0; k < lab; k++)
            if (!((line[k] >= 'a' && line[k] <= 'z') || line[k] == ' '))
                lab = 0;
        if (lab > 0 && lab <= 16) {
            line[lab] = '\0';
            fprintf(f, "<li class=\"%s\"><b>", strcmp(line, "problem") == 0 ? "problem" : "plain");
            html_text(f, line);
            fputs("</b>: ", f);
            html_text(f, line + lab + 2);
        } else {
            fputs("<li class=\"plain\">", f);
            html_text(f, line);
        }
        fputs("</li>\n", f);
    }
    if (items)
        fputs("</ul>\n", f);
    fputs("</div>\n", f);
    free(prefix);
    free(text);
}

/* Points left out of the fit, one row each with the diagnosis's regime and
   reason. */
static void put_left_out(FILE *f, const arrank_result *r)
{
    const arrank_sample *s = r->sample;
    const arrank_diagnosis *d = r->diagnosis;
    if (!r->used || r->n_used >= s->n_points)
        return;
    fputs("<div class=\"wide\"><table class=\"left-out\"><caption>Points left out of the fit</caption>\n"
          "<thead><tr><th>line</th><th>T [&deg;C]</th><th>T [K]</th>",
          f);
    if (d)
        fputs("<th>regime</th>", f);
    fputs("<th>reason</th></tr></thead><tbody>\n", f);
    for (size_t k = 0; k < s->n_points; k++) {
        if (r->used[k])
            continue;
        const arrank_point *p = &s->points[k];
        fprintf(f, "<tr><td class=\"n\">%ld</td><td class=\"n\">", p->line);
        html_num(f, p->temp_K - ZERO_C_K, 1);
        fputs("</td><td class=\"n\">", f);
        html_num(f, p->temp_K, 1);
        fputs("</td>", f);
        const char *reason = "left out before the fit (not a usable point)";
        if (d && k < d->n_points) {
            static const char *const words[] = {"unclassified", "kinetic",
                                                "pore-diffusion-like", "film-diffusion-like"};
            unsigned g = (unsigned)d->points[k].regime;
            fputs("<td>", f);
            html_text(f, g < sizeof words / sizeof *words ? words[g] : "unclassified");
            fputs("</td>", f);
            reason = d->points[k].reason ? d->points[k].reason
                                         : "left out before the diagnostics";
        }
        if (p->omitted) /* the reader's own reason for a point it could not use */
            reason = p->omitted;
        fputs("<td>", f);
        html_text(f, reason);
        fputs("</td></tr>\n", f);
    }
    fputs("</tbody></table></div>\n", f);
}

/* Prater's bound on the temperature rise inside the pellet: a row of the
   criteria table, a note rather than a pass or fail (transport.c). */
static void put_prater(FILE *f, const arrank_prater *p)
{
    fputs("<tr><th>Prater temperature rise inside the pellet</th><td class=\"n\">", f);
    html_num(f, p->rise_K, -3);
    fputs(" K (&beta; = ", f);
    html_num(f, p->beta, -3);
    fputs(")</td><td class=\"n\">&ndash;</td><td class=\"n\">", f);
    html_num(f, p->temp_K, 1);
    fputs("</td><td>the most the centre can be hotter than the surface</td><td>", f);
    html_text(f, p->detail);
    if (p->source) {
        fputs(" (", f);
        html_text(f, p->source);
        fputs(")", f);
    }
    fputs("</td></tr>\n", f);
}

/* The transport and heat numbers that the sample's metadata let the
   diagnostics compute (Weisz-Prater, Mears, Mears' interphase and
   Anderson's intraparticle heat criteria, Prater's rise); one that was not
   computed is left out (the diagnosis's notes say what it needs). */
static void put_criteria(FILE *f, const arrank_result *r)
{
    const arrank_diagnosis *d = r->diagnosis;
    if (!d || !(d->weisz_prater.computed || d->mears.computed || d->heat.interphase.computed ||
                d->heat.intraparticle.computed || d->heat.prater.computed))
        return;
    const struct {
        const char *name, *above;
        const arrank_criterion *c;
    } rows[] = {
        {"Weisz&ndash;Prater", "internal (pore) diffusion may limit the rate", &d->weisz_prater},
        {"Mears", "external (film) mass transfer may limit the rate", &d->mears},
        {"Mears: heat transfer across the gas film",
         "the pellet may be hotter than the gas: the measured temperature is not the "
         "catalyst's",
         &d->heat.interphase},
        {"Anderson: heat conduction inside the pellet",
         "the pellet's inside may be hotter than its surface: the measured temperature is not "
         "the catalyst's",
         &d->heat.intraparticle},
    };
    fputs("<div class=\"wide\"><table class=\"criteria\"><caption>Transport and heat criteria</caption>\n"
          "<thead><tr><th>criterion</th><th>value</th><th>limit</th><th>at T [K]</th>"
          "<th>verdict</th><th>inputs and source</th></tr></thead><tbody>\n",
          f);
    for (size_t k = 0; k < sizeof rows / sizeof *rows; k++) {
        const arrank_criterion *c = rows[k].c;
        if (!c->computed) /* the diagnosis's notes say why */
            continue;
        fprintf(f, "<tr><th>%s</th>", rows[k].name);
        fputs("<td class=\"n\">", f);
        html_num(f, c->value, -3);
        fputs("</td><td class=\"n\">", f);
        html_num(f, c->threshold, -3);
        fputs("</td><td class=\"n\">", f);
        html_num(f, c->temp_K, 1);
        fprintf(f, "</td><td>%s</td><td>", c->passes ? "below the limit: negligible"
                                                     : rows[k].above);
        html_text(f, c->detail);
        if (c->source) {
            fputs(" (limit: ", f);
            html_text(f, c->source);
            fputs(")", f);
        }
        fputs("</td></tr>\n", f);
    }
    if (d->heat.prater.computed)
        put_prater(f, &d->heat.prater);
    fputs("</tbody></table></div>\n", f);
}

static void put_sample(FILE *f, const arrank_analysis *a, size_t i, const figure_set *fs)
{
    const arrank_result *r = &a->results[i];
    const arrank_sample *s = r->sample;
    fprintf(f, "<section class=\"sample\">\n<h3 id=\"sample-%zu\">", i + 1);
    put_swatch(f, i);
    html_text(f, s->id);
    fputs("</h3>\n<p>File <code>", f);
    html_text(f, s->file);
    fprintf(f, "</code>, %zu points", s->n_points);
    for (size_t k = 0; k < s->n_meta; k++) {
        if (strcmp(s->meta[k].key, "sample") == 0)
            continue;
        fputs("; ", f);
        html_text(f, s->meta[k].key);
        fputs(" = ", f);
        html_text(f, s->meta[k].value);
    }
    fputs(".</p>\n", f);
    if (r->error) {
        fputs(s->skipped ? "<p class=\"note\">File not used and not ranked: "
                         : "<p class=\"note\">Not fitted and not ranked: ", f);
        html_text(f, r->error);
        fputs(".</p>\n</section>\n", f);
        return;
    }
    const arrank_arrhenius *fit = &r->fit;
    const double t = r->t_quantile; /* the pipeline's (analysis.c) */
    fprintf(f, "<div class=\"wide\"><table><thead><tr><th>quantity</th><th>estimate</th><th>%.4g %% interval</th>"
               "</tr></thead><tbody>\n",
            100 * a->options.confidence);
    put_param_row(f, "apparent Ea [kJ/mol]", fit->ea_J_mol / 1000,
                  (fit->ea_J_mol - t * fit->ea_se_J_mol) / 1000,
                  (fit->ea_J_mol + t * fit->ea_se_J_mol) / 1000, 2);
    put_param_row(f, "ln A (A in the report unit)", fit->ln_A, fit->ln_A - t * fit->ln_A_se,
                  fit->ln_A + t * fit->ln_A_se, 3);
    if (r->has_prediction) {
        char name[400];
        char unit[200];
        snprintf(unit, sizeof unit, "%s", unit_of(a));
        for (char *c = unit; *c; c++) /* ours: no markup; '<', '&' never in a unit we typeset */
            if (*c == '<' || *c == '>' || *c == '&')
                *c = '?';
        snprintf(name, sizeof name, "rate at %.4g &deg;C [%s]",
                 a->options.operating_temp_K - ZERO_C_K, unit);
        put_param_row(f, name, r->at_T.rate, r->at_T.rate_lo, r->at_T.rate_hi, -4);
    }
    fputs("</tbody></table></div>\n<p>", f);
    fprintf(f, "Fitted on %zu of %zu points, %.1f&ndash;%.1f &deg;C, T<sub>ref</sub> = "
               "%.2f K; correlation of Ea and ln A %.4f",
            r->n_used, s->n_points, fit->T_min_K - ZERO_C_K, fit->T_max_K - ZERO_C_K,
            fit->T_ref_K, fit->corr_ea_lnA);
    /* s = sqrt(rss/dof) is the scatter of ln r only without weights; with
       rate_sd it is sqrt(chi2/dof), how far the scatter is from the stated sd */
    if (fit->weighted && isfinite(fit->chi2_dof))
        fprintf(f, "; R&sup2; = %.4f; weighted by rate_sd, &chi;&sup2;/dof = %.3g, "
                   "&radic;(&chi;&sup2;/dof) = %.3g",
                fit->r2, fit->chi2_dof, fit->resid_sd);
    else
        fprintf(f, "; residual SD %.3g in ln r; R&sup2; = %.4f; unweighted (no rate_sd)",
                fit->resid_sd, fit->r2);
    fputs(".</p>\n", f);
    if (r->flags) {
        fputs("<ul class=\"flags\">\n", f);
        for (unsigned b = 0; b < ARRANK_FLAG_COUNT; b++)
            if (r->flags & (1u << b)) {
                const char *words = arrank_flag_words(1u << b);
                if (!words)
                    continue;
                fputs("<li><b>", f);
                html_text(f, arrank_plot_flag_short(1u << b));
                fputs("</b>: ", f);
                html_text(f, words);
                fputs("</li>\n", f);
            }
        fputs("</ul>\n", f);
    } else
        fputs("<p>No flags raised.</p>\n", f);
    put_diagnosis(f, r);
    put_left_out(f, r);
    put_criteria(f, r);
    for (size_t k = 0; k < s->n_notes; k++) {
        fputs("<p class=\"file\">Note: ", f);
        html_text(f, s->notes[k]);
        fputs("</p>\n", f);
    }
    put_figure(f, fs, ARRANK_FIGURE_DIAGNOSTICS, i);
    fputs("</section>\n", f);
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
        html_text(f, lines[k] + (lines[k][0] >= 'a' && lines[k][0] <= 'z'));
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
        html_text(f, s->file ? s->file : s->path);
        fputs("</code></td><td class=\"hash\">", f);
        if (s->path && arrank_report_sha256_file(s->path, hex, NULL) == ARRANK_OK)
            fputs(hex, f);
        else
            fputs("could not be read", f);
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
    html_text(f, title);
    fputs(" &ndash; arrank review report</title>\n<style>", f);
    fputs(css, f);
    fputs("</style>\n</head>\n<body>\n<header>\n<h1>", f);
    html_text(f, title);
    fputs("</h1>\n<p>Review report of the campaign <code>", f);
    html_text(f, c && c->name ? c->name : "");
    fprintf(f, "</code>: %zu sample%s, %zu fitted, %zu ranked; rates in ", a->n_results,
            a->n_results == 1 ? "" : "s", n_fit, a->n_ranked);
    html_text(f, unit_of(a));
    if (isfinite(a->options.operating_temp_K))
        fprintf(f, "; operating temperature %.2f &deg;C (%.2f K)",
                a->options.operating_temp_K - ZERO_C_K, a->options.operating_temp_K);
    fprintf(f, "; %.4g %% intervals.</p>\n</header>\n", 100 * a->options.confidence);

    put_cautions(f, a);
    if (fs->status != ARRANK_OK) {
        fputs("<p class=\"note\">The figures could not be drawn: ", f);
        html_text(f, fs->message);
        fputs(".</p>\n", f);
    }
    fputs("<h2>Ranking</h2>\n", f);
    put_ranking(f, a);
    put_figure(f, fs, ARRANK_FIGURE_RATE_AT_T, (size_t)-1);
    fputs("<h2>All samples</h2>\n", f);
    put_figure(f, fs, ARRANK_FIGURE_ARRHENIUS, (size_t)-1);
    put_figure(f, fs, ARRANK_FIGURE_EA_LNA, (size_t)-1);
    fputs("<h2>Samples one by one</h2>\n", f);
    for (size_t i = 0; i < a->n_results; i++)
        put_sample(f, a, i, fs);
    put_methods(f, a);

    fputs("<h2>Record</h2>\n<p>Made by arrank " ARRANK_VERSION, f);
    struct tm tm;
    char date[64];
    if (gmtime_r(&made, &tm) && strftime(date, sizeof date, "%Y-%m-%d %H:%M UTC", &tm))
        fprintf(f, " on %s", date);
    fputs(".</p>\n", f);
    if (o->command_line) {
        fputs("<p>Command line: <code>", f);
        html_text(f, o->command_line);
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
