/*
 * fcsr: strengths in compressed rows (the struct and its rules are in
 * include/coterie/fcsr.h).
 */
#include "coterie/fcsr.h"

#include <stdlib.h>
#include <string.h>

#include "coterie/util.h"

void fcsr_release(struct fcsr *f)
{
	if (!f)
		return;
	UTIL_FREE_ALL(f->off, f->e, f->colsum, f->thr, f->sidesum);
	memset(f, 0, sizeof *f);
}

int fcsr_empty(struct fcsr *f)
{
	memset(f, 0, sizeof *f);
	f->off = util_calloc(1, sizeof *f->off);
	f->e = util_malloc(1, sizeof *f->e);
	f->colsum = util_calloc(1, sizeof *f->colsum);
	if (!f->off || !f->e || !f->colsum) {
		fcsr_release(f);
		return -1;
	}
	return 0;
}

int fcsr_copy(struct fcsr *dst, const struct fcsr *src)
{
	memset(dst, 0, sizeof *dst);
	uint64_t nnz = src->off[src->n];
	dst->off = util_malloc((size_t)src->n + 1, sizeof *dst->off);
	dst->e = util_malloc(nnz ? nnz : 1, sizeof *dst->e);
	dst->colsum = util_calloc(src->k, sizeof *dst->colsum);
	if (!dst->off || !dst->e || !dst->colsum) {
		fcsr_release(dst);
		return -1;
	}
	dst->n = src->n;
	dst->k = src->k;
	memcpy(dst->off, src->off, ((size_t)src->n + 1) * sizeof *dst->off);
	if (nnz)
		memcpy(dst->e, src->e, nnz * sizeof *dst->e);
	memcpy(dst->colsum, src->colsum, src->k * sizeof *dst->colsum);
	if (src->thr) { /* by side (2 k) when the rows are read by side */
		size_t nt = (src->sidesum ? 2 : 1) * (size_t)src->k;
		if (!(dst->thr = util_malloc(nt ? nt : 1, sizeof *dst->thr))) {
			fcsr_release(dst);
			return -1;
		}
		memcpy(dst->thr, src->thr, nt * sizeof *dst->thr);
	}
	if (src->sidesum) {
		if (!(dst->sidesum = util_malloc(2 * (size_t)src->k + 1, sizeof *dst->sidesum))) {
			fcsr_release(dst);
			return -1;
		}
		memcpy(dst->sidesum, src->sidesum, 2 * (size_t)src->k * sizeof *dst->sidesum);
	}
	return 0;
}
