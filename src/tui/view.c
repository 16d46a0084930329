/*
 * tui/view: the explorer's state and the caches the panes draw from.
 *
 * Selections are kept by identity, not by row: the community by its id
 * (model column, stable across sweeps), the node by its id. When a new
 * snapshot arrives the sorted order, the member list and the node view are
 * recomputed and the cursors are put back on the same community and node.
 *
 * Caches are keyed by (snapshot generation, what is selected). Nothing
 * here builds a whole list on a big graph: the weak-edge and missing-link
 * lists are fetched a page at a time (inspect_* with offset and limit),
 * on the pager's thread (pager.c) because those are the costly questions;
 * the member list of one community and the community order are the only
 * full lists, and they are sized by a community, not by the graph.
 *
 * The one thing a newcomer gets wrong: a key handler must leave the caches
 * consistent before the next key of the same batch is read, so ui.c calls
 * view_prepare() after every key, not once per loop pass.
 *
 * No curses here: the state is unit-tested (tests/unit/test_tui_view.c)
 * with the fit, the snapshots and the pager as they are.
 */
#include "view.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/agm.h"
#include "coterie/graph.h"
#include "coterie/proc.h"
#include "coterie/result.h"
#include "coterie/stability.h"
#include "coterie/outdir.h"
#include "coterie/util.h"

void view_init(struct view *v, const struct tui_config *cfg)
{
	int holds = cfg->reopened && cfg->outdir_holds_result;
	*v = (struct view){
		.g = cfg->g, .fit = cfg->fit, .params = cfg->params,
		.graph_label = cfg->graph_label, .graph_path = cfg->graph_path,
		.outdir = cfg->outdir, .outdir_is_default = cfg->outdir_is_default,
		.reopened = cfg->reopened, .saved_state = cfg->saved_state,
		.t_begin = cfg->t_begin, .selection = cfg->selection,
		.node = -1, .comm_index = -1, .mem_for = -1, .node_for = -1,
		.sort_key = INSPECT_BY_SIZE, .focus = PANE_COMMS, .dirty = DIRTY_ALL,
		.state = FIT_READY,
		/* a reopened folder that holds this model counts as written */
		.saved = holds, .saved_sweep = holds ? cfg->saved_sweep : 0,
		.saved_loglik = holds ? cfg->saved_loglik : 0,
		.saved_as = holds ? cfg->saved_state : FIT_READY,
	};
	/* fit --repeats scored the communities of the model this folder holds */
	if (holds && cfg->outdir &&
	    stability_read(cfg->outdir, &v->stab, &v->nstab, &v->stab_sweep) == 0 && v->stab &&
	    v->stab_sweep != cfg->saved_sweep) {
		free(v->stab);
		v->stab = NULL;
		v->nstab = 0;
	}
}

void view_layout(struct view *v, int rows, int cols)
{
	v->rows = rows;
	v->cols = cols;
	v->too_small = rows < VIEW_MIN_ROWS || cols < VIEW_MIN_COLS;
	memset(v->box, 0, sizeof v->box);
	if (!v->too_small) {
		/* the likelihood across the top, a 2 x 2 grid of lists below */
		int body = rows - 2;
		int th = body * 3 / 10;
		if (th < 6)
			th = 6;
		if (th > 13)
			th = 13;
		int grid = body - th;
		int gt = (grid + 1) / 2, gb = grid - gt;
		int lw = cols / 2, rw = cols - lw;
		v->box[PANE_TRACE] = (struct rect){ 1, 0, th, cols };
		v->box[PANE_COMMS] = (struct rect){ 1 + th, 0, gt, lw };
		v->box[PANE_MEMBERS] = (struct rect){ 1 + th + gt, 0, gb, lw };
		v->box[PANE_NODE] = (struct rect){ 1 + th, lw, gt, rw };
		v->box[PANE_EDGES] = (struct rect){ 1 + th + gt, lw, gb, rw };
	}
	v->dirty = DIRTY_ALL;
	/* lists keep their cursor visible in the new heights */
	v->order_gen = 0;
	v->node_gen = 0;
}

