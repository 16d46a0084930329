#!/bin/sh
# fit --repeats with --directed and --two-mode: the stability of a
# community is scored on the per-side covers (a node counts once per side
# it is a member on: stability_score_sided()), written as the last column
# of the directed communities.tsv and in run.json. Checked against the
# planted truth of `coterie simulate --directed` (communities matching a
# planted one come back more often) and recomputed from the runs made
# again one by one, their memberships.tsv read by side.
. "$(dirname "$0")/lib"

# ---- a planted directed graph: 18 planted communities, fitted with 30.
# Measured when written (k 30, 5 fits, seed 1): 24 fitted communities
# match a planted one (Jaccard >= 0.5 on the nodes of any side against
# truth.tsv) with mean stability 0.634, the 6 others 0.280; with k 24
# over simulate seeds 1-3: 0.711 / 0.352, 0.727 / 0.429, 0.691 / 0.379.
"$BIN" simulate -n 600 --sizes 20:80 --mixing 0.3 --directed --seed 1 -q -o "$tmp/g"
"$BIN" fit "$tmp/g/edges.tsv" --directed -k 30 --repeats 5 -j 2 -q -o "$tmp/f"
check "fit --directed --repeats 5 writes a result" [ -s "$tmp/f/communities.tsv" ]
"$PY" "$cli_here/stability_planted.py" "$tmp/f" "$tmp/g/truth.tsv" 0.1 sided \
	>"$tmp/planted.out" 2>&1
check "directed: communities matching a planted one are more stable than the others" [ $? -eq 0 ]
sed 's/^/# /' "$tmp/planted.out"

# ---- the score again, by hand: the five runs made one by one (fit
# --seed S+r alone is run r), each one's memberships.tsv read as a set of
# (node, side) per community ("both" gives both), and the kept one's
# communities scored by their mean best-match Jaccard in the four others
eps=$(json_get "$tmp/f/run.json" parameters.epsilon)
kept=$(json_get "$tmp/f/run.json" stability.run_kept)
for s in 1 2 3 4 5; do
	"$BIN" fit "$tmp/g/edges.tsv" --directed -k 30 --epsilon "$eps" --seed "$s" -j 1 -q \
		-o "$tmp/r$s"
done
check "run $kept alone writes the memberships kept" \
	cmp -s "$tmp/f/memberships.tsv" "$tmp/r$kept/memberships.tsv"
"$PY" - "$tmp" "$kept" >"$tmp/again.out" 2>&1 <<'PYEOF'
import sys, csv
tmp, kept = sys.argv[1], int(sys.argv[2])
def sided(path):
    d = {}
    with open(path) as f:
        for r in csv.DictReader(f, delimiter='\t', quoting=csv.QUOTE_NONE):
            for side in ('sending', 'receiving'):
                if r['side'] in (side, 'both'):
                    d.setdefault(r['community'], set()).add((r['node'], side))
    return d
runs = {s: sided('%s/r%d/memberships.tsv' % (tmp, s)) for s in range(1, 6)}
with open(tmp + '/f/communities.tsv') as f:
    col = {r['community']: float(r['stability']) for r in csv.DictReader(f, delimiter='\t')}
worst = 0.0
for c, a in runs[kept].items():
    s = sum(max(len(a & b) / len(a | b) for b in runs[o].values())
            for o in runs if o != kept) / 4
    worst = max(worst, abs(s - col[c]))
print("largest difference from the column: %.2g" % worst)
assert set(col) == set(runs[kept]) and worst < 1e-4, worst
PYEOF
check "directed: the column is the per-side best-match Jaccard recomputed from the runs" \
	[ $? -eq 0 ]
sed 's/^/# /' "$tmp/again.out"

# ---- two-mode: one side per node; the column is there and in [0, 1]
"$BIN" simulate -n 300 --two-mode 200 --sizes 20:60 --mean-degree 10 --mixing 0.2 --seed 2 \
	-q -o "$tmp/t"
"$BIN" fit "$tmp/t/edges.tsv" --two-mode -k 12 --repeats 3 -j 2 -q -o "$tmp/ft"
check "two-mode: the stability column holds a score in [0, 1] for every community" \
	"$PY" -c "
import csv, sys
rows = list(csv.DictReader(open(sys.argv[1]), delimiter='\t'))
assert rows and all(0 <= float(r['stability']) <= 1 for r in rows)" "$tmp/ft/communities.tsv"
check "two-mode: run.json has the three runs, seeds 1-3" \
	"$PY" -c "
import json, sys
st = json.load(open(sys.argv[1]))['stability']
assert [r['seed'] for r in st['runs']] == [1, 2, 3], st['runs']" "$tmp/ft/run.json"
# the run kept is the one of shortest code, as --starts judges a two-mode
# fit; its code, two-sided (senders named among the first column's nodes,
# receivers among the second's), recomputed from the files by
# tests/cli/agm_sided.py, an independent transcription
eps=$(json_get "$tmp/ft/run.json" parameters.epsilon)
set -- $("$PY" "$ROOT/tests/cli/agm_sided.py" "$tmp/t/edges.tsv" "$tmp/ft/memberships.tsv" "$eps")
check "two-mode: the run kept has the shortest code, its code ($2) recomputed by side" \
	"$PY" - "$tmp/ft/run.json" "$2" <<'PYEOF'
import json, sys
st = json.load(open(sys.argv[1]))['stability']
codes = [r['code_length'] for r in st['runs']]
kept = st['run_kept'] - 1
assert kept == min(range(len(codes)), key=lambda i: (codes[i], i)), codes
assert abs(codes[kept] - float(sys.argv[2])) <= 1e-7 * abs(codes[kept]), (codes, sys.argv[2])
PYEOF

# ---- made once: NA, as in a one-mode result
check "a directed fit made once says NA in the stability column" \
	sh -c '[ "$(tail -n +2 "$1" | cut -f9 | sort -u)" = NA ]' sh "$tmp/r1/communities.tsv"
finish
