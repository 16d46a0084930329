#!/bin/sh
# coterie draw KIND DIR... -o FILE (issue 16, "Figures"): every kind in
# every format from small fits (football at k = 12, karate with -k auto
# for the held-out curve), each file opened by a reader that is not ours:
# PDF by pdfinfo (poppler-utils as in Debian 12: one page, the page size in
# points), SVG by python3's xml.etree (the root is <svg> with the width and
# height attributes in points), PNG by file(1) (the pixel size: 240 x 180
# pt at 300 dpi is 1000 x 750). Then: a folder missing the file a kind
# needs, hostile community labels and folder names, malformed files, and
# bad usage.
. "$(dirname "$0")/lib"

if ! "$BIN" draw --help >/dev/null 2>&1; then
	echo "# SKIP coterie draw is not a command of $BIN yet"
	exit 0
fi
if ! command -v pdfinfo >/dev/null 2>&1; then
	fail "pdfinfo is installed (poppler-utils, in make deps)"
	finish
fi

need_file "$DATA/football/edges.tsv"
need_file "$DATA/karate/edges.tsv"

fb=$tmp/fb
"$BIN" fit "$DATA/football/edges.tsv" -k 12 -o "$fb" -q 2>/dev/null
check "fixture: football fitted" [ -f "$fb/trace.tsv" ]
"$BIN" fit "$DATA/football/edges.tsv" -k 12 --seed 2 -o "$tmp/fb2" -q 2>/dev/null
"$BIN" fit "$DATA/football/edges.tsv" -k 12 --seed 3 -o "$tmp/fb3" -q 2>/dev/null
"$BIN" fit "$DATA/karate/edges.tsv" -k auto -o "$tmp/ka" -q 2>/dev/null
check "fixture: karate fitted with -k auto" [ -f "$tmp/ka/k-selection.tsv" ]

# pdf_ok FILE W H: one page of W x H points (pdfinfo's "Page size" line).
pdf_ok()
{
	info=$(pdfinfo "$1" 2>/dev/null) || return 1
	printf '%s\n' "$info" | grep -q '^Pages: *1$' &&
		printf '%s\n' "$info" | grep -q "^Page size: *$2 x $3 pts"
}

# svg_ok FILE W H: an XML document whose root is svg, width="Wpt" height="Hpt".
svg_ok()
{
	"$PY" - "$1" "$2" "$3" <<'EOF'
import sys, xml.etree.ElementTree as ET
root = ET.parse(sys.argv[1]).getroot()
ok = root.tag == '{http://www.w3.org/2000/svg}svg' and \
	root.get('width') == sys.argv[2] + 'pt' and root.get('height') == sys.argv[3] + 'pt'
sys.exit(0 if ok else 1)
EOF
}

# png_ok FILE W H: file(1) says a PNG of W x H pixels.
png_ok()
{
	file "$1" | grep -q "PNG image data, $2 x $3,"
}

# every KIND W H DIR...: the kind in the three formats, page W x H points
# (the PNG at 300 dpi: W * 300 / 72 pixels).
every()
{
	kind=$1 w=$2 h=$3
	shift 3
	pw=$((w * 300 / 72)) ph=$((h * 300 / 72))
	"$BIN" draw "$kind" "$@" -o "$tmp/$kind.pdf" 2>"$tmp/err"
	check "$kind: PDF, one page of $w x $h pt" pdf_ok "$tmp/$kind.pdf" "$w" "$h"
	"$BIN" draw "$kind" "$@" -o "$tmp/$kind.svg" 2>>"$tmp/err"
	check "$kind: SVG parses, $w x $h pt" svg_ok "$tmp/$kind.svg" "$w" "$h"
	"$BIN" draw "$kind" "$@" -o "$tmp/$kind.png" 2>>"$tmp/err"
	check "$kind: PNG of $pw x $ph pixels" png_ok "$tmp/$kind.png" "$pw" "$ph"
	check "$kind: nothing on stderr" [ ! -s "$tmp/err" ]
}

