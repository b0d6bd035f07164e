/*
 * report_sample.c - one sample's section of report.html: the diagnostics
 * figure, the estimates with their intervals, flags in words, the diagnosis
 * in plain words, the points left out with their reasons and the transport
 * and heat criteria (the report family: see report.c for the escaping rule).
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/text.h"
#include "arrank/analysis_stats.h"
#include "arrank/diagnose.h"
#include "arrank/diagnosis_out.h"
#include "plot_style.h"
#include "report_internal.h"

static void put_param_row(FILE *f, const char *name, double v, double lo, double hi,
                          int digits)
{
    fprintf(f, "<tr><th>%s</th><td class=\"n\">", name);
    arrank_report_html_num(f, v, digits);
    fputs("</td><td class=\"n\">", f);
    if (isfinite(lo) && isfinite(hi)) {
        arrank_report_html_num(f, lo, digits);
        fputs(" &ndash; ", f);
        arrank_report_html_num(f, hi, digits);
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
            arrank_text_html(f, lead);
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
            arrank_text_html(f, line);
            fputs("</b>: ", f);
            arrank_text_html(f, line + lab + 2);
        } else {
            fputs("<li class=\"plain\">", f);
            arrank_text_html(f, line);
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
        fprintf(f, "<tr><td class=\"n\">%ld", p->line);
        if (s->n_sources > 1) { /* a sample of several files: which one */
            fputs(" of ", f);
            arrank_text_html(f, arrank_point_file(s, p));
        }
        fputs("</td><td class=\"n\">", f);
        arrank_report_html_num(f, p->temp_K - ZERO_C_K, 1);
        fputs("</td><td class=\"n\">", f);
        arrank_report_html_num(f, p->temp_K, 1);
        fputs("</td>", f);
        const char *reason = "left out before the fit (not a usable point)";
        if (d && k < d->n_points) {
            static const char *const words[] = {"unclassified", "kinetic",
                                                "pore-diffusion-like", "film-diffusion-like"};
            unsigned g = (unsigned)d->points[k].regime;
            fputs("<td>", f);
            arrank_text_html(f, g < sizeof words / sizeof *words ? words[g] : "unclassified");
            fputs("</td>", f);
            reason = d->points[k].reason ? d->points[k].reason
                                         : "left out before the diagnostics";
        }
        if (p->omitted) /* the reader's own reason for a point it could not use */
            reason = p->omitted;
        fputs("<td>", f);
        arrank_text_html(f, reason);
        fputs("</td></tr>\n", f);
    }
    fputs("</tbody></table></div>\n", f);
}

/* Prater's bound on the temperature rise inside the pellet: a row of the
   criteria table, a note rather than a pass or fail (transport.c). */
static void put_prater(FILE *f, const arrank_prater *p)
{
    fputs("<tr><th>Prater temperature rise inside the pellet</th><td class=\"n\">", f);
    arrank_report_html_num(f, p->rise_K, -3);
    fputs(" K (&beta; = ", f);
    arrank_report_html_num(f, p->beta, -3);
    fputs(")</td><td class=\"n\">&ndash;</td><td class=\"n\">", f);
    arrank_report_html_num(f, p->temp_K, 1);
    fputs("</td><td>the most the centre can be hotter than the surface</td><td>", f);
    arrank_text_html(f, p->detail);
    if (p->source) {
        fputs(" (", f);
        arrank_text_html(f, p->source);
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
        arrank_report_html_num(f, c->value, -3);
        fputs("</td><td class=\"n\">", f);
        arrank_report_html_num(f, c->threshold, -3);
        fputs("</td><td class=\"n\">", f);
        arrank_report_html_num(f, c->temp_K, 1);
        fprintf(f, "</td><td>%s</td><td>", c->passes ? "below the limit: negligible"
                                                     : rows[k].above);
        arrank_text_html(f, c->detail);
        if (c->source) {
            fputs(" (limit: ", f);
            arrank_text_html(f, c->source);
            fputs(")", f);
        }
        fputs("</td></tr>\n", f);
    }
    if (d->heat.prater.computed)
        put_prater(f, &d->heat.prater);
    fputs("</tbody></table></div>\n", f);
}

void arrank_report_put_sample(FILE *f, const arrank_analysis *a, size_t i,
                              const figure_set *fs)
{
    const arrank_result *r = &a->results[i];
    const arrank_sample *s = r->sample;
    fprintf(f, "<section class=\"sample\">\n<h3 id=\"sample-%zu\">", i + 1);
    arrank_report_put_swatch(f, a, i);
    arrank_text_html(f, s->id);
    fputs("</h3>\n", f);
    /* the figure first: beside the words on a wide page and in print */
    arrank_report_put_figure(f, fs, ARRANK_FIGURE_DIAGNOSTICS, i);
    arrank_report_put_figure(f, fs, ARRANK_FIGURE_TIME_ON_STREAM, i);
    fputs("<p>File <code>", f);
    arrank_text_html(f, s->file);
    fprintf(f, "</code>, %zu points", s->n_points);
    for (size_t k = 0; k < s->n_meta; k++) {
        if (strcmp(s->meta[k].key, "sample") == 0)
            continue;
        fputs("; ", f);
        arrank_text_html(f, s->meta[k].key);
        fputs(" = ", f);
        arrank_text_html(f, s->meta[k].value);
    }
    fputs(".</p>\n", f);
    if (r->error) {
        fputs(s->skipped ? "<p class=\"note\">File not used and not ranked: "
                         : "<p class=\"note\">Not fitted and not ranked: ", f);
        arrank_text_html(f, r->error);
        fputs(".</p>\n", f);
        if (r->hold) { /* a stability hold: its drift with time, as check says it */
            const char *kind = r->hold->problem ? "problem" : "note";
            fprintf(f, "<ul>\n<li class=\"%s\"><b>%s</b>: ",
                    r->hold->problem ? "problem" : "plain", kind);
            arrank_text_html(f, r->hold->words);
            fputs("</li>\n</ul>\n", f);
        }
        fputs("</section>\n", f);
        return;
    }
    const arrank_arrhenius *fit = &r->fit;
    const double t = r->t_quantile; /* the pipeline's (analysis.c) */
    fprintf(f, "<div class=\"wide\"><table><thead><tr><th>quantity</th><th>estimate</th><th>%.4g %% interval</th>"
               "</tr></thead><tbody>\n",
            100 * a->options.confidence);
    put_param_row(f, "apparent Ea [kJ mol<sup>&minus;1</sup>]", fit->ea_J_mol / 1000,
                  (fit->ea_J_mol - t * fit->ea_se_J_mol) / 1000,
                  (fit->ea_J_mol + t * fit->ea_se_J_mol) / 1000, 2);
    put_param_row(f, "ln A (A in the report unit)", fit->ln_A, fit->ln_A - t * fit->ln_A_se,
                  fit->ln_A + t * fit->ln_A_se, 3);
    if (r->has_prediction) {
        char name[400];
        char unit[200];
        snprintf(unit, sizeof unit, "%s", arrank_report_unit(a));
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
                arrank_text_html(f, arrank_plot_flag_short(1u << b));
                fputs("</b>: ", f);
                arrank_text_html(f, words);
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
        arrank_text_html(f, s->notes[k]);
        fputs("</p>\n", f);
    }
    fputs("</section>\n", f);
}

