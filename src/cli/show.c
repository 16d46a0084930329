/*
 * cli/show: `coterie show DIR [--node NAME | --community ID |
 * --weak-edges ID [--missing] | --edge A B | --links] [--limit N] [--json]`.
 *
 * Reopens a result folder from its checkpoint, reads the strengths back
 * as an AGM and prints one view: the summary and the communities table,
 * a node, a community and its members, or the edges a community explains
 * least well (or, with --missing, the member pairs it predicts most
 * strongly that are not linked), one pair's probability and each shared
 * community's part in it, or every edge with its probability. The
 * numbers come from inspect.c, the
 * same code behind the explorer's panes, so the two always agree.
 *
 * Text is for people: aligned columns, names last where they can be, and
 * every node name (and the folder name) passed through util_escape() so
 * no byte from a file reaches the terminal raw; ASCII-only escaping when
 * the locale is not UTF-8. JSON carries the same data; jansson escapes.
 *
 * Exit status: 0, 1 (unreadable folder, unknown node or community, write
 * error), 2 (bad usage). Nothing here calls exit().
 */
#include <errno.h>
#include <getopt.h>
#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>
#include <wchar.h>

#include <jansson.h>

#include "cli.h"
#include "coterie/agm.h"
#include "coterie/checkpoint.h"
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/inspect.h"
#include "coterie/jsonout.h"
#include "coterie/model.h"
#include "coterie/outdir.h"
#include "coterie/result.h"
#include "coterie/result_commit.h"
#include "coterie/result_cover.h"
#include "coterie/suggest.h"

#define SHOW_DEFAULT_LIMIT 20u
#define NAME_CAP 1024       /* bytes of an escaped name in text mode */
#define NAME_COL_MAX 40     /* widest padded name column */

static void show_usage_short(FILE *out)
{
	fprintf(out,
		"usage: coterie show DIR [--node NAME | --community ID | --weak-edges ID [--missing] |\n"
		"                        --edge A B | --links] [--limit N] [--json]\n");
}

static void show_usage(FILE *out)
{
	show_usage_short(out);
	fprintf(out,
		"\n"
		"Print what the result folder DIR holds. With no choice: a summary and the\n"
		"communities, largest first.\n"
		"\n"
		"      --node NAME       the node's strength in every community, and how many\n"
		"                        of its edges each community explains\n"
		"      --community ID    a community's figures and its members by strength\n"
		"      --weak-edges ID   the edges touching the community's members that the\n"
		"                        model explains least (lowest probability first)\n"
		"      --missing         with --weak-edges: the member pairs that are not linked\n"
		"                        but are predicted most strongly\n"
		"      --edge A B        the model's probability of a link between nodes A and\n"
		"                        B, and each shared community's part in it\n"
		"      --links           every edge with its probability and the community that\n"
		"                        explains it (all of them unless --limit is given)\n"
		"      --limit N         show at most N rows (default %u in text, all in JSON;\n"
		"                        0 shows all)\n"
		"      --json            the same data as JSON (coterie(1) lists the keys)\n"
		"  -h, --help            this text\n",
		SHOW_DEFAULT_LIMIT);
}

struct show {
	const char *dir;
	struct checkpoint ck;
	struct agm agm;              /* the cover memberships.tsv holds (result_cover.h) */
	enum result_cover_from from; /* and where it was read from */
	double delta;
	size_t limit; /* rows; SIZE_MAX for all */
	int json;
	int ascii;    /* escape every non-ASCII byte */
};

/* ---- small helpers ---------------------------------------------------- */

/* A whole number in [0, hi]; -1 with a usage message otherwise. */
static int parse_u32(const char *opt, const char *s, uint32_t hi, uint32_t *out)
{
	char *end;
	errno = 0;
	unsigned long long v = strtoull(s, &end, 10);
	if (errno || end == s || *end || s[0] == '-' || s[0] == '+' || v > hi) {
		char buf[256];
		return error("%s expects a whole number from 0 to %" PRIu32 ", not '%s'", opt, hi,
			     util_escape(s, buf, sizeof buf, 1));
	}
	*out = (uint32_t)v;
	return 0;
}

static const char *esc(const struct show *s, const char *name, char *buf)
{
	return util_escape(name, buf, NAME_CAP, s->ascii);
}

