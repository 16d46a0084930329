/*
 * graph_edgelist: reading an edge list ("name TAB name" per line, or
 * comma- or space-separated) into a name table and id pairs, for
 * graph_assemble().
 *
 * Bytes come through zlib (gzdopen reads plain files transparently, so one
 * path serves plain files, .gz files and stdin) in chunks of 1 MiB that
 * end at a line end (see "The reader" below: for a regular file, .gz or
 * not, a thread of its own reads or inflates ahead while the lines are
 * parsed). Nothing is allocated per line. The usual line, "name TAB name"
 * with no other TAB and no NUL, is found in one pass over 64 bytes at a
 * time (the TABs, newlines and NULs as bit masks, SSE2 where there is
 * one); every other line goes through the general splitter. The fast path
 * is only a shortcut: it takes a line only when the splitter would give the
 * same two names (so not a comment, and not a blank line, which would
 * start with a space). Each line is split in place:
 *   - a line holding a TAB is split on TABs only (names may hold spaces and
 *     commas, and are taken byte for byte);
 *   - else a line holding a comma is split on commas, and the spaces around
 *     each field are trimmed ("a, b" is the usual look of a CSV file);
 *   - else the line is split on runs of spaces.
 * Empty fields are skipped. A line that is empty or holds only spaces and
 * TABs is blank; a line whose first byte is '#' or '%' is a comment (so a
 * name cannot start a line with those bytes). A trailing '\r' is stripped.
 * Fields after the second are ignored and counted; with
 * graph_load_opts.weighted the third is the weight (graph_weights.c: it
 * is required, checked where the line is known, and the weights of one
 * pair add up), and the fast path is not taken. A line with fewer than
 * two names, a NUL byte, or more than LINE_MAX_BYTES (16 MiB) bytes is an
 * error that names the file and line; names quoted in messages, like the
 * path itself, go through util_escape() first. An empty file (or one of
 * comments only) is a graph of 0 nodes: it loads, and it is for the caller
 * to refuse it if it cannot use it.
 *
 * Before the first edge, edge_preamble() skips the lines asked for
 * (--skip-lines) and tries the header rule of graph.h on the first line
 * that is not a comment or blank, chunk by chunk until settled; the edge
 * lines are then parsed from the offset it returns, so the fast path and
 * the per-line loop never look at it.
 *
 * Names are interned in batches of lines with the slots prefetched a fixed
 * distance ahead (see edge_flush), through the inline lookup of
 * names-internal.h: on a large graph each lookup is a cache miss or two.
 *
 * The thing a newcomer gets wrong: a chunk's names are pointers into the
 * chunk, so a batch must be flushed before its chunk is given back to the
 * reader thread; and a read error is reported only after every line
 * before it, as a serial loop would.
 */
#include "graph-internal.h"

#include <errno.h>
#include <inttypes.h>
#include <pthread.h>
#include <signal.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

#include "coterie/util.h"
#include "names-internal.h"

#define LINE_MAX_BYTES ((size_t)16 << 20) /* longest edge-list line */

struct pairbuf {
	uint32_t *v; /* 2 * len ids */
	uint64_t len;
	uint64_t cap;
};

/* Cut one field out of line[*pos..len) for the given separator mode.
 * Returns 1 with [*b, *e) set, 0 when no field is left. */
enum sep_mode { SEP_TAB, SEP_COMMA, SEP_SPACE };

static int next_field(const char *line, size_t len, size_t *pos, enum sep_mode mode,
		      size_t *b, size_t *e)
{
	size_t i = *pos;
	if (mode == SEP_SPACE) {
		while (i < len && line[i] == ' ')
			i++;
		if (i == len) {
			*pos = i;
			return 0;
		}
		size_t s = i;
		while (i < len && line[i] != ' ')
			i++;
		*b = s;
		*e = i;
		*pos = i;
		return 1;
	}
	char sep = mode == SEP_TAB ? '\t' : ',';
	while (i < len) {
		const char *q = memchr(line + i, sep, len - i);
		size_t end = q ? (size_t)(q - line) : len;
		size_t s = i, t = end;
		if (mode == SEP_COMMA) {
			while (s < t && line[s] == ' ')
				s++;
			while (t > s && line[t - 1] == ' ')
				t--;
		}
		i = q ? end + 1 : len;
		if (t > s) {
			*b = s;
			*e = t;
			*pos = i;
			return 1;
		}
	}
	*pos = len;
	return 0;
}

