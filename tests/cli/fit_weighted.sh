#!/bin/sh
# fit --weighted: the Poisson model of Ball, Karrer & Newman (Phys. Rev. E
# 84, 036103, 2011). Weights that carry the communities are used; the
# model is recorded and kept on resume; -j does not change the answer;
# simulate --weighted plants weights.
. "$(dirname "$0")/lib"

# A planted graph whose edges say little (mixing 0.6: most edges are
# background) and whose weights say much: 4 on an edge inside a planted
# community, 1 across. Same edges, same k, same seed; the planted cover
# is the truth (coterie compare's max-form overlapping NMI, McDaid et al.).
# Measured when written: 0.560 without --weighted, 0.856 with.
"$BIN" simulate -n 2000 --sizes 40:100 --overlap 0 --mean-degree 16 --mixing 0.6 --seed 4 \
	-o "$tmp/sim" -q
check "simulate: exit 0" [ $? -eq 0 ]
k=$(json_get "$tmp/sim/simulate.json" realised.communities)
awk -F'\t' 'FNR == NR { if (FNR > 1) c[$1] = $2; next } /^#/ { next }
	{ print $1 "\t" $2 "\t" (c[$1] == c[$2] ? 4 : 1) }' \
	"$tmp/sim/truth.tsv" "$tmp/sim/edges.tsv" >"$tmp/w.tsv"
"$BIN" fit "$tmp/w.tsv" -k "$k" -j 2 -o "$tmp/plain" -q
check "fit without --weighted: exit 0" [ $? -eq 0 ]
"$BIN" fit "$tmp/w.tsv" -k "$k" -j 2 --weighted -o "$tmp/pois" -q
check "fit --weighted: exit 0" [ $? -eq 0 ]
onmi() { "$BIN" compare "$tmp/sim/truth.tsv" "$1" --json | "$PY" -c \
	'import json,sys; print(json.load(sys.stdin)["onmi_max"])'; }
plain=$(onmi "$tmp/plain")
pois=$(onmi "$tmp/pois")
echo "# overlapping NMI: without weights $plain, with $pois"
check "weights that carry the communities: recovered better with --weighted (by 0.15)" \
	"$PY" -c "import sys; sys.exit(0 if $pois >= $plain + 0.15 else 1)"
check "run.json: parameters.model is poisson" \
	[ "$(json_get "$tmp/pois/run.json" parameters.model)" = poisson ]
check "communities.tsv: the weight columns after stability" \
	[ "$(head -n 1 "$tmp/pois/communities.tsv" | cut -f9-11)" = \
	  "$(printf 'stability\tweight_inside\texpected_weight_inside')" ]
check "communities.tsv: no weight columns without --weighted" \
	[ "$(head -n 1 "$tmp/plain/communities.tsv" | cut -f10)" = "" ]
check "run.json: parameters.model is bigclam without --weighted" \
	[ "$(json_get "$tmp/plain/run.json" parameters.model)" = bigclam ]

# the thread count does not change a Poisson fit
"$BIN" fit "$tmp/w.tsv" -k "$k" -j 1 --weighted -o "$tmp/pois1" -q
check "-j 1 and -j 2: identical memberships.tsv" \
	cmp -s "$tmp/pois/memberships.tsv" "$tmp/pois1/memberships.tsv"

# resume keeps the model (and the weights, from the checkpoint) and
# refuses to change it
"$BIN" fit "$tmp/w.tsv" -k "$k" -j 2 --weighted --max-sweeps 5 -o "$tmp/part" -q
"$BIN" fit --resume "$tmp/part" -o "$tmp/part" -q 2>"$tmp/err"
check "resume of a Poisson fit without --weighted: exit 0" [ $? -eq 0 ]
check "resumed: still poisson" [ "$(json_get "$tmp/part/run.json" parameters.model)" = poisson ]
"$BIN" fit --resume "$tmp/plain" --weighted -o "$tmp/x" -q 2>"$tmp/err"
check "resume of a BigCLAM fit with --weighted: exit 2" [ $? -eq 2 ]
check "... saying the model cannot change" grep -q "cannot change" "$tmp/err"

# what the Poisson model has no reading for is refused, not done wrong
# (-k auto and --check-links: tests/cli/fit_models_heldout.sh)
"$BIN" fit "$tmp/w.tsv" -k 2 --refine --weighted -o "$tmp/y" -q 2>"$tmp/err"
check "--refine --weighted: exit 2" [ $? -eq 2 ]

# a bad weight names the file and line
printf 'a\tb\t1\nb\tc\t0\n' >"$tmp/bad.tsv"
"$BIN" fit "$tmp/bad.tsv" -k 1 --weighted -o "$tmp/z" -q 2>"$tmp/err"
check "a zero weight: exit 1" [ $? -eq 1 ]
check "... naming the file and line" grep -q "bad.tsv:2: expected a weight above zero" "$tmp/err"

# simulate --weighted: a third column of whole numbers >= 1
"$BIN" simulate -n 500 --sizes 20:60 --mean-degree 10 --mixing 0.2 --weighted --seed 2 \
	-o "$tmp/sw" -q
check "simulate --weighted: exit 0" [ $? -eq 0 ]
check "simulate --weighted: every edge has a whole weight >= 1" \
	awk -F'\t' '/^#/ { next } NF != 3 || $3 < 1 || $3 != int($3) { bad = 1 } END { exit bad }' \
	"$tmp/sw/edges.tsv"
check "simulate.json: weights.total is the sum of the third column" \
	[ "$(awk -F'\t' '/^#/ { next } { s += $3 } END { printf "%d", s }' "$tmp/sw/edges.tsv")" = \
	  "$(json_get "$tmp/sw/simulate.json" weights.total | cut -d. -f1)" ]
finish
