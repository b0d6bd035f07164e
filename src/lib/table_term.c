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
 * counted in code points (the escaped ids are UTF-8).
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

#define NAME_MAX_W 28  /* the widest id column, as piped (table.c NAME_WIDTH_MAX) */
#define NAME_MIN 10    /* the id column narrows down to this before anything else gives */
#define FLAGS_MIN 16   /* the flags wrap at no less than this width (common flag names fit) */
#define CELL_MIN 12    /* and any other column down to this, its cells wrapping */
#define SPAN_MIN 20    /* a reason of a sample not fitted wraps at no less than this */
#define CELL_MAX 127   /* bytes of a cell, as the piped table cuts them */

#define SGR_FLAGS "\033[33m" /* yellow: the flags of a sample */
#define SGR_ERROR "\033[31m" /* red: why a sample was not fitted */
#define SGR_RESET "\033[0m"

typedef struct {
    char *cell[N_COLS]; /* each cell's text (new strings); the name escaped, whole */
    char *error;        /* "not fitted: reason" (escaped), NULL when fitted */
    int flagged;        /* 1 when the flags cell names flags (not "-") */
} term_row;

typedef struct {
    int present[N_COLS]; /* the column belongs to this table */
    int shown[N_COLS];   /* and is shown (not left out for the width) */
    size_t w[N_COLS];    /* width in columns */
    const char *head[N_COLS];
    size_t width;        /* the terminal's columns; 0: no limit */
    size_t flags_need;   /* the widest flags cell */
    int colour;
} term_layout;

/* ---- text ---------------------------------------------------------------- */

static size_t cps(const char *s, size_t len)
{
    size_t w = 0;
    for (size_t i = 0; i < len; i++)
        w += ((unsigned char)s[i] & 0xC0) != 0x80;
    return w;
}

/* The next line of *rest at most width code points wide: its length in bytes
   (broken after the last space that fits, else at width code points); *rest
   moves past it and the spaces after it. */
static size_t next_chunk(const char **rest, size_t width)
{
    const char *s = *rest;
    size_t len = strlen(s);
    if (width == 0 || cps(s, len) <= width) {
        *rest = s + len;
        return len;
    }
    size_t i = 0, n = 0, cut = 0;
    while (s[i] && n <= width) { /* a space just past width still breaks the line */
        if (s[i] == ' ' && i > 0)
            cut = i;
        if (n == width)
            break;
        i++;
        while (((unsigned char)s[i] & 0xC0) == 0x80)
            i++;
        n++;
    }
    size_t end = cut ? cut : i;
    size_t next = end;
    while (s[next] == ' ')
        next++;
    *rest = s + next;
    return end;
}

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

/* The widest word of a head: the least width it wraps into. */
static size_t longest_word(const char *s)
{
    size_t best = 0;
    while (*s) {
        size_t len = strcspn(s, " ");
        size_t w = cps(s, len);
        best = w > best ? w : best;
        s += len;
        while (*s == ' ')
            s++;
    }
    return best;
}

/* Columns of a line with every shown column but the flags, each followed by
   its two spaces. */
static size_t fixed_width(const term_layout *L)
{
    size_t w = 0;
    for (int c = 0; c < C_FLAGS; c++)
        if (L->shown[c])
            w += L->w[c] + 2;
    return w;
}

static int fits(const term_layout *L)
{
    size_t flags = L->flags_need < FLAGS_MIN ? L->flags_need : FLAGS_MIN;
    return L->width == 0 || fixed_width(L) + flags <= L->width;
}

/* The columns in order of priority, highest first; *n_essential of them are
   never left out.  Returns the count. */
static int priority(const arrank_analysis *a, const term_layout *L, int *list, int *n_essential)
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

/* The compact layout: widths from the cells, heads wrapped, columns left out
   from the end of the priority list, then the id column narrowed. */
