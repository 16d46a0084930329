#!/bin/sh
# Faults (issue 6): an interrupted fit resumes to the bytes of the
# uninterrupted one; periodic checkpoints survive kill -9; a write error
# while saving leaves the previous result whole; a fit that would not fit
# in memory is refused before it starts, with the estimate.
. "$(dirname "$0")/lib"

# planted GROUPS SIZE PIN POUT SEED: groups of SIZE nodes, a pair inside a
# group linked with probability PIN, across groups POUT, drawn from a
# fixed LCG (the constants of the C standard's example rand()), so every
# run sees the same file.
planted()
{
	awk -v G="$1" -v S="$2" -v PIN="$3" -v POUT="$4" -v s="$5" 'BEGIN {
		n = G * S
		for (u = 0; u < n; u++)
			for (v = u + 1; v < n; v++) {
				s = (s * 1103515245 + 12345) % 2147483648
				r = s / 2147483648
				same = int(u / S) == int(v / S)
				if ((same && r < PIN) || (!same && r < POUT))
					printf "n%d\tn%d\n", u, v
			}
	}'
}
# 50 groups of 60: each start takes about half a second on 2 threads,
# long enough for the signals below to land inside the start they are
# sent at (from label propagation's clusters the 20 groups of 40 used
# before were fitted in 0.1 s, and an interrupt could come after the end)
g=$tmp/planted.tsv
planted 50 60 0.3 0.005 4242 >"$g"

# --- an interrupt, then --resume: the bytes of the uninterrupted fit -----
# Default starts (3) and refinement, so the resume must carry the best
# earlier start, the start in progress and where its moves stood
# (include/coterie/fit.h, struct fit_resume).
"$BIN" fit "$g" -k 50 -j 2 --seed 3 -q -o "$tmp/whole"
check "the uninterrupted fit exits 0" [ $? -eq 0 ]

# interrupt_at SIG PATTERN NAME: start the same fit, send SIG once stderr
# matches PATTERN, and check the interrupted folder.
interrupt_at()
{
	"$BIN" fit "$g" -k 50 -j 2 --seed 3 -o "$tmp/$3" 2>"$tmp/$3.err" &
	pid=$!
	bg_pids="$bg_pids $pid"
	if wait_for_grep "$2" "$tmp/$3.err" 60; then
		kill -"$1" "$pid"
	fi
	wait "$pid"
	st=$?
	check "$3: exit status 130 after SIG$1" [ "$st" -eq 130 ]
	check "$3: run.json says interrupted" \
		[ "$(json_get "$tmp/$3/run.json" fit.status 2>/dev/null)" = interrupted ]
	check "$3: stderr says the sweep in progress ends first" \
		grep -q 'ending the sweep in progress' "$tmp/$3.err"
}
resume_same()
{
	"$BIN" fit --resume "$tmp/$1" -j 2 -q
	check "$1: --resume exits 0" [ $? -eq 0 ]
	check "$1: the resumed memberships.tsv equals the uninterrupted one, byte for byte" \
		cmp -s "$tmp/whole/memberships.tsv" "$tmp/$1/memberships.tsv"
	check "$1: and communities.tsv too" \
		cmp -s "$tmp/whole/communities.tsv" "$tmp/$1/communities.tsv"
	check "$1: run.json of the resumed fit no longer says interrupted" \
		[ "$(json_get "$tmp/$1/run.json" fit.status)" != interrupted ]
}
interrupt_at INT 'start 1/3' first
resume_same first
interrupt_at TERM 'start 2/3' second
resume_same second

# Interrupted twice: the resumed fit interrupted again resumes just as well.
interrupt_at INT 'start 1/3' twice
"$BIN" fit --resume "$tmp/twice" -j 1 2>"$tmp/twice2.err" &
pid=$!
bg_pids="$bg_pids $pid"
wait_for_grep 'start 2/3' "$tmp/twice2.err" 60 && kill -INT "$pid"
wait "$pid"
check "twice: the resumed fit, interrupted again, exits 130" [ $? -eq 130 ]
resume_same twice

# A second signal stops inside the sweep at once; the folder is still saved.
# (--epsilon: the signals must reach the fit, not the background's trials)
"$BIN" fit "$g" -k 50 -j 2 --seed 3 --tol 0 --max-sweeps 100000 --epsilon 0.02 -o "$tmp/hard" \
	2>"$tmp/hard.err" &
