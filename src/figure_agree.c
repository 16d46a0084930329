/*
 * figure_agree: how far several fits of one graph agree, as a matrix for
 * figure_draw_matrix(): the Jaccard index of member sets, |a & b| / |a | b|.
 *
 * Two runs: every community of the first against every community of the
 * second. This is the view that says which communities to trust: a row
 * with one bright cell came back whole; a row spread over two cells was
 * split; a dark row came back in no form. The columns are ordered by the
 * rows' best matches, so agreement shows as a bright diagonal. Three or
 * more runs: one number a pair of runs, the mean best-match Jaccard of the
 * row run's communities in the column run (asymmetric: a run with a few
 * extra small communities scores lower as the row than as the column).
 *
 * The Jaccard indices themselves, and the check that the folders hold
 * one graph, are stability.c's (the same scores fit --repeats and
 * coterie agree give).
 *
 * The one thing a newcomer would get wrong: two folders' community ids
 * mean nothing to each other, and their node ids only agree because both
 * memberships.tsv are read into one name table (cover_read()); the covers
 * are then widened to the table's count, as coterie compare does.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/figure.h"
#include "coterie/names.h"
#include "coterie/stability.h"
#include "coterie/util.h"
#include "figure-internal.h"

void figure_matrix_release(struct figure_matrix *m)
{
	if (!m)
		return;
	for (uint32_t i = 0; m->row_label && i < m->rows; i++)
		free(m->row_label[i]);
	for (uint32_t j = 0; m->col_label && j < m->cols; j++)
		free(m->col_label[j]);
	UTIL_FREE_ALL(m->row_label, m->col_label, m->v, m->row_title, m->col_title,
		      m->value_title, m->note);
	memset(m, 0, sizeof *m);
}

/* ---- the matrix of two runs ---- */

/* The communities of c, largest first (ties by index): caller frees. */
static uint32_t *largest_first(const struct cover *c)
{
	uint32_t *o = util_malloc(c->k ? c->k : 1, sizeof *o);
	uint64_t *key = util_malloc(c->k ? c->k : 1, sizeof *key);
	if (!o || !key) {
		free(o);
		free(key);
		return NULL;
	}
	/* the size's complement above the index: ascending keys are sizes
	 * falling, then indices rising */
	for (uint32_t i = 0; i < c->k; i++)
		key[i] = (uint64_t)(UINT32_MAX - cover_size(c, i)) << 32 | i;
	qsort(key, c->k, sizeof *key, util_qsort_u64);
	for (uint32_t i = 0; i < c->k; i++)
		o[i] = (uint32_t)key[i];
	free(key);
	return o;
}

/* Columns: each row's best match (once, in row order), then the rest of
 * y largest first, up to FIGURE_MATRIX_MAX. Returns how many. */
static uint32_t pick_columns(const double *full, uint32_t nrows, const struct cover *y,
			     const uint32_t *yorder, uint32_t *cols, unsigned char *used)
{
	uint32_t nc = 0;
	for (uint32_t i = 0; i < nrows && nc < FIGURE_MATRIX_MAX; i++) {
		uint32_t best = UINT32_MAX;
		for (uint32_t b = 0; b < y->k; b++)
			if (full[(size_t)i * y->k + b] > 0 &&
			    (best == UINT32_MAX || full[(size_t)i * y->k + b] > full[(size_t)i * y->k + best]))
				best = b;
		if (best != UINT32_MAX && !used[best]) {
			used[best] = 1;
			cols[nc++] = best;
		}
	}
	for (uint32_t t = 0; t < y->k && nc < FIGURE_MATRIX_MAX; t++)
		if (!used[yorder[t]] && cover_size(y, yorder[t]) > 0) {
			used[yorder[t]] = 1;
			cols[nc++] = yorder[t];
		}
	return nc;
}

static int two_runs(const struct cover *x, const struct cover *y, struct figure_matrix *m)
{
	uint32_t *xo = largest_first(x), *yo = largest_first(y);
	uint32_t nrows = 0;
	for (uint32_t i = 0; xo && i < x->k && nrows < FIGURE_MATRIX_MAX; i++)
		nrows += cover_size(x, xo[i]) > 0;
	double *full = util_calloc((size_t)nrows * (y->k ? y->k : 1), sizeof *full);
	uint32_t *cols = util_malloc(FIGURE_MATRIX_MAX, sizeof *cols);
	unsigned char *used = util_calloc(y->k ? y->k : 1, 1);
	int rc = -1;
	if (!xo || !yo || !full || !cols || !used || stability_jaccard_rows(x, xo, nrows, y, full))
		goto out;
	uint32_t ncols = pick_columns(full, nrows, y, yo, cols, used);
	m->rows = nrows;
	m->cols = ncols;
	m->v = util_calloc((size_t)nrows * (ncols ? ncols : 1), sizeof *m->v);
	m->row_label = util_calloc(nrows ? nrows : 1, sizeof *m->row_label);
	m->col_label = util_calloc(ncols ? ncols : 1, sizeof *m->col_label);
	if (!m->v || !m->row_label || !m->col_label)
		goto out;
	for (uint32_t i = 0; i < nrows; i++)
		for (uint32_t j = 0; j < ncols; j++)
			m->v[(size_t)i * ncols + j] = full[(size_t)i * y->k + cols[j]];
	for (uint32_t i = 0; i < nrows; i++)
		if (!(m->row_label[i] = util_strdup(x->label[xo[i]])))
			goto out;
	for (uint32_t j = 0; j < ncols; j++)
		if (!(m->col_label[j] = util_strdup(y->label[cols[j]])))
			goto out;
	rc = 0;
out:
	free(xo);
	free(yo);
	free(full);
	free(cols);
	free(used);
	return rc;
}

