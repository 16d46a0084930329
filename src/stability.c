/*
 * stability: the best-match Jaccard of communities between runs, and the
 * score of each community of a kept run (see stability.h).
 *
 * Intersections come from one node -> communities index of the second
 * cover: a community a of the first meets only the communities of its
 * members, so the cost is the sum over nodes of (memberships in x) x
 * (memberships in y), not k_x x k_y x n. This is the one implementation:
 * the agreement figure (figure_agree.c), fit --repeats and coterie agree
 * all call it.
 *
 * The score of a community is the plain mean of its best matches, one per
 * other run; a run where it has no counterpart at all counts 0, so a
 * community found once in five runs scores about 0.2 whatever its size.
 *
 * The one thing a newcomer would get wrong: community ids of two runs
 * mean nothing to each other, and node ids only agree when both covers
 * were read into one name table (cover_read()) or come from one graph.
 */
#include "coterie/stability.h"

#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include <jansson.h>

#include "coterie/model.h"
#include "coterie/model_directed.h"
#include "coterie/names.h"
#include "coterie/result_commit.h"
#include "coterie/util.h"

/* Node -> communities of a cover: idx[off[u] .. off[u+1]). */
struct incidence {
	uint64_t *off;
	uint32_t *idx;
};

static void incidence_release(struct incidence *x)
{
	free(x->off);
	free(x->idx);
	memset(x, 0, sizeof *x);
}

static int incidence_of(const struct cover *c, struct incidence *x)
{
	x->off = util_calloc((size_t)c->n + 1, sizeof *x->off);
	x->idx = util_malloc(c->off[c->k] ? c->off[c->k] : 1, sizeof *x->idx);
	if (!x->off || !x->idx) {
		incidence_release(x);
		return -1;
	}
	for (uint64_t e = 0; e < c->off[c->k]; e++)
		x->off[c->mem[e] + 1]++;
	for (uint32_t u = 0; u < c->n; u++)
		x->off[u + 1] += x->off[u];
	for (uint32_t b = 0; b < c->k; b++)
		for (uint64_t e = c->off[b]; e < c->off[b + 1]; e++)
			x->idx[x->off[c->mem[e]]++] = b;
	for (uint32_t u = c->n; u > 0; u--) /* the fill moved each start to the next */
		x->off[u] = x->off[u - 1];
	x->off[0] = 0;
	return 0;
}

/* What meet() works with for one cover y: its incidence, the
 * intersection counts (all zero between calls) and the communities met. */
struct meeting {
	struct incidence iy;
	uint32_t *inter;
	uint32_t *touched;
};

static void meeting_release(struct meeting *w)
{
	incidence_release(&w->iy);
	free(w->inter);
	free(w->touched);
	memset(w, 0, sizeof *w);
}

static int meeting_init(struct meeting *w, const struct cover *x, const struct cover *y)
{
	memset(w, 0, sizeof *w);
	if (cover_same_n(x, y))
		return -1;
	w->inter = util_calloc(y->k ? y->k : 1, sizeof *w->inter);
	w->touched = util_malloc(y->k ? y->k : 1, sizeof *w->touched);
	if (!w->inter || !w->touched || incidence_of(y, &w->iy)) {
		meeting_release(w);
		return -1;
	}
	return 0;
}

/* The intersections of community a of x with every community of y into
 * w->inter; the communities met are listed in w->touched (returns how
 * many). The caller zeroes their counts again. */
static uint32_t meet(const struct cover *x, uint32_t a, struct meeting *w)
{
	uint32_t nt = 0;
	for (uint64_t e = x->off[a]; e < x->off[a + 1]; e++) {
		uint32_t u = x->mem[e];
		for (uint64_t j = w->iy.off[u]; j < w->iy.off[u + 1]; j++) {
			uint32_t b = w->iy.idx[j];
			if (w->inter[b]++ == 0)
				w->touched[nt++] = b;
		}
	}
	return nt;
}

static double jaccard(uint32_t inter, uint32_t sa, uint32_t sb)
{
	uint64_t uni = (uint64_t)sa + sb - inter;
	return uni ? (double)inter / (double)uni : NAN;
}

