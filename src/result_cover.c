/*
 * result_cover: the cover a result folder holds, read back.
 *
 * The idea: the checkpoint holds the strengths, and the membership rule
 * (agm.h) turns them into the cover memberships.tsv lists, except after
 * `fit --refine`, whose local search moves memberships no threshold gives
 * back. run.json says which (fit.memberships_from); for a refined cover
 * the folder's own files are read: memberships.tsv (node, community) with
 * the p_c of communities.tsv, and the AGM is rebuilt from them with the
 * checkpoint's graph and epsilon, so every figure is what `fit` wrote.
 *
 * Invariants: the AGM returned looks like agm_from_strengths()'s (ids are
 * model columns, communities largest first with ties by id, strengths
 * F's), so its callers need not know where it came from. The files are
 * trusted only when they belong to this checkpoint: run.json's graph
 * fingerprint and sweep match it, every node is a node of its graph,
 * every community a column of F, communities.tsv lists the same
 * communities with the same sizes, and the AGM log-likelihood rebuilt
 * agrees with run.json's (p_c is written to nine digits, so to 1e-6).
 * Anything else is a warning and the strengths' cover, said as such.
 *
 * What a newcomer gets wrong: a refined membership may have no strength
 * at all (refinement adds nodes to communities by the AGM's likelihood,
 * not by F), so its strength is 0, and membership must be asked of the
 * cover (result_cover_has()), never of the threshold.
 */
#include "coterie/result_cover.h"

#include <errno.h>
#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include <jansson.h>

#include "coterie/atomicfile.h"
#include "coterie/checkpoint.h"
#include "coterie/cover.h"
#include "coterie/result.h"
#include "coterie/result_commit.h"
#include "coterie/graph.h"
#include "coterie/inspect.h"
#include "coterie/model.h"
#include "coterie/util.h"

#define RUN_JSON "run.json"
#define REFINED_WORDS "agm refinement" /* runjson.c's fit.memberships_from */

const char *result_cover_words(enum result_cover_from from)
{
	switch (from) {
	case RESULT_COVER_REFINED:
		return "refined by fit --refine, as in memberships.tsv";
	case RESULT_COVER_UNREFINED:
		return "read from the strengths, NOT the refined cover of memberships.tsv";
	default:
		return "read from the strengths, as in memberships.tsv";
	}
}

static json_t *load_run_json(const char *dir)
{
	char *path = result_file(dir, RUN_JSON);
	if (!path)
		return NULL;
	json_t *root = json_load_file(path, 0, NULL);
	free(path);
	return root;
}

int result_cover_is_refined(const char *dir)
{
	json_t *root = load_run_json(dir);
	const char *from = json_string_value(json_object_get(json_object_get(root, "fit"),
							     "memberships_from"));
	int refined = from && !strcmp(from, REFINED_WORDS);
	json_decref(root);
	return refined;
}

/* F[u][c], or 0 when row u holds no entry for c. */
static double strength_at(const struct fcsr *F, uint32_t u, uint32_t c)
{
	uint64_t lo = F->off[u], hi = F->off[u + 1];
	while (lo < hi) {
		uint64_t mid = lo + (hi - lo) / 2;
		if (F->e[mid].c < c)
			lo = mid + 1;
		else if (F->e[mid].c > c)
			hi = mid;
		else
			return F->e[mid].v;
	}
	return 0.0;
}

int result_cover_has(const struct agm *a, uint32_t index, uint32_t u)
{
	const struct cover *c = &a->cover;
	const uint32_t *mem = c->mem + c->off[index];
	size_t size = cover_size(c, index), at = util_lower_bound_u32(mem, size, u);
	return at < size && mem[at] == u;
}

int result_cover_node(const struct agm *a, struct inspect_node *nv)
{
	uint32_t in_cover = 0;
	nv->nmember = 0;
	for (uint32_t i = 0; i < nv->naffil; i++) {
		int64_t ix = inspect_find_community(a, nv->affil[i].comm);
		nv->affil[i].member = ix >= 0 && result_cover_has(a, (uint32_t)ix, nv->node);
		nv->nmember += (uint32_t)nv->affil[i].member;
	}
	for (uint32_t i = 0; i < a->cover.k; i++)
		in_cover += (uint32_t)result_cover_has(a, i, nv->node);
	if (in_cover == nv->nmember)
		return 0;
	struct inspect_affil *more =
		realloc(nv->affil, ((size_t)nv->naffil + in_cover - nv->nmember) * sizeof *more);
	if (!more)
		return error("out of memory");
	nv->affil = more;
	uint32_t listed = nv->naffil;
	for (uint32_t i = 0; i < a->cover.k; i++) {
		int seen = 0;
		for (uint32_t j = 0; j < listed && !seen; j++)
			seen = more[j].comm == a->comms[i].id;
		if (!seen && result_cover_has(a, i, nv->node)) {
			more[nv->naffil++] = (struct inspect_affil){ a->comms[i].id, 0.0, 1, 0 };
			nv->nmember++;
		}
	}
	return 0;
}

