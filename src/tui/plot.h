/*
 * tui/plot: the likelihood curve on a grid of dots, and the dots as
 * characters (braille cells, or an ASCII fallback). Pure functions, no
 * curses (tests/unit/test_tui_plot.c).
 */
#ifndef COTERIE_TUI_PLOT_H
#define COTERIE_TUI_PLOT_H

#include <stddef.h>

/* Rasterise n values (x evenly by index) into a grid of dw x dh dots
 * (row 0 at the top), joining consecutive points with vertical runs.
 * grid has dw * dh bytes, set to 0/1. lo/hi give the value range
 * (lo < hi; a flat series is drawn in the middle). Returns 0, or -1 when
 * the grid is empty. */
int plot_raster(const double *y, size_t n, double lo, double hi, int dw, int dh,
		unsigned char *grid);
/* The dot column of point i of n on a grid dw dots wide. */
int plot_column(size_t i, size_t n, int dw);
/* Encode the 2 x 4 dots at cell (cx, cy) as a braille character (UTF-8
 * into out, 4 bytes max + NUL); returns 0 when the cell is empty. */
int plot_braille(const unsigned char *grid, int dw, int dh, int cx, int cy, char *out);
/* The ASCII fallback: one column and three levels per cell: returns
 * '\'', '-', '.', '|' (several levels) or 0 for empty. */
int plot_ascii(const unsigned char *grid, int dw, int dh, int cx, int cy);

#endif
