/*
 * util: messages and small helpers. The message sink is the only global
 * state here; it is set once at start-up (or by the explorer while curses
 * owns the screen) and read under a lock.
 */
#include "coterie/util.h"

#include <errno.h>
#include <fcntl.h>
#include <pthread.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>
#include <time.h>
#include <unistd.h>

static pthread_mutex_t sink_lock = PTHREAD_MUTEX_INITIALIZER;
static util_sink_fn sink;
static int quiet;

void util_set_sink(util_sink_fn fn)
{
	pthread_mutex_lock(&sink_lock);
	sink = fn;
	pthread_mutex_unlock(&sink_lock);
}

void util_set_quiet(int q)
{
	pthread_mutex_lock(&sink_lock);
	quiet = q;
	pthread_mutex_unlock(&sink_lock);
}

int util_quiet(void)
{
	pthread_mutex_lock(&sink_lock);
	int q = quiet;
	pthread_mutex_unlock(&sink_lock);
	return q;
}

/* Replace control bytes (C0, DEL) in a message by \xNN, in place into
 * out: a name from a file or the command line that a caller forgot to
 * escape still never reaches the terminal raw. Backslashes are left as
 * they are, so names escaped by util_escape() read the same. C1 controls
 * in UTF-8 (U+0080..U+009F, bytes C2 80..C2 9F) are escaped too. */
static void defuse(const char *in, char *out, size_t cap)
{
	size_t o = 0;
	const unsigned char *p = (const unsigned char *)in;
	for (; *p && o + 5 < cap; p++) {
		if (*p < 0x20 || *p == 0x7f || (*p == 0xc2 && p[1] >= 0x80 && p[1] <= 0x9f)) {
			unsigned v = *p == 0xc2 ? p[1] : *p;
			if (*p == 0xc2)
				p++;
			o += (size_t)snprintf(out + o, cap - o, "\\x%02x", v);
		} else {
			out[o++] = (char)*p;
		}
	}
	out[o] = '\0';
}

static void emit(int level, const char *fmt, va_list ap)
{
	char raw[2048], msg[4096];
	vsnprintf(raw, sizeof raw, fmt, ap);
	defuse(raw, msg, sizeof msg);
	pthread_mutex_lock(&sink_lock);
	if (level == UTIL_NOTICE && quiet) {
		pthread_mutex_unlock(&sink_lock);
		return;
	}
	if (sink) {
		sink(level, msg);
	} else {
		const char *tag = level == UTIL_WARNING ? "warning: " : "";
		fprintf(stderr, "coterie: %s%s\n", tag, msg);
	}
	pthread_mutex_unlock(&sink_lock);
}

int error(const char *fmt, ...)
{
	va_list ap;
	va_start(ap, fmt);
	emit(UTIL_ERROR, fmt, ap);
	va_end(ap);
	return -1;
}

void warning(const char *fmt, ...)
{
	va_list ap;
	va_start(ap, fmt);
	emit(UTIL_WARNING, fmt, ap);
	va_end(ap);
}

void notice(const char *fmt, ...)
{
	va_list ap;
	va_start(ap, fmt);
	emit(UTIL_NOTICE, fmt, ap);
	va_end(ap);
}

void util_bug(const char *file, int line, const char *fmt, ...)
{
	va_list ap;
	fprintf(stderr, "coterie: BUG at %s:%d: ", file, line);
	va_start(ap, fmt);
	vfprintf(stderr, fmt, ap);
	va_end(ap);
	fputc('\n', stderr);
	abort();
}

void *util_malloc(size_t n, size_t size)
{
	if (size && n > SIZE_MAX / size) {
		error("out of memory: %zu x %zu bytes", n, size);
		return NULL;
	}
	void *p = malloc((n * size) != 0 ? n * size : 1);
	if (!p)
		error("out of memory: %zu bytes", n * size);
	return p;
}

void *util_calloc(size_t n, size_t size)
{
	void *p = calloc(n ? n : 1, size ? size : 1);
	if (!p)
		error("out of memory: %zu x %zu bytes", n, size);
	return p;
}

void *util_realloc(void *old, size_t n, size_t size)
{
	if (size && n > SIZE_MAX / size) {
		error("out of memory: %zu x %zu bytes", n, size);
		return NULL;
	}
	void *p = realloc(old, (n * size) != 0 ? n * size : 1);
	if (!p)
		error("out of memory: %zu bytes", n * size);
	return p;
}

char *util_strdup(const char *s)
{
	size_t len = strlen(s);
	char *p = util_malloc(len + 1, 1);
	if (p)
		memcpy(p, s, len + 1);
	return p;
}

void *util_memdup(const void *p, size_t n)
{
	void *q = util_malloc(n ? n : 1, 1);
	if (q && n)
		memcpy(q, p, n);
	return q;
}

