/*
 * plan_out.c - a plan for the lab (arrank/plan_out.h): the table, the run
 * sheet and the JSON.  The numbers are the plan's; nothing is computed here.
 */
#include <errno.h>
#include <jansson.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/cautions.h"
#include "arrank/plan_out.h"
#include "arrank/text.h"
#include "files.h"
#include "number.h"
#include "textfit.h"

#define ZERO_C_K 273.15 /* 0 degC in K, exact by definition of the Celsius scale */

/* The plan's own caution (README "Planning"), one line. */
static const char plan_caution[] =
    "planned temperatures near the reactor's limit, exotherms and hot spots, flammable or "
    "toxic feeds: check each run against the rig's rules; the plan supports and does not "
    "replace qualified judgement and local rules";

static const char *goal_name(arrank_plan_goal g)
{
    return g == ARRANK_GOAL_PRECISION ? "precision"
           : g == ARRANK_GOAL_CURVATURE ? "curvature"
                                        : "separate";
}

static const char *sample_id(const arrank_analysis *a, size_t result)
{
    const arrank_sample *s = a->results[result].sample;
    return s && s->id ? s->id : "";
}

static arrank_status stream_status(FILE *f, arrank_error *err)
{
    if (fflush(f) != 0 || ferror(f))
        return arrank_errorf(err, ARRANK_EIO, "cannot write the plan: %s", strerror(errno));
    return ARRANK_OK;
}

/* ---- table -------------------------------------------------------------- */

static void put_goal(FILE *f, const arrank_plan *p, char sep)
{
    if (p->goal == ARRANK_GOAL_SEPARATE)
        fprintf(f, "goal: tell the leader apart from every other sample of its group at "
                   "%.2f K (%.2f degC) (Holm, %g%%), or its P(best) at %g\n",
                p->temp_K, p->temp_K - ZERO_C_K, 100.0 * p->confidence, p->target);
    else if (p->goal == ARRANK_GOAL_PRECISION)
        fprintf(f, "goal: every sample's %g%% interval of the rate at %.2f K (%.2f degC) "
                   "within +-%g%%\n",
                100.0 * p->confidence, p->temp_K, p->temp_K - ZERO_C_K, 100.0 * p->width);
    else
        fprintf(f, "goal: for every sample, a bend of the Arrhenius plot (the apparent Ea falling "
                   "by %g kJ/mol across its allowed window) detected by the quadratic test at "
                   "level %g\n",
                p->bend_J_mol / 1e3, p->level);
    fprintf(f, "budget: %zu new runs; candidates every %g K from the operating temperature, at "
               "most %g K outside each sample's kinetic window,%cnever at or above its coldest "
               "point that is transport-limited or left out hotter than the window, and never "
               "above%cthe stated maximum temperature %.2f K (%.2f degC)\n\n",
            p->budget, p->step_K, p->reach_K, sep, sep, p->max_temp_K, p->max_temp_K - ZERO_C_K);
}

/* The temperatures of one sample's runs, "543.15 K x6, 548.15 K x2" ("-"
   when none), into buf of n bytes (512 hold 12 temperatures; a longer list
   ends in "..."). */
static void temps_text(const arrank_plan *p, size_t result, char *buf, size_t n)
{
    size_t used = 0;
    buf[0] = '\0';
    for (size_t k = 0; k < p->n_runs; k++) {
        if (p->runs[k].sample != result)
            continue;
        if (used + 40 > n) {
            snprintf(buf + used, n - used, ", ...");
            return;
        }
        used += (size_t)snprintf(buf + used, n - used, "%s%.2f K x%zu", used ? ", " : "",
                                 p->runs[k].temp_K, p->runs[k].repeats);
    }
    if (!used)
        snprintf(buf, n, "-");
}

/* Text padded to width columns of the terminal (textfit.c). */
static void put_padded(FILE *f, const char *text, size_t width)
{
    size_t w = arrank_textfit_width(text, strlen(text));
    fputs(text, f);
    for (; w < width; w++)
        fputc(' ', f);
}

/* The rows, each column at least as wide as its widest cell (ids and
   temperature lists of any length stay aligned). */