pid=$!
bg_pids="$bg_pids $pid"
wait_for_grep 'sweep 1 ' "$tmp/hard.err" 60
kill -INT "$pid"
kill -INT "$pid"
wait "$pid"
check "two interrupts: exit status 130" [ $? -eq 130 ]
check "two interrupts: the folder is saved" [ -s "$tmp/hard/checkpoint.cot" ]
check "two interrupts: run.json says interrupted" \
	[ "$(json_get "$tmp/hard/run.json" fit.status)" = interrupted ]

# --- periodic checkpoints survive kill -9, and resume exactly -----------
# A periodic checkpoint is taken at the end of a sweep with a resume point
# (include/coterie/fit.h, fit_want_resume_point), so the fit killed with
# no chance to save goes on to the uninterrupted fit's bytes.
"$BIN" fit "$g" -k 50 -j 2 --seed 3 --checkpoint-every 0.2 -q -o "$tmp/killed" &
pid=$!
bg_pids="$bg_pids $pid"
i=0
while [ ! -s "$tmp/killed/checkpoint.partial.cot" ] && kill -0 "$pid" 2>/dev/null && [ $i -lt 600 ]; do
	sleep 0.05
	i=$((i + 1))
done
kill -KILL "$pid" 2>/dev/null
wait "$pid" 2>/dev/null
if [ -e "$tmp/killed/run.json" ]; then
	echo "# SKIP the fit ended before kill -9 came"
else
	# periodic checkpoints have a name of their own: no reader takes them
	# for a finished result (coterie-files(5))
	check "--checkpoint-every 0.2: a checkpoint is written while the fit runs" \
		[ -s "$tmp/killed/checkpoint.partial.cot" ]
	check "--checkpoint-every 0.2: it is not the result's checkpoint.cot" \
		[ ! -e "$tmp/killed/checkpoint.cot" ]
	"$BIN" show "$tmp/killed" >"$tmp/killed.show" 2>&1
	check "after kill -9: the checkpoint opens with coterie show" [ $? -eq 0 ]
	check "after kill -9: show says it is an unfinished fit" \
		grep -q 'no result yet, only an unfinished fit' "$tmp/killed.show"
	"$BIN" fit --resume "$tmp/killed" -j 2 -q
	check "after kill -9: the fit resumes from it (exit 0)" [ $? -eq 0 ]
	check "after kill -9: the resumed memberships.tsv equals the uninterrupted one" \
		cmp -s "$tmp/whole/memberships.tsv" "$tmp/killed/memberships.tsv"
	check "after the resumed fit: the unfinished fit's checkpoint is gone" \
		[ ! -e "$tmp/killed/checkpoint.partial.cot" ]
fi

