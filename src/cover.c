/*
 * cover: building covers from partitions, from (node, community) pairs and
 * from cover files.
 *
 * Every builder goes through one path: a list of (key, node, position)
 * records, sorted by (key, node). Records with the same key form a
 * community; equal (key, node) records are merged; communities are then
 * ordered by the smallest position at which their key appeared, which is
 * "numbered by first appearance". Sorting makes members strictly
 * increasing for free, which is what struct cover promises.
 *
 * Cover files: a '#' only starts a comment at the start of a line (node
 * names may contain '#'); the line ends at "\n" or "\r\n"; the community is
 * the text between the first TAB and the next one, and a first line
 * "node<TAB>community..." naming no node is a header, so a result's
 * memberships.tsv (node, community, strength) reads as a cover; after that
 * header, node names are unescaped as result.c escapes them. Community
 * names are interned in a name table (names.h) in order of first
 * appearance, which is then the key order, so the labels line up with the
 * communities. cover_read() interns node names in another such table,
 * shared by the two covers coterie compare reads, so their ids agree.
 * cover_looks_like_edges() tells an edge list given as a cover from a
 * cover by counts alone (names, overlap, a node in its namesake
 * community); it is a warning's test, never a refusal.
 *
 * The one thing a newcomer gets wrong: "first appearance" is the first
 * record of a key in input order, not the smallest node of the community;
 * after the sort the first record of a group is the smallest node, so the
 * group's first position must be taken as the minimum over the group.
 */
#include "coterie/cover.h"

#include <errno.h>
#include <inttypes.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/graph.h"
#include "coterie/names.h"
#include "coterie/util.h"

struct rec {
	int64_t key;
	uint32_t node;
	uint64_t pos;
};

struct group {
	uint64_t first; /* smallest input position of the key */
	uint64_t start; /* first record of the group in the sorted array */
	uint64_t end;   /* one past the last record */
	uint64_t size;  /* distinct nodes */
};

/* By key, then node, then position. */
static int rec_cmp(const void *pa, const void *pb)
{
	const struct rec *a = pa, *b = pb;
	int c = (a->key > b->key) - (a->key < b->key);
	if (c == 0)
		c = util_cmp_uint(a->node, b->node);
	return c ? c : util_cmp_uint(a->pos, b->pos);
}

static int group_cmp(const void *pa, const void *pb)
{
	const struct group *a = pa, *b = pb;
	return util_cmp_uint(a->first, b->first);
}

/*
 * Turn nrec records (taken: sorted and freed here) into a cover over n
 * nodes. names, when not NULL, gives the label of key i as its name i
 * (borrowed, copied); otherwise labels are the keys in decimal.
 */
static int build(struct cover *out, uint32_t n, struct rec *r, uint64_t nrec,
		 const struct names *names)
{
	struct group *grp = NULL;
	uint64_t ngrp = 0, total = 0;

	memset(out, 0, sizeof *out);
	out->n = n;
	if (nrec)
		qsort(r, (size_t)nrec, sizeof *r, rec_cmp);
	for (uint64_t i = 0; i < nrec; i++)
		if (i == 0 || r[i].key != r[i - 1].key)
			ngrp++;
	if (ngrp >= UINT32_MAX) {
		free(r);
		return error("too many communities: %" PRIu64, ngrp);
	}
	grp = util_calloc((size_t)ngrp, sizeof *grp);
	if (!grp)
		goto fail;
	ngrp = 0;
	for (uint64_t i = 0; i < nrec; i++) {
		if (i == 0 || r[i].key != r[i - 1].key) {
			grp[ngrp].first = r[i].pos;
			grp[ngrp].start = i;
			grp[ngrp].size = 0;
			ngrp++;
		}
		struct group *gp = &grp[ngrp - 1];
		gp->end = i + 1;
		if (r[i].pos < gp->first)
			gp->first = r[i].pos;
		if (i == gp->start || r[i].node != r[i - 1].node) {
			gp->size++;
			total++;
		}
	}
	if (ngrp)
		qsort(grp, (size_t)ngrp, sizeof *grp, group_cmp);

	out->k = (uint32_t)ngrp;
	out->off = util_calloc((size_t)ngrp + 1, sizeof *out->off);
	out->mem = util_malloc((size_t)total, sizeof *out->mem);
	out->label = util_calloc((size_t)ngrp, sizeof *out->label);
	if (!out->off || !out->mem || !out->label)
		goto fail;
	uint64_t at = 0;
	for (uint64_t c = 0; c < ngrp; c++) {
		const struct group *gp = &grp[c];
		out->off[c] = at;
		for (uint64_t i = gp->start; i < gp->end; i++)
			if (i == gp->start || r[i].node != r[i - 1].node)
				out->mem[at++] = r[i].node;
		int64_t key = r[gp->start].key;
		if (names) {
			out->label[c] = util_strdup(names_name(names, (uint32_t)key));
		} else {
			char buf[32];
			snprintf(buf, sizeof buf, "%" PRId64, key);
			out->label[c] = util_strdup(buf);
		}
		if (!out->label[c])
			goto fail;
	}
	out->off[ngrp] = at;
	free(grp);
	free(r);
	return 0;
fail:
	free(grp);
	free(r);
	cover_release(out);
	out->n = n;
	return -1;
}