static void put_rows(FILE *f, const arrank_analysis *a, const arrank_plan *p)
{
    const char *unit = a->campaign && a->campaign->rate_unit ? a->campaign->rate_unit : "";
    size_t id_w = 26, temps_w = 36; /* at least, as the table has always been */
    char id[256], temps[512];
    for (size_t j = 0; j < p->n_entries; j++) {
        const arrank_plan_entry *e = &p->entries[j];
        arrank_text_escape(sample_id(a, e->result), id, sizeof id);
        temps_text(p, e->result, temps, sizeof temps);
        size_t w = arrank_textfit_width(id, strlen(id)), t = strlen(temps);
        id_w = w > id_w ? w : id_w;
        temps_w = t > temps_w ? t : temps_w;
    }
    put_padded(f, "sample", id_w);
    fprintf(f, "  %4s  ", "runs");
    put_padded(f, "temperatures", temps_w);
    fprintf(f, "  rate at %.2f K [%s], %g%% interval: now -> expected\n", p->temp_K, unit,
            100.0 * p->confidence);
    for (size_t j = 0; j < p->n_entries; j++) {
        const arrank_plan_entry *e = &p->entries[j];
        arrank_text_escape(sample_id(a, e->result), id, sizeof id);
        temps_text(p, e->result, temps, sizeof temps);
        put_padded(f, id, id_w);
        fprintf(f, "  %4zu  ", e->runs);
        put_padded(f, temps, temps_w);
        fprintf(f, "  [%.3g, %.3g] -> [%.3g, %.3g]", e->rate_ci_before[0], e->rate_ci_before[1],
                e->rate_ci_expected[0], e->rate_ci_expected[1]);
        if (e->n_candidates == 0)
            fputs("  (no allowed temperature)", f);
        fputc('\n', f);
    }
}

static arrank_status put_footer(FILE *f, const arrank_analysis *a, const arrank_plan *p,
                                arrank_error *err);

static arrank_status table_in_c(const arrank_analysis *a, const arrank_plan *p, FILE *f,
                                arrank_error *err)
{
    char title[256];
    arrank_text_escape(a->campaign && a->campaign->title ? a->campaign->title : "", title,
                       sizeof title);
    fprintf(f, "plan for campaign '%s' (goal %s)\n", title, goal_name(p->goal));
    put_goal(f, p, '\n');
    put_rows(f, a, p);
    fputc('\n', f);
    return put_footer(f, a, p, err);
}

/* The lines under the rows: the probabilities and the cautions. */
static arrank_status put_footer(FILE *f, const arrank_analysis *a, const arrank_plan *p,
                                arrank_error *err)
{
    size_t planned = 0, naive = 0;
    for (size_t k = 0; k < p->n_runs; k++)
        planned += p->runs[k].repeats;
    for (size_t k = 0; k < p->n_naive; k++)
        naive += p->naive[k].repeats;
    if (p->met_now)
        fputs("the goal is met already: no new run is needed for it\n\n", f);
    else {
        if (planned == 0)
            fputs("no run can be planned: no allowed candidate temperature (see the limit, the "
                  "windows and the reach above)\n", f);
        fprintf(f, "expected probability that the goal is met: %.3f (Monte Carlo se %.3f; "
                   "%zu simulations, seed %lu)\n",
                p->expected_probability, p->expected_probability_se, p->sims, p->seed);
        fprintf(f, "naive plan (%zu runs spread evenly at the current temperatures below the "
                   "limit): %.3f (se %.3f)\n\n",
                naive, p->naive_probability, p->naive_probability_se);
    }
    char **lines = NULL;
    size_t n = 0;
    arrank_status st = arrank_cautions_list(a, &lines, &n, err);
    if (st != ARRANK_OK)
        return st;
    for (size_t k = 0; k < n; k++)
        fprintf(f, "Caution: %s.\n", lines[k]);
    arrank_cautions_free(lines, n);
    fprintf(f, "Caution: %s.\n", plan_caution);
    return ARRANK_OK;
}

arrank_status arrank_plan_out_table(const arrank_analysis *a, const arrank_plan *p, FILE *f,
                                    arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = table_in_c(a, p, f, err);
    if (st == ARRANK_OK)
        st = stream_status(f, err);
    arrank_numbers_c_leave(&env);
    return st;
}

/* ---- table on a terminal ------------------------------------------------ */

enum { P_ID, P_RUNS, P_TEMPS, P_RATE, P_COLS };

#define ID_MIN 10    /* the id column narrows down to this, its ids wrapping */
#define TEMPS_MIN 14 /* the temperatures wrap at no less than this ("543.15 K x13,") */
#define CELL_MIN 12  /* and any other column down to this */

