/*
 * table_term.c - the table fitted to a terminal's width (README "The
 * table on a terminal").  The program finds the width (the library never
 * looks at the terminal) and passes it here; the piped table (table.c) is
 * untouched by anything in this file.
 *
 * When the piped layout fits, it is kept as it is.  Otherwise the columns
 * take the width their cells need, long heads wrap onto two lines, and
 * columns are left out from the end of an order of priority until the table
 * fits: rank, sample id, the ranking key (the rate at T with its interval,
 * or Ea or ln A with --by), flags, group, P(best), Ea, n, T range, ln A, the
 * bootstrap interval (fit: id, Ea, rate at T, flags, ln A, scatter, n, dof,
 * T range).  Then the id column narrows, down to NAME_MIN columns.  Ids, flags and
 * the reasons of samples not fitted wrap onto more lines rather than being
 * cut.  A line under the rows names the columns left out.  Widths are
 * counted in terminal columns (the escaped ids are UTF-8; a CJK character
 * takes two, arrank_text_columns).
 * The grid itself (widths, wrapping, the line that names what was left
 * out, reflowed prose) is textfit.c's, shared with the other writers for a
 * terminal (the reference's block, compare's table, a plan's table).
 */
#include "table.h"
#include "table_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "arrank/analysis_stats.h"
#include "arrank/cautions.h"
#include "arrank/text.h"
#include "number.h"
#include "textfit.h"

enum { C_RANK, C_PB, C_GRP, C_NAME, C_N, C_DOF, C_T, C_EA, C_LNA, C_SCAT, C_RATE, C_BOOT,
       C_FLAGS, N_COLS };

/* How each column is named in the line that says what was left out, and
   whether its cells are right-aligned. */
static const struct {
    const char *words;
    int right;
} col_info[N_COLS] = {{"rank", 1},    {"P(best)", 1}, {"group", 1},      {"sample", 0},
                      {"n", 1},       {"dof", 1},     {"T range", 0},    {"Ea", 0},
                      {"ln A", 0},    {"scatter", 0}, {"rate at T", 0},  {"bootstrap interval", 0},
                      {"flags", 0}};

#define NAME_MAX_W ARRANK_TEXTFIT_ID_MAX /* the widest id column, as piped (table.c NAME_WIDTH_MAX) */
#define NAME_MIN 10    /* the id column narrows down to this before anything else gives */
#define FLAGS_MIN 16   /* the flags wrap at no less than this width (common flag names fit) */
#define CELL_MIN 12    /* and any other column down to this, its cells wrapping */
#define CELL_MAX 127   /* bytes of a cell, as the piped table cuts them */

typedef struct {
    char *cell[N_COLS]; /* each cell's text (new strings); the name escaped, whole */
    char *error;        /* "not fitted: reason" (escaped), NULL when fitted */
    int flagged;        /* 1 when the flags cell names flags (not "-") */
} term_row;

static char *dup_len(const char *s, size_t len)
{
    if (len > CELL_MAX)
        len = CELL_MAX;
    char *d = malloc(len + 1);
    if (d) {
        memcpy(d, s, len);
        d[len] = '\0';
    }
    return d;
}

/* ---- cells --------------------------------------------------------------- */

static char *fixed_cell(double v, int prec, int ok)
{
    char buf[64];
    int len = ok ? arrank_format_fixed(buf, sizeof buf, prec, v) : -1;
    if (len < 0 || (size_t)len >= sizeof buf)
        return dup_len("-", 1);
    return dup_len(buf, (size_t)len);
}

/* The cells of the rank, P(best), group and n columns. */
static int rank_cells(const arrank_analysis *a, const arrank_result *res, term_row *r)
{
    /* n of the points offered: with --run, of the run's (table.c) */
    const size_t offered = a->options.run ? res->n_offered : res->sample->n_points;
    const struct arrank_sample_stats *ss = res->rank ? res->stats : NULL;
    r->cell[C_RANK] = fixed_cell(res->rank, 0, res->rank > 0);
    r->cell[C_PB] = fixed_cell(ss ? ss->p_best : NAN, 3, ss && isfinite(ss->p_best));
    r->cell[C_GRP] = fixed_cell(ss ? ss->group : 0, 0, ss && ss->group > 0);
    char buf[64];
    if (res->error || res->fit.n >= offered)
        snprintf(buf, sizeof buf, "%zu", res->error ? res->sample->n_points : res->fit.n);
    else
        snprintf(buf, sizeof buf, "%zu/%zu", res->fit.n, offered);
    r->cell[C_N] = dup_len(buf, strlen(buf));
    return r->cell[C_RANK] && r->cell[C_PB] && r->cell[C_GRP] && r->cell[C_N];
}