static int is_blank(const char *line, size_t len)
{
	for (size_t i = 0; i < len; i++)
		if (line[i] != ' ' && line[i] != '\t')
			return 0;
	return 1;
}

/*
 * The reader: the bytes of the input in chunks that end at a line end.
 * A ring of RING_CHUNKS buffers is filled in order (through gzread, so
 * plain, gzip and stdin are one path); each chunk holds the unfinished
 * line of the one before it, then as much new input as fits, and is handed
 * over up to its last newline (all of it at the end of the input). A line
 * that does not fit makes its chunk grow, up to LINE_MAX_BYTES. Errors
 * (zlib's, the line limit) are kept in the chunk and reported by the
 * parser when it reaches it, after every line before them, as a serial
 * loop would.
 *
 * For a regular file the chunks are filled by a thread of their own (a
 * .gz file is inflated there while the parser works on the chunk before:
 * the load takes about the longer of the two rather than their sum). A
 * pipe, a FIFO or a terminal is read on the parser's own thread when it
 * needs the next chunk: a read there may block for ever, and the parser
 * could not stop a thread stuck in it after an error.
 */
#define RING_CHUNKS 4
#define CHUNK_BYTES ((size_t)1 << 20) /* a chunk's first size */
#define CHUNK_PAD 64                  /* readable bytes after a chunk's data */

struct chunk {
	char *data;   /* cap + CHUNK_PAD bytes */
	size_t cap;
	size_t len;   /* bytes handed over (whole lines, or all at the end) */
	size_t total; /* bytes held: len + the unfinished line */
	int last;     /* the end of the input, or an error */
	int fail;     /* 0, or one of the FAIL_ below */
	int err_no;   /* errno of a failed read */
};

enum { FAIL_READ = 1, FAIL_LINE = 2, FAIL_MEMORY = 3 };

struct reader {
	gzFile gz;
	struct chunk ring[RING_CHUNKS];
	uint64_t made;     /* chunks filled */
	uint64_t used;     /* chunks the parser is done with */
	int stop;          /* the parser gave up: the thread ends */
	int threaded;
	pthread_t thread;
	pthread_mutex_t mu;
	pthread_cond_t cv;
};

/* The last '\n' in data[from..to), or NULL. */
static const char *last_newline(const char *data, size_t from, size_t to)
{
	while (to > from) {
		to--;
		if (data[to] == '\n')
			return data + to;
	}
	return NULL;
}

/* Fill chunk number k from the unfinished line of chunk k - 1 and the
 * input. Touches only that chunk, the tail of the one before, and gz. */
