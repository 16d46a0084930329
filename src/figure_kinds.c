/*
 * figure_kinds: the figures of figure.h, each drawn on the kit of
 * figure.c: the log-likelihood trace, the held-out curve of -k auto, the
 * distributions of community sizes and of memberships per node, and a
 * matrix of values in [0, 1].
 *
 * Marks are told apart by shape and dash as well as colour, so a figure
 * printed in greyscale still reads: the start a filled circle, a kept
 * reseeding move a downward triangle, the plateau a dashed line, the
 * chosen k a filled circle and a dashed line. Data are clipped to the
 * plot area; the axes are drawn last, over them.
 *
 * The one thing a newcomer would get wrong: trace.tsv holds the start
 * kept only (coterie-files(5)); the other starts leave no rows, so the
 * figure names the start ("start 2 of 3") rather than drawing the others.
 * A kept reseeding move shows in the trace as a fall of the log-likelihood
 * after the first plateau (the row before the move holds the value before
 * it), which is how the moves are found here.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/util.h"
#include "figure-internal.h"

static void clip_to_plot(struct fig *f)
{
	cairo_rectangle(f->cr, f->x0, f->y0, f->x1 - f->x0, f->y1 - f->y0);
	cairo_clip(f->cr);
}

static void vline(struct fig *f, double x, enum fig_colour c, double dash)
{
	cairo_t *cr = f->cr;
	fig_colour(f, c);
	cairo_set_line_width(cr, FIG_DATA * 0.8);
	cairo_set_dash(cr, &dash, dash > 0, 0);
	cairo_move_to(cr, x, f->y0);
	cairo_line_to(cr, x, f->y1);
	cairo_stroke(cr);
	cairo_set_dash(cr, NULL, 0, 0);
}

/* The bottom corner (2 right, 3 left) with fewer of the n points in the
 * lowest 40% of the plot, for the legend. */
static int free_bottom_corner(const struct fig *f, const double *px, const double *py,
			      uint32_t n)
{
	uint32_t left = 0, right = 0;
	double ymark = f->y1 - 0.4 * (f->y1 - f->y0), xmid = (f->x0 + f->x1) / 2;
	for (uint32_t i = 0; i < n; i++)
		if (py[i] > ymark)
			*(px[i] < xmid ? &left : &right) += 1;
	return right <= left ? 2 : 3;
}

/* ---- the trace ---- */

int figure_draw_trace(const char *path, const struct figure_opts *o,
		      const struct figure_trace *t)
{
	struct fig f;
	if (fig_begin(&f, o, FIGURE_WIDTH, FIGURE_HEIGHT))
		return -1;
	double ymin = t->p[0].y, ymax = t->p[0].y;
	for (uint32_t i = 1; i < t->n; i++) {
		ymin = fmin(ymin, t->p[i].y);
		ymax = fmax(ymax, t->p[i].y);
	}
	fig_axis_fit(&f.ax, t->p[0].x, t->p[t->n - 1].x, 0);
	f.ax.integer = 1;
	fig_axis_fit(&f.ay, ymin, ymax, 0);
	fig_layout(&f, 0, 0);
	cairo_t *cr = f.cr;
	cairo_save(cr);
	clip_to_plot(&f);
	int plateau = t->plateau_sweep > 0 && t->plateau_sweep <= t->p[t->n - 1].x;
	if (plateau)
		vline(&f, fig_x(&f, t->plateau_sweep), FIG_VERMILLION, 3);
	fig_colour(&f, FIG_BLACK);
	cairo_set_line_width(cr, FIG_DATA);
	for (uint32_t i = 0; i < t->n; i++)
		(i ? cairo_line_to : cairo_move_to)(cr, fig_x(&f, t->p[i].x), fig_y(&f, t->p[i].y));
	cairo_stroke(cr);
	/* kept reseeding moves: a fall after the first plateau */
	uint32_t moves = 0;
	fig_colour(&f, FIG_BLUE);
	for (uint32_t i = 1; i < t->n; i++)
		if (t->p[i].y < t->p[i - 1].y && (!t->plateau_sweep || t->p[i - 1].x >= t->plateau_sweep)) {
			fig_marker(&f, fig_x(&f, t->p[i - 1].x), fig_y(&f, t->p[i - 1].y),
				   FIG_TRIANGLE_DOWN, 5, 1);
			moves++;
		}
	fig_colour(&f, FIG_ORANGE);
	fig_marker(&f, fig_x(&f, t->p[0].x), fig_y(&f, t->p[0].y), FIG_CIRCLE, 5, 1);
	cairo_restore(cr);
	fig_axes(&f, "sweep", "log-likelihood");

	char start[96], plat[64], mv[64];
	if (t->starts > 1 && t->start_kept)
		snprintf(start, sizeof start, "seeded: start %u of %u (kept)", t->start_kept,
			 t->starts);
	else
		snprintf(start, sizeof start, "seeded model");
	snprintf(plat, sizeof plat, "first plateau (sweep %u)", t->plateau_sweep);
	snprintf(mv, sizeof mv, "reseeding move kept (%u)", moves);
	struct fig_key keys[3];
	int nk = 0;
	keys[nk++] = (struct fig_key){ FIG_ORANGE, -1, FIG_CIRCLE, 1, start };
	if (plateau)
		keys[nk++] = (struct fig_key){ FIG_VERMILLION, 3, -1, 0, plat };
	if (moves)
		keys[nk++] = (struct fig_key){ FIG_BLUE, -1, FIG_TRIANGLE_DOWN, 1, mv };
	fig_legend(&f, keys, nk, 2);
	return fig_finish(&f, path);
}

