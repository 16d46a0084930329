/*
 * simulate_write: the planted folder (edges.tsv, truth.tsv, planted.tsv,
 * simulate.json; formats in coterie-files(5)), written through
 * atomicfile.h: all four staged before any is renamed.
 *
 * The idea: node names are prefix + id, so the hot loops format numbers by
 * hand (two digits at a time) straight into the writer's buffer
 * (atomicfile_room()), the bulk of a large graph's writing time. A
 * newcomer's trap: a prefix is checked (simulate_prefix_check()) before
 * anything is written, so that every name reads back as one token.
 *
 * Two-mode: ids 0 .. n1-1 are the first kind, n1 .. n-1 the second, so
 * names never repeat across kinds and read back as `fit --two-mode`
 * names the nodes (without its side tag); edges.tsv has the first kind
 * in its first column, and truth.tsv a third column, kind (first or
 * second), so that a score can be taken on each side.
 */
#include "simulate-internal.h"

#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include <jansson.h>

#include "coterie/atomicfile.h"
#include "coterie/jsonout.h"
#include "coterie/util.h"

int simulate_prefix_check(const char *prefix)
{
	size_t len = strlen(prefix);
	if (len > 64)
		return error("the node name prefix is longer than 64 bytes");
	if (prefix[0] == '#' || prefix[0] == '%')
		return error("a node name prefix cannot start with '#' or '%%' (a comment in an "
			     "edge list)");
	for (size_t i = 0; i < len; i++) {
		unsigned char ch = (unsigned char)prefix[i];
		if (ch < 0x20 || ch == 0x7f || ch == '\\' || ch == ' ' || ch == ',')
			return error("a node name prefix cannot hold control bytes, spaces, commas "
				     "or backslashes");
	}
	return 0;
}

static const char *planted_files[] = { SIMULATE_EDGES, SIMULATE_TRUTH };

int simulate_dir_taken(const char *dir)
{
	for (size_t i = 0; i < sizeof planted_files / sizeof *planted_files; i++) {
		char path[4096];
		struct stat st;
		if ((size_t)snprintf(path, sizeof path, "%s/%s", dir, planted_files[i]) >= sizeof path)
			continue;
		if (stat(path, &st) == 0 && st.st_size > 0)
			return 1;
	}
	return 0;
}

static const char digits2[] =
	"00010203040506070809101112131415161718192021222324252627282930313233343536373839"
	"40414243444546474849505152535455565758596061626364656667686970717273747576777879"
	"8081828384858687888990919293949596979899";

/* Write x in decimal at p; returns the end. */
static inline char *put_u32(char *p, uint32_t x)
{
	char t[10];
	int i = 10;
	while (x >= 100) {
		uint32_t q = x / 100, r = x - q * 100;
		x = q;
		t[--i] = digits2[2 * r + 1];
		t[--i] = digits2[2 * r];
	}
	if (x >= 10) {
		t[--i] = digits2[2 * x + 1];
		t[--i] = digits2[2 * x];
	} else {
		t[--i] = (char)('0' + x);
	}
	memcpy(p, t + i, (size_t)(10 - i));
	return p + (10 - i);
}

static inline char *put_name(char *p, const char *prefix, size_t plen, uint32_t u)
{
	memcpy(p, prefix, plen);
	return put_u32(p + plen, u);
}

/* What the fill functions read; all borrowed. */
struct planted_args {
	const struct simulate *s;
	const struct simulate_params *p;
	const char *prefix;
	size_t plen;
	const char *json;
};

static int fill_edges(struct atomicfile *w, const void *arg)
{
	const struct planted_args *a = arg;
	const struct simulate *s = a->s;
	if (s->n1)
		atomicfile_printf(w, "# coterie simulate: planted two-mode AGM, %u + %u nodes "
				  "(first column: ids below %u), %" PRIu64 " links, %u communities, "
				  "seed %" PRIu64 "\n", s->n1, s->n - s->n1, s->n1, s->m, s->k,
				  a->p->seed);
	else
		atomicfile_printf(w, "# coterie simulate: planted AGM, %u nodes, %" PRIu64 " %s, "
				  "%u communities, seed %" PRIu64 "\n", s->n, s->m + s->mback,
				  s->back ? "arcs" : "edges", s->k, a->p->seed);
	size_t line = 2 * (a->plen + 10) + 2;
	for (uint64_t i = 0; i < s->m; i++) {
		char *q = atomicfile_room(w, line), *q0 = q;
		q = put_name(q, a->prefix, a->plen, (uint32_t)(s->edges[i] >> 32));
		*q++ = '\t';
		q = put_name(q, a->prefix, a->plen, (uint32_t)(s->edges[i] & 0xffffffffu));
		if (s->weights) { /* whole numbers below 2^31 (the rate is capped) */
			atomicfile_advance(w, (size_t)(q - q0));
			atomicfile_printf(w, "\t%.0f\n", s->weights[i]);
			continue;
		}
		*q++ = '\n';
		atomicfile_advance(w, (size_t)(q - q0));
	}
	for (uint64_t i = 0; i < s->mback; i++) { /* directed: the arcs v -> u */
		char *q = atomicfile_room(w, line), *q0 = q;
		q = put_name(q, a->prefix, a->plen, (uint32_t)(s->back[i] & 0xffffffffu));
		*q++ = '\t';
		q = put_name(q, a->prefix, a->plen, (uint32_t)(s->back[i] >> 32));
		if (s->weights) {
			atomicfile_advance(w, (size_t)(q - q0));
			atomicfile_printf(w, "\t%.0f\n", s->weights[s->m + i]);
			continue;
		}
		*q++ = '\n';
		atomicfile_advance(w, (size_t)(q - q0));
	}
	return 0;
}