static void chunk_fill(struct reader *rd, uint64_t k)
{
	struct chunk *c = &rd->ring[k % RING_CHUNKS];
	const struct chunk *prev = k ? &rd->ring[(k - 1) % RING_CHUNKS] : NULL;
	size_t carry = prev ? prev->total - prev->len : 0;
	c->len = c->total = 0;
	c->last = c->fail = c->err_no = 0;
	/* a chunk grown for a long line goes back to the usual size */
	size_t want = CHUNK_BYTES;
	while (want < LINE_MAX_BYTES && want < 2 * carry)
		want *= 2;
	if (!c->data || c->cap != want) {
		free(c->data);
		c->data = malloc(want + CHUNK_PAD);
		c->cap = c->data ? want : 0;
		if (!c->data) {
			c->fail = FAIL_MEMORY;
			c->last = 1;
			return;
		}
	}
	if (carry)
		memcpy(c->data, prev->data + prev->len, carry);
	size_t total = carry;
	for (;;) {
		int eof = 0;
		while (total < c->cap) {
			size_t ask = c->cap - total;
			if (ask > (1u << 30))
				ask = 1u << 30;
			int got = gzread(rd->gz, c->data + total, (unsigned)ask);
			if (got < 0) {
				c->fail = FAIL_READ;
				break;
			}
			if (got == 0) {
				int num = Z_OK;
				gzerror(rd->gz, &num);
				if (num != Z_OK && num != Z_STREAM_END)
					c->fail = FAIL_READ;
				eof = 1;
				break;
			}
			total += (size_t)got;
		}
		if (c->fail) {
			c->err_no = errno;
			c->last = 1;
			/* the lines read before the error are still parsed */
			const char *nl = last_newline(c->data, 0, total);
			c->len = nl ? (size_t)(nl - c->data) + 1 : 0;
			c->total = c->len;
			break;
		}
		const char *nl = last_newline(c->data, carry, total);
		if (eof) {
			c->len = c->total = total;
			c->last = 1;
			break;
		}
		if (nl) {
			c->len = (size_t)(nl - c->data) + 1;
			c->total = total;
			break;
		}
		/* one unfinished line fills the chunk */
		if (c->cap >= LINE_MAX_BYTES) {
			c->len = c->total = 0;
			c->fail = FAIL_LINE;
			c->last = 1;
			break;
		}
		char *nd = realloc(c->data, 2 * c->cap + CHUNK_PAD);
		if (!nd) {
			c->fail = FAIL_MEMORY;
			c->last = 1;
			c->len = c->total = 0;
			break;
		}
		c->data = nd;
		carry = total;
		c->cap *= 2;
	}
	memset(c->data + c->total, 0, CHUNK_PAD); /* special_bits() and names_head_padded() read here */
}

static void *reader_main(void *arg)
{
	struct reader *rd = arg;
	for (uint64_t k = 0;; k++) {
		pthread_mutex_lock(&rd->mu);
		/* chunk k reuses the buffer of chunk k - RING_CHUNKS, and its
		 * carry comes from chunk k - 1, which the parser only reads */
		while (!rd->stop && k >= rd->used + RING_CHUNKS)
			pthread_cond_wait(&rd->cv, &rd->mu);
		int stop = rd->stop;
		pthread_mutex_unlock(&rd->mu);
		if (stop)
			return NULL;
		chunk_fill(rd, k);
		int last = rd->ring[k % RING_CHUNKS].last;
		pthread_mutex_lock(&rd->mu);
		rd->made = k + 1;
		pthread_cond_broadcast(&rd->cv);
		pthread_mutex_unlock(&rd->mu);
		if (last)
			return NULL;
	}
}

static void reader_start(struct reader *rd, gzFile gz, int regular)
{
	memset(rd, 0, sizeof *rd);
	rd->gz = gz;
	gzbuffer(gz, 1 << 20);
	if (!regular)
		return;
	if (pthread_mutex_init(&rd->mu, NULL))
		return;
	if (pthread_cond_init(&rd->cv, NULL)) {
		pthread_mutex_destroy(&rd->mu);
		return;
	}
	sigset_t all, old;
	sigfillset(&all);
	pthread_sigmask(SIG_BLOCK, &all, &old);
	rd->threaded = pthread_create(&rd->thread, NULL, reader_main, rd) == 0;
	pthread_sigmask(SIG_SETMASK, &old, NULL);
	if (!rd->threaded) {
		pthread_cond_destroy(&rd->cv);
		pthread_mutex_destroy(&rd->mu);
	}
}

/* Chunk number k (k == the chunks used so far): wait for it, or fill it. */
static const struct chunk *reader_next(struct reader *rd, uint64_t k)
{
	if (!rd->threaded) {
		chunk_fill(rd, k);
		return &rd->ring[k % RING_CHUNKS];
	}
	pthread_mutex_lock(&rd->mu);
	while (rd->made <= k)
		pthread_cond_wait(&rd->cv, &rd->mu);
	pthread_mutex_unlock(&rd->mu);
	return &rd->ring[k % RING_CHUNKS];
}

static void reader_done_with(struct reader *rd, uint64_t k)
{
	if (!rd->threaded)
		return;
	pthread_mutex_lock(&rd->mu);
	rd->used = k + 1;
	pthread_cond_broadcast(&rd->cv);
	pthread_mutex_unlock(&rd->mu);
}

