/*
 * text.c - escaping text from files for terminals and logs (arrank/text.h).
 */
#include <stdio.h>
#include <string.h>

#include "arrank/text.h"

/* Length of the valid UTF-8 sequence at s (1-4), or 0 when it is not one
   (overlong forms, surrogates and code points above U+10FFFF included). */
static size_t utf8_len(const unsigned char *s)
{
    const unsigned c = s[0];
    if (c < 0x80)
        return 1;
    size_t len;
    unsigned min, cp;
    if (c >= 0xc2 && c <= 0xdf) {
        len = 2, min = 0x80, cp = c & 0x1f;
    } else if (c >= 0xe0 && c <= 0xef) {
        len = 3, min = 0x800, cp = c & 0x0f;
    } else if (c >= 0xf0 && c <= 0xf4) {
        len = 4, min = 0x10000, cp = c & 0x07;
    } else {
        return 0;
    }
    for (size_t k = 1; k < len; k++) {
        if ((s[k] & 0xc0) != 0x80)
            return 0;
        cp = (cp << 6) | (s[k] & 0x3f);
    }
    if (cp < min || cp > 0x10ffff || (cp >= 0xd800 && cp <= 0xdfff))
        return 0;
    return len;
}

size_t arrank_text_escape(const char *text, char *out, size_t n)
{
    const unsigned char *s = (const unsigned char *)(text ? text : "");
    size_t need = 0, used = 0;
    int cut = 0;
    while (*s) {
        char esc[8];
        const char *piece = esc;
        size_t len = utf8_len(s), adv = len ? len : 1;
        if (len == 1 && (*s < 0x20 || *s == 0x7f)) {
            if (*s == '\n')
                strcpy(esc, "\\n");
            else if (*s == '\r')
                strcpy(esc, "\\r");
            else if (*s == '\t')
                strcpy(esc, "\\t");
            else
                snprintf(esc, sizeof esc, "\\%03o", *s);
            len = strlen(esc);
        } else if (len == 0) {
            snprintf(esc, sizeof esc, "\\x%02X", *s);
            len = 4;
        } else {
            piece = (const char *)s;
        }
        need += len;
        if (!cut && used + len < n) {
            memcpy(out + used, piece, len);
            used += len;
        } else {
            cut = 1;
        }
        s += adv;
    }
    if (n > 0)
        out[used] = '\0';
    return need;
}

int arrank_text_is_clean(const char *text)
{
    const unsigned char *s = (const unsigned char *)text;
    while (*s) {
        const size_t len = utf8_len(s);
        if (len == 0 || (len == 1 && (*s < 0x20 || *s == 0x7f)))
            return 0;
        s += len;
    }
    return 1;
}

void arrank_text_html(FILE *f, const char *text)
{
    const unsigned char *s = (const unsigned char *)(text ? text : "");
    while (*s) {
        size_t n = utf8_len(s);
        if (n == 0) {
            fputs("\xEF\xBF\xBD", f); /* U+FFFD */
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
        } else if (!(n == 2 && s[0] == 0xC2 && s[1] <= 0x9F)) { /* C1 controls dropped */
            fwrite(s, 1, n, f);
        }
        s += n;
    }
}