void view_release(struct view *v)
{
	snapshot_release(v->snap);
	v->snap = NULL;
	free(v->order);
	free(v->mem);
	free(v->mem_strength);
	free(v->mem_side);
	free(v->side_sums);
	free(v->side_figs);
	free(v->affil_rows);
	free(v->page);
	free(v->stab);
	v->stab = NULL;
	v->nstab = 0;
	if (v->node_valid)
		inspect_node_release(&v->nodeview);
	sides_node_release(&v->sidenode);
	v->order = NULL;
	v->mem = NULL;
	v->mem_strength = NULL;
	v->mem_side = NULL;
	v->side_sums = NULL;
	v->side_figs = NULL;
	v->affil_rows = NULL;
	v->page = NULL;
	v->node_valid = 0;
}

enum fit_state view_state(const struct view *v)
{
	if (!v->started && v->reopened)
		return v->saved_state;
	return v->state;
}

const char *view_state_label(enum fit_state s)
{
	switch (s) {
	case FIT_READY: return "ready";
	case FIT_SEEDING: return "seeding";
	case FIT_FITTING: return "fitting";
	case FIT_PAUSED: return "paused";
	case FIT_LEVELLED: return "levelled off";
	case FIT_STOPPED: return "stopped";
	case FIT_FINISHED: return "finished";
	case FIT_FAILED: return "failed";
	}
	return "unknown";
}

int view_running(const struct view *v)
{
	return v->started && !fit_state_ended(v->state);
}

int view_unsaved(const struct view *v)
{
	if (!v->started || !v->snap || v->snap->ntrace == 0 || v->state == FIT_FAILED)
		return 0; /* nothing, or nothing to trust (as `coterie fit`) */
	if (!v->saved)
		return 1;
	if (v->saved_sweep != v->snap->sweep ||
	    v->saved_loglik != v->snap->trace[v->snap->ntrace - 1].loglik)
		return 1;
	/* the same model, but it ended since: the record should say how */
	return fit_state_ended(v->state) && v->state != v->saved_as;
}

void view_say(struct view *v, int level, const char *fmt, ...)
{
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(v->msg, sizeof v->msg, fmt, ap);
	va_end(ap);
	v->msg_level = level;
	v->msg_time = util_now();
	v->dirty |= DIRTY_FOOTER;
}

int view_take_snapshot(struct view *v)
{
	struct snapshot *s = fit_snapshot(v->fit);
	enum fit_state st = fit_get_state(v->fit);
	int changed = 0;
	if (s != v->snap) {
		snapshot_release(v->snap);
		v->snap = s;
		v->snap_gen++;
		changed = 1;
		v->dirty |= DIRTY_ALL;
	} else {
		snapshot_release(s);
	}
	if (st != v->state) {
		v->state = st;
		v->dirty |= DIRTY_HEADER | DIRTY_PANE(PANE_TRACE) | DIRTY_FOOTER;
	}
	if (v->state == FIT_PAUSED || fit_state_ended(v->state))
		v->pause_asked = 0;
	v->snap_taken = util_now();
	return changed;
}

/* Rows of pane's window that hold list rows; 0 when a short pane has
 * room only for its title and heads. */
static int list_rows(const struct view *v, int pane)
{
	int h = v->box[pane].h - 1; /* the title row */
	if (pane == PANE_COMMS || pane == PANE_EDGES)
		h -= 1; /* a column header */
	if (pane == PANE_EDGES && v->box[pane].h >= EDGES_DETAIL_MIN_H)
		h -= 1; /* the selected pair's probability, community by community */
	if (pane == PANE_NODE)
		h -= 3; /* name, figures, column header */
	return h > 0 ? h : 0;
}

int view_page_height(const struct view *v, int pane)
{
	int h = list_rows(v, pane);
	return h > 1 ? h : 1;
}

size_t view_rows(const struct view *v, int pane)
{
	switch (pane) {
	case PANE_COMMS: return v->norder;
	case PANE_MEMBERS: return v->nmem;
	case PANE_NODE: return v->naffil_rows;
	case PANE_EDGES: return v->total;
	default: return 0;
	}
}

