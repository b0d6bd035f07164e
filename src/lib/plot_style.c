/*
 * plot_style.c - the house style of arrank's figures (DEVELOPERS.md
 * "Figures: the house style"): each sample's look, canvas sizes, open axes,
 * the reader's spelling of units and flags, and the SVG's own <title> and
 * font stack.  Every figure and the report take these from here.
 */
#include "plot_style.h"

#include <dirent.h>
#include <errno.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "arrank/text.h"
#include "plot_internal.h"
#include "util.h"

/* ---- looks -------------------------------------------------------------- */

/* Okabe & Ito, "Color Universal Design" (2002/2008), as reprinted by B. Wong,
   Nature Methods 8:441 (2011): colours told apart under the common colour
   vision deficiencies.  Yellow (#F0E442) vanishes on white in thin lines and
   is left out; black is kept for a reference catalyst. */
static const char *const palette[] = {"#0072B2", "#D55E00", "#009E73",
                                      "#CC79A7", "#E69F00", "#56B4E9"};
#define N_COLORS (sizeof palette / sizeof palette[0])
#define REFERENCE_COLOR "#000000"

/* The second channel: seven (shape, dash) styles.  gnuplot point types
   {filled, open}: circle 7/6, square 5/4, triangle 9/8, triangle down 11/10,
   diamond 13/12, pentagon 15/14, and the cross 2 whose open form is the plus
   1; the star 3 is the reference's.  Seven is prime to six colours, so
   colour i mod 6 and style i mod 7 repeat together only after 42 samples,
   and two samples below that differ in colour or in marker (and dash). */
static const struct {
    int filled, hollow;
    const char *shape;
    int dash;
} styles[] = {
    {7, 6, "circle", 0},        {5, 4, "square", 1},   {9, 8, "triangle", 2},
    {13, 12, "diamond", 3},     {11, 10, "triangle-down", 4},
    {15, 14, "pentagon", 5},    {2, 1, "cross", 6},
};
#define N_STYLES (sizeof styles / sizeof styles[0])

/* Dash patterns in gnuplot's notation (segment, gap, ... in units of the
   line width); 0 is solid. */
static const char *const dashes[] = {"solid",      "(10,5)",        "(2,4)", "(12,5,2,5)",
                                     "(22,7)",     "(12,4,2,4,2,4)", "(5,4)"};

arrank_plot_look arrank_plot_sample_look(size_t i, int reference)
{
    arrank_plot_look k;
    if (reference) {
        k.color = REFERENCE_COLOR;
        k.point_filled = 3;
        k.point_hollow = 3;
        k.shape = "star";
        k.dash = 0;
        k.line_width = 1.5;
        return k;
    }
    size_t s = i % N_STYLES;
    k.color = palette[i % N_COLORS];
    k.point_filled = styles[s].filled;
    k.point_hollow = styles[s].hollow;
    k.shape = styles[s].shape;
    k.dash = styles[s].dash;
    k.line_width = 1.0;
    return k;
}

const char *arrank_plot_dash(int dash)
{
    if (dash < 0 || (size_t)dash >= sizeof dashes / sizeof *dashes)
        return "solid";
    return dashes[dash];
}

const char *arrank_plot_color(size_t i)
{
    return arrank_plot_sample_look(i, 0).color;
}

int arrank_plot_point_type(size_t i, int hollow)
{
    arrank_plot_look k = arrank_plot_sample_look(i, 0);
    return hollow ? k.point_hollow : k.point_filled;
}

/* ---- sizes -------------------------------------------------------------- */

arrank_status arrank_plot_size(const char *text, int *width_px, int *height_px,
                               arrank_error *err)
{
    static const struct {
        const char *word;
        int w, h;
    } words[] = {{"slide", 1280, 720}, {"page", 960, 720}, {"square", 900, 900}};
    for (size_t k = 0; text && k < sizeof words / sizeof *words; k++)
        if (strcmp(text, words[k].word) == 0) {
            *width_px = words[k].w;
            *height_px = words[k].h;
            return ARRANK_OK;
        }
    char *end = NULL;
    long w = text ? strtol(text, &end, 10) : 0, h = 0;
    if (end && end != text && (*end == 'x' || *end == 'X')) {
        const char *hs = end + 1;
        h = strtol(hs, &end, 10);
        if (end == hs || *end)
            h = 0;
    }
    if (!(w >= 320 && w <= 4000 && h >= 320 && h <= 4000) || (text && text[0] == '+'))
        return arrank_errorf(err, ARRANK_EINVAL,
                             "size '%.40s' is not known; use slide, page, square or WxH in px "
                             "(320 to 4000 each)",
                             text ? text : "");
    *width_px = (int)w;
    *height_px = (int)h;
    return ARRANK_OK;
}

