#!/bin/sh
# The explorer shows its five panes with their titles and figures, the
# likelihood trace grows while the fit runs, and 's' stops the fit keeping
# the model, which 'w' then writes. Also: ASCII only under a non-UTF-8
# locale, and no colour under NO_COLOR.
. "$(dirname "$0")/lib"

g=$tmp/planted.tsv
make_graph "$g"
# The expected figures come from the file itself: distinct names, and
# distinct unordered pairs (sort -u), which is what a simple graph is.
nodes=$(awk -F'\t' '{ print $1; print $2 }' "$g" | sort -u | wc -l | tr -d ' ')
edges=$(awk -F'\t' '{ if ($1 < $2) print $1 "\t" $2; else print $2 "\t" $1 }' "$g" |
	sort -u | wc -l | tr -d ' ')

start_ui 120x40 C.UTF-8 "$g" -k 6 -j 2 --starts 1 --no-reseed --max-sweeps 100000000 -o out
check "the likelihood pane appears" wait_screen '─ 1 Likelihood'
# e: do not wait at a plateau, so the fit is still running below
keys e
check "e says the fit will run past the plateau" wait_screen 'will not wait at a plateau|running on past the plateau'
for t in '─ 2 Communities' '─ 3 Members of #[0-9]+' '─ 4 Node' '─ 5 Weak edges of #[0-9]+'; do
	check "pane title '$t' appears" wait_screen "$t"
done
check "the header gives $nodes nodes and $edges edges (counted from the file with sort -u)" \
	wait_screen "$nodes nodes, $edges edges, k 6"
check "the communities pane has its column heads" \
	wait_screen 'id +. ?size +edges +density +conductance +p'
check "the communities pane counts communities with members (at most k = 6)" \
	wait_screen '[1-6] with members'
check "the state reads fitting" wait_screen 'state   fitting'
check "the likelihood pane shows the log-likelihood" wait_screen 'loglik  -[0-9]+\.[0-9]'
check "the likelihood pane shows sweeps per second" wait_screen 'speed   [0-9.e+]+ sweeps/s'
check "the node pane shows a degree" wait_screen 'degree [0-9]+, '
# the curve is drawn in braille (U+2800..U+28FF: UTF-8 e2 a0..a3 xx)
braille()
{
	screen | LC_ALL=C grep -q "$(printf '\342[\240-\243]')"
}
check "the curve is drawn in braille under a UTF-8 locale" braille

s1=$(shown_sweep)
grows()
{
	gi=0
	while [ "$gi" -lt $((100 * slow)) ]; do
		s2=$(shown_sweep)
		[ -n "$s2" ] && [ -n "$s1" ] && [ "$s2" -gt "$s1" ] && return 0
		sleep 0.1
		gi=$((gi + 1))
	done
	return 1
}
check "the trace grows: the sweep count rises past ${s1:-?}" grows

keys p
check "p pauses the fit" wait_screen 'state   paused: p resumes'
paused_at=$(shown_sweep)
keys p
check "p again resumes it" wait_screen 'state   fitting'
resumed()
{
	ri=0
	while [ "$ri" -lt $((100 * slow)) ]; do
		s3=$(shown_sweep)
		[ -n "$s3" ] && [ "$s3" -gt "$paused_at" ] && return 0
		sleep 0.1
		ri=$((ri + 1))
	done
	return 1
}
check "after resuming the sweep count rises past $paused_at" resumed

keys s
check "s stops the fit" wait_screen 'state   stopped'
stopped_at=$(shown_sweep)
check "the model is not written before asked" [ ! -e "$tmp/out/memberships.tsv" ]
keys w
check "w writes the result and says so" wait_screen "wrote the result at sweep $stopped_at"
for f in memberships.tsv communities.tsv trace.tsv run.json checkpoint.cot; do
	check "w writes $f" [ -s "$tmp/out/$f" ]
done
last=$(tail -1 "$tmp/out/trace.tsv" | cut -f1)
check "trace.tsv ends at the sweep shown when stopped ($stopped_at)" [ "$last" = "$stopped_at" ]
check "run.json records the stopped state" \
	[ "$(json_get "$tmp/out/run.json" fit.state)" = stopped ]
check "memberships.tsv holds memberships" [ "$(wc -l <"$tmp/out/memberships.tsv")" -gt 1 ]
check "the header says saved" wait_screen '\(saved\)'
colour()
{
	$T capture-pane -p -e | grep -Eq '\[(3[0-7]|4[0-7])m|;(3[0-7]|4[0-7])m'
}
check "colours are used when NO_COLOR is not set" colour
keys q
check "q quits at once when the stopped fit is saved" wait_gone_ui 10
check "the exit status is 0" [ "$(ui_rc)" = 0 ]
check "no sanitizer report" no_sanitizer_report "$tmp/stderr"

# A plain terminal: C locale, NO_COLOR.
UI_ENV="NO_COLOR=1" start_ui 80x24 C "$g" -k 6 -j 1 -o out2
check "ASCII mode: the panes appear" wait_screen '^- 1 Likelihood'
check "ASCII mode: the lower panes appear" wait_screen '5 Weak edges of #'
ascii_only()
{
	screen >"$tmp/screen"
	[ "$(LC_ALL=C tr -d '\000-\177' <"$tmp/screen" | wc -c)" -eq 0 ]
}
check "ASCII mode: only ASCII on the screen" ascii_only
no_colour()
{
	! $T capture-pane -p -e | grep -Eq '\[(3[0-7]|4[0-7])m|;(3[0-7]|4[0-7])m|\[[34]8;'
}
check "NO_COLOR: no colour on the screen" no_colour
keys q
wait_screen 'Quit\?' 5
keys d
check "d quits without saving" wait_gone_ui 10
check "nothing was written after d" [ ! -e "$tmp/out2/memberships.tsv" ]
check "no sanitizer report (ASCII run)" no_sanitizer_report "$tmp/stderr"
finish
