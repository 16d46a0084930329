/*
 * The explorer's state (src/tui/view.h): selections, cursors, sort order,
 * toggles, the layout and the edge pages, driven as the key handlers drive
 * them, on a real fit of a planted graph and with no terminal. view.c and
 * pager.c have no curses in them; the Makefile links their objects into
 * this test (TUI_STATE_OBJ).
 */
#include <stdlib.h>
#include <string.h>

#include "helpers.h"

#include "../src/tui/view.h"
#include "coterie/agm.h"
#include "coterie/cover.h"
#include "coterie/fit.h"
#include "coterie/graph.h"

struct fixture {
	struct graph *g;
	struct cover truth;
	struct tui_config cfg;
	struct view v;
};

/* A fit of the planted ring (8 communities), run to its end on the fit's
 * thread, shown in a view of an 80 x 24 terminal. */
static struct fit *fitted(const struct graph *g, const struct fit_params *p,
			  const struct fit_origin *o)
{
	struct fit *f = fit_new(g, p, o);
	assert_non_null(f);
	assert_int_equal(fit_start(f), 0);
	fit_wait(f);
	return f;
}

static int setup(void **state)
{
	struct fixture *x = calloc(1, sizeof *x);
	assert_non_null(x);
	x->g = test_planted_ring(&x->truth, 7);
	fit_params_default(&x->cfg.params);
	x->cfg.params.k = 8;
	x->cfg.params.threads = 1;
	x->cfg.params.starts = 1;
	x->cfg.params.seed = 11;
	x->cfg.params.max_sweeps = 30;
	x->cfg.g = x->g;
	x->cfg.fit = fitted(x->g, &x->cfg.params, NULL);
	x->cfg.graph_label = x->cfg.graph_path = "ring";
	x->cfg.outdir = "unused";
	view_init(&x->v, &x->cfg);
	x->v.started = 1;
	view_layout(&x->v, 24, 80);
	assert_int_equal(view_take_snapshot(&x->v), 1);
	view_prepare(&x->v);
	*state = x;
	return 0;
}

static int teardown(void **state)
{
	struct fixture *x = *state;
	fit_free(x->v.fit);
	view_release(&x->v);
	cover_release(&x->truth);
	graph_free(x->g);
	free(x);
	return 0;
}

/* The id of the community in row i of the communities list. */
static uint32_t id_at_row(const struct view *v, size_t i)
{
	return v->snap->agm.comms[v->order[i]].id;
}

static void test_view_layout_tiles_the_terminal_and_refuses_a_small_one(void **state)
{
	struct view *v = &((struct fixture *)*state)->v;
	assert_false(v->too_small);
	/* the likelihood spans the width under the header row */
	assert_int_equal(v->box[PANE_TRACE].y, 1);
	assert_int_equal(v->box[PANE_TRACE].w, 80);
	/* the grid: left and right columns fill the width, top and bottom
	 * rows fill what is left above the footer row */
	assert_int_equal(v->box[PANE_COMMS].w + v->box[PANE_NODE].w, 80);
	assert_int_equal(v->box[PANE_NODE].x, v->box[PANE_COMMS].w);
	assert_int_equal(v->box[PANE_MEMBERS].y, v->box[PANE_COMMS].y + v->box[PANE_COMMS].h);
	assert_int_equal(v->box[PANE_EDGES].y + v->box[PANE_EDGES].h, 24 - 1);
	assert_int_equal(v->box[PANE_TRACE].h + v->box[PANE_COMMS].h + v->box[PANE_MEMBERS].h, 22);
	/* below VIEW_MIN_COLS x VIEW_MIN_ROWS no pane is laid out */
	view_layout(v, 24, VIEW_MIN_COLS - 1);
	assert_true(v->too_small);
	assert_int_equal(v->box[PANE_COMMS].h, 0);
	view_layout(v, VIEW_MIN_ROWS - 1, 80);
	assert_true(v->too_small);
	view_layout(v, VIEW_MIN_ROWS, VIEW_MIN_COLS);
	assert_false(v->too_small);
}

/* No pane draws more list rows than its window holds: at the smallest
 * screen the node pane (title, name, figures, heads) has room for none,
 * and a row drawn below it landed at the end of its heads line. */
static void test_view_rows_shown_fit_each_window(void **state)
{
	struct view *v = &((struct fixture *)*state)->v;
	static const int sizes[][2] = { { VIEW_MIN_ROWS, VIEW_MIN_COLS }, { 24, 80 }, { 40, 120 } };
	for (size_t i = 0; i < sizeof sizes / sizeof sizes[0]; i++) {
		view_layout(v, sizes[i][0], sizes[i][1]);
		view_prepare(v);
		static const int heads[PANE_COUNT] = { [PANE_COMMS] = 2, [PANE_MEMBERS] = 1,
						       [PANE_NODE] = 4, [PANE_EDGES] = 2 };
		for (int p = PANE_COMMS; p < PANE_COUNT; p++) {
			/* title and heads take the first rows of the window */
			int room = v->box[p].h - heads[p];
			size_t shown = view_rows_shown(v, p);
			assert_true((long)shown <= (room > 0 ? room : 0));
		}
	}
}

