#!/bin/sh
# A result folder holds one run's result (issue 14, item 3): a second fit
# into the same folder leaves no file of the first run, and fit and
# explore refuse to replace the result of a different graph (told by the
# graph fingerprint in checkpoint.cot or run.json) unless --force, as
# simulate refuses to replace a planted graph. A refusal exits 1, as
# simulate's does (coterie(1)).
. "$(dirname "$0")/lib"

karate=$DATA/karate/edges.tsv
football=$DATA/football/edges.tsv
need_file "$karate"
need_file "$football"

# --check-links, then a fit without it: held-out-links.tsv must go.
a=$tmp/a
"$BIN" fit "$karate" -k 3 -q --seed 2 --check-links 0.1 -o "$a"
check "a fit with --check-links writes held-out-links.tsv" [ -f "$a/held-out-links.tsv" ]
"$BIN" fit "$karate" -k 3 -q --seed 2 -o "$a"
check "the same graph's result is replaced without --force (exit 0)" [ $? -eq 0 ]
check "a second fit without --check-links leaves no held-out-links.tsv" \
	[ ! -e "$a/held-out-links.tsv" ]
check "and its run.json has no link check" [ "$(json_get "$a/run.json" link_check)" = null ]

# -k auto, then a given k: k-selection.tsv must go.
b=$tmp/b
"$BIN" fit "$karate" -k auto --k-grid 2,3 -q --seed 2 -o "$b"
check "a fit with -k auto writes k-selection.tsv" [ -f "$b/k-selection.tsv" ]
# a resumed fit continues the same result: the search that chose its k stays
"$BIN" fit --resume "$b" -q
check "a fit resumed in its folder exits 0" [ $? -eq 0 ]
check "a fit resumed in its folder keeps the k-selection.tsv that chose its k" \
	[ -f "$b/k-selection.tsv" ]
"$BIN" fit "$karate" -k 3 -q --seed 2 -o "$b"
check "a second fit with a given k leaves no k-selection.tsv" [ ! -e "$b/k-selection.tsv" ]
check "and its run.json has no k selection" [ "$(json_get "$b/run.json" k_selection)" = null ]
check "and no temporary or stray file: the five files of a result and its manifest" \
	sh -c '[ "$(ls -A "$1" | wc -l)" -eq 6 ] && [ -f "$1/.coterie.manifest" ]' sh "$b"

# A different graph: refused, the folder untouched; --force replaces it.
cp "$a/run.json" "$tmp/a.run.json"
cp "$a/memberships.tsv" "$tmp/a.memberships.tsv"
"$BIN" fit "$football" -k 3 -q -o "$a" 2>"$tmp/other.err"
rc=$?
check "fit refuses a folder holding another graph's result (exit 1)" [ "$rc" -eq 1 ]
check "the refusal says what is there (karate's path and size)" \
	grep -q "holds the result of a fit of another graph ('.*karate/edges.tsv', 34 nodes, 78 edges)" \
	"$tmp/other.err"
check "the refusal says how to go on (--force or -o)" grep -q -- '--force.*-o' "$tmp/other.err"
check "the refused folder keeps its run.json" cmp -s "$a/run.json" "$tmp/a.run.json"
check "the refused folder keeps its memberships.tsv" cmp -s "$a/memberships.tsv" \
	"$tmp/a.memberships.tsv"
"$BIN" fit "$football" -k 3 -o "$a" --force 2>"$tmp/force.err"
check "with --force, fit replaces another graph's result (exit 0)" [ $? -eq 0 ]
check "with --force, it says it replaces it" grep -q 'replacing the result' "$tmp/force.err"
check "run.json then counts football's 115 nodes (Girvan & Newman 2002)" \
	[ "$(json_get "$a/run.json" graph.nodes)" = 115 ]

# Only a checkpoint (a run killed after a periodic one): its fingerprint counts.
rm "$a/run.json"
"$BIN" fit "$karate" -k 3 -q -o "$a" 2>"$tmp/ck.err"
check "a folder with only another graph's checkpoint.cot is refused (exit 1)" [ $? -eq 1 ]

# --resume DIR -o OTHER: OTHER holding another graph's result is refused too.
c=$tmp/c
"$BIN" fit "$football" -k 3 -q -o "$c"
"$BIN" fit --resume "$b" -o "$c" -q 2>"$tmp/resume.err"
check "fit --resume into a folder of another graph is refused (exit 1)" [ $? -eq 1 ]

# The explorer: refused at start, before any fitting or terminal.
"$BIN" explore "$karate" -k 3 -o "$c" </dev/null >/dev/null 2>"$tmp/explore.err"
check "explore refuses an -o folder holding another graph's result (exit 1)" [ $? -eq 1 ]
check "explore's refusal says what is there" \
	grep -q "holds the result of a fit of another graph" "$tmp/explore.err"
"$BIN" explore "$b" -o "$c" </dev/null >/dev/null 2>"$tmp/explore2.err"
check "explore DIR -o OTHER of another graph is refused too" \
	grep -q "holds the result of a fit of another graph" "$tmp/explore2.err"
"$BIN" explore "$karate" -k 3 -o "$c" --force </dev/null >/dev/null 2>"$tmp/explore3.err"
check "explore --force accepts it (the next complaint is the missing terminal)" \
	sh -c '! grep -q "holds the result" "$1" && grep -q "replacing the result" "$1"' sh \
	"$tmp/explore3.err"
# A fit that fails before it writes anything (here: a graph that is not
# there) leaves no folder it made itself, and keeps one it found.
"$BIN" fit "$tmp/no-such-graph.tsv" -k 2 -q -o "$tmp/new/made" 2>/dev/null
check "a failed fit exits 1" [ $? -eq 1 ]
check "the folder it made is gone again" [ ! -e "$tmp/new/made" ]
mkdir "$tmp/found"
"$BIN" fit "$tmp/no-such-graph.tsv" -k 2 -q -o "$tmp/found" 2>/dev/null
check "a folder that was there stays" [ -d "$tmp/found" ]
finish