void result_cover_edge(const struct agm *a, struct inspect_edge *e)
{
	double stay = 1.0 - a->epsilon;
	for (uint32_t i = 0; i < e->nshare; i++) {
		int64_t ix = inspect_find_community(a, e->share[i].comm);
		e->share[i].both_members = ix >= 0 && result_cover_has(a, (uint32_t)ix, e->u) &&
					   result_cover_has(a, (uint32_t)ix, e->v);
	}
	for (uint32_t i = 0; i < a->cover.k; i++)
		if (result_cover_has(a, i, e->u) && result_cover_has(a, i, e->v))
			stay *= 1.0 - a->comms[i].p;
	e->agm_prob = 1.0 - stay;
}

/* run.json belongs to ck: its graph's fingerprint and its sweep. 0 or -1
 * with a warning. */
static int run_matches(const char *dir, const struct checkpoint *ck, double *agm_loglik)
{
	json_t *root = load_run_json(dir);
	json_t *fit = json_object_get(root, "fit");
	const char *fp = json_string_value(json_object_get(json_object_get(root, "graph"),
							   "fingerprint"));
	json_t *sweeps = json_object_get(fit, "sweeps");
	json_t *ll = json_object_get(fit, "agm_loglik");
	char hex[17];
	snprintf(hex, sizeof hex, "%016" PRIx64, ck->fingerprint);
	int ok = fp && !strcmp(fp, hex) && json_is_integer(sweeps) &&
		 json_integer_value(sweeps) == (json_int_t)ck->sweep && json_is_number(ll);
	if (ok)
		*agm_loglik = json_number_value(ll);
	json_decref(root);
	if (!ok)
		warning("run.json does not describe the fit of %s (another graph or sweep)",
			RESULT_CHECKPOINT);
	return ok ? 0 : -1;
}

/* communities.tsv's p_c for the k communities whose column ids are
 * id[0..k) (increasing) and sizes size[], into p. 0 or -1 with a warning. */
static int read_p(const char *dir, uint32_t k, const uint32_t *id, const uint32_t *size,
		  double *p)
{
	char *path = result_file(dir, "communities.tsv");
	FILE *f = path ? fopen(path, "r") : NULL;
	free(path);
	if (!f) {
		warning("cannot read communities.tsv: %s", strerror(errno));
		return -1;
	}
	unsigned char *seen = util_calloc(k ? k : 1, 1);
	char line[1024];
	uint32_t found = 0, lineno = 0;
	int bad = !seen;
	while (!bad && fgets(line, sizeof line, f)) {
		if (++lineno == 1 && !strncmp(line, "community\t", 10))
			continue;
		char *end;
		errno = 0;
		unsigned long c = strtoul(line, &end, 10);
		unsigned long sz = *end == '\t' ? strtoul(end + 1, &end, 10) : 0;
		/* community size internal_edges density conductance p ... */
		for (int col = 0; col < 3 && *end == '\t'; col++)
			strtod(end + 1, &end);
		double pc = *end == '\t' ? strtod(end + 1, &end) : NAN;
		size_t lo = c > UINT32_MAX ? k : util_lower_bound_u32(id, k, (uint32_t)c);
		if (errno || lo == k || id[lo] != c || seen[lo] || size[lo] != sz ||
		    !(pc >= 0.0 && pc <= 1.0)) {
			warning("communities.tsv:%" PRIu32 " does not match memberships.tsv", lineno);
			bad = 1;
			break;
		}
		seen[lo] = 1;
		p[lo] = pc;
		found++;
	}
	if (!bad && found != k) {
		warning("communities.tsv lists %" PRIu32 " communities, memberships.tsv %" PRIu32,
			found, k);
		bad = 1;
	}
	fclose(f);
	free(seen);
	return bad ? -1 : 0;
}

struct labelled {
	uint32_t id, at;
};

static int by_id(const void *pa, const void *pb)
{
	const struct labelled *a = pa, *b = pb;
	return (a->id > b->id) - (a->id < b->id);
}

/* The cover loaded from memberships.tsv (labels are column numbers) into
 * c, reordered by increasing column id; the ids into *idsp (caller frees
 * with free()). 0 or -1 with a warning. */