# the design: 85 mm (240 pt) wide; curves 180 pt high, matrices square
every trace 240 180 "$fb"
every heldout 240 180 "$tmp/ka"
every sizes 240 180 "$fb"
every memberships 240 180 "$fb"
every agreement 240 240 "$fb" "$tmp/fb2"
"$BIN" draw agreement "$fb" "$tmp/fb2" "$tmp/fb3" -o "$tmp/runs.pdf"
check "agreement of three runs: PDF, 240 x 240 pt" pdf_ok "$tmp/runs.pdf" 240 240

# the format by option, and the PNG's resolution
"$BIN" draw trace "$fb" -o "$tmp/figure" --format svg
check "--format svg writes SVG whatever the name" svg_ok "$tmp/figure" 240 180
"$BIN" draw trace "$fb" -o "$tmp/small.png" --dpi 150
check "--dpi 150: 500 x 375 pixels" png_ok "$tmp/small.png" 500 375
"$BIN" draw trace "$fb" -o "$tmp/UPPER.PDF"
check "the extension in capitals" pdf_ok "$tmp/UPPER.PDF" 240 180

# ---- a folder without the file the kind needs -----------------------------
"$BIN" draw heldout "$fb" -o "$tmp/no.pdf" 2>"$tmp/err"
rc=$?
check "heldout of a fit without -k auto: exit 1" [ "$rc" -eq 1 ]
check "... names k-selection.tsv and -k auto" grep -q "no k-selection.tsv.*-k auto" "$tmp/err"
check "... writes no file" [ ! -e "$tmp/no.pdf" ]
mkdir "$tmp/empty"
for kind in trace sizes memberships; do
	"$BIN" draw $kind "$tmp/empty" -o "$tmp/no.png" 2>"$tmp/err"
	rc=$?
	case $kind in trace) want=trace.tsv ;; *) want=memberships.tsv ;; esac
	check "$kind of an empty folder: exit 1, names $want" \
		sh -c "[ $rc -eq 1 ] && grep -q 'has no $want' '$tmp/err'"
done
"$BIN" draw agreement "$fb" "$tmp/empty" -o "$tmp/no.png" 2>"$tmp/err"
check "agreement with a folder without memberships.tsv: exit 1" \
	sh -c "[ $? -eq 1 ] && grep -q 'has no memberships.tsv' '$tmp/err'"
check "... writes no file" [ ! -e "$tmp/no.png" ]

# ---- hostile labels and folder names ---------------------------------------
# community labels with ESC sequences, a bell, invalid UTF-8 and 300 bytes;
# folder names with ESC and a newline; nothing may break, stderr stays clean
h1=$(printf '%s/evil\033[31m\nname' "$tmp")
h2=$(printf '%s/other\007\377' "$tmp")
mkdir "$h1" "$h2"
long=$(printf 'x%.0s' $(seq 300))
{
	printf 'node\tcommunity\tstrength\n'
	printf 'a\t\033[2J\t1\nb\t\033[2J\t1\nc\t\033[2J\t1\n'
	printf 'c\t\377\376bad\t1\nd\t\377\376bad\t1\n'
	printf 'e\t%s\t1\nf\t%s\t1\n' "$long" "$long"
} >"$h1/memberships.tsv"
{
	printf 'node\tcommunity\tstrength\n'
	printf 'a\tbell\007\t1\nb\tbell\007\t1\nd\tbell\007\t1\n'
	printf 'c\t%%s%%n\t1\ne\t%%s%%n\t1\nf\t%%s%%n\t1\n'
} >"$h2/memberships.tsv"
for fmt in pdf svg png; do
	"$BIN" draw agreement "$h1" "$h2" -o "$tmp/hostile.$fmt" 2>"$tmp/err"
	check "hostile labels and folder names: $fmt written" \
		sh -c "[ $? -eq 0 ] && [ -s '$tmp/hostile.$fmt' ] && [ ! -s '$tmp/err' ]"