static int fill_truth(struct atomicfile *w, const void *arg)
{
	const struct planted_args *a = arg;
	const struct cover *cv = &a->s->truth;
	uint32_t n1 = a->s->n1;
	size_t line = a->plen + 10 + 1 + 10 + sizeof "\tsecond\n";
	atomicfile_str(w, n1 ? "node\tcommunity\tkind\n" : "node\tcommunity\n");
	for (uint32_t c = 0; c < cv->k; c++)
		for (uint64_t i = cv->off[c]; i < cv->off[c + 1]; i++) {
			char *q = atomicfile_room(w, line), *q0 = q;
			q = put_name(q, a->prefix, a->plen, cv->mem[i]);
			*q++ = '\t';
			q = put_u32(q, c);
			if (n1) {
				const char *kind = cv->mem[i] < n1 ? "\tfirst" : "\tsecond";
				memcpy(q, kind, strlen(kind));
				q += strlen(kind);
			}
			*q++ = '\n';
			atomicfile_advance(w, (size_t)(q - q0));
		}
	return 0;
}

static int fill_planted(struct atomicfile *w, const void *arg)
{
	const struct simulate *s = ((const struct planted_args *)arg)->s;
	atomicfile_str(w, "community\tsize\tp\n");
	for (uint32_t c = 0; c < s->k; c++)
		atomicfile_printf(w, "%u\t%u\t%.17g\n", c, cover_size(&s->truth, c), s->p[c]);
	return 0;
}

static int fill_json(struct atomicfile *w, const void *arg)
{
	atomicfile_str(w, ((const struct planted_args *)arg)->json);
	atomicfile_str(w, "\n");
	return 0;
}

/* With mixing: parameters.mixing, and an object "mixing" with the
 * epsilon solved and the shares of background and outside edges (see
 * struct simulate), expected and drawn. Returns 0 or -1. */
static int add_mixing(json_t *root, const struct simulate *s, const struct simulate_params *p)
{
	double pairs = s->pairs, written = (double)(s->m + s->mback), m = written > 0 ? written : 1.0;
	double e = s->expected_edges > 0.0 ? s->expected_edges : 1.0;
	json_t *mix = json_pack(
		"{s:f, s:f, s:f, s:f, s:f, s:I, s:f, s:f, s:I}",
		"asked", p->mixing,
		"epsilon", s->epsilon,
		"background_share_expected", s->epsilon * (pairs - s->expected_community_edges) / e,
		"background_share_realised", (double)s->background_only / m,
		"outside_share_expected", s->epsilon * (double)s->pairs_apart / e,
		"outside_edges", (json_int_t)s->outside_edges,
		"outside_share_realised", (double)s->outside_edges / m,
		"outside_edges_expected", s->epsilon * (double)s->pairs_apart,
		"pairs_apart", (json_int_t)s->pairs_apart);
	json_t *par = json_object_get(root, "parameters");
	if (!mix || !par) {
		json_decref(mix);
		return -1;
	}
	/* both steal their value, on failure too; mix then belongs to root */
	if (json_object_set_new(root, "mixing", mix) ||
	    json_object_set_new(par, "mixing", json_real(p->mixing)))
		return -1;
	return 0;
}

/* simulate.json's "two_mode" (with --two-mode only): the kinds' counts and
 * id ranges. */
static int add_two_mode(json_t *root, const struct simulate *s)
{
	json_t *tj = json_pack("{s:I, s:I, s:s}", "first", (json_int_t)s->n1, "second",
			       (json_int_t)(s->n - s->n1), "ids",
			       "first kind below 'first', in edges.tsv's first column; "
			       "truth.tsv's third column names the kind");
	return !tj || json_object_set_new(root, "two_mode", tj) ? -1 : 0;
}

/* simulate.json's "weights" (with --weighted only, so an unweighted
 * planted folder keeps its bytes): the law and the sum. */
static int add_weights(json_t *root, const struct simulate *s)
{
	double total = 0.0;
	for (uint64_t i = 0; i < s->m + s->mback; i++)
		total += s->weights[i];
	json_t *wj = json_pack("{s:s, s:f}", "law",
			       "Poisson of the planted rate, above zero (Ball, Karrer & Newman, "
			       "PRE 2011)",
			       "total", total);
	return !wj || json_object_set_new(root, "weights", wj) ? -1 : 0;
}