/* ---- text --------------------------------------------------------------- */

size_t arrank_plot_chars(const char *t)
{
    t = t ? t : "";
    return arrank_text_columns(t, strlen(t)); /* a CJK character counts two */
}

double arrank_plot_text_px(const char *text, double font_px)
{
    return (double)arrank_plot_chars(text) * ARRANK_CHAR_EM * font_px;
}

/* Superscript digits and minus (Unicode block "Superscripts and Subscripts"
   and Latin-1). */
static const char *const sup_digit[] = {"⁰", "¹", "²", "³", "⁴", "⁵", "⁶", "⁷", "⁸", "⁹"};

/* Append s to out[*len] within n (always terminated). */
static void app(char *out, size_t n, size_t *len, const char *s)
{
    if (*len >= n)
        return;
    size_t m = strlen(s);
    if (*len + m + 1 > n) { /* full: what fits, never half a character, then nothing */
        m = *len + 1 < n ? n - *len - 1 : 0;
        while (m > 0 && ((unsigned char)s[m] & 0xC0) == 0x80)
            m--;
        memcpy(out + *len, s, m);
        out[*len + m] = '\0';
        *len = n; /* no room for anything after */
        return;
    }
    memcpy(out + *len, s, m);
    *len += m;
    out[*len] = '\0';
}

/* One unit symbol as read: the micro prefix written 'u' becomes µ, degC °C. */
static void app_symbol(char *out, size_t n, size_t *len, const char *sym, size_t m)
{
    char buf[64];
    if (m >= sizeof buf)
        m = sizeof buf - 1;
    memcpy(buf, sym, m);
    buf[m] = '\0';
    if (strcmp(buf, "degC") == 0 || strcmp(buf, "Celsius") == 0) {
        app(out, n, len, "°C");
        return;
    }
    if (buf[0] == 'u' && m > 1 && strchr("mgslLhK", buf[1])) {
        app(out, n, len, "µ");
        app(out, n, len, buf + 1);
        return;
    }
    app(out, n, len, buf);
}

static void app_power(char *out, size_t n, size_t *len, long p)
{
    if (p == 1)
        return;
    char d[24];
    snprintf(d, sizeof d, "%ld", p < 0 ? -p : p);
    if (p < 0)
        app(out, n, len, "⁻");
    for (const char *c = d; *c; c++)
        app(out, n, len, sup_digit[*c - '0']);
}

/* Read the factors of a udunits-style product/quotient: symbols with an
   optional power (^-1, -1, 2), joined by '*', '.', ' ' or '/', with one level
   of parentheses after '/'.  Each factor goes to num or den in order.
   Returns 0 when the text is not of that form. */
typedef struct {
    const char *sym;
    size_t len;
    long power;
} factor;

static int read_factors(const char *u, factor *fs, size_t *nf, size_t max)
{
    int sign = 1, group = 0, next_div = 0;
    *nf = 0;
    for (const char *p = u; *p;) {
        if (*p == ' ' || *p == '*' || *p == '.') {
            p++;
            continue;
        }
        if (*p == '/') {
            next_div = 1;
            p++;
            continue;
        }
        if (*p == '(' && next_div && !group) {
            group = 1;
            p++;
            continue;
        }
        if (*p == ')' && group) {
            group = 0;
            next_div = 0;
            p++;
            continue;
        }
        const char *s = p;
        while ((*p >= 'a' && *p <= 'z') || (*p >= 'A' && *p <= 'Z') || *p == '_')
            p++;
        size_t len = (size_t)(p - s);
        long power = 1;
        if (len == 0 && *p == '1' && (p[1] == '/' || p[1] == '\0')) { /* "1/s" */
            p++;
            continue;
        }
        if (len == 0 || *nf == max)
            return 0;
        if (*p == '^')
            p++;
        if (*p == '-' || (*p >= '0' && *p <= '9')) {
            char *end;
            power = strtol(p, &end, 10);
            if (end == p || power == 0 || labs(power) > 9)
                return 0;
            p = end;
        }
        sign = (next_div || group) ? -1 : 1;
        if (!group)
            next_div = 0;
        fs[*nf].sym = s;
        fs[*nf].len = len;
        fs[*nf].power = sign * power;
        (*nf)++;
    }
    return !group && *nf > 0;
}

