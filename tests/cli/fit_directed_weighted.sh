#!/bin/sh
# fit --directed --weighted (and --two-mode --weighted): arc weights
# Poisson with mean F_u . H_v + background, the Poisson model of Ball,
# Karrer & Newman (Phys. Rev. E 84, 036103, 2011) on the sending and
# receiving rows of the directed model (DEVELOPERS.md). Weights that carry
# the communities are used; the model is recorded and kept on resume, which
# ends with the uninterrupted fit's bytes; -j does not change the answer;
# -k auto and --check-links run; simulate plants weighted arcs.
. "$(dirname "$0")/lib"

# A planted directed graph whose arcs say little (mixing 0.6: most arcs are
# background) and whose weights say much: 4 on an arc inside a planted
# community, 1 across. Same arcs, same k, same seed; ONMI (max form) by
# tests/tools/onmi.py against the planted cover. Measured when written
# (seeds 1 / 2 / 3): --directed 0.558 / 0.553 / 0.567, --directed
# --weighted 0.893 / 0.900 / 0.918.
"$BIN" simulate -n 2000 --sizes 40:100 --overlap 0 --mean-degree 16 --mixing 0.6 --directed \
	--seed 4 -o "$tmp/sim" -q
check "simulate --directed: exit 0" [ $? -eq 0 ]
k=$(json_get "$tmp/sim/simulate.json" realised.communities)
awk -F'\t' 'FNR == NR { if (FNR > 1) c[$1] = $2; next } /^#/ { next }
	{ print $1 "\t" $2 "\t" (c[$1] == c[$2] ? 4 : 1) }' \
	"$tmp/sim/truth.tsv" "$tmp/sim/edges.tsv" >"$tmp/w.tsv"
"$BIN" fit "$tmp/w.tsv" --directed -k "$k" -j 2 -o "$tmp/dir" -q
check "fit --directed: exit 0" [ $? -eq 0 ]
"$BIN" fit "$tmp/w.tsv" --directed --weighted -k "$k" -j 2 -o "$tmp/dw" -q
check "fit --directed --weighted: exit 0" [ $? -eq 0 ]
onmi() { "$PY" "$(dirname "$0")/../tools/onmi.py" "$tmp/sim/truth.tsv" "$1/memberships.tsv"; }
plain=$(onmi "$tmp/dir")
dw=$(onmi "$tmp/dw")
echo "# overlapping NMI: --directed $plain, --directed --weighted $dw"
check "weights that carry the communities: ONMI >= 0.80 with --weighted" \
	"$PY" -c "import sys; sys.exit(0 if $dw >= 0.80 else 1)"
check "... and better than without by 0.2" \
	"$PY" -c "import sys; sys.exit(0 if $dw >= $plain + 0.2 else 1)"
check "run.json: parameters.model is directed-poisson" \
	[ "$(json_get "$tmp/dw/run.json" parameters.model)" = directed-poisson ]
check "memberships.tsv: the side columns of a directed fit" \
	[ "$(head -n 1 "$tmp/dw/memberships.tsv" | cut -f4-6)" = "$(printf 'side\tsending\treceiving')" ]

# the thread count does not change the fit
"$BIN" fit "$tmp/w.tsv" --directed --weighted -k "$k" -j 1 -o "$tmp/dw1" -q
check "-j 1 and -j 2: identical memberships.tsv" \
	cmp -s "$tmp/dw/memberships.tsv" "$tmp/dw1/memberships.tsv"

# resume: the checkpoint holds the model, the sides and the weights; the
# resumed fit ends with the bytes of the uninterrupted one (one start, run
# past its plateau: a fit resumed from its end goes on as one start without
# reseeding moves, coterie(1), so the uninterrupted one must make none)
"$BIN" fit "$tmp/w.tsv" --directed --weighted -k "$k" -j 2 --starts 1 --past-plateau \
	--max-sweeps 30 -o "$tmp/full" -q