int stability_best_jaccard(const struct cover *x, const struct cover *y, double *best)
{
	struct meeting w;
	if (meeting_init(&w, x, y))
		return -1;
	for (uint32_t a = 0; a < x->k; a++) {
		uint32_t sa = cover_size(x, a), nt = meet(x, a, &w);
		double b = sa ? 0 : NAN;
		for (uint32_t t = 0; t < nt; t++) {
			uint32_t c = w.touched[t];
			double j = jaccard(w.inter[c], sa, cover_size(y, c));
			b = j > b ? j : b;
			w.inter[c] = 0;
		}
		best[a] = b;
	}
	meeting_release(&w);
	return 0;
}

int stability_jaccard_rows(const struct cover *x, const uint32_t *rows, uint32_t nrows,
			   const struct cover *y, double *full)
{
	struct meeting w;
	if (meeting_init(&w, x, y))
		return -1;
	for (uint32_t i = 0; i < nrows; i++) {
		uint32_t a = rows[i], nt = meet(x, a, &w);
		for (uint32_t t = 0; t < nt; t++) {
			uint32_t b = w.touched[t];
			full[(size_t)i * y->k + b] = jaccard(w.inter[b], cover_size(x, a), cover_size(y, b));
			w.inter[b] = 0;
		}
	}
	meeting_release(&w);
	return 0;
}

int stability_score(const struct cover *kept, const struct cover *others, uint32_t nothers,
		    double *score, double *each)
{
	double *best = util_malloc(kept->k ? kept->k : 1, sizeof *best);
	if (!best)
		return -1;
	for (uint32_t a = 0; a < kept->k; a++)
		score[a] = 0.0;
	for (uint32_t r = 0; r < nothers; r++) {
		if (stability_best_jaccard(kept, &others[r], best)) {
			free(best);
			return -1;
		}
		for (uint32_t a = 0; a < kept->k; a++) {
			score[a] += best[a]; /* NaN (an empty a) stays NaN */
			if (each)
				each[(size_t)a * nothers + r] = best[a];
		}
	}
	for (uint32_t a = 0; a < kept->k; a++)
		score[a] = nothers ? score[a] / nothers : NAN;
	free(best);
	return 0;
}

int stability_score_sided(const struct graph *g, struct snapshot *const *runs, uint32_t nruns,
			  uint32_t kept, double *score)
{
	if (kept >= nruns)
		return error("run %u kept of %u runs", kept + 1, nruns);
	struct cover *cv = util_calloc(nruns, sizeof *cv);
	if (!cv)
		return -1;
	int rc = 0;
	for (uint32_t i = 0; i < nruns && rc == 0; i++)
		rc = model_directed_cover(g, &runs[i]->F, runs[i]->delta, &cv[i]);
	if (rc == 0) {
		/* the others first, the kept one last: one array, no copy */
		struct cover mine = cv[kept];
		cv[kept] = cv[nruns - 1];
		cv[nruns - 1] = mine;
		rc = stability_score(&cv[nruns - 1], cv, nruns - 1, score, NULL);
	}
	for (uint32_t i = 0; i < nruns; i++)
		cover_release(&cv[i]);
	free(cv);
	return rc;
}

void stability_init(struct stability *st)
{
	memset(st, 0, sizeof *st);
}

void stability_release(struct stability *st)
{
	if (!st)
		return;
	UTIL_FREE_ALL(st->seed, st->loglik, st->code, st->score);
	stability_init(st);
}

double stability_mean(const struct stability *st)
{
	double sum = 0;
	uint32_t n = 0;
	for (uint32_t a = 0; a < st->k; a++)
		if (!isnan(st->score[a])) {
			sum += st->score[a];
			n++;
		}
	return n ? sum / n : NAN;
}

/* ---- folders of one graph ---- */

/* The graph fingerprint dir's run.json records, else its manifest's
 * ("graph HEX" line), into fp (17 bytes), or "" when neither says. */
static void fingerprint(const char *dir, char *fp)
{
	fp[0] = '\0';
	char *path = result_file(dir, "run.json");
	json_t *run = path ? json_load_file(path, 0, NULL) : NULL;
	free(path);
	const char *s = json_string_value(json_object_get(json_object_get(run, "graph"), "fingerprint"));
	if (s && strlen(s) == 16)
		memcpy(fp, s, 17);
	json_decref(run);
	if (fp[0])
		return;
	size_t len = strlen(dir) + sizeof "/" RESULT_MANIFEST;
	char *mpath = util_malloc(len, 1);
	FILE *f = NULL;
	if (mpath) {
		snprintf(mpath, len, "%s/%s", dir, RESULT_MANIFEST);
		f = fopen(mpath, "r");
	}
	free(mpath);
	char line[256], hex[32];
	while (f && fgets(line, sizeof line, f))
		if (sscanf(line, "graph %31s", hex) == 1 && strlen(hex) == 16) {
			memcpy(fp, hex, 17);
			break;
		}
	if (f)
		fclose(f);
}

