/*
 * figure: the plotting kit of the figure module (figure-internal.h): a
 * page on a cairo surface, axes (linear or log10) with ticks and labels,
 * text, markers, legends, the two palettes, and writing the file.
 *
 * The page is drawn in points whatever the format: PDF and SVG surfaces
 * are sized in points; a PNG surface is dpi/72 pixels a point and the
 * context is scaled, so one drawing serves the three formats. The bytes
 * are collected in memory (a figure is small) and written with
 * atomicfile_replace(), so a failed figure leaves no part of a file.
 *
 * The one thing a newcomer would get wrong: cairo's toy text API puts the
 * context into a sticky error state on a string that is not valid UTF-8,
 * and every later call then does nothing. Only the module's own strings
 * and fig_label()'s (printable ASCII) reach fig_text().
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include <cairo-pdf.h>
#include <fontconfig/fontconfig.h>
#include <cairo-svg.h>

#include "coterie/atomicfile.h"
#include "coterie/util.h"
#include "figure-internal.h"

#define TICK 3.0 /* tick length, pt */

/* ---- formats ---- */

int figure_format_of_name(const char *name, enum figure_format *out)
{
	static const char *const names[] = { "pdf", "svg", "png" };
	for (int i = 0; i < 3; i++)
		if (!strcasecmp(name, names[i])) {
			*out = (enum figure_format)i;
			return 0;
		}
	return -1;
}

int figure_format_of_path(const char *path, enum figure_format *out)
{
	const char *dot = strrchr(path, '.');
	const char *slash = strrchr(path, '/');
	if (!dot || (slash && dot < slash))
		return -1;
	return figure_format_of_name(dot + 1, out);
}

/* ---- palettes ---- */

/*
 * Okabe & Ito, "Color Universal Design (CUD): how to make figures and
 * presentations that are friendly to colorblind people" (2008), the eight
 * colours in sRGB 0-255; then two greys of ours.
 */
static const unsigned char palette[][3] = {
	[FIG_BLACK] = { 0, 0, 0 },
	[FIG_ORANGE] = { 230, 159, 0 },
	[FIG_SKY] = { 86, 180, 233 },
	[FIG_GREEN] = { 0, 158, 115 },
	[FIG_YELLOW] = { 240, 228, 66 },
	[FIG_BLUE] = { 0, 114, 178 },
	[FIG_VERMILLION] = { 213, 94, 0 },
	[FIG_PURPLE] = { 204, 121, 167 },
	[FIG_GREY] = { 150, 150, 150 },
	[FIG_LIGHT_GREY] = { 232, 232, 232 },
};

void fig_colour(struct fig *f, enum fig_colour c)
{
	cairo_set_source_rgb(f->cr, palette[c][0] / 255.0, palette[c][1] / 255.0,
			     palette[c][2] / 255.0);
}

/*
 * viridis (S. van der Walt and N. Smith for matplotlib, 2015; CC0),
 * sampled at 9 evenly spaced points as R's viridisLite::viridis(9) lists
 * them; between stops the colour is interpolated linearly in sRGB. Its
 * lightness rises from end to end, so it reads in greyscale and for
 * every common colour-vision deficiency.
 */
static const unsigned char viridis[9][3] = {
	{ 0x44, 0x01, 0x54 }, { 0x47, 0x2d, 0x7b }, { 0x3b, 0x52, 0x8b },
	{ 0x2c, 0x72, 0x8e }, { 0x21, 0x90, 0x8c }, { 0x27, 0xad, 0x81 },
	{ 0x5d, 0xc8, 0x63 }, { 0xaa, 0xdc, 0x32 }, { 0xfd, 0xe7, 0x25 },
};

void fig_viridis(double t, double rgb[3])
{
	if (!(t > 0))
		t = 0;
	if (t > 1)
		t = 1;
	double s = t * 8;
	int i = (int)s;
	if (i > 7)
		i = 7;
	double u = s - i;
	for (int c = 0; c < 3; c++)
		rgb[c] = ((1 - u) * viridis[i][c] + u * viridis[i + 1][c]) / 255.0;
}

/* ---- the page ---- */

static cairo_status_t buf_write(void *closure, const unsigned char *data, unsigned int len)
{
	struct fig_buf *b = closure;
	if (b->len + len > b->cap) {
		size_t cap = b->cap ? b->cap : 65536;
		while (cap < b->len + len)
			cap *= 2;
		unsigned char *d = realloc(b->data, cap);
		if (!d) {
			b->failed = 1;
			return CAIRO_STATUS_WRITE_ERROR;
		}
		b->data = d;
		b->cap = cap;
	}
	memcpy(b->data + b->len, data, len);
	b->len += len;
	return CAIRO_STATUS_SUCCESS;
}

