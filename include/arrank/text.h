/*
 * arrank/text.h - text from files made safe to show on a terminal, in a log or
 * in HTML.
 */
#ifndef ARRANK_TEXT_H
#define ARRANK_TEXT_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

/*
 * Copy text into out (n bytes, always NUL-terminated when n > 0) with every
 * control character written as an escape a reader can see: \n, \r, \t, \\
 * stays as it is, and any other byte below 0x20 or 0x7f as \ooo in octal
 * (ESC is \033).  Bytes that are not valid UTF-8 are written as \xHH; valid
 * UTF-8 (°C, µmol) passes unchanged.  A cut never splits an escape or a
 * character.  Returns the length the whole escaped text needs (without the
 * NUL), so a return value >= n means it was cut.
 */
size_t arrank_text_escape(const char *text, char *out, size_t n);

/* 1 when text is valid UTF-8 with no control character, else 0. */
int arrank_text_is_clean(const char *text);

/* text (NULL: nothing) written to f as HTML or XML character data and
   attribute values: & < > " ' escaped, control characters (C0, DEL, C1)
   dropped, each byte that is not valid UTF-8 shown as U+FFFD. */
void arrank_text_html(FILE *f, const char *text);

/*
 * Columns code point cp takes on a terminal: 2 for East Asian Wide and
 * Fullwidth characters (Unicode Standard Annex #11: CJK ideographs, kana,
 * hangul, fullwidth forms, most emoji), 0 for combining marks and zero-width
 * format characters, else 1.  The tables come from Python's unicodedata
 * (src/tools/mkwidths.py says which version and how).
 */
int arrank_text_cp_columns(uint32_t cp);

/* Columns len bytes of UTF-8 text take on a terminal (arrank_text_cp_columns
   summed); a byte that is not part of valid UTF-8 counts one. */
size_t arrank_text_columns(const char *text, size_t len);

#endif
