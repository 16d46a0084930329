#!/bin/sh
# Shrinking the terminal to 80x24 and growing it back redraws a clean
# layout each time: the titles in their places, the pane separator in one
# column on every row between, and nothing left over from the other size.
. "$(dirname "$0")/lib"

g=$tmp/planted.tsv
make_graph "$g"

# layout_ok COLS ROWS: the screen is the explorer's layout for that size.
# (python3: the screen is UTF-8.) Rows as laid out by src/tui/ui.c: header, likelihood (30% of the body,
# 6 to 13 rows), then two rows of two panes split at COLS/2.
layout_ok()
{
	screen >"$tmp/screen"
	"$PY" - "$1" "$2" "$tmp/screen" <<'PYEOF'
import sys
cols, rows = int(sys.argv[1]), int(sys.argv[2])
lines = open(sys.argv[3], encoding="utf-8").read().split("\n")
lines += [""] * (rows - len(lines))
bad = []
body = rows - 2
th = min(max(body * 3 // 10, 6), 13)
gt = (body - th + 1) // 2
top, bottom = 1 + th, 1 + th + gt          # 0-based rows of the title lines
if not lines[1].startswith("─ 1 Likelihood"): bad.append("likelihood title not on row 1")
if not lines[top].startswith("─ 2 Communities"): bad.append("communities title not on row %d" % top)
if "4 Node" not in lines[top]: bad.append("node title not beside communities")
if not lines[bottom].startswith("─ 3 Members"): bad.append("members title not on row %d" % bottom)
if "5 Weak edges" not in lines[bottom]: bad.append("weak edges title not beside members")
if "nodes" not in lines[0]: bad.append("no header")
half = cols // 2
for i in range(top + 1, rows - 1):
    if i != bottom and (len(lines[i]) <= half or lines[i][half] != "│"):
        bad.append("no separator at column %d on row %d" % (half, i))
for i, l in enumerate(lines[:rows]):
    if len(l) > cols: bad.append("row %d is wider than %d" % (i, cols))
    if l.count("Likelihood") > 1: bad.append("two likelihood titles on row %d" % i)
for b in bad:
    print("layout: " + b, file=sys.stderr)
sys.exit(1 if bad else 0)
PYEOF
}

wait_layout()
{
	wl_i=0
	while [ "$wl_i" -lt $((50 * slow)) ]; do
		layout_ok "$1" "$2" 2>/dev/null && return 0
		sleep 0.1
		wl_i=$((wl_i + 1))
	done
	layout_ok "$1" "$2" # once more, to print why
}

start_ui 120x40 C.UTF-8 "$g" -k 6 -j 2 -o out
check "the panes appear at 120x40" wait_screen '─ 5 Weak edges'
check "the layout at 120x40 is clean" wait_layout 120 40
$T resize-window -x 80 -y 24
check "after shrinking to 80x24 the layout is clean" wait_layout 80 24
check "at 80x24 the communities use short column heads" wait_screen ' id +. ?size +edges +dens +cond +p'
check "at 80x24 no long column head is left over" sh -c "! grep -q conductance '$tmp/screen'"
$T resize-window -x 120 -y 40
check "after growing back to 120x40 the layout is clean" wait_layout 120 40
check "at 120x40 the long column heads are back" wait_screen 'density +conductance'
$T resize-window -x 50 -y 12
check "a too small terminal says so" wait_screen 'needs 60x16'
$T resize-window -x 80 -y 24
check "and recovers at 80x24" wait_layout 80 24
keys q
wait_screen 'Quit\?' 5
keys d
check "the explorer ends" wait_gone_ui 10
check "no sanitizer report" no_sanitizer_report "$tmp/stderr"
finish
