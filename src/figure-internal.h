/*
 * figure-internal: the plotting kit figure.c gives figure_kinds.c. Not for
 * use outside the figure module.
 *
 * Coordinates: the page is in points, origin top left; data go through
 * fig_x()/fig_y(), which map an axis (linear or log10) onto the plot area
 * [x0, x1] x [y0, y1] (y0 the top). Sizes of text are in points.
 */
#ifndef COTERIE_FIGURE_INTERNAL_H
#define COTERIE_FIGURE_INTERNAL_H

#include <stddef.h>

#include <cairo.h>

#include "coterie/figure.h"

/* Type sizes (pt): nothing smaller than FIG_SMALL is drawn. */
#define FIG_SMALL 7.0  /* tick labels, legends, cell numbers */
#define FIG_LABEL 8.0  /* axis titles */
#define FIG_LINE 0.6   /* axes and ticks */
#define FIG_DATA 1.1   /* data lines */

/* The Okabe-Ito set and two greys (see figure.c for the source). */
enum fig_colour {
	FIG_BLACK = 0,
	FIG_ORANGE,
	FIG_SKY,
	FIG_GREEN,
	FIG_YELLOW,
	FIG_BLUE,
	FIG_VERMILLION,
	FIG_PURPLE,
	FIG_GREY,       /* grid and shading */
	FIG_LIGHT_GREY,
};

enum fig_shape { FIG_CIRCLE, FIG_SQUARE, FIG_TRIANGLE_DOWN, FIG_DIAMOND };

struct fig_axis {
	double lo, hi; /* the range shown, in data units (> 0 when log) */
	int log;       /* log10 scale */
	int exp10;     /* linear tick labels are v / 10^exp10 (0: as they are) */
	int integer;   /* ticks at whole numbers only */
};

struct fig_buf {
	unsigned char *data;
	size_t len, cap;
	int failed;
};

struct fig {
	cairo_surface_t *surf;
	cairo_t *cr;
	enum figure_format format;
	double w, h;
	double x0, x1, y0, y1; /* the plot area (y0 the top) */
	struct fig_axis ax, ay;
	struct fig_buf out;
};

/* One legend line: a line sample (dash 0: solid; <0: none), a marker
 * (shape < 0: none) and a text. */
struct fig_key {
	enum fig_colour colour;
	double dash;
	int shape;
	int filled;
	const char *text;
};

/* A page of w x h points in o's format: 0, or -1 with a message. */
int fig_begin(struct fig *f, const struct figure_opts *o, double w, double h);
/* End the page and write it to path (atomically): 0 or -1 with a message.
 * Releases f either way. */
int fig_finish(struct fig *f, const char *path);
/* Release f without writing. */
void fig_abandon(struct fig *f);

/* Set an axis to hold [lo, hi] with a margin (log: lo > 0). */
void fig_axis_fit(struct fig_axis *a, double lo, double hi, int log);
/* Place the plot area for these axes: room for the tick labels and axis
 * titles, plus right and top space (pt) for the caller. */
void fig_layout(struct fig *f, double right, double top);
/* Draw the frame, ticks, tick labels and axis titles. */
void fig_axes(struct fig *f, const char *xtitle, const char *ytitle);

double fig_x(const struct fig *f, double v);
double fig_y(const struct fig *f, double v);

void fig_colour(struct fig *f, enum fig_colour c);
/* The viridis map at t in [0, 1] into rgb[3]. */
void fig_viridis(double t, double rgb[3]);

/* Text at (x, y): ha 0 left, 0.5 centre, 1 right; va 0 top, 0.5 middle,
 * 1 baseline. s must be printable UTF-8 (the module's own strings or
 * fig_label()'s). angle in radians, about (x, y). */
void fig_text(struct fig *f, double x, double y, const char *s, double size, double ha,
	      double va, double angle);
double fig_text_width(struct fig *f, const char *s, double size);
void fig_marker(struct fig *f, double x, double y, enum fig_shape shape, double size,
		int filled);
/* A legend of n keys in the plot area's corner: 0 top left, 1 top right,
 * 2 bottom right, 3 bottom left. */
void fig_legend(struct fig *f, const struct fig_key *keys, int n, int corner);

/* A string from a file made drawable: escaped to printable ASCII
 * (util_escape()) and cut to at most max characters ("..." ending a cut
 * one). Returns buf. */
char *fig_label(const char *s, char *buf, size_t cap, size_t max);

/* DIR/memberships.tsv read into nodes (borrowed; cover_read()): 0, or -1
 * with a message (a missing file said plainly). figure_read.c. */
int figure_read_cover(const char *dir, struct names *nodes, struct cover *out);

#endif