done
check "hostile: the PDF opens" pdf_ok "$tmp/hostile.pdf" 240 240
check "hostile: the SVG parses" svg_ok "$tmp/hostile.svg" 240 240
check "hostile: the SVG holds no control byte" no_control_bytes "$tmp/hostile.svg"
"$BIN" draw agreement "$h1" "$h2" "$h1" -o "$tmp/hostile3.svg" 2>"$tmp/err"
check "hostile folder names as run labels: SVG parses" svg_ok "$tmp/hostile3.svg" 240 240
"$BIN" draw sizes "$h1" -o "$tmp/hsizes.pdf" 2>"$tmp/err"
check "hostile: sizes of a folder without run.json" pdf_ok "$tmp/hsizes.pdf" 240 180
"$BIN" draw memberships "$h1" -o "$tmp/hmem.pdf" 2>"$tmp/err"
check "hostile: memberships without run.json" pdf_ok "$tmp/hmem.pdf" 240 180
"$BIN" draw trace "$h1" -o "$tmp/h.pdf" 2>"$tmp/err"
check "hostile folder named in a message: escaped" \
	sh -c "grep -q 'has no trace.tsv' '$tmp/err' && ! grep -q \"\$(printf '\\033')\" '$tmp/err'"

# ---- malformed files ---------------------------------------------------------
mkdir "$tmp/bad"
printf 'sweep\tseconds\tloglik\n0\t0\t-10\n1\t0\tnan\n' >"$tmp/bad/trace.tsv"
"$BIN" draw trace "$tmp/bad" -o "$tmp/bad.pdf" 2>"$tmp/err"
check "trace.tsv with nan: exit 1 naming the line" \
	sh -c "[ $? -eq 1 ] && grep -q 'trace.tsv:3:' '$tmp/err'"
printf 'sweep\tseconds\tloglik\n0\t0\t-10\n0\t0\t-9\n' >"$tmp/bad/trace.tsv"
"$BIN" draw trace "$tmp/bad" -o "$tmp/bad.pdf" 2>"$tmp/err"
check "trace.tsv whose sweeps do not increase: exit 1" \
	sh -c "[ $? -eq 1 ] && grep -q 'do not increase' '$tmp/err'"
printf 'k\theldout_loglik\n2\t-3\n' >"$tmp/bad/k-selection.tsv"
"$BIN" draw heldout "$tmp/bad" -o "$tmp/bad.pdf" 2>"$tmp/err"
check "k-selection.tsv without a chosen column: exit 1" \
	sh -c "[ $? -eq 1 ] && grep -q \"column 'chosen'\" '$tmp/err'"
check "no figure left behind" [ ! -e "$tmp/bad.pdf" ]
"$BIN" draw agreement "$fb" "$tmp/ka" -o "$tmp/two.pdf" 2>"$tmp/err"
check "agreement of fits of different graphs: exit 1" \
	sh -c "[ $? -eq 1 ] && grep -q 'different graphs' '$tmp/err'"

# ---- usage -------------------------------------------------------------------
"$BIN" draw trace "$fb" 2>/dev/null
check "no -o: exit 2" [ $? -eq 2 ]
"$BIN" draw pie "$fb" -o "$tmp/x.pdf" 2>"$tmp/err"
check "an unknown kind: exit 2" sh -c "[ $? -eq 2 ] && grep -q 'unknown kind' '$tmp/err'"
"$BIN" draw trace "$fb" -o "$tmp/x.jpg" 2>/dev/null
check "an unknown extension: exit 2" [ $? -eq 2 ]
"$BIN" draw trace "$fb" -o "$tmp/x.pdf" --format gif 2>/dev/null
check "an unknown --format: exit 2" [ $? -eq 2 ]
"$BIN" draw trace "$fb" -o "$tmp/x.png" --dpi 10 2>/dev/null
check "--dpi out of range: exit 2" [ $? -eq 2 ]
"$BIN" draw agreement "$fb" -o "$tmp/x.pdf" 2>/dev/null
check "agreement of one folder: exit 2" [ $? -eq 2 ]
"$BIN" draw trace "$fb" "$tmp/fb2" -o "$tmp/x.pdf" 2>/dev/null
check "trace of two folders: exit 2" [ $? -eq 2 ]
"$BIN" --help | grep -q '^  draw ' 
check "coterie --help lists draw" [ $? -eq 0 ]

finish
