#!/bin/sh
# While the fit runs on a graph of email-Enron's size (about 36,000 nodes
# and 180,000 edges), the Communities, Members and Weak edges panes show the
# communities of the model being fitted: communities with members and a
# member list appear before the fit ends, not only when it stops.
# (Issue 14: the panes read "0 with members" until the end, because the
# snapshot's AGM, built once on the empty model, was never rebuilt.)
. "$(dirname "$0")/lib"

"$BIN" simulate -n 36000 --sizes 20:400 --overlap 0.1 --mean-degree 10 \
	--epsilon 0.0001 --seed 3 -o "$tmp/sim" -q
check "simulate writes a graph of about 180,000 edges" \
	test "$(wc -l <"$tmp/sim/edges.tsv")" -gt 150000

# a tiny plateau tolerance and a huge sweep limit: the fit runs until
# told to stop
start_ui 80x24 C.UTF-8 "$tmp/sim/edges.tsv" -k 200 -j 2 --starts 1 --no-reseed \
	--tol 1e-12 --max-sweeps 100000000 -o out
check "the fit is running" wait_screen 'state   fitting' 30

live()
{
	lv_i=0
	while [ "$lv_i" -lt $((300 * slow)) ]; do
		screen >"$tmp/screen"
		lv_s=$(sed -n 's/.*sweep   \([0-9][0-9]*\)\/[0-9].*/\1/p' "$tmp/screen" | head -1)
		if [ "${lv_s:-0}" -ge 10 ] && grep -q 'state   fitting' "$tmp/screen" &&
			grep -Eq '[1-9][0-9]* with members' "$tmp/screen" &&
			grep -Eq 'Members of #[0-9]+' "$tmp/screen"; then
			return 0
		fi
		sleep 0.1
		lv_i=$((lv_i + 1))
	done
	cat "$tmp/screen" "$tmp/stderr"
	return 1
}
check "from sweep 10 on, communities with members and a member list are shown while the state reads fitting" live
s1=$(shown_sweep)
check "the state still reads fitting (sweep ${s1:-?})" wait_screen 'state   fitting' 1
keys s
check "s stops the fit" wait_screen 'state   stopped'
keys q
wait_screen 'Quit\?' 5 && keys d
wait_gone_ui 20
check "the explorer ends" test -f "$tmp/rc"
check "no sanitizer report" no_sanitizer_report "$tmp/stderr"
finish
