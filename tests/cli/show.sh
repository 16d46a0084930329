#!/bin/sh
# coterie show DIR [--node NAME | --community ID | --weak-edges ID] [--json]
# reads a result folder back (DESIGN.md "Command line"). What it prints is
# checked against the files `coterie fit` wrote beside the checkpoint
# (memberships.tsv, communities.tsv, run.json) and against the edge list
# read with python3-networkx (Debian 2.8.8); node names from a file never
# reach the terminal raw (STYLE.md section 4).
. "$(dirname "$0")/lib"

if ! "$BIN" show --help >/dev/null 2>&1; then
	echo "# SKIP coterie show is not a command of $BIN yet"
	exit 0
fi

karate=$DATA/karate/edges.tsv
odd=$DATA/graph/odd-names.tsv
need_file "$karate"
need_file "$odd"

res=$tmp/karate
"$BIN" fit "$karate" -k 4 -j 2 --seed 3 -q -o "$res"
check "fit karate for show: exit 0" [ $? -eq 0 ]

# pycheck DESCRIPTION JSONFILE PYTHON-BODY: run a python check with the
# JSON as J, the result folder as R, the edge list as E; true passes.
pycheck()
{
	pc_desc=$1
	pc_json=$2
	pc_body=$3
	# networkx takes a while to import: only when the check uses it
	case $pc_body in
	*G.* | *nx.*) pc_nx=1 ;;
	*) pc_nx=0 ;;
	esac
	if "$PY" - "$pc_json" "$res" "$karate" "$pc_nx" >"$tmp/pycheck.out" 2>&1 <<EOF
import json, sys
J = json.load(open(sys.argv[1]))
R = sys.argv[2]
if sys.argv[4] == "1":
    import networkx as nx
    G = nx.read_edgelist(sys.argv[3], delimiter="\t", comments=None)
def tsv(name):
    rows = [l.rstrip("\n").split("\t") for l in open(R + "/" + name)]
    return [dict(zip(rows[0], r)) for r in rows[1:]]
RUN = json.load(open(R + "/run.json"))
MEM = tsv("memberships.tsv")
COM = tsv("communities.tsv")
$pc_body
EOF
	then
		pass "$pc_desc"
	else
		fail "$pc_desc"
		sed 's/^/# /' "$tmp/pycheck.out"
	fi
}

# --- the summary -----------------------------------------------------------------
"$BIN" show "$res" >"$tmp/sum.txt" 2>"$tmp/sum.err"
check "show DIR: exit 0" [ $? -eq 0 ]
check "show DIR: prints the node and edge counts (34, 78; Zachary 1977)" \
	sh -c 'grep -q "34" "$1" && grep -q "78" "$1"' sh "$tmp/sum.txt"
"$BIN" show "$res" --json >"$tmp/sum.json"
check "show DIR --json: exit 0" [ $? -eq 0 ]
check "show DIR --json parses (python3 -m json.tool)" "$PY" -m json.tool "$tmp/sum.json" /dev/null
pycheck "show --json: 34 nodes, 78 edges (Zachary 1977)" "$tmp/sum.json" '
assert (J["nodes"], J["edges"]) == (34, 78), (J["nodes"], J["edges"])'
pycheck "show --json: sweeps, log-likelihoods and k agree with run.json" "$tmp/sum.json" '
f = RUN["fit"]
assert J["sweep"] == f["sweeps"]
assert abs(J["loglik"] - f["loglik"]) <= 1e-9 * abs(f["loglik"])
assert abs(J["agm_loglik"] - f["agm_loglik"]) <= 1e-6 * abs(f["agm_loglik"])
assert J["k"] == RUN["parameters"]["k"]
assert (J["covered"], J["overlapping"]) == (f["covered_nodes"], f["overlapping_nodes"])'
pycheck "show --json: the communities table matches communities.tsv" "$tmp/sum.json" '
mine = {str(c["community"]): c for c in J["communities"]}
assert set(mine) == {r["community"] for r in COM}, (sorted(mine), [r["community"] for r in COM])
for r in COM:
    c = mine[r["community"]]
    assert c["size"] == int(r["size"]) and c["internal_edges"] == int(r["internal_edges"]), r
    assert abs(c["p"] - float(r["p"])) <= 1e-6, (c["p"], r["p"])
    assert abs(c["conductance"] - float(r["conductance"])) <= 1e-5, r'
