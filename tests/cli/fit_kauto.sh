#!/bin/sh
# fit -k auto: the held-out search writes kselect.tsv, fits the k it chose,
# and records the choice in run.json; bad uses are refused.
. "$(dirname "$0")/lib"

football=$DATA/football/edges.tsv
need_file "$football"

"$BIN" fit "$football" -k auto --k-range 6:16 -j 2 -q -o "$tmp/a"
check "football -k auto --k-range 6:16: exit 0" [ $? -eq 0 ]
check "kselect.tsv written" [ -f "$tmp/a/kselect.tsv" ]
check "kselect.tsv header" \
	[ "$(head -1 "$tmp/a/kselect.tsv")" = "$(printf 'k\theldout_loglik\tsweeps\tseconds\tchosen')" ]
check "exactly one k chosen" [ "$(grep -c '	yes$' "$tmp/a/kselect.tsv")" -eq 1 ]
chosen=$(awk -F'\t' '$5 == "yes" { print $1 }' "$tmp/a/kselect.tsv")
check "every k tried lies in the range" \
	awk -F'\t' 'NR > 1 && ($1 < 6 || $1 > 16) { bad = 1 } END { exit bad }' "$tmp/a/kselect.tsv"
check "the chosen k has the highest held-out score" \
	awk -F'\t' 'NR > 1 { if (best == "" || $2 > best) { best = $2; k = $1 } } END { exit !(k == '"${chosen:-0}"') }' "$tmp/a/kselect.tsv"
check "run.json parameters.k is the chosen k" [ "$(json_get "$tmp/a/run.json" parameters.k)" = "$chosen" ]
check "run.json says how k was chosen" \
	[ "$(json_get "$tmp/a/run.json" parameters.k_chosen_by)" = "held-out likelihood" ]

"$BIN" fit "$football" -k auto --k-range 6:16 -j 1 -q -o "$tmp/b"
cut -f1,2,5 "$tmp/a/kselect.tsv" >"$tmp/a.sel"
cut -f1,2,5 "$tmp/b/kselect.tsv" >"$tmp/b.sel"
check "-k auto: the same choice and scores with -j 1" cmp -s "$tmp/a.sel" "$tmp/b.sel"

"$BIN" fit "$football" -k 12 --max-sweeps 3 -q -o "$tmp/c"
"$BIN" fit --resume "$tmp/c" -k auto -q 2>"$tmp/err"
check "-k auto with --resume is a usage error (exit 2)" [ $? -eq 2 ]
"$BIN" fit "$football" -k auto --k-range 9 -q -o "$tmp/d" 2>/dev/null
check "--k-range without a colon is a usage error (exit 2)" [ $? -eq 2 ]
"$BIN" fit "$football" -k auto --k-range 9:3 -q -o "$tmp/d" 2>/dev/null
check "--k-range with MAX below MIN is a usage error (exit 2)" [ $? -eq 2 ]
"$BIN" fit "$football" -k auto --holdout 0.9 -q -o "$tmp/d" 2>/dev/null
check "--holdout above 0.5 is a usage error (exit 2)" [ $? -eq 2 ]

finish
