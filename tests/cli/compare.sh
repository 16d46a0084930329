#!/bin/sh
# coterie compare TRUTH FOUND [--json] (DESIGN.md "Command line", issue 4):
# the table and the JSON, result folders as arguments, nodes in one file
# only, hostile names and file names, and the errors (missing file, bad
# line, empty file, bad usage). Plain NMI is checked against the values
# scikit-learn 1.2.1 gave for the fixtures in tests/data/nmi (make.py
# there); the other measures against hand-worked values (below) and
# against 1 for identical covers (each measure's definition).
. "$(dirname "$0")/lib"

if ! "$BIN" compare --help >/dev/null 2>&1; then
	echo "# SKIP coterie compare is not a command of $BIN yet"
	exit 0
fi

nmi=$DATA/nmi
karate=$DATA/karate
need_file "$nmi/expected.tsv"
need_file "$karate/edges.tsv"
need_file "$karate/truth.tsv"

# jcheck DESCRIPTION JSONFILE PYTHON-EXPRESSION: true when the expression,
# with the parsed JSON as J, is true.
jcheck()
{
	if "$PY" -c 'import json, sys
J = json.load(open(sys.argv[1]))
sys.exit(0 if eval(sys.argv[2]) else 1)' "$2" "$3"; then
		pass "$1"
	else
		fail "$1"
	fi
}

# ---- the table and the JSON ----------------------------------------------
printf 'a\tx\nb\tx\nc\ty\nd\ty\n' >"$tmp/t.tsv"
printf 'a\t1\nb\t1\nc\t1\nd\t2\n' >"$tmp/f.tsv"
"$BIN" compare "$tmp/t.tsv" "$tmp/f.tsv" >"$tmp/out.txt" 2>"$tmp/err.txt"
check "text: exit 0" [ $? -eq 0 ]
check "text: nothing on stderr" [ ! -s "$tmp/err.txt" ]
for row in "overlapping NMI, max form" "overlapping NMI, LFK form" "Omega index" \
	"F1, best match, average" "NMI (partitions)" "communities" "nodes only in this file"; do
	check "text: a row '$row'" grep -q "^$row" "$tmp/out.txt"
done
# Omega worked by hand: pairs (t_truth, t_found) ab (1,1) ac (0,1) ad (0,0)
# bc (0,1) bd (0,0) cd (1,0): observed 3/6; N_truth = (4, 2), N_found =
# (3, 3); expected (4*3 + 2*3)/36 = 1/2; Omega = 0.
check "text: Omega 0.000000 (worked above)" grep -q '^Omega index  *0\.000000$' "$tmp/out.txt"

"$BIN" compare --json "$tmp/t.tsv" "$tmp/f.tsv" >"$tmp/out.json"
check "json: exit 0" [ $? -eq 0 ]
check "json: parses (python3 -m json.tool)" "$PY" -m json.tool "$tmp/out.json" /dev/null
jcheck "json: every key" "$tmp/out.json" \
	'all(k in J for k in ("truth","found","nodes","onmi_max","onmi_lfk","omega","f1","f1_truth_to_found","f1_found_to_truth","partitions","nmi")) and all(k in J["truth"] for k in ("file","communities","covered_nodes","overlapping_nodes","only_in_this_file"))'
jcheck "json: Omega 0 (worked above)" "$tmp/out.json" 'abs(J["omega"]) < 1e-12'
# F1 worked by hand: truth {a,b}: best with {a,b,c} 2*2/5 = 0.8; {c,d}: with
# {d} 2*1/3; found {a,b,c}: 0.8; {d}: 2/3. Both halves (0.8 + 2/3)/2 = 11/15.
jcheck "json: F1 11/15 (worked above)" "$tmp/out.json" \
	'abs(J["f1"] - 11/15) < 1e-12 and abs(J["f1_truth_to_found"] - 11/15) < 1e-12'
jcheck "json: both partitions, 4 nodes" "$tmp/out.json" 'J["partitions"] is True and J["nodes"] == 4'

# ---- plain NMI against scikit-learn 1.2.1 (tests/data/nmi/expected.tsv) ----
grep -v '^#' "$nmi/expected.tsv" >"$tmp/expected.tsv"
while IFS="	" read -r name want; do
	"$BIN" compare --json "$nmi/$name.a.tsv" "$nmi/$name.b.tsv" >"$tmp/nmi.json"
	jcheck "nmi $name agrees with scikit-learn 1.2.1 to 1e-9" "$tmp/nmi.json" \
		"abs(J['nmi'] - $want) < 1e-9"
done <"$tmp/expected.tsv"

