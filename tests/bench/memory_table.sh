#!/bin/sh
# The memory estimate against the measured peak (issue 18): for each graph
# and k, at -j 1 and 2, the fit's estimate "in all" (what the refusal
# message prints; COTERIE_MEMORY_LIMIT=1K forces it) beside the peak RSS
# run.json records, and their ratio. Graphs: planted with clean
# communities (simulate's defaults) and ones that leak (--mixing 0.1, 0.2,
# 0.3: the bench's graphs with mixing), at 10^4 and 10^5 nodes (10^5 and
# 10^6 edges); k: 10, 100, 1000 and the planted count. Every fit runs
# --starts 1 --max-sweeps 10 (the peak is in the first sweeps: rows fill
# then empty, DEVELOPERS.md). Then graphs the estimate's constants were
# not fitted to ("held out": mixing 0.15 at 3x10^4 nodes, and a 10^5-node
# graph of mean degree 16 whose communities leak through the background,
# --epsilon 4e-5; a weighted graph, fitted with --weighted) and one of
# mean degree 40 whose peak is at the end of the fit, not in the sweeps
# (its end-phase constant, END_BYTES in src/memory.c, was fitted to it).
# Prints a Markdown table.
# usage: tests/bench/memory_table.sh [BIN] [SIZES] [HELDOUT]
#   SIZES default "10000 100000"; HELDOUT 0 skips the held-out graphs
set -u
BIN=$(readlink -f "${1:-./coterie}")
SIZES=${2:-"10000 100000"}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
echo "| graph | n | edges | k | -j | resident at the check MiB | estimate in all MiB | peak MiB | estimate/peak |"
echo "|---|---|---|---|---|---|---|---|---|"
# row LABEL DIR N M K J: one line of the table ($EXTRA: more fit options)
EXTRA=
row()
{
	# shellcheck disable=SC2086
	est=$(COTERIE_MEMORY_LIMIT=1K "$BIN" fit "$2/edges.tsv" -k "$5" -j "$6" $EXTRA \
		--starts 1 --max-sweeps 10 -q -o "$work/o" 2>&1 |
		sed -n 's/.*about \([0-9.]*\) \([MGK]i*B\) more (\([0-9.]*\) \([MGK]i*B\) in all.*/\1 \2 \3 \4/p')
	rm -rf "$work/o"
	# shellcheck disable=SC2086
	"$BIN" fit "$2/edges.tsv" -k "$5" -j "$6" $EXTRA --starts 1 --max-sweeps 10 -q \
		-o "$work/o" 2>/dev/null
	peak=$(python3 -c "import json,sys; print(json.load(open(sys.argv[1]))['run']['peak_rss_kb'])" "$work/o/run.json")
	rm -rf "$work/o"
	python3 - "$1" "$3" "$4" "$5" "$6" "$est" "$peak" <<'PY'
import sys
g, n, m, k, j, est, peak = sys.argv[1:]
f = est.split()
unit = {"KiB": 1 / 1024, "MiB": 1, "GiB": 1024}
more, mib = float(f[0]) * unit[f[1]], float(f[2]) * unit[f[3]]
p = int(peak) / 1024
print("| %s | %s | %s | %s | %s | %.0f | %.0f | %.1f | %.2f |" % (
    g, n, m, k, j, mib - more, mib, p, mib / p))
PY
}

for n in $SIZES; do
	for g in clean 0.1 0.2 0.3; do
		d=$work/$g-$n
		if [ "$g" = clean ]; then
			"$BIN" simulate -n "$n" --seed 1 -o "$d" -q
		else
			"$BIN" simulate -n "$n" --sizes 20:2000 --size-exponent 2 --overlap 0.1 \
				--mean-degree 20 --even-degrees --mixing "$g" --seed 1 -o "$d" -q
		fi
		planted=$(tail -n +2 "$d/planted.tsv" | wc -l)
		m=$(grep -vc '^#' "$d/edges.tsv")
		label=clean
		[ "$g" = clean ] || label="mixing $g"
		for k in 10 100 1000 "$planted"; do
			for j in 1 2; do
				row "$label" "$d" "$n" "$m" "$k" "$j"
			done
		done
	done
done
[ "${3:-1}" = 0 ] && exit 0
d=$work/held1
"$BIN" simulate -n 30000 --sizes 20:2000 --size-exponent 2 --overlap 0.1 --mean-degree 20 \
	--even-degrees --mixing 0.15 --seed 2 -o "$d" -q
m=$(grep -vc '^#' "$d/edges.tsv")
for k in 10 300; do
	row "held out: mixing 0.15" "$d" 30000 "$m" "$k" 2
done
d=$work/held2
"$BIN" simulate -n 100000 --sizes 20:2000 --overlap 0.1 --mean-degree 16 --epsilon 4e-5 \
	--seed 1 -o "$d" -q
m=$(grep -vc '^#' "$d/edges.tsv")
row "held out: background 4e-5" "$d" 100000 "$m" 1134 2
d=$work/held3
"$BIN" simulate -n 30000 --sizes 10:500 --overlap 0.2 --max-memberships 3 --mean-degree 12 \
	--mixing 0.2 --weighted --seed 3 -o "$d" -q
m=$(grep -vc '^#' "$d/edges.tsv")
EXTRA=--weighted
for k in 100 1000; do
	row "held out: weighted, mixing 0.2" "$d" 30000 "$m" "$k" 2
done
EXTRA=
d=$work/dense
"$BIN" simulate -n 50000 --sizes 50:5000 --overlap 0.1 --mean-degree 40 --mixing 0.05 \
	--seed 5 -o "$d" -q
m=$(grep -vc '^#' "$d/edges.tsv")
for k in 100 1000; do
	row "end phase: mean degree 40" "$d" 50000 "$m" "$k" 2
done