/* Columns an escaped (hence printable) string takes on the terminal. */
static int text_width(const char *t, int ascii)
{
	size_t len = strlen(t);
	if (ascii)
		return len > INT32_MAX ? INT32_MAX : (int)len;
	mbstate_t st;
	memset(&st, 0, sizeof st);
	int w = 0;
	while (*t) {
		wchar_t wc;
		size_t n = mbrtowc(&wc, t, len, &st);
		if (n == (size_t)-1 || n == (size_t)-2 || n == 0) {
			memset(&st, 0, sizeof st);
			n = 1;
			w++;
		} else {
			int cw = wcwidth(wc);
			w += cw < 0 ? 1 : cw;
		}
		t += n;
		len -= n;
	}
	return w;
}

static void put_padded(const char *t, int width, int ascii)
{
	int w = text_width(t, ascii);
	fputs(t, stdout);
	if (w < width)
		printf("%*s", width - w, "");
}

static int digits(uint64_t v)
{
	int d = 1;
	while (v >= 10) {
		v /= 10;
		d++;
	}
	return d;
}

static int maxi(int a, int b)
{
	return a > b ? a : b;
}

static size_t shown(size_t n, size_t limit)
{
	return n < limit ? n : limit;
}

static void more_note(size_t total, size_t n)
{
	if (total > n)
		printf("  ... %zu more (--limit 0 shows all)\n", total - n);
}

/* The JSON word for where the cover shown comes from (coterie(1)). */
static const char *cover_key(const struct show *s)
{
	switch (s->from) {
	case RESULT_COVER_REFINED: return "refined";
	case RESULT_COVER_UNREFINED: return "unrefined";
	default: return "strengths";
	}
}

/* Every JSON view that has a list says how long the whole list is. */
static void set_total(json_t *root, size_t total)
{
	json_object_set_new(root, "total", jsonout_uint(total));
}

static json_t *jcommunity(const struct agm_community *c)
{
	return json_pack("{s:o s:o s:o s:o s:o s:o s:o s:o}", "community", jsonout_uint(c->id), "size",
			 jsonout_uint(c->size), "internal_edges", jsonout_uint(c->internal_edges), "volume",
			 jsonout_uint(c->volume), "cut", jsonout_uint(c->cut), "density", jsonout_real(c->density),
			 "conductance", jsonout_real(c->conductance), "p", jsonout_real(c->p));
}

/* The node called name: 0, or -1 with a message that lists the nodes
 * with a near name (suggest.h), escaped as every name is. */
static int find_node(const struct show *s, const char *name, uint32_t *u)
{
	int64_t i = graph_find(s->ck.graph, name);
	if (i >= 0) {
		*u = (uint32_t)i;
		return 0;
	}
	char b1[NAME_CAP], b2[NAME_CAP];
	error("no node named '%s' in %s", util_escape(name, b1, sizeof b1, s->ascii),
	      util_escape(s->dir, b2, sizeof b2, s->ascii));
	uint32_t near[SUGGEST_MAX];
	size_t n = suggest_nodes(s->ck.graph, name, near, SUGGEST_MAX);
	if (n)
		fprintf(stderr, "nodes with a similar name:\n");
	for (size_t j = 0; j < n; j++)
		fprintf(stderr, "  %s\n", util_escape(graph_name(s->ck.graph, near[j]), b1,
							sizeof b1, s->ascii));
	return -1;
}

static json_t *jaffil(const struct inspect_affil *f)
{
	return json_pack("{s:o s:o s:b s:o}", "community", jsonout_uint(f->comm), "strength",
			 jsonout_real(f->strength), "member", f->member, "explains",
			 jsonout_uint(f->explained));
}

static json_t *jshare(const struct inspect_share *sh)
{
	return json_pack("{s:o s:o s:o s:b s:o}", "community", jsonout_uint(sh->comm), "product",
			 jsonout_real(sh->product), "alone", jsonout_real(sh->alone),
			 "both_members", sh->both_members, "p", jsonout_real(sh->p));
}

/* ---- the summary ------------------------------------------------------ */

