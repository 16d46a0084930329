#!/bin/sh
# coterie fit's progress line fits the terminal (issue 14, item 1), and its
# last line names the start whose model was kept (item 2).
# The terminal is a pseudo-terminal made by script(1) (util-linux), sized
# with stty; the line is redrawn in place with CR and ESC [ K, so each
# piece between CRs and newlines is one state of the line.
. "$(dirname "$0")/lib"

football=$DATA/football/edges.tsv
need_file "$football"

if ! command -v script >/dev/null 2>&1; then
	fail "script(1) is installed (util-linux)"
	finish
fi

# progress_lines LOG: the progress line's states (not the notices).
progress_lines()
{
	tr '\r' '\n' <"$1" | sed 's/\x1b\[K//g' | grep -v '^coterie: ' | grep -v '^ *$'
}

# longest LINES: the widest line's length.
longest() { awk '{ if (length($0) > n) n = length($0) } END { print n + 0 }' "$1"; }

for w in 60 80; do
	out=$tmp/out$w
	# three starts (the default below 100000 edges): the line carries "start i/3"
	script -qc "stty cols $w rows 24; \"$BIN\" fit \"$football\" -k 12 -j 1 --seed 1 -o \"$out\"" \
		/dev/null </dev/null >"$tmp/tty$w.log" 2>&1
	progress_lines "$tmp/tty$w.log" >"$tmp/lines$w"
	check "a terminal of $w columns shows progress lines" [ -s "$tmp/lines$w" ]
	check "under $w columns, each state of the progress line fits in $((w - 1)) columns" \
		[ "$(longest "$tmp/lines$w")" -lt "$w" ]
	check "under $w columns, the line still gives the start, the sweep and the loglik" \
		grep -q 'start [0-9]/3  sweep [0-9]*  loglik ' "$tmp/lines$w"
	kept=$(json_get "$out/run.json" fit.start_kept)
	last=$(tail -n 1 "$tmp/lines$w")
	check "under $w columns, the last line says which start was kept, as run.json's start_kept ($kept)" \
		sh -c 'case "$1" in "kept start $2 of 3"*) exit 0 ;; esac; exit 1' sh "$last" "$kept"
	sweeps=$(json_get "$out/run.json" fit.sweeps)
	check "under $w columns, the last line gives the kept start's sweep ($sweeps)" \
		sh -c 'case "$1" in *"sweep $2 "*) exit 0 ;; esac; exit 1' sh "$last" "$sweeps"
done
check "at 80 columns the kept start is said in full words" \
	grep -q '^kept start [0-9] of 3 (the shortest code): sweep ' "$tmp/lines80"

# Not a terminal: COLUMNS, else 80, and the "coterie: " prefix counts.
COLUMNS=60 "$BIN" fit "$football" -k 12 -j 1 --seed 1 -o "$tmp/plain" 2>"$tmp/plain.err"
grep '^coterie: \(start\|kept\) ' "$tmp/plain.err" >"$tmp/plain.lines"
check "on a pipe, progress lines are printed" [ -s "$tmp/plain.lines" ]
check "on a pipe with COLUMNS=60, each progress line fits in 59 columns" \
	[ "$(longest "$tmp/plain.lines")" -lt 60 ]
unset COLUMNS
"$BIN" fit "$football" -k 12 -j 1 --seed 1 -o "$tmp/plain80" 2>"$tmp/plain80.err"
grep '^coterie: \(start\|kept\) ' "$tmp/plain80.err" >"$tmp/plain80.lines"
check "on a pipe without COLUMNS, each progress line fits in 79 columns" \
	[ "$(longest "$tmp/plain80.lines")" -lt 80 ]
kept=$(json_get "$tmp/plain80/run.json" fit.start_kept)
check "on a pipe, the last progress line names the kept start ($kept)" \
	sh -c 'tail -n 1 "$1" | grep -q "^coterie: kept start $2 of 3"' sh "$tmp/plain80.lines" "$kept"
finish
