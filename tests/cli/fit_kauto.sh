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
	[ "$(head -1 "$sel")" = "$(printf 'k\theldout_loglik\theldout_auc\tsweeps\tseconds\tchosen\tfolds\theldout_loglik_sd\tgrid\torder\treason\twarm_from')" ]
check "a small graph (10 folds) scores the grid: run.json search is grid" \
	[ "$(json_get "$tmp/a/run.json" k_selection.search)" = grid ]
# (the grid's rows first; past its end, when the edge scored best, the
# rows the extension added: since starts are judged by code length, 16
# scores best on this grid and 20 and 25 are added)
check "football: every row's reason is grid (asked) or extend past edge (added), warm_from 0, order a permutation" \
	awk -F'\t' 'NR > 1 { if (!($9 == "asked" && $11 == "grid" && !added || $9 == "added" && $11 == "extend past edge") || $12 != 0 || seen[$10]++) bad = 1; if ($9 == "added") added = 1; n++; s += $10 } END { exit bad || s != n * (n + 1) / 2 }' "$sel"
check "exactly one k chosen" [ "$(awk -F'\t' '$6 == "yes"' "$sel" | wc -l)" -eq 1 ]
# folds: 61 held-out edges a split, so ceil(2000 / 61) = 33 splits wanted,
# at most 10 (select.h, SELECT_FOLD_EDGES and SELECT_MAX_FOLDS)
check "football is scored on 10 folds (run.json)" [ "$(json_get "$tmp/a/run.json" k_selection.folds)" = 10 ]
check "every k of k-selection.tsv: 10 folds, a spread >= 0, asked or added" \
	awk -F'\t' 'NR > 1 && !($7 == 10 && $8 >= 0 && ($9 == "asked" || $9 == "added")) { bad = 1 } END { exit bad }' "$sel"
chosen=$(awk -F'\t' '$6 == "yes" { print $1 }' "$sel")
# the grid 6:16 at ratio 1.25, by hand: 6, 7.5 -> 8, 9.4 -> 9, 11.7 -> 12,
# 14.6 -> 15, then 16 (the end)
check "the k of the grid tried are a prefix of 6 8 9 12 15 16" \
	awk -F'\t' 'BEGIN { split("6 8 9 12 15 16", want, " ") } NR > 1 && $9 == "asked" && $1 != want[NR - 1] { bad = 1 } END { exit bad }' "$sel"
check "run.json k_selection.grid is 6 8 9 12 15 16" \
	[ "$(json_get "$tmp/a/run.json" k_selection.grid)" = "[6, 8, 9, 12, 15, 16]" ]
check "every AUC is a probability" \
	awk -F'\t' 'NR > 1 && !($3 >= 0 && $3 <= 1) { bad = 1 } END { exit bad }' "$sel"
# the one-standard-error rule (Breiman, Friedman, Olshen & Stone 1984,
# sec. 3.4.3), recomputed from the table: the smallest k whose mean is
# within sd / sqrt(folds) of the highest mean, that of the best k
check "the chosen k is the smallest within one standard error of the highest mean" \
	"$PY" - "$sel" "${chosen:-0}" "$tmp/a/run.json" <<'PYEOF'
import json, math, sys
rows = [l.rstrip("\n").split("\t") for l in open(sys.argv[1])][1:]
pts = [(int(r[0]), float(r[1]), float(r[7]), int(r[6])) for r in rows]
best = max(pts, key=lambda p: p[1])
se = best[2] / math.sqrt(best[3])
want = min(p[0] for p in pts if p[1] >= best[1] - se)
assert want == int(sys.argv[2]), (want, sys.argv[2], pts)
ks = json.load(open(sys.argv[3]))["k_selection"]
assert ks["highest_mean_k"] == best[0] and abs(ks["standard_error"] - se) < 1e-9 * abs(se) + 1e-12
assert ks["rule"].startswith("the smallest k within one standard error"), ks["rule"]
PYEOF
check "run.json parameters.k is the chosen k" [ "$(json_get "$tmp/a/run.json" parameters.k)" = "$chosen" ]
check "run.json k_selection.chosen is the chosen k" \
	[ "$(json_get "$tmp/a/run.json" k_selection.chosen)" = "$chosen" ]
check "run.json says how k was chosen" \
	[ "$(json_get "$tmp/a/run.json" parameters.k_chosen_by)" = "held-out likelihood" ]
