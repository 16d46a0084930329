#!/bin/sh
# coterie simulate [options] -o DIR samples a planted AGM (Yang & Leskovec,
# ICDM 2012) and writes edges.tsv, truth.tsv, planted.tsv and simulate.json
# (man/coterie-files.5). Checked here on the real binary: the files agree
# with each other (read with python3-networkx, Debian 2.8.8), the edge count
# is within 5 sd of the expectation simulate.json states, the same seed
# gives the same bytes whatever -j is, coterie fit reads the edge list, an
# existing planted graph is not replaced without --force, and bad options
# exit 2 without raw control bytes.
. "$(dirname "$0")/lib"

if ! "$BIN" simulate --help >/dev/null 2>&1; then
	echo "# SKIP coterie simulate is not a command of $BIN yet"
	exit 0
fi

"$BIN" simulate --help >"$tmp/help.txt" 2>&1
check "--help exits 0 and names the options" grep -q -- '--mean-degree' "$tmp/help.txt"

d=$tmp/a
"$BIN" simulate -n 800 --sizes 10:60 --overlap 0.2 --max-memberships 3 --mean-degree 12 \
	--epsilon 0.002 --seed 5 -j 2 --prefix v -o "$d" 2>"$tmp/a.err"
check "simulate exits 0" [ $? -eq 0 ]
for f in edges.tsv truth.tsv planted.tsv simulate.json; do
	check "writes $f" [ -s "$d/$f" ]
done
check "no temporary files are left" [ -z "$(ls -A "$d" | grep '^\.')" ]
check "the notice names the folder" grep -q "written to '$d'" "$tmp/a.err"

# The files against each other. The edge count X is a sum of independent
# Bernoulli draws with mean E (simulate.json expected_edges) and variance
# sum P(1-P) <= E, so |X - E| <= 5 sqrt(E) holds with probability > 1 - 6e-7.
if "$PY" - "$d" >"$tmp/py.out" 2>&1 <<'EOF'
import json, math, sys
import networkx as nx
D = sys.argv[1]
J = json.load(open(D + "/simulate.json"))
R, P = J["realised"], J["parameters"]
G = nx.read_edgelist(D + "/edges.tsv", delimiter="\t", comments="#", nodetype=str)
assert G.number_of_edges() == R["edges"], (G.number_of_edges(), R["edges"])
assert G.number_of_nodes() == P["nodes"] - R["isolated_nodes"]
assert all(u.startswith("v") and v.startswith("v") for u, v in G.edges())
assert nx.number_of_selfloops(G) == 0
E = R["expected_edges"]
assert abs(E - P["nodes"] * P["mean_degree"] / 2) < 1e-6 * E, E
assert abs(R["edges"] - E) <= 5 * math.sqrt(E), (R["edges"], E)
rows = [l.rstrip("\n").split("\t") for l in open(D + "/truth.tsv")]
assert rows[0] == ["node", "community"], rows[0]
mem = rows[1:]
assert len(mem) == R["memberships"]
assert len(set(map(tuple, mem))) == len(mem)   # no node twice in a community
per_node = {}
for u, c in mem:
    per_node.setdefault(u, set()).add(c)
assert all(1 <= len(s) <= P["max_memberships"] for s in per_node.values())
assert sum(len(s) >= 2 for s in per_node.values()) == R["overlapping_nodes"]
assert len(per_node) == P["nodes"] - R["uncovered_nodes"]
pl = [l.rstrip("\n").split("\t") for l in open(D + "/planted.tsv")]
assert pl[0] == ["community", "size", "p"]
assert len(pl) - 1 == R["communities"]
sizes = {}
for u, c in mem:
    sizes[c] = sizes.get(c, 0) + 1
for c, s, p in pl[1:]:
    assert sizes[c] == int(s)
    assert P["size_min"] <= int(s) <= P["size_max"]
    assert 0 <= float(p) <= 1
EOF
then
	pass "the files agree with each other and with the model"
else
	fail "the files agree with each other and with the model"
	sed 's/^/# /' "$tmp/py.out"
fi

"$BIN" simulate -n 800 --sizes 10:60 --overlap 0.2 --max-memberships 3 --mean-degree 12 \
	--epsilon 0.002 --seed 5 -j 1 --prefix v -q -o "$tmp/b" 2>/dev/null
check "same seed, -j 1: same edges.tsv bytes" cmp -s "$d/edges.tsv" "$tmp/b/edges.tsv"
check "same seed, -j 1: same truth.tsv bytes" cmp -s "$d/truth.tsv" "$tmp/b/truth.tsv"
check "same seed, -j 1: same planted.tsv bytes" cmp -s "$d/planted.tsv" "$tmp/b/planted.tsv"
"$BIN" simulate -n 800 --sizes 10:60 --overlap 0.2 --max-memberships 3 --mean-degree 12 \
	--epsilon 0.002 --seed 6 --prefix v -q -o "$tmp/c" 2>/dev/null
