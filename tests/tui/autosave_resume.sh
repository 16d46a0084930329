#!/bin/sh
# The explorer's periodic checkpoint carries a savepoint (the starts done,
# the best so far, the start in progress at the end of a whole sweep),
# like the batch command's, so `coterie fit --resume` from the folder of a
# killed explorer ends with the memberships of the uninterrupted fit of
# the same graph, seed and parameters (outdir.h). The explorer fits with
# hold_at_plateau, which only makes it wait after the last start; its
# starts default as fit's do (cli_fit_opts_starts()), so both run 3 starts.
. "$(dirname "$0")/lib"

# a planted graph large enough that its fit takes a few seconds on one thread
"$BIN" simulate -n 20000 --seed 5 -o "$tmp/g" -q
g=$tmp/g/edges.tsv
"$BIN" fit "$g" -k 30 --seed 3 -j 1 -o "$tmp/whole" -q
check "the uninterrupted fit writes its memberships" [ -s "$tmp/whole/memberships.tsv" ]

start_ui 120x40 C.UTF-8 "$g" -k 30 --seed 3 -j 1 --checkpoint-every 0.3 -o "$tmp/out"
# a checkpoint with a savepoint (its RSUM section, coterie-files(5))
got=0
i=0
while [ "$i" -lt $((300 * slow)) ]; do
	if [ -s "$tmp/out/checkpoint.partial.cot" ] && grep -aq RSUM "$tmp/out/checkpoint.partial.cot"; then
		got=1
		break
	fi
	sleep 0.1
	i=$((i + 1))
done
check "an autosaved checkpoint with a savepoint appears while the fit runs" [ "$got" -eq 1 ]
pid=$(ui_pid)
[ -n "$pid" ] && kill -KILL "$pid"
check "the explorer is killed without a chance to save" wait_gone_ui 10
check "the explorer had not written a final result" [ ! -e "$tmp/out/run.json" ]

"$BIN" fit --resume "$tmp/out" -o "$tmp/resumed" -q 2>"$tmp/resume.err"
check "fit --resume continues the autosaved fit" [ $? -eq 0 ]
check "the resumed fit ends with the memberships of the uninterrupted one" \
	cmp -s "$tmp/whole/memberships.tsv" "$tmp/resumed/memberships.tsv"
check "and with its communities" \
	cmp -s "$tmp/whole/communities.tsv" "$tmp/resumed/communities.tsv"
finish
