/*
 * test_text.c - arrank_text_escape and arrank_text_is_clean: control
 * characters and invalid UTF-8 made visible, valid UTF-8 kept, cuts that
 * never split an escape or a character.  UTF-8 validity per RFC 3629
 * (section 4: no overlong forms, no surrogates, nothing above U+10FFFF).
 * arrank_text_cp_columns and arrank_text_columns: the columns text takes on
 * a terminal, every code point against Python's unicodedata (a general-purpose
 * reference library: East Asian Width W and F take two columns, Unicode
 * Standard Annex #11; combining marks none) through src/tools/mkwidths.py.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>

#include "arrank/text.h"

static void expect_escape(const char *in, const char *want)
{
    char out[256];
    size_t need = arrank_text_escape(in, out, sizeof out);
    assert_string_equal(out, want);
    assert_int_equal(need, strlen(want));
}

static void test_controls(void **state)
{
    (void)state;
    expect_escape("plain ZN-01 H-beta", "plain ZN-01 H-beta");
    expect_escape("a\nb", "a\\nb");
    expect_escape("tab\there\r", "tab\\there\\r");
    expect_escape("X\033[2J", "X\\033[2J");
    expect_escape("bell\007 del\177", "bell\\007 del\\177");
    expect_escape("", "");
    assert_int_equal(arrank_text_is_clean("ZN-01 2 wt% Ni, 250 °C"), 1);
    assert_int_equal(arrank_text_is_clean("X\033[2J"), 0);
    assert_int_equal(arrank_text_is_clean("a\nb"), 0);
}

static void test_utf8(void **state)
{
    (void)state;
    expect_escape("250 \xc2\xb0" "C, \xc2\xb5mol", "250 \xc2\xb0" "C, \xc2\xb5mol"); /* °C, µmol */
    expect_escape("\xe2\x82\xac", "\xe2\x82\xac");                                  /* € */
    expect_escape("\xf0\x9f\x98\x80", "\xf0\x9f\x98\x80");                          /* U+1F600 */
    expect_escape("bad \xff byte", "bad \\xFF byte");
    expect_escape("\xc0\xaf", "\\xC0\\xAF");                 /* overlong '/' */
    expect_escape("\xed\xa0\x80", "\\xED\\xA0\\x80");        /* surrogate U+D800 */
    expect_escape("\xf4\x90\x80\x80", "\\xF4\\x90\\x80\\x80"); /* above U+10FFFF */
    expect_escape("cut \xc2", "cut \\xC2");                  /* truncated sequence */
    assert_int_equal(arrank_text_is_clean("bad \xff"), 0);
    assert_int_equal(arrank_text_is_clean("\xc2\xb0"), 1);
}

static void test_cuts(void **state)
{
    (void)state;
    char out[6];
    /* "ab\033": 'a' 'b' then a 4-byte escape that does not fit in 6 with the NUL */
    size_t need = arrank_text_escape("ab\033", out, sizeof out);
    assert_int_equal(need, 6);
    assert_string_equal(out, "ab");
    char small[3];
    need = arrank_text_escape("\xc2\xb0\xc2\xb0", small, sizeof small);
    assert_int_equal(need, 4);
    assert_string_equal(small, "\xc2\xb0"); /* whole characters only */
    char none[1];
    assert_int_equal(arrank_text_escape("abc", none, 0), 3);
    assert_int_equal(arrank_text_escape("abc", none, 1), 3);
    assert_string_equal(none, "");
}

/* HTML as written by arrank_text_html: the five characters HTML and XML
   reserve escaped (W3C HTML, "named character references"; &#39; for the
   apostrophe, which HTML 4 lacks a name for), controls dropped, bad UTF-8
   shown as U+FFFD (the Unicode replacement character). */
static void expect_html(const char *in, const char *want)
{
    char *got = NULL;
    size_t len = 0;
    FILE *m = open_memstream(&got, &len);
    assert_non_null(m);
    arrank_text_html(m, in);
    assert_int_equal(fclose(m), 0);
    assert_string_equal(got, want);
    free(got);
}