# ---- identical covers: 1 everywhere ----------------------------------------
printf 'a\tx\nb\tx\nb\ty\nc\ty\nd\tz\ne\tz\ne\tx\n' >"$tmp/o.tsv"
printf 'e\tZ\r\nd\tZ\r\nc\tY\r\nb\tY\r\nb\tX\r\na\tX\r\ne\tX\r\n' >"$tmp/o-crlf.tsv"
"$BIN" compare --json "$tmp/o.tsv" "$tmp/o-crlf.tsv" >"$tmp/same.json"
check "identical covers (CRLF, other order and labels): exit 0" [ $? -eq 0 ]
jcheck "identical covers: every measure is 1" "$tmp/same.json" \
	'all(abs(J[k] - 1) < 1e-12 for k in ("onmi_max","onmi_lfk","omega","f1")) and J["nmi"] is None and J["partitions"] is False'
jcheck "overlapping covers: counts" "$tmp/same.json" \
	'J["truth"]["communities"] == 3 and J["truth"]["covered_nodes"] == 5 and J["truth"]["overlapping_nodes"] == 2'
"$BIN" compare "$tmp/o.tsv" "$tmp/o-crlf.tsv" >"$tmp/same.txt"
check "text: NMI does not apply to overlapping covers" \
	grep -q '^NMI (partitions) .*two or more communities' "$tmp/same.txt"

# ---- nodes in one file only -------------------------------------------------
printf 'a\tx\nb\tx\nc\ty\nd\ty\nlost\ty\n' >"$tmp/t5.tsv"
printf 'a\t1\nb\t1\nc\t2\nd\t2\nnew1\t3\nnew2\t3\n' >"$tmp/f6.tsv"
"$BIN" compare --json "$tmp/t5.tsv" "$tmp/f6.tsv" >"$tmp/one.json"
jcheck "one side only: counted, union of 7 nodes, NMI does not apply" "$tmp/one.json" \
	'J["truth"]["only_in_this_file"] == 1 and J["found"]["only_in_this_file"] == 2 and J["nodes"] == 7 and J["nmi"] is None'

# ---- the count of nodes, labelled truthfully (issue 14, item 11) --------------
"$BIN" compare "$tmp/t5.tsv" "$tmp/f6.tsv" >"$tmp/one.txt"
check "text: 7 nodes in either file (the union: 5 + 6 - 4 shared)" \
	grep -q '^nodes in either file (scored)  *7$' "$tmp/one.txt"
check "text: 4 nodes in both files" grep -q '^nodes in both files  *4$' "$tmp/one.txt"
check "text: no row claims the union is in both files" \
	sh -c "! grep -q 'compared (both files)' '$tmp/one.txt'"
jcheck "json: nodes_in_both 4, nodes 7 (the union)" "$tmp/one.json" \
	'J["nodes_in_both"] == 4 and J["nodes"] == 7'

# ---- result folders -----------------------------------------------------------
"$BIN" fit "$karate/edges.tsv" -k 2 -j 1 --seed 1 -q -o "$tmp/res" >/dev/null 2>&1
check "fit karate: exit 0" [ $? -eq 0 ]
"$BIN" compare --json "$karate/truth.tsv" "$tmp/res" >"$tmp/dir.json"
check "a result folder as FOUND: exit 0" [ $? -eq 0 ]
"$BIN" compare --json "$karate/truth.tsv" "$tmp/res/memberships.tsv" >"$tmp/file.json"
jcheck "a folder means its memberships.tsv" "$tmp/dir.json" \
	"J['found']['file'].endswith('/memberships.tsv') and all(J[k] == json.load(open('$tmp/file.json'))[k] for k in ('onmi_max','onmi_lfk','omega','f1','nodes'))"
"$BIN" compare --json "$tmp/res" "$tmp/res" >"$tmp/self.json"
jcheck "a folder against itself: every measure is 1" "$tmp/self.json" \
	'all(abs(J[k] - 1) < 1e-12 for k in ("onmi_max","onmi_lfk","omega","f1"))'

# ---- an edge list given as a cover (issue 14, item 11) ----------------------
# karate's edges.tsv (Zachary 1977) read as node<TAB>community: its
# "communities" are its nodes; it is still scored, with a warning.
"$BIN" compare "$karate/truth.tsv" "$karate/edges.tsv" >"$tmp/el.txt" 2>"$tmp/el.err"
check "edge list as FOUND: still scored, exit 0" [ $? -eq 0 ]
check "edge list as FOUND: a warning names the side, the file and why" \
	grep -q "^coterie: warning: FOUND '.*karate/edges.tsv' looks like an edge list, not a cover: [0-9]* of its [0-9]* community names are names of its nodes" "$tmp/el.err"
