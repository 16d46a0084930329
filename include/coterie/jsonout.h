/*
 * jsonout: the one set of helpers every JSON the program writes is built
 * with (run.json, simulate.json, show --json, compare --json), so they
 * share one rule for what JSON cannot hold:
 *   - a number that is not finite is written as null;
 *   - an unsigned integer above the largest json_int_t is written as a
 *     decimal string (JSON numbers are doubles to many readers, and
 *     jansson's integers are signed);
 *   - a string that is not valid UTF-8 (a node name from a file) is written
 *     with C escapes, in ASCII; a NULL string is null.
 * Every constructor returns a new reference, or NULL when out of memory.
 * (The module is not called json: jansson owns the json_ prefix.)
 */
#ifndef COTERIE_JSONOUT_H
#define COTERIE_JSONOUT_H

#include <stdint.h>
#include <stdio.h>

#include <jansson.h>

json_t *jsonout_real(double x);
json_t *jsonout_uint(uint64_t x);
json_t *jsonout_str(const char *s);

/* Set o[key] to v (takes ownership of v, which may be NULL); on failure
 * (v NULL, or out of memory) set *bad to 1, so a builder checks once at
 * the end. */
void jsonout_set(json_t *o, const char *key, json_t *v, int *bad);

/* Append v to array a (takes ownership); on failure set *bad to 1. */
void jsonout_append(json_t *a, json_t *v, int *bad);

/* Dump root (takes ownership; NULL means it could not be built, out of
 * memory) to out with flags, then a newline. Returns 0 or -1 with a
 * message. */
int jsonout_print(json_t *root, FILE *out, size_t flags);

/* root as text with flags (borrowed); caller frees with free(). NULL with
 * a message naming what on failure. */
char *jsonout_text(const json_t *root, size_t flags, const char *what);

#endif