/* Length of the valid UTF-8 sequence at s (1..4) that is printable, or 0. */
static size_t utf8_printable(const unsigned char *s)
{
	uint32_t cp;
	size_t len;
	if (s[0] < 0x80)
		return 0;
	if ((s[0] & 0xe0) == 0xc0) {
		len = 2;
		cp = s[0] & 0x1f;
	} else if ((s[0] & 0xf0) == 0xe0) {
		len = 3;
		cp = s[0] & 0x0f;
	} else if ((s[0] & 0xf8) == 0xf0) {
		len = 4;
		cp = s[0] & 0x07;
	} else {
		return 0;
	}
	for (size_t i = 1; i < len; i++) {
		if ((s[i] & 0xc0) != 0x80)
			return 0;
		cp = (cp << 6) | (s[i] & 0x3f);
	}
	/* overlong forms, surrogates, beyond Unicode */
	if ((len == 2 && cp < 0x80) || (len == 3 && cp < 0x800) || (len == 4 && cp < 0x10000))
		return 0;
	if ((cp >= 0xd800 && cp <= 0xdfff) || cp > 0x10ffff)
		return 0;
	/* C1 controls, bidi overrides and isolates, line/paragraph separators */
	if (cp >= 0x80 && cp <= 0x9f)
		return 0;
	if ((cp >= 0x202a && cp <= 0x202e) || (cp >= 0x2066 && cp <= 0x2069) ||
	    cp == 0x2028 || cp == 0x2029 || cp == 0x200e || cp == 0x200f || cp == 0xfeff)
		return 0;
	/* the noncharacters U+FFFE and U+FFFF of every plane (XML forbids two) */
	if ((cp & 0xfffe) == 0xfffe)
		return 0;
	return len;
}

char *util_escape(const char *s, char *buf, size_t cap, int ascii_only)
{
	size_t o = 0;
	const unsigned char *p = (const unsigned char *)s;
	if (cap == 0)
		return buf;
	while (*p) {
		char tmp[8];
		size_t tlen;
		size_t ul;
		if (*p >= 0x20 && *p < 0x7f && *p != '\\') {
			tmp[0] = (char)*p;
			tlen = 1;
			ul = 1;
		} else if (!ascii_only && (ul = utf8_printable(p)) > 0) {
			memcpy(tmp, p, ul);
			tlen = ul;
		} else {
			ul = 1;
			switch (*p) {
			case '\\': memcpy(tmp, "\\\\", 2); tlen = 2; break;
			case '\t': memcpy(tmp, "\\t", 2); tlen = 2; break;
			case '\n': memcpy(tmp, "\\n", 2); tlen = 2; break;
			case '\r': memcpy(tmp, "\\r", 2); tlen = 2; break;
			case 0x1b: memcpy(tmp, "\\e", 2); tlen = 2; break;
			default:
				snprintf(tmp, sizeof tmp, "\\x%02x", *p);
				tlen = 4;
				break;
			}
		}
		if (o + tlen + 1 > cap)
			break;
		memcpy(buf + o, tmp, tlen);
		o += tlen;
		p += ul;
	}
	buf[o] = '\0';
	return buf;
}

char *util_escape_dup(const char *s, int ascii_only)
{
	size_t cap = strlen(s) * 4 + 1;
	char *buf = util_malloc(cap, 1);
	if (!buf)
		return NULL;
	return util_escape(s, buf, cap, ascii_only);
}

double util_now(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_MONOTONIC, &ts);
	return (double)ts.tv_sec + (double)ts.tv_nsec * 1e-9;
}

uint64_t util_fnv1a(uint64_t h, const void *buf, size_t len)
{
	const unsigned char *p = buf;
	for (size_t i = 0; i < len; i++) {
		h ^= p[i];
		h *= 0x100000001b3ULL;
	}
	return h;
}

size_t util_lower_bound_u32(const uint32_t *x, size_t n, uint32_t v)
{
	size_t lo = 0, hi = n;
	while (lo < hi) {
		size_t mid = lo + (hi - lo) / 2;
		if (x[mid] < v)
			lo = mid + 1;
		else
			hi = mid;
	}
	return lo;
}

int util_qsort_u32(const void *a, const void *b)
{
	return util_cmp_uint(*(const uint32_t *)a, *(const uint32_t *)b);
}

int util_qsort_u64(const void *a, const void *b)
{
	return util_cmp_uint(*(const uint64_t *)a, *(const uint64_t *)b);
}

void util_free_each(void *const *p, size_t n)
{
	for (size_t i = 0; i < n; i++)
		free(p[i]);
}

int util_sync_dir(const char *dir)
{
	int fd = open(dir, O_RDONLY | O_DIRECTORY | O_CLOEXEC);
	if (fd < 0)
		return error("cannot open folder '%s': %s", dir, strerror(errno));
	int rc = 0;
	if (fsync(fd) != 0 && errno != EINVAL && errno != ENOTSUP)
		rc = error("cannot sync folder '%s': %s", dir, strerror(errno));
	close(fd);
	return rc;
}

void util_advise_huge(void *p, size_t len)
{
#if defined(MADV_HUGEPAGE)
	const uintptr_t huge = (uintptr_t)2 << 20;
	if (len < 2 * huge)
		return;
	uintptr_t b = ((uintptr_t)p + huge - 1) & ~(huge - 1);
	uintptr_t e = ((uintptr_t)p + len) & ~(huge - 1);
	if (e > b)
		madvise((void *)b, e - b, MADV_HUGEPAGE);
#else
	(void)p;
	(void)len;
#endif
}