static int show_summary(const struct show *s)
{
	const struct checkpoint *ck = &s->ck;
	const struct agm *a = &s->agm;
	const struct graph *g = ck->graph;
	int have_ll = ck->ntrace > 0;
	double ll = have_ll ? ck->trace[ck->ntrace - 1].loglik : NAN;
	size_t n = shown(a->cover.k, s->limit);

	if (s->json) {
		json_t *list = json_array();
		for (size_t i = 0; i < n; i++)
			json_array_append_new(list, jcommunity(&a->comms[i]));
		json_t *root = json_pack(
			"{s:o s:s s:o s:o s:o s:o s:o s:o s:o s:s s:o s:o s:o s:o s:o s:o s:o}",
			"dir", jsonout_str(s->dir), "cover", cover_key(s),
			"nodes", jsonout_uint(g->n), "edges", jsonout_uint(g->m),
			"k", jsonout_uint(ck->params.k), "ncommunities", jsonout_uint(a->cover.k),
			"covered", jsonout_uint(a->covered), "overlapping", jsonout_uint(a->overlapping),
			"sweep", jsonout_uint(ck->sweep), "state", fit_state_name(ck->state),
			"seconds", jsonout_real(ck->seconds),
			"loglik", have_ll ? jsonout_real(ll) : json_null(),
			"agm_loglik", jsonout_real(a->loglik), "epsilon", jsonout_real(ck->epsilon),
			"delta", jsonout_real(s->delta), "min_links", jsonout_real(AGM_MIN_LINKS),
			"communities", list);
		set_total(root, a->cover.k);
		return jsonout_print(root, stdout, CLI_JSON_FLAGS);
	}

	char buf[NAME_CAP];
	printf("result       %s\n", esc(s, s->dir, buf));
	printf("nodes        %" PRIu32 "\n", g->n);
	printf("edges        %" PRIu64 "\n", g->m);
	printf("communities  %" PRIu32 " (k = %" PRIu32 ")\n", a->cover.k, ck->params.k);
	printf("covered      %" PRIu32 " nodes in at least one, %" PRIu32 " in two or more\n",
	       a->covered, a->overlapping);
	printf("cover        %s\n", result_cover_words(s->from));
	printf("sweep        %" PRIu32 " (%.1f s)\n", ck->sweep, ck->seconds);
	printf("state        %s\n", fit_state_name(ck->state));
	if (have_ll)
		printf("loglik       %.10g\n", ll);
	else
		printf("loglik       -\n");
	printf("agm loglik   %.10g\n", a->loglik);
	printf("epsilon      %.6g (membership: strength %.6g or more and %g links into the\n"
	       "             community, or half the degree when less)\n",
	       ck->epsilon, s->delta, AGM_MIN_LINKS);
	if (a->ended_sooner)
		printf("             %u communities end sooner, at the AGM's own threshold\n",
		       a->ended_sooner);
	if (a->dropped)
		printf("             %u left out: they did not pay for their members' names\n",
		       a->dropped);
	if (a->cover.k == 0) {
		printf("\nno community has a member\n");
		return 0;
	}

	uint32_t mid = 0, msize = 0;
	uint64_t medges = 0;
	for (size_t i = 0; i < n; i++) {
		const struct agm_community *c = &a->comms[i];
		mid = c->id > mid ? c->id : mid;
		msize = c->size > msize ? c->size : msize;
		medges = c->internal_edges > medges ? c->internal_edges : medges;
	}
	int wi = maxi(2, digits(mid)), ws = maxi(4, digits(msize)), we = maxi(5, digits(medges));
	printf("\n  %*s  %*s  %*s  %7s  %11s  %6s\n", wi, "id", ws, "size", we, "edges",
	       "density", "conductance", "p");
	for (size_t i = 0; i < n; i++) {
		const struct agm_community *c = &a->comms[i];
		printf("  %*" PRIu32 "  %*" PRIu32 "  %*" PRIu64 "  %7.4f  %11.4f  %6.4f\n", wi,
		       c->id, ws, c->size, we, c->internal_edges, c->density, c->conductance,
		       c->p);
	}
	more_note(a->cover.k, n);
	return 0;
}

/* ---- a node ----------------------------------------------------------- */