static void test_view_move_clamps_the_cursor_and_keeps_it_visible(void **state)
{
	struct view *v = &((struct fixture *)*state)->v;
	view_layout(v, VIEW_MIN_ROWS, 80); /* short lists: 8 communities scroll */
	view_prepare(v);
	view_set_focus(v, PANE_COMMS);
	size_t n = view_rows(v, PANE_COMMS);
	size_t h = (size_t)view_page_height(v, PANE_COMMS);
	assert_int_equal(n, v->snap->agm.cover.k);
	assert_true(n > h); /* else nothing scrolls and the test proves little */
	view_move(v, -5);
	assert_int_equal(v->comms.cur, 0);
	assert_int_equal(v->comms.top, 0);
	assert_int_equal(view_rows_shown(v, PANE_COMMS), h);
	view_move(v, 1000);
	assert_int_equal(v->comms.cur, n - 1);
	/* the last row is on screen, with no empty rows below it */
	assert_int_equal(v->comms.top, n - h);
	assert_int_equal(view_rows_shown(v, PANE_COMMS), h);
	view_move_to(v, 0);
	assert_int_equal(v->comms.top, 0);
	view_move_to(v, (size_t)-1); /* End */
	assert_int_equal(v->comms.cur, n - 1);
	/* moving the cursor selects the community under it */
	assert_int_equal(v->comm_id, id_at_row(v, n - 1));
}

static void test_view_sort_next_cycles_the_columns_and_flip_reverses(void **state)
{
	struct view *v = &((struct fixture *)*state)->v;
	assert_string_equal(view_sort_name(v), "size"); /* the start: largest first */
	assert_false(v->ascending);
	for (size_t i = 1; i < v->norder; i++)
		assert_true(v->snap->agm.comms[v->order[i - 1]].size >=
			    v->snap->agm.comms[v->order[i]].size);
	view_sort_next(v);
	view_prepare(v);
	assert_string_equal(view_sort_name(v), "internal edges");
	for (size_t i = 1; i < v->norder; i++)
		assert_true(v->snap->agm.comms[v->order[i - 1]].internal_edges >=
			    v->snap->agm.comms[v->order[i]].internal_edges);
	view_sort_flip(v);
	view_prepare(v);
	assert_true(v->ascending);
	for (size_t i = 1; i < v->norder; i++)
		assert_true(v->snap->agm.comms[v->order[i - 1]].internal_edges <=
			    v->snap->agm.comms[v->order[i]].internal_edges);
	/* conductance is best low: it starts ascending */
	view_sort_next(v);
	view_sort_next(v);
	assert_string_equal(view_sort_name(v), "conductance");
	assert_true(v->ascending);
	/* six columns, then size again */
	for (int i = 0; i < 3; i++)
		view_sort_next(v);
	assert_string_equal(view_sort_name(v), "size");
	assert_false(v->ascending);
}

static void test_view_selection_follows_the_community_when_the_order_changes(void **state)
{
	struct view *v = &((struct fixture *)*state)->v;
	view_set_focus(v, PANE_COMMS);
	view_move_to(v, 2);
	view_prepare(v);
	uint32_t id = v->comm_id;
	assert_int_equal(id_at_row(v, 2), id);
	view_sort_flip(v); /* the row moves; the selection goes with it */
	view_prepare(v);
	assert_int_equal(v->comm_id, id);
	assert_int_equal(id_at_row(v, v->comms.cur), id);
	/* (its new row is not simply mirrored: equal sizes keep id order) */
	assert_true(v->snap->agm.comms[v->order[0]].size <=
		    v->snap->agm.comms[v->order[v->norder - 1]].size);
}

static void test_view_selection_survives_a_new_snapshot(void **state)
{
	struct fixture *x = *state;
	struct view *v = &x->v;
	view_set_focus(v, PANE_COMMS);
	view_move_to(v, 3);
	view_prepare(v);
	uint32_t id = v->comm_id;
	int64_t node = v->node;
	assert_true(node >= 0);
	unsigned long gen = v->snap_gen;
	/* a fit that goes on from the one on screen, as 'e' starts it */
	const struct snapshot *s = v->snap;
	struct fit_params p = v->params;
	p.max_sweeps = s->sweep + 10;
	struct fit_origin o = { .F = &s->F, .trace = s->trace, .ntrace = s->ntrace,
				.sweep = s->sweep, .seconds = s->seconds,
				.plateau_sweep = s->plateau_sweep };
	uint32_t old_sweep = s->sweep; /* s is released with the old snapshot */
	struct fit *next = fitted(x->g, &p, &o);
	fit_free(v->fit);
	v->fit = next;
	assert_int_equal(view_take_snapshot(v), 1);
	assert_true(v->snap_gen > gen);
	assert_true(v->snap->sweep > old_sweep || v->snap->ntrace > 0);
	view_prepare(v);
	/* the same community and node, wherever their rows are now */
	assert_int_equal(v->comm_id, id);
	assert_int_equal(id_at_row(v, v->comms.cur), id);
	assert_int_equal(v->snap->agm.comms[v->comm_index].id, id);
	assert_int_equal(v->node, node);
	assert_int_equal(v->mem[v->members.cur], (uint32_t)node);
}

