/*
 * result: the result folder and the checkpoint.
 *
 * The idea: every file is produced by a fill function that writes into a
 * buffered descriptor (struct wfile) opened on DIR/.NAME.tmp-PID; the
 * descriptor is flushed, fsync()ed and closed with every return value
 * checked, then renamed onto NAME and the folder fsync()ed. Any failure
 * removes the temporary file and leaves the old NAME as it was.
 *
 * result_write() stages all five files (written, synced, closed under
 * their temporary names) before it renames any of them, so a full disk or
 * any write error leaves the old folder whole; then it renames the
 * checkpoint first (it alone holds the strengths) and run.json last, which
 * marks a folder whose files all belong to the same snapshot.
 *
 * The one thing a newcomer gets wrong: a checkpoint is hostile input like
 * any other file. The reader decodes from a bounded cursor that checks
 * every count against the bytes left *before* allocating, then validates
 * with the same functions the writer uses, so the writer can never save a
 * file the reader would refuse.
 *
 * ---- File formats (copied into man/coterie-files.5) ----
 *
 * Text files are TAB-separated with one header line; lines end in LF.
 * Node names are written as the bytes they had in the input file (so
 * UTF-8 when the input was), apart from the escapes below.
 *
 * memberships.tsv   header: node community strength
 *   One row per membership (agm_is_member(): strength >= delta and about
 *   min_links links into the community; after fit --refine, the refined
 *   cover instead, see run.json fit.memberships_from, and then a strength
 *   can be below delta or 0). Rows are grouped by
 *   community in the order of communities.tsv (largest first, ties by id);
 *   within a community, members by decreasing strength (ties by node order
 *   in the graph).
 *   node       the node name. Four bytes are written as C escapes so that
 *              a row is always one line of three fields: TAB as \t,
 *              newline as \n, carriage return as \r, backslash as \\.
 *              Every other byte is written as it is. To read a name back,
 *              replace \t \n \r \\ by the byte they stand for.
 *   community  the community id: the model's column number, 0 .. k-1. Ids
 *              stay the same from sweep to sweep and across a resume; an
 *              id whose column is empty is not listed, so ids can skip.
 *   strength   the affiliation strength F[u][c] (%.6g).
 *
 * communities.tsv   header: community size internal_edges density
 *                           conductance p volume cut
 *   One row per community, largest first (ties by id).
 *   community       the id, as in memberships.tsv
 *   size            members
 *   internal_edges  edges with both ends in the community
 *   density         internal_edges / (size choose 2); 0 below 2 members (%.6g)
 *   conductance     cut / min(volume, 2m - volume); 1 when undefined (%.6g)
 *   p               the AGM link probability p_c, maximum likelihood with
 *                   the memberships fixed (%.9g)
 *   volume          sum of the members' degrees
 *   cut             edges with exactly one end in the community
 *
 * trace.tsv   header: sweep seconds loglik
 *   One row per trace point; sweep 0 is the seeded model.
 *   sweep    sweeps done
 *   seconds  since the fit began, resumes included (%.3f)
 *   loglik   l(F) after the sweep (%.17g, enough digits to read back the
 *            exact double)
 *
 * k-selection.tsv   header: k heldout_loglik heldout_auc sweeps seconds
 *                           chosen
 *   Only with -k auto. One row per k scored, in grid order.
 *   heldout_loglik  log-likelihood of the held-out pairs (%.17g)
 *   heldout_auc     held-out link AUC, ties one half (%.9f; NA if undefined)
 *   sweeps, seconds of that fit
 *   chosen          yes for the k kept (highest heldout_loglik), else no
 *
 * held-out-links.tsv   header: node_a node_b edge probability
 *   Only with --check-links. One row per pair held out of the final fit,
 *   edges first; names escaped as in memberships.tsv; edge 1 or 0;
 *   probability 1 - exp(-(F_a.F_b + qeps)) (%.17g).
 *
 * run.json   one JSON object, keys in this order:
 *   coterie.format    1 (this layout)
 *   command           the command line as typed, or null
 *   graph             path, format, nodes, edges, fingerprint (16 hex
 *                     digits), lines, self_loops, duplicates,
 *                     extra_columns, isolated, directed_input (boolean)
 *   parameters        k, threads, seed (an integer; a decimal string when
 *                     above 2^63 - 1), tol, patience, max_sweeps, epsilon
 *                     (the background actually used), delta and
 *                     min_links (the membership rule), past_plateau (boolean),
 *                     starts, reseed (boolean), k_chosen_by ("given",
 *                     or "held-out likelihood" for -k auto)
 *   fit               status, state, sweeps, plateau_sweep (null before
 *                     the plateau rule fired), seconds, loglik (last
 *                     trace value), agm_loglik, communities (non-empty
 *                     ones), covered_nodes, overlapping_nodes,
 *                     start_kept (null for a resumed fit),
 *                     reseeds_kept, memberships_from ("strengths", or
 *                     "agm refinement" after --refine; agm_loglik and the
 *                     counts describe that cover)
 *   agm_refine        null without --refine; else max_rounds, done (false
 *                     when it did not run; the rest is then null),
 *                     loglik_before, loglik_after, moves_added,
 *                     moves_removed, rounds, converged, seconds
 *   k_selection       null, or for -k auto: criterion ("held-out
 *                     log-likelihood"), chosen, grid (array of k),
 *                     held_out_share, held_out_edges, held_out_non_edges,
 *                     scores (array of objects k, heldout_loglik,
 *                     heldout_auc (null when undefined), sweeps, seconds)
 *   link_check        null, or for --check-links: held_out_share,
 *                     held_out_edges, held_out_non_edges, heldout_loglik,
 *                     heldout_auc
 *   run               wall_seconds, peak_rss_kb (null when unknown)
 *   A number that is not finite is written as null. A string that is
 *   not valid UTF-8 is written with C escapes, in ASCII.
 *
 * checkpoint.cot   binary, every integer and double little-endian
 *   (doubles as their IEEE-754 bit pattern):
 *     magic "COTERIE\x1a" (8 bytes), u32 version (2), u32 reserved (0),
 *     u64 graph fingerprint,
 *     five sections, in this order, each framed as 4 ASCII tag bytes and
 *     a u64 payload length:
 *       "PARM": u32 k, u32 threads, u64 seed, f64 tol, u32 patience,
 *               u32 max_sweeps, f64 epsilon (as given; <= 0 means the
 *               default), u32 past_plateau (0 or 1), u32 starts, u32
 *               no_reseed (0 or 1; format 1 had neither). hold_at_plateau is
 *               how a session waits, not part of the fit: not stored,
 *               read back as 0.
 *       "STAT": u32 sweep, u32 plateau_sweep, u32 state (enum fit_state),
 *               f64 seconds, f64 epsilon (the background in use)
 *       "TRAC": u32 count, then count x (u32 sweep, f64 seconds, f64 loglik)
 *       "GRPH": u32 n, u64 m, n x (u32 length, name bytes), then the m
 *               edges as (u32 u, u32 v) with u < v, sorted by u then v
 *       "STRN": u32 n, u32 k, u64 nnz, (n + 1) x u64 row offsets,
 *               nnz x (u32 community, f64 strength)
 *     then, only for a fit interrupted at the end of a sweep or a periodic
 *     checkpoint taken there, "RSUM" (see
 *     struct fit_savepoint): u32 start, u32 phase, u32 sweep, u32
 *     plateau_sweep, a TRAC and a STRN section (framed as above) of the
 *     start in progress, u32 best_start, and when it is not 0: u32 sweep,
 *     u32 plateau_sweep, u32 refined, u32 state, f64 loglik, a TRAC and a
 *     STRN section of the best earlier start.
 *     u64 FNV-1a checksum of every byte before it.
 *   The reader refuses: a wrong magic, a newer version, a checksum
 *   mismatch, any count larger than the bytes that hold it, names that
 *   repeat or hold a NUL, edges out of order, repeated, with an id >= n or
 *   a self-loop, a graph whose fingerprint differs from the header, and
 *   strengths not in (0, MODEL_FMAX], not sorted, or with a community >= k.
 */
#include "coterie/result.h"
#include "coterie/select.h"

#include <errno.h>
#include <fcntl.h>
#include <inttypes.h>
#include <limits.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/types.h>
#include <unistd.h>

#include <jansson.h>

#include "coterie/agm.h"
#include "coterie/graph.h"
#include "coterie/holdout.h"
#include "coterie/model.h"
#include "coterie/refine.h"
#include "coterie/savepoint.h"
#include "coterie/util.h"

#define CK_MAGIC "COTERIE\x1a"
#define CK_MAGIC_LEN 8
#define CK_HEADER_LEN 24   /* magic, version, reserved, fingerprint */
#define CK_SUM_LEN 8
#define CK_SECTION_HEAD 12 /* tag and u64 length */
#define CK_PARM_LEN_V1 44
#define CK_PARM_LEN 52
#define CK_STAT_LEN 28
#define CK_TRACE_POINT 20
#define CK_ENTRY 12
#define CK_MAX_THREADS 65536u /* a sanity bound on a stored thread count */
#define CK_MAX_STARTS 1000000u /* and on a stored start count */
#define CK_RSUM_HEAD 16      /* start, phase, sweep, plateau_sweep */
#define CK_RSUM_BEST 24      /* best sweep, plateau, refined, state, loglik */

