/*
 * tui/plot: the likelihood curve as a grid of dots, without curses.
 *
 * The curve is drawn on a grid of "dots" finer than the screen: braille
 * gives 2 x 4 dots per cell, the ASCII fallback 1 x 3. Points are spread
 * evenly over the width by index (sweeps are evenly spaced in the trace)
 * and consecutive points are joined, so a curve of three points and one
 * of three thousand both read as a line. Columns that several points fall
 * into get a vertical run covering all of them: nothing is averaged away.
 *
 * Pure functions of their arguments, so tests can check them without a
 * terminal.
 */
#include "plot.h"

#include <math.h>
#include <stdint.h>
#include <string.h>

int plot_column(size_t i, size_t n, int dw)
{
	if (n <= 1 || dw <= 1)
		return 0;
	if (i >= n)
		i = n - 1;
	/* exact in 64 bits for any realistic trace and width */
	return (int)(((uint64_t)i * (uint64_t)(dw - 1) + (n - 1) / 2) / (n - 1));
}

static double ydot(double v, double lo, double hi, int dh)
{
	if (!(hi > lo))
		return (double)(dh / 2);
	double t = (v - lo) / (hi - lo);
	if (t < 0)
		t = 0;
	if (t > 1)
		t = 1;
	return (double)(dh - 1) * (1.0 - t);
}

static void set_dot(unsigned char *grid, int dw, int dh, int x, long y)
{
	if (x < 0 || x >= dw || y < 0 || y >= dh)
		return;
	grid[(size_t)y * (size_t)dw + (size_t)x] = 1;
}

/* Rows a..b (either order) of column x. */
static void fill_run(unsigned char *grid, int dw, int dh, int x, long a, long b)
{
	if (a > b) {
		long t = a;
		a = b;
		b = t;
	}
	for (long y = a; y <= b; y++)
		set_dot(grid, dw, dh, x, y);
}

int plot_raster(const double *y, size_t n, double lo, double hi, int dw, int dh,
		unsigned char *grid)
{
	if (dw <= 0 || dh <= 0)
		return -1;
	memset(grid, 0, (size_t)dw * (size_t)dh);
	int have_prev = 0, px = 0;
	double py = 0;
	for (size_t i = 0; i < n; i++) {
		if (!isfinite(y[i])) {
			have_prev = 0;
			continue;
		}
		int x = plot_column(i, n, dw);
		double yy = ydot(y[i], lo, hi, dh);
		if (!have_prev || x == px) {
			/* points sharing a column: one run covering them all */
			fill_run(grid, dw, dh, x, lround(have_prev ? py : yy), lround(yy));
		} else {
			/* the segment from (px, py) to (x, yy), Bresenham-like: a
			 * column holds the rows from where the line enters it up
			 * to (not including) where it enters the next one */
			double slope = (yy - py) / (double)(x - px);
			for (int c = px; c < x; c++) {
				long a = lround(py + slope * (double)(c - px));
				long b = lround(py + slope * (double)(c + 1 - px));
				if (b > a)
					fill_run(grid, dw, dh, c, a, b - 1);
				else if (b < a)
					fill_run(grid, dw, dh, c, b + 1, a);
				else
					set_dot(grid, dw, dh, c, a);
			}
			set_dot(grid, dw, dh, x, lround(yy));
		}
		have_prev = 1;
		px = x;
		py = yy;
	}
	return 0;
}

static int dot(const unsigned char *grid, int dw, int dh, int x, int y)
{
	if (x < 0 || y < 0 || x >= dw || y >= dh)
		return 0;
	return grid[(size_t)y * (size_t)dw + (size_t)x] != 0;
}

int plot_braille(const unsigned char *grid, int dw, int dh, int cx, int cy, char *out)
{
	/* dot numbering of the Unicode braille block (U+2800): column 0 rows
	 * 0-2 are bits 0-2, column 1 rows 0-2 bits 3-5, row 3 bits 6 and 7 */
	static const unsigned bit[4][2] = { { 0x01, 0x08 }, { 0x02, 0x10 }, { 0x04, 0x20 },
					    { 0x40, 0x80 } };
	unsigned bits = 0;
	for (int r = 0; r < 4; r++)
		for (int c = 0; c < 2; c++)
			if (dot(grid, dw, dh, cx * 2 + c, cy * 4 + r))
				bits |= bit[r][c];
	out[0] = '\0';
	if (!bits)
		return 0;
	unsigned cp = 0x2800u + bits;
	out[0] = (char)(0xe0 | (cp >> 12));
	out[1] = (char)(0x80 | ((cp >> 6) & 0x3f));
	out[2] = (char)(0x80 | (cp & 0x3f));
	out[3] = '\0';
	return 1;
}

int plot_ascii(const unsigned char *grid, int dw, int dh, int cx, int cy)
{
	int top = dot(grid, dw, dh, cx, cy * 3);
	int mid = dot(grid, dw, dh, cx, cy * 3 + 1);
	int low = dot(grid, dw, dh, cx, cy * 3 + 2);
	int count = top + mid + low;
	if (count == 0)
		return 0;
	if (count > 1)
		return '|';
	return top ? '\'' : mid ? '-' : '.';
}
