#!/bin/sh
# `coterie explore DIR` on the folder of a fit running in another process
# follows it (issue 17, "Following a fit that runs elsewhere"): it says
# so, the sweep shown advances, and X asks the fit, through the folder, to
# stop; the fit then ends as after an interrupt (saved, exit 130), the
# folder holds one whole result that --resume takes on, and the explorer
# shows the final result. The explorer writes nothing of the result.
. "$(dirname "$0")/lib"

g=$tmp/planted
"$BIN" simulate -n 3000 --sizes 20:80 --mean-degree 12 --mixing 0.2 --seed 4 -o "$g" 2>/dev/null
check "a planted graph" [ -s "$g/edges.tsv" ]
d=$tmp/run
# enough sweeps that the fit outlasts the test; checkpoints every second
"$BIN" fit "$g/edges.tsv" -k 60 -j 1 --seed 9 --epsilon 1e-3 --starts 1 --past-plateau \
	--max-sweeps 100000000 --checkpoint-every 1 -o "$d" 2>"$tmp/fit.err" &
fitpid=$!
i=0
while [ ! -s "$d/checkpoint.partial.cot" ] && [ $i -lt $((200 * slow)) ]; do
	sleep 0.1
	i=$((i + 1))
done
check "the fit runs and has written a checkpoint" [ -s "$d/checkpoint.partial.cot" ]

start_ui 80x24 C.UTF-8 run
check "the explorer says it follows the fit, naming its pid" \
	wait_screen "followed \(pid $fitpid@" 20
check "the header says it follows" wait_screen 'following its fit'
check "the footer lists the keys for the followed fit" wait_screen 'X:stop it'
s1=$(shown_sweep)
i=0
s2=$s1
while [ $i -lt $((100 * slow)) ]; do
	s2=$(shown_sweep)
	[ -n "$s1" ] && [ -n "$s2" ] && [ "$s2" -gt "$s1" ] && break
	sleep 0.1
	i=$((i + 1))
done
check "the sweep shown advances ($s1, then $s2)" [ "${s2:-0}" -gt "${s1:-0}" ]
keys s
check "s does not stop a fit of another process; it names X" wait_screen 'X stops it'
check "the explorer took no lock: the fit's lock is the fit's" \
	grep -q "$fitpid" "$d/.coterie.lock"

keys X
check "X: the explorer says it asked" wait_screen 'asked the followed fit to stop'
i=0
while kill -0 "$fitpid" 2>/dev/null && [ $i -lt $((300 * slow)) ]; do
	sleep 0.1
	i=$((i + 1))
done
wait "$fitpid"
rc=$?
check "the fit ended as after an interrupt: exit 130 (got $rc)" [ "$rc" -eq 130 ]
check "... saying it was asked to stop" grep -q 'asked to stop' "$tmp/fit.err"
check "the explorer shows that the fit ended, and its result" \
	wait_screen 'followed fit ended' 20
check "... and calls it saved" wait_screen '\(saved\)'
saved_sweep=$(tail -1 "$d/trace.tsv" | cut -f1)
check "the sweep shown is the final result's ($saved_sweep, trace.tsv)" \
	wait_screen "sweep   $saved_sweep/" 10
keys q
check "q quits at once (nothing of its own to save)" wait_gone_ui 10
check "the explorer exits 0" [ "$(ui_rc)" = 0 ]

mkdir "$tmp/none"
cp -r "$d" "$tmp/copy"
check "the folder is one whole result (folder_whole.py)" \
	"$PY" "$ROOT/tests/cli/folder_whole.py" "$d" "$tmp/none" "$tmp/copy"
check "no progress or request file is left" \
	sh -c '[ ! -e "$1/.coterie.progress" ] && [ ! -e "$1/.coterie.request" ]' sh "$d"
"$BIN" fit --resume "$d" --max-sweeps $((saved_sweep + 5)) -q 2>"$tmp/resume.err"
check "fit --resume takes the stopped fit on" [ "$(tail -1 "$d/trace.tsv" | cut -f1)" -gt "$saved_sweep" ]

finish
