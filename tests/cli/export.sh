#!/bin/sh
# coterie export: a result folder's fit as GraphML, GML and a Matrix
# Market file, read back by other libraries (tests/cli/export_check.py:
# networkx 2.8.8, python-igraph 0.10.2 and scipy 1.10.1 as in Debian; the
# versions in use are printed as a comment): the same nodes, edges and
# attributes as memberships.tsv, communities.tsv and show --links say;
# the matrix's nonzeros are the checkpoint's strengths as show --node
# prints them. Hostile node names, a graph of another fingerprint, an
# interrupted fit (checkpoint.partial.cot only), a -k auto folder,
# standard output and bad usage.
. "$(dirname "$0")/lib"

karate=$DATA/karate/edges.tsv
need_file "$karate"
"$PY" -c 'import networkx, igraph, scipy' 2>/dev/null || {
	fail "python3 with networkx, igraph and scipy (python3-networkx, python3-igraph, python3-scipy)"
	finish
}

res=$tmp/karate
"$BIN" fit "$karate" -k 4 -j 2 --seed 3 -q -o "$res" 2>/dev/null
check "fit karate: exit 0" [ $? -eq 0 ]

"$BIN" export "$res" --graphml "$tmp/k.graphml" --gml "$tmp/k.gml" --matrix "$tmp/F.mtx" \
	--strength-columns all 2>"$tmp/export.err"
check "export --graphml --gml --matrix: exit 0" [ $? -eq 0 ]
check "export: the matrix's row and column files are beside it" \
	test -s "$tmp/F.rows.txt" -a -s "$tmp/F.cols.txt"
check "export: no temporary file is left" [ -z "$(ls -A "$tmp" | grep '\.tmp-')" ]
"$PY" "$ROOT/tests/cli/export_check.py" fit "$BIN" "$res" "$karate" "$tmp/k.graphml" \
	"$tmp/k.gml" "$tmp/F.mtx"
check "the exports read back with networkx, igraph and scipy agree with the folder" [ $? -eq 0 ]

# standard output is the file's bytes; the default strength columns
"$BIN" export "$res" --graphml - >"$tmp/out.graphml"
check "--graphml -: exit 0" [ $? -eq 0 ]
"$BIN" export "$res" --graphml "$tmp/k10.graphml"
check "--graphml - writes what --graphml FILE writes" cmp -s "$tmp/out.graphml" "$tmp/k10.graphml"
n=$(grep -c 'attr.name="strength[0-9]' "$tmp/k10.graphml")
want=$(($(wc -l <"$res/communities.tsv") - 1))
[ "$want" -gt 10 ] && want=10
check "by default one strength column per community, at most 10 ($n, want $want)" [ "$n" -eq "$want" ]
"$BIN" export "$res" --gml "$tmp/k1.gml" --strength-columns 1
big=$(sed -n 2p "$res/communities.tsv" | cut -f1)
ncol=$(grep -c '^    strength[0-9]' "$tmp/k1.gml")
nbig=$(grep -c "^    strength$big " "$tmp/k1.gml")
check "--strength-columns 1: the largest community's column only (strength$big, 34 nodes)" \
	test "$ncol" -eq 34 -a "$nbig" -eq 34

# the graph file: the fit's is taken, another is refused
"$BIN" export "$res" --graph "$karate" --matrix "$tmp/G.mtx"
check "--graph with the fit's own graph file: exit 0" [ $? -eq 0 ]
dolphins=$DATA/dolphins/edges.tsv
need_file "$dolphins"
"$BIN" export "$res" --graph "$dolphins" --graphml "$tmp/no.graphml" 2>"$tmp/other.err"
check "--graph with another graph: exit 1" [ $? -eq 1 ]
check "--graph with another graph: said, with both fingerprints" \
	grep -q 'is not the graph of the fit in .*fingerprint [0-9a-f]\{16\}, the fit.s [0-9a-f]\{16\}' "$tmp/other.err"
check "--graph with another graph: nothing written" [ ! -e "$tmp/no.graphml" ]
# one edge fewer: same nodes, another fingerprint
sed '$d' "$karate" >"$tmp/karate-1.tsv"
"$BIN" export "$res" --graph "$tmp/karate-1.tsv" --matrix "$tmp/no.mtx" 2>/dev/null
check "--graph with one edge fewer: exit 1, nothing written" test $? -eq 1 -a ! -e "$tmp/no.mtx"

# usage
"$BIN" export "$res" 2>/dev/null
check "nothing to write: exit 2" [ $? -eq 2 ]
"$BIN" export "$res" --matrix - 2>/dev/null
check "--matrix -: exit 2" [ $? -eq 2 ]
"$BIN" export "$res" --graphml - --gml - 2>/dev/null
check "two outputs to standard output: exit 2" [ $? -eq 2 ]
"$BIN" export "$tmp/nothere" --gml "$tmp/x.gml" 2>/dev/null
check "a folder with no result: exit 1" [ $? -eq 1 ]
"$BIN" export --help | grep -q -- '--strength-columns'
check "--help lists the options" [ $? -eq 0 ]

