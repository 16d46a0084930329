#!/bin/sh
# A fit killed at any step of its writing (issue 18): a folder holding a
# finished result of graph X is given to a fit of graph Y (--force) with
# periodic checkpoints, and the fit is stopped right after its N-th
# fsync, rename or removal (the test hook COTERIE_CRASH_AT=N of
# src/atomicfile.c, which ends the process as kill -9 would), for every N
# until the fit ends on its own. After each stop, `coterie show` must show
# X's result whole, or Y's whole (its memberships, communities, run.json
# and trace), or say that the folder mixes two results (the final write
# renames the checkpoint first and run.json last, so a stop between them
# leaves a run.json of another graph than the checkpoint); the periodic checkpoints never touch X's files (they go to
# checkpoint.partial.cot); and when the stop left an unfinished fit of Y
# beside X's result, `fit --resume` continues it to the bytes of Y's
# uninterrupted fit.
. "$(dirname "$0")/lib"

"$BIN" simulate -n 300 --seed 1 -o "$tmp/gx" -q
"$BIN" simulate -n 5000 --seed 2 -o "$tmp/gy" -q
"$BIN" fit "$tmp/gx/edges.tsv" -k 5 --seed 1 -j 1 -q -o "$tmp/X"
check "the result of graph X is written" [ -s "$tmp/X/memberships.tsv" ]
"$BIN" fit "$tmp/gy/edges.tsv" -k 30 --seed 3 -j 1 -q -o "$tmp/Y"
check "the uninterrupted fit of graph Y is written" [ -s "$tmp/Y/memberships.tsv" ]

yfp=$(json_get "$tmp/Y/run.json" graph.fingerprint)
ysweeps=$(json_get "$tmp/Y/run.json" fit.sweeps)

# same FILE... in folders A and B
same()
{
	a=$1 b=$2
	shift 2
	for f in "$@"; do
		cmp -s "$a/$f" "$b/$f" || return 1
	done
	return 0
}

old=0 new=0 mixed=0 resumed=0 n=1 bad=0
while [ "$n" -le 400 ]; do
	d=$tmp/d$n
	cp -R "$tmp/X" "$d"
	COTERIE_CRASH_AT=$n "$BIN" fit "$tmp/gy/edges.tsv" -k 30 --seed 3 -j 1 -q --force \
		--checkpoint-every 0.1 -o "$d" 2>"$d.fit.err"
	st=$?
	if [ "$st" -eq 0 ]; then
		check "N=$n: past the last step, the fit ends with Y's result" \
			same "$d" "$tmp/Y" memberships.tsv communities.tsv
		check "N=$n: and leaves no unfinished fit behind" [ ! -e "$d/checkpoint.partial.cot" ]
		break
	fi
	if [ "$st" -ne 137 ]; then
		fail "N=$n: the fit stopped by the hook exits 137 (got $st)"
		bad=1
		break
	fi
	if ! "$BIN" show "$d" >"$d.show" 2>"$d.show.err"; then
		fail "N=$n: show reads the folder"
		bad=1
	elif same "$d" "$tmp/X" checkpoint.cot memberships.tsv communities.tsv trace.tsv run.json
	then
		old=$((old + 1))
		if [ -e "$d/checkpoint.partial.cot" ]; then
			grep -q 'unfinished fit' "$d.show.err" ||
				{ fail "N=$n: show mentions the unfinished fit beside X's result"; bad=1; }
			"$BIN" fit --resume "$d" -j 1 -q 2>"$d.resume.err" &&
				same "$d" "$tmp/Y" memberships.tsv communities.tsv &&
				[ ! -e "$d/checkpoint.partial.cot" ] ||
				{ fail "N=$n: fit --resume continues Y's unfinished fit to its end"; bad=1; }
			resumed=$((resumed + 1))
		fi
	elif grep -q 'mixes two results\|is not the cover' "$d.show.err"; then
		mixed=$((mixed + 1))
	elif same "$d" "$tmp/Y" memberships.tsv communities.tsv &&
		[ "$(json_get "$d/run.json" graph.fingerprint)" = "$yfp" ] &&
		[ "$(json_get "$d/run.json" fit.sweeps)" = "$ysweeps" ] &&
		[ "$(wc -l <"$d/trace.tsv")" = "$(wc -l <"$tmp/Y/trace.tsv")" ]; then
		new=$((new + 1))
	else
		fail "N=$n: the folder mixes two results and show does not say so"
		bad=1
	fi
	n=$((n + 1))
done
# X's search for k is not Y's: a resumed unfinished fit of Y does not keep it
d=$tmp/ksel
cp -R "$tmp/X" "$d"
printf 'k\tloglik\n5\t-1\n' >"$d/k-selection.tsv"
touch -d '2001-01-01' "$d/k-selection.tsv"
COTERIE_CRASH_AT=3 "$BIN" fit "$tmp/gy/edges.tsv" -k 30 --seed 3 -j 1 -q --force \
	--checkpoint-every 0.1 -o "$d" 2>/dev/null
check "a stop after the first periodic checkpoint leaves it beside X's result" \
	[ -s "$d/checkpoint.partial.cot" ]
"$BIN" fit --resume "$d" -j 1 2>"$d.err"
check "fit --resume continues the unfinished fit" \
	same "$d" "$tmp/Y" memberships.tsv communities.tsv
check "and says it continues the unfinished fit" grep -q 'unfinished fit' "$d.err"
check "and drops X's k-selection.tsv" [ ! -e "$d/k-selection.tsv" ]

check "every stop left X's result whole, Y's whole, or a mix show warns of" [ "$bad" -eq 0 ]
check "the fit was stopped while writing its periodic checkpoints" [ "$resumed" -gt 0 ]
check "the fit ends on its own within 400 steps ($n)" [ "$n" -le 400 ]
printf '# %d stops: %d with X whole (%d resumed), %d with Y whole, %d mixed and warned\n' \
	$((n - 1)) "$old" "$resumed" "$new" "$mixed"
finish
