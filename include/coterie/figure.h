/*
 * figure: publication figures of a result folder, drawn with cairo as PDF,
 * SVG or PNG (the command is `coterie draw`, src/cli/draw.c).
 *
 * Every figure is designed for one column of a journal page: FIGURE_WIDTH
 * points wide (85 mm), text of 7 pt and more, axes with ticks and labels,
 * colours that stay apart in greyscale and for colour-blind readers (the
 * Okabe-Ito set for categories, a viridis map for values; marks differ by
 * shape and dash too, never by colour alone). Text read from files
 * (community labels, folder names) is escaped to printable ASCII and cut
 * short before it is drawn.
 *
 * The module reads the files it needs (figure_read.c), computes the
 * agreement of covers (figure_agree.c) and draws (figure.c, the plotting
 * kit; figure_kinds.c, the figures). It never prints but through error()
 * and never exits. A file is written whole or not at all (atomicfile.h).
 */
#ifndef COTERIE_FIGURE_H
#define COTERIE_FIGURE_H

#include <stdint.h>

#include "coterie/cover.h"

/* The page, in points (1/72 in): 85 mm wide. */
#define FIGURE_WIDTH 240.0
#define FIGURE_HEIGHT 180.0        /* the curves and distributions: 63.5 mm */
#define FIGURE_MATRIX_HEIGHT 240.0 /* the agreement matrix: square */
#define FIGURE_DPI_DEFAULT 300.0   /* PNG pixels per inch */

enum figure_format { FIGURE_PDF = 0, FIGURE_SVG, FIGURE_PNG };

/* The format a file name's extension names (.pdf, .svg, .png, any case):
 * 0 and *out set, or -1 (no message) for another extension. */
int figure_format_of_path(const char *path, enum figure_format *out);
/* The format named "pdf", "svg" or "png": 0, or -1 (no message). */
int figure_format_of_name(const char *name, enum figure_format *out);

struct figure_opts {
	enum figure_format format;
	double dpi; /* PNG only: pixels per inch, 72 to 1200 */
};

/* ---- what each figure shows (filled by the readers below) ---- */

struct figure_point {
	double x, y;
};

/* The log-likelihood trace of trace.tsv, with what run.json adds. */
struct figure_trace {
	struct figure_point *p;  /* (sweep, loglik), sweeps increasing; owned */
	uint32_t n;              /* at least 1 */
	uint32_t plateau_sweep;  /* the first plateau; 0: none or unknown */
	uint32_t start_kept;     /* 1-based; 0: unknown */
	uint32_t starts;         /* starts made; 0: unknown */
	uint32_t reseeds_kept;   /* from run.json; UINT32_MAX: unknown */
};

/* One k of k-selection.tsv. */
struct figure_kpoint {
	uint32_t k;
	double loglik; /* mean held-out log-likelihood over the folds */
	double sd;     /* its standard deviation over the folds; 0 for one */
	uint32_t folds;
	int added;     /* a k past the grid asked for */
};

struct figure_kcurve {
	struct figure_kpoint *p; /* k increasing; owned */
	uint32_t n;              /* at least 1 */
	uint32_t chosen;         /* the k kept; 0: none marked */
};

/* A distribution of whole numbers: count[v] items have value v. */
struct figure_counts {
	uint64_t *count; /* max + 1 entries; owned */
	uint32_t max;
	uint64_t total;  /* sum of count[] */
	int zero_known;  /* count[0] is known (e.g. nodes in no community) */
};

/* A matrix of values in [0, 1] (NaN: no value, drawn blank), row-major,
 * with a label for each row and column (escaped before drawing). */
struct figure_matrix {
	uint32_t rows, cols;
	double *v;           /* rows * cols; owned */
	char **row_label;    /* rows strings; owned */
	char **col_label;    /* cols strings; owned */
	char *row_title;     /* the axis titles; owned */
	char *col_title;
	char *value_title;   /* the colour bar's title; owned */
	char *note;          /* a line above the matrix, or NULL; owned */
	int numbers;         /* write each value in its cell when it fits */
};

void figure_trace_release(struct figure_trace *t);
void figure_kcurve_release(struct figure_kcurve *k);
void figure_counts_release(struct figure_counts *c);
/* Frees the contents of m and zeroes it; NULL is a no-op. */
void figure_matrix_release(struct figure_matrix *m);

/* ---- reading a result folder (figure_read.c) ---- */

/* DIR/trace.tsv, with the plateau, the start kept and the starts from
 * DIR/run.json when it is there. Returns 0, or -1 with a message naming
 * the missing or bad file (and line). Release with figure_trace_release(). */
int figure_read_trace(const char *dir, struct figure_trace *out);

/* DIR/k-selection.tsv (written by -k auto). Returns 0, or -1 with a
 * message. Release with figure_kcurve_release(). */
int figure_read_kcurve(const char *dir, struct figure_kcurve *out);

/* The community sizes (sizes) and the memberships per node (members) of
 * DIR/memberships.tsv; the nodes in no community come from run.json's
 * graph.nodes when it is there (else members->zero_known is 0). Either
 * output may be NULL. Returns 0, or -1 with a message. */
int figure_read_counts(const char *dir, struct figure_counts *sizes,
		       struct figure_counts *members);

/* ---- agreement of covers (figure_agree.c; the Jaccard indices are
 * stability.h's) ---- */

/*
 * The agreement of nruns result folders of one graph (dirs borrowed; 2 or
 * more), as a matrix to draw:
 *   - two folders: the Jaccard index of every community of the first
 *     (rows, largest first; at most FIGURE_MATRIX_MAX) with every
 *     community of the second (columns: each row's best match in row
 *     order, then the others by size, at most FIGURE_MATRIX_MAX);
 *   - three or more: run x run, cell (i, j) the mean over the communities
 *     of run i of their best-match Jaccard in run j.
 * The folders' memberships.tsv are read into one node table; folders
 * whose run.json name different graphs (fingerprints) are refused.
 * Returns 0, or -1 with a message. Release with figure_matrix_release().
 */
#define FIGURE_MATRIX_MAX 50u
int figure_agreement(const char *const *dirs, uint32_t nruns, struct figure_matrix *out);

/* ---- drawing (figure_kinds.c) ---- */

/* Each draws its figure into the file path (borrowed), in o->format,
 * replacing it atomically. Returns 0, or -1 with a message (a cairo
 * failure, an I/O error). The data is borrowed. */
int figure_draw_trace(const char *path, const struct figure_opts *o,
		      const struct figure_trace *t);
int figure_draw_kcurve(const char *path, const struct figure_opts *o,
		       const struct figure_kcurve *k);
/* Community sizes: the number of communities of size s or more against s,
 * both axes logarithmic (a complementary cumulative distribution). */
int figure_draw_sizes(const char *path, const struct figure_opts *o,
		      const struct figure_counts *sizes);
/* Memberships per node: bars of the number of nodes in m communities,
 * m linear, the count logarithmic. */
int figure_draw_memberships(const char *path, const struct figure_opts *o,
			    const struct figure_counts *members);
/* A matrix of values in [0, 1] with a colour bar (viridis). */
int figure_draw_matrix(const char *path, const struct figure_opts *o,
		       const struct figure_matrix *m);

/* Free the font caches cairo and fontconfig keep for the whole process,
 * so that a leak checker sees none. Call it once, when no figure is being
 * drawn and none will be (a command's last step). */
void figure_release_caches(void);

#endif