static void compact(const arrank_analysis *a, term_layout *L, const size_t *cell_w)
{
    for (int c = 0; c < N_COLS; c++) {
        size_t head_w = longest_word(L->head[c]);
        L->w[c] = cell_w[c] > head_w ? cell_w[c] : head_w;
    }
    if (L->w[C_NAME] > NAME_MAX_W)
        L->w[C_NAME] = NAME_MAX_W;
    int list[N_COLS], n_essential;
    int n = priority(a, L, list, &n_essential);
    for (int k = n - 1; k >= n_essential && !fits(L); k--)
        L->shown[list[k]] = 0;
    if (!fits(L)) {
        size_t flags = L->flags_need < FLAGS_MIN ? L->flags_need : FLAGS_MIN;
        size_t over = fixed_width(L) + flags - L->width;
        size_t name_min = L->w[C_NAME] < NAME_MIN ? L->w[C_NAME] : NAME_MIN;
        L->w[C_NAME] = L->w[C_NAME] - over > name_min && over < L->w[C_NAME]
                           ? L->w[C_NAME] - over
                           : name_min;
    }
    /* Cells too wide for any room (a huge number): the widest columns give,
       down to CELL_MIN, and their cells wrap. */
    while (!fits(L)) {
        int widest = -1;
        for (int c = 0; c < C_FLAGS; c++)
            if (L->shown[c] && L->w[c] > CELL_MIN && (widest < 0 || L->w[c] > L->w[widest]))
                widest = c;
        if (widest < 0)
            break;
        size_t flags = L->flags_need < FLAGS_MIN ? L->flags_need : FLAGS_MIN;
        size_t over = fixed_width(L) + flags - L->width;
        L->w[widest] = L->w[widest] - CELL_MIN > over ? L->w[widest] - over : CELL_MIN;
    }
}

/* Widths for the rows: the piped ones when the piped table fits, else the
   compact layout. */
static void layout(const arrank_table_ctx *tc, term_layout *L, const term_row *rows,
                   size_t n_rows)
{
    const arrank_analysis *a = tc->a;
    size_t cell_w[N_COLS] = {0};
    for (size_t k = 0; k < n_rows; k++)
        for (int c = 0; c < N_COLS; c++)
            if (rows[k].cell[c]) {
                size_t w = cps(rows[k].cell[c], strlen(rows[k].cell[c]));
                cell_w[c] = w > cell_w[c] ? w : cell_w[c];
            }
    L->flags_need = cell_w[C_FLAGS] > 5 ? cell_w[C_FLAGS] : 5;
    const size_t piped[N_COLS] = {tc->w_rank, tc->w_pb,  tc->w_grp,  tc->name_w, tc->w_n,
                                  tc->w_dof,  tc->w_T,   tc->w_ea,   tc->w_lna,  tc->w_scat,
                                  tc->w_rate, tc->w_boot, 0};
    for (int c = 0; c < N_COLS; c++) {
        L->shown[c] = L->present[c];
        L->w[c] = piped[c];
    }
    if (!fits(L) || (L->width && fixed_width(L) + L->flags_need > L->width))
        compact(a, L, cell_w);
    size_t fixed = fixed_width(L);
    L->w[C_FLAGS] = L->flags_need;
    if (L->width && fixed + L->flags_need > L->width)
        L->w[C_FLAGS] = L->width > fixed + FLAGS_MIN ? L->width - fixed : FLAGS_MIN;
}

/* ---- lines --------------------------------------------------------------- */

/* One line being written: spaces are held back until text follows them, so
   no line ends in spaces. */
typedef struct {
    FILE *f;
    size_t pending;
    int colour;
} line_out;

static void put_text(line_out *o, const char *s, size_t len, const char *sgr)
{
    if (len == 0)
        return;
    for (; o->pending; o->pending--)
        fputc(' ', o->f);
    if (o->colour && sgr)
        fputs(sgr, o->f);
    fwrite(s, 1, len, o->f);
    if (o->colour && sgr)
        fputs(SGR_RESET, o->f);
}

/* Text of len bytes in a column of width w, aligned as the column is. */
static void put_cell(line_out *o, const term_layout *L, int c, const char *s, size_t len,
                     const char *sgr)
{
    size_t tw = cps(s, len), pad = tw < L->w[c] ? L->w[c] - tw : 0;
    if (col_info[c].right)
        o->pending += pad;
    put_text(o, s, len, sgr);
    if (!col_info[c].right)
        o->pending += pad;
}

/* The head lines: each head wrapped in its column, the last lines of all
   heads on the last line. */
