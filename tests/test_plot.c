/* test_plot.c — the explorer's character pictures (ui/plot.c, compiled in
 * directly; no curses).  Every expected grid is worked out by hand in the
 * comment above it from the braille dot numbering of Unicode (U+2800 +
 * bits: left column dots 1, 2, 3, 7 = 0x01, 0x02, 0x04, 0x40; right column
 * 4, 5, 6, 8 = 0x08, 0x10, 0x20, 0x80; The Unicode Standard, ch. 21
 * "Braille Patterns"). */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../ui/plot.c"

static void assert_row(const plot_canvas *c, int y, const char *want)
{
    char *got = plot_canvas_row(c, y);
    if (strcmp(got, want) != 0)
        fail_msg("row %d: got '%s', expected '%s'", y, got, want);
    free(got);
}

/* ys = 0..7 on [0, 7], 4 x 2 cells = 8 x 8 dots: point i is the dot
 * (i, 7 - i), a diagonal.  Top row: cell 2 holds (4,3) left dot 7 = 0x40
 * and (5,2) right dot 6 = 0x20: U+2860; cell 3 holds (6,1) left dot 2 =
 * 0x02 and (7,0) right dot 4 = 0x08: U+280A.  The bottom row repeats that
 * in cells 0 and 1.  ref = 3.5 is dot row lround(3.5) = 4, cell row 1,
 * drawn in its two free cells. */
static void series_should_draw_the_diagonal_and_the_line(void **state)
{
    (void)state;
    const double ys[8] = {0, 1, 2, 3, 4, 5, 6, 7};
    plot_canvas c;
    plot_canvas_init(&c, 4, 2, 0);
    assert_int_equal(plot_series(&c, ys, 8, 0, 7, 3.5), 1);
    assert_row(&c, 0, "  \xE2\xA1\xA0\xE2\xA0\x8A");
    assert_row(&c, 1, "\xE2\xA1\xA0\xE2\xA0\x8A\xE2\x94\x80\xE2\x94\x80");
    plot_canvas_clear(&c);
    /* ASCII: 0x60 has only lower-half dots ('.'), 0x0A only upper ('\'') */
    plot_canvas_init(&c, 4, 2, 1);
    plot_series(&c, ys, 8, 0, 7, 3.5);
    assert_row(&c, 0, "  .'");
    assert_row(&c, 1, ".'--");
    plot_canvas_clear(&c);
}

/* Two points 0 and 7 on [0, 7] at dots (0, 7) and (7, 0): the line between
 * them is the same diagonal, so joining consecutive points fills it in. */
static void series_should_join_consecutive_points(void **state)
{
    (void)state;
    const double ys[2] = {0, 7};
    plot_canvas c;
    plot_canvas_init(&c, 4, 2, 0);
    assert_int_equal(plot_series(&c, ys, 2, 0, 7, 100), -1); /* ref off the range */
    assert_row(&c, 0, "  \xE2\xA1\xA0\xE2\xA0\x8A");
    assert_row(&c, 1, "\xE2\xA1\xA0\xE2\xA0\x8A  ");
    plot_canvas_clear(&c);
}

/* Eigenvalues 1 and -1 on 5 x 3 cells (10 x 12 dots): centre (4.5, 5.5),
 * the disc of radius 1.25 on 4.5 dots, so the scale is 3.6 dots per unit;
 * 1 is the dot (lround 8.1, lround 5.5) = (8, 6), cell (4, 1); -1 is
 * (1, 6), cell (0, 1); the axes cross at cell (lround 4.5 / 2, 6 / 4) =
 * (2, 1).  Cells 1 and 3 of that row have no circle dot (the circle passes
 * them at |sin t| > 0.6, rows 0 and 2), so the axis shows there. */
