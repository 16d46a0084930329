#!/bin/sh
# Every width from the minimum up lays out cleanly (issue 14, items 5 and
# 6): at 60, 70, 80 and 120 columns no line is wider than the terminal,
# the communities' column heads stand over their cells (a narrow pane
# drops whole columns, it never wraps a row), the node, member and edge
# rows keep their shape, a pane's count is whole or absent (never "1-5 of
# 124" for 12456), the quit question shows all three choices and the
# footer's keys are whole. Below the minimum the "too small" message is
# shown whole, broken between words (40x12, 30x8).
. "$(dirname "$0")/lib"

g=$tmp/planted.tsv
make_graph "$g"

# layout_ok COLS FILE TOTAL: the checks on one capture; TOTAL is the weak
# edges' total read at 120 columns ("" to read it)
layout_ok()
{
	"$PY" - "$1" "$2" "$3" <<'PYEOF'
import re, sys
cols, path, total = int(sys.argv[1]), sys.argv[2], sys.argv[3]
lines = open(path, encoding="utf-8").read().rstrip("\n").split("\n")
bad = 0
def check(ok, what):
    global bad
    print("%s - %d columns: %s" % ("ok" if ok else "not ok", cols, what))
    bad += not ok
check(all(len(l) <= cols for l in lines), "no line is wider than the terminal")
top = next(i for i, l in enumerate(lines) if "─ 2 Communities" in l)
mid = next(i for i, l in enumerate(lines) if "─ 3 Members" in l)
sep = lines[top].index("┬")
def ends(s):
    return [m.end() for m in re.finditer(r"\S+", s)]
head = lines[top + 1][:sep]
rows = [l[:sep] for l in lines[top + 2:mid] if l[:sep].strip()]
check(len(rows) > 0, "the communities pane has rows")
check(all(re.match(r"^ +#\d+( +[0-9.k]+){2,5} *$", r) for r in rows),
      "every community row is one whole row (no wrapped cells)")
check(all(ends(r) == ends(head) for r in rows), "the column heads stand over their cells")
# the node pane: its rows have the comm, bar, strength, flag (and count) shape
node = [l[sep + 1:] for l in lines[top + 1:mid]]
check(not any(re.search(r"unexplaine$|unexp$", l.rstrip()) for l in node),
      "the node's figures are whole")
affil = [l for l in node[3:] if l.strip()]
check(all(re.match(r"^ +#\d+ +[^ ]+ +[0-9.e+-]+ +(member|weak)( +\d+)? *$", l) for l in affil),
      "every node row keeps its shape")
if re.search(r"(explains|expl)\s*$", node[2]):
    col = len(node[2].rstrip())
    check(all(len(l.rstrip()) == col for l in affil), "the explains column stands under its head")
# members and edges, below
low = lines[mid + 1:-1]
mem = [l[:sep] for l in low if l[:sep].strip()]
check(all(re.match(r"^ +\S.*\S +\S+ +[0-9.e+-]+ *$", l) for l in mem), "every member row keeps its shape")
title = lines[mid][sep:]
note = re.match(r"^.*─ 5 Weak edges of #\d+ ─+(?: (.*) ─)?$", title.rstrip())
check(note is not None and (note.group(1) is None or
      re.fullmatch(r"\d+-\d+ of \d+|of \d+|\d+", note.group(1))),
      "the weak edges' title and note are whole (%s)" % title.strip())
m = re.search(r"─ (\d+)-(\d+) of (\d+) ─|─ of (\d+) ─|─ (\d+) ─$", title)
shown = m and next(x for x in (m.group(3), m.group(4), m.group(5)) if x)
if total:
    check(shown in (None, total), "the weak edges' count is whole or absent (%s of %s)" % (shown, total))
else:
    print("TOTAL=%s" % shown, file=sys.stderr)
edges = [l[sep + 1:] for l in low[1:] if l[sep + 1:].strip() and not l[sep + 1:].strip().startswith("P ")]
check(all(re.match(r"^ +\S.* [>·] .*\S +[0-9.e+-]+ *$", l) for l in edges), "every edge row keeps its shape")
check(any(l.strip().startswith("state   levelled off") for l in lines), "the state line is whole")
foot = lines[-1].rstrip() if lines[-1].strip() else lines[-2].rstrip()
items = {"?:help", "/:find", "Tab:pane", "s:stop", "p:pause", "run on", "w:write", "q:quit", "o:sort",
         "r:reverse", "Enter:members", "e:run", "on"}
check(all(w in items for w in foot.split()), "the footer's keys are whole (%s)" % foot)
sys.exit(1 if bad else 0)
PYEOF
}

total=
for size in 120x40 80x24 70x24 60x20 60x16; do
	cols=${size%x*}
	start_ui $size C.UTF-8 "$g" -k 6 -j 1 -o "out$cols"
	wait_screen 'state   levelled off' 30
	# the first (largest) community of the final model, the same at every width
	keys g
	wait_screen '─ 5 Weak edges of #[0-9]+' 10
	sleep 0.5
	screen >"$tmp/cap"
	if [ -z "$total" ]; then
		layout_ok "$cols" "$tmp/cap" "" 2>"$tmp/total" || failures=$((failures + 1))
		total=$(sed -n 's/^TOTAL=//p' "$tmp/total")
		check "the total of weak edges is read at 120 columns ($total)" \
			sh -c '[ -n "$1" ] && [ "$1" != None ]' sh "$total"
	else
		layout_ok "$cols" "$tmp/cap" "$total" || failures=$((failures + 1))
	fi
	keys q
	check "$size: the quit question shows" wait_screen 'Quit\?' 5
	check "$size: the quit question keeps all three choices" wait_screen 'y: .*d: .*n: stay' 2
	keys d
	wait_gone_ui 20
done

for size in 40x12 30x8; do
	start_ui $size C.UTF-8 "$g" -k 6 -j 1 -o small
	wait_screen 'needs' 10
	sleep 0.3
	whole=$(screen | tr '\n' ' ' | tr -s ' ')
	case $whole in
	*"coterie explore needs 60x16; this terminal is ${size}. q quits."*) pass "$size: the too-small message is whole" ;;
	*) fail "$size: the too-small message is whole ($whole)" ;;
	esac
	keys q
	wait_screen 'Quit\?' 5
	keys d
	check "$size: q then d quits" wait_gone_ui 20
done
check "no sanitizer report" no_sanitizer_report "$tmp/stderr"
finish