static int show_node(const struct show *s, const char *name)
{
	const struct graph *g = s->ck.graph;
	uint32_t u = 0;
	struct inspect_node nv;
	if (find_node(s, name, &u) ||
	    inspect_node(&nv, g, &s->ck.F, s->delta, AGM_MIN_LINKS, u) < 0)
		return -1;
	if (s->from == RESULT_COVER_REFINED && result_cover_node(&s->agm, &nv)) {
		inspect_node_release(&nv);
		return -1;
	}
	size_t n = shown(nv.naffil, s->limit);
	int rc;

	if (s->json) {
		json_t *list = json_array();
		for (size_t i = 0; i < n; i++)
			json_array_append_new(list, jaffil(&nv.affil[i]));
		rc = jsonout_print(json_pack("{s:o s:o s:s s:o s:o s:o s:o s:o s:o s:o}",
			"node", jsonout_str(graph_name(g, u)), "node_index", jsonout_uint(u),
			"cover", cover_key(s),
			"degree", jsonout_uint(nv.degree), "memberships", jsonout_uint(nv.nmember),
			"total", jsonout_uint(nv.naffil), "unexplained", jsonout_uint(nv.unexplained),
			"delta", jsonout_real(s->delta), "min_links", jsonout_real(AGM_MIN_LINKS),
			"affiliations", list), stdout, CLI_JSON_FLAGS);
		inspect_node_release(&nv);
		return rc;
	}

	char buf[NAME_CAP];
	printf("node         %s\n", esc(s, graph_name(g, u), buf));
	printf("degree       %" PRIu32 "\n", nv.degree);
	printf("memberships  %" PRIu32 " (strength %.6g or more and %g links, or half the degree)\n",
	       nv.nmember, s->delta, AGM_MIN_LINKS);
	printf("unexplained  %" PRIu32 " edge%s explained by no community\n", nv.unexplained,
	       nv.unexplained == 1 ? "" : "s");
	if (nv.naffil == 0) {
		printf("\nno strength in any community\n");
	} else {
		uint32_t mc = 0, mx = 0;
		for (size_t i = 0; i < n; i++) {
			mc = nv.affil[i].comm > mc ? nv.affil[i].comm : mc;
			mx = nv.affil[i].explained > mx ? nv.affil[i].explained : mx;
		}
		int wc = maxi(9, digits(mc)), wx = maxi(8, digits(mx));
		printf("\n  %*s  %10s  %6s  %*s\n", wc, "community", "strength", "member", wx,
		       "explains");
		for (size_t i = 0; i < n; i++) {
			const struct inspect_affil *f = &nv.affil[i];
			printf("  %*" PRIu32 "  %10.4f  %-6s  %*" PRIu32 "\n", wc, f->comm,
			       f->strength, f->member ? "yes" : "no", wx, f->explained);
		}
		more_note(nv.naffil, n);
	}
	inspect_node_release(&nv);
	return 0;
}

/* ---- a community ------------------------------------------------------ */

/* Index of community id, or -1 with a message. */
static int64_t find_comm(const struct show *s, uint32_t id)
{
	int64_t i = inspect_find_community(&s->agm, id);
	if (i >= 0)
		return i;
	char buf[NAME_CAP];
	if (id < s->ck.F.k && s->ck.F.thr && isinf(s->ck.F.thr[id]))
		error("community %" PRIu32 " was left out of the cover in %s: it did not pay for "
		      "its members' names (most of them are in other communities too; see "
		      "coterie(1), DESCRIPTION)", id, esc(s, s->dir, buf));
	else if (id < s->ck.F.k)
		error("community %" PRIu32 " has no members in %s", id, esc(s, s->dir, buf));
	else
		error("no community %" PRIu32 " in %s (ids run from 0 to %" PRIu32 ")", id,
		      esc(s, s->dir, buf), s->ck.F.k ? s->ck.F.k - 1 : 0);
	return -1;
}

static int show_community(const struct show *s, uint32_t id)
{
	int64_t ix = find_comm(s, id);
	if (ix < 0)
		return -1;
	const struct agm *a = &s->agm;
	const struct agm_community *c = &a->comms[ix];
	const struct graph *g = s->ck.graph;
	uint32_t size = cover_size(&a->cover, (uint32_t)ix);
	uint32_t *order = util_malloc((size_t)size + 1, sizeof *order);
	double *str = util_malloc((size_t)size + 1, sizeof *str);
	if (!order || !str) {
		free(order);
		free(str);
		return -1;
	}
	inspect_members(a, (uint32_t)ix, order, str);
	size_t n = shown(size, s->limit);
	int rc = 0;

	if (s->json) {
		json_t *root = jcommunity(c);
		json_t *list = json_array();
		json_object_set_new(root, "cover", json_string(cover_key(s)));
		set_total(root, size);
		for (size_t i = 0; i < n; i++)
			json_array_append_new(list, json_pack("{s:o s:o}",
				"node", jsonout_str(graph_name(g, order[i])),
				"strength", jsonout_real(str[i])));
		json_object_set_new(root, "members", list);
		rc = jsonout_print(root, stdout, CLI_JSON_FLAGS);
	} else {
		printf("community    %" PRIu32 "\n", c->id);
		printf("members      %" PRIu32 "\n", c->size);
		printf("edges        %" PRIu64 " inside, %" PRIu64 " leaving, volume %" PRIu64 "\n",
		       c->internal_edges, c->cut, c->volume);
		printf("density      %.4f\n", c->density);
		printf("conductance  %.4f\n", c->conductance);
		printf("p            %.6g\n", c->p);
		int wr = maxi(4, digits(n));
		printf("\n  %*s  %10s  %s\n", wr, "rank", "strength", "node");
		char buf[NAME_CAP];
		for (size_t i = 0; i < n; i++)
			printf("  %*zu  %10.4f  %s\n", wr, i + 1, str[i],
			       esc(s, graph_name(g, order[i]), buf));
		more_note(size, n);
	}
	free(order);
	free(str);
	return rc;
}

