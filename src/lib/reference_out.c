/*
 * reference_out.c - the reference catalyst in words and numbers under the
 * terminal table (reference_out.h).  Every number comes from the pipeline
 * (analysis_reference.c); nothing is computed here but exp() of an interval
 * computed on ln r and the widths of the columns.
 */
#include "reference_out.h"

#include <math.h>
#include <stdint.h>
#include <string.h>

#include "arrank/analysis_stats.h"
#include "arrank/text.h"
#include "rank_out.h"

#define NAME_MAX_SHOWN 40

/* The sample's id as shown on the terminal: escaped, cut to NAME_MAX_SHOWN. */
static void shown_id(const char *id, char *buf, size_t n)
{
    char esc[4 * NAME_MAX_SHOWN + 8];
    arrank_text_escape(id, esc, sizeof esc);
    if (strlen(esc) > NAME_MAX_SHOWN)
        memcpy(esc + NAME_MAX_SHOWN - 3, "...", 4);
    snprintf(buf, n, "%s", esc);
}

/* The ratio cell: "1.89 [1.77, 2.02]", or what stands for it. */
static void ratio_text(const struct arrank_sample_stats *ss, char *buf, size_t n)
{
    if (ss->is_reference)
        snprintf(buf, n, "1 (the reference)");
    else if (ss->has_ratio)
        snprintf(buf, n, "%.3g [%.3g, %.3g]", exp(ss->ratio.est), exp(ss->ratio.lo),
                 exp(ss->ratio.hi));
    else
        snprintf(buf, n, "-");
}

/* w: the id column's width, rw: the ratio column's */
static void row(const arrank_analysis *a, const arrank_result *res, int w, int rw, FILE *f)
{
    const struct arrank_sample_stats *ss = res->stats;
    char name[NAME_MAX_SHOWN + 8], ratio[96], pb[32] = "-", ea[96] = "-";
    shown_id(res->sample->id, name, sizeof name);
    ratio_text(ss, ratio, sizeof ratio);
    if (!ss->is_reference) {
        if (isfinite(ss->p_better))
            snprintf(pb, sizeof pb, "%.3f", ss->p_better);
        if (isfinite(ss->ea_diff.est))
            snprintf(ea, sizeof ea, "%+.1f [%+.1f, %+.1f]", ss->ea_diff.est / 1e3,
                     ss->ea_diff.lo / 1e3, ss->ea_diff.hi / 1e3);
    }
    (void)a;
    fprintf(f, "  %-*s  %-*s  %-9s  %s\n", w, name, rw, ratio, pb, ea);
}

/* The reference per campaign, its drift and the test of equality. */
static void campaigns(const arrank_analysis *a, FILE *f)
{
    const struct arrank_reference_stats *rs = a->reference;
    if (rs->n_campaigns < 2)
        return;
    fprintf(f, "the reference's rate at T per campaign [%s]:", a->campaign->rate_unit);
    for (size_t k = 0; k < rs->n_campaigns; k++) {
        const arrank_reference_campaign *rc = &rs->campaigns[k];
        char name[NAME_MAX_SHOWN + 8];
        shown_id(rc->campaign, name, sizeof name);
        if (rc->has_rate)
            fprintf(f, "%s %s %.3g [%.3g, %.3g]", k ? ";" : "", name, rc->rate, rc->rate_lo,
                    rc->rate_hi);
        else
            fprintf(f, "%s %s -", k ? ";" : "", name);
    }
    fputc('\n', f);
    for (size_t k = 1; k < rs->n_campaigns; k++) {
        char words[512], shown[2048];
        arrank_reference_drift_words(a, k, words, sizeof words);
        arrank_text_escape(words, shown, sizeof shown);
        fprintf(f, "%s\n", shown);
    }
    if (rs->has_equal)
        fprintf(f, "Welch's test that the reference ran alike in every campaign: F = %.3g on %g "
                "and %.1f dof, p = %.2g%s\n",
                rs->equal.F, rs->equal.df1, rs->equal.df2, rs->equal.p,
                rs->equal.p < 1.0 - a->options.confidence ? ": the rig drifted" : "");
    if (rs->pooled)
        fprintf(f, "ranked on each sample's ratio to its own campaign's reference (the "
                   "inter-batch correction)\n");
}

