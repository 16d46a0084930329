/*
 * result_directed: memberships.tsv and communities.tsv of a two-sided fit
 * (directed or two-mode; model_directed.h). The columns are in
 * coterie-files(5); the first three of memberships.tsv are those of every
 * result, so readers of node, community and strength keep working.
 *
 * The idea: a row of the two-sided graph is a membership by the rule of
 * agm_is_member() read with the other side's column sums and the row's
 * own degree (model_directed_member_at()). A node of a directed graph
 * has two rows: it is a sending member when its sending row passes,
 * receiving when its receiving row does, "both" when both do; one line
 * per (node, community). A node of a two-mode graph has one row and one
 * side, its kind's.
 *
 * communities.tsv's figures are model_directed_figures()'s (shared with
 * the explorer), then fit --repeats' stability by column, and for a
 * weighted fit the observed and expected weight on the community's
 * (sending, receiving) pairs (result_weight_sided_figures()), after it as
 * in a one-mode file.
 *
 * The one thing a newcomer gets wrong: the names of a two-sided graph end
 * in a side tag (graph_directed.c); the files carry the name without it
 * and the side in its own column.
 */
#include "result-internal.h"

#include <inttypes.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/atomicfile.h"
#include "coterie/cover.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/model_directed.h"
#include "coterie/result_commit.h"
#include "coterie/result_weight.h"
#include "coterie/stability.h"
#include "coterie/util.h"

/* One (node, community) membership: node is the sending row of a
 * directed graph's node (or a two-mode graph's row); s and r the sending
 * and receiving strengths that passed the rule, 0 when that side did not. */
struct dmember {
	uint32_t c, node;
	double s, r;
};

/* Memberships of every row, by rows: mo[u]..mo[u+1] in mc (sorted). */
struct dcover {
	const struct graph *g;
	const struct fcsr *F;
	uint64_t *mo;
	uint32_t *mc;
	double *mv;
	struct dmember *list;
	uint64_t nlist;
	const double *score; /* fit --repeats: F->k stabilities by column, or NULL */
	struct model_directed_figures *fig; /* F->k: communities.tsv's figures */
	double *wobs, *wexp; /* a weighted fit's weight figures by column (F->k
				each, one allocation at wobs), else NULL */
};

static void dcover_release(struct dcover *d)
{
	UTIL_FREE_ALL(d->mo, d->mc, d->mv, d->list, d->fig, d->wobs);
}

static int dcover_has(const struct dcover *d, uint32_t u, uint32_t c, double *v)
{
	uint64_t lo = d->mo[u], n = d->mo[u + 1] - lo;
	uint64_t at = lo + util_lower_bound_u32(d->mc + lo, n, c);
	if (at < d->mo[u + 1] && d->mc[at] == c) {
		if (v)
			*v = d->mv[at];
		return 1;
	}
	return 0;
}

static int cmp_dmember(const void *a, const void *b)
{
	const struct dmember *x = a, *y = b;
	double sx = x->s > x->r ? x->s : x->r, sy = y->s > y->r ? y->s : y->r;
	int c = util_cmp_uint(x->c, y->c);
	if (!c)
		c = util_cmp_double(sy, sx); /* the strongest first */
	return c ? c : util_cmp_uint(x->node, y->node);
}

static int dcover_build(struct dcover *d, const struct graph *g, const struct fcsr *F,
			double delta)
{
	memset(d, 0, sizeof *d);
	d->g = g;
	d->F = F;
	double *sums = util_malloc(2 * (size_t)F->k + 1, sizeof *sums);
	d->mo = util_calloc((size_t)F->n + 1, sizeof *d->mo);
	d->mc = util_malloc(F->off[F->n] + 1, sizeof *d->mc);
	d->mv = util_malloc(F->off[F->n] + 1, sizeof *d->mv);
	d->list = util_malloc(F->off[F->n] + 1, sizeof *d->list);
	if (!sums || !d->mo || !d->mc || !d->mv || !d->list) {
		free(sums);
		return -1;
	}
	model_directed_side_sums(g, F, sums);
	uint64_t o = 0;
	for (uint32_t u = 0; u < F->n; u++) {
		for (uint64_t j = F->off[u]; j < F->off[u + 1]; j++)
			if (model_directed_member_at(g, F, sums, u, j, delta)) {
				d->mc[o] = F->e[j].c;
				d->mv[o++] = F->e[j].v;
			}
		d->mo[u + 1] = o;
	}
	free(sums);
	/* one line per (node, community): a directed graph's sending row u
	 * and receiving row nsend + u are one node */
	uint32_t rows = g->paired ? g->nsend : g->n;
	for (uint32_t u = 0; u < rows; u++) {
		for (uint64_t j = d->mo[u]; j < d->mo[u + 1]; j++) {
			double r = 0.0;
			if (g->paired)
				dcover_has(d, g->nsend + u, d->mc[j], &r);
			int recv = graph_side_of(g, u); /* two-mode: the row's kind */
			d->list[d->nlist++] = (struct dmember){ d->mc[j], u, recv ? 0.0 : d->mv[j],
								recv ? d->mv[j] : r };
		}
		if (!g->paired)
			continue;
		for (uint64_t j = d->mo[g->nsend + u]; j < d->mo[g->nsend + u + 1]; j++)
			if (!dcover_has(d, u, d->mc[j], NULL))
				d->list[d->nlist++] = (struct dmember){ d->mc[j], u, 0.0, d->mv[j] };
	}
	qsort(d->list, d->nlist, sizeof *d->list, cmp_dmember);
	return 0;
}

