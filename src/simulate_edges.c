/*
 * simulate_edges: step 4 of a planted graph (see simulate.c): the pairs of
 * each community and of the background drawn by geometric skipping, on
 * threads, then sorted and deduplicated.
 *
 * Invariant: the result is the same set of edges whichever thread drew
 * what: each item (a community or a background slice) has its own stream,
 * and the union is sorted (LSD radix sort of 64-bit keys). While drawn,
 * a key carries a tag in its lowest bit (1: drawn by the background), so
 * that the edges the background alone drew can be counted when merging;
 * node ids below 2^31 leave room for it. A newcomer's
 * trap: the pair decoder steps over whole rows of the pair triangle
 * rather than computing square roots, which would skip or repeat pairs.
 * Two-mode: a community's pairs are its first-kind members (ids below
 * n1, first in its increasing list) against its second-kind ones, and
 * the background's the rows 0 .. n1-1 against the columns n1 .. n-1:
 * rectangles, decoded by row and column (draw_rect()).
 */
#include "simulate-internal.h"

#include <inttypes.h>
#include <math.h>
#include <pthread.h>
#include <stdatomic.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/util.h"

/* ------------------------------------------------------------------ */
/* Step 4: drawing the pairs */

struct ebuf {
	uint64_t *a;
	size_t len, cap;
	uint64_t drawn_c, drawn_b;
	int err;
};

static int ebuf_push(struct ebuf *b, uint64_t key)
{
	if (b->len == b->cap) {
		size_t nc = b->cap ? b->cap + b->cap / 2 : 1 << 16;
		uint64_t *x = realloc(b->a, nc * sizeof *x);
		if (!x)
			return -1;
		b->a = x;
		b->cap = nc;
	}
	b->a[b->len++] = key;
	return 0;
}

/*
 * Draw each pair (i, j), i < j, with rows j in [j0, j1), independently with
 * probability prob, by geometric skips over the pair index
 * t = sum_{r < j} r + i. ids maps a row/column number to a node (NULL: the
 * number itself). Each pair (u, v) is pushed as the key (u << 33) | (v << 1)
 * | tag. Returns pairs drawn, or -1 on memory failure.
 */
static int64_t draw_pairs(struct ebuf *b, struct rng *r, const uint32_t *ids, uint64_t j0,
			  uint64_t j1, double prob, uint64_t tag)
{
	if (prob <= 0.0 || j1 <= j0 || j1 < 2)
		return 0;
	if (j0 < 1)
		j0 = 1;
	/* pairs in the slice, exactly: j1 <= 2^31 keeps j1 (j1 - 1) below 2^62 */
	uint64_t total = (j1 * (j1 - 1) - j0 * (j0 - 1)) / 2;
	double lq = prob < 1.0 ? log1p(-prob) : 0.0;
	uint64_t i = 0, j = j0, t = 0; /* (i, j) is pair t of the slice */
	int64_t drawn = 0;
	for (;;) {
		if (prob < 1.0) {
			double skip = floor(log1p(-rng_uniform(r)) / lq);
			if (!(skip < (double)(total - t)))
				break;
			uint64_t sk = (uint64_t)skip;
			if (sk >= total - t)
				break;
			t += sk;
			i += sk;
			while (i >= j) { /* whole rows: exact in integers */
				i -= j;
				j++;
			}
		}
		uint64_t u = ids ? ids[i] : i, v = ids ? ids[j] : j;
		if (ebuf_push(b, (u << 33) | (v << 1) | tag))
			return -1;
		drawn++;
		if (++t >= total)
			break;
		if (++i == j) {
			i = 0;
			if (++j >= j1)
				break;
		}
	}
	return drawn;
}

/*
 * The two-mode draw: each pair (rows[i], cols[j]), i in [i0, i1), j < nc,
 * independently with probability prob, by geometric skips over the pair
 * index t = (i - i0) nc + j. rows (cols) NULL: row (column) i is node
 * rbase + i (cbase + j). Keys, tags and the return as draw_pairs().
 */