arrank_status arrank_reference_table_write(const arrank_analysis *a, FILE *f, arrank_error *err)
{
    const struct arrank_reference_stats *rs = a->reference;
    if (!rs)
        return ARRANK_OK;
    int w = 6, rw = (int)strlen("rate / reference's");
    for (size_t i = 0; i < a->n_results; i++) {
        const struct arrank_sample_stats *ss = a->results[i].stats;
        if (!ss || !ss->has_reference)
            continue;
        char name[NAME_MAX_SHOWN + 8], ratio[96];
        shown_id(a->results[i].sample->id, name, sizeof name);
        ratio_text(ss, ratio, sizeof ratio);
        if ((int)strlen(name) > w)
            w = (int)strlen(name);
        if ((int)strlen(ratio) > rw)
            rw = (int)strlen(ratio);
    }
    char ref[NAME_MAX_SHOWN + 8];
    shown_id(rs->id, ref, sizeof ref);
    fprintf(f, "\nagainst the reference %s (%g%% intervals; Welch degrees of freedom):\n", ref,
            100.0 * a->options.confidence);
    fprintf(f, "  %-*s  %-*s  %-9s  %s\n", w, "sample", rw, "rate / reference's",
            "P(better)", "Ea - reference's [kJ/mol]");
    /* ranked samples in rank order, then the others in file order, as the table */
    for (size_t k = 0; k < a->n_ranked; k++) {
        const arrank_result *res = &a->results[a->order[k]];
        if (res->stats && res->stats->has_reference)
            row(a, res, w, rw, f);
    }
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *res = &a->results[i];
        if (res->rank == 0 && res->stats && res->stats->has_reference)
            row(a, res, w, rw, f);
    }
    campaigns(a, f);
    if (ferror(f))
        return arrank_errorf(err, ARRANK_EIO, "write failed");
    return ARRANK_OK;
}

/* ---- the report's section ------------------------------------------------- */

static void html_row(const arrank_result *res, FILE *f)
{
    const struct arrank_sample_stats *ss = res->stats;
    fputs("<tr><td>", f);
    arrank_text_html(f, res->sample->id);
    if (ss->is_reference) {
        fputs(" <strong>(reference)</strong></td><td>1</td><td>&ndash;</td><td>&ndash;</td>"
              "</tr>\n", f);
        return;
    }
    if (ss->has_ratio)
        fprintf(f, "</td><td>%.3g [%.3g, %.3g]</td>", exp(ss->ratio.est), exp(ss->ratio.lo),
                exp(ss->ratio.hi));
    else
        fputs("</td><td>&ndash;</td>", f);
    if (isfinite(ss->p_better))
        fprintf(f, "<td>%.3f</td>", ss->p_better);
    else
        fputs("<td>&ndash;</td>", f);
    if (isfinite(ss->ea_diff.est))
        fprintf(f, "<td>%+.1f [%+.1f, %+.1f]</td></tr>\n", ss->ea_diff.est / 1e3,
                ss->ea_diff.lo / 1e3, ss->ea_diff.hi / 1e3);
    else
        fputs("<td>&ndash;</td></tr>\n", f);
}

void arrank_reference_html_write(const arrank_analysis *a, FILE *f)
{
    const struct arrank_reference_stats *rs = a->reference;
    if (!rs)
        return;
    fputs("<h2>Reference catalyst</h2>\n<p>Every sample set against <strong>", f);
    arrank_text_html(f, rs->id);
    fprintf(f, "</strong>%s: its rate at the operating temperature as a ratio to the "
               "reference's, P(better than the reference) and its Ea minus the reference's, "
               "%g %% intervals (independent fits, Welch degrees of freedom). The reference "
               "is drawn black with a pentagon in every figure.</p>\n",
            rs->n_campaigns > 1 ? ", each against its own campaign's" : "",
            100.0 * a->options.confidence);
    if (rs->n_campaigns > 1) {
        fprintf(f, "<table>\n<tr><th>campaign</th><th>reference's rate at T [");
        arrank_text_html(f, a->campaign->rate_unit);
        fputs("]</th><th>ratio to the first</th></tr>\n", f);
        for (size_t k = 0; k < rs->n_campaigns; k++) {
            const arrank_reference_campaign *rc = &rs->campaigns[k];
            fputs("<tr><td>", f);
            arrank_text_html(f, rc->campaign);
            fprintf(f, "</td><td>%.3g [%.3g, %.3g]</td>", rc->rate, rc->rate_lo, rc->rate_hi);
            if (k)
                fprintf(f, "<td>%.3g [%.3g, %.3g]</td></tr>\n", exp(rc->to_first.est),
                        exp(rc->to_first.lo), exp(rc->to_first.hi));
            else
                fputs("<td>1</td></tr>\n", f);
        }
        fputs("</table>\n<ul>\n", f);
        for (size_t k = 1; k < rs->n_campaigns; k++) {
            char words[512];
            arrank_reference_drift_words(a, k, words, sizeof words);
            fputs("<li>", f);
            arrank_text_html(f, words);
            fputs("</li>\n", f);
        }
        if (rs->has_equal)
            fprintf(f, "<li>Welch's test that the reference ran alike in every campaign: "
                       "F = %.3g on %g and %.1f degrees of freedom, p = %.2g.</li>\n",
                    rs->equal.F, rs->equal.df1, rs->equal.df2, rs->equal.p);
        fputs("</ul>\n", f);
    }
    fputs("<table>\n<tr><th>sample</th><th>rate / reference's</th><th>P(better)</th>"
          "<th>Ea &minus; reference's [kJ/mol]</th></tr>\n", f);
    for (size_t k = 0; k < a->n_ranked; k++) {
        const arrank_result *res = &a->results[a->order[k]];
        if (res->stats && res->stats->has_reference)
            html_row(res, f);
    }
    for (size_t i = 0; i < a->n_results; i++) {
        const arrank_result *res = &a->results[i];
        if (res->rank == 0 && res->stats && res->stats->has_reference)
            html_row(res, f);
    }
    fputs("</table>\n", f);
}
