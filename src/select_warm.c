/*
 * select_warm: the start of a fit of k columns made from a fit of another
 * number of columns, for `-k auto`'s search by the curve's shape
 * (select.c). Down: the weakest columns (smallest column sums) are
 * dropped and the others keep their order; the fit then climbs from
 * there. Up: the fit's columns as they are, then the columns that the
 * seeding of a fit of k adds after the first from->k (for clusters, the
 * next clusters by likelihood, then ego-nets): the new fit starts where
 * a seeded one would, its first columns already climbed.
 *
 * Why up this way: splitting the strongest columns to go up (the pivot,
 * the strongest member not linked to the strongest one, taking its
 * neighbours in the column to a new one) was measured and dropped: on a
 * planted graph of 10^5 nodes the fits started that way scored far below
 * their seeded neighbours (k 975 from 780: -459,785, between -451,395 and
 * -452,720). Added seeds score as seeded fits do (2x10^5 nodes, k 3880:
 * -930,590 against -930,119 from seeds) in about half the time (13.0 s
 * against 25.3 s on one thread): DEVELOPERS.md, "-k auto from clusters".
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
#include "coterie/model.h"
#include "coterie/seed.h"
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

/* Up: from's rows, then the columns from->k .. k-1 of a seeding of k
 * columns on train. */
static int add(const struct fcsr *from, const struct graph *train, uint32_t k,
	       const struct select_seeding *sd, struct fcsr *o)
{
	struct model m;
	if (model_init(&m, train->n, k, sd->epsilon))
		return -1;
	int rc = seed_start(train, &m, sd->kind, sd->seed, 0, NULL);
	uint64_t nnz = from->off[from->n];
	for (uint32_t u = 0; rc == 0 && u < train->n; u++)
		for (uint32_t i = 0; i < m.rows[u].nnz; i++)
			nnz += m.rows[u].e[i].c >= from->k;
	if (rc == 0)
		rc = alloc_fcsr(o, from->n, k, nnz);
	uint64_t w = 0;
	for (uint32_t u = 0; rc == 0 && u < from->n; u++) {
		for (uint64_t i = from->off[u]; i < from->off[u + 1]; i++)
			o->e[w++] = from->e[i];
		for (uint32_t i = 0; i < m.rows[u].nnz; i++)
			if (m.rows[u].e[i].c >= from->k)
				o->e[w++] = (struct fentry){ m.rows[u].e[i].c, m.rows[u].e[i].v };
		o->off[u + 1] = w;
	}
	if (rc == 0)
		sums(o);
	model_release(&m);
	return rc;
}

int select_warm_start(const struct fcsr *from, const struct graph *train, uint32_t k,
		      const struct select_seeding *sd, struct fcsr *out)
{
	memset(out, 0, sizeof *out);
	if (k == 0 || from->n != train->n)
		return -1;
	if (k > from->k) /* a two-sided graph's rows are seeded on a view */
		return sd && !train->nsend && !train->paired ? add(from, train, k, sd, out) : -1;
	return k == from->k ? fcsr_copy(out, from) : drop(from, k, out);
}
