#!/bin/sh
# The explorer shows fit --repeats' stability: a column of the communities
# pane, the selected community's in its title, S sorts by it (most stable
# first), and the node pane gives each membership's. A folder fitted once
# has none, and S says so.
. "$(dirname "$0")/lib"

g=$ROOT/tests/data/football/edges.tsv
"$BIN" fit "$g" -k 12 -j 2 -q --epsilon 0.0935 --repeats 3 -o "$tmp/rep"
check "fit --repeats writes a result" [ -s "$tmp/rep/checkpoint.cot" ]
# the most stable community by communities.tsv (last column), the first
# row once sorted by stability (ties: the largest first, as the size sort)
top=$(awk -F'\t' 'NR > 1 { print $9 }' "$tmp/rep/communities.tsv" | sort -rn | head -1)

start_ui 120x40 C.UTF-8 rep
check "the saved result opens" wait_screen '─ 5 Weak edges'
check "the communities pane has a stability column" wait_screen ' stability'
check "its title gives the selected community's stability" wait_screen '#[0-9]+ stability [01]\.[0-9][0-9]'
keys S
check "S sorts by stability, most stable first" wait_screen 'communities by stability, highest first'
want=$(printf '%s' "$top" | awk '{ x = $1 + 0; if (x >= 0.9995) printf "%.2f", x; else { s = sprintf("%.3f", x); sub(/^0/, "", s); print s } }')
first=$(screen | grep -E '^ *#[0-9]+ ' | head -1 | sed 's/│.*//; s/|.*//' | awk '{ print $NF }')
check "the first row holds the highest stability of communities.tsv ($want)" [ "$first" = "$want" ]
keys Enter
wait_screen '─ 3 Members' 5
keys Enter
check "the node pane heads a stability column" wait_screen 'comm +strength.* stab'
keys 2 S
check "S again goes back to the column sort" wait_screen 'communities by size'
keys q
check "q quits" wait_gone_ui 10
check "no sanitizer report" no_sanitizer_report "$tmp/stderr"

"$BIN" fit "$g" -k 12 -j 2 -q --epsilon 0.0935 -o "$tmp/once"
start_ui 120x40 C.UTF-8 once
wait_screen '─ 5 Weak edges' 10
check "a folder fitted once has no stability column" sh -c "! grep -q ' stability' '$tmp/screen'"
keys S
check "S says there is no stability to sort by" wait_screen 'no stability to sort by'
keys q
wait_gone_ui 10
finish
