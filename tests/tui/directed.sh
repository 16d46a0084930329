#!/bin/sh
# The explorer on a directed fit (issue 15), at 80x24 on a folder written by
# `fit --directed`:
#  - pane 4 shows the node's sending and receiving strengths side by side,
#    and every value shown is the one memberships.tsv holds for that side;
#  - 'd' in pane 3 lists the sending members, then the receiving ones, then
#    all: the counts are communities.tsv's senders, receivers and size;
#  - pane 5's rows are arcs: the arrow points the way the arc goes in the
#    graph file, and the probability is 1 - exp(-F_u . H_v) computed here
#    from the strengths `coterie export --matrix` writes;
#  - pane 2 (at 132x30, every column shown) lists the rows of
#    communities.tsv with its figures (size in nodes, senders, receivers,
#    arcs inside, density, one-way share), sorted by size, then ('o') by
#    arcs inside, and counts them in its title.
. "$(dirname "$0")/lib"

"$BIN" simulate -n 1500 --sizes 40:100 --overlap 0.1 --mean-degree 8 --mixing 0.2 \
	--directed --seed 4 -q -o "$tmp/sim"
"$BIN" fit "$tmp/sim/edges.tsv" --directed -k 24 -j 2 --starts 1 --no-reseed \
	--max-sweeps 30 --epsilon 1e-4 -q -o "$tmp/saved"
check "a directed fit to reopen" [ -s "$tmp/saved/memberships.tsv" ]
"$BIN" export "$tmp/saved" --matrix "$tmp/F.mtx" 2>/dev/null
check "its strengths exported" [ -s "$tmp/F.mtx" ]

start_ui 80x24 C.UTF-8 saved
check "the directed result opens" wait_screen '─ 5 Weak edges of #[0-9]+'
check "the header counts nodes and arcs as given" wait_screen ' 1500 nodes, [0-9.k]+ arcs'
check "pane 4 heads a sending and a receiving column" wait_screen 'comm +sending +receiving +side'
screen >"$tmp/node.txt"
keys 3
keys d
check "d: the sending members" wait_screen 'Members of #[0-9]+ ─+ [0-9]+ sending[ ─]'
screen >"$tmp/send.txt"
keys d
check "d again: the receiving members" wait_screen 'Members of #[0-9]+ ─+ [0-9]+ receiving[ ─]'
screen >"$tmp/recv.txt"
keys d
check "d a third time: all members" wait_screen 'Members of #[0-9]+ ─+ [0-9]+( by|[ ─])'
screen >"$tmp/all.txt"
keys q
wait_gone_ui 10 || fail "the explorer quits"

check "pane 4's strengths are memberships.tsv's, side by side" "$PY" - "$tmp/node.txt" \
	"$tmp/saved/memberships.tsv" <<'PY'
import re, sys, csv
lines = open(sys.argv[1], encoding="utf-8").read().splitlines()
rows = list(csv.DictReader(open(sys.argv[2]), delimiter="\t"))
head = next(i for i, l in enumerate(lines) if re.search(r"comm +sending +receiving +side", l))
node = lines[head - 2].split("│")[-1].strip()
mine = {r["community"]: r for r in rows if r["node"] == node}
assert mine, ("node on screen has no membership", node)
num = re.compile(r"(?<![\w.#])(\d*\.\d+(?:e-?\d+)?|\d+)(?![\w.])")
seen = 0
for l in lines[head + 1:]:
    right = l.split("│")[-1]
    m = re.match(r"\s*#(\d+)\s", right)
    if not m:
        break
    side = right.split()[-1]
    vals = num.findall(right[m.end():])
    r = mine.get(m.group(1))
    assert r is not None, ("listed but not in memberships.tsv", node, m.group(1))
    want = {"both": ("sending", "receiving"), "send": ("sending",), "recv": ("receiving",)}[side]
    if side == "recv" and len(vals) == 1:
        vals = [None] + vals
    for col in want:
        shown = vals[0] if col == "sending" else vals[1]
        assert shown == f"{float(r[col]):.3g}", (node, m.group(1), col, shown, r[col])
        seen += 1
    assert r["side"] == {"both": "both", "send": "sending", "recv": "receiving"}[side], (r, side)
assert seen >= 2, seen
PY

check "the members by side are communities.tsv's senders, receivers and size" "$PY" - \
	"$tmp/send.txt" "$tmp/recv.txt" "$tmp/all.txt" "$tmp/saved/communities.tsv" <<'PY'