#if JSON_INTEGER_IS_LONG_LONG
#define J_INT_MAX LLONG_MAX
#else
#define J_INT_MAX LONG_MAX
#endif

/* ------------------------------------------------------------------ */
/* Paths */

/* dir + "/" + name, without doubling a trailing slash. Caller frees. */
static char *path_join(const char *dir, const char *name)
{
	size_t dl = strlen(dir), nl = strlen(name);
	int slash = dl > 0 && dir[dl - 1] != '/';
	char *p = util_malloc(dl + (size_t)slash + nl + 1, 1);
	if (!p)
		return NULL;
	memcpy(p, dir, dl);
	if (slash)
		p[dl] = '/';
	memcpy(p + dl + (size_t)slash, name, nl + 1);
	return p;
}

/* Split path into its folder (".", when it has none) and its last part.
 * Both newly allocated; returns 0 or -1. */
static int path_split(const char *path, char **dir, char **base)
{
	const char *slash = strrchr(path, '/');
	*dir = *base = NULL;
	if (!slash) {
		*dir = util_strdup(".");
		*base = util_strdup(path);
	} else {
		size_t dl = (size_t)(slash - path);
		*dir = util_malloc(dl ? dl + 1 : 2, 1);
		if (*dir) {
			if (dl) {
				memcpy(*dir, path, dl);
				(*dir)[dl] = '\0';
			} else {
				strcpy(*dir, "/");
			}
		}
		*base = util_strdup(slash + 1);
	}
	if (!*dir || !*base || !**base) {
		if (*dir && *base)
			error("'%s' names a folder, not a file", path);
		free(*dir);
		free(*base);
		*dir = *base = NULL;
		return -1;
	}
	return 0;
}

/* mkdir -p with mode 0777 (the umask applies). */
static int make_dirs(const char *dir)
{
	struct stat st;
	if (!*dir)
		return error("the result folder name is empty");
	char *p = util_strdup(dir);
	if (!p)
		return -1;
	size_t len = strlen(p);
	for (size_t i = 1; i <= len; i++) {
		if (p[i] != '/' && p[i] != '\0')
			continue;
		if (p[i - 1] == '/')
			continue; /* repeated slash */
		char keep = p[i];
		p[i] = '\0';
		if (mkdir(p, 0777) != 0) {
			int e = errno;
			if (e != EEXIST) {
				error("cannot create folder '%s': %s", p, strerror(e));
				free(p);
				return -1;
			}
			if (stat(p, &st) != 0 || !S_ISDIR(st.st_mode)) {
				error("cannot create folder '%s': '%s' exists and is not a folder",
				      dir, p);
				free(p);
				return -1;
			}
		}
		p[i] = keep;
	}
	free(p);
	return 0;
}

int result_prepare_dir(const char *dir)
{
	struct stat st;
	if (!dir || !*dir)
		return error("the result folder name is empty");
	if (stat(dir, &st) == 0) {
		if (!S_ISDIR(st.st_mode))
			return error("cannot use '%s' as the result folder: it exists and is not a folder",
				     dir);
	} else if (make_dirs(dir) != 0) {
		return -1;
	}
	char name[64];
	snprintf(name, sizeof name, ".coterie-probe-%ld", (long)getpid());
	char *probe = path_join(dir, name);
	if (!probe)
		return -1;
	int fd = open(probe, O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC | O_NOFOLLOW, 0666);
	if (fd < 0 && errno == EEXIST) {
		unlink(probe); /* left by a crashed process with our pid */
		fd = open(probe, O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC | O_NOFOLLOW, 0666);
	}
	if (fd < 0) {
		int e = errno;
		free(probe);
		return error("cannot write to '%s': %s", dir, strerror(e));
	}
	close(fd);
	int rc = 0;
	if (unlink(probe) != 0)
		rc = error("cannot remove '%s': %s", probe, strerror(errno));
	free(probe);
	return rc;
}

/* ------------------------------------------------------------------ */
/* Buffered output with a running checksum */

struct wfile {
	int fd;
	int err;        /* errno of the first failure, 0 if none */
	uint64_t sum;   /* FNV-1a of every byte written */
	size_t len;
	unsigned char buf[1 << 16];
};

static void wf_flush(struct wfile *w)
{
	size_t done = 0;
	while (!w->err && done < w->len) {
		ssize_t k = write(w->fd, w->buf + done, w->len - done);
		if (k < 0) {
			if (errno == EINTR)
				continue;
			w->err = errno;
		} else if (k == 0) {
			w->err = EIO;
		} else {
			done += (size_t)k;
		}
	}
	w->len = 0;
}

static void wf_write(struct wfile *w, const void *data, size_t n)
{
	const unsigned char *p = data;
	w->sum = util_fnv1a(w->sum, p, n);
	while (n > 0 && !w->err) {
		size_t room = sizeof w->buf - w->len;
		size_t k = n < room ? n : room;
		memcpy(w->buf + w->len, p, k);
		w->len += k;
		p += k;
		n -= k;
		if (w->len == sizeof w->buf)
			wf_flush(w);
	}
}

static void wf_printf(struct wfile *w, const char *fmt, ...) COTERIE_PRINTF(2, 3);
static void wf_printf(struct wfile *w, const char *fmt, ...)
{
	char small[256];
	va_list ap;
	va_start(ap, fmt);
	int k = vsnprintf(small, sizeof small, fmt, ap);
	va_end(ap);
	if (k < 0) {
		if (!w->err)
			w->err = EINVAL;
		return;
	}
	if ((size_t)k < sizeof small) {
		wf_write(w, small, (size_t)k);
		return;
	}
	char *big = malloc((size_t)k + 1);
	if (!big) {
		if (!w->err)
			w->err = ENOMEM;
		return;
	}
	va_start(ap, fmt);
	vsnprintf(big, (size_t)k + 1, fmt, ap);
	va_end(ap);
	wf_write(w, big, (size_t)k);
	free(big);
}

static void wf_str(struct wfile *w, const char *s)
{
	wf_write(w, s, strlen(s));
}

/* Little-endian encoders, byte by byte. */
static void wf_u32(struct wfile *w, uint32_t x)
{
	unsigned char b[4];
	for (int i = 0; i < 4; i++)
		b[i] = (unsigned char)(x >> (8 * i));
	wf_write(w, b, 4);
}

static void wf_u64(struct wfile *w, uint64_t x)
{
	unsigned char b[8];
	for (int i = 0; i < 8; i++)
		b[i] = (unsigned char)(x >> (8 * i));
	wf_write(w, b, 8);
}

static void wf_f64(struct wfile *w, double x)
{
	uint64_t bits;
	memcpy(&bits, &x, sizeof bits);
	wf_u64(w, bits);
}

/* A node name for a TSV field: TAB, LF, CR and backslash as C escapes. */
static void wf_tsv_name(struct wfile *w, const char *s)
{
	const char *run = s;
	for (; *s; s++) {
		const char *esc = NULL;
		switch (*s) {
		case '\t': esc = "\\t"; break;
		case '\n': esc = "\\n"; break;
		case '\r': esc = "\\r"; break;
		case '\\': esc = "\\\\"; break;
		default: continue;
		}
		wf_write(w, run, (size_t)(s - run));
		wf_write(w, esc, 2);
		run = s + 1;
	}
	wf_write(w, run, (size_t)(s - run));
}

/* ------------------------------------------------------------------ */
/* Atomic replacement */

typedef int (*fill_fn)(struct wfile *w, const void *arg);

/*
 * Stage path: write it through fill (which reports its own errors and
 * returns -1; I/O errors are collected in w->err and reported here) to
 * DIR/.NAME.tmp-PID, flushed, fsync()ed and closed. On success *tmp_out is
 * that temporary name (caller frees), ready for rename(); on failure it is
 * removed and *tmp_out is NULL.
 */
static int stage(const char *path, fill_fn fill, const void *arg, char **tmp_out)
{
	char *dir, *base;
	*tmp_out = NULL;
	if (path_split(path, &dir, &base) != 0)
		return -1;
	char *tmpname = util_malloc(strlen(base) + 32, 1);
	char *tmp = NULL;
	struct wfile *w = NULL;
	int fd = -1, rc = -1, made = 0;
	if (!tmpname)
		goto out;
	snprintf(tmpname, strlen(base) + 32, ".%s.tmp-%ld", base, (long)getpid());
	tmp = path_join(dir, tmpname);
	w = util_malloc(1, sizeof *w);
	if (!tmp || !w)
		goto out;
	fd = open(tmp, O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC | O_NOFOLLOW, 0666);
	if (fd < 0) {
		error("cannot write '%s': %s", path, strerror(errno));
		goto out;
	}
	made = 1;
	w->fd = fd;
	w->err = 0;
	w->sum = UTIL_FNV_INIT;
	w->len = 0;
	if (fill(w, arg) != 0)
		goto out;
	wf_flush(w);
	if (w->err) {
		error("cannot write '%s': %s", path, strerror(w->err));
		goto out;
	}
	if (fsync(fd) != 0) {
		error("cannot write '%s': %s", path, strerror(errno));
		goto out;
	}
	int cfd = fd;
	fd = -1;
	if (close(cfd) != 0) {
		error("cannot write '%s': %s", path, strerror(errno));
		goto out;
	}
	made = 0;
	*tmp_out = tmp;
	tmp = NULL;
	rc = 0;
out:
	if (fd >= 0)
		close(fd);
	if (made)
		unlink(tmp);
	free(w);
	free(tmp);
	free(tmpname);
	free(dir);
	free(base);
	return rc;
}

