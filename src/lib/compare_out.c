/*
 * compare_out.c - `compare` as a table for people, JSON and CSV
 * (arrank/compare.h).  The numbers are the pipeline's (analysis_compare.c);
 * the writers only print them.
 */
#include "arrank/compare_out.h"

#include <jansson.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/cautions.h"
#include "arrank/text.h"
#include "arrank/version.h"
#include "files.h"
#include "number.h"
#include "textfit.h"

/* Text from a file, escaped and whole: a new string, NULL when out of memory. */
static char *escaped(const char *text)
{
    size_t n = 4 * strlen(text ? text : "") + 1;
    char *s = malloc(n);
    if (s)
        arrank_text_escape(text ? text : "", s, n);
    return s;
}

/* The piped table: every id and name escaped and whole (scripts read it),
   the id column as wide as its widest id in terminal columns (textfit.c). */
static void put_padded(FILE *f, const char *text, size_t width)
{
    fputs(text, f);
    for (size_t w = arrank_textfit_width(text, strlen(text)); w < width; w++)
        fputc(' ', f);
}

/* Percent change of a ratio, "+12 %" or "-30 %". */
static void percent(double ratio, char *buf, size_t n)
{
    snprintf(buf, n, "%+.0f %%", 100.0 * (ratio - 1.0));
}

static int table_row(const arrank_compare_row *r, size_t w, FILE *f)
{
    char *name = escaped(r->id);
    if (!name)
        return -1;
    put_padded(f, name, w);
    free(name);
    if (!r->compared) {
        if (isfinite(r->ratio_measured)) /* the reference: its rates as measured */
            fprintf(f, "  %-10.3g  %-10.3g  %-24.3g %-7s  not compared: %s\n", r->rate_a,
                    r->rate_b, r->ratio_measured, "", r->why_not);
        else
            fprintf(f, "  not compared: %s\n", r->why_not);
        return 0;
    }
    char ratio[96], change[32], ea[96];
    snprintf(ratio, sizeof ratio, "%.3g [%.3g, %.3g]", r->ratio, r->ratio_lo, r->ratio_hi);
    percent(r->ratio, change, sizeof change);
    snprintf(ea, sizeof ea, "%+.1f [%+.1f, %+.1f]", r->ea.est / 1e3, r->ea.lo / 1e3,
             r->ea.hi / 1e3);
    fprintf(f, "  %-10.3g  %-10.3g  %-24s %-7s  %-9s  %-24s %s\n", r->rate_a, r->rate_b, ratio,
            change, r->changed ? "changed" : "-", ea, r->ea_changed ? "changed" : "-");
    return 0;
}

static int unmatched_line(const char *campaign, const char *const *ids, size_t n, FILE *f)
{
    if (!n)
        return 0;
    char *name = escaped(campaign);
    if (!name)
        return -1;
    fprintf(f, "only in %s:", name);
    free(name);
    for (size_t i = 0; i < n; i++) {
        char *id = escaped(ids[i]);
        if (!id)
            return -1;
        fprintf(f, "%s %s", i ? "," : "", id);
        free(id);
    }
    fputc('\n', f);
    return 0;
}