/* The cells of a fitted sample, as the piped table writes them (table.c). */
static int fit_cells(const arrank_analysis *a, const arrank_result *res, term_row *r)
{
    const arrank_arrhenius *fit = &res->fit;
    const double t = res->t_quantile, ea = fit->ea_J_mol / 1e3, se = fit->ea_se_J_mol / 1e3;
    char buf[1024], *p;
    p = arrank_table_put_dof(buf, res);
    r->cell[C_DOF] = dup_len(buf, (size_t)(p - buf));
    snprintf(buf, sizeof buf, "%.0f-%.0f", fit->T_min_K, fit->T_max_K);
    r->cell[C_T] = dup_len(buf, strlen(buf));
    p = arrank_table_put_interval(buf, 1, ea, ea - t * se, ea + t * se);
    r->cell[C_EA] = dup_len(buf, (size_t)(p - buf));
    p = arrank_table_put_interval(buf, 2, fit->ln_A, fit->ln_A - t * fit->ln_A_se,
                                  fit->ln_A + t * fit->ln_A_se);
    r->cell[C_LNA] = dup_len(buf, (size_t)(p - buf));
    p = arrank_table_put_scatter(buf, res);
    r->cell[C_SCAT] = dup_len(buf, (size_t)(p - buf));
    p = arrank_table_put_rate(buf, res->at_T.rate);
    memcpy(p, " [", 2);
    p += 2;
    p = arrank_table_put_rate(p, res->at_T.rate_lo);
    memcpy(p, ", ", 2);
    p += 2;
    p = arrank_table_put_rate(p, res->at_T.rate_hi);
    *p++ = ']';
    r->cell[C_RATE] = dup_len(buf, (size_t)(p - buf));
    const struct arrank_sample_stats *ss = res->stats;
    p = buf;
    if (a->options.bootstrap > 0 && ss && ss->has_bootstrap) {
        *p++ = '[';
        p = arrank_table_put_rate(p, ss->rate_lo_boot);
        memcpy(p, ", ", 2);
    p += 2;
        p = arrank_table_put_rate(p, ss->rate_hi_boot);
        *p++ = ']';
    } else {
        *p++ = '-';
    }
    r->cell[C_BOOT] = dup_len(buf, (size_t)(p - buf));
    p = arrank_table_put_flags(res, buf);
    r->flagged = res->flags != 0;
    r->cell[C_FLAGS] = malloc((size_t)(p - buf) + 1); /* flags are never cut */
    if (r->cell[C_FLAGS]) {
        memcpy(r->cell[C_FLAGS], buf, (size_t)(p - buf));
        r->cell[C_FLAGS][p - buf] = '\0';
    }
    for (int c = C_DOF; c <= C_FLAGS; c++)
        if (!r->cell[c])
            return 0;
    return 1;
}

/* Row k (display order) of the table into r; 0 when out of memory. */
static int make_row(const arrank_table_ctx *tc, size_t k, term_row *r)
{
    const arrank_result *res = &tc->a->results[tc->order[k]];
    memset(r, 0, sizeof *r);
    const char *id = res->sample->id ? res->sample->id : "";
    size_t n = 4 * strlen(id) + 1;
    if (!(r->cell[C_NAME] = malloc(n)))
        return 0;
    arrank_text_escape(id, r->cell[C_NAME], n); /* text from a file: escaped (text.h) */
    if (!rank_cells(tc->a, res, r))
        return 0;
    if (res->error) {
        const char *lead = res->sample->skipped ? "file not used: " : "not fitted: ";
        size_t m = strlen(lead) + 4 * strlen(res->error) + 1;
        if (!(r->error = malloc(m)))
            return 0;
        strcpy(r->error, lead);
        arrank_text_escape(res->error, r->error + strlen(lead), m - strlen(lead));
        return 1;
    }
    return fit_cells(tc->a, res, r);
}

