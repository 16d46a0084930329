#!/bin/sh
# coterie show DIR --edge A B and --links: per-pair model probabilities.
# Checked against the files `coterie fit` wrote (memberships.tsv,
# communities.tsv, run.json) and the edge list read with python3-networkx
# (Debian 2.8.8). Formulas: the relaxed model P = 1 - exp(-(F_a.F_b +
# qeps)) (Yang & Leskovec, WSDM 2013, eq. 2, with the background as one
# more shared community; DESIGN.md "Background and threshold"), and the
# AGM P = 1 - (1 - eps) prod_{c shared} (1 - p_c) (Yang & Leskovec, ICDM
# 2012, eq. 1 with the epsilon-community).
. "$(dirname "$0")/lib"

karate=$DATA/karate/edges.tsv
odd=$DATA/graph/odd-names.tsv
need_file "$karate"
need_file "$odd"

res=$tmp/karate
"$BIN" fit "$karate" -k 4 -j 2 --seed 3 -q -o "$res"
check "fit karate for show: exit 0" [ $? -eq 0 ]

"$BIN" show "$res" --edge 0 1 --json >"$tmp/e01.json"
check "show --edge 0 1 --json: exit 0" [ $? -eq 0 ]
"$BIN" show "$res" --edge 0 9 --json >"$tmp/e09.json"
"$BIN" show "$res" --links --json >"$tmp/links.json"
check "show --links --json: exit 0" [ $? -eq 0 ]

"$PY" - "$karate" "$res" "$tmp" <<'PYEOF'
import json, math, sys
import networkx as nx

g = nx.read_edgelist(sys.argv[1], delimiter="\t", comments="#")
res, tmp = sys.argv[2], sys.argv[3]
run = json.load(open(res + "/run.json"))
eps = run["parameters"]["epsilon"]
strength = {}
for line in list(open(res + "/memberships.tsv"))[1:]:
    node, comm, s = line.rstrip("\n").split("\t")
    strength[(node, int(comm))] = float(s)
pc = {int(l.split("\t")[0]): float(l.split("\t")[5]) for l in list(open(res + "/communities.tsv"))[1:]}
bad = 0
def report(ok, what):
    global bad
    print(("ok - " if ok else "not ok - ") + what)
    bad += not ok

for name, a, b in (("e01", "0", "1"), ("e09", "0", "9")):
    e = json.load(open(tmp + "/" + name + ".json"))
    report(e["linked"] == g.has_edge(a, b), "--edge %s %s: linked agrees with the edge list" % (a, b))
    dot = sum(c["product"] for c in e["communities"])
    report(abs(dot - e["dot"]) <= 1e-12 * max(1, dot), "--edge %s %s: dot is the sum of the products" % (a, b))
    want = 1 - (1 - eps) * math.exp(-e["dot"])
    report(abs(want - e["prob"]) < 1e-12, "--edge %s %s: prob = 1 - (1 - eps) exp(-dot)" % (a, b))
    # products of shared memberships match memberships.tsv (%.6g there)
    ok = True
    for c in e["communities"]:
        if c["both_members"]:
            sa, sb = strength.get((a, c["community"])), strength.get((b, c["community"]))
            ok &= sa is not None and sb is not None and abs(sa * sb - c["product"]) <= 1e-5 * c["product"]
    report(ok, "--edge %s %s: products of shared memberships match memberships.tsv" % (a, b))
    shared = [c for (n, c) in strength if n == a and (b, c) in strength]
    agm = 1 - (1 - eps) * math.prod(1 - pc[c] for c in shared)
    report(abs(agm - e["agm_prob"]) <= 1e-6,
           "--edge %s %s: agm_prob %.6f is the AGM formula on memberships.tsv and communities.tsv (%.6f)"
           % (a, b, e["agm_prob"], agm))

L = json.load(open(tmp + "/links.json"))
report(L["total"] == g.number_of_edges() == len(L["edges"]),
       "--links lists every one of the %d edges by default" % g.number_of_edges())
report(all(g.has_edge(x["a"], x["b"]) for x in L["edges"]), "--links lists only edges")
report(len({frozenset((x["a"], x["b"])) for x in L["edges"]}) == len(L["edges"]), "--links lists each edge once")
report(all(eps <= x["prob"] <= 1 for x in L["edges"]), "every probability is in [epsilon, 1]")
e = json.load(open(tmp + "/e01.json"))
p01 = [x["prob"] for x in L["edges"] if {x["a"], x["b"]} == {"0", "1"}]
report(p01 == [e["prob"]], "--links and --edge give the same probability for 0 -- 1")
sys.exit(1 if bad else 0)
PYEOF
[ $? -eq 0 ] || failures=$((failures + 1))

"$BIN" show "$res" --edge 0 1 >"$tmp/e.txt"
check "show --edge text names the pair" grep -q '^pair  *0 -- 1$' "$tmp/e.txt"
check "show --edge text says it is an edge" grep -q '^linked  *yes' "$tmp/e.txt"
"$BIN" show "$res" --links --limit 3 >"$tmp/l.txt"
check "show --links --limit 3 shows 3 rows and says how many more" \
	sh -c '[ "$(grep -c "^ *[0-9.e-]*  *[0-9n][0-9a-z]*  " "$1")" -eq 3 ] && grep -q "75 more" "$1"' \
	sh "$tmp/l.txt"
"$BIN" show "$res" --edge 0 2>/dev/null
check "--edge with one name is a usage error (exit 2)" [ $? -eq 2 ]
"$BIN" show "$res" --edge 0 0 2>/dev/null
check "--edge with the same node twice fails (exit 1)" [ $? -eq 1 ]
"$BIN" show "$res" --edge 0 nobody 2>/dev/null
check "--edge with an unknown node fails (exit 1)" [ $? -eq 1 ]
"$BIN" show "$res" --edge 0 1 --links 2>/dev/null
check "--edge with --links is a usage error (exit 2)" [ $? -eq 2 ]

# names from a file never reach the terminal raw
"$BIN" fit "$odd" -k 2 -q -o "$tmp/odd" 2>/dev/null
"$BIN" show "$tmp/odd" --links >"$tmp/odd.txt" 2>&1
check "show --links prints no control bytes from names" no_control_bytes "$tmp/odd.txt"

finish