# --- a write error while saving: the previous result stays whole --------
# ulimit -f makes write() fail with EFBIG once a file would pass the limit
# (POSIX setrlimit RLIMIT_FSIZE; SIGXFSZ ignored), the same path as a full
# disk (ENOSPC) through the same checks. The block size of this shell's
# ulimit -f is measured, not assumed.
blk=$(sh -c 'trap "" XFSZ; ulimit -f 1; head -c 4096 /dev/zero >"$1" 2>/dev/null; wc -c <"$1"' sh "$tmp/blk")
karate=$DATA/karate/edges.tsv
"$BIN" fit "$karate" -k 3 --seed 1 -q -o "$tmp/prev"
sum_prev() { (cd "$tmp/prev" && ls -a && cat ./*) | cksum; }
before=$(sum_prev)
# a new fit whose trace.tsv (text, ~30 bytes a sweep) outgrows its
# checkpoint (20 bytes a sweep), measured in a scratch folder
long="$karate -k 3 --seed 2 --tol 0 --max-sweeps 500 --starts 1 -q"
"$BIN" fit $long -o "$tmp/probe"
cksize=$(wc -c <"$tmp/probe/checkpoint.cot")
# (--force: the folder holds karate's result, and fit refuses another graph's)
(trap '' XFSZ; ulimit -f 1; exec "$BIN" fit "$DATA/football/edges.tsv" -k 12 --seed 2 -q \
	--force -o "$tmp/prev") 2>"$tmp/efbig.err"
check "a write error (EFBIG) while saving: exit 1" [ $? -eq 1 ]
check "a write error: the message names the file and the reason" \
	grep -q "cannot write '.*prev/checkpoint.cot': File too large" "$tmp/efbig.err"
check "a write error: the previous result is byte for byte as it was" [ "$(sum_prev)" = "$before" ]
check "a write error: no temporary file is left" \
	[ -z "$(find "$tmp/prev" -name '.*' ! -name . ! -name .coterie.manifest 2>/dev/null)" ]
check "a write error everywhere: no empty folder is left where the result was tried elsewhere" \
	[ -z "$(find "$tmp" -maxdepth 1 -name 'prev.saved-*' 2>/dev/null)" ]
# Room for the checkpoint but not for every file: still nothing replaced,
# since every file is written before any is renamed (result.h).
blocks=$(((cksize + blk - 1) / blk))
big=$(ls -l "$tmp/probe" | awk -v lim=$((blocks * blk)) '$5 > lim { n++ } END { print n + 0 }')
if [ "$big" -gt 0 ]; then
	(trap '' XFSZ; ulimit -f "$blocks"; exec "$BIN" fit $long -o "$tmp/prev") 2>"$tmp/efbig2.err"
	check "room for the checkpoint only: exit 1" [ $? -eq 1 ]
	check "room for the checkpoint only: the file that did not fit is named" \
		grep -q "cannot write '.*prev/trace.tsv': File too large" "$tmp/efbig2.err"
	check "room for the checkpoint only: the previous result is whole" \
		[ "$(sum_prev)" = "$before" ]
	check "room for the checkpoint only: no temporary file is left" \
		[ -z "$(find "$tmp/prev" -name '.*' ! -name . ! -name .coterie.manifest 2>/dev/null)" ]
else
	echo "# SKIP no file of the probe fit is larger than its checkpoint"
fi

# --- memory: refused before fitting, with the estimate -------------------
COTERIE_MEMORY_LIMIT=1M "$BIN" fit "$karate" -k 3 -o "$tmp/mem" 2>"$tmp/mem.err"
check "a machine of 1 MiB (COTERIE_MEMORY_LIMIT): exit 1" [ $? -eq 1 ]
check "the refusal gives the estimate and the limit" \
	grep -q 'not enough memory for this fit: it would need about .* (.* in all, an estimate for 34 nodes, 78 edges, k = 3' "$tmp/mem.err"
check "the refusal names what limits it" grep -q 'COTERIE_MEMORY_LIMIT is 1 MiB' "$tmp/mem.err"
check "the refusal comes before fitting (no progress line)" \
	sh -c '! grep -q "sweep" "$1"' sh "$tmp/mem.err"
check "the refusal writes no result" [ ! -e "$tmp/mem/memberships.tsv" ]
COTERIE_MEMORY_LIMIT=64G "$BIN" fit "$karate" -k 3 -q -o "$tmp/mem2"
check "COTERIE_MEMORY_LIMIT=64G: the same fit runs" [ $? -eq 0 ]
# The real limit: ulimit -v counts address space, where every thread's
# stack counts. Not under a sanitizer (its shadow memory needs terabytes of
# address space) nor under valgrind (COTERIE_BIN is then a script).
if grep -q -a -e __asan_init -e __tsan_init "$BIN" || [ "$(head -c 2 "$BIN")" = '#!' ]; then
	echo "# SKIP ulimit -v under a sanitizer or valgrind"
else
	(ulimit -v 120000; exec "$BIN" fit "$karate" -k 3 -j 64 -o "$tmp/memv") 2>"$tmp/memv.err"
	st=$?
	if [ "$st" -eq 127 ]; then
		echo "# SKIP the shared libraries do not load under ulimit -v 120000"
	else
		check "ulimit -v 120000 and 64 threads: exit 1" [ "$st" -eq 1 ]
		check "ulimit -v: the refusal names the address-space limit" \
			grep -q 'not enough memory .*the address-space limit (ulimit -v) is 117 MiB' "$tmp/memv.err"
		(ulimit -v 120000; exec "$BIN" fit "$karate" -k 3 -j 1 -q -o "$tmp/memv1")
		check "ulimit -v 120000 and 1 thread: the fit runs" [ $? -eq 0 ]
	fi
fi

finish
