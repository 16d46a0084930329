/*
 * select_warm: the start of a fit of k columns made from a fit of more
 * columns, for `-k auto`'s search by the curve's shape (select.c): the
 * weakest columns (smallest column sums) are dropped and the others keep
 * their order; the fit then climbs from there.
 *
 * Why only downwards: splitting the strongest columns to go up (the
 * pivot, the strongest member not linked to the strongest one, taking its
 * neighbours in the column to a new one) was measured and dropped. On a
 * planted graph of 10^5 nodes the fits started that way scored far below
 * their seeded neighbours (k 975 from 780: -459,785, between -451,395 and
 * -452,720), which pulled the choice down to 780 of 1,142 planted.
 *
 * The one thing a newcomer gets wrong: the fit started from must have
 * been made on the SAME training graph, with the same held-out pairs left
 * out of it; a start from a fit that saw the held-out pairs (the whole
 * graph, another split) would carry them into the fit scored on them.
 * Nothing here looks at held-out pairs; the caller (select.c) keeps the
 * fits of one split only.
 */
#include "select-internal.h"

#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/util.h"

static int alloc_fcsr(struct fcsr *o, uint32_t n, uint32_t k, uint64_t nnz)
{
	o->n = n;
	o->k = k;
	o->off = util_calloc((size_t)n + 1, sizeof *o->off);
	o->e = util_malloc(nnz ? nnz : 1, sizeof *o->e);
	o->colsum = util_calloc(k, sizeof *o->colsum);
	o->thr = NULL;
	o->sidesum = NULL;
	if (o->off && o->e && o->colsum)
		return 0;
	fcsr_release(o);
	return -1;
}

static int cmp_desc(const void *a, const void *b)
{
	return util_cmp_double(*(const double *)b, *(const double *)a);
}

/* The columns of F kept when k remain: map[c] is the new id of column c
 * (kept in order), UINT32_MAX for a dropped one. The k largest column
 * sums are kept, ties at the k-th by lower id. 0 or -1. */
static int kept_columns(const struct fcsr *F, uint32_t k, uint32_t *map)
{
	double *s = util_malloc(F->k, sizeof *s);
	if (!s)
		return -1;
	memcpy(s, F->colsum, F->k * sizeof *s);
	qsort(s, F->k, sizeof *s, cmp_desc);
	double t = s[k - 1]; /* the k-th largest */
	uint32_t above = 0, id = 0;
	for (uint32_t c = 0; c < F->k; c++)
		above += F->colsum[c] > t;
	uint32_t ties = k - above; /* columns at t kept, by id */
	for (uint32_t c = 0; c < F->k; c++) {
		int keep = F->colsum[c] > t || (F->colsum[c] == t && ties > 0);
		if (keep && !(F->colsum[c] > t))
			ties--;
		map[c] = keep ? id++ : UINT32_MAX;
	}
	free(s);
	return 0;
}

static void sums(struct fcsr *o)
{
	memset(o->colsum, 0, o->k * sizeof *o->colsum);
	for (uint64_t i = 0; i < o->off[o->n]; i++)
		o->colsum[o->e[i].c] += o->e[i].v;
}

static int drop(const struct fcsr *F, uint32_t k, struct fcsr *o)
{
	uint32_t *map = util_malloc(F->k, sizeof *map);
	if (!map || kept_columns(F, k, map) || alloc_fcsr(o, F->n, k, F->off[F->n])) {
		free(map);
		return -1;
	}
	uint64_t w = 0;
	for (uint32_t u = 0; u < F->n; u++) {
		for (uint64_t i = F->off[u]; i < F->off[u + 1]; i++)
			if (map[F->e[i].c] != UINT32_MAX)
				o->e[w++] = (struct fentry){ map[F->e[i].c], F->e[i].v };
		o->off[u + 1] = w;
	}
	sums(o);
	free(map);
	return 0;
}

int select_warm_start(const struct fcsr *from, const struct graph *train, uint32_t k,
		      struct fcsr *out)
{
	memset(out, 0, sizeof *out);
	if (k == 0 || from->n != train->n || k > from->k)
		return -1;
	return k == from->k ? fcsr_copy(out, from) : drop(from, k, out);
}
