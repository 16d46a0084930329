#!/bin/sh
# explore's command line, before any screen: bad uses exit 2 with a message,
# and an option holding control bytes is never echoed raw.
. "$(dirname "$0")/lib"

football=$DATA/football/edges.tsv
need_file "$football"

"$BIN" explore "$football" --bogus"$(printf '\033')[2J" </dev/null >"$tmp/out" 2>"$tmp/err"
check "an unknown option exits 2" [ $? -eq 2 ]
check "the unknown option is named, escaped" grep -q "unknown option '--bogus.e\[2J'" "$tmp/err"
check "no raw control byte reaches stderr" no_control_bytes "$tmp/err"

"$BIN" explore "$football" -k auto </dev/null >/dev/null 2>"$tmp/err"
check "-k auto without a terminal exits 1" [ $? -eq 1 ]
check "-k auto without a terminal says it needs one" grep -q "needs a terminal" "$tmp/err"
"$BIN" explore "$football" -k auto --k-grid 5:2 </dev/null 2>"$tmp/err"
check "-k auto with a bad --k-grid exits 2" [ $? -eq 2 ]
"$BIN" explore "$football" -k 4 --k-grid 2:5 </dev/null 2>"$tmp/err"
check "--k-grid without -k auto exits 2" [ $? -eq 2 ]

"$BIN" explore - -k 3 </dev/null 2>"$tmp/err"
check "a graph from standard input exits 2 (the keys come from there)" [ $? -eq 2 ]

"$BIN" explore "$football" </dev/null 2>"$tmp/err"
check "a graph without -k exits 2" [ $? -eq 2 ]

finish