static arrank_status write_table(const arrank_comparison *c, FILE *f)
{
    const arrank_campaign *A = c->a->campaign, *B = c->b->campaign;
    char *na = escaped(A->name), *nb = escaped(B->name), *unit = escaped(A->rate_unit);
    char *ref = c->reference ? escaped(c->reference) : NULL;
    int bad = !na || !nb || !unit || (c->reference && !ref);
    if (!bad) {
        fprintf(f, "compare '%s' (A) with '%s' (B): %zu sample%s in both, %g%% intervals\n", na,
                nb, c->n_rows, c->n_rows == 1 ? "" : "s", 100.0 * c->confidence);
        fprintf(f, "operating temperature %.2f K (%.2f degC); rates in %s\n", c->temp_K,
                c->temp_K - 273.15, unit);
        if (ref)
            fprintf(f, "B / A: each rate first taken relative to its own campaign's reference "
                       "%s (the rig's drift corrected); rate A and rate B as measured\n", ref);
        fputc('\n', f);
    }
    free(na);
    free(nb);
    free(unit);
    free(ref);
    size_t w = 6;
    for (size_t i = 0; i < c->n_rows && !bad; i++) {
        char *name = escaped(c->rows[i].id);
        bad = !name;
        size_t nw = name ? arrank_textfit_width(name, strlen(name)) : 0;
        w = nw > w ? nw : w;
        free(name);
    }
    if (bad)
        return ARRANK_ENOMEM;
    put_padded(f, "sample", w);
    fprintf(f, "  %-10s  %-10s  %-24s %-7s  %-9s  %-24s %s\n", "rate A", "rate B", "B / A",
            "change", "verdict", "Ea B - A [kJ/mol]", "verdict");
    for (size_t i = 0; i < c->n_rows && !bad; i++)
        bad = table_row(&c->rows[i], w, f) != 0;
    if (bad)
        return ARRANK_ENOMEM;
    fprintf(f, "\n%zu of %zu compared sample%s changed in rate at T, %zu in Ea (two-sided tests, "
               "Holm's correction across the %zu samples, %g%%)\n",
            c->n_changed, c->n_tests, c->n_tests == 1 ? "" : "s", c->n_ea_changed, c->n_tests,
            100.0 * (1.0 - c->confidence));
    if (unmatched_line(A->name, c->only_a, c->n_only_a, f) != 0 ||
        unmatched_line(B->name, c->only_b, c->n_only_b, f) != 0)
        return ARRANK_ENOMEM;
    fprintf(f, "\nCaution: %s.\n", ARRANK_CAUTION_APPARENT);
    return ferror(f) ? ARRANK_EIO : ARRANK_OK;
}

static json_t *num(double x)
{
    return isfinite(x) ? json_real(x) : json_null();
}

static json_t *pair(double lo, double hi, double scale)
{
    if (!isfinite(lo) || !isfinite(hi))
        return json_null();
    return json_pack("[o, o]", num(lo * scale), num(hi * scale));
}

static json_t *ids_json(const char *const *ids, size_t n)
{
    json_t *arr = json_array();
    for (size_t i = 0; arr && i < n; i++)
        json_array_append_new(arr, json_string(ids[i]));
    return arr;
}

static json_t *row_json(const arrank_compare_row *r)
{
    json_t *o = json_object();
    if (!o)
        return NULL;
    json_object_set_new(o, "id", json_string(r->id));
    json_object_set_new(o, "compared", json_boolean(r->compared));
    json_object_set_new(o, "why_not", r->why_not ? json_string(r->why_not) : json_null());
    json_object_set_new(o, "rate_at_T_a", num(r->rate_a));
    json_object_set_new(o, "rate_at_T_b", num(r->rate_b));
    json_object_set_new(o, "ratio", num(r->ratio));
    json_object_set_new(o, "ratio_ci", pair(r->ratio_lo, r->ratio_hi, 1.0));
    json_object_set_new(o, "ratio_dof", num(r->ln_ratio.dof));
    json_object_set_new(o, "ratio_measured", num(r->ratio_measured));
    json_object_set_new(o, "p", num(r->ln_ratio.p));
    json_object_set_new(o, "p_holm", num(r->p_holm));
    json_object_set_new(o, "changed", r->compared ? json_boolean(r->changed) : json_null());
    json_object_set_new(o, "ea_change_kJ_mol", num(r->ea.est / 1e3));
    json_object_set_new(o, "ea_change_kJ_mol_ci", pair(r->ea.lo, r->ea.hi, 1e-3));
    json_object_set_new(o, "ea_change_dof", num(r->ea.dof));
    json_object_set_new(o, "ea_p", num(r->ea.p));
    json_object_set_new(o, "ea_p_holm", num(r->ea_p_holm));
    json_object_set_new(o, "ea_changed", r->compared ? json_boolean(r->ea_changed)
                                                     : json_null());
    return o;
}

