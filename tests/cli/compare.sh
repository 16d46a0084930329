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