const struct listpos *view_pos(const struct view *v, int pane)
{
	switch (pane) {
	case PANE_COMMS: return &v->comms;
	case PANE_MEMBERS: return &v->members;
	case PANE_NODE: return &v->affil;
	case PANE_EDGES: return &v->edges;
	default: return NULL;
	}
}

static struct listpos *pos_of(struct view *v, int pane)
{
	return (struct listpos *)view_pos(v, pane);
}

size_t view_rows_shown(const struct view *v, int pane)
{
	const struct listpos *p = view_pos(v, pane);
	size_t rows = view_rows(v, pane), h = (size_t)list_rows(v, pane);
	if (!p || p->top >= rows)
		return 0;
	return rows - p->top < h ? rows - p->top : h;
}

/* Keep cur inside [0, rows) and visible in a window of h rows. */
static void clamp_pos(struct listpos *p, size_t rows, int h)
{
	if (rows == 0) {
		p->cur = p->top = 0;
		return;
	}
	if (p->cur >= rows)
		p->cur = rows - 1;
	if (p->cur < p->top)
		p->top = p->cur;
	if (p->cur >= p->top + (size_t)h)
		p->top = p->cur - (size_t)h + 1;
	/* no empty space below the last row when it can be avoided */
	if (p->top + (size_t)h > rows)
		p->top = rows > (size_t)h ? rows - (size_t)h : 0;
}

/* The community under the communities cursor became the selection. */
static void comm_from_cursor(struct view *v)
{
	if (v->norder == 0 || !v->snap)
		return;
	uint32_t idx = v->order[v->comms.cur];
	uint32_t id = v->snap->agm.comms[idx].id;
	if (!v->has_comm || id != v->comm_id) {
		v->comm_id = id;
		v->has_comm = 1;
		v->edges.cur = v->edges.top = 0;
		v->members_reset = 1;
	}
	v->comm_index = idx;
	v->dirty |= DIRTY_PANE(PANE_COMMS) | DIRTY_PANE(PANE_MEMBERS) | DIRTY_PANE(PANE_NODE) |
		    DIRTY_PANE(PANE_EDGES);
}

/* The focused list's position and row count; NULL when it has no rows. */
static struct listpos *focused_list(struct view *v, size_t *rows)
{
	struct listpos *p = pos_of(v, v->focus);
	*rows = p ? view_rows(v, v->focus) : 0;
	return *rows ? p : NULL;
}

void view_move_to(struct view *v, size_t row)
{
	size_t rows;
	struct listpos *p = focused_list(v, &rows);
	if (!p)
		return;
	p->cur = row < rows ? row : rows - 1;
	clamp_pos(p, rows, view_page_height(v, v->focus));
	v->dirty |= DIRTY_PANE(v->focus);
	switch (v->focus) {
	case PANE_COMMS:
		comm_from_cursor(v);
		break;
	case PANE_MEMBERS:
		if (v->members.cur < v->nmem) {
			v->node = v->mem[v->members.cur];
			v->node_pinned = 0;
			v->dirty |= DIRTY_PANE(PANE_NODE);
		}
		break;
	default:
		break;
	}
}

void view_move(struct view *v, long delta)
{
	size_t rows;
	struct listpos *p = focused_list(v, &rows);
	if (!p)
		return;
	size_t row;
	if (delta < 0)
		row = (size_t)(-delta) > p->cur ? 0 : p->cur - (size_t)(-delta);
	else
		row = p->cur + (size_t)delta >= rows ? rows - 1 : p->cur + (size_t)delta;
	view_move_to(v, row);
}

void view_set_focus(struct view *v, int pane)
{
	if (pane < 0 || pane >= PANE_COUNT || pane == v->focus)
		return;
	v->dirty |= DIRTY_PANE(v->focus) | DIRTY_PANE(pane) | DIRTY_FOOTER;
	v->focus = pane;
}