# 10% of football's 613 edges, rounded: 61, and as many non-edges
check "run.json holds out 61 edges and 61 non-edges" \
	sh -c '[ "$1" = 61 ] && [ "$2" = 61 ]' sh \
	"$(json_get "$tmp/a/run.json" k_selection.held_out_edges)" \
	"$(json_get "$tmp/a/run.json" k_selection.held_out_non_edges)"
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

"$BIN" fit "$football" -k auto --k-grid 4,9,13 -j 2 -q -o "$tmp/l" 2>"$tmp/l.err"
check "--k-grid 4,9,13 scores exactly 4, 9 and 13 (a list is never extended)" \
	[ "$(cut -f1 "$tmp/l/k-selection.tsv" | tr '\n' ' ')" = "k 4 9 13 " ]
# the edge of a list: when 13 is chosen it is said (printed with -q, and
# recorded with its code); when it is not, no edge warning
codes() { "$PY" -c 'import json, sys; print(" ".join(w["code"] for w in json.load(open(sys.argv[1]))["warnings"]))' "$1"; }
if [ "$(json_get "$tmp/l/run.json" k_selection.chosen)" = 13 ]; then
	check "the list's largest k chosen: k_at_grid_edge in run.json" \
		sh -c 'case "$1" in *k_at_grid_edge*) exit 0;; esac; exit 1' - "$(codes "$tmp/l/run.json")"
	check "... and a warning on stderr despite -q" grep -q 'warning: -k auto chose k = 13, the largest' "$tmp/l.err"
else
	check "a k inside the list chosen: no k_at_grid_edge" \
		sh -c 'case "$1" in *k_at_grid_edge*) exit 1;; esac; exit 0' - "$(codes "$tmp/l/run.json")"
fi

# the grid's edge: football's 12 conferences are beyond 2:6, so the top
# (6) scores best and the grid is extended past it at the same ratio,
# the added k marked, while the scores rise
"$BIN" fit "$football" -k auto --k-grid 2:6 -j 2 -q -o "$tmp/x"
check "2:6 on football: the grid is extended up (run.json)" \
	[ "$(json_get "$tmp/x/run.json" k_selection.extended)" = up ]
check "2:6 on football: k above 6 are scored, marked added, and only they" \
	awk -F'\t' 'NR > 1 && (($1 > 6) != ($9 == "added")) { bad = 1 } NR > 1 && $1 > 6 { n++ } END { exit bad || n == 0 }' "$tmp/x/k-selection.tsv"
check "2:6 on football: the chosen k is above 6" [ "$(json_get "$tmp/x/run.json" k_selection.chosen)" -gt 6 ]

# -k auto agrees with itself: on dolphins (62 nodes, 159 edges) seeds 1,
# 2 and 3 chose 8, 2 and 15 with one split; with the folds the choices
# must lie within a factor of 2 of each other (a property, not a value)
dolphins=$DATA/dolphins/edges.tsv
need_file "$dolphins"
ks=""
for s in 1 2 3; do
	"$BIN" fit "$dolphins" -k auto -j 2 --seed $s -q -o "$tmp/dol$s" 2>/dev/null
	ks="$ks $(json_get "$tmp/dol$s/run.json" k_selection.chosen)"
done
check "dolphins, seeds 1-3: the chosen k ($ks) within a factor of 2" \
	sh -c 'min=$1 max=$1; for k; do [ "$k" -lt "$min" ] && min=$k; [ "$k" -gt "$max" ] && max=$k; done; [ "$max" -le $((2 * min)) ]' - $ks

# a thin answer is said: fewer than half the nodes covered gives
# few_covered (checked against the counts run.json gives); a graph of
# 21 edges gives few_held_out (10 folds of 2 held-out edges, below 50)
covered=$(json_get "$tmp/dol1/run.json" fit.covered_nodes)
if [ $((2 * covered)) -lt 62 ]; then
	check "dolphins: $covered of 62 covered, few_covered said" \
		sh -c 'case "$1" in *few_covered*) exit 0;; esac; exit 1' - "$(codes "$tmp/dol1/run.json")"
else
	check "dolphins: $covered of 62 covered, no few_covered" \
		sh -c 'case "$1" in *few_covered*) exit 1;; esac; exit 0' - "$(codes "$tmp/dol1/run.json")"
fi
: >"$tmp/two.tsv"
for c in 0 5; do for i in 0 1 2 3 4; do for j in 0 1 2 3 4; do
	[ $i -lt $j ] && printf 'n%d\tn%d\n' $((c + i)) $((c + j)) >>"$tmp/two.tsv"
