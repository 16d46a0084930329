#!/bin/sh
# `coterie explore DIR` of a folder written by `fit --refine` (issue 14,
# item 8): the panes read the cover from the checkpoint's strengths, while
# memberships.tsv holds the refined cover; the explorer says so on opening,
# at 60, 70, 80 and 120 columns. An unrefined folder says nothing of it.
. "$(dirname "$0")/lib"

football=$ROOT/tests/data/football/edges.tsv
fitargs="-k 12 --seed 5 --starts 1 --max-sweeps 10 -j 2 -q"
"$BIN" fit "$football" $fitargs --refine -o "$tmp/ref"
check "fit --refine writes a folder to reopen" [ -s "$tmp/ref/checkpoint.cot" ]
"$BIN" fit "$football" $fitargs -o "$tmp/plain"

for size in 60x20 70x24 80x24 120x40; do
	start_ui "$size" C.UTF-8 ref
	wait_screen 'Weak edges' 10
	check "$size: the footer says the cover shown is not memberships.tsv's refined one" \
		wait_screen 'cover from the strengths; memberships.tsv holds'
	keys q
	wait_gone_ui 10
done

start_ui 80x24 C.UTF-8 plain
wait_screen 'Weak edges' 10
screen >"$tmp/plain.screen"
check "an unrefined folder: no such note (the footer is drawn with the panes)" \
	sh -c '! grep -q "memberships.tsv holds" "$1"' sh "$tmp/plain.screen"
keys q
wait_gone_ui 10

finish
