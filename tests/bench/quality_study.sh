#!/bin/bash
# The quality table of DEVELOPERS.md "The merge move": ONMI (max form,
# tests/tools/onmi.py, an independent transcription of McDaid et al.) of
# default fits at the known or planted k, seeds 1-3; the LFR graphs also at
# 1.5 times their k, and igraph's Leiden on them.
# usage: bash tests/bench/quality_study.sh ./coterie [WORKDIR]   (~8 min on 2 cores)
set -u
BIN=$(readlink -f "$1"); W=${2:-$(mktemp -d)}; mkdir -p "$W"
here=$(cd "$(dirname "$0")/../.." && pwd); D=$here/tests/data; PY=${PY:-/usr/bin/python3}
sim() { [ -f "$W/$1/edges.tsv" ] || "$BIN" simulate "${@:2}" -o "$W/$1" -q; }
sim leaky10k -n 10000 --sizes 20:2000 --size-exponent 2 --overlap 0.1 --mean-degree 20 --even-degrees --mixing 0.2 --seed 1
sim clean10k -n 10000 --sizes 20:200 --overlap 0.1 --mean-degree 15 --epsilon 0.0001 --seed 3
# LFR graphs (networkx 2.8, tests/bench/lfr.py): power-law degrees, a
# partition; mean degree 15 and 8 asked (networkx draws about 18.9 and
# 10.3), mixing 0.2
lfr() { [ -f "$W/$1/edges.tsv" ] || "$PY" "$here/tests/bench/lfr.py" "${@:2}" "$W/$1" >/dev/null; }
lfr lfr-d15 10000 0.2 15 1
lfr lfr-d8 10000 0.2 8 1
kof() { if [ -f "$W/$1/planted.tsv" ]; then echo $(( $(wc -l < "$W/$1/planted.tsv") - 1 ))
	else cut -f2 "$W/$1/truth.tsv" | sort -u | wc -l; fi; }
run() { local name=$1 edges=$2 truth=$3 k=$4 seed=$5 out=$W/fit-$1-$5
	rm -rf "$out"
	local t0=$(date +%s.%N)
	"$BIN" fit "$edges" -k "$k" -o "$out" -j 2 --seed "$seed" -q
	local t1=$(date +%s.%N)
	printf '%s\t%s\t%s\t%s\t%.1f s\n' "$name" "$k" "$seed" \
		"$("$PY" "$here/tests/tools/onmi.py" "$out/memberships.tsv" "$truth")" \
		"$(echo "$t1 - $t0" | bc)"
}
printf 'graph\tk\tseed\tONMI\twall\n'
for s in 1 2 3; do
	run football "$D/football/edges.tsv" "$D/football/truth.tsv" 12 $s
	run karate "$D/karate/edges.tsv" "$D/karate/truth.tsv" 2 $s
	run polbooks "$D/polbooks/edges.tsv" "$D/polbooks/truth.tsv" 3 $s
	run leaky10k "$W/leaky10k/edges.tsv" "$W/leaky10k/truth.tsv" "$(kof leaky10k)" $s
	run clean10k "$W/clean10k/edges.tsv" "$W/clean10k/truth.tsv" "$(kof clean10k)" $s
	for g in lfr-d15 lfr-d8; do
		k=$(kof $g)
		run $g "$W/$g/edges.tsv" "$W/$g/truth.tsv" "$k" $s
		# half as many columns again: those that do not pay for their
		# names are left out (DEVELOPERS.md, "Columns that do not pay")
		run $g "$W/$g/edges.tsv" "$W/$g/truth.tsv" $((k * 3 / 2)) $s
	done
done
# igraph's Leiden (modularity, seed 42) on the LFR graphs, for scale
for g in lfr-d15 lfr-d8; do
	"$PY" - "$W/$g/edges.tsv" "$W/leiden-$g.tsv" <<'PYEOF'
import random, sys
import igraph as ig
random.seed(42)
g = ig.Graph.Read_Ncol(sys.argv[1], directed=False)
p = g.community_leiden(objective_function="modularity", n_iterations=-1)
with open(sys.argv[2], "w") as f:
    for v, c in zip(g.vs["name"], p.membership):
        f.write("%s\t%d\n" % (v, c))
PYEOF
	printf '%s\tLeiden\t-\t%s\t-\n' "$g" \
		"$("$PY" "$here/tests/tools/onmi.py" "$W/leiden-$g.tsv" "$W/$g/truth.tsv")"
done