static arrank_status write_json(const arrank_comparison *c, FILE *f, arrank_error *err)
{
    json_t *root = json_object();
    if (!root)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    json_object_set_new(root, "program", json_string("arrank"));
    json_object_set_new(root, "version", json_string(ARRANK_VERSION));
    json_object_set_new(root, "campaign_a", json_string(c->a->campaign->name));
    json_object_set_new(root, "campaign_b", json_string(c->b->campaign->name));
    json_object_set_new(root, "operating_temperature_K", num(c->temp_K));
    json_object_set_new(root, "rate_unit", json_string(c->a->campaign->rate_unit));
    json_object_set_new(root, "confidence", num(c->confidence));
    json_object_set_new(root, "reference", c->reference ? json_string(c->reference)
                                                        : json_null());
    json_object_set_new(root, "holm_tests", json_integer((json_int_t)c->n_tests));
    json_object_set_new(root, "test",
                        json_string("two-sided Welch t tests of ln r_B(T) - ln r_A(T) and of "
                                    "Ea_B - Ea_A, Holm's correction across the compared "
                                    "samples, each quantity its own family"));
    json_t *rows = json_array();
    for (size_t i = 0; rows && i < c->n_rows; i++)
        json_array_append_new(rows, row_json(&c->rows[i]));
    json_object_set_new(root, "samples", rows);
    json_t *un = ids_json(c->only_a, c->n_only_a), *un_b = ids_json(c->only_b, c->n_only_b);
    json_array_extend(un, un_b); /* copies: un_b is still ours */
    json_decref(un_b);
    json_object_set_new(root, "unmatched", un);
    json_object_set_new(root, "unmatched_a", ids_json(c->only_a, c->n_only_a));
    json_object_set_new(root, "unmatched_b", ids_json(c->only_b, c->n_only_b));
    json_object_set_new(root, "cautions", json_pack("[s]", ARRANK_CAUTION_APPARENT));
    int bad = json_dumpf(root, f, JSON_INDENT(2) | JSON_REAL_PRECISION(15) |
                                      JSON_PRESERVE_ORDER) != 0;
    json_decref(root);
    bad |= fputc('\n', f) == EOF;
    return bad || ferror(f) ? arrank_errorf(err, ARRANK_EIO, "write failed") : ARRANK_OK;
}

static arrank_status write_csv(const arrank_comparison *c, FILE *f, arrank_error *err)
{
    arrank_csv_row *row = malloc(sizeof *row);
    if (!row)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    row->f = f;
    row->n = 0;
    fprintf(f, "# caution: %s\n", ARRANK_CAUTION_APPARENT);
    const char *u = c->a->campaign->rate_unit;
    char h[2][200];
    snprintf(h[0], sizeof h[0], "rate_at_T_a [%s]", u);
    snprintf(h[1], sizeof h[1], "rate_at_T_b [%s]", u);
    const char *cols[] = {"id", "compared", "why_not", h[0], h[1], "ratio", "ratio_ci_low",
                          "ratio_ci_high", "ratio_measured", "p", "p_holm", "changed", "ea_change [kJ/mol]",
                          "ea_change_ci_low [kJ/mol]", "ea_change_ci_high [kJ/mol]", "ea_p",
                          "ea_p_holm", "ea_changed", "T_op [K]", "confidence"};
    const size_t nc = sizeof cols / sizeof *cols;
    for (size_t i = 0; i < nc; i++)
        arrank_files_csv_field(row, cols[i], i + 1 == nc);
    for (size_t i = 0; i < c->n_rows; i++) {
        const arrank_compare_row *r = &c->rows[i];
        arrank_files_csv_field(row, r->id, 0);
        arrank_files_csv_field(row, r->compared ? "1" : "0", 0);
        arrank_files_csv_field(row, r->why_not ? r->why_not : "", 0);
        const double v[] = {r->rate_a, r->rate_b,     r->ratio,         r->ratio_lo,
                            r->ratio_hi, r->ratio_measured, r->ln_ratio.p, r->p_holm};
        for (size_t k = 0; k < sizeof v / sizeof *v; k++)
            arrank_files_csv_num(row, v[k], 0);
        arrank_files_csv_field(row, !r->compared ? "" : r->changed ? "1" : "0", 0);
        const double e[] = {r->ea.est / 1e3, r->ea.lo / 1e3, r->ea.hi / 1e3, r->ea.p,
                            r->ea_p_holm};
        for (size_t k = 0; k < sizeof e / sizeof *e; k++)
            arrank_files_csv_num(row, e[k], 0);
        arrank_files_csv_field(row, !r->compared ? "" : r->ea_changed ? "1" : "0", 0);
        arrank_files_csv_num(row, c->temp_K, 0);
        arrank_files_csv_num(row, c->confidence, 1);
    }
    arrank_files_csv_flush(row);
    free(row);
    return ferror(f) ? arrank_errorf(err, ARRANK_EIO, "write failed") : ARRANK_OK;
}