# hostile node names: control bytes, ESC, invalid UTF-8 and quotes in an
# edge list; newline, TAB, <, & and " in a GraphML file (written by
# networkx). The raw names go to a file, escaped as memberships.tsv does.
"$PY" - "$karate" "$tmp" <<'PYEOF'
import sys
import networkx as nx
karate, tmp = sys.argv[1], sys.argv[2]
edges = [l.split() for l in open(karate) if l.strip() and not l.startswith("#")]
def tsv(b):
    return b.replace(b"\\", b"\\\\").replace(b"\t", b"\\t").replace(b"\n", b"\\n").replace(b"\r", b"\\r")
def write(path, names, raw):
    with open(raw, "wb") as f:
        for v in sorted({v for e in edges for v in e}, key=int):
            f.write(tsv(names.get(v, v.encode())) + b"\n")
hostile = {"0": b"x\x1b[2Jy", "1": b'"quoted"', "2": b"it's", "3": b"a<b&c>",
           "4": b"back\\slash", "5": "Zo\u00eb \u00c5ngstr\u00f6m".encode(), "6": "\u540d\u524d".encode(),
           "7": b"ctl\x01x", "8": b"bad\xff\xfe", "9": b"del\x7fz", "10": b"\\x01"}
with open(tmp + "/hostile.tsv", "wb") as f:
    for a, b in edges:
        f.write(hostile.get(a, a.encode()) + b"\t" + hostile.get(b, b.encode()) + b"\n")
write(None, hostile, tmp + "/hostile.raw")
xml = {"0": "new\nline", "1": "tab\there", "2": 'x<y&z"', "3": "it's", "4": "\u00e9t\u00e9"}
g = nx.Graph()
for a, b in edges:
    g.add_edge(int(a), int(b))
for v in g:
    g.nodes[v]["name"] = xml.get(str(v), str(v))
nx.write_graphml(g, tmp + "/input.graphml")
write(None, {k: v.encode() for k, v in xml.items()}, tmp + "/hostilexml.raw")
PYEOF
for h in hostile hostilexml; do
	src=$tmp/hostile.tsv
	[ "$h" = hostilexml ] && src=$tmp/input.graphml
	"$BIN" fit "$src" -k 3 -j 1 --seed 2 -q -o "$tmp/$h" 2>/dev/null
	check "$h: fit exit 0" [ $? -eq 0 ]
	"$BIN" export "$tmp/$h" --graphml "$tmp/$h.graphml" --gml "$tmp/$h.gml" 2>/dev/null
	check "$h: export exit 0" [ $? -eq 0 ]
	"$PY" "$ROOT/tests/cli/export_check.py" names "$tmp/$h.raw" "$tmp/$h.graphml" "$tmp/$h.gml"
	check "$h: names read back escaped, by every reader" [ $? -eq 0 ]
done

# an interrupted fit: COTERIE_CRASH_AT=3 ends the fit (as kill -9 would)
# after the fsync, rename and folder sync of its first periodic
# checkpoint, so the folder holds checkpoint.partial.cot and nothing else
"$BIN" simulate -n 3000 --seed 2 -o "$tmp/gy" -q
COTERIE_CRASH_AT=3 "$BIN" fit "$tmp/gy/edges.tsv" -k 30 --seed 3 -j 1 -q \
	--checkpoint-every 0.1 -o "$tmp/cut" 2>/dev/null
if [ -s "$tmp/cut/checkpoint.partial.cot" ] && [ ! -e "$tmp/cut/checkpoint.cot" ]; then
	"$BIN" export "$tmp/cut" --graphml "$tmp/cut.graphml" --matrix "$tmp/cut.mtx" \
		2>"$tmp/cut.err"
	check "interrupted fit (checkpoint.partial.cot only): export exit 0" [ $? -eq 0 ]
	check "interrupted fit: a notice says the unfinished fit is exported" \
		grep -q 'only an unfinished fit.*it is the one exported' "$tmp/cut.err"
	"$PY" - "$tmp/cut.graphml" "$tmp/cut.mtx" "$tmp/gy/edges.tsv" <<'PYEOF'
import sys
import networkx as nx, scipy.io
g = nx.read_graphml(sys.argv[1])
ref = nx.read_edgelist(sys.argv[3], delimiter="\t", comments="#")
M = scipy.io.mmread(sys.argv[2])
ok = g.number_of_nodes() == ref.number_of_nodes() and g.number_of_edges() == ref.number_of_edges() \
    and M.shape == (ref.number_of_nodes(), 30) and M.nnz > 0
print(("ok - " if ok else "not ok - ") + "interrupted fit: networkx and scipy read the exports "
      "(%d nodes, %d edges, %d strengths)" % (g.number_of_nodes(), g.number_of_edges(), M.nnz))
sys.exit(0 if ok else 1)
PYEOF
	check "interrupted fit: the exports are whole" [ $? -eq 0 ]
else
	echo "# SKIP the fit ended before its first periodic checkpoint"
fi

# a folder of -k auto
"$BIN" fit "$karate" -k auto --k-grid 2,3,4 -j 2 --seed 1 -q -o "$tmp/auto" 2>/dev/null
check "fit -k auto: exit 0" [ $? -eq 0 ]
"$BIN" export "$tmp/auto" --gml "$tmp/auto.gml" --matrix "$tmp/auto.mtx"
check "a folder of -k auto exports" test $? -eq 0 -a -s "$tmp/auto.gml" -a -s "$tmp/auto.mtx"

finish
