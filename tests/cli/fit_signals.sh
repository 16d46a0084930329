#!/bin/sh
# coterie fit reports progress on stderr (plain lines when stderr is not a
# terminal, nothing with -q; issue 2 part 8) and, when interrupted, stops,
# saves a complete result folder and exits 130 (DESIGN.md "Exit status":
# 130 interrupted, results saved first).
. "$(dirname "$0")/lib"

football=$DATA/football/edges.tsv
karate=$DATA/karate/edges.tsv
need_file "$football"
need_file "$karate"

cr=$(printf '\r')

# --- -q and progress ---------------------------------------------------------
# (an epsilon that leaves no caveat: warnings are said even with -q)
"$BIN" fit "$karate" -k 3 --epsilon 1e-4 -q -o "$tmp/quiet" >"$tmp/quiet.out" 2>"$tmp/quiet.err"
check "-q: the fit exits 0" [ $? -eq 0 ]
check "-q: nothing on stderr" [ ! -s "$tmp/quiet.err" ]
"$BIN" fit "$karate" -k 3 -q -o "$tmp/quiet2" >/dev/null 2>"$tmp/quiet2.err"
check "-q: anything on stderr is a warning (a thin answer is said even so)" \
	awk '!/^coterie: warning: / { bad = 1 } END { exit bad }' "$tmp/quiet2.err"
check "-q: nothing on stdout" [ ! -s "$tmp/quiet.out" ]

"$BIN" fit "$karate" -k 3 -o "$tmp/loud" >"$tmp/loud.out" 2>"$tmp/loud.err"
check "without -q: the fit exits 0" [ $? -eq 0 ]
check "without -q, stderr a file: progress lines 'sweep N' appear" \
	grep -q 'sweep [0-9]' "$tmp/loud.err"
check "without -q, stderr a file: no carriage return" \
	sh -c '! grep -q "$1" "$2"' sh "$cr" "$tmp/loud.err"
check "without -q, stderr a file: no escape sequences or other control bytes" \
	no_control_bytes "$tmp/loud.err"
check "without -q: nothing on stdout (results go to the folder)" [ ! -s "$tmp/loud.out" ]

# On a terminal the progress line is redrawn in place (issue 2 part 8: "a
# live progress line on stderr when it is a terminal"): many updates, few
# lines. script(1) from util-linux gives the command a terminal.
if command -v script >/dev/null 2>&1; then
	script -qec "'$BIN' fit '$football' -k 12 -j 2 --past-plateau --max-sweeps 60 -o '$tmp/tty'" \
		/dev/null >"$tmp/tty.txt" 2>&1 </dev/null
	check "on a terminal: the fit exits 0" [ $? -eq 0 ]
	updates=$(grep -o 'sweep [0-9]' "$tmp/tty.txt" | wc -l)
	lines=$(grep -c 'sweep [0-9]' "$tmp/tty.txt")
	check "on a terminal: the progress line is rewritten in place ($updates updates on $lines lines)" \
		[ "$updates" -gt "$lines" ]
else
	echo "# SKIP no script(1): terminal progress not checked"
fi

# --- interrupts ----------------------------------------------------------------
# interrupt SIGNAL NAME: start a fit that would run for a long time, wait
# until progress shows it sweeping, send SIGNAL, and check what is left.
interrupt()
{
	sig=$1
	name=$2
	out=$tmp/$name
	"$BIN" fit "$football" -k 12 -j 2 --past-plateau --max-sweeps 100000 -o "$out" \
		2>"$tmp/$name.err" &
	pid=$!
	bg_pids="$bg_pids $pid"
	# The first progress line comes at the first sweep, the next a second
	# later: two lines mean it has been sweeping for a while.
	if ! wait_for_grep 'sweep [0-9]' "$tmp/$name.err" 60 2; then
		fail "SIG$sig: the fit shows progress before the signal"
		kill -KILL "$pid" 2>/dev/null
		wait "$pid" 2>/dev/null
		return
	fi
	pass "SIG$sig: the fit shows progress before the signal"
	kill -"$sig" "$pid"
	if ! wait_gone "$pid" 60; then
		fail "SIG$sig: the fit ends after the signal"
		kill -KILL "$pid" 2>/dev/null
		wait "$pid" 2>/dev/null
		return
	fi
	wait "$pid"
	st=$?
	check "SIG$sig: exit status 130" [ "$st" -eq 130 ]
	check "SIG$sig: stderr says the fit was interrupted" grep -q 'interrupted' "$tmp/$name.err"
	for f in memberships.tsv communities.tsv trace.tsv run.json checkpoint.cot; do
		check "SIG$sig: $f is saved" [ -s "$out/$f" ]
	done
	check "SIG$sig: run.json parses" "$PY" -m json.tool "$out/run.json" /dev/null
	check "SIG$sig: run.json status is \"interrupted\"" \
		[ "$(json_get "$out/run.json" fit.status)" = interrupted ]
	sw=$(json_get "$out/run.json" fit.sweeps)
	check "SIG$sig: stopped after some sweeps and before the limit ($sw)" \
		sh -c '[ "$1" -ge 1 ] && [ "$1" -lt 100000 ]' sh "$sw"
	"$PY" "$cli_here/result_check.py" "$football" "$out" "after SIG$sig" ||
		failures=$((failures + 1))
	check "SIG$sig: progress lines hold no carriage return" \
		sh -c '! grep -q "$1" "$2"' sh "$cr" "$tmp/$name.err"
	check "SIG$sig: stderr holds no control bytes" no_control_bytes "$tmp/$name.err"
	# The saved checkpoint is good enough to go on from.
	"$BIN" fit --resume "$out" --max-sweeps $((sw + 2)) -q
	check "SIG$sig: the saved fit resumes (exit 0)" [ $? -eq 0 ]
	check "SIG$sig: the resumed fit ends 2 sweeps later" \
		[ "$(json_get "$out/run.json" fit.sweeps)" = $((sw + 2)) ]
}

interrupt INT sigint
interrupt TERM sigterm
interrupt HUP sighup

finish