pycheck "show --json: communities come largest first" "$tmp/sum.json" '
s = [c["size"] for c in J["communities"]]
assert s == sorted(s, reverse=True), s'
check "show DIR (text) lists every community id of communities.tsv" \
	sh -c 'for id in $(sed 1d "$1" | cut -f1); do grep -q "^ *$id " "$2" || exit 1; done' \
	sh "$res/communities.tsv" "$tmp/sum.txt"

# --- one node --------------------------------------------------------------------
# Node "0" (the instructor, Zachary's node 1) has degree 16 (Zachary 1977,
# the matrix of his Fig. 2; networkx karate_club_graph().degree(0) == 16).
"$BIN" show "$res" --node 0 >"$tmp/node.txt"
check "show --node 0: exit 0" [ $? -eq 0 ]
check "show --node 0 (text) gives degree 16 (Zachary 1977)" grep -q 'degree *16' "$tmp/node.txt"
"$BIN" show "$res" --node 0 --json >"$tmp/node.json"
check "show --node 0 --json: exit 0" [ $? -eq 0 ]
pycheck "show --node --json: degree equals networkx's" "$tmp/node.json" '
assert J["degree"] == G.degree("0") == 16, J["degree"]'
pycheck "show --node --json: its memberships are the node's rows of memberships.tsv" "$tmp/node.json" '
mine = {str(a["community"]): a["strength"] for a in J["affiliations"] if a["member"]}
want = {r["community"]: float(r["strength"]) for r in MEM if r["node"] == "0"}
assert set(mine) == set(want), (mine, want)
for c in want:
    assert abs(mine[c] - want[c]) <= 1e-5 * want[c], (c, mine[c], want[c])
assert J["memberships"] == len(want)'
pycheck "show --node --json: no community explains more edges than the node has" "$tmp/node.json" '
assert all(0 <= a["explains"] <= J["degree"] for a in J["affiliations"])'
"$BIN" show "$res" --node "no such node" >/dev/null 2>"$tmp/nonode.err"
check "show --node with an unknown name: exit 1" [ $? -eq 1 ]
check "show --node with an unknown name: names it" grep -q 'no such node' "$tmp/nonode.err"

# --- JSON: the whole answer by default, one vocabulary (issue 14, item 9) ----------
# The largest community: its members touch more than 20 edges, so the
# default limit of 20 rows bites.
big=$(sed -n 2p "$res/communities.tsv" | cut -f1)
bigsize=$(sed -n 2p "$res/communities.tsv" | cut -f2)
"$BIN" show "$res" --weak-edges "$big" --json >"$tmp/bigweak.json"
pycheck "show --weak-edges --json without --limit lists every edge (more than 20)" "$tmp/bigweak.json" '
assert len(J["edges"]) == J["total"] > 20, (len(J["edges"]), J["total"])'
"$BIN" show "$res" --weak-edges "$big" --json --limit 5 >"$tmp/bigweak5.json"
pycheck "show --weak-edges --json --limit 5 lists 5 and says the total" "$tmp/bigweak5.json" '
assert len(J["edges"]) == 5 and J["total"] > 20, (len(J["edges"]), J["total"])'
"$BIN" show "$res" --weak-edges "$big" >"$tmp/bigweak.txt"
check "show --weak-edges (text) keeps its limit of 20 rows and says how many more" \
	grep -q "more (--limit 0 shows all)" "$tmp/bigweak.txt"
"$BIN" show "$res" --community "$big" --json >"$tmp/big.json"
pycheck "show --community --json lists all $bigsize members" "$tmp/big.json" '
assert len(J["members"]) == J["size"] == J["total"] == '"$bigsize"', (len(J["members"]), J["size"])'
"$BIN" show "$res" --edge 0 33 --json >"$tmp/edge.json"
"$BIN" show "$res" --weak-edges "$big" --missing --json >"$tmp/bigmiss.json"
# one vocabulary: a community is "community" in every view, "size" counts
# members, "total" is the length of the whole list, a pair is "a" and "b"
# (weak edges: "member" and "neighbour", as the text's columns say)
pycheck "show --json: one vocabulary across the views" "$tmp/sum.json" '
import os
d = os.path.dirname(sys.argv[1])
V = {n: json.load(open(d + "/" + n + ".json")) for n in
     ("sum", "node", "big", "bigweak", "bigmiss", "edge")}