int fig_begin(struct fig *f, const struct figure_opts *o, double w, double h)
{
	memset(f, 0, sizeof *f);
	f->format = o->format;
	f->w = w;
	f->h = h;
	double scale = 1;
	switch (o->format) {
	case FIGURE_PDF:
		f->surf = cairo_pdf_surface_create_for_stream(buf_write, &f->out, w, h);
		cairo_pdf_surface_set_metadata(f->surf, CAIRO_PDF_METADATA_CREATOR, "coterie");
		break;
	case FIGURE_SVG:
		f->surf = cairo_svg_surface_create_for_stream(buf_write, &f->out, w, h);
		break;
	case FIGURE_PNG:
		scale = o->dpi / 72.0;
		f->surf = cairo_image_surface_create(CAIRO_FORMAT_RGB24, (int)lround(w * scale),
						     (int)lround(h * scale));
		break;
	}
	if (cairo_surface_status(f->surf) != CAIRO_STATUS_SUCCESS) {
		int rc = error("cannot make the figure's page: %s",
			       cairo_status_to_string(cairo_surface_status(f->surf)));
		cairo_surface_destroy(f->surf);
		f->surf = NULL;
		return rc;
	}
	f->cr = cairo_create(f->surf);
	cairo_scale(f->cr, scale, scale);
	cairo_set_source_rgb(f->cr, 1, 1, 1);
	cairo_paint(f->cr);
	cairo_select_font_face(f->cr, "sans-serif", CAIRO_FONT_SLANT_NORMAL,
			       CAIRO_FONT_WEIGHT_NORMAL);
	cairo_set_line_join(f->cr, CAIRO_LINE_JOIN_ROUND);
	return 0;
}

void fig_abandon(struct fig *f)
{
	if (f->cr)
		cairo_destroy(f->cr);
	if (f->surf)
		cairo_surface_destroy(f->surf);
	free(f->out.data);
	memset(f, 0, sizeof *f);
}

static int fill_file(struct atomicfile *w, const void *arg)
{
	const struct fig_buf *b = arg;
	atomicfile_write(w, b->data, b->len);
	return 0;
}

int fig_finish(struct fig *f, const char *path)
{
	cairo_status_t st = cairo_status(f->cr);
	cairo_destroy(f->cr);
	f->cr = NULL;
	if (st == CAIRO_STATUS_SUCCESS) {
		if (f->format == FIGURE_PNG) {
			cairo_surface_flush(f->surf);
			st = cairo_surface_write_to_png_stream(f->surf, buf_write, &f->out);
		} else {
			cairo_surface_finish(f->surf);
			st = cairo_surface_status(f->surf);
		}
	}
	int rc = 0;
	if (st != CAIRO_STATUS_SUCCESS || f->out.failed || f->out.len == 0) {
		char buf[512];
		rc = error("cannot draw '%s': %s", util_escape(path, buf, sizeof buf, 1),
			   f->out.failed ? "out of memory" : cairo_status_to_string(st));
	} else {
		rc = atomicfile_replace(path, fill_file, &f->out);
	}
	fig_abandon(f);
	return rc;
}

void figure_release_caches(void)
{
	cairo_debug_reset_static_data();
	FcFini();
}

/* ---- axes ---- */

void fig_axis_fit(struct fig_axis *a, double lo, double hi, int log)
{
	a->log = log;
	a->exp10 = 0;
	if (log) {
		double l = log10(lo), h = log10(hi);
		double pad = (h - l) * 0.05;
		if (pad < 0.08)
			pad = 0.08;
		a->lo = pow(10, l - pad);
		a->hi = pow(10, h + pad);
		return;
	}
	if (hi <= lo) {
		double d = fabs(lo) > 0 ? fabs(lo) * 0.1 : 1;
		lo -= d;
		hi += d;
	}
	double pad = (hi - lo) * 0.04;
	a->lo = lo - pad;
	a->hi = hi + pad;
	double m = fmax(fabs(a->lo), fabs(a->hi));
	if (m >= 1e5 || (m > 0 && m < 1e-3))
		a->exp10 = (int)floor(log10(m));
}

