/* result_commit: a folder's files replaced as one (result_commit.h). */
#include "helpers.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "coterie/result_commit.h"

/* DIR/name in a static buffer (one at a time). */
static const char *path_in_dir(const char *dir, const char *name)
{
	static char buf[4096];
	snprintf(buf, sizeof buf, "%s/%s", dir, name);
	return buf;
}

static int fill_str(struct atomicfile *w, const void *arg)
{
	atomicfile_str(w, arg);
	return 0;
}

/* The contents of the file a reader of dir opens for name, or "-". */
static void read_as_reader(const char *dir, const char *name, char *buf, size_t cap)
{
	char *path = result_file(dir, name);
	assert_non_null(path);
	FILE *f = fopen(path, "r");
	free(path);
	if (!f) {
		snprintf(buf, cap, "-");
		return;
	}
	size_t n = fread(buf, 1, cap - 1, f);
	buf[n] = '\0';
	fclose(f);
}

static void test_commit_replaces_puts_and_drops_and_keeps_a_manifest(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	test_write_file(dir, "a.tsv", "old a\n");
	test_write_file(dir, "b.tsv", "old b\n");
	struct result_commit *c = result_commit_new(dir, 0x1234);
	assert_non_null(c);
	assert_int_equal(result_commit_stage(c, "a.tsv", fill_str, "new a\n"), 0);
	result_commit_drop(c, "b.tsv");
	/* staged, not committed: a reader still reads the old files */
	char buf[64];
	read_as_reader(dir, "a.tsv", buf, sizeof buf);
	assert_string_equal(buf, "old a\n");
	assert_int_equal(result_commit_finish(c), 0);
	result_commit_free(c);
	read_as_reader(dir, "a.tsv", buf, sizeof buf);
	assert_string_equal(buf, "new a\n");
	assert_int_equal(access(path_in_dir(dir, "b.tsv"), F_OK), -1);
	assert_int_equal(access(path_in_dir(dir, RESULT_COMMIT_RECORD), F_OK), -1);
	assert_int_equal(access(path_in_dir(dir, RESULT_MANIFEST), F_OK), 0);
	assert_int_equal(access(path_in_dir(dir, ".a.tsv.staged"), F_OK), -1);
	test_rmtree(dir);
}

/* A writer killed after its commit point: the record and a staged file in
 * place. "new a" is 6 bytes; its FNV-1a is not checked by readers. */
static void make_pending(const char *dir)
{
	test_write_file(dir, "a.tsv", "old a\n");
	test_write_file(dir, "b.tsv", "old b\n");
	test_write_file(dir, ".a.tsv.staged", "new a\n");
	test_write_file(dir, RESULT_COMMIT_RECORD,
			"coterie commit 1\nrun 00000000000000aa\ngraph 0000000000001234\n"
			"put a.tsv 6 0000000000000000\ndrop b.tsv\nend\n");
}

static void test_reader_reads_through_a_pending_commit_without_writing(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	make_pending(dir);
	char buf[64];
	read_as_reader(dir, "a.tsv", buf, sizeof buf);
	assert_string_equal(buf, "new a\n");
	read_as_reader(dir, "b.tsv", buf, sizeof buf);
	assert_string_equal(buf, "-"); /* dropped by the commit */
	assert_int_equal(result_commit_pending(dir), 1);
	/* nothing was renamed */
	assert_int_equal(access(path_in_dir(dir, ".a.tsv.staged"), F_OK), 0);
	test_rmtree(dir);
}

static void test_recover_rolls_a_pending_commit_forward(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	make_pending(dir);
	assert_int_equal(result_commit_recover(dir), 0);
	char buf[64];
	read_as_reader(dir, "a.tsv", buf, sizeof buf);
	assert_string_equal(buf, "new a\n");
	assert_int_equal(access(path_in_dir(dir, "b.tsv"), F_OK), -1);
	assert_int_equal(result_commit_pending(dir), 0);
	assert_int_equal(access(path_in_dir(dir, RESULT_MANIFEST), F_OK), 0);
	test_rmtree(dir);
}

static void test_without_a_record_staged_files_are_stale(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	make_pending(dir);
	unlink(path_in_dir(dir, RESULT_COMMIT_RECORD)); /* killed before the commit point */
	char buf[64];
	read_as_reader(dir, "a.tsv", buf, sizeof buf);
	assert_string_equal(buf, "old a\n");
	assert_int_equal(result_commit_recover(dir), 0);
	assert_int_equal(access(path_in_dir(dir, ".a.tsv.staged"), F_OK), -1);
	read_as_reader(dir, "b.tsv", buf, sizeof buf);
	assert_string_equal(buf, "old b\n");
	test_rmtree(dir);
}

static void test_a_record_naming_a_path_is_ignored(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	test_write_file(dir, "a.tsv", "old a\n");
	test_write_file(dir, RESULT_COMMIT_RECORD,
			"coterie commit 1\nrun 00000000000000aa\ngraph 0000000000001234\n"
			"drop ../a.tsv\nend\n");
	char buf[64];
	read_as_reader(dir, "a.tsv", buf, sizeof buf);
	assert_string_equal(buf, "old a\n");
	assert_int_equal(result_commit_pending(dir), 0);
	test_rmtree(dir);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_commit_replaces_puts_and_drops_and_keeps_a_manifest),
		cmocka_unit_test(test_reader_reads_through_a_pending_commit_without_writing),
		cmocka_unit_test(test_recover_rolls_a_pending_commit_forward),
		cmocka_unit_test(test_without_a_record_staged_files_are_stale),
		cmocka_unit_test(test_a_record_naming_a_path_is_ignored),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
