/*
 * test_text.c - arrank_text_escape and arrank_text_is_clean: control
 * characters and invalid UTF-8 made visible, valid UTF-8 kept, cuts that
 * never split an escape or a character.  UTF-8 validity per RFC 3629
 * (section 4: no overlong forms, no surrogates, nothing above U+10FFFF).
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
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

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_controls),
        cmocka_unit_test(test_utf8),
        cmocka_unit_test(test_cuts),
        cmocka_unit_test(test_html),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
