#!/bin/sh
# The manual pages (man/*.1, man/*.5) render without a warning: groff's own
# check (groff -man -ww -z, groff-base), man-db's renderer (man -l, at 80
# columns in a UTF-8 locale) and, where it is installed, mandoc -Tlint.
# Then three faults found by reading them (issue 14, item 13): an entry that
# ran into the next paragraph, superscripts (\u...\d) that render as
# plain digits in a terminal ("10\u5\d" read "105"), and a reference listed
# twice in SEE ALSO. Both tools come from `make deps` (DEB_PKGS).
. "$(dirname "$0")/lib"

MAN=$ROOT/man
for tool in groff man; do
	command -v "$tool" >/dev/null 2>&1 || { fail "$tool is installed (make deps)"; finish; }
done

for page in "$MAN"/*.[1-9]; do
	name=$(basename "$page")
	groff -man -ww -z "$page" >"$tmp/groff.out" 2>&1
	check "$name: groff -man -ww -z: exit 0, no warning" \
		sh -c '[ $0 -eq 0 ] && [ ! -s "$1" ]' $? "$tmp/groff.out"
	sed 's/^/# /' "$tmp/groff.out"
	# piped, man-db prints plain text (no overstrikes); sed strips any left
	LC_ALL=C.UTF-8 MANWIDTH=80 man -l "$page" 2>"$tmp/man.err" |
		sed 's/.\x08//g' >"$tmp/$name.txt"
	check "$name: man -l renders it with nothing on standard error" \
		sh -c '[ -s "$1" ] && [ ! -s "$2" ]' sh "$tmp/$name.txt" "$tmp/man.err"
	sed 's/^/# /' "$tmp/man.err"
	if command -v mandoc >/dev/null 2>&1; then
		mandoc -Tlint -W warning "$page" >"$tmp/mandoc.out" 2>&1
		check "$name: mandoc -Tlint -W warning finds nothing" [ ! -s "$tmp/mandoc.out" ]
		sed 's/^/# /' "$tmp/mandoc.out"
	fi
	check "$name: no \\u...\\d superscript (a terminal shows its digits run together)" \
		sh -c '! grep -q "\\\\u" "$1"' sh "$page"
	# SEE ALSO: no paragraph twice
	"$PY" - "$tmp/$name.txt" >"$tmp/see.out" 2>&1 <<'PYEOF'
import sys, re
text = open(sys.argv[1]).read()
see = text.split("SEE ALSO", 1)[1] if "SEE ALSO" in text else ""
see = re.split(r"\n[A-Z]", see)[0]
paras = [" ".join(p.split()) for p in see.split("\n\n") if p.strip()]
dups = {p for p in paras if paras.count(p) > 1}
assert not dups, dups
PYEOF
	check "$name: SEE ALSO lists no reference twice" [ $? -eq 0 ]
	sed 's/^/# /' "$tmp/see.out"
done

files=$tmp/coterie-files.5.txt
check "coterie-files(5): the files entry of simulate.json ends before the cover-file text" \
	sh -c '! sed -n "/^ *files  *the  *names  *of/,/^\$/p" "$1" | grep -q "cover file"' \
	sh "$files"
check "coterie(1): 10^5 nodes reads as a power (not 105 nodes)" \
	sh -c 'grep -q "10^5 nodes" "$1" && ! grep -q " 105 nodes" "$1"' sh "$tmp/coterie.1.txt"

finish