void arrank_plot_unit_text(const char *unit, char *out, size_t n)
{
    if (!n)
        return;
    out[0] = '\0';
    if (!unit)
        return;
    factor fs[12];
    size_t nf, len = 0;
    if (!read_factors(unit, fs, &nf, sizeof fs / sizeof *fs)) {
        snprintf(out, n, "%s", unit);
        return;
    }
    /* numerator first, then the denominator, each in the order written */
    for (int pass = 0; pass < 2; pass++)
        for (size_t k = 0; k < nf; k++) {
            if ((fs[k].power > 0) != (pass == 0))
                continue;
            if (len)
                app(out, n, &len, " ");
            app_symbol(out, n, &len, fs[k].sym, fs[k].len);
            app_power(out, n, &len, fs[k].power);
        }
}

/* Flags in the reader's words, short enough for a figure's row note or a
   table cell; arrank_flag_words has the long ones. */
static const struct {
    unsigned bit;
    const char *words;
} flag_short[] = {
    {ARRANK_FLAG_EXTRAPOLATED, "extrapolated"},
    {ARRANK_FLAG_FEW_POINTS, "few points"},
    {ARRANK_FLAG_NARROW_RANGE, "narrow range"},
    {ARRANK_FLAG_LOW_EA, "low Ea"},
    {ARRANK_FLAG_CURVED, "bent plot"},
    {ARRANK_FLAG_TRANSPORT, "transport-limited points"},
    {ARRANK_FLAG_DEACTIVATION, "deactivating"},
    {ARRANK_FLAG_ACTIVATION, "activating"},
    {ARRANK_FLAG_HIGH_CONVERSION, "high conversion"},
    {ARRANK_FLAG_OUTLIER, "outlier"},
    {ARRANK_FLAG_MIXED_BASIS, "mixed bases"},
    {ARRANK_FLAG_EXCLUDED, "points left out"},
    {ARRANK_FLAG_POOR_FIT, "poor fit"},
    {ARRANK_FLAG_HEAT, "heat transfer"},
};

const char *arrank_plot_flag_short(unsigned flag)
{
    for (size_t k = 0; k < sizeof flag_short / sizeof *flag_short; k++)
        if (flag_short[k].bit == flag)
            return flag_short[k].words;
    return NULL;
}

void arrank_plot_flag_list(const arrank_result *r, char *buf, size_t n)
{
    size_t len = 0;
    if (!n)
        return;
    buf[0] = '\0';
    for (unsigned b = 0; b < ARRANK_FLAG_COUNT; b++) {
        if (!(r->flags & (1u << b)))
            continue;
        const char *words = arrank_plot_flag_short(1u << b);
        if (!words)
            continue;
        char far[48];
        const double out_K = r->has_prediction ? r->at_T.extrapolation_K : 0.0;
        if ((1u << b) == ARRANK_FLAG_EXTRAPOLATED && out_K > 0 && out_K < 1e9) {
            snprintf(far, sizeof far, "extrapolated %.*f K", out_K < 9.95 ? 1 : 0, out_K);
            words = far;
        }
        if (len)
            app(buf, n, &len, ", ");
        app(buf, n, &len, words);
    }
}

/* ---- axes --------------------------------------------------------------- */

void arrank_plot_style_axes(FILE *f, int with_top)
{
    /* border 3: left and bottom; 7 adds the top, for the degC scale */
    fprintf(f,
            "set encoding utf8\n"
            "set termoption noenhanced\n"
            "set border %d lw 1.0 lc rgb '#333333'\n"
            "set tics out nomirror scale 0.8 textcolor rgb '" ARRANK_INK "'\n"
            "set grid back lc rgb '#ececec' lw 1 dt 1\n"
            "set key noautotitle\n"
            "unset key\n"
            "unset title\n",
            with_top ? 7 : 3);
}