/* Rename a staged file onto path; on failure the staged file is removed. */
static int commit(char *tmp, const char *path)
{
	int rc = 0;
	if (rename(tmp, path) != 0) {
		rc = error("cannot replace '%s': %s", path, strerror(errno));
		unlink(tmp);
	}
	free(tmp);
	return rc;
}

/* The folder of path, synced after a rename in it. */
static int sync_dir_of(const char *path)
{
	char *dir, *base;
	if (path_split(path, &dir, &base) != 0)
		return -1;
	int rc = util_sync_dir(dir);
	free(dir);
	free(base);
	return rc;
}

/* Replace path by what fill writes: the old file or the new one is there
 * at every moment, never a part of one. */
static int atomic_write(const char *path, fill_fn fill, const void *arg)
{
	char *tmp;
	if (stage(path, fill, arg, &tmp) || commit(tmp, path))
		return -1;
	return sync_dir_of(path);
}

/* ------------------------------------------------------------------ */
/* Validation shared by the writer and the reader. Each returns NULL when
 * all is well, or a description of the first problem written into why. */

static const char *check_params(const struct fit_params *p, char *why, size_t cap)
{
	if (p->k == 0 || p->k > MODEL_MAX_K)
		snprintf(why, cap, "k is %" PRIu32 ", not between 1 and %u", p->k, MODEL_MAX_K);
	else if (p->threads == 0 || p->threads > CK_MAX_THREADS)
		snprintf(why, cap, "thread count %u is not between 1 and %u", p->threads,
			 CK_MAX_THREADS);
	else if (!isfinite(p->tol) || p->tol < 0)
		snprintf(why, cap, "tolerance %g is not a finite number >= 0", p->tol);
	else if (!isfinite(p->epsilon) || p->epsilon >= 1.0)
		snprintf(why, cap, "background %g is not a finite number below 1", p->epsilon);
	else if (p->past_plateau != 0 && p->past_plateau != 1)
		snprintf(why, cap, "past_plateau is %d, not 0 or 1", p->past_plateau);
	else if (p->starts == 0 || p->starts > CK_MAX_STARTS)
		snprintf(why, cap, "start count %u is not between 1 and %u", p->starts,
			 CK_MAX_STARTS);
	else if (p->no_reseed != 0 && p->no_reseed != 1)
		snprintf(why, cap, "no_reseed is %d, not 0 or 1", p->no_reseed);
	else
		return NULL;
	return why;
}

static const char *check_state(uint32_t sweep, uint32_t plateau_sweep, uint32_t state,
			       double seconds, double epsilon, char *why, size_t cap)
{
	if (plateau_sweep > sweep)
		snprintf(why, cap, "plateau at sweep %" PRIu32 " after the last sweep %" PRIu32,
			 plateau_sweep, sweep);
	else if (state > FIT_FAILED)
		snprintf(why, cap, "unknown fit state %" PRIu32, state);
	else if (!isfinite(seconds) || seconds < 0)
		snprintf(why, cap, "elapsed time %g is not a finite number >= 0", seconds);
	else if (!(epsilon >= 0.0 && epsilon < 1.0))
		snprintf(why, cap, "background %g is not in [0, 1)", epsilon);
	else
		return NULL;
	return why;
}

static const char *check_trace(const struct trace_point *t, uint32_t n, uint32_t sweep,
			       char *why, size_t cap)
{
	for (uint32_t i = 0; i < n; i++) {
		if (i > 0 && t[i].sweep <= t[i - 1].sweep) {
			snprintf(why, cap, "trace point %" PRIu32 " (sweep %" PRIu32
				 ") does not follow sweep %" PRIu32, i, t[i].sweep, t[i - 1].sweep);
			return why;
		}
		if (t[i].sweep > sweep) {
			snprintf(why, cap, "trace point %" PRIu32 " is for sweep %" PRIu32
				 ", after the last sweep %" PRIu32, i, t[i].sweep, sweep);
			return why;
		}
		if (!isfinite(t[i].seconds) || t[i].seconds < 0 || !isfinite(t[i].loglik)) {
			snprintf(why, cap, "trace point %" PRIu32 " has time %g and log-likelihood %g",
				 i, t[i].seconds, t[i].loglik);
			return why;
		}
	}
	return NULL;
}

/* Strengths: shape, offsets, and every entry. colsum is not read. */
static const char *check_strengths(const struct fcsr *F, char *why, size_t cap)
{
	if (F->k == 0 || F->k > MODEL_MAX_K) {
		snprintf(why, cap, "k is %" PRIu32 ", not between 1 and %u", F->k, MODEL_MAX_K);
		return why;
	}
	if (!F->off || (F->off[F->n] > 0 && !F->e)) {
		snprintf(why, cap, "strengths are missing");
		return why;
	}
	if (F->off[0] != 0) {
		snprintf(why, cap, "the first row offset is %" PRIu64 ", not 0", F->off[0]);
		return why;
	}
	for (uint32_t u = 0; u < F->n; u++) {
		/* bounded by the last offset before any entry is looked at: a
		 * later row's offset may be the one that goes back down */
		if (F->off[u + 1] < F->off[u] || F->off[u + 1] > F->off[F->n]) {
			snprintf(why, cap, "row offsets decrease at node %" PRIu32, u);
			return why;
		}
		for (uint64_t i = F->off[u]; i < F->off[u + 1]; i++) {
			uint32_t c = F->e[i].c;
			double v = F->e[i].v;
			if (c >= F->k) {
				snprintf(why, cap, "node %" PRIu32 " has community %" PRIu32
					 " but k is %" PRIu32, u, c, F->k);
				return why;
			}
			if (i > F->off[u] && F->e[i - 1].c >= c) {
				snprintf(why, cap, "the strengths of node %" PRIu32
					 " are not sorted by community", u);
				return why;
			}
			if (!(v > 0.0 && v <= MODEL_FMAX)) {
				snprintf(why, cap, "node %" PRIu32 " has strength %g in community %" PRIu32
					 ", not in (0, %g]", u, v, c, MODEL_FMAX);
				return why;
			}
		}
	}
	return NULL;
}

/* One start's part of a savepoint: a trace ending at its sweep,
 * strengths of n x k. */
static const char *check_part(const struct fit_part *pt, uint32_t n, uint32_t k,
			      const char *what, char *why, size_t cap)
{
	char sub[200];
	const char *bad = NULL;
	if (pt->ntrace == 0 || !pt->trace)
		bad = "its trace is empty";
	else if (pt->plateau_sweep > pt->sweep)
		bad = "its plateau comes after its last sweep";
	else if (pt->trace[pt->ntrace - 1].sweep != pt->sweep)
		bad = "its trace does not end at its last sweep";
	else if ((bad = check_trace(pt->trace, pt->ntrace, pt->sweep, sub, sizeof sub)))
		;
	else if ((bad = check_strengths(&pt->F, sub, sizeof sub)))
		;
	else if (pt->F.n != n || pt->F.k != k)
		bad = "its strengths are not of the graph's shape";
	if (!bad)
		return NULL;
	snprintf(why, cap, "%s: %s", what, bad);
	return why;
}

static const char *check_resume(const struct fit_savepoint *r, uint32_t n,
				const struct fit_params *p, char *why, size_t cap)
{
	const char *bad;
	if (r->start == 0 || r->start > p->starts)
		snprintf(why, cap, "the interrupted start %" PRIu32 " is not between 1 and %u",
			 r->start, p->starts);
	else if (r->phase != FIT_PHASE_CLIMB && r->phase != FIT_PHASE_RESEED)
		snprintf(why, cap, "unknown phase %" PRIu32 " of the interrupted start", r->phase);
	else if (r->best_start >= r->start)
		snprintf(why, cap, "the best start %" PRIu32 " is not before start %" PRIu32,
			 r->best_start, r->start);
	else if ((bad = check_part(&r->cur, n, p->k, "the interrupted start", why, cap)))
		return bad;
	else if (!r->best_start)
		return NULL;
	else if (r->best_state != FIT_LEVELLED && r->best_state != FIT_FINISHED)
		snprintf(why, cap, "the best start ended in state %u, not levelled or finished",
			 (unsigned)r->best_state);
	else if ((bad = check_part(&r->best, n, p->k, "the best start", why, cap)))
		return bad;
	else if (!(r->best_loglik == r->best.trace[r->best.ntrace - 1].loglik))
		snprintf(why, cap, "the best start's log-likelihood is not its trace's last");
	else
		return NULL;
	return why;
}

/* ------------------------------------------------------------------ */
/* The checkpoint writer */

struct ck_args {
	const struct graph *g;
	const struct fit_params *p;
	const struct snapshot *s;
	const struct fit_savepoint *savepoint; /* s->savepoint when it is sound, else NULL */
};

static void wf_section(struct wfile *w, const char *tag, uint64_t len)
{
	wf_write(w, tag, 4);
	wf_u64(w, len);
}