/* ---- the held-out curve of -k auto ---- */

static void error_bar(struct fig *f, double x, double lo, double hi)
{
	cairo_t *cr = f->cr;
	double a = fig_y(f, lo), b = fig_y(f, hi);
	cairo_move_to(cr, x, a);
	cairo_line_to(cr, x, b);
	cairo_move_to(cr, x - 1.6, a);
	cairo_line_to(cr, x + 1.6, a);
	cairo_move_to(cr, x - 1.6, b);
	cairo_line_to(cr, x + 1.6, b);
}

int figure_draw_kcurve(const char *path, const struct figure_opts *o,
		       const struct figure_kcurve *k)
{
	struct fig f;
	if (fig_begin(&f, o, FIGURE_WIDTH, FIGURE_HEIGHT))
		return -1;
	double ymin = INFINITY, ymax = -INFINITY;
	int spread = 0, added = 0;
	for (uint32_t i = 0; i < k->n; i++) {
		const struct figure_kpoint *p = &k->p[i];
		double sd = p->folds > 1 && isfinite(p->sd) ? p->sd : 0;
		spread |= p->folds > 1;
		added |= p->added;
		ymin = fmin(ymin, p->loglik - sd);
		ymax = fmax(ymax, p->loglik + sd);
	}
	fig_axis_fit(&f.ax, k->p[0].k, k->p[k->n - 1].k, 1);
	fig_axis_fit(&f.ay, ymin, ymax, 0);
	fig_layout(&f, 0, 0);
	cairo_t *cr = f.cr;
	cairo_save(cr);
	clip_to_plot(&f);
	const struct figure_kpoint *chosen = NULL;
	for (uint32_t i = 0; i < k->n; i++)
		if (k->p[i].k == k->chosen)
			chosen = &k->p[i];
	if (chosen)
		vline(&f, fig_x(&f, chosen->k), FIG_VERMILLION, 3);
	fig_colour(&f, FIG_GREY);
	cairo_set_line_width(cr, FIG_LINE);
	for (uint32_t i = 0; i < k->n; i++)
		if (k->p[i].folds > 1 && isfinite(k->p[i].sd))
			error_bar(&f, fig_x(&f, k->p[i].k), k->p[i].loglik - k->p[i].sd,
				  k->p[i].loglik + k->p[i].sd);
	cairo_stroke(cr);
	fig_colour(&f, FIG_BLACK);
	cairo_set_line_width(cr, FIG_DATA);
	for (uint32_t i = 0; i < k->n; i++)
		(i ? cairo_line_to : cairo_move_to)(cr, fig_x(&f, k->p[i].k),
						    fig_y(&f, k->p[i].loglik));
	cairo_stroke(cr);
	double *px = util_calloc(2 * (size_t)k->n, sizeof *px);
	for (uint32_t i = 0; i < k->n; i++) {
		const struct figure_kpoint *p = &k->p[i];
		double x = fig_x(&f, p->k), y = fig_y(&f, p->loglik);
		if (px) {
			px[i] = x;
			px[k->n + i] = y;
		}
		fig_colour(&f, p == chosen ? FIG_VERMILLION : FIG_BLACK);
		fig_marker(&f, x, y, p->added ? FIG_DIAMOND : FIG_CIRCLE, p == chosen ? 6 : 4.2,
			   p == chosen);
	}
	cairo_restore(cr);
	fig_axes(&f, "communities k", "held-out log-likelihood");

	char ch[64], mean[96];
	snprintf(ch, sizeof ch, "chosen: k = %u", k->chosen);
	uint32_t folds = k->p[0].folds;
	if (spread)
		snprintf(mean, sizeof mean, "mean of %u splits, \u00b11 sd", folds);
	else
		snprintf(mean, sizeof mean, "one held-out split");
	struct fig_key keys[3];
	int nk = 0;
	keys[nk++] = (struct fig_key){ FIG_BLACK, 0, FIG_CIRCLE, 0, mean };
	if (added)
		keys[nk++] = (struct fig_key){ FIG_BLACK, -1, FIG_DIAMOND, 0, "k added past the grid" };
	if (chosen)
		keys[nk++] = (struct fig_key){ FIG_VERMILLION, 3, FIG_CIRCLE, 1, ch };
	fig_legend(&f, keys, nk, px ? free_bottom_corner(&f, px, px + k->n, k->n) : 2);
	free(px);
	return fig_finish(&f, path);
}

