#!/bin/bash
# The quality table of DEVELOPERS.md "The merge move": ONMI (max form,
# tests/tools/onmi.py, an independent transcription of McDaid et al.) of
# default fits at the known or planted k, seeds 1-3.
# usage: sh tests/bench/quality_study.sh ./coterie [WORKDIR]   (~5 min on 2 cores)
set -u
BIN=$(readlink -f "$1"); W=${2:-$(mktemp -d)}; mkdir -p "$W"
here=$(cd "$(dirname "$0")/../.." && pwd); D=$here/tests/data; PY=${PY:-/usr/bin/python3}
sim() { [ -f "$W/$1/edges.tsv" ] || "$BIN" simulate "${@:2}" -o "$W/$1" -q; }
sim leaky10k -n 10000 --sizes 20:2000 --size-exponent 2 --overlap 0.1 --mean-degree 20 --even-degrees --mixing 0.2 --seed 1
sim clean10k -n 10000 --sizes 20:200 --overlap 0.1 --mean-degree 15 --epsilon 0.0001 --seed 3
kof() { echo $(( $(wc -l < "$W/$1/planted.tsv") - 1 )); }
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
done
