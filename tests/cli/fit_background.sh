#!/bin/sh
# fit's background epsilon (background.h): on a graph below 20000 edges the
# coverage guard keeps the density unless its cover leaves most linked nodes
# out, and then tries smaller multiples of it and keeps the first whose
# cover holds 90% of them; run.json says how it was chosen and
# lists the trials; --epsilon and large graphs skip the search. The scores
# against known groups are computed by tests/tools/onmi.py, our own
# transcription of McDaid, Greene & Hurley (2011), not by coterie.
. "$(dirname "$0")/lib"

ONMI="$PY $ROOT/tests/tools/onmi.py"
need_file "$DATA/karate/edges.tsv"

# at_least A B: A >= B as numbers
at_least() { awk -v a="$1" -v b="$2" 'BEGIN { exit !(a + 0 >= b + 0) }'; }

# karate (W. W. Zachary, J. Anthropol. Res. 33, 452 (1977); factions from
# networkx 2.8, tests/data/README.md), polbooks (V. Krebs, via M. E. J.
# Newman) and football (Girvan & Newman, PNAS 99, 7821 (2002)) at the
# number of known groups, seed 1, default options.
# Floors: measured with this code on 2026-12-03 (karate 0.703, polbooks
# 0.390, football 0.815), a little below; at the density alone (the old
# default) they were 0.133, 0.170 and 0.846. For scale, igraph 0.10.2's
# Leiden scores 0.240, 0.412 and 0.760 (shared/datasets/README.md).
# Football: seeds 2-5 gave 0.815 before the merge move's block test and
# seed 1 0.846; with it every seed gives 0.815 (seed 1 now joins the
# conference of 10 held by two columns and splits the one of 13 instead:
# DEVELOPERS.md "The AGM's block test"). The issue's 0.83 is not met.
for case in karate:2:0.65:0 polbooks:3:0.37:0 football:12:0.80:1; do
	g=${case%%:*}; rest=${case#*:}; k=${rest%%:*}; rest=${rest#*:}
	floor=${rest%%:*}; want_first=${rest#*:}
	"$BIN" fit "$DATA/$g/edges.tsv" -k "$k" -j 2 --seed 1 -q -o "$tmp/$g" 2>"$tmp/$g.err"
	check "$g: exit 0" [ $? -eq 0 ]
	rj=$tmp/$g/run.json
	check "$g: background.rule is coverage" [ "$(json_get "$rj" background.rule)" = coverage ]
	check "$g: the epsilon fitted is the one chosen" \
		[ "$(json_get "$rj" background.epsilon)" = "$(json_get "$rj" parameters.epsilon)" ]
	# the rule, checked from the record: the chosen trial is the first to
	# cover 90% of the linked nodes (or the best when none does), trials
	# run from the density down
	check "$g: the trials follow the rule" "$PY" - "$rj" <<'PY'
import json, sys
b = json.load(open(sys.argv[1]))["background"]
c = b["candidates"]
mult = [x["multiple"] for x in c]
assert mult == [1.0, 0.7, 0.5, 0.3, 0.2, 0.1, 0.05, 0.03, 0.01, 0.001][:len(c)], mult
need = 0.9 * b["linked_nodes"]
ok = [i for i, x in enumerate(c) if x["covered"] >= need]
if c[0]["covered"] >= 0.5 * b["linked_nodes"]:
    # the density covers half the linked nodes: kept, after one trial
    assert len(c) == 1 and b["epsilon"] == c[0]["epsilon"], c
elif ok:
    assert ok == [len(c) - 1], (ok, len(c))
    assert b["epsilon"] == c[-1]["epsilon"]
else:
    assert len(c) == 10
    assert b["epsilon"] == max(c, key=lambda x: x["covered"])["epsilon"]
assert abs(c[0]["epsilon"] - b["density"]) < 1e-15
PY
	covered=$(json_get "$rj" fit.covered_nodes)
	linked=$(json_get "$rj" background.linked_nodes)
	check "$g: 90% of the linked nodes covered ($covered of $linked)" \
		awk -v c="$covered" -v l="$linked" 'BEGIN { exit !(c >= 0.9 * l) }'
	s=$($ONMI "$DATA/$g/truth.tsv" "$tmp/$g/memberships.tsv")
	check "$g: overlapping NMI $s >= $floor" at_least "$s" "$floor"
	ntrials=$("$PY" -c 'import json,sys; print(len(json.load(open(sys.argv[1]))["background"]["candidates"]))' "$rj")
	if [ "$want_first" = 1 ]; then
		check "$g: the density already covers enough: one trial" [ "$ntrials" = 1 ]
	else
		check "$g: the density covers too few: more than one trial ($ntrials)" [ "$ntrials" -gt 1 ]
	fi
done

# the old default on karate, for contrast: the guard is what lifts the score
"$BIN" fit "$DATA/karate/edges.tsv" -k 2 -j 2 --seed 1 -q -o "$tmp/kd" \
	--epsilon "$(json_get "$tmp/karate/run.json" background.density)" 2>/dev/null
check "karate --epsilon DENSITY: rule given" [ "$(json_get "$tmp/kd/run.json" background.rule)" = given ]
check "karate --epsilon DENSITY: no trials" \
	[ "$(json_get "$tmp/kd/run.json" background.candidates)" = "[]" ]
s_density=$($ONMI "$DATA/karate/truth.tsv" "$tmp/kd/memberships.tsv")
s_guard=$($ONMI "$DATA/karate/truth.tsv" "$tmp/karate/memberships.tsv")
check "karate: the guard ($s_guard) beats the density ($s_density) by 0.3" \
	at_least "$s_guard" "$(awk -v d="$s_density" 'BEGIN { print d + 0.3 }')"

# lesmis (D. E. Knuth, The Stanford GraphBase, 1993; no known groups) at k 6:
# the density already covers more than half its nodes, so it is kept after
# one trial, whatever share that is
"$BIN" fit "$DATA/lesmis/edges.tsv" -k 6 -j 2 --seed 1 -q -o "$tmp/lesmis"
rj=$tmp/lesmis/run.json
first=$("$PY" -c 'import json,sys; b=json.load(open(sys.argv[1]))["background"]; print(b["candidates"][0]["covered"], b["linked_nodes"], len(b["candidates"]))' "$rj")
set -- $first
if [ "$1" -ge $(( ($2 + 1) / 2 )) ]; then
	kept=$3:$(json_get "$rj" background.epsilon)
	check "lesmis: the density covers $1 of $2: kept after one trial" \
		[ "$kept" = "1:$(json_get "$rj" background.density)" ]
else
	check "lesmis: the density covers $1 of $2 (less than half): more trials" [ "$3" -gt 1 ]
fi

# a graph of 20000 edges or more keeps the density, with no trial fit
"$BIN" simulate -n 2000 --sizes 20:200 --mean-degree 24 --seed 3 -q -o "$tmp/sim"
m=$(grep -vc '^#' "$tmp/sim/edges.tsv")
check "the planted graph has 20000 edges or more ($m)" [ "$m" -ge 20000 ]
"$BIN" fit "$tmp/sim/edges.tsv" -k 20 -j 2 -q --max-sweeps 5 -o "$tmp/big"
check "large graph: rule density" [ "$(json_get "$tmp/big/run.json" background.rule)" = density ]
check "large graph: epsilon is the density" \
	[ "$(json_get "$tmp/big/run.json" background.epsilon)" = "$(json_get "$tmp/big/run.json" background.density)" ]

# the notice names the choice and where the trials are
"$BIN" fit "$DATA/karate/edges.tsv" -k 2 -j 2 -o "$tmp/kn" 2>"$tmp/kn.err" >/dev/null
check "the notice says the epsilon chosen and points to run.json" \
	grep -q "x the density).*run.json" "$tmp/kn.err"
finish