/* Stop the thread (if any), free the buffers; gz stays open. */
static void reader_end(struct reader *rd)
{
	if (rd->threaded) {
		pthread_mutex_lock(&rd->mu);
		rd->stop = 1;
		pthread_cond_broadcast(&rd->cv);
		pthread_mutex_unlock(&rd->mu);
		pthread_join(rd->thread, NULL);
		pthread_cond_destroy(&rd->cv);
		pthread_mutex_destroy(&rd->mu);
		rd->threaded = 0;
	}
	for (int i = 0; i < RING_CHUNKS; i++) {
		free(rd->ring[i].data);
		rd->ring[i].data = NULL;
	}
}

/*
 * Lines are resolved in batches: the names of up to BATCH lines (pointing
 * into the current chunk, so a batch is flushed before the chunk is given
 * back) are hashed first; then, while they are looked up one by one, the
 * slots of the line PREFETCH_AHEAD further on are prefetched, and the
 * long names in the slots of the line half as far on. On a large graph
 * every lookup is a cache miss or two; this lets them overlap, a fixed
 * distance ahead rather than a whole batch at once (DEVELOPERS.md,
 * performance notes).
 */
#define BATCH 128
#define PREFETCH_AHEAD 32 /* lines between a slot's prefetch and its lookup */

struct pending {
	const char *s[2];
	size_t len[2];
	uint64_t h[2];
	uint64_t head[2];
	uint64_t lineno;
};

struct edge_state {
	struct names *t;
	struct pairbuf pairs;
	struct graph_report rep;
	int max_fields;
	const char *shown;
	struct pending batch[BATCH];
	int nbatch;
	uint64_t skip_left; /* lines still to skip (graph_load_opts.skip_lines) */
	int guess;          /* the header rule is still to be tried */
	int weighted;       /* graph_load_opts.weighted: the third field is the weight */
	double *wv;         /* weighted: one weight per record pushed (pairs + batch) */
	uint64_t wcap;
};

/* Start fetching the slots where the names of a line are probed first. */
#define prefetch_slots(t, pe)                                                  \
	do {                                                                   \
		names_prefetch_slot(t, (pe)->h[0]);                             \
		names_prefetch_slot(t, (pe)->h[1]);                             \
	} while (0)

/* A name of the table full, or out of memory: the error of line lineno. */
static int edge_intern_failed(const struct edge_state *st, int64_t id, uint64_t lineno)
{
	if (id == NAMES_FULL)
		error(GRAPH_TOO_MANY, GRAPH_MAX_NODES);
	return error("%s:%" PRIu64 ": cannot add the node", st->shown, lineno);
}

static int edge_flush(struct edge_state *st)
{
	struct names *t = st->t;
	int nb = st->nbatch;
	st->nbatch = 0;
	if (st->pairs.cap - st->pairs.len < (uint64_t)nb) {
		uint64_t cap = st->pairs.cap ? st->pairs.cap * 2 : 4096;
		if (cap > SIZE_MAX / 2 / sizeof *st->pairs.v)
			return error("out of memory: too many edges");
		uint32_t *nv = util_realloc(st->pairs.v, (size_t)cap * 2, sizeof *nv);
		if (!nv)
			return -1;
		st->pairs.v = nv;
		st->pairs.cap = cap;
	}
	uint32_t *out = st->pairs.v + 2 * st->pairs.len;
	for (int i = 0; i < nb && i < PREFETCH_AHEAD; i++)
		prefetch_slots(t, &st->batch[i]);
	for (int i = 0; i < nb; i++) {
		const struct pending *pe = &st->batch[i];
		if (i + PREFETCH_AHEAD < nb)
			prefetch_slots(t, &st->batch[i + PREFETCH_AHEAD]);
		/* the slots of the line half as far on are in: fetch their long names */
		if (i + PREFETCH_AHEAD / 2 < nb) {
			const struct pending *pn = &st->batch[i + PREFETCH_AHEAD / 2];
			names_prefetch_long(t, pn->len[0], pn->h[0]);
			names_prefetch_long(t, pn->len[1], pn->h[1]);
		}
		for (int k = 0; k < 2; k++) {
			int added;
			int64_t id = names_intern_h(t, pe->s[k], pe->len[k], pe->h[k],
						    pe->head[k], &added);
			if (id < 0)
				return edge_intern_failed(st, id, pe->lineno);
			out[2 * i + k] = (uint32_t)id;
		}
		st->pairs.len++;
	}
	return 0;
}

