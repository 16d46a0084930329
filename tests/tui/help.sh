#!/bin/sh
# '?' opens a help screen that lists every key of the key table, under
# the pane it works in, with its description. The table is printed by the
# hidden `coterie explore --list-keys` (the same table that dispatches
# keys), so the help cannot leave a key out or describe it differently.
. "$(dirname "$0")/lib"

g=$tmp/planted.tsv
make_graph "$g"
"$BIN" explore --list-keys >"$tmp/keys" 2>"$tmp/keys.err"
check "--list-keys exits 0" [ $? -eq 0 ]
check "--list-keys lists keys" [ "$(wc -l <"$tmp/keys")" -ge 20 ]
for k in Tab S-Tab Up Down k j PgUp PgDn Enter / '?' q s p e w o r a m; do
	check "the key table binds '$k' (a key the issue asks for)" \
		grep -q "^$(printf '%s' "$k" | sed 's/[?]/[?]/')	" "$tmp/keys"
done

dups=$(cut -f1,2 "$tmp/keys" | sort | uniq -d)
check "no key is bound twice in the same pane${dups:+ ($dups)}" [ -z "$dups" ]

start_ui 120x46 C.UTF-8 "$g" -k 6 -j 2 -o out  # tall enough for every key unscrolled
wait_screen '─ 5 Weak edges' 10
keys '?'
check "? opens the help screen, headed in the user's words" \
	wait_screen '^ Keys: what each one does \(any other key closes this\)'
screen >"$tmp/help"
# the wording says what a key does for the user (issue 14, item 14): no
# word of the code's inside, on the screen or in the key list
jargon='table|dispatch|binding|snapshot|PANE_|act_|MODE_|cache|enum|struct'
check "no internal jargon on the help screen" sh -c "! grep -Eiq '$jargon' '$tmp/help'"
check "no internal jargon in the key list" sh -c "! cut -f3 '$tmp/keys' | grep -Eiq '$jargon'"
check "the help says what Tab does for the user" grep -q 'move to the next pane' "$tmp/help"
check "the help says what w writes and where" \
	grep -q 'save the result (memberships, communities, run.json) to the folder top right' "$tmp/keys"
check "the help says what Enter does in the communities pane" \
	grep -q 'list the members of this community in pane 3' "$tmp/keys"
"$PY" - "$tmp/keys" "$tmp/help" <<'PYEOF'
import sys
heading = {"any": "Everywhere", "likelihood": "Likelihood pane", "communities": "Communities pane",
           "members": "Members pane", "node": "Node pane", "edges": "Weak edges pane"}
table = [l.rstrip("\n").split("\t") for l in open(sys.argv[1], encoding="utf-8") if l.strip()]
entries = []  # (heading, [keys], text)
current = None
for line in open(sys.argv[2], encoding="utf-8").read().split("\n"):
    if line.startswith(" ") and not line.startswith("  ") and line.strip():
        # a pane's heading, or another section (the questions): no keys
        current = line.strip() if line.strip() in heading.values() else None
    elif line.startswith("   ") and current and line.strip():
        keys, _, text = line.strip().partition("  ")
        entries.append((current, [k.strip() for k in keys.split(", ")], text.strip()))
failed = 0
for key, pane, desc in table:
    ok = any(h == heading[pane] and key in ks and t == desc for h, ks, t in entries)
    print("%s - help lists %s (%s pane): %s" % ("ok" if ok else "not ok", key, pane, desc))
    failed += not ok
for h, ks, t in entries:
    ok = all(any(k == key and t == desc and heading[pane] == h for key, pane, desc in table)
             for k in ks)
    print("%s - help line '%s: %s' is in the table" % ("ok" if ok else "not ok", ", ".join(ks), t))
    failed += not ok
sys.exit(1 if failed else 0)
PYEOF
[ $? -eq 0 ] || failures=$((failures + 1))
keys x
check "any other key closes the help" wait_screen '─ 5 Weak edges'

# at 80x24 the help scrolls
$T resize-window -x 80 -y 24
wait_screen '─ 5 Weak edges' 5
keys '?'
check "at 80x24 the help says it scrolls" wait_screen 'j/k scroll'
last=$(tail -1 "$tmp/keys" | cut -f3)
i=0
while [ $i -lt 30 ]; do keys j; i=$((i + 1)); done
check "scrolling reaches the last key of the table" wait_screen "$last"
keys x

# Narrow screens break the help's texts between words instead of cutting
# them: tall enough not to scroll, every key's text and every note is on
# the screen whole (joined across its rows) at 80 and at 60 columns. The
# check is retried for a few seconds: the explorer redraws after it has
# taken the resize.
help_whole()
{
	hw_i=0
	while [ "$hw_i" -lt $((50 * slow)) ]; do
		screen >"$tmp/help-whole"
		"$PY" - "$tmp/help-whole" "$tmp/keys" >"$tmp/help-missing" <<'PYEOF' && return 0
import sys
screen = " ".join(open(sys.argv[1], encoding="utf-8").read().split())
texts = {l.rstrip("\n").split("\t")[2] for l in open(sys.argv[2], encoding="utf-8") if l.count("\t") >= 2}
texts |= {"Sweeps and tolerance questions: type a number, Enter goes on, Esc changes nothing.",
          "Ctrl-C, SIGTERM or a lost connection save first, then end (status 130)."}
missing = [t for t in sorted(texts) if " ".join(t.split()) not in screen]
for t in missing:
    print("# not whole on the screen: " + t)
sys.exit(1 if missing else 0)
PYEOF
		sleep 0.1
		hw_i=$((hw_i + 1))
	done
	cat "$tmp/help-missing"
	return 1
}
for size in 80x70 60x90; do
	$T resize-window -x "${size%x*}" -y "${size#*x}"
	keys '?'
	check "at ${size%x*} columns every help text is whole (broken between words)" help_whole
	keys x
done
keys q
wait_screen 'Quit\?' 5
keys d
check "the explorer ends" wait_gone_ui 10
check "no sanitizer report" no_sanitizer_report "$tmp/stderr"
finish