int cover_from_membership(struct cover *out, uint32_t n, const int64_t *membership)
{
	uint64_t nrec = 0;
	memset(out, 0, sizeof *out);
	for (uint32_t u = 0; u < n; u++)
		if (membership[u] >= 0)
			nrec++;
	struct rec *r = util_malloc((size_t)nrec, sizeof *r);
	if (!r)
		return -1;
	nrec = 0;
	for (uint32_t u = 0; u < n; u++)
		if (membership[u] >= 0)
			r[nrec++] = (struct rec){ membership[u], u, u };
	return build(out, n, r, nrec, NULL);
}

int cover_from_pairs(struct cover *out, uint32_t n, const uint32_t *node,
		     const uint32_t *comm, uint64_t npairs)
{
	memset(out, 0, sizeof *out);
	if (npairs > SIZE_MAX / sizeof(struct rec))
		return error("too many memberships: %" PRIu64, npairs);
	for (uint64_t i = 0; i < npairs; i++)
		if (node[i] >= n)
			return error("membership %" PRIu64 ": node %" PRIu32 " out of range (%" PRIu32
				     " nodes)", i, node[i], n);
	struct rec *r = util_malloc((size_t)npairs, sizeof *r);
	if (!r)
		return -1;
	for (uint64_t i = 0; i < npairs; i++)
		r[i] = (struct rec){ comm[i], node[i], i };
	return build(out, n, r, npairs, NULL);
}

/* The id of name s in t (borrowed, grown), added when new; -1 with error()
 * on failure. what says what the names are, for the error of a full table. */
static int64_t intern(struct names *t, const char *s, const char *what)
{
	int added;
	int64_t id = names_intern(t, s, strlen(s), &added);
	if (id == NAMES_FULL)
		return error("too many %s", what);
	return id;
}

static int blank(const char *s)
{
	for (; *s; s++)
		if (*s != ' ' && *s != '\t' && *s != '\r' && *s != '\n')
			return 0;
	return 1;
}

/* Undo memberships.tsv's escapes of a node name in place: \t \n \r \\
 * stand for TAB, LF, CR and a backslash; any other backslash is kept. */
static void unescape_name(char *s)
{
	char *w = s;
	for (; *s; s++) {
		if (*s == '\\' && s[1]) {
			char c = s[1];
			char b = c == 't' ? '\t' : c == 'n' ? '\n' : c == 'r' ? '\r' : c == '\\' ? '\\' : 0;
			if (b) {
				*w++ = b;
				s++;
				continue;
			}
		}
		*w++ = *s;
	}
	*w = '\0';
}

/*
 * The reader behind cover_load() and cover_read(): node names are looked
 * up in g when it is given, else interned in nodes (new names get the next
 * id). With nodes, the first data line "node<TAB>community" is always a
 * header and a file with no membership is an error.
 */