double fig_x(const struct fig *f, double v)
{
	const struct fig_axis *a = &f->ax;
	double t = a->log ? (log10(v) - log10(a->lo)) / (log10(a->hi) - log10(a->lo))
			  : (v - a->lo) / (a->hi - a->lo);
	return f->x0 + t * (f->x1 - f->x0);
}

double fig_y(const struct fig *f, double v)
{
	const struct fig_axis *a = &f->ay;
	double t = a->log ? (log10(v) - log10(a->lo)) / (log10(a->hi) - log10(a->lo))
			  : (v - a->lo) / (a->hi - a->lo);
	return f->y1 - t * (f->y1 - f->y0);
}

#define MAX_TICKS 40

struct ticks {
	double major[MAX_TICKS];
	int nmajor;
	double minor[MAX_TICKS * 4];
	int nminor;
	double step; /* linear: the step between majors */
};

static void linear_ticks(const struct fig_axis *a, struct ticks *t)
{
	double raw = (a->hi - a->lo) / 5;
	double mag = pow(10, floor(log10(raw)));
	double norm = raw / mag;
	double step = (norm < 1.5 ? 1 : norm < 3.5 ? 2 : norm < 7.5 ? 5 : 10) * mag;
	if (a->integer && step < 1)
		step = 1;
	t->step = step;
	for (double v = ceil(a->lo / step) * step; v <= a->hi + step * 1e-9 && t->nmajor < MAX_TICKS;
	     v += step)
		t->major[t->nmajor++] = fabs(v) < step * 1e-9 ? 0 : v;
}

/* Decades (every other one beyond 8); 1, 2 and 5 a decade when that
 * gives fewer than 3 labels; every whole multiple when that still does. */
static void log_ticks(const struct fig_axis *a, struct ticks *t)
{
	double l = log10(a->lo), h = log10(a->hi);
	int every = h - l > 8 ? 2 : 1, decades = 0;
	for (int d = (int)ceil(l - 1e-9); d <= (int)floor(h + 1e-9); d++)
		decades++;
	int level = decades >= 3 ? 0 : h - l > 0.7 ? 1 : 2;
	for (int d = (int)floor(l); d <= (int)ceil(h); d++) {
		double base = pow(10, d);
		for (int m = 1; m <= 9; m++) {
			double v = m * base;
			if (v < a->lo * (1 - 1e-9) || v > a->hi * (1 + 1e-9))
				continue;
			int major = m == 1 ? d % every == 0 : level == 2 || (level == 1 && (m == 2 || m == 5));
			if (major && t->nmajor < MAX_TICKS)
				t->major[t->nmajor++] = v;
			else if (!major && t->nminor < MAX_TICKS * 4)
				t->minor[t->nminor++] = v;
		}
	}
}

static void axis_ticks(const struct fig_axis *a, struct ticks *t)
{
	memset(t, 0, sizeof *t);
	if (a->log)
		log_ticks(a, t);
	else
		linear_ticks(a, t);
}

/* "10" with the exponent in superscript digits (UTF-8). */
static void power_of_ten(char *buf, size_t cap, int e)
{
	static const char *const sup[] = { "\u2070", "\u00b9", "\u00b2", "\u00b3", "\u2074",
					   "\u2075", "\u2076", "\u2077", "\u2078", "\u2079" };
	char digits[16];
	snprintf(digits, sizeof digits, "%d", e < 0 ? -e : e);
	int w = snprintf(buf, cap, "10%s", e < 0 ? "\u207b" : "");
	for (const char *p = digits; *p && w > 0 && (size_t)w < cap; p++)
		w += snprintf(buf + w, cap - (size_t)w, "%s", sup[*p - '0']);
}

/* A number with a typographic minus sign. */
static void put_number(char *buf, size_t cap, double v, int decimals)
{
	if (v < 0)
		snprintf(buf, cap, "\u2212%.*f", decimals, -v);
	else
		snprintf(buf, cap, "%.*f", decimals, v);
}

static void tick_label(const struct fig_axis *a, const struct ticks *t, double v, char *buf,
		       size_t cap)
{
	if (a->log) {
		int e = (int)floor(log10(v) + 1e-9);
		double m = v / pow(10, e);
		if (e >= 0 && e < 4) {
			snprintf(buf, cap, "%.0f", v);
		} else if (e < 0 && e > -4) {
			snprintf(buf, cap, "%.*f", -e, v);
		} else if (fabs(m - 1) < 1e-6) {
			power_of_ten(buf, cap, e);
		} else {
			char p[32];
			power_of_ten(p, sizeof p, e);
			snprintf(buf, cap, "%.0f\u00d7%s", m, p);
		}
		return;
	}
	double scale = pow(10, a->exp10);
	double step = t->step / scale;
	int decimals = step >= 1 ? 0 : (int)ceil(-log10(step) - 1e-9);
	put_number(buf, cap, v / scale, decimals);
}