/* ---- on a terminal ------------------------------------------------------- */

enum { K_ID, K_RA, K_RB, K_RATIO, K_CHG, K_VERD, K_EA, K_EVERD, K_COLS };

#define ID_MIN 10   /* the id column narrows down to this, its ids wrapping */
#define CELL_MIN 12 /* and any other column down to this */

typedef struct {
    char cell[K_COLS][96];
    char *id, *span; /* escaped, whole; span: "not compared: why" */
} term_row;

static int term_row_of(const arrank_compare_row *r, term_row *t)
{
    memset(t, 0, sizeof *t);
    if (!(t->id = escaped(r->id)))
        return 0;
    snprintf(t->cell[K_RA], 96, "%.3g", r->rate_a);
    snprintf(t->cell[K_RB], 96, "%.3g", r->rate_b);
    if (!r->compared) {
        if (isfinite(r->ratio_measured)) /* the reference: its rates as measured */
            snprintf(t->cell[K_RATIO], 96, "%.3g", r->ratio_measured);
        else
            t->cell[K_RA][0] = t->cell[K_RB][0] = '\0';
        char *why = escaped(r->why_not);
        size_t n = why ? strlen(why) + 32 : 0;
        if (why && (t->span = malloc(n)))
            snprintf(t->span, n, "not compared: %s", why);
        free(why);
        return t->span != NULL;
    }
    snprintf(t->cell[K_RATIO], 96, "%.3g [%.3g, %.3g]", r->ratio, r->ratio_lo, r->ratio_hi);
    percent(r->ratio, t->cell[K_CHG], 96);
    snprintf(t->cell[K_VERD], 96, "%s", r->changed ? "changed" : "-");
    snprintf(t->cell[K_EA], 96, "%+.1f [%+.1f, %+.1f]", r->ea.est / 1e3, r->ea.lo / 1e3,
             r->ea.hi / 1e3);
    snprintf(t->cell[K_EVERD], 96, "%s", r->ea_changed ? "changed" : "-");
    return 1;
}

/* The lines above the table (0), below it (1) or the unmatched ids (2),
   written into memory and reflowed onto f. */