/* ---- weak edges and missing links ------------------------------------- */

static int show_pairs(const struct show *s, uint32_t id, int missing)
{
	int64_t ix = find_comm(s, id);
	if (ix < 0)
		return -1;
	const struct graph *g = s->ck.graph;
	const struct fcsr *F = &s->ck.F;
	const struct agm *a = &s->agm;
	struct inspect_pair *p = NULL;
	size_t n = 0, total = 0;
	int rc = missing ? inspect_missing_links(g, F, a, (uint32_t)ix, 0, s->limit, &p, &n, &total)
			 : inspect_weak_edges(g, F, a, (uint32_t)ix, 0, s->limit, &p, &n, &total);
	if (rc < 0)
		return -1;
	uint32_t size = cover_size(&a->cover, (uint32_t)ix);
	uint32_t pool = size < INSPECT_MISSING_POOL ? size : INSPECT_MISSING_POOL;

	if (s->json) {
		json_t *root = json_object();
		json_t *list = json_array();
		json_object_set_new(root, "community", jsonout_uint(id));
		json_object_set_new(root, "cover", json_string(cover_key(s)));
		json_object_set_new(root, "size", jsonout_uint(size));
		if (missing)
			json_object_set_new(root, "pool", jsonout_uint(pool));
		set_total(root, total);
		for (size_t i = 0; i < n; i++) {
			json_t *o = json_object();
			if (missing) {
				json_object_set_new(o, "a", jsonout_str(graph_name(g, p[i].u)));
				json_object_set_new(o, "b", jsonout_str(graph_name(g, p[i].v)));
			} else {
				int64_t e = inspect_explaining_community(F, p[i].u, p[i].v);
				json_object_set_new(o, "member", jsonout_str(graph_name(g, p[i].u)));
				json_object_set_new(o, "neighbour", jsonout_str(graph_name(g, p[i].v)));
				json_object_set_new(o, "explained_by",
						    e < 0 ? json_null() : jsonout_uint((uint64_t)e));
			}
			json_object_set_new(o, "prob", jsonout_real(p[i].prob));
			json_array_append_new(list, o);
		}
		json_object_set_new(root, missing ? "pairs" : "edges", list);
		rc = jsonout_print(root, stdout, CLI_JSON_FLAGS);
		free(p);
		return rc;
	}

	if (missing) {
		printf("community %" PRIu32 ": %zu member pair%s not linked", id, total,
		       total == 1 ? "" : "s");
		if (pool < size)
			printf(" among its %" PRIu32 " strongest of %" PRIu32 " members", pool, size);
		printf(", the most strongly predicted first\n");
	} else {
		printf("community %" PRIu32 ": %zu edge%s touching its %" PRIu32
		       " members, the least explained first\n",
		       id, total, total == 1 ? "" : "s", size);
	}
	if (n == 0) {
		printf("\n  (none)\n");
		free(p);
		return 0;
	}
	/* the first name column is padded to the widest name shown */
	char b1[NAME_CAP], b2[NAME_CAP];
	int wn = 4;
	for (size_t i = 0; i < n; i++)
		wn = maxi(wn, text_width(esc(s, graph_name(g, p[i].u), b1), s->ascii));
	if (wn > NAME_COL_MAX)
		wn = NAME_COL_MAX;
	int wr = maxi(4, digits(n));
	if (missing) {
		printf("\n  %*s  %11s  ", wr, "rank", "probability");
		put_padded("node", wn, 1);
		printf("  node\n");
	} else {
		printf("\n  %*s  %11s  %12s  ", wr, "rank", "probability", "explained by");
		put_padded("member", wn, 1);
		printf("  neighbour\n");
	}
	for (size_t i = 0; i < n; i++) {
		printf("  %*zu  %11.4g  ", wr, i + 1, p[i].prob);
		if (!missing) {
			int64_t e = inspect_explaining_community(F, p[i].u, p[i].v);
			if (e < 0)
				printf("%12s  ", "none");
			else
				printf("%12" PRId64 "  ", e);
		}
		put_padded(esc(s, graph_name(g, p[i].u), b1), wn, s->ascii);
		printf("  %s\n", esc(s, graph_name(g, p[i].v), b2));
	}
	more_note(total, n);
	free(p);
	return 0;
}