static char *simulate_json(const struct simulate *s, const struct simulate_params *p,
			   const struct simulate_meta *meta)
{
	double pmin = 1.0, pmax = 0.0;
	for (uint32_t c = 0; c < s->k; c++) {
		pmin = fmin(pmin, s->p[c]);
		pmax = fmax(pmax, s->p[c]);
	}
	if (s->k == 0)
		pmin = pmax = 0.0;
	/* directed: every arc written, and the mean out-degree (= in-degree),
	 * which is what --mean-degree asked of each direction */
	uint64_t written = s->m + s->mback;
	double per_node = s->back ? 1.0 : 2.0;
	char *cmd = meta && meta->command_line ? util_escape_dup(meta->command_line, 1) : NULL;
	char *pre = util_escape_dup(meta && meta->prefix ? meta->prefix : "", 1);
	json_t *root = json_pack(
		"{s:i, s:o, s:s, s:{s:I, s:o, s:I, s:I, s:f, s:f, s:I, s:[f, f], s:o, s:b, s:f, s:o, s:I, "
		"s:s}, s:{s:I, s:I, s:I, s:I, s:I, s:I, s:I, s:f, s:f, s:f, s:f, s:I, s:I, s:I, "
		"s:f, s:f}, s:f, s:{s:s, s:s, s:s}}",
		"format", 1,
		"command", cmd ? json_string(cmd) : json_null(),
		"model", "AGM (Yang & Leskovec, ICDM 2012)",
		"parameters",
		"nodes", (json_int_t)p->n,
		"communities", p->k ? json_integer(p->k) : json_null(),
		"size_min", (json_int_t)p->size_min,
		"size_max", (json_int_t)p->size_max,
		"size_exponent", p->size_exponent,
		"overlap", p->overlap,
		"max_memberships", (json_int_t)p->max_memberships,
		"link_prob", p->p_lo, p->p_hi,
		"mean_degree", p->mean_degree > 0 ? json_real(p->mean_degree) : json_null(),
		"even_degrees", p->even_degrees ? 1 : 0,
		"epsilon", p->epsilon,
		"seed", jsonout_uint(p->seed),
		"threads", (json_int_t)p->threads,
		"prefix", pre ? pre : "",
		"realised",
		"nodes", (json_int_t)s->n,
		"communities", (json_int_t)s->k,
		"memberships", (json_int_t)s->truth.off[s->k],
		"overlapping_nodes", (json_int_t)s->overlapping,
		"uncovered_nodes", (json_int_t)s->uncovered,
		"edges", (json_int_t)written,
		"isolated_nodes", (json_int_t)s->isolated,
		"mean_degree", per_node * (double)written / s->n,
		"expected_edges", s->expected_edges,
		"expected_mean_degree", per_node * s->expected_edges / s->n,
		"p_scale", s->scale,
		"pairs_drawn_by_communities", (json_int_t)s->drawn_communities,
		"pairs_drawn_by_background", (json_int_t)s->drawn_background,
		"duplicates_merged", (json_int_t)s->duplicates,
		"p_min", pmin,
		"p_max", pmax,
		"seconds", meta ? meta->seconds : 0.0,
		"files",
		"edges", SIMULATE_EDGES,
		"truth", SIMULATE_TRUTH,
		"planted", SIMULATE_PLANTED);
	free(cmd);
	free(pre);
	if (root && p->mixing >= 0.0 && add_mixing(root, s, p)) {
		json_decref(root);
		root = NULL;
	}
	if (root && s->n1 && add_two_mode(root, s)) {
		json_decref(root);
		root = NULL;
	}
	if (root && s->weights && add_weights(root, s)) {
		json_decref(root);
		root = NULL;
	}
	if (!root) {
		error("cannot build '%s'", SIMULATE_JSON);
		return NULL;
	}
	char *text = jsonout_text(root, JSON_INDENT(2) | JSON_PRESERVE_ORDER, SIMULATE_JSON);
	json_decref(root);
	return text;
}

int simulate_write(const char *dir, const struct simulate *s, const struct simulate_params *p,
		   const struct simulate_meta *meta)
{
	const char *prefix = meta && meta->prefix ? meta->prefix : "";
	if (simulate_prefix_check(prefix))
		return -1;
	struct planted_args a = { s, p, prefix, strlen(prefix), simulate_json(s, p, meta) };
	if (!a.json)
		return -1;
	struct atomicfile_set set;
	atomicfile_set_init(&set);
	int rc = -1;
	/* all four staged before any is renamed; simulate.json last: it marks
	 * a folder whose files belong together */
	if (atomicfile_set_stage(&set, dir, SIMULATE_EDGES, fill_edges, &a) == 0 &&
	    atomicfile_set_stage(&set, dir, SIMULATE_TRUTH, fill_truth, &a) == 0 &&
	    atomicfile_set_stage(&set, dir, SIMULATE_PLANTED, fill_planted, &a) == 0 &&
	    atomicfile_set_stage(&set, dir, SIMULATE_JSON, fill_json, &a) == 0)
		rc = atomicfile_set_commit(&set, dir);
	atomicfile_set_release(&set);
	free((char *)a.json);
	return rc;
}
