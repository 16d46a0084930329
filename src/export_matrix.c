/*
 * export_matrix: the strengths as a sparse matrix in Matrix Market
 * coordinate format (the NIST format: a banner line, % comments, a size
 * line "rows columns entries", then one "i j value" line per entry,
 * 1-based), which scipy.io.mmread and R's Matrix::readMM read. igraph
 * writes no such file, so it is written here.
 *
 * Rows are nodes in the graph's order, columns the model's columns 0 ..
 * k-1 (ids as in memberships.tsv; a column with no strength is an empty
 * column, so column j is always community j - 1), entries every positive
 * strength, row by row, columns increasing, values %.17g so they read
 * back to the same double. Two plain files beside it name the rows and
 * the columns, one per line, so a reader can attach them (R: rownames(M)
 * <- readLines(...)).
 *
 * The thing a newcomer gets wrong: node names may hold newlines and
 * TABs; the rows file escapes them as memberships.tsv does
 * (atomicfile_tsv_name()), or a name would take two lines and every row
 * after it would be misnamed.
 */
#include "coterie/export.h"

#include <inttypes.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/atomicfile.h"
#include "coterie/fcsr.h"
#include "coterie/graph.h"
#include "coterie/util.h"

#define MTX_SUFFIX ".mtx"

int export_matrix_names(const char *path, char **rows, char **cols)
{
	size_t len = strlen(path), sl = strlen(MTX_SUFFIX);
	if (len > sl && !strcmp(path + len - sl, MTX_SUFFIX))
		len -= sl;
	*rows = util_malloc(len + 16, 1);
	*cols = util_malloc(len + 16, 1);
	if (!*rows || !*cols) {
		free(*rows);
		free(*cols);
		*rows = *cols = NULL;
		return -1;
	}
	snprintf(*rows, len + 16, "%.*s.rows.txt", (int)len, path);
	snprintf(*cols, len + 16, "%.*s.cols.txt", (int)len, path);
	return 0;
}

static int fill_mtx(struct atomicfile *w, const void *arg)
{
	const struct export_fit *x = arg;
	const struct fcsr *F = x->F;
	atomicfile_str(w, "%%MatrixMarket matrix coordinate real general\n"
			  "% coterie strengths: rows are nodes, columns communities (the .rows.txt\n"
			  "% and .cols.txt files beside this one name them)\n");
	atomicfile_printf(w, "%" PRIu32 " %" PRIu32 " %" PRIu64 "\n", F->n, F->k, F->off[F->n]);
	for (uint32_t u = 0; u < F->n && !atomicfile_failed(w); u++)
		for (uint64_t j = F->off[u]; j < F->off[u + 1]; j++)
			atomicfile_printf(w, "%" PRIu32 " %" PRIu32 " %.17g\n", u + 1,
					  F->e[j].c + 1, F->e[j].v);
	return 0;
}

static int fill_rows(struct atomicfile *w, const void *arg)
{
	const struct export_fit *x = arg;
	for (uint32_t u = 0; u < x->g->n && !atomicfile_failed(w); u++) {
		atomicfile_tsv_name(w, graph_name(x->g, u));
		atomicfile_str(w, "\n");
	}
	return 0;
}

static int fill_cols(struct atomicfile *w, const void *arg)
{
	const struct export_fit *x = arg;
	for (uint32_t c = 0; c < x->F->k && !atomicfile_failed(w); c++)
		atomicfile_printf(w, "%" PRIu32 "\n", c);
	return 0;
}

/* The folder of path ("." when none) and its last part, in buf (borrowed,
 * a copy of path): 0, or -1 for a path ending in '/'. */
static int split(char *buf, const char **dir, const char **base)
{
	char *slash = strrchr(buf, '/');
	if (!slash) {
		*dir = ".";
		*base = buf;
	} else {
		*slash = '\0';
		*dir = slash == buf ? "/" : buf;
		*base = slash + 1;
	}
	return **base ? 0 : -1;
}

int export_matrix(const char *path, const struct export_fit *x)
{
	if (x->F->n != x->g->n)
		return error("the strengths do not match the graph (%" PRIu32 " nodes)", x->g->n);
	char *rows = NULL, *cols = NULL, *copy = util_strdup(path);
	const char *dir, *base;
	if (!copy || export_matrix_names(path, &rows, &cols)) {
		free(copy);
		return -1;
	}
	int rc = -1;
	if (split(copy, &dir, &base)) {
		char buf[1024];
		error("'%s' names a folder, not a file", util_escape(path, buf, sizeof buf, 1));
		goto out;
	}
	/* the three files share the folder: they are staged and renamed together */
	const char *rbase = strrchr(rows, '/') ? strrchr(rows, '/') + 1 : rows;
	const char *cbase = strrchr(cols, '/') ? strrchr(cols, '/') + 1 : cols;
	struct atomicfile_set set;
	atomicfile_set_init(&set);
	if (atomicfile_set_stage(&set, dir, base, fill_mtx, x) == 0 &&
	    atomicfile_set_stage(&set, dir, rbase, fill_rows, x) == 0 &&
	    atomicfile_set_stage(&set, dir, cbase, fill_cols, x) == 0)
		rc = atomicfile_set_commit(&set, dir);
	atomicfile_set_release(&set);
out:
	free(copy);
	free(rows);
	free(cols);
	return rc;
}