/* ---- one pair, and every edge ----------------------------------------- */

static int show_edge(const struct show *s, const char *na, const char *nb)
{
	const struct graph *g = s->ck.graph;
	uint32_t u = 0, v = 0;
	if (find_node(s, na, &u) || find_node(s, nb, &v))
		return -1;
	if (u == v)
		return error("--edge needs two different nodes");
	struct inspect_edge e;
	if (inspect_edge(&e, g, &s->ck.F, &s->agm, s->ck.epsilon, s->delta, AGM_MIN_LINKS, u, v))
		return -1;
	if (s->from == RESULT_COVER_REFINED)
		result_cover_edge(&s->agm, &e);
	size_t n = shown(e.nshare, s->limit);
	int rc = 0;
	if (s->json) {
		json_t *list = json_array();
		for (size_t i = 0; i < n; i++)
			json_array_append_new(list, jshare(&e.share[i]));
		rc = jsonout_print(json_pack("{s:o s:o s:s s:o s:b s:o s:o s:o s:o s:o s:o}",
			"a", jsonout_str(graph_name(g, u)), "b", jsonout_str(graph_name(g, v)),
			"cover", cover_key(s), "total", jsonout_uint(e.nshare), "linked", e.linked, "dot", jsonout_real(e.x), "prob", jsonout_real(e.prob),
			"prob_communities", jsonout_real(e.prob_comms),
			"agm_prob", jsonout_real(e.agm_prob), "epsilon", jsonout_real(s->ck.epsilon),
			"communities", list), stdout, CLI_JSON_FLAGS);
		inspect_edge_release(&e);
		return rc;
	}
	char b1[NAME_CAP], b2[NAME_CAP];
	printf("pair         %s -- %s\n", esc(s, graph_name(g, u), b1), esc(s, graph_name(g, v), b2));
	printf("linked       %s\n", e.linked ? "yes, an edge" : "no");
	printf("probability  %.6g  the model, 1 - exp(-(F_a.F_b + qeps)), background included\n",
	       e.prob);
	printf("communities  %.6g  1 - exp(-F_a.F_b), the communities alone (F_a.F_b = %.6g)\n",
	       e.prob_comms, e.x);
	printf("agm          %.6g  1 - (1 - epsilon) prod (1 - p_c) over the communities both "
	       "belong to\n", e.agm_prob);
	if (e.nshare == 0) {
		printf("\nno community holds both\n");
	} else {
		uint32_t mc = 0;
		for (size_t i = 0; i < n; i++)
			mc = e.share[i].comm > mc ? e.share[i].comm : mc;
		int wc = maxi(9, digits(mc));
		printf("\n  %*s  %10s  %10s  %12s  %10s\n", wc, "community", "F_a*F_b", "alone",
		       "both members", "p_c");
		for (size_t i = 0; i < n; i++) {
			const struct inspect_share *sh = &e.share[i];
			printf("  %*" PRIu32 "  %10.4g  %10.4g  %12s  ", wc, sh->comm, sh->product,
			       sh->alone, sh->both_members ? "yes" : "no");
			if (isfinite(sh->p))
				printf("%10.4g\n", sh->p);
			else
				printf("%10s\n", "-");
		}
		more_note(e.nshare, n);
	}
	inspect_edge_release(&e);
	return rc;
}

