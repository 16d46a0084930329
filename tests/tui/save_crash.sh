#!/bin/sh
# The explorer killed at any step of a save (issue 18), as
# tests/cli/fit_crash.sh does for fit: a folder holding a finished result
# of graph X is given to an explorer fitting graph Y (--force); once Y's
# fit levels off, w saves it, and the explorer is stopped right after its
# N-th fsync, rename or removal (the test hook COTERIE_CRASH_AT=N of
# src/atomicfile.c, which ends the process as kill -9 would), for every N
# until the save ends on its own. After each stop the folder holds X's
# result whole or Y's whole, never a mix: tests/cli/folder_whole.py says
# which (the new result is the one an explorer that was not stopped
# saved with w at the same plateau: a levelled fit is the same bits every
# run), and `coterie show` reads it without a warning of a mix; a commit
# left half done is finished by the next writer. A small graph and a
# bounded N keep it short for CI.
. "$(dirname "$0")/lib"

whole_py=$ROOT/tests/cli/folder_whole.py
"$BIN" simulate -n 300 --seed 1 -o "$tmp/gx" -q
"$BIN" simulate -n 800 --seed 2 -o "$tmp/gy" -q
"$BIN" fit "$tmp/gx/edges.tsv" -k 5 --seed 1 -j 1 --epsilon 1e-3 -q -o "$tmp/X"
check "the result of graph X is written" [ -s "$tmp/X/memberships.tsv" ]
gy=$tmp/gy/edges.tsv
args="-k 8 --seed 3 -j 1 --starts 1 --epsilon 1e-3 --checkpoint-every 100000 --force"

# save_into DIR: an explorer fitting Y into DIR (a copy of X) until it
# levels off, then w; true when the explorer says it wrote the result,
# false when it ended first ($tmp/rc).
save_into()
{
	# shellcheck disable=SC2086
	start_ui 100x30 C.UTF-8 "$gy" $args -o "$1"
	wait_screen 'state   levelled off' 30 || return 1
	keys w
	wait_screen 'wrote the result at sweep' 20
}

# the reference: Y's result saved by w, nothing stopped
cp -R "$tmp/X" "$tmp/Y"
check "an explorer not stopped saves Y's result with w" save_into "$tmp/Y"
keys q
check "and quits without asking (the result is saved)" wait_gone_ui 20
check "the saved result is Y's" [ "$(json_get "$tmp/Y/run.json" graph.fingerprint)" != \
	"$(json_get "$tmp/X/run.json" graph.fingerprint)" ]

old=0 new=0 pending=0 n=1 bad=0 ended=0
while [ "$n" -le 60 ]; do
	d=$tmp/d$n
	cp -R "$tmp/X" "$d"
	UI_ENV="COTERIE_CRASH_AT=$n"
	if save_into "$d"; then
		ended=1
		check "N=$n: past the last step, w ends with Y's result whole" \
			[ "$("$PY" "$whole_py" "$d" "$tmp/X" "$tmp/Y")" = new ]
		keys q
		wait_gone_ui 20
		break
	fi
	wait_gone_ui 10
	if [ "$(ui_rc)" != 137 ]; then
		fail "N=$n: the explorer stopped by the hook exits 137 (got '$(ui_rc)')"
		bad=1
		break
	fi
	whole=$("$PY" "$whole_py" "$d" "$tmp/X" "$tmp/Y")
	if ! "$BIN" show "$d" >"$d.show" 2>"$d.show.err"; then
		fail "N=$n: show reads the folder"
		bad=1
	elif grep -q 'mixes two results\|is not the cover\|does not match' "$d.show.err"; then
		fail "N=$n: show finds a mix: $(head -1 "$d.show.err")"
		bad=1
	elif [ "$whole" = old ]; then
		old=$((old + 1))
	elif [ "$whole" = new ]; then
		new=$((new + 1))
		if [ -e "$d/.coterie.commit" ]; then
			# the next writer (a fit that fails to read its graph, after
			# taking the lock) finishes the commit: the folder is Y's, whole
			pending=$((pending + 1))
			"$BIN" fit "$tmp/no-such-graph.tsv" -k 2 -q -o "$d" 2>"$d.next.err"
			[ ! -e "$d/.coterie.commit" ] &&
				[ "$("$PY" "$whole_py" "$d" "$tmp/X" "$tmp/Y")" = new ] ||
				{ fail "N=$n: the next writer finishes the commit"; bad=1; }
		fi
	else
		fail "N=$n: $whole"
		bad=1
	fi
	n=$((n + 1))
done
UI_ENV=

check "every stop left X's result whole or Y's whole, never a mix" [ "$bad" -eq 0 ]
check "some stops left X's result (before the commit point)" [ "$old" -gt 0 ]
check "some stops fell between the commit point and its end" [ "$pending" -gt 0 ]
check "the save ends on its own within 60 steps ($n)" [ "$ended" -eq 1 ]
check "no sanitizer report" no_sanitizer_report "$tmp/stderr"
printf '# %d stops: %d with X whole, %d with Y whole (%d before the commit ended)\n' \
	$((n - 1)) "$old" "$new" "$pending"
finish
