/* Tests for follow: the progress file read back as written, and the
 * progress files that are refused because what they would put on a
 * follower's screen breaks the rules of struct follow_progress (found by
 * tests/fuzz/fuzz_result.c). */
#include <stdio.h>
#include "helpers.h"

#include <string.h>

#include "coterie/follow.h"

/* A progress file as follow_progress_write() writes it, with the host line
 * and the trace lines given. */
static void write_progress(const char *dir, const char *host_line, const char *trace)
{
	char text[1024];
	snprintf(text, sizeof text,
		 "coterie progress 1\npid 4242\n%s\nwritten 1733400000.125\nstate fitting\n"
		 "start 1 3 0\nsweep 12 0 1000\nk 2\nseconds 0.250\nrate 48\ntaken -\n%send\n",
		 host_line, trace);
	test_write_file(dir, FOLLOW_PROGRESS, text);
}

static void test_progress_reads_back_what_was_written(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	struct follow_progress p, q;
	memset(&p, 0, sizeof p);
	p.pid = 4242;
	snprintf(p.host, sizeof p.host, "lab-7");
	p.written = 1733400000.125;
	p.state = FIT_FITTING;
	p.start = 2;
	p.starts = 3;
	p.best_start = 1;
	p.sweep = 12;
	p.k = 2;
	p.ntrace = 2;
	p.trace[0] = (struct trace_point){ .sweep = 1, .seconds = 0.01, .loglik = -250.5 };
	p.trace[1] = (struct trace_point){ .sweep = 12, .seconds = 0.25, .loglik = -190.125 };
	assert_int_equal(follow_progress_write(dir, &p), 0);
	assert_int_equal(follow_progress_read(dir, &q), 1);
	assert_int_equal(q.pid, 4242);
	assert_string_equal(q.host, "lab-7");
	assert_int_equal(q.state, FIT_FITTING);
	assert_int_equal(q.start, 2);
	assert_int_equal(q.ntrace, 2);
	assert_int_equal(q.trace[1].sweep, 12);
	assert_true(q.trace[1].loglik == -190.125);
	test_rmtree(dir);
}

/* fuzz_result: "host lab" then bytes 0xff: sscanf's %s takes any byte but
 * a blank, and the follower wrote the name on its state line as it was
 * (struct follow_progress promises printable ASCII). An escape sequence
 * in the name is refused the same way. */
static void test_progress_with_a_host_not_printable_is_refused(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	struct follow_progress p;
	write_progress(dir, "host lab\377\377\377\377-7", "trace 0\n");
	assert_int_equal(follow_progress_read(dir, &p), -1);
	assert_string_equal(p.host, "");
	write_progress(dir, "host lab\033]0;owned\007", "trace 0\n");
	assert_int_equal(follow_progress_read(dir, &p), -1);
	write_progress(dir, "host lab-7", "trace 0\n");
	assert_int_equal(follow_progress_read(dir, &p), 1);
	test_rmtree(dir);
}

/* "nan" and "inf" are numbers to sscanf's %lf; the follower would plot
 * them as the fit's trace. */
static void test_progress_with_numbers_not_finite_is_refused(void **state)
{
	(void)state;
	const char *dir = test_tmpdir();
	struct follow_progress p;
	write_progress(dir, "host lab-7", "trace 2\n1\t0.010\t-250.5\n2\t0.020\tnan\n");
	assert_int_equal(follow_progress_read(dir, &p), -1);
	write_progress(dir, "host lab-7", "trace 1\n1\tinf\t-250.5\n");
	assert_int_equal(follow_progress_read(dir, &p), -1);
	test_write_file(dir, FOLLOW_PROGRESS,
			"coterie progress 1\npid 4242\nhost lab-7\nwritten nan\nstate fitting\n"
			"start 1 3 0\nsweep 12 0 1000\nk 2\nseconds 0.250\nrate 48\ntaken -\n"
			"trace 0\nend\n");
	assert_int_equal(follow_progress_read(dir, &p), -1);
	write_progress(dir, "host lab-7", "trace 2\n1\t0.010\t-250.5\n2\t0.020\t-210.25\n");
	assert_int_equal(follow_progress_read(dir, &p), 1);
	assert_int_equal(p.ntrace, 2);
	test_rmtree(dir);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_progress_reads_back_what_was_written),
		cmocka_unit_test(test_progress_with_a_host_not_printable_is_refused),
		cmocka_unit_test(test_progress_with_numbers_not_finite_is_refused),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