static int64_t draw_rect(struct ebuf *b, struct rng *r, const uint32_t *rows, uint64_t rbase,
			 uint64_t i0, uint64_t i1, const uint32_t *cols, uint64_t cbase,
			 uint64_t nc, double prob, uint64_t tag)
{
	if (prob <= 0.0 || i1 <= i0 || nc == 0)
		return 0;
	uint64_t total = (i1 - i0) * nc; /* below 2^62: ids below 2^31 */
	double lq = prob < 1.0 ? log1p(-prob) : 0.0;
	int64_t drawn = 0;
	for (uint64_t t = 0;; t++) {
		if (prob < 1.0) {
			double skip = floor(log1p(-rng_uniform(r)) / lq);
			if (!(skip < (double)(total - t)))
				break;
			t += (uint64_t)skip;
		}
		if (t >= total)
			break;
		uint64_t i = i0 + t / nc, j = t % nc;
		uint64_t u = rows ? rows[i] : rbase + i, v = cols ? cols[j] : cbase + j;
		if (ebuf_push(b, (u << 33) | (v << 1) | tag))
			return -1;
		drawn++;
	}
	return drawn;
}

/* Community c's pairs: the triangle of its members, or (two-mode, n1 >
 * 0) the rectangle of its first-kind members against its others. */
static int64_t draw_community(struct ebuf *b, struct rng *r, const struct cover *cv, uint32_t c,
			      uint32_t n1, double prob)
{
	const uint32_t *mem = cv->mem + cv->off[c];
	uint64_t s = cover_size(cv, c);
	if (!n1)
		return draw_pairs(b, r, mem, 0, s, prob, 0);
	uint64_t a = 0;
	while (a < s && mem[a] < n1)
		a++;
	return draw_rect(b, r, mem, 0, 0, a, mem + a, 0, s - a, prob, 0);
}

struct work {
	const struct simulate_params *p;
	const struct simulate *s;
	uint64_t bounds[BACKGROUND_SLICES + 1];
	uint32_t slices;
	uint64_t items;
	atomic_uint_fast64_t next;
	struct ebuf *bufs;
};

struct worker {
	struct work *w;
	unsigned id;
};

static void *work_run(void *arg)
{
	struct worker *me = arg;
	struct work *w = me->w;
	struct ebuf *b = &w->bufs[me->id];
	const struct cover *cv = &w->s->truth;
	for (;;) {
		uint64_t it = atomic_fetch_add(&w->next, 1);
		if (it >= w->items || b->err)
			break;
		struct rng r;
		int64_t d;
		if (it < cv->k) {
			uint32_t c = (uint32_t)it;
			simulate_stream(&r, w->p->seed, S_COMMUNITY, c);
			d = draw_community(b, &r, cv, c, w->s->n1, w->s->p[c]);
			if (d >= 0)
				b->drawn_c += (uint64_t)d;
		} else {
			uint64_t sl = it - cv->k;
			simulate_stream(&r, w->p->seed, S_BACKGROUND, sl);
			uint32_t n1 = w->s->n1;
			d = n1 ? draw_rect(b, &r, NULL, 0, w->bounds[sl], w->bounds[sl + 1], NULL, n1,
					   w->s->n - n1, w->s->epsilon, 1) :
				 draw_pairs(b, &r, NULL, w->bounds[sl], w->bounds[sl + 1],
					    w->s->epsilon, 1);
			if (d >= 0)
				b->drawn_b += (uint64_t)d;
		}
		if (d < 0)
			b->err = 1;
	}
	return NULL;
}

/* LSD radix sort of a[0..n) by bytes, skipping bytes where every key agrees;
 * tmp has room for n. Returns the array holding the sorted keys. */
static uint64_t *radix_sort(uint64_t *a, uint64_t *tmp, size_t n)
{
	size_t (*cnt)[256] = calloc(8, sizeof *cnt);
	if (!cnt) {
		error("out of memory sorting the edges");
		return NULL;
	}
	for (size_t i = 0; i < n; i++) {
		uint64_t x = a[i];
		for (int byte = 0; byte < 8; byte++)
			cnt[byte][(x >> (8 * byte)) & 0xff]++;
	}
	for (int byte = 0; byte < 8; byte++) {
		size_t *c = cnt[byte];
		int trivial = 0;
		for (int v = 0; v < 256; v++)
			if (c[v] == n) {
				trivial = 1;
				break;
			}
		if (trivial || n == 0)
			continue;
		size_t sum = 0;
		for (int v = 0; v < 256; v++) {
			size_t x = c[v];
			c[v] = sum;
			sum += x;
		}
		int sh = 8 * byte;
		for (size_t i = 0; i < n; i++) {
			uint64_t x = a[i];
			tmp[c[(x >> sh) & 0xff]++] = x;
		}
		uint64_t *t = a;
		a = tmp;
		tmp = t;
	}
	free(cnt);
	return a;
}

