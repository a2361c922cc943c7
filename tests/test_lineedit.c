/* test_lineedit.c — the explorer's one-line editor (ui/lineedit.c), which
 * is pure C and compiled into this test directly. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>
#include <string.h>

#include "../ui/lineedit.c"

static void type(lineedit_t e, const char *ascii)
{
    for (; *ascii; ascii++)
        lineedit_insert(e, (unsigned char)*ascii);
}

static void insert_should_put_text_at_the_cursor(void **state)
{
    (void)state;
    lineedit_t e;
    lineedit_init(e);
    assert_string_equal(lineedit_get_text(e), "");
    type(e, "a^2");
    assert_string_equal(lineedit_get_text(e), "a^2");
    assert_int_equal(lineedit_cursor_col(e), 3);
    lineedit_apply(e, LINEEDIT_HOME);
    type(e, "b ");
    assert_string_equal(lineedit_get_text(e), "b a^2");
    assert_int_equal(lineedit_cursor_col(e), 2);
    lineedit_apply(e, LINEEDIT_END);
    type(e, " c");
    assert_string_equal(lineedit_get_text(e), "b a^2 c");
    lineedit_clear(e);
}

static void insert_should_reject_control_characters(void **state)
{
    (void)state;
    lineedit_t e;
    lineedit_init(e);
    assert_int_equal(lineedit_insert(e, '\n'), 0);
    assert_int_equal(lineedit_insert(e, 0x1B), 0);
    assert_int_equal(lineedit_insert(e, 0x7F), 0);
    assert_int_equal(lineedit_insert(e, 0xD800), 0);
    assert_int_equal(lineedit_insert(e, 0x110000), 0);
    assert_string_equal(lineedit_get_text(e), "");
    lineedit_clear(e);
}

static void backspace_and_delete_should_remove_one_code_point(void **state)
{
    (void)state;
    lineedit_t e;
    lineedit_init(e);
    lineedit_set_text(e, "abc");
    assert_int_equal(lineedit_apply(e, LINEEDIT_BACKSPACE), 1);
    assert_string_equal(lineedit_get_text(e), "ab");
    lineedit_apply(e, LINEEDIT_HOME);
    assert_int_equal(lineedit_apply(e, LINEEDIT_BACKSPACE), 0);
    assert_int_equal(lineedit_apply(e, LINEEDIT_DELETE), 1);
    assert_string_equal(lineedit_get_text(e), "b");
    lineedit_apply(e, LINEEDIT_END);
    assert_int_equal(lineedit_apply(e, LINEEDIT_DELETE), 0);
    lineedit_clear(e);
}

static void cursor_moves_should_stop_at_the_ends(void **state)
{
    (void)state;
    lineedit_t e;
    lineedit_init(e);
    lineedit_set_text(e, "xy");
    assert_int_equal(lineedit_cursor_col(e), 2);
    lineedit_apply(e, LINEEDIT_RIGHT);
    assert_int_equal(lineedit_cursor_col(e), 2);
    lineedit_apply(e, LINEEDIT_LEFT);
    lineedit_apply(e, LINEEDIT_LEFT);
    lineedit_apply(e, LINEEDIT_LEFT);
    assert_int_equal(lineedit_cursor_col(e), 0);
    lineedit_apply(e, LINEEDIT_END);
    assert_int_equal(lineedit_cursor_col(e), 2);
    lineedit_apply(e, LINEEDIT_HOME);
    assert_int_equal(lineedit_cursor_col(e), 0);
    lineedit_set_cursor_col(e, 1);
    assert_int_equal(e->cur, 1);
    lineedit_set_cursor_col(e, 99);
    assert_int_equal(e->cur, 2);
    lineedit_clear(e);
}

static void kill_line_should_empty_the_line(void **state)
{
    (void)state;
    lineedit_t e;
    lineedit_init(e);
    lineedit_set_text(e, "a b c");
    lineedit_apply(e, LINEEDIT_LEFT);
    assert_int_equal(lineedit_apply(e, LINEEDIT_KILL_LINE), 1);
    assert_string_equal(lineedit_get_text(e), "");
    assert_int_equal(lineedit_cursor_col(e), 0);
    assert_int_equal(lineedit_apply(e, LINEEDIT_KILL_LINE), 0);
    lineedit_set_text(e, "a b c");
    lineedit_set_cursor_col(e, 2);
    assert_int_equal(lineedit_apply(e, LINEEDIT_KILL_TO_END), 1);
    assert_string_equal(lineedit_get_text(e), "a ");
    lineedit_clear(e);
}

static void multibyte_characters_should_never_be_split(void **state)
{
    (void)state;
    lineedit_t e;
    lineedit_init(e);
    /* "α↦𝔤" : 2 + 3 + 4 bytes */
    lineedit_insert(e, 0x3B1);
    lineedit_insert(e, 0x21A6);
    lineedit_insert(e, 0x1D524);
    assert_string_equal(lineedit_get_text(e), "\xCE\xB1\xE2\x86\xA6\xF0\x9D\x94\xA4");
    assert_int_equal(lineedit_ncols(e), 3);
    assert_int_equal(lineedit_cursor_col(e), 3);
    lineedit_apply(e, LINEEDIT_LEFT);
    assert_int_equal(e->cur, 5);
    lineedit_apply(e, LINEEDIT_LEFT);
    assert_int_equal(e->cur, 2);
    type(e, "x");
    assert_string_equal(lineedit_get_text(e), "\xCE\xB1x\xE2\x86\xA6\xF0\x9D\x94\xA4");
    lineedit_apply(e, LINEEDIT_DELETE);
    assert_string_equal(lineedit_get_text(e), "\xCE\xB1x\xF0\x9D\x94\xA4");
    lineedit_apply(e, LINEEDIT_END);
    lineedit_apply(e, LINEEDIT_BACKSPACE);
    assert_string_equal(lineedit_get_text(e), "\xCE\xB1x");
    lineedit_apply(e, LINEEDIT_HOME);
    lineedit_apply(e, LINEEDIT_RIGHT);
    assert_int_equal(e->cur, 2);
    lineedit_apply(e, LINEEDIT_BACKSPACE);
    assert_string_equal(lineedit_get_text(e), "x");
    lineedit_clear(e);
}

