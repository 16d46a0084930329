/*
 * figure_read: what the figures need from a result folder: trace.tsv,
 * k-selection.tsv, memberships.tsv, and a few values of run.json.
 *
 * The TSV files are read by their header's column names (coterie-files(5)),
 * so columns added later are ignored and an older k-selection.tsv without
 * folds or spread still draws. Every value is checked (a whole number, a
 * finite real, sweeps and k increasing) and a bad one is refused naming the
 * file and line. run.json only adds marks (the plateau, the start kept, the
 * nodes in no community): when it is missing or unreadable the figure is
 * drawn without them.
 *
 * The one thing a newcomer would get wrong: memberships.tsv does not list
 * the nodes in no community; their count is run.json's graph.nodes less
 * the nodes the file names.
 */
#include <errno.h>
#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include <jansson.h>

#include "coterie/figure.h"
#include "coterie/names.h"
#include "coterie/util.h"
#include "figure-internal.h"

#define PATH_CAP 4096
#define MAX_FIELDS 32
#define MAX_ROWS 100000000u

/* ---- releases ---- */

void figure_trace_release(struct figure_trace *t)
{
	if (t)
		free(t->p);
	if (t)
		memset(t, 0, sizeof *t);
}

void figure_kcurve_release(struct figure_kcurve *k)
{
	if (k)
		free(k->p);
	if (k)
		memset(k, 0, sizeof *k);
}

void figure_counts_release(struct figure_counts *c)
{
	if (c)
		free(c->count);
	if (c)
		memset(c, 0, sizeof *c);
}

/* ---- a TSV file read by column names ---- */

struct tsv {
	FILE *fp;
	char path[PATH_CAP];
	char shown[PATH_CAP]; /* path escaped, for messages */
	char *line;
	size_t cap;
	unsigned long lineno;
	char *field[MAX_FIELDS];
	int nf;
	char *head[MAX_FIELDS]; /* the header's names (owned copy) */
	int nhead;
};

/* DIR/NAME into buf: 0, or -1 with a message. */
static int join(char *buf, const char *dir, const char *name)
{
	int w = snprintf(buf, PATH_CAP, "%s/%s", dir, name);
	if (w < 0 || w >= PATH_CAP) {
		char e[256];
		return error("the folder name is too long: %s", util_escape(dir, e, sizeof e, 1));
	}
	return 0;
}

/* Split t->line on TABs (the newline and a CR before it dropped). */
static void split(struct tsv *t)
{
	size_t len = strlen(t->line);
	while (len && (t->line[len - 1] == '\n' || t->line[len - 1] == '\r'))
		t->line[--len] = '\0';
	t->nf = 0;
	char *s = t->line;
	for (;;) {
		if (t->nf < MAX_FIELDS)
			t->field[t->nf++] = s;
		char *tab = strchr(s, '\t');
		if (!tab)
			break;
		*tab = '\0';
		s = tab + 1;
	}
}

/* The next line: 1, 0 at the end, -1 with a message on a read error. */
static int tsv_next(struct tsv *t)
{
	errno = 0;
	if (getline(&t->line, &t->cap, t->fp) < 0) {
		if (ferror(t->fp))
			return error("cannot read '%s': %s", t->shown, strerror(errno ? errno : EIO));
		return 0;
	}
	t->lineno++;
	split(t);
	return 1;
}

static void tsv_close(struct tsv *t)
{
	if (t->fp)
		fclose(t->fp);
	free(t->line);
	for (int i = 0; i < t->nhead; i++)
		free(t->head[i]);
	memset(t, 0, sizeof *t);
}

/* Open DIR/NAME and read its header; what says what the file is, for the
 * message when it is missing. 0, or -1 with a message. */
