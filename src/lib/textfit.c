/*
 * textfit.c - text and tables fitted to a terminal's width (textfit.h;
 * README "The table on a terminal").  The writers for people on a terminal
 * (rank's and fit's table, the reference's block, compare's table, a plan's
 * table, check's report) share this: widths counted in terminal columns (a
 * CJK character two; the escaped ids are UTF-8), lines broken at spaces and
 * never ending in spaces, prose reflowed, columns left out in a stated order
 * of priority and said so, cells wrapped rather than cut.  Nothing here
 * knows what the columns hold.
 */
#include "textfit.h"

#include <stdlib.h>
#include <string.h>

#include "arrank/text.h"

#define SPAN_MIN 20 /* a row's spanning text wraps at no less than this */
#define SGR_RESET "\033[0m"

/* ---- text ---------------------------------------------------------------- */

size_t arrank_textfit_width(const char *s, size_t len)
{
    return arrank_text_columns(s, len);
}

size_t arrank_textfit_chunk(const char **rest, size_t width, int at_commas)
{
    const char *s = *rest;
    size_t len = strlen(s);
    if (width == 0 || arrank_textfit_width(s, len) <= width) {
        *rest = s + len;
        return len;
    }
    size_t i = 0, n = 0, cut = 0;
    while (s[i] && n <= width) { /* a space just past width still breaks the line */
        if (s[i] == ' ' && i > 0 && (!at_commas || s[i - 1] == ','))
            cut = i;
        if (n == width)
            break;
        size_t next = i + 1;
        while (((unsigned char)s[next] & 0xC0) == 0x80)
            next++;
        size_t w = arrank_text_columns(s + i, next - i); /* 2 for a CJK character */
        if (n + w > width && i > 0)
            break; /* a wide character that does not fit starts the next line */
        i = next;
        n += w;
    }
    size_t end = cut ? cut : i;
    size_t next = end;
    while (s[next] == ' ')
        next++;
    *rest = s + next;
    return end;
}

/* 0, or -1 when out of memory (the rest of text is not written). */
static int reflow_with(FILE *f, const char *text, size_t width, int at_commas, size_t hang)
{
    while (*text) {
        size_t len = strcspn(text, "\n");
        char *line = malloc(len + 1);
        if (!line)
            return -1;
        memcpy(line, text, len);
        line[len] = '\0';
        text += len + (text[len] == '\n');
        const char *rest = line;
        size_t indent = strspn(line, " ") + hang;
        if (width && indent > width / 2)
            indent = width / 2;
        size_t w = width;
        do {
            const char *s = rest;
            size_t n = arrank_textfit_chunk(&rest, w, at_commas);
            fwrite(s, 1, n, f);
            fputc('\n', f);
            if (*rest)
                fprintf(f, "%*s", (int)indent, "");
            w = width ? width - indent : 0;
        } while (*rest);
        free(line);
    }
    return 0;
}

void arrank_textfit_reflow(FILE *f, const char *text, size_t width)
{
    (void)reflow_with(f, text, width, 0, 0);
}

void arrank_textfit_reflow_list(FILE *f, const char *text, size_t width)
{
    (void)reflow_with(f, text, width, 1, 0);
}

int arrank_textfit_write(FILE *f, const char *text, size_t width, size_t hang)
{
    if (width == 0)
        return fputs(text, f) < 0 ? -1 : 0;
    return reflow_with(f, text, width, 0, hang) != 0 || ferror(f) ? -1 : 0;
}

/* ---- layout -------------------------------------------------------------- */

/* The widest word of a head: the least width it wraps into. */
static size_t longest_word(const char *s)
{
    size_t best = 0;
    while (*s) {
        size_t len = strcspn(s, " ");
        size_t w = arrank_textfit_width(s, len);
        best = w > best ? w : best;
        s += len;
        while (*s == ' ')
            s++;
    }
    return best;
}

/* The line without the fill column's cells: the other shown columns and the
   two spaces between each two shown columns. */