static void set_text_should_replace_invalid_utf8(void **state)
{
    (void)state;
    lineedit_t e;
    lineedit_init(e);
    /* a lone continuation byte, a truncated sequence, an overlong '/',
     * an encoded surrogate, a tab */
    lineedit_set_text(e, "a\x80"
                         "b\xE2\x86"
                         "c\xC0\xAF"
                         "d\xED\xA0\x80"
                         "e\tf");
    const char *t = lineedit_get_text(e);
    assert_null(strchr(t, '\t'));
    for (const unsigned char *p = (const unsigned char *)t; *p; p++)
        assert_true(*p < 0x80);
    assert_non_null(strstr(t, "a?b"));
    assert_non_null(strstr(t, "e?f"));
    /* every later edit keeps it valid */
    lineedit_apply(e, LINEEDIT_HOME);
    lineedit_apply(e, LINEEDIT_RIGHT);
    lineedit_apply(e, LINEEDIT_BACKSPACE);
    assert_int_equal(lineedit_ncols(e), strlen(lineedit_get_text(e)));
    lineedit_set_text(e, NULL);
    assert_string_equal(lineedit_get_text(e), "");
    lineedit_clear(e);
}

static void long_text_should_grow_the_buffer(void **state)
{
    (void)state;
    lineedit_t e;
    lineedit_init(e);
    for (int i = 0; i < 5000; i++)
        lineedit_insert(e, 'a' + (uint32_t)(i % 26));
    assert_int_equal(lineedit_ncols(e), 5000);
    lineedit_set_cursor_col(e, 2500);
    lineedit_apply(e, LINEEDIT_KILL_TO_END);
    assert_int_equal(strlen(lineedit_get_text(e)), 2500);
    lineedit_clear(e);
}

static void utf8_helpers_should_count_code_points(void **state)
{
    (void)state;
    const char *s = "a\xCE\xB1"
                    "b";
    assert_int_equal(lineedit_utf8_ncols(s), 3);
    assert_int_equal(lineedit_utf8_offset(s, 0), 0);
    assert_int_equal(lineedit_utf8_offset(s, 1), 1);
    assert_int_equal(lineedit_utf8_offset(s, 2), 3);
    assert_int_equal(lineedit_utf8_offset(s, 3), 4);
    assert_int_equal(lineedit_utf8_offset(s, 9), 4);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(insert_should_put_text_at_the_cursor),
        cmocka_unit_test(insert_should_reject_control_characters),
        cmocka_unit_test(backspace_and_delete_should_remove_one_code_point),
        cmocka_unit_test(cursor_moves_should_stop_at_the_ends),
        cmocka_unit_test(kill_line_should_empty_the_line),
        cmocka_unit_test(multibyte_characters_should_never_be_split),
        cmocka_unit_test(set_text_should_replace_invalid_utf8),
        cmocka_unit_test(long_text_should_grow_the_buffer),
        cmocka_unit_test(utf8_helpers_should_count_code_points),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