static inline int edge_push(struct edge_state *st, const char *a, size_t la, const char *b,
			    size_t lb, uint64_t lineno)
{
	struct pending *pe = &st->batch[st->nbatch++];
	pe->s[0] = a;
	pe->len[0] = la;
	pe->head[0] = names_head_padded(a, la);
	pe->h[0] = names_hash_head(a, la, pe->head[0]);
	pe->s[1] = b;
	pe->len[1] = lb;
	pe->head[1] = names_head_padded(b, lb);
	pe->h[1] = names_hash_head(b, lb, pe->head[1]);
	pe->lineno = lineno;
	return st->nbatch == BATCH ? edge_flush(st) : 0;
}

/* The weight of the record being read (the third field at *pos), into
 * st->wv at the index the record will have. 0 or -1 with error(). */
static int edge_weight(struct edge_state *st, const char *line, size_t len, size_t *pos,
		       enum sep_mode mode, uint64_t lineno)
{
	size_t b, e;
	uint64_t at = st->pairs.len + (uint64_t)st->nbatch;
	if (at >= st->wcap) {
		uint64_t cap = st->wcap ? st->wcap * 2 : 4096;
		double *nw = util_realloc(st->wv, cap, sizeof *nw);
		if (!nw)
			return -1;
		st->wv = nw;
		st->wcap = cap;
	}
	if (!next_field(line, len, pos, mode, &b, &e))
		return error("%s:%" PRIu64 ": expected a weight in the third column, found none",
			     st->shown, lineno);
	const char *why = graph_weight_parse(line + b, e - b, &st->wv[at]);
	if (why) {
		char field[65], esc[300];
		size_t l = e - b < 64 ? e - b : 64;
		memcpy(field, line + b, l);
		field[l] = '\0';
		return error("%s:%" PRIu64 ": expected a weight above zero, found '%s' (%s)",
			     st->shown, lineno, util_escape(field, esc, sizeof esc, 0), why);
	}
	return 0;
}

/* One line (no newline, no '\r' at the end), by the rules of the header.
 * Lines in chunks only: names may be read 8 bytes at a time. 0 or -1 with
 * error(). */
static int edge_line(struct edge_state *st, const char *line, size_t len, uint64_t lineno)
{
	if (len == 0 || line[0] == '#' || line[0] == '%')
		return 0;
	if (memchr(line, '\0', len))
		return error("%s:%" PRIu64 ": expected text, found a NUL byte", st->shown, lineno);
	if (is_blank(line, len))
		return 0;
	enum sep_mode mode = memchr(line, '\t', len)   ? SEP_TAB
			     : memchr(line, ',', len) ? SEP_COMMA
						      : SEP_SPACE;
	size_t pos = 0, b[2] = { 0, 0 }, e[2] = { 0, 0 };
	int found = 0;
	while (found < 2 && next_field(line, len, &pos, mode, &b[found], &e[found]))
		found++;
	if (found < 2) {
		if (found == 0)
			return error("%s:%" PRIu64 ": expected two node names, found 0", st->shown,
				     lineno);
		char name[65], esc[300];
		size_t l = e[0] - b[0] < 64 ? e[0] - b[0] : 64;
		memcpy(name, line + b[0], l);
		name[l] = '\0';
		return error("%s:%" PRIu64 ": expected two node names, found 1 ('%s')", st->shown,
			     lineno, util_escape(name, esc, sizeof esc, 0));
	}
	size_t b3, e3;
	int fields = 2;
	if (st->weighted && edge_weight(st, line, len, &pos, mode, lineno))
		return -1;
	fields += st->weighted;
	while (next_field(line, len, &pos, mode, &b3, &e3))
		fields++;
	if (fields > 2 + st->weighted) {
		st->rep.extra_columns++;
		if (fields > st->max_fields)
			st->max_fields = fields;
	}
	return edge_push(st, line + b[0], e[0] - b[0], line + b[1], e[1] - b[1], lineno);
}

/* The bytes that matter to the fast path (TAB, newline, NUL) among the 64
 * at p, as bits. */