/* One row's cells (new strings; the id escaped, whole).  0: out of memory. */
static int term_cells(const arrank_analysis *a, const arrank_plan *p,
                      const arrank_plan_entry *e, char *cell[P_COLS])
{
    const char *id = sample_id(a, e->result);
    size_t n = 4 * strlen(id) + 1;
    char *temps = NULL;
    size_t len = 0;
    FILE *m = open_memstream(&temps, &len);
    size_t listed = 0;
    if (m) {
        for (size_t k = 0; k < p->n_runs; k++)
            if (p->runs[k].sample == e->result)
                fprintf(m, "%s%.2f K x%zu", listed++ ? ", " : "", p->runs[k].temp_K,
                        p->runs[k].repeats);
        if (fclose(m) != 0) {
            free(temps);
            temps = NULL;
        }
    }
    if (temps && listed == 0) { /* no run for this sample: "-", as piped */
        free(temps);
        temps = strdup("-");
    }
    cell[P_TEMPS] = temps;
    cell[P_ID] = malloc(n);
    cell[P_RUNS] = malloc(32);
    cell[P_RATE] = malloc(160);
    if (!cell[P_ID] || !cell[P_RUNS] || !cell[P_RATE] || !cell[P_TEMPS])
        return 0;
    arrank_text_escape(id, cell[P_ID], n);
    snprintf(cell[P_RUNS], 32, "%zu", e->runs);
    snprintf(cell[P_RATE], 160, "[%.3g, %.3g] -> [%.3g, %.3g]%s", e->rate_ci_before[0],
             e->rate_ci_before[1], e->rate_ci_expected[0], e->rate_ci_expected[1],
             e->n_candidates == 0 ? " (no allowed temperature)" : "");
    return 1;
}

/* Text written by put_goal (0) or put_footer (1) into memory, reflowed onto f. */
static arrank_status term_prose(const arrank_analysis *a, const arrank_plan *p, int part,
                                size_t width, FILE *f, arrank_error *err)
{
    char *text = NULL;
    size_t len = 0;
    FILE *m = open_memstream(&text, &len);
    if (!m)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    arrank_status st = ARRANK_OK;
    if (part == 0) {
        char title[256];
        arrank_text_escape(a->campaign && a->campaign->title ? a->campaign->title : "", title,
                           sizeof title);
        fprintf(m, "plan for campaign '%s' (goal %s)\n", title, goal_name(p->goal));
        put_goal(m, p, ' ');
    } else {
        st = put_footer(m, a, p, err);
    }
    if (fclose(m) != 0 && st == ARRANK_OK)
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    if (st == ARRANK_OK)
        arrank_textfit_reflow(f, text, width);
    free(text);
    return st;
}

static void term_grid(const arrank_analysis *a, const arrank_plan *p, char *(*cells)[P_COLS],
                      arrank_textfit_grid *g, char *rate_head, size_t n)
{
    const char *unit = a->campaign && a->campaign->rate_unit ? a->campaign->rate_unit : "";
    snprintf(rate_head, n, "rate at %.2f K [%s], %g%% interval: now -> expected", p->temp_K,
             unit, 100.0 * p->confidence);
    size_t cell_w[P_COLS] = {0};
    for (size_t j = 0; j < p->n_entries; j++)
        for (int c = 0; c < P_COLS; c++) {
            size_t w = arrank_textfit_width(cells[j][c], strlen(cells[j][c]));
            cell_w[c] = w > cell_w[c] ? w : cell_w[c];
        }
    const char *const head[P_COLS] = {"sample", "runs", "temperatures", rate_head};
    static const char *const words[P_COLS] = {"sample", "runs", "temperatures",
                                              "rate at T now -> expected"};
    for (int c = 0; c < P_COLS; c++) {
        g->head[c] = head[c];
        g->words[c] = words[c];
        g->present[c] = 1;
    }
    g->right[P_RUNS] = 1;
    g->at_commas[P_TEMPS] = 1;
    g->fill = P_TEMPS;
    g->fill_min = TEMPS_MIN;
    g->fill_need = cell_w[P_TEMPS];
    /* kept: the id, the runs and their temperatures; left out first: the rates */
    static const int priority[P_COLS] = {P_ID, P_TEMPS, P_RUNS, P_RATE};
    arrank_textfit_layout(g, cell_w, priority, P_COLS, 3, P_ID, ID_MIN, CELL_MIN);
}

