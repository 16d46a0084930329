#!/bin/sh
# q asks first when the fit runs or the result is unsaved; n stays, y
# stops, saves and quits. Ctrl-C, SIGTERM, SIGHUP and a vanished terminal
# never lose the fit: the result is written first, then the exit status
# is 130 (DESIGN.md, "Exit status").
. "$(dirname "$0")/lib"

g=$tmp/planted.tsv
make_graph "$g"

# wait_file PATH SECONDS: until PATH exists and is not empty.
wait_file()
{
	wf_i=0
	while [ ! -s "$1" ]; do
		[ "$wf_i" -ge $(($2 * 10 * slow)) ] && return 1
		sleep 0.1
		wf_i=$((wf_i + 1))
	done
}

# 1. a running fit
start_ui 120x40 C.UTF-8 "$g" -k 6 -j 2 --starts 1 --no-reseed --max-sweeps 100000000 -o run
wait_screen '─ 5 Weak edges' 10
keys e
check "the fit runs" wait_screen 'state   fitting'
keys q
check "q asks first while the fit runs" wait_screen 'Quit\? the fit is still running'
check "nothing is written by the question" [ ! -e "$tmp/run/run.json" ]
keys n
check "n stays" wait_screen 'carrying on'
check "the fit still runs after n" wait_screen 'state   fitting'
keys q
wait_screen 'Quit\?' 5
keys y
check "y quits" wait_gone_ui 20
check "y exits 0" [ "$(ui_rc)" = 0 ]
check "y wrote run.json" [ -s "$tmp/run/run.json" ]
check "y wrote the checkpoint" [ -s "$tmp/run/checkpoint.cot" ]
check "run.json says the fit was stopped" [ "$(json_get "$tmp/run/run.json" fit.state)" = stopped ]
check "y says where the result is" grep -q "is in 'run'" "$tmp/stderr"
check "no sanitizer report (y)" no_sanitizer_report "$tmp/stderr"

# 2. a fit that levelled off and is not saved
start_ui 120x40 C.UTF-8 "$g" -k 6 -j 2 -o lev
check "the fit levels off" wait_screen 'state   levelled off'
keys q
check "q asks first when the result is unsaved" wait_screen 'Quit\? the result is not saved'
keys y
check "y quits" wait_gone_ui 20
check "run.json says levelled" [ "$(json_get "$tmp/lev/run.json" fit.state)" = levelled ]

# 3. signals
for how in C-c TERM HUP; do
	start_ui 120x40 C.UTF-8 "$g" -k 6 -j 2 --starts 1 --no-reseed --max-sweeps 100000000 -o "sig-$how"
	wait_screen '─ 5 Weak edges' 10
	keys e
	wait_screen 'state   fitting' 10
	if [ "$how" = C-c ]; then
		keys C-c
	else
		kill -"$how" "$(ui_pid)"
	fi
	check "$how: the explorer ends" wait_gone_ui 20
	check "$how: the exit status is 130" [ "$(ui_rc)" = 130 ]
	check "$how: the result was written first" [ -s "$tmp/sig-$how/checkpoint.cot" ]
	check "$how: run.json says interrupted" \
		[ "$(json_get "$tmp/sig-$how/run.json" fit.status)" = interrupted ]
	check "$how: no sanitizer report" no_sanitizer_report "$tmp/stderr"
done

# 4. the terminal goes away (an SSH connection dropped): the tmux server
# dies with the explorer's terminal
start_ui 120x40 C.UTF-8 "$g" -k 6 -j 2 --starts 1 --no-reseed --max-sweeps 100000000 -o lost
wait_screen '─ 5 Weak edges' 10
keys e
wait_screen 'state   fitting' 10
pid=$(ui_pid)
$T kill-server
check "a lost terminal: the result is written" wait_file "$tmp/lost/run.json" 20
gone()
{
	gi=0
	while kill -0 "$pid" 2>/dev/null; do
		[ "$gi" -ge $((100 * slow)) ] && return 1
		sleep 0.1
		gi=$((gi + 1))
	done
}
check "a lost terminal: the explorer ends" gone
# and the saved fit is not just there but goes on (issue 6: "the fit is
# saved, not lost")
sw=$(json_get "$tmp/lost/run.json" fit.sweeps)
"$BIN" fit --resume "$tmp/lost" --max-sweeps $((sw + 2)) -q 2>>"$tmp/stderr"
check "a lost terminal: the saved fit resumes with coterie fit --resume (exit 0)" [ $? -eq 0 ]
check "a lost terminal: the resumed fit goes on to sweep $((sw + 2))" \
	[ "$(json_get "$tmp/lost/run.json" fit.sweeps)" = $((sw + 2)) ]
check "a lost terminal: no sanitizer report" no_sanitizer_report "$tmp/stderr"
finish