int simulate_draw_edges(const struct simulate_params *p, struct simulate *s)
{
	struct work *w = util_calloc(1, sizeof *w);
	if (!w)
		return -1;
	w->p = p;
	w->s = s;
	w->slices = s->epsilon > 0.0 ? BACKGROUND_SLICES : 0;
	/* slices of rows holding about equal numbers of pairs (two-mode:
	 * every row of the first kind holds as many) */
	uint32_t rows = s->n1 ? s->n1 : p->n;
	for (uint32_t b = 0; b <= w->slices; b++)
		w->bounds[b] = s->n1 ? (uint64_t)rows * b / BACKGROUND_SLICES :
				       (uint64_t)llround((double)p->n *
							 sqrt((double)b / BACKGROUND_SLICES));
	if (w->slices)
		w->bounds[w->slices] = rows;
	w->items = (uint64_t)s->k + w->slices;
	atomic_init(&w->next, 0);
	unsigned nt = p->threads;
	if (nt > w->items)
		nt = w->items ? (unsigned)w->items : 1;
	w->bufs = util_calloc(nt, sizeof *w->bufs);
	struct worker *ws = util_calloc(nt, sizeof *ws);
	pthread_t *th = util_calloc(nt, sizeof *th);
	int rc = -1;
	if (!w->bufs || !ws || !th)
		goto out;
	unsigned started = 0;
	for (unsigned t = 0; t < nt; t++) {
		ws[t] = (struct worker){ w, t };
		if (t == 0)
			continue;
		if (pthread_create(&th[t], NULL, work_run, &ws[t]) != 0) {
			w->bufs[t].err = 0; /* this worker never ran; the others share its items */
			break;
		}
		started = t;
	}
	work_run(&ws[0]);
	for (unsigned t = 1; t <= started; t++)
		pthread_join(th[t], NULL);
	uint64_t total = 0;
	s->drawn_communities = s->drawn_background = 0;
	for (unsigned t = 0; t < nt; t++) {
		if (w->bufs[t].err) {
			error("out of memory drawing the edges");
			goto out;
		}
		total += w->bufs[t].len;
		s->drawn_communities += w->bufs[t].drawn_c;
		s->drawn_background += w->bufs[t].drawn_b;
	}
	uint64_t *all = util_malloc(total ? total : 1, sizeof *all);
	if (!all)
		goto out;
	uint64_t o = 0;
	for (unsigned t = 0; t < nt; t++) {
		if (w->bufs[t].len)
			memcpy(all + o, w->bufs[t].a, w->bufs[t].len * sizeof *all);
		o += w->bufs[t].len;
		free(w->bufs[t].a);
		w->bufs[t].a = NULL;
	}
	uint64_t *tmp = util_malloc(total ? total : 1, sizeof *tmp);
	if (!tmp) {
		free(all);
		goto out;
	}
	uint64_t *sorted = radix_sort(all, tmp, total);
	if (!sorted) {
		free(all);
		free(tmp);
		goto out;
	}
	free(sorted == all ? tmp : all);
	/* a pair's keys are adjacent, a community's draw (tag 0) first: the
	 * pair is the background's alone when its first key has tag 1 */
	uint64_t m = 0, alone = 0;
	for (uint64_t i = 0; i < total; i++) {
		uint64_t e = (sorted[i] >> 33) << 32 | (sorted[i] >> 1 & 0xffffffffu);
		if (m == 0 || sorted[m - 1] != e) {
			alone += sorted[i] & 1;
			sorted[m++] = e;
		}
	}
	s->background_only = alone;
	uint64_t *shrunk = m ? realloc(sorted, m * sizeof *sorted) : NULL;
	s->edges = shrunk ? shrunk : sorted;
	s->m = m;
	s->duplicates = total - m;
	rc = 0;
out:
	if (w->bufs)
		for (unsigned t = 0; t < nt; t++)
			free(w->bufs[t].a);
	free(w->bufs);
	free(ws);
	free(th);
	free(w);
	return rc;
}

