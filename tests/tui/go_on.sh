#!/bin/sh
# After a plateau the user says how far to go on (issue 14, item 7): '+'
# asks for a number of sweeps, fits exactly that many more and waits
# again; 't' asks for a plateau tolerance and fits on to the next plateau
# at it; both keys are in the key table (so in the help and --list-keys);
# 'e' on a reopened result keeps fitting until stopped instead of
# levelling off again a few sweeps later.
. "$(dirname "$0")/lib"

g=$tmp/planted.tsv
make_graph "$g"

"$BIN" explore --list-keys >"$tmp/keys"
check "--list-keys has '+' (sweeps more)" grep -q '^+	any	.*sweeps more' "$tmp/keys"
check "--list-keys has 't' (the plateau tolerance)" grep -q '^t	any	set the plateau tolerance' "$tmp/keys"

# wait_held_past S: until the fit waits at a plateau at a sweep other than
# S (right after a key the screen still shows the old wait)
wait_held_past()
{
	wh_i=0
	while [ "$wh_i" -lt $((600 * slow)) ]; do
		if screen | grep -q 'state   levelled off' && [ "$(shown_sweep)" != "$1" ]; then
			return 0
		fi
		sleep 0.1
		wh_i=$((wh_i + 1))
	done
	return 1
}

start_ui 80x24 C.UTF-8 "$g" -k 6 -j 1 --starts 1 --no-reseed --max-sweeps 100000000 -o out
check "the fit levels off" wait_screen 'state   levelled off' 30
s1=$(shown_sweep)
keys +
check "+ asks how many sweeps" wait_screen 'Sweeps more: _'
keys 2 5 Enter
check "+ 25 says what it does" wait_screen '25 more sweeps from sweep' 5
check "it waits again" wait_held_past "$s1"
s2=$(shown_sweep)
check "exactly 25 sweeps more ($s1 -> $s2)" [ "$s2" -eq $((s1 + 25)) ]

keys t
check "t asks for the tolerance (a tenth of the current one offered)" wait_screen 'Plateau tolerance: 1e-05_'
keys BSpace BSpace 8 Enter
check "t says it fits on to the next plateau" wait_screen 'fitting on to the next plateau \(relative gain below 1e-08' 5
check "it waits at the next plateau" wait_held_past "$s2"
s3=$(shown_sweep)
check "the next plateau is later ($s2 -> $s3)" [ "$s3" -gt "$s2" ]
check "the figures give the new tolerance" wait_screen 'rel gain < 1e-08|plateau at sweep' 5
keys t Escape
check "Esc at the prompt changes nothing" wait_screen 'nothing changed' 5
keys + x Enter
check "a prompt with no number is refused" wait_screen "is no number of sweeps" 5
keys w
check "w writes" wait_screen 'wrote the result' 20
check "run.json records the tolerance in force" \
	[ "$(json_get "$tmp/out/run.json" parameters.tol)" = 1e-08 ]
keys q
wait_gone_ui 20

# a reopened result: e fits on until s, not to a plateau a few sweeps on
start_ui 80x24 C.UTF-8 out -j 1
check "the reopened result shows" wait_screen 'as saved' 20
r1=$(shown_sweep)
keys e
check "e fits the saved result again" wait_screen 'fitting again from sweep' 10
sleep 3
check "e does not stop at a plateau: still fitting" wait_screen 'state   fitting' 5
r2=$(shown_sweep)
check "well past a few sweeps ($r1 -> $r2)" [ "$r2" -gt $((r1 + 10)) ]
keys s
check "s stops it" wait_screen 'state   stopped' 20
keys q
wait_screen 'Quit\?' 5
keys d
check "the explorer ends" wait_gone_ui 20
check "no sanitizer report" no_sanitizer_report "$tmp/stderr"
finish
