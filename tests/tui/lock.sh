#!/bin/sh
# One writer per folder, in the explorer (issue 18): a session whose fit
# runs holds the result folder's lock, so a fit into the folder is refused
# naming the explorer's pid; a session that only browses a folder takes no
# lock, and when a fit rewrites the folder meanwhile the explorer stops
# calling its model saved, w does not claim "nothing new to write", and
# nothing is written over the fit's result: it goes beside it.
. "$(dirname "$0")/lib"

make_graph "$tmp/g.tsv"
"$BIN" fit "$tmp/g.tsv" -k 6 --seed 1 -o "$tmp/out" -q
check "a result to open" [ -s "$tmp/out/run.json" ]

# --- an explorer fitting holds the lock ----------------------------------------
start_ui 120x40 C.UTF-8 "$tmp/g.tsv" -k 6 -o "$tmp/live"
check "the explorer fits" wait_screen 'levelled|fitting' 30
pid=$(ui_pid)
check "the explorer holds the folder's lock" grep -q "^$pid\$" "$tmp/live/.coterie.lock"
"$BIN" fit "$tmp/g.tsv" -k 6 -o "$tmp/live" -q 2>"$tmp/second.err"
check "a fit into its folder is refused (exit 1)" [ $? -eq 1 ]
check "naming the explorer's pid" grep -q "pid $pid: .*explore" "$tmp/second.err"
keys q
wait_screen 'Quit\?' 10
keys d
check "the explorer quits" wait_gone_ui 20
check "and leaves no lock behind" [ ! -e "$tmp/live/.coterie.lock" ]

# --- browsing a folder that a fit rewrites ----------------------------------------
start_ui 120x40 C.UTF-8 "$tmp/out"
check "the folder is shown as saved" wait_screen 'saved' 20
check "browsing takes no lock" [ ! -e "$tmp/out/.coterie.lock" ]
cp "$tmp/out/run.json" "$tmp/before.json"
"$BIN" fit "$tmp/g.tsv" -k 6 --seed 7 -o "$tmp/out" -q
check "a fit writes the folder while the explorer browses it" [ $? -eq 0 ]
cp "$tmp/out/run.json" "$tmp/fit.json"
check "the explorer says the folder was rewritten" wait_screen 'rewritten by another' 10
screen | head -1 >"$tmp/header"
check "and no longer calls its model saved" sh -c '! grep -qw "saved" "$1"' sh "$tmp/header"
keys w
check "w says where the result went instead" wait_screen 'saved in' 10
check "w does not claim there is nothing new to write" \
	sh -c '! grep -q "nothing new to write" "$1"' sh "$tmp/screen"
check "the fit's result is not written over" cmp -s "$tmp/fit.json" "$tmp/out/run.json"
check "the explorer's result is beside it" sh -c 'ls -d "$1"/out.saved-* >/dev/null' sh "$tmp"
keys q
wait_screen 'Quit\?' 5 && keys d
wait_gone_ui 20
finish