/* An axis title with the scale of its tick labels, "TITLE (×10⁵)". */
static void axis_title(const struct fig_axis *a, const char *title, char *buf, size_t cap)
{
	if (a->log || a->exp10 == 0) {
		snprintf(buf, cap, "%s", title);
		return;
	}
	char p[32];
	power_of_ten(p, sizeof p, a->exp10);
	snprintf(buf, cap, "%s (\u00d7%s)", title, p);
}

void fig_layout(struct fig *f, double right, double top)
{
	struct ticks t;
	axis_ticks(&f->ay, &t);
	double wmax = 0;
	for (int i = 0; i < t.nmajor; i++) {
		char buf[64];
		tick_label(&f->ay, &t, t.major[i], buf, sizeof buf);
		double w = fig_text_width(f, buf, FIG_SMALL);
		if (w > wmax)
			wmax = w;
	}
	f->x0 = 4 + FIG_LABEL + 5 + wmax + 2 + TICK;
	f->x1 = f->w - 8 - right;
	f->y0 = 7 + top;
	f->y1 = f->h - (4 + FIG_LABEL + 4 + FIG_SMALL + 3 + TICK);
}

void fig_axes(struct fig *f, const char *xtitle, const char *ytitle)
{
	cairo_t *cr = f->cr;
	char buf[160];
	struct ticks tx, ty;
	axis_ticks(&f->ax, &tx);
	axis_ticks(&f->ay, &ty);
	cairo_set_line_width(cr, FIG_LINE);
	cairo_set_dash(cr, NULL, 0, 0);
	fig_colour(f, FIG_BLACK);
	cairo_rectangle(cr, f->x0, f->y0, f->x1 - f->x0, f->y1 - f->y0);
	cairo_stroke(cr);
	for (int i = 0; i < tx.nmajor + tx.nminor; i++) {
		int major = i < tx.nmajor;
		double v = major ? tx.major[i] : tx.minor[i - tx.nmajor];
		double x = fig_x(f, v), len = major ? TICK : TICK * 0.6;
		cairo_move_to(cr, x, f->y1);
		cairo_line_to(cr, x, f->y1 + len);
		if (major) {
			tick_label(&f->ax, &tx, v, buf, sizeof buf);
			fig_text(f, x, f->y1 + TICK + 1.5, buf, FIG_SMALL, 0.5, 0, 0);
		}
	}
	for (int i = 0; i < ty.nmajor + ty.nminor; i++) {
		int major = i < ty.nmajor;
		double v = major ? ty.major[i] : ty.minor[i - ty.nmajor];
		double y = fig_y(f, v), len = major ? TICK : TICK * 0.6;
		cairo_move_to(cr, f->x0, y);
		cairo_line_to(cr, f->x0 - len, y);
		if (major) {
			tick_label(&f->ay, &ty, v, buf, sizeof buf);
			fig_text(f, f->x0 - TICK - 2, y, buf, FIG_SMALL, 1, 0.5, 0);
		}
	}
	cairo_stroke(cr);
	axis_title(&f->ax, xtitle, buf, sizeof buf);
	fig_text(f, (f->x0 + f->x1) / 2, f->h - 4, buf, FIG_LABEL, 0.5, 1, 0);
	axis_title(&f->ay, ytitle, buf, sizeof buf);
	fig_text(f, 4 + FIG_LABEL * 0.8, (f->y0 + f->y1) / 2, buf, FIG_LABEL, 0.5, 1, -M_PI / 2);
}

/* ---- text, markers, legends ---- */

double fig_text_width(struct fig *f, const char *s, double size)
{
	cairo_text_extents_t e;
	cairo_set_font_size(f->cr, size);
	cairo_text_extents(f->cr, s, &e);
	return e.x_advance;
}