static uint64_t trace_section_len(uint32_t n)
{
	return 4 + (uint64_t)n * CK_TRACE_POINT;
}

static void wf_trace_section(struct wfile *w, const struct trace_point *t, uint32_t n)
{
	wf_section(w, "TRAC", trace_section_len(n));
	wf_u32(w, n);
	for (uint32_t i = 0; i < n; i++) {
		wf_u32(w, t[i].sweep);
		wf_f64(w, t[i].seconds);
		wf_f64(w, t[i].loglik);
	}
}

static uint64_t strn_section_len(const struct fcsr *F)
{
	return 4 + 4 + 8 + ((uint64_t)F->n + 1) * 8 + F->off[F->n] * CK_ENTRY;
}

static void wf_strn_section(struct wfile *w, const struct fcsr *F)
{
	uint64_t nnz = F->off[F->n];
	wf_section(w, "STRN", strn_section_len(F));
	wf_u32(w, F->n);
	wf_u32(w, F->k);
	wf_u64(w, nnz);
	for (uint32_t u = 0; u <= F->n; u++)
		wf_u64(w, F->off[u]);
	for (uint64_t i = 0; i < nnz; i++) {
		wf_u32(w, F->e[i].c);
		wf_f64(w, F->e[i].v);
	}
}

/* The optional RSUM section: where an interrupted fit stands. */
static void wf_resume_section(struct wfile *w, const struct fit_savepoint *r)
{
	uint64_t len = CK_RSUM_HEAD + CK_SECTION_HEAD + trace_section_len(r->cur.ntrace) +
		       CK_SECTION_HEAD + strn_section_len(&r->cur.F) + 4;
	if (r->best_start)
		len += CK_RSUM_BEST + CK_SECTION_HEAD + trace_section_len(r->best.ntrace) +
		       CK_SECTION_HEAD + strn_section_len(&r->best.F);
	wf_section(w, "RSUM", len);
	wf_u32(w, r->start);
	wf_u32(w, r->phase);
	wf_u32(w, r->cur.sweep);
	wf_u32(w, r->cur.plateau_sweep);
	wf_trace_section(w, r->cur.trace, r->cur.ntrace);
	wf_strn_section(w, &r->cur.F);
	wf_u32(w, r->best_start);
	if (r->best_start) {
		wf_u32(w, r->best.sweep);
		wf_u32(w, r->best.plateau_sweep);
		wf_u32(w, r->best_reseeds);
		wf_u32(w, (uint32_t)r->best_state);
		wf_f64(w, r->best_loglik);
		wf_trace_section(w, r->best.trace, r->best.ntrace);
		wf_strn_section(w, &r->best.F);
	}
}

static int fill_checkpoint(struct wfile *w, const void *arg)
{
	const struct ck_args *a = arg;
	const struct graph *g = a->g;
	const struct fit_params *p = a->p;
	const struct snapshot *s = a->s;
	const struct fcsr *F = &s->F;

	wf_write(w, CK_MAGIC, CK_MAGIC_LEN);
	wf_u32(w, RESULT_CHECKPOINT_VERSION);
	wf_u32(w, 0);
	wf_u64(w, graph_fingerprint(g));

	wf_section(w, "PARM", CK_PARM_LEN);
	wf_u32(w, p->k);
	wf_u32(w, p->threads);
	wf_u64(w, p->seed);
	wf_f64(w, p->tol);
	wf_u32(w, p->patience);
	wf_u32(w, p->max_sweeps);
	wf_f64(w, p->epsilon);
	wf_u32(w, (uint32_t)p->past_plateau);
	wf_u32(w, p->starts);
	wf_u32(w, (uint32_t)p->no_reseed);

	wf_section(w, "STAT", CK_STAT_LEN);
	wf_u32(w, s->sweep);
	wf_u32(w, s->plateau_sweep);
	wf_u32(w, (uint32_t)s->state);
	wf_f64(w, s->seconds);
	wf_f64(w, s->epsilon);

	wf_trace_section(w, s->trace, s->ntrace);

	uint64_t glen = 4 + 8 + (uint64_t)g->n * 4 + g->m * 8;
	for (uint32_t u = 0; u < g->n; u++)
		glen += strlen(graph_name(g, u));
	wf_section(w, "GRPH", glen);
	wf_u32(w, g->n);
	wf_u64(w, g->m);
	for (uint32_t u = 0; u < g->n; u++) {
		size_t len = strlen(graph_name(g, u));
		wf_u32(w, (uint32_t)len);
		wf_write(w, graph_name(g, u), len);
	}
	uint64_t written = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++)
			if (g->adj[i] > u) {
				wf_u32(w, u);
				wf_u32(w, g->adj[i]);
				written++;
			}
	if (written != g->m)
		return error("cannot write checkpoint: the graph lists %" PRIu64
			     " edges but holds %" PRIu64, g->m, written);

	wf_strn_section(w, F);
	if (a->savepoint)
		wf_resume_section(w, a->savepoint);

	wf_u64(w, w->sum);
	return 0;
}

/* Refuse to save what the reader would refuse: 0 or -1. A savepoint
 * the reader would refuse is left out with a warning rather than losing
 * the save (*resume says which). */
static int checkpoint_ok(const char *path, const struct graph *g, const struct fit_params *p,
			 const struct snapshot *s, const struct fit_savepoint **resume)
{
	char why[256];
	const char *bad = NULL;
	if (s->F.n != g->n)
		return error("cannot write checkpoint '%s': the strengths have %" PRIu32
			     " rows for a graph of %" PRIu32 " nodes", path, s->F.n, g->n);
	if (s->F.k != p->k)
		return error("cannot write checkpoint '%s': the strengths have %" PRIu32
			     " columns but k is %" PRIu32, path, s->F.k, p->k);
	if (s->ntrace > 0 && !s->trace)
		return error("cannot write checkpoint '%s': the trace is missing", path);
	for (uint32_t u = 0; u < g->n && !bad; u++)
		if (strlen(graph_name(g, u)) > UINT32_MAX)
			bad = "a node name is longer than 4 GiB";
	if (!bad)
		bad = check_params(p, why, sizeof why);
	if (!bad)
		bad = check_state(s->sweep, s->plateau_sweep, (uint32_t)s->state, s->seconds,
				  s->epsilon, why, sizeof why);
	if (!bad)
		bad = check_trace(s->trace, s->ntrace, s->sweep, why, sizeof why);
	if (!bad)
		bad = check_strengths(&s->F, why, sizeof why);
	if (bad)
		return error("cannot write checkpoint '%s': %s", path, bad);
	*resume = s->savepoint;
	if (s->savepoint && (bad = check_resume(s->savepoint, g->n, p, why, sizeof why))) {
		warning("'%s' is saved without its savepoint (%s): a resumed fit goes on as "
			"one start", path, bad);
		*resume = NULL;
	}
	return 0;
}

int result_write_checkpoint(const char *path, const struct graph *g,
			    const struct fit_params *p, const struct snapshot *s)
{
	struct ck_args a = { g, p, s, NULL };
	if (checkpoint_ok(path, g, p, s, &a.savepoint))
		return -1;
	return atomic_write(path, fill_checkpoint, &a);
}

/* ------------------------------------------------------------------ */
/* The checkpoint reader */

/* A cursor over bytes that are all in memory; every take is bounded. */
struct rd {
	const unsigned char *p;
	size_t left;
};

static int rd_take(struct rd *r, size_t n, const unsigned char **out)
{
	if (n > r->left)
		return -1;
	*out = r->p;
	r->p += n;
	r->left -= n;
	return 0;
}

static uint32_t dec_u32(const unsigned char *b)
{
	uint32_t x = 0;
	for (int i = 3; i >= 0; i--)
		x = (x << 8) | b[i];
	return x;
}

static uint64_t dec_u64(const unsigned char *b)
{
	uint64_t x = 0;
	for (int i = 7; i >= 0; i--)
		x = (x << 8) | b[i];
	return x;
}

static double dec_f64(const unsigned char *b)
{
	uint64_t bits = dec_u64(b);
	double x;
	memcpy(&x, &bits, sizeof x);
	return x;
}

/* Readers for fields whose space the caller has checked (against the
 * section length, or a count against r->left): running short here is a
 * bug in this file, not a damaged checkpoint. */
static const unsigned char *rd_must(struct rd *r, size_t n)
{
	const unsigned char *b;
	if (rd_take(r, n, &b))
		BUG("checkpoint reader overran its bounds (%zu > %zu)", n, r->left);
	return b;
}

static uint32_t rd_u32(struct rd *r)
{
	return dec_u32(rd_must(r, 4));
}

static uint64_t rd_u64(struct rd *r)
{
	return dec_u64(rd_must(r, 8));
}

static double rd_f64(struct rd *r)
{
	return dec_f64(rd_must(r, 8));
}

/* Every failure after the checksum goes through here. */
static int damaged(const char *path, const char *fmt, ...) COTERIE_PRINTF(2, 3);
static int damaged(const char *path, const char *fmt, ...)
{
	char msg[512];
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(msg, sizeof msg, fmt, ap);
	va_end(ap);
	return error("%s is damaged: %s", path, msg);
}