static void free_row(term_row *r)
{
    for (int c = 0; c < N_COLS; c++)
        free(r->cell[c]);
    free(r->error);
}

/* ---- layout -------------------------------------------------------------- */

/* The columns in order of priority, highest first; *n_essential of them are
   never left out.  Returns the count. */
static int priority(const arrank_analysis *a, const arrank_textfit_grid *L, int *list,
                    int *n_essential)
{
    const arrank_options *o = &a->options;
    /* rank: the ranking key; fit: Ea, and the rate at T when there is one */
    int key = L->present[C_RATE] ? C_RATE : C_EA, key2 = C_EA;
    if (o->rank && o->by == ARRANK_BY_EA)
        key = C_EA;
    else if (o->rank && o->by == ARRANK_BY_PREFACTOR)
        key = C_LNA;
    if (o->rank)
        key2 = key;
    static const int rank_rest[] = {C_GRP, C_PB, C_EA, C_N, C_T, C_LNA, C_RATE, C_BOOT};
    static const int fit_rest[] = {C_LNA, C_SCAT, C_N, C_DOF, C_T};
    const int head[] = {C_RANK, C_NAME, key2, key, C_FLAGS};
    int n = 0, seen[N_COLS] = {0};
    for (size_t k = 0; k < sizeof head / sizeof *head; k++)
        if (L->present[head[k]] && !seen[head[k]]) {
            seen[head[k]] = 1;
            list[n++] = head[k];
        }
    *n_essential = n;
    const int *rest = o->rank ? rank_rest : fit_rest;
    size_t n_rest = o->rank ? sizeof rank_rest / sizeof *rank_rest
                            : sizeof fit_rest / sizeof *fit_rest;
    for (size_t k = 0; k < n_rest; k++)
        if (L->present[rest[k]] && !seen[rest[k]]) {
            seen[rest[k]] = 1;
            list[n++] = rest[k];
        }
    return n;
}

/* Widths for the rows: the piped ones when the piped table fits, else the
   compact layout (textfit.c): columns left out from the end of the priority
   list, then the id column narrowed. */
static void layout(const arrank_table_ctx *tc, arrank_textfit_grid *L, const term_row *rows,
                   size_t n_rows)
{
    const arrank_analysis *a = tc->a;
    size_t cell_w[N_COLS] = {0};
    for (size_t k = 0; k < n_rows; k++)
        for (int c = 0; c < N_COLS; c++)
            if (rows[k].cell[c]) {
                size_t w = arrank_textfit_width(rows[k].cell[c], strlen(rows[k].cell[c]));
                cell_w[c] = w > cell_w[c] ? w : cell_w[c];
            }
    L->fill = C_FLAGS;
    L->fill_min = FLAGS_MIN;
    L->fill_need = cell_w[C_FLAGS] > 5 ? cell_w[C_FLAGS] : 5;
    const size_t piped[N_COLS] = {tc->w_rank, tc->w_pb,  tc->w_grp,  tc->name_w, tc->w_n,
                                  tc->w_dof,  tc->w_T,   tc->w_ea,   tc->w_lna,  tc->w_scat,
                                  tc->w_rate, tc->w_boot, 0};
    for (int c = 0; c < N_COLS; c++) {
        L->shown[c] = L->present[c];
        L->w[c] = piped[c];
    }
    size_t least = L->fill_need < FLAGS_MIN ? L->fill_need : FLAGS_MIN;
    if (!arrank_textfit_fits(L) ||
        (L->width && arrank_textfit_line(L) - least + L->fill_need > L->width)) {
        int list[N_COLS], n_essential;
        int n = priority(a, L, list, &n_essential);
        arrank_textfit_compact(L, cell_w, list, n, n_essential, C_NAME, NAME_MAX_W, NAME_MIN,
                               CELL_MIN);
    }
    arrank_textfit_settle(L);
}