void view_select_comm(struct view *v, uint32_t id)
{
	if (!v->has_comm || v->comm_id != id) {
		v->edges.cur = v->edges.top = 0;
		v->members_reset = 1;
	}
	v->has_comm = 1;
	v->comm_id = id;
	v->order_gen = 0; /* find its row again */
	v->dirty |= DIRTY_ALL;
}

void view_select_node(struct view *v, uint32_t node, int with_comm)
{
	if (node >= v->g->n)
		return;
	node = sides_user(v->g, node);
	v->node = node;
	v->node_pinned = 1;
	v->affil.cur = v->affil.top = 0;
	v->dirty |= DIRTY_PANE(PANE_NODE) | DIRTY_PANE(PANE_MEMBERS);
	if (with_comm && v->snap && node < v->snap->F.n) {
		/* its strongest membership, if any */
		const struct fcsr *F = &v->snap->F;
		double best = 0;
		int64_t bestc = -1;
		for (uint64_t i = F->off[node]; i < F->off[node + 1]; i++)
			if (agm_member_at(v->g, F, (uint32_t)node, i, v->snap->delta, AGM_MIN_LINKS) &&
			    F->e[i].v > best) {
				best = F->e[i].v;
				bestc = F->e[i].c;
			}
		if (bestc >= 0 && inspect_find_community(&v->snap->agm, (uint32_t)bestc) >= 0) {
			int changed = !v->has_comm || v->comm_id != (uint32_t)bestc;
			view_select_comm(v, (uint32_t)bestc);
			if (changed)
				v->members_reset = 0; /* the cursor goes to the node */
		}
	}
}

static const struct {
	enum inspect_key key;
	const char *name;
	int ascending; /* the natural direction: the best first */
} sorts[] = {
	{ INSPECT_BY_SIZE, "size", 0 },
	{ INSPECT_BY_EDGES, "internal edges", 0 },
	{ INSPECT_BY_DENSITY, "density", 0 },
	{ INSPECT_BY_CONDUCTANCE, "conductance", 1 },
	{ INSPECT_BY_P, "p", 0 },
	{ INSPECT_BY_ID, "id", 1 },
};
#define NSORTS (sizeof sorts / sizeof sorts[0])

static size_t sort_slot(enum inspect_key k)
{
	for (size_t i = 0; i < NSORTS; i++)
		if (sorts[i].key == k)
			return i;
	return 0;
}

const char *view_sort_name(const struct view *v)
{
	if (!v->by_stability && v->g->nsend)
		return sides_sort_name(v->sort_key);
	return v->by_stability ? "stability" : sorts[sort_slot(v->sort_key)].name;
}

double view_stability(const struct view *v, uint32_t id)
{
	if (!v->stab || id >= v->nstab || !v->snap || v->snap->sweep != v->stab_sweep)
		return NAN;
	return v->stab[id];
}

int view_has_stability(const struct view *v)
{
	const struct agm *a = v->snap ? &v->snap->agm : NULL;
	for (uint32_t i = 0; a && i < a->cover.k; i++)
		if (!isnan(view_stability(v, a->comms[i].id)))
			return 1;
	return 0;
}

int view_sort_stability(struct view *v)
{
	if (!v->by_stability && !view_has_stability(v))
		return -1;
	v->by_stability = !v->by_stability;
	v->ascending = v->by_stability ? 0 : sorts[sort_slot(v->sort_key)].ascending;
	v->order_gen = 0;
	v->dirty |= DIRTY_PANE(PANE_COMMS);
	return 0;
}

/* A row of the order by stability: its score and its place in the
 * column sort, which breaks ties. */
struct stab_row {
	double score;
	uint32_t rank, index;
};

static int stab_most_first(const void *pa, const void *pb)
{
	const struct stab_row *a = pa, *b = pb;
	int na = isnan(a->score), nb = isnan(b->score);
	if (na != nb)
		return na - nb; /* unscored last */
	int c = na ? 0 : util_cmp_double(b->score, a->score);
	return c ? c : util_cmp_uint(a->rank, b->rank);
}