static int term_prose(const arrank_comparison *c, int part, size_t width, FILE *f)
{
    char *text = NULL, *na = escaped(c->a->campaign->name), *nb = escaped(c->b->campaign->name);
    char *unit = escaped(c->a->campaign->rate_unit), *ref = escaped(c->reference);
    size_t len = 0;
    FILE *m = na && nb && unit && ref ? open_memstream(&text, &len) : NULL;
    if (m && part == 0) {
        fprintf(m, "compare '%s' (A) with '%s' (B): %zu sample%s in both, %g%% intervals\n", na,
                nb, c->n_rows, c->n_rows == 1 ? "" : "s", 100.0 * c->confidence);
        fprintf(m, "operating temperature %.2f K (%.2f degC); rates in %s\n", c->temp_K,
                c->temp_K - 273.15, unit);
        if (c->reference)
            fprintf(m, "B / A: each rate first taken relative to its own campaign's reference "
                       "%s (the rig's drift corrected); rate A and rate B as measured\n", ref);
    } else if (m && part == 1) {
        fprintf(m, "%zu of %zu compared sample%s changed in rate at T, %zu in Ea (two-sided "
                   "tests, Holm's correction across the %zu samples, %g%%)\n",
                c->n_changed, c->n_tests, c->n_tests == 1 ? "" : "s", c->n_ea_changed,
                c->n_tests, 100.0 * (1.0 - c->confidence));
    } else if (m) {
        for (int side = 0; side < 2; side++) {
            const char *const *ids = side ? c->only_b : c->only_a;
            size_t n = side ? c->n_only_b : c->n_only_a;
            if (n)
                fprintf(m, "only in %s:", side ? nb : na);
            for (size_t i = 0; i < n; i++) {
                char *id = escaped(ids[i]);
                fprintf(m, "%s %s", i ? "," : "", id ? id : "");
                free(id);
            }
            if (n)
                fputc('\n', m);
        }
    }
    int ok = m && fclose(m) == 0;
    if (ok)
        (part == 2 ? arrank_textfit_reflow_list : arrank_textfit_reflow)(f, text, width);
    free(text);
    free(na);
    free(nb);
    free(unit);
    free(ref);
    return ok;
}

static void term_grid(const arrank_comparison *c, const term_row *rows, arrank_textfit_grid *g)
{
    size_t cell_w[K_COLS] = {0};
    for (size_t i = 0; i < c->n_rows; i++)
        for (int k = 0; k < K_COLS; k++) {
            const char *s = k == K_ID ? rows[i].id : rows[i].cell[k];
            size_t w = arrank_textfit_width(s, strlen(s));
            cell_w[k] = w > cell_w[k] ? w : cell_w[k];
        }
    static const char *const head[K_COLS] = {"sample", "rate A", "rate B", "B / A", "change",
                                             "verdict", "Ea B - A [kJ/mol]", "verdict"};
    static const char *const words[K_COLS] = {"sample", "rate A",  "rate B", "B / A",
                                              "change", "verdict", "Ea B - A", "Ea verdict"};
    for (int k = 0; k < K_COLS; k++) {
        g->head[k] = head[k];
        g->words[k] = words[k];
        g->present[k] = 1;
    }
    /* kept first: the id, the ratio and its verdict; left out first: rate B */
    static const int priority[K_COLS] = {K_ID,  K_RATIO, K_VERD, K_EA,
                                         K_EVERD, K_CHG, K_RA,   K_RB};
    arrank_textfit_layout(g, cell_w, priority, K_COLS, 3, K_ID, ID_MIN, CELL_MIN);
}