static inline uint64_t special_bits(const char *p)
{
#if defined(__SSE2__)
	const __m128i tab = _mm_set1_epi8('\t'), nl = _mm_set1_epi8('\n');
	const __m128i zero = _mm_setzero_si128();
	uint64_t bits = 0;
	for (int i = 0; i < 4; i++) {
		__m128i v = _mm_loadu_si128((const __m128i *)(const void *)(p + 16 * i));
		__m128i m = _mm_or_si128(_mm_or_si128(_mm_cmpeq_epi8(v, tab), _mm_cmpeq_epi8(v, nl)),
					 _mm_cmpeq_epi8(v, zero));
		bits |= (uint64_t)(uint32_t)_mm_movemask_epi8(m) << (16 * i);
	}
	return bits;
#else
	uint64_t bits = 0;
	for (int i = 0; i < 64; i++)
		if (p[i] == '\t' || p[i] == '\n' || p[i] == '\0')
			bits |= UINT64_C(1) << i;
	return bits;
#endif
}

/* The index of the lowest set bit of x (x != 0). */
static inline size_t ctz64(uint64_t x)
{
#if defined(__GNUC__)
	return (size_t)__builtin_ctzll(x);
#else
	size_t i = 0;
	while (!(x & 1)) {
		x >>= 1;
		i++;
	}
	return i;
#endif
}

/* A line [s, e) (e at its newline, or the end of the input), tab the
 * first TAB in it or NULL, clean when it holds no NUL and at most one
 * TAB. The usual line, "name TAB name", is taken here; any other goes to
 * edge_line(), so both give the same result. */
static inline int edge_line_at(struct edge_state *st, const char *s, const char *e,
			       const char *tab, int clean, uint64_t lineno)
{
	const char *end = e > s && e[-1] == '\r' ? e - 1 : e;
	/* not a comment, not blank (a blank line would start with a space) */
	if (clean && tab && tab > s && end > tab + 1 && *s != '#' && *s != '%' && *s != ' ' &&
	    !st->weighted)
		return edge_push(st, s, (size_t)(tab - s), tab + 1, (size_t)(end - tab - 1),
				 lineno);
	return edge_line(st, s, (size_t)(end - s), lineno);
}

/* The lines of one chunk: data[0..len), padded, whole lines unless last. */
static int edge_chunk(struct edge_state *st, const char *data, size_t len, int last,
		      uint64_t *lineno)
{
	const char *s = data, *tab = NULL;
	int clean = 1;
	uint64_t ln = *lineno;
	for (size_t base = 0; base < len; base += 64) {
		uint64_t bits = special_bits(data + base);
		if (len - base < 64)
			bits &= (UINT64_C(1) << (len - base)) - 1;
		while (bits) {
			const char *q = data + base + ctz64(bits);
			bits &= bits - 1;
			if (*q == '\n') {
				ln++;
				if (edge_line_at(st, s, q, tab, clean, ln) < 0)
					return -1;
				s = q + 1;
				tab = NULL;
				clean = 1;
			} else if (*q == '\t' && !tab) {
				tab = q;
			} else {
				clean = 0;
			}
		}
	}
	if (last && s < data + len) {
		ln++;
		if (edge_line_at(st, s, data + len, tab, clean, ln) < 0)
			return -1;
	}
	*lineno = ln;
	return 0;
}

/*
 * The first lines of the input: the lines skipped as asked, then the
 * header rule of graph.h on the first line that is not a comment or
 * blank. It runs on each chunk before edge_chunk() until it is settled,
 * so the per-line loop knows nothing of it. A header needs two or more
 * fields that are all column names, or a word where the next line has a
 * number (the third column); a node name that happens to be a word never
 * makes a header on its own.
 */
static const char *const header_words[] = {
	"source", "target", "from", "to", "src", "dst", "dest", "destination",
	"u", "v", "node", "node1", "node2", "node_1", "node_2", "node_a", "node_b",
	"nodea", "nodeb", "id1", "id2", "id_1", "id_2", "source_id", "target_id",
	"from_id", "to_id", "vertex1", "vertex2", "head", "tail", "weight", "weights",
	"w", "type", "id", "label", "value", "time", "timestamp", "sign",
};

