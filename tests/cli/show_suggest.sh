#!/bin/sh
# coterie show --node NAME with a name that matches no node: the message
# lists near names (issue 14, item 10), best first: the name with ASCII
# letters folded, then names starting with it, then names holding it (as
# the explorer's / find matches), then names one or two edits away; at
# most 10, escaped like every name; the exit status stays 1.
. "$(dirname "$0")/lib"

g=$tmp/names.tsv
{
	printf 'Alice\tBob\nAlice\tCarol\nBob\tCarol\nAlice Smith\tBob\nMalice\tCarol\n'
	printf 'alicia\tBob\nDave\tCarol\nDave\tBob\n'
	i=1
	while [ "$i" -le 15 ]; do printf 'node%s\tDave\n' "$i"; i=$((i + 1)); done
	printf '\033[31mAlice-red\tBob\n'
} >"$g"
"$BIN" fit "$g" -k 2 -j 1 -q -o "$tmp/res"
check "fit the names graph: exit 0" [ $? -eq 0 ]

"$BIN" show "$tmp/res" --node alice >/dev/null 2>"$tmp/alice.err"
check "show --node alice (only Alice exists): exit 1" [ $? -eq 1 ]
check "the message still says no node is named so" grep -q "no node named 'alice'" "$tmp/alice.err"
grep '^  ' "$tmp/alice.err" >"$tmp/alice.list"
check "alice: Alice first (same letters, other case), then Alice Smith (prefix)" \
	sh -c '[ "$(sed -n 1p "$1")" = "  Alice" ] && [ "$(sed -n 2p "$1")" = "  Alice Smith" ]' \
	sh "$tmp/alice.list"
check "alice: Malice (holds it) is suggested" grep -qx '  Malice' "$tmp/alice.list"
check "alice: the name holding ESC is suggested (escaped)" grep -q 'Alice-red' "$tmp/alice.list"
check "alice: no raw control byte in the message" no_control_bytes "$tmp/alice.err"

"$BIN" show "$tmp/res" --node Bobb >/dev/null 2>"$tmp/bobb.err"
check "show --node Bobb: exit 1, suggests Bob (one edit away)" \
	sh -c '[ $0 -eq 1 ] && grep -qx "  Bob" "$1"' $? "$tmp/bobb.err"

"$BIN" show "$tmp/res" --node NODE >/dev/null 2>"$tmp/many.err"
check "show --node NODE (15 names start with node): at most 10 suggestions" \
	[ "$(grep -c '^  node' "$tmp/many.err")" -eq 10 ]

"$BIN" show "$tmp/res" --node zzzzzz >/dev/null 2>"$tmp/none.err"
check "show --node zzzzzz: exit 1 and no list when nothing is near" \
	sh -c '[ $0 -eq 1 ] && ! grep -q "^  " "$1"' $? "$tmp/none.err"

"$BIN" show "$tmp/res" --edge alice Bob >/dev/null 2>"$tmp/edge.err"
check "show --edge with a wrong name suggests too" grep -qx '  Alice' "$tmp/edge.err"

finish
