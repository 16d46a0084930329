/* Tests for names: the string-interning table behind node names and
 * community labels. */
#include "helpers.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "coterie/names.h"

static void test_ids_follow_first_appearance(void **state)
{
	(void)state;
	struct names *t = names_new(0);
	assert_non_null(t);
	const char *in[] = { "b", "a", "b", "c", "a" };
	const int64_t want[] = { 0, 1, 0, 2, 1 };
	const int want_added[] = { 1, 1, 0, 1, 0 };
	for (int i = 0; i < 5; i++) {
		int added = -1;
		assert_int_equal(names_intern(t, in[i], strlen(in[i]), &added), want[i]);
		assert_int_equal(added, want_added[i]);
	}
	assert_int_equal(names_count(t), 3);
	assert_string_equal(names_name(t, 0), "b");
	assert_string_equal(names_name(t, 2), "c");
	assert_null(names_name(t, 3));
	names_free(t);
	names_free(NULL);
}

/* Names shorter than 8 bytes live in their slot, longer ones in the arena:
 * a prefix of a long name, a name with a short name's head, and a name of
 * more than a quarter of an arena chunk are all distinct. */
static void test_short_long_and_huge_names_are_told_apart(void **state)
{
	(void)state;
	struct names *t = names_new(0);
	assert_non_null(t);
	size_t big = (size_t)1 << 19;
	char *huge = malloc(big + 1);
	assert_non_null(huge);
	memset(huge, 'x', big);
	huge[big] = '\0';
	const char *in[] = { "1234567", "12345678", "123456789", "1234567 ", "", huge };
	int added;
	for (int i = 0; i < 6; i++)
		assert_int_equal(names_intern(t, in[i], strlen(in[i]), &added), i);
	for (int i = 0; i < 6; i++) {
		assert_int_equal(names_find(t, in[i]), i);
		assert_string_equal(names_name(t, (uint32_t)i), in[i]);
	}
	assert_int_equal(names_find(t, "123456"), -1);
	assert_int_equal(names_find(t, "1234567890"), -1);
	huge[big - 1] = 'y';
	assert_int_equal(names_find(t, huge), -1);
	free(huge);
	names_free(t);
}

/* Growing the table many times keeps every id, and the strings handed out
 * before stay where they were. */
static void test_growing_keeps_ids_and_strings(void **state)
{
	(void)state;
	enum { N = 100000 };
	struct names *t = names_new(0);
	assert_non_null(t);
	const char *first = NULL;
	for (uint32_t i = 0; i < N; i++) {
		char nm[32];
		snprintf(nm, sizeof nm, i % 2 ? "node-with-a-long-name-%u" : "%u", i);
		int added;
		assert_int_equal(names_intern(t, nm, strlen(nm), &added), i);
		assert_int_equal(added, 1);
		if (i == 0)
			first = names_name(t, 0);
	}
	names_trim(t);
	assert_ptr_equal(names_name(t, 0), first);
	for (uint32_t i = 0; i < N; i++) {
		char nm[32];
		snprintf(nm, sizeof nm, i % 2 ? "node-with-a-long-name-%u" : "%u", i);
		assert_int_equal(names_find(t, nm), i);
	}
	assert_int_equal(names_count(t), N);
	names_free(t);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_ids_follow_first_appearance),
		cmocka_unit_test(test_short_long_and_huge_names_are_told_apart),
		cmocka_unit_test(test_growing_keeps_ids_and_strings),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
