#!/bin/sh
# A header line of an edge list (issue 14, item 4): "source,target,weight"
# is a header, said in a notice naming the file and line, never an edge
# between nodes "source" and "target"; --no-header reads it as an edge (a
# graph whose nodes are named so), --skip-lines N skips a preamble, on fit
# and explore alike. Karate (tests/data/karate, Zachary 1977: 34 nodes, 78
# edges) is written as a CSV file with a header and a weight column, as
# Gephi and networkx.to_pandas_edgelist write them (common practice).
. "$(dirname "$0")/lib"

karate=$DATA/karate/edges.tsv
need_file "$karate"

fit() { "$BIN" fit "$@" -k 4 -j 2 --seed 5; }
counts() { echo "$(json_get "$1/run.json" graph.nodes)/$(json_get "$1/run.json" graph.edges)"; }

{ echo "source,target,weight"; awk -F '\t' '{ print $1 "," $2 ",1" }' "$karate"; } >"$tmp/karate.csv"

fit "$karate" -q -o "$tmp/plain"
check "plain karate: exit 0" [ $? -eq 0 ]
fit "$tmp/karate.csv" -o "$tmp/csv" 2>"$tmp/err"
check "CSV with a header: exit 0" [ $? -eq 0 ]
check "CSV with a header: 34 nodes, 78 edges (Zachary 1977), no node 'source'" \
	[ "$(counts "$tmp/csv")" = 34/78 ]
check "CSV with a header: a notice names the file, the line and the header" \
	grep -q "^coterie: .*karate.csv:1: skipped a header line 'source,target,weight'" "$tmp/err"
check "CSV with a header: the notice says how to read it as an edge" \
	grep -q -- "--no-header" "$tmp/err"
check "CSV with a header: the same memberships as the plain file" \
	cmp -s "$tmp/plain/memberships.tsv" "$tmp/csv/memberships.tsv"
check "CSV with a header: no member named source" \
	sh -c "! grep -q '^source	' '$tmp/csv/memberships.tsv'"

fit "$tmp/karate.csv" -q --no-header -o "$tmp/nohdr"
check "--no-header: exit 0" [ $? -eq 0 ]
check "--no-header: the first line is an edge, source-target (36 nodes, 79 edges)" \
	[ "$(counts "$tmp/nohdr")" = 36/79 ]

{ echo "Zachary's karate club"; echo "78 edges, one per line"; echo "(weights all 1)"; \
  cat "$tmp/karate.csv"; } >"$tmp/preamble.csv"
fit "$tmp/preamble.csv" --skip-lines 4 -o "$tmp/skip" 2>"$tmp/err"
check "--skip-lines 4: exit 0" [ $? -eq 0 ]
check "--skip-lines 4: 34 nodes, 78 edges" [ "$(counts "$tmp/skip")" = 34/78 ]
check "--skip-lines 4: a notice says the lines were skipped" \
	grep -q "preamble.csv: skipped the first 4 lines" "$tmp/err"
fit "$tmp/preamble.csv" -q --skip-lines 3 -o "$tmp/skip3"
check "--skip-lines 3: the line after is an edge, not a guessed header (36 nodes)" \
	[ "$(counts "$tmp/skip3")" = 36/79 ]
fit "$tmp/preamble.csv" -q --skip-lines x -o "$tmp/skipx" 2>"$tmp/err"
check "--skip-lines x: exit 2" [ $? -eq 2 ]

# nodes that are words but not column names stay nodes
printf 'alice,bob\nbob,carol\ncarol,dave\ndave,alice\n' >"$tmp/words.csv"
fit "$tmp/words.csv" -q -o "$tmp/words"
check "names that are words: 4 nodes, 4 edges" [ "$(counts "$tmp/words")" = 4/4 ]

# explore reads the graph the same way (it stops before the screen: no terminal)
"$BIN" explore "$tmp/karate.csv" -k 4 </dev/null >/dev/null 2>"$tmp/err"
check "explore: the header is skipped, with the notice" \
	grep -q "karate.csv:1: skipped a header line" "$tmp/err"
check "explore: 34 nodes, 78 edges" grep -q "karate.csv: 34 nodes, 78 edges" "$tmp/err"
"$BIN" explore "$tmp/karate.csv" -k 4 --no-header </dev/null >/dev/null 2>"$tmp/err"
check "explore --no-header: 36 nodes, 79 edges" grep -q "karate.csv: 36 nodes, 79 edges" "$tmp/err"
"$BIN" explore "$tmp/preamble.csv" -k 4 --skip-lines 4 </dev/null >/dev/null 2>"$tmp/err"
check "explore --skip-lines 4: 34 nodes, 78 edges" grep -q "preamble.csv: 34 nodes, 78 edges" "$tmp/err"

finish
