/*
 * names: the string-interning table of the project. Each new name gets the
 * next id, 0, 1, 2, ..., so ids follow first appearance (never the hash);
 * the strings live in the table's own arena until names_free().
 *
 * Used for a graph's node names (graph*.c), and for the node names and
 * community labels of cover files (cover.c). A name is any bytes but NUL.
 */
#ifndef COTERIE_NAMES_H
#define COTERIE_NAMES_H

#include <stddef.h>
#include <stdint.h>

/* Most names a table holds: ids are 32-bit and below 2^32 - 1. */
#define NAMES_MAX ((uint64_t)UINT32_MAX - 1)
/* What names_intern() returns for a new name when the table holds
 * NAMES_MAX names already (no message: the caller says what they are). */
#define NAMES_FULL (-2)

struct names;

/* An empty table sized for about expect names (0: small, it grows).
 * NULL (with error()) on failure; caller frees with names_free(). */
struct names *names_new(uint64_t expect);
/* Free the table and its strings. names_free(NULL) is a no-op. */
void names_free(struct names *t);

/*
 * The id of s[0..len) (no NUL inside; s is borrowed and copied), added
 * with the next id when new; *added says which. Returns -1 with error()
 * when out of memory, NAMES_FULL (quietly) when the table is full.
 */
int64_t names_intern(struct names *t, const char *s, size_t len, int *added);

/* The id of the NUL-terminated name s, or -1 when it is not in t. */
int64_t names_find(const struct names *t, const char *s);

/* How many names t holds. */
uint32_t names_count(const struct names *t);

/* The name of id (borrowed, valid until names_free()), or NULL when id is
 * out of range. */
const char *names_name(const struct names *t, uint32_t id);

/* Give back the spare room of the id -> name array once no name will be
 * added (the table stays usable). Failure is harmless. */
void names_trim(struct names *t);

#endif