/* Open the next section, which must carry tag; sec covers its payload. */
static int rd_section(const char *path, struct rd *r, const char *tag, struct rd *sec)
{
	const unsigned char *b;
	if (rd_take(r, CK_SECTION_HEAD, &b))
		return damaged(path, "the '%s' section is missing", tag);
	if (memcmp(b, tag, 4) != 0)
		return damaged(path, "expected the '%s' section", tag);
	uint64_t len = dec_u64(b + 4);
	if (len > r->left)
		return damaged(path, "the '%s' section claims %" PRIu64 " bytes, %zu are left",
			       tag, len, r->left);
	sec->p = r->p;
	sec->left = (size_t)len;
	r->p += len;
	r->left -= (size_t)len;
	return 0;
}

static int rd_section_end(const char *path, const struct rd *sec, const char *tag)
{
	if (sec->left != 0)
		return damaged(path, "the '%s' section has %zu bytes too many", tag, sec->left);
	return 0;
}

/* Slurp a regular file. */
static int read_whole(const char *path, unsigned char **data, size_t *size)
{
	*data = NULL;
	*size = 0;
	/* O_NONBLOCK: a FIFO put where the checkpoint should be would block
	 * open() until someone writes to it; it is refused below instead */
	int fd = open(path, O_RDONLY | O_CLOEXEC | O_NONBLOCK);
	if (fd < 0)
		return error("cannot open '%s': %s", path, strerror(errno));
	struct stat st;
	if (fstat(fd, &st) != 0) {
		int e = errno;
		close(fd);
		return error("cannot read '%s': %s", path, strerror(e));
	}
	if (!S_ISREG(st.st_mode)) {
		close(fd);
		return error("cannot read '%s': not a regular file", path);
	}
	if (st.st_size < CK_HEADER_LEN + CK_SUM_LEN) {
		close(fd);
		return error("%s is not a coterie checkpoint (only %lld bytes)", path,
			     (long long)st.st_size);
	}
	if ((uintmax_t)st.st_size > (uintmax_t)(SIZE_MAX / 2)) {
		close(fd);
		return error("%s is too large to be read (%lld bytes)", path,
			     (long long)st.st_size);
	}
	size_t n = (size_t)st.st_size;
	unsigned char *buf = util_malloc(n, 1);
	if (!buf) {
		close(fd);
		return -1;
	}
	size_t got = 0;
	while (got < n) {
		ssize_t k = read(fd, buf + got, n - got);
		if (k < 0 && errno == EINTR)
			continue;
		if (k < 0) {
			int e = errno;
			free(buf);
			close(fd);
			return error("cannot read '%s': %s", path, strerror(e));
		}
		if (k == 0)
			break;
		got += (size_t)k;
	}
	close(fd);
	if (got != n) {
		free(buf);
		return error("cannot read '%s': it changed while being read", path);
	}
	*data = buf;
	*size = n;
	return 0;
}

static int cmp_name(const void *a, const void *b)
{
	return strcmp(*(char *const *)a, *(char *const *)b);
}

/* The GRPH section: names and edges, rebuilt into a graph. */
static int read_graph(const char *path, struct rd *sec, uint64_t fingerprint,
		      struct graph **out)
{
	uint32_t n;
	uint64_t m;
	char why[300];
	*out = NULL;
	if (sec->left < 12)
		return damaged(path, "the graph section is too short");
	n = rd_u32(sec);
	m = rd_u64(sec);
	if (n >= UINT32_MAX)
		return damaged(path, "the graph has %" PRIu32 " nodes", n);
	/* each name takes at least its 4-byte length, each edge 8 bytes */
	if (n > sec->left / 4 || m > (sec->left - (size_t)n * 4) / 8)
		return damaged(path, "the graph claims %" PRIu32 " nodes and %" PRIu64
			       " edges in %zu bytes", n, m, sec->left);

	/* names: lengths first, to size one block for all of them */
	struct rd walk = *sec;
	size_t total = 0;
	for (uint32_t u = 0; u < n; u++) {
		const unsigned char *b;
		if (walk.left < 4)
			return damaged(path, "the name of node %" PRIu32 " runs past the section", u);
		uint32_t len = rd_u32(&walk);
		if (rd_take(&walk, len, &b))
			return damaged(path, "the name of node %" PRIu32 " runs past the section", u);
		if (memchr(b, '\0', len))
			return damaged(path, "the name of node %" PRIu32 " holds a NUL byte", u);
		total += (size_t)len + 1;
	}
	if (m > walk.left / 8)
		return damaged(path, "the graph claims %" PRIu64 " edges in %zu bytes", m, walk.left);

	char *block = util_malloc(total ? total : 1, 1);
	char **names = util_malloc(n, sizeof *names);
	char **sorted = util_malloc(n, sizeof *sorted);
	uint32_t *pairs = util_malloc((size_t)m * 2, sizeof *pairs);
	struct graph *g = NULL;
	int rc = -1;
	if (!block || !names || !sorted || !pairs)
		goto out;
	size_t o = 0;
	for (uint32_t u = 0; u < n; u++) {
		uint32_t len = rd_u32(sec);
		const unsigned char *b = rd_must(sec, len);
		memcpy(block + o, b, len);
		block[o + len] = '\0';
		names[u] = sorted[u] = block + o;
		o += (size_t)len + 1;
	}
	if (n > 1)
		qsort(sorted, n, sizeof *sorted, cmp_name);
	for (uint32_t u = 1; u < n; u++)
		if (strcmp(sorted[u - 1], sorted[u]) == 0) {
			damaged(path, "node name '%s' is given twice",
				util_escape(sorted[u], why, sizeof why, 0));
			goto out;
		}

	uint32_t pu = 0, pv = 0;
	for (uint64_t i = 0; i < m; i++) {
		uint32_t u = rd_u32(sec);
		uint32_t v = rd_u32(sec);
		if (u >= n || v >= n) {
			damaged(path, "edge %" PRIu64 " names node %" PRIu32 " of %" PRIu32, i,
				u >= n ? u : v, n);
			goto out;
		}
		if (u == v) {
			damaged(path, "edge %" PRIu64 " is a self-loop on node %" PRIu32, i, u);
			goto out;
		}
		if (u > v) {
			damaged(path, "edge %" PRIu64 " is stored as %" PRIu32 "-%" PRIu32
				", the larger id first", i, u, v);
			goto out;
		}
		if (i > 0 && (u < pu || (u == pu && v <= pv))) {
			damaged(path, "edge %" PRIu64 " (%" PRIu32 "-%" PRIu32
				") is out of order or repeated", i, u, v);
			goto out;
		}
		pairs[2 * i] = u;
		pairs[2 * i + 1] = v;
		pu = u;
		pv = v;
	}
	if (rd_section_end(path, sec, "GRPH"))
		goto out;

	g = graph_from_pairs(n, pairs, m, (const char *const *)names);
	if (!g) {
		error("%s: cannot rebuild the graph", path);
		goto out;
	}
	if (g->n != n || g->m != m) {
		damaged(path, "the graph rebuilt has %" PRIu32 " nodes and %" PRIu64
			" edges, the file lists %" PRIu32 " and %" PRIu64, g->n, g->m, n, m);
		goto out;
	}
	uint64_t fp = graph_fingerprint(g);
	if (fp != fingerprint) {
		damaged(path, "the graph's fingerprint is %016" PRIx64 ", the header says %016" PRIx64,
			fp, fingerprint);
		goto out;
	}
	/* the graph came from the checkpoint, not from "(pairs)" */
	char *src = util_strdup(path);
	if (!src)
		goto out;
	free(g->source);
	g->source = src;
	*out = g;
	g = NULL;
	rc = 0;
out:
	graph_free(g);
	free(pairs);
	free(sorted);
	free(names);
	free(block);
	return rc;
}

/* The STRN section, into F (allocated here). */
static int read_strengths(const char *path, struct rd *sec, struct fcsr *F)
{
	uint32_t n, k;
	uint64_t nnz;
	if (sec->left < 16)
		return damaged(path, "the strengths section is too short");
	n = rd_u32(sec);
	k = rd_u32(sec);
	nnz = rd_u64(sec);
	if (k == 0 || k > MODEL_MAX_K)
		return damaged(path, "the strengths have %" PRIu32 " columns, not 1 to %u", k,
			       MODEL_MAX_K);
	if ((uint64_t)n + 1 > sec->left / 8 ||
	    nnz > (sec->left - ((size_t)n + 1) * 8) / CK_ENTRY)
		return damaged(path, "the strengths claim %" PRIu32 " rows and %" PRIu64
			       " entries in %zu bytes", n, nnz, sec->left);
	F->n = n;
	F->k = k;
	F->off = util_malloc((size_t)n + 1, sizeof *F->off);
	F->e = util_malloc((size_t)nnz, sizeof *F->e);
	F->colsum = util_calloc(k, sizeof *F->colsum);
	if (!F->off || !F->e || !F->colsum)
		return -1;
	for (uint32_t u = 0; u <= n; u++)
		F->off[u] = rd_u64(sec);
	if (F->off[n] != nnz)
		return damaged(path, "the last row offset is %" PRIu64 ", not %" PRIu64, F->off[n],
			       nnz);
	for (uint64_t i = 0; i < nnz; i++) {
		F->e[i].c = rd_u32(sec);
		F->e[i].v = rd_f64(sec);
	}
	if (rd_section_end(path, sec, "STRN"))
		return -1;
	char why[256];
	const char *bad = check_strengths(F, why, sizeof why);
	if (bad)
		return damaged(path, "%s", bad);
	for (uint64_t i = 0; i < nnz; i++)
		F->colsum[F->e[i].c] += F->e[i].v;
	return 0;
}