/* ---- distributions ---- */

/* A note above the plot area's top right corner (fig_layout() with
 * NOTE_ROOM on top). */
#define NOTE_ROOM (FIG_SMALL + 3)
static void corner_note(struct fig *f, const char *s)
{
	fig_colour(f, FIG_BLACK);
	fig_text(f, f->x1, f->y0 - 4, s, FIG_SMALL, 1, 1, 0);
}

int figure_draw_sizes(const char *path, const struct figure_opts *o,
		      const struct figure_counts *sizes)
{
	uint32_t lo = 0, hi = 0;
	uint64_t comms = 0;
	for (uint32_t s = 1; s <= sizes->max; s++)
		if (sizes->count[s]) {
			lo = lo ? lo : s;
			hi = s;
			comms += sizes->count[s];
		}
	if (!comms)
		return error("no community has a member: nothing to draw");
	struct fig f;
	if (fig_begin(&f, o, FIGURE_WIDTH, FIGURE_HEIGHT))
		return -1;
	fig_axis_fit(&f.ax, lo, hi, 1);
	fig_axis_fit(&f.ay, 1, (double)comms, 1);
	fig_layout(&f, 0, NOTE_ROOM);
	cairo_t *cr = f.cr;
	cairo_save(cr);
	clip_to_plot(&f);
	/* N(>= s) is N_i at size s_i and N_{i+1} just above it: down at s_i,
	 * then along to s_{i+1} */
	uint64_t left = comms;
	int first = 1;
	fig_colour(&f, FIG_BLUE);
	cairo_set_line_width(cr, FIG_DATA * 0.8);
	for (uint32_t s = lo; s <= hi; s++) {
		if (!sizes->count[s])
			continue;
		double x = fig_x(&f, s), y = fig_y(&f, (double)left);
		if (first)
			cairo_move_to(cr, x, y);
		else
			cairo_line_to(cr, x, y);
		first = 0;
		left -= sizes->count[s];
		if (left)
			cairo_line_to(cr, x, fig_y(&f, (double)left));
	}
	cairo_stroke(cr);
	left = comms;
	for (uint32_t s = lo; s <= hi; s++) {
		if (!sizes->count[s])
			continue;
		fig_marker(&f, fig_x(&f, s), fig_y(&f, (double)left), FIG_CIRCLE, 4, 1);
		left -= sizes->count[s];
	}
	cairo_restore(cr);
	fig_axes(&f, "community size s (members)", "communities of size \u2265 s");
	char note[96];
	snprintf(note, sizeof note, "%llu communities, sizes %u to %u", (unsigned long long)comms,
		 lo, hi);
	corner_note(&f, note);
	return fig_finish(&f, path);
}