check "another seed: another graph" sh -c "! cmp -s '$d/edges.tsv' '$tmp/c/edges.tsv'"

# refusing to replace a planted graph
before=$(cksum <"$d/edges.tsv")
"$BIN" simulate -n 100 -q -o "$d" 2>"$tmp/taken.err"
rc=$?
check "an existing planted graph is kept: exit 1" [ $rc -eq 1 ]
check "... unchanged" [ "$(cksum <"$d/edges.tsv")" = "$before" ]
check "... and the message says --force" grep -q -- '--force' "$tmp/taken.err"
"$BIN" simulate -n 100 --sizes 10:40 --seed 2 -q --force -o "$d" 2>/dev/null
check "--force replaces it: exit 0" [ $? -eq 0 ]
check "... with the new graph" [ "$(json_get "$d/simulate.json" parameters.nodes)" = 100 ]

"$BIN" simulate -n 100 --sizes 5:10 --overlap 0 -o "$tmp/far" 2>"$tmp/far.err"
check "an unreachable mean degree: exit 1" [ $? -eq 1 ]
check "... saying what is reachable" grep -q 'out of reach: these communities give at most' "$tmp/far.err"
check "... and writing nothing" [ ! -e "$tmp/far/edges.tsv" ]

# coterie fit reads the edge list
"$BIN" simulate -n 300 --sizes 30:60 --link-prob 0.3 --epsilon 0.01 --seed 3 -q -o "$tmp/e" 2>/dev/null
k=$(json_get "$tmp/e/simulate.json" realised.communities)
"$BIN" fit "$tmp/e/edges.tsv" -k "$k" -j 2 --starts 1 --max-sweeps 30 -q -o "$tmp/e/fit" 2>"$tmp/fit.err"
check "coterie fit reads edges.tsv" [ $? -eq 0 ]
check "... with every edge" [ "$(json_get "$tmp/e/fit/run.json" graph.edges)" = \
	"$(json_get "$tmp/e/simulate.json" realised.edges)" ]
"$BIN" simulate -n 2000 --sizes 10:200 --mean-degree 8 --even-degrees --seed 4 -q -o "$tmp/even" 2>/dev/null
check "--even-degrees: exit 0" [ $? -eq 0 ]
check "... recorded in simulate.json" [ "$(json_get "$tmp/even/simulate.json" parameters.even_degrees)" = true ]
# p_c (size - 1) is one number for every community (the scale)
check "... p_c times (size - 1) is the same for every community" "$PY" -c "
import sys
r = [l.split('	') for l in open('$tmp/even/planted.tsv')][1:]
v = [float(p) * (int(s) - 1) for _, s, p in r]
sys.exit(0 if max(v) - min(v) <= 1e-9 * max(v) else 1)"
"$BIN" simulate -n 100 --even-degrees --mean-degree 0 -o "$tmp/x" 2>/dev/null
check "--even-degrees without a mean degree: exit 2" [ $? -eq 2 ]
check "--link-prob alone keeps p_c as given" [ "$(json_get "$tmp/e/simulate.json" realised.p_max)" = 0.3 ]

# bad usage: exit 2, message without raw control bytes
bad()
{
	desc=$1
	shift
	"$BIN" simulate "$@" >"$tmp/bad.out" 2>&1
	rc=$?
	if status_clean 2 "$rc" "$tmp/bad.out"; then pass "$desc: exit 2"; else
		fail "$desc: exit 2 (got $rc)"
		sed 's/^/# /' "$tmp/bad.out"
	fi
}
bad "no output folder" -n 100
bad "sizes above the node count" -n 50 --sizes 10:60 -o "$tmp/x"
bad "sizes MIN above MAX" --sizes 30:20 -o "$tmp/x"
bad "overlap above 1" --overlap 1.5 -o "$tmp/x"
bad "one node" -n 1 -o "$tmp/x"
bad "a comment prefix" --prefix '#a' -o "$tmp/x"
bad "a prefix with an escape" --prefix "$(printf 'a\033[31m')" -o "$tmp/x"
bad "a stray argument" "$(printf 'x\033[2J')" -o "$tmp/x"
bad "an unknown option" --frobnicate -o "$tmp/x"
bad "too many communities for the nodes" -n 100 -k 50 --sizes 10:20 -o "$tmp/x"
check "nothing written by refused runs" [ ! -e "$tmp/x" ]

finish