static int show_links(const struct show *s)
{
	const struct graph *g = s->ck.graph;
	const struct fcsr *F = &s->ck.F;
	double qeps = model_qeps(s->ck.epsilon);
	size_t n = shown((size_t)g->m, s->limit), i = 0;
	json_t *root = NULL, *list = NULL;
	char b1[NAME_CAP], b2[NAME_CAP];
	if (s->json) {
		root = json_object();
		list = json_array();
		json_object_set_new(root, "total", jsonout_uint(g->m));
		json_object_set_new(root, "epsilon", jsonout_real(s->ck.epsilon));
	} else {
		printf("%" PRIu64 " edge%s in the order of the graph; probability is "
		       "1 - exp(-(F_a.F_b + qeps))\n\n", g->m, g->m == 1 ? "" : "s");
		printf("  %11s  %12s  node_a  node_b\n", "probability", "explained by");
	}
	for (uint32_t u = 0; u < g->n && i < n; u++)
		for (uint64_t j = g->off[u]; j < g->off[u + 1] && i < n; j++) {
			uint32_t v = g->adj[j];
			if (v < u)
				continue;
			double x = model_dot(F->e + F->off[u], (uint32_t)(F->off[u + 1] - F->off[u]),
					     F->e + F->off[v], (uint32_t)(F->off[v + 1] - F->off[v]));
			double p = -expm1(-(x + qeps));
			int64_t c = inspect_explaining_community(F, u, v);
			i++;
			if (s->json) {
				json_t *o = json_object();
				json_object_set_new(o, "a", jsonout_str(graph_name(g, u)));
				json_object_set_new(o, "b", jsonout_str(graph_name(g, v)));
				json_object_set_new(o, "prob", jsonout_real(p));
				json_object_set_new(o, "explained_by",
						    c < 0 ? json_null() : jsonout_uint((uint64_t)c));
				json_array_append_new(list, o);
				continue;
			}
			printf("  %11.4g  ", p);
			if (c < 0)
				printf("%12s  ", "none");
			else
				printf("%12" PRId64 "  ", c);
			printf("%s  %s\n", esc(s, graph_name(g, u), b1), esc(s, graph_name(g, v), b2));
		}
	if (s->json) {
		json_object_set_new(root, "edges", list);
		return jsonout_print(root, stdout, CLI_JSON_FLAGS);
	}
	more_note((size_t)g->m, n);
	return 0;
}

/* ---- the command ------------------------------------------------------ */

enum {
	OPT_NODE = 256,
	OPT_COMMUNITY,
	OPT_WEAK,
	OPT_MISSING,
	OPT_LIMIT,
	OPT_JSON,
	OPT_LINKS,
};

/* What the command line asked for. */
struct show_args {
	const char *node, *edge_a, *edge_b;
	uint32_t comm, weak, limit;
	int have_comm, have_weak, have_limit, missing, json, links;
};

/* Reads the options into *o: 0 to go on, else -1 with the exit status in
 * *status (0 after --help, EXIT_USAGE with a message). */
static int show_parse(int argc, char **argv, struct show_args *o, int *status)
{
	static const struct option opts[] = {
		{ "node", required_argument, NULL, OPT_NODE },
		{ "community", required_argument, NULL, OPT_COMMUNITY },
		{ "weak-edges", required_argument, NULL, OPT_WEAK },
		{ "missing", no_argument, NULL, OPT_MISSING },
		{ "limit", required_argument, NULL, OPT_LIMIT },
		{ "json", no_argument, NULL, OPT_JSON },
		{ "links", no_argument, NULL, OPT_LINKS },
		{ "help", no_argument, NULL, 'h' },
		{ NULL, 0, NULL, 0 },
	};
	int c;

	*status = EXIT_USAGE;
	cli_getopt_reset();
	while ((c = getopt_long(argc, argv, ":h", opts, NULL)) != -1) {
		switch (c) {
		case OPT_NODE: o->node = optarg; break;
		case OPT_COMMUNITY:
			if (parse_u32("--community", optarg, UINT32_MAX - 1, &o->comm))
				return -1;
			o->have_comm = 1;
			break;
		case OPT_WEAK:
			if (parse_u32("--weak-edges", optarg, UINT32_MAX - 1, &o->weak))
				return -1;
			o->have_weak = 1;
			break;
		case OPT_MISSING: o->missing = 1; break;
		case OPT_LIMIT:
			if (parse_u32("--limit", optarg, UINT32_MAX, &o->limit))
				return -1;
			o->have_limit = 1;
			break;
		case OPT_JSON: o->json = 1; break;
		case OPT_LINKS: o->links = 1; break;
		case 'h':
			show_usage(stdout);
			*status = 0;
			return -1;
		default:
			cli_option_error(c, argv);
			show_usage_short(stderr);
			return -1;
		}
	}
	if (argc - optind != 1) {
		if (argc - optind == 0)
			error("show needs a result folder");
		else
			error("show takes one result folder, not %d", argc - optind);
	} else if ((o->node != NULL) + o->have_comm + o->have_weak + (o->edge_a != NULL) +
		   o->links > 1) {
		error("choose one of --node, --community, --weak-edges, --edge and --links");
	} else if (o->missing && !o->have_weak) {
		error("--missing goes with --weak-edges ID");
	} else {
		return 0;
	}
	show_usage_short(stderr);
	return -1;
}