static int tsv_open(struct tsv *t, const char *dir, const char *name, const char *what)
{
	memset(t, 0, sizeof *t);
	if (join(t->path, dir, name))
		return -1;
	util_escape(t->path, t->shown, sizeof t->shown, 1);
	t->fp = fopen(t->path, "r");
	if (!t->fp) {
		char d[PATH_CAP];
		util_escape(dir, d, sizeof d, 1);
		if (errno == ENOENT)
			return error("'%s' has no %s: %s", d, name, what);
		return error("cannot open '%s': %s", t->shown, strerror(errno));
	}
	int r = tsv_next(t);
	if (r <= 0) {
		if (r == 0)
			error("'%s' is empty: expected a header line", t->shown);
		tsv_close(t);
		return -1;
	}
	for (int i = 0; i < t->nf; i++) {
		t->head[i] = util_strdup(t->field[i]);
		if (!t->head[i]) {
			tsv_close(t);
			return -1;
		}
		t->nhead++;
	}
	return 0;
}

/* The column named name: its index, or -1 (with a message when needed). */
static int tsv_col(const struct tsv *t, const char *name, int needed)
{
	for (int i = 0; i < t->nhead; i++)
		if (!strcmp(t->head[i], name))
			return i;
	if (needed)
		error("%s:1: expected a column '%s' in the header", t->shown, name);
	return -1;
}

static int tsv_field_error(const struct tsv *t, int col, const char *expected)
{
	char buf[64];
	const char *v = col < t->nf ? t->field[col] : "";
	return error("%s:%lu: expected %s in column '%s', found '%s'", t->shown, t->lineno,
		     expected, t->head[col], util_escape(v, buf, sizeof buf, 1));
}

static int tsv_u32(const struct tsv *t, int col, uint32_t *out)
{
	if (col >= t->nf || t->field[col][0] < '0' || t->field[col][0] > '9')
		return tsv_field_error(t, col, "a whole number");
	char *end;
	errno = 0;
	unsigned long long v = strtoull(t->field[col], &end, 10);
	if (*end || errno || v > UINT32_MAX)
		return tsv_field_error(t, col, "a whole number");
	*out = (uint32_t)v;
	return 0;
}

static int tsv_real(const struct tsv *t, int col, double *out)
{
	char *end;
	if (col >= t->nf || !t->field[col][0])
		return tsv_field_error(t, col, "a number");
	double v = strtod(t->field[col], &end);
	if (*end || !isfinite(v))
		return tsv_field_error(t, col, "a finite number");
	*out = v;
	return 0;
}

/* Grow *p (of *cap items of size sz) to hold n + 1: 0 or -1. */
static int grow(void *pp, uint32_t *cap, uint32_t n, size_t sz)
{
	void **p = pp;
	if (n < *cap)
		return 0;
	if (n >= MAX_ROWS)
		return error("too many rows (more than %u)", MAX_ROWS);
	uint32_t c = *cap ? *cap * 2 : 256;
	void *q = util_realloc(*p, c, sz);
	if (!q)
		return -1;
	*p = q;
	*cap = c;
	return 0;
}

/* ---- run.json ---- */

/* DIR/run.json, or NULL (no message) when missing or unreadable. */
static json_t *run_json(const char *dir)
{
	char path[PATH_CAP];
	if (snprintf(path, sizeof path, "%s/run.json", dir) >= (int)sizeof path)
		return NULL;
	return json_load_file(path, 0, NULL);
}

/* The whole number at a.b of root, or def when absent, null or not one. */
static uint64_t json_u64_at(json_t *root, const char *a, const char *b, uint64_t def)
{
	json_t *v = json_object_get(json_object_get(root, a), b);
	if (!json_is_integer(v) || json_integer_value(v) < 0)
		return def;
	return (uint64_t)json_integer_value(v);
}

/* ---- the readers ---- */

