/*
 * reference_out.c - the reference catalyst in words and numbers under the
 * terminal table (reference_out.h).  Every number comes from the pipeline
 * (analysis_reference.c); nothing is computed here but exp() of an interval
 * computed on ln r and the widths of the columns.
 */
#include "reference_out.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/analysis_stats.h"
#include "arrank/text.h"
#include "rank_out.h"
#include "textfit.h"

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

/* "  " then s padded to w terminal columns (a CJK character takes two;
   printf's %-*s counts bytes) */
static void put_cell(FILE *f, const char *s, int w)
{
    fputs("  ", f);
    fputs(s, f);
    for (size_t c = arrank_textfit_width(s, strlen(s)); (int)c < w; c++)
        fputc(' ', f);
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
    put_cell(f, name, w);
    fprintf(f, "  %-*s  %-9s  %s\n", rw, ratio, pb, ea);
}

/* The reference per campaign, its drift and the test of equality. */
static void campaigns(const arrank_analysis *a, int whole, FILE *f)
{
    const struct arrank_reference_stats *rs = a->reference;
    if (rs->n_campaigns < 2)
        return;
    fprintf(f, "the reference's rate at T per campaign [%s]:", a->campaign->rate_unit);
    for (size_t k = 0; k < rs->n_campaigns; k++) {
        const arrank_reference_campaign *rc = &rs->campaigns[k];
        char name[4 * 256 + 8];
        if (whole)
            arrank_text_escape(rc->campaign, name, sizeof name);
        else
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
        if ((int)arrank_textfit_width(name, strlen(name)) > w)
            w = (int)arrank_textfit_width(name, strlen(name));
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
    campaigns(a, 0, f);
    if (ferror(f))
        return arrank_errorf(err, ARRANK_EIO, "write failed");
    return ARRANK_OK;
}

/* ---- on a terminal ------------------------------------------------------- */

enum { R_ID, R_RATIO, R_PB, R_EA, R_COLS };

#define ID_MIN 10   /* the id column narrows down to this, its ids wrapping */
#define CELL_MIN 12 /* and any other column down to this */

/* The cells of one row (the id escaped and whole, not cut). */
static int term_cells(const arrank_result *res, char *cell[R_COLS])
{
    const struct arrank_sample_stats *ss = res->stats;
    const char *id = res->sample->id ? res->sample->id : "";
    size_t n = 4 * strlen(id) + 1;
    cell[R_ID] = malloc(n);
    cell[R_RATIO] = malloc(96);
    cell[R_PB] = malloc(32);
    cell[R_EA] = malloc(96);
    if (!cell[R_ID] || !cell[R_RATIO] || !cell[R_PB] || !cell[R_EA])
        return 0;
    arrank_text_escape(id, cell[R_ID], n);
    ratio_text(ss, cell[R_RATIO], 96);
    strcpy(cell[R_PB], "-");
    strcpy(cell[R_EA], "-");
    if (!ss->is_reference) {
        if (isfinite(ss->p_better))
            snprintf(cell[R_PB], 32, "%.3f", ss->p_better);
        if (isfinite(ss->ea_diff.est))
            snprintf(cell[R_EA], 96, "%+.1f [%+.1f, %+.1f]", ss->ea_diff.est / 1e3,
                     ss->ea_diff.lo / 1e3, ss->ea_diff.hi / 1e3);
    }
    return 1;
}

/* The rows in the table's order: ranked samples in rank order, then the
   others in file order.  A new array (free), NULL when out of memory. */
static const arrank_result **term_order(const arrank_analysis *a, size_t *n)
{
    const arrank_result **rows = malloc((a->n_results ? a->n_results : 1) * sizeof *rows);
    *n = 0;
    for (size_t k = 0; rows && k < a->n_ranked; k++) {
        const arrank_result *res = &a->results[a->order[k]];
        if (res->stats && res->stats->has_reference)
            rows[(*n)++] = res;
    }
    for (size_t i = 0; rows && i < a->n_results; i++) {
        const arrank_result *res = &a->results[i];
        if (res->rank == 0 && res->stats && res->stats->has_reference)
            rows[(*n)++] = res;
    }
    return rows;
}

/* Text written by campaigns() or the heading into memory, reflowed onto f. */
static int term_prose(const arrank_analysis *a, int heading, size_t width, FILE *f)
{
    char *text = NULL;
    size_t len = 0;
    FILE *m = open_memstream(&text, &len);
    if (!m)
        return 0;
    if (heading) {
        const char *id = a->reference->id ? a->reference->id : "";
        char *ref = malloc(4 * strlen(id) + 1);
        if (ref)
            arrank_text_escape(id, ref, 4 * strlen(id) + 1);
        fprintf(m, "against the reference %s (%g%% intervals; Welch degrees of freedom):\n",
                ref ? ref : "", 100.0 * a->options.confidence);
        free(ref);
    } else {
        campaigns(a, 1, m);
    }
    int ok = fclose(m) == 0;
    if (ok)
        arrank_textfit_reflow(f, text, width);
    free(text);
    return ok;
}

arrank_status arrank_reference_table_write_term(const arrank_analysis *a, size_t width,
                                                int colour, FILE *f, arrank_error *err)
{
    if (!a->reference)
        return ARRANK_OK;
    if (width == 0) /* no limit: the block as piped */
        return arrank_reference_table_write(a, f, err);
    size_t n = 0;
    const arrank_result **res = term_order(a, &n);
    char *(*cells)[R_COLS] = calloc(n ? n : 1, sizeof *cells);
    arrank_status st = ARRANK_OK;
    if (!res || !cells) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        goto done;
    }
    size_t cell_w[R_COLS] = {0};
    for (size_t k = 0; k < n; k++) {
        if (!term_cells(res[k], cells[k])) {
            st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            goto done;
        }
        for (int c = 0; c < R_COLS; c++) {
            size_t w = arrank_textfit_width(cells[k][c], strlen(cells[k][c]));
            cell_w[c] = w > cell_w[c] ? w : cell_w[c];
        }
    }
    arrank_textfit_grid g = {.n = R_COLS, .fill = -1, .width = width, .indent = 2,
                             .colour = colour,
                             .head = {"sample", "rate / reference's", "P(better)",
                                      "Ea - reference's [kJ/mol]"},
                             .words = {"sample", "ratio", "P(better)", "Ea difference"},
                             .present = {1, 1, 1, 1}};
    /* kept first: the id and the ratio; left out first: the Ea difference */
    static const int priority[R_COLS] = {R_ID, R_RATIO, R_PB, R_EA};
    arrank_textfit_layout(&g, cell_w, priority, R_COLS, 2, R_ID, ID_MIN, CELL_MIN);
    fputc('\n', f);
    if (!term_prose(a, 1, width, f)) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        goto done;
    }
    arrank_textfit_heads(f, &g);
    for (size_t k = 0; k < n; k++)
        arrank_textfit_row(f, &g, (const char *const *)cells[k], NULL, NULL, 0, NULL);
    arrank_textfit_left_out(f, &g);
    if (!term_prose(a, 0, width, f))
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    else if (ferror(f))
        st = arrank_errorf(err, ARRANK_EIO, "write failed");
done:
    for (size_t k = 0; cells && k < n; k++)
        for (int c = 0; c < R_COLS; c++)
            free(cells[k][c]);
    free(cells);
    free(res);
    return st;
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