static void write_heads(FILE *f, const term_layout *L)
{
    size_t lines[N_COLS] = {0}, n_lines = 1;
    for (int c = 0; c < N_COLS; c++) {
        if (!L->shown[c])
            continue;
        const char *rest = L->head[c];
        for (lines[c] = 0; *rest; lines[c]++)
            next_chunk(&rest, L->w[c]);
        n_lines = lines[c] > n_lines ? lines[c] : n_lines;
    }
    const char *rest[N_COLS];
    for (int c = 0; c < N_COLS; c++)
        rest[c] = L->head[c];
    for (size_t j = 0; j < n_lines; j++) {
        line_out o = {f, 0, 0};
        int first = 1;
        for (int c = 0; c < N_COLS; c++) {
            if (!L->shown[c])
                continue;
            o.pending += first ? 0 : 2;
            first = 0;
            const char *s = rest[c];
            size_t len = j + lines[c] >= n_lines ? next_chunk(&rest[c], L->w[c]) : 0;
            put_cell(&o, L, c, s, len, NULL);
        }
        fputc('\n', f);
    }
}

/* A row, on as many lines as its cells need: a cell wider than its column
   (an id, the flags, a reason, a number too wide for the room) wraps. */
static void write_row(FILE *f, const term_layout *L, const term_row *r)
{
    const char *rest[N_COLS], *error = r->error;
    int more = 1;
    for (int c = 0; c < N_COLS; c++)
        rest[c] = r->cell[c] ? r->cell[c] : "";
    for (int line = 0; more; line++) {
        line_out o = {f, 0, L->colour};
        int first = 1;
        size_t at = 0; /* columns written so far, for the reason's span */
        more = 0;
        for (int c = 0; c < N_COLS; c++) {
            if (!L->shown[c])
                continue;
            if (error && c > C_N) { /* the reason spans the rest of the line */
                size_t span = L->width > at + 2 + SPAN_MIN ? L->width - at - 2 : 0;
                if (L->width && span == 0)
                    span = SPAN_MIN;
                o.pending += 2;
                const char *s = error;
                put_text(&o, s, next_chunk(&error, span), SGR_ERROR);
                more |= *error != '\0';
                break;
            }
            o.pending += first ? 0 : 2;
            at += first ? L->w[c] : L->w[c] + 2;
            first = 0;
            const char *s = rest[c];
            size_t len = next_chunk(&rest[c], L->w[c]);
            more |= *rest[c] != '\0';
            put_cell(&o, L, c, s, len, c == C_FLAGS && r->flagged ? SGR_FLAGS : NULL);
        }
        fputc('\n', f);
    }
}

/* Text of several lines, each line longer than width wrapped at spaces,
   its continuation lines indented as the line is. */
static void write_reflowed(FILE *f, const char *text, size_t width)
{
    while (*text) {
        size_t len = strcspn(text, "\n");
        char *line = malloc(len + 1);
        if (!line)
            return;
        memcpy(line, text, len);
        line[len] = '\0';
        text += len + (text[len] == '\n');
        const char *rest = line;
        size_t indent = strspn(line, " ");
        if (width && indent > width / 2)
            indent = width / 2;
        size_t w = width;
        do {
            const char *s = rest;
            size_t n = next_chunk(&rest, w);
            fwrite(s, 1, n, f);
            fputc('\n', f);
            if (*rest)
                fprintf(f, "%*s", (int)indent, "");
            w = width ? width - indent : 0;
        } while (*rest);
        free(line);
    }
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
        write_reflowed(f, text, width);
    free(text);
    return st;
}

/* The line under the rows that names the columns left out. */
static void write_left_out(FILE *f, const term_layout *L)
{
    char buf[512];
    size_t n = 0, count = 0;
    for (int c = 0; c < N_COLS; c++)
        count += L->present[c] && !L->shown[c];
    if (!count)
        return;
    n += (size_t)snprintf(buf, sizeof buf, "(left out to fit %zu columns: ", L->width);
    size_t k = 0;
    for (int c = 0; c < N_COLS && n < sizeof buf; c++)
        if (L->present[c] && !L->shown[c])
            n += (size_t)snprintf(buf + n, sizeof buf - n, "%s%s", k++ == 0 ? "" : ", ",
                                  col_info[c].words);
    if (n < sizeof buf)
        snprintf(buf + n, sizeof buf - n, "; --wide shows every column)\n");
    write_reflowed(f, buf, L->width);
}

static void present_columns(const arrank_table_ctx *tc, term_layout *L)
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
    term_layout L = {.width = width, .colour = colour};
    present_columns(&tc, &L);
    layout(&tc, &L, rows, a->n_results);
    st = reflow(f, width, &tc, 0, 0, 0, err);
    if (st != ARRANK_OK)
        goto done;
    write_heads(f, &L);
    for (size_t k = 0; k < a->n_results; k++)
        write_row(f, &L, &rows[k]);
    write_left_out(f, &L);
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