static void test_html(void **state)
{
    (void)state;
    expect_html("IW 2 wt% <Ni> & \"Co\" 'x'", "IW 2 wt% &lt;Ni&gt; &amp; &quot;Co&quot; &#39;x&#39;");
    expect_html("a\tb\nc\x1b[31md\x7f", "abc[31md");
    expect_html("5 \xc2\xb5mol at 250 \xc2\xb0" "C", "5 \xc2\xb5mol at 250 \xc2\xb0" "C");
    expect_html("C1\xc2\x85" "control", "C1control");
    expect_html("bad\xff\xc3(", "bad\xef\xbf\xbd\xef\xbf\xbd(");
    expect_html(NULL, "");
}

static void test_columns(void **state)
{
    (void)state;
    /* one of each kind; the classes are those of EastAsianWidth.txt and the
       general categories of the Unicode Character Database */
    assert_int_equal(arrank_text_cp_columns('A'), 1);
    assert_int_equal(arrank_text_cp_columns(0xB0), 1);    /* degree sign */
    assert_int_equal(arrank_text_cp_columns(0x3B2), 1);   /* Greek beta */
    assert_int_equal(arrank_text_cp_columns(0x301), 0);   /* combining acute accent (Mn) */
    assert_int_equal(arrank_text_cp_columns(0x200B), 0);  /* zero width space (Cf) */
    assert_int_equal(arrank_text_cp_columns(0x4E00), 2);  /* CJK ideograph (W) */
    assert_int_equal(arrank_text_cp_columns(0x30CB), 2);  /* katakana NI (W) */
    assert_int_equal(arrank_text_cp_columns(0xAC00), 2);  /* hangul syllable GA (W) */
    assert_int_equal(arrank_text_cp_columns(0xFF21), 2);  /* fullwidth A (F) */
    assert_int_equal(arrank_text_cp_columns(0x3000), 2);  /* ideographic space (F) */
    assert_int_equal(arrank_text_cp_columns(0xFF61), 1);  /* halfwidth ideographic full stop (H) */
    /* text: "镍 Ni" is 2 + 1 + 2; "e" + combining acute is one column; a byte
       that is not UTF-8, and a sequence cut by len, count one each */
    assert_int_equal(arrank_text_columns("\xe9\x95\x8d Ni", 6), 5);
    assert_int_equal(arrank_text_columns("e\xcc\x81", 3), 1);
    assert_int_equal(arrank_text_columns("a\xff" "b", 3), 3);
    assert_int_equal(arrank_text_columns("\xe9\x95\x8d", 2), 2);
    assert_int_equal(arrank_text_columns("", 0), 0);

    /* every code point against the reference, when its Unicode version is
       the tables' (the first line of their comment in src/lib/text.c) */
    FILE *ver = popen("/usr/bin/python3 -c 'import unicodedata; "
                      "print(unicodedata.unidata_version)'", "r");
    assert_non_null(ver);
    char version[32] = "";
    assert_non_null(fgets(version, sizeof version, ver));
    assert_int_equal(pclose(ver), 0);
    version[strcspn(version, "\n")] = '\0';
    if (strcmp(version, "14.0.0") != 0) {
        print_message("# Python's unicodedata is %s, the tables 14.0.0: compared above only\n",
                      version);
        return;
    }
    FILE *ref = popen("/usr/bin/python3 src/tools/mkwidths.py --list", "r");
    assert_non_null(ref);
    unsigned long cp;
    int w;
    size_t n = 0, wrong = 0, wide = 0, zero = 0;
    while (fscanf(ref, "%lu %d", &cp, &w) == 2) {
        int mine = arrank_text_cp_columns((uint32_t)cp);
        if (mine != w && wrong++ < 10)
            print_error("U+%04lX: %d columns, unicodedata %d\n", cp, mine, w);
        wide += w == 2;
        zero += w == 0;
        n++;
    }
    assert_int_equal(pclose(ref), 0);
    print_message("# %zu code points compared: %zu of two columns, %zu of none\n", n, wide, zero);
    assert_int_equal(n, 0x110000 - 0x800); /* all but the surrogates */
    assert_true(wide > 100000 && zero > 1000);
    assert_int_equal(wrong, 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_controls),
        cmocka_unit_test(test_utf8),
        cmocka_unit_test(test_cuts),
        cmocka_unit_test(test_html),
        cmocka_unit_test(test_columns),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
