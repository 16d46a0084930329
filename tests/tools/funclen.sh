#!/bin/sh
# Lists the functions of the C files given (default: src/) longer than
# LIMIT lines (default 120), longest first, as "LINES FILE:LINE NAME".
# A function is taken to start at a line that begins with a letter and
# holds "(" and to end at the next line that is a lone "}" in column 0
# (the house layout); static tables are not counted.
limit=${LIMIT:-120}
[ $# -eq 0 ] && set -- $(find src -name '*.c' | sort)
awk -v limit="$limit" '
FNR == 1 { name = ""; start = 0 }
/^[A-Za-z_].*\(/ && !/;[ \t]*$/ && !/=/ { cand = $0; cline = FNR }
/^\{/ && cand != "" { name = cand; start = cline; cand = "" ; next }
/^\}/ && name != "" {
	len = FNR - start + 1
	if (len > limit) {
		n = name; sub(/\(.*/, "", n); sub(/.*[ *]/, "", n)
		printf "%d %s:%d %s\n", len, FILENAME, start, n
	}
	name = ""
}
' "$@" | sort -rn