assert "id" not in V["sum"]["communities"][0] and "community" in V["sum"]["communities"][0]
assert "id" not in V["big"] and V["big"]["community"] == int('"$big"')
assert isinstance(V["big"]["members"], list)
for v in ("bigweak", "bigmiss"):
    assert isinstance(V[v]["size"], int) and "members" not in V[v], v
assert set(V["bigweak"]["edges"][0]) == {"member", "neighbour", "prob", "explained_by"}
assert set(V["bigmiss"]["pairs"][0]) == {"a", "b", "prob"}
assert V["edge"]["a"] == "0" and V["edge"]["b"] == "33"
assert set(V["node"]["affiliations"][0]) == {"community", "strength", "member", "explains"}
assert "id" not in V["node"] and V["node"]["node_index"] == 0
for n, v in V.items():
    assert "total" in v, n
    assert v.get("cover", "strengths") == "strengths", n'
"$BIN" show "$res" --links --json --limit 3 >"$tmp/links3.json"
pycheck "show --links --json: a and b, total of all 78 edges" "$tmp/links3.json" '
assert J["total"] == 78 and len(J["edges"]) == 3
assert set(J["edges"][0]) == {"a", "b", "prob", "explained_by"}'


# --- one community -----------------------------------------------------------------
cid=$(sed -n 2p "$res/communities.tsv" | cut -f1)
"$BIN" show "$res" --community "$cid" >"$tmp/comm.txt"
check "show --community $cid: exit 0" [ $? -eq 0 ]
"$BIN" show "$res" --community "$cid" --limit 0 --json >"$tmp/comm.json"
check "show --community --json: exit 0" [ $? -eq 0 ]
pycheck "show --community --json: members and strengths are memberships.tsv's" "$tmp/comm.json" '
want = {r["node"]: float(r["strength"]) for r in MEM if r["community"] == str(J["community"])}
mine = {m["node"]: m["strength"] for m in J["members"]}
assert set(mine) == set(want), (sorted(mine), sorted(want))
for n in want:
    assert abs(mine[n] - want[n]) <= 1e-5 * want[n], n'
pycheck "show --community --json: members by strength, strongest first" "$tmp/comm.json" '
s = [m["strength"] for m in J["members"]]
assert s == sorted(s, reverse=True), s'
pycheck "show --community --json: internal edges and cut as networkx counts them" "$tmp/comm.json" '
S = {m["node"] for m in J["members"]}
assert J["internal_edges"] == G.subgraph(S).number_of_edges()
assert J["cut"] == nx.cut_size(G, S), (J["cut"], nx.cut_size(G, S))
assert J["volume"] == nx.volume(G, S)'
"$BIN" show "$res" --community 9999 >/dev/null 2>&1
check "show --community with an id out of range: exit 1" [ $? -eq 1 ]
"$BIN" show "$res" --community abc >/dev/null 2>&1
check "show --community abc: exit 2" [ $? -eq 2 ]

