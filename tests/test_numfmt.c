/* test_numfmt.c — shortening numbers for the explorer's table cells
 * (ui/numfmt.c, compiled into this test directly). */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>
#include <string.h>

#include "../ui/lineedit.c"
#include "../ui/numfmt.c"

static const char *dec(const char *s, int sig)
{
    static char buf[128];
    numfmt_decimal(buf, sizeof buf, s, sig);
    return buf;
}

static void decimals_should_be_cut_to_significant_digits(void **state)
{
    (void)state;
    assert_string_equal(dec("2.61803398874989484820458683437", 10), "2.618033988");
    assert_string_equal(dec("6.85410196624968454461376050310", 4), "6.854");
    assert_string_equal(dec("-1.5", 10), "-1.5");
    assert_string_equal(dec("0.000123456789123", 3), "0.000123");
    assert_string_equal(dec("1234.56789", 6), "1234.56");
    /* digits are cut, never rounded up */
    assert_string_equal(dec("1.99999999999999", 3), "1.99");
}

static void decimals_should_always_have_a_decimal_point(void **state)
{
    (void)state;
    assert_string_equal(dec("2", 10), "2.0");
    assert_string_equal(dec("0", 10), "0.0");
    assert_string_equal(dec("1.", 10), "1.0");
    /* a long integer part is kept whole */
    assert_string_equal(dec("123456789012.75", 5), "123456789012.7");
    assert_string_equal(dec("1.2345678e+40", 3), "1.23e+40");
    assert_string_equal(dec("7e-5", 3), "7.0e-5");
}

static void other_text_should_be_copied(void **state)
{
    (void)state;
    assert_string_equal(dec("[+/- 1e-30]", 5), "[+/- 1e-30]");
    assert_string_equal(dec("", 5), "");
    assert_string_equal(dec("inf", 5), "inf");
    char small[4];
    numfmt_decimal(small, sizeof small, "3.14159", 10);
    assert_string_equal(small, "3.1");
}

static void clip_should_mark_what_it_cut(void **state)
{
    (void)state;
    char buf[64];
    assert_int_equal(numfmt_clip(buf, sizeof buf, "abcdef", 6, 0), 0);
    assert_string_equal(buf, "abcdef");
    assert_int_equal(numfmt_clip(buf, sizeof buf, "abcdef", 4, 0), 1);
    assert_string_equal(buf, "abc\xE2\x80\xA6");
    assert_int_equal(numfmt_clip(buf, sizeof buf, "abcdef", 4, 1), 1);
    assert_string_equal(buf, "abc~");
    /* multi-byte characters are counted, not split */
    assert_int_equal(numfmt_clip(buf, sizeof buf, "\xCE\xB1\xCE\xB2\xCE\xB3", 2, 1), 1);
    assert_string_equal(buf, "\xCE\xB1~");
    assert_int_equal(numfmt_clip(buf, sizeof buf, "xyz", 0, 0), 1);
    assert_string_equal(buf, "");
    char tiny[3];
    numfmt_clip(tiny, sizeof tiny, "\xCE\xB1\xCE\xB2", 9, 0);
    assert_string_equal(tiny, "\xCE\xB1");
}

/* The shortened form must stay true: its leading digits are a prefix of
 * the number, the exponent is the number of digits minus one, and the
 * digit count is the length (counted here with Python's len(str(n)) in
 * mind: 2^200 has 61 digits, computed by hand from 200*log10(2) = 60.2). */
static void integers_should_be_whole_or_marked(void **state)
{
    (void)state;
    char buf[128];
    assert_int_equal(numfmt_integer(buf, sizeof buf, "123456", 6, 0), 0);
    assert_string_equal(buf, "123456");
    assert_int_equal(numfmt_integer(buf, sizeof buf, "-7", 2, 0), 0);
    assert_string_equal(buf, "-7");
    const char *two200 = "1606938044258990275541962092341162602522202993782792835301376";
    assert_int_equal(numfmt_integer(buf, sizeof buf, two200, 24, 1), 1);
    assert_string_equal(buf, "1.606938~e60 (61 digits)");
    assert_int_equal(numfmt_integer(buf, sizeof buf, two200, 24, 0), 1);
    assert_string_equal(buf, "1.606938\xE2\x80\xA6" "e60 (61 digits)");
    /* a negative number keeps its sign; a tiny width keeps one digit */
    assert_int_equal(numfmt_integer(buf, sizeof buf, "-98765432109876", 5, 1), 1);
    assert_string_equal(buf, "-9.8~e13");
    /* a narrow cell drops the digit count, which the exponent implies */
    assert_int_equal(numfmt_integer(buf, sizeof buf, two200, 10, 1), 1);
    assert_string_equal(buf, "1.6069~e60");
    /* never more digits than there are */
    assert_int_equal(numfmt_integer(buf, sizeof buf, "12345", 3, 1), 1);
    assert_string_equal(buf, "1.2~e4");
    /* a buffer too small for the whole number gets the short form */
    char small[16];
    assert_int_equal(numfmt_integer(small, sizeof small, two200, 100, 1), 1);
    assert_string_equal(small, "1.606938044~e60");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(decimals_should_be_cut_to_significant_digits),
        cmocka_unit_test(decimals_should_always_have_a_decimal_point),
        cmocka_unit_test(other_text_should_be_copied),
        cmocka_unit_test(clip_should_mark_what_it_cut),
        cmocka_unit_test(integers_should_be_whole_or_marked),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