done; done; done
printf 'n0\tn5\n' >>"$tmp/two.tsv"
"$BIN" fit "$tmp/two.tsv" -k auto --k-grid 2,3 -q -o "$tmp/two" 2>"$tmp/two.err"
check "21 edges: few_held_out in run.json" \
	sh -c 'case "$1" in *few_held_out*) exit 0;; esac; exit 1' - "$(codes "$tmp/two/run.json")"
check "21 edges: the warning printed despite -q" grep -q 'warning: -k auto scored each k on only' "$tmp/two.err"
check "a fit with k given records an empty or short warnings list" \
	"$PY" -c 'import json, sys; w = json.load(open(sys.argv[1]))["warnings"]; assert isinstance(w, list) and all(set(x) == {"code", "text"} for x in w)' "$tmp/g/run.json"

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

# the search by the curve's shape (select.h): a planted graph of 3,000
# nodes and about 21,000 edges has one fold at share 0.1 (2,100 held-out
# edges >= 2,000), so the default grid is searched, not scored in full
"$BIN" simulate -n 3000 --sizes 20:300 --size-exponent 2 --overlap 0.1 --mean-degree 14 \
	--even-degrees --mixing 0.2 --seed 1 -o "$tmp/pl" 2>/dev/null
"$BIN" fit "$tmp/pl/edges.tsv" -k auto -j 2 -q -o "$tmp/sh" 2>/dev/null
check "one fold: run.json search is shape, 1 fold" \
	sh -c '[ "$1" = shape ] && [ "$2" = 1 ]' sh \
	"$(json_get "$tmp/sh/run.json" k_selection.search)" \
	"$(json_get "$tmp/sh/run.json" k_selection.folds)"
"$PY" - "$tmp/sh/run.json" "$tmp/sh/k-selection.tsv" "$tmp/pl/planted.tsv" <<'PYEOF' && pass "shape search: reasons, order, warm starts, the gaps around the choice" || fail "shape search: reasons, order, warm starts, the gaps around the choice"
import json, sys
sel = json.load(open(sys.argv[1]))["k_selection"]
rows = [l.rstrip("\n").split("\t") for l in open(sys.argv[2])]
head, rows = rows[0], rows[1:]
col = {h: i for i, h in enumerate(head)}
pts = sorted(((int(r[col["order"]]), int(r[col["k"]]), float(r[col["heldout_loglik"]]),
               r[col["reason"]], int(r[col["warm_from"]])) for r in rows))
assert [p[0] for p in pts] == list(range(1, len(pts) + 1)), "order is 1..N"
start = sel["start"]
assert pts[0][1] == start and pts[0][3] == "start"
seen = {}
for order, k, ll, why, warm in pts:
    if why.startswith("refine between "):
        a, b = map(int, why[len("refine between "):].split(" and "))
        assert a in seen and b in seen and a < k < b, why
        # a warm start comes from the nearest k above, decided before
        assert warm == b, (k, warm)
        # the refined point is the geometric middle of its gap, rounded
        assert abs(k - (a * b) ** 0.5) <= 1, (k, a, b)
    elif why == "start":
        assert warm == 0 and order == 1
    else:
        # from the nearest k above decided before; above them all, from
        # the nearest below (its seeding's next columns added: select_warm.c)
        assert why in ("bracket", "walk up", "walk down", "extend past edge"), why
        above = [x for x in seen if x > k]
        below = [x for x in seen if x < k]
        assert warm == (min(above) if above else max(below)), (k, warm, above, below)
    seen[k] = ll
best = max(seen, key=lambda k: seen[k])
assert best == sel["chosen"]
ks = sorted(seen)
i = ks.index(best)
# the search ends with both gaps around the choice within one grid step
# (ratio 1.25) unless the choice is at an end of what was tried; half of
# one (1.118) only from 20,000 held-out edges (select.h), and this graph
# holds out about 2,100
assert sel["held_out_edges"] < 20000, sel["held_out_edges"]
if 0 < i < len(ks) - 1:
    assert ks[i + 1] / best <= 1.25 + 1e-9 and best / ks[i - 1] <= 1.25 + 1e-9, ks