/* The next section, a TRAC one, into a new array. */
static int read_trace(const char *path, struct rd *r, struct trace_point **out, uint32_t *nout)
{
	struct rd sec;
	if (rd_section(path, r, "TRAC", &sec))
		return -1;
	uint32_t nt;
	if (sec.left < 4)
		return damaged(path, "the trace section is too short");
	nt = rd_u32(&sec);
	if (nt > sec.left / CK_TRACE_POINT)
		return damaged(path, "the trace claims %" PRIu32 " points in %zu bytes", nt,
			       sec.left);
	*out = util_malloc(nt ? nt : 1, sizeof **out);
	if (!*out)
		return -1;
	*nout = nt;
	for (uint32_t i = 0; i < nt; i++) {
		(*out)[i].sweep = rd_u32(&sec);
		(*out)[i].seconds = rd_f64(&sec);
		(*out)[i].loglik = rd_f64(&sec);
	}
	return rd_section_end(path, &sec, "TRAC");
}

/* A part of the RSUM section: a TRAC and a STRN section (sweep and
 * plateau_sweep are read by the caller). */
static int read_part(const char *path, struct rd *r, struct fit_part *pt)
{
	struct rd sec;
	if (read_trace(path, r, &pt->trace, &pt->ntrace))
		return -1;
	if (rd_section(path, r, "STRN", &sec))
		return -1;
	return read_strengths(path, &sec, &pt->F);
}

static int read_resume(const char *path, struct rd *sec, struct checkpoint *ck)
{
	struct fit_savepoint *r = util_calloc(1, sizeof *r);
	if (!r)
		return -1;
	ck->savepoint = r;
	if (sec->left < CK_RSUM_HEAD)
		return damaged(path, "the resume section is too short");
	r->start = rd_u32(sec);
	r->phase = rd_u32(sec);
	r->cur.sweep = rd_u32(sec);
	r->cur.plateau_sweep = rd_u32(sec);
	if (read_part(path, sec, &r->cur))
		return -1;
	if (sec->left < 4)
		return damaged(path, "the resume section is too short");
	r->best_start = rd_u32(sec);
	if (r->best_start) {
		if (sec->left < CK_RSUM_BEST)
			return damaged(path, "the resume section is too short");
		r->best.sweep = rd_u32(sec);
		r->best.plateau_sweep = rd_u32(sec);
		r->best_reseeds = rd_u32(sec);
		uint32_t state = rd_u32(sec);
		if (state > FIT_FAILED)
			return damaged(path, "unknown fit state %" PRIu32, state);
		r->best_state = (enum fit_state)state;
		r->best_loglik = rd_f64(sec);
		if (read_part(path, sec, &r->best))
			return -1;
	}
	if (rd_section_end(path, sec, "RSUM"))
		return -1;
	char why[256];
	const char *bad = check_resume(r, ck->graph->n, &ck->params, why, sizeof why);
	if (bad)
		return damaged(path, "%s", bad);
	return 0;
}

static int read_body(const char *path, struct rd *body, uint32_t version,
		     struct checkpoint *ck)
{
	struct rd sec;
	char why[256];
	const char *bad;

	if (rd_section(path, body, "PARM", &sec))
		return -1;
	size_t plen = version == 1 ? CK_PARM_LEN_V1 : CK_PARM_LEN;
	if (sec.left != plen)
		return damaged(path, "the parameters take %zu bytes, not %zu", sec.left, plen);
	uint32_t threads, pp, starts = 1, norefine = 1;
	struct fit_params *p = &ck->params;
	p->k = rd_u32(&sec);
	threads = rd_u32(&sec);
	p->seed = rd_u64(&sec);
	p->tol = rd_f64(&sec);
	p->patience = rd_u32(&sec);
	p->max_sweeps = rd_u32(&sec);
	p->epsilon = rd_f64(&sec);
	pp = rd_u32(&sec);
	if (version >= 2) {
		starts = rd_u32(&sec);
		norefine = rd_u32(&sec);
	}
	if (threads == 0 || threads > CK_MAX_THREADS || pp > 1 || starts == 0 ||
	    starts > CK_MAX_STARTS || norefine > 1) {
		return damaged(path, "threads %" PRIu32 ", past_plateau %" PRIu32 ", starts %" PRIu32
			       " or no_reseed %" PRIu32 " out of range", threads, pp, starts, norefine);
	}
	p->threads = threads;
	p->past_plateau = (int)pp;
	/* format 1 did not store them; its fits resumed as one start, unrefined */
	p->starts = starts;
	p->no_reseed = (int)norefine;
	if ((bad = check_params(p, why, sizeof why)))
		return damaged(path, "%s", bad);

	if (rd_section(path, body, "STAT", &sec))
		return -1;
	if (sec.left != CK_STAT_LEN)
		return damaged(path, "the state takes %zu bytes, not %d", sec.left, CK_STAT_LEN);
	uint32_t state;
	ck->sweep = rd_u32(&sec);
	ck->plateau_sweep = rd_u32(&sec);
	state = rd_u32(&sec);
	ck->seconds = rd_f64(&sec);
	ck->epsilon = rd_f64(&sec);
	if ((bad = check_state(ck->sweep, ck->plateau_sweep, state, ck->seconds, ck->epsilon,
			       why, sizeof why)))
		return damaged(path, "%s", bad);
	ck->state = (enum fit_state)state;

	if (read_trace(path, body, &ck->trace, &ck->ntrace))
		return -1;
	if ((bad = check_trace(ck->trace, ck->ntrace, ck->sweep, why, sizeof why)))
		return damaged(path, "%s", bad);

	if (rd_section(path, body, "GRPH", &sec))
		return -1;
	if (read_graph(path, &sec, ck->fingerprint, &ck->graph))
		return -1;

	if (rd_section(path, body, "STRN", &sec))
		return -1;
	if (read_strengths(path, &sec, &ck->F))
		return -1;
	if (ck->F.n != ck->graph->n)
		return damaged(path, "the strengths have %" PRIu32 " rows for %" PRIu32 " nodes",
			       ck->F.n, ck->graph->n);
	if (ck->F.k != p->k)
		return damaged(path, "the strengths have %" PRIu32 " columns but k is %" PRIu32,
			       ck->F.k, p->k);
	if (version >= 2 && body->left >= CK_SECTION_HEAD && !memcmp(body->p, "RSUM", 4)) {
		if (rd_section(path, body, "RSUM", &sec) || read_resume(path, &sec, ck))
			return -1;
	}
	if (body->left != 0)
		return damaged(path, "%zu unexpected bytes after the last section", body->left);
	return 0;
}

int result_read_checkpoint(const char *path, struct checkpoint *out)
{
	unsigned char *data;
	size_t size;
	memset(out, 0, sizeof *out);
	if (read_whole(path, &data, &size))
		return -1;
	int rc = -1;
	if (memcmp(data, CK_MAGIC, CK_MAGIC_LEN) != 0) {
		error("%s is not a coterie checkpoint", path);
		goto out;
	}
	uint32_t version = dec_u32(data + 8);
	if (version > RESULT_CHECKPOINT_VERSION) {
		error("%s was made by a newer coterie (checkpoint format %" PRIu32
		      "; this one reads format %u)", path, version, RESULT_CHECKPOINT_VERSION);
		goto out;
	}
	if (util_fnv1a(UTIL_FNV_INIT, data, size - CK_SUM_LEN) != dec_u64(data + size - CK_SUM_LEN)) {
		error("%s is damaged (checksum mismatch)", path);
		goto out;
	}
	if (version == 0) {
		damaged(path, "unknown checkpoint format 0");
		goto out;
	}
	if (dec_u32(data + 12) != 0) {
		damaged(path, "the reserved header field is not 0");
		goto out;
	}
	out->fingerprint = dec_u64(data + 16);
	struct rd body = { data + CK_HEADER_LEN, size - CK_HEADER_LEN - CK_SUM_LEN };
	rc = read_body(path, &body, version, out);
out:
	free(data);
	if (rc)
		checkpoint_release(out);
	return rc;
}

void checkpoint_release(struct checkpoint *ck)
{
	if (!ck)
		return;
	graph_free(ck->graph);
	free(ck->trace);
	fcsr_release(&ck->F);
	fit_savepoint_free(ck->savepoint);
	memset(ck, 0, sizeof *ck);
}

void checkpoint_origin(const struct checkpoint *ck, struct fit_origin *o)
{
	memset(o, 0, sizeof *o);
	o->F = &ck->F;
	o->trace = ck->trace;
	o->ntrace = ck->ntrace;
	o->sweep = ck->sweep;
	o->seconds = ck->seconds;
	o->plateau_sweep = ck->plateau_sweep;
	o->savepoint = ck->savepoint;
}

/* ------------------------------------------------------------------ */
/* Text files */