static arrank_status write_table_term(const arrank_comparison *c, size_t width, int colour,
                                      FILE *f, arrank_error *err)
{
    term_row *rows = calloc(c->n_rows ? c->n_rows : 1, sizeof *rows);
    arrank_status st = rows ? ARRANK_OK : ARRANK_ENOMEM;
    for (size_t i = 0; st == ARRANK_OK && i < c->n_rows; i++)
        if (!term_row_of(&c->rows[i], &rows[i]))
            st = ARRANK_ENOMEM;
    arrank_textfit_grid g = {.n = K_COLS, .fill = -1, .width = width, .colour = colour};
    if (st == ARRANK_OK) {
        term_grid(c, rows, &g);
        if (!term_prose(c, 0, width, f))
            st = ARRANK_ENOMEM;
    }
    if (st == ARRANK_OK) {
        fputc('\n', f);
        arrank_textfit_heads(f, &g);
        for (size_t i = 0; i < c->n_rows; i++) {
            const char *cells[K_COLS], *sgr[K_COLS] = {0};
            for (int k = 0; k < K_COLS; k++)
                cells[k] = k == K_ID ? rows[i].id : rows[i].cell[k];
            sgr[K_VERD] = c->rows[i].compared && c->rows[i].changed ? ARRANK_SGR_FLAGS : NULL;
            sgr[K_EVERD] = c->rows[i].compared && c->rows[i].ea_changed ? ARRANK_SGR_FLAGS : NULL;
            int from = isfinite(c->rows[i].ratio_measured) ? K_CHG : K_RA;
            arrank_textfit_row(f, &g, cells, sgr, rows[i].span, from, ARRANK_SGR_ERROR);
        }
        arrank_textfit_left_out(f, &g);
        fputc('\n', f);
        if (!term_prose(c, 1, width, f) || !term_prose(c, 2, width, f))
            st = ARRANK_ENOMEM;
    }
    if (st == ARRANK_OK) {
        fputc('\n', f);
        char caution[512];
        snprintf(caution, sizeof caution, "Caution: %s.\n", ARRANK_CAUTION_APPARENT);
        arrank_textfit_reflow(f, caution, width);
    }
    for (size_t i = 0; rows && i < c->n_rows; i++) {
        free(rows[i].id);
        free(rows[i].span);
    }
    free(rows);
    if (st == ARRANK_OK && ferror(f))
        st = ARRANK_EIO;
    return st == ARRANK_OK ? st
                           : arrank_errorf(err, st, st == ARRANK_EIO ? "write failed"
                                                                     : "out of memory");
}

arrank_status arrank_compare_write_term(const arrank_comparison *c,
                                        const arrank_table_options *options, FILE *f,
                                        arrank_error *err)
{
    if (!options || options->width == 0) /* no limit: the table as piped */
        return arrank_compare_write(c, ARRANK_COMPARE_TABLE, f, err);
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = write_table_term(c, options->width, options->colour != 0, f, err);
    arrank_numbers_c_leave(&env);
    return st;
}

/* ---- the report page ------------------------------------------------------ */

static void html_ids(FILE *f, const char *campaign, const char *const *ids, size_t n)
{
    if (!n)
        return;
    fputs("<p>Only in <code>", f);
    arrank_text_html(f, campaign);
    fputs("</code>: ", f);
    for (size_t i = 0; i < n; i++) {
        fputs(i ? ", " : "", f);
        arrank_text_html(f, ids[i]);
    }
    fputs(".</p>\n", f);
}

static void html_row(const arrank_compare_row *r, FILE *f)
{
    fputs("<tr><td>", f);
    arrank_text_html(f, r->id);
    fprintf(f, "</td><td>%.3g</td><td>%.3g</td>", r->rate_a, r->rate_b);
    if (!r->compared) {
        fputs("<td colspan=\"4\">not compared: ", f);
        arrank_text_html(f, r->why_not);
        fputs("</td></tr>\n", f);
        return;
    }
    fprintf(f, "<td>%.3g [%.3g, %.3g]</td><td>%s</td><td>%+.1f [%+.1f, %+.1f]</td><td>%s</td>"
               "</tr>\n",
            r->ratio, r->ratio_lo, r->ratio_hi, r->changed ? "<strong>changed</strong>" : "-",
            r->ea.est / 1e3, r->ea.lo / 1e3, r->ea.hi / 1e3,
            r->ea_changed ? "<strong>changed</strong>" : "-");
}