import re, sys, csv
comms = {r["community"]: r for r in csv.DictReader(open(sys.argv[4]), delimiter="\t")}
for path, col, word, tag in ((sys.argv[1], "senders", "sending", "send"),
                             (sys.argv[2], "receivers", "receiving", "recv"),
                             (sys.argv[3], "size", "", None)):
    lines = open(path, encoding="utf-8").read().splitlines()
    t = next(l for l in lines if "3 Members of #" in l)
    m = re.search(r"Members of #(\d+) ─+ (\d+)%s[ ─]" % (" " + word if word else ""), t)
    assert m, t
    assert m.group(2) == comms[m.group(1)][col], (col, m.groups(), comms[m.group(1)])
    if tag:
        start = lines.index(t) + 1
        sides = [l.split("│")[0].split()[-2] for l in lines[start:start + 4]]
        assert all(s == tag for s in sides), (tag, sides)
PY

check "pane 5: arcs with their direction and P(u -> v) = 1 - exp(-F_u.H_v)" "$PY" - \
	"$tmp/node.txt" "$tmp/F.mtx" "$tmp/sim/edges.tsv" <<'PY'
import math, re, sys
lines = open(sys.argv[1], encoding="utf-8").read().splitlines()
base = sys.argv[2][:-4]
names = [l.rstrip("\n") for l in open(base + ".rows.txt")]
F = {}
body = [l for l in open(sys.argv[2]) if not l.startswith("%")]
for l in body[1:]:  # body[0] is "rows columns entries"
    i, c, x = l.split()
    F.setdefault(names[int(i) - 1], {})[int(c)] = float(x)
arcs = set()
for l in open(sys.argv[3]):
    if not l.startswith("#"):
        a, b = l.split()[:2]
        arcs.add((a, b))
head = next(i for i, l in enumerate(lines) if "member" in l and "neighbour" in l and "prob" in l)
seen = 0
for l in lines[head + 1:]:
    right = l.split("│")[-1].split()
    if len(right) != 4 or right[1] not in ("\u2192", "\u2190"):
        break
    mem, arrow, nb, shown = right
    u, v = (mem, nb) if arrow == "\u2192" else (nb, mem)
    assert (u, v) in arcs, ("no such arc in the graph file", u, v)
    fu, hv = F.get(u + " [out]", {}), F.get(v + " [in]", {})
    p = -math.expm1(-sum(x * hv.get(c, 0.0) for c, x in fu.items()))
    assert shown in (f"{p:.3g}", f"{p:.2g}", f"{p:.0e}"), (u, v, shown, p)
    seen += 1
assert seen >= 3, seen
PY
start_ui 132x30 C.UTF-8 saved
check "the directed result opens wide" wait_screen '─ 2 Communities ─+ [0-9]+ with members'
check "pane 2 heads communities.tsv's figures" \
	wait_screen 'id +↓size +senders +receivers +arcs in +density +one-way'
screen >"$tmp/wide.txt"
keys o
check "o: sorted by arcs inside" wait_screen '↓arcs in'
screen >"$tmp/byarcs.txt"
keys q
wait_gone_ui 10 || fail "the explorer quits"

check "pane 2's rows are communities.tsv's, figure for figure, in the order asked" "$PY" - \
	"$tmp/wide.txt" "$tmp/byarcs.txt" "$tmp/saved/communities.tsv" <<'PY'
import re, sys, csv
rows = {r["community"]: r for r in csv.DictReader(open(sys.argv[3]), delimiter="\t")}
def count(x):  # draw.c fmt_count
    x = int(x)
    return str(x) if x < 100000 else "%.1fk" % (x / 1e3)
def frac(x):  # draw.c fmt_frac
    x = float(x)
    if x >= 0.9995: return "%.2f" % x
    if x >= 0.0005 or x == 0:
        t = "%.3f" % x
        return t[1:] if t[0] == "0" else t
    return "%.0e" % x
for path, col in ((sys.argv[1], "size"), (sys.argv[2], "arcs_inside")):
    lines = open(path, encoding="utf-8").read().splitlines()
    t = next(i for i, l in enumerate(lines) if "2 Communities" in l)
    m = re.search(r"(\d+) with members", lines[t])
    assert m and int(m.group(1)) == len(rows), (lines[t], len(rows))
    seen = []
    for l in lines[t + 2:]:
        cells = l.split("│")[0].split()
        if not cells or not cells[0].startswith("#"):
            break
        r = rows[cells[0][1:]]
        want = [count(r["size"]), count(r["senders"]), count(r["receivers"]),
                count(r["arcs_inside"]), frac(r["density"]), frac(r["one_way"])]
        assert cells[1:7] == want, (cells, want)
        seen.append(int(r[col]))
    assert len(seen) >= 5 and seen == sorted(seen, reverse=True), (col, seen)
PY
finish
