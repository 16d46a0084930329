#!/bin/sh
# A fit killed at any step of its writing (issue 18): a folder holding a
# finished result of graph X is given to a fit of graph Y (--force) with
# periodic checkpoints, and the fit is stopped right after its N-th
# fsync, rename or removal (the test hook COTERIE_CRASH_AT=N of
# src/atomicfile.c, which ends the process as kill -9 would), for every N
# until the fit ends on its own. After each stop the folder holds X's
# result whole or Y's whole, never a mix: the checker folder_whole.py
# (reading through a commit record as readers must, and checking every
# file against the record's or manifest's sizes and FNV-1a) says which,
# and `coterie show` reads that one without a warning of a mix; the
# periodic checkpoints never touch X's files (they go to
# checkpoint.partial.cot); when the stop left an unfinished fit of Y
# beside X's result, `fit --resume` continues it to the bytes of Y's
# uninterrupted fit; and the next writer finishes a commit left half done.
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

old=0 new=0 pending=0 resumed=0 n=1 bad=0
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
	whole=$(python3 "$(dirname "$0")/folder_whole.py" "$d" "$tmp/X" "$tmp/Y")
	if ! "$BIN" show "$d" >"$d.show" 2>"$d.show.err"; then
		fail "N=$n: show reads the folder"
		bad=1
	elif grep -q 'mixes two results\|is not the cover\|does not match' "$d.show.err"; then
		fail "N=$n: show finds a mix: $(head -1 "$d.show.err")"
		bad=1
	elif [ "$whole" = old ]; then
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
	elif [ "$whole" = new ]; then
		new=$((new + 1))
		if [ -e "$d/.coterie.commit" ]; then
			# the next writer (here one that fails to read its graph, after
			# taking the lock) finishes the commit: the folder is Y's, whole
			pending=$((pending + 1))
			"$BIN" fit "$tmp/no-such-graph.tsv" -k 2 -q -o "$d" 2>"$d.next.err"
			[ ! -e "$d/.coterie.commit" ] &&
				[ "$(python3 "$(dirname "$0")/folder_whole.py" "$d" "$tmp/X" "$tmp/Y")" = new ] ||
				{ fail "N=$n: the next writer finishes the commit"; bad=1; }
		fi
	else
		fail "N=$n: $whole"
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

check "every stop left X's result whole or Y's whole, never a mix" [ "$bad" -eq 0 ]
check "some stops fell between the commit point and its end" [ "$pending" -gt 0 ]
check "the fit was stopped while writing its periodic checkpoints" [ "$resumed" -gt 0 ]
check "the fit ends on its own within 400 steps ($n)" [ "$n" -le 400 ]
printf '# %d stops: %d with X whole (%d resumed), %d with Y whole (%d before the commit ended)\n' \
	$((n - 1)) "$old" "$resumed" "$new" "$pending"
finish