int stability_same_graph(const char *const *dirs, uint32_t n)
{
	char first[17] = "", fp[17];
	uint32_t from = 0;
	for (uint32_t r = 0; r < n; r++) {
		fingerprint(dirs[r], fp);
		if (!fp[0])
			continue;
		if (!first[0]) {
			memcpy(first, fp, sizeof fp);
			from = r;
		} else if (strcmp(first, fp)) {
			char a[512], b[512];
			return error("'%s' and '%s' are fits of different graphs (their graph "
				     "fingerprints differ)", util_escape(dirs[from], a, sizeof a, 1),
				     util_escape(dirs[r], b, sizeof b, 1));
		}
	}
	return 0;
}

/* DIR/memberships.tsv into c, its names into nodes. 0 or -1 (reported). */
static int read_folder(const char *dir, struct names *nodes, struct cover *c)
{
	struct stat st;
	char buf[512];
	if (stat(dir, &st) != 0 || !S_ISDIR(st.st_mode))
		return error("'%s' is not a result folder", util_escape(dir, buf, sizeof buf, 1));
	char *path = result_file(dir, "memberships.tsv");
	if (!path)
		return -1;
	int rc = -1;
	if (stat(path, &st) != 0)
		error("'%s' has no memberships.tsv: the communities a fit writes",
		      util_escape(dir, buf, sizeof buf, 1));
	else
		rc = cover_read(c, path, nodes);
	free(path);
	return rc;
}

int stability_read_folders(const char *const *dirs, uint32_t n, struct names *nodes,
			   struct cover *out)
{
	memset(out, 0, n * sizeof *out);
	if (stability_same_graph(dirs, n))
		return -1;
	for (uint32_t r = 0; r < n; r++)
		if (read_folder(dirs[r], nodes, &out[r])) {
			for (uint32_t q = 0; q <= r; q++)
				cover_release(&out[q]);
			return -1;
		}
	for (uint32_t r = 0; r < n; r++)
		out[r].n = names_count(nodes); /* all over the union of the nodes */
	return 0;
}

/* ---- reading a folder's stability back ---- */

/* An id is a column of the model, so below MODEL_MAX_K: a larger one in a
 * run.json of a few bytes would cost the array a large allocation (2^24
 * ids, 128 MiB, before fuzz_result found it). */
#define STABILITY_MAX_ID MODEL_MAX_K

int stability_read(const char *dir, double **score, uint32_t *nid, uint32_t *sweep)
{
	*score = NULL;
	*nid = 0;
	*sweep = 0;
	char *path = result_file(dir, "run.json");
	json_t *run = path ? json_load_file(path, 0, NULL) : NULL;
	free(path);
	json_t *list = json_object_get(json_object_get(run, "stability"), "communities");
	json_t *sw = json_object_get(json_object_get(run, "fit"), "sweeps");
	uint32_t top = 0;
	size_t i;
	json_t *c;
	json_array_foreach(list, i, c) {
		json_int_t id = json_integer_value(json_object_get(c, "community"));
		if (json_is_integer(json_object_get(c, "community")) && id >= 0 &&
		    id < STABILITY_MAX_ID && (uint32_t)id + 1 > top)
			top = (uint32_t)id + 1;
	}
	int rc = 0;
	if (top > 0 && json_is_integer(sw) && json_integer_value(sw) >= 0 &&
	    json_integer_value(sw) <= UINT32_MAX) {
		double *s = util_malloc(top, sizeof *s);
		if (!s) {
			rc = -1;
		} else {
			for (uint32_t j = 0; j < top; j++)
				s[j] = NAN;
			json_array_foreach(list, i, c) {
				json_t *id = json_object_get(c, "community");
				json_t *v = json_object_get(c, "stability");
				if (json_is_integer(id) && json_integer_value(id) >= 0 &&
				    json_integer_value(id) < top && json_is_number(v) &&
				    json_number_value(v) >= 0 && json_number_value(v) <= 1)
					s[json_integer_value(id)] = json_number_value(v);
			}
			*score = s;
			*nid = top;
			*sweep = (uint32_t)json_integer_value(sw);
		}
	}
	json_decref(run);
	return rc;
}