"$BIN" compare --json "$karate/edges.tsv" "$karate/truth.tsv" >/dev/null 2>"$tmp/el.err"
check "edge list as TRUTH, --json: the warning too" grep -q "warning: TRUTH .*looks like an edge list" "$tmp/el.err"
for name in dolphins football lesmis polbooks; do
	"$BIN" compare "$DATA/$name/edges.tsv" "$DATA/$name/edges.tsv" >/dev/null 2>"$tmp/el.err"
	check "edge list $name/edges.tsv: warned for both sides" [ "$(grep -c 'looks like an edge list' "$tmp/el.err")" -eq 2 ]
done
# real covers never warn: every truth file, every fixture, results of
# several k (their memberships.tsv)
for k in 2 10 34; do
	"$BIN" fit "$karate/edges.tsv" -k $k -j 1 --seed 1 -q -o "$tmp/res$k" >/dev/null 2>&1
done
for f in "$DATA"/*/truth*.tsv "$nmi"/*.a.tsv "$nmi"/*.b.tsv "$tmp/res2" "$tmp/res10" "$tmp/res34"; do
	"$BIN" compare "$f" "$f" >/dev/null 2>"$tmp/el.err"
	check "a cover is not taken for an edge list: ${f#$DATA/}" [ ! -s "$tmp/el.err" ]
done

# ---- hostile names -----------------------------------------------------------
esc=$(printf '\033')
printf 'x%s[2J\tc\n\377\376\tc\nplain\td\n' "$esc" >"$tmp/hostile.tsv"
hf="$tmp/bad$(printf '\033')]0;title$(printf '\007').tsv"
cp "$tmp/hostile.tsv" "$hf"
"$BIN" compare "$hf" "$tmp/hostile.tsv" >"$tmp/h.txt" 2>&1
check "hostile names and file name: exit 0, no control byte printed" status_clean 0 $? "$tmp/h.txt"
"$BIN" compare --json "$hf" "$tmp/hostile.tsv" >"$tmp/h.json" 2>&1
check "hostile file name: JSON parses" "$PY" -m json.tool "$tmp/h.json" /dev/null

# ---- errors ------------------------------------------------------------------
"$BIN" compare "$tmp/nope.tsv" "$tmp/t.tsv" >"$tmp/e.out" 2>"$tmp/e.err"
rc=$?
check "missing file: exit 1" [ $rc -eq 1 ]
check "missing file: names it" grep -q "^coterie: cannot open '.*nope.tsv'" "$tmp/e.err"
check "missing file: nothing on stdout" [ ! -s "$tmp/e.out" ]

printf 'a\tx\nb x\n' >"$tmp/badline.tsv"
"$BIN" compare "$tmp/t.tsv" "$tmp/badline.tsv" 2>"$tmp/e.err" >/dev/null
check "bad line: exit 1" [ $? -eq 1 ]
check "bad line: FILE:LINE: what was expected" \
	grep -q "^coterie: .*badline.tsv:2: expected node<TAB>community" "$tmp/e.err"

: >"$tmp/empty.tsv"
"$BIN" compare "$tmp/empty.tsv" "$tmp/t.tsv" 2>"$tmp/e.err" >/dev/null
check "empty file: exit 1" [ $? -eq 1 ]
check "empty file: FILE:LINE: what was expected" \
	grep -q "^coterie: .*empty.tsv:1: expected node<TAB>community lines, found none" "$tmp/e.err"

mkdir -p "$tmp/notaresult"
"$BIN" compare "$tmp/notaresult" "$tmp/t.tsv" 2>"$tmp/e.err" >/dev/null
check "folder without memberships.tsv: exit 1" [ $? -eq 1 ]
check "folder without memberships.tsv: names the file" \
	grep -q "notaresult/memberships.tsv" "$tmp/e.err"

"$BIN" compare "$tmp/t.tsv" >/dev/null 2>"$tmp/e.err"
check "one cover: usage, exit 2" [ $? -eq 2 ]
"$BIN" compare "$tmp/t.tsv" "$tmp/t.tsv" "$tmp/t.tsv" >/dev/null 2>&1
check "three covers: exit 2" [ $? -eq 2 ]
"$BIN" compare --bogus "$tmp/t.tsv" "$tmp/t.tsv" >/dev/null 2>&1
check "unknown option: exit 2" [ $? -eq 2 ]
"$BIN" compare --help >"$tmp/help.txt"
check "--help: exit 0 and usage on stdout" grep -q "usage: coterie compare TRUTH FOUND" "$tmp/help.txt"

finish