# fewer fits than the grid asked for
assert len(seen) < len(sel["grid"]), (len(seen), len(sel["grid"]))
# the planted count (rows of planted.tsv minus the header): within 30%
planted = sum(1 for _ in open(sys.argv[3])) - 1
assert abs(best - planted) <= 0.3 * planted, (best, planted)
PYEOF
# 20,000 held-out edges or more: the refinement goes on to half a grid
# step (select.h, SELECT_FINE_EDGES). A graph of 40,000 edges with half
# of them held out reaches it cheaply (the fits are poor, the rule is
# what is checked: at one grid step this graph ended with 60 below 75)
"$BIN" simulate -n 4000 --sizes 20:300 --size-exponent 2 --overlap 0.1 --mean-degree 20 \
	--even-degrees --mixing 0.2 --seed 1 -o "$tmp/pl4" 2>/dev/null
"$BIN" fit "$tmp/pl4/edges.tsv" -k auto --holdout 0.5 -j 2 -q -o "$tmp/fine" 2>/dev/null
"$PY" - "$tmp/fine/run.json" <<'PYEOF' && pass "20,000 held-out edges: both gaps around the choice within half a grid step" || fail "20,000 held-out edges: both gaps around the choice within half a grid step"
import json, sys
sel = json.load(open(sys.argv[1]))["k_selection"]
assert sel["search"] == "shape" and sel["held_out_edges"] >= 20000, sel["held_out_edges"]
ks = sorted(p["k"] for p in sel["scores"])
best = sel["chosen"]
i = ks.index(best)
assert 0 < i < len(ks) - 1, ks
fine = 1.25 ** 0.5  # a gap of 1.118 rounds to k a little wider: 1 allowed
assert ks[i + 1] <= best * fine + 1 and best <= ks[i - 1] * fine + 1, ks
PYEOF
"$BIN" fit "$tmp/pl/edges.tsv" -k auto -j 1 -o "$tmp/sh1" 2>"$tmp/sh1.err"
check "shape search: the notice says the first k is the clusters of the seeding" \
	grep -q "first k the clusters that label propagation finds" "$tmp/sh1.err"
check "shape search: the first k scored is k_selection.start, not the grid's 500 cap" \
	grep -q "choosing k: k $(json_get "$tmp/sh/run.json" k_selection.start) (start) scores" \
	"$tmp/sh1.err"
check "shape search: no notice of a grid of values" sh -c "! grep -q 'values from' '$tmp/sh1.err'"
cut -f1,2,6,10,11,12 "$tmp/sh/k-selection.tsv" >"$tmp/sh.sel"
cut -f1,2,6,10,11,12 "$tmp/sh1/k-selection.tsv" >"$tmp/sh1.sel"
check "shape search: the same points, order, scores and choice with -j 1" cmp -s "$tmp/sh.sel" "$tmp/sh1.sel"
check "shape search: the final fit starts from seeds (trace.tsv begins at sweep 0)" \
	[ "$(sed -n 2p "$tmp/sh/trace.tsv" | cut -f1)" = 0 ]
"$BIN" fit "$tmp/pl/edges.tsv" -k auto --k-grid 10,20,40 -q -o "$tmp/shl" 2>/dev/null
check "a list is scored in full even with one fold (search grid, 3 rows)" \
	sh -c '[ "$1" = grid ] && [ "$2" = 3 ]' sh \
	"$(json_get "$tmp/shl/run.json" k_selection.search)" \
	"$(($(wc -l <"$tmp/shl/k-selection.tsv") - 1))"

# ---- where label propagation merges communities, the search starts at
# the ego-nets' count L instead of the clusters' (select.c, shape_search():
# clusters that hold fewer than half of the nodes say nothing). A planted
# graph of 5,000 nodes with 30% of them in two communities (85 planted):
# at most fit seeds the training split's propagation left 78-80 clusters
# holding every node, but at seed 7 two clusters of 34 nodes, the rest in
# halves of the graph, which would have started the search at k 2.
"$BIN" simulate -n 5000 --sizes 20:500 --size-exponent 2 --overlap 0.3 --mean-degree 20 \
	--even-degrees --mixing 0.2 --seed 1 -o "$tmp/ov" 2>/dev/null
"$BIN" fit "$tmp/ov/edges.tsv" -k auto -j 2 --seed 7 -o "$tmp/ova" 2>"$tmp/ova.err"
L=$(sed -n 's/.*the \([0-9]*\) distinct locally minimal.*/\1/p' "$tmp/ova.err")
check "two clusters of half the graph: the search starts at L ($L), not at 2" \
	sh -c '[ -n "$1" ] && [ "$1" -gt 10 ] && [ "$2" = "$1" ]' sh "$L" \
	"$(json_get "$tmp/ova/run.json" k_selection.start)"