static arrank_status table_term_in_c(const arrank_analysis *a, const arrank_plan *p,
                                     size_t width, int colour, FILE *f, arrank_error *err)
{
    char *(*cells)[P_COLS] = calloc(p->n_entries ? p->n_entries : 1, sizeof *cells);
    arrank_status st = cells ? ARRANK_OK : ARRANK_ENOMEM;
    for (size_t j = 0; st == ARRANK_OK && j < p->n_entries; j++)
        if (!term_cells(a, p, &p->entries[j], cells[j]))
            st = ARRANK_ENOMEM;
    if (st != ARRANK_OK)
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    char rate_head[400];
    arrank_textfit_grid g = {.n = P_COLS, .width = width, .colour = colour};
    if (st == ARRANK_OK) {
        term_grid(a, p, cells, &g, rate_head, sizeof rate_head);
        st = term_prose(a, p, 0, width, f, err);
    }
    if (st == ARRANK_OK) {
        arrank_textfit_heads(f, &g);
        for (size_t j = 0; j < p->n_entries; j++)
            arrank_textfit_row(f, &g, (const char *const *)cells[j], NULL, NULL, 0, NULL);
        arrank_textfit_left_out(f, &g);
        fputc('\n', f);
        st = term_prose(a, p, 1, width, f, err);
    }
    for (size_t j = 0; cells && j < p->n_entries; j++)
        for (int c = 0; c < P_COLS; c++)
            free(cells[j][c]);
    free(cells);
    return st == ARRANK_OK ? stream_status(f, err) : st;
}

arrank_status arrank_plan_out_table_term(const arrank_analysis *a, const arrank_plan *p,
                                         const arrank_table_options *options, FILE *f,
                                         arrank_error *err)
{
    if (!options || options->width == 0) /* no limit: the table as piped */
        return arrank_plan_out_table(a, p, f, err);
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = table_term_in_c(a, p, options->width, options->colour != 0, f, err);
    arrank_numbers_c_leave(&env);
    return st;
}

/* ---- run sheet ---------------------------------------------------------- */

static _Thread_local const arrank_plan *sheet_plan;

static int cmp_sheet(const void *x, const void *y)
{
    const arrank_plan_run *a = &sheet_plan->runs[*(const size_t *)x];
    const arrank_plan_run *b = &sheet_plan->runs[*(const size_t *)y];
    if (a->temp_K != b->temp_K)
        return a->temp_K < b->temp_K ? -1 : 1;
    return *(const size_t *)x < *(const size_t *)y ? -1 : 1;
}

static arrank_status sheet_in_c(const arrank_analysis *a, const arrank_plan *p, FILE *f,
                                arrank_error *err)
{
    size_t *idx = malloc((p->n_runs ? p->n_runs : 1) * sizeof *idx);
    if (!idx)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    for (size_t k = 0; k < p->n_runs; k++)
        idx[k] = k;
    sheet_plan = p;
    qsort(idx, p->n_runs, sizeof *idx, cmp_sheet);
    fprintf(f, "# arrank plan, goal %s, %zu runs; maximum temperature %.2f K (%.2f degC)\n",
            goal_name(p->goal), p->budget, p->max_temp_K, p->max_temp_K - ZERO_C_K);
    fprintf(f, "# caution: %s\n", plan_caution);
    arrank_csv_row row = {.f = f, .n = 0};
    arrank_files_csv_field(&row, "order", 0);
    arrank_files_csv_field(&row, "sample", 0);
    arrank_files_csv_field(&row, "temperature [degC]", 0);
    arrank_files_csv_field(&row, "temperature [K]", 0);
    arrank_files_csv_field(&row, "repeats", 1);
    for (size_t k = 0; k < p->n_runs; k++) {
        const arrank_plan_run *r = &p->runs[idx[k]];
        arrank_files_csv_num(&row, (double)(k + 1), 0);
        arrank_files_csv_field(&row, sample_id(a, r->sample), 0);
        char t[64];
        snprintf(t, sizeof t, "%.2f", r->temp_K - ZERO_C_K);
        arrank_files_csv_field(&row, t, 0);
        snprintf(t, sizeof t, "%.2f", r->temp_K);
        arrank_files_csv_field(&row, t, 0);
        arrank_files_csv_num(&row, (double)r->repeats, 1);
    }
    arrank_files_csv_flush(&row);
    free(idx);
    return stream_status(f, err);
}

arrank_status arrank_plan_out_sheet(const arrank_analysis *a, const arrank_plan *p, FILE *f,
                                    arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = sheet_in_c(a, p, f, err);
    arrank_numbers_c_leave(&env);
    return st;
}

/* ---- JSON --------------------------------------------------------------- */

static json_t *real_or_null(double v)
{
    return isfinite(v) ? json_real(v) : json_null();
}

/* A string from a file: as it is, or escaped when it is not UTF-8 (which
   JSON cannot hold). */
static json_t *text_json(const char *t)
{
    json_t *j = json_string(t);
    if (!j) {
        char buf[1024];
        arrank_text_escape(t, buf, sizeof buf);
        j = json_string(buf);
    }
    return j ? j : json_null();
}