struct tsv_args {
	const struct graph *g;
	const struct snapshot *s;
};

struct ranked {
	double strength;
	uint32_t node;
};

static int cmp_ranked(const void *a, const void *b)
{
	const struct ranked *x = a, *y = b;
	if (x->strength != y->strength)
		return x->strength > y->strength ? -1 : 1;
	return (x->node > y->node) - (x->node < y->node);
}

static int fill_memberships(struct wfile *w, const void *arg)
{
	const struct tsv_args *a = arg;
	const struct agm *agm = &a->s->agm;
	const struct cover *cv = &agm->cover;
	uint32_t most = 0;
	for (uint32_t i = 0; i < cv->k; i++)
		if (cover_size(cv, i) > most)
			most = cover_size(cv, i);
	struct ranked *r = util_malloc(most, sizeof *r);
	if (!r)
		return -1;
	wf_str(w, "node\tcommunity\tstrength\n");
	for (uint32_t i = 0; i < cv->k && !w->err; i++) {
		uint32_t size = cover_size(cv, i);
		for (uint32_t j = 0; j < size; j++) {
			uint64_t at = cv->off[i] + j;
			r[j].node = cv->mem[at];
			r[j].strength = agm->strength ? agm->strength[at] : 1.0;
		}
		qsort(r, size, sizeof *r, cmp_ranked);
		for (uint32_t j = 0; j < size; j++) {
			wf_tsv_name(w, graph_name(a->g, r[j].node));
			wf_printf(w, "\t%" PRIu32 "\t%.6g\n", agm->comms[i].id, r[j].strength);
		}
	}
	free(r);
	return 0;
}

static int fill_communities(struct wfile *w, const void *arg)
{
	const struct tsv_args *a = arg;
	const struct agm *agm = &a->s->agm;
	wf_str(w, "community\tsize\tinternal_edges\tdensity\tconductance\tp\tvolume\tcut\n");
	for (uint32_t i = 0; i < agm->cover.k && !w->err; i++) {
		const struct agm_community *c = &agm->comms[i];
		wf_printf(w, "%" PRIu32 "\t%" PRIu32 "\t%" PRIu64 "\t%.6g\t%.6g\t%.9g\t%" PRIu64
			  "\t%" PRIu64 "\n", c->id, c->size, c->internal_edges, c->density,
			  c->conductance, c->p, c->volume, c->cut);
	}
	return 0;
}

static int fill_trace(struct wfile *w, const void *arg)
{
	const struct tsv_args *a = arg;
	wf_str(w, "sweep\tseconds\tloglik\n");
	for (uint32_t i = 0; i < a->s->ntrace && !w->err; i++) {
		const struct trace_point *t = &a->s->trace[i];
		wf_printf(w, "%" PRIu32 "\t%.3f\t%.17g\n", t->sweep, t->seconds, t->loglik);
	}
	return 0;
}

static int fill_selection(struct wfile *w, const void *arg)
{
	const struct select_result *a = arg;
	wf_str(w, "k\theldout_loglik\theldout_auc\tsweeps\tseconds\tchosen\n");
	for (uint32_t i = 0; i < a->npts && !w->err; i++) {
		const struct select_point *pt = &a->pts[i];
		wf_printf(w, "%" PRIu32 "\t%.17g\t", pt->k, pt->heldout);
		if (isfinite(pt->auc))
			wf_printf(w, "%.9f", pt->auc);
		else
			wf_str(w, "NA");
		wf_printf(w, "\t%" PRIu32 "\t%.3f\t%s\n", pt->sweeps, pt->seconds,
			  pt->k == a->best ? "yes" : "no");
	}
	return 0;
}

int result_write_selection(const char *dir, const struct select_result *sel)
{
	if (make_dirs(dir))
		return -1;
	char *path = path_join(dir, RESULT_SELECTION);
	if (!path)
		return -1;
	int rc = atomic_write(path, fill_selection, sel);
	free(path);
	return rc;
}

struct links_args {
	const struct graph *g;
	const struct holdout *h;
	const struct fcsr *F;
	double qeps;
};

static void fill_link_rows(struct wfile *w, const struct links_args *a, const uint32_t *pairs,
			   uint64_t n, int edge)
{
	const struct fcsr *F = a->F;
	for (uint64_t i = 0; i < n && !w->err; i++) {
		uint32_t u = pairs[2 * i], v = pairs[2 * i + 1];
		double x = model_dot(F->e + F->off[u], (uint32_t)(F->off[u + 1] - F->off[u]),
				     F->e + F->off[v], (uint32_t)(F->off[v + 1] - F->off[v]));
		wf_tsv_name(w, graph_name(a->g, u));
		wf_str(w, "\t");
		wf_tsv_name(w, graph_name(a->g, v));
		wf_printf(w, "\t%d\t%.17g\n", edge, -expm1(-(x + a->qeps)));
	}
}

static int fill_links(struct wfile *w, const void *arg)
{
	const struct links_args *a = arg;
	wf_str(w, "node_a\tnode_b\tedge\tprobability\n");
	fill_link_rows(w, a, a->h->edges, a->h->nedges, 1);
	fill_link_rows(w, a, a->h->non, a->h->nnon, 0);
	return 0;
}

int result_write_links(const char *dir, const struct graph *g, const struct holdout *h,
		       const struct fcsr *F, double epsilon)
{
	if (F->n != g->n)
		return error("cannot write held-out links: %u rows for %u nodes", F->n, g->n);
	if (make_dirs(dir))
		return -1;
	char *path = path_join(dir, RESULT_LINKS);
	if (!path)
		return -1;
	struct links_args a = { g, h, F, model_qeps(epsilon) };
	int rc = atomic_write(path, fill_links, &a);
	free(path);
	return rc;
}

/* ------------------------------------------------------------------ */
/* run.json */

static json_t *j_real(double x)
{
	return isfinite(x) ? json_real(x) : json_null();
}

static json_t *j_uint(uint64_t x)
{
	return x <= (uint64_t)J_INT_MAX ? json_integer((json_int_t)x) : NULL;
}

/* A string, or its ASCII escape when it is not valid UTF-8; null for NULL. */
static json_t *j_str(const char *s)
{
	if (!s)
		return json_null();
	json_t *j = json_string(s);
	if (j)
		return j;
	char *esc = util_escape_dup(s, 1);
	if (!esc)
		return NULL;
	j = json_string(esc);
	free(esc);
	return j;
}

static void j_set(json_t *o, const char *key, json_t *v, int *bad)
{
	if (json_object_set_new(o, key, v) != 0)
		*bad = 1;
}

/* run.json's k_selection: the -k auto search. */
static json_t *j_selection(const struct select_result *sel)
{
	int bad = 0;
	json_t *o = json_object(), *grid = json_array(), *scores = json_array();
	if (!o || !grid || !scores) {
		json_decref(o);
		json_decref(grid);
		json_decref(scores);
		return NULL;
	}
	j_set(o, "criterion", json_string("held-out log-likelihood"), &bad);
	j_set(o, "chosen", j_uint(sel->best), &bad);
	for (uint32_t i = 0; i < sel->ngrid; i++)
		if (json_array_append_new(grid, j_uint(sel->grid[i])))
			bad = 1;
	j_set(o, "grid", grid, &bad);
	j_set(o, "held_out_share", j_real(sel->share), &bad);
	j_set(o, "held_out_edges", j_uint(sel->held_edges), &bad);
	j_set(o, "held_out_non_edges", j_uint(sel->held_non_edges), &bad);
	for (uint32_t i = 0; i < sel->npts; i++) {
		const struct select_point *pt = &sel->pts[i];
		json_t *e = json_object();
		if (!e) {
			bad = 1;
			break;
		}
		j_set(e, "k", j_uint(pt->k), &bad);
		j_set(e, "heldout_loglik", j_real(pt->heldout), &bad);
		j_set(e, "heldout_auc", j_real(pt->auc), &bad);
		j_set(e, "sweeps", j_uint(pt->sweeps), &bad);
		j_set(e, "seconds", j_real(pt->seconds), &bad);
		if (json_array_append_new(scores, e))
			bad = 1;
	}
	j_set(o, "scores", scores, &bad);
	if (bad) {
		json_decref(o);
		return NULL;
	}
	return o;
}

/* run.json's link_check: the held-out check of the final model. */
static json_t *j_links(const struct result_links *l)
{
	int bad = 0;
	json_t *o = json_object();
	if (!o)
		return NULL;
	j_set(o, "held_out_share", j_real(l->share), &bad);
	j_set(o, "held_out_edges", j_uint(l->held_edges), &bad);
	j_set(o, "held_out_non_edges", j_uint(l->held_non_edges), &bad);
	j_set(o, "heldout_loglik", j_real(l->heldout_loglik), &bad);
	j_set(o, "heldout_auc", j_real(l->auc), &bad);
	if (bad) {
		json_decref(o);
		return NULL;
	}
	return o;
}