/* Reorder v->order (the column sort) by stability, most stable first, or
 * least first when ascending; unscored communities stay last. */
static void order_by_stability(struct view *v, const struct agm *a)
{
	struct stab_row *r = util_malloc(v->norder ? v->norder : 1, sizeof *r);
	if (!r)
		return; /* the column order stays */
	for (uint32_t i = 0; i < v->norder; i++) {
		double x = view_stability(v, a->comms[v->order[i]].id);
		r[i] = (struct stab_row){ v->ascending && !isnan(x) ? -x : x, i, v->order[i] };
	}
	qsort(r, v->norder, sizeof *r, stab_most_first);
	for (uint32_t i = 0; i < v->norder; i++)
		v->order[i] = r[i].index;
	free(r);
}

void view_sort_next(struct view *v)
{
	v->by_stability = 0;
	size_t i = (sort_slot(v->sort_key) + 1) % NSORTS;
	v->sort_key = sorts[i].key;
	v->ascending = sorts[i].ascending;
	v->order_gen = 0;
	v->dirty |= DIRTY_PANE(PANE_COMMS);
}

void view_sort_flip(struct view *v)
{
	v->ascending = !v->ascending;
	v->order_gen = 0;
	v->dirty |= DIRTY_PANE(PANE_COMMS);
}

void view_toggle_weak(struct view *v)
{
	v->show_weak = !v->show_weak;
	v->node_gen = 0;
	v->affil.cur = v->affil.top = 0;
	v->dirty |= DIRTY_PANE(PANE_NODE);
}

int view_next_side(struct view *v)
{
	if (!v->g->nsend)
		return -1;
	v->side_filter = (enum sides_filter)((v->side_filter + 1) % 3);
	v->mem_gen = 0; /* list again; the cursor stays on the node if it is listed */
	v->dirty |= DIRTY_PANE(PANE_MEMBERS);
	return 0;
}

void view_toggle_edges_mode(struct view *v)
{
	v->edges_mode = v->edges_mode == EDGES_WEAK ? EDGES_MISSING : EDGES_WEAK;
	v->edges.cur = v->edges.top = 0;
	v->dirty |= DIRTY_PANE(PANE_EDGES);
}

const char *view_node_name(const struct view *v, uint32_t node, char *buf, size_t cap)
{
	if (node >= v->g->n) {
		snprintf(buf, cap, "?");
		return buf;
	}
	if (v->g->nsend) /* the name given, without the side tag */
		return sides_name(v->g, node, buf, cap, !v->utf8);
	return util_escape(graph_name(v->g, node), buf, cap, !v->utf8);
}

/* ---- caches ---- */

static int prepare_sides(struct view *v);

static void prepare_order(struct view *v)
{
	const struct agm *a = &v->snap->agm;
	if (v->order_gen == v->snap_gen && v->order)
		return;
	uint32_t k = a->cover.k;
	uint32_t *o = realloc(v->order, (k ? k : 1) * sizeof *o);
	if (!o) {
		view_say(v, UTIL_ERROR, "out of memory sorting %u communities", k);
		return;
	}
	v->order = o;
	int asc = v->by_stability ? sorts[sort_slot(v->sort_key)].ascending : v->ascending;
	if (k && v->g->nsend) /* communities.tsv's rows and figures */
		k = prepare_sides(v) ? 0 : sides_sort_communities(a, v->side_figs, v->snap->F.k,
								  v->sort_key, asc, v->order);
	else if (k)
		inspect_sort_communities(a, v->sort_key, asc, v->order);
	v->norder = k;
	if (k && v->by_stability)
		order_by_stability(v, a);
	v->order_gen = v->snap_gen;
	v->dirty |= DIRTY_PANE(PANE_COMMS);
	/* put the cursor back on the selected community */
	int found = 0;
	if (v->has_comm)
		for (uint32_t i = 0; i < k; i++)
			if (a->comms[v->order[i]].id == v->comm_id) {
				v->comms.cur = i;
				found = 1;
				break;
			}
	clamp_pos(&v->comms, k, view_page_height(v, PANE_COMMS));
	if (k == 0) {
		v->comm_index = -1;
		return;
	}
	if (found) {
		v->comm_index = v->order[v->comms.cur];
	} else {
		/* gone (emptied) or never chosen: the row under the cursor */
		comm_from_cursor(v);
	}
}