/* The paired figure, inline: the SVG file's text from its <svg element on. */
static void inline_svg(FILE *f, const char *svg_path)
{
    FILE *in = svg_path ? fopen(svg_path, "r") : NULL;
    if (!in)
        return;
    char buf[8192];
    size_t n;
    int started = 0;
    fputs("<figure>", f);
    while ((n = fread(buf, 1, sizeof buf - 1, in)) > 0) {
        buf[n] = '\0';
        const char *from = buf;
        if (!started) {
            const char *at = strstr(buf, "<svg");
            if (!at)
                continue; /* the XML declaration and doctype, before it */
            from = at;
            started = 1;
        }
        fwrite(from, 1, n - (size_t)(from - buf), f);
    }
    fclose(in);
    fputs("<figcaption>One line per sample from its rate at T in A to its rate in B, both "
          "intervals; heavy with filled marks: changed after Holm's correction; thin and "
          "open: no change shown.</figcaption></figure>\n", f);
}

static arrank_status write_html(const arrank_comparison *c, const char *svg_path, FILE *f,
                                arrank_error *err)
{
    const arrank_campaign *A = c->a->campaign, *B = c->b->campaign;
    fputs("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>",
          f);
    arrank_text_html(f, A->name);
    fputs(" and ", f);
    arrank_text_html(f, B->name);
    fputs(" compared &ndash; arrank</title>\n<style>body{font-family:sans-serif;max-width:"
          "60em;margin:2em auto}table{border-collapse:collapse}td,th{padding:.2em .6em;"
          "border-bottom:1px solid #ddd;text-align:left}svg{max-width:100%;height:auto}"
          ".caution{border:1px solid #b00;padding:.5em}</style>\n</head>\n<body>\n"
          "<h1>Comparison of two campaigns</h1>\n<p>A: <code>", f);
    arrank_text_html(f, A->name);
    fputs("</code>, B: <code>", f);
    arrank_text_html(f, B->name);
    fprintf(f, "</code>; rates at %.2f K in ", c->temp_K);
    arrank_text_html(f, A->rate_unit);
    fprintf(f, "; %g %% intervals (independent fits, Welch degrees of freedom); verdicts "
               "after Holm's correction across the %zu compared samples.", 100 * c->confidence,
            c->n_tests);
    if (c->reference) {
        fputs(" B/A: each rate first taken relative to its own campaign's reference <code>", f);
        arrank_text_html(f, c->reference);
        fputs("</code>.", f);
    }
    fprintf(f, "</p>\n<p class=\"caution\">Caution: %s.</p>\n", ARRANK_CAUTION_APPARENT);
    fputs("<table>\n<tr><th>sample</th><th>rate A</th><th>rate B</th><th>B / A</th>"
          "<th>verdict</th><th>Ea B &minus; A [kJ/mol]</th><th>verdict</th></tr>\n", f);
    for (size_t i = 0; i < c->n_rows; i++)
        html_row(&c->rows[i], f);
    fputs("</table>\n", f);
    html_ids(f, A->name, c->only_a, c->n_only_a);
    html_ids(f, B->name, c->only_b, c->n_only_b);
    inline_svg(f, svg_path);
    fputs("</body>\n</html>\n", f);
    return ferror(f) ? arrank_errorf(err, ARRANK_EIO, "write failed") : ARRANK_OK;
}

arrank_status arrank_compare_html_write(const arrank_comparison *c, const char *svg_path,
                                        FILE *f, arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = write_html(c, svg_path, f, err);
    arrank_numbers_c_leave(&env);
    return st;
}

arrank_status arrank_compare_write(const arrank_comparison *c, arrank_compare_format format,
                                   FILE *f, arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st;
    switch (format) {
    case ARRANK_COMPARE_JSON: st = write_json(c, f, err); break;
    case ARRANK_COMPARE_CSV: st = write_csv(c, f, err); break;
    case ARRANK_COMPARE_TABLE:
        st = write_table(c, f);
        if (st != ARRANK_OK)
            st = arrank_errorf(err, st, "write failed");
        break;
    default: st = arrank_errorf(err, ARRANK_EINVAL, "unknown format %d", (int)format);
    }
    arrank_numbers_c_leave(&env);
    return st;
}