static json_t *runs_json(const arrank_analysis *a, const arrank_plan_run *runs, size_t n)
{
    json_t *arr = json_array();
    for (size_t k = 0; arr && k < n; k++) {
        json_t *o = json_object();
        json_object_set_new(o, "sample", text_json(sample_id(a, runs[k].sample)));
        json_object_set_new(o, "temperature_K", real_or_null(runs[k].temp_K));
        json_object_set_new(o, "repeats", json_integer((json_int_t)runs[k].repeats));
        json_array_append_new(arr, o);
    }
    return arr;
}

static json_t *pair(const double v[2])
{
    json_t *arr = json_array();
    json_array_append_new(arr, real_or_null(v[0]));
    json_array_append_new(arr, real_or_null(v[1]));
    return arr;
}

static json_t *plan_json(const arrank_analysis *a, const arrank_plan *p)
{
    json_t *root = json_object();
    json_object_set_new(root, "goal", json_string(goal_name(p->goal)));
    json_object_set_new(root, "budget", json_integer((json_int_t)p->budget));
    json_object_set_new(root, "operating_temperature_K", real_or_null(p->temp_K));
    json_object_set_new(root, "max_temperature_K", real_or_null(p->max_temp_K));
    json_object_set_new(root, "confidence", real_or_null(p->confidence));
    if (p->goal == ARRANK_GOAL_SEPARATE)
        json_object_set_new(root, "target", real_or_null(p->target));
    else if (p->goal == ARRANK_GOAL_PRECISION)
        json_object_set_new(root, "width", real_or_null(p->width));
    else {
        json_object_set_new(root, "bend_J_mol", real_or_null(p->bend_J_mol));
        json_object_set_new(root, "level", real_or_null(p->level));
    }
    json_object_set_new(root, "met_now", json_boolean(p->met_now));
    json_object_set_new(root, "runs", runs_json(a, p->runs, p->n_runs));
    json_object_set_new(root, "expected_probability", real_or_null(p->expected_probability));
    json_object_set_new(root, "expected_probability_se",
                        real_or_null(p->expected_probability_se));
    json_object_set_new(root, "naive_probability", real_or_null(p->naive_probability));
    json_object_set_new(root, "naive_probability_se", real_or_null(p->naive_probability_se));
    json_object_set_new(root, "naive_runs", runs_json(a, p->naive, p->n_naive));
    json_t *samples = json_array();
    for (size_t j = 0; j < p->n_entries; j++) {
        const arrank_plan_entry *e = &p->entries[j];
        json_t *o = json_object();
        json_object_set_new(o, "sample", text_json(sample_id(a, e->result)));
        json_object_set_new(o, "rate_at_T_ci_before", pair(e->rate_ci_before));
        json_object_set_new(o, "rate_at_T_ci_expected", pair(e->rate_ci_expected));
        json_object_set_new(o, "runs", json_integer((json_int_t)e->runs));
        json_array_append_new(samples, o);
    }
    json_object_set_new(root, "samples", samples);
    json_object_set_new(root, "simulations", json_integer((json_int_t)p->sims));
    json_object_set_new(root, "seed", json_integer((json_int_t)p->seed));
    return root;
}

static arrank_status json_in_c(const arrank_analysis *a, const arrank_plan *p, FILE *f,
                               arrank_error *err)
{
    json_t *root = plan_json(a, p);
    char **lines = NULL;
    size_t n = 0;
    arrank_status st = root ? arrank_cautions_list(a, &lines, &n, err)
                            : arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    if (st != ARRANK_OK) {
        json_decref(root);
        return st;
    }
    json_t *c = json_array();
    for (size_t k = 0; k < n; k++)
        json_array_append_new(c, json_string(lines[k]));
    json_array_append_new(c, json_string(plan_caution));
    arrank_cautions_free(lines, n);
    json_object_set_new(root, "cautions", c);
    int rc = json_dumpf(root, f, JSON_INDENT(2) | JSON_REAL_PRECISION(15) | JSON_PRESERVE_ORDER);
    json_decref(root);
    if (rc != 0)
        return arrank_errorf(err, ARRANK_EIO, "cannot write the plan's JSON");
    fputc('\n', f);
    return stream_status(f, err);
}

arrank_status arrank_plan_out_json(const arrank_analysis *a, const arrank_plan *p, FILE *f,
                                   arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = json_in_c(a, p, f, err);
    arrank_numbers_c_leave(&env);
    return st;
}
