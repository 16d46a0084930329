#!/bin/sh
# coterie fit reads the same graph the same way whatever the container:
# a plain edge list, its gzip copy, standard input, and GML, GraphML and
# Pajek files of one hand-made graph (tests/data/graph, described in
# tests/data/README.md). With one seed and one thread count, the same graph
# must give byte-identical memberships (the engine's determinism promise,
# issue 2 part 5), so cmp is the check.
. "$(dirname "$0")/lib"

karate=$DATA/karate/edges.tsv
tri=$DATA/graph/triangle-plus
need_file "$karate"
for ext in gml graphml net; do need_file "$tri.$ext"; done

fit() { "$BIN" fit "$@" -j 2 --seed 5 -q; }

fit "$karate" -k 4 -o "$tmp/plain"
check "plain edge list: exit 0" [ $? -eq 0 ]

gzip -c "$karate" >"$tmp/karate.tsv.gz"
fit "$tmp/karate.tsv.gz" -k 4 -o "$tmp/gz"
check ".gz edge list: exit 0" [ $? -eq 0 ]
check ".gz edge list: memberships.tsv identical to the plain file's" \
	cmp -s "$tmp/plain/memberships.tsv" "$tmp/gz/memberships.tsv"
check ".gz edge list: run.json counts 34 nodes, 78 edges (Zachary 1977)" \
	[ "$(json_get "$tmp/gz/run.json" graph.nodes)/$(json_get "$tmp/gz/run.json" graph.edges)" = 34/78 ]

cat "$karate" | fit - -k 4 -o "$tmp/stdin"
check "standard input (-): exit 0" [ $? -eq 0 ]
check "standard input: memberships.tsv identical to the plain file's" \
	cmp -s "$tmp/plain/memberships.tsv" "$tmp/stdin/memberships.tsv"

gzip -c "$karate" | fit - -k 4 -o "$tmp/stdin-gz"
check "gzip data on standard input: memberships.tsv identical to the plain file's" \
	cmp -s "$tmp/plain/memberships.tsv" "$tmp/stdin-gz/memberships.tsv"

# The same edges, comma separated with a comment line and a CRLF ending
# (DESIGN.md "Files": tab, space or comma; # comments).
{
	echo "# karate, comma separated"
	tr '\t' ',' <"$karate" | sed 's/$/\r/'
} >"$tmp/karate.csv"
fit "$tmp/karate.csv" -k 4 -o "$tmp/csv"
check "comma-separated copy with a comment and CRLF: identical memberships" \
	cmp -s "$tmp/plain/memberships.tsv" "$tmp/csv/memberships.tsv"

# triangle-plus: triangle ann-bob-cy, pendant dee, isolated eve, one edge
# listed twice (see the comment at the top of each file): 5 nodes, 4 edges.
for ext in gml graphml net; do
	fit "$tri.$ext" -k 2 -o "$tmp/tri-$ext"
	check "$ext input: exit 0" [ $? -eq 0 ]
	check "$ext input: 5 nodes and 4 edges, 1 isolated, 1 duplicate (hand count)" \
		[ "$(json_get "$tmp/tri-$ext/run.json" graph.nodes)/$(json_get "$tmp/tri-$ext/run.json" graph.edges)/$(json_get "$tmp/tri-$ext/run.json" graph.isolated)/$(json_get "$tmp/tri-$ext/run.json" graph.duplicates)" = 5/4/1/1 ]
	check "$ext input: memberships name only ann, bob, cy, dee, eve" \
		[ -z "$(sed 1d "$tmp/tri-$ext/memberships.tsv" | cut -f1 | grep -v -x -e ann -e bob -e cy -e dee -e eve)" ]
done
check "gml and graphml copies of one graph give identical memberships" \
	cmp -s "$tmp/tri-gml/memberships.tsv" "$tmp/tri-graphml/memberships.tsv"
check "gml and pajek copies of one graph give identical memberships" \
	cmp -s "$tmp/tri-gml/memberships.tsv" "$tmp/tri-net/memberships.tsv"

# A GraphML file of our own under a name that does not say GraphML,
# read with --format: a 4-cycle w-x-y-z plus chord w-y, and v alone.
cat >"$tmp/cycle.data" <<'EOF'
<?xml version="1.0" encoding="UTF-8"?>
<graphml xmlns="http://graphml.graphdrawing.org/xmlns">
  <graph id="g" edgedefault="undirected">
    <node id="w"/><node id="x"/><node id="y"/><node id="z"/><node id="v"/>
    <edge source="w" target="x"/><edge source="x" target="y"/>
    <edge source="y" target="z"/><edge source="z" target="w"/>
    <edge source="w" target="y"/>
  </graph>
</graphml>
EOF
fit "$tmp/cycle.data" --format graphml -k 2 -o "$tmp/cycle"
check "--format graphml on a .data file: exit 0" [ $? -eq 0 ]
check "--format graphml: 5 nodes, 5 edges (hand count: 4-cycle, chord, lone v)" \
	[ "$(json_get "$tmp/cycle/run.json" graph.nodes)/$(json_get "$tmp/cycle/run.json" graph.edges)" = 5/5 ]
check "--format graphml: run.json records the format" \
	[ "$(json_get "$tmp/cycle/run.json" graph.format)" = graphml ]

cat "$tri.gml" | fit - --format gml -k 2 -o "$tmp/tri-stdin"
check "GML on standard input with --format gml: same memberships as the file" \
	cmp -s "$tmp/tri-gml/memberships.tsv" "$tmp/tri-stdin/memberships.tsv"

finish