#define HEADER_FIELDS 16 /* a header has at most this many columns */

/* Field [b, e) of line with a UTF-8 byte order mark (first field) and
 * one pair of double quotes taken off. */
static void header_field(const char *line, size_t *b, size_t *e)
{
	if (*b == 0 && *e - *b >= 3 && !memcmp(line, "\xEF\xBB\xBF", 3))
		*b += 3;
	if (*e - *b >= 2 && line[*b] == '"' && line[*e - 1] == '"') {
		(*b)++;
		(*e)--;
	}
}

static int is_header_word(const char *s, size_t len)
{
	for (size_t i = 0; i < sizeof header_words / sizeof header_words[0]; i++)
		if (strlen(header_words[i]) == len && !strncasecmp(s, header_words[i], len))
			return 1;
	return 0;
}

static int is_number(const char *s, size_t len)
{
	char buf[64], *end;
	if (len == 0 || len >= sizeof buf)
		return 0;
	memcpy(buf, s, len);
	buf[len] = '\0';
	(void)strtod(buf, &end);
	return end == buf + len;
}

/* The fields of line[0..len) (at most max, the count up to max + 1) split
 * as edge_line() splits them, cleaned by header_field(). */
static int header_fields(const char *line, size_t len, size_t *b, size_t *e, int max)
{
	enum sep_mode mode = memchr(line, '\t', len)   ? SEP_TAB
			     : memchr(line, ',', len) ? SEP_COMMA
						      : SEP_SPACE;
	size_t pos = 0, bb, ee;
	int n = 0;
	while (n <= max && next_field(line, len, &pos, mode, &bb, &ee)) {
		header_field(line, &bb, &ee);
		if (n < max) {
			b[n] = bb;
			e[n] = ee;
		}
		n++;
	}
	return n;
}

/* The next line of data[0..len) from *pos that is not a comment or blank:
 * [*s, *s + *l) without its end of line, *pos moved past it. 0 when the
 * data ends first. */
static int next_data_line(const char *data, size_t len, size_t *pos, const char **s,
			  size_t *l, uint64_t *passed)
{
	while (*pos < len) {
		const char *line = data + *pos;
		const char *nl = memchr(line, '\n', len - *pos);
		size_t ll = nl ? (size_t)(nl - line) : len - *pos;
		*pos += nl ? ll + 1 : ll;
		if (ll && line[ll - 1] == '\r')
			ll--;
		if (ll == 0 || line[0] == '#' || line[0] == '%' ||
		    (!memchr(line, '\0', ll) && is_blank(line, ll))) {
			if (passed)
				(*passed)++;
			continue;
		}
		*s = line;
		*l = ll;
		return 1;
	}
	return 0;
}

/* The header rule of graph.h: line[0..len) is the first data line, and
 * rest[0..rlen) what follows it in the chunk. */
static int is_header(const char *line, size_t len, const char *rest, size_t rlen)
{
	size_t b[HEADER_FIELDS], e[HEADER_FIELDS];
	if (memchr(line, '\0', len))
		return 0;
	int n = header_fields(line, len, b, e, HEADER_FIELDS);
	if (n < 2)
		return 0;
	int words = n <= HEADER_FIELDS;
	for (int i = 0; words && i < n; i++)
		words = is_header_word(line + b[i], e[i] - b[i]);
	if (words && !(e[0] - b[0] == e[1] - b[1] &&
		       !strncasecmp(line + b[0], line + b[1], e[0] - b[0])))
		return 1;
	if (n < 3 || is_number(line + b[2], e[2] - b[2]))
		return 0;
	/* a word above a number in the third column */
	size_t pos = 0, nl;
	const char *next;
	if (!next_data_line(rest, rlen, &pos, &next, &nl, NULL) || memchr(next, '\0', nl))
		return 0;
	size_t nb[3], ne[3];
	return header_fields(next, nl, nb, ne, 3) >= 3 && is_number(next + nb[2], ne[2] - nb[2]);
}

/* The lines of data[0..len) before the edges, while st->skip_left or
 * st->guess: returns the offset of the first line left to edge_chunk(),
 * with the lines passed over counted in *lineno. */