void result_side_name(struct atomicfile *w, const struct graph *g, uint32_t u)
{
	size_t len;
	const char *s = graph_side_name(g, u, &len);
	char *plain = util_malloc(len + 1, 1);
	if (!plain) {
		atomicfile_str(w, "?");
		return;
	}
	memcpy(plain, s, len);
	plain[len] = '\0';
	atomicfile_tsv_name(w, plain);
	free(plain);
}

static int fill_dmemberships(struct atomicfile *w, const void *arg)
{
	const struct dcover *d = arg;
	atomicfile_str(w, "node\tcommunity\tstrength\tside\tsending\treceiving\n");
	for (uint64_t i = 0; i < d->nlist && !atomicfile_failed(w); i++) {
		const struct dmember *e = &d->list[i];
		result_side_name(w, d->g, e->node);
		const char *side = e->s > 0.0 && e->r > 0.0 ? "both" : e->s > 0.0 ? "sending"
										   : "receiving";
		atomicfile_printf(w, "\t%" PRIu32 "\t%.6g\t%s\t%.6g\t%.6g\n", e->c,
				  e->s > e->r ? e->s : e->r, side, e->s, e->r);
	}
	return 0;
}

static int fill_dcommunities(struct atomicfile *w, const void *arg)
{
	const struct dcover *d = arg;
	/* stability last, as in a one-mode communities.tsv */
	atomicfile_str(w, "community\tsize\tsenders\treceivers\tboth\tarcs_inside\tdensity\t"
			  "one_way\tstability");
	/* a weighted fit's two weight columns after it (an unweighted file
	 * keeps its bytes) */
	atomicfile_str(w, d->wobs ? "\tweight_inside\texpected_weight_inside\n" : "\n");
	for (uint32_t c = 0; c < d->F->k && !atomicfile_failed(w); c++) {
		const struct model_directed_figures *f = &d->fig[c];
		if (!f->size)
			continue; /* a community with no member on either side */
		atomicfile_printf(w, "%" PRIu32 "\t%" PRIu32 "\t%" PRIu32 "\t%" PRIu32 "\t%" PRIu32
				  "\t%" PRIu64 "\t%.6g\t%.6g\t", c, f->size, f->senders, f->receivers,
				  f->both, f->arcs, f->density, f->one_way_share);
		double st = d->score ? d->score[c] : NAN;
		if (isnan(st))
			atomicfile_str(w, "NA");
		else
			atomicfile_printf(w, "%.4f", st);
		if (d->wobs)
			atomicfile_printf(w, "\t%.9g\t%.9g", d->wobs[c], d->wexp[c]);
		atomicfile_str(w, "\n");
	}
	return 0;
}

/* A weighted fit's weight figures into d (d->wobs stays NULL for an
 * unweighted graph). Returns 0 or -1. */
static int weight_figures(struct dcover *d, const struct cover *sided,
			  const struct result_model *m)
{
	if (!d->g->wt)
		return 0;
	if (!(d->wobs = util_malloc(2 * (size_t)m->F->k + 1, sizeof *d->wobs)))
		return -1;
	d->wexp = d->wobs + m->F->k;
	return result_weight_sided_figures(d->g, m->F, sided, model_qeps(m->epsilon), d->wobs,
					   d->wexp);
}

int result_directed_stage(struct result_commit *c, const struct graph *g,
			  const struct result_model *m, const struct stability *st)
{
	struct dcover d;
	int rc = dcover_build(&d, g, m->F, m->delta);
	d.score = st && st->k == m->F->k ? st->score : NULL;
	struct cover sided;
	if (rc == 0 && !(rc = model_directed_cover(g, m->F, m->delta, &sided))) {
		if (!(d.fig = util_malloc((size_t)m->F->k + 1, sizeof *d.fig)) ||
		    model_directed_figures(g, &sided, d.fig) || weight_figures(&d, &sided, m))
			rc = -1;
		cover_release(&sided);
	}
	if (rc == 0)
		rc = result_commit_stage(c, "memberships.tsv", fill_dmemberships, &d) ||
				     result_commit_stage(c, "communities.tsv", fill_dcommunities, &d)
			     ? -1
			     : 0;
	dcover_release(&d);
	return rc;
}
