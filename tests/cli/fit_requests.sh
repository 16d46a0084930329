#!/bin/sh
# A running fit takes requests through its result folder (coterie-files(5),
# "Following a running fit"): DIR/.coterie.request holding pause, continue,
# save or stop, checked between sweeps and removed once taken; anything
# else is ignored with a warning. It writes DIR/.coterie.progress while it
# runs and removes it at the end. A stop request ends the fit exactly as an
# interrupt does (saved, exit 130, run.json status "interrupted"), and
# --resume from there ends with the bytes of the uninterrupted fit.
. "$(dirname "$0")/lib"

# wait_gone_file FILE: until FILE is gone (10 s at most)
wait_gone_file()
{
	wg=0
	while [ -e "$1" ]; do
		[ $wg -ge 100 ] && return 1
		sleep 0.1
		wg=$((wg + 1))
	done
}

if [ -x /usr/bin/python3 ]; then PY=/usr/bin/python3; else PY=python3; fi
g=$tmp/planted
"$BIN" simulate -n 3000 --sizes 20:80 --mean-degree 12 --mixing 0.2 --seed 4 -o "$g" 2>/dev/null
need_file "$g/edges.tsv"
args="-k 60 -j 1 --seed 9 --epsilon 1e-3 --starts 1 --no-reseed --past-plateau"
# 3000 sweeps: about 13 s alone on the 2-core machine, so that the requests below
# reach it while it runs (1000 sweeps, 4 s since quiet sweeps, ended first under make check)

# the uninterrupted fit, to compare the resumed one with
"$BIN" fit "$g/edges.tsv" $args --max-sweeps 3000 -q -o "$tmp/whole"

d=$tmp/run
mkdir "$d"
printf 'stop\n' >"$d/.coterie.request" # stale: from before this fit
"$BIN" fit "$g/edges.tsv" $args --max-sweeps 3000 -o "$d" 2>"$tmp/err" &
pid=$!
check "the fit writes a progress file while it runs" \
	wait_for_grep '^coterie progress 1$' "$d/.coterie.progress" 20
check "a request left from before the fit was removed, not obeyed" \
	grep -q 'removed a request or progress file an earlier fit left' "$tmp/err"

printf 'pause\n' >"$d/.coterie.request"
check "pause: the fit says it paused" wait_for_grep 'paused, as asked through' "$tmp/err" 20
check "pause: the request file was taken away" wait_gone_file "$d/.coterie.request"
check "pause: the progress file says paused" wait_for_grep '^state paused$' "$d/.coterie.progress" 10
s1=$(sed -n 's/^sweep \([0-9]*\) .*/\1/p' "$d/.coterie.progress")
sleep 1.5
s2=$(sed -n 's/^sweep \([0-9]*\) .*/\1/p' "$d/.coterie.progress")
check "pause: no sweep while paused ($s1, then $s2)" [ "$s1" = "$s2" ]

# garbage is ignored (and removed), and the fit goes on being paused
head -c 5000 /dev/zero | tr '\0' 'x' >"$d/.coterie.request"
check "a request file too long is ignored with a warning" \
	wait_for_grep 'ignored .* not a small regular file' "$tmp/err" 10
printf 'stop now\033[2J\n' >"$d/.coterie.request"
check "a request that is no word of ours is ignored with a warning" \
	wait_for_grep "is no request" "$tmp/err" 10
check "... its bytes escaped, not printed raw" no_control_bytes "$tmp/err"
mkfifo "$d/.coterie.request"
check "a FIFO named as the request is ignored (the fit does not hang on it)" \
	wait_for_grep 'ignored .* not a small regular file' "$tmp/err" 10 2
check "the fit is still paused after the garbage" grep -q '^state paused$' "$d/.coterie.progress"

printf 'continue\n' >"$d/.coterie.request"
check "continue: the fit goes on" wait_for_grep 'going on, as asked' "$tmp/err" 10
check "continue: the progress file says fitting" \
	wait_for_grep '^state fitting$' "$d/.coterie.progress" 10
printf 'save\n' >"$d/.coterie.request"
check "save: a checkpoint is written" wait_for_grep 'writing a checkpoint' "$tmp/err" 10
i=0
while [ ! -s "$d/checkpoint.partial.cot" ] && [ $i -lt 100 ]; do sleep 0.1; i=$((i + 1)); done
check "save: checkpoint.partial.cot appears" [ -s "$d/checkpoint.partial.cot" ]

# paused again first, so that the stop comes before the sweep limit on
# any machine; a paused fit asked to stop ends the sweep it was in
printf 'pause\n' >"$d/.coterie.request"
check "pause again" wait_for_grep 'paused, as asked through' "$tmp/err" 20 2
# a shell's `echo stop > FILE` creates the file empty and writes it a moment
# later; an empty request younger than 5 s is left for the next check, not
# taken (and lost) in between
: >"$d/.coterie.request"
sleep 1.5
check "an empty request file, just made, is left alone" [ -e "$d/.coterie.request" ]
check "... and not called a bad request" sh -c '! grep -q "is no request (stop" "$1" ||
	[ "$(grep -c "is no request (stop" "$1")" -eq 1 ]' sh "$tmp/err"
printf 'stop\n' >"$d/.coterie.request"
wait $pid
rc=$?
check "stop: the fit exits 130, as after an interrupt (got $rc)" [ "$rc" -eq 130 ]
check "stop: it says why" grep -q 'asked to stop: ending the sweep in progress' "$tmp/err"
check "stop: run.json's status is interrupted, as after an interrupt" \
	[ "$(json_get "$d/run.json" fit.status)" = interrupted ]
check "stop: no progress or request file is left" \
	sh -c '[ ! -e "$1/.coterie.progress" ] && [ ! -e "$1/.coterie.request" ]' sh "$d"
mkdir "$tmp/none"
cp -r "$d" "$tmp/copy"
check "stop: the folder is one whole result (folder_whole.py)" \
	"$PY" "$(dirname "$0")/folder_whole.py" "$d" "$tmp/none" "$tmp/copy"
"$BIN" fit --resume "$d" -q
check "the stopped fit resumes to the uninterrupted fit's memberships" \
	cmp -s "$d/memberships.tsv" "$tmp/whole/memberships.tsv"
check "... and communities" cmp -s "$d/communities.tsv" "$tmp/whole/communities.tsv"

finish