/* The per-side column sums of the snapshot on screen and pane 2's
 * figures (two-sided graphs). Returns 0 or -1 (the footer says why). */
static int prepare_sides(struct view *v)
{
	if (v->side_sums && v->sums_gen == v->snap_gen)
		return 0;
	free(v->side_sums);
	free(v->side_figs);
	v->side_sums = sides_sums(v->g, &v->snap->F);
	v->side_figs = sides_figures(v->g, &v->snap->F, v->snap->delta);
	if (!v->side_sums || !v->side_figs) {
		view_say(v, UTIL_ERROR, "out of memory summing the sides of %u columns",
			 v->snap->F.k);
		return -1;
	}
	v->sums_gen = v->snap_gen;
	return 0;
}

static void prepare_members(struct view *v)
{
	const struct agm *a = &v->snap->agm;
	if (v->comm_index < 0) {
		v->nmem = 0;
		v->mem_for = -1;
		return;
	}
	if (v->mem_gen == v->snap_gen && v->mem_for == v->comm_index && !v->members_reset)
		return;
	uint32_t size = cover_size(&a->cover, (uint32_t)v->comm_index);
	if (size > v->mem_cap || !v->mem) {
		uint32_t cap = size ? size : 1;
		uint32_t *m = realloc(v->mem, cap * sizeof *m);
		double *s = m ? realloc(v->mem_strength, cap * sizeof *s) : NULL;
		uint8_t *sd = s ? realloc(v->mem_side, cap * sizeof *sd) : NULL;
		if (m)
			v->mem = m;
		if (s)
			v->mem_strength = s;
		if (!sd) {
			view_say(v, UTIL_ERROR, "out of memory listing %u members", size);
			v->nmem = 0;
			return;
		}
		v->mem_side = sd;
		v->mem_cap = cap;
	}
	if (v->g->nsend) {
		int64_t got = prepare_sides(v) ? -1 :
			sides_members(v->g, &v->snap->F, v->side_sums, v->snap->delta, v->comm_id,
				      a->cover.mem + a->cover.off[v->comm_index], size,
				      v->side_filter, v->mem, v->mem_strength, v->mem_side);
		size = got < 0 ? 0 : (uint32_t)got;
	} else {
		inspect_members(a, (uint32_t)v->comm_index, v->mem, v->mem_strength);
	}
	v->nmem = size;
	v->mem_gen = v->snap_gen;
	v->mem_for = v->comm_index;
	v->dirty |= DIRTY_PANE(PANE_MEMBERS);
	if (v->members_reset) {
		v->members_reset = 0;
		v->members.cur = v->members.top = 0;
		if (size > 0) {
			v->node = v->mem[0];
			v->node_pinned = 0;
			v->affil.cur = v->affil.top = 0;
			v->dirty |= DIRTY_PANE(PANE_NODE);
		}
	} else {
		int found = 0;
		for (uint32_t i = 0; v->node >= 0 && i < size; i++)
			if (v->mem[i] == (uint32_t)v->node) {
				v->members.cur = i;
				found = 1;
				break;
			}
		/* a node taken from this list follows the list's cursor when
		 * the fit moves it out; one chosen elsewhere stays */
		if (!found && !v->node_pinned && size > 0) {
			if (v->members.cur >= size)
				v->members.cur = size - 1;
			v->node = v->mem[v->members.cur];
			v->dirty |= DIRTY_PANE(PANE_NODE);
		}
	}
	clamp_pos(&v->members, size, view_page_height(v, PANE_MEMBERS));
}