int figure_draw_memberships(const char *path, const struct figure_opts *o,
			    const struct figure_counts *m)
{
	uint64_t top = 0, nodes = 0, multi = 0;
	for (uint32_t v = m->zero_known ? 0 : 1; v <= m->max; v++) {
		top = m->count[v] > top ? m->count[v] : top;
		nodes += m->count[v];
		multi += v >= 2 ? m->count[v] : 0;
	}
	if (!top)
		return error("no node has a membership: nothing to draw");
	struct fig f;
	if (fig_begin(&f, o, FIGURE_WIDTH, FIGURE_HEIGHT))
		return -1;
	uint32_t first = m->zero_known ? 0 : 1;
	f.ax = (struct fig_axis){ .lo = first - 0.7, .hi = m->max + 0.7, .integer = 1 };
	fig_axis_fit(&f.ay, 1, (double)top, 1);
	f.ay.lo = 0.7; /* a bar of one node stands clear of the axis */
	fig_layout(&f, 0, NOTE_ROOM);
	cairo_t *cr = f.cr;
	double bw = fmin(0.8 * (fig_x(&f, 1) - fig_x(&f, 0)), 24);
	for (uint32_t v = first; v <= m->max; v++) {
		if (!m->count[v])
			continue;
		double x = fig_x(&f, v), y = fig_y(&f, (double)m->count[v]);
		cairo_rectangle(cr, x - bw / 2, y, bw, f.y1 - y);
		fig_colour(&f, FIG_SKY);
		cairo_fill_preserve(cr);
		fig_colour(&f, FIG_BLACK);
		cairo_set_line_width(cr, FIG_LINE);
		cairo_stroke(cr);
	}
	fig_axes(&f, "communities of a node", "nodes");
	char note[96];
	snprintf(note, sizeof note, "%llu nodes, %llu in two or more", (unsigned long long)nodes,
		 (unsigned long long)multi);
	corner_note(&f, note);
	if (!m->zero_known)
		fig_text(&f, f.x1 - 4, f.y0 + 4, "(nodes in none not known)", FIG_SMALL, 1, 0, 0);
	return fig_finish(&f, path);
}

/* ---- a matrix of values in [0, 1] ---- */

#define LABEL_CHARS 10 /* row and column labels are cut to this */
#define BAR_W 7.0      /* the colour bar's width, pt */

static void cell_colour(struct fig *f, double v)
{
	if (isnan(v)) {
		fig_colour(f, FIG_LIGHT_GREY);
		return;
	}
	double rgb[3];
	fig_viridis(v, rgb);
	cairo_set_source_rgb(f->cr, rgb[0], rgb[1], rgb[2]);
}

/* The widest of the labels (escaped and cut) at FIG_SMALL. */
static double widest(struct fig *f, char *const *labels, uint32_t n)
{
	double w = 0;
	char buf[64];
	for (uint32_t i = 0; i < n; i++)
		w = fmax(w, fig_text_width(f, fig_label(labels[i], buf, sizeof buf, LABEL_CHARS),
					   FIG_SMALL));
	return w;
}

/* The colour bar from (x, y0) to y1, with 0, 0.5 and 1 marked. */
static void colour_bar(struct fig *f, double x, double y0, double y1, const char *title)
{
	cairo_t *cr = f->cr;
	const int steps = 64;
	double h = (y1 - y0) / steps;
	for (int i = 0; i < steps; i++) {
		cell_colour(f, (i + 0.5) / steps);
		cairo_rectangle(cr, x, y1 - (i + 1) * h, BAR_W, h + 0.3);
		cairo_fill(cr);
	}
	fig_colour(f, FIG_BLACK);
	cairo_set_line_width(cr, FIG_LINE);
	cairo_rectangle(cr, x, y0, BAR_W, y1 - y0);
	static const char *const marks[] = { "0", "0.5", "1" };
	for (int i = 0; i <= 4; i++) {
		double y = y1 - i * (y1 - y0) / 4;
		cairo_move_to(cr, x + BAR_W, y);
		cairo_line_to(cr, x + BAR_W + (i % 2 ? 1.8 : 3), y);
		if (i % 2 == 0)
			fig_text(f, x + BAR_W + 4.5, y, marks[i / 2], FIG_SMALL, 0, 0.5, 0);
	}
	cairo_stroke(cr);
	double tw = fig_text_width(f, "0.5", FIG_SMALL);
	fig_text(f, x + BAR_W + 6 + tw + FIG_LABEL * 0.9, (y0 + y1) / 2, title, FIG_LABEL, 0.5, 1,
		 -M_PI / 2);
}

