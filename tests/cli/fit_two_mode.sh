#!/bin/sh
# simulate --two-mode plants a two-mode graph (two kinds of node, every
# community holding both, links only between kinds) that fit --two-mode
# recovers on each side; simulate --directed counts the arcs it wrote; the
# loading notices of fit --directed/--two-mode count the nodes as given.
. "$(dirname "$0")/lib"
onmi() { "$PY" "$(dirname "$0")/../tools/onmi.py" "$1" "$2"; }

"$BIN" simulate -n 1200 --two-mode 800 --sizes 40:100 --overlap 0 --mean-degree 16 \
	--mixing 0.2 --seed 4 -o "$tmp/sim" -q
check "simulate --two-mode: exit 0" [ $? -eq 0 ]
check "simulate.json: 1200 of the first kind, 800 of the second" \
	[ "$(json_get "$tmp/sim/simulate.json" two_mode.first)/$(json_get "$tmp/sim/simulate.json" two_mode.second)" = 1200/800 ]
check "edges.tsv: first column the first kind (ids < 1200), second the second" \
	awk -F'\t' '!/^#/ && ($1 >= 1200 || $2 < 1200) { exit 1 }' "$tmp/sim/edges.tsv"
check "truth.tsv: a kind column that agrees with the ids" \
	awk -F'\t' 'NR == 1 { if ($3 != "kind") exit 1; next } ($1 < 1200) != ($3 == "first") { exit 1 }' \
	"$tmp/sim/truth.tsv"
check "every planted community holds both kinds" \
	awk -F'\t' 'NR > 1 { s[$2 " " $3] = 1; c[$2] = 1 }
		END { for (x in c) if (!((x " first") in s) || !((x " second") in s)) exit 1 }' \
	"$tmp/sim/truth.tsv"
check "realised.edges is the lines of edges.tsv" \
	[ "$(json_get "$tmp/sim/simulate.json" realised.edges)" = "$(grep -vc '^#' "$tmp/sim/edges.tsv")" ]

# Recovery at the planted k, scored with tests/tools/onmi.py (max-form
# overlapping NMI, McDaid et al.) on all nodes and on each kind (truth by
# its kind column; memberships.tsv: a first-kind node's side is sending).
# Measured when written: all 0.927, first kind 0.927, second kind 0.932.
k=$(json_get "$tmp/sim/simulate.json" realised.communities)
"$BIN" fit "$tmp/sim/edges.tsv" --two-mode -k "$k" -j 2 -o "$tmp/f" -q
check "fit --two-mode: exit 0" [ $? -eq 0 ]
awk -F'\t' 'NR == 1 || $3 == "first"' "$tmp/sim/truth.tsv" >"$tmp/t1"
awk -F'\t' 'NR == 1 || $3 == "second"' "$tmp/sim/truth.tsv" >"$tmp/t2"
awk -F'\t' 'NR == 1 || $4 == "sending"' "$tmp/f/memberships.tsv" >"$tmp/m1"
awk -F'\t' 'NR == 1 || $4 == "receiving"' "$tmp/f/memberships.tsv" >"$tmp/m2"
all=$(onmi "$tmp/sim/truth.tsv" "$tmp/f/memberships.tsv")
one=$(onmi "$tmp/t1" "$tmp/m1")
two=$(onmi "$tmp/t2" "$tmp/m2")
echo "# overlapping NMI, two-mode: all $all, first kind $one, second kind $two"
for x in "all $all" "first $one" "second $two"; do
	set -- $x
	check "planted two-mode graph recovered, $1 (ONMI >= 0.88)" \
		"$PY" -c "import sys; sys.exit(0 if $2 >= 0.88 else 1)"
done
check "memberships.tsv: no node of one kind on the other side" \
	awk -F'\t' 'NR > 1 && ($1 < 1200) != ($4 == "sending") { exit 1 }' "$tmp/f/memberships.tsv"

# simulate --directed: simulate.json and the summary count both directions
"$BIN" simulate -n 400 --directed --mixing 0.2 --seed 2 -o "$tmp/dir" 2>"$tmp/err"
arcs=$(grep -vc '^#' "$tmp/dir/edges.tsv")
check "simulate --directed: realised.edges is every arc written" \
	[ "$(json_get "$tmp/dir/simulate.json" realised.edges)" = "$arcs" ]
check "... and so says the summary" grep -q "drew $arcs arcs" "$tmp/err"
check "... drawn = written + duplicates" "$PY" -c "
import json, sys
r = json.load(open('$tmp/dir/simulate.json'))['realised']
sys.exit(r['pairs_drawn_by_communities'] + r['pairs_drawn_by_background'] != r['edges'] + r['duplicates_merged'])"

# the loading notice: 6 nodes and 9 arcs, not their 12 copies
printf 'a\tb\nb\tc\nc\ta\nd\te\ne\tf\nf\td\na\td\nb\te\nc\tf\n' >"$tmp/six.tsv"
"$BIN" fit "$tmp/six.tsv" --directed -k 2 --epsilon 0.01 -o "$tmp/six" 2>"$tmp/err"
check "fit --directed: the notice says 6 nodes, 9 arcs" grep -q "six.tsv: 6 nodes, 9 arcs" "$tmp/err"
check "... and the fitting line too" grep -q "on 6 nodes, 9 arcs" "$tmp/err"
"$BIN" fit "$tmp/six.tsv" --two-mode -k 2 --epsilon 0.01 -o "$tmp/six2" 2>"$tmp/err"
check "fit --two-mode: the notice says 6 + 6 nodes of two kinds" \
	grep -q "six.tsv: 6 + 6 nodes of two kinds, 9 links" "$tmp/err"

# refusals
"$BIN" simulate -n 100 --two-mode 50 --directed -o "$tmp/x" -q 2>"$tmp/err"
check "--two-mode --directed: exit 2" [ $? -eq 2 ]
"$BIN" simulate -n 100 --two-mode 1 --sizes 10:20 -o "$tmp/x" -q 2>"$tmp/err"
check "one node of the second kind for many communities: refused" [ $? -ne 0 ]
check "... naming the kinds" grep -q "kind" "$tmp/err"
finish