/* ---- the matrix of several runs ---- */

static int many_runs(const struct cover *c, uint32_t nruns, struct figure_matrix *m)
{
	m->rows = m->cols = nruns;
	m->v = util_calloc((size_t)nruns * nruns, sizeof *m->v);
	if (!m->v)
		return -1;
	for (uint32_t i = 0; i < nruns; i++) {
		double *best = util_malloc(c[i].k ? c[i].k : 1, sizeof *best);
		if (!best)
			return -1;
		for (uint32_t j = 0; j < nruns; j++) {
			if (stability_best_jaccard(&c[i], &c[j], best)) {
				free(best);
				return -1;
			}
			double sum = 0;
			uint32_t n = 0;
			for (uint32_t a = 0; a < c[i].k; a++)
				if (!isnan(best[a])) {
					sum += best[a];
					n++;
				}
			m->v[(size_t)i * nruns + j] = n ? sum / n : NAN;
		}
		free(best);
	}
	m->numbers = 1;
	return 0;
}

/* ---- reading the folders ---- */

/* The last part of a path, without trailing slashes, into buf. */
static const char *base_name(const char *dir, char *buf, size_t cap)
{
	size_t len = strlen(dir);
	while (len > 1 && dir[len - 1] == '/')
		len--;
	size_t start = len;
	while (start > 0 && dir[start - 1] != '/')
		start--;
	size_t n = len - start < cap - 1 ? len - start : cap - 1;
	memcpy(buf, dir + start, n);
	buf[n] = '\0';
	return buf;
}

/* The labels and titles of the matrix. */
static int titles(const char *const *dirs, uint32_t nruns, const struct cover *c,
		  struct figure_matrix *m)
{
	char a[256], b[256], line[640];
	if (nruns == 2) {
		snprintf(line, sizeof line, "communities of %s", base_name(dirs[0], a, sizeof a));
		m->row_title = util_strdup(line);
		snprintf(line, sizeof line, "communities of %s", base_name(dirs[1], b, sizeof b));
		m->col_title = util_strdup(line);
		if (m->rows < c[0].k || m->cols < c[1].k) {
			snprintf(line, sizeof line, "the %u largest of %u rows, %u of %u columns",
				 m->rows, c[0].k, m->cols, c[1].k);
			if (!(m->note = util_strdup(line)))
				return -1;
		}
		m->value_title = util_strdup("Jaccard index");
		return m->row_title && m->col_title && m->value_title ? 0 : -1;
	}
	for (uint32_t r = 0; r < nruns; r++) {
		base_name(dirs[r], a, sizeof a);
		for (uint32_t s = 0; s < r; s++)
			if (!strcmp(a, base_name(dirs[s], b, sizeof b)))
				snprintf(a, sizeof a, "run %u", r + 1);
		m->row_label[r] = util_strdup(a);
		m->col_label[r] = util_strdup(a);
		if (!m->row_label[r] || !m->col_label[r])
			return -1;
	}
	m->row_title = util_strdup("communities of this run");
	m->col_title = util_strdup("best matched in this run");
	m->value_title = util_strdup("mean best-match Jaccard");
	return m->row_title && m->col_title && m->value_title ? 0 : -1;
}

int figure_agreement(const char *const *dirs, uint32_t nruns, struct figure_matrix *out)
{
	memset(out, 0, sizeof *out);
	if (nruns < 2)
		return error("the agreement of runs needs two result folders or more, not %u", nruns);
	struct names *nodes = names_new(0);
	struct cover *c = util_calloc(nruns, sizeof *c);
	int rc = -1;
	if (!nodes || !c || stability_read_folders(dirs, nruns, nodes, c))
		goto out;
	if (nruns == 2) {
		rc = two_runs(&c[0], &c[1], out);
	} else {
		rc = many_runs(c, nruns, out);
		if (!rc) {
			out->row_label = util_calloc(nruns, sizeof *out->row_label);
			out->col_label = util_calloc(nruns, sizeof *out->col_label);
			rc = out->row_label && out->col_label ? 0 : -1;
		}
	}
	if (!rc)
		rc = titles(dirs, nruns, c, out);
out:
	for (uint32_t r = 0; c && r < nruns; r++)
		cover_release(&c[r]);
	free(c);
	names_free(nodes);
	if (rc)
		figure_matrix_release(out);
	return rc;
}