/* Labels every step-th row (at the left) and column (below, upright). */
static void matrix_labels(struct fig *f, const struct figure_matrix *m, double cell)
{
	char buf[64];
	uint32_t step = (uint32_t)ceil((FIG_SMALL + 1) / cell);
	fig_colour(f, FIG_BLACK);
	for (uint32_t i = 0; i < m->rows; i += step)
		fig_text(f, f->x0 - 2, f->y0 + (i + 0.5) * cell,
			 fig_label(m->row_label[i], buf, sizeof buf, LABEL_CHARS), FIG_SMALL, 1, 0.5, 0);
	for (uint32_t j = 0; j < m->cols; j += step)
		fig_text(f, f->x0 + (j + 0.5) * cell, f->y1 + 2,
			 fig_label(m->col_label[j], buf, sizeof buf, LABEL_CHARS), FIG_SMALL, 1, 0.5,
			 -M_PI / 2);
}

int figure_draw_matrix(const char *path, const struct figure_opts *o,
		       const struct figure_matrix *m)
{
	if (!m->rows || !m->cols)
		return error("the matrix has no row or no column: nothing to draw");
	struct fig f;
	if (fig_begin(&f, o, FIGURE_WIDTH, FIGURE_MATRIX_HEIGHT))
		return -1;
	cairo_t *cr = f.cr;
	char title[160];
	double wcol = widest(&f, m->col_label, m->cols);
	double left = 4 + FIG_LABEL + 4 + widest(&f, m->row_label, m->rows) + 3;
	double below = 2 + wcol + 4 + FIG_LABEL + 4;
	double bar = 5 + BAR_W + 6 + fig_text_width(&f, "0.5", FIG_SMALL) + FIG_LABEL + 6;
	double top = m->note ? 6 + FIG_SMALL + 5 : 6;
	double cell = fmin((f.w - left - bar) / m->cols, (f.h - top - below) / m->rows);
	/* the block (note, matrix, labels, title) centred on the page's height */
	double spare = f.h - top - below - cell * m->rows;
	f.x0 = left;
	f.x1 = left + cell * m->cols;
	f.y0 = top + spare / 2;
	f.y1 = f.y0 + cell * m->rows;
	for (uint32_t i = 0; i < m->rows; i++)
		for (uint32_t j = 0; j < m->cols; j++) {
			cell_colour(&f, m->v[(size_t)i * m->cols + j]);
			/* a hair wider than the cell: no seams between cells */
			cairo_rectangle(cr, f.x0 + j * cell, f.y0 + i * cell, cell + 0.2, cell + 0.2);
			cairo_fill(cr);
		}
	if (m->numbers && cell >= 16)
		for (uint32_t i = 0; i < m->rows; i++)
			for (uint32_t j = 0; j < m->cols; j++) {
				double v = m->v[(size_t)i * m->cols + j];
				if (isnan(v))
					continue;
				char num[16];
				snprintf(num, sizeof num, "%.2f", v);
				if (v < 0.55)
					cairo_set_source_rgb(cr, 1, 1, 1);
				else
					fig_colour(&f, FIG_BLACK);
				fig_text(&f, f.x0 + (j + 0.5) * cell, f.y0 + (i + 0.5) * cell, num, FIG_SMALL,
					 0.5, 0.5, 0);
			}
	fig_colour(&f, FIG_BLACK);
	cairo_set_line_width(cr, FIG_LINE);
	cairo_rectangle(cr, f.x0, f.y0, f.x1 - f.x0, f.y1 - f.y0);
	cairo_stroke(cr);
	matrix_labels(&f, m, cell);
	fig_label(m->row_title ? m->row_title : "", title, sizeof title, 60);
	fig_text(&f, 4 + FIG_LABEL * 0.8, (f.y0 + f.y1) / 2, title, FIG_LABEL, 0.5, 1, -M_PI / 2);
	fig_label(m->col_title ? m->col_title : "", title, sizeof title, 60);
	fig_text(&f, (f.x0 + f.x1) / 2, f.y1 + 2 + wcol + 4 + FIG_LABEL, title, FIG_LABEL, 0.5, 1,
		 0);
	if (m->note) {
		fig_label(m->note, title, sizeof title, 70);
		fig_text(&f, f.x0, f.y0 - 5, title, FIG_SMALL, 0, 1, 0);
	}
	colour_bar(&f, f.x1 + 5, f.y0, f.y1, m->value_title ? m->value_title : "value");
	return fig_finish(&f, path);
}
