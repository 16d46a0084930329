#!/bin/sh
# One writer per result folder (issue 18): a fit holds an flock() on
# DIR/.coterie.lock with its pid and command line; a second writer is
# refused up front naming them, readers (show) still work, and the lock of
# a process killed with SIGKILL is taken over (the kernel drops an flock
# with its process). Taking the lock removes the temporary files
# (.NAME.tmp-PID) dead writers left. A finished fit whose folder cannot
# take it is saved in DIR.saved-PID and said so (exit 1); a descriptor
# limit too low for the final write is refused before fitting, naming
# ulimit -n.
. "$(dirname "$0")/lib"

karate=$DATA/karate/edges.tsv
need_file "$karate"
"$BIN" simulate -n 20000 --seed 5 -o "$tmp/g" -q
g=$tmp/g/edges.tsv

# long_fit DIR: a fit into DIR that runs until interrupted; its pid in $lf_pid.
long_fit()
{
	"$BIN" fit "$g" -k 30 -j 1 --past-plateau --max-sweeps 100000 -o "$1" \
		2>"$1.err" &
	lf_pid=$!
	bg_pids="$bg_pids $lf_pid"
	wait_for_grep "sweep [0-9]" "$1.err" 60
}

# --- a second writer is refused, readers still read ----------------------------
"$BIN" fit "$g" -k 3 -j 1 --max-sweeps 2 -o "$tmp/out" -q
check "a first result is written" [ -s "$tmp/out/memberships.tsv" ]
long_fit "$tmp/out"
check "the writer holds the folder's lock, with its pid" \
	grep -q "^$lf_pid\$" "$tmp/out/.coterie.lock"
"$BIN" fit "$karate" -k 3 -o "$tmp/out" --force -q 2>"$tmp/second.err"
check "a second fit into the folder is refused (exit 1)" [ $? -eq 1 ]
check "the refusal names the holder's pid" grep -q "pid $lf_pid" "$tmp/second.err"
check "and its command" grep -q "pid $lf_pid: .*fit .*-k 30" "$tmp/second.err"
"$BIN" fit "$g" -k 30 --resume "$tmp/out" -q 2>"$tmp/resume.err"
check "--resume into a folder being written is refused too" [ $? -eq 1 ]
"$BIN" show "$tmp/out" >"$tmp/show.out" 2>&1
check "show reads the folder while it is being written" [ $? -eq 0 ]

# --- a writer killed with SIGKILL: its lock and temporary files -----------------
kill -KILL "$lf_pid"
wait_gone "$lf_pid" 10
: >"$tmp/out/.memberships.tsv.tmp-4000000"
: >"$tmp/out/.checkpoint.cot.tmp-1"
"$BIN" fit "$karate" -k 3 -o "$tmp/out" --force -q 2>"$tmp/takeover.err"
check "the lock of a killed writer is taken over" [ $? -eq 0 ]
check "the temporary files of dead writers are removed" \
	sh -c '! ls -a "$1" | grep -q "\.tmp-"' sh "$tmp/out"
check "a finished writer leaves no lock file" [ ! -e "$tmp/out/.coterie.lock" ]

# --- a finished fit is never thrown away -----------------------------------------
long_fit "$tmp/gone"
mv "$tmp/gone" "$tmp/gone.moved"
: >"$tmp/gone" # the folder is now a file: nothing can be written there
kill -INT "$lf_pid"
wait_gone "$lf_pid" 60
wait "$lf_pid"
rc=$?
check "a fit whose folder cannot take the result exits 1" [ "$rc" -eq 1 ]
check "the message names the folder it saved the result in" \
	grep -q "saved in '$tmp/gone.saved-$lf_pid' instead" "$tmp/gone.err"
check "that folder holds the whole result" [ -s "$tmp/gone.saved-$lf_pid/run.json" ]
"$BIN" show "$tmp/gone.saved-$lf_pid" >/dev/null 2>&1
check "show reads the result saved elsewhere" [ $? -eq 0 ]

# --- too few descriptors: refused up front, the cause named ------------------------
(ulimit -n 7 && exec "$BIN" fit "$g" -k 30 -j 1 -o "$tmp/fd") 2>"$tmp/fd.err"
check "a fit with too few descriptors exits 1" [ $? -eq 1 ]
check "before fitting" sh -c '! grep -q "fitting\|sweep" "$1"' sh "$tmp/fd.err"
check "naming the limit (ulimit -n)" grep -q "ulimit -n" "$tmp/fd.err"
finish