"$BIN" fit "$tmp/ov/edges.tsv" -k auto -j 2 --seed 1 -o "$tmp/ovb" 2>/dev/null
s1=$(json_get "$tmp/ovb/run.json" k_selection.start)
check "... and at seed 1 at the clusters ($s1, not L)" \
	sh -c '[ "$1" != "$2" ] && [ "$1" -ge "$2" ]' sh "$s1" "$L"

# ---- a sparse graph whose clusters hold every node but are far fewer
# than its ego-nets starts at the clusters: an LFR benchmark graph drawn by
# networkx 2.8 (tests/bench/lfr.py: 10^4 nodes, mean degree 8 asked (10.3 drawn), mixing
# 0.2, 109 communities of 20-500 nodes, power-law degrees). Measured
# (2026-12-05): 118 clusters on the training split, L 466; from 118 the
# search chose 94 in 3 s (ONMI 0.897), from 466 (the rule of session 17,
# "fewer than L / 2 clusters") 122 in 6 s (0.874).
if "$PY" "$ROOT/tests/bench/lfr.py" 10000 0.2 8 1 "$tmp/lfr" >"$tmp/lfr.out" 2>&1; then
	"$BIN" fit "$tmp/lfr/edges.tsv" -k auto -j 2 -o "$tmp/lfra" 2>"$tmp/lfra.err"
	Ll=$(sed -n 's/.*the \([0-9]*\) distinct locally minimal.*/\1/p' "$tmp/lfra.err")
	sl=$(json_get "$tmp/lfra/run.json" k_selection.start)
	kl=$(json_get "$tmp/lfra/run.json" parameters.k)
	check "sparse LFR: the search starts at the clusters ($sl), under half of L ($Ll)" \
		sh -c '[ -n "$1" ] && [ -n "$2" ] && [ $(($1 * 2)) -lt "$2" ]' sh "$sl" "$Ll"
	check "... within 30% of the 109 communities networkx drew ($sl), and so does k ($kl)" \
		sh -c '[ "$1" -ge 77 ] && [ "$1" -le 141 ] && [ "$2" -ge 77 ] && [ "$2" -le 141 ]' \
		sh "$sl" "$kl"
else
	echo "# SKIP no LFR graph: $(tail -1 "$tmp/lfr.out")"
fi

# ---- every fit of the shape search makes the reseeding moves below
# 20,000 held-out edges, warm ones too (select.c, all_moves). A leaky
# planted graph of 10^4 nodes (97 planted, power-law sizes, mixing 0.2):
# measured (2026-12-04, seed 1) 88 chosen, ONMI 0.893 (seeds 2 and 3 the
# same k, 0.900 and 0.905); with the start's moves alone 124 was chosen at
# ONMI 0.652 (0.651, 0.668). ONMI by tests/tools/onmi.py (our
# transcription of McDaid, Greene & Hurley 2011, max form) against the
# planted cover. Issue 12's bound: the chosen k within 30% of the planted.
"$BIN" simulate -n 10000 --sizes 20:2000 --size-exponent 2 --overlap 0.1 --mean-degree 20 \
	--even-degrees --mixing 0.2 --seed 1 -q -o "$tmp/lk"
"$BIN" fit "$tmp/lk/edges.tsv" -k auto -j 2 -q -o "$tmp/lka" 2>/dev/null
check "leaky 10^4: exit 0" [ $? -eq 0 ]
planted=$(($(wc -l <"$tmp/lk/planted.tsv") - 1))
chosen=$(json_get "$tmp/lka/run.json" parameters.k)
check "leaky 10^4: the shape search (one fold, under 20,000 held-out edges)" \
	[ "$(json_get "$tmp/lka/run.json" k_selection.search)" = shape ]
check "leaky 10^4: chosen k $chosen within 30% of the $planted planted (124 with the start's moves alone)" \
	awk -v c="$chosen" -v p="$planted" 'BEGIN { d = c - p; if (d < 0) d = -d; exit !(c > 0 && d <= 0.3 * p) }'
o=$("$PY" "$ROOT/tests/tools/onmi.py" "$tmp/lka/memberships.tsv" "$tmp/lk/truth.tsv")
check "leaky 10^4: ONMI against the planted cover $o >= 0.85 (0.652 with the start's moves alone)" \
	awk -v a="$o" 'BEGIN { exit !(a + 0 >= 0.85) }'

finish
