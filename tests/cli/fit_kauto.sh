#!/bin/sh
# fit -k auto: the held-out search writes k-selection.tsv, fits the k it
# chose, and records the choice, the grid and every score in run.json; the
# choice does not depend on -j; bad uses are refused.
. "$(dirname "$0")/lib"

football=$DATA/football/edges.tsv
need_file "$football"

"$BIN" fit "$football" -k auto --k-grid 6:16 -j 2 -q -o "$tmp/a"
check "football -k auto --k-grid 6:16: exit 0" [ $? -eq 0 ]
sel=$tmp/a/k-selection.tsv
check "k-selection.tsv written" [ -f "$sel" ]
check "k-selection.tsv header" \
	[ "$(head -1 "$sel")" = "$(printf 'k\theldout_loglik\theldout_auc\tsweeps\tseconds\tchosen')" ]
check "exactly one k chosen" [ "$(grep -c '	yes$' "$sel")" -eq 1 ]
chosen=$(awk -F'\t' '$6 == "yes" { print $1 }' "$sel")
# the grid 6:16 at ratio 1.25, by hand: 6, 7.5 -> 8, 9.4 -> 9, 11.7 -> 12,
# 14.6 -> 15, then 16 (the end)
check "the k tried are a prefix of 6 8 9 12 15 16" \
	awk -F'\t' 'BEGIN { split("6 8 9 12 15 16", want, " ") } NR > 1 && $1 != want[NR - 1] { bad = 1 } END { exit bad }' "$sel"
check "run.json k_selection.grid is 6 8 9 12 15 16" \
	[ "$(json_get "$tmp/a/run.json" k_selection.grid)" = "[6, 8, 9, 12, 15, 16]" ]
check "every AUC is a probability" \
	awk -F'\t' 'NR > 1 && !($3 >= 0 && $3 <= 1) { bad = 1 } END { exit bad }' "$sel"
check "the chosen k has the highest held-out log-likelihood" \
	awk -F'\t' 'NR > 1 { if (best == "" || $2 > best) { best = $2; k = $1 } } END { exit !(k == '"${chosen:-0}"') }' "$sel"
check "run.json parameters.k is the chosen k" [ "$(json_get "$tmp/a/run.json" parameters.k)" = "$chosen" ]
check "run.json k_selection.chosen is the chosen k" \
	[ "$(json_get "$tmp/a/run.json" k_selection.chosen)" = "$chosen" ]
check "run.json says how k was chosen" \
	[ "$(json_get "$tmp/a/run.json" parameters.k_chosen_by)" = "held-out likelihood" ]
# 10% of football's 613 edges, rounded: 61, and as many non-edges
check "run.json holds out 61 edges and 61 non-edges" \
	[ "$(json_get "$tmp/a/run.json" k_selection.held_out_edges)" = 61 ] &&
	[ "$(json_get "$tmp/a/run.json" k_selection.held_out_non_edges)" = 61 ]
"$PY" - "$tmp/a/run.json" "$sel" <<'PYEOF' && pass "run.json scores equal k-selection.tsv" || fail "run.json scores equal k-selection.tsv"
import json, sys
run = json.load(open(sys.argv[1]))["k_selection"]["scores"]
rows = [l.rstrip("\n").split("\t") for l in open(sys.argv[2])][1:]
assert len(run) == len(rows)
for r, t in zip(run, rows):
    assert r["k"] == int(t[0]) and r["heldout_loglik"] == float(t[1])
    assert abs(r["heldout_auc"] - float(t[2])) < 1e-9
PYEOF
"$BIN" fit "$football" -k 5 --max-sweeps 2 -q -o "$tmp/g"
check "run.json k_selection is null when k is given" [ "$(json_get "$tmp/g/run.json" k_selection)" = null ]

"$BIN" fit "$football" -k auto --k-grid 6:16 -j 1 -q -o "$tmp/b"
cut -f1,2,3,6 "$tmp/a/k-selection.tsv" >"$tmp/a.sel"
cut -f1,2,3,6 "$tmp/b/k-selection.tsv" >"$tmp/b.sel"
check "-k auto: the same choice and scores with -j 1" cmp -s "$tmp/a.sel" "$tmp/b.sel"

"$BIN" fit "$football" -k auto --k-grid 4,9,13 -j 2 -q -o "$tmp/l"
check "--k-grid 4,9,13 scores exactly 4, 9 and 13" \
	[ "$(cut -f1 "$tmp/l/k-selection.tsv" | tr '\n' ' ')" = "k 4 9 13 " ]

"$BIN" fit "$football" -k 12 --max-sweeps 3 -q -o "$tmp/c"
"$BIN" fit --resume "$tmp/c" -k auto -q 2>"$tmp/err"
check "-k auto with --resume is a usage error (exit 2)" [ $? -eq 2 ]
for bad in 9:3 0:5 a,b 4:8:1 ""; do
	"$BIN" fit "$football" -k auto --k-grid "$bad" -q -o "$tmp/d" 2>/dev/null
	check "--k-grid '$bad' is a usage error (exit 2)" [ $? -eq 2 ]
done
"$BIN" fit "$football" -k 5 --k-grid 2:8 -q -o "$tmp/d" 2>/dev/null
check "--k-grid without -k auto is a usage error (exit 2)" [ $? -eq 2 ]
"$BIN" fit "$football" -k auto --k-range 2:8 -q -o "$tmp/d" 2>/dev/null
check "the old --k-range is gone (exit 2)" [ $? -eq 2 ]
"$BIN" fit "$football" -k auto --holdout 0.9 -q -o "$tmp/d" 2>/dev/null
check "--holdout above 0.5 is a usage error (exit 2)" [ $? -eq 2 ]

finish
