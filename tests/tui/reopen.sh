#!/bin/sh
# `coterie explore DIR` shows a saved result at once, as saved, without
# refitting and without writing; `--resume` (or 'e') continues that fit.
. "$(dirname "$0")/lib"

g=$tmp/planted.tsv
make_graph "$g"
"$BIN" fit "$g" -k 6 -j 2 -q -o "$tmp/saved"
check "coterie fit writes a result to reopen" [ -s "$tmp/saved/checkpoint.cot" ]
saved_sweep=$(tail -1 "$tmp/saved/trace.tsv" | cut -f1)
saved_state=$(json_get "$tmp/saved/run.json" fit.state)
sum_before=$(cksum <"$tmp/saved/checkpoint.cot")

start_ui 120x40 C.UTF-8 saved
check "the saved result opens" wait_screen '─ 5 Weak edges'
label=$(case $saved_state in levelled) echo "levelled off" ;; *) echo "$saved_state" ;; esac)
check "the state is the saved one ($label), marked as saved" wait_screen "state   $label, as saved"
check "the sweep is the saved one ($saved_sweep, from trace.tsv)" \
	wait_screen "sweep   $saved_sweep/[0-9]"
check "the header says saved" wait_screen '\(saved\)'
comms=$(($(wc -l <"$tmp/saved/communities.tsv") - 1))
check "the communities pane counts the $comms communities of communities.tsv" \
	wait_screen "$comms with members"
keys q
check "q quits at once: nothing is unsaved" wait_gone_ui 10
check "the exit status is 0" [ "$(ui_rc)" = 0 ]
check "the checkpoint was not rewritten" [ "$(cksum <"$tmp/saved/checkpoint.cot")" = "$sum_before" ]

# e continues the saved fit
start_ui 120x40 C.UTF-8 saved --max-sweeps 100000000
wait_screen '─ 5 Weak edges' 10
keys e
check "e continues the saved fit" wait_screen 'fitting again from sweep'
past()
{
	pi=0
	while [ "$pi" -lt $((100 * slow)) ]; do
		s=$(shown_sweep)
		[ -n "$s" ] && [ "$s" -gt "$saved_sweep" ] && return 0
		sleep 0.1
		pi=$((pi + 1))
	done
	return 1
}
check "the sweep count passes the saved $saved_sweep" past
keys s
wait_screen 'state   (stopped|levelled)' 10
keys q
check "q asks: the continued fit is not saved" wait_screen 'Quit\? the result is not saved'
keys y
check "y quits" wait_gone_ui 20
new_last=$(tail -1 "$tmp/saved/trace.tsv" | cut -f1)
check "the folder now holds the longer trace" [ "$new_last" -gt "$saved_sweep" ]
check "no sanitizer report (e)" no_sanitizer_report "$tmp/stderr"

# --resume starts at once
saved_sweep=$new_last
start_ui 120x40 C.UTF-8 saved --resume --max-sweeps 100000000
check "--resume: the fit runs" wait_screen 'state   (fitting|levelled off)'
keys e
check "--resume: the sweep count passes the saved $saved_sweep" past
keys C-c
check "--resume: Ctrl-C ends it" wait_gone_ui 20
check "--resume: status 130" [ "$(ui_rc)" = 130 ]
check "no sanitizer report (--resume)" no_sanitizer_report "$tmp/stderr"

# not a result folder
mkdir "$tmp/empty"
"$BIN" explore "$tmp/empty" 2>"$tmp/err" </dev/null
check "a folder without a checkpoint is refused with status 1" [ $? -eq 1 ]
check "the message names the missing checkpoint" grep -q 'checkpoint.cot' "$tmp/err"
"$BIN" explore "$g" 2>"$tmp/err" </dev/null
check "a graph without -k is refused with status 2" [ $? -eq 2 ]
"$BIN" explore "$g" -k 3 2>"$tmp/err" </dev/null >/dev/null
check "without a terminal explore refuses with status 1" [ $? -eq 1 ]
check "and says it needs a terminal" grep -q 'needs a terminal' "$tmp/err"
finish
