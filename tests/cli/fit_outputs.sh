#!/bin/sh
# coterie fit writes a complete, self-consistent result folder.
# The folder's contents are re-derived in tests/cli/result_check.py from the
# edge list with python3-networkx (Debian 2.8.8); the graph sizes are the
# published ones.
. "$(dirname "$0")/lib"

karate=$DATA/karate/edges.tsv
football=$DATA/football/edges.tsv
need_file "$karate"
need_file "$football"

out=$tmp/karate
"$BIN" fit "$karate" -k 4 -j 2 --seed 3 -o "$out" 2>"$tmp/karate.err"
check "fit on karate exits 0" [ $? -eq 0 ]
for f in memberships.tsv communities.tsv trace.tsv run.json checkpoint.cot; do
	check "fit writes $f" [ -s "$out/$f" ]
done
check "no temporary files are left in the result folder (the five and .coterie.manifest)" \
	sh -c '[ "$(ls -A "$1" | wc -l)" -eq 6 ] && [ -f "$1/.coterie.manifest" ]' sh "$out"
check "run.json parses as JSON (python3 -m json.tool)" \
	"$PY" -m json.tool "$out/run.json" /dev/null
# Zachary, J. Anthropological Research 33, 452-473 (1977): 34 members, 78 ties.
check "run.json counts 34 nodes for karate (Zachary 1977)" \
	[ "$(json_get "$out/run.json" graph.nodes)" = 34 ]
check "run.json counts 78 edges for karate (Zachary 1977)" \
	[ "$(json_get "$out/run.json" graph.edges)" = 78 ]
check "run.json records k, seed and threads as given" \
	[ "$(json_get "$out/run.json" parameters.k)/$(json_get "$out/run.json" parameters.seed)/$(json_get "$out/run.json" parameters.threads)" = 4/3/2 ]
check "the load notice on stderr gives the same counts" \
	grep -q '34 nodes, 78 edges' "$tmp/karate.err"
"$PY" "$cli_here/result_check.py" "$karate" "$out" karate || failures=$((failures + 1))

out=$tmp/football
"$BIN" fit "$football" -k 20 -j 2 --seed 1 --max-sweeps 60 -q -o "$out"
check "fit on football exits 0" [ $? -eq 0 ]
# Girvan & Newman, PNAS 99, 7821-7826 (2002): 115 teams, 613 games.
check "run.json counts 115 nodes and 613 edges for football (Girvan & Newman 2002)" \
	[ "$(json_get "$out/run.json" graph.nodes)/$(json_get "$out/run.json" graph.edges)" = 115/613 ]
"$PY" "$cli_here/result_check.py" "$football" "$out" football || failures=$((failures + 1))

# --max-sweeps 0: the seeded model is written without a sweep.
out=$tmp/zero
"$BIN" fit "$karate" -k 3 --max-sweeps 0 -q -o "$out"
check "--max-sweeps 0 exits 0" [ $? -eq 0 ]
check "--max-sweeps 0 writes memberships.tsv" [ -s "$out/memberships.tsv" ]
check "--max-sweeps 0 records 0 sweeps" [ "$(json_get "$out/run.json" fit.sweeps)" = 0 ]

# Not on a terminal, the progress prints a line for every start, however
# fast the start goes (the karate fit above made 3 starts: fewer than
# 100000 edges).
for i in 1 2 3; do
	check "the plain progress shows start $i/3" grep -q "start $i/3" "$tmp/karate.err"
done

finish