static int load(struct cover *out, const char *path, const struct graph *g, struct names *nodes)
{
	struct names *nm = names_new(0);
	struct rec *r = NULL;
	uint64_t nrec = 0, cap = 0, lineno = 0, data = 0;
	char *line = NULL;
	size_t linecap = 0;
	ssize_t len;
	char where[512], what[256];
	int rc = -1, escaped = 0;

	memset(out, 0, sizeof *out);
	if (!nm)
		return -1;
	util_escape(path, where, sizeof where, 0);
	FILE *f = fopen(path, "r");
	if (!f) {
		names_free(nm);
		return error("cannot open '%s': %s", where, strerror(errno));
	}
	errno = 0;
	while ((len = getline(&line, &linecap, f)) >= 0) {
		lineno++;
		if ((size_t)len != strlen(line)) {
			error("%s:%" PRIu64 ": NUL byte in line", where, lineno);
			goto out;
		}
		while (len > 0 && (line[len - 1] == '\n' || line[len - 1] == '\r'))
			line[--len] = '\0';
		if (line[0] == '#' || blank(line))
			continue;
		char *tab = strchr(line, '\t');
		if (!tab) {
			error("%s:%" PRIu64 ": expected node<TAB>community, found no tab", where,
			      lineno);
			goto out;
		}
		if (tab == line) {
			error("%s:%" PRIu64 ": expected a node name before the tab", where, lineno);
			goto out;
		}
		*tab = '\0';
		char *comm = tab + 1;
		char *end = strchr(comm, '\t'); /* further columns are ignored */
		if (end)
			*end = '\0';
		if (!*comm) {
			error("%s:%" PRIu64 ": expected a community name after the tab", where,
			      lineno);
			goto out;
		}
		int first = data++ == 0;
		if (first && !strcmp(line, "node") && !strcmp(comm, "community") &&
		    (!g || graph_find(g, line) < 0)) {
			/* a header line; result.c's memberships.tsv escapes names */
			escaped = end && !strncmp(end + 1, "strength", 8) &&
				  (end[9] == '\0' || end[9] == '\t');
			continue;
		}
		if (escaped)
			unescape_name(line);
		int64_t u = g ? graph_find(g, line) : intern(nodes, line, "nodes");
		if (u < 0 && !g)
			goto out;
		if (u < 0) {
			error("%s:%" PRIu64 ": unknown node '%s'", where, lineno,
			      util_escape(line, what, sizeof what, 0));
			goto out;
		}
		int64_t c = intern(nm, comm, "communities");
		if (c < 0)
			goto out;
		if (nrec == cap) {
			uint64_t nc = cap ? cap * 2 : 256;
			struct rec *nr = util_realloc(r, (size_t)nc, sizeof *nr);
			if (!nr)
				goto out;
			r = nr;
			cap = nc;
		}
		r[nrec] = (struct rec){ c, (uint32_t)u, nrec };
		nrec++;
	}
	if (ferror(f)) {
		error("cannot read '%s': %s", where, strerror(errno));
		goto out;
	}
	if (!g && nrec == 0) {
		error("%s:%" PRIu64 ": expected node<TAB>community lines, found none", where,
		      lineno + 1);
		goto out;
	}
	rc = build(out, g ? g->n : names_count(nodes), r, nrec, nm);
	out->result_file = escaped;
	r = NULL; /* taken by build() */
out:
	free(r);
	free(line);
	fclose(f);
	names_free(nm);
	return rc;
}

int cover_load(struct cover *out, const char *path, const struct graph *g)
{
	return load(out, path, g, NULL);
}

int cover_read(struct cover *out, const char *path, struct names *nodes)
{
	return load(out, path, NULL, nodes);
}

int cover_looks_like_edges(const struct cover *c, const struct names *nodes,
			   struct cover_edge_signs *why)
{
	struct cover_edge_signs w = { 0 };
	uint32_t *in = c->n ? util_calloc(c->n, sizeof *in) : NULL;
	if (c->n && !in)
		return -1;
	for (uint64_t j = 0; j < (c->k ? c->off[c->k] : 0); j++)
		in[c->mem[j]]++;
	for (uint32_t u = 0; u < c->n; u++) {
		w.nodes += in[u] > 0;
		w.overlapping += in[u] > 1;
	}
	for (uint32_t i = 0; i < c->k; i++) {
		if (!cover_size(c, i))
			continue;
		w.labels++;
		int64_t id = names_find(nodes, c->label[i]);
		if (id < 0 || (uint64_t)id >= c->n || !in[id])
			continue;
		w.named++;
		size_t at = util_lower_bound_u32(c->mem + c->off[i], cover_size(c, i), (uint32_t)id);
		w.self += at < cover_size(c, i) && c->mem[c->off[i] + at] == (uint32_t)id;
	}
	free(in);
	if (why)
		*why = w;
	return !c->result_file && w.named >= 3 && 2 * (uint64_t)w.named >= w.labels &&
	       2 * (uint64_t)w.labels >= w.nodes && 10 * (uint64_t)w.self <= w.named &&
	       5 * (uint64_t)w.overlapping >= w.nodes;
}

void cover_release(struct cover *c)
{
	if (!c)
		return;
	if (c->label)
		for (uint32_t i = 0; i < c->k; i++)
			free(c->label[i]);
	free(c->label);
	free(c->off);
	free(c->mem);
	memset(c, 0, sizeof *c);
}

int cover_same_n(const struct cover *a, const struct cover *b)
{
	if (a->n == b->n)
		return 0;
	return error("covers of different node sets: %" PRIu32 " and %" PRIu32 " nodes", a->n,
		     b->n);
}

int cover_check(const struct cover *c)
{
	if (c->off[0] != 0)
		return error("malformed cover: first offset %" PRIu64, c->off[0]);
	for (uint32_t i = 0; i < c->k; i++) {
		if (c->off[i + 1] < c->off[i])
			return error("malformed cover: offsets decrease at community %" PRIu32, i);
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++) {
			if (c->mem[j] >= c->n)
				return error("malformed cover: node %" PRIu32 " out of range",
					     c->mem[j]);
			if (j > c->off[i] && c->mem[j] <= c->mem[j - 1])
				return error("malformed cover: community %" PRIu32
					     " not strictly increasing", i);
		}
	}
	return 0;
}