static size_t edge_preamble(struct edge_state *st, const char *data, size_t len,
			    uint64_t *lineno)
{
	size_t pos = 0;
	while (st->skip_left && pos < len) {
		const char *nl = memchr(data + pos, '\n', len - pos);
		pos = nl ? (size_t)(nl - data) + 1 : len;
		(*lineno)++;
		st->skip_left--;
		st->rep.skipped_lines++;
	}
	if (st->skip_left || !st->guess)
		return pos;
	const char *line;
	size_t ll, at = pos;
	if (!next_data_line(data, len, &at, &line, &ll, lineno))
		return at; /* comments and blanks only, so far */
	st->guess = 0;
	if (!is_header(line, ll, data + at, len - at))
		return (size_t)(line - data);
	(*lineno)++;
	st->rep.header_line = *lineno;
	char text[81], esc[400];
	size_t l = ll < 80 ? ll : 80;
	memcpy(text, line, l);
	text[l] = '\0';
	notice("%s:%" PRIu64 ": skipped a header line '%s' (--no-header reads it as an edge)",
	       st->shown, *lineno, util_escape(text, esc, sizeof esc, 0));
	return at;
}

struct graph *graph_load_edges(const char *path, const char *shown,
			       const struct graph_load_opts *o)
{
	int regular = 0;
	gzFile gz = graph_open_input(path, shown, &regular);
	if (!gz)
		return NULL;
	struct reader rd;
	reader_start(&rd, gz, regular);
	struct edge_state st = { .shown = shown };
	st.skip_left = o->skip_lines;
	st.guess = !o->no_header && !o->skip_lines;
	st.weighted = o->weighted != 0;
	st.rep.format = GRAPH_FORMAT_EDGES;
	st.t = names_new(0);
	if (!st.t)
		goto fail;
	uint64_t lineno = 0;
	for (uint64_t k = 0;; k++) {
		const struct chunk *c = reader_next(&rd, k);
		size_t from = st.skip_left || st.guess ? edge_preamble(&st, c->data, c->len, &lineno)
						       : 0;
		if (edge_chunk(&st, c->data + from, c->len - from, c->last && !c->fail,
			       &lineno) < 0 ||
		    edge_flush(&st) < 0)
			goto fail;
		if (c->fail == FAIL_LINE) {
			error("%s:%" PRIu64 ": expected a line of at most %zu MiB, found a longer one",
			      shown, lineno + 1, LINE_MAX_BYTES >> 20);
			goto fail;
		}
		if (c->fail == FAIL_MEMORY) {
			error("out of memory");
			goto fail;
		}
		if (c->fail == FAIL_READ) {
			int err_no = c->err_no;
			reader_end(&rd); /* the thread no longer uses gz */
			errno = err_no;
			graph_input_error(gz, shown);
			goto fail;
		}
		if (c->last)
			break;
		reader_done_with(&rd, k);
	}
	reader_end(&rd);
	gzclose(gz);
	gz = NULL;
	st.rep.lines = lineno;

	struct graph *g = graph_assemble_as(st.t, st.pairs.v, st.pairs.len,
					    st.weighted ? st.wv : NULL, &st.rep, path, shown, o);
	st.t = NULL;
	free(st.pairs.v);
	free(st.wv);
	if (g && g->report.skipped_lines)
		notice("%s: skipped the first %" PRIu64 " line%s, as asked", shown,
		       g->report.skipped_lines, g->report.skipped_lines == 1 ? "" : "s");
	if (g && g->report.extra_columns) {
		if (st.max_fields == 3 && !st.weighted)
			notice("%s: ignored the third column on %" PRIu64 " lines", shown,
			       g->report.extra_columns);
		else if (st.max_fields == 4 && st.weighted)
			notice("%s: ignored the fourth column on %" PRIu64 " lines", shown,
			       g->report.extra_columns);
		else
			notice("%s: ignored the columns after the second on %" PRIu64 " lines",
			       shown, g->report.extra_columns);
	}
	return g;
fail:
	reader_end(&rd);
	if (gz)
		gzclose(gz);
	names_free(st.t);
	free(st.pairs.v);
	free(st.wv);
	return NULL;
}