/* ---- the SVG file --------------------------------------------------------- */

static void xml_text(FILE *f, const char *t)
{
    for (const char *p = t ? t : ""; *p; p++) {
        unsigned char c = (unsigned char)*p;
        if (c == '&')
            fputs("&amp;", f);
        else if (c == '<')
            fputs("&lt;", f);
        else if (c == '>')
            fputs("&gt;", f);
        else if (c >= 0x20 || c == '\t')
            fputc(c, f);
    }
}

int arrank_plot_svg_finish(const char *path, const char *title)
{
    FILE *in = fopen(path, "rb");
    if (!in)
        return -1;
    char *buf = NULL;
    size_t cap = 0, len = 0;
    for (;;) {
        if (len + 65537 > cap) {
            cap = 2 * (len + 65537);
            char *nb = realloc(buf, cap);
            if (!nb) {
                free(buf);
                fclose(in);
                return -1;
            }
            buf = nb;
        }
        size_t got = fread(buf + len, 1, 65536, in);
        len += got;
        if (!got)
            break;
    }
    int bad = ferror(in);
    fclose(in);
    if (bad) {
        free(buf);
        return -1;
    }
    buf[len] = '\0';
    FILE *out = fopen(path, "wb");
    if (!out) {
        free(buf);
        return -1;
    }
    static const char fam[] = "font-family=\"sans-serif\"";
    const char *p = buf;
    const char *t0 = strstr(buf, "<title>"), *t1 = t0 ? strstr(t0, "</title>") : NULL;
    const char *d0 = strstr(buf, "<desc>"), *d1 = d0 ? strstr(d0, "</desc>") : NULL;
    while (*p) {
        if (t0 && p == t0 && t1) {
            fputs("<title>", out);
            xml_text(out, title);
            fputs("</title>", out);
            p = t1 + strlen("</title>");
        } else if (d0 && p == d0 && d1) {
            fputs("<desc>arrank figure</desc>", out);
            p = d1 + strlen("</desc>");
        } else if (*p == '<' && strncmp(p, "<title>gnuplot_plot_", 20) == 0 &&
                   strstr(p, "</title>")) {
            /* gnuplot's own name of each plot element, shown as a tooltip */
            p = strstr(p, "</title>") + strlen("</title>");
        } else if (*p == 'f' && strncmp(p, fam, sizeof fam - 1) == 0) {
            fputs("font-family=\"" ARRANK_FONT_STACK "\"", out);
            p += sizeof fam - 1;
        } else
            fputc(*p++, out);
    }
    free(buf);
    return fclose(out) == 0 ? 0 : -1;
}

/* ---- figures into place ------------------------------------------------- */

arrank_status arrank_plot_move_into(const char *priv, const char *out_dir, const char *name,
                                    unsigned format, const char *title, arrank_figure_kind kind,
                                    size_t sample, arrank_plot_files *written, arrank_error *err)
{
    char *from = arrank_join_path(priv, name), *to = arrank_join_path(out_dir, name);
    if (!from || !to) {
        free(from);
        free(to);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    if ((format == ARRANK_PLOT_SVG && arrank_plot_svg_finish(from, title) != 0) ||
        rename(from, to) != 0) {
        arrank_status e = arrank_error_at(err, ARRANK_EIO, to, 0, 0, "cannot write '%s': %s",
                                          to, strerror(errno));
        free(from);
        free(to);
        return e;
    }
    free(from);
    if (!written) {
        free(to);
        return ARRANK_OK;
    }
    arrank_plot_file *pf = &written->files[written->n++];
    pf->kind = kind;
    pf->sample = sample;
    pf->format = format;
    pf->path = to;
    pf->name = arrank_strdup(name);
    return pf->name ? ARRANK_OK : arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
}

void arrank_plot_remove_private(const char *priv)
{
    DIR *d = opendir(priv);
    if (d) {
        struct dirent *e;
        while ((e = readdir(d)) != NULL) {
            if (strcmp(e->d_name, ".") == 0 || strcmp(e->d_name, "..") == 0)
                continue;
            char *p = arrank_join_path(priv, e->d_name);
            if (p)
                unlink(p);
            free(p);
        }
        closedir(d);
    }
    rmdir(priv);
}
