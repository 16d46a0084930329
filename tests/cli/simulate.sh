#!/bin/sh
# coterie simulate [options] -o DIR samples a planted AGM (Yang & Leskovec,
# ICDM 2012) and writes edges.tsv, truth.tsv, planted.tsv and simulate.json
# (man/coterie-files.5). Checked here on the real binary: the files agree
# with each other (read with python3-networkx, Debian 2.8.8), the edge count
# is within 5 sd of the expectation simulate.json states, the same seed
# gives the same bytes whatever -j is (and, without --mixing, as before it),
# --mixing shares the edges as simulate.json says, coterie fit reads the edge list, an
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

# Without --mixing the bytes are those of the binary before it existed
# (commit ead9fde; cksum of each file, x86-64 glibc: the draws go through
# log1p, so another libm may differ in the last bits and pick other pairs).
if [ "$(uname -m)" = x86_64 ]; then
	"$BIN" simulate -n 3000 --sizes 20:300 --size-exponent 2 --overlap 0.1 --mean-degree 20 \
		--seed 9 -j 2 -q -o "$tmp/g1" 2>/dev/null
	check "no --mixing: the same edges.tsv as before it" [ "$(cksum <"$tmp/g1/edges.tsv")" = "1832179816 278154" ]
	check "... the same truth.tsv" [ "$(cksum <"$tmp/g1/truth.tsv")" = "954887450 24708" ]
	check "... the same planted.tsv" [ "$(cksum <"$tmp/g1/planted.tsv")" = "887185485 1213" ]
	check "... and no mixing in simulate.json" sh -c "! grep -q '\"mixing\"' '$tmp/g1/simulate.json'"
	check "with --epsilon: the same edges.tsv as before" [ "$(cksum <"$tmp/b/edges.tsv")" = "549058372 47127" ]
	check "... the same planted.tsv" [ "$(cksum <"$tmp/b/planted.tsv")" = "640963525 1333" ]
fi

# --mixing X: the background solved so that X of the expected edges are
# background edges (E(eps) - E(0) over E(eps); simulate.h). Checked from
# the files alone: a pair sharing no planted community is linked with
# probability eps (the AGM's P(u, v) with S empty), so the edges between
# such pairs are Binomial(N0, eps), N0 counted here exactly from truth.tsv
# as C(n, 2) less the distinct pairs inside a community; |X - N0 eps| <=
# 5 sqrt(N0 eps (1 - eps)) fails by chance with probability below 6e-7
# (normal approximation; N0 eps is in the thousands here).
for x in 0.1 0.3; do
	"$BIN" simulate -n 3000 --sizes 20:300 --size-exponent 2 --overlap 0.1 --mean-degree 20 \
		--mixing $x --seed 9 -j 2 -o "$tmp/mix$x" 2>"$tmp/mix.err"
	check "--mixing $x: exit 0" [ $? -eq 0 ]
	check "... the notice gives the epsilon solved" grep -q "mixing $x: background epsilon" "$tmp/mix.err"
	if "$PY" - "$tmp/mix$x" "$x" >"$tmp/py.out" 2>&1 <<'EOF'
import json, math, sys
D, X = sys.argv[1], float(sys.argv[2])
J = json.load(open(D + "/simulate.json"))
R, P, M = J["realised"], J["parameters"], J["mixing"]
n = P["nodes"]
assert P["mixing"] == X and M["asked"] == X and P["epsilon"] == 0, (P, M)
E = R["expected_edges"]
assert abs(E - n * P["mean_degree"] / 2) < 1e-6 * E, E
assert abs(M["background_share_expected"] - X) < 1e-9, M
comm = {}
for line in list(open(D + "/truth.tsv"))[1:]:
    u, c = line.split()
    comm.setdefault(c, []).append(int(u))
together = set()
for ms in comm.values():
    ms.sort()
    together.update((a, b) for i, a in enumerate(ms) for b in ms[i + 1:])
N0 = n * (n - 1) // 2 - len(together)
assert N0 == M["pairs_apart"], (N0, M["pairs_apart"])
out = m = 0
for line in open(D + "/edges.tsv"):
    if line.startswith("#"):
        continue
    a, b = sorted(map(int, line.split()))
    m += 1
    out += (a, b) not in together
assert m == R["edges"] and out == M["outside_edges"], (m, out, M)
eps = M["epsilon"]
mean, sd = N0 * eps, math.sqrt(N0 * eps * (1 - eps))
assert abs(out - mean) <= 5 * sd, (out, mean, sd)
assert abs(M["outside_share_realised"] - out / m) < 1e-12
assert M["outside_edges"] <= M["background_share_realised"] * m + 1e-6
EOF
	then
		pass "... outside edges within 5 sd of eps x (pairs sharing none)"
	else
		fail "... outside edges within 5 sd of eps x (pairs sharing none)"
		sed 's/^/# /' "$tmp/py.out"
	fi
done
check "--help names --mixing" grep -q -- '--mixing X' "$tmp/help.txt"

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
bad "--mixing with --epsilon" --mixing 0.2 --epsilon 0.001 -o "$tmp/x"
bad "--mixing with no mean degree" --mixing 0.2 --link-prob 0.3 -o "$tmp/x"
bad "--mixing of 1" --mixing 1 -o "$tmp/x"
check "nothing written by refused runs" [ ! -e "$tmp/x" ]

finish
