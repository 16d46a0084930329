#!/bin/sh
# coterie fit --resume DIR continues a saved fit from its checkpoint and
# refuses a different graph (issue 2 part 7). The sweep order is drawn from
# (seed, start, sweep) (include/coterie/fit.h, "Determinism") and the
# checkpoint holds the strengths exactly, so with one start 5 sweeps + 5
# resumed sweeps must give the bytes of 10 sweeps in one go. (With several
# starts the 5-sweep fit keeps the best start at 5 sweeps, which need not be
# the best at 10, so only --starts 1 makes that comparison.)
. "$(dirname "$0")/lib"

football=$DATA/football/edges.tsv
karate=$DATA/karate/edges.tsv
need_file "$football"
need_file "$karate"

last_sweep() { tail -n 1 "$1/trace.tsv" | cut -f1; }

"$BIN" fit "$football" -k 12 -j 2 --seed 4 --starts 1 --max-sweeps 5 --past-plateau -q -o "$tmp/r"
check "a 5-sweep fit exits 0" [ $? -eq 0 ]
check "the 5-sweep fit records 5 sweeps" [ "$(json_get "$tmp/r/run.json" fit.sweeps)" = 5 ]
cp -R "$tmp/r" "$tmp/r-copy"
cp -R "$tmp/r" "$tmp/r-other"
cp "$tmp/r/trace.tsv" "$tmp/trace5.tsv"

"$BIN" fit "$football" --resume "$tmp/r" --max-sweeps 10 -q
check "--resume DIR --max-sweeps 10 exits 0" [ $? -eq 0 ]
check "the resumed fit records 10 sweeps in run.json" \
	[ "$(json_get "$tmp/r/run.json" fit.sweeps)" = 10 ]
check "the resumed trace.tsv runs on to sweep 10" [ "$(last_sweep "$tmp/r")" = 10 ]
# header + sweeps 0..5 = 7 lines; the seconds column is wall time, left out
head -n 7 "$tmp/r/trace.tsv" | cut -f1,3 >"$tmp/resumed-head.ll"
cut -f1,3 "$tmp/trace5.tsv" >"$tmp/first5.ll"
check "the resumed trace.tsv keeps the first 5 sweeps' log-likelihoods" \
	cmp -s "$tmp/resumed-head.ll" "$tmp/first5.ll"
check "the resumed run.json keeps the saved k and seed" \
	[ "$(json_get "$tmp/r/run.json" parameters.k)/$(json_get "$tmp/r/run.json" parameters.seed)" = 12/4 ]

"$BIN" fit "$football" -k 12 -j 1 --seed 4 --starts 1 --max-sweeps 10 --past-plateau -q \
	-o "$tmp/straight"
check "5 sweeps then 5 resumed equal 10 sweeps in one go (memberships.tsv)" \
	cmp -s "$tmp/r/memberships.tsv" "$tmp/straight/memberships.tsv"

# The checkpoint carries the graph: resuming without the graph file works
# and gives the same answer; -o sends the result elsewhere.
"$BIN" fit --resume "$tmp/r-copy" --max-sweeps 10 -q -o "$tmp/r-elsewhere"
check "--resume without the graph file exits 0" [ $? -eq 0 ]
check "--resume without the graph file gives the same memberships" \
	cmp -s "$tmp/r/memberships.tsv" "$tmp/r-elsewhere/memberships.tsv"
check "--resume with -o elsewhere leaves the saved folder as it was" \
	[ "$(json_get "$tmp/r-copy/run.json" fit.sweeps)" = 5 ]

# A different graph is refused, and the saved folder is left alone.
"$BIN" fit "$karate" --resume "$tmp/r-other" --max-sweeps 10 -q 2>"$tmp/other.err"
check "--resume with a different graph exits 1" [ $? -eq 1 ]
check "--resume with a different graph says why, naming the graph" \
	grep -q 'karate' "$tmp/other.err"
check "--resume with a different graph leaves run.json at 5 sweeps" \
	[ "$(json_get "$tmp/r-other/run.json" fit.sweeps)" = 5 ]

# The football graph with one edge more is a different graph.
{ cat "$football"; printf 'a new team\tanother new team\n'; } >"$tmp/football-plus.tsv"
"$BIN" fit "$tmp/football-plus.tsv" --resume "$tmp/r-other" -q 2>"$tmp/plus.err"
check "--resume with the graph plus one edge exits 1" [ $? -eq 1 ]

"$BIN" fit "$football" --resume "$tmp/r-other" -k 7 -q 2>/dev/null
check "--resume with a different -k exits 2" [ $? -eq 2 ]

mkdir "$tmp/nothing"
"$BIN" fit "$football" --resume "$tmp/nothing" -q 2>"$tmp/nothing.err"
check "--resume from a folder without a checkpoint exits 1" [ $? -eq 1 ]
check "--resume from a folder without a checkpoint names the file" \
	grep -q 'checkpoint' "$tmp/nothing.err"

# A damaged checkpoint is refused (result.h: a checksum of every byte).
ck=$tmp/r-other/checkpoint.cot
size=$(wc -c <"$ck")
half=$((size / 2))
{ head -c "$half" "$ck"; printf '\377'; tail -c +$((half + 2)) "$ck"; } >"$tmp/damaged"
if cmp -s "$tmp/damaged" "$ck"; then
	{ head -c "$half" "$ck"; printf '\000'; tail -c +$((half + 2)) "$ck"; } >"$tmp/damaged"
fi
cp "$tmp/damaged" "$ck"
"$BIN" fit "$football" --resume "$tmp/r-other" -q 2>"$tmp/damaged.err"
check "--resume from a checkpoint with one byte changed exits 1" [ $? -eq 1 ]
check "--resume from a damaged checkpoint names the file" grep -q 'checkpoint.cot' "$tmp/damaged.err"
head -c "$half" "$tmp/damaged" >"$ck"
"$BIN" fit "$football" --resume "$tmp/r-other" -q 2>"$tmp/cut.err"
check "--resume from a checkpoint cut in half exits 1" [ $? -eq 1 ]

finish