static int by_column(struct cover *c, const struct cover *in, const struct fcsr *F,
		     uint32_t **idsp)
{
	uint32_t k = in->k;
	struct labelled *l = util_malloc(k ? k : 1, sizeof *l);
	uint32_t *ids = util_malloc(k ? k : 1, sizeof *ids);
	memset(c, 0, sizeof *c);
	c->n = in->n;
	c->k = k;
	c->off = util_calloc((size_t)k + 1, sizeof *c->off);
	c->label = util_calloc(k ? k : 1, sizeof *c->label);
	c->mem = util_malloc(in->off[k] ? in->off[k] : 1, sizeof *c->mem);
	int ok = l && ids && c->off && c->label && c->mem;
	for (uint32_t i = 0; ok && i < k; i++) {
		char *end;
		errno = 0;
		unsigned long v = strtoul(in->label[i], &end, 10);
		if (errno || end == in->label[i] || *end || v >= F->k) {
			char buf[64];
			warning("memberships.tsv names community '%s', not a column of the model",
				util_escape(in->label[i], buf, sizeof buf, 1));
			ok = 0;
		}
		l[i] = (struct labelled){ (uint32_t)v, i };
	}
	if (ok)
		qsort(l, k, sizeof *l, by_id);
	for (uint32_t j = 0; ok && j < k; j++) {
		uint32_t i = l[j].at, size = cover_size(in, i);
		ids[j] = l[j].id;
		c->off[j + 1] = c->off[j] + size;
		memcpy(c->mem + c->off[j], in->mem + in->off[i], (size_t)size * sizeof *c->mem);
		ok = (c->label[j] = util_strdup(in->label[i])) != NULL;
	}
	free(l);
	if (!ok) {
		free(ids);
		cover_release(c);
		return -1;
	}
	*idsp = ids;
	return 0;
}

/* The refined cover of dir into out. 0 or -1 (warned; out empty). */
static int read_refined(struct agm *out, const char *dir, const struct checkpoint *ck)
{
	const struct graph *g = ck->graph;
	double loglik_run = 0;
	struct cover raw, c;
	uint32_t *ids = NULL, *sizes = NULL;
	double *p = NULL;
	int rc = -1;
	memset(&raw, 0, sizeof raw);
	memset(&c, 0, sizeof c);
	memset(out, 0, sizeof *out);
	if (run_matches(dir, ck, &loglik_run))
		return -1;
	char *path = result_file(dir, "memberships.tsv");
	int loaded = path && cover_load(&raw, path, g) == 0;
	free(path);
	if (!loaded || by_column(&c, &raw, &ck->F, &ids))
		goto out;
	sizes = util_malloc(c.k ? c.k : 1, sizeof *sizes);
	p = util_malloc(c.k ? c.k : 1, sizeof *p);
	if (!sizes || !p)
		goto out;
	for (uint32_t j = 0; j < c.k; j++)
		sizes[j] = cover_size(&c, j);
	if (read_p(dir, c.k, ids, sizes, p) || agm_from_cover_p(out, g, &c, ck->epsilon, p))
		goto out;
	for (uint32_t i = 0; i < out->cover.k; i++) {
		uint32_t id = ids[out->comms[i].id]; /* index in c -> column */
		out->comms[i].id = id;
		for (uint64_t j = out->cover.off[i]; j < out->cover.off[i + 1]; j++)
			out->strength[j] = strength_at(&ck->F, out->cover.mem[j], id);
	}
	if (!(fabs(out->loglik - loglik_run) <= 1e-6 * fabs(loglik_run) + 1e-9)) {
		warning("the cover of memberships.tsv has AGM log-likelihood %.10g, run.json says "
			"%.10g: the files were changed", out->loglik, loglik_run);
		agm_release(out);
		goto out;
	}
	rc = 0;
out:
	if (rc && !loaded)
		warning("cannot read the refined cover of memberships.tsv");
	cover_release(&raw);
	cover_release(&c);
	free(ids);
	free(sizes);
	free(p);
	return rc;
}

int result_cover_read(struct agm *out, const char *dir, struct checkpoint *ck,
		      double delta, enum result_cover_from *from)
{
	*from = RESULT_COVER_STRENGTHS;
	if (result_cover_is_refined(dir)) {
		if (read_refined(out, dir, ck) == 0) {
			*from = RESULT_COVER_REFINED;
			return 0;
		}
		warning("showing the cover read from the strengths, not the refined one");
		*from = RESULT_COVER_UNREFINED;
	}
	return agm_from_strengths_trimmed(out, ck->graph, &ck->F, ck->epsilon, delta,
					  AGM_MIN_LINKS);
}

