/*
 * util: messages, the three levels of error, and small helpers shared by
 * every core module.
 *
 * Library code reports with error(), which prints one line and returns -1;
 * callers propagate. Only the command layer exits (see cli/cli.h die()).
 * Messages are lower case, problem first, no full stop.
 */
#ifndef COTERIE_UTIL_H
#define COTERIE_UTIL_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#if defined(__GNUC__)
#define COTERIE_PRINTF(a, b) __attribute__((format(printf, a, b)))
#define COTERIE_NORETURN __attribute__((noreturn))
#else
#define COTERIE_PRINTF(a, b)
#define COTERIE_NORETURN
#endif

/* Where messages go. The default sink writes "coterie: MSG\n" to stderr.
 * The explorer installs its own while curses owns the screen. The sink
 * receives a message without prefix or newline; it must be thread safe. */
typedef void (*util_sink_fn)(int level, const char *msg);
enum { UTIL_ERROR = 0, UTIL_WARNING = 1, UTIL_NOTICE = 2 };
void util_set_sink(util_sink_fn fn);

/* Print an error through the sink; always returns -1. */
int error(const char *fmt, ...) COTERIE_PRINTF(1, 2);
/* A warning (something was ignored or changed); returns nothing. */
void warning(const char *fmt, ...) COTERIE_PRINTF(1, 2);
/* A notice (counts, what was done); suppressed by util_set_quiet(1). */
void notice(const char *fmt, ...) COTERIE_PRINTF(1, 2);
void util_set_quiet(int quiet);
int util_quiet(void);

/* For states that cannot happen: prints file and line and aborts. */
#define BUG(...) util_bug(__FILE__, __LINE__, __VA_ARGS__)
COTERIE_NORETURN void util_bug(const char *file, int line, const char *fmt, ...)
    COTERIE_PRINTF(3, 4);

/* Allocation that reports through error() and returns NULL on failure
 * (and on a size overflow in the n * size product). Caller frees with free(). */
void *util_calloc(size_t n, size_t size);
void *util_malloc(size_t n, size_t size);
void *util_realloc(void *p, size_t n, size_t size);
char *util_strdup(const char *s);
/* A copy of n bytes of p (n may be 0: a 1-byte block), as util_malloc(). */
void *util_memdup(const void *p, size_t n);

/*
 * Make a string from an unvetted file safe for a terminal: printable UTF-8
 * passes through, everything else (C0/C1 controls, DEL, ESC, invalid UTF-8,
 * the noncharacters U+FFFE and U+FFFF of every plane, backslash) is shown
 * as a C-style escape (\t, \n, \e, \x1b, \\).
 * Writes at most cap bytes including the NUL into buf (borrowed) and returns
 * buf. ascii_only escapes every non-ASCII byte too (for non-UTF-8 locales).
 */
char *util_escape(const char *s, char *buf, size_t cap, int ascii_only);
/* The same, into a newly allocated string; caller frees with free(). */
char *util_escape_dup(const char *s, int ascii_only);

/* Monotonic seconds, for progress and traces. */
double util_now(void);

/* 64-bit FNV-1a over a buffer, continuing from h (start with
 * UTIL_FNV_INIT). Used for graph fingerprints and checkpoint checksums. */
#define UTIL_FNV_INIT 0xcbf29ce484222325ULL
uint64_t util_fnv1a(uint64_t h, const void *buf, size_t len);

/* The first index i of the increasing array x[0..n) (borrowed) with
 * x[i] >= v, or n when there is none: where v is, or would go. */
size_t util_lower_bound_u32(const uint32_t *x, size_t n, uint32_t v);

/* Three-way comparison for qsort comparators: -1, 0 or 1 as a is below,
 * equal to or above b. The unsigned form takes any unsigned integer. The
 * double form never calls unequal values equal (a NaN compares above
 * anything, on either side). */
static inline int util_cmp_uint(uint64_t a, uint64_t b)
{
	return (a > b) - (a < b);
}

static inline int util_cmp_double(double a, double b)
{
	return a != b ? (a < b ? -1 : 1) : 0;
}

/* qsort comparators for arrays of uint32_t and of uint64_t, ascending. */
int util_qsort_u32(const void *a, const void *b);
int util_qsort_u64(const void *a, const void *b);

/* Free every pointer given (NULL ones are fine, as for free()): a release
 * function's list of arrays in one statement. */
#define UTIL_FREE_ALL(...)                                                                         \
	util_free_each((void *[]){ __VA_ARGS__ }, sizeof((void *[]){ __VA_ARGS__ }) / sizeof(void *))
void util_free_each(void *const *p, size_t n);

/* fsync folder dir so that a rename in it is durable; filesystems that
 * cannot sync a folder (EINVAL, ENOTSUP) are tolerated. Returns 0 or -1
 * with a message. */
int util_sync_dir(const char *dir);

/* Ask for transparent huge pages on a large block p[0..len) (borrowed)
 * that is accessed at random: fewer TLB misses. Only the 2 MiB-aligned
 * middle is advised; failure is harmless, so nothing is returned. */
void util_advise_huge(void *p, size_t len);

#endif