int figure_read_trace(const char *dir, struct figure_trace *out)
{
	memset(out, 0, sizeof *out);
	struct tsv t;
	if (tsv_open(&t, dir, "trace.tsv", "the log-likelihood trace a fit writes"))
		return -1;
	int cs = tsv_col(&t, "sweep", 1), cl = cs < 0 ? -1 : tsv_col(&t, "loglik", 1);
	uint32_t cap = 0;
	int r = cs < 0 || cl < 0 ? -1 : 0;
	while (r == 0 && (r = tsv_next(&t)) == 1) {
		uint32_t sweep;
		double ll;
		if (tsv_u32(&t, cs, &sweep) || tsv_real(&t, cl, &ll) ||
		    grow(&out->p, &cap, out->n, sizeof *out->p)) {
			r = -1;
			break;
		}
		if (out->n && sweep <= out->p[out->n - 1].x) {
			r = error("%s:%lu: the sweeps do not increase", t.shown, t.lineno);
			break;
		}
		out->p[out->n++] = (struct figure_point){ sweep, ll };
		r = 0;
	}
	if (r == 0 && out->n == 0)
		r = error("'%s' has no rows: the fit made no sweep", t.shown);
	tsv_close(&t);
	if (r < 0) {
		figure_trace_release(out);
		return -1;
	}
	out->reseeds_kept = UINT32_MAX;
	json_t *run = run_json(dir);
	if (run) {
		uint64_t v = json_u64_at(run, "fit", "plateau_sweep", 0);
		out->plateau_sweep = v <= UINT32_MAX ? (uint32_t)v : 0;
		v = json_u64_at(run, "fit", "start_kept", 0);
		out->start_kept = v <= UINT32_MAX ? (uint32_t)v : 0;
		v = json_u64_at(run, "parameters", "starts", 0);
		out->starts = v <= UINT32_MAX ? (uint32_t)v : 0;
		v = json_u64_at(run, "fit", "reseeds_kept", UINT32_MAX);
		out->reseeds_kept = v <= UINT32_MAX ? (uint32_t)v : UINT32_MAX;
		json_decref(run);
	}
	return 0;
}

/* One row of k-selection.tsv into p; cols: k, loglik, chosen, sd, folds,
 * grid (the last three may be -1). 1 when the row is the chosen k, 0, or
 * -1 with a message. */
static int kcurve_row(const struct tsv *t, const int *cols, struct figure_kpoint *p)
{
	memset(p, 0, sizeof *p);
	p->folds = 1;
	if (tsv_u32(t, cols[0], &p->k) || tsv_real(t, cols[1], &p->loglik))
		return -1;
	if (p->k == 0)
		return tsv_field_error(t, cols[0], "a k of 1 or more");
	if (cols[3] >= 0 && tsv_real(t, cols[3], &p->sd))
		return -1;
	if (cols[4] >= 0 && tsv_u32(t, cols[4], &p->folds))
		return -1;
	p->added = cols[5] >= 0 && cols[5] < t->nf && !strcmp(t->field[cols[5]], "added");
	if (cols[2] >= t->nf)
		return tsv_field_error(t, cols[2], "yes or no");
	const char *ch = t->field[cols[2]];
	if (strcmp(ch, "yes") && strcmp(ch, "no"))
		return tsv_field_error(t, cols[2], "yes or no");
	return !strcmp(ch, "yes");
}

int figure_read_kcurve(const char *dir, struct figure_kcurve *out)
{
	memset(out, 0, sizeof *out);
	struct tsv t;
	if (tsv_open(&t, dir, "k-selection.tsv",
		     "the held-out scores of each k are written only by a fit with -k auto"))
		return -1;
	int cols[6] = { tsv_col(&t, "k", 1), tsv_col(&t, "heldout_loglik", 1),
			tsv_col(&t, "chosen", 1), tsv_col(&t, "heldout_loglik_sd", 0),
			tsv_col(&t, "folds", 0), tsv_col(&t, "grid", 0) };
	int r = cols[0] < 0 || cols[1] < 0 || cols[2] < 0 ? -1 : 0;
	uint32_t cap = 0;
	while (r == 0 && (r = tsv_next(&t)) == 1) {
		if (grow(&out->p, &cap, out->n, sizeof *out->p)) {
			r = -1;
			break;
		}
		struct figure_kpoint *p = &out->p[out->n];
		int chosen = kcurve_row(&t, cols, p);
		if (chosen < 0) {
			r = -1;
			break;
		}
		if (out->n && p->k <= out->p[out->n - 1].k) {
			r = error("%s:%lu: the k do not increase", t.shown, t.lineno);
			break;
		}
		if (chosen)
			out->chosen = p->k;
		out->n++;
		r = 0;
	}
	if (r == 0 && out->n == 0)
		r = error("'%s' has no rows: no k was scored", t.shown);
	tsv_close(&t);
	if (r < 0)
		figure_kcurve_release(out);
	return r < 0 ? -1 : 0;
}