static size_t fixed_width(const arrank_textfit_grid *g)
{
    size_t w = g->indent, k = 0;
    for (int c = 0; c < g->n; c++)
        if (g->shown[c]) {
            k++;
            if (c != g->fill)
                w += g->w[c];
        }
    return w + (k ? 2 * (k - 1) : 0);
}

static size_t fill_least(const arrank_textfit_grid *g)
{
    if (g->fill < 0 || !g->shown[g->fill])
        return 0;
    return g->fill_need < g->fill_min ? g->fill_need : g->fill_min;
}

size_t arrank_textfit_line(const arrank_textfit_grid *g)
{
    return fixed_width(g) + fill_least(g);
}

int arrank_textfit_fits(const arrank_textfit_grid *g)
{
    return g->width == 0 || arrank_textfit_line(g) <= g->width;
}

void arrank_textfit_compact(arrank_textfit_grid *g, const size_t *cell_w, const int *list, int n,
                            int n_keep, int narrow, size_t narrow_max, size_t narrow_min,
                            size_t cell_min)
{
    for (int c = 0; c < g->n; c++) {
        size_t head_w = longest_word(g->head[c] ? g->head[c] : "");
        g->w[c] = cell_w[c] > head_w ? cell_w[c] : head_w;
    }
    if (narrow >= 0 && narrow_max && g->w[narrow] > narrow_max)
        g->w[narrow] = narrow_max;
    for (int k = n - 1; k >= n_keep && !arrank_textfit_fits(g); k--)
        g->shown[list[k]] = 0;
    if (narrow >= 0 && g->shown[narrow] && !arrank_textfit_fits(g)) {
        size_t over = arrank_textfit_line(g) - g->width;
        size_t least = g->w[narrow] < narrow_min ? g->w[narrow] : narrow_min;
        g->w[narrow] = g->w[narrow] - over > least && over < g->w[narrow] ? g->w[narrow] - over
                                                                          : least;
    }
    /* Cells too wide for any room (a huge number): the widest columns give,
       down to cell_min, and their cells wrap. */
    while (!arrank_textfit_fits(g)) {
        int widest = -1;
        for (int c = 0; c < g->n; c++)
            if (c != g->fill && g->shown[c] && g->w[c] > cell_min &&
                (widest < 0 || g->w[c] > g->w[widest]))
                widest = c;
        if (widest < 0)
            break;
        size_t over = arrank_textfit_line(g) - g->width;
        g->w[widest] = g->w[widest] - cell_min > over ? g->w[widest] - over : cell_min;
    }
}

void arrank_textfit_settle(arrank_textfit_grid *g)
{
    if (g->fill < 0)
        return;
    size_t fixed = fixed_width(g);
    g->w[g->fill] = g->fill_need;
    if (g->width && fixed + g->fill_need > g->width)
        g->w[g->fill] = g->width > fixed + g->fill_min ? g->width - fixed : g->fill_min;
}

