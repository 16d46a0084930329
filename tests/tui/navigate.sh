#!/bin/sh
# Moving between panes and drilling in: sorting the communities, Enter on a
# weak edge selects its outside end, m switches to missing links, a shows
# weak strengths, Enter on an affiliation selects that community.
. "$(dirname "$0")/lib"

g=$tmp/planted.tsv
make_graph "$g"
start_ui 120x40 C.UTF-8 "$g" -k 6 -j 2 -o out
check "the panes appear" wait_screen '─ 5 Weak edges'
check "the fit levels off (and waits)" wait_screen 'state   levelled off'

# column N (0-based) of the communities rows, as numbers
comm_column()
{
	screen | "$PY" -c '
import sys
col = int(sys.argv[1])
lines = sys.stdin.read().split("\n")
top = next(i for i, l in enumerate(lines) if l.startswith("─ 2 Communities"))
for l in lines[top + 2:]:
    if l.startswith("─"):
        break
    f = l[:60].split()
    if f and f[0].startswith("#"):
        print(f[col])
' "$1"
}
# sorted COL ORDER: the column is sorted (-r: descending, numeric)
sorted()
{
	comm_column "$1" >"$tmp/col"
	[ -s "$tmp/col" ] && sort -c -g $2 "$tmp/col"
}
keys 2
check "the communities start sorted by size, largest first" sorted 1 -r
keys o
check "o sorts by internal edges" wait_screen 'communities by internal edges, highest first'
check "the rows follow the internal edges, most first" sorted 2 -r
keys r
check "r reverses the order" wait_screen 'communities by internal edges, lowest first'
check "the rows follow the internal edges, fewest first" sorted 2 ""
keys o o
check "conductance sorts lowest first" wait_screen 'communities by conductance, lowest first'
check "the rows follow the conductance, lowest first" sorted 4 ""

# the first weak edge: its member and its neighbour
first_edge()
{
	screen | "$PY" -c '
import re, sys
lines = sys.stdin.read().split("\n")
for i, l in enumerate(lines):
    at = l.find("5 Weak edges")
    if at >= 0:
        row = lines[i + 2][at - 1:]
        m = re.match(r"^(.*?)\s+([>\u00b7])\s+(.*?)\s+(\S+)$", row.strip())
        print(m.group(1)); print(m.group(3)); print(row)
        break
'
}
keys 5
# the page has come (no "..." after the count: nothing is being fetched)
wait_screen '5 Weak edges of #[0-9]+ .* 1-[0-9]+ of [0-9.k]+ ─' 10
first_edge >"$tmp/edge"
member=$(sed -n 1p "$tmp/edge")
other=$(sed -n 2p "$tmp/edge")
outside=$(sed -n 3p "$tmp/edge" | grep -c ' > ')
keys Enter
if [ "$outside" -eq 1 ]; then
	check "Enter on a weak edge selects its outside end ($other)" wait_node "^ ?$other\$"
	check "and says it chose the outside end" wait_screen "the end outside the community"
else
	check "Enter on a weak edge selects its other end ($other)" wait_node "^ ?$other\$"
fi
keys m
check "m switches to missing links" wait_screen '5 Missing links in #[0-9]+'
keys m
check "m switches back to weak edges" wait_screen '5 Weak edges of #[0-9]+'

keys 4 a
check "a shows every strength" wait_screen 'all strengths \(a\)'
keys a
keys 3 Enter
check "Enter in the members pane goes to the node pane" wait_screen 'a:weak strengths Enter:community'
keys Enter
check "Enter on an affiliation selects its community" wait_screen '^community [0-9]+$'
id=$(screen | sed -n 's/^community \([0-9][0-9]*\)$/\1/p' | tail -1)
check "the members pane shows that community" wait_screen "─ 3 Members of #$id "
keys q
wait_screen 'Quit\?' 5
keys d
check "the explorer ends" wait_gone_ui 10
check "no sanitizer report" no_sanitizer_report "$tmp/stderr"
finish