/* ---- lines --------------------------------------------------------------- */

/* A row, on as many lines as its cells need: a cell wider than its column
   (an id, the flags, a reason, a number too wide for the room) wraps; the
   reason of a sample not fitted spans the columns after n. */
static void write_row(FILE *f, const arrank_textfit_grid *L, const term_row *r)
{
    const char *cells[N_COLS], *sgr[N_COLS] = {0};
    for (int c = 0; c < N_COLS; c++)
        cells[c] = r->cell[c];
    sgr[C_FLAGS] = r->flagged ? ARRANK_SGR_FLAGS : NULL;
    arrank_textfit_row(f, L, cells, sgr, r->error, C_N + 1, ARRANK_SGR_ERROR);
}


/* Text written by fn into memory, then reflowed onto f. */
static arrank_status reflow(FILE *f, size_t width, const arrank_table_ctx *tc, unsigned seen,
                            int any_error, int footer, arrank_error *err)
{
    char *text = NULL;
    size_t len = 0;
    FILE *m = open_memstream(&text, &len);
    if (!m)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    arrank_status st = ARRANK_OK;
    if (footer)
        st = arrank_table_footer(tc, m, seen, any_error, width && width < 96 ? width : 96, err);
    else
        arrank_table_intro(tc, m);
    if (fclose(m) != 0 && st == ARRANK_OK)
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    if (st == ARRANK_OK)
        arrank_textfit_reflow(f, text, width);
    free(text);
    return st;
}


static void present_columns(const arrank_table_ctx *tc, arrank_textfit_grid *L)
{
    const arrank_analysis *a = tc->a;
    int ranked = a->n_ranked > 0;
    const int on[N_COLS] = {ranked, ranked && tc->have_stats, ranked && tc->have_stats, 1, 1,
                            tc->fit_stats, 1, 1, 1, tc->fit_stats, tc->have_T,
                            tc->have_T && tc->have_stats && a->options.bootstrap > 0, 1};
    const char *const head[N_COLS] = {"rank", "P(best)", "group", "sample", "n", "dof",
                                      "T range [K]", "Ea [kJ/mol]", tc->lnA_head, "scatter",
                                      tc->rate_head, "bootstrap interval", "flags"};
    for (int c = 0; c < N_COLS; c++) {
        L->present[c] = on[c];
        L->head[c] = head[c];
        L->words[c] = col_info[c].words;
        L->right[c] = col_info[c].right;
    }
}

arrank_status arrank_table_write_term(const arrank_analysis *a, size_t width, int colour,
                                      FILE *f, arrank_error *err)
{
    size_t *order = arrank_table_order(a);
    term_row *rows = calloc(a->n_results ? a->n_results : 1, sizeof *rows);
    arrank_status st = ARRANK_OK;
    if (!order || !rows) {
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        goto done;
    }
    const arrank_table_ctx tc = arrank_table_layout(a, order);
    unsigned seen = 0;
    int any_error = 0;
    for (size_t k = 0; k < a->n_results; k++) {
        if (!make_row(&tc, k, &rows[k])) {
            st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            goto done;
        }
        seen |= a->results[order[k]].error ? 0 : a->results[order[k]].flags;
        any_error |= rows[k].error != NULL;
    }
    arrank_textfit_grid L = {.n = N_COLS, .width = width, .colour = colour};
    present_columns(&tc, &L);
    layout(&tc, &L, rows, a->n_results);
    st = reflow(f, width, &tc, 0, 0, 0, err);
    if (st != ARRANK_OK)
        goto done;
    arrank_textfit_heads(f, &L);
    for (size_t k = 0; k < a->n_results; k++)
        write_row(f, &L, &rows[k]);
    arrank_textfit_left_out(f, &L);
    st = reflow(f, width, &tc, seen, any_error, 1, err);
    if (st == ARRANK_OK && ferror(f))
        st = arrank_errorf(err, ARRANK_EIO, "write failed");
done:
    for (size_t k = 0; rows && k < a->n_results; k++)
        free_row(&rows[k]);
    free(rows);
    free(order);
    return st;
}