"$BIN" fit "$tmp/w.tsv" --directed --weighted -k "$k" -j 2 --starts 1 --past-plateau \
	--max-sweeps 12 -o "$tmp/part" -q
"$BIN" fit --resume "$tmp/part" --max-sweeps 30 -o "$tmp/part" -q 2>"$tmp/err"
check "resume without the options: exit 0" [ $? -eq 0 ]
check "resumed: still directed-poisson" \
	[ "$(json_get "$tmp/part/run.json" parameters.model)" = directed-poisson ]
check "resumed: memberships.tsv of the uninterrupted fit" \
	cmp -s "$tmp/full/memberships.tsv" "$tmp/part/memberships.tsv"
"$BIN" fit --resume "$tmp/part" --two-mode -o "$tmp/x" -q 2>"$tmp/err"
check "resume with --two-mode: exit 2" [ $? -eq 2 ]
"$BIN" fit --resume "$tmp/dir" --weighted -o "$tmp/x" -q 2>"$tmp/err"
check "resume of an unweighted directed fit with --weighted: exit 2" [ $? -eq 2 ]
check "... saying the model cannot change" grep -q "cannot change" "$tmp/err"

# -k auto and --check-links: the held-out pairs are arcs with their weights
"$BIN" fit "$tmp/w.tsv" --directed --weighted -k auto --k-grid 16:64 --starts 1 -j 2 \
	-o "$tmp/auto" -q
check "-k auto: exit 0" [ $? -eq 0 ]
check "-k auto: k-selection.tsv" [ -s "$tmp/auto/k-selection.tsv" ]
"$BIN" fit "$tmp/w.tsv" --directed --weighted -k "$k" --check-links 0.1 -j 2 -o "$tmp/cl" -q
check "--check-links: exit 0" [ $? -eq 0 ]
check "--check-links: held-out-links.tsv with weight and expected columns" \
	[ "$(head -n 1 "$tmp/cl/held-out-links.tsv" | cut -f5-6)" = "$(printf 'weight\texpected')" ]

# simulate --directed --weighted: every arc, of either draw, has a whole
# weight >= 1, and simulate.json's total is their sum
"$BIN" simulate -n 500 --sizes 20:60 --mean-degree 10 --mixing 0.2 --directed --weighted \
	--seed 2 -o "$tmp/sw" -q
check "simulate --directed --weighted: exit 0" [ $? -eq 0 ]
check "... every arc has a whole weight >= 1" \
	awk -F'\t' '/^#/ { next } NF != 3 || $3 < 1 || $3 != int($3) { bad = 1 } END { exit bad }' \
	"$tmp/sw/edges.tsv"
check "... weights.total is the sum of the third column" \
	[ "$(awk -F'\t' '/^#/ { next } { s += $3 } END { printf "%d", s }' "$tmp/sw/edges.tsv")" = \
	  "$(json_get "$tmp/sw/simulate.json" weights.total | cut -d. -f1)" ]
"$BIN" fit "$tmp/sw/edges.tsv" --directed --weighted -k 12 -j 2 -o "$tmp/swf" -q
check "fit of the planted weighted arcs: exit 0" [ $? -eq 0 ]

# two-mode with weights
"$BIN" simulate -n 300 --two-mode 200 --sizes 20:60 --mean-degree 10 --weighted --seed 3 \
	-o "$tmp/tw" -q
check "simulate --two-mode --weighted: exit 0" [ $? -eq 0 ]
"$BIN" fit "$tmp/tw/edges.tsv" --two-mode --weighted -k 8 -j 2 -o "$tmp/twf" -q
check "fit --two-mode --weighted: exit 0" [ $? -eq 0 ]
check "run.json: parameters.model is two-mode-poisson" \
	[ "$(json_get "$tmp/twf/run.json" parameters.model)" = two-mode-poisson ]
finish