/* ---- the folder's files against its checkpoint ---- */

static int cmp_u64(const void *pa, const void *pb)
{
	uint64_t a = *(const uint64_t *)pa, b = *(const uint64_t *)pb;
	return (a > b) - (a < b);
}

/* The (node, column) pairs of a cover whose community i is column
 * a->comms[i].id (a NULL: its label, a number), sorted, into a new array
 * (caller frees with free()); NULL on a label that is not a column below
 * k, or no memory. */
static uint64_t *cover_pairs(const struct cover *c, const struct agm *a, uint32_t k)
{
	uint64_t n = c->off[c->k], at = 0;
	uint64_t *pairs = util_malloc(n ? n : 1, sizeof *pairs);
	for (uint32_t i = 0; pairs && i < c->k; i++) {
		unsigned long col = a ? a->comms[i].id : k;
		if (!a) {
			char *end;
			errno = 0;
			col = strtoul(c->label[i], &end, 10);
			if (errno || end == c->label[i] || *end)
				col = k;
		}
		if (col >= k) {
			free(pairs);
			return NULL;
		}
		for (uint64_t j = c->off[i]; j < c->off[i + 1]; j++)
			pairs[at++] = (uint64_t)c->mem[j] << 32 | col;
	}
	if (pairs)
		qsort(pairs, n, sizeof *pairs, cmp_u64);
	return pairs;
}

/* Does memberships.tsv (present) list the cover the strengths of ck give
 * by the rule (given, borrowed, or built here when NULL)? 1 yes, 0 no (or
 * unreadable), -1 no memory. */
static int memberships_match(const char *path, struct checkpoint *ck,
			     const struct agm *given)
{
	struct cover file;
	struct agm a;
	memset(&a, 0, sizeof a);
	memset(&file, 0, sizeof file);
	if (cover_load(&file, path, ck->graph)) /* said why */
		return 0;
	int same = -1;
	double delta = sqrt(model_qeps(ck->epsilon));
	const struct agm *rule = given;
	if (!rule && agm_from_strengths_trimmed(&a, ck->graph, &ck->F, ck->epsilon, delta,
						AGM_MIN_LINKS) == 0)
		rule = &a;
	if (rule) {
		uint64_t *x = cover_pairs(&file, NULL, ck->F.k);
		uint64_t *y = cover_pairs(&rule->cover, rule, ck->F.k);
		uint64_t nx = file.off[file.k], ny = rule->cover.off[rule->cover.k];
		same = y ? x && nx == ny && (nx == 0 || !memcmp(x, y, nx * sizeof *x)) : -1;
		free(x);
		free(y);
	}
	agm_release(&a);
	cover_release(&file);
	return same;
}

void result_cover_check_folder(const char *dir, struct checkpoint *ck,
			       const struct agm *rule)
{
	json_t *root = load_run_json(dir);
	if (root) {
		const char *fp = json_string_value(
			json_object_get(json_object_get(root, "graph"), "fingerprint"));
		json_t *sweeps = json_object_get(json_object_get(root, "fit"), "sweeps");
		char hex[17];
		snprintf(hex, sizeof hex, "%016" PRIx64, ck->fingerprint);
		int other_graph = !fp || strcmp(fp, hex) != 0;
		if (other_graph)
			warning("run.json is of another graph (fingerprint %s) than %s (%s): the "
				"folder mixes two results; %s is the one read", fp ? fp : "missing",
				RESULT_CHECKPOINT, hex, RESULT_CHECKPOINT);
		else if (!json_is_integer(sweeps) ||
			 json_integer_value(sweeps) != (json_int_t)ck->sweep)
			warning("run.json is of another fit (%" JSON_INTEGER_FORMAT " sweeps) than "
				"%s (%" PRIu32 " sweeps): the folder mixes two results; %s is the "
				"one read", json_integer_value(sweeps), RESULT_CHECKPOINT, ck->sweep,
				RESULT_CHECKPOINT);
		int mixed = other_graph || json_integer_value(sweeps) != (json_int_t)ck->sweep;
		json_decref(root);
		if (mixed)
			return;
	}
	if (result_cover_is_refined(dir))
		return; /* read_refined() checks that cover against run.json */
	if (model_kind_sided(ck->params.model))
		return; /* its memberships.tsv holds sides (result_directed.c): not this cover */
	char *path = result_file(dir, "memberships.tsv");
	if (path && access(path, F_OK) == 0 && memberships_match(path, ck, rule) == 0)
		warning("memberships.tsv is not the cover of the strengths in %s (edited, or of "
			"another fit): the strengths' cover is the one read", RESULT_CHECKPOINT);
	free(path);
}