static void complex_plane_should_place_points_axes_and_circle(void **state)
{
    (void)state;
    const double re[2] = {1, -1}, im[2] = {0, 0};
    plot_canvas c;
    plot_canvas_init(&c, 5, 3, 0);
    double R = plot_complex(&c, re, im, 2);
    assert_true(R == 1.25);
    assert_row(&c, 1, "\xE2\x97\x8F\xE2\x94\x80\xE2\x94\xBC\xE2\x94\x80\xE2\x97\x8F");
    /* the circle's top and bottom: braille (U+2800..U+28FF, bytes E2 A0..A3)
     * in rows 0 and 2 */
    for (int y = 0; y <= 2; y += 2) {
        char *row = plot_canvas_row(&c, y);
        int braille = 0;
        for (const unsigned char *p = (const unsigned char *)row; *p; p++)
            if (p[0] == 0xE2 && p[1] >= 0xA0 && p[1] <= 0xA3)
                braille = 1;
        assert_true(braille);
        free(row);
    }
    plot_canvas_clear(&c);
    plot_canvas_init(&c, 5, 3, 1);
    plot_complex(&c, re, im, 2);
    assert_row(&c, 1, "o-+-o");
    plot_canvas_clear(&c);
}

/* A point far out sets the scale: |3 + 4i| = 5, radius 5.5. */
static void complex_plane_should_scale_to_the_largest_point(void **state)
{
    (void)state;
    const double re[1] = {3}, im[1] = {4};
    plot_canvas c;
    plot_canvas_init(&c, 20, 10, 1);
    assert_true(plot_complex(&c, re, im, 1) == 5.5);
    plot_canvas_clear(&c);
}

/* Bars 2, 1, 0.5 of at most 2 on 4 x 3 cells: 4, 2 and 1 full cells; the
 * mark at 1 is column (int)(1/2 * 4) = 2, the one at 2 is column 4,
 * clamped to 3; each shows where no bar covers it. */
static void bars_should_have_eighths_and_marks(void **state)
{
    (void)state;
    const double v[3] = {2, 1, 0.5};
    plot_canvas c;
    plot_canvas_init(&c, 4, 3, 0);
    plot_bars(&c, v, 3, 2, 1, 2);
    const char *full = "\xE2\x96\x88", *bar = "\xE2\x94\x82", *dotted = "\xE2\x94\x8A";
    char want[64];
    snprintf(want, sizeof want, "%s%s%s%s", full, full, full, full);
    assert_row(&c, 0, want);
    snprintf(want, sizeof want, "%s%s%s%s", full, full, bar, dotted);
    assert_row(&c, 1, want);
    snprintf(want, sizeof want, "%s %s%s", full, bar, dotted);
    assert_row(&c, 2, want);
    plot_canvas_clear(&c);
    /* 0.3 of 1 on 4 cells: 1.2 cells = 9.6 eighths, rounded to 10: one
     * full cell and the two-eighths block U+258E */
    const double w[1] = {0.3};
    plot_canvas_init(&c, 4, 1, 0);
    plot_bars(&c, w, 1, 1, -1, -1);
    assert_row(&c, 0, "\xE2\x96\x88\xE2\x96\x8E  ");
    plot_canvas_clear(&c);
    plot_canvas_init(&c, 4, 1, 1);
    plot_bars(&c, w, 1, 1, -1, -1);
    assert_row(&c, 0, "#=  ");
    plot_canvas_clear(&c);
}

static void range_should_hold_values_and_reference(void **state)
{
    (void)state;
    const double ys[3] = {2, 3, 4};
    double lo, hi;
    plot_series_range(&lo, &hi, ys, 3, 1);
    /* [1, 4] with 5% of 3 each side */
    assert_true(lo < 1 && lo > 0.84 && hi > 4 && hi < 4.16);
    plot_series_range(&lo, &hi, ys, 0, 2);
    assert_true(lo < 2 && hi > 2);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(series_should_draw_the_diagonal_and_the_line),
        cmocka_unit_test(series_should_join_consecutive_points),
        cmocka_unit_test(complex_plane_should_place_points_axes_and_circle),
        cmocka_unit_test(complex_plane_should_scale_to_the_largest_point),
        cmocka_unit_test(bars_should_have_eighths_and_marks),
        cmocka_unit_test(range_should_hold_values_and_reference),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