static void prepare_node(struct view *v)
{
	if (v->node < 0) {
		if (v->node_valid)
			inspect_node_release(&v->nodeview);
		v->node_valid = 0;
		v->naffil_rows = 0;
		return;
	}
	if (v->node_valid && v->node_gen == v->snap_gen && v->node_for == v->node)
		return;
	if (v->node_valid)
		inspect_node_release(&v->nodeview);
	sides_node_release(&v->sidenode);
	v->node_valid = 0;
	v->naffil_rows = 0;
	v->node_gen = v->snap_gen;
	v->node_for = v->node;
	v->dirty |= DIRTY_PANE(PANE_NODE);
	if (v->g->nsend ? prepare_sides(v) ||
				  sides_node(&v->nodeview, &v->sidenode, v->g, &v->snap->F,
					     v->side_sums, v->snap->delta, (uint32_t)v->node)
			: inspect_node(&v->nodeview, v->g, &v->snap->F, v->snap->delta,
				       AGM_MIN_LINKS, (uint32_t)v->node))
		return;
	v->node_valid = 1;
	uint32_t n = v->nodeview.naffil;
	uint32_t *rows = realloc(v->affil_rows, (n ? n : 1) * sizeof *rows);
	if (!rows)
		return;
	v->affil_rows = rows;
	for (uint32_t i = 0; i < n; i++)
		if (v->show_weak || v->nodeview.affil[i].member)
			v->affil_rows[v->naffil_rows++] = i;
	clamp_pos(&v->affil, v->naffil_rows, view_page_height(v, PANE_NODE));
}

/* Does the page hold the h rows from top (or all rows left from top)? */
static int page_covers(const struct view *v, size_t top, size_t h)
{
	size_t end = v->page_off + v->npage;
	return top >= v->page_off && (top + h <= end || end >= v->total);
}

static void install_page(struct view *v, struct page_res *res)
{
	free(v->page);
	v->page = res->rows;
	res->rows = NULL;
	v->npage = res->failed ? 0 : res->n;
	v->page_off = res->off;
	v->total = res->failed ? 0 : res->total;
	v->page_valid = !res->failed;
	v->page_gen = res->gen;
	v->page_for = res->comm_id;
	v->page_mode = res->mode;
	clamp_pos(&v->edges, v->total, view_page_height(v, PANE_EDGES));
	v->dirty |= DIRTY_PANE(PANE_EDGES);
}

void view_page_answer(struct view *v, struct page_res *res)
{
	if (res->id != v->req_id) { /* a newer question is on its way */
		free(res->rows);
		return;
	}
	v->req_open = 0;
	if (v->timing)
		fprintf(v->timing, "page %s of #%u, rows %zu-%zu of %zu: %.3f ms after asking\n",
			res->mode == EDGES_WEAK ? "weak edges" : "missing links", res->comm_id,
			res->off + 1, res->off + res->n, res->total, (util_now() - v->req_time) * 1e3);
	install_page(v, res);
}

static void prepare_page(struct view *v)
{
	if (v->comm_index < 0 || !v->has_comm) {
		free(v->page);
		v->page = NULL;
		v->npage = v->total = 0;
		v->page_valid = 0;
		return;
	}
	size_t h = (size_t)view_page_height(v, PANE_EDGES);
	int same_list = v->page_valid && v->page_for == v->comm_id && v->page_mode == v->edges_mode;
	if (same_list)
		clamp_pos(&v->edges, v->total, (int)h);
	if (same_list && v->page_gen == v->snap_gen && page_covers(v, v->edges.top, h))
		return;
	/* pages aligned to the pane's height, twice as tall: moving within
	 * one fetches nothing */
	size_t off = (v->edges.top / h) * h;
	if (v->req_open && v->req_for == v->comm_id && v->req_mode == v->edges_mode &&
	    v->req_off == off && v->req_gen == v->snap_gen)
		return; /* asked already */
	struct page_req rq = {
		.id = ++v->req_id,
		.g = v->g,
		.comm_id = v->comm_id,
		.mode = v->edges_mode,
		.off = off,
		.limit = 2 * h,
		.gen = v->snap_gen,
	};
	if (!same_list) {
		/* rows of another list must not stay on screen meanwhile */
		free(v->page);
		v->page = NULL;
		v->npage = v->total = 0;
		v->page_valid = 0;
	}
	v->dirty |= DIRTY_PANE(PANE_EDGES);
	if (v->pager) {
		rq.snap = fit_snapshot(v->fit); /* the worker's own reference */
		v->req_time = util_now();
		pager_submit(v->pager, &rq);
		v->req_open = 1;
		v->req_for = rq.comm_id;
		v->req_mode = rq.mode;
		v->req_off = rq.off;
		v->req_gen = rq.gen;
	} else {
		struct page_res res;
		rq.snap = v->snap;
		pager_answer(&rq, &res);
		v->req_open = 0;
		install_page(v, &res);
	}
}