/* count[v]++ for a value v, growing count past c->max as needed. */
static int count_add(struct figure_counts *c, uint32_t v)
{
	if (!c->count || v > c->max) {
		uint64_t used = c->count ? (uint64_t)c->max + 1 : 0;
		uint64_t want = (uint64_t)v > 2 * used ? v : 2 * used + 1;
		if (want > UINT32_MAX)
			want = UINT32_MAX;
		uint64_t *p = util_realloc(c->count, (size_t)want + 1, sizeof *p);
		if (!p)
			return -1;
		memset(p + used, 0, (size_t)(want + 1 - used) * sizeof *p);
		c->count = p;
		c->max = (uint32_t)want;
	}
	c->count[v]++;
	c->total++;
	return 0;
}

/* Trim c->max down to the largest value present. */
static void count_trim(struct figure_counts *c)
{
	while (c->max > 0 && c->count[c->max] == 0)
		c->max--;
}

/* The counts of a cover read from a file (its n the nodes it names). */
static int counts_of(const struct cover *cv, uint64_t nodes, struct figure_counts *sizes,
		     struct figure_counts *members)
{
	if (sizes) {
		for (uint32_t i = 0; i < cv->k; i++)
			if (count_add(sizes, cover_size(cv, i)))
				return -1;
		count_trim(sizes);
	}
	if (!members)
		return 0;
	uint32_t *per = util_calloc(cv->n ? cv->n : 1, sizeof *per);
	if (!per)
		return -1;
	for (uint64_t e = 0; e < cv->off[cv->k]; e++)
		per[cv->mem[e]]++;
	int rc = 0;
	for (uint32_t u = 0; u < cv->n && !rc; u++)
		rc = count_add(members, per[u]);
	free(per);
	if (rc)
		return -1;
	if (nodes >= cv->n && nodes != UINT64_MAX) {
		members->count[0] += nodes - cv->n;
		members->total += nodes - cv->n;
		members->zero_known = 1;
	}
	count_trim(members);
	return 0;
}

int figure_read_cover(const char *dir, struct names *nodes, struct cover *out)
{
	char path[PATH_CAP];
	struct stat st;
	if (join(path, dir, "memberships.tsv"))
		return -1;
	if (stat(path, &st) != 0 && errno == ENOENT) {
		char d[PATH_CAP];
		return error("'%s' has no memberships.tsv: the communities a fit writes",
			     util_escape(dir, d, sizeof d, 1));
	}
	return cover_read(out, path, nodes);
}

int figure_read_counts(const char *dir, struct figure_counts *sizes,
		       struct figure_counts *members)
{
	if (sizes)
		memset(sizes, 0, sizeof *sizes);
	if (members)
		memset(members, 0, sizeof *members);
	struct names *nodes = names_new(0);
	struct cover cv;
	memset(&cv, 0, sizeof cv);
	if (!nodes || figure_read_cover(dir, nodes, &cv)) {
		names_free(nodes);
		return -1;
	}
	json_t *run = run_json(dir);
	uint64_t n = json_u64_at(run, "graph", "nodes", UINT64_MAX);
	json_decref(run);
	int rc = counts_of(&cv, n, sizes, members);
	cover_release(&cv);
	names_free(nodes);
	if (rc) {
		figure_counts_release(sizes);
		figure_counts_release(members);
	}
	return rc;
}
