/*
 * jsonout: JSON helpers with one rule for values JSON cannot hold (see
 * jsonout.h). The idea: every builder in the program goes through these
 * constructors, so run.json, simulate.json and the commands' --json can
 * never disagree on how an overflowing count or a non-UTF-8 name looks.
 * A newcomer's trap: jansson's json_string() returns NULL for invalid
 * UTF-8, which json_object_set_new() turns into a silently missing key;
 * jsonout_str() escapes instead, and jsonout_set() records the failure.
 */
#include "coterie/jsonout.h"

#include <inttypes.h>
#include <limits.h>
#include <math.h>
#include <stdlib.h>

#include "coterie/util.h"

#if JSON_INTEGER_IS_LONG_LONG
#define JSONOUT_INT_MAX LLONG_MAX
#else
#define JSONOUT_INT_MAX LONG_MAX
#endif

json_t *jsonout_real(double x)
{
	return isfinite(x) ? json_real(x) : json_null();
}

json_t *jsonout_uint(uint64_t x)
{
	if (x <= (uint64_t)JSONOUT_INT_MAX)
		return json_integer((json_int_t)x);
	char dec[24];
	snprintf(dec, sizeof dec, "%" PRIu64, x);
	return json_string(dec);
}

json_t *jsonout_str(const char *s)
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

void jsonout_set(json_t *o, const char *key, json_t *v, int *bad)
{
	if (!o) {
		json_decref(v);
		*bad = 1;
	} else if (json_object_set_new(o, key, v) != 0) {
		*bad = 1;
	}
}

void jsonout_append(json_t *a, json_t *v, int *bad)
{
	if (!a) {
		json_decref(v);
		*bad = 1;
	} else if (json_array_append_new(a, v) != 0) {
		*bad = 1;
	}
}

int jsonout_print(json_t *root, FILE *out, size_t flags)
{
	if (!root)
		return error("out of memory");
	int rc = json_dumpf(root, out, flags);
	json_decref(root);
	if (rc)
		return error("cannot write the output");
	fputc('\n', out);
	return 0;
}

char *jsonout_text(const json_t *root, size_t flags, const char *what)
{
	char *text = root ? json_dumps(root, flags) : NULL;
	if (!text)
		error("out of memory building %s", what);
	return text;
}
