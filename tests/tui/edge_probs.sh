#!/bin/sh
# The weak-edges pane's probability column at 80 columns: every value is
# the probability `show --weak-edges --json` gives, to 3 or, where the
# column is too narrow, 2 significant digits, never a number cut short
# (0.000503 once showed as "0.00050").
. "$(dirname "$0")/lib"

# four large sparse communities: their members' links have probabilities
# near 0.0004, whose three digits (0.000414) do not fit the column
"$BIN" simulate -n 6000 --sizes 1000:2000 --mean-degree 3 --even-degrees --mixing 0.2 \
	--seed 3 -q -o "$tmp/sim"
"$BIN" fit "$tmp/sim/edges.tsv" -k 4 -j 2 --starts 1 --no-reseed --max-sweeps 20 -q \
	-o "$tmp/saved"
check "a fit with small edge probabilities to reopen" [ -s "$tmp/saved/checkpoint.cot" ]

start_ui 80x24 C.UTF-8 saved
check "the saved result opens" wait_screen '─ 5 Weak edges of #[0-9]+'
sleep 1
screen >"$tmp/screen.txt"
keys q
comm=$(sed -n 's/.*5 Weak edges of #\([0-9][0-9]*\).*/\1/p' "$tmp/screen.txt" | head -1)
"$BIN" show "$tmp/saved" --weak-edges "$comm" --limit 5 --json >"$tmp/weak.json"
check "show --weak-edges $comm --json: exit 0" [ $? -eq 0 ]
# the pane's rows: member, '>' or '·', neighbour, probability (the last field
# of the right half of each line below the pane's header)
check "each probability on screen is the JSON's, rounded, not cut" "$PY" - "$tmp/screen.txt" "$tmp/weak.json" <<'PY'
import json, sys
lines = open(sys.argv[1], encoding="utf-8").read().splitlines()
j = json.load(open(sys.argv[2]))
rows = next(v for k, v in j.items() if isinstance(v, list))
want = {}
for r in rows:
    p = r.get("probability", r.get("prob"))
    want[(str(r.get("member", r.get("u"))), str(r.get("neighbour", r.get("v"))))] = p
head = next(i for i, l in enumerate(lines) if "member" in l and "neighbour" in l and "prob" in l)
seen = 0
for l in lines[head + 1:head + 6]:
    right = l.split("│")[-1].split()
    if len(right) < 4 or right[1] not in (">", "\u00b7"):
        break
    shown = right[3]
    key = (right[0], right[2])
    assert key in want, (key, list(want)[:3])
    p = want[key]
    assert shown in (f"{p:.3g}", f"{p:.2g}", f"{p:.0e}"), (shown, p)
    assert len(shown) <= 7, shown
    seen += 1
assert seen >= 3, seen
assert any(p < 0.001 for p in want.values()), "no probability below 0.001 to test"
PY
finish