void fig_text(struct fig *f, double x, double y, const char *s, double size, double ha,
	      double va, double angle)
{
	cairo_t *cr = f->cr;
	cairo_font_extents_t fe;
	cairo_set_font_size(cr, size);
	cairo_font_extents(cr, &fe);
	double w = fig_text_width(f, s, size);
	/* va: 0 top (the ascent below y), 0.5 middle of the capitals, 1 baseline */
	double cap = fe.ascent * 0.72;
	double dy = va <= 0 ? cap : va >= 1 ? 0 : cap * 0.5;
	cairo_save(cr);
	cairo_translate(cr, x, y);
	cairo_rotate(cr, angle);
	cairo_move_to(cr, -ha * w, dy);
	cairo_show_text(cr, s);
	cairo_new_path(cr);
	cairo_restore(cr);
}

void fig_marker(struct fig *f, double x, double y, enum fig_shape shape, double size, int filled)
{
	cairo_t *cr = f->cr;
	double r = size / 2;
	switch (shape) {
	case FIG_CIRCLE:
		cairo_new_sub_path(cr);
		cairo_arc(cr, x, y, r, 0, 2 * M_PI);
		break;
	case FIG_SQUARE:
		cairo_rectangle(cr, x - r * 0.9, y - r * 0.9, r * 1.8, r * 1.8);
		break;
	case FIG_TRIANGLE_DOWN:
		cairo_move_to(cr, x - r * 1.1, y - r * 0.8);
		cairo_line_to(cr, x + r * 1.1, y - r * 0.8);
		cairo_line_to(cr, x, y + r * 1.1);
		cairo_close_path(cr);
		break;
	case FIG_DIAMOND:
		cairo_move_to(cr, x, y - r * 1.2);
		cairo_line_to(cr, x + r, y);
		cairo_line_to(cr, x, y + r * 1.2);
		cairo_line_to(cr, x - r, y);
		cairo_close_path(cr);
		break;
	}
	cairo_set_dash(cr, NULL, 0, 0);
	cairo_set_line_width(cr, 0.7);
	if (filled) {
		cairo_fill_preserve(cr);
		cairo_stroke(cr);
	} else {
		cairo_save(cr);
		cairo_set_source_rgb(cr, 1, 1, 1);
		cairo_fill_preserve(cr);
		cairo_restore(cr);
		cairo_stroke(cr);
	}
}

void fig_legend(struct fig *f, const struct fig_key *keys, int n, int corner)
{
	cairo_t *cr = f->cr;
	double line = FIG_SMALL + 2.5, sample = 14, wmax = 0;
	for (int i = 0; i < n; i++) {
		double w = fig_text_width(f, keys[i].text, FIG_SMALL);
		if (w > wmax)
			wmax = w;
	}
	double bw = sample + 4 + wmax + 6, bh = n * line + 3;
	double x = corner == 1 || corner == 2 ? f->x1 - bw - 3 : f->x0 + 3;
	double y = corner >= 2 ? f->y1 - bh - 3 : f->y0 + 3;
	cairo_set_source_rgb(cr, 1, 1, 1);
	cairo_rectangle(cr, x, y, bw, bh);
	cairo_fill(cr);
	for (int i = 0; i < n; i++) {
		const struct fig_key *k = &keys[i];
		double cy = y + 2 + line * (i + 0.5);
		fig_colour(f, k->colour);
		if (k->dash >= 0) {
			cairo_set_line_width(cr, FIG_DATA);
			cairo_set_dash(cr, &k->dash, k->dash > 0, 0);
			cairo_move_to(cr, x + 3, cy);
			cairo_line_to(cr, x + 3 + sample, cy);
			cairo_stroke(cr);
			cairo_set_dash(cr, NULL, 0, 0);
		}
		if (k->shape >= 0)
			fig_marker(f, x + 3 + sample / 2, cy, (enum fig_shape)k->shape, 4.5, k->filled);
		fig_colour(f, FIG_BLACK);
		fig_text(f, x + 3 + sample + 4, cy, k->text, FIG_SMALL, 0, 0.5, 0);
	}
}

char *fig_label(const char *s, char *buf, size_t cap, size_t max)
{
	char tmp[1024];
	util_escape(s, tmp, sizeof tmp, 1);
	size_t len = strlen(tmp);
	if (max > cap - 1)
		max = cap - 1;
	if (len <= max) {
		memcpy(buf, tmp, len + 1);
		return buf;
	}
	size_t keep = max > 3 ? max - 3 : 0;
	memcpy(buf, tmp, keep);
	memcpy(buf + keep, "...", max - keep);
	buf[max] = '\0';
	return buf;
}