static void test_view_toggles_reset_their_lists(void **state)
{
	struct view *v = &((struct fixture *)*state)->v;
	v->affil.cur = 1;
	v->edges.cur = v->edges.top = 3;
	view_toggle_weak(v);
	assert_true(v->show_weak);
	assert_int_equal(v->affil.cur, 0);
	view_prepare(v);
	/* every strength of the node is listed, memberships or not */
	assert_int_equal(v->naffil_rows, v->nodeview.naffil);
	view_toggle_weak(v);
	view_prepare(v);
	assert_int_equal(v->naffil_rows, v->nodeview.nmember);
	view_toggle_edges_mode(v);
	assert_int_equal(v->edges_mode, EDGES_MISSING);
	assert_int_equal(v->edges.cur, 0);
	assert_int_equal(v->edges.top, 0);
	view_toggle_edges_mode(v);
	assert_int_equal(v->edges_mode, EDGES_WEAK);
}

static void test_view_fetches_the_edge_page_of_the_selected_community(void **state)
{
	struct view *v = &((struct fixture *)*state)->v;
	/* no pager thread: the page is answered at once on this thread */
	assert_null(v->pager);
	assert_true(v->has_comm);
	assert_true(v->page_valid);
	assert_int_equal(v->page_for, v->comm_id);
	assert_int_equal(v->page_mode, EDGES_WEAK);
	assert_true(v->total > 0);
	assert_true(v->npage > 0 && v->npage <= v->total);
	/* weakest first; the first end is a member */
	for (size_t i = 0; i < v->npage; i++) {
		if (i > 0)
			assert_true(v->page[i - 1].prob <= v->page[i].prob);
		int member = 0;
		for (uint32_t j = 0; j < v->nmem; j++)
			member |= v->mem[j] == v->page[i].u;
		assert_true(member);
	}
	/* the other list of the same community comes on the next pass */
	view_toggle_edges_mode(v);
	view_prepare(v);
	assert_int_equal(v->page_mode, EDGES_MISSING);
	assert_true(v->page_valid);
}

static void test_view_node_name_is_escaped_and_guards_the_range(void **state)
{
	struct view *v = &((struct fixture *)*state)->v;
	char buf[64];
	assert_string_equal(view_node_name(v, v->g->n, buf, sizeof buf), "?");
	assert_string_equal(view_node_name(v, 0, buf, sizeof buf), graph_name(v->g, 0));
}

static void test_view_unsaved_until_written(void **state)
{
	struct view *v = &((struct fixture *)*state)->v;
	assert_true(view_unsaved(v)); /* a fitted model, never written */
	v->saved = 1;
	v->saved_sweep = v->snap->sweep;
	v->saved_loglik = v->snap->trace[v->snap->ntrace - 1].loglik;
	v->saved_as = v->state;
	assert_false(view_unsaved(v));
	v->started = 0; /* a reopened result that was not run on */
	v->saved = 0;
	assert_false(view_unsaved(v));
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test_setup_teardown(
			test_view_layout_tiles_the_terminal_and_refuses_a_small_one, setup, teardown),
		cmocka_unit_test_setup_teardown(
			test_view_move_clamps_the_cursor_and_keeps_it_visible, setup, teardown),
		cmocka_unit_test_setup_teardown(
			test_view_sort_next_cycles_the_columns_and_flip_reverses, setup, teardown),
		cmocka_unit_test_setup_teardown(
			test_view_selection_follows_the_community_when_the_order_changes, setup,
			teardown),
		cmocka_unit_test_setup_teardown(test_view_rows_shown_fit_each_window, setup, teardown),
		cmocka_unit_test_setup_teardown(test_view_selection_survives_a_new_snapshot, setup,
						teardown),
		cmocka_unit_test_setup_teardown(test_view_toggles_reset_their_lists, setup, teardown),
		cmocka_unit_test_setup_teardown(
			test_view_fetches_the_edge_page_of_the_selected_community, setup, teardown),
		cmocka_unit_test_setup_teardown(test_view_node_name_is_escaped_and_guards_the_range,
						setup, teardown),
		cmocka_unit_test_setup_teardown(test_view_unsaved_until_written, setup, teardown),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