# --- weak edges ----------------------------------------------------------------------
"$BIN" show "$res" --weak-edges "$cid" >"$tmp/weak.txt"
check "show --weak-edges $cid: exit 0" [ $? -eq 0 ]
"$BIN" show "$res" --weak-edges "$cid" --limit 0 --json >"$tmp/weak.json"
check "show --weak-edges --json: exit 0" [ $? -eq 0 ]
pycheck "show --weak-edges --json: every edge touching the members, each once" "$tmp/weak.json" '
S = {r["node"] for r in MEM if r["community"] == str(J["community"])}
want = {frozenset(e) for e in G.edges() if e[0] in S or e[1] in S}
got = [frozenset((e["member"], e["neighbour"])) for e in J["edges"]]
assert J["total"] == len(want) == len(got), (J["total"], len(want), len(got))
assert set(got) == want
assert all(e["member"] in S for e in J["edges"])'
pycheck "show --weak-edges --json: probabilities in [0, 1], lowest first" "$tmp/weak.json" '
p = [e["prob"] for e in J["edges"]]
assert all(0.0 <= x <= 1.0 for x in p) and p == sorted(p), p'
"$BIN" show "$res" --weak-edges "$cid" --limit 3 --json >"$tmp/weak3.json"
pycheck "show --weak-edges --limit 3 lists 3 edges" "$tmp/weak3.json" '
assert len(J["edges"]) == 3, len(J["edges"])'
"$BIN" show "$res" --weak-edges "$cid" --missing --limit 0 --json >"$tmp/missing.json"
check "show --weak-edges --missing --json: exit 0" [ $? -eq 0 ]
check "show --weak-edges --missing --json parses" "$PY" -m json.tool "$tmp/missing.json" /dev/null

# --- usage and failures -----------------------------------------------------------------
"$BIN" show >/dev/null 2>&1
check "show without a folder: exit 2" [ $? -eq 2 ]
"$BIN" show "$tmp/nowhere" >/dev/null 2>"$tmp/nowhere.err"
check "show of a missing folder: exit 1" [ $? -eq 1 ]
check "show of a missing folder: names it" grep -q 'nowhere' "$tmp/nowhere.err"
"$BIN" show "$res" --bogus >/dev/null 2>&1
check "show with an unknown option: exit 2" [ $? -eq 2 ]
"$BIN" show --help >"$tmp/help.txt"
check "show --help: exit 0, mentions --weak-edges" grep -q -e '--weak-edges' "$tmp/help.txt"

# --- names from files never reach the terminal raw ------------------------------------
# odd-names.tsv holds a node "ESC[31mred" (tests/data/README.md).
"$BIN" fit "$odd" -k 2 -q -o "$tmp/odd"
check "fit odd-names.tsv: exit 0" [ $? -eq 0 ]
red=$(printf '\033[31mred')
"$BIN" show "$tmp/odd" --node "$red" >"$tmp/red.txt" 2>&1
check "show --node with an ESC name: exit 0" [ $? -eq 0 ]
check "show --node with an ESC name: no raw control byte on the terminal" \
	no_control_bytes "$tmp/red.txt"
"$BIN" show "$tmp/odd" --node "$red" --json >"$tmp/red.json"
pycheck "show --node --json: the ESC name comes back exactly, escaped by JSON" "$tmp/red.json" '
assert J["node"] == "\x1b[31mred", repr(J["node"])'
check "show --node --json: no raw control byte in the JSON" no_control_bytes "$tmp/red.json"
: >"$tmp/all.txt"
for c in $(sed 1d "$tmp/odd/communities.tsv" | cut -f1); do
	"$BIN" show "$tmp/odd" --community "$c" --limit 0 >>"$tmp/all.txt" 2>&1
	"$BIN" show "$tmp/odd" --weak-edges "$c" --limit 0 >>"$tmp/all.txt" 2>&1
done
check "show --community / --weak-edges on odd names: no raw control byte" \
	no_control_bytes "$tmp/all.txt"
"$BIN" show "$tmp/odd" --node "x$(printf '\033[2J\001')" >"$tmp/nored.txt" 2>&1
check "show --node with an unknown ESC name: exit 1, nothing raw" \
	status_clean 1 $? "$tmp/nored.txt"

esc=$(printf '\033[2J\001')
"$BIN" show "$tmp/none$esc" >"$tmp/hdir.txt" 2>&1
check "show of a missing folder whose name holds ESC: exit 1" [ $? -eq 1 ]
check "show of a missing folder whose name holds ESC: not copied raw" \
	no_control_bytes "$tmp/hdir.txt"
"$BIN" show "$res" "--x$esc" >"$tmp/hopt.txt" 2>&1
check "show with an unknown option holding ESC: exit 2, not copied raw" \
	status_clean 2 $? "$tmp/hopt.txt"
"$BIN" show "$res" --community "1$esc" >"$tmp/hcom.txt" 2>&1
check "show --community holding ESC: exit 2, not copied raw" \
	status_clean 2 $? "$tmp/hcom.txt"

finish