void view_prepare(struct view *v)
{
	if (!v->snap)
		return;
	prepare_order(v);
	prepare_members(v);
	prepare_node(v);
	prepare_page(v);
}

/* ---- writing ---- */

/* Write snapshot s (borrowed) in state st. Returns 0 or -1. */
static int write_snapshot(struct view *v, const struct snapshot *s, enum fit_state st,
			  const char *status)
{
	/* a reopened result's snapshot says "ready"; the record keeps the
	 * state it was saved in */
	struct result_model m;
	result_model_of(&m, s);
	m.state = st;
	struct result_meta meta = {
		.command_line = proc_command_line(),
		.graph_path = v->graph_path,
		.wall_seconds = util_now() - v->t_begin,
		.peak_rss_kb = proc_peak_rss_kb(),
		.status = status ? status : fit_state_name(st),
		.k_auto = v->selection != NULL,
		.selection = v->selection,
	};
	int rc = v->od ? outdir_write(v->od, &m, &meta, NULL) : error("out of memory");
	char esc[300];
	if (rc == 0) {
		v->saved = 1;
		v->saved_sweep = s->sweep;
		v->saved_loglik = s->trace[s->ntrace - 1].loglik;
		v->saved_as = st;
		v->write_failed = 0;
		view_say(v, UTIL_NOTICE, "wrote the result at sweep %u to '%s'%s", s->sweep,
			 util_escape(v->outdir, esc, sizeof esc, !v->utf8),
			 s->savepoint ? " (it resumes exactly)" : "");
	} else {
		/* the folder does not hold this model; the core's message (and
		 * where the result went instead) is on its way to the footer */
		v->saved = 0;
		v->write_failed = 1;
	}
	v->dirty |= DIRTY_HEADER | DIRTY_FOOTER;
	return rc;
}

int view_write(struct view *v, const char *status)
{
	struct snapshot *s = fit_snapshot(v->fit);
	enum fit_state st = v->started ? fit_get_state(v->fit) : v->saved_state;
	if (s->ntrace == 0) {
		snapshot_release(s);
		view_say(v, UTIL_WARNING, "nothing to write yet: the fit is still seeding");
		return -1;
	}
	if (st == FIT_FAILED) {
		snapshot_release(s);
		view_say(v, UTIL_ERROR, "the fit failed; nothing is written");
		return -1;
	}
	if (!status && st == FIT_FITTING && !v->pause_asked && v->od &&
	    (v->write_asked || outdir_ask(v->od, v->fit) == 0)) {
		snapshot_release(s);
		v->write_asked = 1;
		view_say(v, UTIL_NOTICE, "writing at the end of the sweep in progress, so that the "
			 "result resumes exactly");
		return 0;
	}
	int rc = write_snapshot(v, s, st, status);
	snapshot_release(s);
	return rc;
}

int view_write_asked(struct view *v)
{
	struct snapshot *s = v->od ? outdir_take_asked(v->od) : NULL;
	if (s) {
		v->write_asked = 0;
		int rc = write_snapshot(v, s, s->state, NULL);
		snapshot_release(s);
		return rc;
	}
	enum fit_state st = fit_get_state(v->fit);
	if (st == FIT_FITTING && !v->pause_asked)
		return 1;
	v->write_asked = 0; /* no sweep will end: the model as it is */
	return view_write(v, NULL);
}
