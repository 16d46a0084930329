#!/bin/sh
# Live directed and two-mode fits in the explorer (issue 15): a graph with
# --directed or --two-mode is fitted as `coterie fit` fits it, w at the
# plateau writes the same memberships.tsv and communities.tsv as fit, and
# the folder reopens (two-mode: pane 4 names the node's kind) and resumes.
. "$(dirname "$0")/lib"

"$BIN" simulate -n 800 --sizes 30:60 --overlap 0 --mean-degree 8 --mixing 0.2 \
	--directed --seed 2 -q -o "$tmp/dir"
"$BIN" simulate -n 500 --two-mode 400 --sizes 30:60 --overlap 0 --mean-degree 8 \
	--mixing 0.2 --seed 2 -q -o "$tmp/two"

# live NAME OPTION: explore the graph, w at the plateau, compare with fit
live()
{
	"$BIN" fit "$tmp/$1/edges.tsv" "$2" -k 10 -j 1 --epsilon 1e-3 -q -o "$tmp/$1.fit"
	start_ui 80x24 C.UTF-8 "$tmp/$1/edges.tsv" "$2" -k 10 -j 1 --epsilon 1e-3 -o "$tmp/$1.ui"
	check "$1: the live fit levels off" wait_screen 'state +levelled off' 60
	keys w
	check "$1: w writes the result" wait_screen 'wrote the result' 20
	keys q
	wait_gone_ui 10 || { keys d; wait_gone_ui 10; }
	check "$1: memberships.tsv as fit writes it" \
		cmp -s "$tmp/$1.fit/memberships.tsv" "$tmp/$1.ui/memberships.tsv"
	check "$1: communities.tsv as fit writes it" \
		cmp -s "$tmp/$1.fit/communities.tsv" "$tmp/$1.ui/communities.tsv"
	"$BIN" fit --resume "$tmp/$1.ui" -o "$tmp/$1.resumed" -q 2>"$tmp/$1.err"
	check "$1: fit --resume takes the folder the explorer wrote" [ $? -eq 0 ]
}

live dir --directed
live two --two-mode

start_ui 80x24 C.UTF-8 "$tmp/two.ui"
check "two-mode: the folder reopens" wait_screen '─ 5 Weak edges of #[0-9]+'
check "two-mode: the header counts links" wait_screen ' [0-9.k]+ links'
check "two-mode: pane 4 names the node's kind" wait_screen '(first|second)-column node|(1st|2nd) kind'
keys q
wait_gone_ui 10
finish