/* Reads the folder's checkpoint and its cover into *s: 0, or -1 with a
 * message (nothing left to release). */
static int show_open(struct show *s)
{
	char buf[NAME_CAP];
	/* the result (read through a commit a writer left, result_commit.h),
	 * never the unfinished fit beside it; that one only when the folder
	 * has no result yet, and said */
	char *path = result_file(s->dir, RESULT_CHECKPOINT);
	if (!path)
		return -1;
	int partial = outdir_has_partial(s->dir), none = partial && access(path, F_OK) != 0;
	util_escape(s->dir, buf, sizeof buf, 1);
	if (none) {
		free(path);
		if (!(path = result_file(s->dir, RESULT_PARTIAL)))
			return -1;
	}
	int rc = checkpoint_read(path, &s->ck);
	free(path);
	if (rc)
		return -1;
	if (none)
		notice("'%s' holds no result yet, only an unfinished fit (%s, %" PRIu32 " sweeps): "
		       "it is the one shown", buf, RESULT_PARTIAL, s->ck.sweep);
	else if (partial)
		notice("'%s' also holds an unfinished fit (%s), running or stopped before its "
		       "end; the result shown is the one written before it", buf, RESULT_PARTIAL);
	s->delta = sqrt(model_qeps(s->ck.epsilon));
	if (result_cover_read(&s->agm, s->dir, &s->ck, s->delta, &s->from)) {
		checkpoint_release(&s->ck);
		return -1;
	}
	/* the strengths' cover just read serves the check of memberships.tsv */
	result_cover_check_folder(s->dir, &s->ck,
				  s->from == RESULT_COVER_REFINED ? NULL : &s->agm);
	return 0;
}

/* The one view asked for: 0 or -1. */
static int show_view(const struct show *s, const struct show_args *o)
{
	if (o->node)
		return show_node(s, o->node);
	if (o->have_comm)
		return show_community(s, o->comm);
	if (o->have_weak)
		return show_pairs(s, o->weak, o->missing);
	if (o->edge_a)
		return show_edge(s, o->edge_a, o->edge_b);
	if (o->links)
		return show_links(s);
	return show_summary(s);
}

static int show_run(int argc, char **argv, const char *edge_a, const char *edge_b)
{
	struct show_args o;
	memset(&o, 0, sizeof o);
	o.limit = SHOW_DEFAULT_LIMIT;
	o.edge_a = edge_a;
	o.edge_b = edge_b;
	int status;
	if (show_parse(argc, argv, &o, &status))
		return status;

	struct show s;
	memset(&s, 0, sizeof s);
	s.dir = argv[optind];
	s.json = o.json;
	s.ascii = !proc_utf8();
	/* scripts get the whole answer unless they ask for less */
	s.limit = o.limit == 0 || ((o.links || o.json) && !o.have_limit) ? SIZE_MAX : o.limit;
	if (show_open(&s))
		return 1;

	int rc = show_view(&s, &o);
	if (fflush(stdout) || ferror(stdout)) {
		if (rc == 0)
			error("cannot write the output: %s", strerror(errno));
		rc = -1;
	}
	agm_release(&s.agm);
	checkpoint_release(&s.ck);
	return rc ? 1 : 0;
}

int cmd_show(int argc, char **argv)
{
	/* --edge A B takes two values, which getopt cannot: take it out first */
	const char *edge_a = NULL, *edge_b = NULL;
	char **args = calloc((size_t)argc + 1, sizeof *args);
	if (!args) {
		error("out of memory");
		return 1;
	}
	int nargs = 0;
	for (int i = 0; i < argc; i++) {
		if (i > 0 && !strcmp(argv[i], "--edge") && !edge_a) {
			if (i + 2 >= argc) {
				error("--edge needs two node names: --edge A B");
				show_usage_short(stderr);
				free(args);
				return EXIT_USAGE;
			}
			edge_a = argv[i + 1];
			edge_b = argv[i + 2];
			i += 2;
			continue;
		}
		if (!strcmp(argv[i], "--")) {
			while (i < argc)
				args[nargs++] = argv[i++];
			break;
		}
		args[nargs++] = argv[i];
	}
	int rc = show_run(nargs, args, edge_a, edge_b);
	free(args);
	return rc;
}