void arrank_textfit_layout(arrank_textfit_grid *g, const size_t *cell_w, const int *list, int n,
                           int n_keep, int narrow, size_t narrow_min, size_t cell_min)
{
    for (int c = 0; c < g->n; c++) {
        size_t head_w = arrank_textfit_width(g->head[c] ? g->head[c] : "",
                                             strlen(g->head[c] ? g->head[c] : ""));
        g->shown[c] = g->present[c];
        g->w[c] = cell_w[c] > head_w ? cell_w[c] : head_w;
    }
    if (g->fill >= 0 && g->fill_need < g->w[g->fill])
        g->fill_need = g->w[g->fill];
    if (!arrank_textfit_fits(g) ||
        (g->width && fixed_width(g) + g->fill_need > g->width))
        arrank_textfit_compact(g, cell_w, list, n, n_keep, narrow, ARRANK_TEXTFIT_ID_MAX,
                               narrow_min, cell_min);
    arrank_textfit_settle(g);
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

/* Text of len bytes in column c, aligned as the column is. */
static void put_cell(line_out *o, const arrank_textfit_grid *g, int c, const char *s,
                     size_t len, const char *sgr)
{
    size_t tw = arrank_textfit_width(s, len), pad = tw < g->w[c] ? g->w[c] - tw : 0;
    if (g->right[c])
        o->pending += pad;
    put_text(o, s, len, sgr);
    if (!g->right[c])
        o->pending += pad;
}

void arrank_textfit_heads(FILE *f, const arrank_textfit_grid *g)
{
    size_t lines[ARRANK_TEXTFIT_COLS] = {0}, n_lines = 1;
    const char *rest[ARRANK_TEXTFIT_COLS];
    for (int c = 0; c < g->n; c++) {
        rest[c] = g->head[c] ? g->head[c] : "";
        if (!g->shown[c])
            continue;
        const char *r = rest[c];
        for (lines[c] = 0; *r; lines[c]++)
            arrank_textfit_chunk(&r, g->w[c], 0);
        n_lines = lines[c] > n_lines ? lines[c] : n_lines;
    }
    for (size_t j = 0; j < n_lines; j++) {
        line_out o = {f, g->indent, 0};
        int first = 1;
        for (int c = 0; c < g->n; c++) {
            if (!g->shown[c])
                continue;
            o.pending += first ? 0 : 2;
            first = 0;
            const char *s = rest[c];
            size_t len = j + lines[c] >= n_lines ? arrank_textfit_chunk(&rest[c], g->w[c], 0) : 0;
            put_cell(&o, g, c, s, len, NULL);
        }
        fputc('\n', f);
    }
}

/* The spanning text's next piece at column at of the line. */
static int put_span(line_out *o, const arrank_textfit_grid *g, size_t at, const char **span,
                    const char *sgr)
{
    size_t room = g->width > at + 2 + SPAN_MIN ? g->width - at - 2 : 0;
    if (g->width && room == 0)
        room = SPAN_MIN;
    o->pending += 2;
    const char *s = *span;
    put_text(o, s, arrank_textfit_chunk(span, room, 0), sgr);
    return **span != '\0';
}

void arrank_textfit_row(FILE *f, const arrank_textfit_grid *g, const char *const *cells,
                        const char *const *sgr, const char *span, int span_from,
                        const char *span_sgr)
{
    const char *rest[ARRANK_TEXTFIT_COLS];
    int more = 1;
    for (int c = 0; c < g->n; c++)
        rest[c] = cells[c] ? cells[c] : "";
    for (int line = 0; more; line++) {
        line_out o = {f, g->indent, g->colour};
        int first = 1, spanned = 0;
        size_t at = g->indent; /* columns written so far, for the span */
        more = 0;
        for (int c = 0; c < g->n; c++) {
            if (!g->shown[c])
                continue;
            if (span && c >= span_from) { /* the span takes the rest of the line */
                more |= put_span(&o, g, at, &span, span_sgr);
                spanned = 1;
                break;
            }
            o.pending += first ? 0 : 2;
            at += first ? g->w[c] : g->w[c] + 2;
            first = 0;
            const char *s = rest[c];
            size_t len = arrank_textfit_chunk(&rest[c], g->w[c], g->at_commas[c]);
            more |= *rest[c] != '\0';
            put_cell(&o, g, c, s, len, sgr ? sgr[c] : NULL);
        }
        if (span && !spanned) /* every column after the span's start left out */
            more |= put_span(&o, g, at, &span, span_sgr);
        fputc('\n', f);
    }
}

void arrank_textfit_left_out(FILE *f, const arrank_textfit_grid *g)
{
    char buf[512];
    size_t n = 0, count = 0;
    for (int c = 0; c < g->n; c++)
        count += g->present[c] && !g->shown[c];
    if (!count)
        return;
    n += (size_t)snprintf(buf, sizeof buf, "(left out to fit %zu columns: ", g->width);
    size_t k = 0;
    for (int c = 0; c < g->n && n < sizeof buf; c++)
        if (g->present[c] && !g->shown[c])
            n += (size_t)snprintf(buf + n, sizeof buf - n, "%s%s", k++ == 0 ? "" : ", ",
                                  g->words[c]);
    if (n < sizeof buf)
        snprintf(buf + n, sizeof buf - n, "; --wide shows every column)\n");
    arrank_textfit_reflow(f, buf, g->width);
}
