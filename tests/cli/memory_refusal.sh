#!/bin/sh
# The memory refusal says what would fit (issue 18), and means it: under a
# limit (COTERIE_MEMORY_LIMIT, "as if the machine had that much"), a fit
# too large is refused with "k = K is the largest that would fit"; a fit
# of a k a little below K passes the check and runs, one twice K is
# refused. Under an address-space limit (ulimit -v), where every
# thread's stack counts, too many threads are refused with a pointer to
# -j 1, and -j 1 runs.
. "$(dirname "$0")/lib"

# 40,000 nodes: the estimates grow with n while the resident size drifts by
# a few hundred KiB from one run to the next; on 10,000 nodes that drift
# moved K by a quarter (33-43) and made the checks below flaky
"$BIN" simulate -n 40000 --sizes 20:500 --mean-degree 20 --mixing 0.2 --seed 4 -o "$tmp/g" -q
g=$tmp/g/edges.tsv
# in_all K: the "in all" of the refusal of k = K under a limit of 1 KiB, in KiB
in_all()
{
	COTERIE_MEMORY_LIMIT=1K "$BIN" fit "$g" -k "$1" -j 1 -q -o "$tmp/none" 2>&1 |
		sed -n 's/.*(\([0-9.]*\) \([MG]\)iB in all.*/\1 \2/p' |
		awk '{ print int($1 * ($2 == "G" ? 1048576 : 1024)) }'
}
lo=$(in_all 2)
hi=$(in_all 2000)
# measured on 2026-12-05: about 5 MiB more than the resident size at
# k = 2, 15 MiB at k = 2000 (21 and 31 MiB in all); the message rounds to
# whole MiB and the resident size moves between the two runs by less than
# one, so the difference read back is at least 8 MiB
check "the estimate grows from k = 2 ($lo KiB) to k = 2000 ($hi KiB)" \
	[ "${hi:-0}" -ge $((${lo:-0} + 8192)) ]
lim=$(((lo + hi) / 2))K
COTERIE_MEMORY_LIMIT=$lim "$BIN" fit "$g" -k 2000 -j 1 --starts 1 \
	--max-sweeps 1 -q -o "$tmp/big" 2>"$tmp/big.err"
check "a fit too large for the limit ($lim): exit 1" [ $? -eq 1 ]
K=$(sed -n 's/.*; k = \([0-9][0-9]*\) is the largest that would fit at 1 thread$/\1/p' "$tmp/big.err")
check "the refusal names the largest k that fits" [ -n "$K" ]
if [ -n "$K" ]; then
	check "that k is below the one asked for" [ "$K" -lt 2000 ]
	# the resident size at the check moves from one process to the next (a
	# run on a loaded CI machine refused K - K/8 once; on 2026-12-03 K came
	# out 199 to 242 in runs of the same command, so K + K/4 + 8 passed in
	# about half the runs; on 2026-12-05, 40,000 nodes, 81 to 86 in five
	# runs): half of K passes, twice K is refused
	COTERIE_MEMORY_LIMIT=$lim "$BIN" fit "$g" -k $((K / 2)) -j 1 --starts 1 \
		--max-sweeps 1 -q -o "$tmp/k" 2>"$tmp/k.err"
	st=$?
	check "a fit of half that k passes the check and runs" [ $st -eq 0 ]
	[ $st -eq 0 ] || sed 's/^/# /' "$tmp/k.err"
	COTERIE_MEMORY_LIMIT=$lim "$BIN" fit "$g" -k $((2 * K)) -j 1 --starts 1 \
		--max-sweeps 1 -q -o "$tmp/k1" 2>"$tmp/k1.err"
	check "one of twice that k is refused" [ $? -eq 1 ]
	check "with about the same largest k" grep -q "; k = [0-9]* is the largest" "$tmp/k1.err"
fi
COTERIE_MEMORY_LIMIT=1K "$BIN" fit "$g" -k 10 -j 1 -q -o "$tmp/none" 2>"$tmp/none.err"
check "a limit nothing fits under says so" grep -q 'no k of 2 or more would fit' "$tmp/none.err"

if grep -q -a -e __asan_init -e __tsan_init "$BIN" || [ "$(head -c 2 "$BIN")" = '#!' ]; then
	echo "# SKIP ulimit -v under a sanitizer or valgrind"
else
	(ulimit -v 120000; exec "$BIN" fit "$g" -k 10 -j 64 --max-sweeps 1 -q -o "$tmp/v") \
		2>"$tmp/v.err"
	st=$?
	if [ "$st" -eq 127 ]; then
		echo "# SKIP the shared libraries do not load under ulimit -v 120000"
	else
		check "ulimit -v and 64 threads: refused" [ "$st" -eq 1 ]
		check "the refusal points to fewer threads" grep -q -- '-j 1' "$tmp/v.err"
		(ulimit -v 120000; exec "$BIN" fit "$g" -k 10 -j 1 --max-sweeps 1 -q -o "$tmp/v1") \
			2>"$tmp/v1.err"
		check "and -j 1 runs" [ $? -eq 0 ]
	fi
fi
finish
