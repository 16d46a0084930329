/*
 * The explorer's likelihood plot (src/tui/plot.c): pure functions from a
 * series of values to a grid of dots and from dots to characters. The
 * file is included whole: it has no state and needs no terminal, and the
 * test build links only the core library.
 */
#include <math.h>
#include <string.h>

#include "helpers.h"
#include "../src/tui/plot.c"

static void test_plot_column_spreads_points_over_the_width(void **state)
{
	(void)state;
	/* n points over dw columns: first at 0, last at dw - 1, never back */
	assert_int_equal(plot_column(0, 5, 9), 0);
	assert_int_equal(plot_column(4, 5, 9), 8);
	/* hand-worked: i * (dw - 1) / (n - 1) rounded: 1 * 8 / 4 = 2, 2 * 8 / 4 = 4 */
	assert_int_equal(plot_column(1, 5, 9), 2);
	assert_int_equal(plot_column(2, 5, 9), 4);
	int prev = 0;
	for (size_t i = 0; i < 1000; i++) {
		int c = plot_column(i, 1000, 37);
		assert_true(c >= prev && c <= 36);
		prev = c;
	}
	assert_int_equal(plot_column(0, 1, 10), 0); /* one point: left edge */
}

static void test_plot_raster_draws_a_rising_line_on_the_diagonal(void **state)
{
	(void)state;
	/* values 0,1,2,3 on a 4 x 4 grid, range [0, 3]: point i sits in column
	 * i and row 3 - i (row 0 is the top), nothing else is set */
	double y[4] = { 0, 1, 2, 3 };
	unsigned char g[16];
	assert_int_equal(plot_raster(y, 4, 0, 3, 4, 4, g), 0);
	for (int r = 0; r < 4; r++)
		for (int c = 0; c < 4; c++)
			assert_int_equal(g[r * 4 + c], r == 3 - c);
}

static void test_plot_raster_joins_a_jump_with_a_vertical_run(void **state)
{
	(void)state;
	/* two points, 0 then 4, on a 2 x 5 grid: the line climbs from the
	 * bottom row of column 0 to the top row of column 1 with no gap */
	double y[2] = { 0, 4 };
	unsigned char g[10];
	plot_raster(y, 2, 0, 4, 2, 5, g);
	for (int r = 0; r < 5; r++)
		assert_true(g[r * 2] || g[r * 2 + 1]);
	assert_int_equal(g[4 * 2 + 0], 1); /* start: bottom left */
	assert_int_equal(g[0 * 2 + 1], 1); /* end: top right */
}

static void test_plot_raster_puts_a_flat_series_in_the_middle(void **state)
{
	(void)state;
	double y[3] = { -5, -5, -5 };
	unsigned char g[3 * 5];
	plot_raster(y, 3, -5, -5, 3, 5, g); /* lo == hi */
	for (int r = 0; r < 5; r++)
		for (int c = 0; c < 3; c++)
			assert_int_equal(g[r * 3 + c], r == 2);
}

static void test_plot_raster_breaks_the_line_at_a_missing_value(void **state)
{
	(void)state;
	double y[3] = { 0, NAN, 0 };
	unsigned char g[3 * 3];
	plot_raster(y, 3, 0, 1, 3, 3, g);
	for (int r = 0; r < 3; r++)
		assert_int_equal(g[r * 3 + 1], 0); /* the middle column stays empty */
	assert_int_equal(g[2 * 3 + 0], 1);
	assert_int_equal(g[2 * 3 + 2], 1);
}

static void test_plot_braille_follows_the_unicode_dot_numbering(void **state)
{
	(void)state;
	/* The Unicode Standard, Braille Patterns block U+2800..U+28FF: dot n
	 * is bit n - 1; dots 1-3 run down the left column, 4-6 down the right,
	 * 7 and 8 are the bottom row. UTF-8 of U+2801 is e2 a0 81. */
	unsigned char g[2 * 4];
	char out[8];
	memset(g, 0, sizeof g);
	assert_int_equal(plot_braille(g, 2, 4, 0, 0, out), 0);
	g[0] = 1; /* top left: dot 1 */
	assert_int_equal(plot_braille(g, 2, 4, 0, 0, out), 1);
	assert_string_equal(out, "\xe2\xa0\x81");
	memset(g, 0, sizeof g);
	g[3 * 2 + 1] = 1; /* bottom right: dot 8, U+2880 */
	plot_braille(g, 2, 4, 0, 0, out);
	assert_string_equal(out, "\xe2\xa2\x80");
	memset(g, 1, sizeof g); /* all eight: U+28FF */
	plot_braille(g, 2, 4, 0, 0, out);
	assert_string_equal(out, "\xe2\xa3\xbf");
}

static void test_plot_ascii_shows_three_levels_and_runs(void **state)
{
	(void)state;
	unsigned char g[3];
	memset(g, 0, sizeof g);
	assert_int_equal(plot_ascii(g, 1, 3, 0, 0), 0);
	g[0] = 1;
	assert_int_equal(plot_ascii(g, 1, 3, 0, 0), '\'');
	memset(g, 0, sizeof g);
	g[1] = 1;
	assert_int_equal(plot_ascii(g, 1, 3, 0, 0), '-');
	memset(g, 0, sizeof g);
	g[2] = 1;
	assert_int_equal(plot_ascii(g, 1, 3, 0, 0), '.');
	g[0] = 1;
	assert_int_equal(plot_ascii(g, 1, 3, 0, 0), '|');
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_plot_column_spreads_points_over_the_width),
		cmocka_unit_test(test_plot_raster_draws_a_rising_line_on_the_diagonal),
		cmocka_unit_test(test_plot_raster_joins_a_jump_with_a_vertical_run),
		cmocka_unit_test(test_plot_raster_puts_a_flat_series_in_the_middle),
		cmocka_unit_test(test_plot_raster_breaks_the_line_at_a_missing_value),
		cmocka_unit_test(test_plot_braille_follows_the_unicode_dot_numbering),
		cmocka_unit_test(test_plot_ascii_shows_three_levels_and_runs),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