static char *run_json(const struct graph *g, const struct fit_params *p,
		      const struct snapshot *s, const struct result_meta *meta)
{
	int bad = 0;
	json_t *root = json_object();
	json_t *jc = json_object(), *jg = json_object(), *jp = json_object();
	json_t *jf = json_object(), *jr = json_object();
	char hex[17];
	if (!root) {
		json_decref(jc);
		json_decref(jg);
		json_decref(jp);
		json_decref(jf);
		json_decref(jr);
		error("out of memory building run.json");
		return NULL;
	}

	j_set(jc, "format", json_integer(1), &bad);
	j_set(root, "coterie", jc, &bad);
	j_set(root, "command", j_str(meta ? meta->command_line : NULL), &bad);

	const struct graph_report *r = &g->report;
	snprintf(hex, sizeof hex, "%016" PRIx64, graph_fingerprint(g));
	j_set(jg, "path", j_str(meta && meta->graph_path ? meta->graph_path : g->source), &bad);
	j_set(jg, "format", j_str(graph_format_name(r->format)), &bad);
	j_set(jg, "nodes", j_uint(g->n), &bad);
	j_set(jg, "edges", j_uint(g->m), &bad);
	j_set(jg, "fingerprint", json_string(hex), &bad);
	j_set(jg, "lines", j_uint(r->lines), &bad);
	j_set(jg, "self_loops", j_uint(r->self_loops), &bad);
	j_set(jg, "duplicates", j_uint(r->duplicates), &bad);
	j_set(jg, "extra_columns", j_uint(r->extra_columns), &bad);
	j_set(jg, "isolated", j_uint(r->isolated), &bad);
	j_set(jg, "directed_input", json_boolean(r->directed_input), &bad);
	j_set(root, "graph", jg, &bad);

	j_set(jp, "k", j_uint(p->k), &bad);
	j_set(jp, "threads", j_uint(p->threads), &bad);
	if (p->seed <= (uint64_t)J_INT_MAX) {
		j_set(jp, "seed", j_uint(p->seed), &bad);
	} else {
		char dec[24];
		snprintf(dec, sizeof dec, "%" PRIu64, p->seed);
		j_set(jp, "seed", json_string(dec), &bad);
	}
	j_set(jp, "tol", j_real(p->tol), &bad);
	j_set(jp, "patience", j_uint(p->patience), &bad);
	j_set(jp, "max_sweeps", j_uint(p->max_sweeps), &bad);
	j_set(jp, "epsilon", j_real(s->epsilon), &bad);
	j_set(jp, "delta", j_real(s->delta), &bad);
	j_set(jp, "min_links", j_real(AGM_MIN_LINKS), &bad);
	j_set(jp, "past_plateau", json_boolean(p->past_plateau), &bad);
	j_set(jp, "starts", j_uint(p->starts), &bad);
	j_set(jp, "reseed", json_boolean(!p->no_reseed), &bad);
	j_set(jp, "k_chosen_by", j_str(meta && meta->k_auto ? "held-out likelihood" : "given"), &bad);
	j_set(root, "parameters", jp, &bad);

	uint32_t nonempty = 0;
	for (uint32_t i = 0; i < s->agm.cover.k; i++)
		if (cover_size(&s->agm.cover, i) > 0)
			nonempty++;
	j_set(jf, "status", j_str(meta ? meta->status : NULL), &bad);
	j_set(jf, "state", j_str(fit_state_name(s->state)), &bad);
	j_set(jf, "sweeps", j_uint(s->sweep), &bad);
	j_set(jf, "plateau_sweep", s->plateau_sweep ? j_uint(s->plateau_sweep) : json_null(),
	      &bad);
	j_set(jf, "seconds", j_real(s->seconds), &bad);
	j_set(jf, "loglik", s->ntrace ? j_real(s->trace[s->ntrace - 1].loglik) : json_null(),
	      &bad);
	j_set(jf, "agm_loglik", j_real(s->agm.loglik), &bad);
	j_set(jf, "communities", j_uint(nonempty), &bad);
	j_set(jf, "covered_nodes", j_uint(s->agm.covered), &bad);
	j_set(jf, "overlapping_nodes", j_uint(s->agm.overlapping), &bad);
	j_set(jf, "start_kept", s->best_start ? j_uint(s->best_start) : json_null(), &bad);
	j_set(jf, "reseeds_kept", j_uint(s->reseeds), &bad);
	j_set(jf, "memberships_from",
	      j_str(meta && meta->refine ? "agm refinement" : "strengths"), &bad);
	j_set(root, "fit", jf, &bad);
	j_set(root, "k_selection", meta && meta->selection ? j_selection(meta->selection) :
	      json_null(), &bad);
	j_set(root, "link_check", meta && meta->links ? j_links(meta->links) : json_null(), &bad);

	const struct refine_report *rr = meta ? meta->refine : NULL;
	if (meta && meta->refine_rounds) {
		json_t *ja = json_object();
		j_set(ja, "max_rounds", j_uint(meta->refine_rounds), &bad);
		j_set(ja, "done", json_boolean(rr != NULL), &bad);
		j_set(ja, "loglik_before", rr ? j_real(rr->loglik_before) : json_null(), &bad);
		j_set(ja, "loglik_after", rr ? j_real(rr->loglik_after) : json_null(), &bad);
		j_set(ja, "moves_added", rr ? j_uint(rr->added) : json_null(), &bad);
		j_set(ja, "moves_removed", rr ? j_uint(rr->removed) : json_null(), &bad);
		j_set(ja, "rounds", rr ? j_uint(rr->rounds) : json_null(), &bad);
		j_set(ja, "converged", rr ? json_boolean(rr->converged) : json_null(), &bad);
		j_set(ja, "seconds", rr ? j_real(rr->seconds) : json_null(), &bad);
		j_set(root, "agm_refine", ja ? ja : json_null(), &bad);
	} else {
		j_set(root, "agm_refine", json_null(), &bad);
	}

	j_set(jr, "wall_seconds", meta ? j_real(meta->wall_seconds) : json_null(), &bad);
	j_set(jr, "peak_rss_kb", meta && meta->peak_rss_kb ? j_uint(meta->peak_rss_kb) : json_null(),
	      &bad);
	j_set(root, "run", jr, &bad);

	char *text = bad ? NULL : json_dumps(root, JSON_INDENT(2));
	json_decref(root);
	if (!text)
		error("out of memory building run.json");
	return text;
}

static int fill_text(struct wfile *w, const void *arg)
{
	wf_str(w, arg);
	wf_str(w, "\n");
	return 0;
}

/* ------------------------------------------------------------------ */

/* The snapshot's memberships must fit the graph before names are read. */
static int check_agm(const struct graph *g, const struct snapshot *s)
{
	const struct agm *a = &s->agm;
	if (a->cover.k > 0 && (!a->comms || !a->cover.off ||
			       (a->cover.off[a->cover.k] > 0 && !a->cover.mem)))
		return error("cannot write results: the communities are missing");
	for (uint32_t i = 0; i < a->cover.k; i++) {
		if (a->cover.off[i + 1] < a->cover.off[i])
			return error("cannot write results: community %" PRIu32 " is malformed", i);
		for (uint64_t j = a->cover.off[i]; j < a->cover.off[i + 1]; j++)
			if (a->cover.mem[j] >= g->n)
				return error("cannot write results: community %" PRIu32
					     " holds node %" PRIu32 " of %" PRIu32, a->comms[i].id,
					     a->cover.mem[j], g->n);
	}
	if (s->ntrace > 0 && !s->trace)
		return error("cannot write results: the trace is missing");
	return 0;
}

int result_write(const char *dir, const struct graph *g, const struct fit_params *p,
		 const struct snapshot *s, const struct result_meta *meta)
{
	/* every file is staged first, and only when all five are on disk are
	 * they renamed into place (the checkpoint first, run.json last): a
	 * full disk or a write error leaves the old folder as it was */
	enum { NFILES = 5 };
	static const char *const names[NFILES] = {
		RESULT_CHECKPOINT, "memberships.tsv", "communities.tsv", "trace.tsv", "run.json",
	};
	char *paths[NFILES] = { 0 }, *tmps[NFILES] = { 0 };
	char *text = NULL;
	int rc = -1;
	if (check_agm(g, s) || make_dirs(dir))
		return -1;
	for (int i = 0; i < NFILES; i++)
		if (!(paths[i] = path_join(dir, names[i])))
			goto out;
	struct ck_args ca = { g, p, s, NULL };
	struct tsv_args ta = { g, s };
	if (checkpoint_ok(paths[0], g, p, s, &ca.savepoint) || stage(paths[0], fill_checkpoint, &ca, &tmps[0]) ||
	    stage(paths[1], fill_memberships, &ta, &tmps[1]) ||
	    stage(paths[2], fill_communities, &ta, &tmps[2]) ||
	    stage(paths[3], fill_trace, &ta, &tmps[3]))
		goto out;
	text = run_json(g, p, s, meta);
	if (!text || stage(paths[4], fill_text, text, &tmps[4]))
		goto out;
	rc = 0;
	for (int i = 0; i < NFILES; i++) {
		if (rc == 0) {
			rc = commit(tmps[i], paths[i]);
		} else {
			unlink(tmps[i]);
			free(tmps[i]);
		}
		tmps[i] = NULL;
	}
	if (rc == 0)
		rc = util_sync_dir(dir);
out:
	for (int i = 0; i < NFILES; i++) {
		if (tmps[i]) {
			unlink(tmps[i]);
			free(tmps[i]);
		}
		free(paths[i]);
	}
	free(text);
	return rc;
}
