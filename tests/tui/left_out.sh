#!/bin/sh
# A result whose fit left columns out (they did not pay for their
# members' names; coterie(1), DESCRIPTION) says so in the communities
# pane's title where it has room, and lists only the communities kept.
. "$(dirname "$0")/lib"

"$BIN" simulate -n 3000 --sizes 20:300 --size-exponent 2 --overlap 0.1 --mean-degree 15 \
	--even-degrees --mixing 0.2 --seed 3 -o "$tmp/g" -q
"$BIN" fit "$tmp/g/edges.tsv" -k 81 -j 2 -q -o "$tmp/saved"
out=$(json_get "$tmp/saved/run.json" fit.communities_left_out)
kept=$(json_get "$tmp/saved/run.json" fit.communities)
check "the fit left columns out ($out)" [ "${out:-0}" -gt 0 ]
start_ui 160x40 C.UTF-8 saved
check "at 160 columns the title counts them ($kept with members, $out left out)" \
	wait_screen "$kept with members, $out left out"
keys q
check "q quits" wait_gone_ui 10
start_ui 80x24 C.UTF-8 saved
check "at 80 columns the shorter title ($kept with members)" wait_screen "─ $kept with members ─"
keys q
check "q quits again" wait_gone_ui 10
finish
