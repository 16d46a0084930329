/*
 * fcsr: a strength matrix frozen in compressed rows, the form every
 * module outside the fitting engine reads (snapshots, checkpoints, the
 * AGM estimate, the explorer). The engine's working rows are in model.h.
 *
 * Rules (tests: assert_fcsr_sane()):
 *   - off[0] == 0, off is non-decreasing, off[n] entries in e;
 *   - each row's entries are sorted by community, strictly increasing,
 *     with c < k and 0 < v;
 *   - colsum has k values, colsum[c] the sum of column c (up to rounding).
 */
#ifndef COTERIE_FCSR_H
#define COTERIE_FCSR_H

#include <stdint.h>

/* Packed to 12 bytes: strengths are most of a fit's memory on large
 * graphs, and 4 bytes of padding per entry would be a quarter of it. Do
 * not take the address of v. */
struct __attribute__((packed)) fentry {
	uint32_t c; /* community column */
	double v;   /* strength, > 0 */
};

/* Immutable strengths in compressed rows: what snapshots, checkpoints and
 * the AGM estimate read. off[n] entries in e; colsum has k values. */
struct fcsr {
	uint32_t n, k;
	uint64_t *off;
	struct fentry *e;
	double *colsum;
	/* NULL, or k thresholds of membership per column, each at least the
	 * fit's delta (agm_trim(): the AGM's own choice of where a
	 * community's members end); with sidesum (a two-sided graph's rows),
	 * 2 k: the sending rows' then the receiving rows'; not stored in
	 * checkpoints: derived again from the strengths and the graph */
	double *thr;
	/* NULL, or (a two-sided graph's rows) 2 k column sums by side, the
	 * sending rows' then the receiving rows' (agm_side_sums()): the
	 * membership rule of a two-sided fit reads a row against the other
	 * side's sum (model_directed_member_at()); not stored either */
	double *sidesum;
};

/* The threshold an entry of column c is read at: delta, or the column's
 * own threshold (thr) when higher; recv: a receiving row of a two-sided
 * fit read by side (sidesum set: thr then holds 2 k values). */
static inline double fcsr_delta_at(const struct fcsr *F, uint32_t c, int recv, double delta)
{
	if (!F->thr)
		return delta;
	double t = F->thr[c + (recv && F->sidesum ? F->k : 0)];
	return t > delta ? t : delta;
}

/* Free the arrays of f and zero it; NULL is a no-op. */
void fcsr_release(struct fcsr *f);

/* f = no rows and no columns (n = k = 0, off[0] = 0): 0, or -1 when out
 * of memory. Release with fcsr_release(). */
int fcsr_empty(struct fcsr *f);

/* A deep copy of src into dst (overwritten, not released): 0, or -1 when
 * out of memory (dst is then empty). Release the copy with fcsr_release(). */
int fcsr_copy(struct fcsr *dst, const struct fcsr *src);

#endif
